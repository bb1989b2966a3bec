"""The coverage map of one installation: an azimuth/elevation chart of what the airframe blocks from it.

Only numbers here; site_templates/partials/coverage_map.html turns them into inline SVG (readable without
JavaScript). Chart coordinates: x = azimuth from the nose, -180 (left, behind) .. +180 (right, behind),
nose in the middle, PX_PER_DEG pixels per degree; y = elevation, +90 at the top.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from registry.compute.coverage import SECTOR_RULE, Requirement, antenna_point, grids_from, region_text, requirement
from registry.core.model import Airframe, Installation, Service
from registry.site.svg import n

PX_PER_DEG = 2.0
MARGIN = 34.0


@dataclass(frozen=True)
class CoverageMap:
    width: str
    height: str
    level: str       # path d: cells blocked in level flight
    attitude: str    # path d: cells blocked only at a bank or pitch the service names
    region: str      # path d: the cells the service must see
    x_ticks: tuple[tuple[str, str], ...]
    y_ticks: tuple[tuple[str, str], ...]
    chart: tuple[str, str, str, str]   # x, y, width, height of the chart area
    region_text: str
    alt: str


def _x(az_deg: float) -> float:
    return MARGIN + ((az_deg + 180.0) % 360.0) * PX_PER_DEG


def _y(el_deg: float) -> float:
    return MARGIN / 2 + (90.0 - el_deg) * PX_PER_DEG


def _runs(mask: np.ndarray, az_deg: np.ndarray, el_deg: np.ndarray, step: float) -> str:
    """One rectangle per run of True cells along each elevation row, as the data of one path."""
    order = np.argsort((az_deg + 180.0) % 360.0)
    centres = MARGIN + ((az_deg[order] + 180.0) % 360.0) * PX_PER_DEG
    half = step / 2 * PX_PER_DEG
    lefts = np.maximum(centres - half, MARGIN)
    rights = np.minimum(centres + half, MARGIN + 360 * PX_PER_DEG)
    padded = np.zeros((mask.shape[0], mask.shape[1] + 2), dtype=np.int8)
    padded[:, 1:-1] = mask[:, order]
    edges = np.diff(padded, axis=1)
    paths = []
    for e in np.flatnonzero((edges == 1).any(axis=1)):
        el = float(el_deg[e])
        starts, ends = np.flatnonzero(edges[e] == 1), np.flatnonzero(edges[e] == -1) - 1
        top, bottom = n(_y(min(el + step / 2, 90.0))), n(_y(max(el - step / 2, -90.0)))
        for i, j in zip(starts, ends):
            x0, x1 = n(lefts[i]), n(rights[j])
            paths.append(f"M{x0},{top}H{x1}V{bottom}H{x0}Z")
    return "".join(paths)


def coverage_map(airframe: Airframe, installation: Installation, service: Service | None) -> CoverageMap | None:
    """The map of an installation whose service states what it must see, else None."""
    need = requirement(service) if service is not None else None
    if need is None:
        return None
    level, attitude, region, blocked_pct = map_paths(airframe, antenna_point(airframe, installation), need)
    width = 360 * PX_PER_DEG
    height = 180 * PX_PER_DEG
    x_ticks = tuple((n(_x(az) if az != 180 else MARGIN + width), label) for az, label in
                    ((-180, "tail"), (-90, "left"), (0, "nose"), (90, "right"), (180, "tail")))
    y_ticks = tuple((n(_y(el)), f"{el:+d}°" if el else "0°") for el in (90, 60, 30, 0, -30, -60, -90))
    alt = (f"Coverage map of {installation.position}: directions the airframe blocks in level flight "
           f"({blocked_pct:.0f} % of the grid cells) and at the bank and pitch the service names, over the "
           f"{region_text(need)} the service must see.")
    return CoverageMap(
        width=n(width + 2 * MARGIN), height=n(height + 1.5 * MARGIN), level=level, attitude=attitude,
        region=region, x_ticks=x_ticks, y_ticks=y_ticks, chart=(n(MARGIN), n(_y(90)), n(width), n(height)),
        region_text=region_text(need), alt=alt)


@lru_cache(maxsize=1024)
def map_paths(airframe: Airframe, point: tuple[float, float, float], need: Requirement) -> tuple[str, str, str, float]:
    """The map's three paths (blocked in level flight, blocked only at a bank or pitch, the region the
    service must see) and the share of cells blocked in level flight (per cent), once per airframe
    content, antenna point and requirement in a process: aircraft of one type repeat them."""
    level, any_blocked, region = grids_from(airframe, point, need)
    step = level.step_deg
    return (_runs(level.blocked, level.az_deg, level.el_deg, step),
            _runs(any_blocked & ~level.blocked, level.az_deg, level.el_deg, step),
            _runs(np.asarray(region), level.az_deg, level.el_deg, step), 100.0 * float(level.blocked.mean()))


def blocked_sectors(airframe: Airframe, installation: Installation, service: Service | None
                    ) -> tuple[tuple[float, float], ...]:
    """Azimuth runs (start_deg, width_deg) blocked in level flight by the measure of the coverage figure's
    worst sector (`compute.coverage.SECTOR_RULE`: every direction of a horizon band, half the solid angle
    of a sky or ground region), for the airframe drawing."""
    need = requirement(service) if service is not None else None
    if need is None:
        return ()
    return sectors_at(airframe, antenna_point(airframe, installation), need)


@lru_cache(maxsize=1024)
def sectors_at(airframe: Airframe, point: tuple[float, float, float], need: Requirement
               ) -> tuple[tuple[float, float], ...]:
    """`blocked_sectors` once per airframe content, antenna point and requirement in a process."""
    fraction = SECTOR_RULE[need.region][0]
    level, _, region = grids_from(airframe, point, need)
    region = np.asarray(region)
    weight = np.cos(np.radians(level.el_deg))[:, None] * region
    col = weight.sum(axis=0)
    frac = np.where(col > 0, (weight * level.blocked).sum(axis=0) / np.where(col > 0, col, 1.0), 0.0)
    bad = frac >= fraction
    step = level.step_deg
    if bad.all():
        return ((0.0, 360.0),)
    runs, k = [], 0
    start = int(np.flatnonzero(~bad)[0]) if (~bad).any() else 0
    cells = [(start + i) % bad.size for i in range(bad.size)]
    while k < len(cells):
        if not bad[cells[k]]:
            k += 1
            continue
        first = k
        while k < len(cells) and bad[cells[k]]:
            k += 1
        runs.append((float(level.az_deg[cells[first]]) - step / 2, (k - first) * step))
    return tuple(runs)
