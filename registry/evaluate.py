"""Compute and check every aircraft, reusing what an earlier build made: the middle of the pipeline.

For each aircraft: compute its figures (`compute.aircraft`), run the rules over them (`check.rules`),
and write its share of the build record (`output.record`). The stages know nothing of each other or of
the cache; this module puts them together. An aircraft whose inputs (`Fleet.input_keys`) and as-of date
are unchanged is taken from the cache; the others are shared out over worker processes. The result is
the same whichever path each aircraft took.

Kept per aircraft, under one key: its full figures (`aircraft/`), and apart its summary (`summaries/`:
findings before reviews, pattern keys, figure counts, record text), so that a rebuild reads only the
summary of an aircraft whose pages it does not render again. Patterns are kept once each (`patterns/`).
"""
from __future__ import annotations

import functools
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path

from registry.check.rules import aircraft_discrepancies
from registry.compute.aircraft import cable_results, compute_aircraft
from registry.core.model import Aircraft, Fleet
from registry.core.progress import QUIET, Progress
from registry.core.results import (AircraftPart, AircraftSummary, FleetResults, PatternResult, cosite_cells,
                                   figure_uses)
from registry.incremental import DiskCache, key_of, ordered_map
from registry.output import record


@dataclass
class Stores:
    """The cache namespaces this stage reads and fills (each keeps nothing when the cache is off)."""

    parts: DiskCache
    summaries: DiskCache
    patterns: DiskCache

    @classmethod
    def at(cls, cache_dir: Path | None) -> Stores:
        return cls(DiskCache(cache_dir, "aircraft", AircraftPart),
                   DiskCache(cache_dir, "summaries", AircraftSummary, also=(record.ShareText,)),
                   DiskCache(cache_dir, "patterns", PatternResult))


def evaluate_aircraft(fleet: Fleet, aircraft: Aircraft, as_of: date) -> tuple[AircraftPart, AircraftSummary,
                                                                               dict[str, PatternResult]]:
    """One aircraft through compute and check: its full figures, its summary, its patterns."""
    part, patterns = compute_aircraft(fleet, aircraft, as_of)
    summary = AircraftSummary(
        pattern_of={position: result.pattern_key for (_, position), result in part.installations.items()},
        findings=tuple(aircraft_discrepancies(fleet, aircraft, part.installations, part.pairs, part.cosite)),
        figure_uses=figure_uses(part.installations.values(), part.pairs),
        record=record.share_text(record.aircraft_record(aircraft, part.installations, part.pairs,
                                                        Path(fleet.data_dir), part.cosite)),
        cosite=cosite_cells(part.cosite))
    return part, summary, patterns


def evaluate_fleet(fleet: Fleet, as_of: date, cache_dir: Path | None = None, workers: int = 1,
                   progress: Progress = QUIET, lazy: bool = False) -> FleetResults:
    """All figures and rule findings of the fleet. With `lazy`, an unchanged aircraft contributes its
    summary only; its full figures stay in the cache until `FleetResults.load` asks for them."""
    results = FleetResults(cables=cable_results(fleet))
    stores = Stores.at(cache_dir)
    known: dict[str, PatternResult] = {}  # patterns by content key, each read or computed once
    parts: dict[str, AircraftPart] = {}
    todo = _reuse(fleet, as_of, stores, results, parts, known, lazy)
    _compute(fleet, as_of, stores, results, parts, known, todo, workers, progress, lazy)
    _merge(fleet, results, parts, known)
    results.loader = functools.partial(_load_parts, fleet, as_of, stores.parts)
    return results


def _reuse(fleet: Fleet, as_of: date, stores: Stores, results: FleetResults, parts: dict[str, AircraftPart],
           known: dict[str, PatternResult], lazy: bool) -> list[tuple[str, str]]:
    """Take each unchanged aircraft from the cache; the (aircraft id, key) of those still to compute."""
    todo = []
    for aircraft in fleet.aircraft.values():
        key = key_of(fleet.input_keys[aircraft.id], as_of.isoformat()) if aircraft.id in fleet.input_keys else ""
        if key:
            results.aircraft_keys[aircraft.id] = key
        summary = stores.summaries.get(key) if key else None
        usable = (isinstance(summary, AircraftSummary)
                  and all(_known_pattern(pattern_key, known, stores.patterns)
                          for pattern_key in set(summary.pattern_of.values()) if pattern_key))
        part = stores.parts.get(key) if usable and not lazy else None
        if not usable or (part is None and not lazy):  # not computed before, or gone from the cache
            todo.append((aircraft.id, key))
            continue
        results.summaries[aircraft.id] = summary
        if part is None:
            results.unloaded.add(aircraft.id)
        else:
            parts[aircraft.id] = part
    return todo


def _compute(fleet: Fleet, as_of: date, stores: Stores, results: FleetResults, parts: dict[str, AircraftPart],
             known: dict[str, PatternResult], todo: list[tuple[str, str]], workers: int, progress: Progress,
             lazy: bool) -> None:
    """Evaluate the aircraft in `todo` over `workers` processes. With `lazy` and a cache, a worker puts
    an aircraft's full figures straight into the cache and hands back its summary only; each process
    hands back each pattern the parent lacks once."""
    sent = set(known)

    def one(job: tuple[str, str]) -> tuple[AircraftPart | None, AircraftSummary, dict[str, PatternResult]]:
        aircraft_id, key = job
        part, summary, patterns = evaluate_aircraft(fleet, fleet.aircraft[aircraft_id], as_of)
        fresh = {pattern_key: pattern for pattern_key, pattern in patterns.items() if pattern_key not in sent}
        sent.update(fresh)
        if key:
            stores.parts.put(key, part)
            if lazy:
                return None, summary, fresh
        return part, summary, fresh

    progress.stage("computing aircraft", len(todo))
    computed = ordered_map(one, todo, workers, progress)
    # the generator first, so that zip runs it to its end and its worker pool is closed
    for (part, summary, patterns), (aircraft_id, key) in zip(computed, todo):
        if part is None:
            results.unloaded.add(aircraft_id)
        else:
            parts[aircraft_id] = part
        results.summaries[aircraft_id] = summary
        for pattern_key, pattern in patterns.items():
            if pattern_key not in known:
                known[pattern_key] = pattern
                stores.patterns.put(pattern_key, pattern)
        if key:
            stores.summaries.put(key, summary)


def _merge(fleet: Fleet, results: FleetResults, parts: dict[str, AircraftPart],
           known: dict[str, PatternResult]) -> None:
    """Gather the aircraft's results in id order: the same fleet gives the same results."""
    for aircraft_id, aircraft in fleet.aircraft.items():
        summary = results.summaries[aircraft_id]
        if summary.record is not None:  # the record text is kept once, apart
            results.records[aircraft_id] = summary.record
            results.summaries[aircraft_id] = summary._replace(record=None)
        if aircraft_id in parts:
            results.installations.update(parts[aircraft_id].installations)
            results.pairs += parts[aircraft_id].pairs
            if parts[aircraft_id].cosite is not None:
                results.cosite[aircraft_id] = parts[aircraft_id].cosite
        for position, installation in aircraft.installations.items():
            pattern_key = summary.pattern_of.get(position)
            if pattern_key and pattern_key not in results.patterns:  # named after the first model using it
                results.patterns[pattern_key] = replace(known[pattern_key], antenna=installation.antenna)


def _load_parts(fleet: Fleet, as_of: date, store: DiskCache, results: FleetResults, aircraft_ids: list[str]) -> None:
    """`FleetResults.loader`: aircraft's full figures from the cache, or computed again if they are gone."""
    for aircraft_id in aircraft_ids:
        part = store.get(results.aircraft_keys.get(aircraft_id, "")) if store.folder is not None else None
        if part is None:
            part = compute_aircraft(fleet, fleet.aircraft[aircraft_id], as_of)[0]
        results.installations.update(part.installations)
        results.pairs += part.pairs
        if part.cosite is not None:
            results.cosite[aircraft_id] = part.cosite
        results.unloaded.discard(aircraft_id)


def _known_pattern(key: str, known: dict[str, PatternResult], store: DiskCache) -> bool:
    """True when the pattern with this content key is in `known`, reading it from `store` if need be."""
    if key not in known:
        pattern = store.get(key)
        if pattern is None:
            return False
        known[key] = pattern
    return True
