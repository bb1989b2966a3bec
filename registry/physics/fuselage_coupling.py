"""Coupling between two monopoles on opposite sides of a fuselage: the wave that creeps round it.

Model: each way round the fuselage is one surface ray; its contribution is the coupling of the same
two monopoles on a flat plane at the ray's path length, times the curvature (Fock) factor of the path:
  S21 = sum over the two ways i of S21_flat(s_i) F(xi_i),   coupling_db = 20 log10 |S21|,
  xi_i = (k rho_i / 2)^(1/3) s_i / rho_i   (Fock's parameter of a path of constant curvature 1/rho_i).
* S21_flat(s): the two monopoles on a flat perfectly conducting plane, s apart (near_coupling: moment
  method with image theory), complex, so the two ways interfere with their own phases.
* Paths: on the unrolled cylinder of radius a the geodesics are straight: the short way round the
  angle phi and the long way 2 pi - phi, each s_i = sqrt((a phi_i)^2 + dz^2) with dz the axial offset,
  a helix whose curvature along the path is cos^2(psi)/a (psi the helix angle from the circumference),
  so rho_i = a s_i^2 / (a phi_i)^2 (Euler's formula for normal curvature, differential geometry).
* F(xi): the field on a convex cylinder over the field on a flat plane at the same path length, one way
  round, in the limit k rho -> infinity at fixed xi, where it depends on xi alone. It is computed here
  (not taken from a table) as the ratio of two exact two-dimensional fields, for a Neumann (hard) wall
  -- the polarisation of a radial monopole, its magnetic field along the surface, across the path --
  with source and observer on the wall, at k rho = 1000 where the other way round is negligible:
    cylinder: G = -(1/(2 pi x)) sum_n H_n(x)/H_n'(x) e^{j n phi},  x = k rho,
    flat:     G = -(j/2) H_0(k s),  s = rho phi,       T = G_cylinder / G_flat,
  H_n the Hankel function of the second kind (e^{jwt}); eigenfunction expansion of the line-source
  field outside a circular cylinder (R. F. Harrington, Time-Harmonic Electromagnetic Fields, 1961,
  ch. 5, from memory) simplified on the surface with the Wronskian J_n H_n' - J_n' H_n = -2j/(pi x)
  (Abramowitz & Stegun 9.1.16, from memory). The terms fall only as -x/|n|; that part is summed in
  closed form (sum_{n != 0} e^{jn phi}/|n| = -2 ln|2 sin(phi/2)|) and the rest to n = 1.5 x + 30
  exactly, then with the Debye form H_n/H_n' ~ -x/sqrt(n^2 - x^2).
* Why flat field x F: on a developable surface (a cylinder) surface rays spread as on a plane, so the
  ray (geometrical theory of diffraction) solution for antennas on a convex surface is the flat-plane
  field times Fock's surface-field function of xi to leading order (P. H. Pathak, N. Wang, "Ray
  analysis of mutual coupling between antennas on a convex surface", IEEE Trans. Antennas Propag.
  AP-29, 1981: unverified, check against that paper; torsion and higher-order terms are left out).
  Searched for (2026-12): the paper itself, its issue, pages and equation numbers were not found in
  the sources searched; only a secondary text citing the companion paper (P. H. Pathak, N. Wang,
  W. D. Burnside, R. G. Kouyoumjian, "A uniform GTD solution for the radiation from sources on a
  convex surface", IEEE Trans. AP-29 no. 4, 1981, pp. 609-622) was found. Issue, pages and the
  equation used stay to be checked against the coupling paper (from memory: AP-29 no. 6, Nov. 1981).
  Searched again (2026-12-04; documentation, web pages, code and issue threads, by title and by authors):
  still not found, so the citation stays unverified.
* The limit function is asymptotic in k rho: against NEC-2 wire-grid cylinders (tests) the coupling is
  within 2.2 dB at k a = 3.7 (a fuselage at VHF) and k a = 5; at k a = 2.1 it reads 2-4 dB high.
* Elliptical fuselages: a is taken as the section's mean radius sqrt(w h) (an assumption).
Units: metres, hertz, radians, dB.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from registry.physics.airframe_shape import AirframeShape, fuselage_at, to_metres
from registry.physics.near_coupling import monopole_pair
from registry.core.units import C_M_PER_S


def _surface_series(x: float, phi) -> np.ndarray:
    """sum_n H_n(x)/H_n'(x) e^{jn phi} for phi in (0, 2 pi), with the -x/|n| part in closed form."""
    from scipy.special import hankel2

    phi = np.atleast_1d(np.asarray(phi, dtype=float))
    n_cut = int(1.5 * x + 30)
    n = np.arange(n_cut + 1)
    with np.errstate(all="ignore"):
        ratio = 1.0 / (hankel2(n - 1, x) / hankel2(n, x) - n / x)
    slow = np.where(n > 0, -x / np.maximum(n, 1), 0.0)
    weight = np.where(n > 0, 2.0, 1.0)
    total = np.cos(np.outer(phi, n)) @ (weight * (ratio - slow))
    tail_n = np.arange(n_cut + 1, n_cut + 20001, dtype=float)
    tail_terms = -x / np.sqrt(tail_n**2 - x**2) + x / tail_n
    tail = np.concatenate([np.cos(np.outer(phi[start:start + _ROWS], tail_n)) @ tail_terms
                           for start in range(0, len(phi), _ROWS)])
    total = total + 2 * tail
    return total + 2 * x * np.log(np.abs(2 * np.sin(phi / 2)))


_ROWS = 32
"""Angles whose series tails are summed at once: 32 x 20,000 terms hold 5 MB (all 480 angles of the
F table at once held 150 MB for a moment, which set the peak of a process that computed one aircraft)."""


def curvature_factor(k_rho: float, angle_rad):
    """T = G_cylinder / G_flat on the surface, same path length rho x angle (complex, -> 1 when flat)."""
    from scipy.special import hankel2

    angle = np.atleast_1d(np.asarray(angle_rad, dtype=float))
    if np.any(angle <= 0) or np.any(angle > np.pi + 1e-12):
        raise ValueError("the angle round the fuselage must lie in (0, pi]")
    if not k_rho > 0.5:
        raise ValueError("the cylinder must be at least 0.5 / k in radius")
    g_cyl = -_surface_series(k_rho, angle) / (2 * np.pi * k_rho)
    g_flat = -0.5j * hankel2(0, k_rho * angle)
    out = g_cyl / g_flat
    return out if np.ndim(angle_rad) else complex(out[0])


#: k rho of the cylinder on which the limit function F(xi) is evaluated, and its table of xi
_X_LIMIT = 1000.0
_XI_TABLE = np.linspace(0.0, 12.0, 481)


@lru_cache(maxsize=1)
def _fock_table() -> np.ndarray:
    """F at _XI_TABLE (complex), F(0) = 1; computed once from the exact series (module docstring)."""
    xi = _XI_TABLE[1:]
    values = curvature_factor(_X_LIMIT, xi / (_X_LIMIT / 2) ** (1 / 3))
    return np.concatenate([[1.0 + 0j], values])


def fock_factor(xi):
    """One-way surface-field factor F(xi) of a hard convex surface relative to a flat plane (complex).

    Linear interpolation in a table of 481 points over 0 <= xi <= 12 (about -75 dB at xi = 12);
    beyond 12 the last value is used, which overstates the coupling, never understates it.
    """
    table = _fock_table()
    x = np.clip(np.asarray(xi, dtype=float), 0.0, _XI_TABLE[-1])
    out = np.interp(x, _XI_TABLE, table.real) + 1j * np.interp(x, _XI_TABLE, table.imag)
    return out if np.ndim(xi) else complex(out)


@dataclass(frozen=True)
class AroundFuselage:
    """coupling_db: 20 log10 |S21| (dB); paths_m: the two ways' path lengths (m); xi: their Fock
    parameters; radius_m: the cylinder radius used; model names the method."""

    coupling_db: float
    paths_m: tuple[float, float]
    xi: tuple[float, float]
    radius_m: float
    model: str = "creeping wave round the fuselage (flat-plane moment method x Fock factor)"


def around_cylinder(radius_m: float, angle_rad: float, axial_m: float, freq_hz: float, height_a_m: float,
                    height_b_m: float, wire_radius_m: float, z0_ohm: float = 50.0) -> AroundFuselage:
    """Coupling (dB) of two radial monopoles on a conducting cylinder (module docstring).

    angle_rad: angle round the axis between the bases (any sign; folded to [0, pi]); axial_m: offset
    along the axis; heights and wire radius in metres.
    """
    angle = abs((angle_rad + np.pi) % (2 * np.pi) - np.pi)
    if math.hypot(radius_m * angle, axial_m) <= 0:
        raise ValueError("the two antennas coincide")
    k = 2 * np.pi * freq_hz / C_M_PER_S
    total, paths, xis = 0j, [], []
    for way in (angle, 2 * np.pi - angle):
        arc = radius_m * way
        path = math.hypot(arc, axial_m)
        xi = 0.0 if arc == 0 else (k * radius_m * path**2 / arc**2 / 2) ** (1 / 3) * arc**2 / (radius_m * path)
        s21 = monopole_pair(height_a_m, height_b_m, path, freq_hz, wire_radius_m, z0_ohm).s[1, 0]
        total += s21 * fock_factor(xi)
        paths.append(path)
        xis.append(float(xi))
    return AroundFuselage(float(20 * np.log10(abs(total))), tuple(paths), tuple(xis), float(radius_m))


def fuselage_path(shape: AirframeShape, point_a, point_b, scale_m: float):
    """(radius_m, angle_rad, axial_m) between two skin points (airframe unit) for around_cylinder.

    radius: sqrt(w h) of the section at the mean station (the equal-area circle of the ellipse, an
    assumption); angle: between the two points' directions from the section centre, in the plane
    scaled to a circle (y / w, (z - c) / h); axial: the difference in station.
    """
    a, b = to_metres(point_a, scale_m), to_metres(point_b, scale_m)
    mid = fuselage_at(shape, float((a[0] + b[0]) / 2))
    if mid is None:
        raise ValueError("the mean station lies outside the fuselage")
    angles = []
    for p in (a, b):
        local = fuselage_at(shape, float(p[0]))
        if local is None:
            raise ValueError("a point lies outside the fuselage's stations")
        w, _, c, _, q = local
        angles.append(math.atan2((p[2] - c) / (q * w), p[1] / w))
    w, _, _, _, q = mid
    d = abs((angles[0] - angles[1] + math.pi) % (2 * math.pi) - math.pi)
    return math.sqrt(w * w * q), d, float(abs(a[0] - b[0]))
