"""Monopole at the centre of a finite plate (finite_ground) against NEC-2 (PyNEC, nec2++).

NEC-2 models (our own geometry; 300 MHz, quarter-wave monopole):
  * pattern model: the disc as 128 radial wires, each wire's radius growing with its distance from the
    centre as rho/128 (the equal-area rule for wire grids: radius = spacing / (2 pi), common practice
    in wire-grid modelling, no single source), solved with NEC's rotational symmetry (GR card). The
    monopole is a cage of 128 thin wires on a 0.003-lambda circle, one source on the bottom segment of
    each, so the symmetry holds; our model uses the cage's equivalent radius c (N b / c)^(1/N)
    (Balanis, Antenna Theory, 4th ed., §9.4, equivalent radius of a multi-wire cage, from memory).
  * impedance model for plates up to 1 lambda across: one thin monopole and 24 radial wires with the
    same radius rule, source on the monopole's base segment.
NEC's wire-grid plates do not conserve power: the pattern integrated over the sphere ("average gain",
the standard validity test of a NEC model, common practice) is 0.85-0.96 of the input power here,
The surplus input power is a modelling error, so NEC's gains are compared
after dividing by the average gain (directivity) and NEC's resistance after multiplying by it.
Tolerances, from the measured agreement:
  * directivity at the horizon and at the peak: 0.25 dB (measured <= 0.12 dB);
    peak elevation: 2 deg on a 1-deg grid;
  * resistance: 5 % (measured <= 4 %); reactance: 6 ohm for the single-monopole model (ours sits
    0-5 ohm below NEC's, the delta-gap feed offset also seen in test_physics_wire_nec.py), 10 ohm for
    the cage model (ours 8-9 ohm below: a single gap against 128 parallel sources on thin wires).
"""
import numpy as np
import pytest

from registry.physics.finite_ground import (_ring_static, make_mesh, monopole_on_disc, quarter_wave_on_disc,
                                            radiated_power_check)
from registry.physics.wave import wavelength_m

PyNEC = pytest.importorskip("PyNEC")

F = 300e6
LAM = wavelength_m(F)
H = 0.25 * LAM


def _average_gain(gain_db, theta_deg):
    """(1/4 pi) x integral of NEC's gain over the sphere, for a pattern that does not vary with phi."""
    th = np.radians(theta_deg)
    return float(np.trapezoid(10 ** (np.asarray(gain_db) / 10) * np.sin(th), th) / 2)


def _nec_cage_disc(radius_m, n_sector=128, cage_m=0.003 * LAM):
    wire_m = cage_m / n_sector / 2
    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    geo.wire(1, 9, cage_m, 0.0, H, cage_m, 0.0, 0.0, wire_m, 1.0, 1.0)
    n_seg = max(3, int(np.ceil((radius_m - cage_m) / LAM * 20)))
    edges = np.linspace(cage_m, radius_m, n_seg + 1)
    for k in range(n_seg):
        rad = max(wire_m, (edges[k] + edges[k + 1]) / 2 / n_sector)
        geo.wire(2 + k, 1, edges[k], 0.0, 0.0, edges[k + 1], 0.0, 0.0, rad, 1.0, 1.0)
    geo.generate_cylindrical_structure(1 + n_seg, n_sector)
    ctx.geometry_complete(0)
    for s in range(n_sector):
        ctx.ex_card(0, 1 + (1 + n_seg) * s, 9, 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, F / 1e6, 0)
    ctx.rp_card(0, 181, 1, 1000, 0, 0, 0, 0, 0, 1, 0, 0, 0)
    z = 1 / np.sum(1 / np.asarray(ctx.get_input_parameters(0).get_impedance()))
    equivalent_m = cage_m * (n_sector * wire_m / cage_m) ** (1 / n_sector)
    return z, ctx.get_radiation_pattern(0).get_gain().ravel(), equivalent_m


def _nec_spoke_disc(radius_m, wire_m, n_spoke=24):
    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    geo.wire(1, 11, 0.0, 0.0, 0.0, 0.0, 0.0, H, wire_m, 1.0, 1.0)
    n_seg = max(3, int(np.ceil(radius_m / LAM * 20)))
    edges = np.linspace(0, radius_m, n_seg + 1)
    tag = 2
    for i in range(n_spoke):
        c, s = np.cos(2 * np.pi * i / n_spoke), np.sin(2 * np.pi * i / n_spoke)
        for k in range(n_seg):
            rad = min(max(wire_m / 4, (edges[k] + edges[k + 1]) / 2 / n_spoke), (edges[1] - edges[0]) / 4)
            geo.wire(tag, 1, edges[k] * c, edges[k] * s, 0.0, edges[k + 1] * c, edges[k + 1] * s, 0.0, rad, 1.0, 1.0)
            tag += 1
    ctx.geometry_complete(0)
    ctx.ex_card(0, 1, 1, 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, F / 1e6, 0)
    ctx.rp_card(0, 181, 1, 1000, 0, 0, 0, 0, 0, 1, 0, 0, 0)
    return ctx.get_input_parameters(0).get_impedance()[0], ctx.get_radiation_pattern(0).get_gain().ravel()


@pytest.mark.parametrize("diameter_lambda", [0.25, 0.5, 1.0, 2.0, 3.0])
def test_disc_pattern_matches_nec2(diameter_lambda):
    z_nec, gain, equivalent_m = _nec_cage_disc(diameter_lambda * LAM / 2)
    agt = _average_gain(gain, np.arange(181))
    assert 0.8 < agt < 1.0  # NEC's model loses power; a value outside this range means a broken model
    d_nec = gain - 10 * np.log10(agt)
    ours = monopole_on_disc(H, diameter_lambda * LAM / 2, equivalent_m, F, step_deg=1.0)
    assert ours.horizon_gain_dbi == pytest.approx(d_nec[90], abs=0.25)
    assert ours.peak_gain_dbi == pytest.approx(d_nec[:91].max(), abs=0.25)
    assert ours.peak_elevation_deg == pytest.approx(90 - int(np.argmax(d_nec[:91])), abs=2.0)
    if diameter_lambda >= 2.0:
        assert ours.z_in_ohm.real == pytest.approx(z_nec.real * agt, rel=0.05)
        assert abs(ours.z_in_ohm.imag - z_nec.imag) <= 10.0


@pytest.mark.parametrize("diameter_lambda", [0.25, 0.5, 1.0])
def test_disc_impedance_matches_nec2(diameter_lambda):
    wire_m = 1e-3 * LAM
    z_nec, gain = _nec_spoke_disc(diameter_lambda * LAM / 2, wire_m)
    agt = _average_gain(gain, np.arange(181))
    ours = quarter_wave_on_disc(diameter_lambda, F, wire_radius_lambda=1e-3, step_deg=1.0)
    assert ours.z_in_ohm.real == pytest.approx(z_nec.real * agt, rel=0.05)
    assert abs(ours.z_in_ohm.imag - z_nec.imag) <= 6.0


def test_pattern_carries_the_input_power():
    # lossless: (1/4 pi) x integral of the directivity over the sphere is 1 (definition of directivity,
    # Balanis 4th ed. §2.6); a check that the far-field formula and the input power agree
    for radius in (0.2, 0.7):
        assert radiated_power_check(monopole_on_disc(H, radius * LAM, 1e-3 * LAM, F)) == pytest.approx(1.0, abs=0.01)


def test_large_disc_tends_to_the_classical_limits():
    # Infinite plane (image theory, Balanis 4th ed. §4.7): Z_monopole = Z_dipole / 2, here from wire.py's
    # own dipole; at grazing the edge halves the field: horizon directivity 5.16 - 6.02 = -0.86 dBi.
    from registry.physics.wire import Wire, build_structure, solve_structure

    st = build_structure([Wire(0.0, 0.0, -H, H, 1e-3 * LAM, 60)])
    z_dipole = solve_structure(st, st.centre_basis(0), [F]).z_in_ohm[0]
    big = monopole_on_disc(H, 3.0 * LAM, 1e-3 * LAM, F)
    assert abs(big.z_in_ohm - z_dipole / 2) <= 0.05 * abs(z_dipole / 2)
    assert big.horizon_gain_dbi == pytest.approx(-0.86, abs=0.15)
    assert big.peak_elevation_deg < 30.0


def test_ring_integrals_in_elliptic_form():
    # Gradshteyn & Ryzhik 2.571 (from memory), checked here against direct quadrature
    rho_o, rho_s = np.array([0.3]), np.array([0.55])
    phi = np.linspace(0, 2 * np.pi, 200001)[:-1]
    r = np.sqrt(rho_o**2 + rho_s**2 - 2 * rho_o * rho_s * np.cos(phi))
    plain, cosw = _ring_static(rho_o, rho_s)
    assert plain[0] == pytest.approx(np.mean(1 / (4 * np.pi * r)), rel=1e-6)
    assert cosw[0] == pytest.approx(np.mean(np.cos(phi) / (4 * np.pi * r)), rel=1e-6)


def test_mesh_rejects_fat_wires():
    with pytest.raises(ValueError):
        make_mesh(0.25, 1.0, 0.02, F)
