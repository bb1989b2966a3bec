"""Wire-antenna figures at the site's default settings against NEC-2 (PyNEC, nec2++) as the reference solver.

Every call below goes through solve_wire_antenna / resonant_frequency_hz / pattern_for_kind exactly as the
site calls them: no 'segments' given, so the segmentation is the one the site uses (segmentation.py).

NEC-2 reference models (our construction): thin-wire kernel, the same tubes (end caps are NEC's business),
a centre-segment voltage source, NEC_SEGMENTS segments per element (odd, so a segment sits at the centre),
fewer where a segment would be shorter than 4 radii (the extended thin-wire kernel is switched on below
8 radii, NEC-2's guideline for its thin-wire kernel, from memory; check against the NEC-2 user's guide).

Tolerances (from the brief, named beside each test): dipoles R and |Z| within 5 %, resonant length 1 %;
Yagis gain 0.3 dB, feed |Z| 5 %, front-to-back 1.5 dB.
"""
import pytest
from scipy.optimize import brentq

from registry.physics.impedance import resonant_frequency_hz, solve_wire_antenna
from registry.physics.patterns import pattern_for_kind
from registry.physics.wave import wavelength_m

PyNEC = pytest.importorskip("PyNEC")

F0 = 300e6  # our own choice of design frequency; every geometry is given in wavelengths
LAM = wavelength_m(F0)
NEC_SEGMENTS = 41


def _nec_segments(length_m, radius_m):
    n = int(min(NEC_SEGMENTS, length_m / (4 * radius_m)))
    return n - (n + 1) % 2, length_m / n < 8 * radius_m


def _nec(elements, driven, freq_hz, directions=()):
    """(Z_in, [gain dBi per (theta, phi)]) of parallel z-directed tubes (length, x, radius) in NEC-2."""
    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    extended = False
    for tag, (length, x, radius) in enumerate(elements, start=1):
        n, ek = _nec_segments(length, radius)
        extended |= ek
        geo.wire(tag, n, x, 0, -length / 2, x, 0, length / 2, radius, 1.0, 1.0)
        if tag == driven + 1:
            feed = (tag, n // 2 + 1)
    ctx.geometry_complete(0)
    if extended:
        ctx.set_extended_thin_wire_kernel(True)
    ctx.ex_card(0, feed[0], feed[1], 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, freq_hz / 1e6, 0)
    gains = []
    for theta, phi in directions:
        ctx.rp_card(0, 1, 1, 1000, 0, 0, 0, theta, phi, 0, 0, 0, 0)
    if not directions:
        ctx.xq_card(0)
    z = ctx.get_input_parameters(0).get_impedance()[0]
    gains = [float(ctx.get_radiation_pattern(i).get_gain().ravel()[0]) for i in range(len(directions))]
    return complex(z), gains


# Dipoles across L/lambda 0.40-0.55 and a/lambda 1e-5 to 5e-3 (our grid). Tolerance: R and |Z| within 5 %.
# Measured: within 1.9 % everywhere (feed gap of 4 radii, segmentation.py). With a delta gap the fat wires
# off resonance were 6-9 % high in R: the gap's capacitance grew as the refinement added segments.
DIPOLE_GRID = [(lr, ar) for ar in (1e-5, 1e-4, 1e-3, 2.5e-3, 5e-3) for lr in (0.40, 0.47, 0.50, 0.55)]


@pytest.mark.parametrize("length_l,radius_l", DIPOLE_GRID)
def test_dipole_impedance_within_5_percent_of_nec2(length_l, radius_l):
    length, radius = length_l * LAM, radius_l * LAM
    z_nec = _nec([(length, 0.0, radius)], 0, F0)[0]
    z = solve_wire_antenna("dipole", {"length_m": length, "diameter_m": 2 * radius}, [F0]).z_in_ohm[0]
    assert z.real == pytest.approx(z_nec.real, rel=0.05)
    assert abs(z) == pytest.approx(abs(z_nec), rel=0.05)


@pytest.mark.parametrize("radius_l", [1e-5, 1e-4, 1e-3, 2.5e-3, 5e-3])
def test_dipole_resonant_length_within_1_percent_of_nec2(radius_l):
    """NEC-2's resonant length against the length at which our resonant_frequency_hz lands on F0 (1 %)."""
    radius = radius_l * LAM
    l_nec = brentq(lambda L: _nec([(L, 0.0, radius)], 0, F0)[0].imag, 0.40 * LAM, 0.5 * LAM, xtol=1e-7 * LAM)
    f_res = resonant_frequency_hz("dipole", {"length_m": l_nec, "diameter_m": 2 * radius}, 0.5 * F0, 1.5 * F0,
                                  design_hz=F0)
    assert f_res == pytest.approx(F0, rel=0.01)  # resonance at the same length <=> same frequency, 1 %


# Yagis: the parasitic lengths of NBS Technical Note 688 (P. P. Viezbicke, "Yagi Antenna Design", 1976,
# DOI 10.6028/NBS.TN.688), Table 1, d/lambda = 0.0085, reflector 0.2 lambda behind the driven element.
# Partly verified: the element counts per boom (3, 5, 6, 12 for 0.4, 0.8, 1.2, 2.2 lambda), the reflector
# (0.482 lambda), the director spacings (0.20 lambda; 0.25 for the 1.2 lambda boom), d/lambda and the 0.4
# lambda design's director as printed (0.424 lambda) agree with a public transcription of Table 1 (the
# "Verdict: NBS TN 688 Yagis" write-up in a public antenna-solver comparison repository, which also reads
# Fig. 9 as about 0.443 for that director and calls the printed 0.424 a likely misprint). The other director
# lengths are from memory: check against TN 688 Table 1 itself. TN 688 leaves the driven element to be
# trimmed: ours is 0.47 lambda.
TN688 = {
    "3 elements, boom 0.4": ((0.482, 0.470, 0.424), 0.2),
    "5 elements, boom 0.8": ((0.482, 0.470, 0.428, 0.424, 0.428), 0.2),
    "6 elements, boom 1.2": ((0.482, 0.470, 0.428, 0.420, 0.420, 0.428), 0.25),
    "12 elements, boom 2.2": ((0.482, 0.470, 0.432, 0.415, 0.407, 0.398, 0.390, 0.390, 0.390, 0.390, 0.398,
                               0.407), 0.2),
}


def _tn688(name):
    lengths_l, spacing_l = TN688[name]
    positions = [0.0] + [0.2 * LAM + i * spacing_l * LAM for i in range(len(lengths_l) - 1)]
    return [v * LAM for v in lengths_l], positions, 0.0085 * LAM / 2


# A published 6-element 144.3 MHz design, 10 mm elements: positions 0, 390, 640, 1150, 1785, 2380 mm, lengths
# 1017, 971, 935, 907, 905, 876 mm (as quoted at raw.githubusercontent.com/ic8tem/YA-NEC, docs, lesson 14,
# from qsl.net/dk7zb; unverified against the designer's own page).
PUBLISHED_6 = ([1.017, 0.971, 0.935, 0.907, 0.905, 0.876], [0.0, 0.390, 0.640, 1.150, 1.785, 2.380], 0.005, 144.3e6)


def _yagi_case(name):
    if name == "published 6 elements, 144.3 MHz":
        return PUBLISHED_6
    return (*_tn688(name), F0)


# Measured (feed gap of 4 radii, end caps of 0.35 radii, front-to-back part of the convergence test,
# segmentation.py): gain within 0.01 dB, feed |Z| within 1.2 %, front-to-back within 0.3 dB of NEC-2's in
# every case. Before (delta gap, 0.25-radius caps, |Z| alone deciding the segmentation) the last three were
# 1.6-2.3 dB high.
YAGI_CASES = ["3 elements, boom 0.4", "5 elements, boom 0.8", "6 elements, boom 1.2", "12 elements, boom 2.2",
              "published 6 elements, 144.3 MHz"]


@pytest.mark.parametrize("name", YAGI_CASES)
def test_yagi_gain_front_to_back_and_feed_impedance_match_nec2(name):
    """Gain within 0.3 dB, front-to-back within 1.5 dB, feed |Z| within 5 % of NEC-2's."""
    lengths, positions, radius, freq = _yagi_case(name)
    elements = [(L, x, radius) for L, x in zip(lengths, positions)]
    z_nec, (g_fwd, g_back) = _nec(elements, 1, freq, [(90.0, 0.0), (90.0, 180.0)])
    geometry = {"element_lengths_m": lengths, "element_positions_m": positions, "diameter_m": 2 * radius}
    z = solve_wire_antenna("yagi", geometry, [freq]).z_in_ohm[0]
    assert abs(z) == pytest.approx(abs(z_nec), rel=0.05)
    m = pattern_for_kind("yagi", geometry, freq).metrics
    assert m.peak_directivity_dbi == pytest.approx(g_fwd, abs=0.3)
    assert m.front_to_back_db == pytest.approx(g_fwd - g_back, abs=1.5)
