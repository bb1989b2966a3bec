"""The coverage map draws exactly the grid the coverage figures are computed from: every blocked cell
is inside the drawn shape and no clear cell is (the chart is an equirectangular azimuth/elevation plot,
common practice, no source; the shadowing itself is checked against closed forms in
test_physics_airframe_shadowing.py)."""
from __future__ import annotations

import re

import numpy as np
import pytest

from registry.compute.coverage import map_grids
from registry.site.coverage_map import _x, _y, coverage_map

RECT = re.compile(r"M([-\d.]+),([-\d.]+)H([-\d.]+)V([-\d.]+)H[-\d.]+Z")


def rectangles(d: str) -> list[tuple[float, float, float, float]]:
    found = [tuple(float(v) for v in m.groups()) for m in RECT.finditer(d)]
    assert "".join(m.group(0) for m in RECT.finditer(d)) == d  # rectangles and nothing else
    return found


def drawn(rects, x: float, y: float) -> bool:
    return any(x0 <= x <= x1 and top <= y <= bottom for x0, top, x1, bottom in rects)


@pytest.mark.parametrize("aircraft_id, position", [("qx-tjc", "GNSS1"), ("qx-tca", "GNSS1"), ("qx-tce", "MKR")])
def test_the_map_draws_every_blocked_cell_and_no_other(demo_fleet, aircraft_id, position):
    aircraft = demo_fleet.aircraft[aircraft_id]
    installation = aircraft.installations[position]
    airframe = demo_fleet.airframe_of(aircraft)
    service = demo_fleet.services[installation.service]
    cmap = coverage_map(airframe, installation, service)
    level, any_blocked, region = map_grids(airframe, installation, service)
    for d, mask in ((cmap.level, level.blocked), (cmap.attitude, any_blocked & ~level.blocked),
                    (cmap.region, np.asarray(region))):
        rects = rectangles(d)
        for e, el in enumerate(level.el_deg):
            for a, az in enumerate(level.az_deg):
                assert drawn(rects, _x(float(az)), _y(float(el))) == bool(mask[e, a]), (el, az)


def test_a_belly_gnss_antenna_is_drawn_blocked_over_the_whole_upper_sky(demo_fleet):
    # planted problem 12: QX-TJC's GNSS antenna on the belly sees none of the sky above the horizon
    aircraft = demo_fleet.aircraft["qx-tjc"]
    installation = aircraft.installations["GNSS1"]
    cmap = coverage_map(demo_fleet.airframe_of(aircraft), installation, demo_fleet.services[installation.service])
    rects = rectangles(cmap.level)
    assert all(drawn(rects, _x(az), _y(el)) for az in range(-175, 180, 10) for el in (10, 30, 60, 85))


def test_the_drawing_wedges_use_the_figure_s_sector_rule(demo_fleet):
    # planted problem 14: QX-TCD's VHF3 on the tail cone's upsweep. Its figure's widest blocked sector
    # counts the azimuths whose whole horizon band is blocked; the drawing's wedges are those azimuths
    from registry.compute.coverage import SECTOR_RULE, coverage_figures, sector_text
    from registry.physics.shadowing import worst_blocked_sector
    from registry.site.coverage_map import blocked_sectors

    aircraft = demo_fleet.aircraft["qx-tcd"]
    installation = aircraft.installations["VHF3"]
    airframe, service = demo_fleet.airframe_of(aircraft), demo_fleet.services[installation.service]
    level, _, region = map_grids(airframe, installation, service)
    sector = worst_blocked_sector(level, np.asarray(region), SECTOR_RULE["horizon"][0])
    shown = [figure.value for figure in coverage_figures(airframe, installation, service)]
    assert sector_text(sector) in shown
    assert max(width for _, width in blocked_sectors(airframe, installation, service)) == pytest.approx(sector[2])
