"""Compute stage: every figure of every installation, from the model through the physics.

Reads the model, calls the figure builders (element, feeder and measurements, pairs), and returns
`FleetResults` of plain `Figure` records (value, unit, formula, inputs, source, registry line). A result
that depends only on an antenna model's content and a frequency (pattern, modelled impedance) is
computed once per distinct content and reused by every installation that shares it (`cache.py`).
"""
from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path

from registry.compute import antenna as cache
from registry.output import record
from registry.incremental import DiskCache, key_of, ordered_map
from registry.compute.element import band_figures, ground_plane_figures, length_figures, modelled_vswr
from registry.compute.feeder import cable_result, feeder_figures, measured_figures
from registry.compute.pair import pair_results
from registry.load.fleet import SHIPPED_DIR
from registry.core.model import Aircraft, Fleet
from registry.core.progress import QUIET, Progress
from registry.core.results import (AircraftSummary, Discrepancy, Figure, FleetResults, InstallationResult, PairResult,
                              PatternResult, figure_uses)


Assess = Callable[[Fleet, Aircraft, dict[tuple[str, str], InstallationResult], list[PairResult]], list[Discrepancy]]
"""The rules over one aircraft's figures (checks.aircraft_discrepancies), run where it is computed."""


def compute_fleet(fleet: Fleet, as_of: date, cache_dir: Path | None = None, workers: int = 1,
                  progress: Progress = QUIET, assess: Assess | None = None, lazy: bool = False) -> FleetResults:
    """All figures of the fleet. `as_of` is the date measurement ages are counted to.

    Each aircraft is computed on its own (its installations and its pairs depend on nothing of the other
    aircraft), so an aircraft whose inputs are unchanged is taken from `cache_dir` and the others are
    shared out over `workers` processes. The result is the same whichever path each aircraft took.
    `assess` runs the rules over each computed aircraft (its findings go into its summary). With `lazy`,
    an unchanged aircraft contributes its summary only; its full figures stay in the cache until
    `FleetResults.load` asks for them.
    """
    results = FleetResults()
    for cable in fleet.cables.values():
        results.cables[cable.id] = cable_result(cable)
    part_store = DiskCache(cache_dir, "aircraft")
    summary_store = DiskCache(cache_dir, "summaries")
    pattern_store = DiskCache(cache_dir, "patterns")
    shared = shared_inputs_key(fleet, as_of) if part_store.folder is not None else ""
    parts: dict[str, AircraftPart] = {}
    known: dict[str, PatternResult] = {}  # patterns by content key, each read or computed once
    todo: list[tuple[str, str]] = []
    for aircraft in fleet.aircraft.values():
        key = aircraft_key(aircraft, shared) if shared else ""
        if key:
            results.aircraft_keys[aircraft.id] = key
        summary = summary_store.get(key) if key else None
        usable = (isinstance(summary, AircraftSummary) and (assess is None or summary.findings is not None)
                  and all(_known_pattern(pattern_key, known, pattern_store)
                          for pattern_key in set(summary.pattern_of.values()) if pattern_key))
        part = part_store.get(key) if usable and not lazy else None
        if not usable or (part is None and not lazy):  # not computed before, or gone from the cache
            todo.append((aircraft.id, key))
            continue
        results.summaries[aircraft.id] = summary
        if part is None:
            results.unloaded.add(aircraft.id)
        else:
            parts[aircraft.id] = part
    sent = set(known)  # patterns the parent has: each process hands back each other pattern once

    def compute_one(job: tuple[str, str]) -> tuple[AircraftPart | None, AircraftSummary, dict[str, PatternResult]]:
        """One aircraft, where it is computed: with `lazy` and a cache, its full figures go straight
        into the cache and only its summary comes back."""
        aircraft_id, key = job
        aircraft = fleet.aircraft[aircraft_id]
        part, patterns = compute_aircraft(fleet, aircraft, as_of)
        fresh = {pattern_key: pattern for pattern_key, pattern in patterns.items() if pattern_key not in sent}
        sent.update(fresh)
        summary = summarise(fleet, aircraft, part, assess)
        if key:
            part_store.put(key, part)
            if lazy:
                return None, summary, fresh
        return part, summary, fresh

    progress.stage("computing aircraft", len(todo))
    parts_computed = ordered_map(compute_one, todo, workers, progress)
    # the generator first, so that zip runs it to its end and its worker pool is closed
    for (part, summary, patterns), (aircraft_id, key) in zip(parts_computed, todo):
        if part is None:
            results.unloaded.add(aircraft_id)
        else:
            parts[aircraft_id] = part
        results.summaries[aircraft_id] = summary
        for pattern_key, pattern in patterns.items():
            if pattern_key not in known:
                known[pattern_key] = pattern
                pattern_store.put(pattern_key, pattern)
        if key:
            summary_store.put(key, summary)
    for aircraft_id, aircraft in fleet.aircraft.items():  # merged in id order: the same fleet, the same results
        summary = results.summaries[aircraft_id]
        if summary.record is not None:  # the record text is kept once, apart
            results.records[aircraft_id] = summary.record
            results.summaries[aircraft_id] = summary._replace(record=None)
        if aircraft_id in parts:
            results.installations.update(parts[aircraft_id].installations)
            results.pairs += parts[aircraft_id].pairs
        for position, installation in aircraft.installations.items():
            pattern_key = summary.pattern_of.get(position)
            if pattern_key and pattern_key not in results.patterns:  # named after the first model using it
                results.patterns[pattern_key] = replace(known[pattern_key], antenna=installation.antenna)

    results.loader = functools.partial(_load_parts, fleet, as_of, part_store)
    return results


def _load_parts(fleet: Fleet, as_of: date, store: DiskCache, results: FleetResults, aircraft_ids: list[str]) -> None:
    """`FleetResults.loader`: aircraft's full figures from the cache, or computed again if they are gone."""
    for aircraft_id in aircraft_ids:
        part = store.get(results.aircraft_keys.get(aircraft_id, "")) if store.folder is not None else None
        if part is None:
            part = compute_aircraft(fleet, fleet.aircraft[aircraft_id], as_of)[0]
        results.installations.update(part.installations)
        results.pairs += part.pairs
        results.unloaded.discard(aircraft_id)


@dataclass
class AircraftPart:
    """One aircraft's full figures: its installations' and its pairs'. Patterns are shared by the whole
    fleet and kept once apart; the summary (`AircraftSummary`) names them."""

    installations: dict[tuple[str, str], InstallationResult]
    pairs: list[PairResult]


def summarise(fleet: Fleet, aircraft: Aircraft, part: AircraftPart, assess: Assess | None) -> AircraftSummary:
    """What the fleet-wide stages need of one computed aircraft (`AircraftSummary`)."""
    return AircraftSummary(
        pattern_of={position: result.pattern_key for (_, position), result in part.installations.items()},
        findings=None if assess is None else tuple(assess(fleet, aircraft, part.installations, part.pairs)),
        figure_uses=figure_uses(part.installations.values(), part.pairs),
        record=record.share_text(record.aircraft_record(aircraft, part.installations, part.pairs,
                                                        Path(fleet.data_dir))))


def _known_pattern(key: str, known: dict[str, PatternResult], store: DiskCache) -> bool:
    """True when the pattern with this content key is in `known`, reading it from `store` if need be."""
    if key not in known:
        pattern = store.get(key)
        if pattern is None:
            return False
        known[key] = pattern
    return True


def compute_aircraft(fleet: Fleet, aircraft: Aircraft, as_of: date) -> tuple[AircraftPart, dict[str, PatternResult]]:
    """Every figure of one aircraft's installations, and the isolation of its pairs; with the patterns
    its installations use, by content key."""
    part = AircraftPart({}, [])
    patterns: dict[str, PatternResult] = {}
    airframe = fleet.airframe_of(aircraft)
    for installation in aircraft.installations.values():
        service = fleet.services[installation.service]
        model = fleet.antennas[installation.antenna]
        cable = fleet.cables[installation.feeder.cable]
        material = airframe.material_at(installation.location.sta, installation.surface)
        figures: list[Figure] = []
        figures += length_figures(installation, model, service)
        figures += band_figures(installation, model, service)
        modelled, modelled_curve = ([], None) if installation.coupler else modelled_vswr(
            model, service, cable, fleet.policy)
        figures += modelled
        measured, measured_curve = measured_figures(installation, service, cable, fleet.policy, as_of)
        figures += measured
        figures += feeder_figures(installation, model, service, cable, fleet.policy, figures)
        figures += ground_plane_figures(installation, model, service, material, fleet.policy)
        pattern = cache.pattern(model, service.design_freq_mhz)
        patterns.setdefault(pattern.key, pattern)
        part.installations[(aircraft.id, installation.position)] = InstallationResult(
            aircraft=aircraft.id,
            position=installation.position,
            figures=tuple(figures),
            pattern_key=pattern.key,
            vswr_modelled=modelled_curve,
            vswr_measured=measured_curve,
            service_bands_mhz=service.bands_mhz,
            vswr_limit=fleet.policy.vswr_limit_for(service.id),
        )
    part.pairs = pair_results(fleet, aircraft)
    return part, patterns


# --- which aircraft need computing -----------------------------------------------------------------------


def shared_inputs_key(fleet: Fleet, as_of: date) -> str:
    """Key of everything an aircraft's figures depend on besides its own file: the registry's other files
    (catalogues, services, policy, airframe types, fleet), the shipped service table and policy, and the
    as-of date. Reviews are left out: they do not change a figure."""
    data_dir = Path(fleet.data_dir)
    files = sorted(data_dir.glob("*.yaml")) + sorted((data_dir / "airframes").glob("*.yaml"))
    files += sorted(SHIPPED_DIR.glob("*.yaml"))
    parts = [as_of.isoformat(), str(data_dir)]
    for file in files:
        if file.name != "reviews.yaml":
            parts += [str(file), file.read_bytes()]
    return key_of(*parts)


def aircraft_key(aircraft: Aircraft, shared: str) -> str:
    """Key of one aircraft's figures: its own file, the sweep files it names, and the shared inputs."""
    parts = [shared, aircraft.src.path, Path(aircraft.src.path).read_bytes()]
    for installation in aircraft.installations.values():
        if installation.measured is not None and installation.measured.sweep is not None:
            try:
                parts += [str(installation.measured.sweep), installation.measured.sweep.read_bytes()]
            except OSError:
                parts += [str(installation.measured.sweep), "unreadable"]
    return key_of(*parts)
