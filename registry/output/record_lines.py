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
from collections.abc import Iterator
from pathlib import Path
from typing import Any, BinaryIO

from registry.incremental import line_digest
from registry.output.record import validate

MEMBER_KEY = re.compile(rb'"([^"\\/]+)(?:/[^"\\]*)?":')
"""A member line's opening key: the aircraft id, then what follows the first "/"."""

Layout = tuple[list[str], list[dict[bytes, tuple[bytes, int, int]]]]
"""A record's frame lines, and between each two of them each member line by aircraft id: its digest, and
where it sits in the file (offset and length, without its trailing comma)."""


def _lines(path: Path) -> Iterator[tuple[int, bytes]]:
    """The file's lines with their offsets, read as they come (a record runs to hundreds of megabytes),
    empty ones left out."""
    offset = 0
    with open(path, "rb", buffering=1 << 20) as handle:
        for raw in handle:
            line = raw.rstrip(b"\n")
            if line:  # an aircraft-by-aircraft map with no members
                yield offset, line
            offset += len(raw)


def _member(line: bytes) -> tuple[bytes, bytes] | None:
    """A member line's aircraft id and its text without the trailing comma, or None for a frame line."""
    if line[:1] in (b"{", b"}"):
        return None
    match = MEMBER_KEY.match(line)
    if match is None:
        raise NotInLayout
    return match.group(1), line[:-1] if line.endswith(b",") else line


def layout(path: Path) -> Layout:
    """The record file's frame lines and a digest and place of each member line (NotInLayout if it is
    not in the layout): enough to tell which aircraft differ without holding either record."""
    frames: list[str] = []
    members: list[dict[bytes, tuple[bytes, int, int]]] = []
    for offset, line in _lines(path):
        member = _member(line)
        if member is None:
            frames.append(_text(line))
            members.append({})
        elif not members or member[0] in members[-1]:
            raise NotInLayout
        else:
            members[-1][member[0]] = (line_digest(member[1]), offset, len(member[1]))
    if not frames:
        raise NotInLayout
    return frames, members


def assemble(path: Path, found: Layout, keep: set[bytes]) -> str:
    """The record file's text with only the member lines of the aircraft in `keep`, those read again
    from where `layout` found them (the others are never read twice)."""
    frames, members = found
    out: list[str] = []
    with open(path, "rb") as handle:
        for frame, before in zip(frames, [{}] + members[:-1]):
            out += [_kept(handle, before, keep), frame]
        out.append(_kept(handle, members[-1], keep))
    return "".join(out)


def _kept(handle: BinaryIO, members: dict[bytes, tuple[bytes, int, int]], keep: set[bytes]) -> str:
    """The member lines of the aircraft in `keep`, read from their places and joined by commas."""
    kept = []
    for aircraft_id, (_, offset, length) in members.items():
        if aircraft_id in keep:
            handle.seek(offset)
            kept.append(handle.read(length))
    return _text(b",".join(kept))


def _text(data: bytes) -> str:
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError:
        raise NotInLayout from None


class NotInLayout(Exception):
    """The text parsed no further: the caller reads the records whole and words the problem."""


def _parsed(text: str) -> Any:
    try:
        return json.loads(text)
    except (json.JSONDecodeError, RecursionError):
        raise NotInLayout from None


def trimmed_pair(old_path: Path, new_path: Path, old_where: str, new_where: str
                 ) -> tuple[dict[str, Any], dict[str, Any]] | None:
    """Both records with the aircraft alike on both sides left out, checked against the record schema;
    None when either file is not in the layout, cannot be read, or does not parse (the two have
    different frames, a part is not JSON), so that the caller reads them whole and words what is wrong.
    Raises RecordError for a record the schema refuses."""
    try:
        return _trimmed_pair(Path(old_path), Path(new_path), old_where, new_where)
    except (NotInLayout, OSError):
        return None


def _trimmed_pair(old_path: Path, new_path: Path, old_where: str, new_where: str
                  ) -> tuple[dict[str, Any], dict[str, Any]] | None:
    old, new = layout(old_path), layout(new_path)
    if len(old[0]) != len(new[0]):
        return None
    changed = {aircraft_id for before, after in zip(old[1], new[1]) for aircraft_id in before.keys() | after.keys()
               if _digest(before.get(aircraft_id)) != _digest(after.get(aircraft_id))}
    old_frame = _parsed("".join(old[0]))
    new_frame = _parsed("".join(new[0]))
    if not isinstance(old_frame, dict) or not isinstance(new_frame, dict):
        return None
    old_found, new_found = old_frame.get("discrepancies"), new_frame.get("discrepancies")
    if not isinstance(old_found, dict) or not isinstance(new_found, dict):
        return None
    changed |= {str(key).split("/", 1)[0].encode("utf-8") for key in old_found.keys() | new_found.keys()
                if old_found.get(key) != new_found.get(key)}
    return (validate(_parsed(assemble(old_path, old, changed)), old_where),
            validate(_parsed(assemble(new_path, new, changed)), new_where))


def _digest(member: tuple[bytes, int, int] | None) -> bytes | None:
    return member[0] if member is not None else None
