"""Pieces several pages show: a discrepancy, the severity × state matrix, an installation's row, figure
tables, the feeder loss breakdown and a pattern's plot."""
from __future__ import annotations

import math
import re
from collections import Counter, defaultdict
from typing import Any, Iterable

from registry.core.effectivity import position_services
from registry.core.model import Aircraft, Installation
from registry.core.results import Discrepancy, Figure, PatternResult
from registry.core.rulebook import OPEN_STATES, SEVERITIES
from registry.site.context import SiteData
from registry.site.format import NONE_TEXT, exact, fmt, vswr_text, words
from registry.site.labels import FIGURE_GROUPS, STATE_KEYS, state_key
from registry.site.limits import limit_source
from registry.site.pages_registry import line_href
from registry.site.paths import (aircraft_path, anchor, antenna_path, cable_path, installation_path,
                                 pattern_plot_path)

FEEDER_COMPONENT = re.compile(r"^feeder\.(?P<part>(?!return_|total_)[a-z_]+)_loss_db$")
FEEDER_TOTAL_KEY = "feeder.total_loss_db"


def discrepancy_view(data: SiteData, item: Discrepancy) -> dict[str, Any]:
    positions = item.position.split("+")
    aircraft = data.fleet.aircraft.get(item.aircraft)
    installs = aircraft.installations if aircraft else {}
    first = next((p for p in positions if p in installs), None)
    services = sorted(set(position_services(aircraft, data.fleet.modifications, positions))) if aircraft else []
    return {
        "id": item.id, "anchor": anchor(item.id), "severity": item.severity, "rule": item.rule,
        "aircraft": item.aircraft, "registration": aircraft.registration if aircraft else item.aircraft,
        "aircraft_href": aircraft_path(item.aircraft) if aircraft else "index.html",
        "position": item.position, "positions": positions, "services": services,
        "href": installation_path(item.aircraft, first) if first else None,
        "value": fmt(item.value, item.unit, item.rule), "limit": fmt(item.limit, item.unit, item.rule),
        "value_raw": item.value, "limit_raw": item.limit, "unit": item.unit,
        "message": item.message, "method": item.method, "src": data.src_text(item.src),
        "src_href": line_href(data.src_text(item.src), data.fleet.data_dir),
        "review": item.review, "reviewer": item.reviewer, "review_comment": item.review_comment,
        "review_reference": item.review_reference, "review_date": item.review_date, "is_open": item.is_open,
        "state_key": state_key(item.review, item.is_open),
        "limit_source": limit_source(data.fleet, item.rule, services, item.unit),
    }


def severity_matrix(items: Iterable[Discrepancy]) -> dict[str, Any]:
    """Discrepancies counted by severity and review state as the badges show it (`state_key`; states
    nobody is in left out); "open" counts what still counts as open (`Discrepancy.is_open`)."""
    items = list(items)
    counts = Counter((d.severity, state_key(d.review, d.is_open)) for d in items)
    still_open = Counter(d.severity for d in items if d.is_open)
    states = [s for s in STATE_KEYS if any(counts[(sev, s)] for sev in SEVERITIES)] or list(OPEN_STATES)
    return {
        "states": states,
        "rows": [{"severity": sev, "cells": [counts[(sev, s)] for s in states],
                  "open": still_open[sev], "total": sum(counts[(sev, s)] for s in STATE_KEYS)}
                 for sev in SEVERITIES],
    }


def installation_row(data: SiteData, aircraft: Aircraft, installation: Installation) -> dict[str, Any]:
    """An installation as a row of the aircraft page and of the catalogue pages' "where used" tables."""
    service = data.fleet.services.get(installation.service)
    measured = installation.measured
    return {
        "position": installation.position, "href": installation_path(aircraft.id, installation.position),
        "registration": aircraft.registration, "aircraft_href": aircraft_path(aircraft.id),
        "service": service.name if service else installation.service, "service_id": installation.service,
        "antenna": installation.antenna, "antenna_href": antenna_path(installation.antenna),
        "location": installation.location, "surface": words(installation.surface),
        "cable": installation.feeder.cable, "cable_href": cable_path(installation.feeder.cable),
        "length": exact(installation.feeder.length_m, "m"),
        "measured_vswr": vswr_text(measured.vswr) if measured and measured.vswr is not None else NONE_TEXT,
        "measured_date": measured.date.isoformat() if measured else "",
        "status": data.status_of(aircraft.id, installation.position),
        "changed": bool(data.marks(aircraft.id, installation.position)),
    }


def figure_groups(data: SiteData, figures: Iterable[Figure], root: str) -> list[dict[str, Any]]:
    """Figures in tables by their key's first part, in the order the parts first appear (on a page `root`
    away from the site's top)."""
    groups: dict[str, list[Figure]] = defaultdict(list)
    order: list[str] = []
    for figure in figures:
        prefix = figure.key.split(".")[0]
        if prefix not in groups:
            order.append(prefix)
        groups[prefix].append(figure)
    return [{"title": FIGURE_GROUPS.get(prefix, words(prefix).capitalize()), "id": anchor(prefix),
             "figures": data.figure_rows(groups[prefix], root)} for prefix in order]


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


def pattern_view(data: SiteData, pattern: PatternResult, model_id: str, root: str, prefix: str = "") -> dict[str, Any]:
    """A pattern as a page (`root` away from the site's top) shows it for one antenna model: its plot, the
    plot's alt text, its figures (their rows' ids after `prefix`: a page with several patterns)."""
    path = pattern_plot_path(pattern.key, model_id, pattern.antenna)
    return {"src": path, "alt": data.pattern_alts.get(path, ""), "freq": fmt(pattern.freq_mhz, "MHz"),
            "figures": data.figure_rows(pattern.metrics, root, prefix)}
