"""Thin-wire method of moments for parallel straight wires (Richmond's piecewise-sinusoidal Galerkin).

Model (lossless, perfectly conducting wires in free space):

* Every wire is straight and parallel to the z axis, at (x, y), from z_start to z_end, with radius a,
  cut into N equal segments of length d. A piecewise-sinusoidal (PWS) basis function sits on each
  interior node: I(z) = sin k(d - |z - z_i|) / sin kd on |z - z_i| < d, zero elsewhere, so the current
  vanishes at the wire ends.
* Testing functions equal the basis functions (Galerkin), giving a symmetric impedance matrix
  Z_mn = -integral(E_z^n J_m dz).
* Thin-wire reduced kernel: the source current is a filament on the axis; the field is taken at the
  distance rho = a on the same wire and at the axis-to-axis distance between different wires.
* The exact near field of a PWS filament (Schelkunoff) has three spherical-wave terms,
  E_z = -j eta/(4 pi sin kd) [e^{-jkR1}/R1 + e^{-jkR2}/R2 - 2 cos kd e^{-jkR0}/R0]
  (Balanis, Antenna Theory, 4th ed., ch. 8; J. H. Richmond, "Radiation and scattering by thin-wire
  structures in the complex frequency domain", NASA CR-2396, 1974). Integrated against a sinusoidal
  testing current it is closed form in exponential integrals E1(jx) = -Ci(x) + j(Si(x) - pi/2)
  (Abramowitz & Stegun 5.2.23), computed with scipy.special.sici.
* Excitation: 1 V across a gap of width g centred on a node, the field uniform over the gap:
  V_m = (1/g) ∫_gap f_m dz and Z_in = 1 / (V·I) (the reaction form; Harrington, Field Computation by
  Moment Methods, 1968, ch. 4). g = 0 is the delta gap, V = 1 at the node and Z_in = 1 / I(node). A delta
  gap's capacitance grows as the segments shrink, so |Z| never settles; a gap of a few radii converges
  (see wire_path.FEED_GAP_RADII, the width the site uses).

Units: metres, hertz, ohms, amperes. The results are deterministic and depend only on the arguments.
"""
from __future__ import annotations

import contextlib
import functools
from dataclasses import dataclass

import numpy as np

from registry.core.units import C_M_PER_S, ETA0


@dataclass(frozen=True)
class Wire:
    """A straight perfectly conducting wire parallel to z (all lengths in metres)."""

    x_m: float
    y_m: float
    z_start_m: float
    z_end_m: float
    radius_m: float
    n_segments: int

    def __post_init__(self):
        if not self.z_end_m > self.z_start_m:
            raise ValueError(f"wire must have z_end_m > z_start_m, got {self.z_start_m}..{self.z_end_m}")
        if not self.radius_m > 0:
            raise ValueError(f"wire radius_m must be positive, got {self.radius_m}")
        if self.n_segments < 2:
            raise ValueError(f"wire needs at least 2 segments, got {self.n_segments}")


@dataclass(frozen=True)
class WireStructure:
    """Node and basis bookkeeping of a set of wires (geometry only, no frequency)."""

    wires: tuple[Wire, ...]
    node_z_m: np.ndarray  # (n_nodes,)
    node_wire: np.ndarray  # (n_nodes,) wire index of each node
    basis_nodes: np.ndarray  # (n_basis, 3) node indices (start, peak, end)
    basis_half_m: np.ndarray  # (n_basis,) half-length d of each basis
    basis_wire: np.ndarray  # (n_basis,)
    r_minus_m: np.ndarray  # (n_nodes, n_nodes) R - zeta between test node a and source node b
    r_plus_m: np.ndarray  # (n_nodes, n_nodes) R + zeta
    zeta_m: np.ndarray  # (n_nodes, n_nodes) z_a - z_b

    def basis_at(self, wire_index: int, node_index: int) -> int:
        """Index of the basis function peaking at node `node_index` (0 = wire start) of a wire."""
        w = self.wires[wire_index]
        if not 0 < node_index < w.n_segments:
            raise ValueError(f"node {node_index} is not an interior node of wire {wire_index}")
        first = int(np.flatnonzero(self.basis_wire == wire_index)[0])
        return first + node_index - 1

    def centre_basis(self, wire_index: int) -> int:
        """Basis at the middle node of a wire (the wire needs an even number of segments)."""
        n = self.wires[wire_index].n_segments
        if n % 2:
            raise ValueError(f"wire {wire_index} needs an even number of segments for a centre feed")
        return self.basis_at(wire_index, n // 2)


def build_structure(wires) -> WireStructure:
    """Precompute the geometry-only arrays of the Galerkin fill for a tuple of Wire."""
    wires = tuple(wires)
    zs, wi, bn, bh, bw = [], [], [], [], []
    offset = 0
    for i, w in enumerate(wires):
        z = np.linspace(w.z_start_m, w.z_end_m, w.n_segments + 1)
        zs.append(z)
        wi.append(np.full(z.size, i))
        for k in range(1, w.n_segments):
            bn.append((offset + k - 1, offset + k, offset + k + 1))
            bh.append((w.z_end_m - w.z_start_m) / w.n_segments)
            bw.append(i)
        offset += z.size
    node_z = np.concatenate(zs)
    node_wire = np.concatenate(wi)
    xy = np.array([[w.x_m, w.y_m] for w in wires], dtype=float)
    radius = np.array([w.radius_m for w in wires], dtype=float)
    dxy = xy[:, None, :] - xy[None, :, :]
    rho_w = np.hypot(dxy[..., 0], dxy[..., 1])
    # same wire: field on the surface; touching or collinear wires: never closer than a radius
    rho_w = np.maximum(rho_w, np.minimum(radius[:, None], radius[None, :]))
    np.fill_diagonal(rho_w, radius)
    rho = rho_w[node_wire[:, None], node_wire[None, :]]
    zeta = node_z[:, None] - node_z[None, :]
    r = np.hypot(rho, zeta)
    # R -/+ zeta without cancellation: (R - zeta)(R + zeta) = rho^2
    r_minus = np.where(zeta > 0, rho**2 / (r + np.abs(zeta)), r - zeta)
    r_plus = np.where(zeta < 0, rho**2 / (r + np.abs(zeta)), r + zeta)
    return WireStructure(
        wires=wires,
        node_z_m=node_z,
        node_wire=node_wire,
        basis_nodes=np.array(bn, dtype=int).reshape(-1, 3),
        basis_half_m=np.array(bh, dtype=float),
        basis_wire=np.array(bw, dtype=int),
        r_minus_m=r_minus,
        r_plus_m=r_plus,
        zeta_m=zeta,
    )


def _e1_imag(x):
    """E1(jx) for real x > 0: -Ci(x) + j(Si(x) - pi/2) (Abramowitz & Stegun 5.2.23)."""
    from scipy.special import sici  # imported when first needed: a rebuild from the cache never is

    si, ci = sici(x)
    return -ci + 1j * (si - np.pi / 2)


def impedance_matrix(structure: WireStructure, freq_hz: float) -> np.ndarray:
    """Galerkin impedance matrix Z_mn (ohm) of the PWS basis functions at one frequency.

    Z_mn = j eta/(4 pi sin kd_m sin kd_n) * sum_i c_i [K(t1..t0) - K(t0..t2)], where the source points
    s_i of basis n are its start, end and peak nodes with weights 1, 1, -2 cos kd_n, and
    K = integral sin k(z - t) e^{-jkR}/R dz = 1/(2j) [e^{jk(s-t)} E1(jk(R-zeta)) + e^{-jk(s-t)}
    E1(jk(R+zeta))] between the limits (zeta = z - s). Symmetric by reciprocity.
    """
    k = 2 * np.pi * freq_hz / C_M_PER_S
    d = structure.basis_half_m
    if np.any(k * d > np.pi / 2 * (1 + 1e-9)):
        raise ValueError("segments longer than a quarter wavelength: use more segments")
    p = _e1_imag(k * structure.r_minus_m)
    m = _e1_imag(k * structure.r_plus_m)
    ph = np.exp(-1j * k * structure.zeta_m)  # ph[t, s] = exp(jk(z_s - z_t))
    # Z is symmetric (reciprocity): fill the pairs m <= n only, then mirror
    rows, cols = np.triu_indices(d.size)
    t1, t0, t2 = (structure.basis_nodes[rows, j] for j in range(3))
    nodes_n = structure.basis_nodes[cols]
    d_n = d[cols]
    weights = (np.ones_like(d_n), np.ones_like(d_n), -2 * np.cos(k * d_n))
    acc = np.zeros(rows.size, dtype=complex)
    for s_col, c in zip((0, 2, 1), weights):
        s = nodes_n[:, s_col]
        p_t1, p_t0, p_t2 = p[t1, s], p[t0, s], p[t2, s]
        m_t1, m_t0, m_t2 = m[t1, s], m[t0, s], m[t2, s]
        e1, e2 = ph[t1, s], ph[t2, s]
        k_rise = e1 * (p_t0 - p_t1) + np.conj(e1) * (m_t0 - m_t1)
        k_fall = e2 * (p_t2 - p_t0) + np.conj(e2) * (m_t2 - m_t0)
        acc += c * (k_rise - k_fall)
    sin_kd = np.sin(k * d)
    upper = (1j * ETA0 / (4 * np.pi)) * acc / (2j) / (sin_kd[rows] * sin_kd[cols])
    z = np.empty((d.size, d.size), dtype=complex)
    z[rows, cols] = upper
    z[cols, rows] = upper
    return z


@dataclass(frozen=True)
class WireSolution:
    """Currents and input impedance of a wire structure across frequency.

    freqs_hz: (F,); z_in_ohm: (F,) complex input impedance at the feed; currents_a: (F, n_basis)
    complex basis-function amplitudes (A, peak current of each PWS basis) for a 1 V feed.
    """

    structure: WireStructure
    feed_basis: int
    freqs_hz: np.ndarray
    z_in_ohm: np.ndarray
    currents_a: np.ndarray


@functools.lru_cache(maxsize=1)
def _blas_controller():
    try:
        from threadpoolctl import ThreadpoolController  # imported when first needed
    except ImportError:  # without it the solves are correct, only slower on a busy machine
        return None
    return ThreadpoolController()


def single_thread_blas():
    """Context in which BLAS/LAPACK run on one thread. Our systems are small (tens to hundreds of unknowns):
    measured here, a 102-unknown complex solve took 12 ms with OpenBLAS's threads on a loaded two-core
    machine and 0.14 ms on one thread; the build's own workers give the parallelism."""
    controller = _blas_controller()
    return contextlib.nullcontext() if controller is None else controller.limit(limits=1, user_api="blas")


def gap_voltages(structure: WireStructure, feed_basis: int, gap_m: float, freq_hz: float) -> np.ndarray:
    """V_m (V) of 1 V spread uniformly over a gap of gap_m centred on the peak of `feed_basis`: the mean of
    each PWS basis function of the fed wire over the gap (a delta gap, V = 1 on the feed basis, for 0)."""
    nb = structure.basis_half_m.size
    v = np.zeros(nb)
    if gap_m <= 0:
        v[feed_basis] = 1.0
        return v
    k = 2 * np.pi * freq_hz / C_M_PER_S
    sel = np.flatnonzero(structure.basis_wire == structure.basis_wire[feed_basis])
    peaks = structure.node_z_m[structure.basis_nodes[sel, 1]]
    d = structure.basis_half_m[sel][:, None]
    z = peaks[sel == feed_basis][0] + ((np.arange(64) + 0.5) / 64 - 0.5) * gap_m
    r = np.abs(z[None, :] - peaks[:, None])
    v[sel] = np.mean(np.where(r < d, np.sin(k * np.clip(d - r, 0.0, None)) / np.sin(k * d), 0.0), axis=1)
    return v


def solve_structure(structure: WireStructure, feed_basis: int, freqs_hz, gap_m: float = 0.0) -> WireSolution:
    """Solve Z I = V for 1 V across a gap of gap_m (0: a delta gap) at the peak node of basis `feed_basis`,
    at every frequency; Z_in = 1 / (V·I)."""
    freqs = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    nb = structure.basis_half_m.size
    currents = np.empty((freqs.size, nb), dtype=complex)
    z_in = np.empty(freqs.size, dtype=complex)
    with single_thread_blas():
        for i, f in enumerate(freqs):
            v = gap_voltages(structure, feed_basis, gap_m, f)
            currents[i] = np.linalg.solve(impedance_matrix(structure, f), v.astype(complex))
            z_in[i] = 1.0 / (v @ currents[i])
    return WireSolution(structure, feed_basis, freqs, z_in, currents)


def far_field_theta(solution: WireSolution, index: int, theta_rad, phi_rad) -> np.ndarray:
    """Far-zone E_theta * r * e^{jkr} (V) of the solved currents at frequency index `index`.

    E_theta = j eta k/(4 pi) sin(theta) A_z, A_z = sum_n I_n exp(jk r_hat . r_n) S_n(cos theta), with the
    transform of a PWS basis S(u) = 2 (cos(kdu) - cos kd)/(k sin kd (1 - u^2)) (Balanis 4th ed., ch. 4,
    sinusoidal current). theta_rad and phi_rad broadcast against each other (e.g. (T, 1) and (1, P)).
    Radiation intensity U = |E_theta|^2/(2 eta) W/sr.
    """
    st = solution.structure
    k = 2 * np.pi * solution.freqs_hz[index] / C_M_PER_S
    th = np.asarray(theta_rad, dtype=float)
    ph = np.asarray(phi_rad, dtype=float)
    u = np.cos(th)
    sin_t = np.sin(th)
    ok = np.abs(sin_t) > 1e-9
    safe = np.where(ok, sin_t, 1.0)
    currents = solution.currents_a[index]
    peak_z = st.node_z_m[st.basis_nodes[:, 1]]
    e = np.zeros(np.broadcast_shapes(th.shape, ph.shape), dtype=complex)
    for w_index, w in enumerate(st.wires):
        sel = st.basis_wire == w_index
        d = st.basis_half_m[sel][0]
        # sin(theta) * S(u) = 2 (cos kdu - cos kd) / (k sin kd sin theta), zero on the axis
        g = np.where(ok, 2 * (np.cos(k * d * u) - np.cos(k * d)) / (k * np.sin(k * d) * safe), 0.0)
        phase = np.exp(1j * k * np.multiply.outer(u.ravel(), peak_z[sel])) @ currents[sel]
        f_w = g * phase.reshape(u.shape)
        e = e + f_w * np.exp(1j * k * sin_t * (w.x_m * np.cos(ph) + w.y_m * np.sin(ph)))
    return (1j * ETA0 * k / (4 * np.pi)) * e


def segments_for(length_m: float, freq_max_hz: float, per_wavelength: int = 40, minimum: int = 10) -> int:
    """Even segment count giving at least `per_wavelength` segments per wavelength at freq_max_hz."""
    lam = C_M_PER_S / freq_max_hz
    n = max(minimum, int(np.ceil(length_m / lam * per_wavelength)))
    return n + (n % 2)
