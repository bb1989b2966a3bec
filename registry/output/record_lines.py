"""Two build records compared aircraft by aircraft, without parsing what both hold alike.

`record.to_text` writes each aircraft's share of a per-aircraft map (the registry's aircraft, the
installation, pair and co-site figures) on a line of its own: a "member line", starting with `"` and the
member's key, whose aircraft id is the key up to its first "/". Every other line is a "frame line" and
starts with `{` or `}`: the record's other fields, the discrepancies, the catalogues.

An aircraft whose member lines are the same in both records, and whose discrepancies are the same, has
not changed: its lines are left out of both sides before they are parsed, and the comparison
(`compare.compare`, which matches installations within an aircraft only) finds the same changes in what
is left. Frame lines are always parsed and the trimmed records checked against the record schema.
Text not in this layout (a record written by hand, or by an earlier version on one line) gives None:
the caller then reads both records whole.
"""
from __future__ import annotations

import json
import re
from typing import Any

from registry.output.record import validate

MEMBER_KEY = re.compile(r'"([^"\\/]+)(?:/[^"\\]*)?":')
"""A member line's opening key: the aircraft id, then what follows the first "/"."""

Layout = tuple[list[str], list[dict[str, str]]]
"""A record's frame lines, and between each two of them its member lines by aircraft id."""


def layout(text: str) -> Layout | None:
    """The record text's frame lines and member lines, or None when it is not in the layout."""
    frames: list[str] = []
    members: list[dict[str, str]] = []
    for line in text.rstrip("\n").split("\n"):
        if not line:  # an aircraft-by-aircraft map with no members
            continue
        if line.startswith(("{", "}")):
            frames.append(line)
            members.append({})
            continue
        match = MEMBER_KEY.match(line)
        if match is None or not members or match.group(1) in members[-1]:
            return None
        members[-1][match.group(1)] = line[:-1] if line.endswith(",") else line
    return (frames, members) if frames else None


def assemble(frames: list[str], members: list[dict[str, str]], keep: set[str]) -> str:
    """The record text with only the member lines of the aircraft in `keep`."""
    out = []
    for frame, between in zip(frames, members):
        out.append(frame)
        out.append(",".join(line for aircraft_id, line in between.items() if aircraft_id in keep))
    return "".join(out)


class NotInLayout(Exception):
    """The text parsed no further: the caller reads the records whole and words the problem."""


def _parsed(text: str) -> Any:
    try:
        return json.loads(text)
    except (json.JSONDecodeError, RecursionError):
        raise NotInLayout from None


def trimmed_pair(old_text: str, new_text: str, old_where: str, new_where: str
                 ) -> tuple[dict[str, Any], dict[str, Any]] | None:
    """Both records with the aircraft alike on both sides left out, checked against the record schema;
    None when either text is not in the layout, or does not parse (the two have different frames, a
    part is not JSON), so that the caller reads them whole and words what is wrong. Raises RecordError
    for a record the schema refuses."""
    try:
        return _trimmed_pair(old_text, new_text, old_where, new_where)
    except NotInLayout:
        return None


def _trimmed_pair(old_text: str, new_text: str, old_where: str, new_where: str
                  ) -> tuple[dict[str, Any], dict[str, Any]] | None:
    old, new = layout(old_text), layout(new_text)
    if old is None or new is None or len(old[0]) != len(new[0]):
        return None
    changed = {aircraft_id for before, after in zip(old[1], new[1])
               for aircraft_id in before.keys() | after.keys() if before.get(aircraft_id) != after.get(aircraft_id)}
    old_frame = _parsed(assemble(old[0], old[1], set()))
    new_frame = _parsed(assemble(new[0], new[1], set()))
    if not isinstance(old_frame, dict) or not isinstance(new_frame, dict):
        return None
    old_found, new_found = old_frame.get("discrepancies"), new_frame.get("discrepancies")
    if not isinstance(old_found, dict) or not isinstance(new_found, dict):
        return None
    changed |= {str(key).split("/", 1)[0] for key in old_found.keys() | new_found.keys()
                if old_found.get(key) != new_found.get(key)}
    return (validate(_parsed(assemble(old[0], old[1], changed)), old_where),
            validate(_parsed(assemble(new[0], new[1], changed)), new_where))
