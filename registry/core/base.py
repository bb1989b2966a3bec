"""The base of every model object: a read-only mapping, freezing, and where each value came from."""
from __future__ import annotations

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


class Locator:
    """Finds where a field of one object sits: `index` maps path tuples to positions, `prefix` is the object's."""

    __slots__ = ("index", "prefix", "fallback")

    def __init__(self, index: Mapping[tuple[str | int, ...], Src], prefix: tuple[str | int, ...], fallback: Src):
        self.index = index
        self.prefix = prefix
        self.fallback = fallback

    def where(self, field_path: str) -> Src:
        """The position of `field_path` (`feeder.length_m`, `bands_mhz[0][1]`), or of its nearest present parent."""
        parts = self.prefix + parse_path(field_path)
        while len(parts) >= len(self.prefix):
            if parts in self.index:
                return self.index[parts]
            parts = parts[:-1]
        return self.fallback

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
