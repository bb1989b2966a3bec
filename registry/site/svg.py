"""Numbers for inline SVG: coordinates as short, stable text, and scale steps."""
from __future__ import annotations

import math


def n(value: float) -> str:
    """A coordinate as short, stable text."""
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def nice_step(span: float, target_ticks: int = 8) -> float:
    """A 1-2-5 step giving about `target_ticks` ticks over `span`."""
    raw = span / max(target_ticks, 1)
    power = 10 ** math.floor(math.log10(raw))
    for factor in (1, 2, 5, 10):
        if raw <= factor * power:
            return factor * power
    return 10 * power
