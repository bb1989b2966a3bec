"""How a value reads on the terminal (`build.py diff`) and on the site's changes page."""
from __future__ import annotations

from typing import Any

from registry.output.comparison import FigureChange
from registry.output.numbers import DB_UNITS, is_vswr, number_text

TEXT_WIDTH = 60


def show(value: Any, unit: str = "") -> str:
    """A value for the terminal and the changes page: numbers to 4 significant digits (registry values as typed)."""
    if value is None or value == "":
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        text = str(value)
    elif isinstance(value, float):
        text = f"{value:.10g}" if value == round(value, 6) and abs(value) < 1e9 else f"{value:.4g}"
    else:
        text = str(value).replace("\n", " ").strip()
        if len(text) > TEXT_WIDTH:
            text = text[:TEXT_WIDTH - 1] + "…"
    return f"{text} {unit}" if unit else text


def figure_text(value: Any, unit: str, key: str = "") -> str:
    """A computed figure by its quantity (`output.numbers`); registry values as typed (`show`)."""
    if isinstance(value, float):
        return number_text(value, unit, key)
    return show(value, unit)


def delta_text(item: FigureChange) -> str:
    """How far a figure moved, by its quantity: a level in dB (dB, dBi, dBm...) as a difference in dB
    (a ratio of two powers is already a difference of their levels: +6.45 dB, never a percentage of a
    logarithm); a percentage as a difference in percentage points; days and VSWR as a difference; any
    other quantity as a difference in its unit and relative to the old value. "" unless both are numbers."""
    difference = item.difference
    if difference is None:
        return ""
    if item.unit in DB_UNITS:
        return signed(difference, "dB")
    if item.unit == "%":
        return signed(difference, "%").removesuffix(" %") + " percentage points"
    if is_vswr(item.key, item.unit):
        return ("+" if difference >= 0 else "-") + f"{abs(difference):.2f}"  # VSWR to two decimals, as n.nn:1
    pct = item.relative_pct
    if item.unit == "days" or pct is None:
        return signed(difference, item.unit)
    return f"{signed(difference, item.unit)}, {pct:+.1f} %"


def signed(value: float, unit: str) -> str:
    """A difference with its sign always written and its digits by quantity (`number_text`)."""
    return ("+" if value >= 0 else "-") + number_text(abs(value), unit)

