"""A monopole at the centre of a finite circular plate: moment method for a body of revolution.

Method: the moment method for a body of revolution (J. R. Mautz, R. F. Harrington, "Radiation and
scattering from bodies of revolution": title and method checked; journal Appl. Sci. Res. 20, 1969, from
memory), applied to the monopole on a disc as surveyed in M. M. Weiner, S. P. Cruze, C. C. Li,
W. J. Wilson, "Monopole element at the center of a circular groundplane of arbitrary radius", MITRE
report ESD-TR-86-241, 1986 (which also lists a moment-method solution by J. H. Richmond: from memory).
The structure is rotationally symmetric and so is the feed, so only the
azimuth-independent (m = 0) current flows: the monopole's axial current and the plate's radial
current (J_phi = 0). Unknown: the total current I(t) along the generating curve, t the arc length
from the monopole tip (z = h - t) down to the base and out along the plate (rho = t - h) to its rim;
I = 0 at the tip and at the rim, continuous through the base (junction).

Mixed-potential electric-field integral equation, Galerkin with triangle functions f_n(t):
  Z_mn = j w mu sum integral f_m f_n (t_hat . t_hat') K dt dt' - j/(w eps) integral f_m' f_n' K_s dt dt',
  K_s = (1/2pi) integral_0^2pi e^{-jkR} / (4 pi R) dphi',   K = K_s with cos(phi') inside for
  plate-plate pairs (rho_hat . rho_hat' = cos phi'), K = K_s for wire-wire, 0 for wire-plate.
The monopole uses the thin-wire reduced kernel R = sqrt(b^2 + (z - z')^2); wire and plate meet on the
axis (R = sqrt(rho^2 + z^2)). Static parts 1/R are integrated in closed form: ring integrals by
complete elliptic integrals (int dphi/sqrt(A - B cos phi) = 4 K(m)/sqrt(A + B),
int cos phi dphi/sqrt(A - B cos phi) = 4 [(A/B) K(m) - ((A + B)/B) E(m)]/sqrt(A + B), m = 2B/(A + B);
Gradshteyn & Ryzhik 2.571, from memory, checked numerically in the tests), line and rectangle
integrals of 1/R by asinh. Excitation: 1 V delta gap at the base node; Z_in = 1 / I(base).

Far field (e^{-jkr}/r dropped): E_theta = -j w mu/(4 pi) [A_rho cos(theta) - A_z sin(theta)],
A_z = integral I_z(z) e^{jkz cos theta} dz, A_rho = j integral I(rho) J1(k rho sin theta) d rho
(the ring of radial current radiates through J1). Directivity D = 4 pi U / P_in with
U = |E_theta|^2/(2 eta), P_in = Re(I_in)/2 for 1 V (lossless). Units: metres, hertz, ohms, dBi.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.core.units import C_M_PER_S, EPS0, MU0

_GO = np.polynomial.legendre.leggauss(6)  # observation rule (even order: no midpoint)
_GS = np.polynomial.legendre.leggauss(5)  # source rule: its points never meet the observation rule's


@dataclass(frozen=True)
class Mesh:
    """Generating-curve nodes t_m (m), segment kinds (True on the plate), wire radius and height."""

    t_m: np.ndarray
    on_plate: np.ndarray
    height_m: float
    wire_radius_m: float
    plate_radius_m: float

    @property
    def base_basis(self) -> int:
        """Index of the triangle function centred on the base (the feed)."""
        return int(np.count_nonzero(~self.on_plate)) - 1


def make_mesh(height_m: float, plate_radius_m: float, wire_radius_m: float, freq_hz: float,
              per_wavelength: int = 30) -> Mesh:
    """Nodes with at least per_wavelength segments per wavelength on wire and plate (>= 6 each)."""
    lam = C_M_PER_S / freq_hz
    if not (height_m > 0 and plate_radius_m > 0 and 0 < wire_radius_m < height_m / 20):
        raise ValueError("need height > 0, plate radius > 0 and a thin wire (radius < height / 20)")
    nw = max(6, int(np.ceil(height_m / lam * per_wavelength)))
    nd = max(6, int(np.ceil(plate_radius_m / lam * per_wavelength)))
    t = np.concatenate([np.linspace(0, height_m, nw + 1), height_m + np.linspace(0, plate_radius_m, nd + 1)[1:]])
    return Mesh(t, np.arange(nw + nd) >= nw, height_m, wire_radius_m, plate_radius_m)


def _points(mesh: Mesh, rule):
    """Quadrature points of every segment: rho, z, weight (m), local coordinate u in [0, 1]; (S, Q)."""
    x, w = rule
    a, b = mesh.t_m[:-1, None], mesh.t_m[1:, None]
    u = (x[None, :] + 1) / 2
    t = a + (b - a) * u
    wt = (b - a) * w[None, :] / 2
    plate = mesh.on_plate[:, None]
    rho = np.where(plate, t - mesh.height_m, 0.0)
    return rho, np.where(plate, 0.0, mesh.height_m - t), wt, np.broadcast_to(u, t.shape)


def _ring_static(rho_o, rho_s):
    """(1/2pi) int_0^2pi dphi/(4 pi R) and the same with cos(phi), rings at one height (elliptic form)."""
    from scipy.special import ellipe, ellipk  # imported when first needed: a check from the cache never is
    big_a, big_b = rho_o**2 + rho_s**2, 2 * rho_o * rho_s
    m = np.clip(2 * big_b / (big_a + big_b), 0.0, 1 - 1e-15)
    root = rho_o + rho_s
    plain = 4 * ellipk(m) / root
    small = m < 1e-4
    safe_b = np.where(small, 1.0, big_b)
    cosw = np.where(small, np.pi * big_b / (2 * big_a**1.5 + 1e-300),
                    4 * ((big_a / safe_b) * ellipk(m) - ((big_a + big_b) / safe_b) * ellipe(m)) / root)
    return plain / (8 * np.pi**2), cosw / (8 * np.pi**2)


def _ring_smooth(rho_o, rho_s, k, n_phi):
    """(1/pi) int_0^pi (e^{-jkR} - 1)/(4 pi R) dphi and the cos-weighted one (Gauss-Legendre in phi)."""
    x, w = np.polynomial.legendre.leggauss(n_phi)
    phi, w = np.pi * (x + 1) / 2, w * np.pi / 2
    plain = np.zeros(np.broadcast_shapes(rho_o.shape, rho_s.shape), dtype=complex)
    cosw = np.zeros_like(plain)
    for p, wp in zip(phi, w):
        r = np.sqrt(np.maximum(rho_o**2 + rho_s**2 - 2 * rho_o * rho_s * np.cos(p), 0.0))
        g = np.where(r > 1e-12, np.expm1(-1j * k * np.maximum(r, 1e-12)) / np.maximum(r, 1e-12), -1j * k)
        plain += wp * g
        cosw += wp * np.cos(p) * g
    return plain / (4 * np.pi**2), cosw / (4 * np.pi**2)


def _wire_inner(t_obs, ta, tb, b):
    """Closed-form int_ta^tb psi(t') / R dt' for psi = falling (tb - t')/d and rising (t' - ta)/d,
    R = sqrt(b^2 + (t - t')^2); returns (falling, rising, plain)."""
    ua, ub = ta - t_obs, tb - t_obs
    i0 = np.arcsinh(ub / b) - np.arcsinh(ua / b)
    i1 = np.sqrt(b * b + ub * ub) - np.sqrt(b * b + ua * ua)
    d = tb - ta
    return ((tb - t_obs) * i0 - i1) / d, (i1 + (t_obs - ta) * i0) / d, i0


def _rect_static(z1, z2, r1, r2):
    """Closed-form int_z1^z2 int_r1^r2 dr dz / sqrt(r^2 + z^2) (all >= 0): F = x asinh(y/x) + y asinh(x/y)."""
    def f(x, y):
        with np.errstate(divide="ignore", invalid="ignore"):
            fx = np.where(x > 0, x * np.arcsinh(y / np.where(x > 0, x, 1.0)), 0.0)
            fy = np.where(y > 0, y * np.arcsinh(x / np.where(y > 0, y, 1.0)), 0.0)
        return fx + fy
    return f(z2, r2) - f(z1, r2) - f(z2, r1) + f(z1, r1)


def _smooth_kernels(mesh: Mesh, k: float, po, ps):
    """Kernels minus their static 1/R parts at every (obs point, src point): (vector, scalar), (S,Qo,S,Qs)."""
    (ro, zo), (rs, zs) = po[:2], ps[:2]
    ro_, zo_ = ro[:, :, None, None], zo[:, :, None, None]
    rs_, zs_ = rs[None, None], zs[None, None]
    plate_o = mesh.on_plate[:, None, None, None]
    plate_s = mesh.on_plate[None, None, :, None]
    b = mesh.wire_radius_m
    r = np.where(plate_o & plate_s, 1.0, np.where(~plate_o & ~plate_s, np.sqrt(b * b + (zo_ - zs_) ** 2),
                                                  np.sqrt((ro_ + rs_) ** 2 + (zo_ + zs_) ** 2)))
    g = np.expm1(-1j * k * r) / (4 * np.pi * r)
    vec = np.where(~plate_o & ~plate_s, g, 0.0).astype(complex)
    sca = np.where(plate_o & plate_s, 0.0, g).astype(complex)
    n_phi = 24 + int(3 * k * mesh.plate_radius_m)
    ip, jp = np.flatnonzero(mesh.on_plate), np.flatnonzero(mesh.on_plate)
    plain, cosw = _ring_smooth(ro[ip][:, :, None, None], rs[jp][None, None], k, n_phi)
    st_plain, st_cos = _ring_static(ro[ip][:, :, None, None], rs[jp][None, None])
    sca[np.ix_(ip, range(ro.shape[1]), jp, range(rs.shape[1]))] = plain + st_plain
    vec[np.ix_(ip, range(ro.shape[1]), jp, range(rs.shape[1]))] = cosw + st_cos
    return vec, sca


def segment_integrals(mesh: Mesh, freq_hz: float):
    """V[a, i, b, j] = int int psi_i psi_j (t.t') K and Sc[a, b] = int int K_s over segment pairs."""
    k = 2 * np.pi * freq_hz / C_M_PER_S
    po, ps = _points(mesh, _GO), _points(mesh, _GS)
    vec, sca = _smooth_kernels(mesh, k, po, ps)
    psi_o = np.stack([1 - po[3], po[3]], axis=-1) * po[2][..., None]
    psi_s = np.stack([1 - ps[3], ps[3]], axis=-1) * ps[2][..., None]
    v = np.einsum("aqi,aqbr,brj->aibj", psi_o, vec, psi_s)
    sc = np.einsum("aq,aqbr,br->ab", po[2], sca, ps[2])
    wire = np.flatnonzero(~mesh.on_plate)
    plate = np.flatnonzero(mesh.on_plate)
    ta, tb = mesh.t_m[wire], mesh.t_m[wire + 1]
    t_obs = (mesh.height_m - po[1])[wire][:, :, None]
    fall, rise, plain = _wire_inner(t_obs, ta[None, None], tb[None, None], mesh.wire_radius_m)
    stat = np.stack([fall, rise], axis=-1) / (4 * np.pi)  # (Sw, Qo, Sw, 2)
    v[np.ix_(wire, [0, 1], wire, [0, 1])] += np.einsum("aqi,aqbj->aibj", psi_o[wire], stat)
    sc[np.ix_(wire, wire)] += np.einsum("aq,aqb->ab", po[2][wire], plain) / (4 * np.pi)
    z1, z2 = mesh.height_m - tb, mesh.height_m - ta
    r1, r2 = mesh.t_m[plate] - mesh.height_m, mesh.t_m[plate + 1] - mesh.height_m
    rect = _rect_static(z1[:, None], z2[:, None], r1[None, :], r2[None, :]) / (4 * np.pi)
    sc[np.ix_(wire, plate)] += rect
    sc[np.ix_(plate, wire)] += rect.T
    return v, sc


def impedance_matrix(mesh: Mesh, freq_hz: float) -> np.ndarray:
    """Galerkin matrix Z (ohm) of the triangle functions on the interior nodes (see module docstring)."""
    w = 2 * np.pi * freq_hz
    v, sc = segment_integrals(mesh, freq_hz)
    n_seg = mesh.t_m.size - 1
    d = np.diff(mesh.t_m)
    sel = np.zeros((n_seg - 1, n_seg, 2))
    der = np.zeros((n_seg - 1, n_seg))
    for n in range(n_seg - 1):
        sel[n, n, 1] = sel[n, n + 1, 0] = 1.0
        der[n, n], der[n, n + 1] = 1 / d[n], -1 / d[n + 1]
    sel = sel.reshape(n_seg - 1, 2 * n_seg)
    vector = sel @ v.reshape(2 * n_seg, 2 * n_seg) @ sel.T
    return 1j * w * MU0 * vector - 1j / (w * EPS0) * (der @ sc @ der.T)


@dataclass(frozen=True)
class PlateMonopole:
    """A solved monopole on a disc. z_in_ohm: input impedance; theta_deg (T,) from the zenith, 0..180;
    directivity_dbi (T,) (lossless, so gain); horizon_gain_dbi at theta 90; peak_gain_dbi and
    peak_elevation_deg (elevation = 90 - theta) of the maximum over the upper half space."""

    freq_hz: float
    height_m: float
    plate_radius_m: float
    z_in_ohm: complex
    theta_deg: np.ndarray
    directivity_dbi: np.ndarray
    horizon_gain_dbi: float
    peak_gain_dbi: float
    peak_elevation_deg: float


def node_currents(mesh: Mesh, freq_hz: float) -> np.ndarray:
    """Total current (A) at every node for 1 V at the base; zero at the tip and at the rim."""
    z = impedance_matrix(mesh, freq_hz)
    v = np.zeros(z.shape[0], dtype=complex)
    v[mesh.base_basis] = 1.0
    return np.concatenate([[0.0], np.linalg.solve(z, v), [0.0]])


def far_field_theta(mesh: Mesh, currents: np.ndarray, freq_hz: float, theta_rad) -> np.ndarray:
    """E_theta r e^{jkr} (V) at polar angles theta_rad from the node currents (module docstring)."""
    from scipy.special import j1
    k = 2 * np.pi * freq_hz / C_M_PER_S
    rho, z, wt, u = _points(mesh, np.polynomial.legendre.leggauss(8))
    cur = currents[:-1, None] * (1 - u) + currents[1:, None] * u
    th = np.asarray(theta_rad, dtype=float)[..., None, None]
    wire = ~mesh.on_plate[:, None]
    a_z = np.sum(np.where(wire, -cur * wt * np.exp(1j * k * z * np.cos(th)), 0.0), axis=(-2, -1))
    a_rho = np.sum(np.where(wire, 0.0, 1j * cur * wt * j1(k * rho * np.sin(th))), axis=(-2, -1))
    th = th[..., 0, 0]
    return -1j * 2 * np.pi * freq_hz * MU0 / (4 * np.pi) * (a_rho * np.cos(th) - a_z * np.sin(th))


def monopole_on_disc(height_m: float, plate_radius_m: float, wire_radius_m: float, freq_hz: float,
                     step_deg: float = 0.5, per_wavelength: int = 30) -> PlateMonopole:
    """Input impedance and elevation pattern of a monopole at the centre of a circular plate."""
    mesh = make_mesh(height_m, plate_radius_m, wire_radius_m, freq_hz, per_wavelength)
    cur = node_currents(mesh, freq_hz)
    z_in = 1.0 / cur[mesh.base_basis + 1]
    theta = np.arange(0.0, 180.0 + step_deg / 2, step_deg)
    e = far_field_theta(mesh, cur, freq_hz, np.radians(theta))
    u = np.abs(e) ** 2 / (2 * MU0 * C_M_PER_S)
    p_in = 0.5 * float(np.real(cur[mesh.base_basis + 1]))
    d_dbi = 10 * np.log10(np.maximum(4 * np.pi * u / p_in, 1e-30))
    upper = theta <= 90.0
    i_peak = int(np.argmax(np.where(upper, d_dbi, -np.inf)))
    i_hor = int(np.argmin(np.abs(theta - 90.0)))
    return PlateMonopole(freq_hz, height_m, plate_radius_m, complex(z_in), theta, d_dbi, float(d_dbi[i_hor]),
                         float(d_dbi[i_peak]), float(90.0 - theta[i_peak]))


def radiated_power_check(result: PlateMonopole) -> float:
    """(1/4pi) integral of 10^(D/10) over the sphere: 1 when the pattern and the input power agree."""
    th = np.radians(result.theta_deg)
    lin = 10 ** (result.directivity_dbi / 10)
    return float(np.trapezoid(lin * np.sin(th), th) / 2)



def quarter_wave_on_disc(diameter_lambda: float, freq_hz: float, wire_radius_lambda: float = 1e-3,
                         height_lambda: float = 0.25, step_deg: float = 0.5) -> PlateMonopole:
    """A monopole height_lambda wavelengths tall at the centre of a disc diameter_lambda wavelengths
    across (checked against NEC-2 from 0.25 to 3 wavelengths; larger discs cost more, as the square of
    the diameter). Square plates are not modelled."""
    lam = C_M_PER_S / freq_hz
    return monopole_on_disc(height_lambda * lam, diameter_lambda * lam / 2, wire_radius_lambda * lam, freq_hz,
                            step_deg)
