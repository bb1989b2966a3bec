"""Radiation patterns and metrics against closed forms and identities.

Sources beside each check. Tolerances: directivity 0.02 dB for closed forms, beamwidth 0.5 deg (wire
antennas) or 1 % (apertures), side lobes 0.2 dB, unless a test states otherwise.
"""
import dataclasses
import math
from pathlib import Path

import numpy as np
import pytest

from registry.physics import elements, metrics
from registry.physics.arrays import array_factor, taper_weights
from registry.physics.impedance import solve_wire_antenna
from registry.physics.patterns import pattern_for_kind
from registry.physics.wave import wavelength_m
from registry.physics.wire import far_field_theta

REF = Path(__file__).parent / "reference"
F = 1.09e9  # our own frequency for the closed-form checks
LAM = wavelength_m(F)


def test_isotropic_pattern_integrates_to_4pi():
    """Identity: the unit pattern integrates to 4 pi sr, on a grid and by Gauss-Legendre."""
    th, ph = metrics.sphere_grid_rad(1.0)
    assert metrics.radiated_integral_grid(th, ph, np.ones((th.size, ph.size))) == pytest.approx(4 * np.pi, rel=1e-4)
    assert metrics.radiated_integral(lambda t, p: np.ones(np.broadcast_shapes(t.shape, p.shape)), 16, 8) == \
        pytest.approx(4 * np.pi, rel=1e-12)


def test_half_wave_dipole_closed_forms():
    """Balanis, Antenna Theory, 4th ed., ch. 4: D = 1.643 (2.15 dBi), HPBW 78 deg, omnidirectional."""
    m = pattern_for_kind("dipole", {"length_m": LAM / 2, "diameter_m": 1e-4}, F).metrics
    assert m.peak_directivity_dbi == pytest.approx(2.15, abs=0.02)
    assert m.hpbw_e_deg == pytest.approx(78.0, abs=0.5)
    assert math.isnan(m.hpbw_h_deg)
    assert m.azimuth_ripple_db == pytest.approx(0.0, abs=1e-9)
    assert m.peak_theta_deg == pytest.approx(90.0, abs=0.1)


def test_short_dipole_directivity():
    """Balanis 4th ed., ch. 4 (infinitesimal dipole): D = 1.5 (1.76 dBi), HPBW 90 deg."""
    m = pattern_for_kind("dipole", {"length_m": LAM / 50, "diameter_m": 1e-5}, F).metrics
    assert m.peak_directivity_dbi == pytest.approx(10 * math.log10(1.5), abs=0.02)
    assert m.hpbw_e_deg == pytest.approx(90.0, abs=0.5)


def test_quarter_wave_monopole_doubles_directivity_and_halves_resistance():
    """Balanis 4th ed., ch. 4 (image theory): 5.16 dBi; resistance about 36.5 ohm, half the dipole's
    73 ohm (sinusoidal-current value). A thin monopole at its resonance (X = 0) is within 3 % of it."""
    from registry.physics.impedance import resonant_frequency_hz

    g = {"height_m": LAM / 4, "diameter_m": 2e-5 * LAM}
    m = pattern_for_kind("monopole", g, F).metrics
    assert m.peak_directivity_dbi == pytest.approx(5.16, abs=0.02)
    f_res = resonant_frequency_hz("monopole", g, 0.9 * F, 1.05 * F)
    z_res = solve_wire_antenna("monopole", g, [f_res]).z_in_ohm[0]
    assert z_res.real == pytest.approx(36.5, rel=0.03)
    assert abs(z_res.imag) < 1e-3
    z = solve_wire_antenna("monopole", g, [F]).z_in_ohm[0]
    dip = solve_wire_antenna("dipole", {"length_m": LAM / 2, "diameter_m": 2e-5 * LAM}, [F]).z_in_ohm[0]
    assert z == pytest.approx(dip / 2, rel=1e-12)


def test_small_loop_pattern_and_radiation_resistance():
    """Balanis 4th ed., ch. 5 (small loop): D = 1.5, null on the axis, R = 20 pi^2 (C/lambda)^4."""
    m = pattern_for_kind("small_loop", {"diameter_m": LAM / 40}, F).metrics
    assert m.peak_directivity_dbi == pytest.approx(1.76, abs=0.02)
    assert m.azimuth_ripple_db == pytest.approx(0.0, abs=1e-9)
    r = elements.small_loop_radiation_resistance_ohm(LAM / 40, F)
    assert r == pytest.approx(20 * math.pi**2 * (math.pi / 40) ** 4, rel=1e-12)


def test_solver_currents_give_the_finite_dipole_pattern():
    """A thin half-wave dipole's MoM currents are near-sinusoidal, so their pattern matches the
    finite-dipole formula (Balanis 4th ed., ch. 4) to 0.05 dB within 60 deg of broadside."""
    sweep = solve_wire_antenna("dipole", {"length_m": LAM / 2, "diameter_m": 1e-5 * LAM}, [F])
    th = np.deg2rad(np.arange(30.0, 151.0, 5.0))
    p_mom = np.abs(far_field_theta(sweep.solution, 0, th, np.zeros_like(th))) ** 2
    p_formula = elements.finite_dipole_power(th, LAM / 2, F)
    db = 10 * np.log10(p_mom / p_mom.max()) - 10 * np.log10(p_formula / p_formula.max())
    assert np.max(np.abs(db)) < 0.05


def test_uniform_linear_array_first_sidelobe():
    """Balanis 4th ed., ch. 6 (uniform array): first side lobe -13.26 dB for many elements; broadside
    directivity 2 N d / lambda for d = lambda/2."""
    m = pattern_for_kind("linear_array", {"n_elements": 40, "spacing_m": LAM / 2}, F).metrics
    assert m.first_sidelobe_db == pytest.approx(-13.26, abs=0.05)
    assert m.peak_directivity_dbi == pytest.approx(10 * math.log10(40), abs=0.02)


def test_chebyshev_taper_gives_equal_sidelobes_at_the_design_level():
    """Dolph, Proc. IRE 34 (1946); Balanis 4th ed., ch. 6: every side lobe at the design level."""
    w = taper_weights(12, "chebyshev", sidelobe_db=30.0)
    u = np.sin(np.deg2rad(np.linspace(-90, 90, 20001)))
    p = np.abs(array_factor(u, w, LAM / 2, F)) ** 2
    db = 10 * np.log10(p / p.max())
    peaks = [db[i] for i in range(1, db.size - 1) if db[i] > db[i - 1] and db[i] >= db[i + 1] and db[i] < -1]
    assert len(peaks) >= 8
    np.testing.assert_allclose(peaks, -30.0, atol=0.05)
    m = pattern_for_kind("linear_array", {"n_elements": 12, "spacing_m": LAM / 2, "taper": "chebyshev",
                                          "sidelobe_db": 30.0}, F).metrics
    assert m.first_sidelobe_db == pytest.approx(-30.0, abs=0.1)


def test_tapers_trade_beamwidth_for_sidelobes():
    """Balanis 4th ed., ch. 6 (nonuniform arrays): a tapered array has lower side lobes and a broader
    beam than the uniform one."""
    results = {t: pattern_for_kind("linear_array", {"n_elements": 16, "spacing_m": LAM / 2, "taper": t}, F).metrics
               for t in ("uniform", "cosine", "triangular")}
    for t in ("cosine", "triangular"):
        assert results[t].first_sidelobe_db < results["uniform"].first_sidelobe_db - 5
        assert results[t].hpbw_e_deg > results["uniform"].hpbw_e_deg


def _aperture_rows():
    rows = []
    for line in (REF / "circular_aperture_tapers.csv").read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            rows.append(tuple(float(x) for x in line.split(",")))
    return rows


@pytest.mark.parametrize("row", _aperture_rows(), ids=lambda r: f"n={int(r[0])}")
def test_circular_aperture_beamwidth_sidelobe_and_efficiency(row):
    """Reference file circular_aperture_tapers.csv (Balanis 4th ed. ch. 12; Silver 1949 Table 6.2)."""
    n, hpbw_d, sll, eff = row
    d = 40 * LAM
    edge = 0.0 if n == 0 else 300.0  # no pedestal: edge field 10^-15
    m = pattern_for_kind("parabolic", {"diameter_m": d, "edge_taper_db": edge, "taper_exponent": int(max(n, 1))}, F).metrics
    assert m.hpbw_e_deg == pytest.approx(hpbw_d / 40, rel=0.01)
    assert m.hpbw_h_deg == pytest.approx(m.hpbw_e_deg, rel=1e-6)
    assert m.first_sidelobe_db == pytest.approx(sll, abs=0.2)
    assert elements.circular_aperture_taper_efficiency(edge, int(max(n, 1))) == pytest.approx(eff, abs=0.01)
    # numerical directivity = (pi D / lambda)^2 x taper efficiency (Balanis 4th ed., ch. 12 and 15), 0.1 dB
    d_expected = 10 * math.log10((math.pi * 40) ** 2 * elements.circular_aperture_taper_efficiency(edge, int(max(n, 1))))
    assert m.peak_directivity_dbi == pytest.approx(d_expected, abs=0.1)


def test_parabolic_gain_rule_of_thumb():
    """Field notes (common practice): HPBW about 70 lambda/D deg for a typical 10-12 dB edge taper."""
    m = pattern_for_kind("parabolic", {"diameter_m": 24 * LAM, "edge_taper_db": 11.0, "taper_exponent": 2}, F).metrics
    assert m.hpbw_e_deg * 24 == pytest.approx(70.0, rel=0.06)


def test_patch_single_slot_limits():
    """Balanis 4th ed., ch. 14 (radiating slot of a patch, from memory): a narrow slot (W << lambda) over
    a ground plane has D = 3 (4.77 dBi); the pair of slots with L_eff = 0 reduces to one slot."""
    p = lambda th, ph: elements.patch_power(th, ph, 1e-9, LAM / 100, LAM / 1000, 1.0001, F)  # noqa: E731
    d = 4 * math.pi * p(np.array(0.0), np.array(0.0)) / metrics.radiated_integral(p, 64, 64)
    assert 10 * math.log10(d) == pytest.approx(10 * math.log10(3.0), abs=0.05)


def test_patch_design_resonates_at_design_frequency_and_points_up():
    """Balanis 4th ed., ch. 14 design procedure: the designed patch resonates at the design frequency;
    typical patch directivity 6-9 dBi, beam at broadside, no back radiation over the ground plane."""
    f = 1.57542e9
    length, width = elements.patch_design_m(f, 1.6e-3, 4.4)
    assert elements.patch_resonant_frequency_hz(length, width, 1.6e-3, 4.4) == pytest.approx(f, rel=1e-9)
    m = pattern_for_kind("patch", {"length_m": length, "width_m": width, "substrate_height_m": 1.6e-3,
                                   "eps_r": 4.4}, f).metrics
    assert 5.0 < m.peak_directivity_dbi < 9.0
    assert m.peak_theta_deg == pytest.approx(0.0, abs=0.5)
    assert m.front_to_back_db == pytest.approx(-metrics.FLOOR_DB)


def test_slotted_array_directivity_near_aperture_limit():
    """A uniform planar array with d <= lambda has directivity near 4 pi A / lambda^2
    (Balanis 4th ed., ch. 6 planar arrays), here within 1 dB including the slot element."""
    nx = ny = 20
    d = 0.7 * LAM
    m = pattern_for_kind("slotted_array", {"nx": nx, "ny": ny, "spacing_x_m": d, "spacing_y_m": d}, F).metrics
    expected = 10 * math.log10(4 * math.pi * (nx * d) * (ny * d) / LAM**2)
    assert m.peak_directivity_dbi == pytest.approx(expected, abs=1.0)
    assert m.first_sidelobe_db == pytest.approx(-13.26, abs=0.3)


@pytest.mark.parametrize("kind,geometry", [
    ("dipole", {"length_m": 0.5, "diameter_m": 0.002}),
    ("yagi", {"element_lengths_m": (0.52, 0.5, 0.47), "element_positions_m": (0.0, 0.2, 0.45), "diameter_m": 0.004}),
    ("parabolic", {"diameter_m": 2.0}),
    ("patch", {"length_m": 0.45, "width_m": 0.6, "substrate_height_m": 0.01, "eps_r": 1.1}),
    ("linear_array", {"n_elements": 6, "spacing_m": 0.6, "element": "half_wave_dipole", "steer_deg": 20.0}),
])
def test_normalised_pattern_peaks_at_zero_db_and_is_deterministic(kind, geometry):
    """Identities: the normalised cuts and grid peak at 0 dB / D; a second call gives equal arrays."""
    r1 = pattern_for_kind(kind, geometry, 280e6)
    r2 = pattern_for_kind(kind, tuple(geometry.items()), 280e6)
    assert max(r1.e_db.max(), r1.h_db.max()) == pytest.approx(0.0, abs=0.01)
    assert r1.gain_dbi.max() == pytest.approx(r1.metrics.peak_directivity_dbi, abs=0.05)
    np.testing.assert_array_equal(r1.gain_dbi, r2.gain_dbi)
    np.testing.assert_array_equal(np.array(dataclasses.astuple(r1.metrics)), np.array(dataclasses.astuple(r2.metrics)))


def test_steered_array_points_where_asked():
    """Phase progression beta = -k d sin(theta0) steers the beam to theta0 (Balanis 4th ed., ch. 6)."""
    m = pattern_for_kind("linear_array", {"n_elements": 16, "spacing_m": LAM / 2, "steer_deg": 25.0}, F).metrics
    assert m.peak_theta_deg == pytest.approx(25.0, abs=0.2)


def test_unknown_kind_and_parameter_are_reported():
    with pytest.raises(ValueError, match="unknown antenna kind 'helix'"):
        pattern_for_kind("helix", {}, F)
    with pytest.raises(ValueError, match="unknown geometry parameter.*lenght_m"):
        pattern_for_kind("dipole", {"lenght_m": 1.0, "diameter_m": 0.01}, F)
    with pytest.raises(ValueError, match="missing geometry parameter 'diameter_m'"):
        pattern_for_kind("dipole", {"length_m": 1.0}, F)
