"""Numerical pattern metrics: directivity by integration over the sphere, beamwidths, sidelobes, F/B.

Definitions follow IEEE Std 145-2013 (directivity, half-power beamwidth, front-to-back ratio, side lobe).
Directivity D = 4 pi U_max / integral(U dOmega), dOmega = sin theta dtheta dphi
(Balanis, Antenna Theory, 4th ed., ch. 2).
"""
from __future__ import annotations

import math

import numpy as np

#: levels below this (dB relative to the peak) are treated as the floor; it caps the F/B ratio
FLOOR_DB = -100.0
#: half power in decibels: 10 log10(1/2) = -3.0103 dB (IEEE Std 145-2013, half-power beamwidth)
HALF_POWER_DB = 10 * math.log10(0.5)


def sphere_grid_rad(step_deg: float = 1.0):
    """(theta_rad (T,), phi_rad (P,)) of a regular grid: theta 0..180 inclusive, phi 0..360 exclusive."""
    n_t = int(round(180.0 / step_deg))
    n_p = int(round(360.0 / step_deg))
    if n_t < 2 or not math.isclose(n_t * step_deg, 180.0, rel_tol=1e-9):
        raise ValueError("step_deg must divide 180 evenly")
    return np.linspace(0.0, np.pi, n_t + 1), np.arange(n_p) * (2 * np.pi / n_p)


def radiated_integral_grid(theta_rad, phi_rad, power) -> float:
    """integral(U sin theta dtheta dphi) of power (T, P) on a grid: trapezoid in theta, periodic mean in phi.

    phi_rad must be uniformly spaced over a full turn (endpoint excluded).
    """
    th = np.asarray(theta_rad, dtype=float)
    per_theta = np.asarray(power, dtype=float).mean(axis=1) * 2 * np.pi
    return float(np.trapezoid(per_theta * np.sin(th), th))


def directivity_grid(theta_rad, phi_rad, power) -> float:
    """Peak directivity (linear) of a power pattern sampled on a grid (see radiated_integral_grid)."""
    return float(4 * np.pi * np.max(power) / radiated_integral_grid(theta_rad, phi_rad, power))


def radiated_integral(power_fn, n_theta_half: int, n_phi: int) -> float:
    """integral(U dOmega) of a callable power_fn(theta (T,1), phi (1,P)) -> (T,P).

    Gauss-Legendre in cos theta on each hemisphere separately (patterns may stop at the horizon),
    trapezoid (spectrally accurate for periodic functions) in phi.
    """
    x, w = np.polynomial.legendre.leggauss(int(n_theta_half))
    u = np.concatenate([(x + 1) / 2, (x - 1) / 2])  # cos theta on [0,1] and [-1,0]
    wt = np.concatenate([w, w]) / 2
    phi = np.arange(n_phi) * (2 * np.pi / n_phi)
    p = power_fn(np.arccos(u)[:, None], phi[None, :])
    return float(np.sum(wt * p.mean(axis=1)) * 2 * np.pi)


def plane_directions(plane: str, psi_rad):
    """(theta, phi) along a principal plane; psi is the angle in the plane.

    'xz': psi from +z toward +x; 'yz': psi from +z toward +y; 'xy': psi = phi (theta = 90 deg).
    """
    psi = np.mod(np.asarray(psi_rad, dtype=float), 2 * np.pi)
    if plane == "xy":
        return np.full_like(psi, np.pi / 2), psi
    back = psi > np.pi
    theta = np.where(back, 2 * np.pi - psi, psi)
    base = {"xz": 0.0, "yz": np.pi / 2}[plane]
    return theta, np.where(back, base + np.pi, base)


def to_db(power, peak: float):
    """10 log10(power/peak), floored at FLOOR_DB."""
    with np.errstate(divide="ignore"):
        return np.maximum(10 * np.log10(np.maximum(np.asarray(power, dtype=float), 0.0) / peak), FLOOR_DB)


def half_power_beamwidth_deg(angle_deg, level_db) -> float:
    """Width (deg) of the lobe around the cut's maximum between its half-power points (linear interpolation).

    Half power is HALF_POWER_DB = 10 log10(0.5) = -3.0103 dB below the cut's maximum.

    angle_deg: uniformly spaced full-circle cut (endpoint excluded); level_db: levels in dB.
    Returns nan when the cut never drops to half power below its maximum (omnidirectional in this plane).
    """
    lv = np.asarray(level_db, dtype=float)
    n = lv.size
    if np.asarray(angle_deg).size != n:
        raise ValueError("angle_deg and level_db differ in length")
    step = 360.0 / n
    i0 = int(np.argmax(lv))
    target = lv[i0] + HALF_POWER_DB
    widths = []
    for direction in (1, -1):
        prev = lv[i0]
        for j in range(1, n):
            cur = lv[(i0 + direction * j) % n]
            if cur < target:
                widths.append((j - 1 + (prev - target) / (prev - cur)) * step)
                break
            prev = cur
        else:
            return float("nan")
    return float(sum(widths))


def first_sidelobe_db(level_db, main_lobe_tolerance_db: float = 0.5) -> float:
    """Level (dB, relative to the cut's maximum) of the higher of the two lobes next to the main lobe.

    Walks from the maximum down to the first minimum on each side, then up to the next maximum.
    A neighbouring lobe within main_lobe_tolerance_db of the maximum is a second main beam (e.g. a
    dipole's or a broadside array's opposite lobe), not a side lobe. nan when there is none.
    """
    lv = np.asarray(level_db, dtype=float)
    n = lv.size
    i0 = int(np.argmax(lv))
    peak = lv[i0]
    found = []
    for direction in (1, -1):
        j = 1
        while j < n and lv[(i0 + direction * j) % n] <= lv[(i0 + direction * (j - 1)) % n]:
            j += 1
        while j < n and lv[(i0 + direction * j) % n] >= lv[(i0 + direction * (j - 1)) % n]:
            j += 1
        if j >= n:
            continue
        level = lv[(i0 + direction * (j - 1)) % n] - peak
        if level < -main_lobe_tolerance_db and level > FLOOR_DB - peak + 1e-9:
            found.append(level)
    return float(max(found)) if found else float("nan")
