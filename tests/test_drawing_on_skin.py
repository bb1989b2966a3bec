"""The airframe drawing is drawn from the shape the physics uses: every demo antenna that the
skin-position rule accepts is drawn on the drawn fuselage outline.

What is checked, for each demo aircraft through site.drawing.airframe_drawing (the function the aircraft
page calls) and each antenna on a fuselage surface within SKIN_TOLERANCE_M of the modelled skin:
  * in the view where its surface is an edge (top and bottom: the side view; the sides: the plan view;
    the tail: either), the drawn marker's centre lies within TOL of the drawn fuselage outline's edge;
  * in both views it lies inside the drawn outline or within TOL of its edge.
TOL = SKIN_TOLERANCE_M (0.05 m, the skin rule's own allowance) + the sagitta of an antenna off the
view's symmetry plane: one at BL b on a section of half-width w and half-height h sits
h (1 - sqrt(1 - (b / w)^2)) below the crown the side view draws (ellipse geometry, no source needed),
w and h interpolated linearly from the airframe file's own sections (not from the drawing code); and
likewise w (1 - sqrt(1 - (dz / h)^2)) inside the plan view's edge for one at dz from the section's centre.
The demo data is invented; the reference is the airframe file's sections and plain geometry.
"""
import re

import numpy as np
import pytest

from registry.compute.airframe import SCALE_M, SKIN_TOLERANCE_M, skin_point
from registry.site import drawing as sitedrawing

EDGE_VIEW = {"top": ("side",), "bottom": ("side",), "side_left": ("plan",), "side_right": ("plan",),
             "tail": ("plan", "side")}


def polygon(d: str) -> np.ndarray:
    return np.array([[float(v) for v in pair.split(",")] for pair in re.findall(r"-?[\d.]+,-?[\d.]+", d)])


def edge_distance(point: np.ndarray, poly: np.ndarray) -> float:
    a, b = poly, np.roll(poly, -1, axis=0)
    ab = b - a
    t = np.clip(np.einsum("ij,ij->i", point - a, ab) / np.maximum(np.einsum("ij,ij->i", ab, ab), 1e-300), 0, 1)
    return float(np.min(np.linalg.norm(a + t[:, None] * ab - point, axis=1)))


def inside(point: np.ndarray, poly: np.ndarray) -> bool:
    x, y = point
    hit = False
    for (xa, ya), (xb, yb) in zip(poly, np.roll(poly, -1, axis=0)):
        if (ya > y) != (yb > y) and x < xa + (y - ya) * (xb - xa) / (yb - ya):
            hit = not hit
    return hit


def sagitta(airframe, installation, view: str) -> float:
    """How far inside the view's drawn edge an off-plane antenna sits (airframe unit), from the file's sections."""
    s = airframe.fuselage.sections
    sta = [x.sta for x in s]
    loc = installation.location
    w = float(np.interp(loc.sta, sta, [x.half_width for x in s]))
    h = float(np.interp(loc.sta, sta, [x.half_height for x in s]))
    c = float(np.interp(loc.sta, sta, [x.centre_wl for x in s]))
    if view == "side":
        return h * (1 - np.sqrt(max(0.0, 1 - (loc.bl / w) ** 2)))
    return w * (1 - np.sqrt(max(0.0, 1 - ((loc.wl - c) / h) ** 2)))


def drawn(airframe, aircraft):
    markers = [sitedrawing.Marker(position=i.position, sta=i.location.sta, bl=i.location.bl, wl=i.location.wl,
                                  surface=i.surface, status="clear", href="#", tip_lines=(i.position, "", ""))
               for i in aircraft.installations.values()]
    views = {}
    for view in sitedrawing.airframe_drawing(airframe, markers, aircraft.id).views:
        name = "plan" if view.title.startswith("Plan") else "side"
        fus = polygon(next(d for cls, d in view.outline if cls == "fuselage"))
        views[name] = (fus, {p.marker.position: np.array([float(p.x), float(p.y)]) for p in view.markers})
    return views


def test_every_accepted_demo_antenna_is_drawn_on_the_outline(demo_fleet):
    checked = 0
    for aircraft in demo_fleet.aircraft.values():
        airframe = demo_fleet.airframe_of(aircraft)
        unit_m = SCALE_M[airframe.coord_unit]
        views = drawn(airframe, aircraft)
        for inst in aircraft.installations.values():
            hit = skin_point(airframe, (inst.location.sta, inst.location.bl, inst.location.wl))
            if inst.surface not in EDGE_VIEW or hit is None or hit.distance_m > SKIN_TOLERANCE_M:
                continue
            checked += 1
            where = f"{aircraft.id}/{inst.position}"
            for view, (fus, points) in views.items():
                tol = SKIN_TOLERANCE_M / unit_m + sagitta(airframe, inst, view)
                point = points[inst.position]
                assert inside(point, fus) or edge_distance(point, fus) <= tol, f"{where} outside the {view} view"
            best = min(edge_distance(views[v][1][inst.position], views[v][0])
                       - SKIN_TOLERANCE_M / unit_m - sagitta(airframe, inst, v) for v in EDGE_VIEW[inst.surface])
            assert best <= 0, f"{where} is drawn {best:.3g} {airframe.coord_unit} beyond the tolerance off the outline"
    assert checked >= 100  # 117 top and bottom antennas in the demo


@pytest.mark.parametrize("name", ["qx-tce", "qx-tjc"])
def test_a_point_off_the_skin_would_be_seen(demo_fleet, name):
    # the check can fail: the same marker moved 0.15 m below the belly is off the drawn edge
    aircraft = demo_fleet.aircraft[name]
    airframe = demo_fleet.airframe_of(aircraft)
    fus, points = drawn(airframe, aircraft)["side"]
    mkr = points["MKR"] + np.array([0.0, 0.15 / SCALE_M[airframe.coord_unit]])
    assert not inside(mkr, fus)
    assert edge_distance(mkr, fus) > SKIN_TOLERANCE_M / SCALE_M[airframe.coord_unit] + 0.05 / SCALE_M[airframe.coord_unit]
