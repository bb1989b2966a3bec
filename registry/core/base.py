"""The base of every model object: a read-only mapping, freezing, and where each value came from."""
from __future__ import annotations

import json
import sys
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from typing import Any

from registry.core.errors import Src, format_path, parse_path


class FrozenMap(Mapping):
    """A read-only, hashable mapping whose keys iterate in sorted order."""

    def __init__(self, items: Mapping[str, Any] | Iterator[tuple[str, Any]] | tuple = ()):
        self._items = dict(sorted(dict(items).items()))

    def __getitem__(self, key: str) -> Any:
        return self._items[key]

    def __iter__(self) -> Iterator[str]:
        return iter(self._items)

    def __len__(self) -> int:
        return len(self._items)

    def __hash__(self) -> int:
        return hash(tuple(self._items.items()))

    def __repr__(self) -> str:
        return f"FrozenMap({self._items!r})"


def freeze(value: Any) -> Any:
    """Plain data made immutable: mappings become FrozenMap, lists become tuples."""
    if isinstance(value, Mapping):
        return FrozenMap((key, freeze(item)) for key, item in value.items())
    if isinstance(value, (list, tuple)):
        return tuple(freeze(item) for item in value)
    return value


class TextIndex(Mapping):
    """A table by path tuple kept (in the cache, and when handed between processes) as the file's path
    once and `rows`, JSON text of one list per entry; the table is made from the text only when first
    asked. Subclasses say how an entry becomes a row (`row_of`) and how rows become the table
    (`table_of`, which leaves out rows of any other shape: a damaged or forged cache entry)."""

    __slots__ = ("path", "_rows", "_table")

    def __init__(self, path: str, rows: str):
        self.path = sys.intern(path)
        self._rows: str | None = rows
        self._table: dict[tuple[str | int, ...], Any] | None = None

    @classmethod
    def of(cls, path: str, table: dict[tuple[str | int, ...], Any]):
        """The index of a file just read (`table` already made; `rows` written when first asked)."""
        made = cls(path, "")
        made._rows, made._table = None, table
        return made

    @staticmethod
    def row_of(parts: tuple[str | int, ...], value: Any) -> list:
        raise NotImplementedError

    @staticmethod
    def table_of(path: str, rows: str) -> dict[tuple[str | int, ...], Any]:
        raise NotImplementedError

    @property
    def rows(self) -> str:
        if self._rows is None:
            self._rows = json.dumps([self.row_of(parts, value) for parts, value in self._table.items()],
                                    separators=(",", ":"))
        return self._rows

    @property
    def table(self) -> dict[tuple[str | int, ...], Any]:
        if self._table is None:
            self._table = self.table_of(self.path, self._rows or "[]")
        return self._table

    def __getitem__(self, parts: tuple[str | int, ...]) -> Any:
        return self.table[parts]

    def __contains__(self, parts: object) -> bool:
        return parts in self.table

    def __iter__(self) -> Iterator[tuple[str | int, ...]]:
        return iter(self.table)

    def __len__(self) -> int:
        return len(self.table)

    def __getstate__(self) -> tuple[str, str]:
        return self.path, self.rows

    def __setstate__(self, state: tuple[str, str]) -> None:
        self.__init__(*state)


class FieldIndex(TextIndex):
    """Where each field of one file sits: a mapping from path tuples (`("installations", 2, "feeder")`)
    to positions, shared by every object built from the file.

    A `TextIndex` whose rows are [line, column, part, part, ...]. An aircraft read back from the cache is
    seldom asked (only when its figures are computed again or a finding names a line), and its thousand
    positions as objects were most of what reading a large fleet from the cache cost. Rows that do not
    read back as [int, int, str | int, ...] are left out: a position then falls back to its object's
    own, as for a field not in the file."""

    __slots__ = ()

    @staticmethod
    def row_of(parts: tuple[str | int, ...], src: Src) -> list:
        return [src.line, src.column, *parts]

    @staticmethod
    def table_of(path: str, rows: str) -> dict[tuple[str | int, ...], Src]:
        return _table_of(path, rows)


def _table_of(path: str, rows: str) -> dict[tuple[str | int, ...], Src]:
    """The table `FieldIndex.rows` holds; rows of any other shape left out."""
    try:
        items = json.loads(rows)
    except ValueError:
        return {}
    table = {}
    for row in items if type(items) is list else ():
        if (type(row) is list and len(row) >= 2 and type(row[0]) is int and type(row[1]) is int
                and all(type(part) in (str, int) for part in row[2:])):
            table[tuple(row[2:])] = Src(path, row[0], row[1])
    return table


class Locator:
    """Finds where a field of one object sits: `index` maps path tuples to positions, `prefix` is the object's."""

    __slots__ = ("index", "prefix", "fallback")

    def __init__(self, index: FieldIndex, prefix: tuple[str | int, ...], fallback: Src):
        self.index = index
        self.prefix = prefix
        self.fallback = fallback

    def where(self, field_path: str) -> Src:
        """The position of `field_path` (`feeder.length_m`, `bands_mhz[0][1]`), or of its nearest present parent."""
        parts = self.prefix + parse_path(field_path)
        while True:
            if parts in self.index:
                return self.index[parts]
            if len(parts) <= len(self.prefix):  # the object's own path is the last tried (a file's: ())
                return self.fallback
            parts = parts[:-1]

    def field_path(self, field_path: str) -> str:
        """The field's full path in its file, as messages show it (`installations[2].feeder.length_m`)."""
        return format_path(self.prefix + parse_path(field_path))


@dataclass(frozen=True, kw_only=True, slots=True)
class Sourced:
    """Base of every model object: where it came from."""

    src: Src = field(compare=False)
    locator: Locator | None = field(default=None, repr=False, compare=False)

    def where(self, field_path: str) -> Src:
        """The source position of a field of this object (falls back to the object's own position)."""
        return self.locator.where(field_path) if self.locator else self.src

    def field_path(self, field_path: str) -> str:
        """The field's full path in its file (`feeder.length_m` → `installations[2].feeder.length_m`)."""
        return self.locator.field_path(field_path) if self.locator else field_path
