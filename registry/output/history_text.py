"""`build.py history` as text and JSON: an aircraft's changes (with the findings that appeared or cleared),
its positions' spans, and "as fitted on DATE"."""
from __future__ import annotations

import json
from dataclasses import dataclass, field
from datetime import date
from typing import Any

from registry.load import history as timeline
from registry.load.history import AircraftHistory, Change, Span

Finding = tuple[str, str, str]
"""(id, severity, message)."""


@dataclass
class ChangeFindings:
    """The findings of one change: those that appeared and those that cleared, or `problem` when a side
    could not be checked."""

    appeared: list[Finding] = field(default_factory=list)
    cleared: list[Finding] = field(default_factory=list)
    problem: str = ""


@dataclass
class AircraftTimeline:
    """What `history` prints: the aircraft, its file's history, notes, and per change its findings (None
    when findings were not asked for)."""

    aircraft_id: str
    registration: str
    history: AircraftHistory
    note: str
    uncommitted: bool
    findings: list[ChangeFindings] | None


def notes(item: AircraftTimeline) -> list[str]:
    """The caveats of a timeline, one line each."""
    lines = [item.note] if item.note else []
    history = item.history
    if history.cut and history.changes:
        lines.append(f"history cut: earlier changes are not read (at most the newest {timeline.MAX_CHANGES}, and "
                     "none before a shallow clone's first commit); what is shown as fitted from "
                     f"{history.changes[0].commit.day.isoformat()} had been fitted at or before it.")
    if item.uncommitted:
        lines.append(f"{history.path} has changes not committed yet: the history shows committed states only.")
    return lines


def change_line(change: Change) -> str:
    """What a change did, in one line."""
    parts = {"added": ["file added"], "removed": ["file removed: the aircraft left the register"],
             "renamed": [f"file renamed from {change.renamed_from} (the same serial number)"],
             "shared": [f"only files it depends on changed ({', '.join(change.files)}): nothing fitted changed"],
             "unreadable": [f"file unreadable at this commit: {change.problem}"]}.get(change.kind, [])
    if change.mods_added:
        parts.append("modifications gained: " + ", ".join(change.mods_added))
    if change.kind == "changed":
        parts.append("; ".join(f"{position} {what}" for position, what in change.positions)
                     or "no fitted change (measurements, notes or other fields)")
    elif change.kind == "renamed" and change.positions:
        parts.append("; ".join(f"{position} {what}" for position, what in change.positions))
    elif change.kind == "added":
        parts.append(f"{len(change.positions)} positions")
    return "; ".join(parts)


def fitted_text(span: Span) -> str:
    return "; ".join(f"{label} {value}" for label, value in span.fitted)


def span_dates(history: AircraftHistory, span: Span) -> str:
    """"2019-10-02 (abc1234567) → 2026-09-14 (def4567890)", or "→ now"; "≤" before a start the cut hides."""
    start = history.changes[span.start].commit
    first = "≤ " if history.cut and span.start == 0 else ""
    end = "now" if span.end is None else (f"{history.changes[span.end].commit.day.isoformat()} "
                                          f"({history.changes[span.end].commit.short})")
    return f"{first}{start.day.isoformat()} ({start.short}) → {end}"


def as_text(item: AircraftTimeline) -> str:
    """The changes, newest last, then each position's spans."""
    history = item.history
    lines = [f"{item.registration} ({item.aircraft_id}): {history.path}, {len(history.changes)} changes "
             "(mainline commits; dates are commit dates, UTC)"]
    lines += [f"note: {line}" for line in notes(item)]
    lines.append("")
    for index, change in enumerate(history.changes):
        lines.append(f"{change.commit.when}  {change.commit.short}  {change.commit.subject}")
        lines.append(f"    {change_line(change)}")
        if item.findings is not None:
            lines += findings_lines(item.findings[index])
    lines += ["", "Positions: what each carried, from which commit to which"]
    for span in history.spans:
        lines.append(f"  {span.position:<10} {span_dates(history, span)}")
        lines.append(f"  {'':<10} {fitted_text(span)}")
    return "\n".join(lines) + "\n"


MAX_FINDING_LINES = 12
"""Findings listed per change on the terminal (JSON lists them all)."""
MAX_MESSAGE_CHARS = 140


def findings_lines(found: ChangeFindings) -> list[str]:
    """A change's findings, one line each (messages shortened), at most MAX_FINDING_LINES."""
    if found.problem:
        return [f"    findings not compared: {found.problem}"]
    rows = [("appeared:", row) for row in found.appeared] + [("cleared: ", row) for row in found.cleared]
    lines = [f"    finding {what} [{severity}] {name}: {short(message)}"
             for what, (name, severity, message) in rows[:MAX_FINDING_LINES]]
    if len(rows) > MAX_FINDING_LINES:
        lines.append(f"    ... and {len(rows) - MAX_FINDING_LINES} more ({len(found.appeared)} appeared, "
                     f"{len(found.cleared)} cleared; --format json lists them all)")
    return lines or ["    findings: none appeared or cleared"]


def short(message: str) -> str:
    return message if len(message) <= MAX_MESSAGE_CHARS else message[:MAX_MESSAGE_CHARS - 1].rstrip() + "…"


def on_text(item: AircraftTimeline, day: date) -> str:
    """What each position carried on `day`, by the last commit on or before it."""
    change, spans = timeline.fitted_on(item.history, day)
    head = f"{item.registration} as fitted on {day.isoformat()}"
    lines = [f"note: {line}" for line in notes(item)]
    if change is None:
        first = item.history.changes[0].commit.day.isoformat() if item.history.changes else "?"
        return "\n".join(lines + [f"{head}: not known; the register's history of {item.history.path} starts on "
                                  f"{first}"]) + "\n"
    lines.append(f"{head}, as the register recorded it at commit {change.commit.short} "
                 f"({change.commit.when}, {change.commit.subject!r})")
    if change.kind == "removed":
        lines.append("  the aircraft was not in the register: its file had been removed")
    elif change.kind == "unreadable":
        lines.append(f"  not known: the aircraft file could not be read at that commit ({change.problem})")
    for span in spans:
        lines.append(f"  {span.position:<10} {fitted_text(span)}  ({span_dates(item.history, span)})")
    return "\n".join(lines) + "\n"


def as_json(item: AircraftTimeline, day: date | None = None) -> str:
    """The same as a JSON document (sorted keys); with `day`, the state on that day only."""
    history = item.history
    doc: dict[str, Any] = {"aircraft": item.aircraft_id, "registration": item.registration, "file": history.path,
                           "cut": history.cut, "notes": notes(item)}
    if day is not None:
        change, spans = timeline.fitted_on(history, day)
        doc["on"] = day.isoformat()
        doc["commit"] = commit_json(change) if change is not None else None
        doc["positions"] = {span.position: span_json(history, span) for span in spans}
        return json.dumps(doc, indent=2, sort_keys=True, ensure_ascii=False) + "\n"
    doc["changes"] = []
    for index, change in enumerate(history.changes):
        entry = {**commit_json(change), "modifications_added": list(change.mods_added),
                 "positions": dict(change.positions), "problem": change.problem}
        if change.renamed_from:
            entry["renamed_from"] = change.renamed_from
        if item.findings is not None:
            found = item.findings[index]
            entry["findings"] = {"appeared": [list(f) for f in found.appeared],
                                 "cleared": [list(f) for f in found.cleared], "problem": found.problem}
        doc["changes"].append(entry)
    doc["positions"] = {}
    for span in history.spans:
        doc["positions"].setdefault(span.position, []).append(span_json(history, span))
    return json.dumps(doc, indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def commit_json(change: Change) -> dict[str, Any]:
    commit = change.commit
    return {"commit": commit.hash, "date": commit.day.isoformat(), "time": commit.time,
            "subject": commit.subject, "kind": change.kind}


def span_json(history: AircraftHistory, span: Span) -> dict[str, Any]:
    until = history.changes[span.end].commit if span.end is not None else None
    return {"from": {"commit": history.changes[span.start].commit.hash,
                     "date": history.changes[span.start].commit.day.isoformat()},
            "to": {"commit": until.hash, "date": until.day.isoformat()} if until else None,
            "fitted": dict(span.fitted)}
