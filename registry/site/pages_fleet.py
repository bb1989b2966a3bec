"""The fleet-wide pages: the fleet overview, the audit of every discrepancy (with its downloads) and search."""
from __future__ import annotations

from collections import Counter
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from registry.check.reviews import stale_reviews
from registry.core.model import Aircraft
from registry.core.results import Discrepancy
from registry.core.rulebook import OPEN_STATES, SEVERITIES
from registry.output import findings_export
from registry.site import search as sitesearch
from registry.site.context import SiteData
from registry.site.effectivity import fleet_modification_views
from registry.site.format import NONE_TEXT
from registry.site.export import browser_export, discrepancies_csv, discrepancies_json
from registry.site.pages_registry import line_href, registry_pages
from registry.site.labels import SEVERITY_LABELS, STATE_KEYS, STATE_LABELS, severity_rank
from registry.site.context import AircraftPieces
from registry.site.pages import File, Output, page
from registry.site.paths import SEARCH_PATHS, aircraft_path
from registry.site.views import discrepancy_view, severity_matrix



def aircraft_row(data: SiteData, aircraft: Aircraft, items: list[Discrepancy]) -> dict[str, Any]:
    """An aircraft's row on the fleet overview, with its open findings by severity."""
    open_counts = Counter(d.severity for d in items if d.is_open)
    airframe = data.fleet.airframes.get(aircraft.airframe)
    return {
        "registration": aircraft.registration, "href": aircraft_path(aircraft.id), "id": aircraft.id,
        "airframe": airframe.name if airframe else aircraft.airframe, "serial": aircraft.serial or NONE_TEXT,
        "installations": len(aircraft.installations),
        "open": [open_counts[s] for s in SEVERITIES],
        "reviewed": sum(1 for d in items if d.review not in OPEN_STATES),
        "status": min(open_counts, key=severity_rank, default="clear"),
        "last_mod": max((m.date for m in aircraft.modifications), default=None),
        "changed": bool(data.marks(aircraft.id)),
    }


def fleet_page(data: SiteData) -> Output:
    """The overview: every aircraft with its status, the fleet's totals, each modification's effectivity and the
    first open findings."""
    aircraft_rows = [aircraft_row(data, aircraft, [d for d in data.discrepancies if d.aircraft == aircraft.id])
                     for aircraft in data.fleet.aircraft.values()]
    open_items = sorted((d for d in data.discrepancies if d.is_open), key=lambda d: severity_rank(d.severity))
    return page("index.html", "fleet.html", "fleet", "Fleet overview", [],
                aircraft=aircraft_rows,
                totals={"aircraft": len(data.fleet.aircraft),
                        "installations": sum(len(a.installations) for a in data.fleet.aircraft.values()),
                        "open": {s: sum(1 for d in open_items if d.severity == s) for s in SEVERITIES}},
                matrix=severity_matrix(data.discrepancies),
                top_open=[discrepancy_view(data, d) for d in open_items[:12]], open_total=len(open_items),
                severities=SEVERITIES, modifications=fleet_modification_views(data))


def unit_key(unit: str) -> str:
    """A unit as a filter value (one word): "dB/100 m" → "dB/100_m"; no unit → "none"."""
    return unit.replace(" ", "_") if unit else "none"


def audit_views(data: SiteData) -> list[dict[str, Any]]:
    """Every finding as the audit table shows it: the shared view, its unit as a filter value."""
    views = []
    for item in data.discrepancies:
        view = discrepancy_view(data, item)
        view["unit_key"] = unit_key(item.unit)
        views.append(view)
    return views


def stale_views(data: SiteData, stale: list[dict[str, Any]]) -> list[dict[str, Any]]:
    return [{**entry, "src_href": line_href(entry["source"], data.fleet.data_dir)} for entry in stale]


def audit_pages(data: SiteData) -> list[Output]:
    """The auditor's worksheet: every finding with its id, review and registry line, filters that drive the
    downloads, the stale reviews; the downloads made by the exporter `check` uses; the registry files' pages."""
    views = audit_views(data)
    services = data.fleet.services
    rows = findings_export.rows(data.discrepancies, data.fleet)
    stale = [findings_export.stale_entry(review, Path(data.fleet.data_dir))
             for review in stale_reviews(list(data.discrepancies), data.fleet.reviews)]
    as_of = data.as_of_text()
    units = sorted({item.unit for item in data.discrepancies})
    options = {
        "aircraft": sorted({(v["aircraft"], v["registration"]) for v in views}, key=lambda p: p[1]),
        "service": sorted({(s, services[s].name if s in services else s) for v in views for s in v["services"]},
                          key=lambda p: p[1]),
        "rule": sorted({(v["rule"], v["rule"]) for v in views}),
        "severity": [(s, SEVERITY_LABELS[s]) for s in SEVERITIES],
        "state": [(s, STATE_LABELS[s]) for s in STATE_KEYS],
        "unit": [(unit_key(unit), unit or "no unit") for unit in units],
    }
    return [page("audit.html", "audit.html", "audit", "Audit: every discrepancy", [], items=views, options=options,
                 matrix=severity_matrix(data.discrepancies), severities=SEVERITIES, states=STATE_KEYS,
                 total=len(views), stale=stale_views(data, stale), as_of=as_of,
                 export=browser_export(rows, stale, as_of, data.build)),
            File("audit/discrepancies.csv", discrepancies_csv(rows)),
            File("audit/discrepancies.json", discrepancies_json(rows, stale, as_of, data.build)),
            *registry_pages(data)]


def search_pages(data: SiteData, pieces: Mapping[str, AircraftPieces]) -> list[Output]:
    """The search page and its index: the catalogue's entries and each aircraft's."""
    entries = sitesearch.catalogue_entries(data.fleet, SEARCH_PATHS)
    for aircraft_id in data.fleet.aircraft:
        entries += pieces[aircraft_id].search
    entries.sort(key=sitesearch.order)
    return [File("static/search-index.js", sitesearch.index_script(entries)),
            page("search.html", "search.html", "search", "Search", [], count=len(entries))]
