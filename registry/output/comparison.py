"""The result of comparing two build records: what changed, as data (`compare.compare` makes it).

A `Comparison` is queryable by aircraft id and by (aircraft id, position); `compare_text` prints it for
`build.py diff` and `site.changes` makes the site's changes page of it.
"""
from __future__ import annotations

import math
from collections import defaultdict
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any

DEFAULT_REL_TOL = 1e-3
"""Figures closer than 0.1 % of the larger magnitude have not moved..."""
DEFAULT_ABS_TOL = 1e-3
"""...nor have figures closer than 0.001 in their own unit (dB, m, MHz, %, days)."""


@dataclass(frozen=True)
class Tolerance:
    """Two numbers are the same when |new − old| ≤ max(rel · max(|old|, |new|), abs) (math.isclose)."""

    rel: float = DEFAULT_REL_TOL
    abs: float = DEFAULT_ABS_TOL

    def same(self, old: Any, new: Any) -> bool:
        if is_number(old) and is_number(new):
            return math.isclose(old, new, rel_tol=self.rel, abs_tol=self.abs)
        return old == new


@dataclass(frozen=True)
class FieldChange:
    """One field, as a dotted path (`feeder.length_m`); None stands for "absent"."""

    field: str
    old: Any
    new: Any


@dataclass(frozen=True)
class ItemChange:
    """An aircraft's own fields, a catalogue entry, the policy or fleet.yaml: added, removed or changed."""

    kind: str
    id: str
    change: str
    fields: tuple[FieldChange, ...] = ()


@dataclass(frozen=True)
class InstallationChange:
    """`position` is the position in NEW (in OLD for a removal); `old_position` is set for a move."""

    aircraft: str
    position: str
    change: str
    summary: str
    old_position: str | None = None
    fields: tuple[FieldChange, ...] = ()


@dataclass(frozen=True)
class DiscrepancyChange:
    """`id` is the id in NEW (in OLD for a resolved one); `aspects` lists what changed for a kept one:
    severity, review, value, limit. `old`/`new` are the discrepancies as the records hold them."""

    id: str
    change: str
    aircraft: str
    positions: tuple[str, ...]
    old_id: str | None = None
    aspects: tuple[FieldChange, ...] = ()
    old: Mapping[str, Any] | None = None
    new: Mapping[str, Any] | None = None


@dataclass(frozen=True)
class FigureChange:
    """A computed figure that moved beyond the tolerance, appeared or disappeared. `scope` is
    installation, pair or cable; `owner` is `<aircraft>/<position>`, `<aircraft>/<A>+<B>` or a cable id."""

    scope: str
    owner: str
    aircraft: str | None
    positions: tuple[str, ...]
    key: str
    label: str
    unit: str
    old: Any
    new: Any

    @property
    def relative_pct(self) -> float | None:
        if is_number(self.old) and is_number(self.new) and self.old != 0:
            return 100.0 * (self.new - self.old) / abs(self.old)
        return None

    @property
    def difference(self) -> float | None:
        """new − old in the figure's own unit (for a dB figure: the change in dB), None unless both are numbers."""
        if is_number(self.old) and is_number(self.new):
            return self.new - self.old
        return None


@dataclass(frozen=True)
class PairChange:
    """A pair of antennas (scope `pair`: isolation) or a transmitter → receiver path (scope `co-site`)
    present on one side only; `owner` is its key in NEW (OLD's, followed to NEW's positions, for a
    removal), `summary` its figures on the side that has it."""

    scope: str
    owner: str
    aircraft: str
    positions: tuple[str, ...]
    change: str
    summary: str


@dataclass(frozen=True)
class SideInfo:
    label: str
    as_of: str


@dataclass
class Comparison:
    """What changed from OLD to NEW, with look-ups for the pages of one aircraft or installation."""

    old: SideInfo
    new: SideInfo
    tolerance: Tolerance
    at: str = ""
    """The one date both sides are evaluated at (NEW's): OLD's measurement ages are re-based to it."""
    items: list[ItemChange] = field(default_factory=list)
    installations: list[InstallationChange] = field(default_factory=list)
    discrepancies: list[DiscrepancyChange] = field(default_factory=list)
    figures: list[FigureChange] = field(default_factory=list)
    pairs: list[PairChange] = field(default_factory=list)
    registrations: dict[str, str] = field(default_factory=dict)
    new_positions: frozenset[tuple[str, str]] = frozenset()

    @property
    def same(self) -> bool:
        return not (self.items or self.installations or self.discrepancies or self.figures or self.pairs)

    def aircraft(self, aircraft_id: str) -> ItemChange | None:
        """The change of the aircraft's own fields (registration, serial, modifications...), or None."""
        return next((item for item in self.items if item.kind == "aircraft" and item.id == aircraft_id), None)

    def installation(self, aircraft_id: str, position: str) -> InstallationChange | None:
        """The change of the installation at `position` (NEW's position id; OLD's for a removal), or None."""
        return next((item for item in self.installations
                     if item.aircraft == aircraft_id and item.position == position), None)

    def discrepancies_of(self, aircraft_id: str, position: str | None = None) -> list[DiscrepancyChange]:
        return [item for item in self.discrepancies if item.aircraft == aircraft_id
                and (position is None or position in item.positions)]

    def figures_of(self, aircraft_id: str, position: str | None = None) -> list[FigureChange]:
        return [item for item in self.figures if item.aircraft == aircraft_id
                and (position is None or position in item.positions)]

    def pairs_of(self, aircraft_id: str, position: str | None = None) -> list[PairChange]:
        return [item for item in self.pairs if item.aircraft == aircraft_id
                and (position is None or position in item.positions)]

    def marks(self, aircraft_id: str, position: str | None = None) -> tuple[str, ...]:
        """Short reasons an aircraft page (or installation page) changed in this build; empty when it did not."""
        out = []
        if position is None:
            own = self.aircraft(aircraft_id)
            if own is not None:
                out.append(f"aircraft {own.change}")
            by_change: dict[str, int] = defaultdict(int)
            for item in self.installations:
                if item.aircraft == aircraft_id:
                    by_change[item.change] += 1
            out += [f"{count} installation{'s' if count > 1 else ''} {change}"
                    for change, count in sorted(by_change.items())]
        else:
            own_installation = self.installation(aircraft_id, position)
            if own_installation is not None:
                out.append(f"installation {own_installation.change}"
                           + (f" from {own_installation.old_position}" if own_installation.old_position else ""))
        findings = self.discrepancies_of(aircraft_id, position)
        if findings:
            out.append(f"{len(findings)} finding{'s' if len(findings) > 1 else ''} changed")
        for change in ("added", "removed"):
            pairs = [item for item in self.pairs_of(aircraft_id, position) if item.change == change]
            if pairs:
                out.append(f"{len(pairs)} pair{'s' if len(pairs) > 1 else ''} {change}")
        moved = self.figures_of(aircraft_id, position)
        if moved:
            out.append(f"{len(moved)} figure{'s' if len(moved) > 1 else ''} moved")
        return tuple(out)

    def is_changed(self, aircraft_id: str, position: str | None = None) -> bool:
        return bool(self.marks(aircraft_id, position))

    def counts(self) -> dict[str, int]:
        def count(items: Iterable[Any], change: str) -> int:
            return sum(1 for item in items if item.change == change)

        installs, found = self.installations, self.discrepancies
        return {
            "installations_added": count(installs, "added"), "installations_removed": count(installs, "removed"),
            "installations_moved": count(installs, "moved"), "installations_changed": count(installs, "changed"),
            "aircraft_added": sum(1 for i in self.items if i.kind == "aircraft" and i.change == "added"),
            "aircraft_removed": sum(1 for i in self.items if i.kind == "aircraft" and i.change == "removed"),
            "aircraft_changed": sum(1 for i in self.items if i.kind == "aircraft" and i.change == "changed"),
            "catalogue_changes": sum(1 for i in self.items if i.kind != "aircraft"),
            "discrepancies_new": count(found, "new"), "discrepancies_resolved": count(found, "resolved"),
            "severity_changes": sum(1 for i in found if has_aspect(i, "severity")),
            "review_changes": sum(1 for i in found if has_aspect(i, "review")),
            "value_changes": sum(1 for i in found if has_aspect(i, "value") or has_aspect(i, "limit")),
            "figures_moved": len(self.figures),
            "pairs_added": count(self.pairs, "added"), "pairs_removed": count(self.pairs, "removed"),
        }


def has_aspect(item: DiscrepancyChange, name: str) -> bool:
    return any(aspect.field == name for aspect in item.aspects)


def is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)
