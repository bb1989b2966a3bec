"""What every page reads: the fleet, its results and discrepancies, the build, the comparison, and the
lookups and formatters the pages share. Made once per build and not changed while pages are made."""
from __future__ import annotations


from collections import defaultdict
from dataclasses import dataclass, field, fields, replace
from datetime import date
from pathlib import Path
from typing import Any, Iterable, Mapping, NamedTuple

import jinja2
from markupsafe import Markup, escape

from registry.output.comparison import Comparison
from registry.core.model import Fleet
from registry.load.git import as_of_date
from registry.load.history import FleetHistory
from registry.core.results import Discrepancy, Figure, FleetResults
from registry.check.reviews import finding_order
from registry.site.drawing import Drawing, View
from registry.site.format import fmt
from registry.site.info import BuildInfo
from registry.site.labels import severity_rank
from registry.site.pages_registry import line_href
from registry.site.paths import anchor

PACKAGE_PREFIX = str(Path(__file__).resolve().parent.parent.parent) + "/"
"""Shipped files (registry/data/...) are shown relative to the package's folder, never as absolute paths."""


SRC_CELLS_LIMIT = 4_096
"""Bounded low: an aircraft's figures rest on its own file's lines (a thousand or so), which no other
aircraft's pages show; held for the whole fleet they would grow a worker by tens of megabytes."""


class FigureCells:
    """A figure's cells in a figure table, rendered once per distinct figure in this process."""

    LIMIT = 50_000
    """Bounded: a fleet's figures recur, but not all of them."""

    def __init__(self, env: jinja2.Environment):
        self.macros = env.get_template("partials/figures.html").module
        self.seen: dict[Figure, Markup] = {}

    def __call__(self, figure: Figure) -> Markup:
        plain = figure[:-1]  # every field but `src` (the last): a tuple slice, cheaper than _replace
        try:
            cells = self.seen.get(plain)
        except TypeError:  # a value that cannot be hashed: rendered, not remembered
            plain, cells = None, None
        if cells is None:
            if len(self.seen) > self.LIMIT:
                self.seen.clear()
            cells = Markup(self.macros.figure_cells({
                "label": figure.label, "value": fmt(figure.value, figure.unit, figure.key),
                "unit": figure.unit, "formula": figure.formula,
                "inputs": tuple((name, value) for name, value in figure.inputs), "source": figure.source}))
            if plain is not None:
                self.seen[plain] = cells
        return cells


class DrawingFrames:
    """The parts of an airframe drawing's views that do not depend on the markers (outline, axis, labels,
    scale: partials/drawing_frame.html), rendered once per distinct view in this process: every page of an
    aircraft that draws it draws the same frame."""

    LIMIT = 256
    """Bounded: a view is drawn again only on its own aircraft's pages (its clip ids name the aircraft)."""

    def __init__(self, env: jinja2.Environment):
        self.macros = env.get_template("partials/drawing_frame.html").module
        self.seen: dict[tuple, dict[str, Markup]] = {}

    def __call__(self, drawing: Drawing) -> list[dict[str, Markup]]:
        """Each view's `head` and `scale`, in the order of `drawing.views`."""
        frames = []
        for view in drawing.views:
            key = (*(getattr(view, name) for name in FRAME_FIELDS), drawing.small_font)
            frame = self.seen.get(key)
            if frame is None:
                if len(self.seen) > self.LIMIT:
                    self.seen.clear()
                frame = self.seen[key] = {"head": Markup(self.macros.view_head(view)),
                                          "scale": Markup(self.macros.view_scale(view, drawing.small_font))}
            frames.append(frame)
        return frames


FRAME_FIELDS = tuple(item.name for item in fields(View) if item.name not in ("markers", "sectors"))
"""What a view's frame is drawn from: the view but its markers and blocked sectors."""


@dataclass(frozen=True)
class SiteData:
    """The read-only context of the page functions."""

    fleet: Fleet
    results: FleetResults
    discrepancies: tuple[Discrepancy, ...]   # in `check.reviews.finding_order` (by id), as everywhere
    build: BuildInfo
    comparison: Comparison | None
    by_position: Mapping[tuple[str, str], list[Discrepancy]]
    by_aircraft: Mapping[str, list[Discrepancy]]
    reviews_of: Mapping[str, list]          # by aircraft id, in the reviews' (sorted) order
    model_patterns: Mapping[str, set[str]]  # antenna model id -> pattern keys of its installations
    pattern_alts: Mapping[str, str]         # pattern plot path -> alt text
    src_prefixes: tuple[str, ...]
    figure_cells: FigureCells
    drawing_frames: DrawingFrames
    history: FleetHistory | None = None
    """Each aircraft file's history from the data folder's git history (`load.history`); None when not read."""
    as_of: date | None = None
    """The date the figures were computed as of (`pipeline`); None: the data folder's (`git.as_of_date`)."""
    src_cells: dict[tuple[str, str], str] = field(default_factory=dict, compare=False)
    """`src_cell`'s cells, by the figure's `src` and the page's root."""

    def as_of_text(self) -> str:
        """The as-of date the pages print (ISO): the computation's, so that no page can state another."""
        return (self.as_of or as_of_date(Path(self.fleet.data_dir))).isoformat()

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
        """The most severe open finding at an installation, or "clear"."""
        open_items = [d for d in self.by_position.get((aircraft_id, position), []) if d.is_open]
        return min((d.severity for d in open_items), key=severity_rank, default="clear")

    def marks(self, aircraft_id: str, position: str | None = None) -> tuple[str, ...]:
        """Why this aircraft's (or installation's) page changed since the compared build; () without one."""
        return self.comparison.marks(aircraft_id, position) if self.comparison is not None else ()

    def figure_rows(self, figures: Iterable[Figure], root: str, prefix: str = "") -> Markup:
        """The rows of a figure table (partials/figures.html `figure_table`) on a page `root` away from the
        site's top: each row its id ("fig-", `prefix`, the figure's key: a page that shows several tables
        of the same keys, one per pair or per pattern, gives each its own prefix, so that every id is
        unique on the page), the figure's cells up to its registry line (`FigureCells`, once per
        distinct figure) and its registry line, linked to that line on its registry file's page when it
        has one (once per line and page depth: a page's figures rest on few lines)."""
        parts = []  # joined as plain text: Markup's own + would escape the registry-line cell
        for figure in figures:
            parts += (f'<tr id="fig-{anchor(prefix + figure.key)}">\n  ', self.figure_cells(figure),
                      self.src_cell(figure.src, root))
        return Markup("".join(parts))

    def src_cell(self, src: str, root: str) -> str:
        """The registry-line cell that ends a figure's row, with the row's end."""
        cell = self.src_cells.get((src, root))
        if cell is None:
            if len(self.src_cells) > SRC_CELLS_LIMIT:
                self.src_cells.clear()
            shown = self.src_text(src) if src else ""
            href = line_href(shown, self.fleet.data_dir)
            link = (f'<a href="{escape(root)}{escape(href)}">{escape(shown)}</a>' if href
                    else str(escape(shown or "—")))
            cell = self.src_cells[(src, root)] = f'\n  <td class="src">{link}</td>\n</tr>'
        return cell


def pattern_of(results: FleetResults, aircraft_id: str, position: str) -> str | None:
    """Content key of an installation's pattern, from its aircraft's summary or its full figures."""
    summary = results.summaries.get(aircraft_id)
    if summary is not None:
        return summary.pattern_of.get(position)
    result = results.installations.get((aircraft_id, position))
    return result.pattern_key if result is not None else None


def patterns_by_model(fleet: Fleet, results: FleetResults) -> dict[str, set[str]]:
    """The pattern keys of each antenna model's installations."""
    found: dict[str, set[str]] = defaultdict(set)
    for aircraft, installation in fleet.installations():
        pattern_key = pattern_of(results, aircraft.id, installation.position)
        if pattern_key:
            found[installation.antenna].add(pattern_key)
    return found


def site_data(fleet: Fleet, results: FleetResults, discrepancies: list[Discrepancy], build: BuildInfo,
              comparison: Comparison | None, env: jinja2.Environment, model_patterns: dict[str, set[str]],
              pattern_alts: dict[str, str], history: FleetHistory | None = None,
              as_of: date | None = None) -> SiteData:
    """The pages' context, with the lookups made once."""
    reviews_of: dict[str, list] = defaultdict(list)
    for name, review in fleet.reviews.items():
        reviews_of[name.split("/", 1)[0]].append(review)
    ordered = tuple(sorted(discrepancies, key=finding_order))
    by_position: dict[tuple[str, str], list[Discrepancy]] = defaultdict(list)
    by_aircraft: dict[str, list[Discrepancy]] = defaultdict(list)
    place_findings(by_position, by_aircraft, ordered)
    data_prefix = str(Path(fleet.data_dir)).rstrip("/") + "/"
    return SiteData(fleet=fleet, results=results, discrepancies=ordered, build=build, comparison=comparison,
                    by_position=by_position, by_aircraft=by_aircraft, reviews_of=reviews_of, model_patterns=model_patterns,
                    pattern_alts=pattern_alts, figure_cells=FigureCells(env), drawing_frames=DrawingFrames(env), history=history, as_of=as_of,
                    src_prefixes=(data_prefix, str(Path(fleet.data_dir).resolve()).rstrip("/") + "/",
                                  PACKAGE_PREFIX))


def with_findings(data: SiteData, discrepancies: Iterable[Discrepancy]) -> SiteData:
    """The same context with the fleet's findings in it."""
    ordered = tuple(sorted(discrepancies, key=finding_order))
    by_position: dict[tuple[str, str], list[Discrepancy]] = defaultdict(list)
    by_aircraft: dict[str, list[Discrepancy]] = defaultdict(list)
    place_findings(by_position, by_aircraft, ordered)
    return replace(data, discrepancies=ordered, by_position=by_position, by_aircraft=by_aircraft)


def place_findings(by_position: dict[tuple[str, str], list[Discrepancy]], by_aircraft: dict[str, list[Discrepancy]],
                   ordered: Iterable[Discrepancy]) -> None:
    """File findings (in `finding_order`) under their aircraft and each of their positions."""
    for item in ordered:
        by_aircraft[item.aircraft].append(item)
        for position in item.position.split("+"):
            by_position[(item.aircraft, position)].append(item)


class AircraftPieces(NamedTuple):
    """What one aircraft adds to the fleet-wide pages, made when its own pages are rendered and kept with
    them, so that an aircraft whose pages are reused adds its share without being rendered again.

    `uses` maps "antenna/<id>" and "cable/<id>" to (installations, rows of the "where used" table);
    `service_links` maps a service id to (installations, links on the services page); `search` holds
    the search-index entries of the aircraft and its installations; `report` the aircraft's printable
    report with placeholders for the build's revision and dates (`pages_print.stamped`), or "" when
    it cannot be kept so."""

    uses: dict[str, tuple[int, str]]
    service_links: dict[str, tuple[int, str]]
    search: tuple[dict[str, str], ...]
    report: str = ""
