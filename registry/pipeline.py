"""The build, top to bottom: load → compute → check → render → write.

Each stage is finished before the next starts, and no stage reaches back into an earlier one.
"""
from __future__ import annotations

import json
import os
from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import TYPE_CHECKING, NamedTuple

from registry.site import publish
from registry.output import record
from registry.site.info import build_info
from registry.incremental import DiskCache, collector_paused, collector_released, prune, site_key, version_folder
from registry.load.git import as_of_date
from registry.core.model import Fleet, Review
from registry.core.progress import QUIET, Progress
from registry.core.results import Discrepancy, FleetResults

if TYPE_CHECKING:
    from registry import evaluate
    from registry.load.history import FleetHistory
    from registry.output.sides import Side
    from registry.site import render

# The stages (evaluate, reviews, render, plots, the loader, history, compare) are imported in the functions
# that use them: `build` of a site that is already up to date stops before any of them, and must not pay
# for importing numpy's, scipy's and Jinja's worth of modules (about 0.6 s).


@dataclass
class Outcome:
    """Everything one run of the pipeline produced, before rendering."""

    fleet: Fleet
    as_of: date
    results: FleetResults
    discrepancies: list[Discrepancy]
    stale_reviews: list[Review]


def load(data_dir: Path, cache_dir: Path | None = None, workers: int = 1, as_of: date | None = None) -> Fleet:
    """Load and validate the registry (reviews dated up to `as_of` or today: `load_fleet`); raises
    DataError with every problem found."""
    from registry.load.fleet import load_fleet
    return load_fleet(data_dir, cache_dir=cache_dir, workers=workers, as_of=as_of)


def run(data_dir: Path, as_of: date | None = None, cache_dir: Path | None = None,
        workers: int | None = None, progress: Progress = QUIET, lazy: bool = False) -> Outcome:
    """Load, compute and check: every figure and every discrepancy of the registry.

    `as_of` overrides the date measurement ages are counted to (`build.py diff` computes both sides
    of a comparison as of one date). `cache_dir` keeps what depends only on content between runs (the
    same folder `build` uses); `workers` processes share the computation (default: one per core). With
    `lazy`, an aircraft unchanged since the cache last saw it contributes its findings (and pattern keys)
    only, no share of the build record; `FleetResults.load` computes its full figures if they are wanted."""
    from registry import evaluate
    cache_root = version_folder(cache_dir) if cache_dir is not None else None
    try:
        with collector_paused():
            progress.stage("reading the registry", 1)
            workers = workers or os.cpu_count() or 1
            data_as_of = as_of_date(data_dir) if as_of is None else None  # a given date does not date reviews
            fleet = load(data_dir, cache_root, workers, data_as_of)
            progress.advance()
            as_of = as_of or data_as_of
            results = evaluate.evaluate_fleet(fleet, as_of, cache_root, workers, progress, lazy=lazy)
            return _outcome(fleet, as_of, results)
    finally:
        if cache_dir is not None:
            prune(cache_dir)  # entries of earlier code can never be read again


def _compute_and_render(plan: evaluate.Plan, info, cache_root: Path | None, incremental: render.Incremental,
                        write, workers: int, progress: Progress, history: FleetHistory):
    """Compute, check and render each aircraft in one go, in the worker that computed it: its full
    figures never cross between processes or through the cache. Possible without a comparison, since
    then an aircraft's pages show nothing of the other aircraft."""
    from registry import evaluate
    from registry.check import reviews
    from registry.site import plots, render
    fleet = plan.fleet
    site = render.start_site(fleet, plan.results, info, None, plots.PlotStore(cache_root), incremental,
                             write, workers, plan.model_patterns, history, plan.as_of)

    def pages(aircraft, part, summary):
        return site.aircraft.render_fresh(aircraft, part,
                                          reviews.check_fleet(summary.findings, fleet.reviews, fleet.policy))

    with collector_paused():
        rendered = evaluate.compute(plan, workers, progress, then=pages)
        results = evaluate.finish(plan)
    pieces = {}
    for aircraft_id, (entry, made) in rendered.items():
        site.aircraft.keep(aircraft_id, entry)
        pieces[aircraft_id] = made
    return _outcome(fleet, plan.as_of, results), site, pieces


def _compute_then_render(plan: evaluate.Plan, info, baseline: Side | None, cache_root: Path | None, naive: bool,
                         incremental: render.Incremental, write, workers: int, progress: Progress,
                         history: FleetHistory):
    """Compute and check the whole fleet, then start the site: the comparison with `baseline` needs every
    aircraft's record before any page can be rendered."""
    from registry import evaluate
    from registry.output.compare import compare
    from registry.site import plots, render
    fleet = plan.fleet
    with collector_paused():
        evaluate.compute(plan, workers, progress)
        results = evaluate.finish(plan)
    outcome = _outcome(fleet, plan.as_of, results)
    comparison = None
    if baseline is not None:
        comparison = compare(baseline.record, json.loads(record.to_text(outcome)), old_label=baseline.label,
                             new_label=f"registry {fleet.data_dir}")
    site = render.start_site(fleet, results, info, comparison, plots.PlotStore(cache_root, naive), incremental,
                             write, workers, history=history, as_of=plan.as_of)
    return outcome, site, {}


def _outcome(fleet: Fleet, as_of: date, results: FleetResults) -> Outcome:
    """The findings (reviews applied) and stale reviews of computed results."""
    from registry.check import reviews
    found = reviews.check_fleet((finding for aircraft_id in fleet.aircraft
                                 for finding in results.summaries[aircraft_id].findings), fleet.reviews,
                                fleet.policy)
    return Outcome(fleet, as_of, results, found, reviews.stale_reviews(found, fleet.reviews))


class Published(NamedTuple):
    """Where a build published its site, and whether it had to: False when the site was up to date."""

    out_dir: Path
    written: bool


def build(data_dir: Path, out_dir: Path, baseline: Side | None = None, cache_dir: Path | None = None,
          workers: int | None = None, naive: bool = False, progress: Progress = QUIET) -> Published:
    """Load, compute, check and render the registry, then publish it atomically to `out_dir`.

    The site gets the build record (`record.json`); with a `baseline` (a record and its label), also a
    comparison with it (`changes.html`). A site already built from the same inputs (`incremental/sitekey.py`) is
    left as it is. `cache_dir` keeps parsed files, computed figures and drawn plots across builds, in a
    folder of this code's own (`incremental.version_folder`; other versions' folders are removed; all safe to
    delete); `workers` processes share the work (default: one per core). `naive` (the benchmark's
    baseline) keeps nothing and draws every plot for every installation."""
    as_of = as_of_date(data_dir)
    info = build_info(data_dir)
    key = "" if naive else site_key(data_dir, as_of, info, record.dumps(baseline.record)
                                            if baseline is not None else "")
    if key and publish.up_to_date(out_dir, key):
        return Published(out_dir, False)
    from registry import evaluate
    from registry.load.history import fleet_history
    from registry.site import render
    cache_root = version_folder(cache_dir) if cache_dir is not None else None
    incremental = render.Incremental({} if naive else publish.previous_aircraft(out_dir), {},
                                     DiskCache(None if naive else cache_root, "pieces", render.AircraftPieces))
    workers = workers or os.cpu_count() or 1
    try:
        with collector_paused():
            progress.stage("reading the registry", 1)
            fleet = load(data_dir, cache_root, workers, as_of)
            plan = evaluate.prepare(fleet, as_of, cache_root, lazy=True, workers=workers)
            history = fleet_history(data_dir, cache_root=cache_root)  # one git log pass; before the workers fork
            progress.advance()
        with publish.staging_dir(out_dir) as stage:
            target = out_dir.resolve()

            def write(rel_path: str, content: str | bytes) -> None:
                publish.place(stage, target, rel_path, content, render.REUSE)

            if baseline is None and not naive:
                outcome, site, pieces = _compute_and_render(plan, info, cache_root, incremental, write, workers,
                                                            progress, history)
            else:
                outcome, site, pieces = _compute_then_render(plan, info, baseline, cache_root, naive, incremental,
                                                             write, workers, progress, history)
            publish.place_chunks(stage, target, record.RECORD_NAME, record.to_chunks(outcome))
            outcome.results.records.clear()  # written: not held twice
            pages = render.finish_site(site, outcome.discrepancies, pieces, workers, progress)
            for rel_path, content in pages.items():
                write(rel_path, content)
            publish.write_manifest(stage, {"aircraft": incremental.current, "site_key": key})
            progress.advance()
            progress.finish()
    finally:
        collector_released()  # what `collector_paused` froze goes back to the collector
    if cache_dir is not None:
        prune(cache_dir)  # entries of earlier code can never be read again
    return Published(out_dir, True)
