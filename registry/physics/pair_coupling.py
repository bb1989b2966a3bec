"""Which coupling model applies to a pair of antennas on one airframe, and its figure.

Rules, in order (no fallback figure: when none applies the answer says so, with the reason):
1. Both antennas are monopoles standing on the fuselage skin: the surface-path model
   (fuselage_coupling.around_cylinder): the flat-plane moment method for the two monopoles at the
   length of the path over the skin, times the Fock curvature factor of each way round. It covers
   near and far pairs alike (the moment method holds at any spacing). Named
   "moment method over the skin" when the shorter way is practically flat (Fock parameter xi < 0.1,
   |F| within 0.02 dB of 1), "creeping wave round the fuselage" otherwise.
2. Otherwise, when the straight line between them is clear of the airframe (shadowing.segment_clear)
   and they are at least the far-field distance apart (coupling.far_field_distance_m), Friis with the
   two gains toward each other (coupling.coupling_db): "free-space Friis".
3. A clear line inside the far-field distance: the near field, modelled only for two monopoles on a
   common flat ground (near_coupling.monopole_pair); for anything else no model applies.
4. A blocked line between antennas not both on the fuselage (e.g. a fin antenna and a belly antenna):
   no model applies (the path runs over edges the surface-path model does not treat).
Units: metres, hertz, dB; positions in the airframe's unit with scale_m to metres.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.physics.airframe_shape import AirframeShape, locate_on_skin, to_metres
from registry.physics.coupling import coupling_db as friis_coupling_db
from registry.physics.coupling import far_field_distance_m
from registry.physics.fuselage_coupling import around_cylinder, fuselage_path
from registry.physics.near_coupling import monopole_pair
from registry.physics.shadowing import segment_clear

#: below this Fock parameter the surface path is treated as flat (|F(xi)| > -0.02 dB)
FLAT_XI = 0.1


@dataclass(frozen=True)
class PairAntenna:
    """One antenna of a pair: position (STA, BL, WL) in the airframe's unit; size_m its largest
    dimension; monopole_height_m set when it is a monopole (blade) standing on the skin; gain_dbi its
    gain toward the other antenna (needed for Friis)."""

    point: tuple
    size_m: float
    monopole_height_m: float | None = None
    wire_radius_m: float = 0.003
    gain_dbi: float | None = None


@dataclass(frozen=True)
class PairCoupling:
    """coupling_db (None when no model applies), the model's name, and why it was chosen or refused."""

    coupling_db: float | None
    model: str
    reason: str


def _on_fuselage(shape, ant: PairAntenna, scale_m, tol_m) -> bool:
    hit = locate_on_skin(shape, ant.point, scale_m, tol_m)
    return hit is not None and hit.part == "fuselage"


def _surface_path(shape, a: PairAntenna, b: PairAntenna, scale_m, freq_hz) -> PairCoupling:
    radius, angle, axial = fuselage_path(shape, a.point, b.point, scale_m)
    res = around_cylinder(radius, angle, axial, freq_hz, a.monopole_height_m, b.monopole_height_m,
                          max(a.wire_radius_m, b.wire_radius_m))
    if res.xi[0] < FLAT_XI:
        return PairCoupling(res.coupling_db, "moment method over the skin",
                            f"two monopoles on the fuselage {res.paths_m[0]:.2f} m apart over a practically flat path")
    return PairCoupling(res.coupling_db, "creeping wave round the fuselage",
                        f"two monopoles on the fuselage, {np.degrees(angle):.0f} deg round it, "
                        f"path {res.paths_m[0]:.2f} m")


def _line_of_sight(a: PairAntenna, b: PairAntenna, distance_m: float, freq_hz: float) -> PairCoupling:
    far = far_field_distance_m(freq_hz, a.size_m, b.size_m)
    if distance_m >= far:
        if a.gain_dbi is None or b.gain_dbi is None:
            return PairCoupling(None, "none", "far apart with a clear line, but a gain toward the other is missing")
        return PairCoupling(float(friis_coupling_db(a.gain_dbi, b.gain_dbi, freq_hz, distance_m)), "free-space Friis",
                            f"clear line, {distance_m:.2f} m >= far-field distance {far:.2f} m")
    if a.monopole_height_m and b.monopole_height_m:
        res = monopole_pair(a.monopole_height_m, b.monopole_height_m, distance_m, freq_hz,
                            max(a.wire_radius_m, b.wire_radius_m))
        return PairCoupling(res.coupling_db, "near field: moment method over a ground plane",
                            f"clear line, {distance_m:.2f} m < far-field distance {far:.2f} m, two monopoles")
    return PairCoupling(None, "none", f"inside the near field ({distance_m:.2f} m < {far:.2f} m) and not two "
                                      "monopoles on one ground: no model applies")


def pair_coupling(shape: AirframeShape, a: PairAntenna, b: PairAntenna, scale_m: float, freq_hz: float,
                  tolerance_m: float = 0.01) -> PairCoupling:
    """Coupling (dB) between two antennas on one airframe with the model that applies (module docstring)."""
    distance = float(np.linalg.norm(to_metres(a.point, scale_m) - to_metres(b.point, scale_m)))
    if distance == 0:
        raise ValueError("the two antennas coincide")
    monopoles = a.monopole_height_m is not None and b.monopole_height_m is not None
    if monopoles and _on_fuselage(shape, a, scale_m, tolerance_m) and _on_fuselage(shape, b, scale_m, tolerance_m):
        return _surface_path(shape, a, b, scale_m, freq_hz)
    if segment_clear(shape, a.point, b.point, scale_m, tolerance_m):
        return _line_of_sight(a, b, distance, freq_hz)
    return PairCoupling(None, "none", "the airframe blocks the straight line and the pair is not two monopoles "
                                      "on the fuselage: no model applies")
