"""The tailplane in the three-dimensional airframe, the horizon requirement and the policy's attitudes,
against closed-form geometry.

Sources of the reference values (exact geometry, no data):
  * a plane WL = z0 cuts a circular section of radius R centred at WL c at BL sqrt(R^2 - (z0 - c)^2)
    (circle, no source needed);
  * rectangle a x b seen on its axis from distance h: Omega = 4 arcsin(a b / sqrt((a^2 + 4h^2)(b^2 + 4h^2)))
    (solid angle of a rectangular pyramid; from memory, and the same formula is checked against a
    brute-force sum in test_physics_airframe_shadowing.py);
  * from a point on a convex body a direction d is clear exactly when d . n >= 0 (tangent plane of a
    convex surface); on a cylinder rolled by g from the crown, n = (0, sin g, cos g) in (STA, BL, WL)
    and the earth direction (el, az) is (-cos el cos az, cos el sin az, sin el) in body axes, so the
    band |el| <= b is wholly hidden in azimuth az exactly when sin az < -tan b / tan g.
Grid tolerance: at a step of 0.5 deg the plate's edge cells are under 1 % of its solid angle.
"""
import math
import shutil
from pathlib import Path

import numpy as np
import pytest
import yaml

from registry.compute import coverage as cov
from registry.compute.airframe import shape_of
from registry.core import figure_keys as FK
from registry.load.fleet import load_fleet
from registry.physics.airframe_outline import (NO_TAILPLANE, shape_from_outline, tailplane_root_bl, with_fin,
                                            with_tailplane)
from registry.physics.airframe_shape import fuselage
from registry.physics.shadowing import azimuth_seen_percent, blocked_solid_angle_sr, horizon_region, shadow_grid

ROOT = Path(__file__).resolve().parent.parent
CYL = fuselage([0.0, 50.0], [2.0, 2.0], [1.5, 1.5], [1.5, 1.5], 1.0)  # our own: a 50 m long, 3 m cylinder


def tail(wl, **kw):
    return {"root_le_sta": 40.0, "root_chord": 2.0, "span": 13.0, "sweep_deg": 0.0, "wl": wl, **kw}


@pytest.mark.parametrize("wl, expected", [(2.0, 1.5), (2.5, math.sqrt(1.5**2 - 0.5**2)), (1.0, math.sqrt(1.5**2 - 1.0**2)),
                                          (4.0, 0.0)])  # the last above the fuselage: a T-tail, root at BL 0
def test_tailplane_root_is_the_fuselage_side_at_its_waterline(wl, expected):
    assert math.isclose(tailplane_root_bl(CYL, tail(wl), 1.0), expected, rel_tol=1e-12, abs_tol=1e-12)


def test_tailplane_blocks_its_own_solid_angle_from_a_point_above_it():
    # a fuselage far out of the way, so the two halves meet at BL 0: together a 2 m (STA 40..42) by 10 m
    # (BL -5..5) rectangle at WL 2; the point 1 m above its centre
    far = fuselage([0.0, 1.0], [-100.0, -100.0], [0.01, 0.01], [0.01, 0.01], 1.0)
    shape = with_tailplane(far, tail(2.0, span=10.0), 1.0, taper=1.0, thickness_ratio=1e-4)
    grid = shadow_grid(shape, (41.0, 0.0, 3.0), 1.0, step_deg=0.5)
    a, b, h = 2.0, 10.0, 1.0
    expected = 4 * math.asin(a * b / math.sqrt((a**2 + 4 * h**2) * (b**2 + 4 * h**2)))
    assert blocked_solid_angle_sr(grid) == pytest.approx(expected, rel=0.01)
    assert grid.blocked[grid.el_deg < -80].all() and not grid.blocked[grid.el_deg > 0].any()


def test_a_file_without_tailplane_gets_none_and_says_so():
    with open(ROOT / "tests/fixtures/good/airframes/fx-20.yaml") as fh:
        data = yaml.safe_load(fh)
    shape = shape_from_outline(data["fuselage"], 0.0254, data["wing"], data["fin"])
    assert NO_TAILPLANE in shape.assumptions
    assert not any(p.group.startswith("tailplane") for p in shape.plates)
    assert with_tailplane(shape, None, 0.0254) is shape


def test_a_tailplane_inside_the_fuselage_is_not_modelled_and_says_so():
    shape = with_tailplane(CYL, tail(2.0, span=2.0), 1.0)
    assert shape.plates == () and any("tailplane not modelled" in a for a in shape.assumptions)


def test_demo_types_carry_their_tailplane_in_the_shape(demo_fleet):
    for airframe in demo_fleet.airframes.values():
        shape = shape_of(airframe)
        groups = {p.group for p in shape.plates}
        assert {"tailplane_left", "tailplane_right"} <= groups
        assert NO_TAILPLANE not in shape.assumptions and any("tailplane at WL" in a for a in shape.assumptions)


@pytest.mark.parametrize("roll_deg, band_deg", [(30.0, 10.0), (60.0, 10.0), (20.0, 5.0), (8.0, 10.0)])
def test_horizon_band_seen_from_a_rolled_point_on_a_cylinder(roll_deg, band_deg):
    g = math.radians(roll_deg)
    point = (25.0, 1.5 * math.sin(g), 2.0 + 1.5 * math.cos(g))
    grid = shadow_grid(CYL, point, 1.0, step_deg=5.0)
    hidden = np.sin(np.radians(grid.az_deg)) < -math.tan(math.radians(band_deg)) / math.tan(g)
    expected = 100.0 * (1 - hidden.sum() / hidden.size)
    assert azimuth_seen_percent(grid, horizon_region(grid, band_deg)) == pytest.approx(expected, abs=1e-9)


def test_planted_aft_belly_horizon_share_is_the_hand_calculation(demo_fleet):
    # fleet_data/README.md #14: belly slope atan(28/80); band hidden where cos az > tan 10° / tan(slope)
    aircraft = demo_fleet.aircraft["qx-tcd"]
    installation = aircraft.installations["VHF3"]
    figures = {f.key: f for f in cov.coverage_figures(demo_fleet.airframe_of(aircraft), installation,
                                                      demo_fleet.services["vhf_com"])}
    az = np.arange(72) * 5.0
    slope = math.atan(28 / 80)
    hidden = np.cos(np.radians(az)) > math.tan(math.radians(10)) / math.tan(slope)
    assert hidden.sum() == 23
    assert figures[FK.COVERAGE_LEVEL_PCT].value == pytest.approx(100 * (72 - 23) / 72, abs=1e-9)
    assert figures[FK.COVERAGE_SECTOR].value == "azimuth 305° to 55° (115° wide)"


def test_policy_names_the_attitudes_and_a_fleet_file_overrides_them(tmp_path):
    data = tmp_path / "data"
    shutil.copytree(ROOT / "fleet_data", data)
    with open(data / "policy.yaml", "a", encoding="utf-8") as fh:
        fh.write("coverage_bank_deg: {sky: 30}\n")
    fleet = load_fleet(data)
    gnss, vhf, radalt = (cov.requirement(fleet.services[s]) for s in ("gnss_l1", "vhf_com", "radio_altimeter"))
    assert gnss.attitudes == ((0.0, 0.0), (30.0, 0.0), (-30.0, 0.0), (0.0, 10.0), (0.0, -10.0))
    assert gnss.attitude_src.startswith(str(data / "policy.yaml"))
    assert radalt.attitudes == ((0.0, 0.0), (20.0, 0.0), (-20.0, 0.0), (0.0, 10.0), (0.0, -10.0))
    assert radalt.attitude_src.startswith(str(ROOT / "registry/data/policy.yaml"))
    assert vhf.attitudes == ((0.0, 0.0),) and vhf.region == "horizon"


def test_fin_root_follows_the_lofted_crown():
    # sections: crown c + w (circular, q = 1) falls from 3.5 at STA 30 to 2.6 at STA 50 (linear between)
    cone = fuselage([0.0, 30.0, 40.0, 50.0], [2.0, 2.0, 1.9, 1.8], [1.5, 1.5, 1.15, 0.8], [1.5, 1.5, 1.15, 0.8], 1.0)
    fin = {"root_le_sta": 35.0, "root_chord": 12.0, "height": 4.0, "sweep_deg": 30.0}
    shape = with_fin(cone, fin, 1.0, thickness_ratio=1e-3)
    upper = next(p for p in shape.plates if p.name == "fin upper").vertices_m
    root = upper[np.abs(upper[:, 2] - (3.5 - 0.9 * 5 / 20 + 4.0)) > 1e-6]  # all but the two tip corners
    crown = np.interp(root[:, 0], [0.0, 30.0, 50.0], [3.5, 3.5, 2.6])
    assert sorted(root[:, 0].round(9)) == [35.0, 40.0, 47.0]
    assert np.allclose(root[:, 2], crown, atol=1e-9)
    assert any("root on the fuselage's crown" in a for a in shape.assumptions)
