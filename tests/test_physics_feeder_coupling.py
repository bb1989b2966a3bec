"""Units, wavelength, feeder loss, mismatch and isolation: handbook relations, scikit-rf and identities.

Tolerances are stated per check.
"""
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from registry.core import units
from registry.physics import coupling, feeder, mismatch, wave

REF = Path(__file__).parent / "reference"


# --- units and wave -----------------------------------------------------------------------------

def test_constants_are_the_si_values():
    """BIPM SI Brochure, 9th ed. (c exact); CODATA 2018 mu0; eta0 = mu0 c (about 376.730 ohm)."""
    assert units.C_M_PER_S == 299_792_458.0
    assert units.ETA0 == pytest.approx(376.730313, rel=1e-8)
    assert units.EPS0 == pytest.approx(8.8541878128e-12, rel=1e-9)
    assert units.NP_TO_DB == pytest.approx(8.685889638, rel=1e-9)
    assert units.inch_to_m(1.0) == 0.0254 and units.ft_to_m(1.0) == 0.3048
    assert units.per_100ft_to_per_100m(0.3048) == pytest.approx(1.0, rel=1e-15)


@given(st.floats(min_value=1e3, max_value=1e11))
def test_wavelength_times_frequency_is_c(freq_hz):
    """Identity: lambda f = c."""
    assert wave.wavelength_m(freq_hz) * freq_hz == pytest.approx(units.C_M_PER_S, rel=1e-14)


def test_rule_of_thumb_and_deviation():
    """Common practice: 95 % of lambda/4. Deviation in % and mm of an installed length."""
    f = 127e6
    q = wave.rule_of_thumb_length_m(f, "quarter_wave")
    assert q == pytest.approx(0.95 * units.C_M_PER_S / f / 4, rel=1e-15)
    pct, mm = wave.length_deviation(q + 0.005, q)
    assert mm == pytest.approx(5.0, rel=1e-9)
    assert pct == pytest.approx(100 * 0.005 / q, rel=1e-9)
    with pytest.raises(ValueError, match="half_wave"):
        wave.free_space_length_m(f, "full_wave")


def test_ground_plane_against_quarter_wave_at_lowest_frequency():
    """Common practice: radius >= lambda/4 at the lowest frequency served."""
    f_low = 118e6
    r = units.C_M_PER_S / f_low / 4
    assert wave.ground_plane_adequate(r, f_low)
    assert not wave.ground_plane_adequate(0.99 * r, f_low)
    assert wave.ground_plane_ratio(2 * r, f_low) == pytest.approx(2.0)
    assert wave.ground_plane_ratio(r, 2 * f_low) == pytest.approx(2.0)  # higher frequency: shorter lambda


def test_end_effect_refuses_blade_like_ratios():
    with pytest.raises(ValueError, match="length-to-diameter"):
        wave.end_effect_factor(5.0)


# --- mismatch -----------------------------------------------------------------------------------

def _pozar_rows():
    for line in (REF / "pozar_mismatch.csv").read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            yield tuple(float(x) for x in line.split(","))


@pytest.mark.parametrize("row", list(_pozar_rows()), ids=lambda r: f"vswr={r[0]}")
def test_mismatch_relations(row):
    """Reference file pozar_mismatch.csv (Pozar, Microwave Engineering, 4th ed., §2.3)."""
    vswr, g, rl, ml = row
    assert mismatch.gamma_from_vswr(vswr) == pytest.approx(g, abs=5e-4)
    assert mismatch.return_loss_db_from_vswr(vswr) == pytest.approx(rl, abs=5e-3)
    assert mismatch.mismatch_loss_db_from_vswr(vswr) == pytest.approx(ml, abs=5e-3)
    if vswr > 1:
        assert mismatch.vswr_from_gamma(mismatch.gamma_from_vswr(vswr)) == pytest.approx(vswr, rel=1e-12)


def test_vswr_of_a_100_ohm_load_on_50_ohm_is_2():
    """Pozar 4th ed. §2.3: Gamma = (100 - 50)/(100 + 50) = 1/3, VSWR 2."""
    assert mismatch.vswr_from_z(100.0, 50.0) == pytest.approx(2.0, rel=1e-12)
    assert mismatch.vswr_from_z(25.0, 50.0) == pytest.approx(2.0, rel=1e-12)


# --- feeder -------------------------------------------------------------------------------------

COAX = {"inner_diameter_m": 0.94e-3, "outer_diameter_m": 2.95e-3, "eps_r": 2.1, "tan_delta": 3e-4}


def _skrf_coax(freqs_hz):
    skrf = pytest.importorskip("skrf")
    from skrf.media import Coaxial

    fr = skrf.Frequency.from_f(freqs_hz, unit="Hz")
    return Coaxial(frequency=fr, Dint=COAX["inner_diameter_m"], Dout=COAX["outer_diameter_m"],
                   epsilon_r=COAX["eps_r"], tan_delta=COAX["tan_delta"], sigma=feeder.COPPER_S_PER_M, z0_port=50)


def test_coax_from_geometry_matches_scikit_rf():
    """Pozar 4th ed. §2.7 formulas against scikit-rf's coaxial line model (skrf.media.Coaxial):
    Z0 within 0.5 % and attenuation within 2 % from 100 MHz to 3 GHz."""
    f = np.array([100e6, 300e6, 1e9, 3e9])
    line = _skrf_coax(f)
    z0 = feeder.coax_z0_ohm(COAX["inner_diameter_m"], COAX["outer_diameter_m"], COAX["eps_r"])
    np.testing.assert_allclose(np.abs(line.z0), z0, rtol=5e-3)
    ac, ad = feeder.coax_attenuation_db_per_m(f, **COAX)
    np.testing.assert_allclose(ac + ad, line.alpha * units.NP_TO_DB, rtol=0.02)


def test_attenuation_fit_recovers_a_physical_table():
    """A table made by scikit-rf's coaxial model (a sqrt(f) + b f physics) is fitted with a residual
    under 1 % of the loss, and the fit interpolates to 1 %."""
    f = np.array([30e6, 100e6, 400e6, 1e9, 2e9, 3e9])
    table = _skrf_coax(f).alpha * units.NP_TO_DB * 100  # dB/100 m
    fit = feeder.fit_attenuation(f, table)
    assert fit.max_residual_db_per_100m < 0.01 * table.min()
    f_mid = np.array([250e6])
    assert feeder.attenuation_db_per_100m(fit, 250e6) == pytest.approx(
        float(_skrf_coax(f_mid).alpha[0] * units.NP_TO_DB * 100), rel=0.01)


def test_attenuation_fit_reports_a_bad_table():
    """A table that is not a sqrt(f) + b f shows a large residual (common practice: check the fit)."""
    f = np.array([100e6, 200e6, 400e6, 800e6])
    fit = feeder.fit_attenuation(f, [10.0, 2.0, 30.0, 5.0])
    assert fit.rms_residual_db_per_100m > 5.0


def test_per_100ft_table_converts():
    """1 dB/100 ft = 3.2808 dB/100 m (exact foot, 0.3048 m)."""
    assert feeder.table_to_db_per_100m([1.0], "100ft")[0] == pytest.approx(1 / 0.3048, rel=1e-15)
    with pytest.raises(ValueError, match="'100m' or '100ft'"):
        feeder.table_to_db_per_100m([1.0], "100yd")


@given(st.floats(min_value=0.1, max_value=200.0), st.floats(min_value=1e6, max_value=6e9))
def test_cable_loss_is_linear_in_length(length_m, freq_hz):
    """Identity: loss(2 L) = 2 loss(L)."""
    fit = feeder.AttenuationFit(0.0015, 1.2e-9, 0.0, 0.0, 1e6, 6e9)
    one = feeder.cable_loss_db(fit, freq_hz, length_m)
    assert feeder.cable_loss_db(fit, freq_hz, 2 * length_m) == pytest.approx(2 * one, rel=1e-12)


def test_feeder_budget_adds_up():
    """Total = cable + connectors + mismatch (Pozar §2.3: VSWR 2 -> 0.51 dB); delivered = 10^(-total/10)."""
    b = feeder.feeder_budget(2.0, (0.1, 0.15, 0.05), vswr=2.0)
    assert b.mismatch_loss_db == pytest.approx(0.512, abs=1e-3)
    assert b.total_loss_db == pytest.approx(2.3 + 0.5115, abs=1e-3)
    assert b.delivered_fraction == pytest.approx(10 ** (-b.total_loss_db / 10), rel=1e-12)
    assert b.return_loss_db == pytest.approx(9.542, abs=1e-3)


# --- isolation ----------------------------------------------------------------------------------

@pytest.mark.parametrize("freq_mhz,d_km", [(121.5, 0.01), (1030.0, 0.0025), (9375.0, 1.3)])
def test_free_space_loss_is_itu_r_p525(freq_mhz, d_km):
    """ITU-R P.525: L = 32.45 + 20 log10 f[MHz] + 20 log10 d[km] (the constant is rounded: 0.01 dB)."""
    expected = 32.45 + 20 * math.log10(freq_mhz) + 20 * math.log10(d_km)
    assert coupling.free_space_loss_db(freq_mhz * 1e6, d_km * 1e3) == pytest.approx(expected, abs=0.01)


def test_isolation_is_symmetric_and_units_are_explicit():
    """Friis (1946) is reciprocal: A->B equals B->A. Positions in inches and in mm give one distance."""
    a_in, b_in = (300.0, 0.0, 120.0), (520.0, -10.0, 40.0)
    ab = coupling.isolation(a_in, b_in, "inch", 1090e6, 0.5, -3.0, 0.1, 0.1)
    ba = coupling.isolation(b_in, a_in, "inch", 1090e6, -3.0, 0.5, 0.1, 0.1)
    assert ab.isolation_db == pytest.approx(ba.isolation_db, rel=1e-15)
    mm = coupling.distance_m(tuple(v * 25.4 for v in a_in), tuple(v * 25.4 for v in b_in), "mm")
    assert mm == pytest.approx(ab.distance_m, rel=1e-12)
    assert ab.isolation_db == pytest.approx(-(0.5 - 3.0 - coupling.free_space_loss_db(1090e6, ab.distance_m)))
    with pytest.raises(ValueError, match="coordinate unit"):
        coupling.distance_m(a_in, b_in, "furlong")


def test_near_field_pairs_are_marked_indicative():
    """Criterion stated in coupling.py: d < max(2 (D1 + D2)^2 / lambda, lambda / (2 pi))."""
    f = 127e6  # lambda about 2.36 m: radian sphere 0.376 m
    close = coupling.isolation((0, 0, 0), (300, 0, 0), "mm", f, 0.0, 0.0, 0.1, 0.1)
    far = coupling.isolation((0, 0, 0), (3000, 0, 0), "mm", f, 0.0, 0.0, 0.1, 0.1)
    assert close.indicative_only and not far.indicative_only
    assert far.far_field_distance_m == pytest.approx(units.C_M_PER_S / f / (2 * math.pi), rel=1e-12)


def test_direction_lookup_in_antenna_frame():
    """Geometry: a point straight aft of a crown monopole (z up, x forward) is at theta 90, phi 180."""
    d = coupling.direction_vector((100, 0, 50), (200, 0, 50), "inch")
    theta, phi = coupling.antenna_angles_deg(d, (0, 0, 1), (-1, 0, 0))
    assert theta == pytest.approx(90.0) and phi == pytest.approx(180.0)
    up = coupling.direction_vector((0, 0, 0), (0, 0, 10), "mm")
    assert coupling.antenna_angles_deg(up, (0, 0, 1), (-1, 0, 0))[0] == pytest.approx(0.0)
