"""Every demo antenna, whatever its surface, is drawn inside or on the drawn airframe in both views, and the
old outline data (an airframe file without cross sections) still draws its antennas on its outline.

Checked through site.drawing.airframe_drawing (the function the aircraft and installation pages call),
on the SVG path coordinates it returns: the marker's centre lies inside one of the view's drawn shapes
(fuselage, wings, tailplane, fin) or within TOL of its edge. TOL is SKIN_TOLERANCE_M (the skin rule's own
allowance) plus, for an antenna on the fuselage's top, bottom or sides, the sagitta of its offset from
the view's symmetry plane (test_drawing_on_skin.py: ellipse geometry, no source needed). Antennas inside
the nose radome lie inside the drawn nose; fin antennas within the drawn fin. The reference is the
airframe file's own numbers and plane geometry; the demo data is invented.
"""
import dataclasses
import re

import numpy as np
import pytest

from registry.compute.airframe import SCALE_M, SKIN_TOLERANCE_M, shape_of, skin_point
from registry.site import drawing as sitedrawing
from test_drawing_on_skin import edge_distance, inside, polygon, sagitta

ON_FUSELAGE = {"top", "bottom", "side_left", "side_right"}


def drawn_views(airframe, installations, ident):
    """{view: (shapes [(css class, polygon)], {position: marker centre})} as airframe_drawing draws them."""
    markers = [sitedrawing.Marker(position=i.position, sta=i.location.sta, bl=i.location.bl, wl=i.location.wl,
                                  surface=i.surface, status="clear", href="#", tip_lines=(i.position, "", ""))
               for i in installations]
    views = {}
    for view in sitedrawing.airframe_drawing(airframe, markers, ident).views:
        name = "plan" if view.title.startswith("Plan") else "side"
        shapes = [(cls, polygon(d)) for cls, d in view.outline]
        views[name] = (shapes, {p.marker.position: np.array([float(p.x), float(p.y)]) for p in view.markers})
    return views


def miss(point, shapes, tol) -> float:
    """0 when the point is inside a shape or within tol of its edge, else how far beyond tol it is."""
    if any(inside(point, poly) for _, poly in shapes):
        return 0.0
    return max(0.0, min(edge_distance(point, poly) for _, poly in shapes) - tol)


def tolerance(airframe, installation, view) -> float:
    tol = SKIN_TOLERANCE_M / SCALE_M[airframe.coord_unit]
    if installation.surface in ON_FUSELAGE:
        tol += sagitta(airframe, installation, view)
    return tol


def derived_sagitta(airframe, installation, view) -> float:
    """As test_drawing_on_skin.sagitta, with the half-width and half-height of the shape derived from the
    outline (the skin rule's shape: this checks that the drawing and the skin rule agree)."""
    shape, unit = shape_of(airframe), SCALE_M[airframe.coord_unit]
    loc = installation.location
    w, h, c = (float(np.interp(loc.sta * unit, shape.sta_m, arr)) / unit
               for arr in (shape.half_width_m, shape.half_height_m, shape.centre_wl_m))
    if view == "side":
        return h * (1 - np.sqrt(max(0.0, 1 - (loc.bl / w) ** 2)))
    return w * (1 - np.sqrt(max(0.0, 1 - ((loc.wl - c) / h) ** 2)))


def test_every_demo_antenna_is_drawn_on_the_airframe_in_both_views(demo_fleet):
    checked, surfaces = 0, set()
    for aircraft in demo_fleet.aircraft.values():
        airframe = demo_fleet.airframe_of(aircraft)
        views = drawn_views(airframe, list(aircraft.installations.values()), aircraft.id)
        for inst in aircraft.installations.values():
            for view, (shapes, points) in views.items():
                beyond = miss(points[inst.position], shapes, tolerance(airframe, inst, view))
                assert beyond == 0.0, (f"{aircraft.id}/{inst.position} ({inst.surface}) is drawn {beyond:.3g} "
                                       f"{airframe.coord_unit} outside the {view} view's airframe")
            checked += 1
            surfaces.add(inst.surface)
    assert checked == sum(len(a.installations) for a in demo_fleet.aircraft.values())
    assert {"top", "bottom", "nose", "fin"} <= surfaces


@pytest.mark.parametrize("name", ["qx-tce", "qx-tja"])
def test_an_antenna_off_the_fin_would_be_seen(demo_fleet, name):
    # the check can fail: the VOR moved a metre above its fin's highest point is outside the side view
    aircraft = demo_fleet.aircraft[name]
    airframe = demo_fleet.airframe_of(aircraft)
    unit = SCALE_M[airframe.coord_unit]
    vor = aircraft.installations["VOR"]
    shapes, _ = drawn_views(airframe, [vor], name)["side"]
    fin_top = -min(poly[:, 1].min() for cls, poly in shapes if cls == "fin")
    moved = dataclasses.replace(vor, location=dataclasses.replace(vor.location, wl=fin_top + 1.0 / unit))
    shapes, points = drawn_views(airframe, [moved], name)["side"]
    assert miss(points["VOR"], shapes, tolerance(airframe, moved, "side")) > 0.5 / unit


def test_an_airframe_file_without_sections_still_draws_its_antennas_on_its_outline(demo_fleet):
    # the old outline data: the shape is derived from the outline, and the drawing follows it
    checked = 0
    for aircraft in demo_fleet.aircraft.values():
        airframe = demo_fleet.airframe_of(aircraft)
        plain = dataclasses.replace(airframe, fuselage=dataclasses.replace(airframe.fuselage, sections=()))
        accepted = [i for i in aircraft.installations.values() if i.surface in ON_FUSELAGE
                    and (hit := skin_point(plain, (i.location.sta, i.location.bl, i.location.wl))) is not None
                    and hit.distance_m <= SKIN_TOLERANCE_M]
        if not accepted:
            continue
        views = drawn_views(plain, accepted, aircraft.id)
        for inst in accepted:
            for view, (shapes, points) in views.items():
                fus = [(cls, poly) for cls, poly in shapes if cls == "fuselage"]
                # sagitta from the derived outline: no sections, so take the drawn half-width and height
                tol = SKIN_TOLERANCE_M / SCALE_M[plain.coord_unit] + derived_sagitta(plain, inst, view)
                assert miss(points[inst.position], fus, tol) == 0.0, f"{aircraft.id}/{inst.position} ({view})"
            checked += 1
    assert checked > 0


# --- blocked sectors of a selected antenna ------------------------------------------------------------------


def sectors_drawn(demo_fleet, aircraft_id, position):
    from registry.site.coverage_map import blocked_sectors

    aircraft = demo_fleet.aircraft[aircraft_id]
    airframe = demo_fleet.airframe_of(aircraft)
    inst = aircraft.installations[position]
    runs = blocked_sectors(airframe, inst, demo_fleet.services[inst.service])
    marker = sitedrawing.Marker(position=position, sta=inst.location.sta, bl=inst.location.bl, wl=inst.location.wl,
                                surface=inst.surface, status="clear", href="#", tip_lines=(position, "", ""))
    plan = sitedrawing.airframe_drawing(airframe, [marker], aircraft_id, (inst.location.sta, inst.location.bl, runs))
    return inst, runs, plan.views[0].sectors


def test_an_antenna_blocked_all_round_gets_a_disc_centred_on_it(demo_fleet):
    # planted problem 12: QX-TJC's GNSS1 on the belly sees no sky in any azimuth
    inst, runs, paths = sectors_drawn(demo_fleet, "qx-tjc", "GNSS1")
    assert runs == ((0.0, 360.0),) and len(paths) == 1
    assert " L" not in paths[0]  # arcs only: no edge drawn from the antenna out to the rim
    ends = np.array(re.findall(r"(?:M|0 1,0 )(-?[\d.]+),(-?[\d.]+)", paths[0]), dtype=float)  # start and arc ends
    assert len(ends) == 3
    assert np.allclose(ends[:, 1], -inst.location.bl)
    assert np.mean(ends[:2, 0]) == pytest.approx(inst.location.sta) and ends[1, 0] > ends[0, 0]


def test_a_blocked_sector_is_a_wedge_from_the_antenna_towards_the_blocked_azimuths(demo_fleet):
    # planted problem 14: QX-TCD's VHF3 is blocked towards the nose (fleet_data/README.md: within ±59.8°);
    # in plan view the nose is towards smaller STA, so every rim point of the wedge lies ahead of the antenna
    inst, runs, paths = sectors_drawn(demo_fleet, "qx-tcd", "VHF3")
    assert len(paths) == len(runs) >= 1
    points = polygon(paths[0])
    assert np.allclose(points[0], [inst.location.sta, -inst.location.bl])
    assert np.all(points[1:, 0] < inst.location.sta)
