"""Values worked out once per process from objects that are costly or impossible to hash: remembered by
those objects' identity (and any plain, hashable arguments by value)."""
from __future__ import annotations

from collections.abc import Callable, Hashable
from dataclasses import fields
from typing import Any, Generic, TypeVar

T = TypeVar("T")


class ByIdentity(Generic[T]):
    """A bounded memo keyed by the identity of some objects (`same`) and the value of others (`equal`).

    An entry holds the objects themselves, so no id in its key can be reused by a new object while it
    lives, and a hit is confirmed object by object. Meant for the read-only model objects a build shares
    (an airframe's shape, a policy, an antenna model): hashing them field by field on every call would
    cost more than some of the work saved, and arrays cannot be hashed at all."""

    def __init__(self, limit: int):
        self.limit = limit
        self.held: dict[tuple, tuple[tuple[Any, ...], T]] = {}

    def get(self, same: tuple[Any, ...], equal: Hashable, make: Callable[[], T]) -> T:
        """make() once per (`same` by identity, `equal` by value) while the entry lasts. Raises TypeError
        when `equal` cannot be hashed (the caller then works the value out itself)."""
        key = (tuple(map(id, same)), equal)
        held = self.held.get(key)
        if held is not None and all(a is b for a, b in zip(held[0], same)):
            return held[1]
        if len(self.held) >= self.limit:  # bounded: cleared, not evicted one by one (a build's sets are small)
            self.held.clear()
        value = make()
        self.held[key] = (same, value)
        return value


def read_only(values: Any) -> Any:
    """A numpy array made read-only in place, and returned: a remembered value is handed to every
    caller, so none of them may change it."""
    values.setflags(write=False)
    return values


_UNORDERED: ByIdentity[dict[tuple, Any]] = ByIdentity(limit=64)


def by_unordered(items: tuple[Any, ...], field: str) -> dict[tuple, Any]:
    """`items` by the sorted values of their `field` (a pair named in either order), the first item of a key
    kept; made once per tuple of items (by identity: a build has one policy, asked for every pair of
    antennas of every aircraft)."""
    def make() -> dict[tuple, Any]:
        index: dict[tuple, Any] = {}
        for item in items:
            index.setdefault(tuple(sorted(getattr(item, field))), item)
        return index
    return _UNORDERED.get((items,), field, make)


_HASHES: ByIdentity[int] = ByIdentity(limit=4_096)


def hash_once(item: Any) -> int:
    """A frozen dataclass's hash of the fields it compares, worked out once per object: a `__hash__` for
    the few large model objects that key the per-process caches (an airframe, hashed hundreds of times an
    aircraft, walks every section, zone and surface each time). Equal objects still hash equal."""
    return _HASHES.get((item,), None, lambda: hash(tuple(getattr(item, f.name) for f in fields(item)
                                                         if (f.compare if f.hash is None else f.hash))))
