"""Jinja environment and page contexts: one context builder per page kind.

`render_site` turns the model, the computed results and the discrepancies into every file of the site
(relative path → text or bytes) without touching the disk. Links are relative (each page gets a `root`
prefix for its depth), so the site works from file://, a file share or any sub-path of a web server.
Everything is sorted and nothing depends on the clock, so the same data gives the same bytes.
"""
from __future__ import annotations

import csv
import functools
import io
import json
import math
import os
import re
import subprocess
from collections import Counter, defaultdict
from dataclasses import dataclass, field, replace
from datetime import datetime, timezone
from pathlib import Path
from collections.abc import Callable
from typing import Any, Iterable, NamedTuple

import jinja2
from markupsafe import Markup
import markdown
import nh3

from registry import __version__
from registry.site import plots
from registry.site import drawing as sitedrawing
from registry.site import search as sitesearch
from registry.incremental import ordered_map
from registry.output.diff import Comparison, changes_page
from registry.incremental import DiskCache, array_key, key_of, text_key
from registry.core.progress import QUIET, Progress
from registry.core.model import Aircraft, Fleet, Installation
from registry.core.results import (ALL_STATES, OPEN_STATES, SEVERITIES, Discrepancy, Figure, FleetResults,
                              InstallationResult, PatternResult, figure_uses)

TEMPLATE_DIR = Path(__file__).resolve().parent.parent.parent / "site_templates"
STATIC_DIR = TEMPLATE_DIR / "static"
PACKAGE_PREFIX = str(Path(__file__).resolve().parent.parent.parent) + "/"
"""Shipped files (registry/data/...) are shown relative to the package's folder, never as absolute paths."""

SEVERITY_LABELS = {"blocking": "Blocking", "concern": "Concern", "advisory": "Advisory"}
STATUS_LABELS = {**SEVERITY_LABELS, "clear": "No open findings"}
STATE_LABELS = {"open": "Open", "reopened": "Reopened", "accepted": "Accepted",
                "action-raised": "Action raised", "no-fault": "No fault found"}

NAV_ITEMS = (
    ("fleet", "Fleet", "index.html"),
    ("services", "Services", "services.html"),
    ("antennas", "Antennas", "antennas.html"),
    ("cables", "Cables", "cables.html"),
    ("audit", "Audit", "audit.html"),
    ("methods", "Methods & cautions", "methods.html"),
    ("search", "Search", "search.html"),
)
CHANGES_NAV = ("changes", "Changes", "changes.html")
"""Shown in the navigation only when the build was compared with an earlier one."""

FIGURE_GROUPS = {
    "length": "Element length",
    "band": "Band coverage",
    "vswr": "Impedance and VSWR",
    "measured": "Measurement",
    "feeder": "Feeder",
    "ground": "Ground plane",
    "pattern": "Radiation pattern",
    "isolation": "Isolation",
    "cable": "Cable attenuation fit",
}

FEEDER_COMPONENT = re.compile(r"^feeder\.(?P<part>(?!return_|total_)[a-z_]+)_loss_db$")
FEEDER_TOTAL_KEY = "feeder.total_loss_db"

NOTES_TAGS = {"p", "br", "strong", "em", "b", "i", "code", "pre", "ul", "ol", "li", "blockquote", "a",
              "h3", "h4", "h5", "h6", "table", "thead", "tbody", "tr", "th", "td", "hr", "del", "sup", "sub"}
SAFE_LINK = re.compile(r"^(https?:|mailto:)", re.IGNORECASE)


# ---- build information ---------------------------------------------------------------------------------


@dataclass(frozen=True)
class BuildInfo:
    """What a reader needs to tell two builds apart; never the wall-clock time of the build."""

    revision: str
    time: str
    version: str


def _git(data_dir: Path, *args: str) -> str | None:
    try:
        done = subprocess.run(["git", "-C", str(data_dir), *args], capture_output=True, text=True, check=False,
                              timeout=30)
    except (OSError, subprocess.TimeoutExpired):
        return None
    return done.stdout.strip() if done.returncode == 0 else None


def _utc(epoch: float) -> str:
    return datetime.fromtimestamp(int(epoch), tz=timezone.utc).strftime("%Y-%m-%d %H:%M:%S UTC")


def build_info(data_dir: Path, environ: dict[str, str] | None = None) -> BuildInfo:
    """Revision and time of the data, for the footer.

    Revision: the last commit touching `data_dir` (with `+modified` when its files differ from it), or
    "not in version control". Time: SOURCE_DATE_EPOCH when set, else the data's last commit time, else
    the newest data file's modification time; never the time of the build.
    """
    environ = os.environ if environ is None else environ
    data_dir = Path(data_dir).resolve()
    revision = "not in version control"
    commit_time: str | None = None
    if _git(data_dir, "rev-parse", "--is-inside-work-tree") == "true":
        last = _git(data_dir, "log", "-1", "--format=%h %ct", "--", ".")
        if last:
            short, commit_time = last.split()
            dirty = _git(data_dir, "status", "--porcelain", "--untracked-files=all", "--", ".")
            revision = short + ("+modified" if dirty else "")
        else:
            revision = "not committed yet"
    epoch_text = environ.get("SOURCE_DATE_EPOCH", "").strip()
    if epoch_text.isdigit():
        time = _utc(int(epoch_text))
    elif commit_time:
        time = _utc(int(commit_time))
    else:
        mtimes = [path.stat().st_mtime for path in data_dir.rglob("*") if path.is_file()]
        time = _utc(max(mtimes)) if mtimes else "unknown"
    return BuildInfo(revision=revision, time=time, version=__version__)


# ---- formatting ----------------------------------------------------------------------------------------


def fmt(value: Any, unit: str = "") -> str:
    """A value for display: numbers to five significant figures without trailing zeros."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        number = float(value)
        if math.isnan(number):
            return "n/a"  # the figure does not apply (a cut that never falls 3 dB, no side lobe)
        if not math.isfinite(number):
            text = "∞" if number > 0 else "−∞"
        elif number == 0:
            text = "0"
        else:
            decimals = min(max(0, 4 - math.floor(math.log10(abs(number)))), 8)
            text = f"{number:.{decimals}f}"
            if "." in text:
                text = text.rstrip("0").rstrip(".")
            text = text.replace("-", "−")
    else:
        text = str(value)
    return f"{text} {unit}" if unit and text != "—" else text


def exact(value: Any, unit: str = "") -> str:
    """A value as the register holds it (coordinates, band edges, lengths): no rounding."""
    if isinstance(value, float):
        text = format(value, ".12g").replace("-", "−")
        return f"{text} {unit}" if unit else text
    return fmt(value, unit)


def notes_html(text: str) -> str:
    """Markdown notes to HTML, sanitised with an allow-list: no scripts, handlers, images or odd links."""
    if not text.strip():
        return ""
    raw = markdown.markdown(text, extensions=["tables", "sane_lists"], output_format="html")

    def keep(tag: str, attribute: str, value: str) -> str | None:
        if tag == "a" and attribute == "href":
            return value if SAFE_LINK.match(value.strip()) else None
        return value

    return nh3.clean(raw, tags=NOTES_TAGS, attributes={"a": {"href", "title"}, "th": {"align"}, "td": {"align"}},
                     url_schemes={"http", "https", "mailto"}, link_rel="noopener noreferrer",
                     attribute_filter=keep, strip_comments=True)


def plain_text(text: str) -> str:
    """Notes as plain words, for the search index."""
    html = notes_html(text)
    return re.sub(r"\s+", " ", nh3.clean(html, tags=set())).strip() if html else ""


def safe_name(key: str) -> str:
    """A file name for a content key: the key itself when it is tame, else a slug with a digest."""
    if re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]{0,79}", key) and ".." not in key:
        return key
    slug = re.sub(r"[^A-Za-z0-9_-]+", "-", key).strip("-")[:48] or "key"
    return f"{slug}-{text_key(key)}"


def anchor(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9_-]", "_", text.replace("/", "__").replace("+", "--"))


# ---- paths ---------------------------------------------------------------------------------------------


def aircraft_path(aircraft_id: str) -> str:
    return f"aircraft/{aircraft_id}.html"


def installation_path(aircraft_id: str, position: str) -> str:
    return f"aircraft/{aircraft_id}/{position}.html"


def antenna_path(model_id: str) -> str:
    return f"antennas/{model_id}.html"


def cable_path(cable_id: str) -> str:
    return f"cables/{cable_id}.html"


def service_href(service_id: str) -> str:
    return f"services.html#svc-{anchor(service_id)}"


SEARCH_PATHS = {"aircraft": aircraft_path, "installation": installation_path, "antenna": antenna_path,
                "cable": cable_path, "service": service_href}
"""Where the search index points for each kind of thing."""


def pattern_plot_path(key: str, model_id: str, named_after: str) -> str:
    """A pattern's plot as drawn for one antenna model. Models of the same content share the pattern
    but each plot carries its model's name, so a model other than the one the pattern is named after
    gets a file of its own."""
    name = key if model_id == named_after else f"{key}~{model_id}"
    return f"plots/pattern/{safe_name(name)}.svg"


def vswr_plot_path(key: str) -> str:
    """VSWR plots are shared by installations with the same curves, so they are named by content."""
    return f"plots/vswr/{key}.svg"


def cable_plot_path(cable_id: str) -> str:
    return f"plots/cable/{cable_id}.svg"


def root_of(path: str) -> str:
    """The relative prefix from a page back to the site root."""
    return "../" * path.count("/")


# ---- environment ---------------------------------------------------------------------------------------


def environment() -> jinja2.Environment:
    """Autoescaping on, undefined variables fail loudly."""
    env = jinja2.Environment(
        loader=jinja2.FileSystemLoader(TEMPLATE_DIR),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        keep_trailing_newline=True,
        trim_blocks=True,
        lstrip_blocks=True,
    )
    env.filters["fmt"] = fmt
    env.filters["exact"] = exact
    env.globals.update(severity_labels=SEVERITY_LABELS, status_labels=STATUS_LABELS, state_labels=STATE_LABELS,
                       nav_items=NAV_ITEMS)
    return env


# ---- the site ------------------------------------------------------------------------------------------


def severity_rank(name: str) -> int:
    return SEVERITIES.index(name) if name in SEVERITIES else len(SEVERITIES)


REUSE = b"\x00reuse the previous build's file\x00"
"""Stands for a file's content when the previous build's file can be kept as it is."""


@dataclass
class Incremental:
    """Which aircraft pages the previous build already holds. `previous` maps an aircraft id to the page
    key and files of the previous build; `current` is filled with this build's, for the next one."""

    previous: dict[str, dict[str, Any]]
    current: dict[str, dict[str, Any]]
    pieces: DiskCache = field(default_factory=lambda: DiskCache(None, "pieces"))
    """Each aircraft's `AircraftPieces` by page key, kept across builds with its pages."""


class AircraftPieces(NamedTuple):
    """What one aircraft adds to the fleet-wide pages, made when its own pages are rendered and kept with
    them, so that an aircraft whose pages are reused adds its share without being rendered again.

    `uses` maps "antenna/<id>" and "cable/<id>" to (installations, rows of the "where used" table);
    `service_links` maps a service id to (installations, links on the services page); `search` holds
    the search-index entries of the aircraft and its installations."""

    uses: dict[str, tuple[int, str]]
    service_links: dict[str, tuple[int, str]]
    search: tuple[dict[str, str], ...]


def render_site(fleet: Fleet, results: FleetResults, discrepancies: Iterable[Discrepancy],
                build_info: BuildInfo, comparison: Comparison | None = None,
                plot_store: plots.PlotStore | None = None,
                incremental: Incremental | None = None,
                writer: Callable[[str, str | bytes], None] | None = None, workers: int = 1,
                progress: Progress = QUIET) -> dict[str, str | bytes]:
    """Every file of the site, keyed by its path relative to the site root. With a `comparison` to an
    earlier build, the site also gets a changes page and each changed page a mark. Plots come from
    `plot_store` (drawn once per content; kept on disk when the store has a cache folder). With
    `incremental`, an aircraft whose pages would come out as in the previous build is not rendered
    again: its files are given as REUSE. With a `writer` and several `workers`, the aircraft pages are
    rendered in forked processes that hand each file straight to `writer(path, content)`; the returned
    dict then holds the other files only."""
    site = Site(fleet, results, list(discrepancies), build_info, comparison, plot_store, incremental)
    return site.render(writer, workers, progress)


class Site:
    """Builds the page contexts and renders them; holds the lookups every page shares."""

    def __init__(self, fleet: Fleet, results: FleetResults, discrepancies: list[Discrepancy], build: BuildInfo,
                 comparison: Comparison | None = None, plot_store: plots.PlotStore | None = None,
                 incremental: Incremental | None = None):
        self.fleet = fleet
        self.comparison = comparison
        self.incremental = incremental
        self.page_keys: dict[str, str] = {}
        self.pieces: dict[str, AircraftPieces] = {}
        self.figure_cells: dict[Figure, Markup] = {}
        self.vswr_drawn: set[str] = set()
        self.plots = plot_store or plots.PlotStore()
        self.pairs_of: dict[tuple[str, str], list] = defaultdict(list)  # filled once the figures are loaded
        self.reviews_of: dict[str, list] = defaultdict(list)  # in the reviews' (sorted) order
        for name, review in fleet.reviews.items():
            self.reviews_of[name.split("/", 1)[0]].append(review)
        self.model_patterns: dict[str, set[str]] = defaultdict(set)
        for aircraft, installation in fleet.installations():
            pattern_key = pattern_of(results, aircraft.id, installation.position)
            if pattern_key:
                self.model_patterns[installation.antenna].add(pattern_key)
        self.results = results
        self.build = build
        self.env = environment()
        self.figure_macros = self.env.get_template("partials/figures.html").module
        self.files: dict[str, str | bytes] = {}
        self.pattern_alts: dict[str, str] = {}
        self.data_prefix = str(Path(fleet.data_dir)).rstrip("/") + "/"
        self.src_prefixes = (self.data_prefix, str(Path(fleet.data_dir).resolve()).rstrip("/") + "/", PACKAGE_PREFIX)
        self.discrepancies = sorted(discrepancies, key=lambda d: (severity_rank(d.severity), d.id))
        self.by_position: dict[tuple[str, str], list[Discrepancy]] = defaultdict(list)
        for item in self.discrepancies:
            for position in item.position.split("+"):
                self.by_position[(item.aircraft, position)].append(item)

    # -- helpers --

    def src_text(self, text: str) -> str:
        """A "file:line" shown relative to the data folder, so the site does not depend on where it was built."""
        text = str(text)
        for prefix in self.src_prefixes:
            if text.startswith(prefix):
                return text[len(prefix):]
        return text

    def model_src(self, obj: Any) -> str:
        return self.src_text(f"{obj.src.path}:{obj.src.line}")

    def status_of(self, aircraft_id: str, position: str) -> str:
        open_items = [d for d in self.by_position.get((aircraft_id, position), []) if d.review in OPEN_STATES]
        return min((d.severity for d in open_items), key=severity_rank, default="clear")

    def page(self, path: str, template: str, nav: str, title: str, crumbs: list[tuple[str, str | None]],
             **context: Any) -> None:
        context.setdefault("change_marks", ())
        self.files[path] = self.env.get_template(template).render(
            root=root_of(path), nav=nav, page_title=title, crumbs=crumbs, build=self.build,
            site={"title": self.fleet.site_title, "operator": self.fleet.operator},
            nav_items=NAV_ITEMS + ((CHANGES_NAV,) if self.comparison is not None else ()), **context)

    def marks(self, aircraft_id: str, position: str | None = None) -> tuple[str, ...]:
        """Why this aircraft's (or installation's) page changed since the compared build; () without one."""
        return self.comparison.marks(aircraft_id, position) if self.comparison is not None else ()

    def figure_view(self, figure: Figure) -> tuple[Markup, str]:
        """A figure's row in a figure table: its cells up to the registry line (rendered once per
        distinct figure in this process), and its registry line."""
        plain = figure._replace(src="")
        try:
            cells = self.figure_cells.get(plain)
        except TypeError:  # a value that cannot be hashed: rendered, not remembered
            plain, cells = None, None
        if cells is None:
            if len(self.figure_cells) > 50_000:  # bounded: a fleet's figures recur, but not all of them
                self.figure_cells.clear()
            cells = Markup(self.figure_macros.figure_cells({
                "anchor": anchor(figure.key), "label": figure.label, "value": fmt(figure.value),
                "unit": figure.unit, "formula": figure.formula,
                "inputs": tuple((name, value) for name, value in figure.inputs), "source": figure.source}))
            if plain is not None:
                self.figure_cells[plain] = cells
        return cells, self.src_text(figure.src) if figure.src else ""

    def figure_groups(self, figures: Iterable[Figure]) -> list[dict[str, Any]]:
        groups: dict[str, list[Figure]] = defaultdict(list)
        order: list[str] = []
        for figure in figures:
            prefix = figure.key.split(".")[0]
            if prefix not in groups:
                order.append(prefix)
            groups[prefix].append(figure)
        return [{"title": FIGURE_GROUPS.get(prefix, prefix.replace("_", " ").capitalize()), "id": anchor(prefix),
                 "figures": [self.figure_view(f) for f in groups[prefix]]} for prefix in order]

    def discrepancy_view(self, item: Discrepancy) -> dict[str, Any]:
        positions = item.position.split("+")
        aircraft = self.fleet.aircraft.get(item.aircraft)
        installs = aircraft.installations if aircraft else {}
        first = next((p for p in positions if p in installs), None)
        services = sorted({installs[p].service for p in positions if p in installs})
        return {
            "id": item.id, "anchor": anchor(item.id), "severity": item.severity, "rule": item.rule,
            "aircraft": item.aircraft, "registration": aircraft.registration if aircraft else item.aircraft,
            "aircraft_href": aircraft_path(item.aircraft) if aircraft else "index.html",
            "position": item.position, "positions": positions, "services": services,
            "href": installation_path(item.aircraft, first) if first else None,
            "value": fmt(item.value, item.unit), "limit": fmt(item.limit, item.unit),
            "value_raw": item.value, "limit_raw": item.limit, "unit": item.unit,
            "message": item.message, "method": item.method, "source": self.src_text(item.source),
            "review": item.review, "reviewer": item.reviewer, "review_comment": item.review_comment,
            "review_reference": item.review_reference, "is_open": item.review in OPEN_STATES,
        }

    def severity_matrix(self, items: list[Discrepancy]) -> dict[str, Any]:
        counts = Counter((d.severity, d.review) for d in items)
        states = [s for s in ALL_STATES if any(counts[(sev, s)] for sev in SEVERITIES)] or list(OPEN_STATES)
        return {
            "states": states,
            "rows": [{"severity": sev, "cells": [counts[(sev, s)] for s in states],
                      "open": sum(counts[(sev, s)] for s in OPEN_STATES), "total": sum(counts[(sev, s)] for s in ALL_STATES)}
                     for sev in SEVERITIES],
        }

    def location_text(self, aircraft: Aircraft, installation: Installation) -> str:
        unit = self.fleet.airframe_of(aircraft).coord_unit
        loc = installation.location
        return f"STA {exact(loc.sta)} · BL {exact(loc.bl)} · WL {exact(loc.wl)} {unit}"

    def installation_row(self, aircraft: Aircraft, installation: Installation) -> dict[str, Any]:
        service = self.fleet.services.get(installation.service)
        measured = installation.measured
        return {
            "position": installation.position, "href": installation_path(aircraft.id, installation.position),
            "registration": aircraft.registration, "aircraft_href": aircraft_path(aircraft.id),
            "service": service.name if service else installation.service, "service_id": installation.service,
            "antenna": installation.antenna, "antenna_href": antenna_path(installation.antenna),
            "location": installation.location, "surface": installation.surface.replace("_", " "),
            "cable": installation.feeder.cable, "cable_href": cable_path(installation.feeder.cable),
            "length": exact(installation.feeder.length_m, "m"),
            "measured_vswr": exact(measured.vswr) if measured and measured.vswr is not None else "—",
            "measured_date": measured.date.isoformat() if measured else "",
            "status": self.status_of(aircraft.id, installation.position),
            "changed": bool(self.marks(aircraft.id, installation.position)),
        }

    # -- render --

    def render(self, writer: Callable[[str, str | bytes], None] | None = None,
               workers: int = 1, progress: Progress = QUIET) -> dict[str, str | bytes]:
        for path in sorted(STATIC_DIR.rglob("*")):
            if path.is_file():
                self.files[f"static/{path.relative_to(STATIC_DIR).as_posix()}"] = path.read_bytes()
        self.pattern_plots(workers)
        self.fleet_page()
        todo = [aircraft for aircraft in self.fleet.aircraft.values() if not self.reuse_pages(aircraft)]
        progress.stage("rendering aircraft", len(todo))
        # in worker processes only when their pages can be written from there; the generator first in
        # zip, so that it is run to its end and its workers are closed
        entries = ordered_map(lambda aircraft: self.render_aircraft(aircraft, writer),
                                       todo, workers if writer else 1, progress)
        for (entry, pieces), aircraft in zip(entries, todo):
            self.pieces[aircraft.id] = pieces
            if entry is not None:
                self.incremental.current[aircraft.id] = entry
                self.incremental.pieces.put(entry["key"], pieces)
        progress.stage("rendering fleet pages", 1)
        self.antenna_pages()
        self.cable_pages()
        self.services_page()
        self.audit_page()
        self.methods_page()
        self.search_page()
        if self.comparison is not None:
            self.page("changes.html", "changes.html", "changes", "Changes in this build", [("Fleet", "index.html"),
                      ("Changes", None)], **changes_page(self.comparison, aircraft_href=aircraft_path,
                                                         installation_href=installation_path))
        return dict(sorted(self.files.items()))

    def reuse_pages(self, aircraft: Aircraft) -> bool:
        """True (and the files given as REUSE) when the previous build's pages of this aircraft show what
        this build would (same figures' inputs, reviews, change marks, and the tool's code and templates)."""
        if self.incremental is None:
            return False
        key = self.page_key(aircraft)
        before = self.incremental.previous.get(aircraft.id)
        if not key or not before or before.get("key") != key:
            return False
        pieces = self.incremental.pieces.get(key)
        if not isinstance(pieces, AircraftPieces):
            return False
        self.pieces[aircraft.id] = pieces
        for path in before["files"]:
            self.files[path] = REUSE
        self.incremental.current[aircraft.id] = before
        return True

    def aircraft_pages(self, aircraft: Aircraft) -> list[str]:
        """Render the aircraft's page and its installations' pages; their paths."""
        paths = [aircraft_path(aircraft.id)]
        self.aircraft_page(aircraft)
        plot_paths = set()
        for installation in aircraft.installations.values():
            self.installation_page(aircraft, installation)
            paths.append(installation_path(aircraft.id, installation.position))
            result = self.results.installations.get((aircraft.id, installation.position))
            key = plots.vswr_key(result) if result is not None else None
            if key is not None:
                plot_paths.add(vswr_plot_path(key))
                self.vswr_plot(key, result, f"{aircraft.registration} {installation.position}")
        paths += sorted(plot_paths)  # shared by content, but kept with each aircraft that shows them
        key = self.page_key(aircraft)
        if self.incremental is not None and key:
            self.incremental.current[aircraft.id] = {"key": key, "files": paths}
        return paths

    def render_aircraft(self, aircraft: Aircraft, writer: Callable[[str, str | bytes], None] | None
                        ) -> tuple[dict[str, Any] | None, AircraftPieces]:
        """The aircraft's pages, handed to `writer` (or kept with the site's other files without one);
        its entry for the next build's reuse and its pieces of the fleet-wide pages. Runs in the parent
        or in a forked worker alike."""
        read_here = self.results.load([aircraft.id])  # its full figures, from the cache if need be
        if read_here or not self.pairs_of:
            self.pairs_of.clear()
            for pair in sorted(self.results.pairs, key=lambda p: (p.position_a, p.position_b)):
                self.pairs_of[(pair.aircraft, pair.position_a)].append(pair)
                self.pairs_of[(pair.aircraft, pair.position_b)].append(pair)
        kept, self.files = self.files, {}
        self.aircraft_pages(aircraft)
        produced, self.files = self.files, kept
        if read_here:  # let go again: a worker renders hundreds of aircraft
            self.results.unload(aircraft.id, aircraft.installations)
        if writer is None:
            self.files.update(produced)
        else:
            for path, content in produced.items():
                writer(path, content)
        entry = self.incremental.current.get(aircraft.id) if self.incremental is not None else None
        return entry, self.aircraft_pieces(aircraft)

    def aircraft_pieces(self, aircraft: Aircraft) -> AircraftPieces:
        macros = self.env.get_template("partials/use_rows.html").module
        rows: dict[str, list[str]] = defaultdict(list)
        links: dict[str, list[str]] = defaultdict(list)
        for installation in aircraft.installations.values():
            row = self.installation_row(aircraft, installation)
            html = str(macros.use_row(row, "../"))  # catalogue pages sit one folder down
            rows[f"antenna/{installation.antenna}"].append(html)
            rows[f"cable/{installation.feeder.cable}"].append(html)
            links[installation.service].append(str(macros.service_link(row, "")))
        return AircraftPieces(
            uses={key: (len(items), "\n".join(items)) for key, items in rows.items()},
            service_links={key: (len(items), ", ".join(items)) for key, items in links.items()},
            search=tuple(sitesearch.aircraft_entries(self.fleet, aircraft, plain_text, SEARCH_PATHS)))

    def joined_uses(self, key: str) -> tuple[int, Markup]:
        """Installations and "where used" rows of catalogue entry `key` ("antenna/<id>", "cable/<id>"),
        in fleet order."""
        found = [self.pieces[aircraft_id].uses[key] for aircraft_id in self.fleet.aircraft
                 if key in self.pieces[aircraft_id].uses]
        return sum(count for count, _ in found), Markup("\n".join(html for _, html in found))

    def page_key(self, aircraft: Aircraft) -> str:
        """Key of everything an aircraft's pages show, or "" when its figures' inputs are not keyed."""
        if aircraft.id in self.page_keys:  # asked when deciding reuse and again after rendering
            return self.page_keys[aircraft.id]
        figures_key = self.results.aircraft_keys.get(aircraft.id)
        if not figures_key:
            return ""
        reviews = [repr(review) for review in self.reviews_of.get(aircraft.id, ())]
        marks = [self.marks(aircraft.id)] + [self.marks(aircraft.id, p) for p in aircraft.installations]
        # key_of holds the templates and the code (diskcache.code_key): a changed template renders every page
        key = key_of(figures_key, *reviews, repr(marks), str(self.comparison is not None))
        self.page_keys[aircraft.id] = key
        return key

    def vswr_plot(self, key: str, result: InstallationResult, title: str) -> None:
        """An installation's VSWR plot, drawn once per distinct content in this process (plots are named
        by content, so two processes that both write one write the same bytes)."""
        path = vswr_plot_path(key)
        if path not in self.vswr_drawn or self.plots.naive:
            self.files[path] = self.plots.get("vswr", key, lambda: plots.vswr_plot(result, title)).svg
            self.vswr_drawn.add(path)

    def fleet_page(self) -> None:
        aircraft_rows = []
        for aircraft in self.fleet.aircraft.values():
            items = [d for d in self.discrepancies if d.aircraft == aircraft.id]
            open_counts = Counter(d.severity for d in items if d.review in OPEN_STATES)
            airframe = self.fleet.airframes.get(aircraft.airframe)
            aircraft_rows.append({
                "registration": aircraft.registration, "href": aircraft_path(aircraft.id), "id": aircraft.id,
                "airframe": airframe.name if airframe else aircraft.airframe, "serial": aircraft.serial or "—",
                "installations": len(aircraft.installations),
                "open": [open_counts[s] for s in SEVERITIES],
                "reviewed": sum(1 for d in items if d.review not in OPEN_STATES),
                "status": min(open_counts, key=severity_rank, default="clear"),
                "last_mod": max((m.date for m in aircraft.modifications), default=None),
                "changed": bool(self.marks(aircraft.id)),
            })
        open_items = [d for d in self.discrepancies if d.review in OPEN_STATES]
        self.page("index.html", "fleet.html", "fleet", "Fleet overview", [],
                  aircraft=aircraft_rows,
                  totals={"aircraft": len(self.fleet.aircraft),
                          "installations": sum(len(a.installations) for a in self.fleet.aircraft.values()),
                          "open": {s: sum(1 for d in open_items if d.severity == s) for s in SEVERITIES}},
                  matrix=self.severity_matrix(self.discrepancies),
                  top_open=[self.discrepancy_view(d) for d in open_items[:12]], open_total=len(open_items),
                  severities=SEVERITIES)

    def aircraft_page(self, aircraft: Aircraft) -> None:
        airframe = self.fleet.airframe_of(aircraft)
        page_path = aircraft_path(aircraft.id)
        root = root_of(page_path)
        markers = []
        rows = []
        for installation in aircraft.installations.values():
            row = self.installation_row(aircraft, installation)
            rows.append(row)
            loc = installation.location
            markers.append(sitedrawing.Marker(
                position=installation.position, sta=loc.sta, bl=loc.bl, wl=loc.wl, surface=installation.surface,
                status=row["status"], href=root + row["href"],
                tip_lines=(f"{installation.position} · {row['service']}",
                           f"STA {exact(loc.sta)} BL {exact(loc.bl)} WL {exact(loc.wl)} {airframe.coord_unit}",
                           f"{installation.surface.replace('_', ' ')} · {STATUS_LABELS[row['status']]}")))
        drawing = sitedrawing.airframe_drawing(airframe, markers, anchor(aircraft.id))
        items = [d for d in self.discrepancies if d.aircraft == aircraft.id]
        self.page(page_path, "aircraft.html", "fleet", aircraft.registration,
                  [("Fleet", "index.html"), (aircraft.registration, None)],
                  aircraft=aircraft, airframe=airframe, installations=rows, drawing=drawing,
                  modifications=sorted(aircraft.modifications, key=lambda m: (m.date, m.ref), reverse=True),
                  discrepancies=[self.discrepancy_view(d) for d in items],
                  matrix=self.severity_matrix(items), src=self.model_src(aircraft),
                  change_marks=self.marks(aircraft.id), change_anchor="aircraft",
                  status_kinds=("blocking", "concern", "advisory", "clear"))

    def installation_page(self, aircraft: Aircraft, installation: Installation) -> None:
        page_path = installation_path(aircraft.id, installation.position)
        result: InstallationResult | None = self.results.installations.get((aircraft.id, installation.position))
        airframe = self.fleet.airframe_of(aircraft)
        service = self.fleet.services.get(installation.service)
        model = self.fleet.antennas.get(installation.antenna)
        cable = self.fleet.cables.get(installation.feeder.cable)
        figures = result.figures if result else ()
        pattern = None
        if result and result.pattern_key and result.pattern_key in self.results.patterns:
            pattern = self.pattern_view(self.results.patterns[result.pattern_key], installation.antenna)
        vswr = None
        key = plots.vswr_key(result) if result is not None else None
        if key is not None:
            title = f"{aircraft.registration} {installation.position}"
            vswr = {"src": vswr_plot_path(key), "alt": plots.vswr_alt(result, title)}
        breakdown = feeder_breakdown(figures)
        pairs = []
        for pair in self.pairs_of.get((aircraft.id, installation.position), ()):
            other = pair.position_b if pair.position_a == installation.position else pair.position_a
            other_install = aircraft.installations.get(other)
            pairs.append({"other": other, "href": installation_path(aircraft.id, other) if other_install else None,
                          "service": self.fleet.services[other_install.service].name
                          if other_install and other_install.service in self.fleet.services else "",
                          "distance": fmt_figure(pair.figure("pair.distance_m")),
                          "isolation": fmt_figure(pair.figure("pair.isolation_db")),
                          "minimum": fmt_figure(pair.figure("pair.min_isolation_db")),
                          "near_field": pair.near_field, "figures": [self.figure_view(f) for f in pair.figures]})
        items = self.by_position.get((aircraft.id, installation.position), [])
        zone = airframe.zone_at(installation.location.sta, installation.surface)
        self.page(page_path, "installation.html", "fleet", f"{aircraft.registration} {installation.position}",
                  [("Fleet", "index.html"), (aircraft.registration, aircraft_path(aircraft.id)),
                   (installation.position, None)],
                  change_marks=self.marks(aircraft.id, installation.position),
                  change_anchor=f"i-{aircraft.id}-{installation.position}",
                  aircraft=aircraft, airframe=airframe, inst=installation, row=self.installation_row(aircraft, installation),
                  service=service, service_bands=bands_text(service.bands_mhz) if service else "", model=model, cable=cable, location=self.location_text(aircraft, installation),
                  zone=zone, groups=self.figure_groups(figures), computed=result is not None,
                  pattern=pattern, vswr=vswr, breakdown=breakdown, pairs=pairs,
                  discrepancies=[self.discrepancy_view(d) for d in items],
                  notes=Markup(notes_html(installation.notes)),
                  src=self.model_src(installation),
                  sweep_name=installation.measured.sweep.name if installation.measured and installation.measured.sweep else "")

    def pattern_plots(self, workers: int = 1) -> None:
        """Every pattern's plot for each model that uses it, those not drawn before drawn in `workers`
        processes."""
        wanted = sorted((key, model_id) for model_id, keys in self.model_patterns.items() for key in keys
                        if key in self.results.patterns)
        drawings = self.plots.get_all("pattern", [
            (array_key(key, model_id),
             functools.partial(plots.pattern_plot, replace(self.results.patterns[key], antenna=model_id)))
            for key, model_id in wanted], workers)
        for (key, model_id), drawn in zip(wanted, drawings):
            path = pattern_plot_path(key, model_id, self.results.patterns[key].antenna)
            self.files[path] = drawn.svg
            self.pattern_alts[path] = drawn.alt

    def pattern_view(self, pattern: PatternResult, model_id: str) -> dict[str, Any]:
        """A pattern as a page shows it for one antenna model: its plot, the plot's alt text, its figures."""
        path = pattern_plot_path(pattern.key, model_id, pattern.antenna)
        return {"src": path, "alt": self.pattern_alts.get(path, ""), "freq": fmt(pattern.freq_mhz, "MHz"),
                "figures": [self.figure_view(f) for f in pattern.metrics]}

    def antenna_pages(self) -> None:
        rows = []
        for model in self.fleet.antennas.values():
            uses_count, uses_rows = self.joined_uses(f"antenna/{model.id}")
            patterns = sorted((self.results.patterns[key] for key in self.model_patterns.get(model.id, ())),
                              key=lambda p: (p.freq_mhz, p.key))
            rows.append({"id": model.id, "href": antenna_path(model.id), "description": model.description,
                         "kind": model.kind.replace("_", " "), "polarisation": model.polarisation,
                         "impedance": fmt(model.impedance_ohm, "Ω"), "rated_vswr": fmt(model.rated_vswr),
                         "bands": bands_text(model.bands_mhz), "uses": uses_count})
            self.page(antenna_path(model.id), "antenna.html", "antennas", model.id,
                      [("Antennas", "antennas.html"), (model.id, None)],
                      model=model, kind=model.kind.replace("_", " "), bands=bands_text(model.bands_mhz),
                      geometry=[(key, geometry_text(value)) for key, value in model.geometry.items()],
                      patterns=[self.pattern_view(p, model.id) for p in patterns],
                      uses_count=uses_count, uses_rows=uses_rows, src=self.model_src(model))
        self.page("antennas.html", "antennas.html", "antennas", "Antenna models", [], models=rows)

    def cable_pages(self) -> None:
        rows = []
        for cable in self.fleet.cables.values():
            uses_count, uses_rows = self.joined_uses(f"cable/{cable.id}")
            result = self.results.cables.get(cable.id)
            plot = None
            if result is not None:
                drawn = self.plots.get("cable", array_key(
                    cable.id, result.table.x, result.table.y, result.fitted.x, result.fitted.y),
                    lambda: plots.attenuation_plot(result))
                self.files[cable_plot_path(cable.id)] = drawn.svg
                plot = {"src": cable_plot_path(cable.id), "alt": drawn.alt}
            rows.append({"id": cable.id, "href": cable_path(cable.id), "designation": cable.designation,
                         "impedance": fmt(cable.impedance_ohm, "Ω"), "vf": fmt(cable.velocity_factor),
                         "max_freq": fmt(cable.max_freq_mhz, "MHz"), "uses": uses_count})
            self.page(cable_path(cable.id), "cable.html", "cables", cable.id,
                      [("Cables", "cables.html"), (cable.id, None)],
                      cable=cable, table=[(exact(f), fmt(a)) for f, a in cable.attenuation_db_per_100m],
                      declared=("per 100 ft in the registry, shown per 100 m"
                                if cable.declared_unit == "db_per_100ft" else "per 100 m"),
                      plot=plot, figures=[self.figure_view(f) for f in result.figures] if result else [],
                      uses_count=uses_count, uses_rows=uses_rows, src=self.model_src(cable))
        self.page("cables.html", "cables.html", "cables", "Cables", [], cables=rows)

    def services_page(self) -> None:
        groups = []
        rows = []
        services = sorted(self.fleet.services.values(), key=lambda s: (min(b[0] for b in s.bands_mhz), s.id))
        models_by_service: dict[str, set[str]] = defaultdict(set)
        for _, installation in self.fleet.installations():
            models_by_service[installation.service].add(installation.antenna)
        for service in services:
            found = [self.pieces[aircraft_id].service_links[service.id] for aircraft_id in self.fleet.aircraft
                     if service.id in self.pieces[aircraft_id].service_links]
            model_ids = sorted(models_by_service.get(service.id, ()))
            antennas = []
            for model_id in model_ids:
                model = self.fleet.antennas.get(model_id)
                if model is None:
                    continue
                covers = all(any(lo <= a and b <= hi for lo, hi in model.bands_mhz) for a, b in service.bands_mhz)
                antennas.append((model.id, "rated band covers the service" if covers else "rated band falls short",
                                 antenna_path(model.id), model.bands_mhz, covers))
            groups.append((service.name, service.id, f"#svc-{anchor(service.id)}", service.bands_mhz, antennas))
            rows.append({"service": service, "anchor": f"svc-{anchor(service.id)}", "bands": bands_text(service.bands_mhz),
                         "design": fmt(service.design_freq_mhz, "MHz"), "uses": sum(count for count, _ in found),
                         "models": [(m, antenna_path(m)) for m in model_ids],
                         "links": Markup(", ".join(links for _, links in found))})
        chart = sitedrawing.band_chart(groups)
        self.page("services.html", "services.html", "services", "Services and bands", [], chart=chart, services=rows)

    def audit_page(self) -> None:
        views = [self.discrepancy_view(d) for d in self.discrepancies]
        options = {
            "aircraft": sorted({(v["aircraft"], v["registration"]) for v in views}, key=lambda p: p[1]),
            "service": sorted({(s, self.fleet.services[s].name if s in self.fleet.services else s)
                               for v in views for s in v["services"]}, key=lambda p: p[1]),
            "rule": sorted({(v["rule"], v["rule"]) for v in views}),
            "severity": [(s, SEVERITY_LABELS[s]) for s in SEVERITIES],
            "state": [(s, STATE_LABELS[s]) for s in ALL_STATES],
        }
        self.page("audit.html", "audit.html", "audit", "Audit: every discrepancy", [], items=views, options=options,
                  matrix=self.severity_matrix(self.discrepancies), severities=SEVERITIES, states=ALL_STATES,
                  total=len(views))
        self.files["audit/discrepancies.csv"] = discrepancies_csv(views)
        self.files["audit/discrepancies.json"] = discrepancies_json(views, self.build)

    def methods_page(self) -> None:
        tally: Counter = Counter()  # (key, label, unit, formula, source, where) -> uses: one pass, no per-figure calls
        for aircraft in self.fleet.aircraft.values():
            summary = self.results.summaries.get(aircraft.id)
            if summary is not None:
                tally.update(summary.figure_uses)
                continue
            tally.update(figure_uses(
                (result for (aircraft_id, _), result in self.results.installations.items() if aircraft_id == aircraft.id),
                (pair for pair in self.results.pairs if pair.aircraft == aircraft.id)))
        tally.update((f.key, f.label, f.unit, f.formula, f.source, "pattern")
                     for pattern in self.results.patterns.values() for f in pattern.metrics)
        tally.update((f.key, f.label, f.unit, f.formula, f.source, "cable")
                     for cable in self.results.cables.values() for f in cable.figures)
        catalogue: dict[str, dict[str, Any]] = {}
        for (key, label, unit, formula, source, where), count in sorted(tally.items()):
            entry = catalogue.setdefault(key, {"key": key, "labels": set(), "unit": unit, "variants": Counter(),
                                               "where": set()})
            entry["labels"].add(label)
            entry["variants"][(formula, source)] += count
            entry["where"].add(where)
        grouped: dict[str, list[dict[str, Any]]] = defaultdict(list)
        for key in sorted(catalogue):
            entry = catalogue[key]
            variants = sorted(entry["variants"].items(), key=lambda item: (-item[1], item[0]))
            grouped[key.split(".")[0]].append({
                "key": key, "label": " / ".join(sorted(entry["labels"])), "unit": entry["unit"],
                "variants": [{"formula": f, "source": s, "count": c} for (f, s), c in variants],
            })
        groups = [{"title": FIGURE_GROUPS.get(prefix, prefix.capitalize()), "id": anchor(prefix), "items": items}
                  for prefix, items in sorted(grouped.items(), key=lambda kv: (list(FIGURE_GROUPS).index(kv[0])
                                                                              if kv[0] in FIGURE_GROUPS else 99, kv[0]))]
        checks: dict[str, dict[str, Any]] = {}
        for item in self.discrepancies:
            entry = checks.setdefault(item.rule, {"rule": item.rule, "methods": Counter(), "count": 0})
            entry["methods"][item.method] += 1
            entry["count"] += 1
        check_rows = [{"rule": rule, "count": entry["count"], "methods": sorted(entry["methods"])}
                      for rule, entry in sorted(checks.items())]
        self.page("methods.html", "methods.html", "methods", "Methods and cautions", [],
                  groups=groups, checks=check_rows, policy=policy_rows(self.fleet, self.src_text))

    def search_page(self) -> None:
        entries = sitesearch.catalogue_entries(self.fleet, SEARCH_PATHS)
        for aircraft_id in self.fleet.aircraft:
            entries += self.pieces[aircraft_id].search
        entries.sort(key=sitesearch.order)
        self.files["static/search-index.js"] = sitesearch.index_script(entries)
        self.page("search.html", "search.html", "search", "Search", [], count=len(entries))


# ---- small pieces --------------------------------------------------------------------------------------


def pattern_of(results: FleetResults, aircraft_id: str, position: str) -> str | None:
    """Content key of an installation's pattern, from its aircraft's summary or its full figures."""
    summary = results.summaries.get(aircraft_id)
    if summary is not None:
        return summary.pattern_of.get(position)
    result = results.installations.get((aircraft_id, position))
    return result.pattern_key if result is not None else None


def fmt_figure(figure: Figure | None) -> str:
    return fmt(figure.value, figure.unit) if figure is not None else "—"


def bands_text(bands: Iterable[tuple[float, float]]) -> str:
    return ", ".join(f"{exact(low)}–{exact(high)} MHz" for low, high in bands)


def geometry_text(value: Any) -> str:
    if isinstance(value, tuple):
        return "; ".join(geometry_text(item) for item in value)
    if hasattr(value, "items"):
        return ", ".join(f"{key} {geometry_text(item)}" for key, item in value.items())
    return fmt(value)


def feeder_breakdown(figures: Iterable[Figure]) -> dict[str, Any] | None:
    """The parts of the feeder loss (`feeder.<part>_loss_db` figures) and their share of the total."""
    parts = []
    total = None
    for figure in figures:
        if figure.key == FEEDER_TOTAL_KEY:
            total = figure
            continue
        match = FEEDER_COMPONENT.match(figure.key)
        if match and isinstance(figure.value, (int, float)) and math.isfinite(figure.value):
            parts.append(figure)
    if not parts:
        return None
    shown_total = sum(max(float(p.value), 0.0) for p in parts)
    return {
        "parts": [{"label": p.label, "value": fmt(p.value, "dB"), "index": i % 4 + 1,
                   "share": f"{100.0 * max(float(p.value), 0.0) / shown_total:.2f}" if shown_total > 0 else "0"}
                  for i, p in enumerate(parts)],
        "total": fmt(total.value, total.unit) if total else fmt(shown_total, "dB"),
        "budget": next((value for name, value in total.inputs if name == "budget"), None) if total else None,
    }


def policy_rows(fleet: Fleet, src_text) -> list[dict[str, str]]:
    policy = fleet.policy
    rows = []
    for key in ("length_tolerance_pct", "vswr_limit", "vswr_limit_by_service", "feeder_loss_budget_db",
                "connector_loss_db", "adapter_loss_db", "measurement_max_age_days",
                "ground_plane_min_radius_wavelengths", "min_isolation_db"):
        value = getattr(policy, key)
        if key == "min_isolation_db":
            text = "; ".join(f"{' + '.join(rule.services)}: {fmt(rule.isolation_db)} dB" for rule in value) or "—"
        elif hasattr(value, "items"):
            text = ", ".join(f"{k}: {fmt(v)}" for k, v in value.items()) or "—"
        else:
            text = fmt(value)
        where = policy.where(key)
        rows.append({"key": key, "value": text, "source": str(policy.sources.get(key, "")),
                     "src": src_text(f"{where.path}:{where.line}")})
    return rows


CSV_FIELDS = ("id", "severity", "aircraft", "registration", "position", "services", "rule", "value", "limit", "unit",
              "message", "method", "source", "review", "reviewer", "review_reference", "review_comment")


def export_value(value: Any) -> Any:
    """Numbers stay numbers where JSON can hold them; anything else becomes text."""
    if value is None or isinstance(value, (str, bool, int)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else str(value)
    return str(value)


def export_row(view: dict[str, Any]) -> dict[str, Any]:
    return {"id": view["id"], "severity": view["severity"], "aircraft": view["aircraft"],
            "registration": view["registration"], "position": view["position"], "services": " ".join(view["services"]),
            "rule": view["rule"], "value": export_value(view["value_raw"]), "limit": export_value(view["limit_raw"]), "unit": view["unit"],
            "message": view["message"], "method": view["method"], "source": view["source"], "review": view["review"],
            "reviewer": view["reviewer"], "review_reference": view["review_reference"],
            "review_comment": view["review_comment"]}


def discrepancies_csv(views: list[dict[str, Any]]) -> str:
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=CSV_FIELDS, lineterminator="\r\n")
    writer.writeheader()
    for view in views:
        row = export_row(view)
        writer.writerow({k: ("" if v is None else repr(v) if isinstance(v, float) else v) for k, v in row.items()})
    return buffer.getvalue()


def discrepancies_json(views: list[dict[str, Any]], build: BuildInfo) -> str:
    document = {"build": {"revision": build.revision, "time": build.time, "version": build.version},
                "discrepancies": [export_row(view) for view in views]}
    return json.dumps(document, indent=2, ensure_ascii=False, sort_keys=False, allow_nan=False) + "\n"
