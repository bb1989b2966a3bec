"""Figures of pairs of installations on one aircraft: distance and coupling, by the model that applies.

The model is chosen by physics.pair_coupling: two monopoles on the fuselage by the moment method over
the skin (or round it, with the Fock curvature factor); a clear line beyond the far field by Friis with
each antenna's gain toward the other (no floor); a clear line inside the far field by the near-field
moment method for two monopoles; otherwise no model applies and the figure says so. Computations are
cached per airframe type's content and the rounded positions (`_coupling`).
"""
from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from registry.core import figure_keys as FK
from registry.compute import antenna as cache
from registry.compute.kinds import kind_of
from registry.core.model import AntennaModel, Fleet, Installation
from registry.compute.airframe import shape_of, SCALE_M
from registry.compute.coverage import POSITION_GRID
from registry.physics import coupling
from registry.physics.pair_coupling import PairAntenna, PairCoupling, pair_coupling
from registry.physics.segmentation import Unmodellable
from registry.core.results import Figure, PairResult
from registry.core.sources import where

MHZ = 1e6


# --- isolation between pairs ----------------------------------------------------------------------------

SURFACE_AXES = {
    "top": ((0, 0, 1), (-1, 0, 0)), "fin": ((0, 0, 1), (-1, 0, 0)),
    "wing_left": ((0, 0, 1), (-1, 0, 0)), "wing_right": ((0, 0, 1), (-1, 0, 0)),
    "bottom": ((0, 0, -1), (-1, 0, 0)),
    "nose": ((-1, 0, 0), (0, 0, 1)), "tail": ((1, 0, 0), (0, 0, 1)),
    "side_left": ((0, -1, 0), (-1, 0, 0)), "side_right": ((0, 1, 0), (-1, 0, 0)),
}
"""The antenna's own z and x axes in airframe (STA aft, BL right, WL up) components, by surface: z is the
outward normal (the axis of a monopole, the boresight of an aperture)."""
COORD_UNITS = {"in": "inch", "mm": "mm"}
"""The schema's coordinate unit names as physics.coupling.to_metres spells them."""

FRIIS = "Friis, Proc. IRE 34 (1946); free-space loss per ITU-R P.525"
MODEL_SOURCES = {
    "free-space Friis": FRIIS,
    "near field: moment method over a ground plane": (
        "mutual impedance of two monopoles over a perfect ground by the thin-wire moment method (image theory), "
        "S21 from the two-port Z matrix (Pozar, Microwave Engineering, 4th ed., §4.3); checked against NEC-2"),
    "moment method over the skin": (
        "two monopoles on a flat perfect ground at the length of the path over the skin: thin-wire moment "
        "method (image theory), S21 from the Z matrix; checked against NEC-2"),
    "creeping wave round the fuselage": (
        "flat-ground moment method at each way's path length times a Fock curvature factor computed from the "
        "exact two-dimensional cylinder series (Harrington, Time-Harmonic Electromagnetic Fields, ch. 5, from "
        "memory); the ray model is after P. H. Pathak, N. Wang, IEEE Trans. AP-29 (1981): unverified, check "
        "against that paper; checked against NEC-2 wire-grid cylinders at VHF and L band"),
    "none": "no model in the tool covers this pair",
}


def antenna_axes(installation: Installation, model: AntennaModel):
    """(z, x) axes of the antenna; a horizontally polarised dipole lies athwartships (along BL)."""
    if kind_of(model.kind).lies_flat_when_horizontal and model.polarisation == "horizontal":
        return (0, 1, 0), (-1, 0, 0)
    return SURFACE_AXES[installation.surface]


def pair_results(fleet: Fleet, aircraft) -> list[PairResult]:
    """Isolation of every pair of installations whose services the policy wants kept apart."""
    installations = list(aircraft.installations.values())
    out = []
    for i, a in enumerate(installations):
        for b in installations[i + 1:]:
            rule = fleet.policy.min_isolation_for(a.service, b.service)
            if rule is None:
                continue
            out.append(pair_result(fleet, aircraft, a, b, rule))
    return out


def pair_antenna(fleet: Fleet, installation: Installation, point, toward, freq_mhz: float, unit: str) -> PairAntenna:
    """The physics' view of one antenna of a pair: position, size, monopole height, gain toward the other."""
    model = fleet.antennas[installation.antenna]
    return _pair_antenna(model, antenna_axes(installation, model), tuple(point), tuple(toward), freq_mhz, unit)


@lru_cache(maxsize=16384)
def _pair_antenna(model: AntennaModel, axes, point, toward, freq_mhz: float, unit: str) -> PairAntenna:
    direction = coupling.direction_vector(point, toward, unit)
    try:
        gain = cache.gain_toward_dbi(model, freq_mhz, *np.deg2rad(coupling.antenna_angles_deg(direction, *axes)))
    except Unmodellable:
        gain = math.nan  # no pattern: Friis cannot be used for this pair
    height = radius = None
    if kind_of(model.kind).needs_ground_plane and "element_length_m" in model.geometry:
        height = float(model.geometry["element_length_m"])
        radius = float(model.geometry.get("element_diameter_m", 0.006)) / 2
    return PairAntenna(point, size_m(model), height, radius or 0.003,
                       round(gain, 2) if math.isfinite(gain) and gain > -100 else None)


@lru_cache(maxsize=8192)
def _coupling(airframe, a: PairAntenna, b: PairAntenna, freq_mhz: float):
    """physics.pair_coupling, cached per airframe content, the two antennas and the frequency; a pair the
    thin-wire model cannot take gets no figure, with the reason."""
    try:
        return pair_coupling(shape_of(airframe), a, b, SCALE_M[airframe.coord_unit], freq_mhz * MHZ)
    except Unmodellable as error:
        return PairCoupling(None, "none", f"the moment method cannot model this pair: {error}")


def _rounded(installation: Installation, step: float) -> tuple[float, float, float]:
    loc = installation.location
    return tuple(round(v / step) * step for v in (loc.sta, loc.bl, loc.wl))


def rounding_step(a: Installation, b: Installation, unit: str, grid: float) -> float:
    """The step (airframe unit) pair positions are rounded to before the coupling model, so that aircraft
    of one type share computations: the largest of 1, 2, 5 and 10 grid steps that stays within 2 % of the
    pair's distance (a near pair keeps the grid, 1 in or 20 mm). 2 % of the distance changes a far pair's
    path loss by under 0.2 dB (20·log₁₀ 1.02)."""
    distance_m = coupling.distance_m((a.location.sta, a.location.bl, a.location.wl),
                                     (b.location.sta, b.location.bl, b.location.wl), unit)
    per_unit_m = coupling.distance_m((0, 0, 0), (1, 0, 0), unit)
    allowed = 0.02 * float(distance_m) / float(per_unit_m)
    return float(max([k * grid for k in (1, 2, 5, 10) if k * grid <= allowed], default=grid))


def pair_result(fleet: Fleet, aircraft, a: Installation, b: Installation, rule) -> PairResult:
    """Coupling at each pair service's design frequency by the model that applies; the one with the lower
    isolation is reported (a pair no model covers at some frequency reports that frequency)."""
    airframe = fleet.airframe_of(aircraft)
    unit = COORD_UNITS[airframe.coord_unit]
    step = rounding_step(a, b, unit, POSITION_GRID[airframe.coord_unit])
    point_a, point_b = _rounded(a, step), _rounded(b, step)
    if point_a == point_b:
        point_a = (a.location.sta, a.location.bl, a.location.wl)
        point_b = (b.location.sta, b.location.bl, b.location.wl)
    worst = None
    for freq_mhz in sorted({fleet.services[a.service].design_freq_mhz, fleet.services[b.service].design_freq_mhz}):
        ant_a = pair_antenna(fleet, a, point_a, point_b, freq_mhz, unit)
        ant_b = pair_antenna(fleet, b, point_b, point_a, freq_mhz, unit)
        res = _coupling(airframe, ant_a, ant_b, freq_mhz)
        key = math.inf if res.coupling_db is None else res.coupling_db
        if worst is None or key > worst[0]:
            worst = (key, res, freq_mhz, ant_a, ant_b)
    _, res, freq_mhz, ant_a, ant_b = worst
    near = (coupling.distance_m(ant_a.point, ant_b.point, unit)
            < coupling.far_field_distance_m(freq_mhz * MHZ, ant_a.size_m, ant_b.size_m))
    return PairResult(aircraft.id, *sorted((a.position, b.position)),
                      pair_figures(res, freq_mhz, ant_a, ant_b, a, b, unit, rule, step), near)


def pair_figures(res, freq_mhz, ant_a, ant_b, a, b, unit, rule, step) -> tuple[Figure, ...]:
    second = max((a, b), key=lambda inst: inst.position)
    src = where(second, "location")
    distance = coupling.distance_m((a.location.sta, a.location.bl, a.location.wl),
                                   (b.location.sta, b.location.bl, b.location.wl), unit)
    far = coupling.far_field_distance_m(freq_mhz * MHZ, ant_a.size_m, ant_b.size_m)
    source = MODEL_SOURCES.get(res.model, res.model)
    inputs = (("positions rounded to", f"{step:g} {unit} (1, 2, 5 or 10 grid steps, within 2 % of the distance)"),
              ("model chosen because", res.reason))
    heights = tuple((f"monopole {inst.position}", f"{ant.monopole_height_m:.3f} m")
                    for inst, ant in ((a, ant_a), (b, ant_b)) if ant.monopole_height_m)
    figures = [
        Figure(FK.PAIR_DISTANCE_M, "Distance between the antennas", distance, "m", "|P_B − P_A| from STA/BL/WL",
               (("unit", unit),), src=src),
        Figure(FK.PAIR_FREQ_MHZ, "Evaluated at", freq_mhz, "MHz", source="lower-isolation design frequency"),
        Figure(FK.PAIR_MODEL, "Coupling model", res.model, "", inputs=inputs, source=source, src=src),
    ]
    if res.model == "free-space Friis":
        figures += [
            Figure(FK.PAIR_GAIN_A_DBI, f"Gain of {a.position} toward {b.position}", ant_a.gain_dbi, "dBi",
                   "G(θ, φ) of the antenna's pattern, no floor", source="the antenna's pattern"),
            Figure(FK.PAIR_GAIN_B_DBI, f"Gain of {b.position} toward {a.position}", ant_b.gain_dbi, "dBi",
                   "G(θ, φ) of the antenna's pattern, no floor", source="the antenna's pattern"),
            Figure(FK.PAIR_PATH_LOSS_DB, "Free-space loss", coupling.free_space_loss_db(freq_mhz * MHZ, distance),
                   "dB", "20·log₁₀(4πd/λ)", source=FRIIS)]
    formula = {"free-space Friis": "C = G_A + G_B − 20·log₁₀(4πd/λ)",
               "near field: moment method over a ground plane": "C = 20·log₁₀|S₂₁|, S from the 2×2 Z matrix",
               "moment method over the skin": "C = 20·log₁₀|S₂₁,flat(s)|, s the path over the skin",
               "creeping wave round the fuselage": "C = 20·log₁₀|Σ S₂₁,flat(s_i)·F(ξ_i)|, ξ = (kρ/2)^⅓ s/ρ"}
    value = res.coupling_db
    figures += [
        Figure(FK.PAIR_COUPLING_DB, "Coupling", value if value is not None else f"no model applies: {res.reason}",
               "dB" if value is not None else "", formula.get(res.model, ""), heights, source, src),
        Figure(FK.PAIR_ISOLATION_DB, "Isolation", -value if value is not None else None,
               "dB", "I = −C" if value is not None else "", source=source, src=src),
        Figure(FK.PAIR_MIN_ISOLATION_DB, "Policy minimum", rule.isolation_db, "dB", src=f"{rule.src.path}:{rule.src.line}"),
        Figure(FK.PAIR_FAR_FIELD_M, "Far field begins at", far, "m",
               "max(2(D_A + D_B)²/λ, λ/2π)", source="IEEE Std 149-1979 §2.3; Balanis 4th ed. ch. 2"),
    ]
    return tuple(figures)


def size_m(model: AntennaModel) -> float:
    """The antenna's largest dimension (m), for the near-field test."""
    return kind_of(model.kind).size_m(model.geometry)