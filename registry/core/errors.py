"""Problems found in a registry, and the one exception that carries all of them.

A problem prints gcc style, so editors and CI make it clickable:

    fleet_data/aircraft/qx-tca.yaml:14:17: error: installations[2].feeder.length_m: found -3.5, expected a positive number of metres
"""
from __future__ import annotations

import functools
from dataclasses import dataclass
from typing import Iterable, NamedTuple

EXIT_OK = 0
"""Success (`check`: no unserviceable finding open; `diff`: the two builds are the same)."""
EXIT_FINDINGS = 1
"""`check`: an unserviceable finding is open; `diff`: the two builds differ."""
EXIT_DATA = 2
"""A data or usage error: the user can fix it."""
EXIT_INTERNAL = 3
"""A bug: please report it with the output of --debug."""

FILE_FIELD = "(file)"
"""The field path of a problem with the file as a whole (syntax, encoding, size, empty file)."""


class Src(NamedTuple):
    """Where something came from: a file and a 1-based line and column. A named tuple: a registry has
    a position for every value, and tuples are the cheapest to keep in the cache and read back."""

    path: str
    line: int
    column: int

    def __str__(self) -> str:
        return f"{self.path}:{self.line}:{self.column}"


@dataclass(frozen=True, order=True, slots=True)
class Problem:
    """One thing wrong with the registry, with the place it was found.

    `field` is the dotted path inside the file (`installations[2].feeder.length_m`), `found` says what
    was there and `expected` what should be.
    """

    path: str
    line: int
    column: int
    field: str
    found: str
    expected: str

    @classmethod
    def at(cls, src: Src, field: str, found: str, expected: str) -> Problem:
        return cls(src.path, src.line, src.column, field or FILE_FIELD, found, expected)

    @property
    def src(self) -> Src:
        return Src(self.path, self.line, self.column)

    def __str__(self) -> str:
        return (f"{self.path}:{self.line}:{self.column}: error: {self.field}: "
                f"found {self.found}, expected {self.expected}")


class AerialbookError(Exception):
    """The one base of every error the tool reports to its user: it knows its exit code and how it
    prints. Library code raises it and never prints; `cli.main` catches it in one place."""

    exit_code = EXIT_DATA

    def report(self) -> str:
        """The text printed on standard error."""
        return f"error: {self}"


class DataError(AerialbookError):
    """The registry cannot be loaded. `problems` holds every problem found, sorted by file and line."""

    def __init__(self, problems: Iterable[Problem]):
        self.problems: list[Problem] = sorted(set(problems))
        if not self.problems:
            raise ValueError("DataError needs at least one problem")
        super().__init__(self.summary())

    def summary(self) -> str:
        """The count line printed after the problems: `3 problems in 2 files`."""
        count = len(self.problems)
        files = len({problem.path for problem in self.problems})
        return (f"{count} problem{'' if count == 1 else 's'} in "
                f"{files} file{'' if files == 1 else 's'}")

    def report(self) -> str:
        """Every problem on its own line, then the count line."""
        return "\n".join([*(str(problem) for problem in self.problems), self.summary()])


def format_path(parts: Iterable[str | int]) -> str:
    """`('installations', 2, 'feeder', 'length_m')` → `installations[2].feeder.length_m`."""
    text = ""
    for part in parts:
        if isinstance(part, int):
            text += f"[{part}]"
        else:
            text += f".{part}" if text else part
    return text or FILE_FIELD


@functools.lru_cache(maxsize=4096)
def parse_path(text: str) -> tuple[str | int, ...]:
    """The inverse of `format_path`: `feeder.length_m` → `('feeder', 'length_m')`. Kept per text in a
    process: the computation asks for the same few field paths for every figure of every aircraft."""
    parts: list[str | int] = []
    for dotted in text.split("."):
        name, *indices = dotted.replace("]", "").split("[")
        if name:
            parts.append(name)
        parts.extend(int(index) for index in indices)
    return tuple(parts)
