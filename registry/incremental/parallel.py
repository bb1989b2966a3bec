"""Work shared out over forked processes, for the stages that go aircraft by aircraft."""
from __future__ import annotations

import gc
import multiprocessing
from collections.abc import Callable, Hashable, Iterable, Iterator, Sequence
from typing import Any, Protocol

from registry.core.progress import QUIET, Progress

MIN_ITEMS = 8
"""Below this many items the work stays in this process: starting workers would cost more."""
ITEMS_PER_WORKER = 500
"""A worker is replaced by a fresh fork after about this many items (in whole chunks): what it kept for
itself (figures cached per process, rendered fragments) goes with it; a fresh fork inherits everything the
parent worked out before the work began (patterns, impedances, compiled templates, the first aircraft of
each type: `ordered_map`'s `warm_by`)."""
COLLECT_EVERY = 25
"""A worker runs the cycle collector after this many items, over what it made since the last time only
(`_start_worker`, `_run`). The build pauses the collector (`collector.collector_paused`), and rendering leaves
reference cycles (Jinja's contexts): without collections a worker grew by about 1.8 MB an aircraft and had
to be replaced every hundred. Measured at 1,000 aircraft: every 25 items and replaced after 500, no worker
grows past its parent's size (457 MB against 511 MB) and the build takes 142 s of CPU in the workers
against 158 s."""

_TASK: Callable[[Any], Any] | None = None
"""The task a forked worker runs: inherited from the parent at fork time, so it is never pickled."""


_DONE = 0
"""Items this worker has done (for COLLECT_EVERY)."""


def _start_worker() -> None:
    """A fresh worker leaves what it inherited out of the collector's walks (gc.freeze: the parent's
    objects, which it keeps alive anyway), so that its collections walk only what it made itself."""
    gc.freeze()


def _run(item: Any) -> Any:
    global _DONE
    result = _TASK(item)
    _DONE += 1
    if _DONE % COLLECT_EVERY == 0:
        gc.collect()  # rendering leaves reference cycles: freed here, so a worker's memory stays flat
        gc.freeze()   # and what survives is not walked again
    return result


def ordered_map(task: Callable[[Any], Any], items: Iterable[Any], workers: int,
                progress: Progress = QUIET, warm_by: Callable[[Any], Hashable] | None = None) -> Iterator[Any]:
    """task(item) for every item, in order, advancing `progress` once per item.

    With several `workers`, enough items and a platform that can fork, the items are shared out over
    forked processes; only the items and the results cross between processes, so the task may be any
    closure. Run the returned iterator to its end: that closes the workers.

    `warm_by` names each item's kind (an aircraft's airframe type, say): the first item of each kind is
    done here before any worker is forked, so that every worker, the replacements included, starts with
    what those items left in this process's caches (shapes, tables, compiled templates) instead of
    working it out again. A fresh process spends about 1.5 s on its first aircraft's caches.
    """
    global _TASK
    items = list(items)
    if workers <= 1 or len(items) < MIN_ITEMS or "fork" not in multiprocessing.get_all_start_methods():
        for item in items:
            yield task(item)
            progress.advance()
        return
    done: dict[int, Any] = {}
    if warm_by is not None:
        firsts: dict[Hashable, int] = {}
        for n, item in enumerate(items):
            firsts.setdefault(warm_by(item), n)
        for n in sorted(firsts.values()):
            done[n] = task(items[n])
    rest = [item for n, item in enumerate(items) if n not in done]
    if not rest:  # every item was the first of its kind: no worker has anything to do
        for n in range(len(items)):
            yield done.pop(n)
            progress.advance()
        return
    _TASK = task
    try:
        chunksize = max(1, len(rest) // (workers * 32))
        chunks_per_worker = max(1, -(-ITEMS_PER_WORKER // chunksize))
        with multiprocessing.get_context("fork").Pool(workers, _start_worker, maxtasksperchild=chunks_per_worker) as pool:
            # small chunks: the last ones finish close together, so no worker idles long at the end
            results = pool.imap(_run, rest, chunksize=chunksize)
            for n in range(len(items)):
                yield done.pop(n) if n in done else next(results)
                progress.advance()
    finally:
        _TASK = None


class Cache(Protocol):
    """Where `cached_map` keeps results: `get(key)` (None on a miss) and `put(key, value)`."""

    def get(self, key: str) -> Any | None: ...

    def put(self, key: str, value: Any) -> None: ...


def cached_map(task: Callable[[Any], Any], items: Sequence[Any], keys: Sequence[str | None], cache: Cache,
               workers: int = 1, progress: Progress = QUIET) -> list[Any]:
    """task(item) for every item, in order: an item whose key is in `cache` is read from it in this
    process, the others are computed by `ordered_map` over `workers` processes and written back. Entries
    are read here because a value read in a worker must then be pickled to this process, and pickling
    and unpickling model objects costs more than decoding the entry (1,000 aircraft models: 3.9 s read
    here, 7.5 s read in two workers). A key of None (an input that could not be read) is always
    computed and never kept."""
    found = [cache.get(key) if key else None for key in keys]
    todo = [n for n, value in enumerate(found) if value is None]
    progress.advance(len(items) - len(todo))

    def one(n: int) -> Any:
        value = task(items[n])
        if keys[n]:
            cache.put(keys[n], value)
        return value

    for n, value in zip(todo, ordered_map(one, todo, workers, progress)):
        found[n] = value
    return found
