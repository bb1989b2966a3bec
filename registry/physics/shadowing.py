"""Which directions the airframe blocks from an antenna point: a boolean azimuth/elevation grid.

Direction grid (earth-level frame, heading along the nose): azimuth from the nose, positive to the
right (starboard), 0..360 deg; elevation from the horizontal, positive up, -90..+90 deg, both in
steps of step_deg. The aircraft may be banked (right wing down positive) and pitched (nose up
positive): a direction d_e in the earth frame is seen in body axes as d_b = Rx(bank)^T Ry(pitch)^T d_e
(aerospace Euler angles, yaw 0, north-east-down axes: B. L. Stevens, F. L. Lewis, Aircraft Control and
Simulation, ch. 1, from memory; the tests check the rotation against closed-form lunes).

Blocking (geometric optics, no diffraction): a ray from the antenna point is blocked when it enters
the fuselage or crosses a face at a distance greater than zero, or when it points into the skin
(d . n < 0, below the local tangent plane). Fuselage segments are elliptic-cone frustums
(airframe_shape), so along a ray p + t d the inside function F(t) = y^2 + ((z - c)/q)^2 - w^2 is a
quadratic in t; the ray enters the segment when the minimum of that quadratic over the t-interval in
which x lies inside the segment is negative. Faces: ray-plane intersection then the even-odd polygon
test. All vectorised over the grid (numpy).

Summaries weight each grid cell by its exact solid angle
  Omega = d_az (sin(el + s/2) - sin(el - s/2)), the band clipped at +-90 deg,
which sums to 4 pi over the grid.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from registry.core.memo import read_only
from registry.physics.airframe_shape import (AirframeShape, inside_polygon, locate_on_skin, segment_coefficients,
                                             to_metres)


@dataclass(frozen=True)
class ShadowGrid:
    """blocked[e, a] is True when the direction (el_deg[e], az_deg[a]) is blocked; angles in degrees."""

    az_deg: np.ndarray
    el_deg: np.ndarray
    blocked: np.ndarray
    step_deg: float
    bank_deg: float
    pitch_deg: float


def direction_grid(step_deg: float = 2.0) -> tuple[np.ndarray, np.ndarray]:
    """(az_deg (A,), el_deg (E,)): azimuth 0..360-step, elevation -90..90, both in step_deg."""
    if not 0 < step_deg <= 30 or abs(90 / step_deg - round(90 / step_deg)) > 1e-9:
        raise ValueError("step_deg must divide 90 and be at most 30")
    n_az, n_el = int(round(360 / step_deg)), int(round(180 / step_deg)) + 1
    return np.arange(n_az) * step_deg, np.linspace(-90.0, 90.0, n_el)


def earth_directions(az_deg, el_deg) -> np.ndarray:
    """Unit vectors (E, A, 3) in the level frame (forward, right, up) for the grid."""
    az, el = np.radians(az_deg)[None, :], np.radians(el_deg)[:, None]
    return np.stack(np.broadcast_arrays(np.cos(el) * np.cos(az), np.cos(el) * np.sin(az), np.sin(el)), axis=-1)


def body_directions(dirs_fru: np.ndarray, bank_deg: float = 0.0, pitch_deg: float = 0.0) -> np.ndarray:
    """Level-frame (forward, right, up) directions to body axes (STA, BL, WL) for a bank and a pitch.

    In north-east-down axes d_body = Rx(phi)^T Ry(theta)^T d_earth, Ry(theta) = [[c, 0, s], [0, 1, 0],
    [-s, 0, c]], Rx(phi) = [[1, 0, 0], [0, c, -s], [0, s, c]]; then STA = -forward, BL = right, WL = up.
    """
    th, ph = np.radians(pitch_deg), np.radians(bank_deg)
    ry = np.array([[np.cos(th), 0, np.sin(th)], [0, 1, 0], [-np.sin(th), 0, np.cos(th)]])
    rx = np.array([[1, 0, 0], [0, np.cos(ph), -np.sin(ph)], [0, np.sin(ph), np.cos(ph)]])
    ned = dirs_fru * np.array([1.0, 1.0, -1.0])
    body_ned = ned @ (ry @ rx)  # row vectors: d^T (Ry Rx) = (Rx^T Ry^T d)^T
    return body_ned * np.array([-1.0, 1.0, -1.0])


@lru_cache(maxsize=32)
def _grid_body_directions(step_deg: float, bank_deg: float, pitch_deg: float) -> np.ndarray:
    """(E * A, 3) body-axis directions of the grid for one attitude (cached, read-only)."""
    az, el = direction_grid(step_deg)
    return read_only(body_directions(earth_directions(az, el), bank_deg, pitch_deg).reshape(-1, 3))


def fuselage_blocks(shape: AirframeShape, p: np.ndarray, d: np.ndarray, t_min: float, t_max=None) -> np.ndarray:
    """Boolean (N,): the rays p + t d (t_min < t < t_max, d (N, 3) unit) enter the fuselage.

    Per segment: F(t) = A t^2 + B t + C with, at the point's station extrapolated linearly,
    A = dy^2 + ((dz - c' dx)/q)^2 - (w' dx)^2, B = 2 (y dy + (z - c)(dz - c' dx)/q^2 - w w' dx),
    C = y^2 + ((z - c)/q)^2 - w^2; blocked when min F over [lo, hi] < -1e-9 w_max^2.
    """
    x0s, x1s, w0s, dws, c0s, dcs, qs = segment_coefficients(shape)
    tol = 1e-9 * float(np.max(shape.half_width_m)) ** 2
    big = 1e3 * (shape.sta_m[-1] - shape.sta_m[0]) + 1e3 * float(np.linalg.norm(p))
    big = big if t_max is None else float(t_max)
    if d.shape[0] == 1:  # one ray (a line of sight): every segment at once, the same arithmetic
        return np.array([_fuselage_hits(x0s, x1s, w0s, dws, c0s, dcs, qs, p, d[0], t_min, big, tol).any()])
    # every segment (rows) against every ray (columns) at once: the same operations element by element
    # as one segment at a time, so the same bits
    dx, dy, dz = d[:, 0], d[:, 1], d[:, 2]
    safe_dx = np.where(np.abs(dx) > 1e-12, dx, 1.0)
    x0, x1, w0, dw, c0, dc, q = (part[:, None] for part in (x0s, x1s, w0s, dws, c0s, dcs, qs))
    w_p, c_p = w0 + dw * (p[0] - x0), c0 + dc * (p[0] - x0)
    ez = dz - dc * dx
    a = dy**2 + (ez / q) ** 2 - (dw * dx) ** 2
    b = 2 * (p[1] * dy + (p[2] - c_p) * ez / q**2 - w_p * dw * dx)
    c = p[1] ** 2 + ((p[2] - c_p) / q) ** 2 - w_p**2
    ta, tb = (x0 - p[0]) / safe_dx, (x1 - p[0]) / safe_dx
    inside_x = (x0 <= p[0]) & (p[0] <= x1)
    lo = np.where(np.abs(dx) > 1e-12, np.minimum(ta, tb), np.where(inside_x, -big, big))
    hi = np.where(np.abs(dx) > 1e-12, np.maximum(ta, tb), np.where(inside_x, big, -big))
    lo, hi = np.maximum(lo, t_min), np.minimum(hi, big)
    ok = hi > lo
    f_lo, f_hi = (a * lo + b) * lo + c, (a * hi + b) * hi + c
    t_v = np.clip(-b / np.where(a > 0, 2 * a, 1.0), lo, hi)
    f_v = np.where(a > 0, (a * t_v + b) * t_v + c, np.inf)
    return (ok & (np.minimum(np.minimum(f_lo, f_hi), f_v) < -tol)).any(axis=0)


def _fuselage_hits(x0, x1, w0, dw, c0, dc, q, p: np.ndarray, d: np.ndarray, t_min: float, big: float,
                   tol: float) -> np.ndarray:
    """`fuselage_blocks` for one ray d (3,), over every segment at once (x0 ... q arrays (S,), from
    `segment_coefficients`): boolean (S,), the segments the ray enters. The same operations in the same
    order as the per-segment loop, so the same bits."""
    dx, dy, dz = d[0], d[1], d[2]
    w_p, c_p = w0 + dw * (p[0] - x0), c0 + dc * (p[0] - x0)
    ez = dz - dc * dx
    a = dy**2 + (ez / q) ** 2 - (dw * dx) ** 2
    b = 2 * (p[1] * dy + (p[2] - c_p) * ez / q**2 - w_p * dw * dx)
    c = p[1] ** 2 + ((p[2] - c_p) / q) ** 2 - w_p**2
    if abs(dx) > 1e-12:
        ta, tb = (x0 - p[0]) / dx, (x1 - p[0]) / dx
        lo, hi = np.minimum(ta, tb), np.maximum(ta, tb)
    else:
        inside_x = (x0 <= p[0]) & (p[0] <= x1)
        lo, hi = np.where(inside_x, -big, big), np.where(inside_x, big, -big)
    lo, hi = np.maximum(lo, t_min), np.minimum(hi, big)
    ok = hi > lo
    f_lo, f_hi = (a * lo + b) * lo + c, (a * hi + b) * hi + c
    t_v = np.clip(-b / np.where(a > 0, 2 * a, 1.0), lo, hi)
    f_v = np.where(a > 0, (a * t_v + b) * t_v + c, np.inf)
    return ok & (np.minimum(np.minimum(f_lo, f_hi), f_v) < -tol)


def _in_cones(centre: np.ndarray, radius: np.ndarray, p: np.ndarray, d: np.ndarray) -> np.ndarray:
    """Boolean (N, C): ray n from p lies inside the cone from p holding bounding sphere c (centres (C, 3),
    radii (C,)); a pre-filter that never drops a hit, every point of a convex hull lying inside its
    sphere: d . (c - p)/|c - p| >= sqrt(1 - (r/|c - p|)^2), and every ray when p is inside the sphere."""
    to_c = centre - p
    dist = np.sqrt(np.einsum("ij,ij->i", to_c, to_c))
    outside = dist > radius
    safe = np.where(outside, dist, 1.0)
    least = np.sqrt(np.clip(1 - (radius / safe) ** 2, 0.0, None)) - 1e-12
    return (d @ (to_c / safe[:, None]).T >= least) | ~outside


def plates_block(shape: AirframeShape, p: np.ndarray, d: np.ndarray, t_min: float, t_max=None) -> np.ndarray:
    """Boolean (N,): the rays p + t d (t_min < t < t_max) cross one of the shape's faces inside its polygon.

    Each ray is tried against the faces whose bounding sphere's cone, and its slab's, holds it; those
    (ray, face) pairs all at once: t = ((o − p)·n) / (d·n) for the face's plane (origin o, normal n), the
    point p + t d − o in the face's (u, v) axes, and the even-odd test against its polygon
    (`AirframeShape.faces`, worked out once per shape).
    """
    hit = np.zeros(d.shape[0], dtype=bool)
    faces = shape.faces
    if faces.normal.shape[0] == 0 or d.shape[0] == 0:
        return hit
    upper = np.inf if t_max is None else t_max
    near = _in_cones(faces.centre, faces.radius, p, d) & _in_cones(faces.group_centre, faces.group_radius, p,
                                                                   d)[:, faces.group]
    ray, face = np.nonzero(near)
    if ray.size == 0:
        return hit
    dd, normal, origin = d[ray], faces.normal[face], faces.origin[face]
    denom = np.einsum("ij,ij->i", dd, normal)
    t = np.einsum("ij,ij->i", origin - p, normal) / np.where(np.abs(denom) > 1e-12, denom, 1.0)
    cand = (np.abs(denom) > 1e-12) & (t > t_min) & (t < upper)
    rel = p + t[:, None] * dd - origin
    flat = np.stack([np.einsum("ij,ij->i", rel, faces.u[face]), np.einsum("ij,ij->i", rel, faces.v[face])], axis=-1)
    hit[ray[cand & inside_polygon(flat, faces.poly[face])]] = True
    return hit


def shadow_grid(shape: AirframeShape, point, scale_m: float, step_deg: float = 2.0, bank_deg: float = 0.0,
                pitch_deg: float = 0.0, tolerance_m: float = 0.01) -> ShadowGrid:
    """Blocked directions from a (STA, BL, WL) point (airframe unit) on the skin or off it.

    A point within tolerance_m of the skin is moved onto it and the half-space behind its tangent
    plane is blocked; a point off the skin (e.g. a test point behind a plate) is used as given.
    """
    az, el = direction_grid(step_deg)
    d = _grid_body_directions(float(step_deg), float(bank_deg), float(pitch_deg))
    hit_skin = locate_on_skin(shape, point, scale_m, tolerance_m)
    p = to_metres(point, scale_m) if hit_skin is None else hit_skin.on_skin_m
    size = max(float(np.ptp(shape.sta_m)), 1e-3)
    t_min = 1e-9 * size
    blocked = d @ hit_skin.normal < -1e-12 if hit_skin is not None else np.zeros(d.shape[0], dtype=bool)
    idx = np.flatnonzero(~blocked)
    blocked[idx] = fuselage_blocks(shape, p, d[idx], t_min)
    idx = idx[~blocked[idx]]
    blocked[idx] = plates_block(shape, p, d[idx], t_min)
    return ShadowGrid(az, el, blocked.reshape(el.size, az.size), step_deg, bank_deg, pitch_deg)


def cell_solid_angle_sr(grid: ShadowGrid) -> np.ndarray:
    """(E, A) solid angle of each grid cell (sr); the cells tile the sphere (sum 4 pi)."""
    s = np.radians(grid.step_deg)
    el = np.radians(grid.el_deg)
    band = np.sin(np.minimum(el + s / 2, np.pi / 2)) - np.sin(np.maximum(el - s / 2, -np.pi / 2))
    return np.broadcast_to((band * s)[:, None], grid.blocked.shape)


def sky_region(grid: ShadowGrid, min_elevation_deg: float) -> np.ndarray:
    """Region mask: elevation >= min_elevation_deg (e.g. a satellite receiver's elevation mask)."""
    return np.broadcast_to((grid.el_deg >= min_elevation_deg)[:, None], grid.blocked.shape)


def ground_region(grid: ShadowGrid, max_elevation_deg: float = 0.0) -> np.ndarray:
    """Region mask: elevation <= max_elevation_deg (the lower hemisphere by default)."""
    return np.broadcast_to((grid.el_deg <= max_elevation_deg)[:, None], grid.blocked.shape)


def horizon_region(grid: ShadowGrid, half_width_deg: float) -> np.ndarray:
    """Region mask: |elevation| <= half_width_deg, all round in azimuth (0: the horizon row alone)."""
    return np.broadcast_to((np.abs(grid.el_deg) <= half_width_deg + 1e-9)[:, None], grid.blocked.shape)


def coverage_percent(grid: ShadowGrid, region: np.ndarray) -> float:
    """Percentage (0..100) of the region's solid angle that is not blocked."""
    w = cell_solid_angle_sr(grid) * region
    total = float(w.sum())
    if total <= 0:
        raise ValueError("the region is empty on this grid")
    return 100.0 * float((w * ~grid.blocked).sum()) / total


def azimuth_seen_percent(grid: ShadowGrid, region: np.ndarray) -> float:
    """Percentage (0..100) of the azimuths in which at least one cell of the region is clear.

    For a band about the horizon: seen[a] = any over e of (region[e, a] and not blocked[e, a]); the share
    is sum(seen) / (number of azimuths that hold region cells), every azimuth cell weighing the same
    (they all span the same angle). An azimuth whose band is wholly behind the airframe is not seen.
    """
    holds = np.asarray(region).any(axis=0)
    if not holds.any():
        raise ValueError("the region is empty on this grid")
    seen = (np.asarray(region) & ~grid.blocked).any(axis=0)
    return 100.0 * float(seen[holds].sum()) / float(holds.sum())


def blocked_solid_angle_sr(grid: ShadowGrid, region=None) -> float:
    """Blocked solid angle (sr), within a region mask when given."""
    w = cell_solid_angle_sr(grid) if region is None else cell_solid_angle_sr(grid) * region
    return float((w * grid.blocked).sum())


def worst_blocked_sector(grid: ShadowGrid, region: np.ndarray, fraction: float = 0.5):
    """Widest run of azimuths (wrapping through 0) in which at least `fraction` of the region's solid
    angle is blocked: (start_az_deg, end_az_deg, width_deg), angles of the first and last cell centres
    and width = cells x step; None when no azimuth is that blocked."""
    w = cell_solid_angle_sr(grid) * region
    col = w.sum(axis=0)
    frac = np.where(col > 0, (w * grid.blocked).sum(axis=0) / np.where(col > 0, col, 1.0), 0.0)
    bad = frac >= fraction
    n = bad.size
    if not bad.any():
        return None
    if bad.all():
        return (float(grid.az_deg[0]), float(grid.az_deg[-1]), 360.0)
    start = int(np.flatnonzero(~bad)[0]) + 1  # begin scanning just after a clear cell
    best, run, run_start, best_start = 0, 0, 0, 0
    for k in range(n):
        i = (start + k) % n
        if bad[i]:
            run_start = i if run == 0 else run_start
            run += 1
            if run > best:
                best, best_start = run, run_start
        else:
            run = 0
    end = (best_start + best - 1) % n
    return (float(grid.az_deg[best_start]), float(grid.az_deg[end]), best * grid.step_deg)


def segment_clear(shape: AirframeShape, point_a, point_b, scale_m: float, tolerance_m: float = 0.01) -> bool:
    """True when the straight line between two points (airframe unit) crosses no part of the airframe.

    Points on the skin are moved onto it; the line must leave A above its tangent plane and reach B
    from above B's (the same geometric-optics test as shadow_grid, cut at the distance between them).
    """
    ends = []
    for pt in (point_a, point_b):
        hit = locate_on_skin(shape, pt, scale_m, tolerance_m)
        ends.append((to_metres(pt, scale_m) if hit is None else hit.on_skin_m, hit))
    (p, hit_a), (q, hit_b) = ends
    dist = float(np.linalg.norm(q - p))
    if dist == 0:
        raise ValueError("the two points coincide")
    d = ((q - p) / dist)[None, :]
    if (hit_a is not None and d[0] @ hit_a.normal < -1e-9) or (hit_b is not None and d[0] @ hit_b.normal > 1e-9):
        return False
    t_min, t_max = 1e-9 * dist, dist * (1 - 1e-9)
    return not (fuselage_blocks(shape, p, d, t_min, t_max)[0] or plates_block(shape, p, d, t_min, t_max)[0])
