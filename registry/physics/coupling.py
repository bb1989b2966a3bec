"""Isolation between two antennas on one airframe: distance, direction, Friis coupling, near-field flag.

Airframe axes: STA (fuselage station, increasing aft), BL (buttline, + right looking forward), WL
(waterline, up), in the airframe's declared unit ('inch', 'mm' or 'm': passed in, never guessed).
(STA, BL, WL) = (aft, right, up) is a right-handed frame.

Coupling between two antennas d apart in free space, with gains G1, G2 (dBi) toward each other
(Friis transmission equation, H. T. Friis, Proc. IRE 34, 1946):
  coupling_db = G1 + G2 - 20 log10(4 pi d / lambda); isolation_db = -coupling_db.
20 log10(4 pi d / lambda) is the free-space basic transmission loss of ITU-R P.525,
32.45 + 20 log10 f[MHz] + 20 log10 d[km].
Friis holds in the far field only. A pair is marked indicative when
  d < max(2 (D1 + D2)^2 / lambda, lambda / (2 pi)),
D1, D2 the antennas' largest dimensions: the Fraunhofer distance for two antennas of those sizes
(IEEE Std 149-1979, §2.3, from memory) and the radian sphere beyond which a small antenna's reactive
field has faded (Balanis, Antenna Theory, 4th ed., ch. 2, field regions).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from registry.physics.wave import wavelength_m
from registry.core.units import INCH_M

_UNIT_M = {"inch": INCH_M, "mm": 1e-3, "m": 1.0}


def to_metres(point, unit: str) -> tuple[float, float, float]:
    """(STA, BL, WL) in `unit` ('inch', 'mm' or 'm') to metres."""
    if unit not in _UNIT_M:
        raise ValueError(f"coordinate unit must be one of {', '.join(_UNIT_M)}, got '{unit}'")
    if len(point) != 3:
        raise ValueError("a position is (STA, BL, WL)")
    scale = _UNIT_M[unit]
    return (float(point[0]) * scale, float(point[1]) * scale, float(point[2]) * scale)


def distance_m(point_a, point_b, unit: str) -> float:
    """Straight-line distance (m) between two (STA, BL, WL) positions given in `unit`."""
    a, b = to_metres(point_a, unit), to_metres(point_b, unit)
    return math.dist(a, b)


def direction_vector(point_from, point_to, unit: str) -> np.ndarray:
    """Unit vector (STA, BL, WL components) from one position toward another. Raises on equal points."""
    a, b = to_metres(point_from, unit), to_metres(point_to, unit)
    n = math.dist(a, b)
    if n == 0:
        raise ValueError("the two positions coincide")
    return np.array([(b[0] - a[0]) / n, (b[1] - a[1]) / n, (b[2] - a[2]) / n])


def _unit(v) -> tuple[float, float, float]:
    n = math.hypot(v[0], v[1], v[2])
    return (v[0] / n, v[1] / n, v[2] / n)


def antenna_angles_deg(direction, axis_z, axis_x) -> tuple[float, float]:
    """(theta_deg, phi_deg) of an airframe direction in an antenna's own frame.

    axis_z, axis_x: the antenna's z and x axes in airframe (STA, BL, WL) components (orthogonalised
    here; y = z x x). E.g. a vertical monopole on the crown: axis_z = (0, 0, 1), axis_x = (-1, 0, 0)
    (forward). Use the angles to look the gain up in a pattern from patterns.pattern_for_kind.
    Plain floating-point arithmetic on 3-vectors (called once per pair of antennas, so kept light).
    """
    z = _unit([float(c) for c in axis_z])
    x = [float(c) for c in axis_x]
    dot = x[0] * z[0] + x[1] * z[1] + x[2] * z[2]
    x = [x[0] - dot * z[0], x[1] - dot * z[1], x[2] - dot * z[2]]
    if math.hypot(*x) < 1e-12:
        raise ValueError("axis_x must not be parallel to axis_z")
    x = _unit(x)
    y = (z[1] * x[2] - z[2] * x[1], z[2] * x[0] - z[0] * x[2], z[0] * x[1] - z[1] * x[0])
    d = _unit([float(c) for c in direction])
    cos_theta = d[0] * z[0] + d[1] * z[1] + d[2] * z[2]
    theta = math.degrees(math.acos(max(-1.0, min(1.0, cos_theta))))
    phi = math.degrees(math.atan2(d[0] * y[0] + d[1] * y[1] + d[2] * y[2],
                                  d[0] * x[0] + d[1] * x[1] + d[2] * x[2])) % 360.0
    return theta, phi


def free_space_loss_db(freq_hz, distance_m_):
    """Free-space basic transmission loss 20 log10(4 pi d / lambda) (dB), ITU-R P.525. Floats or arrays."""
    if isinstance(freq_hz, float) and isinstance(distance_m_, float):  # the co-site path's thousands of calls
        if distance_m_ <= 0:
            raise ValueError("distance must be positive")
        return 20.0 * math.log10(4.0 * math.pi * distance_m_ / wavelength_m(freq_hz))
    d = np.asarray(distance_m_, dtype=float)
    if np.any(d <= 0):
        raise ValueError("distance must be positive")
    out = 20 * np.log10(4 * np.pi * d / wavelength_m(freq_hz))
    return out if np.ndim(out) else float(out)


def coupling_db(gain_a_dbi, gain_b_dbi, freq_hz, distance_m_):
    """Friis coupling (dB, negative): G_a + G_b - 20 log10(4 pi d / lambda); gains toward each other."""
    return gain_a_dbi + gain_b_dbi - free_space_loss_db(freq_hz, distance_m_)


def far_field_distance_m(freq_hz: float, size_a_m: float, size_b_m: float) -> float:
    """Distance beyond which Friis applies: max(2 (D1 + D2)^2 / lambda, lambda / (2 pi)) (m)."""
    lam = wavelength_m(freq_hz)
    return float(max(2 * (size_a_m + size_b_m) ** 2 / lam, lam / (2 * np.pi)))


@dataclass(frozen=True)
class Isolation:
    """Result of isolation(): distances in m, levels in dB; indicative_only when inside the near field."""

    distance_m: float
    free_space_loss_db: float
    coupling_db: float
    isolation_db: float
    far_field_distance_m: float
    indicative_only: bool


def isolation(point_a, point_b, unit: str, freq_hz: float, gain_a_dbi: float, gain_b_dbi: float,
              size_a_m: float, size_b_m: float) -> Isolation:
    """Isolation (dB) between antennas at two (STA, BL, WL) positions (in `unit`) at freq_hz (Hz).

    gain_a_dbi: A's gain toward B; gain_b_dbi: B's gain toward A; size_*_m: largest dimensions.
    Symmetric: swapping A and B (with their gains) gives the same figures.
    """
    d = distance_m(point_a, point_b, unit)
    if d <= 0:
        raise ValueError("the two positions coincide")
    fsl = free_space_loss_db(freq_hz, d)
    c = gain_a_dbi + gain_b_dbi - fsl
    ff = far_field_distance_m(freq_hz, size_a_m, size_b_m)
    return Isolation(d, fsl, float(c), float(-c), ff, bool(d < ff))
