"""Physics results kept on disk between runs: pure functions of content whose first answer in a process
is costly (a wire antenna's moment-method sweep, a resonant length found by root search, which also
imports scipy's optimiser: about half a second of a one-aircraft rebuild at 1,000 aircraft).

A function decorated with `kept` is memoised in the process (as `functools.lru_cache` would) and, once
`keep_in` has named a cache folder, kept in it under the key of its namespace, its arguments' repr (exact
for str, int, float and tuples of them) and the tool's code (`key_of`): an entry is read back only by
the code that wrote it, and checked against its type like every cache entry (`store.py`).
"""
from __future__ import annotations

import functools
from collections.abc import Callable
from pathlib import Path
from typing import Any, TypeVar

from registry.incremental.keys import key_of
from registry.incremental.store import DiskCache

T = TypeVar("T")

_FOLDER: list[Path | None] = [None]


def keep_in(cache_dir: Path | None) -> None:
    """Where `kept` functions keep their answers from now on in this process (None: in memory only).
    Set at the start of each run; processes forked afterwards inherit it."""
    _FOLDER[0] = cache_dir


def kept(namespace: str, kind: Any) -> Callable[[Callable[..., T]], Callable[..., T]]:
    """Decorator for a pure function of hashable arguments with exact reprs: its answers memoised in
    this process and kept in the cache folder (`keep_in`) as entries of type `kind` (the answer's own
    type, which the cache codec must be able to hold: `codec.py`). An exception is not kept: the function
    runs again next time, as lru_cache does."""
    def wrap(function: Callable[..., T]) -> Callable[..., T]:
        @functools.lru_cache(maxsize=None)
        def memo(*args: Any) -> T:
            store = DiskCache(_FOLDER[0], namespace, kind)
            key = key_of(namespace, repr(args))
            found = store.get(key)
            if found is not None:
                return found
            answer = function(*args)
            store.put(key, answer)
            return answer
        return functools.wraps(function)(memo)
    return wrap
