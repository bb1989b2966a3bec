"""Coverage past the airframe: which directions the airframe blocks from an antenna, against what its
service must see (the service table's `must_see`), in level flight and at the bank and pitch angles the
policy names for that kind of region (policy `coverage_bank_deg`, `coverage_pitch_deg`; the loader puts
them on the service as `Service.attitudes`).

Method: geometric optics on the three-dimensional shape (physics.shadowing.shadow_grid): a direction is
blocked when the ray leaves below the skin's tangent plane or enters the fuselage, wing or fin; no
diffraction. Grid: every STEP_DEG degrees of azimuth and elevation. Shares are of the region's solid
angle. Shadow grids are cached per airframe type's content, position and attitude (lru_cache), with the
position first rounded to SHADOW_GRID (so aircraft of one type with antennas a few millimetres apart
share one computation); pair positions to POSITION_GRID.
"""
from __future__ import annotations

from functools import lru_cache
from typing import NamedTuple

import numpy as np

from registry.compute.airframe import FUSELAGE_SURFACES, SCALE_M, point_of, shape_of, skin_point
from registry.core import figure_keys as FK
from registry.core.model import Airframe, Installation, Service
from registry.core.results import Figure
from registry.core.sources import where
from registry.physics import shadowing

STEP_DEG = 5.0
"""Grid step of the shadow computation, degrees (divides 90): 37 × 72 directions per attitude."""

POSITION_GRID = {"in": 1.0, "mm": 20.0}
"""Positions are rounded to this (airframe unit) before the pair-coupling computation (1 in or 20 mm)."""

SHADOW_GRID = {"in": 4.0, "mm": 100.0}
"""Positions are rounded to this (airframe unit) before the shadow computation: 4 in or 100 mm moves a
shadow edge by under 1.5 degrees for an obstacle 4 m away (small-angle geometry), under a third of the
5-degree grid step."""

METHOD = ("geometric optics on the lofted airframe: rays blocked below the skin's tangent plane or by "
          "fuselage, wing, fin and tailplane (no diffraction); grid every 5°; shares of solid angle")


class Requirement(NamedTuple):
    region: str
    elevation_deg: float
    min_pct: float
    attitudes: tuple[tuple[float, float], ...]
    source: str
    attitude_source: str = ""
    """Where the bank and pitch come from (the policy's sources), '' when level flight only."""
    attitude_src: str = ""
    """The policy line of the bank and pitch (`file:line`), '' when the policy names none."""


def requirement(service: Service) -> Requirement | None:
    """The service's `must_see` as a Requirement, with level flight and the policy's bank (either wing
    down) and pitch (nose up and down) for the region, when they are not zero."""
    need = service.must_see
    if need is None:
        return None
    held = service.attitudes
    bank, pitch = (held.bank_deg, held.pitch_deg) if held is not None else (0.0, 0.0)
    attitudes = [(0.0, 0.0)]
    attitudes += [(b, 0.0) for b in (bank, -bank) if bank]
    attitudes += [(0.0, p) for p in (pitch, -pitch) if pitch]
    return Requirement(need["region"], float(need["elevation_deg"]), float(need["min_covered_pct"]),
                       tuple(attitudes), need["source"], held.source if held is not None else "",
                       f"{held.src.path}:{held.src.line}" if held is not None else "")


def region_mask(grid: shadowing.ShadowGrid, need: Requirement) -> np.ndarray:
    if need.region == "sky":
        return shadowing.sky_region(grid, need.elevation_deg)
    if need.region == "ground":
        return shadowing.ground_region(grid, need.elevation_deg)
    return shadowing.horizon_region(grid, abs(need.elevation_deg))


def region_text(need: Requirement) -> str:
    return {"sky": f"sky at or above {need.elevation_deg:g}° elevation",
            "ground": f"below {need.elevation_deg:g}° elevation (towards the ground)",
            "horizon": f"horizon all round (an azimuth counts as seen when a direction within "
                       f"±{abs(need.elevation_deg):g}° of the horizon is clear)"}[need.region]


def share_clear(grid: shadowing.ShadowGrid, mask: np.ndarray, need: Requirement) -> float:
    """The share the requirement counts, per cent: of the region's solid angle (sky, ground), or of the
    azimuths in which some direction of the band about the horizon is clear (horizon)."""
    if need.region == "horizon":
        return shadowing.azimuth_seen_percent(grid, mask)
    return shadowing.coverage_percent(grid, mask)


SHARE_FORMULA = {
    "horizon": "Σ_az [any clear cell within the band at az] / number of azimuths",
    "sky": "Σ Ω(clear cells in region) / Σ Ω(region), Ω = Δaz·(sin(el+s/2) − sin(el−s/2))",
    "ground": "Σ Ω(clear cells in region) / Σ Ω(region), Ω = Δaz·(sin(el+s/2) − sin(el−s/2))",
}
SECTOR_RULE = {"horizon": (1.0, "azimuths where every direction of the band is blocked"),
               "sky": (0.5, "azimuths where at least half the region's solid angle is blocked"),
               "ground": (0.5, "azimuths where at least half the region's solid angle is blocked")}


def antenna_point(airframe: Airframe, installation: Installation) -> tuple[float, float, float]:
    """The point shadows are computed from (airframe unit): the rounded position moved onto the fuselage
    skin for fuselage antennas, the rounded position itself otherwise. A rounded station that falls on a
    cross section's station is moved a quarter step aft: on the crease between two frustums the ray test
    sees the neighbouring frustum's surface as an obstacle."""
    step = SHADOW_GRID[airframe.coord_unit]
    rounded = tuple(round(v / step) * step for v in point_of(installation))
    stations = {s.sta for s in airframe.fuselage.sections}
    if rounded[0] in stations:  # on the crease between two frustums: taken a quarter step aft of it
        rounded = (rounded[0] + step / 4, rounded[1], rounded[2])
    if installation.surface in FUSELAGE_SURFACES:
        hit = skin_point(airframe, rounded)
        if hit is not None:
            return tuple(float(v) for v in hit.on_skin_m / SCALE_M[airframe.coord_unit])
    return rounded


@lru_cache(maxsize=2048)
def grid_at(airframe: Airframe, point: tuple[float, float, float], bank_deg: float,
            pitch_deg: float) -> shadowing.ShadowGrid:
    """The shadow grid from a point at one attitude (cached per airframe content, point and attitude)."""
    return shadowing.shadow_grid(shape_of(airframe), point, SCALE_M[airframe.coord_unit], STEP_DEG,
                                 bank_deg, pitch_deg)


def sector_text(sector) -> str:
    if sector is None:
        return "none"
    start, end, width = sector
    return f"azimuth {start:g}° to {end:g}° ({width:g}° wide)"


def attitude_text(bank_deg: float, pitch_deg: float) -> str:
    if bank_deg:
        return f"{abs(bank_deg):g}° bank, {'right' if bank_deg > 0 else 'left'} wing down"
    if pitch_deg:
        return f"{abs(pitch_deg):g}° nose {'up' if pitch_deg > 0 else 'down'}"
    return "level flight"


def coverage_figures(airframe: Airframe, installation: Installation, service: Service) -> list[Figure]:
    """The share of the service's required region the airframe leaves clear, level and at the worst
    attitude, and the widest blocked azimuth sector there."""
    need = requirement(service)
    if need is None:
        return []
    point = antenna_point(airframe, installation)
    results = []
    for bank, pitch in need.attitudes:
        grid = grid_at(airframe, point, bank, pitch)
        mask = region_mask(grid, need)
        results.append((share_clear(grid, mask, need), bank, pitch, grid, mask))
    level = results[0][0]
    worst_pct, bank, pitch, grid, mask = min(results, key=lambda r: r[0])
    fraction, sector_rule = SECTOR_RULE[need.region]
    sector = shadowing.worst_blocked_sector(grid, mask, fraction)
    src, req_src = where(installation, "location"), where(service, "must_see")
    inputs = (("region", region_text(need)), ("point (STA, BL, WL)", ", ".join(f"{v:.1f}" for v in point)),
              ("attitudes", "; ".join(attitude_text(b, p) for b, p in need.attitudes)))
    return [
        Figure(FK.COVERAGE_REGION, "Directions the service must see", region_text(need), "",
               source=need.source, src=req_src),
        Figure(FK.COVERAGE_LEVEL_PCT, "Share of them clear in level flight", level, "%",
               SHARE_FORMULA[need.region], inputs, METHOD, src),
        Figure(FK.COVERAGE_WORST_PCT, "Share clear at the worst attitude", worst_pct, "%",
               "min over the attitudes of the share clear", (("worst attitude", attitude_text(bank, pitch)),),
               METHOD, src),
        Figure(FK.COVERAGE_ATTITUDE, "Worst attitude", attitude_text(bank, pitch), "",
               source=need.attitude_source or "level flight only: the policy names no bank or pitch for this region",
               src=need.attitude_src or req_src),
        Figure(FK.COVERAGE_SECTOR, "Widest blocked sector there", sector_text(sector), "",
               sector_rule, source=METHOD, src=src),
        Figure(FK.COVERAGE_REQUIRED_PCT, "Least share the service needs clear", need.min_pct, "%",
               source=need.source, src=req_src),
    ]


def map_grids(airframe: Airframe, installation: Installation, service: Service):
    """For the coverage map: (level grid, blocked at any of the requirement's attitudes, region mask at
    level), or None when the service states no requirement."""
    need = requirement(service)
    if need is None:
        return None
    return grids_from(airframe, antenna_point(airframe, installation), need)


def grids_from(airframe: Airframe, point: tuple[float, float, float], need: Requirement):
    """`map_grids` from the antenna's point (`antenna_point`) and the service's requirement."""
    grids = [grid_at(airframe, point, b, p) for b, p in need.attitudes]
    any_blocked = np.logical_or.reduce([g.blocked for g in grids])
    return grids[0], any_blocked, region_mask(grids[0], need)
