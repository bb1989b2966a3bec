"""Folded dipoles (the closed-loop moment-method model, wire_path.py) against NEC-2 (PyNEC, nec2++) and the
classic step-up ratio; the bent-wire solver against the straight-wire one.

Every figure goes through impedance.solve_wire_antenna / wave.folded_resonant_length_rule as the site calls
them (no 'segments' given: the site's own converged segmentation).

NEC-2 reference models (our construction): both conductors and two one-segment end wires of the same radius,
41 segments per conductor or fewer where a segment would be shorter than 4 radii (the extended thin-wire
kernel below 8 radii), the voltage source on the centre segment of the first conductor.

Tolerances (issue 12): resonant length within 1 % of NEC-2's, |Z| within 5 %. Measured over the grid
below: resonant length within 0.2 %; |Z| within 1 % at 0.48 lambda, within 3.2 % at 0.44 lambda (the worst:
thin conductors 3 radii apart, where R is 5.7 % low, so R is not asserted off resonance).
"""
import math

import numpy as np
import pytest
from scipy.optimize import brentq

from registry.physics import wire_path
from registry.physics.impedance import solve_wire_antenna
from registry.physics.segmentation import Unmodellable
from registry.physics.wave import folded_resonant_length_rule, wavelength_m

PyNEC = pytest.importorskip("PyNEC")
import nec_reference  # noqa: E402 - tests/nec_reference.py, after PyNEC is known to be there

F0 = 300e6  # our own choice; geometries are given in wavelengths
LAM = wavelength_m(F0)


def _nec_folded_z(length_m, radius_m, spacing_m, freq_hz=F0):
    n = int(min(41, length_m / (4 * radius_m)))
    n -= (n + 1) % 2
    return nec_reference.folded_dipole_z(length_m, radius_m, spacing_m, freq_hz, n, extended_kernel_below_radii=8)


# (a/lambda, s/a): thin to fat conductors (the demo's glide-slope element is a/lambda 2.2e-3, s/a 10), close
# to wide spacing; our grid
GRID = [(2e-4, 3), (2e-4, 40), (1e-3, 3), (1e-3, 10), (1e-3, 40), (3e-3, 3), (3e-3, 10)]


@pytest.mark.parametrize("a_l,s_over_a", GRID)
def test_folded_resonant_length_within_1_percent_of_nec2(a_l, s_over_a):
    radius = a_l * LAM
    spacing = s_over_a * radius
    half = LAM / 2
    l_nec = brentq(lambda L: _nec_folded_z(L, radius, spacing).imag, 0.8 * half, 1.04 * half, xtol=1e-7 * LAM)
    rule = folded_resonant_length_rule(F0, 2 * radius, spacing)
    assert rule.length_m == pytest.approx(l_nec, rel=0.01)
    assert rule.factor * half == pytest.approx(rule.length_m, rel=1e-12)  # the factor shown is the one used


@pytest.mark.parametrize("a_l,s_over_a", GRID)
@pytest.mark.parametrize("length_l", [0.44, 0.48])
def test_folded_impedance_within_5_percent_of_nec2(a_l, s_over_a, length_l):
    radius, length = a_l * LAM, length_l * LAM
    spacing = s_over_a * radius
    z_nec = _nec_folded_z(length, radius, spacing)
    z = solve_wire_antenna("folded_dipole", {"length_m": length, "diameter_m": 2 * radius, "spacing_m": spacing},
                           [F0]).z_in_ohm[0]
    assert abs(z) == pytest.approx(abs(z_nec), rel=0.05)


@pytest.mark.parametrize("a_l,s_over_a,other", [(2e-4, 10, 0.5), (2e-4, 10, 3.0), (1e-3, 30, 2.0),
                                                  (1e-3, 10, 3.0)])
def test_unequal_conductors_follow_the_step_up_ratio(a_l, s_over_a, other):
    """At resonance, R_in of a folded dipole with a fed conductor of radius a1 and the other a2 against the
    same loop with equal conductors: (1 + ln(s/a1)/ln(s/a2))^2 / 4, the classic step-up ratio of unequal
    conductors (textbook form as quoted in the folded-dipole questions at sarthaks.com and
    qna.talkjarvis.com; not checked against a book). Tolerance 3 % (the ratio neglects the spacing's
    effect on the antenna mode). NEC-2 is not the reference here: it gave ratios near 1 for closely
    spaced parallel wires of different radii, against 1.5-2.1 from the formula and from this model."""
    a1 = a_l * LAM
    a2, spacing = other * a1, s_over_a * a1
    rule = folded_resonant_length_rule(F0, 2 * a1, spacing, 2 * a2)
    g = {"length_m": rule.length_m, "diameter_m": 2 * a1, "spacing_m": spacing}
    z_unequal = solve_wire_antenna("folded_dipole", {**g, "diameter_other_m": 2 * a2}, [F0]).z_in_ohm[0]
    z_equal = solve_wire_antenna("folded_dipole", g, [F0]).z_in_ohm[0]
    ratio = (1 + math.log(spacing / a1) / math.log(spacing / a2)) ** 2 / 4
    assert z_unequal.real / z_equal.real == pytest.approx(ratio, rel=0.03)


def test_feed_gap_makes_the_resonance_converge_with_the_segments():
    """Halving the segments moves the resonance by under 0.1 % with the gap source (it moved 0.2-0.6 %
    per halving with a delta gap); demo-like geometry a/lambda 2.2e-3, s = 10 a. Self-consistency, no
    external source."""
    radius = 2.2e-3 * LAM
    spacing = 10 * radius

    def resonance(n):
        def x(length):
            n_end = max(1, math.ceil(spacing / (length / n)))
            return wire_path.folded_dipole_solver(length, spacing, radius, radius, n, n_end).feed_impedance_ohm(
                [F0])[0].imag
        return brentq(x, 0.4 * LAM, 0.52 * LAM, xtol=1e-7 * LAM)

    coarse, fine = resonance(24), resonance(48)
    assert fine == pytest.approx(coarse, rel=0.001)


def test_bent_wire_solver_agrees_with_the_straight_wire_solver_on_a_dipole():
    """An open straight path in wire_path (triangle bases, mixed potential) against wire.py's PWS Galerkin
    solver (both delta-gap fed), 0.47 lambda dipole of a/lambda 1e-3, 40 segments: |Z| within 2 %."""
    length, radius = 0.47 * LAM, 1e-3 * LAM
    z_nodes = np.linspace(-length / 2, length / 2, 41)
    nodes = np.column_stack([np.zeros(41), np.zeros(41), z_nodes])
    geo = wire_path.path_geometry(nodes, np.full(40, radius), closed=False, feed_node=20)
    z_path = wire_path.PathSolver(geo).feed_impedance_ohm([F0])[0]
    z_pws = solve_wire_antenna("dipole", {"length_m": length, "diameter_m": 2 * radius, "segments": 40},
                               [F0]).z_in_ohm[0]
    assert abs(z_path) == pytest.approx(abs(z_pws), rel=0.02)


def test_folded_dipole_conductors_that_touch_are_unmodellable():
    with pytest.raises(Unmodellable, match="conductors touch"):
        solve_wire_antenna("folded_dipole", {"length_m": 0.5, "diameter_m": 0.01, "spacing_m": 0.009}, [F0])
