"""Monopole at the centre of a square plate (square_plate, through compute.element._on_square, the call the
site's ground-plane figures make) against NEC-2 (PyNEC, nec2++) on the same kind of wire grid.

Reference: tests/reference/square_plate_nec.csv, written by tests/reference/make_square_plate_nec.py
(quarter-wave monopole, 0.001-lambda radius, square grids 0.25 to 3 lambda across at 20 cells per
wavelength, grid wires of radius spacing / (2 pi); NEC's gains divided by its average gain and its
resistance multiplied by it, as in test_physics_airframe_finite_ground.py). The site's model runs on a
coarser grid (at most 0.1 lambda, at least 10 cells a side), so these checks hold the model the site
runs, not a finer variant.

Tolerances, from the measured agreement:
  * horizon directivity: 0.25 dB (the circular-plate tests' tolerance; measured <= 0.14 dB);
  * peak elevation: 2 deg on a 1-deg grid (the same; measured <= 1 deg);
  * resistance: 5 % (the same; measured <= 3 %);
  * reactance: 13 ohm (measured: ours 0-12 ohm below NEC's, growing with the plate). Wider than the
    circular plate's 6 ohm: on the same grids the two moment methods disagree by that much (ours agrees
    with NEC to 0.1 ohm on the 0.25-lambda plate and converges with the grid to 17-20 ohm on 1-3 lambda
    plates, NEC to 24-32 ohm), NEC's own average gain on these grids is 0.82 (its input power 18 % above
    what it radiates), and on the 3-lambda plate the infinite-ground value (image theory) lies between
    the two; this model's reactance is the least certain of its figures and the site's method text says
    so. The power check below holds our pattern and input power to 1 %.
"""
import csv
import dataclasses
import math
from datetime import date
from pathlib import Path

import numpy as np
import pytest

from registry.check.rules import installation_discrepancies
from registry.compute import element
from registry.compute.aircraft import installation_result
from registry.core import figure_keys as FK
from registry.core.base import FrozenMap
from registry.physics import square_plate
from registry.physics.wave import wavelength_m

F = 300e6
LAM = wavelength_m(F)
H = 0.25 * LAM
WIRE = 1e-3 * LAM
REFERENCE = Path(__file__).parent / "reference" / "square_plate_nec.csv"


def nec_rows():
    with REFERENCE.open() as handle:
        return list(csv.DictReader(line for line in handle if not line.startswith("#")))


@pytest.mark.parametrize("row", nec_rows(), ids=lambda r: f"{r['side_lambda']}lambda")
def test_square_plate_matches_nec2(row):
    side = float(row["side_lambda"])
    horizon, peak_el, z_in = element._on_square(H, side * LAM, WIRE, F)  # noqa: SLF001 (the site's call)
    nec_horizon = min(float(row["horizon_dbi_phi0"]), float(row["horizon_dbi_phi45"]))
    assert 0.8 < float(row["average_gain"]) < 1.0  # a NEC model outside this range is broken
    assert horizon == pytest.approx(nec_horizon, abs=0.25)
    assert peak_el == pytest.approx(float(row["peak_elevation_deg"]), abs=2.0)
    assert z_in.real == pytest.approx(float(row["r_normalised_ohm"]), rel=0.05)
    assert abs(z_in.imag - float(row["x_nec_ohm"])) <= 13.0


def test_large_square_tends_to_the_classical_limits():
    # Infinite plane (image theory, Balanis 4th ed. §4.7): Z_monopole = Z_dipole / 2, here from wire.py's own
    # dipole; at grazing the edge halves the field: horizon directivity 5.16 - 6.02 = -0.86 dBi. The
    # 3-lambda plate is the one the NEC-2 check above solved (cached).
    from registry.physics.wire import Wire, build_structure, solve_structure

    st = build_structure([Wire(0.0, 0.0, -H, H, WIRE, 60)])
    z_half = solve_structure(st, st.centre_basis(0), [F]).z_in_ohm[0] / 2
    horizon, peak_el, z_in = element._on_square(H, 3.0 * LAM, WIRE, F)  # noqa: SLF001
    assert horizon == pytest.approx(-0.86, abs=0.15)
    assert z_in.real == pytest.approx(z_half.real, rel=0.05)
    assert abs(z_in.imag - z_half.imag) <= 7.0
    assert peak_el < 35.0


@pytest.mark.parametrize("side", [0.5, 1.0])
def test_pattern_carries_the_input_power(side):
    # lossless: (1/4 pi) x integral of the directivity over the sphere is 1 (definition of directivity,
    # Balanis 4th ed. §2.6): the far-field sum and the input power agree
    res = square_plate.monopole_on_square(H, side * LAM, WIRE, F)
    assert square_plate.radiated_power_check(res) == pytest.approx(1.0, abs=0.01)


def test_every_junction_keeps_kirchhoffs_law():
    # a node where k segments meet carries k - 1 functions; the tip none (plain counting, no source)
    grid = square_plate.make_grid(H, 1.0 * LAM, WIRE, F, cells=4)
    ends = grid.geo.starts + grid.geo.directions * grid.geo.lengths[:, None]
    points = np.round(np.vstack([grid.geo.starts, ends]) / LAM, 6)
    _, counts = np.unique(points, axis=0, return_counts=True)
    assert grid.piece_seg.shape[0] == int(np.sum(counts - 1))
    assert grid.fed.size == 4  # the base joins the monopole and four grid wires


def test_grid_rejects_an_odd_cell_count_and_a_fat_wire():
    with pytest.raises(ValueError):
        square_plate.make_grid(H, LAM, WIRE, F, cells=5)
    with pytest.raises(ValueError):
        square_plate.make_grid(H, LAM, H / 10, F)


# --- the site's figures ---------------------------------------------------------------------------------


def elt_on(demo_fleet, **plane):
    """QX-TJA's ELT (0.65 m round plate in the demo) on another plate, through the build's code path."""
    aircraft = demo_fleet.aircraft["qx-tja"]
    elt = aircraft.installations["ELT"]
    elt = dataclasses.replace(elt, ground_plane=dataclasses.replace(elt.ground_plane, **plane))
    aircraft = dataclasses.replace(aircraft, installations=FrozenMap({**dict(aircraft.installations), "ELT": elt}))
    fleet = dataclasses.replace(demo_fleet, aircraft=FrozenMap({**dict(demo_fleet.aircraft), "qx-tja": aircraft}))
    result, _ = installation_result(fleet, aircraft, elt, date(2026, 12, 2))
    return result, installation_discrepancies(fleet, aircraft, elt, result)


def test_a_square_plate_is_modelled_as_a_square(demo_fleet):
    result, found = elt_on(demo_fleet, radius_m=None, side_m=1.3)
    assert result.figure(FK.GROUND_RADIUS_M).value == pytest.approx(0.65)
    horizon = result.figure(FK.GROUND_HORIZON_DBI)
    assert horizon.source == element.SQUARE_PLATE_METHOD
    assert "min over φ" in horizon.formula
    freq_hz = demo_fleet.services["elt"].design_freq_mhz * 1e6
    model = demo_fleet.antennas["TCA-121-ELT"]
    height = float(model.geometry["element_length_m"])
    wire = float(model.geometry.get("element_diameter_m", 0.006)) / 2
    direct = square_plate.monopole_on_square(height, 1.3, wire, freq_hz)
    assert horizon.value == pytest.approx(direct.horizon_gain_dbi, abs=1e-9)
    assert not [d for d in found if d.rule.startswith("ground-plane")]


def test_a_square_past_the_checked_range_is_not_modelled_and_not_flagged(demo_fleet):
    # 8 m at 121.5 MHz is 3.2 wavelengths: past the 3 wavelengths checked against NEC-2
    result, found = elt_on(demo_fleet, radius_m=None, side_m=8.0)
    assert result.figure(FK.GROUND_PLATE_NOT_MODELLED).value.startswith("not modelled: a square plate 3.2 λ")
    assert result.figure(FK.GROUND_RADIUS_M).value == pytest.approx(4.0)
    assert not [d for d in found if d.rule.startswith("ground-plane")]
    assert math.isfinite(result.figure(FK.GROUND_REQUIRED_M).value)
