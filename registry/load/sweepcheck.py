"""Measured sweep files held to a stated size and to values a one-port measurement can take.

A sweep is read whole and kept in memory for each aircraft that names it, so its size is bounded before
it is read: at most `MAX_SWEEP_BYTES` bytes and `MAX_SWEEP_POINTS` frequency points (common practice,
no source: more points than a field analyser takes in one sweep; a million points took a gigabyte).
Its values must give a finite reflection no larger than `MAX_REFLECTION` (a passive antenna reflects at
most what it receives, |S11| <= 1; the allowance is for calibration error, common practice, no source),
at frequencies from 0 to `MAX_FREQ_HZ` (the registry's own frequency range, 300000 MHz).
A sweep that is not valid Touchstone is left to the compute stage, which says so on its figure.
"""
from __future__ import annotations

from functools import lru_cache
from pathlib import Path

import numpy as np

from registry.physics import sweep as touchstone

MAX_SWEEP_BYTES = 2 * 1024 * 1024
MAX_SWEEP_POINTS = 20_001
MAX_REFLECTION = 1.1
MAX_FREQ_HZ = 300_000e6


def sweep_trouble(file: Path) -> tuple[str, str] | None:
    """What is wrong with the sweep file at `file` (found, expected), or None when it may be used. A file
    many installations name is read once per process while its size and modification time stay."""
    info = file.stat()
    return _trouble(file.resolve(), info.st_size, info.st_mtime_ns)


@lru_cache(maxsize=256)
def _trouble(file: Path, size: int, mtime_ns: int) -> tuple[str, str] | None:
    if size > MAX_SWEEP_BYTES:
        return (f"a sweep file of {size} bytes",
                f"at most {MAX_SWEEP_BYTES} bytes ({MAX_SWEEP_BYTES // 1024 // 1024} MiB) per sweep")
    with open(file, "rb") as stream:
        text = stream.read(MAX_SWEEP_BYTES + 1).decode("latin-1")
    points = sum(1 for line in text.splitlines() if (line.split("!", 1)[0].strip() or "#")[0] not in "#[")
    if points > MAX_SWEEP_POINTS:
        return f"a sweep of {points} points", f"at most {MAX_SWEEP_POINTS} frequency points per sweep"
    try:
        with np.errstate(all="ignore"):
            data = touchstone.parse_s1p(text, source=str(file))
            reflection = np.abs(data.s11)
    except ValueError:
        return None  # not Touchstone: the compute stage reports why on the sweep's figure
    except (OverflowError, ZeroDivisionError):
        return "a value too large to be a measured reflection", f"|S11| at most {MAX_REFLECTION:g}"
    return _values_trouble(data.freqs_hz, reflection)


def _values_trouble(freqs_hz: np.ndarray, reflection: np.ndarray) -> tuple[str, str] | None:
    bad = ~np.isfinite(reflection) | (reflection > MAX_REFLECTION)
    if bad.any():
        first = int(np.flatnonzero(bad)[0])
        shown = f"{reflection[first]:.4g}" if np.isfinite(reflection[first]) else "no finite value"
        return (f"|S11| of {shown} at {freqs_hz[first] / 1e6:g} MHz (data point {first + 1})",
                f"|S11| at most {MAX_REFLECTION:g} (a passive antenna reflects at most what it receives)")
    if freqs_hz[-1] > MAX_FREQ_HZ:
        return (f"a frequency of {freqs_hz[-1] / 1e6:g} MHz",
                f"frequencies up to {MAX_FREQ_HZ / 1e6:g} MHz (is the option line's unit right?)")
    return None
