"""The resonant-length rule (wave.resonant_length_rule) against NEC-2 (PyNEC) and across its fit's edges.

NEC-2 models: centre-fed tube, 41 segments or fewer so a segment is at least 4 radii, extended thin-wire
kernel below 8 radii (our construction, as in test_physics_wire_accuracy.py). Tolerance: 1 % on length.
"""
import pytest
from scipy.optimize import brentq

from registry.physics import wave
from registry.physics.segmentation import Unmodellable

PyNEC = pytest.importorskip("PyNEC")

F0 = 300e6  # our own choice
LAM = wave.wavelength_m(F0)


def _nec_resonant_length_m(diameter_m):
    def reactance(length):
        n = int(min(41, length / (2 * diameter_m)))
        n -= (n + 1) % 2
        ctx = PyNEC.nec_context()
        ctx.get_geometry().wire(1, n, 0, 0, -length / 2, 0, 0, length / 2, diameter_m / 2, 1.0, 1.0)
        ctx.geometry_complete(0)
        if length / n < 4 * diameter_m:
            ctx.set_extended_thin_wire_kernel(True)
        ctx.ex_card(0, 1, n // 2 + 1, 0, 1.0, 0, 0, 0, 0, 0)
        ctx.fr_card(0, 1, F0 / 1e6, 0)
        ctx.xq_card(0)
        return ctx.get_input_parameters(0).get_impedance()[0].imag

    return brentq(reactance, 0.4 * LAM, 0.5 * LAM, xtol=1e-7 * LAM)


@pytest.mark.parametrize("diameter_l", [2e-5, 1e-4, 1e-3, 8e-3, 1.6e-2])  # 1.6e-2 was 1.2 % long with a delta gap
def test_rule_within_1_percent_of_nec2_resonant_length(diameter_l):
    """L/D from about 25 (MoM) through the fit range to about 25 000 (MoM): 1 % of NEC-2's length."""
    rule = wave.resonant_length_rule(F0, diameter_l * LAM)
    assert rule.length_m == pytest.approx(_nec_resonant_length_m(diameter_l * LAM), rel=0.01)
    inside = wave.FIT_RANGE_LD[0] <= rule.length_to_diameter <= wave.FIT_RANGE_LD[1]
    assert rule.method == ("fit" if inside else "MoM")
    assert rule.factor == pytest.approx(rule.length_m / (LAM / 2), rel=1e-12)


@pytest.mark.parametrize("edge", [0, 1])
def test_fit_meets_the_mom_at_both_edges_of_its_range(edge):
    """Continuity: at each edge of FIT_RANGE_LD the fit's factor and the MoM's differ by under 0.3 %
    (measured here, no source: the jump the site's figure can make when L/D crosses an edge)."""
    ld = wave.FIT_RANGE_LD[edge]
    diameter = LAM / 2 * (0.93, 0.99)[edge] / ld  # the resonant element's L/D lands just inside the range
    fit = wave.resonant_length_m(F0, diameter)
    assert wave.FIT_RANGE_LD[0] <= fit / diameter <= wave.FIT_RANGE_LD[1]
    assert abs(fit / diameter / ld - 1) < 0.03
    mom = wave._mom_resonant_length_m(F0, diameter, "half_wave")
    assert fit == pytest.approx(mom, rel=0.003)


def test_too_fat_element_raises_unmodellable_with_a_reason():
    with pytest.raises(Unmodellable, match="too large against the wavelength"):
        wave.resonant_length_rule(F0, 0.05 * LAM)


def test_quarter_wave_rule_uses_the_image_dipole():
    """A monopole on a perfect ground resonates at half its image dipole's length (image theory, Balanis,
    Antenna Theory, 4th ed., ch. 4): 1 %."""
    d = 1e-3 * LAM
    half = wave.resonant_length_rule(F0, d, "half_wave")
    quarter = wave.resonant_length_rule(F0, d, "quarter_wave")
    assert quarter.length_m == pytest.approx(half.length_m / 2, rel=0.01)
