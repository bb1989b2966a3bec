"""Touchstone one-port reader, band summary and distance to reflection.

Sources: IBIS Open Forum, Touchstone File Format Specification (Version 2.0, 2009), its Version 1.0
examples (tests/reference/touchstone_spec_example*.s1p); scikit-rf's reader (skrf.Network) and network
models (skrf.media) as the cross-check. Tolerances per check.
"""
from pathlib import Path

import numpy as np
import pytest

from registry.physics.impedance import band_under_vswr
from registry.physics.sweep import OnePortSweep, band_summary, distance_to_reflection, parse_s1p, read_s1p

REF = Path(__file__).parent / "reference"
skrf = pytest.importorskip("skrf")


def test_spec_example_1_single_point():
    s = read_s1p(REF / "touchstone_spec_example1.s1p")
    assert s.freqs_hz.tolist() == [2e6]
    assert s.z0_ohm == 50.0
    assert s.s11[0] == pytest.approx(0.894 * np.exp(-1j * np.deg2rad(12.136)), abs=1e-12)


def test_spec_example_2_normalised_z_matches_scikit_rf():
    ours = read_s1p(REF / "touchstone_spec_example2.s1p")
    theirs = skrf.Network(str(REF / "touchstone_spec_example2.s1p"))
    np.testing.assert_allclose(ours.freqs_hz, theirs.f, rtol=1e-12)
    np.testing.assert_allclose(ours.s11, theirs.s[:, 0, 0], atol=1e-9)
    assert ours.z0_ohm == 75.0


@pytest.mark.parametrize("form", ["ri", "ma", "db"])
def test_round_trip_through_scikit_rf_writer(tmp_path, form):
    """scikit-rf writes a one-port sweep in each format; we read back the same S11 (1e-6 relative)."""
    rng = np.random.default_rng(7)
    f = np.linspace(100e6, 200e6, 21)
    s = 0.8 * rng.random(21) * np.exp(2j * np.pi * rng.random(21))
    net = skrf.Network(frequency=skrf.Frequency.from_f(f, unit="Hz"), s=s.reshape(-1, 1, 1), z0=50, name="rt")
    net.write_touchstone(str(tmp_path / "rt"), form=form)
    ours = read_s1p(tmp_path / "rt.s1p")
    np.testing.assert_allclose(ours.freqs_hz, f, rtol=1e-9)
    np.testing.assert_allclose(ours.s11, s, rtol=1e-6, atol=1e-9)


def test_option_defaults_and_order_and_units():
    """Spec: options in any order, case-insensitive, defaults GHz S MA R 50; comments after '!'."""
    s = parse_s1p("# ri khz\n1000 0.5 -0.5 ! inline comment\n2000 0 0\n")
    assert s.freqs_hz.tolist() == [1e6, 2e6]
    assert s.s11[0] == 0.5 - 0.5j and s.z0_ohm == 50.0
    s = parse_s1p("#\n1 0.1 90\n")
    assert s.freqs_hz[0] == 1e9 and s.s11[0] == pytest.approx(0.1j)
    s = parse_s1p("# Hz S dB R 75\n5 -6.0206 180\n# GHz S RI R 50\n6 -20 0\n")  # second option line ignored
    assert s.freqs_hz.tolist() == [5.0, 6.0] and s.z0_ohm == 75.0
    assert s.s11[0] == pytest.approx(-0.5, abs=1e-5)


@pytest.mark.parametrize("text,message", [
    ("# MHz S MA R 50\n100 0.5\n", "<s1p>:2: expected 3 numbers"),
    ("# MHz S MA R 50\n100 0.5 x1\n", "<s1p>:2: 'x1' is not a number"),
    ("100 0.5 10\n", "<s1p>:1: data before the option line"),
    ("# MHz S MA R 50\n! c\n200 0.5 1\n100 0.5 1\n", "<s1p>:4: frequencies must increase"),
    ("# MHz S XY R 50\n", "<s1p>:1: option line: unknown option 'XY'"),
    ("# MHz S MA R\n", "<s1p>:1: option line: 'R' needs a reference resistance"),
    ("# MHz H MA R 50\n", "<s1p>:1: option line: H parameters"),
    ("[Version] 2.0\n# MHz S MA R 50\n", "<s1p>:1: keyword '\\[Version\\]'"),
    ("! only a comment\n", "<s1p>: no option line"),
])
def test_bad_content_names_the_line(text, message):
    with pytest.raises(ValueError, match=message):
        parse_s1p(text)


def test_file_errors_name_the_file(tmp_path):
    p = tmp_path / "bad.s1p"
    p.write_text("# MHz S RI R 50\n1 2 3 4\n")
    with pytest.raises(ValueError, match=r"bad\.s1p:2: expected 3 numbers"):
        read_s1p(p)


def _line_and_load(length_m, load_ohm, f, velocity_factor=0.7, alpha_db_per_m=0.05):
    """S11 of a 50-ohm line of given length ending in a load, built with scikit-rf's network algebra."""
    from skrf.media import DefinedGammaZ0

    fr = skrf.Frequency.from_f(f, unit="Hz")
    beta = 2 * np.pi * f / (velocity_factor * 299_792_458.0)
    alpha = alpha_db_per_m / 8.685889638
    media = DefinedGammaZ0(frequency=fr, z0=50, gamma=alpha + 1j * beta)
    return (media.line(length_m, "m") ** media.load((load_ohm - 50) / (load_ohm + 50))).s[:, 0, 0]


def test_distance_to_largest_reflection_with_velocity_factor():
    """A 12.5 m feeder (velocity factor 0.7) ending in a 150-ohm load: the inverse-FFT response peaks at
    12.5 m within half the range resolution v/(2B) (band-pass TDR; scikit-rf builds the network)."""
    f = np.linspace(50e6, 1050e6, 401)
    s11 = _line_and_load(12.5, 150.0, f)
    r = distance_to_reflection(OnePortSweep(f, s11, 50.0), velocity_factor=0.7)
    assert r.resolution_m == pytest.approx(0.7 * 299_792_458.0 / (2 * 1e9))
    assert r.peak_distance_m == pytest.approx(12.5, abs=r.resolution_m / 2)
    # the wrong velocity factor moves the answer in proportion
    r2 = distance_to_reflection(OnePortSweep(f, s11, 50.0), velocity_factor=0.66)
    assert r2.peak_distance_m == pytest.approx(12.5 * 0.66 / 0.7, abs=r.resolution_m / 2)


def test_distance_needs_uniform_sweep():
    f = np.array([1, 2, 3, 5, 6, 7, 8, 9, 10.0]) * 1e6
    with pytest.raises(ValueError, match="uniformly spaced"):
        distance_to_reflection(OnePortSweep(f, np.zeros(9, complex), 50.0), 0.7)


def test_band_summary_worst_point():
    """Pozar 4th ed. §2.3: |Gamma| 1/3 is VSWR 2 and return loss 9.54 dB."""
    s = parse_s1p("# MHz S MA R 50\n117 0.5 0\n118 0.2 0\n127 0.3333333333 10\n137 0.1 0\n138 0.9 0\n")
    b = band_summary(s, 118e6, 137e6)
    assert b.n_points == 3 and b.freq_at_max_vswr_hz == 127e6
    assert b.max_vswr == pytest.approx(2.0, rel=1e-8)
    assert b.min_return_loss_db == pytest.approx(9.542, abs=1e-3)
    with pytest.raises(ValueError, match="no point between"):
        band_summary(s, 200e6, 300e6)


def test_band_under_vswr_interpolates_edges():
    """Linear interpolation of the limit crossing (common practice, no source)."""
    f = np.array([100.0, 110.0, 120.0, 130.0, 140.0])
    v = np.array([3.0, 2.0, 1.2, 1.5, 2.5])
    lo, hi = band_under_vswr(f, v, 2.0)
    assert lo == pytest.approx(110.0) and hi == pytest.approx(135.0)
    assert np.isnan(band_under_vswr(f, v, 1.1)[0])
