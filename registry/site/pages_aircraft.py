"""An aircraft's pages: its own page (drawing, installations, findings) and one page per installation."""
from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from markupsafe import Markup

from registry.compute.airframe import shape_of, shape_text
from registry.core.model import Aircraft, Installation
from registry.core.results import InstallationResult, PairResult
from registry.site import drawing as sitedrawing
from registry.site.coverage_map import blocked_sectors, coverage_map
from registry.site import plots
from registry.site.context import SiteData
from registry.site.effectivity import aircraft_modification_rows
from registry.site.format import bands_text, fmt_figure, location_text, notes_html, words
from registry.site.labels import STATUS_LABELS
from registry.site.pages import Output, Page, Plot, page
from registry.site.pages_registry import aircraft_registry_page
from registry.site.paths import aircraft_path, anchor, installation_path, root_of, vswr_plot_path
from registry.site.views import (discrepancy_view, feeder_breakdown, figure_groups, installation_row, pattern_view,
                                 severity_matrix)
from registry.site.technician import technician_card
from registry.site.timeline import timeline_view

Pairs = Mapping[tuple[str, str], list[PairResult]]
"""Co-site pairs by (aircraft id, position), each list ordered by the pair's positions."""


def aircraft_outputs(data: SiteData, aircraft: Aircraft, pairs_of: Pairs) -> list[Output]:
    """The aircraft's page, its installations' pages and the VSWR plots they show."""
    outputs: list[Output] = [aircraft_page(data, aircraft)]
    own_file = aircraft_registry_page(data, aircraft)
    if own_file is not None:
        outputs.append(own_file)
    shown: PairCells = {}  # a pair's cells, made on its first antenna's page and reused on the other's
    for installation in aircraft.installations.values():
        outputs.append(installation_page(data, aircraft, installation, pairs_of, shown))
        result = data.results.installations.get((aircraft.id, installation.position))
        key = plots.vswr_key(result) if result is not None else None
        if key is not None:
            title = f"{aircraft.registration} {installation.position}"
            outputs.append(Plot(vswr_plot_path(key), "vswr", key,
                                lambda result=result, title=title: plots.vswr_plot(result, title)))
    return outputs


def output_paths(outputs: list[Output]) -> list[str]:
    """The pages' paths in order, then the plots' (shared by content, but kept with each aircraft that
    shows them)."""
    return ([output.path for output in outputs if isinstance(output, Page)]
            + sorted({output.path for output in outputs if isinstance(output, Plot)}))


def aircraft_page(data: SiteData, aircraft: Aircraft) -> Page:
    airframe = data.fleet.airframe_of(aircraft)
    page_path = aircraft_path(aircraft.id)
    root = root_of(page_path)
    markers = []
    rows = []
    for installation in aircraft.installations.values():
        row = installation_row(data, aircraft, installation)
        rows.append(row)
        loc = installation.location
        markers.append(sitedrawing.Marker(
            position=installation.position, sta=loc.sta, bl=loc.bl, wl=loc.wl, surface=installation.surface,
            status=row["status"], href=root + row["href"],
            tip_lines=(f"{installation.position} · {row['service']}",
                       location_text(loc, airframe.coord_unit, " "),
                       f"{words(installation.surface)} · {STATUS_LABELS[row['status']]}")))
    drawing = sitedrawing.airframe_drawing(airframe, markers, anchor(aircraft.id))
    items = data.by_aircraft.get(aircraft.id, [])
    return page(page_path, "aircraft.html", "fleet", aircraft.registration,
                [("Fleet", "index.html"), (aircraft.registration, None)],
                aircraft=aircraft, airframe=airframe, installations=rows, drawing=drawing,
                frames=data.drawing_frames(drawing),
                modifications=aircraft_modification_rows(data, aircraft),
                discrepancies=[discrepancy_view(data, d) for d in items],
                matrix=severity_matrix(items), src=data.model_src(aircraft),
                shape={"text": shape_text(airframe), "assumptions": shape_of(airframe).assumptions},
                timeline=timeline_view(data, aircraft),
                change_marks=data.marks(aircraft.id), change_anchor="aircraft",
                status_kinds=("unserviceable", "query", "note", "clear"))


PairCells = dict[tuple[int, str], dict[str, Any]]
"""What an installation page shows of a pair whichever end it is on, by the pair's id() and the page's
root (both antennas' pages are at the same depth, so the figure table's rows are the same on both)."""


def pair_rows(data: SiteData, aircraft: Aircraft, installation: Installation, pairs_of: Pairs,
              shown: PairCells | None = None) -> list[dict[str, Any]]:
    """The installation's co-site pairs: the other antenna, distance, isolation and figures (the cells
    that do not depend on the end taken from `shown` when the other end's page made them)."""
    rows = []
    root = root_of(installation_path(aircraft.id, installation.position))
    shown = {} if shown is None else shown
    for pair in pairs_of.get((aircraft.id, installation.position), ()):
        other = pair.position_b if pair.position_a == installation.position else pair.position_a
        other_install = aircraft.installations.get(other)
        cells = shown.pop((id(pair), root), None)  # a pair has two ends: its cells are wanted twice at most
        if cells is None:
            cells = shown[(id(pair), root)] = pair_cells(data, pair, root)
        rows.append({"other": other, "href": installation_path(aircraft.id, other) if other_install else None,
                     "service": data.fleet.services[other_install.service].name
                     if other_install and other_install.service in data.fleet.services else "", **cells})
    return rows


def pair_cells(data: SiteData, pair: PairResult, root: str) -> dict[str, Any]:
    """A pair's row cells and figure table that are the same on both its antennas' pages."""
    model = pair.figure("pair.model")
    return {"distance": fmt_figure(pair.figure("pair.distance_m")),
            "isolation": fmt_figure(pair.figure("pair.isolation_db")),
            "minimum": fmt_figure(pair.figure("pair.min_isolation_db")),
            "model": fmt_figure(model) if model else "", "no_model": bool(model) and model.value == "none",
            "near_field": pair.near_field,
            "figures": data.figure_rows(pair.figures, root, f"{pair.position_a}+{pair.position_b}-")}


def result_views(data: SiteData, aircraft: Aircraft, installation: Installation,
                 result: InstallationResult | None) -> dict[str, Any]:
    """What an installation's page shows of its computed result: figures, pattern, VSWR plot, feeder."""
    figures = result.figures if result else ()
    root = root_of(installation_path(aircraft.id, installation.position))
    pattern = None
    if result and result.pattern_key and result.pattern_key in data.results.patterns:
        pattern = pattern_view(data, data.results.patterns[result.pattern_key], installation.antenna, root)
    vswr = None
    key = plots.vswr_key(result) if result is not None else None
    if key is not None:
        title = f"{aircraft.registration} {installation.position}"
        vswr = {"src": vswr_plot_path(key), "alt": plots.vswr_alt(result, title)}
    return {"groups": figure_groups(data, figures, root), "computed": result is not None, "pattern": pattern,
            "vswr": vswr, "breakdown": feeder_breakdown(figures)}


def coverage_views(data: SiteData, aircraft: Aircraft, installation: Installation, service) -> dict[str, Any]:
    """The coverage map and the airframe drawing with this antenna's blocked sectors."""
    airframe = data.fleet.airframe_of(aircraft)
    cmap = coverage_map(airframe, installation, service)
    if cmap is None:
        return {"cmap": None, "drawing": None, "frames": []}
    row = installation_row(data, aircraft, installation)
    loc = installation.location
    marker = sitedrawing.Marker(
        position=installation.position, sta=loc.sta, bl=loc.bl, wl=loc.wl, surface=installation.surface,
        status=row["status"], href="#coverage",
        tip_lines=(f"{installation.position} · {row['service']}", location_text(loc, airframe.coord_unit, " "),
                   f"{words(installation.surface)} · {STATUS_LABELS[row['status']]}"))
    sectors = (loc.sta, loc.bl, blocked_sectors(airframe, installation, service))
    drawing = sitedrawing.airframe_drawing(airframe, [marker], f"{anchor(aircraft.id)}-cov", sectors)
    return {"cmap": cmap, "drawing": drawing, "frames": data.drawing_frames(drawing)}


def installation_page(data: SiteData, aircraft: Aircraft, installation: Installation, pairs_of: Pairs,
                      shown: PairCells | None = None) -> Page:
    page_path = installation_path(aircraft.id, installation.position)
    result = data.results.installations.get((aircraft.id, installation.position))
    airframe = data.fleet.airframe_of(aircraft)
    service = data.fleet.services.get(installation.service)
    items = data.by_position.get((aircraft.id, installation.position), [])
    measured = installation.measured
    return page(page_path, "installation.html", "fleet", f"{aircraft.registration} {installation.position}",
                [("Fleet", "index.html"), (aircraft.registration, aircraft_path(aircraft.id)),
                 (installation.position, None)],
                change_marks=data.marks(aircraft.id, installation.position),
                change_anchor=f"i-{aircraft.id}-{installation.position}",
                aircraft=aircraft, airframe=airframe, inst=installation,
                row=installation_row(data, aircraft, installation), service=service,
                service_bands=bands_text(service.bands_mhz) if service else "",
                model=data.fleet.antennas.get(installation.antenna),
                cable=data.fleet.cables.get(installation.feeder.cable),
                location=location_text(installation.location, airframe.coord_unit),
                zone=airframe.zone_at(installation.location.sta, installation.surface),
                **result_views(data, aircraft, installation, result),
                pairs=pair_rows(data, aircraft, installation, pairs_of, shown),
                **coverage_views(data, aircraft, installation, service),
                discrepancies=[discrepancy_view(data, d) for d in items],
                card=technician_card(aircraft, installation, airframe.coord_unit),
                notes=Markup(notes_html(installation.notes)), src=data.model_src(installation),
                sweep_name=measured.sweep.name if measured and measured.sweep else "")
