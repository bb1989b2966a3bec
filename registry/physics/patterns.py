"""Radiation pattern of any catalogue antenna kind on a theta-phi grid, its principal cuts and metrics.

Entry point: `pattern_for_kind(kind, geometry, freq_hz, step_deg=1.0)` -> PatternResult.
Which model each kind uses:

* dipole, folded_dipole: finite-dipole formula (sinusoidal current; a folded dipole radiates through its
  antenna mode, the same pattern as a dipole of its length). monopole: image theory, upper half space.
* small_loop: sin(theta) pattern of an electrically small loop.
* yagi: currents of the thin-wire method-of-moments solution (wire.py), mutual coupling included.
* linear_array: array factor (tapers in arrays.py) times an isotropic or a half-wave element, or a
  quarter-wave monopole on the ground plane z = 0 (elements along z, nothing radiated below the plane).
* slotted_array: 2-D array factor times the half-wave slot's pattern.
* parabolic: circular aperture, parabolic-on-pedestal distribution with an edge taper.
* patch: cavity model, two radiating slots.

Metrics (frozen PatternMetrics): directivity by Gauss-Legendre integration of the model's own pattern
function over the sphere (not of the display grid, so narrow beams are integrated accurately);
beamwidths and side lobes from finely sampled principal-plane cuts. Lossless: gain equals directivity.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from registry.physics import arrays, elements, metrics
from registry.physics.kinds import OMNI_KINDS, canonical_geometry
from registry.core.units import C_M_PER_S

#: E-plane and H-plane of each kind (see metrics.plane_directions and the axes in kinds.py)
PLANES = {
    "dipole": ("xz", "xy"),
    "monopole": ("xz", "xy"),
    "folded_dipole": ("xz", "xy"),
    "small_loop": ("xy", "xz"),
    "yagi": ("xz", "xy"),
    "linear_array": ("xz", "yz"),
    "slotted_array": ("xz", "yz"),
    "parabolic": ("xz", "yz"),
    "patch": ("xz", "yz"),
}


@dataclass(frozen=True)
class PatternMetrics:
    """Scalar figures of a pattern. Angles in degrees, levels in dB; nan where not applicable.

    peak_directivity_dbi: 10 log10(4 pi U_max / P_rad). peak_theta_deg, peak_phi_deg: a direction of
    the maximum. hpbw_e_deg, hpbw_h_deg: half-power beamwidths in the E- and H-plane cuts (nan when a cut
    stays above half power, 10 log10(0.5) dB, all round). front_to_back_db: U(peak)/U(opposite direction), at most -FLOOR_DB.
    first_sidelobe_db: the higher first side lobe of the two cuts, relative to the peak (negative).
    azimuth_ripple_db: max - min over the horizontal (xy) cut, for kinds meant to be omnidirectional.
    """

    peak_directivity_dbi: float
    peak_theta_deg: float
    peak_phi_deg: float
    hpbw_e_deg: float
    hpbw_h_deg: float
    front_to_back_db: float
    first_sidelobe_db: float
    azimuth_ripple_db: float


@dataclass(frozen=True)
class PatternResult:
    """A pattern ready to plot. Arrays are numpy; levels are dBi (grid) or dB re peak (cuts).

    theta_deg (T,), phi_deg (P,), gain_dbi (T, P) directivity pattern floored FLOOR_DB below the peak.
    e_plane / h_plane: names of the cut planes ('xz', 'yz', 'xy'); *_angle_deg (M,) the angle in the
    plane (see metrics.plane_directions), *_db (M,) normalised level (0 dB at the pattern's peak).
    segments: segment count on each element when the pattern comes from method-of-moments currents
    (yagi), else ().
    """

    kind: str
    freq_hz: float
    theta_deg: np.ndarray
    phi_deg: np.ndarray
    gain_dbi: np.ndarray
    e_plane: str
    e_angle_deg: np.ndarray
    e_db: np.ndarray
    h_plane: str
    h_angle_deg: np.ndarray
    h_db: np.ndarray
    metrics: PatternMetrics
    segments: tuple[int, ...] = ()


def _yagi_power_fn(geometry, freq_hz):
    """Power function of a Yagi from its MoM currents, with the segment counts refined at freq_hz."""
    from registry.physics.impedance import solve_wire_antenna
    from registry.physics.wire import far_field_theta

    sweep = solve_wire_antenna("yagi", geometry, [freq_hz], design_hz=freq_hz)
    sol = sweep.solution

    def fn(th, ph):
        return np.abs(far_field_theta(sol, 0, th, ph)) ** 2

    fn.segments = sweep.segments
    return fn


def power_function(kind: str, geometry, freq_hz: float):
    """(power_fn, size_m) for a kind: power_fn(theta_rad, phi_rad) -> relative |E|^2 (broadcasting);
    size_m is the largest dimension, used to choose sampling densities."""
    g = dict(canonical_geometry(kind, geometry))
    f = float(freq_hz)
    if not f > 0:
        raise ValueError("freq_hz must be positive")
    if kind in ("dipole", "folded_dipole"):
        return (lambda th, ph: elements.finite_dipole_power(th, g["length_m"], f) + 0 * ph), g["length_m"]
    if kind == "monopole":
        return (lambda th, ph: elements.monopole_power(th, g["height_m"], f) + 0 * ph), 2 * g["height_m"]
    if kind == "small_loop":
        return (lambda th, ph: elements.small_loop_power(th) + 0 * ph), g["diameter_m"]
    if kind == "yagi":
        boom = max(g["element_positions_m"]) - min(g["element_positions_m"])
        return _yagi_power_fn(geometry, f), max(boom, max(g["element_lengths_m"]))
    if kind == "linear_array":
        w = arrays.taper_weights(g["n_elements"], g["taper"], g["sidelobe_db"], g["amplitudes"])
        steer = math.radians(g["steer_deg"])
        if g["element"] == "isotropic":
            def elem(th, ph):
                return 1.0
        elif g["element"] == "half_wave_dipole":
            elem = elements.collinear_half_wave_power
        elif g["element"] == "monopole":
            quarter_wave_m = C_M_PER_S / f / 4

            def elem(th, ph):  # quarter-wave monopoles along z on the ground plane z = 0 (image theory)
                return elements.monopole_power(th, quarter_wave_m, f)
        else:
            raise ValueError("linear_array: element must be 'isotropic', 'half_wave_dipole' or 'monopole'")

        def fn(th, ph):
            return elem(th, ph) * arrays.linear_array_power(th, ph, w, g["spacing_m"], f, steer)

        return fn, g["n_elements"] * g["spacing_m"]
    if kind == "slotted_array":
        wx = arrays.taper_weights(g["nx"], g["taper"], g["sidelobe_db"])
        wy = arrays.taper_weights(g["ny"], g["taper"], g["sidelobe_db"])

        def fn(th, ph):
            af = arrays.planar_array_power(th, ph, wx, wy, g["spacing_x_m"], g["spacing_y_m"], f)
            return elements.half_wave_slot_power(th, ph) * af

        return fn, math.hypot(g["nx"] * g["spacing_x_m"], g["ny"] * g["spacing_y_m"])
    if kind == "parabolic":
        def fn(th, ph):
            p = elements.circular_aperture_power(th, g["diameter_m"], f, g["edge_taper_db"], g["taper_exponent"])
            return p + 0 * ph

        return fn, g["diameter_m"]
    if kind == "patch":
        def fn(th, ph):
            return elements.patch_power(th, ph, g["length_m"], g["width_m"], g["substrate_height_m"], g["eps_r"], f)

        return fn, math.hypot(g["length_m"], g["width_m"])
    raise ValueError(f"no pattern model for kind '{kind}'")


def planes_of(kind: str, geometry) -> tuple[str, str]:
    """(E-plane, H-plane) of a kind; an array of vertical monopoles along x: the vertical yz plane
    through its broadside beam, and the horizontal xy plane (the ground plane, where its beam lies)."""
    if kind == "linear_array" and dict(canonical_geometry(kind, geometry))["element"] == "monopole":
        return "yz", "xy"
    return PLANES[kind]


def _sampling(size_m: float, freq_hz: float):
    """(Gauss points per hemisphere, phi points, cut step in deg) for an antenna of this size."""
    ka = 2 * np.pi * freq_hz / C_M_PER_S * max(size_m, 1e-9)
    n_half = int(math.ceil(0.6 * ka)) + 24
    n_phi = 2 * int(math.ceil(0.6 * ka)) + 48
    beam_deg = 57.3 * 2 * np.pi / ka  # about lambda/D radians
    n_cut = int(math.ceil(360.0 / min(0.1, beam_deg / 40)))
    return n_half, n_phi, 360.0 / n_cut


def pattern_for_kind(kind: str, geometry, freq_hz: float, step_deg: float = 1.0) -> PatternResult:
    """Pattern of an antenna kind at freq_hz (Hz) on a step_deg grid, with cuts and metrics.

    geometry: mapping or (name, value) pairs (kinds.KIND_PARAMETERS; SI units). Pure and deterministic.
    """
    fn, size = power_function(kind, geometry, freq_hz)
    theta, phi = metrics.sphere_grid_rad(step_deg)
    grid = np.asarray(fn(theta[:, None], phi[None, :]), dtype=float) * np.ones((theta.size, phi.size))
    n_half, n_phi, cut_step = _sampling(size, freq_hz)
    p_rad = metrics.radiated_integral(fn, n_half, n_phi)
    psi = np.deg2rad(np.arange(0.0, 360.0, cut_step))
    e_name, h_name = planes_of(kind, geometry)
    cuts = {}
    for name in {e_name, h_name, "xy"}:
        th_c, ph_c = metrics.plane_directions(name, psi)
        cuts[name] = (th_c, ph_c, np.asarray(fn(th_c, ph_c), dtype=float) * np.ones_like(psi))
    u_max, th_pk, ph_pk = _peak(grid, theta, phi, cuts)
    if not u_max > 0:
        raise ValueError(f"{kind}: the pattern is zero everywhere")
    back = float(np.asarray(fn(np.array(np.pi - th_pk), np.array(ph_pk + np.pi)), dtype=float))
    fb = -float(metrics.to_db(back, u_max))
    e_db = metrics.to_db(cuts[e_name][2], u_max)
    h_db = metrics.to_db(cuts[h_name][2], u_max)
    angle = np.rad2deg(psi)
    sll = [metrics.first_sidelobe_db(c) for c in (e_db, h_db)]
    sll = [s for s in sll if not math.isnan(s)]
    ripple = float("nan")
    if kind in OMNI_KINDS:
        xy = metrics.to_db(cuts["xy"][2], u_max)
        ripple = float(xy.max() - xy.min())
    d_dbi = 10 * math.log10(4 * math.pi * u_max / p_rad)
    m = PatternMetrics(
        peak_directivity_dbi=d_dbi,
        peak_theta_deg=math.degrees(th_pk),
        peak_phi_deg=math.degrees(ph_pk) % 360.0,
        hpbw_e_deg=metrics.half_power_beamwidth_deg(angle, e_db),
        hpbw_h_deg=metrics.half_power_beamwidth_deg(angle, h_db),
        front_to_back_db=min(fb, -metrics.FLOOR_DB) + 0.0,
        first_sidelobe_db=max(sll) if sll else float("nan"),
        azimuth_ripple_db=ripple,
    )
    return PatternResult(
        kind=kind,
        freq_hz=float(freq_hz),
        theta_deg=np.rad2deg(theta),
        phi_deg=np.rad2deg(phi),
        gain_dbi=metrics.to_db(grid, u_max) + d_dbi,
        e_plane=e_name,
        e_angle_deg=angle,
        e_db=e_db,
        h_plane=h_name,
        h_angle_deg=angle,
        h_db=h_db,
        metrics=m,
        segments=tuple(getattr(fn, "segments", ())),
    )


def _peak(grid, theta, phi, cuts) -> tuple[float, float, float]:
    """The pattern's maximum U and a direction (θ, φ in rad) of it: the best of the grid and the cuts."""
    candidates = [(float(grid.max()), *np.unravel_index(int(np.argmax(grid)), grid.shape), None)]
    for name, (th_c, ph_c, p) in cuts.items():
        i = int(np.argmax(p))
        candidates.append((float(p[i]), th_c[i], ph_c[i], name))
    u_max, a, b, src = max(candidates, key=lambda c: c[0])
    th_pk, ph_pk = (float(theta[a]), float(phi[b])) if src is None else (float(a), float(b))
    if th_pk < 1e-9 or th_pk > np.pi - 1e-9:
        ph_pk = 0.0  # on the axis, phi is arbitrary
    return u_max, th_pk, ph_pk
