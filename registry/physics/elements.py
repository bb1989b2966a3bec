"""Closed-form far-field power patterns of single radiators (relative radiation intensity, unitless).

Every function takes theta_rad and phi_rad that broadcast against each other (theta from +z, phi from +x)
and returns |E|^2 up to a constant factor; the peak need not be 1 (metrics.py normalises).
Coordinate conventions are those of kinds.py.
"""
from __future__ import annotations

import math

import numpy as np

from registry.core.units import C_M_PER_S


def wavenumber_rad_per_m(freq_hz):
    """Free-space wavenumber k = 2 pi f / c (rad/m)."""
    return 2 * np.pi * np.asarray(freq_hz, dtype=float) / C_M_PER_S


def finite_dipole_power(theta_rad, length_m: float, freq_hz: float):
    """Centre-fed dipole of length L along z with a sinusoidal current.

    |E|^2 ∝ [(cos(kL/2 cos theta) - cos(kL/2)) / sin theta]^2 (Balanis, Antenna Theory, 4th ed., ch. 4,
    finite-length dipole). Zero on the axis (limit).
    """
    k = float(wavenumber_rad_per_m(freq_hz))
    th = np.asarray(theta_rad, dtype=float)
    s = np.sin(th)
    num = np.cos(k * length_m / 2 * np.cos(th)) - np.cos(k * length_m / 2)
    return np.where(np.abs(s) > 1e-12, (num / np.where(np.abs(s) > 1e-12, s, 1.0)) ** 2, 0.0)


def monopole_power(theta_rad, height_m: float, freq_hz: float):
    """Monopole of height h on an infinite ground plane z = 0: the 2h dipole above the plane, zero below.

    Image theory (Balanis 4th ed., ch. 4, ground effects).
    """
    th = np.asarray(theta_rad, dtype=float)
    return np.where(th <= np.pi / 2 + 1e-12, finite_dipole_power(th, 2 * height_m, freq_hz), 0.0)


def small_loop_power(theta_rad):
    """Electrically small loop in the xy plane: E_phi ∝ sin theta (Balanis 4th ed., ch. 5, small loop)."""
    return np.sin(np.asarray(theta_rad, dtype=float)) ** 2


def small_loop_radiation_resistance_ohm(diameter_m: float, freq_hz: float) -> float:
    """Radiation resistance of a small single-turn loop: R = 20 pi^2 (C/lambda)^4 ohm, C = pi D.

    Balanis 4th ed., ch. 5 (small circular loop); valid for C < lambda/10 or so.
    """
    c_over_lambda = math.pi * diameter_m * freq_hz / C_M_PER_S
    return 20 * math.pi**2 * c_over_lambda**4


def half_wave_slot_power(theta_rad, phi_rad):
    """Half-wave slot along y in a ground plane radiating into z > 0 (magnetic dipole along y).

    Booker's relation: the slot's pattern is that of the complementary half-wave dipole,
    |E|^2 ∝ [cos(pi/2 cos g)/sin g]^2 with cos g = sin theta sin phi (Balanis 4th ed., ch. 12,
    Babinet's principle), only in front of the ground plane.
    """
    th = np.asarray(theta_rad, dtype=float)
    cg = np.sin(th) * np.sin(np.asarray(phi_rad, dtype=float))
    sg2 = np.maximum(1.0 - cg**2, 1e-24)
    p = np.cos(np.pi / 2 * cg) ** 2 / sg2
    return np.where(th <= np.pi / 2 + 1e-12, p, 0.0)


def collinear_half_wave_power(theta_rad, phi_rad):
    """Half-wave dipole along x: [cos(pi/2 cos g)/sin g]^2, cos g = sin theta cos phi (Balanis ch. 4)."""
    cg = np.sin(np.asarray(theta_rad, dtype=float)) * np.cos(np.asarray(phi_rad, dtype=float))
    return np.cos(np.pi / 2 * cg) ** 2 / np.maximum(1.0 - cg**2, 1e-24)


def _lambda_function(p: int, u):
    """Lambda_p(u) = 2^p p! J_p(u)/u^p, with Lambda_p(0) = 1."""
    from scipy.special import jv  # imported when first needed: a rebuild from the cache never is

    u = np.asarray(u, dtype=float)
    small = np.abs(u) < 1e-8
    us = np.where(small, 1.0, u)
    return np.where(small, 1.0, 2.0**p * math.factorial(p) * jv(p, us) / us**p)


def circular_aperture_field(theta_rad, diameter_m: float, freq_hz: float, edge_taper_db: float = 0.0,
                            taper_exponent: int = 1):
    """Far field (relative, real) of a circular aperture with a parabolic-on-pedestal distribution.

    Aperture field E(r) = C + (1 - C)(1 - (r/a)^2)^n, C = 10^(-edge_taper_db/20), n = taper_exponent.
    Its Hankel transform is C Lambda_1(u) + (1 - C)/(n + 1) Lambda_{n+1}(u), u = k a sin theta
    (Balanis 4th ed., ch. 12 circular apertures, and ch. 15 reflector aperture distributions;
    Silver, Microwave Antenna Theory and Design, 1949, §6.3), normalised to 1 on axis, times the Huygens
    obliquity factor (1 + cos theta)/2. Zero behind the aperture (theta > 90 deg: reflector back shadowed,
    spill-over not modelled). edge_taper_db 0 gives the uniform aperture.
    """
    if edge_taper_db < 0:
        raise ValueError("edge_taper_db must be >= 0")
    th = np.asarray(theta_rad, dtype=float)
    k = float(wavenumber_rad_per_m(freq_hz))
    u = k * diameter_m / 2 * np.sin(th)
    c = 10.0 ** (-edge_taper_db / 20.0)
    n = int(taper_exponent)
    f = c * _lambda_function(1, u) + (1 - c) / (n + 1) * _lambda_function(n + 1, u)
    f = f / (c + (1 - c) / (n + 1))
    f = f * (1 + np.cos(th)) / 2
    return np.where(th <= np.pi / 2 + 1e-12, f, 0.0)


def circular_aperture_power(theta_rad, diameter_m: float, freq_hz: float, edge_taper_db: float = 0.0,
                            taper_exponent: int = 1):
    """|circular_aperture_field|^2: see there."""
    return circular_aperture_field(theta_rad, diameter_m, freq_hz, edge_taper_db, taper_exponent) ** 2


def circular_aperture_taper_efficiency(edge_taper_db: float, taper_exponent: int = 1) -> float:
    """Taper efficiency of the parabolic-on-pedestal distribution, |∫E dA|^2 / (A ∫|E|^2 dA).

    With t = (r/a)^2: ∫E = C + (1-C)/(n+1), ∫E^2 = C^2 + 2C(1-C)/(n+1) + (1-C)^2/(2n+1) (both over t in
    [0, 1]). Directivity of the aperture = (pi D / lambda)^2 times this (Balanis 4th ed., ch. 15).
    """
    c = 10.0 ** (-edge_taper_db / 20.0)
    n = int(taper_exponent)
    mean = c + (1 - c) / (n + 1)
    mean_sq = c**2 + 2 * c * (1 - c) / (n + 1) + (1 - c) ** 2 / (2 * n + 1)
    return mean**2 / mean_sq


def patch_effective_permittivity(width_m: float, substrate_height_m: float, eps_r: float) -> float:
    """Effective permittivity of a microstrip of width W on a substrate h, eps_r (W/h > 1).

    eps_eff = (eps_r + 1)/2 + (eps_r - 1)/2 (1 + 12 h/W)^(-1/2) (Balanis 4th ed., ch. 14,
    transmission-line model of the rectangular patch).
    """
    return (eps_r + 1) / 2 + (eps_r - 1) / 2 / math.sqrt(1 + 12 * substrate_height_m / width_m)


def patch_length_extension_m(width_m: float, substrate_height_m: float, eps_r: float) -> float:
    """Fringing extension Delta L of each radiating edge (m), Hammerstad's formula.

    Delta L = 0.412 h (eps_eff + 0.3)(W/h + 0.264) / ((eps_eff - 0.258)(W/h + 0.8))
    (Balanis 4th ed., ch. 14, transmission-line model).
    """
    e = patch_effective_permittivity(width_m, substrate_height_m, eps_r)
    wh = width_m / substrate_height_m
    return 0.412 * substrate_height_m * (e + 0.3) * (wh + 0.264) / ((e - 0.258) * (wh + 0.8))


def patch_resonant_frequency_hz(length_m: float, width_m: float, substrate_height_m: float,
                                eps_r: float) -> float:
    """TM010 resonance f = c / (2 (L + 2 Delta L) sqrt(eps_eff)) (Hz), Balanis 4th ed., ch. 14."""
    e = patch_effective_permittivity(width_m, substrate_height_m, eps_r)
    dl = patch_length_extension_m(width_m, substrate_height_m, eps_r)
    return C_M_PER_S / (2 * (length_m + 2 * dl) * math.sqrt(e))


def patch_design_m(freq_hz: float, substrate_height_m: float, eps_r: float) -> tuple[float, float]:
    """(length_m, width_m) of a rectangular patch resonant at freq_hz (Balanis 4th ed., ch. 14 design).

    W = c/(2f) sqrt(2/(eps_r + 1)); L = c/(2 f sqrt(eps_eff)) - 2 Delta L.
    """
    w = C_M_PER_S / (2 * freq_hz) * math.sqrt(2 / (eps_r + 1))
    e = patch_effective_permittivity(w, substrate_height_m, eps_r)
    length = C_M_PER_S / (2 * freq_hz * math.sqrt(e)) - 2 * patch_length_extension_m(w, substrate_height_m, eps_r)
    return length, w


def patch_power(theta_rad, phi_rad, length_m: float, width_m: float, substrate_height_m: float,
                eps_r: float, freq_hz: float):
    """Rectangular patch (TM010) by the cavity model's two radiating slots, on an infinite ground plane.

    Patch in the xy plane, resonant length along x, width along y, beam +z. Each radiating edge is a
    uniform magnetic line current along y of length W and width h (image doubled); the two edges,
    L_eff = L + 2 Delta L apart, add in phase:
    E_theta ∝ cos phi S, E_phi ∝ -cos theta sin phi S, S = sinc(kW/2 sin th sin ph) sinc(kh/2 sin th cos ph)
    cos(k L_eff/2 sin th cos ph) (Balanis 4th ed., ch. 14, cavity model, written in these axes).
    Zero below the ground plane.
    """
    th = np.asarray(theta_rad, dtype=float)
    ph = np.asarray(phi_rad, dtype=float)
    k = float(wavenumber_rad_per_m(freq_hz))
    l_eff = length_m + 2 * patch_length_extension_m(width_m, substrate_height_m, eps_r)
    sx = np.sin(th) * np.cos(ph)
    sy = np.sin(th) * np.sin(ph)
    s = (np.sinc(k * width_m / 2 * sy / np.pi) * np.sinc(k * substrate_height_m / 2 * sx / np.pi)
         * np.cos(k * l_eff / 2 * sx))
    p = (np.cos(ph) ** 2 + (np.cos(th) * np.sin(ph)) ** 2) * s**2
    return np.where(th <= np.pi / 2 + 1e-12, p, 0.0)
