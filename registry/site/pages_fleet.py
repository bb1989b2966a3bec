"""The fleet-wide pages: the fleet overview, the audit of every discrepancy (with its downloads) and search."""
from __future__ import annotations

from collections import Counter
from collections.abc import Mapping
from typing import Any

from registry.core.model import Aircraft
from registry.core.results import Discrepancy
from registry.core.rulebook import OPEN_STATES, SEVERITIES
from registry.site import search as sitesearch
from registry.site.context import SiteData
from registry.site.format import NONE_TEXT
from registry.site.export import discrepancies_csv, discrepancies_json
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
    """The overview: every aircraft with its status, the fleet's totals and the first open findings."""
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
                severities=SEVERITIES)


def audit_pages(data: SiteData) -> list[Output]:
    """Every discrepancy with its filters, and the same list as CSV and JSON downloads."""
    views = [discrepancy_view(data, d) for d in data.discrepancies]
    services = data.fleet.services
    options = {
        "aircraft": sorted({(v["aircraft"], v["registration"]) for v in views}, key=lambda p: p[1]),
        "service": sorted({(s, services[s].name if s in services else s) for v in views for s in v["services"]},
                          key=lambda p: p[1]),
        "rule": sorted({(v["rule"], v["rule"]) for v in views}),
        "severity": [(s, SEVERITY_LABELS[s]) for s in SEVERITIES],
        "state": [(s, STATE_LABELS[s]) for s in STATE_KEYS],
    }
    return [page("audit.html", "audit.html", "audit", "Audit: every discrepancy", [], items=views, options=options,
                 matrix=severity_matrix(data.discrepancies), severities=SEVERITIES, states=STATE_KEYS,
                 total=len(views)),
            File("audit/discrepancies.csv", discrepancies_csv(views)),
            File("audit/discrepancies.json", discrepancies_json(views, data.build))]


def search_pages(data: SiteData, pieces: Mapping[str, AircraftPieces]) -> list[Output]:
    """The search page and its index: the catalogue's entries and each aircraft's."""
    entries = sitesearch.catalogue_entries(data.fleet, SEARCH_PATHS)
    for aircraft_id in data.fleet.aircraft:
        entries += pieces[aircraft_id].search
    entries.sort(key=sitesearch.order)
    return [File("static/search-index.js", sitesearch.index_script(entries)),
            page("search.html", "search.html", "search", "Search", [], count=len(entries))]
