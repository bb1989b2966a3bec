"""Coupling round a fuselage (fuselage_coupling) against NEC-2 (PyNEC, nec2++) wire-grid cylinders.

NEC-2 models (our own geometry): an open tube of single-segment wires on a grid of about a tenth of a
wavelength, wire radius = cell / (2 pi) (equal-area rule for wire grids, common practice), two
quarter-wave monopoles (0.24 lambda, radius 1e-3 lambda, 11 segments) standing radially on grid nodes,
source on the base segment of one; short-circuit currents at both bases give the admittance matrix.
  * VHF: 125 MHz, radius 1.4 m (k a = 3.7, a regional airliner's fuselage), length 7.2 m (3 lambda),
    36 x 30 cells;
  * L band: 1090 MHz, radius 0.22 m (k a = 5.0; a real fuselage at L band, k a ~ 30, is beyond what a
    wire grid affords here), length 0.96 m (3.5 lambda), 48 x 28 cells.
The tube is finite; the model assumes an infinite cylinder. At L band and 180 deg NEC's figure moved
from -35.2 to -39.7 to -40.3 dB as the tube grew from 2.5 to 3.5 to 5 wavelengths: the ends still
matter by about 1 dB at the length used here.
Tolerance: 3 dB (the brief's target). Measured: VHF 2.0 / 1.2 / 2.2 / 2.1 dB (90, 120, 180 deg, 180 deg
with a 0.6 lambda axial offset); L band 2.2 / 1.1 / 2.0 dB. At k a = 2.1 (not tested) the model reads
2-4 dB high (more coupling than NEC-2), the safe side for an interference margin.
"""
import math

import numpy as np
import pytest

from registry.physics.airframe_shape import fuselage
from registry.physics.fuselage_coupling import around_cylinder, curvature_factor, fock_factor, fuselage_path
from registry.physics.near_coupling import monopole_pair, s_from_z
from registry.physics.wave import wavelength_m

PyNEC = pytest.importorskip("PyNEC")


def _nec_cylinder(freq_hz, radius_m, length_m, n_phi, n_z, phi2, z_steps=0):
    lam = wavelength_m(freq_hz)
    h, b = 0.24 * lam, 1e-3 * lam
    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    phis = 2 * np.pi * np.arange(n_phi) / n_phi
    zs = np.linspace(-length_m / 2, length_m / 2, n_z + 1)
    rad = min(2 * np.pi * radius_m / n_phi, zs[1] - zs[0]) / (2 * np.pi)
    z1, z2 = zs[n_z // 2 - z_steps // 2], zs[n_z // 2 - z_steps // 2 + z_steps]
    geo.wire(1, 11, radius_m, 0.0, z1, radius_m + h, 0.0, z1, b, 1.0, 1.0)
    c2, s2 = math.cos(phi2), math.sin(phi2)
    geo.wire(2, 11, radius_m * c2, radius_m * s2, z2, (radius_m + h) * c2, (radius_m + h) * s2, z2, b, 1.0, 1.0)
    tag = 3
    for i, p in enumerate(phis):
        c, s = math.cos(p), math.sin(p)
        cn, sn = math.cos(phis[(i + 1) % n_phi]), math.sin(phis[(i + 1) % n_phi])
        for k in range(n_z):
            geo.wire(tag, 1, radius_m * c, radius_m * s, zs[k], radius_m * c, radius_m * s, zs[k + 1], rad, 1.0, 1.0)
            tag += 1
        for k in range(n_z + 1):
            geo.wire(tag, 1, radius_m * c, radius_m * s, zs[k], radius_m * cn, radius_m * sn, zs[k], rad, 1.0, 1.0)
            tag += 1
    ctx.geometry_complete(0)
    ctx.ex_card(0, 1, 1, 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, freq_hz / 1e6, 0)
    ctx.xq_card(0)
    cur = ctx.get_structure_currents(0).get_current()
    y = np.array([[cur[0], cur[11]], [cur[11], cur[0]]])  # the pair is symmetric
    return 20 * np.log10(abs(s_from_z(np.linalg.inv(y))[1, 0])), z2 - z1


CASES = [  # (freq_hz, radius_m, length_m, n_phi, n_z, angle, axial steps)
    (125e6, 1.4, 7.2, 36, 30, math.pi / 2, 0),
    (125e6, 1.4, 7.2, 36, 30, 2 * math.pi / 3, 0),
    (125e6, 1.4, 7.2, 36, 30, math.pi, 0),
    (125e6, 1.4, 7.2, 36, 30, math.pi, 6),
    (1090e6, 0.22, 0.96, 48, 28, math.pi / 2, 0),
    (1090e6, 0.22, 0.96, 48, 28, 2 * math.pi / 3, 0),
    (1090e6, 0.22, 0.96, 48, 28, math.pi, 0),
]


@pytest.mark.parametrize("freq_hz, radius_m, length_m, n_phi, n_z, angle, steps", CASES)
def test_coupling_round_a_cylinder_matches_nec2(freq_hz, radius_m, length_m, n_phi, n_z, angle, steps):
    nec_db, axial_m = _nec_cylinder(freq_hz, radius_m, length_m, n_phi, n_z, angle, steps)
    lam = wavelength_m(freq_hz)
    ours = around_cylinder(radius_m, angle, axial_m, freq_hz, 0.24 * lam, 0.24 * lam, 1e-3 * lam)
    assert ours.coupling_db == pytest.approx(nec_db, abs=3.0)


def test_curvature_factor_tends_to_flat_and_decays_round_the_body():
    # a very large radius: the surface is locally flat; a fixed angle: more loss for a larger body
    assert abs(curvature_factor(2000.0, 1e-3) - 1) < 0.02
    losses = [-20 * np.log10(abs(curvature_factor(x, math.pi / 2))) for x in (5.0, 20.0, 80.0)]
    assert losses[0] < losses[1] < losses[2]


def test_fock_factor_slope_is_the_first_creeping_mode():
    # deep in the shadow one mode remains: F ~ sqrt(xi) exp(-j xi t1), Im(t1) = a1' sin(60 deg) nepers
    # per unit xi, a1' = 1.01879 the first zero of Ai' (Abramowitz & Stegun table 10.13); the sqrt(xi)
    # factor is the leading term of Fock's residue series for a hard surface (from memory)
    slope_db = -20 * np.log10(abs(fock_factor(10.0)) / abs(fock_factor(9.0)))
    expected = 8.686 * 1.01879 * math.sin(math.pi / 3) - 10 * np.log10(10 / 9)
    assert slope_db == pytest.approx(expected, rel=0.02)


def test_the_surface_series_is_summed_in_blocks_that_hold_little_memory():
    # The F table's 480 angles x 20,000 tail terms summed at once held about 150 MB for a moment, the
    # peak of a process computing one aircraft; summed 32 angles at a time it holds about 26 MB. Each
    # angle's sum is the same whether it is asked alone or in a block (no source needed: same terms).
    import tracemalloc

    from registry.physics.fuselage_coupling import _XI_TABLE, _fock_table, _surface_series

    _fock_table.cache_clear()
    tracemalloc.start()
    try:
        table = _fock_table()
        peak_bytes = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    assert len(table) == len(_XI_TABLE) and table[0] == 1
    assert peak_bytes < 40e6
    phi = np.linspace(0.05, 3.0, 70)  # three blocks, the last one short
    alone = np.array([_surface_series(40.0, angle)[0] for angle in phi])
    assert np.allclose(_surface_series(40.0, phi), alone, rtol=1e-12, atol=1e-9)


def test_same_side_pair_is_the_flat_pair():
    lam = wavelength_m(125e6)
    flat = monopole_pair(0.24 * lam, 0.24 * lam, 0.5, 125e6, 1e-3 * lam).coupling_db
    ours = around_cylinder(1.4, 0.0, 0.5, 125e6, 0.24 * lam, 0.24 * lam, 1e-3 * lam).coupling_db
    assert ours == pytest.approx(flat, abs=0.05)  # the long way round adds < 0.05 dB here


def test_fuselage_path_top_to_bottom():
    body = fuselage([0.0, 1000.0], [100.0, 100.0], [60.0, 60.0], [60.0, 60.0], 0.0254)
    radius, angle, axial = fuselage_path(body, (400.0, 0.0, 160.0), (500.0, 0.0, 40.0), 0.0254)
    assert radius == pytest.approx(60 * 0.0254)
    assert angle == pytest.approx(math.pi)
    assert axial == pytest.approx(100 * 0.0254)
