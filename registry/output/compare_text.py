"""A comparison for the terminal (`build.py diff`) and as JSON data (`build.py diff --format json`)."""
from __future__ import annotations

import json
from collections.abc import Iterable
from dataclasses import asdict
from typing import Any

from registry.output import record as build_record
from registry.output.comparison import Comparison, FieldChange, FigureChange
from registry.output.display import delta_text, figure_text, show

FIELD_INDENT = "             "


def as_text(result: Comparison) -> str:
    """The terminal summary: aircraft, installations, catalogues, discrepancies, figures, then the counts."""
    lines = header_lines(result)
    for section in (aircraft_lines, installation_lines, catalogue_lines, discrepancy_lines, pair_lines, figure_lines):
        body = section(result)
        if body:
            lines += body + [""]
    lines.append(summary_line(result))
    return "\n".join(lines) + "\n"


def header_lines(result: Comparison) -> list[str]:
    """Which two sides, as of which dates, and the tolerance; then a blank line."""
    lines = [f"OLD  {result.old.label}, as of {result.old.as_of}",
             f"NEW  {result.new.label}, as of {result.new.as_of}"]
    note = date_note(result)
    if note:
        lines.append(f"note: {note}")
    lines.append(f"tolerance: relative {result.tolerance.rel * 100:g} %, absolute {result.tolerance.abs:g}")
    lines.append("")
    return lines


def date_note(result: Comparison) -> str:
    """What the comparison did about two sides dated differently ("" when they are dated alike)."""
    if result.old.as_of == result.new.as_of:
        return ""
    return (f"both sides evaluated as of {result.at}: OLD's measurement ages, and the measurement-age "
            f"findings they give, re-based from {result.old.as_of}, so nothing differs by the dates alone")


def field_lines(changes: Iterable[FieldChange]) -> list[str]:
    return [f"{FIELD_INDENT}{change.field}: {show(change.old)} → {show(change.new)}" for change in changes]


def aircraft_lines(result: Comparison) -> list[str]:
    aircraft = [item for item in result.items if item.kind == "aircraft"]
    if not aircraft:
        return []
    lines = ["Aircraft"]
    for item in aircraft:
        lines.append(f"  {item.change:<9}{item.id} ({result.registrations.get(item.id, item.id)})")
        lines += field_lines(item.fields)
    return lines


def installation_lines(result: Comparison) -> list[str]:
    if not result.installations:
        return []
    lines = ["Installations"]
    for item in result.installations:
        name = f"{item.aircraft}/{item.position}"
        if item.change == "moved":
            lines.append(f"  {'moved':<9}{item.aircraft}/{item.old_position} → {name}")
        else:
            lines.append(f"  {item.change:<9}{name}" + (f"  {item.summary}" if item.change in ("added", "removed") else ""))
        lines += field_lines(item.fields)
    return lines


def catalogue_lines(result: Comparison) -> list[str]:
    catalogue = [item for item in result.items if item.kind != "aircraft"]
    if not catalogue:
        return []
    lines = ["Catalogues and policy"]
    for item in catalogue:
        lines.append(f"  {item.change:<9}{item.kind} {item.id}" if item.kind not in ("policy", "fleet")
                     else f"  {item.change:<9}{item.kind}")
        lines += field_lines(item.fields)
    return lines


def discrepancy_lines(result: Comparison) -> list[str]:
    if not result.discrepancies:
        return []
    lines = ["Discrepancies"]
    for item in result.discrepancies:
        if item.change == "new":
            entry = item.new
            lines.append(f"  {'new':<9}{item.id}  [{entry['severity']}] {entry['review']}, "
                         f"value {show(entry['value'], entry['unit'])}, limit {show(entry['limit'], entry['unit'])}")
            lines.append(f"{FIELD_INDENT}{entry['message']}")
        elif item.change == "resolved":
            entry = item.old
            lines.append(f"  {'resolved':<9}{item.id}  [{entry['severity']}] was {entry['review']}")
        else:
            moved = f" (was {item.old_id})" if item.old_id != item.id else ""
            lines.append(f"  {'changed':<9}{item.id}{moved}")
            unit = item.new["unit"]
            for aspect in item.aspects:
                shown_unit = unit if aspect.field in ("value", "limit") else ""
                lines.append(f"{FIELD_INDENT}{aspect.field}: {show(aspect.old, shown_unit)} → {show(aspect.new, shown_unit)}")
    return lines


def pair_lines(result: Comparison) -> list[str]:
    """Antenna pairs and co-site paths added or removed, each with its figures."""
    if not result.pairs:
        return []
    lines = ["Pairs added and removed"]
    for item in result.pairs:
        lines.append(f"  {item.change:<9}{item.scope} {item.owner}")
        lines.append(f"{FIELD_INDENT}{item.summary}")
    return lines


def figure_lines(result: Comparison) -> list[str]:
    if not result.figures:
        return []
    lines = ["Figures moved beyond the tolerance"]
    owner = None
    for item in result.figures:
        if item.owner != owner:
            owner = item.owner
            lines.append(f"  {item.scope} {owner}")
        lines.append(f"    {item.key:<32} {figure_text(item.old, item.unit, item.key)} → {figure_text(item.new, item.unit, item.key)}"
                     + (f"  ({delta_text(item)})" if delta_text(item) else ""))
    return lines


def summary_line(result: Comparison) -> str:
    if result.same:
        return "no differences"
    c = result.counts()
    return (f"installations: {c['installations_added']} added, {c['installations_removed']} removed, "
            f"{c['installations_moved']} moved, {c['installations_changed']} changed; "
            f"discrepancies: {c['discrepancies_new']} new, {c['discrepancies_resolved']} resolved, "
            f"{c['severity_changes']} changed severity, {c['review_changes']} changed review, "
            f"{c['value_changes']} changed value; pairs: {c['pairs_added']} added, {c['pairs_removed']} removed; "
            f"figures moved: {c['figures_moved']}; "
            f"aircraft and catalogue entries changed: {sum(1 for _ in result.items)}")


def to_dict(result: Comparison) -> dict[str, Any]:
    """The comparison as JSON data (`--format json`)."""
    def figure(item: FigureChange) -> dict[str, Any]:
        data = asdict(item)
        data["positions"] = list(item.positions)
        data["relative_pct"] = None if item.relative_pct is None else round(item.relative_pct, 4)
        data["difference"] = None if item.difference is None else round(item.difference, 6)
        return data

    return {
        "format_version": build_record.FORMAT_VERSION,
        "old": asdict(result.old), "new": asdict(result.new), "evaluated_as_of": result.at,
        "tolerance": {"relative": result.tolerance.rel, "absolute": result.tolerance.abs},
        "same": result.same,
        "counts": result.counts(),
        "items": [asdict(item) for item in result.items],
        "installations": [asdict(item) for item in result.installations],
        "discrepancies": [asdict(item) for item in result.discrepancies],
        "figures": [figure(item) for item in result.figures],
        "pairs": [{**asdict(item), "positions": list(item.positions)} for item in result.pairs],
    }


def as_json(result: Comparison) -> str:
    return json.dumps(to_dict(result), sort_keys=True, indent=2, ensure_ascii=False) + "\n"

