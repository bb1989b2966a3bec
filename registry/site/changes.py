"""The site's changes page (changes.html): the context of its template, made of a comparison."""
from __future__ import annotations

from collections.abc import Callable, Iterable
from dataclasses import asdict
from typing import Any

from registry.output.compare_text import date_note, summary_line
from registry.output.comparison import Comparison, DiscrepancyChange, FieldChange
from registry.output.display import delta_text, figure_text, show


def changes_page(result: Comparison, *, aircraft_href: Callable[[str], str],
                 installation_href: Callable[[str, str], str]) -> dict[str, Any]:
    """Context of site_templates/changes.html. Hrefs are relative to the site root (the page prefixes
    `root`); pass the site's own path functions (render.aircraft_path, render.installation_path). Things
    that exist only in OLD get no link."""
    new_aircraft = {aircraft for aircraft, _ in result.new_positions} | {
        item.id for item in result.items if item.kind == "aircraft" and item.change != "removed"}

    def craft_href(aircraft_id: str) -> str | None:
        return aircraft_href(aircraft_id) if aircraft_id in new_aircraft else None

    def install_href(aircraft_id: str, position: str) -> str | None:
        return installation_href(aircraft_id, position) if (aircraft_id, position) in result.new_positions else None

    def fields(changes: Iterable[FieldChange], unit: str = "") -> list[dict[str, str]]:
        return [{"field": c.field, "old": show(c.old, unit if c.old is not None else ""),
                 "new": show(c.new, unit if c.new is not None else "")} for c in changes]

    def registration(aircraft_id: str | None) -> str:
        return result.registrations.get(aircraft_id, aircraft_id or "")

    aircraft_ids = sorted({item.id for item in result.items if item.kind == "aircraft"}
                          | {item.aircraft for item in result.installations}
                          | {item.aircraft for item in result.discrepancies}
                          | {item.aircraft for item in result.figures if item.aircraft}
                          | {item.aircraft for item in result.pairs})
    return {
        "old": asdict(result.old), "new": asdict(result.new), "same": result.same, "at": result.at,
        "date_note": date_note(result),
        "tolerance": {"rel_pct": show(result.tolerance.rel * 100), "abs": show(result.tolerance.abs)},
        "counts": result.counts(),
        "aircraft": [{"id": key, "registration": registration(key), "href": craft_href(key),
                      "marks": list(result.marks(key))} for key in aircraft_ids],
        "aircraft_items": [{"id": item.id, "registration": registration(item.id), "change": item.change,
                            "href": craft_href(item.id), "fields": fields(item.fields)}
                           for item in result.items if item.kind == "aircraft"],
        "installations": [{"aircraft": item.aircraft, "registration": registration(item.aircraft),
                           "position": item.position, "old_position": item.old_position, "change": item.change,
                           "summary": item.summary, "fields": fields(item.fields),
                           "href": None if item.change == "removed" else install_href(item.aircraft, item.position)}
                          for item in result.installations],
        "catalogue": [{"kind": item.kind, "id": item.id, "change": item.change, "fields": fields(item.fields)}
                      for item in result.items if item.kind != "aircraft"],
        "discrepancies": [discrepancy_row(item, registration(item.aircraft), install_href) for item in result.discrepancies],
        "figures": [{"scope": item.scope, "owner": item.owner, "key": item.key, "label": item.label,
                     "old": figure_text(item.old, item.unit, item.key), "new": figure_text(item.new, item.unit, item.key),
                     "delta": delta_text(item),
                     "href": install_href(item.aircraft, item.positions[0]) if item.aircraft else None}
                    for item in result.figures],
        "pairs": [{"scope": item.scope, "owner": item.owner, "change": item.change, "summary": item.summary,
                   "registration": registration(item.aircraft),
                   "href": install_href(item.aircraft, item.positions[0]) if item.change == "added" else None}
                  for item in result.pairs],
        "summary": summary_line(result),
    }


def discrepancy_row(item: DiscrepancyChange, registration: str, install_href) -> dict[str, Any]:
    entry = item.new or item.old
    unit = entry["unit"]
    return {"id": item.id, "change": item.change, "registration": registration, "rule": entry["rule"],
            "severity": entry["severity"], "review": entry["review"], "message": entry["message"],
            "old_id": item.old_id if item.old_id != item.id else None,
            "value": show(entry["value"], unit), "limit": show(entry["limit"], unit),
            "aspects": [{"field": a.field, "old": show(a.old, unit if a.field in ("value", "limit") else ""),
                         "new": show(a.new, unit if a.field in ("value", "limit") else "")} for a in item.aspects],
            "href": None if item.change == "resolved" else install_href(item.aircraft, item.positions[0])}
