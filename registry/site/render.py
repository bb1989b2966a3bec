"""The site as files: `render_site` turns the model, the computed results and the discrepancies into
every file of the site (relative path → text or bytes) without touching the disk.

The pages themselves are made by the `pages_*` modules as descriptions (`pages.Page`) and rendered in
one place (`pages.Renderer`); this module orders the work, renders the aircraft pages (in forked workers
when it can) and keeps the previous build's aircraft pages when nothing they show has changed.
Everything is sorted and nothing depends on the clock, so the same data gives the same bytes.
"""
from __future__ import annotations

from collections import defaultdict
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from datetime import date
from typing import Any, Iterable

import jinja2

from registry.site import plots
from registry.site import pages_registry, plot_files
from registry.site import search as sitesearch
from registry.incremental import ordered_map
from registry.output.comparison import Comparison
from registry.site.changes import changes_page
from registry.incremental import DiskCache, key_of
from registry.core.progress import QUIET, Progress
from registry.core.model import Aircraft, Fleet
from registry.load.history import FleetHistory
from registry.core.results import AircraftPart, Discrepancy, FleetResults, PairResult
from registry.check.reviews import finding_order
from registry.site.context import (AircraftPieces, SiteData, patterns_by_model, place_findings,
                                   site_data, with_findings)
from registry.site.environment import CHANGES_NAV, NAV_ITEMS, environment, static_files
from registry.site.format import plain_text
from registry.site.info import BuildInfo
from registry.site.pages import Output, Renderer, page
from registry.site.pages_aircraft import aircraft_outputs, output_paths
from registry.site.pages_cosite import cosite_outputs, type_cosite_pages
from registry.site.pages_catalogue import antenna_pages, cable_pages, services_page
from registry.site.pages_fleet import audit_pages, fleet_page, search_pages
from registry.site.pages_methods import methods_page
from registry.site.pages_print import (aircraft_report_page, aircraft_report_path, fleet_report_page, stamped,
                                      unstamped)
from registry.site.paths import SEARCH_PATHS, aircraft_path, installation_path
from registry.site.views import installation_row

REUSE = b"\x00reuse the previous build's file\x00"
"""Stands for a file's content when the previous build's file can be kept as it is."""

FileWriter = Callable[[str, str | bytes], None]


@dataclass
class Incremental:
    """Which aircraft pages the previous build already holds. `previous` maps an aircraft id to the page
    key and files of the previous build; `current` is filled with this build's, for the next one."""

    previous: dict[str, dict[str, Any]]
    current: dict[str, dict[str, Any]]
    pieces: DiskCache = field(default_factory=lambda: DiskCache(None, "pieces", AircraftPieces))
    """Each aircraft's `AircraftPieces` by page key, kept across builds with its pages."""


def render_site(fleet: Fleet, results: FleetResults, discrepancies: Iterable[Discrepancy],
                build_info: BuildInfo, comparison: Comparison | None = None,
                plot_store: plots.PlotStore | None = None,
                incremental: Incremental | None = None,
                writer: FileWriter | None = None, workers: int = 1,
                progress: Progress = QUIET, history: FleetHistory | None = None,
                as_of: date | None = None) -> dict[str, str | bytes]:
    """Every file of the site, keyed by its path relative to the site root. With a `comparison` to an
    earlier build, the site also gets a changes page and each changed page a mark. Plots come from
    `plot_store` (drawn once per content; kept on disk when the store has a cache folder). With
    `incremental`, an aircraft whose pages would come out as in the previous build is not rendered
    again: its files are given as REUSE. With a `writer` and several `workers`, the aircraft pages are
    rendered in forked processes that hand each file straight to `writer(path, content)`; the returned
    dict then holds the other files only. `history`: the aircraft files' git history for the aircraft
    pages' timelines (`load.history.fleet_history`). `as_of`: the date the results were computed as of,
    which the pages print (default: the data folder's, `load.git.as_of_date`)."""
    site = start_site(fleet, results, build_info, comparison, plot_store, incremental, writer, workers,
                      history=history, as_of=as_of)
    return finish_site(site, discrepancies, {}, workers, progress)


@dataclass
class SiteRun:
    """A site being rendered: the context every page shares (without the findings until `finish_site`),
    the files made so far, and the aircraft pages' renderer."""

    data: SiteData
    put: Renderer
    store: plots.PlotStore
    aircraft: AircraftRun
    files: dict[str, str | bytes]


def start_site(fleet: Fleet, results: FleetResults, build_info: BuildInfo, comparison: Comparison | None = None,
               plot_store: plots.PlotStore | None = None, incremental: Incremental | None = None,
               writer: FileWriter | None = None, workers: int = 1,
               model_patterns: dict[str, set[str]] | None = None, history: FleetHistory | None = None,
               as_of: date | None = None) -> SiteRun:
    """What the pages share, made once: the environment, the pattern plots (every pattern must be in
    `results.patterns`; `model_patterns` gives each antenna model's, when not every aircraft has its
    figures or summary yet), the static files. The aircraft pages can be rendered from here on, one by
    one as their figures come (`AircraftRun.render_fresh`)."""
    env = environment()
    for name in env.list_templates(filter_func=lambda name: name.endswith(".html")):
        env.get_template(name)  # compiled here, once: the workers forked later inherit them
    pages_registry.forget()  # links to registry lines are kept per process; this build's files may differ
    store = plot_store or plots.PlotStore()
    model_patterns = patterns_by_model(fleet, results) if model_patterns is None else model_patterns
    patterns = plot_files.pattern_plots(results, model_patterns, store, workers)
    data = site_data(fleet, results, [], build_info, comparison, env, model_patterns,
                     {path: drawn.alt for path, drawn in patterns.items()}, history, as_of)
    put = Renderer(env, shared_context(data), store)
    files: dict[str, str | bytes] = dict(static_files())
    files.update((path, drawn.svg) for path, drawn in patterns.items())
    return SiteRun(data, put, store, AircraftRun(data, env, put, incremental, writer), files)


def finish_site(site: SiteRun, discrepancies: Iterable[Discrepancy], pieces: dict[str, AircraftPieces],
                workers: int = 1, progress: Progress = QUIET) -> dict[str, str | bytes]:
    """The rest of the site once every finding is known: the aircraft pages not rendered yet (`pieces`
    holds those that were), the fleet page and the fleet-wide pages."""
    data = with_findings(site.data, discrepancies)
    site.aircraft.data = data
    files = site.files
    files.update(site.put([fleet_page(data)]))
    pieces.update(site.aircraft.render_all(files, workers, progress, skip=set(pieces)))
    progress.stage("rendering fleet pages", 1)
    files.update(render_one_by_one(site, fleet_wide_pages(data, pieces, site.store)))
    return dict(sorted(files.items()))


def render_one_by_one(site: SiteRun, outputs: Iterable[Output]) -> dict[str, str | bytes]:
    """Render `outputs` as they come: with a writer, each file is handed to it at once and the files
    not yet written (none) are returned, else all of them are. A large fleet's fleet-wide pages run to
    megabytes each (every aircraft's margin on the airframe type's interference page, the search index),
    and neither their contexts nor their text are then held all at once."""
    if site.aircraft.writer is None:
        return site.put(outputs)
    for output in outputs:
        for path, content in site.put([output]).items():
            site.aircraft.writer(path, content)
    return {}


def shared_context(data: SiteData) -> dict[str, Any]:
    """What every page's template is given besides its own context."""
    return {"build": data.build, "site": {"title": data.fleet.site_title, "operator": data.fleet.operator},
            "nav_items": NAV_ITEMS + ((CHANGES_NAV,) if data.comparison is not None else ())}


def fleet_wide_pages(data: SiteData, pieces: dict[str, AircraftPieces], store: plots.PlotStore) -> Iterator[Output]:
    """The catalogue, services, audit, methods and search pages (and the changes page with a comparison),
    made one after the other as they are rendered."""
    yield from antenna_pages(data, pieces)
    yield from cable_pages(data, pieces, plot_files.cable_plots(data.results, list(data.fleet.cables), store))
    yield services_page(data, pieces)
    yield from audit_pages(data)
    yield methods_page(data)
    yield from type_cosite_pages(data)
    yield from search_pages(data, pieces)
    yield fleet_report_page(data)
    if data.comparison is not None:
        yield page("changes.html", "changes.html", "changes", "Changes in this build",
                   [("Fleet", "index.html"), ("Changes", None)],
                   **changes_page(data.comparison, aircraft_href=aircraft_path, installation_href=installation_path))


class AircraftRun:
    """Renders the aircraft pages, in this process or in forked workers alike, and keeps the previous
    build's pages of an aircraft when nothing they show has changed. Remembers, per process, the page
    keys it worked out and the co-site pairs by installation."""

    def __init__(self, data: SiteData, env: jinja2.Environment, put: Renderer, incremental: Incremental | None,
                 writer: FileWriter | None = None):
        self.data = data
        self.put = put
        self.incremental = incremental
        self.writer = writer
        self.use_rows = env.get_template("partials/use_rows.html").module
        self.page_keys: dict[str, str] = {}
        self.pairs_of: dict[tuple[str, str], list] = defaultdict(list)  # filled once the figures are loaded

    def render_all(self, files: dict[str, str | bytes], workers: int, progress: Progress,
                   skip: set[str] = frozenset()) -> dict[str, AircraftPieces]:
        """Every aircraft's pages but those in `skip` (reused ones given as REUSE in `files`); each
        aircraft's pieces."""
        pieces: dict[str, AircraftPieces] = {}
        todo = [aircraft for aircraft in self.data.fleet.aircraft.values()
                if aircraft.id not in skip and not self.reuse(aircraft, files, pieces)]
        progress.stage("rendering aircraft", len(todo))
        # in worker processes only when their pages can be written from there; the generator first in
        # zip, so that it is run to its end and its workers are closed
        entries = ordered_map(lambda aircraft: self.render(aircraft, files),
                              todo, workers if self.writer else 1, progress, warm_by=lambda aircraft: aircraft.airframe)
        for (entry, made), aircraft in zip(entries, todo):
            pieces[aircraft.id] = made
            self.keep(aircraft.id, entry)
        return pieces

    def keep(self, aircraft_id: str, entry: dict[str, Any] | None) -> None:
        """Remember, in the parent, the pages an aircraft rendered in a worker has, for the next build (its
        pieces are in the cache already: `render`)."""
        if entry is not None:
            self.incremental.current[aircraft_id] = entry

    def render_fresh(self, aircraft: Aircraft, part: AircraftPart, findings: list[Discrepancy]
                     ) -> tuple[dict[str, Any] | None, AircraftPieces]:
        """An aircraft's pages from the figures it was just given and its findings (reviews applied),
        before the rest of the fleet is known; then lets go of them. Its pages show nothing of other
        aircraft, so they come out as `render_all` would make them."""
        results = self.data.results
        results.installations.update(part.installations)
        if part.cosite is not None:
            results.cosite[aircraft.id] = part.cosite
        place_findings(self.data.by_position, self.data.by_aircraft, sorted(findings, key=finding_order))
        try:
            return self.render(aircraft, {}, part.pairs)
        finally:
            results.unload(aircraft.id, aircraft.installations)
            results.unloaded.discard(aircraft.id)
            self.data.by_aircraft.pop(aircraft.id, None)
            for position in aircraft.installations:
                self.data.by_position.pop((aircraft.id, position), None)

    def reuse(self, aircraft: Aircraft, files: dict[str, str | bytes], pieces: dict[str, AircraftPieces]) -> bool:
        """True (and the files given as REUSE) when the previous build's pages of this aircraft show what
        this build would (same figures' inputs, reviews, change marks, and the tool's code and templates)."""
        if self.incremental is None:
            return False
        key = self.page_key(aircraft)
        before = self.incremental.previous.get(aircraft.id)
        if not key or not before or before.get("key") != key:
            return False
        kept = self.incremental.pieces.get(key)
        report = stamped(self.data, kept.report) if isinstance(kept, AircraftPieces) else None
        if report is None:
            return False
        pieces[aircraft.id] = kept._replace(report="")
        for path in before["files"]:
            files[path] = REUSE
        if self.writer is None:
            files[aircraft_report_path(aircraft.id)] = report
        else:  # now: a thousand reports are not held until the end
            self.writer(aircraft_report_path(aircraft.id), report)
        self.incremental.current[aircraft.id] = before
        return True

    def render(self, aircraft: Aircraft, files: dict[str, str | bytes], pairs: list[PairResult] | None = None
               ) -> tuple[dict[str, Any] | None, AircraftPieces]:
        """The aircraft's pages, handed to the writer (or put in `files` without one); its entry for the
        next build's reuse and its pieces of the fleet-wide pages. Runs in the parent or in a forked
        worker alike. `pairs`: the aircraft's pairs when they are not in the results."""
        results = self.data.results
        read_here = results.load([aircraft.id])  # its full figures, from the cache if need be
        if pairs is not None or read_here or not self.pairs_of:
            self.pairs_of.clear()
            for pair in sorted(results.pairs if pairs is None else pairs, key=lambda p: (p.position_a, p.position_b)):
                self.pairs_of[(pair.aircraft, pair.position_a)].append(pair)
                self.pairs_of[(pair.aircraft, pair.position_b)].append(pair)
        outputs = aircraft_outputs(self.data, aircraft, self.pairs_of) + cosite_outputs(self.data, aircraft)
        produced = self.put(outputs)
        produced[aircraft_report_path(aircraft.id)], report = self.report(aircraft)
        key = self.page_key(aircraft)
        if self.incremental is not None and key:
            self.incremental.current[aircraft.id] = {"key": key, "files": output_paths(outputs)}
        if read_here:  # let go again: a worker renders hundreds of aircraft
            results.unload(aircraft.id, aircraft.installations)
        if self.writer is None:
            files.update(produced)
        else:
            for path, content in produced.items():
                self.writer(path, content)
        entry = self.incremental.current.get(aircraft.id) if self.incremental is not None else None
        made = self.pieces_of(aircraft, report)
        if entry is not None:  # kept here, in the worker: a thousand reports do not cross to the parent
            self.incremental.pieces.put(entry["key"], made)
        return entry, made._replace(report="")

    def report(self, aircraft: Aircraft) -> tuple[str, str]:
        """The aircraft's printable report as this build publishes it, and as its pieces keep it (with
        placeholders for the build's revision and dates; "" when it cannot be kept so: `stamped`)."""
        output = aircraft_report_page(self.data, aircraft)
        text = self.put([output])[output.path]
        ready = stamped(self.data, text)
        if ready is None:
            return self.put([unstamped(self.data, output)])[output.path], ""
        return ready, text

    def pieces_of(self, aircraft: Aircraft, report: str = "") -> AircraftPieces:
        """The aircraft's rows in the "where used" tables, links on the services page, search entries and
        report (`report`)."""
        rows: dict[str, list[str]] = defaultdict(list)
        links: dict[str, list[str]] = defaultdict(list)
        for installation in aircraft.installations.values():
            row = installation_row(self.data, aircraft, installation)
            html = str(self.use_rows.use_row(row, "../"))  # catalogue pages sit one folder down
            rows[f"antenna/{installation.antenna}"].append(html)
            rows[f"cable/{installation.feeder.cable}"].append(html)
            links[installation.service].append(str(self.use_rows.service_link(row, "")))
        return AircraftPieces(
            uses={key: (len(items), "\n".join(items)) for key, items in rows.items()},
            service_links={key: (len(items), ", ".join(items)) for key, items in links.items()},
            search=tuple(sitesearch.aircraft_entries(self.data.fleet, aircraft, plain_text, SEARCH_PATHS)),
            report=report)

    def page_key(self, aircraft: Aircraft) -> str:
        """Key of everything an aircraft's pages show, or "" when its figures' inputs are not keyed."""
        if aircraft.id in self.page_keys:  # asked when deciding reuse and again after rendering
            return self.page_keys[aircraft.id]
        figures_key = self.data.results.aircraft_keys.get(aircraft.id)
        if not figures_key:
            return ""
        reviews = [repr(review) for review in self.data.reviews_of.get(aircraft.id, ())]
        marks = [self.data.marks(aircraft.id)] + [self.data.marks(aircraft.id, p) for p in aircraft.installations]
        # key_of holds the templates and the code (diskcache.code_key): a changed template renders every page
        key = key_of(figures_key, *reviews, repr(marks), str(self.data.comparison is not None),
                     history_key(self.data, aircraft))
        self.page_keys[aircraft.id] = key
        return key


def history_key(data: SiteData, aircraft: Aircraft) -> str:
    """What an aircraft page's timeline shows, for its page key."""
    history = data.history
    if history is None:
        return "no history read"
    path = data.src_text(aircraft.src.path)
    return repr((history.aircraft.get(path), history.note, path in history.uncommitted))
