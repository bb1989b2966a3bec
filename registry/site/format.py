"""The site's one set of text formatters: numbers (by quantity, through `output.numbers`, the rule the
terminal uses too), register values, bands, locations, field labels and notes."""
from __future__ import annotations

import functools
import re
from typing import Any, Iterable

import markdown
import nh3

from registry.core.results import Figure
from registry.output.numbers import number_text
from registry.site.labels import field_label

NONE_TEXT = "—"
"""Shown where there is no value."""

NOTES_TAGS = {"p", "br", "strong", "em", "b", "i", "code", "pre", "ul", "ol", "li", "blockquote", "a",
              "h3", "h4", "h5", "h6", "table", "thead", "tbody", "tr", "th", "td", "hr", "del", "sup", "sub"}
SAFE_LINK = re.compile(r"^(https?:|mailto:)", re.IGNORECASE)


def fmt(value: Any, unit: str = "", key: str = "") -> str:
    """A value for display, by quantity (`output.numbers`: digits suited to the unit, VSWR as n.nn:1 when
    the figure key or rule names one); "n/a" never carries a unit; minus signs typeset as U+2212."""
    if value is None:
        return NONE_TEXT
    return number_text(value, unit, key, minus="−")


def vswr_text(value: Any) -> str:
    """A VSWR as n.nn:1 (a registry value too: 1.62 → "1.62:1")."""
    return NONE_TEXT if value is None else number_text(value, key="vswr", minus="−")


def exact(value: Any, unit: str = "") -> str:
    """A value as the register holds it (coordinates, band edges, lengths): no rounding."""
    if isinstance(value, float):
        text = format(value, ".12g").replace("-", "−")
        return f"{text} {unit}" if unit else text
    return fmt(value, unit)


def fmt_figure(figure: Figure | None) -> str:
    """A computed figure's value with its unit (by its quantity), or the no-value mark."""
    return fmt(figure.value, figure.unit, figure.key) if figure is not None else NONE_TEXT


def words(name: str) -> str:
    """A register name (kind, surface) as words: "wing_left" → "wing left"."""
    return name.replace("_", " ")


def bands_text(bands: Iterable[tuple[float, float]]) -> str:
    return ", ".join(f"{exact(low)}–{exact(high)} MHz" for low, high in bands)


def field_rows(fields: Any) -> list[tuple[str, str, str]]:
    """Registry fields (an antenna's geometry) as (label in words, value as typed with its unit, field
    name): "element_diameter_m: 0.012" → ("Element diameter", "0.012 m", "element_diameter_m")."""
    rows = []
    for name, value in fields.items():
        label, unit = field_label(name)
        shown = exact(value, unit) if isinstance(value, (int, float)) and not isinstance(value, bool) \
            else geometry_text(value)
        rows.append((label, shown, name))
    return rows


def geometry_text(value: Any) -> str:
    """A registry value as typed; a nested mapping's keys in words with their units."""
    if isinstance(value, tuple):
        return "; ".join(geometry_text(item) for item in value)
    if hasattr(value, "items"):
        return ", ".join(f"{label.lower()} {shown}" for label, shown, _ in field_rows(value))
    return exact(value)


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
