"""The airframe's outline in plan and side view, drawn from the same three-dimensional shape the physics
uses (compute.airframe.shape_of): the lofted fuselage's silhouette, the wing, fin and tailplane slabs
seen from above and from the left, the composite zones, and how far each view reaches.

Coordinates are the airframe's own coord_unit: x is the station (nose to the left), y is minus the
buttline in plan view and minus the waterline in side view.

Fuselage silhouette: each frustum between two sections is an elliptic cone whose half-width w(x) and
centre c(x) vary linearly and whose half-height is q w(x), q the segment's aspect (physics.airframe_shape);
so seen from above its edges are the straight lines BL = +-w(x), and from the side WL = c(x) +- q w(x),
drawn segment by segment (a small step where two segments' aspects differ). Flat surfaces: the convex
hull of each slab's corners projected on the view's plane. Every antenna the skin-position rule accepts
therefore lies on (or, seen from the other view, within) the drawn outline.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from registry.compute.airframe import SCALE_M, shape_of
from registry.core.model import Airframe
from registry.physics.airframe_shape import AirframeShape, segment_coefficients
from registry.site.svg import n

PLAN_BELOW = ("wing_left", "wing_right", "tailplane_left", "tailplane_right")
PLAN_ABOVE = ("fin",)
SIDE_ABOVE = ("fin", "wing_left", "tailplane_left")
"""Slabs drawn under and over the fuselage in each view (the right-hand ones are behind it from the left)."""


@dataclass(frozen=True)
class Frame:
    """The airframe's extent along its fuselage, and the drawing's sizes, all scaled from its length."""

    x0: float              # nose station
    x1: float              # tail station
    length: float
    half_w: float          # the fuselage's largest half-width
    centreline_wl: float
    top: float             # waterline of the fuselage's highest point
    bottom: float          # waterline of the fuselage's lowest point
    font: float
    radius: float          # marker size
    margin: float
    gap: float             # between the plan and the side view
    small: float           # label font size
    line_h: float
    char_w: float


@dataclass(frozen=True)
class Silhouette:
    """The fuselage seen from above and from the left, in the airframe's unit, at the segments' ends:
    stations x (2 per segment), half-width, crown and belly waterlines."""

    x: np.ndarray
    half_width: np.ndarray
    crown: np.ndarray
    belly: np.ndarray


def silhouette(shape: AirframeShape, scale_m: float) -> Silhouette:
    """Both ends of every frustum: w, c + q w and c - q w (the shape's own model), in the airframe unit."""
    x0, x1, w0, dw, c0, dc, q = segment_coefficients(shape)
    x = np.stack([x0, x1], axis=1).reshape(-1)
    w = np.stack([w0, w0 + dw * (x1 - x0)], axis=1).reshape(-1)
    c = np.stack([c0, c0 + dc * (x1 - x0)], axis=1).reshape(-1)
    qq = np.repeat(q, 2)
    return Silhouette(x / scale_m, w / scale_m, (c + qq * w) / scale_m, (c - qq * w) / scale_m)


def frame_of(airframe: Airframe) -> Frame:
    fus = airframe.fuselage
    sil = silhouette(shape_of(airframe), SCALE_M[airframe.coord_unit])
    length = fus.tail_sta - fus.nose_sta
    font = length * 0.025
    small = font * 0.85
    return Frame(x0=float(min(fus.nose_sta, sil.x[0])), x1=float(max(fus.tail_sta, sil.x[-1])), length=length,
                 half_w=float(sil.half_width.max()), centreline_wl=fus.centreline_wl, top=float(sil.crown.max()),
                 bottom=float(sil.belly.min()), font=font, radius=length * 0.0095, margin=length * 0.06,
                 gap=length * 0.08, small=small, line_h=small * 1.35, char_w=small * 0.62)


def polygon_path(points) -> str:
    """`M x,y L x,y ... Z` through (x, y) points."""
    return "M" + " L".join(f"{n(x)},{n(y)}" for x, y in points) + " Z"


def hull(points: np.ndarray) -> np.ndarray:
    """Convex hull (counter-clockwise, no repeated end) of 2-D points (n, 2): Andrew's monotone chain."""
    pts = sorted(set(map(tuple, np.round(points, 9))))
    if len(pts) < 3:
        return np.array(pts)

    def half(seq):
        out: list = []
        for p in seq:
            while len(out) >= 2 and ((out[-1][0] - out[-2][0]) * (p[1] - out[-2][1])
                                     - (out[-1][1] - out[-2][1]) * (p[0] - out[-2][0])) <= 0:
                out.pop()
            out.append(p)
        return out

    lower, upper = half(pts), half(reversed(pts))
    return np.array(lower[:-1] + upper[:-1])


def slab_paths(shape: AirframeShape, scale_m: float, groups: tuple[str, ...], view: str
               ) -> list[tuple[str, str, np.ndarray]]:
    """(css class, path, projected hull) of each named slab present: (x, -BL) in plan, (x, -WL) in side view."""
    axis = 1 if view == "plan" else 2
    out = []
    for group in groups:
        corners = [p.vertices_m for p in shape.plates if (p.group or p.name) == group]
        if not corners:
            continue
        v = np.concatenate(corners) / scale_m
        ring = hull(np.stack([v[:, 0], -v[:, axis]], axis=1))
        out.append(("fin" if group == "fin" else "wing", polygon_path(ring), ring))
    return out


def fuselage_path(sil: Silhouette, view: str) -> str:
    """The fuselage's silhouette: plan from above (y = -BL) or side from the left (y = -WL)."""
    if view == "plan":
        upper, lower = -sil.half_width, sil.half_width
    else:
        upper, lower = -sil.crown, -sil.belly
    return polygon_path(list(zip(sil.x, upper)) + list(zip(sil.x[::-1], lower[::-1])))


def view_outline(airframe: Airframe, f: Frame, view: str) -> tuple[tuple[tuple[str, str], ...], float, float]:
    """One view's shapes in drawing order (css class, path) and its top and bottom (y, with a margin)."""
    shape, scale = shape_of(airframe), SCALE_M[airframe.coord_unit]
    sil = silhouette(shape, scale)
    below, above = (PLAN_BELOW, PLAN_ABOVE) if view == "plan" else ((), SIDE_ABOVE)
    under, over = slab_paths(shape, scale, below, view), slab_paths(shape, scale, above, view)
    fus_y = np.concatenate([sil.half_width, -sil.half_width]) if view == "plan" else -np.concatenate(
        [sil.crown, sil.belly])
    ys = np.concatenate([fus_y] + [ring[:, 1] for _, _, ring in under + over])
    shapes = [(cls, d) for cls, d, _ in under] + [("fuselage", fuselage_path(sil, view))]
    shapes += [(cls, d) for cls, d, _ in over]
    return tuple(shapes), float(ys.min()) - f.margin * 0.6, float(ys.max()) + f.margin * 0.6


def plan_outline(airframe: Airframe, f: Frame) -> tuple[tuple[tuple[str, str], ...], float, float]:
    """Plan view from above (y = -BL): wing, tailplane, fuselage and fin, and the view's top and bottom."""
    return view_outline(airframe, f, "plan")


def side_outline(airframe: Airframe, f: Frame) -> tuple[tuple[tuple[str, str], ...], float, float]:
    """Side view from the left (y = -WL): fuselage, then fin, left wing and left tailplane over it."""
    return view_outline(airframe, f, "side")


def extent(airframe: Airframe, stations: list[float], f: Frame) -> tuple[float, float]:
    """Left and right edge of each view: the airframe with every slab, and the antennas' `stations`."""
    low, high = _airframe_span(airframe, f)
    left = min(low, min(stations, default=f.x0)) - f.margin
    right = max(high, max(stations, default=f.x1)) + f.margin
    return left, right


@lru_cache(maxsize=64)
def _airframe_span(airframe: Airframe, f: Frame) -> tuple[float, float]:
    """The first and last station the airframe reaches, slabs included; once per airframe content in a
    process (every installation page with a coverage map draws its aircraft again)."""
    shape, scale = shape_of(airframe), SCALE_M[airframe.coord_unit]
    xs = [f.x0, f.x1] + [float(p.vertices_m[:, 0].min() / scale) for p in shape.plates] \
        + [float(p.vertices_m[:, 0].max() / scale) for p in shape.plates]
    return min(xs), max(xs)


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
