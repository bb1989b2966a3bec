"""The airframe in three dimensions: a lofted fuselage and flat surfaces (wings, fin, tailplane).

Axes and units. Body axes x = STA (aft), y = BL (right, looking forward), z = WL (up): a right-handed
frame. Every array here is in metres; inputs in the airframe's own unit (inches, millimetres) are
multiplied by `scale_m` (0.0254 for inches, 0.001 for millimetres) on the way in.

Fuselage model. Cross sections at stations x_i, each an ellipse centred on (BL 0, WL c_i) with
half-width w_i and half-height h_i. Between two sections the skin is an elliptic-cone frustum: the
centre WL and the half-width vary linearly with STA and the half-height is the half-width times the
segment's aspect ratio q = (h_i + h_{i+1}) / (w_i + w_{i+1}). A point is inside when
F = (y / w(x))^2 + ((z - c(x)) / (q w(x)))^2 - 1 < 0 (geometry of quadrics, no source needed). With
one aspect ratio along the whole fuselage (circular sections, or the constant ellipse derived from an
outline) the frustums reproduce the given sections exactly; sections of varying aspect are followed to
within the change of aspect between neighbours.

Flat surfaces. A plate is a planar polygon (zero thickness). A slab is a plate given a thickness t:
its two faces at +-t/2 from the mid-plane plus the strips that close its edges, so that a ray grazing
the mid-plane is still stopped (an antenna on the crown sees a fin of zero thickness edge-on).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property
from typing import NamedTuple

import numpy as np

from registry.core.memo import ByIdentity, read_only

#: half-width of the fore-body and tail-cone tips relative to the maximum, for outlines (assumed)
TIP_FRACTION = 0.12


@dataclass(frozen=True)
class Plate:
    """One planar polygon face; vertices_m (n, 3) in (STA, BL, WL) metres, counter-clockwise about
    normal (the face's outward unit normal); group: the slab (or plate) the face belongs to."""

    name: str
    vertices_m: np.ndarray
    normal: np.ndarray
    group: str = ""

    @cached_property
    def box_m(self) -> tuple[tuple[float, ...], tuple[float, ...]]:
        """The face's bounding box: its lowest and its highest (STA, BL, WL), metres; worked out once."""
        return tuple(map(float, self.vertices_m.min(axis=0))), tuple(map(float, self.vertices_m.max(axis=0)))

    @cached_property
    def sphere_m(self) -> tuple[np.ndarray, float]:
        """The face's bounding sphere about its vertices' mean: centre (m) and radius (m); worked out once."""
        return bounding_sphere(self.vertices_m)

    @cached_property
    def frame_m(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The face's in-plane axes (u, v, see `plane_basis`) and its polygon in them (n, 2), metres from
        its first vertex; worked out once."""
        u, v = plane_basis(self)
        return u, v, (self.vertices_m - self.vertices_m[0]) @ np.stack([u, v], axis=1)

    def near(self, point_m: tuple[float, ...], margin_m: float) -> bool:
        """True when a point (metres) lies in the bounding box grown by margin_m on every side."""
        low, high = self.box_m
        return all(lo - margin_m <= c <= hi + margin_m for lo, c, hi in zip(low, point_m, high))


class Faces(NamedTuple):
    """A shape's F faces as arrays (metres): each face's outward unit normal, first vertex (its origin)
    and in-plane axes u, v (F, 3); its polygon in (u, v) from the origin (F, n, 2; a face of fewer than
    n vertices padded with its first vertex, edges of no length that no ray crosses); its bounding
    sphere (centres (F, 3), radii (F,)); the index of its slab (F,), and each slab's bounding sphere
    (centres (G, 3), radii (G,))."""

    normal: np.ndarray
    origin: np.ndarray
    u: np.ndarray
    v: np.ndarray
    poly: np.ndarray
    centre: np.ndarray
    radius: np.ndarray
    group: np.ndarray
    group_centre: np.ndarray
    group_radius: np.ndarray


@dataclass(frozen=True)
class AirframeShape:
    """Fuselage sections (metres, all (K,)) and flat faces. `from_outline` says the sections were
    derived from a coarse outline; `assumptions` lists, in words, what the derivation had to assume."""

    sta_m: np.ndarray
    centre_wl_m: np.ndarray
    half_width_m: np.ndarray
    half_height_m: np.ndarray
    plates: tuple[Plate, ...] = ()
    from_outline: bool = False
    assumptions: tuple[str, ...] = ()

    @cached_property
    def faces(self) -> Faces:
        """Every face as arrays, for testing many rays against all of them at once (`Faces`); worked out
        once per shape."""
        groups: dict[str, list[int]] = {}
        for k, plate in enumerate(self.plates):
            groups.setdefault(plate.group or plate.name, []).append(k)
        group_of = np.zeros(len(self.plates), dtype=np.intp)
        spheres = []
        for g, members in enumerate(groups.values()):
            group_of[members] = g
            spheres.append(bounding_sphere(np.concatenate([self.plates[k].vertices_m for k in members])))
        most = max((len(plate.vertices_m) for plate in self.plates), default=3)
        polys = np.zeros((len(self.plates), most, 2))
        for k, plate in enumerate(self.plates):
            poly = plate.frame_m[2]
            polys[k, :len(poly)], polys[k, len(poly):] = poly, poly[0]  # padded with edges of no length

        def rows(values, width: int | None = 3) -> np.ndarray:
            array = np.array(values, dtype=float)
            return read_only(array.reshape(-1, width) if width else array.reshape(-1))

        return Faces(normal=rows([pl.normal for pl in self.plates]),
                     origin=rows([pl.vertices_m[0] for pl in self.plates]),
                     u=rows([pl.frame_m[0] for pl in self.plates]), v=rows([pl.frame_m[1] for pl in self.plates]),
                     poly=read_only(polys), centre=rows([pl.sphere_m[0] for pl in self.plates]),
                     radius=rows([pl.sphere_m[1] for pl in self.plates], None), group=read_only(group_of),
                     group_centre=rows([s[0] for s in spheres]), group_radius=rows([s[1] for s in spheres], None))

    @cached_property
    def segments(self) -> tuple[np.ndarray, ...]:
        """`segment_coefficients`: per segment (K-1,), x0, x1, w0, dw/dx, c0, dc/dx, aspect q."""
        x, c, w, h = self.sta_m, self.centre_wl_m, self.half_width_m, self.half_height_m
        dx = np.diff(x)
        found = (x[:-1], x[1:], w[:-1], np.diff(w) / dx, c[:-1], np.diff(c) / dx, (h[:-1] + h[1:]) / (w[:-1] + w[1:]))
        return tuple(read_only(np.array(part)) for part in found)


def bounding_sphere(vertices_m: np.ndarray) -> tuple[np.ndarray, float]:
    """A sphere holding every vertex (n, 3): centred on their mean, radius to the farthest, widened by
    1e-9 of itself so that rounding never leaves a vertex outside."""
    centre = vertices_m.mean(axis=0)
    return centre, math.sqrt(float(((vertices_m - centre) ** 2).sum(axis=1).max())) * (1 + 1e-9)


@dataclass(frozen=True)
class SkinPoint:
    """Where a point sits on the skin: part ('fuselage' or a plate's name), distance from the skin (m),
    outward unit normal (STA, BL, WL components) and the point moved onto the skin (m)."""

    part: str
    distance_m: float
    normal: np.ndarray
    on_skin_m: np.ndarray


def fuselage(sta, centre_wl, half_width, half_height, scale_m: float, plates=(),
             from_outline: bool = False, assumptions=()) -> AirframeShape:
    """AirframeShape from cross sections given in the airframe's unit (times scale_m gives metres).

    Stations must increase; half-widths and half-heights must be >= 0 and not both zero in a segment.
    """
    arrays = [np.asarray(a, dtype=float) * scale_m for a in (sta, centre_wl, half_width, half_height)]
    x, c, w, h = arrays
    if x.ndim != 1 or x.size < 2 or any(a.shape != x.shape for a in arrays):
        raise ValueError("fuselage needs at least two sections, one value of each field per section")
    if np.any(np.diff(x) <= 0):
        raise ValueError("fuselage stations must increase")
    if np.any(w < 0) or np.any(h < 0) or np.any((w[:-1] + w[1:]) <= 0):
        raise ValueError("fuselage half-widths and half-heights must be >= 0, no segment of zero width")
    return AirframeShape(x, c, w, h, tuple(plates), from_outline, tuple(assumptions))


def plate(name: str, vertices, scale_m: float) -> Plate:
    """A planar polygon face from (STA, BL, WL) vertices in the airframe's unit.

    The normal follows the right-hand rule on the vertex order (Newell's method). Raises when the
    vertices are not coplanar to 1e-6 of the polygon's size.
    """
    v = np.asarray(vertices, dtype=float) * scale_m
    if v.ndim != 2 or v.shape[1] != 3 or v.shape[0] < 3:
        raise ValueError("a plate needs at least three (STA, BL, WL) vertices")
    nxt = np.roll(v, -1, axis=0)
    n = np.array([np.sum((v[:, 1] - nxt[:, 1]) * (v[:, 2] + nxt[:, 2])),
                  np.sum((v[:, 2] - nxt[:, 2]) * (v[:, 0] + nxt[:, 0])),
                  np.sum((v[:, 0] - nxt[:, 0]) * (v[:, 1] + nxt[:, 1]))])
    norm = np.linalg.norm(n)
    size = np.ptp(v, axis=0).max()
    if norm <= 1e-12 * size**2:
        raise ValueError(f"plate '{name}' has no area")
    n = n / norm
    if np.max(np.abs((v - v[0]) @ n)) > 1e-6 * size:
        raise ValueError(f"plate '{name}' is not flat")
    return Plate(name, v, n, name)


def slab(name: str, vertices, thickness: float, scale_m: float) -> tuple[Plate, ...]:
    """The closed faces of a flat polygon (airframe unit) given a thickness (airframe unit).

    Faces: the polygon moved by +-thickness/2 along its normal, and one strip per edge; every face's
    normal points out of the slab. Face names are name + ' upper', ' lower', ' edge k'.
    """
    mid = plate(name, vertices, scale_m)
    if not thickness > 0:
        raise ValueError("a slab needs a positive thickness")
    off = mid.normal * thickness * scale_m / 2
    top, bot = mid.vertices_m + off, mid.vertices_m - off
    faces = [plate(f"{name} upper", top, 1.0), plate(f"{name} lower", bot[::-1], 1.0)]
    n = top.shape[0]
    for k in range(n):
        j = (k + 1) % n
        faces.append(plate(f"{name} edge {k}", [bot[k], bot[j], top[j], top[k]], 1.0))
    return tuple(Plate(f.name, f.vertices_m, f.normal, name) for f in faces)


def to_metres(point, scale_m: float) -> np.ndarray:
    """(STA, BL, WL) in the airframe's unit to metres."""
    p = np.asarray(point, dtype=float).reshape(-1)
    if p.size != 3:
        raise ValueError("a position is (STA, BL, WL)")
    return p * scale_m


def segment_coefficients(shape: AirframeShape):
    """Per segment (K-1,): x0, x1, w0, dw/dx, c0, dc/dx, aspect q (see the module docstring); worked out
    once per shape (`AirframeShape.segments`), read-only."""
    return shape.segments


def fuselage_at(shape: AirframeShape, x_m: float):
    """(half_width, dw/dx, centre_wl, dc/dx, aspect) of the fuselage at station x_m, or None outside."""
    x = shape.sta_m
    if x_m < x[0] or x_m > x[-1]:
        return None
    i = int(min(np.searchsorted(x, x_m, side="right") - 1, x.size - 2))
    x0, _, w0, dw, c0, dc, q = (a[i] for a in segment_coefficients(shape))
    return (w0 + dw * (x_m - x0), dw, c0 + dc * (x_m - x0), dc, q)


def _fuselage_skin(shape: AirframeShape, p: np.ndarray) -> SkinPoint | None:
    """Radial projection onto the fuselage section at the point's station, with the gradient normal
    of F = (y/w)^2 + ((z - c)/(q w))^2 - 1."""
    local = fuselage_at(shape, float(p[0]))
    if local is None:
        return None
    w, dw, c, dc, q = local
    y, dz = float(p[1]), float(p[2]) - c
    rho = math.hypot(y / max(w, 1e-300), dz / max(q * w, 1e-300)) if w > 0 else math.inf
    if rho == 0 or not math.isfinite(rho):
        return None
    on = np.array([p[0], y / rho, c + dz / rho])
    grad = np.array([-2 * (on[1] ** 2 + (on[2] - c) ** 2 / q**2) * dw / w**3 - 2 * (on[2] - c) * dc / (q * w) ** 2,
                     2 * on[1] / w**2, 2 * (on[2] - c) / (q * w) ** 2])
    return SkinPoint("fuselage", float(np.linalg.norm(p - on)), grad / np.linalg.norm(grad), on)


def inside_polygon(points_2d: np.ndarray, poly_2d: np.ndarray) -> np.ndarray:
    """Even-odd (crossing number) test of points (..., 2) against a polygon (n, 2), or each point against
    its own polygon (..., n, 2); boolean (...).

    Every edge k (a = vertex k, b = vertex k + 1) at once: a point is inside when an odd number of edges
    satisfy (y_a > y) != (y_b > y) and x < x_a + (y − y_a)(x_b − x_a)/(y_b − y_a)."""
    px, py = np.asarray(points_2d[..., 0])[..., None], np.asarray(points_2d[..., 1])[..., None]
    xa, ya = poly_2d[..., 0], poly_2d[..., 1]
    xb, yb = np.roll(xa, -1, axis=-1), np.roll(ya, -1, axis=-1)
    crosses = (ya > py) != (yb > py)
    with np.errstate(divide="ignore", invalid="ignore"):
        x_cross = xa + (py - ya) * (xb - xa) / (yb - ya)
    return np.logical_xor.reduce(crosses & (px < x_cross), axis=-1)


def plane_basis(pl: Plate) -> tuple[np.ndarray, np.ndarray]:
    """Two orthonormal in-plane axes (u, v) of a plate, u along its first edge."""
    n = pl.normal
    u = pl.vertices_m[1] - pl.vertices_m[0]
    u = u - (u @ n) * n
    u = u / math.sqrt(float(u @ u))
    return u, np.array([n[1] * u[2] - n[2] * u[1], n[2] * u[0] - n[0] * u[2], n[0] * u[1] - n[1] * u[0]])


def _plate_skin(pl: Plate, p: np.ndarray) -> SkinPoint | None:
    u, v, poly = pl.frame_m
    rel = p - pl.vertices_m[0]
    if not inside_polygon(np.array([rel @ u, rel @ v]), poly):
        return None
    off = float(rel @ pl.normal)
    return SkinPoint(pl.name, abs(off), pl.normal.copy(), p - off * pl.normal)


def locate_on_skin(shape: AirframeShape, point, scale_m: float, tolerance_m: float = 0.01) -> SkinPoint | None:
    """The nearest part of the skin within tolerance_m of a (STA, BL, WL) point (airframe unit), or None.

    Fuselage distance: along the ray from the section centre (exact for circles, a close measure for
    ellipses); plate distance: perpendicular to the plane, the foot inside the polygon.

    Remembered per shape and point given as a tuple (`_LOCATED`): an antenna's point is located once for
    each of the other antennas it is paired with. The answer's arrays are read-only.
    """
    try:
        return _LOCATED.get((shape,), (point, scale_m, tolerance_m),
                            lambda: _read_only_hit(_locate_on_skin(shape, point, scale_m, tolerance_m)))
    except TypeError:  # a point given as an array: not remembered
        return _locate_on_skin(shape, point, scale_m, tolerance_m)


_LOCATED: ByIdentity[SkinPoint | None] = ByIdentity(limit=8_192)
"""Bounded: an aircraft's points are asked for during its own computation only."""


def _read_only_hit(hit: SkinPoint | None) -> SkinPoint | None:
    if hit is not None:
        read_only(hit.normal)
        read_only(hit.on_skin_m)
    return hit


def _locate_on_skin(shape: AirframeShape, point, scale_m: float, tolerance_m: float) -> SkinPoint | None:
    p = to_metres(point, scale_m)
    at = tuple(float(c) for c in p)  # a foot inside the polygon within tolerance implies p inside the box
    near = [pl for pl in shape.plates if pl.near(at, tolerance_m)]  # grown by the tolerance
    hits = [_fuselage_skin(shape, p)] + [_plate_skin(pl, p) for pl in near]
    hits = [h for h in hits if h is not None and h.distance_m <= tolerance_m]
    return min(hits, key=lambda h: h.distance_m) if hits else None


def on_skin(shape: AirframeShape, point, scale_m: float, tolerance_m: float = 0.01) -> bool:
    """True when a (STA, BL, WL) point (airframe unit) lies within tolerance_m (m) of the skin."""
    return locate_on_skin(shape, point, scale_m, tolerance_m) is not None


def surface_normal(shape: AirframeShape, point, scale_m: float, tolerance_m: float = 0.01) -> np.ndarray:
    """Outward unit normal (STA, BL, WL components) at a skin point; raises when the point is off the skin."""
    hit = locate_on_skin(shape, point, scale_m, tolerance_m)
    if hit is None:
        raise ValueError(f"point {tuple(point)} is not within {tolerance_m} m of the skin")
    return hit.normal.copy()
