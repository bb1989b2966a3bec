"""An aircraft file read as far as it goes, so one run reports every problem in it.

A file whose schema check found problems is not part of the fleet, but the parts of it that passed are
still built, only to check what a schema cannot: the references to other files, sweep files that are
missing or too large, coordinates outside the airframe. Without this, a technician who made several
mistakes in one file would see them over several runs (the format first, then the references).
"""
from __future__ import annotations

import copy
from typing import NamedTuple

from registry.core.errors import FILE_FIELD, Problem, parse_path
from registry.core.model import Aircraft, Installation
from registry.load import build, integrity

_TOP = ("id", "registration", "airframe", "serial")


class AircraftRead(NamedTuple):
    """An aircraft file read: its model (None when the file has problems), every problem found in it, and
    for a file with problems what could be built of it (for checking only): the aircraft without its
    faulty parts when its own fields are sound, else its sound installations alone."""

    model: Aircraft | None
    problems: list[Problem]
    partial: Aircraft | None = None
    loose: tuple[Installation, ...] = ()


def read_on(doc: build.Doc, problems: list[Problem]) -> AircraftRead:
    """What can be built of an aircraft file with `problems`, with the problems found in building it."""
    bad = [_parts(problem.field) for problem in problems]
    if not isinstance(doc.data, dict) or (FILE_FIELD,) in bad:
        return AircraftRead(None, problems)

    def keep(parts: tuple[str | int, ...]) -> bool:
        """No problem at, inside or above `parts`."""
        return not any(where[:len(parts)] == parts or parts[:len(where)] == where for where in bad)

    sound = copy.copy(doc)
    sound.data = {key: value for key, value in doc.data.items() if key not in _TOP or keep((key,))}
    for key in ("installations", "modifications"):
        if not isinstance(sound.data.get(key), list):
            sound.data[key] = []
    if all(isinstance(sound.data.get(key), str) for key in ("id", "registration", "airframe")):
        aircraft, built = build.aircraft(sound, keep)
        return AircraftRead(None, problems + built, partial=aircraft)
    loose = tuple(build.installation(sound, n, item) for n, item in enumerate(sound.data["installations"])
                  if keep(("installations", n)))
    return AircraftRead(None, problems + integrity.duplicates(loose, "position", "position in this aircraft"),
                        loose=loose)


def _parts(field: str) -> tuple[str | int, ...]:
    """A problem's field as a path; a key that cannot be read back as one (`a[b]`) stands for the whole file."""
    try:
        return parse_path(field)
    except ValueError:
        return (FILE_FIELD,)
