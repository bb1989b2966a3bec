"""Geometry for the site's drawings: an airframe in plan and side view, and the services band chart.

Only numbers and shapes here; the templates turn them into inline SVG (so every registry string passes
through Jinja's autoescaping). Airframe drawings use the airframe's own coord_unit as SVG user units:
x is the station (nose to the left), y is minus the buttline in plan view (starboard up, seen from
above) and minus the waterline in side view (seen from the left). The outlines are schematic, drawn
from the few dimensions the registry holds; antenna positions are exact.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass

from registry.core.model import Airframe

NOSE_FRACTION = 0.11   # share of the length the rounded nose takes (drawing only)
TAIL_FRACTION = 0.27   # share of the length the tail cone takes (drawing only)
TIP_CHORD_RATIO = 0.45  # wing tip chord over root chord (drawing only)
FIN_TIP_RATIO = 0.55   # fin tip chord over root chord (drawing only)


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


@dataclass(frozen=True)
class Marker:
    """One antenna to place on the drawing."""

    position: str
    sta: float
    bl: float
    wl: float
    surface: str
    status: str
    href: str
    tip_lines: tuple[str, ...]


@dataclass(frozen=True)
class PlacedMarker:
    marker: Marker
    ident: str
    x: str
    y: str
    shape: str
    far_side: bool
    label_x: str
    label_y: str
    leader: str
    tip_x: str
    tip_y: str
    tip_w: str
    tip_h: str
    tip_lines: tuple[tuple[str, str, str], ...]


@dataclass(frozen=True)
class View:
    """One view in its own coordinates (x = STA), placed in the drawing by (shift_x, shift_y)."""

    title: str
    title_x: str
    title_y: str
    shift_x: str
    shift_y: str
    outline: tuple[tuple[str, str], ...]   # (css class, path d)
    composite: tuple[str, ...]            # path d of composite zones (clipped to the outline)
    clip_id: str
    axis: str                              # path of the centreline
    side_labels: tuple[tuple[str, str, str, str], ...]  # (x, y, anchor, text)
    markers: tuple[PlacedMarker, ...]
    ticks: tuple[tuple[str, str], ...]     # (x, label) along the STA scale
    tick_y: str
    tick_len: str
    axis_label: str
    axis_label_x: str
    axis_label_y: str


@dataclass(frozen=True)
class Drawing:
    view_box: str
    font: str
    small_font: str
    views: tuple[View, ...]


def _shape(kind: str, x: float, y: float, r: float) -> str:
    """Marker path by status, so status reads without colour: diamond, triangle, circle, square."""
    if kind == "blocking":
        s = r * 1.35
        return f"M{n(x)},{n(y - s)} L{n(x + s)},{n(y)} L{n(x)},{n(y + s)} L{n(x - s)},{n(y)} Z"
    if kind == "concern":
        s = r * 1.3
        return f"M{n(x)},{n(y - s)} L{n(x + s)},{n(y + s * 0.75)} L{n(x - s)},{n(y + s * 0.75)} Z"
    if kind == "advisory":
        return (f"M{n(x - r)},{n(y)} A{n(r)},{n(r)} 0 1,0 {n(x + r)},{n(y)} "
                f"A{n(r)},{n(r)} 0 1,0 {n(x - r)},{n(y)} Z")
    s = r * 0.85
    return f"M{n(x - s)},{n(y - s)} H{n(x + s)} V{n(y + s)} H{n(x - s)} Z"


def label_levels(items: list[tuple[str, float, float]], char_w: float, pad: float) -> dict[str, int]:
    """Stack labels (key, x, text length) into levels so no two labels on one level overlap."""
    ends: list[float] = []
    levels = {}
    for key, x, chars in sorted(items, key=lambda item: (item[1], item[0])):
        half = chars * char_w / 2 + pad
        for level, end in enumerate(ends):
            if x - half > end:
                ends[level] = x + half
                levels[key] = level
                break
        else:
            ends.append(x + half)
            levels[key] = len(ends) - 1
    return levels


def airframe_drawing(airframe: Airframe, markers: list[Marker], ident: str) -> Drawing:
    """Plan and side view of `airframe` with `markers`; `ident` makes the clip-path ids unique."""
    fus = airframe.fuselage
    length = fus.tail_sta - fus.nose_sta
    half_w = fus.width / 2
    nose = min(NOSE_FRACTION * length, 1.4 * fus.width)
    tail = TAIL_FRACTION * length
    unit = airframe.coord_unit
    font = length * 0.025
    radius = length * 0.0095
    margin = length * 0.06
    gap = length * 0.08

    # ---- plan view (from above): y = -bl ----
    semi = max(half_w, (airframe.wing.span / 2) if airframe.wing else 0.0)
    plan_top = -semi - margin * 0.6
    plan_bottom = semi + margin * 0.6
    tail_half = 0.12 * half_w
    x0, x1 = fus.nose_sta, fus.tail_sta
    plan_fus = (
        f"M{n(x0)},0 Q{n(x0)},{n(-half_w)} {n(x0 + nose)},{n(-half_w)} "
        f"L{n(x1 - tail)},{n(-half_w)} L{n(x1)},{n(-tail_half)} L{n(x1)},{n(tail_half)} "
        f"L{n(x1 - tail)},{n(half_w)} L{n(x0 + nose)},{n(half_w)} Q{n(x0)},{n(half_w)} {n(x0)},0 Z"
    )
    plan_shapes = []
    if airframe.wing:
        w = airframe.wing
        s = w.span / 2
        le_tip = w.root_le_sta + s * math.tan(math.radians(w.sweep_deg))
        c_tip = w.root_chord * TIP_CHORD_RATIO
        plan_shapes.append(("wing", (
            f"M{n(w.root_le_sta)},0 L{n(le_tip)},{n(-s)} L{n(le_tip + c_tip)},{n(-s)} "
            f"L{n(w.root_le_sta + w.root_chord)},0 L{n(le_tip + c_tip)},{n(s)} L{n(le_tip)},{n(s)} Z")))
    plan_shapes.append(("fuselage", plan_fus))

    # ---- side view (from the left): y = -wl ----
    top = fus.centreline_wl + fus.height / 2
    bottom = fus.centreline_wl - fus.height / 2
    tail_top = top - 0.10 * fus.height
    tail_bottom = top - 0.38 * fus.height
    upsweep_start = x1 - tail * 1.25

    def top_at(sta: float) -> float:
        if sta <= x1 - tail:
            return top
        frac = min(1.0, (sta - (x1 - tail)) / tail)
        return top + (tail_top - top) * frac

    side_fus = (
        f"M{n(x0)},{n(-fus.centreline_wl)} Q{n(x0)},{n(-top)} {n(x0 + nose)},{n(-top)} "
        f"L{n(x1 - tail)},{n(-top)} L{n(x1)},{n(-tail_top)} L{n(x1)},{n(-tail_bottom)} "
        f"L{n(upsweep_start)},{n(-bottom)} L{n(x0 + nose)},{n(-bottom)} "
        f"Q{n(x0)},{n(-bottom)} {n(x0)},{n(-fus.centreline_wl)} Z"
    )
    side_shapes = []
    side_top = top
    if airframe.fin:
        f = airframe.fin
        le_tip = f.root_le_sta + f.height * math.tan(math.radians(f.sweep_deg))
        c_tip = f.root_chord * FIN_TIP_RATIO
        base = top_at(f.root_le_sta)
        side_top = base + f.height
        side_shapes.append(("fin", (
            f"M{n(f.root_le_sta)},{n(-base)} L{n(le_tip)},{n(-(base + f.height))} "
            f"L{n(le_tip + c_tip)},{n(-(base + f.height))} "
            f"L{n(f.root_le_sta + f.root_chord)},{n(-top_at(f.root_le_sta + f.root_chord))} Z")))
    side_shapes.append(("fuselage", side_fus))
    side_top_y = -side_top - margin * 0.6
    side_bottom_y = -bottom + margin * 0.6

    # ---- labels: stacked above or below the outline, joined to their marker by a leader ----
    small = font * 0.85
    line_h = small * 1.35
    char_w = small * 0.62

    def layout_labels(view: str) -> tuple[dict[str, tuple[float, float, str]], float, float]:
        """Per position: (label x, label baseline y, leader path); and the extent the labels reach."""
        groups: dict[bool, list[tuple[Marker, float, float]]] = {True: [], False: []}
        for m in markers:
            if view == "plan":
                x, y = m.sta, -m.bl
                above = m.surface != "bottom"
                edge_above, edge_below = -half_w, half_w
            else:
                x, y = m.sta, -m.wl
                above = m.wl >= fus.centreline_wl
                edge_above, edge_below = -top, -bottom
            groups[above].append((m, x, y))
        placed: dict[str, tuple[float, float, str]] = {}
        reach_top, reach_bottom = 0.0, 0.0
        for above, group in groups.items():
            levels = label_levels([(m.position, x, len(m.position)) for m, x, _ in group], char_w, small * 0.3)
            for m, x, y in group:
                level = levels[m.position]
                if above:
                    base = min(y, edge_above) - radius * 2.2 - small * 0.3
                    label_y = base - level * line_h
                    leader = f"M{n(x)},{n(y - radius * 1.3)} V{n(label_y + small * 0.25)}"
                    reach_top = min(reach_top, label_y - small)
                else:
                    base = max(y, edge_below) + radius * 2.2 + small
                    label_y = base + level * line_h
                    leader = f"M{n(x)},{n(y + radius * 1.3)} V{n(label_y - small * 0.95)}"
                    reach_bottom = max(reach_bottom, label_y + small * 0.3)
                placed[m.position] = (x, label_y, leader)
        return placed, reach_top, reach_bottom

    plan_labels, plan_reach_top, plan_reach_bottom = layout_labels("plan")
    side_labels, side_reach_top, side_reach_bottom = layout_labels("side")
    plan_top = min(plan_top, plan_reach_top - font * 0.4)
    plan_bottom = max(plan_bottom, plan_reach_bottom + font * 0.4)
    side_top_y = min(side_top_y, side_reach_top - font * 0.4)
    side_bottom_y = max(side_bottom_y, side_reach_bottom + font * 0.4)

    # ---- layout: plan view on the left, side view on the right, both with an STA scale ----
    fin_end = x1
    if airframe.fin:
        f = airframe.fin
        fin_end = max(f.root_le_sta + f.root_chord,
                      f.root_le_sta + f.height * math.tan(math.radians(f.sweep_deg)) + f.root_chord * FIN_TIP_RATIO)
    wing_end = x1
    if airframe.wing:
        w = airframe.wing
        wing_end = max(w.root_le_sta + w.root_chord, w.root_le_sta + w.span / 2 * math.tan(math.radians(w.sweep_deg))
                       + w.root_chord * TIP_CHORD_RATIO)
    left = min(x0, min((m.sta for m in markers), default=x0)) - margin
    right = max(x1, fin_end, wing_end, max((m.sta for m in markers), default=x1)) + margin
    view_width = right - left
    title_space = font * 2.2
    scale_space = font * 3.8
    plan_box = (plan_top - title_space, plan_bottom + scale_space)
    side_box = (side_top_y - title_space, side_bottom_y + scale_space)
    plan_mid = (plan_box[0] + plan_box[1]) / 2
    side_mid = (side_box[0] + side_box[1]) / 2
    side_shift_y = plan_mid - side_mid
    side_shift_x = view_width + gap
    total_top = min(plan_box[0], side_box[0] + side_shift_y)
    total_bottom = max(plan_box[1], side_box[1] + side_shift_y)

    def composite_paths(view: str) -> tuple[str, ...]:
        paths = []
        for zone in airframe.zones:
            if zone.material != "composite":
                continue
            surfaces = set(zone.surfaces)
            if view == "plan" and surfaces and not surfaces & {"top", "bottom", "nose", "tail", "wing_left",
                                                              "wing_right", "side_left", "side_right"}:
                continue
            y_top, y_bottom = (plan_top, plan_bottom) if view == "plan" else (side_top_y, side_bottom_y)
            paths.append(f"M{n(zone.sta_from)},{n(y_top)} H{n(zone.sta_to)} "
                         f"V{n(y_bottom)} H{n(zone.sta_from)} Z")
        return tuple(paths)

    def place(view: str, top_limit: float) -> tuple[PlacedMarker, ...]:
        labels = plan_labels if view == "plan" else side_labels
        placed = []
        for m in sorted(markers, key=lambda m: (m.sta, m.position)):
            if view == "plan":
                x, y = m.sta, -m.bl
                far = m.surface == "bottom"
            else:
                x, y = m.sta, -m.wl
                far = m.surface in ("side_right", "wing_right")
            label_x, label_y, leader = labels[m.position]
            lines = m.tip_lines
            tip_font = small
            tip_w = max(len(line) for line in lines) * tip_font * 0.6 + tip_font * 1.2
            tip_h = len(lines) * tip_font * 1.3 + tip_font * 0.6
            tip_x = min(max(x - tip_w / 2, left), right - tip_w)
            tip_y = y - radius * 2.4 - tip_h
            if tip_y < top_limit:
                tip_y = y + radius * 2.4
            text_lines = tuple(
                (n(tip_x + tip_font * 0.6), n(tip_y + tip_font * (1.25 + 1.3 * i)), line)
                for i, line in enumerate(lines))
            placed.append(PlacedMarker(
                marker=m, ident=f"{view}-{ident}-{re.sub(r'[^A-Za-z0-9_-]', '_', m.position)}", x=n(x), y=n(y), shape=_shape(m.status, x, y, radius), far_side=far,
                label_x=n(label_x), label_y=n(label_y), leader=leader,
                tip_x=n(tip_x), tip_y=n(tip_y), tip_w=n(tip_w), tip_h=n(tip_h), tip_lines=text_lines))
        return tuple(placed)

    step = nice_step(length, 6)
    ticks = []
    value = math.ceil(x0 / step) * step
    while value <= x1 + 1e-9:
        ticks.append((n(value), n(value)))
        value += step
    scale = {"ticks": tuple(ticks), "tick_len": n(font * 0.5), "axis_label": f"STA ({unit})",
             "axis_label_x": n((x0 + x1) / 2)}

    views = (
        View(title="Plan view from above · bottom antennas dashed", title_x=n(left), title_y=n(plan_top - font * 0.9),
             shift_x="0", shift_y="0",
             outline=tuple(plan_shapes), composite=composite_paths("plan"), clip_id=f"clip-plan-{ident}",
             axis=f"M{n(left)},0 H{n(right)}",
             side_labels=((n(right), n(plan_top + font * 0.8), "end", "right side"),
                          (n(right), n(plan_bottom - font * 0.2), "end", "left side")),
             markers=place("plan", plan_top - title_space),
             tick_y=n(plan_bottom), axis_label_y=n(plan_bottom + font * 3.0), **scale),
        View(title="Side view from the left · right-side antennas dashed", title_x=n(left),
             title_y=n(side_top_y - font * 0.9), shift_x=n(side_shift_x), shift_y=n(side_shift_y),
             outline=tuple(side_shapes), composite=composite_paths("side"), clip_id=f"clip-side-{ident}",
             axis=f"M{n(left)},{n(-fus.centreline_wl)} H{n(right)}",
             side_labels=((n(left), n(-fus.centreline_wl - font * 0.4), "start",
                           f"WL {n(fus.centreline_wl)} centreline"),),
             markers=place("side", side_top_y - title_space),
             tick_y=n(side_bottom_y), axis_label_y=n(side_bottom_y + font * 3.0), **scale),
    )
    return Drawing(
        view_box=f"{n(left)} {n(total_top)} {n(2 * view_width + gap)} {n(total_bottom - total_top)}",
        font=n(font), small_font=n(font * 0.85), views=views,
    )


# ---- services band chart ------------------------------------------------------------------------------

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
