"""Work shared out over forked processes, for the stages that go aircraft by aircraft."""
from __future__ import annotations

import multiprocessing
from collections.abc import Callable, Iterable, Iterator
from typing import Any

from registry.core.progress import QUIET, Progress

MIN_ITEMS = 8
"""Below this many items the work stays in this process: starting workers would cost more."""

_TASK: Callable[[Any], Any] | None = None
"""The task a forked worker runs: inherited from the parent at fork time, so it is never pickled."""


def _run(item: Any) -> Any:
    return _TASK(item)


def ordered_map(task: Callable[[Any], Any], items: Iterable[Any], workers: int,
                progress: Progress = QUIET) -> Iterator[Any]:
    """task(item) for every item, in order, advancing `progress` once per item.

    With several `workers`, enough items and a platform that can fork, the items are shared out over
    forked processes; only the items and the results cross between processes, so the task may be any
    closure. Run the returned iterator to its end: that closes the workers.
    """
    global _TASK
    items = list(items)
    if workers <= 1 or len(items) < MIN_ITEMS or "fork" not in multiprocessing.get_all_start_methods():
        for item in items:
            yield task(item)
            progress.advance()
        return
    _TASK = task
    try:
        with multiprocessing.get_context("fork").Pool(workers) as pool:
            for result in pool.imap(_run, items, chunksize=max(1, len(items) // (workers * 8))):
                yield result
                progress.advance()
    finally:
        _TASK = None
