"""Python's cycle collector kept out of the way while a build makes millions of long-lived objects."""
from __future__ import annotations

import contextlib
import gc
from typing import Iterator


@contextlib.contextmanager
def collector_paused() -> Iterator[None]:
    """Python's cycle collector paused while a stage makes millions of long-lived objects, which are
    then left out of its walks (gc.freeze).

    Loading and computing build plain records that all survive to the end of the build: the collector
    would walk the growing heap again and again for no garbage (at 1,000 aircraft that was two thirds
    of a rebuild), and walk it all once more when switched back on. Frozen objects are still freed when
    no longer used; `collector_released` hands them back to the collector when the build ends."""
    enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        gc.freeze()
        if enabled:
            gc.enable()


def collector_released() -> None:
    """Hand what `collector_paused` froze back to the collector (gc.unfreeze)."""
    gc.unfreeze()
