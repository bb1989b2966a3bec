"""An AirframeShape from the coarse outline the airframe files hold today (airframe.schema.json).

Fields read (all in the airframe's coord_unit, which scale_m converts to metres):
  fuselage: nose_sta, tail_sta, width, height, centreline_wl
  wing (optional): root_le_sta, root_chord, span, sweep_deg
  fin (optional): root_le_sta, root_chord, height, sweep_deg
  tailplane (optional, added by `with_tailplane`): root_le_sta, root_chord, span, sweep_deg, wl
The outline does not give the nose and tail-cone shapes, the wing's waterline, taper and thickness, nor
the fin's and tailplane's taper and thickness. A file without a tailplane gets none (it is not guessed). What is assumed instead is returned in the shape's
`assumptions`, word for word, so a page can print it beside every figure that uses the shape; the
values are common practice for transport aircraft, no source, and each is an argument to override.
"""
from __future__ import annotations

import math

import numpy as np

import dataclasses

from registry.physics.airframe_shape import AirframeShape, TIP_FRACTION, fuselage, fuselage_at, slab

NO_TAILPLANE = "no tailplane: the airframe file gives none, so none is modelled (a tailplane would block part of the aft sky and horizon)"


def _get(obj, name: str) -> float:
    """A field of a mapping or of an object with attributes (the loaded model's dataclasses)."""
    value = obj[name] if isinstance(obj, dict) else getattr(obj, name)
    return float(value)


def outline_sections(nose_sta, tail_sta, width, height, centreline_wl, nose_length, tail_length, n_cap=6):
    """Section arrays (sta, centre_wl, half_width, half_height) of an outline fuselage (airframe unit).

    Nose: half-width w(s) = W sqrt(1 - (1 - s/L_n)^2) over the nose length L_n (an ellipsoidal fore
    body), floored at TIP_FRACTION W. Parallel body at the full ellipse. Tail cone over L_t: half-width
    falls linearly to TIP_FRACTION W while the crown line stays level (centre WL rises, the belly sweeps
    up). Aspect height/width is the same everywhere, so the frustums are exact.
    """
    half_w, aspect = width / 2, height / width
    s = np.linspace(0.0, 1.0, n_cap + 1)
    nose_x = nose_sta + nose_length * s
    nose_w = half_w * np.maximum(np.sqrt(1 - (1 - s) ** 2), TIP_FRACTION)
    tail_x = tail_sta - tail_length + tail_length * s
    tail_w = half_w * (1 - (1 - TIP_FRACTION) * s)
    x = np.concatenate([nose_x, tail_x])
    w = np.concatenate([nose_w, tail_w])
    crown = centreline_wl + height / 2
    c = np.where(x > tail_sta - tail_length, crown - aspect * w, centreline_wl)
    return x, c, w, aspect * w


def _wing_faces(wing, fus_half_width, wl, taper, thickness_ratio, scale_m):
    le, chord, span, sweep = (_get(wing, k) for k in ("root_le_sta", "root_chord", "span", "sweep_deg"))
    semi = span / 2 - fus_half_width
    tip_le = le + semi * math.tan(math.radians(sweep))
    faces = []
    for side, sign in (("right", 1.0), ("left", -1.0)):
        verts = [(le, sign * fus_half_width, wl), (tip_le, sign * span / 2, wl),
                 (tip_le + taper * chord, sign * span / 2, wl), (le + chord, sign * fus_half_width, wl)]
        faces += slab(f"wing_{side}", verts, thickness_ratio * chord, scale_m)
    return faces


def crown_wl(shape: AirframeShape, x: float) -> float:
    """WL (metres) of the fuselage's crown c + q w at station x (metres): the lower of the two segments'
    values at a section's station (so a surface standing on it leaves no gap), the end value beyond the ends."""
    ends = shape.sta_m
    values = []
    for probe in (x - 1e-9, x, x + 1e-9):
        local = fuselage_at(shape, float(min(max(probe, ends[0]), ends[-1])))
        w, _, c, _, q = local
        values.append(c + q * w)
    return min(values)


def with_fin(shape: AirframeShape, fin, scale_m: float, *, taper: float = 0.6, thickness_ratio: float = 0.12
             ) -> AirframeShape:
    """The shape with its fin (a slab in the plane BL 0) standing on the fuselage's crown: the root edge
    follows the crown line c(x) + q w(x) through every section station under it, the tip is `height`
    above the crown at the root's leading edge, swept by sweep_deg (airframe unit in, metres in the shape).
    Any fin already in the shape is replaced. None: the shape as it is."""
    if fin is None:
        return shape
    le, chord, height, sweep = (_get(fin, k) for k in ("root_le_sta", "root_chord", "height", "sweep_deg"))
    te = le + chord
    inner = [x / scale_m for x in shape.sta_m if le * scale_m < x < te * scale_m]
    root = [(x, 0.0, crown_wl(shape, x * scale_m) / scale_m) for x in [le, *inner, te]]
    tip_wl = root[0][2] + height
    tip_le = le + height * math.tan(math.radians(sweep))
    verts = root + [(tip_le + taper * chord, 0.0, tip_wl), (tip_le, 0.0, tip_wl)]
    faces = slab("fin", verts, thickness_ratio * chord, scale_m)
    note = (f"fin tip chord {taper:g} x root, thickness {thickness_ratio:g} x root chord, root on the fuselage's "
            "crown (assumed)")
    notes = tuple(a for a in shape.assumptions if not a.startswith("fin tip chord")) + (note,)
    return dataclasses.replace(shape, plates=tuple(p for p in shape.plates if p.group != "fin") + faces,
                               assumptions=notes)


def shape_from_outline(fus, scale_m: float, wing=None, fin=None, *, nose_diameters: float = 1.5,
                       tail_diameters: float = 3.0, wing_wl=None, wing_taper: float = 0.35,
                       fin_taper: float = 0.6, thickness_ratio: float = 0.12) -> AirframeShape:
    """AirframeShape (metres) from an outline; `from_outline` is True and `assumptions` lists the guesses.

    fus, wing, fin: mappings or objects with the schema's fields (airframe unit). nose_diameters and
    tail_diameters: nose and tail-cone lengths in fuselage widths; wing_wl: wing plane WL (default the
    fuselage centreline, a mid wing); wing_taper, fin_taper: tip chord / root chord; thickness_ratio:
    thickness / root chord of wing and fin slabs. No tailplane (see with_tailplane).
    """
    nose, tail = _get(fus, "nose_sta"), _get(fus, "tail_sta")
    width, height, cl = _get(fus, "width"), _get(fus, "height"), _get(fus, "centreline_wl")
    if not tail > nose:
        raise ValueError("fuselage tail_sta must be greater than nose_sta")
    nose_len = min(nose_diameters * width, 0.3 * (tail - nose))
    tail_len = min(tail_diameters * width, 0.4 * (tail - nose))
    x, c, w, h = outline_sections(nose, tail, width, height, cl, nose_len, tail_len)
    notes = [f"fuselage derived from an outline (length, width, height): nose over {nose_len:g}, tail cone over "
             f"{tail_len:g} (airframe unit), elliptical sections of constant aspect, crown line level over the "
             "tail cone (assumed, common practice, no source)",
             NO_TAILPLANE]
    faces = []
    if wing is not None:
        wl = cl if wing_wl is None else float(wing_wl)
        faces += _wing_faces(wing, width / 2, wl, wing_taper, thickness_ratio, scale_m)
        notes.append(f"wing plane at WL {wl:g}, no dihedral, tip chord {wing_taper:g} x root, thickness "
                     f"{thickness_ratio:g} x root chord (assumed)")
    shape = fuselage(x, c, w, h, scale_m, plates=faces, from_outline=True, assumptions=notes)
    return with_fin(shape, fin, scale_m, taper=fin_taper, thickness_ratio=thickness_ratio)


def tailplane_root_bl(shape: AirframeShape, tail, scale_m: float) -> float:
    """BL (airframe unit) of the tailplane's root: the fuselage's side at the tailplane's WL at the root
    chord's mid station, y = w sqrt(1 - ((wl - c) / (q w))^2) on the section there; 0 where the plane
    passes above or below the fuselage (a T-tail on the fin) or lies beyond its ends."""
    x_mid = (_get(tail, "root_le_sta") + _get(tail, "root_chord") / 2) * scale_m
    local = fuselage_at(shape, x_mid)
    if local is None:
        return 0.0
    w, _, c, _, q = local
    dz = _get(tail, "wl") * scale_m - c
    if w <= 0 or abs(dz) >= q * w:
        return 0.0
    return w * math.sqrt(1 - (dz / (q * w)) ** 2) / scale_m


def with_tailplane(shape: AirframeShape, tail, scale_m: float, *, taper: float = 0.5,
                   thickness_ratio: float = 0.10) -> AirframeShape:
    """The shape with a tailplane's two halves added as thin slabs ('tailplane_right', 'tailplane_left').

    tail: mapping or object with root_le_sta, root_chord, span, sweep_deg, wl (airframe unit). Each half
    runs from the root BL (tailplane_root_bl) to BL +-span/2 in the plane WL = wl (no dihedral); tip
    chord = taper x root chord, thickness = thickness_ratio x root chord (assumed, common practice for
    transport tailplanes, no source; listed in the shape's assumptions). None: the shape as it is; a
    span within the fuselage: no faces, and a note that says so.
    """
    if tail is None:
        return shape
    le, chord, span, sweep, wl = (_get(tail, k) for k in ("root_le_sta", "root_chord", "span", "sweep_deg", "wl"))
    root = tailplane_root_bl(shape, tail, scale_m)
    if not span / 2 - root > 1e-3 * chord:  # no tailplane outside the fuselage (or a sliver without area)
        return dataclasses.replace(shape, assumptions=tuple(a for a in shape.assumptions if a != NO_TAILPLANE) + (
            f"tailplane not modelled: its span {span:g} does not reach beyond the fuselage's side (BL {root:.4g})",))
    tip_le = le + (span / 2 - root) * math.tan(math.radians(sweep))
    faces = []
    for side, sign in (("right", 1.0), ("left", -1.0)):
        verts = [(le, sign * root, wl), (tip_le, sign * span / 2, wl),
                 (tip_le + taper * chord, sign * span / 2, wl), (le + chord, sign * root, wl)]
        faces += slab(f"tailplane_{side}", verts, thickness_ratio * chord, scale_m)
    notes = tuple(note for note in shape.assumptions if note != NO_TAILPLANE)
    notes += (f"tailplane at WL {wl:g} from BL {root:.4g} (the fuselage's side there) to the tips, no dihedral, tip "
              f"chord {taper:g} x root, thickness {thickness_ratio:g} x root chord (assumed)",)
    return dataclasses.replace(shape, plates=shape.plates + tuple(faces), assumptions=notes)
