"""Geometry of the services band chart: every service and the antenna models serving it, on a log
frequency axis. Only numbers and shapes here; the services template turns them into inline SVG."""
from __future__ import annotations

import math
from dataclasses import dataclass

from registry.site.svg import n

CHART_MIN_MHZ = 0.1
CHART_MAX_MHZ = 20000.0


@dataclass(frozen=True)
class Bar:
    x: str
    w: str
    title: str


@dataclass(frozen=True)
class ChartRow:
    y: str
    height: str
    label: str
    sub: str
    href: str
    kind: str          # "service" or "antenna"
    covers: bool
    bars: tuple[Bar, ...]
    note_x: str
    note: str


@dataclass(frozen=True)
class BandChart:
    width: str
    height: str
    label_width: str
    decades: tuple[tuple[str, str], ...]
    rows: tuple[ChartRow, ...]
    row_backgrounds: tuple[tuple[str, str], ...]


def _freq_label(mhz: float) -> str:
    if mhz < 1:
        return f"{mhz * 1000:g} kHz"
    if mhz >= 1000:
        return f"{mhz / 1000:g} GHz"
    return f"{mhz:g} MHz"


def band_chart(groups: list[tuple[str, str, str, tuple[tuple[float, float], ...],
                                  list[tuple[str, str, str, tuple[tuple[float, float], ...], bool]]]]) -> BandChart:
    """Rows for every service and, under each, the antenna models serving it, on a log frequency axis.

    `groups` holds (service label, sub-label, href, bands, [(model label, sub-label, href, bands, covers)]).
    """
    label_width = 250.0
    plot_width = 640.0
    lo, hi = math.log10(CHART_MIN_MHZ), math.log10(CHART_MAX_MHZ)

    def fx(mhz: float) -> float:
        mhz = min(max(mhz, CHART_MIN_MHZ), CHART_MAX_MHZ)
        return label_width + (math.log10(mhz) - lo) / (hi - lo) * plot_width

    def note_at(bands) -> float:
        return max(fx(b) for _, b in bands) + 8.0 if bands else label_width

    def bands_note(bands) -> str:
        return ", ".join(f"{_freq_label(a)}–{_freq_label(b)}" for a, b in bands)

    rows = []
    backgrounds = []
    y = 28.0
    for index, (label, sub, href, bands, antennas) in enumerate(groups):
        start = y
        bars = tuple(Bar(n(fx(a)), n(max(fx(b) - fx(a), 4.0)), f"{a:g}–{b:g} MHz") for a, b in bands)
        rows.append(ChartRow(n(y), "16", label, sub, href, "service", True, bars, n(note_at(bands)),
                             bands_note(bands)))
        y += 22.0
        for a_label, a_sub, a_href, a_bands, covers in antennas:
            a_bars = tuple(Bar(n(fx(a)), n(max(fx(b) - fx(a), 4.0)), f"{a:g}–{b:g} MHz") for a, b in a_bands)
            rows.append(ChartRow(n(y), "10", a_label, a_sub, a_href, "antenna", covers, a_bars,
                                 n(note_at(a_bands)), "rated " + bands_note(a_bands)))
            y += 17.0
        y += 8.0
        if index % 2 == 0:
            backgrounds.append((n(start - 5.0), n(y - start - 3.0)))
    decades = []
    value = CHART_MIN_MHZ
    while value <= CHART_MAX_MHZ * 1.0001:
        decades.append((n(fx(value)), _freq_label(value)))
        value *= 10
    return BandChart(width=n(label_width + plot_width + 200.0), height=n(y + 10.0), label_width=n(label_width),
                     decades=tuple(decades), rows=tuple(rows), row_backgrounds=tuple(backgrounds))
