"""Figures of pairs of installations on one aircraft: distance and Friis isolation."""
from __future__ import annotations

import numpy as np

from registry.core import figure_keys as FK
from registry.compute import antenna as cache
from registry.compute.kinds import kind_of
from registry.core.model import AntennaModel, Fleet, Installation
from registry.physics import coupling
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
GAIN_FLOOR_DBI = -20.0
"""The lowest gain one antenna is taken to have toward another. Models on an infinite ground plane or
with deep nulls give far less, but a real airframe scatters and diffracts energy into those directions;
flooring the gain keeps the isolation conservative (common practice, no source)."""


def antenna_axes(installation: Installation, model: AntennaModel):
    """(z, x) axes of the antenna; a horizontally polarised dipole lies athwartships (along BL)."""
    if kind_of(model.kind).lies_flat_when_horizontal and model.polarisation == "horizontal":
        return (0, 1, 0), (-1, 0, 0)
    return SURFACE_AXES[installation.surface]


def pair_results(fleet: Fleet, aircraft) -> list[PairResult]:
    """Isolation of every pair of installations whose services the policy wants kept apart."""
    unit = COORD_UNITS[fleet.airframe_of(aircraft).coord_unit]
    installations = list(aircraft.installations.values())
    out = []
    for i, a in enumerate(installations):
        for b in installations[i + 1:]:
            rule = fleet.policy.min_isolation_for(a.service, b.service)
            if rule is None:
                continue
            out.append(pair_result(fleet, aircraft.id, a, b, unit, rule))
    return out


def pair_result(fleet: Fleet, aircraft_id: str, a: Installation, b: Installation, unit: str, rule) -> PairResult:
    """Friis isolation at each pair service's design frequency; the worse (lower) one is reported."""
    point_a = (a.location.sta, a.location.bl, a.location.wl)
    point_b = (b.location.sta, b.location.bl, b.location.wl)
    model_a, model_b = fleet.antennas[a.antenna], fleet.antennas[b.antenna]
    a_to_b = coupling.direction_vector(point_a, point_b, unit)
    worst = None
    for freq_mhz in sorted({fleet.services[a.service].design_freq_mhz, fleet.services[b.service].design_freq_mhz}):
        gain_a = max(GAIN_FLOOR_DBI, cache.gain_toward_dbi(model_a, freq_mhz, *np.deg2rad(
            coupling.antenna_angles_deg(a_to_b, *antenna_axes(a, model_a)))))
        gain_b = max(GAIN_FLOOR_DBI, cache.gain_toward_dbi(model_b, freq_mhz, *np.deg2rad(
            coupling.antenna_angles_deg(-a_to_b, *antenna_axes(b, model_b)))))
        result = coupling.isolation(point_a, point_b, unit, freq_mhz * MHZ, gain_a, gain_b,
                                    size_m(model_a), size_m(model_b))
        if worst is None or result.isolation_db < worst[0].isolation_db:
            worst = (result, freq_mhz, gain_a, gain_b)
    result, freq_mhz, gain_a, gain_b = worst
    first, second = sorted((a, b), key=lambda inst: inst.position)
    src = where(second, "location")
    friis = "Friis, Proc. IRE 34 (1946); free-space loss per ITU-R P.525"
    figures = (
        Figure(FK.PAIR_DISTANCE_M, "Distance between the antennas", result.distance_m, "m",
               "|P_B − P_A| from STA/BL/WL", (("unit", unit),), src=src),
        Figure(FK.PAIR_FREQ_MHZ, "Evaluated at", freq_mhz, "MHz", source="lower-isolation design frequency"),
        Figure(FK.PAIR_GAIN_A_DBI, f"Gain of {a.position} toward {b.position}", gain_a, "dBi",
               f"max(G(θ, φ), {GAIN_FLOOR_DBI:g} dBi)", source="the antenna's pattern; floor: common practice"),
        Figure(FK.PAIR_GAIN_B_DBI, f"Gain of {b.position} toward {a.position}", gain_b, "dBi",
               f"max(G(θ, φ), {GAIN_FLOOR_DBI:g} dBi)", source="the antenna's pattern; floor: common practice"),
        Figure(FK.PAIR_PATH_LOSS_DB, "Free-space loss", result.free_space_loss_db, "dB", "20·log₁₀(4πd/λ)",
               source=friis),
        Figure(FK.PAIR_ISOLATION_DB, "Isolation", result.isolation_db, "dB", "I = 20·log₁₀(4πd/λ) − G_A − G_B",
               source=friis, src=src),
        Figure(FK.PAIR_MIN_ISOLATION_DB, "Policy minimum", rule.isolation_db, "dB", src=f"{rule.src.path}:{rule.src.line}"),
        Figure(FK.PAIR_FAR_FIELD_M, "Far field begins at", result.far_field_distance_m, "m",
               "max(2(D_A + D_B)²/λ, λ/2π)", source="IEEE Std 149-1979 §2.3; Balanis 4th ed. ch. 2"),
    )
    return PairResult(aircraft_id, first.position, second.position, figures, result.indicative_only)


def size_m(model: AntennaModel) -> float:
    """The antenna's largest dimension (m), for the near-field test."""
    return kind_of(model.kind).size_m(model.geometry)