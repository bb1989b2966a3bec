"""The aircraft page's "Register history": what each position carried from which commit to which, and the
commits that changed the aircraft file, from `load.history` (read once per build for the whole fleet).
Findings per change are the terminal's (`build.py history`), not the site's: they need the registry run
at every revision."""
from __future__ import annotations

from typing import Any

from registry.core.model import Aircraft
from registry.load.history import MAX_CHANGES, AircraftHistory, Fitted, what_changed
from registry.output.history_text import change_line
from registry.site.context import SiteData

COLUMNS = (
    ("antenna", ("antenna", "antenna serial")),
    ("feeder", ("cable", "length", "connectors", "adapters")),
    ("hardware", ("antenna end", "radio end", "adapter parts", "radio unit", "splitter", "amplifier")),
    ("place", ("service", "location", "surface", "ground plane")),
)
"""The timeline table's columns and the FITTED labels each shows."""
SHOWN = {"antenna": "", "cable": "", "length": "", "service": "", "location": "", "surface": "", "antenna serial": "s/n",
         "adapter parts": "adapter parts", "radio unit": "radio unit"}
"""The label shown before a value ("" for a value that reads alone); other labels are shown as they are."""


def timeline_view(data: SiteData, aircraft: Aircraft) -> dict[str, Any] | None:
    """The aircraft page's history section: notes, one row per span (by position, oldest first) and the
    changes (newest first); None when the build read no history (a page rendered on its own)."""
    if data.history is None:
        return None
    path = data.src_text(aircraft.src.path)
    history = data.history.aircraft.get(path)
    notes = [data.history.note] if data.history.note else []
    if history is None and not notes:
        notes.append(f"{path} has no commit yet: its history starts with its first commit.")
    if path in data.history.uncommitted:
        notes.append(f"{path} has changes not committed yet: the history shows committed states only, "
                     "the rest of this page shows the file as it is.")
    if history is None:
        return {"notes": notes, "rows": [], "changes": [], "path": path}
    if history.cut and history.changes:
        notes.append(f"Earlier changes are not read (at most the newest {MAX_CHANGES}, and none before a shallow "
                     "clone's first commit): a row whose From starts with ≤ began at or before that commit.")
    return {"notes": notes, "path": path, "rows": span_rows(history),
            "changes": [change_view(history, index) for index in reversed(range(len(history.changes)))]}


def span_rows(history: AircraftHistory) -> list[dict[str, Any]]:
    """One row per span; the first row of a position carries the number of its rows (`rowspan`)."""
    rows = []
    spans = history.spans
    for number, span in enumerate(spans):
        previous = spans[number - 1] if number and spans[number - 1].position == span.position else None
        following = spans[number + 1] if number + 1 < len(spans) and spans[number + 1].position == span.position \
            else None
        count = sum(1 for other in spans if other.position == span.position) if previous is None else 0
        if previous is not None and previous.end == span.start:
            changed = what_changed(previous.fitted, span.fitted)
        else:
            changed = "added" if span.start > 0 else ""
        rows.append({"position": span.position, "rowspan": count, "current": span.end is None,
                     "start": commit_view(history, span.start, history.cut and span.start == 0),
                     "end": commit_view(history, span.end) if span.end is not None else None,
                     "removed": span.end is not None and (following is None or following.start != span.end),
                     "cells": cells(span.fitted, changed), "changed": changed})
    return rows


def cells(fitted: Fitted, changed: str) -> dict[str, list[tuple[str, str, bool]]]:
    """The fitted fields by column: (label shown, value, changed since the position's previous row)."""
    values = dict(fitted)
    moved = set(changed.split(", "))
    return {column: [(SHOWN.get(label, label), values[label], label in moved) for label in labels if label in values]
            for column, labels in COLUMNS}


def commit_view(history: AircraftHistory, index: int, at_or_before: bool = False) -> dict[str, str]:
    commit = history.changes[index].commit
    return {"date": commit.day.isoformat(), "when": commit.when, "short": commit.short, "subject": commit.subject,
            "prefix": "≤ " if at_or_before else ""}


def change_view(history: AircraftHistory, index: int) -> dict[str, Any]:
    change = history.changes[index]
    return {**commit_view(history, index), "what": change_line(change), "mods": list(change.mods_added)}
