"""Thin-wire solver against NEC-2 (PyNEC, nec2++) run here as the reference solver.

Tolerances used in this file (stated once, applied below):
  * resonant length of dipoles and monopoles: 1 % of NEC-2's
  * input impedance: |Z - Z_nec| <= 5 % of |Z_nec| for a/lambda <= 1e-3; 8 % for fatter wires
    (a/lambda = 1.5e-3 near resonance measured 6 %: our delta-gap feed vs NEC's segment-wide source,
    and the resonance shifting by under 1 %)
  * monopoles and Yagis (elements a/lambda >= 1.5e-3): resistance within 5 %, reactance within 6 ohm.
    Our reactance sits 1-5 ohm below NEC-2's at every thickness tried; the offset follows the feed model
    (delta gap at a node vs. NEC's field applied over one segment) and NEC's own value still climbs by
    a few ohm as its segments shrink, so a reactance offset is the honest measure here.
  * Yagi forward gain: 0.3 dB; Yagi front-to-back ratio: 1.0 dB (deep nulls are segmentation-sensitive)
  * folded dipole (our closed loop vs. NEC's explicit conductors and end wires): |Z - Z_nec| within 5 % of |Z_nec|
NEC models use the thin-wire kernel, segment length > 8 radii, centre (or base) segment voltage source.
Geometries and frequencies are our own.
"""
import numpy as np
import pytest
from scipy.optimize import brentq

from registry.physics.impedance import resonant_frequency_hz, solve_wire_antenna
from registry.physics.patterns import pattern_for_kind
from registry.physics.wave import end_effect_factor, resonant_length_m, wavelength_m
from registry.physics.wire import Wire, build_structure, impedance_matrix, solve_structure

PyNEC = pytest.importorskip("PyNEC")
import nec_reference  # noqa: E402 - tests/nec_reference.py, after PyNEC is known to be there

F0 = 137e6  # our own choice: top of the VHF communication band
LAM = wavelength_m(F0)


def _nec_run(wires, feed_tag, feed_seg, freq_hz, ground=False, pattern=None):
    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    for tag, (x, z0, z1, radius, nseg) in enumerate(wires, start=1):
        geo.wire(tag, nseg, x, 0, z0, x, 0, z1, radius, 1.0, 1.0)
    ctx.geometry_complete(1 if ground else 0)
    if ground:
        ctx.gn_card(1, 0, 0, 0, 0, 0, 0, 0)
    ctx.ex_card(0, feed_tag, feed_seg, 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, freq_hz / 1e6, 0)
    if pattern is None:
        ctx.xq_card(0)
        return ctx.get_input_parameters(0).get_impedance()[0], None
    ctx.rp_card(0, len(pattern), 1, 1000, 0, 0, 0, pattern[0][0], pattern[0][1], 0, 0, 0, 0)
    z = ctx.get_input_parameters(0).get_impedance()[0]
    return z, ctx.get_radiation_pattern(0).get_gain().ravel()


def _nec_dipole_z(length_m, radius_m, freq_hz, nseg):
    return _nec_run([(0.0, -length_m / 2, length_m / 2, radius_m, nseg)], 1, nseg // 2 + 1, freq_hz)[0]


def _nec_segments(length_m, radius_m, most=41):
    n = int(min(most, length_m / (8 * radius_m)))
    return n - (n + 1) % 2  # odd, so one segment sits at the centre


@pytest.mark.parametrize("a_over_lambda", [2e-4, 1e-3, 2e-3])
def test_dipole_resonant_length_matches_nec2(a_over_lambda):
    radius = a_over_lambda * LAM
    nseg = _nec_segments(0.48 * LAM, radius)
    l_nec = brentq(lambda L: _nec_dipole_z(L, radius, F0, nseg).imag, 0.42 * LAM, 0.5 * LAM, xtol=1e-6)

    def ours(L):
        return solve_wire_antenna("dipole", {"length_m": L, "diameter_m": 2 * radius}, [F0]).z_in_ohm[0].imag

    l_ours = brentq(ours, 0.42 * LAM, 0.5 * LAM, xtol=1e-6)
    assert l_ours == pytest.approx(l_nec, rel=0.01)
    # the closed-form end-effect factor lands on NEC-2's length too (wave.py, fitted form, 1 %)
    assert resonant_length_m(F0, 2 * radius) == pytest.approx(l_nec, rel=0.01)


@pytest.mark.parametrize("a_over_lambda,length_over_lambda,tolerance", [
    (2e-4, 0.48, 0.05), (5e-4, 0.45, 0.05), (5e-4, 0.5, 0.05), (1e-3, 0.6, 0.05), (1.5e-3, 0.47, 0.08),
    (1.5e-3, 0.55, 0.08)])
def test_dipole_impedance_matches_nec2(a_over_lambda, length_over_lambda, tolerance):
    radius, length = a_over_lambda * LAM, length_over_lambda * LAM
    z_nec = _nec_dipole_z(length, radius, F0, _nec_segments(length, radius))
    z = solve_wire_antenna("dipole", {"length_m": length, "diameter_m": 2 * radius, "segments": 30}, [F0]).z_in_ohm[0]
    assert abs(z - z_nec) <= tolerance * abs(z_nec)


@pytest.mark.parametrize("a_over_lambda", [5e-4, 2e-3])
def test_monopole_over_ground_matches_nec2(a_over_lambda):
    radius = a_over_lambda * LAM
    h = 0.24 * LAM
    nseg = _nec_segments(h, radius, most=21)
    z_nec = _nec_run([(0.0, 0.0, h, radius, nseg)], 1, 1, F0, ground=True)[0]
    z = solve_wire_antenna("monopole", {"height_m": h, "diameter_m": 2 * radius}, [F0]).z_in_ohm[0]
    assert z.real == pytest.approx(z_nec.real, rel=0.05)
    assert z.imag == pytest.approx(z_nec.imag, abs=6.0)
    # resonance of the monopole (ours) against NEC-2's, 1 %
    h_nec = brentq(lambda hh: _nec_run([(0.0, 0.0, hh, radius, nseg)], 1, 1, F0, ground=True)[0].imag,
                   0.2 * LAM, 0.25 * LAM, xtol=1e-6)
    f_res = resonant_frequency_hz("monopole", {"height_m": h_nec, "diameter_m": 2 * radius}, 0.9 * F0, 1.1 * F0)
    assert f_res == pytest.approx(F0, rel=0.01)


# Yagi designs of our own, spacing in the spirit of NBS Technical Note 688 (reflector ~0.2 lambda behind,
# directors 0.15-0.4 lambda apart, elements a few per cent shorter going forward).
YAGIS = {
    "3 elements": ((0.490, 0.470, 0.445), (0.0, 0.25, 0.45)),
    "4 elements": ((0.495, 0.473, 0.440, 0.435), (0.0, 0.20, 0.35, 0.60)),
    "5 elements": ((0.488, 0.466, 0.436, 0.430, 0.426), (0.0, 0.20, 0.40, 0.65, 0.95)),
    "6 elements": ((0.482, 0.460, 0.428, 0.420, 0.420, 0.428), (0.0, 0.20, 0.45, 0.80, 1.20, 1.60)),
}


@pytest.mark.parametrize("name", sorted(YAGIS))
def test_yagi_gain_front_to_back_and_impedance_match_nec2(name):
    lengths_l, positions_l = YAGIS[name]
    radius = 0.0015 * LAM
    lengths = tuple(v * LAM for v in lengths_l)
    positions = tuple(v * LAM for v in positions_l)
    wires = [(x, -L / 2, L / 2, radius, 41) for L, x in zip(lengths, positions)]
    # forward (+x: theta 90, phi 0) and backward (phi 180)
    ctx_z, gains = _nec_run(wires, 2, 21, F0, pattern=[(90.0, 0.0)])
    _, gains_back = _nec_run(wires, 2, 21, F0, pattern=[(90.0, 180.0)])
    geometry = {"element_lengths_m": lengths, "element_positions_m": positions, "diameter_m": 2 * radius,
                "segments": 40}
    z = solve_wire_antenna("yagi", geometry, [F0]).z_in_ohm[0]
    assert z.real == pytest.approx(ctx_z.real, rel=0.05)
    assert z.imag == pytest.approx(ctx_z.imag, abs=6.0)
    m = pattern_for_kind("yagi", geometry, F0).metrics
    assert m.peak_directivity_dbi == pytest.approx(gains[0], abs=0.3)
    assert m.front_to_back_db == pytest.approx(gains[0] - gains_back[0], abs=1.0)
    assert m.peak_phi_deg == pytest.approx(0.0, abs=1.0) or m.peak_phi_deg == pytest.approx(360.0, abs=1.0)


def test_folded_dipole_loop_against_nec2():
    radius, spacing = 0.0015, 0.03
    for length in (0.46 * LAM, 0.48 * LAM):
        z_nec = nec_reference.folded_dipole_z(length, radius, spacing, F0, nseg=21)
        z = solve_wire_antenna("folded_dipole", {"length_m": length, "diameter_m": 2 * radius,
                                                 "spacing_m": spacing}, [F0]).z_in_ohm[0]
        assert abs(z - z_nec) <= 0.05 * abs(z_nec)


def test_single_pws_basis_reproduces_the_induced_emf_impedance():
    """Two segments on a half-wave dipole = one sinusoidal current: the induced-EMF result
    Z = 73.1 + j42.5 ohm (Balanis, Antenna Theory, 4th ed., ch. 4 and 8, induced-EMF method)."""
    w = Wire(0.0, 0.0, -LAM / 4, LAM / 4, 1e-6 * LAM, 2)
    st = build_structure([w])
    z = solve_structure(st, st.centre_basis(0), [F0]).z_in_ohm[0]
    assert z.real == pytest.approx(73.08, abs=0.05)
    assert z.imag == pytest.approx(42.51, abs=0.05)


def test_impedance_matrix_is_symmetric_by_reciprocity():
    """Galerkin testing of a reciprocal medium gives Z_mn = Z_nm (Harrington, Field Computation by
    Moment Methods, 1968, ch. 1)."""
    wires = [Wire(0.0, 0.0, -0.5, 0.5, 0.003, 12), Wire(0.4, 0.1, -0.45, 0.45, 0.002, 10)]
    z = impedance_matrix(build_structure(wires), 140e6)
    # the fill computes one triangle and mirrors it: with the wires in the other order, the block between
    # them is computed with test and source swapped, so the two orders compare Z_mn with Z_nm
    swapped = impedance_matrix(build_structure(wires[::-1]), 140e6)
    first, second = slice(0, 11), slice(11, 20)  # basis functions of wire 0 and wire 1 (n_segments - 1 each)
    np.testing.assert_allclose(z[first, second], swapped[9:, :9], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(z[first, first], swapped[9:, 9:], rtol=1e-9, atol=1e-9)


def test_radiated_power_equals_input_power_for_lossless_wires():
    """Energy conservation for lossless wires: the integral of U = |E|^2 r^2/(2 eta) over the sphere
    equals the input power 1/2 Re(V I*) (Poynting's theorem; Balanis 4th ed., ch. 2). 1 %."""
    from registry.physics.metrics import radiated_integral
    from registry.physics.wire import far_field_theta
    from registry.core.units import ETA0

    lengths_l, positions_l = YAGIS["3 elements"]
    geometry = {"element_lengths_m": tuple(v * LAM for v in lengths_l),
                "element_positions_m": tuple(v * LAM for v in positions_l), "diameter_m": 0.003 * LAM}
    sweep = solve_wire_antenna("yagi", geometry, [F0])
    sol = sweep.solution
    p_rad = radiated_integral(lambda th, ph: np.abs(far_field_theta(sol, 0, th, ph)) ** 2 / (2 * ETA0), 40, 64)
    p_in = 0.5 * np.real(1.0 / sweep.z_in_ohm[0])
    assert p_rad == pytest.approx(p_in, rel=0.01)


def test_end_effect_factor_spans_the_trade_range():
    """Thin wire near 0.98, fat elements near 0.93 (field notes, from memory): the factor falls with
    thickness and stays inside that band over the fit's range, L/D from 100 to 8 000."""
    k = end_effect_factor(np.array([100.0, 300.0, 1000.0, 8000.0]))
    assert np.all(np.diff(k) > 0)
    assert k[0] > 0.90 and k[-1] < 0.985
