"""The site's one set of text formatters: numbers, register values, bands, locations and notes."""
from __future__ import annotations

import functools
import math
import re
from typing import Any, Iterable

import markdown
import nh3

from registry.core.results import Figure

NONE_TEXT = "—"
"""Shown where there is no value."""

NOTES_TAGS = {"p", "br", "strong", "em", "b", "i", "code", "pre", "ul", "ol", "li", "blockquote", "a",
              "h3", "h4", "h5", "h6", "table", "thead", "tbody", "tr", "th", "td", "hr", "del", "sup", "sub"}
SAFE_LINK = re.compile(r"^(https?:|mailto:)", re.IGNORECASE)


def _number(number: float) -> str:
    """A number (not NaN) to five significant figures, without trailing zeros."""
    if not math.isfinite(number):
        return "∞" if number > 0 else "−∞"
    if number == 0:
        return "0"
    decimals = min(max(0, 4 - math.floor(math.log10(abs(number)))), 8)
    text = f"{number:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text.replace("-", "−")


def fmt(value: Any, unit: str = "") -> str:
    """A value for display: numbers to five significant figures without trailing zeros."""
    if value is None:
        return NONE_TEXT
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)) and math.isnan(value):
        return "n/a"  # the figure does not apply (a cut that never falls 3 dB, no side lobe); no unit
    text = _number(float(value)) if isinstance(value, (int, float)) else str(value)
    return f"{text} {unit}" if unit and text != NONE_TEXT else text


def exact(value: Any, unit: str = "") -> str:
    """A value as the register holds it (coordinates, band edges, lengths): no rounding."""
    if isinstance(value, float):
        text = format(value, ".12g").replace("-", "−")
        return f"{text} {unit}" if unit else text
    return fmt(value, unit)


def fmt_figure(figure: Figure | None) -> str:
    """A computed figure's value with its unit, or the no-value mark."""
    return fmt(figure.value, figure.unit) if figure is not None else NONE_TEXT


def words(name: str) -> str:
    """A register name (kind, surface) as words: "wing_left" → "wing left"."""
    return name.replace("_", " ")


def bands_text(bands: Iterable[tuple[float, float]]) -> str:
    return ", ".join(f"{exact(low)}–{exact(high)} MHz" for low, high in bands)


def geometry_text(value: Any) -> str:
    if isinstance(value, tuple):
        return "; ".join(geometry_text(item) for item in value)
    if hasattr(value, "items"):
        return ", ".join(f"{key} {geometry_text(item)}" for key, item in value.items())
    return fmt(value)


def location_text(location: Any, unit: str, separator: str = " · ") -> str:
    """An antenna's STA/BL/WL as the register holds them, in the airframe's unit."""
    return separator.join((f"STA {exact(location.sta)}", f"BL {exact(location.bl)}",
                           f"WL {exact(location.wl)} {unit}"))


@functools.lru_cache(maxsize=4096)
def notes_html(text: str) -> str:
    """Markdown notes to HTML, sanitised with an allow-list: no scripts, handlers, images or odd links.
    Kept per text in each process: a fleet repeats its notes from aircraft to aircraft."""
    if not text.strip():
        return ""
    raw = markdown.markdown(text, extensions=["tables", "sane_lists"], output_format="html")

    def keep(tag: str, attribute: str, value: str) -> str | None:
        if tag == "a" and attribute == "href":
            return value if SAFE_LINK.match(value.strip()) else None
        return value

    return nh3.clean(raw, tags=NOTES_TAGS, attributes={"a": {"href", "title"}, "th": {"align"}, "td": {"align"}},
                     url_schemes={"http", "https", "mailto"}, link_rel="noopener noreferrer",
                     attribute_filter=keep, strip_comments=True)


def plain_text(text: str) -> str:
    """Notes as plain words, for the search index."""
    html = notes_html(text)
    return re.sub(r"\s+", " ", nh3.clean(html, tags=set())).strip() if html else ""
