"""How a value reads on the terminal (`build.py diff`) and on the site's changes page."""
from __future__ import annotations

from typing import Any

from registry.output.comparison import FigureChange
from registry.output.numbers import number_text

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
    pct = item.relative_pct
    return f"{pct:+.1f} %" if pct is not None else ""

