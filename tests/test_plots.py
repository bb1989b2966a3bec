"""Plots: half-power points, deterministic SVG, no pyplot."""
from __future__ import annotations

import subprocess
import sys
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from registry.site import plots
from registry.core.results import CableResult, Curve, InstallationResult, PatternResult


def dipole_cut(step_deg: float = 0.25) -> Curve:
    """Half-wave dipole E-plane, θ from the element axis: E ∝ cos(π/2·cos θ)/sin θ (Balanis 4th ed. eq. 4-84)."""
    angle = np.arange(0.0, 360.0 + step_deg / 2, step_deg)
    theta = np.radians(angle)
    with np.errstate(divide="ignore", invalid="ignore"):
        field = np.abs(np.cos(np.pi / 2 * np.cos(theta)) / np.sin(theta))
        gain = 20 * np.log10(field) + 2.15
    gain[~np.isfinite(gain)] = -60.0
    return Curve(angle, gain, "angle from element axis (deg)", "gain (dBi)")


def test_half_wave_dipole_beamwidth_is_78_degrees():
    # Balanis, Antenna Theory 4th ed., §4.6: half-power beamwidth of a half-wave dipole 78°.
    cut = dipole_cut()
    points = plots.half_power_points(cut.x, cut.y)
    assert points is not None
    assert plots.beamwidth_deg(points) == pytest.approx(78.0, abs=0.5)
    # the peak found first is at 90° (broadside): the points straddle it
    assert points[0] < 90.0 < points[1]


def test_half_power_points_wrap_round_zero_degrees():
    angle = np.arange(0.0, 361.0, 1.0)
    gain = 20 * np.log10(np.maximum(np.cos(np.radians(angle)), 1e-3))  # peak at 0°, -3 dB at ±45°
    low, high = plots.half_power_points(angle, gain)
    assert low % 360 == pytest.approx(315.0, abs=0.2)
    assert high % 360 == pytest.approx(45.0, abs=0.2)
    assert plots.beamwidth_deg((low, high)) == pytest.approx(90.0, abs=0.4)


def test_omnidirectional_cut_has_no_half_power_points():
    angle = np.arange(0.0, 361.0, 5.0)
    assert plots.half_power_points(angle, np.full(angle.shape, 2.15)) is None
    ripple = 2.0 + np.cos(np.radians(angle))  # 2 dB peak-to-peak: still within 3 dB
    assert plots.half_power_points(angle, ripple) is None


def pattern(key: str = "k", freq: float = 127.5) -> PatternResult:
    flat = Curve(np.arange(0.0, 361.0, 5.0), np.full(73, 2.15), "azimuth (deg)", "gain (dBi)")
    return PatternResult(key, "QXA-100", "half_wave_dipole", freq, dipole_cut(1.0), flat, ())


def test_pattern_svg_is_deterministic_and_dateless():
    first = plots.pattern_plot(pattern())
    second = plots.pattern_plot(pattern())
    assert first.svg == second.svg
    assert "dc:date" not in first.svg
    ET.fromstring(first.svg.encode())  # well-formed
    other = plots.pattern_plot(pattern(freq=130.0))
    assert other.svg != first.svg
    assert "E-plane" in first.alt and "H-plane" in first.alt and "78°" in first.alt


def test_vswr_plot_needs_a_curve_and_describes_limit_and_band():
    empty = InstallationResult("qx-tca", "VHF1", ())
    assert plots.vswr_plot(empty, "QX-TCA VHF1") is None
    freq = np.linspace(110.0, 145.0, 36)
    result = InstallationResult(
        "qx-tca", "VHF1", (), vswr_modelled=Curve(freq, 1 + 0.002 * (freq - 127) ** 2, "frequency (MHz)", "VSWR"),
        service_bands_mhz=((117.975, 137.0),), vswr_limit=1.8,
    )
    drawn = plots.vswr_plot(result, "QX-TCA VHF1")
    assert drawn is not None
    assert "1.8:1" in drawn.alt and "117.975–137 MHz" in drawn.alt and "measured" not in drawn.alt
    ET.fromstring(drawn.svg.encode())


def test_attenuation_plot_is_well_formed():
    table = Curve(np.array([100.0, 400.0, 1000.0]), np.array([14.8, 30.5, 49.5]), "frequency (MHz)",
                  "attenuation (dB/100 m)")
    fitted = Curve(np.linspace(0, 1000, 11), np.linspace(0, 50, 11), "frequency (MHz)", "attenuation (dB/100 m)")
    drawn = plots.attenuation_plot(CableResult("QX-CBL-1", table, fitted, ()))
    ET.fromstring(drawn.svg.encode())
    assert "3 catalogue points" in drawn.alt


def test_plots_never_load_pyplot():
    code = (
        "import sys, numpy as np\n"
        "from registry.site import plots\n"
        "from registry.core.results import Curve, CableResult\n"
        "c = Curve(np.array([1.0, 2.0]), np.array([1.0, 2.0]), 'f (MHz)', 'a (dB)')\n"
        "plots.attenuation_plot(CableResult('x', c, c, ()))\n"
        "print('matplotlib.pyplot' in sys.modules)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
