"""Thin-wire method of moments on a path of straight segments in any direction (bent wires and closed loops).

Used for the folded dipole: both conductors and the two wires that join their ends form one closed loop,
fed by a delta gap in the middle of the first conductor. (wire.py keeps the faster closed-form solver for
parallel straight wires.)

Model (lossless, perfectly conducting wires in free space):

* The path is a chain of straight segments (node i to node i+1), each with its own radius; a closed path
  returns to its first node. A triangle (rooftop) basis sits on every node joined to two segments: its
  current rises linearly along the segment before the node and falls along the segment after it, so the
  current is continuous round every bend and the loop.
* Mixed-potential Galerkin form (R. F. Harrington, Field Computation by Moment Methods, 1968, ch. 4 and 5;
  Balanis, Antenna Theory, 4th ed., ch. 8, Pocklington's equation):
  Z_mn = j k eta ∫∫ (f_m·f_n) G dl dl' − (j eta / k) ∫∫ (∇·f_m)(∇·f_n) G dl dl',
  G = e^{−jkR} / (4 pi R), with the reduced thin-wire kernel R = sqrt(|r − r'|² + a²) (source on the axis,
  field on the surface; a² the mean of the two segments' squared radii).
* Integration: G = (e^{−jkR} − 1)/(4 pi R) + 1/(4 pi R). The first part is smooth (segments are at most a
  tenth of a wavelength): Gauss-Legendre on both segments. The static part's inner integral over a straight
  segment is closed form, ∫ du'/R = asinh((d − ζ)/ρ) + asinh(ζ/ρ) and ∫ u' du'/R = [R]_0^d + ζ ∫ du'/R
  (ζ the projection of the field point on the segment, ρ its distance from the axis with a² added); the
  outer integral is Gauss-Legendre with more points. The static part does not depend on frequency and is
  computed once per geometry.
* Excitation: 1 V across a gap of width g centred on the feed node, the field uniform over the gap, so
  V_m = (1/g) ∫_gap f_m dl; Z_in = 1 / (V·I), the reaction form (Harrington, ch. 4). A delta gap
  (g = 0) puts the gap's capacitance in parallel with the feed and that capacitance grows without end as
  the segments shrink: with it, a folded dipole's resonance crept 0.6 % to 1.8 % longer as its segments
  were halved. A gap of FEED_GAP_RADII radii of the fed conductor converges with the segments and lands
  within 0.2 % of NEC-2's resonant length, whose source is one segment wide (tests/test_physics_wire_folded.py).
  The value is common practice for gap sources, no single source: the narrowest gap the thin-wire model
  resolves, the same 4 radii as its shortest segment (segmentation.MIN_SEGMENT_RADII).

Units: metres, hertz, ohms. Deterministic in the arguments.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from registry.core.units import C_M_PER_S, ETA0
from registry.physics.wire import single_thread_blas

SMOOTH_POINTS = 2  # Gauss points per segment for the smooth part of the kernel
STATIC_POINTS = 10  # Gauss points per segment on the outer integral of the static part
FEED_GAP_RADII = 4.0  # width of the feed gap in radii of the fed conductor (see the module docstring)
GAP_SAMPLES = 64  # midpoint samples of the gap when averaging the basis functions over it


@dataclass(frozen=True)
class PathGeometry:
    """Segment geometry of a path: starts (S, 3), unit directions (S, 3), lengths (S,), radii (S,) in metres;
    basis_before / basis_after (B,): the segment before and after each basis node; feed: the fed basis;
    gap_m: width of the feed gap (0: a delta gap at the feed node)."""

    starts: np.ndarray
    directions: np.ndarray
    lengths: np.ndarray
    radii: np.ndarray
    basis_before: np.ndarray
    basis_after: np.ndarray
    feed: int
    gap_m: float = 0.0


def path_geometry(nodes, radii, closed: bool, feed_node: int, gap_m: float = 0.0) -> PathGeometry:
    """PathGeometry of nodes (M, 3) joined in order (and back to the first when closed); radii (M - 1 or M,)
    one per segment; feed_node: index of the node at the middle of the feed gap (must carry a basis)."""
    nodes = np.asarray(nodes, dtype=float)
    ends = np.roll(nodes, -1, axis=0) if closed else nodes[1:]
    starts = nodes if closed else nodes[:-1]
    vec = ends - starts
    lengths = np.linalg.norm(vec, axis=1)
    if np.any(lengths <= 0):
        raise ValueError("wire path: two consecutive nodes coincide")
    n_seg = starts.shape[0]
    basis_nodes = np.arange(n_seg) if closed else np.arange(1, n_seg)
    before = (basis_nodes - 1) % n_seg
    after = basis_nodes % n_seg
    feed = np.flatnonzero(basis_nodes == feed_node)
    if feed.size != 1:
        raise ValueError("wire path: the feed node must join two segments")
    return PathGeometry(starts, vec / lengths[:, None], lengths, np.asarray(radii, dtype=float), before, after,
                        int(feed[0]), float(gap_m))


def feed_vector(geo: PathGeometry) -> np.ndarray:
    """V_m (V) of a 1 V source spread uniformly over the gap: the mean of each basis function over the gap.

    Positions are arc lengths from the feed node along the path (bases within half a gap of the feed only;
    the gap must be shorter than the path on either side of it)."""
    v = np.zeros(geo.basis_before.size)
    if geo.gap_m <= 0:
        v[geo.feed] = 1.0
        return v
    t = ((np.arange(GAP_SAMPLES) + 0.5) / GAP_SAMPLES - 0.5) * geo.gap_m
    seg = geo.lengths
    n_b = v.size
    for step in (1, -1):  # walk from the feed basis forward, then backward, while the bases reach the gap
        offset, m = 0.0, geo.feed
        for _ in range(n_b):
            d_before, d_after = seg[geo.basis_before[m]], seg[geo.basis_after[m]]
            if not (offset - d_before < geo.gap_m / 2 and offset + d_after > -geo.gap_m / 2):
                break
            rel = t - offset
            v[m] = np.mean(np.clip(np.where(rel < 0, 1 + rel / d_before, 1 - rel / d_after), 0.0, None))
            offset += d_after if step > 0 else -d_before
            m = (m + step) % n_b
    return v


def _gauss01(n: int):
    x, w = np.polynomial.legendre.leggauss(n)
    return (x + 1) / 2, w / 2


def _points(geo: PathGeometry, n: int):
    """Gauss points (S*n, 3), their fractions along the segment (n,) and weights (n,)."""
    x, w = _gauss01(n)
    pts = geo.starts[:, None, :] + (x[None, :, None] * geo.lengths[:, None, None]) * geo.directions[:, None, :]
    return pts.reshape(-1, 3), x, w


def _mean_radius_sq(geo: PathGeometry):
    return (geo.radii[:, None] ** 2 + geo.radii[None, :] ** 2) / 2


def static_integrals(geo: PathGeometry, rows=None) -> np.ndarray:
    """(4, S, S) ∫∫ α β / (4 pi R) dl dl' for (α, β) = (1, 1), (s, 1), (1, s'), (s, s'); s, s' in [0, 1] the
    fraction along the test and source segment. Inner integral closed form, outer Gauss-Legendre.
    rows: the test segments to compute (an index array; all when None), giving (4, len(rows), S)."""
    rows = np.arange(geo.lengths.size) if rows is None else np.asarray(rows)
    pts, x, w = _points(geo, STATIC_POINTS)
    pts = pts.reshape(-1, STATIC_POINTS, 3)[rows].reshape(-1, 3)
    n_seg, n_row = geo.lengths.size, rows.size
    rel = pts[:, None, :] - geo.starts[None, :, :]  # (R*n, S, 3)
    zeta = np.einsum("pqk,qk->pq", rel, geo.directions)
    a2 = np.repeat(_mean_radius_sq(geo)[rows], STATIC_POINTS, axis=0)
    rho2 = np.maximum(np.einsum("pqk,pqk->pq", rel, rel) - zeta**2, 0.0) + a2
    rho = np.sqrt(rho2)
    d = geo.lengths[None, :]
    j0 = np.arcsinh((d - zeta) / rho) + np.arcsinh(zeta / rho)
    j1 = (np.sqrt((d - zeta) ** 2 + rho2) - np.sqrt(zeta**2 + rho2) + zeta * j0) / d
    j0 = j0.reshape(n_row, STATIC_POINTS, n_seg)
    j1 = j1.reshape(n_row, STATIC_POINTS, n_seg)
    outer = geo.lengths[rows][:, None] / (4 * np.pi)
    out = np.empty((4, n_row, n_seg))
    for i, (alpha, inner) in enumerate(((1, j0), (x, j0), (1, j1), (x, j1))):
        weights = w * alpha
        out[i] = outer * np.einsum("g,pgq->pq", weights, inner)
    return out


def smooth_integrals(geo: PathGeometry, pair_r: np.ndarray, k: float, rows=None) -> np.ndarray:
    """(4, S, S) like static_integrals for the smooth kernel (e^{-jkR} - 1)/(4 pi R); pair_r from _pair_distance
    (with the same rows)."""
    rows = np.arange(geo.lengths.size) if rows is None else np.asarray(rows)
    x, w = _gauss01(SMOOTH_POINTS)
    n_seg, n_row = geo.lengths.size, rows.size
    kr = k * pair_r
    # e^{-jkR} - 1 = -2 sin²(kR/2) - j sin(kR), without the cancellation of 1 - cos at small kR
    h = (-2 * np.sin(kr / 2) ** 2 - 1j * np.sin(kr)) / (4 * np.pi * pair_r)
    h = h.reshape(n_row * SMOOTH_POINTS, n_seg, SMOOTH_POINTS)
    inner = np.stack([h @ w, h @ (w * x)])  # (2, R*n, S): source weights 1 and s'
    inner = inner.reshape(2, n_row, SMOOTH_POINTS, n_seg)
    scale = geo.lengths[rows][:, None] * geo.lengths[None, :]
    out = np.empty((4, n_row, n_seg), dtype=complex)
    for i, (alpha, beta) in enumerate(((w, 0), (w * x, 0), (w, 1), (w * x, 1))):
        out[i] = scale * np.einsum("g,pgq->pq", alpha, inner[beta])
    return out


def _pair_distance(geo: PathGeometry, rows=None) -> np.ndarray:
    rows = np.arange(geo.lengths.size) if rows is None else np.asarray(rows)
    pts, _, _ = _points(geo, SMOOTH_POINTS)
    a2 = np.repeat(np.repeat(_mean_radius_sq(geo)[rows], SMOOTH_POINTS, axis=0), SMOOTH_POINTS, axis=1)
    test = pts.reshape(-1, SMOOTH_POINTS, 3)[rows].reshape(-1, 3)
    diff = test[:, None, :] - pts[None, :, :]
    return np.sqrt(np.einsum("pqk,pqk->pq", diff, diff) + a2)


def _assemble(geo: PathGeometry, integrals: np.ndarray, k: float) -> np.ndarray:
    """Z (B, B) from the segment integrals: each basis rises on its segment before, falls on the one after."""
    i11, is1, i1s, iss = integrals
    by_type = {("r", "r"): iss, ("r", "f"): is1 - iss, ("f", "r"): i1s - iss, ("f", "f"): i11 - is1 - i1s + iss}
    pieces = (("r", geo.basis_before, 1.0), ("f", geo.basis_after, -1.0))
    z = np.zeros((geo.basis_before.size, geo.basis_before.size), dtype=complex)
    for ta, sa, da in pieces:
        for tb, sb, db in pieces:
            dot = geo.directions[sa] @ geo.directions[sb].T
            vec = by_type[(ta, tb)][np.ix_(sa, sb)]
            div = (da / geo.lengths[sa])[:, None] * (db / geo.lengths[sb])[None, :] * i11[np.ix_(sa, sb)]
            z += 1j * k * ETA0 * dot * vec - 1j * ETA0 / k * div
    return (z + z.T) / 2


class PathSolver:
    """Feed impedance of one path geometry at any frequency; the static integrals are computed once."""

    def __init__(self, geo: PathGeometry):
        self.geo = geo
        self._static = static_integrals(geo)
        self._pair_r = _pair_distance(geo)

    def impedance_matrix(self, freq_hz: float) -> np.ndarray:
        """Galerkin matrix Z (ohm) of the triangle bases at freq_hz."""
        k = 2 * np.pi * freq_hz / C_M_PER_S
        if np.any(k * self.geo.lengths > np.pi / 2):
            raise ValueError("wire path: segments longer than a quarter wavelength: use more segments")
        return _assemble(self.geo, self._static + smooth_integrals(self.geo, self._pair_r, k), k)

    def feed_impedance_ohm(self, freqs_hz) -> np.ndarray:
        """Z_in = 1 / (V·I) (ohm, complex) at each frequency for 1 V across the feed gap."""
        freqs = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
        v = feed_vector(self.geo)
        out = np.empty(freqs.size, dtype=complex)
        with single_thread_blas():
            for i, f in enumerate(freqs):
                out[i] = 1.0 / (v @ np.linalg.solve(self.impedance_matrix(f), v.astype(complex)))
        return out


def folded_dipole_nodes(length_m: float, spacing_m: float, n_conductor: int, n_end: int):
    """Nodes of a folded dipole's loop: the fed conductor on the z axis from -L/2 to L/2 (n_conductor
    segments, even), the end wire to x = s (n_end segments), the second conductor down, the end wire back.
    Returns (nodes (M, 3), index of the feed node, segments per part (conductor, end, conductor, end))."""
    z = np.linspace(-length_m / 2, length_m / 2, n_conductor + 1)
    x = np.linspace(0.0, spacing_m, n_end + 1)
    up = np.column_stack([np.zeros_like(z), np.zeros_like(z), z])
    top = np.column_stack([x[1:], np.zeros(n_end), np.full(n_end, length_m / 2)])
    down = np.column_stack([np.full(n_conductor, spacing_m), np.zeros(n_conductor), z[::-1][1:]])
    bottom = np.column_stack([x[::-1][1:-1], np.zeros(n_end - 1), np.full(n_end - 1, -length_m / 2)])
    nodes = np.vstack([up, top, down, bottom])
    return nodes, n_conductor // 2


@functools.lru_cache(maxsize=64)
def folded_dipole_solver(length_m: float, spacing_m: float, radius_fed_m: float, radius_other_m: float,
                         n_conductor: int, n_end: int) -> PathSolver:
    """PathSolver of a folded dipole: fed conductor radius_fed_m, the other radius_other_m, the end wires
    the thinner of the two (common practice, no source: the joining strap is seldom thicker than either)."""
    nodes, feed = folded_dipole_nodes(length_m, spacing_m, n_conductor, n_end)
    end_radius = min(radius_fed_m, radius_other_m)
    radii = np.concatenate([np.full(n_conductor, radius_fed_m), np.full(n_end, end_radius),
                            np.full(n_conductor, radius_other_m), np.full(n_end, end_radius)])
    return PathSolver(path_geometry(nodes, radii, closed=True, feed_node=feed, gap_m=FEED_GAP_RADII * radius_fed_m))
