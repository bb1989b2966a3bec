"""The airframe in three dimensions for the compute stage: one shape per airframe type, and where each
antenna sits on it.

`shape_of(airframe)` lofts the fuselage through the file's cross sections when it gives them, else derives
it from the outline (length, width, height) and lists what it had to assume (physics.airframe_outline);
wing, fin and tailplane are thin slabs from their outlines (no tailplane when the file gives none). It is
cached per airframe type's content
(functools.lru_cache on the frozen model object), so a fleet of one type builds it once per process.
"""
from __future__ import annotations

import dataclasses
from functools import lru_cache

import numpy as np

from registry.core import figure_keys as FK
from registry.core.model import Airframe, Installation
from registry.core.results import Figure
from registry.core.sources import where
from registry.physics.airframe_outline import shape_from_outline, with_fin, with_tailplane
from registry.physics.airframe_shape import AirframeShape, fuselage_at, locate_on_skin, to_metres

SCALE_M = {"in": 0.0254, "mm": 0.001}
"""Metres per unit of the airframe's coord_unit."""

SKIN_TOLERANCE_M = 0.05
"""Largest distance (m) between a recorded antenna position and the modelled skin that still counts as on
the skin. Common practice, no source: a blade's base, its doubler and fairing stand a few centimetres
proud of the skin, and a position recorded to the nearest inch or 10 mm is good to about 2 cm."""

FUSELAGE_SURFACES = ("top", "bottom", "side_left", "side_right", "tail")
"""Surfaces whose antennas stand on the fuselage skin. Fin, wing and nose antennas sit in fin caps, wing
tips and radomes the outline does not describe, so their positions are not held to the skin."""

SHAPE_METHOD = ("elliptic sections lofted by straight frustums; wing, fin and tailplane as thin slabs (geometry, "
                "no source needed)")


@lru_cache(maxsize=16)
def shape_of(airframe: Airframe) -> AirframeShape:
    """The airframe type's three-dimensional shape in metres (cached per content): the fuselage, wing and
    fin, and the tailplane when the file gives one (its root on the lofted fuselage's side)."""
    return with_tailplane(fuselage_shape(airframe), airframe.tailplane, SCALE_M[airframe.coord_unit])


def fuselage_shape(airframe: Airframe) -> AirframeShape:
    """The fuselage (lofted through the file's sections, or derived from the outline) with wing and fin."""
    scale = SCALE_M[airframe.coord_unit]
    wing_wl = airframe.wing.wl if airframe.wing is not None else None
    shape = shape_from_outline(airframe.fuselage, scale, airframe.wing, airframe.fin, wing_wl=wing_wl)
    sections = airframe.fuselage.sections
    if not sections:
        return shape
    arrays = [np.array([getattr(s, name) for s in sections], dtype=float) * scale
              for name in ("sta", "centre_wl", "half_width", "half_height")]
    notes = tuple(note for note in shape.assumptions if not note.startswith(("fuselage derived", "wing plane")))
    if airframe.wing is not None:
        notes += (f"wing plane at WL {airframe.wing.wl if wing_wl is not None else airframe.fuselage.centreline_wl:g}"
                  f"{'' if wing_wl is not None else ' (assumed: a mid wing)'}, no dihedral, tip chord 0.35 x root, "
                  "thickness 0.12 x root chord (assumed)",)
    lofted = dataclasses.replace(shape, sta_m=arrays[0], centre_wl_m=arrays[1], half_width_m=arrays[2],
                                 half_height_m=arrays[3], from_outline=False, assumptions=notes)
    return with_fin(lofted, airframe.fin, scale)  # the fin stood again on the lofted crown


def shape_text(airframe: Airframe) -> str:
    """How the shape was made, in words."""
    count = len(airframe.fuselage.sections)
    if count:
        return f"lofted through the {count} cross sections of the airframe file"
    return "derived from the outline (length, width, height): the airframe file gives no cross sections"


def point_of(installation: Installation) -> tuple[float, float, float]:
    """(STA, BL, WL) of an installation in the airframe's unit."""
    loc = installation.location
    return (loc.sta, loc.bl, loc.wl)


def inside_fuselage(shape: AirframeShape, point, scale_m: float) -> bool:
    """True when a (STA, BL, WL) point (airframe unit) lies inside the fuselage's skin."""
    p = to_metres(point, scale_m)
    local = fuselage_at(shape, float(p[0]))
    if local is None:
        return False
    w, _, c, _, q = local
    return w > 0 and (p[1] / w) ** 2 + ((p[2] - c) / (q * w)) ** 2 < 1


@lru_cache(maxsize=16)
def fuselage_only(airframe: Airframe) -> AirframeShape:
    """The shape without its flat surfaces: where a fuselage antenna stands is a question of the fuselage."""
    return dataclasses.replace(shape_of(airframe), plates=())


@lru_cache(maxsize=4096)
def skin_point(airframe: Airframe, point: tuple[float, float, float]):
    """The nearest fuselage skin point within 2 m (physics.airframe_shape.SkinPoint) or None (cached)."""
    return locate_on_skin(fuselage_only(airframe), point, SCALE_M[airframe.coord_unit], 2.0)


def skin_figures(airframe: Airframe, installation: Installation) -> list[Figure]:
    """Where the antenna stands against the modelled skin: part, distance, and how the shape was made."""
    src = where(installation, "location")
    shape = shape_of(airframe)
    inputs = tuple(("assumed", note) for note in shape.assumptions)
    figures = [Figure(FK.SKIN_SHAPE, "Airframe shape", shape_text(airframe), "", SHAPE_METHOD, inputs,
                      src=where(airframe, "fuselage"))]
    if installation.surface not in FUSELAGE_SURFACES:
        return figures + [Figure(FK.SKIN_PART, "Mounted on", f"{installation.surface.replace('_', ' ')} "
                                 "(fin cap, wing tip or radome: position not held to the skin)", "", src=src)]
    hit = skin_point(airframe, point_of(installation))
    inside = inside_fuselage(shape, point_of(installation), SCALE_M[airframe.coord_unit])
    distance = None if hit is None else hit.distance_m
    side = "inside" if inside else "outside"
    return figures + [
        Figure(FK.SKIN_PART, "Mounted on", "fuselage" if hit is not None else "no skin within 2 m", "", src=src),
        Figure(FK.SKIN_DISTANCE_M, f"Distance from the skin ({side})", distance, "m",
               "|P − P_skin|, P_skin on the ray from the section's centre through P",
               (("P (STA, BL, WL)", ", ".join(f"{v:g}" for v in point_of(installation))),
                ("unit", airframe.coord_unit)), SHAPE_METHOD, src),
        Figure(FK.SKIN_TOLERANCE_M, "Largest distance counted as on the skin", SKIN_TOLERANCE_M, "m",
               source="common practice, no source (base, doubler and fairing; positions to about 2 cm)"),
    ]
