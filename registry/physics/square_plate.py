"""A monopole at the centre of a square plate: thin-wire moment method with the plate as a wire grid.

Method: the plate is a square grid of thin wires (the wire-grid model of a conducting surface, common
practice in moment-method modelling; its origin is cited to J. H. Richmond, "A wire-grid model for
scattering by conducting bodies", IEEE Trans. AP-14, 1966: unverified, not found by search in 2026-12,
check against that paper), the monopole a straight wire standing on the grid's centre node.
* Grid: an even number of cells a side (so the centre is a node), spacing at most GRID_SPACING_LAMBDA
  wavelengths; each grid wire's radius is spacing / (2 pi), the equal-area rule for wire grids (common
  practice in wire-grid modelling, no single source; the same rule as the NEC-2 models in the tests).
* Currents: triangle (rooftop) functions across every node, as on a bent wire (wire_path.py, whose
  segment integrals this module uses, mixed-potential Galerkin). A node where k segments meet carries
  k - 1 of them, each taking current in through the node's first segment and out through one of the
  others, so Kirchhoff's current law holds at every junction (the usual junction treatment of thin-wire
  moment methods, common practice, no single source); free ends (the monopole's tip, nothing else)
  carry none, so the current there is zero.
* Feed: a 1 V delta gap at the monopole's base, across every function that crosses into the monopole;
  Z_in = 1 / I_base, I_base the sum of their coefficients (the reaction form, Harrington, Field
  Computation by Moment Methods, 1968, ch. 4).
* Far field (e^{-jkr}/r dropped): A(r_hat) = sum over segments of d_q integral I_q(s) e^{jk r_hat.r(s)} dl,
  E = -j w mu / (4 pi) (A_theta theta_hat + A_phi phi_hat); directivity D = 4 pi U / P_in,
  U = |E|^2 / (2 eta), P_in = Re(I_base) / 2 for 1 V (lossless). The pattern has the square's symmetry,
  so azimuths 0 to 45 deg (0: towards the middle of an edge, 45: towards a corner) describe it all.
Units: metres, hertz, ohms, dBi.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.core.units import C_M_PER_S, ETA0, MU0
from registry.physics.wire import single_thread_blas
from registry.physics.wire_path import PathGeometry, _pair_distance, smooth_integrals, static_integrals

GRID_SPACING_LAMBDA = 0.1
"""Largest grid spacing in wavelengths (the usual limit of a wire-grid surface, common practice, no single
source); checked against NEC-2 on the same grids in tests/test_physics_square_plate.py."""
MIN_CELLS = 10
"""Fewest cells a side: small plates get a finer grid than GRID_SPACING_LAMBDA (cheap there), which settles
the beam peak's elevation on plates about half a wavelength across, where the pattern is nearly flat."""
MONOPOLE_SEGMENT_LAMBDA = 0.025
ROW_BLOCK = 256  # test segments per block of the matrix fill (bounds the memory of the segment integrals)


@dataclass(frozen=True)
class Grid:
    """Segments (starts, unit directions, lengths, radii), the basis pieces and the feed.
    piece_seg, piece_end, piece_sign (B, 2): for each basis its incoming (0) and outgoing (1) segment, whether
    the node is that segment's end (else its start), and the sign of the current along the segment's direction.
    fed (B,): the bases that cross into the monopole at its base."""

    geo: PathGeometry
    piece_seg: np.ndarray
    piece_end: np.ndarray
    piece_sign: np.ndarray
    fed: np.ndarray


def grid_cells(side_m: float, freq_hz: float) -> int:
    """Cells a side: even, at least MIN_CELLS, spacing at most GRID_SPACING_LAMBDA wavelengths."""
    lam = C_M_PER_S / freq_hz
    n = max(MIN_CELLS, int(np.ceil(side_m / (GRID_SPACING_LAMBDA * lam))))
    return n + (n % 2)


def make_grid(height_m: float, side_m: float, wire_radius_m: float, freq_hz: float, cells: int | None = None) -> Grid:
    """The grid (cells a side, even) in z = 0 centred on the origin and the monopole from there up to z = h."""
    lam = C_M_PER_S / freq_hz
    if not (height_m > 0 and side_m > 0 and 0 < wire_radius_m < height_m / 20):
        raise ValueError("need height > 0, plate side > 0 and a thin wire (radius < height / 20)")
    n = grid_cells(side_m, freq_hz) if cells is None else cells
    if n < 2 or n % 2:
        raise ValueError("the grid needs an even number of cells a side")
    pos = np.linspace(-side_m / 2, side_m / 2, n + 1)
    i, j = np.meshgrid(np.arange(n), np.arange(n + 1), indexing="ij")
    x_starts = np.column_stack([pos[i.ravel()], pos[j.ravel()], np.zeros(i.size)])
    y_starts = x_starts[:, [1, 0, 2]]
    n_mono = max(4, int(np.ceil(height_m / (MONOPOLE_SEGMENT_LAMBDA * lam))))
    z = np.linspace(0.0, height_m, n_mono + 1)
    m_starts = np.column_stack([np.zeros(n_mono), np.zeros(n_mono), z[:-1]])
    starts = np.vstack([m_starts, x_starts, y_starts])
    dirs = np.vstack([np.tile([0.0, 0.0, 1.0], (n_mono, 1)), np.tile([1.0, 0.0, 0.0], (i.size, 1)),
                      np.tile([0.0, 1.0, 0.0], (i.size, 1))])
    lengths = np.concatenate([np.diff(z), np.full(2 * i.size, side_m / n)])
    radii = np.concatenate([np.full(n_mono, wire_radius_m), np.full(2 * i.size, side_m / n / (2 * np.pi))])
    geo = PathGeometry(starts, dirs, lengths, radii, np.zeros(0, int), np.zeros(0, int), 0)
    return _with_bases(geo, n_mono)


def _with_bases(geo: PathGeometry, n_mono: int) -> Grid:
    """Junction bases at every node joined to two or more segments (module docstring)."""
    ends = geo.starts + geo.directions * geo.lengths[:, None]
    scale = float(geo.lengths.min()) / 8
    keys: dict[tuple, list[tuple[int, bool]]] = {}
    for q in range(geo.lengths.size):
        for at_end, point in ((False, geo.starts[q]), (True, ends[q])):
            keys.setdefault(tuple(np.round(point / scale).astype(int)), []).append((q, at_end))
    seg, end, sign, fed = [], [], [], []
    for members in keys.values():
        first, first_end = members[0]
        for q, at_end in members[1:]:
            seg.append((first, q))
            end.append((first_end, at_end))
            # incoming current flows towards the node, outgoing away from it, along the segment's direction
            sign.append((1.0 if first_end else -1.0, -1.0 if at_end else 1.0))
            fed.append((first, first_end) == (0, False))  # the monopole's base
    return Grid(geo, np.array(seg), np.array(end), np.array(sign), np.flatnonzero(fed))


def segment_integrals(geo: PathGeometry, k: float) -> np.ndarray:
    """(4, S, S) segment integrals of the full kernel (wire_path), filled ROW_BLOCK test segments at a time."""
    n_seg = geo.lengths.size
    out = np.empty((4, n_seg, n_seg), dtype=complex)
    for first in range(0, n_seg, ROW_BLOCK):
        rows = np.arange(first, min(n_seg, first + ROW_BLOCK))
        out[:, rows] = static_integrals(geo, rows) + smooth_integrals(geo, _pair_distance(geo, rows), k, rows)
    return out


def impedance_matrix(grid: Grid, freq_hz: float) -> np.ndarray:
    """Galerkin matrix Z (B, B) (ohm) of the junction bases (mixed potential, as wire_path._assemble)."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    geo = grid.geo
    i11, is1, i1s, iss = segment_integrals(geo, k)
    # shape s where the node is the segment's end, 1 - s where it is its start: (test, source) products
    shapes = np.stack([iss, is1 - iss, i1s - iss, i11 - is1 - i1s + iss])
    z = np.zeros((grid.piece_seg.shape[0],) * 2, dtype=complex)
    for a in (0, 1):
        sa, ea, ga = grid.piece_seg[:, a], grid.piece_end[:, a], grid.piece_sign[:, a]
        for b in (0, 1):
            sb, eb, gb = grid.piece_seg[:, b], grid.piece_end[:, b], grid.piece_sign[:, b]
            which = 2 * (~ea)[:, None].astype(int) + (~eb)[None, :].astype(int)
            vec = shapes[which, sa[:, None], sb[None, :]]
            dot = (geo.directions[sa] @ geo.directions[sb].T) * np.outer(ga, gb)
            div = np.outer((1.0 if a == 0 else -1.0) / geo.lengths[sa], (1.0 if b == 0 else -1.0) / geo.lengths[sb])
            z += 1j * k * ETA0 * dot * vec - 1j * ETA0 / k * div * i11[sa[:, None], sb[None, :]]
    return (z + z.T) / 2


def segment_end_currents(grid: Grid, coefficients: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Current (A) along each segment's direction at its start and at its end."""
    n_seg = grid.geo.lengths.size
    at_start, at_end = np.zeros(n_seg, complex), np.zeros(n_seg, complex)
    for a in (0, 1):
        seg, end, sign = grid.piece_seg[:, a], grid.piece_end[:, a], grid.piece_sign[:, a]
        np.add.at(at_end, seg[end], (sign * coefficients)[end])
        np.add.at(at_start, seg[~end], (sign * coefficients)[~end])
    return at_start, at_end


def far_field(grid: Grid, start_a: np.ndarray, end_a: np.ndarray, freq_hz: float, theta_rad, phi_rad):
    """(E_theta, E_phi) r e^{jkr} (V) on the grid theta (T,) x phi (P,) from the segment end currents."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    geo = grid.geo
    x, w = np.polynomial.legendre.leggauss(4)
    u, w = (x + 1) / 2, w / 2
    pts = geo.starts[:, None, :] + u[None, :, None] * geo.lengths[:, None, None] * geo.directions[:, None, :]
    cur = (start_a[:, None] * (1 - u) + end_a[:, None] * u) * w * geo.lengths[:, None]  # (S, G)
    th, ph = np.meshgrid(np.asarray(theta_rad, float), np.asarray(phi_rad, float), indexing="ij")
    r_hat = np.stack([np.sin(th) * np.cos(ph), np.sin(th) * np.sin(ph), np.cos(th)], axis=-1)
    phase = np.exp(1j * k * np.einsum("tpk,sgk->tpsg", r_hat, pts))
    a_vec = np.einsum("tpsg,sg,sk->tpk", phase, cur, geo.directions)
    th_hat = np.stack([np.cos(th) * np.cos(ph), np.cos(th) * np.sin(ph), -np.sin(th)], axis=-1)
    ph_hat = np.stack([-np.sin(ph), np.cos(ph), np.zeros_like(ph)], axis=-1)
    factor = -1j * 2 * np.pi * freq_hz * MU0 / (4 * np.pi)
    return factor * np.einsum("tpk,tpk->tp", a_vec, th_hat), factor * np.einsum("tpk,tpk->tp", a_vec, ph_hat)


@dataclass(frozen=True)
class SquarePlateMonopole:
    """A solved monopole on a square plate. theta_deg (T,) from the zenith, 0..180; phi_deg (P,) 0..45 from
    the middle of an edge towards a corner; directivity_dbi (T, P) (lossless, so gain). horizon_gain_dbi:
    the lowest over azimuth at theta 90; peak_gain_dbi and peak_elevation_deg (elevation = 90 - theta): the
    largest over the upper half space and every azimuth."""

    freq_hz: float
    height_m: float
    side_m: float
    z_in_ohm: complex
    theta_deg: np.ndarray
    phi_deg: np.ndarray
    directivity_dbi: np.ndarray
    horizon_gain_dbi: float
    peak_gain_dbi: float
    peak_elevation_deg: float


def monopole_on_square(height_m: float, side_m: float, wire_radius_m: float, freq_hz: float,
                       step_deg: float = 1.0, phi_step_deg: float = 5.0, cells: int | None = None
                       ) -> SquarePlateMonopole:
    """Input impedance and pattern of a monopole at the centre of a square plate side_m across."""
    grid = make_grid(height_m, side_m, wire_radius_m, freq_hz, cells)
    v = np.zeros(grid.piece_seg.shape[0], dtype=complex)
    v[grid.fed] = 1.0
    with single_thread_blas():
        coefficients = np.linalg.solve(impedance_matrix(grid, freq_hz), v)
    i_base = complex(np.sum(coefficients[grid.fed]))
    theta = np.arange(0.0, 180.0 + step_deg / 2, step_deg)
    phi = np.arange(0.0, 45.0 + phi_step_deg / 2, phi_step_deg)
    e_th, e_ph = far_field(grid, *segment_end_currents(grid, coefficients), freq_hz, np.radians(theta),
                           np.radians(phi))
    u = (np.abs(e_th) ** 2 + np.abs(e_ph) ** 2) / (2 * MU0 * C_M_PER_S)
    d_dbi = 10 * np.log10(np.maximum(4 * np.pi * u / (0.5 * i_base.real), 1e-30))
    upper = d_dbi[theta <= 90.0]
    i_peak = np.unravel_index(int(np.argmax(upper)), upper.shape)
    i_hor = int(np.argmin(np.abs(theta - 90.0)))
    return SquarePlateMonopole(freq_hz, height_m, side_m, 1.0 / i_base, theta, phi, d_dbi,
                               float(d_dbi[i_hor].min()), float(upper[i_peak]), float(90.0 - theta[i_peak[0]]))


def radiated_power_check(result: SquarePlateMonopole) -> float:
    """(1/4pi) integral of 10^(D/10) over the sphere (azimuth mean over 0..45 deg, the square's symmetry):
    1 when the pattern and the input power agree."""
    th, ph = np.radians(result.theta_deg), np.radians(result.phi_deg)
    lin = 10 ** (result.directivity_dbi / 10)
    mean_phi = np.trapezoid(lin, ph, axis=1) / (ph[-1] - ph[0])
    return float(np.trapezoid(mean_phi * np.sin(th), th) / 2)
