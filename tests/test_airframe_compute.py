"""The airframe in the computation, through the code path the build uses (compute → rules): coverage,
skin position, finite ground plane and pair coupling on the demo registry and on edited copies of it.

References: geometry closed forms (a convex body lies wholly on one side of its tangent plane), the
demo's hand calculations in fleet_data/README.md, and the physics cores' own NEC-2 tests
(tests/test_physics_airframe_*.py) for the coupling and finite-plate numbers.
"""
import dataclasses
import shutil
from datetime import date

import numpy as np
import pytest

from registry.check.rules import installation_discrepancies
from registry.compute import coverage as cov
from registry.compute.aircraft import compute_aircraft, installation_result
from registry.compute.airframe import shape_of
from registry.core import figure_keys as FK
from registry.core.errors import DataError
from registry.core.base import FrozenMap
from registry.load.fleet import load_fleet

AS_OF = date(2026, 12, 2)


def findings(fleet, aircraft, installation):
    result, _ = installation_result(fleet, aircraft, installation, AS_OF)
    return result, installation_discrepancies(fleet, aircraft, installation, result)


def with_installation(fleet, aircraft_id, position, airframe=None, **changes):
    """A copy of the fleet with one installation's fields (and optionally its airframe) replaced."""
    aircraft = fleet.aircraft[aircraft_id]
    installation = dataclasses.replace(aircraft.installations[position], **changes)
    aircraft = dataclasses.replace(aircraft, installations=FrozenMap(
        {**dict(aircraft.installations), position: installation}))
    airframes = fleet.airframes if airframe is None else FrozenMap({**dict(fleet.airframes), airframe.id: airframe})
    fleet = dataclasses.replace(fleet, aircraft=FrozenMap({**dict(fleet.aircraft), aircraft_id: aircraft}),
                                airframes=airframes)
    return fleet, aircraft, installation


# --- ground plane -----------------------------------------------------------------------------------------


def composite_fin_with_plate(demo_fleet, coupler: bool):
    """QX-TCA's HF probe in a composite fin on a bonded 1.2 m mesh plate (the issue's case)."""
    tc44 = demo_fleet.airframes["tc-44"]
    zones = tuple(dataclasses.replace(z, material="composite") if z.surfaces == ("fin",) else z for z in tc44.zones)
    hf = demo_fleet.aircraft["qx-tca"].installations["HF1"]
    plate = dataclasses.replace(hf.ground_plane, type="plate", radius_m=1.2)
    return with_installation(demo_fleet, "qx-tca", "HF1", dataclasses.replace(tc44, zones=zones),
                             ground_plane=plate, coupler=coupler)


def test_coupler_tuned_hf_in_composite_fin_on_bonded_plate_raises_no_ground_plane_finding(demo_fleet):
    fleet, aircraft, installation = composite_fin_with_plate(demo_fleet, coupler=True)
    result, found = findings(fleet, aircraft, installation)
    assert result.figure(FK.GROUND_MATERIAL).value == "composite"
    assert "coupler" in result.figure(FK.GROUND_REQUIRED_M).value
    assert not [d for d in found if d.rule.startswith("ground-plane")]


def test_the_same_plate_under_an_untuned_monopole_is_graded_by_its_effect(demo_fleet):
    # 1.2 m is a few hundredths of λ at HF: the impedance moves far from the infinite-ground value
    fleet, aircraft, installation = composite_fin_with_plate(demo_fleet, coupler=False)
    result, found = findings(fleet, aircraft, installation)
    design_mhz = fleet.services["hf_com"].design_freq_mhz
    assert result.figure(FK.GROUND_RADIUS_WAVELENGTHS).value == pytest.approx(1.2 / (299.792458 / design_mhz), rel=1e-3)
    assert [d.rule for d in found if d.rule.startswith("ground-plane")] == ["ground-plane-effect"]


def test_a_quarter_wave_plate_keeps_the_match_and_is_graded_not_flagged(demo_fleet):
    # QX-TJA's ELT: 0.65 m mesh plate, 0.26 λ at 121.45 MHz (fleet_data/README.md)
    aircraft = demo_fleet.aircraft["qx-tja"]
    result, found = findings(demo_fleet, aircraft, aircraft.installations["ELT"])
    assert 1.0 < result.figure(FK.GROUND_SHIFT_VSWR).value < 2.0
    assert 0 < result.figure(FK.GROUND_HORIZON_LOST_DB).value < 10
    assert not [d for d in found if d.rule.startswith("ground-plane")]


# --- coverage ---------------------------------------------------------------------------------------------


def cylinder_airframe(demo_fleet):
    """TC-44 with a plain circular cylinder for a fuselage (radius 53 in) and no wing or fin."""
    tc44 = demo_fleet.airframes["tc-44"]
    first = tc44.fuselage.sections[0]
    sections = tuple(dataclasses.replace(first, sta=s, centre_wl=100.0, half_width=53.0, half_height=53.0)
                     for s in (0.0, 780.0))
    return dataclasses.replace(tc44, fuselage=dataclasses.replace(tc44.fuselage, sections=sections),
                               wing=None, fin=None)


def sky_share_above_tilted_plane(min_el_deg: float, bank_deg: float) -> float:
    """Closed form by quadrature (0.05° steps): the share of the sky above min_el that lies above the
    tangent plane of a crown point tilted by bank_deg (a convex body lies wholly below that plane)."""
    el = np.radians(np.arange(min_el_deg + 0.025, 90, 0.05))[:, None]
    az = np.radians(np.arange(0.025, 360, 0.05))[None, :]
    up = np.sin(el) * np.cos(np.radians(bank_deg)) - np.cos(el) * np.sin(az) * np.sin(np.radians(bank_deg))
    weight = np.cos(el) * np.ones_like(az)
    return 100.0 * float((weight * (up > 0)).sum() / weight.sum())


def test_crown_antenna_on_a_cylinder_sees_the_sky_the_tangent_plane_leaves(demo_fleet):
    airframe = cylinder_airframe(demo_fleet)
    fleet, aircraft, installation = with_installation(
        demo_fleet, "qx-tca", "GNSS1", airframe, location=dataclasses.replace(
            demo_fleet.aircraft["qx-tca"].installations["GNSS1"].location, sta=390.0, bl=0.0, wl=153.0))
    result, found = findings(fleet, aircraft, installation)
    assert result.figure(FK.COVERAGE_LEVEL_PCT).value == pytest.approx(100.0, abs=1e-9)
    worst = result.figure(FK.COVERAGE_WORST_PCT).value
    assert "20° bank" in result.figure(FK.COVERAGE_ATTITUDE).value
    assert worst == pytest.approx(sky_share_above_tilted_plane(5.0, 20.0), abs=1.5)
    assert not [d for d in found if d.rule == "coverage"]


def test_belly_gnss_sees_no_sky_and_is_reported(demo_fleet):
    # planted #11 (fleet_data/README.md): the belly's tangent plane faces down
    aircraft = demo_fleet.aircraft["qx-tjc"]
    result, found = findings(demo_fleet, aircraft, aircraft.installations["GNSS1"])
    assert result.figure(FK.COVERAGE_WORST_PCT).value == pytest.approx(0.0, abs=1e-9)
    assert result.figure(FK.COVERAGE_SECTOR).value.endswith("(360° wide)")
    assert [d.rule for d in found if d.rule == "coverage"] == ["coverage"]


def test_marker_moved_to_the_crown_is_reported(demo_fleet):
    mkr = demo_fleet.aircraft["qx-tca"].installations["MKR"]
    fleet, aircraft, installation = with_installation(
        demo_fleet, "qx-tca", "MKR", location=dataclasses.replace(mkr.location, sta=400.0, wl=156.0),
        surface="top")
    result, found = findings(fleet, aircraft, installation)
    assert result.figure(FK.COVERAGE_LEVEL_PCT).value == pytest.approx(0.0, abs=1e-9)
    assert "coverage" in [d.rule for d in found]


def test_shadow_grids_are_computed_once_per_type_and_position(demo_fleet):
    airframe = demo_fleet.airframes["tj-88"]
    assert shape_of(airframe) is shape_of(airframe)
    service = demo_fleet.services["gnss_l1"]
    first = demo_fleet.aircraft["qx-tja"].installations["GNSS1"]
    second = demo_fleet.aircraft["qx-tjb"].installations["GNSS1"]  # same type, same position
    cov.coverage_figures(airframe, first, service)
    before = cov.grid_at.cache_info()
    cov.coverage_figures(airframe, second, service)
    after = cov.grid_at.cache_info()
    assert after.misses == before.misses and after.hits > before.hits


# --- skin position ----------------------------------------------------------------------------------------


def test_antenna_recorded_inside_the_fuselage_is_reported(demo_fleet):
    vhf = demo_fleet.aircraft["qx-tca"].installations["VHF1"]
    fleet, aircraft, installation = with_installation(
        demo_fleet, "qx-tca", "VHF1", location=dataclasses.replace(vhf.location, wl=vhf.location.wl - 12.0))
    result, found = findings(fleet, aircraft, installation)
    assert result.figure(FK.SKIN_DISTANCE_M).value == pytest.approx(12 * 0.0254, abs=1e-6)
    assert "inside" in result.figure(FK.SKIN_DISTANCE_M).label
    assert [d.rule for d in found if d.rule == "skin-position"] == ["skin-position"]


def test_an_outline_without_sections_is_derived_and_says_so(demo_fleet):
    tc44 = demo_fleet.airframes["tc-44"]
    bare = dataclasses.replace(tc44, fuselage=dataclasses.replace(tc44.fuselage, sections=()))
    fleet, aircraft, installation = with_installation(demo_fleet, "qx-tca", "GNSS1", bare)
    result, _ = findings(fleet, aircraft, installation)
    shape = result.figure(FK.SKIN_SHAPE)
    assert shape.value.startswith("derived from the outline")
    assert any("assumed" in value for _, value in shape.inputs)


def test_sections_out_of_order_are_a_data_error_naming_the_line(tmp_path, demo_data):
    data = tmp_path / "data"
    shutil.copytree(demo_data, data)
    path = data / "airframes" / "tc-44.yaml"
    text = path.read_text(encoding="utf-8")
    path.write_text(text.replace("- {sta: 620, centre_wl: 100,", "- {sta: 590, centre_wl: 100,"), encoding="utf-8")
    with pytest.raises(DataError) as caught:
        load_fleet(data)
    report = "\n".join(str(p) for p in caught.value.problems)
    assert "tc-44.yaml:" in report and "sections in increasing STA" in report


# --- pairs ------------------------------------------------------------------------------------------------


def test_pairs_name_their_model_and_none_is_made_up(demo_fleet):
    part, _ = compute_aircraft(demo_fleet, demo_fleet.aircraft["qx-tce"], AS_OF)
    pairs = {(p.position_a, p.position_b): p for p in part.pairs}
    planted = pairs[("DME1", "XPDR-B")]  # planted #12
    assert planted.figure(FK.PAIR_MODEL).value == "creeping wave round the fuselage"
    assert planted.figure(FK.PAIR_ISOLATION_DB).value == pytest.approx(18.1, abs=0.1)
    array_pair = pairs[("ACAS-T", "XPDR-B")]  # an array and a blade with the fuselage between them
    assert array_pair.figure(FK.PAIR_MODEL).value == "none"
    assert array_pair.figure(FK.PAIR_ISOLATION_DB).value is None
    assert str(array_pair.figure(FK.PAIR_COUPLING_DB).value).startswith("no model applies")
    assert all(p.figure(FK.PAIR_GAIN_A_DBI) is None for p in pairs.values()
               if p.figure(FK.PAIR_MODEL).value != "free-space Friis")
