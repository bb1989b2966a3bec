"""Geometry for the airframe drawing: plan and side view with the antennas placed on them.

Only numbers and shapes here; the templates turn them into inline SVG (so every registry string passes
through Jinja's autoescaping). Airframe drawings use the airframe's own coord_unit as SVG user units:
x is the station (nose to the left), y is minus the buttline in plan view (starboard up, seen from
above) and minus the waterline in side view (seen from the left). The outlines are schematic, drawn
from the few dimensions the registry holds; antenna positions are exact.
"""
from __future__ import annotations

import dataclasses
import math
import re
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from registry.core.model import Airframe
from registry.site.outline import Frame, composite_paths, extent, frame_of, plan_outline, side_outline
from registry.site.svg import n, nice_step



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
    sectors: tuple[str, ...] = ()          # path d of blocked azimuth sectors of a selected antenna (plan)


@dataclass(frozen=True)
class Drawing:
    view_box: str
    font: str
    small_font: str
    views: tuple[View, ...]


def _shape(kind: str, x: float, y: float, r: float) -> str:
    """Marker path by status, the shapes the badges and tables use too (site.css, partials/badges.html), so
    status reads without colour: unserviceable a diamond ◆, query a triangle ▲, note a circle ●, no open
    findings a tick ✓."""
    if kind == "unserviceable":
        s = r * 1.35
        return f"M{n(x)},{n(y - s)} L{n(x + s)},{n(y)} L{n(x)},{n(y + s)} L{n(x - s)},{n(y)} Z"
    if kind == "query":
        s = r * 1.3
        return f"M{n(x)},{n(y - s)} L{n(x + s)},{n(y + s * 0.75)} L{n(x - s)},{n(y + s * 0.75)} Z"
    if kind == "note":
        return (f"M{n(x - r)},{n(y)} A{n(r)},{n(r)} 0 1,0 {n(x + r)},{n(y)} "
                f"A{n(r)},{n(r)} 0 1,0 {n(x - r)},{n(y)} Z")
    s = r * 1.4
    tick = ((-1.0, -0.05), (-0.4, 0.55), (1.0, -0.85), (1.0, -0.35), (-0.4, 1.05), (-1.0, 0.45))
    return "M" + " L".join(f"{n(x + s * dx)},{n(y + s * dy)}" for dx, dy in tick) + " Z"


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


Labels = dict[str, tuple[float, float, str]]
"""Per position: label x, label baseline y, leader path."""


def label_sides(markers: list[Marker], view: str, f: Frame) -> dict[bool, list[tuple[Marker, float, float, float]]]:
    """Markers whose labels go above (True) or below (False) the outline: (marker, x, y, outline edge)."""
    groups: dict[bool, list[tuple[Marker, float, float, float]]] = {True: [], False: []}
    for m in markers:
        if view == "plan":
            above = m.surface != "bottom"
            groups[above].append((m, m.sta, -m.bl, -f.half_w if above else f.half_w))
        else:
            above = m.wl >= f.centreline_wl
            groups[above].append((m, m.sta, -m.wl, -f.top if above else -f.bottom))
    return groups


def layout_labels(markers: list[Marker], view: str, f: Frame) -> tuple[Labels, float, float]:
    """Labels stacked above or below the outline, joined to their marker by a leader; and the extent
    the labels reach above and below."""
    small, radius = f.small, f.radius
    placed: Labels = {}
    reach_top, reach_bottom = 0.0, 0.0
    for above, group in label_sides(markers, view, f).items():
        levels = label_levels([(m.position, x, len(m.position)) for m, x, _, _ in group], f.char_w, small * 0.3)
        for m, x, y, edge in group:
            level = levels[m.position]
            if above:
                base = min(y, edge) - radius * 2.2 - small * 0.3
                label_y = base - level * f.line_h
                leader = f"M{n(x)},{n(y - radius * 1.3)} V{n(label_y + small * 0.25)}"
                reach_top = min(reach_top, label_y - small)
            else:
                base = max(y, edge) + radius * 2.2 + small
                label_y = base + level * f.line_h
                leader = f"M{n(x)},{n(y + radius * 1.3)} V{n(label_y - small * 0.95)}"
                reach_bottom = max(reach_bottom, label_y + small * 0.3)
            placed[m.position] = (x, label_y, leader)
    return placed, reach_top, reach_bottom


def tooltip(lines: tuple[str, ...], x: float, y: float, f: Frame, span: tuple[float, float], top_limit: float
            ) -> tuple[float, float, float, float, tuple[tuple[str, str, str], ...]]:
    """A marker's tooltip box (x, y, width, height) above the marker, or below when it would leave the
    view, kept within the view's `span` (left, right); and its text lines (x, y, text)."""
    tip_font = f.small
    tip_w = max(len(line) for line in lines) * tip_font * 0.6 + tip_font * 1.2
    tip_h = len(lines) * tip_font * 1.3 + tip_font * 0.6
    tip_x = min(max(x - tip_w / 2, span[0]), span[1] - tip_w)
    tip_y = y - f.radius * 2.4 - tip_h
    if tip_y < top_limit:
        tip_y = y + f.radius * 2.4
    text_lines = tuple((n(tip_x + tip_font * 0.6), n(tip_y + tip_font * (1.25 + 1.3 * i)), line)
                       for i, line in enumerate(lines))
    return tip_x, tip_y, tip_w, tip_h, text_lines


def place(markers: list[Marker], view: str, labels: Labels, f: Frame, span: tuple[float, float],
          top_limit: float, ident: str) -> tuple[PlacedMarker, ...]:
    """The markers of one view with their shapes, labels and tooltips, in station order."""
    placed = []
    for m in sorted(markers, key=lambda m: (m.sta, m.position)):
        if view == "plan":
            x, y = m.sta, -m.bl
            far = m.surface == "bottom"
        else:
            x, y = m.sta, -m.wl
            far = m.surface in ("side_right", "wing_right")
        label_x, label_y, leader = labels[m.position]
        tip_x, tip_y, tip_w, tip_h, text_lines = tooltip(m.tip_lines, x, y, f, span, top_limit)
        placed.append(PlacedMarker(
            marker=m, ident=f"{view}-{ident}-{re.sub(r'[^A-Za-z0-9_-]', '_', m.position)}", x=n(x), y=n(y),
            shape=_shape(m.status, x, y, f.radius), far_side=far,
            label_x=n(label_x), label_y=n(label_y), leader=leader,
            tip_x=n(tip_x), tip_y=n(tip_y), tip_w=n(tip_w), tip_h=n(tip_h), tip_lines=text_lines))
    return tuple(placed)


def sta_scale(f: Frame, unit: str) -> dict[str, object]:
    """The STA scale under each view: ticks at a 1-2-5 step over the fuselage."""
    step = nice_step(f.length, 6)
    ticks = []
    value = math.ceil(f.x0 / step) * step
    while value <= f.x1 + 1e-9:
        ticks.append((n(value), n(value)))
        value += step
    return {"ticks": tuple(ticks), "tick_len": n(f.font * 0.5), "axis_label": f"STA ({unit})",
            "axis_label_x": n((f.x0 + f.x1) / 2)}


@dataclass(frozen=True)
class Parts:
    """One view before it is placed: outline shapes, vertical extent (outline and labels), labels."""

    shapes: tuple[tuple[str, str], ...]
    top: float
    bottom: float
    labels: Labels


frame_for = lru_cache(maxsize=64)(frame_of)
"""`frame_of`, once per airframe content in a process."""


@lru_cache(maxsize=64)
def outline_of(airframe: Airframe, view: str) -> tuple[tuple[tuple[str, str], ...], float, float]:
    """A view's outline shapes, top and bottom, drawn once per airframe content and view in a process
    (every installation page with a coverage map draws its aircraft again)."""
    return (plan_outline if view == "plan" else side_outline)(airframe, frame_for(airframe))


def view_parts(airframe: Airframe, markers: list[Marker], f: Frame, view: str) -> Parts:
    shapes, top, bottom = outline_of(airframe, view)
    labels, reach_top, reach_bottom = layout_labels(markers, view, f)
    return Parts(shapes, min(top, reach_top - f.font * 0.4), max(bottom, reach_bottom + f.font * 0.4), labels)


def plan_view(airframe: Airframe, markers: list[Marker], f: Frame, parts: Parts, span: tuple[float, float],
              ident: str) -> View:
    """The plan view from above, where the drawing's origin is."""
    return View(**_plan_frame(airframe, f, parts.shapes, parts.top, parts.bottom, span, ident),
                markers=place(markers, "plan", parts.labels, f, span, parts.top - f.font * 2.2, ident))


def side_view(airframe: Airframe, markers: list[Marker], f: Frame, parts: Parts, span: tuple[float, float],
              ident: str, shift: tuple[float, float]) -> View:
    """The side view from the left, shifted right of the plan view by `shift` (x, y)."""
    return View(**_side_frame(airframe, f, parts.shapes, parts.top, parts.bottom, span, ident, shift),
                markers=place(markers, "side", parts.labels, f, span, parts.top - f.font * 2.2, ident))


@lru_cache(maxsize=32)
def _plan_frame(airframe: Airframe, f: Frame, shapes: tuple, top: float, bottom: float, span: tuple[float, float],
                ident: str) -> dict[str, object]:
    """The plan view's fields but its markers: the same for every page that draws this airframe with the
    same extent (an aircraft's installation pages), so worked out once per process."""
    left, right = span
    return dict(title="Plan view from above · bottom antennas dashed", title_x=n(left),
                title_y=n(top - f.font * 0.9), shift_x="0", shift_y="0",
                outline=shapes, composite=composite_paths(airframe, "plan", top, bottom),
                clip_id=f"clip-plan-{ident}", axis=f"M{n(left)},0 H{n(right)}",
                side_labels=((n(right), n(top + f.font * 0.8), "end", "right side"),
                             (n(right), n(bottom - f.font * 0.2), "end", "left side")),
                tick_y=n(bottom), axis_label_y=n(bottom + f.font * 3.0),
                **sta_scale(f, airframe.coord_unit))


@lru_cache(maxsize=32)
def _side_frame(airframe: Airframe, f: Frame, shapes: tuple, top: float, bottom: float, span: tuple[float, float],
                ident: str, shift: tuple[float, float]) -> dict[str, object]:
    """The side view's fields but its markers (see `_plan_frame`)."""
    left, right = span
    return dict(title="Side view from the left · right-side antennas dashed", title_x=n(left),
                title_y=n(top - f.font * 0.9), shift_x=n(shift[0]), shift_y=n(shift[1]),
                outline=shapes, composite=composite_paths(airframe, "side", top, bottom),
                clip_id=f"clip-side-{ident}", axis=f"M{n(left)},{n(-f.centreline_wl)} H{n(right)}",
                side_labels=((n(left), n(-f.centreline_wl - f.font * 0.4), "start",
                              f"WL {n(f.centreline_wl)} centreline"),),
                tick_y=n(bottom), axis_label_y=n(bottom + f.font * 3.0),
                **sta_scale(f, airframe.coord_unit))


def sector_paths(f: Frame, sta: float, bl: float, sectors) -> tuple[str, ...]:
    """Wedges in plan coordinates (x = STA, y = −BL) from an antenna at (sta, bl), one per blocked azimuth
    run (start_deg, width_deg), azimuth from the nose positive to the right; radius a quarter of the
    fuselage length."""
    radius = 0.25 * f.length
    paths = []
    for start, width in sectors:
        if width >= 360.0:  # blocked all round: a disc, with no edge drawn from the antenna out to the rim
            x0, x1, y = n(sta - radius), n(sta + radius), n(-bl)
            paths.append(f"M{x0},{y} A{n(radius)},{n(radius)} 0 1,0 {x1},{y} A{n(radius)},{n(radius)} 0 1,0 {x0},{y} Z")
            continue
        angles = np.radians(start + np.linspace(0.0, width, max(2, int(width // 3) + 2)))
        points = " L".join(f"{n(sta - radius * math.cos(a))},{n(-bl - radius * math.sin(a))}" for a in angles)
        paths.append(f"M{n(sta)},{n(-bl)} L{points} Z")
    return tuple(paths)


def airframe_drawing(airframe: Airframe, markers: list[Marker], ident: str, sectors=None) -> Drawing:
    """Plan and side view of `airframe` with `markers`; `ident` makes the clip-path ids unique.
    The plan view on the left, the side view on the right, both with an STA scale. `sectors`:
    (sta, bl, ((start_deg, width_deg), ...)) of a selected antenna, drawn as wedges in the plan view."""
    f = frame_for(airframe)
    plan = view_parts(airframe, markers, f, "plan")
    side = view_parts(airframe, markers, f, "side")
    left, right = extent(airframe, [m.sta for m in markers], f)
    view_width = right - left
    title_space = f.font * 2.2
    scale_space = f.font * 3.8
    plan_box = (plan.top - title_space, plan.bottom + scale_space)
    side_box = (side.top - title_space, side.bottom + scale_space)
    side_shift_y = (plan_box[0] + plan_box[1]) / 2 - (side_box[0] + side_box[1]) / 2
    side_shift_x = view_width + f.gap
    total_top = min(plan_box[0], side_box[0] + side_shift_y)
    total_bottom = max(plan_box[1], side_box[1] + side_shift_y)
    plan_v = plan_view(airframe, markers, f, plan, (left, right), ident)
    if sectors:
        plan_v = dataclasses.replace(plan_v, sectors=sector_paths(f, *sectors))
    views = (plan_v,
             side_view(airframe, markers, f, side, (left, right), ident, (side_shift_x, side_shift_y)))
    return Drawing(
        view_box=f"{n(left)} {n(total_top)} {n(2 * view_width + f.gap)} {n(total_bottom - total_top)}",
        font=n(f.font), small_font=n(f.font * 0.85), views=views,
    )
