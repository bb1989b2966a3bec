"""Compute and check every aircraft, reusing what an earlier build made: the middle of the pipeline.

For each aircraft: compute its figures (`compute.aircraft`), run the rules over them (`check.rules`),
and write its share of the build record (`output.record`). The stages know nothing of each other or of
the cache; this module puts them together. An aircraft whose inputs (`Fleet.input_keys`) and as-of date
are unchanged is taken from the cache; the others are shared out over worker processes. The result is
the same whichever path each aircraft took.

Kept per aircraft, under its key: its summary (`summaries/`: findings before reviews, pattern keys,
figure counts, record text), all a rebuild needs of an aircraft whose pages it does not render again;
and the same with its findings and pattern keys only (`findings/`), all `check` needs: a thirtieth of the
size, read back twenty times quicker.
Its full figures are not kept: reading them back cost about as much as computing them again, which is
what happens when a page needs them (`FleetResults.load`). Patterns are kept once each (`patterns/`).

A build without a comparison hands each aircraft's full figures to its pages in the worker that
computed them (`compute(..., then=...)`), so they never cross between processes at all.
"""
from __future__ import annotations

import functools
from collections.abc import Callable
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path
from typing import Any, NamedTuple

from registry.check.rules import aircraft_discrepancies
from registry.compute.aircraft import cable_results, compute_aircraft, shared_figures
from registry.compute.antenna import pattern
from registry.core.model import Aircraft, Fleet
from registry.core.progress import QUIET, Progress
from registry.core.results import (AircraftPart, AircraftSummary, FleetResults, PatternResult, cosite_cells,
                                   figure_uses)
from registry.incremental import DiskCache, keep_in, key_of, ordered_map
from registry.output import record


@dataclass
class Stores:
    """The cache namespaces this stage reads and fills (each keeps nothing when the cache is off)."""

    summaries: DiskCache
    findings: DiskCache
    """Each summary's findings and pattern keys only (`findings_only`), under the same key."""
    patterns: DiskCache

    @classmethod
    def at(cls, cache_dir: Path | None) -> Stores:
        return cls(DiskCache(cache_dir, "summaries", AircraftSummary),
                   DiskCache(cache_dir, "findings", AircraftSummary),
                   DiskCache(cache_dir, "patterns", PatternResult))

    def put(self, key: str, summary: AircraftSummary) -> None:
        """An aircraft's summary, whole and as its findings only."""
        self.summaries.put(key, summary)
        self.findings.put(key, findings_only(summary))

    def get(self, key: str, brief: bool) -> AircraftSummary | None:
        """The summary under `key`; with `brief`, its findings and pattern keys are enough (and the whole
        summary is read only when they are not kept)."""
        found = self.findings.get(key) if brief else None
        return found if found is not None else self.summaries.get(key)


def findings_only(summary: AircraftSummary) -> AircraftSummary:
    """What `check` needs of a summary: its findings and pattern keys (no figure counts, record or co-site
    cells, which only the site shows)."""
    return AircraftSummary(pattern_of=summary.pattern_of, findings=summary.findings, figure_uses={})


def evaluate_aircraft(fleet: Fleet, aircraft: Aircraft, as_of: date, brief: bool = False
                      ) -> tuple[AircraftPart, AircraftSummary, dict[str, PatternResult]]:
    """One aircraft through compute and check: its full figures, its summary (with `brief`, its findings
    and pattern keys only: `findings_only`), its patterns."""
    part, patterns = compute_aircraft(fleet, aircraft, as_of)
    summary = AircraftSummary(
        pattern_of={position: result.pattern_key for (_, position), result in part.installations.items()},
        findings=tuple(aircraft_discrepancies(fleet, aircraft, part.installations, part.pairs, part.cosite)),
        figure_uses={})
    if brief:
        return part, summary, patterns
    summary = summary._replace(
        figure_uses=figure_uses(part.installations.values(), part.pairs),
        record=record.pack_share(record.share_text(record.aircraft_record(
            aircraft, part.installations, part.pairs, Path(fleet.data_dir), part.cosite))),
        cosite=cosite_cells(part.cosite))
    return part, summary, patterns


class Plan(NamedTuple):
    """A fleet's evaluation under way: the results so far, the stores, and the aircraft still to compute
    ((aircraft id, key) pairs)."""

    fleet: Fleet
    as_of: date
    results: FleetResults
    stores: Stores
    known: dict[str, PatternResult]
    parts: dict[str, AircraftPart]
    todo: list[tuple[str, str]]
    lazy: bool
    model_patterns: dict[str, set[str]]
    """Each antenna model's pattern keys, over every aircraft."""
    findings_only: bool = False
    """The caller wants each aircraft's findings and pattern keys only (`check`, the history): an aircraft
    computed and not kept in a cache then gets no record share, figure counts or co-site cells (at 1,000
    aircraft those were an eighth of `check --no-cache`)."""


Then = Callable[[Aircraft, AircraftPart, AircraftSummary], Any]
"""What a worker does with an aircraft it has just evaluated, before it lets go of its full figures
(the site renders the aircraft's pages there); whatever it returns is handed back to the parent."""


def evaluate_fleet(fleet: Fleet, as_of: date, cache_dir: Path | None = None, workers: int = 1,
                   progress: Progress = QUIET, lazy: bool = False) -> FleetResults:
    """All figures and rule findings of the fleet. With `lazy`, an unchanged aircraft contributes its
    findings and pattern keys only (`findings_only`: no record share, no figure counts); its full figures
    stay in the cache until `FleetResults.load` asks for them."""
    plan = prepare(fleet, as_of, cache_dir, lazy, workers, brief=lazy)._replace(findings_only=lazy)
    compute(plan, workers, progress)
    return finish(plan)


def prepare(fleet: Fleet, as_of: date, cache_dir: Path | None = None, lazy: bool = False, workers: int = 1,
            brief: bool = False) -> Plan:
    """Take every unchanged aircraft from the cache (with `brief`, its findings and pattern keys only), and
    work out in this process what the aircraft still to compute share (patterns, modelled impedances), so
    that workers forked afterwards inherit it. Every pattern the fleet shows is then in `results.patterns`,
    named after the first model that uses it."""
    keep_in(cache_dir)  # resonant lengths and impedance sweeps kept between runs (`incremental.kept`)
    plan = Plan(fleet, as_of, FleetResults(cables=cable_results(fleet)), Stores.at(cache_dir), {}, {}, [], lazy, {})
    plan.todo.extend(_reuse(fleet, as_of, plan.stores, plan.results, plan.known, lazy, brief))
    for pattern_key, pattern in shared_figures(fleet, [aircraft_id for aircraft_id, _ in plan.todo]).items():
        if pattern_key not in plan.known:
            plan.known[pattern_key] = pattern
            plan.stores.patterns.put(pattern_key, pattern)
    for aircraft, installation in fleet.installations():
        pattern_key = _pattern_key(plan, aircraft, installation)
        if pattern_key:
            plan.model_patterns.setdefault(installation.antenna, set()).add(pattern_key)
        if pattern_key and pattern_key in plan.known and pattern_key not in plan.results.patterns:
            plan.results.patterns[pattern_key] = replace(plan.known[pattern_key], antenna=installation.antenna)
    return plan


def _pattern_key(plan: Plan, aircraft: Aircraft, installation) -> str | None:
    """The content key of an installation's pattern: from its aircraft's cached summary, or computed
    (each distinct pattern is in the per-process cache by now)."""
    summary = plan.results.summaries.get(aircraft.id)
    if summary is not None:
        return summary.pattern_of.get(installation.position)
    return pattern(plan.fleet.antennas[installation.antenna],
                   plan.fleet.services[installation.service].design_freq_mhz).key


def finish(plan: Plan) -> FleetResults:
    """The results in fleet order, with a loader for the full figures left in the cache."""
    _merge(plan.fleet, plan.results, plan.parts, plan.known)
    plan.results.loader = functools.partial(_load_parts, plan.fleet, plan.as_of)
    return plan.results


def _reuse(fleet: Fleet, as_of: date, stores: Stores, results: FleetResults, known: dict[str, PatternResult],
           lazy: bool, brief: bool = False) -> list[tuple[str, str]]:
    """With `lazy`, take each unchanged aircraft's summary from the cache (read in this process: see
    `cached_map`; with `brief`, its findings and pattern keys are enough); the (aircraft id, key) of those
    still to compute (every aircraft without `lazy`: their full figures are wanted)."""
    keys = {aircraft_id: key_of(fleet.input_keys[aircraft_id], as_of.isoformat()) if aircraft_id in fleet.input_keys
            else "" for aircraft_id in fleet.aircraft}
    results.aircraft_keys.update((aircraft_id, key) for aircraft_id, key in keys.items() if key)
    wanted = [key if lazy else "" for key in keys.values()]
    summaries = [stores.get(key, brief) if key else None for key in wanted]
    todo = []
    for (aircraft_id, key), summary in zip(keys.items(), summaries):
        usable = (isinstance(summary, AircraftSummary)
                  and all(_known_pattern(pattern_key, known, stores.patterns)
                          for pattern_key in set(summary.pattern_of.values()) if pattern_key))
        if not usable:  # not computed before, or gone from the cache
            todo.append((aircraft_id, key))
            continue
        _keep(results, aircraft_id, summary)
        results.unloaded.add(aircraft_id)
    return todo


def compute(plan: Plan, workers: int, progress: Progress = QUIET, then: Then | None = None) -> dict[str, Any]:
    """Evaluate the aircraft still to compute over `workers` processes. With `lazy` and a cache, a worker
    hands back an aircraft's summary only (its full figures are computed again if a page needs them);
    each process hands back each pattern the parent lacks once. With `then`, a worker runs it on each
    aircraft it has evaluated and hands back what it returns instead of the full figures: by aircraft id."""
    fleet, as_of, stores, results = plan.fleet, plan.as_of, plan.stores, plan.results
    sent = set(plan.known)

    def one(job: tuple[str, str]) -> tuple[AircraftPart | None, AircraftSummary, dict[str, PatternResult], Any]:
        aircraft_id, key = job
        aircraft = fleet.aircraft[aircraft_id]
        part, summary, patterns = evaluate_aircraft(fleet, aircraft, as_of, brief=plan.findings_only and not key)
        fresh = {pattern_key: pattern for pattern_key, pattern in patterns.items() if pattern_key not in sent}
        sent.update(fresh)
        if key:
            stores.put(key, summary)  # here, in the worker: encoding it takes milliseconds
        if then is not None:
            return None, summary, fresh, then(aircraft, part, summary)
        if plan.lazy:  # the summary only: the parent never holds the whole fleet's figures
            return None, summary, fresh, None
        return part, summary, fresh, None

    progress.stage("computing aircraft", len(plan.todo))
    done: dict[str, Any] = {}
    # the first aircraft of each airframe type in this process: the workers inherit its type's caches
    computed = ordered_map(one, plan.todo, workers, progress, warm_by=lambda job: fleet.aircraft[job[0]].airframe)
    # the generator first, so that zip runs it to its end and its worker pool is closed
    for (part, summary, patterns, extra), (aircraft_id, key) in zip(computed, plan.todo):
        if part is None:
            results.unloaded.add(aircraft_id)
        else:
            plan.parts[aircraft_id] = part
        _keep(results, aircraft_id, summary)
        done[aircraft_id] = extra
        for pattern_key, pattern in patterns.items():
            if pattern_key not in plan.known:
                plan.known[pattern_key] = pattern
                stores.patterns.put(pattern_key, pattern)
    return done


def _keep(results: FleetResults, aircraft_id: str, summary: AircraftSummary) -> None:
    """An aircraft's summary, with its share of the build record (packed where it was computed:
    `record.pack_share`) held apart until the record is written."""
    if summary.record is not None:
        results.records[aircraft_id] = summary.record
        summary = summary._replace(record=None)
    shared = results.figure_use_of
    results.summaries[aircraft_id] = summary._replace(
        figure_uses={shared.setdefault(use, use): count for use, count in summary.figure_uses.items()})


def _merge(fleet: Fleet, results: FleetResults, parts: dict[str, AircraftPart],
           known: dict[str, PatternResult]) -> None:
    """Gather the aircraft's results in id order: the same fleet gives the same results."""
    for aircraft_id, aircraft in fleet.aircraft.items():
        summary = results.summaries[aircraft_id]
        if aircraft_id in parts:
            results.installations.update(parts[aircraft_id].installations)
            results.pairs += parts[aircraft_id].pairs
            if parts[aircraft_id].cosite is not None:
                results.cosite[aircraft_id] = parts[aircraft_id].cosite
        for position, installation in aircraft.installations.items():
            pattern_key = summary.pattern_of.get(position)
            if pattern_key and pattern_key not in results.patterns:  # named after the first model using it
                results.patterns[pattern_key] = replace(known[pattern_key], antenna=installation.antenna)


def _load_parts(fleet: Fleet, as_of: date, results: FleetResults, aircraft_ids: list[str]) -> None:
    """`FleetResults.loader`: aircraft's full figures, computed again."""
    for aircraft_id in aircraft_ids:
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
