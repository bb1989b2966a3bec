"""Airframe geometry and shadowing against closed-form geometry.

Sources of the reference values (all exact geometry, no data):
  * tangent plane of a convex surface: every direction below it enters the body at once, every
    direction above it leaves a convex body (geometry of convex sets, no source needed);
  * lune between two great circles of dihedral angle a: solid angle 2a (spherical geometry, e.g.
    Weisstein, "Spherical Lune", MathWorld, from memory);
  * rectangle a x b seen on its axis from distance h: Omega = 4 arcsin(a b / sqrt((a^2 + 4h^2)(b^2 + 4h^2)))
    (solid angle of a rectangular pyramid; from memory, checked here against a brute-force sum);
  * disc of radius R on axis at distance h: Omega = 2 pi (1 - h / sqrt(h^2 + R^2)) (spherical cap).
Grid tolerance: a step of s degrees misclassifies only cells cut by the shadow's edge; at s = 0.5 deg
the edge band of the plates used here is under 1 % of their solid angle, the tolerance used below.
"""
import math

import numpy as np
import pytest
import yaml

from registry.physics.airframe_outline import shape_from_outline
from registry.physics.airframe_shape import fuselage, locate_on_skin, on_skin, plate, slab, surface_normal
from registry.physics.shadowing import (blocked_solid_angle_sr, body_directions, cell_solid_angle_sr,
                                        coverage_percent, earth_directions, ground_region, horizon_region,
                                        shadow_grid, sky_region, worst_blocked_sector)

CYL = fuselage([0.0, 50.0], [2.0, 2.0], [1.5, 1.5], [1.5, 1.5], 1.0)  # our own: a 50 m long, 3 m cylinder


def _fleet(name):
    with open(f"fleet_data/airframes/{name}.yaml") as fh:
        return yaml.safe_load(fh)


def test_cell_solid_angles_tile_the_sphere():
    g = shadow_grid(CYL, (25.0, 0.0, 3.5), 1.0, step_deg=2.0)
    assert math.isclose(cell_solid_angle_sr(g).sum(), 4 * math.pi, rel_tol=1e-12)


@pytest.mark.parametrize("bank_deg, pitch_deg", [(0.0, 0.0), (25.0, 0.0), (0.0, -12.0), (30.0, 8.0)])
def test_top_of_cylinder_blocks_exactly_below_tangent_plane(bank_deg, pitch_deg):
    g = shadow_grid(CYL, (25.0, 0.0, 3.5), 1.0, step_deg=2.0, bank_deg=bank_deg, pitch_deg=pitch_deg)
    up_body = body_directions(earth_directions(g.az_deg, g.el_deg), bank_deg, pitch_deg)[..., 2]
    assert np.array_equal(g.blocked, up_body < -1e-12)
    if bank_deg == pitch_deg == 0:
        assert np.array_equal(g.blocked, np.broadcast_to((g.el_deg < 0)[:, None], g.blocked.shape))


def test_side_of_cylinder_blocks_the_other_half():
    g = shadow_grid(CYL, (20.0, 1.5, 2.0), 1.0, step_deg=2.0)
    right = earth_directions(g.az_deg, g.el_deg)[..., 1]
    assert np.array_equal(g.blocked, right < -1e-12)
    assert worst_blocked_sector(g, horizon_region(g, 10.0)) == (182.0, 358.0, 178.0)


def test_banked_sky_coverage_is_the_lune():
    bank = 30.0
    g = shadow_grid(CYL, (25.0, 0.0, 3.5), 1.0, step_deg=0.5, bank_deg=bank)
    hemisphere = 2 * math.pi
    lune = 2 * math.radians(bank)
    assert coverage_percent(g, sky_region(g, 0.25)) == pytest.approx(100 * (1 - lune / hemisphere), abs=0.5)


def test_plate_overhead_blocks_its_solid_angle_rectangle():
    a, b, h = 4.0, 2.5, 1.5  # our own sizes, metres
    roof = plate("roof", [(-a / 2, -b / 2, h), (a / 2, -b / 2, h), (a / 2, b / 2, h), (-a / 2, b / 2, h)], 1.0)
    shape = fuselage([100.0, 101.0], [0.0, 0.0], [0.1, 0.1], [0.1, 0.1], 1.0, plates=[roof])
    g = shadow_grid(shape, (0.0, 0.0, 0.0), 1.0, step_deg=0.5)
    expected = 4 * math.asin(a * b / math.sqrt((a**2 + 4 * h**2) * (b**2 + 4 * h**2)))
    assert blocked_solid_angle_sr(g) == pytest.approx(expected, rel=0.01)


def test_disc_ahead_blocks_its_cap():
    radius, h = 1.2, 2.0
    ang = np.linspace(0, 2 * np.pi, 257)[:-1]
    disc = plate("disc", np.stack([np.full(ang.size, -h), radius * np.cos(ang), 3 + radius * np.sin(ang)], 1), 1.0)
    shape = fuselage([100.0, 101.0], [0.0, 0.0], [0.1, 0.1], [0.1, 0.1], 1.0, plates=[disc])
    g = shadow_grid(shape, (0.0, 0.0, 3.0), 1.0, step_deg=0.5)
    expected = 2 * math.pi * (1 - h / math.hypot(h, radius))
    assert blocked_solid_angle_sr(g) == pytest.approx(expected, rel=0.01)
    # the shadow is centred on the nose direction
    assert g.blocked[np.searchsorted(g.el_deg, 0.0), 0]
    assert not g.blocked[np.searchsorted(g.el_deg, 0.0), 360]


def test_skin_points_and_normals_on_an_ellipse():
    body = fuselage([0.0, 400.0], [100.0, 100.0], [50.0, 50.0], [60.0, 60.0], 0.0254)
    assert on_skin(body, (200.0, 0.0, 160.0), 0.0254, tolerance_m=1e-6)
    assert not on_skin(body, (200.0, 0.0, 161.0), 0.0254, tolerance_m=0.01)
    assert np.allclose(surface_normal(body, (200.0, 0.0, 160.0), 0.0254), [0, 0, 1])
    # ellipse y^2/w^2 + z^2/h^2 = 1: normal along (y/w^2, z/h^2)
    t = 0.7
    y, z = 50 * math.cos(t), 60 * math.sin(t)
    n = surface_normal(body, (100.0, y, 100.0 + z), 0.0254)
    ref = np.array([0.0, y / 50**2, z / 60**2])
    assert np.allclose(n, ref / np.linalg.norm(ref))
    with pytest.raises(ValueError):
        surface_normal(body, (500.0, 0.0, 160.0), 0.0254)


def test_cone_normal_leans_with_the_taper():
    cone = fuselage([0.0, 10.0], [0.0, 0.0], [1.0, 0.0001], [1.0, 0.0001], 1.0)
    n = surface_normal(cone, (5.0, 0.0, 0.50005), 1.0)
    half_angle = math.atan((1.0 - 0.0001) / 10)  # radius falls by 1 over 10: normal tilts aft by that angle
    assert n[0] == pytest.approx(math.sin(half_angle), rel=1e-6)
    assert n[2] == pytest.approx(math.cos(half_angle), rel=1e-6)


def test_slab_faces_close_the_fin():
    fin = slab("fin", [(0, 0, 0), (4, 0, 0), (5, 0, 3), (2, 0, 3)], 0.4, 1.0)
    assert len(fin) == 6
    centre = np.array([2.75, 0.0, 1.5])
    for face in fin:  # every normal points away from the slab's middle
        assert (face.vertices_m.mean(axis=0) - centre) @ face.normal > 0


@pytest.mark.parametrize("name, scale_m", [("tc-44", 0.0254), ("tj-88", 0.001)])
def test_fleet_outlines_give_a_shape(name, scale_m):
    data = _fleet(name)
    shape = shape_from_outline(data["fuselage"], scale_m, data.get("wing"), data.get("fin"))
    fus = data["fuselage"]
    assert shape.from_outline and any("outline" in a for a in shape.assumptions)
    mid = (fus["nose_sta"] + fus["tail_sta"]) / 2
    crown = (mid, 0.0, fus["centreline_wl"] + fus["height"] / 2)
    belly = (mid, 0.0, fus["centreline_wl"] - fus["height"] / 2)
    assert np.allclose(surface_normal(shape, crown, scale_m), [0, 0, 1])
    assert np.allclose(surface_normal(shape, belly, scale_m), [0, 0, -1])
    top = shadow_grid(shape, crown, scale_m)
    bottom = shadow_grid(shape, belly, scale_m)
    assert coverage_percent(top, sky_region(top, 5.0)) > 95.0  # only the fin can shade a crown antenna
    assert coverage_percent(top, ground_region(top, -2.0)) == 0.0
    assert coverage_percent(bottom, ground_region(bottom, -2.0)) > 95.0
    assert coverage_percent(bottom, sky_region(bottom, 2.0)) == 0.0


def test_fin_shades_a_crown_antenna_straight_aft_only():
    data = _fleet("tc-44")
    shape = shape_from_outline(data["fuselage"], 0.0254, data["wing"], data["fin"])
    g = shadow_grid(shape, (450.0, 0.0, 156.0), 0.0254, step_deg=1.0)
    hit = locate_on_skin(shape, (450.0, 0.0, 156.0), 0.0254)
    assert hit is not None and hit.part == "fuselage"
    low_aft = g.blocked[(g.el_deg > 0) & (g.el_deg < 10)][:, 180]
    assert low_aft.all()  # straight aft, just above the crown: the fin
    assert not g.blocked[(g.el_deg > 0)][:, 150].any()  # 30 deg off the tail: clear


def test_a_single_line_of_sight_enters_the_fuselage_exactly_when_the_ray_fan_says_so():
    """`fuselage_blocks` takes one ray (a line of sight, `segment_clear`) over every segment at once and a
    fan of rays segment by segment; the two must agree ray for ray, whichever the ray: from inside the
    fuselage's stations or beyond them, across the axis (dx = 0) or along it, cut short or not. Reference:
    the same geometry through the fan's path (consistency, no outside source); the fan's own results are
    checked against closed-form solid angles above."""
    from registry.physics.shadowing import fuselage_blocks
    data = _fleet("tc-44")  # a tapered fuselage from the demo outline: segments of every slope
    shape = shape_from_outline(data["fuselage"], 0.0254, data["wing"], data["fin"])
    rng = np.random.default_rng(7)
    low, high = shape.sta_m[0], shape.sta_m[-1]
    points = np.column_stack([rng.uniform(low - 2, high + 2, 400), rng.uniform(-3, 3, 400), rng.uniform(-1, 4, 400)])
    rays = rng.normal(size=(400, 3))
    rays[::9, 0] = 0.0  # across the axis: no station range to intersect
    rays /= np.linalg.norm(rays, axis=1)[:, None]
    entered = 0
    for n, (p, d) in enumerate(zip(points, rays)):
        t_max = None if n % 3 == 0 else 0.5 + n / 20
        fan = fuselage_blocks(shape, p, np.vstack([d, -d]), 1e-9, t_max)[0]
        assert fuselage_blocks(shape, p, d[None, :], 1e-9, t_max)[0] == fan
        entered += bool(fan)
    assert 20 < entered < 380  # both answers occur


def test_a_skin_point_is_located_once_per_shape_and_point_and_the_answer_cannot_be_changed():
    """The remembered answer (a point given as a tuple) is the one worked out afresh (the same point given
    as an array, which is never remembered); its arrays are read-only, so no caller can change what the
    next caller gets, and surface_normal hands out a copy of its own. Ellipse geometry as above."""
    body = fuselage([0.0, 400.0], [100.0, 100.0], [50.0, 50.0], [60.0, 60.0], 0.0254)
    t = 0.7
    point = (100.0, 50 * math.cos(t), 100.0 + 60 * math.sin(t))
    first, again = locate_on_skin(body, point, 0.0254), locate_on_skin(body, point, 0.0254)
    fresh = locate_on_skin(body, np.array(point), 0.0254)
    assert again is first and fresh is not first
    assert first.part == fresh.part and first.distance_m == fresh.distance_m
    assert np.array_equal(first.normal, fresh.normal) and np.array_equal(first.on_skin_m, fresh.on_skin_m)
    with pytest.raises(ValueError):
        first.normal[0] = 1.0
    normal = surface_normal(body, point, 0.0254)
    normal *= -1.0  # the caller's own copy
    assert np.allclose(surface_normal(body, point, 0.0254), first.normal)
    other = fuselage([0.0, 400.0], [100.0, 100.0], [50.0, 50.0], [60.0, 60.0], 0.0254)  # equal, not the same
    assert locate_on_skin(other, point, 0.0254) is not first


def test_points_in_a_concave_polygon_against_the_closed_form_region():
    """Even-odd test, every edge at once, on an L-shaped hexagon: the square [0, 2] x [0, 2] without its
    corner (1, 2] x (1, 2] (exact geometry, no source needed); points off the edges by at least 1e-6,
    given as (N, 2), as a (5, N/5, 2) block and one at a time."""
    from registry.physics.airframe_shape import inside_polygon
    poly = np.array([[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [1.0, 1.0], [1.0, 2.0], [0.0, 2.0]])
    rng = np.random.default_rng(7)
    pts = rng.uniform(-0.5, 2.5, size=(2000, 2))
    x, y = pts[:, 0], pts[:, 1]
    near_edge = np.min(np.abs(np.stack([x, x - 1, x - 2, y, y - 1, y - 2])), axis=0) < 1e-6
    pts, x, y = pts[~near_edge], x[~near_edge], y[~near_edge]
    pts, x, y = pts[:1995], x[:1995], y[:1995]
    expected = (x > 0) & (x < 2) & (y > 0) & (y < 2) & ~((x > 1) & (y > 1))
    assert expected.sum() > 500 and (~expected).sum() > 500
    assert np.array_equal(inside_polygon(pts, poly), expected)
    assert np.array_equal(inside_polygon(pts.reshape(5, -1, 2), poly).ravel(), expected)
    assert [bool(inside_polygon(p, poly)) for p in pts[:40]] == list(expected[:40])


def test_a_polygon_padded_with_its_first_vertex_and_one_polygon_per_point_give_the_same_answers():
    """`inside_polygon` with a polygon per point (..., n, 2), as `plates_block` calls it for faces of
    fewer vertices than the most: padding with the first vertex adds edges of no length, which no point
    crosses. Reference: the L-shaped hexagon's closed-form region (exact geometry, no source needed)."""
    from registry.physics.airframe_shape import inside_polygon
    poly = np.array([[0.0, 0.0], [2.0, 0.0], [2.0, 1.0], [1.0, 1.0], [1.0, 2.0], [0.0, 2.0]])
    padded = np.vstack([poly, poly[:1], poly[:1]])
    rng = np.random.default_rng(11)
    pts = rng.uniform(-0.5, 2.5, size=(3000, 2))
    x, y = pts[:, 0], pts[:, 1]
    keep = np.min(np.abs(np.stack([x, x - 1, x - 2, y, y - 1, y - 2])), axis=0) > 1e-6
    pts, x, y = pts[keep], x[keep], y[keep]
    expected = (x > 0) & (x < 2) & (y > 0) & (y < 2) & ~((x > 1) & (y > 1))
    assert np.array_equal(inside_polygon(pts, padded), expected)
    each = np.where(np.arange(len(pts))[:, None, None] % 2 == 0, padded[None, :, :], np.vstack([poly, poly[:2]])[None])
    assert np.array_equal(inside_polygon(pts, each), expected)


@pytest.mark.parametrize("name, scale_m", [("tc-44", 0.0254), ("tj-88", 0.001)])
def test_rays_against_every_face_at_once_agree_with_each_face_s_half_plane_test(name, scale_m):
    """`plates_block` (bounding cones, then every (ray, face) pair at once, even-odd test) against a plain
    loop over the faces: the plane crossing t = ((o − p)·n)/(d·n) and, for a convex face, the crossing
    point on the inner side of every edge ((b − a) × (x − a)·n ≥ 0 counter-clockwise about n), a
    different test of the same region (exact geometry, no source needed). Random points about the demo
    airframes' wing and fin and random rays, cut short or not."""
    from registry.physics.shadowing import plates_block
    data = _fleet(name)
    shape = shape_from_outline(data["fuselage"], scale_m, data["wing"], data["fin"])
    assert len(shape.plates) > 10 and len({len(f.vertices_m) for f in shape.plates}) > 1  # quads and more
    rng = np.random.default_rng(5)
    low, high = shape.sta_m[0], shape.sta_m[-1]
    span = max(abs(float(v)) for f in shape.plates for v in f.vertices_m[:, 1])
    hits = 0
    for n in range(120):
        p = np.array([rng.uniform(low, high), rng.uniform(-span, span), rng.uniform(-2.0, 6.0)])
        d = rng.normal(size=(300, 3))
        d /= np.linalg.norm(d, axis=1)[:, None]
        t_max = None if n % 2 else rng.uniform(1.0, 20.0)
        expected = np.zeros(len(d), dtype=bool)
        for face in shape.plates:
            v, normal = face.vertices_m, face.normal
            edges = np.roll(v, -1, axis=0) - v
            assert all(np.cross(edges[k], edges[(k + 1) % len(v)]) @ normal > -1e-12 for k in range(len(v)))  # convex
            denom = d @ normal
            with np.errstate(divide="ignore", invalid="ignore"):
                t = ((v[0] - p) @ normal) / denom
            x = p + t[:, None] * d
            inner = np.all([np.cross(edges[k], x - v[k]) @ normal > 0 for k in range(len(v))], axis=0)
            expected |= (np.abs(denom) > 1e-12) & (t > 1e-9) & (t < (np.inf if t_max is None else t_max)) & inner
        assert np.array_equal(plates_block(shape, p, d, 1e-9, t_max), expected)
        hits += int(expected.sum())
    assert hits > 500  # rays that cross a face occur
