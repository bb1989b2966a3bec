"""The airframe's schematic outline in plan and side view, drawn from the few dimensions the registry
holds: fuselage, wing and fin paths, the composite zones, and how far each view reaches.

Coordinates are the airframe's own coord_unit: x is the station (nose to the left), y is minus the
buttline in plan view and minus the waterline in side view.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from registry.core.model import Airframe
from registry.site.svg import n

NOSE_FRACTION = 0.11   # share of the length the rounded nose takes (drawing only)
TAIL_FRACTION = 0.27   # share of the length the tail cone takes (drawing only)
TIP_CHORD_RATIO = 0.45  # wing tip chord over root chord (drawing only)
FIN_TIP_RATIO = 0.55   # fin tip chord over root chord (drawing only)


@dataclass(frozen=True)
class Frame:
    """The airframe's extent along its fuselage, and the drawing's sizes, all scaled from its length."""

    x0: float              # nose station
    x1: float              # tail station
    length: float
    half_w: float
    nose: float            # length of the rounded nose
    tail: float            # length of the tail cone
    centreline_wl: float
    top: float             # waterline of the fuselage top
    bottom: float          # waterline of the fuselage bottom
    tail_top: float
    tail_bottom: float
    font: float
    radius: float          # marker size
    margin: float
    gap: float             # between the plan and the side view
    small: float           # label font size
    line_h: float
    char_w: float


def frame_of(airframe: Airframe) -> Frame:
    fus = airframe.fuselage
    length = fus.tail_sta - fus.nose_sta
    top = fus.centreline_wl + fus.height / 2
    font = length * 0.025
    small = font * 0.85
    return Frame(x0=fus.nose_sta, x1=fus.tail_sta, length=length, half_w=fus.width / 2,
                 nose=min(NOSE_FRACTION * length, 1.4 * fus.width), tail=TAIL_FRACTION * length,
                 centreline_wl=fus.centreline_wl, top=top, bottom=fus.centreline_wl - fus.height / 2,
                 tail_top=top - 0.10 * fus.height, tail_bottom=top - 0.38 * fus.height,
                 font=font, radius=length * 0.0095, margin=length * 0.06, gap=length * 0.08,
                 small=small, line_h=small * 1.35, char_w=small * 0.62)


def plan_outline(airframe: Airframe, f: Frame) -> tuple[tuple[tuple[str, str], ...], float, float]:
    """Plan view from above (y = -BL): the wing and fuselage outlines, and the view's top and bottom."""
    semi = max(f.half_w, (airframe.wing.span / 2) if airframe.wing else 0.0)
    tail_half = 0.12 * f.half_w
    x0, x1, half_w = f.x0, f.x1, f.half_w
    fuselage = (
        f"M{n(x0)},0 Q{n(x0)},{n(-half_w)} {n(x0 + f.nose)},{n(-half_w)} "
        f"L{n(x1 - f.tail)},{n(-half_w)} L{n(x1)},{n(-tail_half)} L{n(x1)},{n(tail_half)} "
        f"L{n(x1 - f.tail)},{n(half_w)} L{n(x0 + f.nose)},{n(half_w)} Q{n(x0)},{n(half_w)} {n(x0)},0 Z"
    )
    shapes = []
    if airframe.wing:
        w = airframe.wing
        s = w.span / 2
        le_tip = w.root_le_sta + s * math.tan(math.radians(w.sweep_deg))
        c_tip = w.root_chord * TIP_CHORD_RATIO
        shapes.append(("wing", (
            f"M{n(w.root_le_sta)},0 L{n(le_tip)},{n(-s)} L{n(le_tip + c_tip)},{n(-s)} "
            f"L{n(w.root_le_sta + w.root_chord)},0 L{n(le_tip + c_tip)},{n(s)} L{n(le_tip)},{n(s)} Z")))
    shapes.append(("fuselage", fuselage))
    return tuple(shapes), -semi - f.margin * 0.6, semi + f.margin * 0.6


def top_at(f: Frame, sta: float) -> float:
    """Waterline of the fuselage top at a station (falling along the tail cone)."""
    if sta <= f.x1 - f.tail:
        return f.top
    frac = min(1.0, (sta - (f.x1 - f.tail)) / f.tail)
    return f.top + (f.tail_top - f.top) * frac


def side_outline(airframe: Airframe, f: Frame) -> tuple[tuple[tuple[str, str], ...], float, float]:
    """Side view from the left (y = -WL): the fin and fuselage outlines, and the view's top and bottom."""
    x0, x1, top, bottom = f.x0, f.x1, f.top, f.bottom
    fuselage = (
        f"M{n(x0)},{n(-f.centreline_wl)} Q{n(x0)},{n(-top)} {n(x0 + f.nose)},{n(-top)} "
        f"L{n(x1 - f.tail)},{n(-top)} L{n(x1)},{n(-f.tail_top)} L{n(x1)},{n(-f.tail_bottom)} "
        f"L{n(x1 - f.tail * 1.25)},{n(-bottom)} L{n(x0 + f.nose)},{n(-bottom)} "
        f"Q{n(x0)},{n(-bottom)} {n(x0)},{n(-f.centreline_wl)} Z"
    )
    shapes = []
    side_top = top
    if airframe.fin:
        fin = airframe.fin
        le_tip = fin.root_le_sta + fin.height * math.tan(math.radians(fin.sweep_deg))
        c_tip = fin.root_chord * FIN_TIP_RATIO
        base = top_at(f, fin.root_le_sta)
        side_top = base + fin.height
        shapes.append(("fin", (
            f"M{n(fin.root_le_sta)},{n(-base)} L{n(le_tip)},{n(-(base + fin.height))} "
            f"L{n(le_tip + c_tip)},{n(-(base + fin.height))} "
            f"L{n(fin.root_le_sta + fin.root_chord)},{n(-top_at(f, fin.root_le_sta + fin.root_chord))} Z")))
    shapes.append(("fuselage", fuselage))
    return tuple(shapes), -side_top - f.margin * 0.6, -bottom + f.margin * 0.6


def extent(airframe: Airframe, stations: list[float], f: Frame) -> tuple[float, float]:
    """Left and right edge of each view: the airframe, its fin and wing tips, and the antennas' `stations`."""
    fin_end = f.x1
    if airframe.fin:
        fin = airframe.fin
        fin_end = max(fin.root_le_sta + fin.root_chord,
                      fin.root_le_sta + fin.height * math.tan(math.radians(fin.sweep_deg))
                      + fin.root_chord * FIN_TIP_RATIO)
    wing_end = f.x1
    if airframe.wing:
        w = airframe.wing
        wing_end = max(w.root_le_sta + w.root_chord, w.root_le_sta + w.span / 2 * math.tan(math.radians(w.sweep_deg))
                       + w.root_chord * TIP_CHORD_RATIO)
    left = min(f.x0, min(stations, default=f.x0)) - f.margin
    right = max(f.x1, fin_end, wing_end, max(stations, default=f.x1)) + f.margin
    return left, right


PLAN_SURFACES = {"top", "bottom", "nose", "tail", "wing_left", "wing_right", "side_left", "side_right"}
"""Surfaces a composite zone must touch to be shown in plan view (a zone naming none is shown)."""


def composite_paths(airframe: Airframe, view: str, y_top: float, y_bottom: float) -> tuple[str, ...]:
    """The composite zones as bands across the view (clipped to the outline by the template)."""
    paths = []
    for zone in airframe.zones:
        if zone.material != "composite":
            continue
        surfaces = set(zone.surfaces)
        if view == "plan" and surfaces and not surfaces & PLAN_SURFACES:
            continue
        paths.append(f"M{n(zone.sta_from)},{n(y_top)} H{n(zone.sta_to)} "
                     f"V{n(y_bottom)} H{n(zone.sta_from)} Z")
    return tuple(paths)
