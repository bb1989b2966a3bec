"""Compare two build records: what changed in the registry, in the discrepancies and in the figures.

`compare(old, new)` returns a `Comparison`, queryable by aircraft id and by (aircraft id, position);
`as_text` and `as_json` print it for `build.py diff`, and `changes_page` gives the context of the site's
changes page. `read_side` turns what the command line names (a built site, a record file, a registry
folder or `git:REV`) into a record.

Identity (docs/build-record.md): an installation is (aircraft id, position id). When one installation
disappears from an aircraft and exactly one appears on the same aircraft with the same antenna model,
service and feeder cable, the two are one installation that moved (or whose position was renamed); any
other disappearance or appearance is a removal or an addition. Discrepancy ids and pair figures of a
moved installation are followed to its new position id.
"""
from __future__ import annotations

import io
import json
import math
import subprocess
import tarfile
import tempfile
from collections import defaultdict
from collections.abc import Callable, Iterable, Mapping
from dataclasses import asdict, dataclass, field, replace
from datetime import date
from pathlib import Path
from typing import Any

from registry.output import record as build_record
from registry.output.record import RecordError

DEFAULT_REL_TOL = 1e-3
"""Figures closer than 0.1 % of the larger magnitude have not moved..."""
DEFAULT_ABS_TOL = 1e-3
"""...nor have figures closer than 0.001 in their own unit (dB, m, MHz, %, days)."""
CATALOGUES = (("airframes", "airframe"), ("antennas", "antenna model"), ("cables", "cable"),
              ("services", "service"))
GIT_PREFIX = "git:"
TEXT_WIDTH = 60


# ---- what changed --------------------------------------------------------------------------------------


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
    items: list[ItemChange] = field(default_factory=list)
    installations: list[InstallationChange] = field(default_factory=list)
    discrepancies: list[DiscrepancyChange] = field(default_factory=list)
    figures: list[FigureChange] = field(default_factory=list)
    registrations: dict[str, str] = field(default_factory=dict)
    new_positions: frozenset[tuple[str, str]] = frozenset()

    @property
    def same(self) -> bool:
        return not (self.items or self.installations or self.discrepancies or self.figures)

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
        }


def has_aspect(item: DiscrepancyChange, name: str) -> bool:
    return any(aspect.field == name for aspect in item.aspects)


def is_number(value: Any) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


# ---- comparing -----------------------------------------------------------------------------------------


def flatten(value: Any, prefix: str = "") -> dict[str, Any]:
    """Nested record data as {dotted path: leaf}; nulls and empty containers leave no entry (absent)."""
    if isinstance(value, Mapping):
        out: dict[str, Any] = {}
        for key in sorted(value):
            out.update(flatten(value[key], f"{prefix}.{key}" if prefix else str(key)))
        return out
    if isinstance(value, list):
        out = {}
        for index, item in enumerate(value):
            out.update(flatten(item, f"{prefix}[{index}]"))
        return out
    return {} if value is None else {prefix: value}


def field_changes(old: Any, new: Any, skip: tuple[str, ...] = ()) -> tuple[FieldChange, ...]:
    """Every leaf that differs (exactly: registry values are inputs), in path order."""
    before, after = flatten(old), flatten(new)
    return tuple(FieldChange(path, before.get(path), after.get(path)) for path in sorted(set(before) | set(after))
                 if before.get(path) != after.get(path) and path.split(".")[0].split("[")[0] not in skip)


def installation_summary(entry: Mapping[str, Any]) -> str:
    loc, feeder = entry["location"], entry["feeder"]
    return (f"{entry['service']}, {entry['antenna']}, STA {show(loc['sta'])} BL {show(loc['bl'])} "
            f"WL {show(loc['wl'])} {entry['surface']}, {feeder['cable']} {show(feeder['length_m'])} m")


def installations_of(record: Mapping[str, Any]) -> dict[tuple[str, str], Mapping[str, Any]]:
    return {(aircraft_id, position): entry
            for aircraft_id, craft in record["registry"]["aircraft"].items()
            for position, entry in craft["installations"].items()}


def move_key(aircraft_id: str, entry: Mapping[str, Any]) -> tuple[str, str, str, str]:
    return aircraft_id, entry["antenna"], entry["service"], entry["feeder"]["cable"]


def find_moves(removed: dict[tuple[str, str], Mapping[str, Any]], added: dict[tuple[str, str], Mapping[str, Any]]
               ) -> dict[tuple[str, str], tuple[str, str]]:
    """Old identity → new identity for each removal matched one to one with an addition (module docstring)."""
    gone: dict[tuple, list[tuple[str, str]]] = defaultdict(list)
    came: dict[tuple, list[tuple[str, str]]] = defaultdict(list)
    for key, entry in removed.items():
        gone[move_key(key[0], entry)].append(key)
    for key, entry in added.items():
        came[move_key(key[0], entry)].append(key)
    return {gone[match][0]: came[match][0] for match in gone if len(gone[match]) == 1 and len(came.get(match, ())) == 1}


def compare(old: Mapping[str, Any], new: Mapping[str, Any], tolerance: Tolerance = Tolerance(),
            old_label: str = "OLD", new_label: str = "NEW") -> Comparison:
    """What changed from the `old` record to the `new` one."""
    result = Comparison(SideInfo(old_label, old["as_of"]), SideInfo(new_label, new["as_of"]), tolerance)
    old_aircraft, new_aircraft = old["registry"]["aircraft"], new["registry"]["aircraft"]
    result.registrations = {**{key: craft["registration"] for key, craft in old_aircraft.items()},
                            **{key: craft["registration"] for key, craft in new_aircraft.items()}}

    for key in sorted(set(old_aircraft) | set(new_aircraft)):
        before, after = old_aircraft.get(key), new_aircraft.get(key)
        if before is None or after is None:
            result.items.append(ItemChange("aircraft", key, "added" if before is None else "removed"))
        elif changes := field_changes(before, after, skip=("installations",)):
            result.items.append(ItemChange("aircraft", key, "changed", changes))
    for section, kind in CATALOGUES:
        before_all, after_all = old["registry"][section], new["registry"][section]
        for key in sorted(set(before_all) | set(after_all)):
            before, after = before_all.get(key), after_all.get(key)
            if before is None or after is None:
                result.items.append(ItemChange(kind, key, "added" if before is None else "removed"))
            elif changes := field_changes(before, after):
                result.items.append(ItemChange(kind, key, "changed", changes))
    for kind, before, after in (("policy", old["registry"]["policy"], new["registry"]["policy"]),
                                ("fleet", old["fleet"], new["fleet"])):
        if changes := field_changes(before, after):
            result.items.append(ItemChange(kind, kind, "changed", changes))

    before_all, after_all = installations_of(old), installations_of(new)
    result.new_positions = frozenset(after_all)
    removed = {key: entry for key, entry in before_all.items() if key not in after_all}
    added = {key: entry for key, entry in after_all.items() if key not in before_all}
    moves = find_moves(removed, added)
    identity = {key: key for key in before_all if key in after_all} | moves  # old identity → new identity
    renamed = {old_key: new_key[1] for old_key, new_key in moves.items()}
    for old_key, new_key in sorted(identity.items(), key=lambda pair: pair[1]):
        changes = field_changes(before_all[old_key], after_all[new_key])
        if old_key != new_key:
            result.installations.append(InstallationChange(new_key[0], new_key[1], "moved",
                                                           installation_summary(after_all[new_key]), old_key[1], changes))
        elif changes:
            result.installations.append(InstallationChange(new_key[0], new_key[1], "changed",
                                                           installation_summary(after_all[new_key]), None, changes))
    for key, entry in removed.items():
        if key not in moves:
            result.installations.append(InstallationChange(key[0], key[1], "removed", installation_summary(entry)))
    moved_to = set(moves.values())
    for key, entry in added.items():
        if key not in moved_to:
            result.installations.append(InstallationChange(key[0], key[1], "added", installation_summary(entry)))
    result.installations.sort(key=lambda item: (item.aircraft, item.position, item.change))

    result.discrepancies = compare_discrepancies(old["discrepancies"], new["discrepancies"], renamed, tolerance)
    result.figures = compare_figures(old, new, identity, renamed, tolerance)
    return result


def follow(owner: str, renamed: Mapping[tuple[str, str], str]) -> str:
    """An `<aircraft>/<positions>[/<rule>]` id from OLD with moved positions renamed (pairs re-sorted)."""
    aircraft_id, _, rest = owner.partition("/")
    positions, slash, rule = rest.partition("/")
    names = [renamed.get((aircraft_id, name), name) for name in positions.split("+")]
    return f"{aircraft_id}/{'+'.join(sorted(names) if len(names) > 1 else names)}{slash}{rule}"


REVIEW_FIELDS = ("review", "reviewer", "review_reference", "review_comment")


def compare_discrepancies(old: Mapping[str, Any], new: Mapping[str, Any], renamed: Mapping[tuple[str, str], str],
                          tolerance: Tolerance) -> list[DiscrepancyChange]:
    followed = {follow(key, renamed): (key, entry) for key, entry in old.items()}
    out = []
    for key in sorted(set(followed) | set(new)):
        old_id, before = followed.get(key, (None, None))
        after = new.get(key)
        entry = after or before
        positions = tuple(entry["position"].split("+"))
        if before is None:
            out.append(DiscrepancyChange(key, "new", entry["aircraft"], positions, new=after))
            continue
        if after is None:
            old_positions = tuple(before["position"].split("+"))
            out.append(DiscrepancyChange(old_id, "resolved", before["aircraft"], old_positions, old_id, old=before))
            continue
        aspects = []
        if before["severity"] != after["severity"]:
            aspects.append(FieldChange("severity", before["severity"], after["severity"]))
        if any(before[name] != after[name] for name in REVIEW_FIELDS):
            aspects.append(FieldChange("review", review_text(before), review_text(after)))
        for name in ("value", "limit"):
            if not tolerance.same(before[name], after[name]):
                aspects.append(FieldChange(name, before[name], after[name]))
        if aspects:
            out.append(DiscrepancyChange(key, "changed", entry["aircraft"], positions, old_id, tuple(aspects),
                                         before, after))
    return out


def review_text(entry: Mapping[str, Any]) -> str:
    who = ", ".join(part for part in (entry["reviewer"], entry["review_reference"]) if part)
    return entry["review"] + (f" ({who})" if who else "")


def compare_figure_maps(scope: str, owner: str, aircraft: str | None, positions: tuple[str, ...],
                        before: Mapping[str, Any], after: Mapping[str, Any], tolerance: Tolerance) -> list[FigureChange]:
    out = []
    for key in sorted(set(before) | set(after)):
        old_fig, new_fig = before.get(key), after.get(key)
        old_value = old_fig["value"] if old_fig else None
        new_value = new_fig["value"] if new_fig else None
        if tolerance.same(old_value, new_value):
            continue
        shown = new_fig or old_fig
        out.append(FigureChange(scope, owner, aircraft, positions, key, shown["label"], shown["unit"],
                                old_value, new_value))
    return out


def installation_figures(record: Mapping[str, Any], aircraft_id: str, position: str) -> dict[str, Any]:
    """An installation's figures with its pattern's metrics merged in (a pattern is keyed by content)."""
    entry = record["figures"]["installations"].get(f"{aircraft_id}/{position}")
    if entry is None:
        return {}
    merged = dict(entry["figures"])
    pattern = record["figures"]["patterns"].get(entry["pattern_key"]) if entry["pattern_key"] else None
    if pattern is not None:
        merged.update(pattern["metrics"])
    return merged


def compare_figures(old: Mapping[str, Any], new: Mapping[str, Any], identity: Mapping[tuple[str, str], tuple[str, str]],
                    renamed: Mapping[tuple[str, str], str], tolerance: Tolerance) -> list[FigureChange]:
    """Figures of installations, pairs and cables present in both records (added and removed ones are
    reported as such, not figure by figure)."""
    out: list[FigureChange] = []
    for old_key, new_key in sorted(identity.items(), key=lambda pair: pair[1]):
        out += compare_figure_maps("installation", "/".join(new_key), new_key[0], (new_key[1],),
                                   installation_figures(old, *old_key), installation_figures(new, *new_key), tolerance)
    old_pairs = {follow(key, renamed): entry for key, entry in old["figures"]["pairs"].items()}
    new_pairs = new["figures"]["pairs"]
    for key in sorted(set(old_pairs) & set(new_pairs)):
        entry = new_pairs[key]
        out += compare_figure_maps("pair", key, entry["aircraft"], tuple(entry["positions"]),
                                   old_pairs[key]["figures"], entry["figures"], tolerance)
    old_cables, new_cables = old["figures"]["cables"], new["figures"]["cables"]
    for key in sorted(set(old_cables) & set(new_cables)):
        out += compare_figure_maps("cable", key, None, (), old_cables[key]["figures"], new_cables[key]["figures"],
                                   tolerance)
    return out


# ---- output --------------------------------------------------------------------------------------------


def show(value: Any, unit: str = "") -> str:
    """A value for the terminal and the changes page: numbers to 4 significant digits (registry values as typed)."""
    if value is None or value == "":
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        text = str(value)
    elif isinstance(value, float):
        text = f"{value:.10g}" if value == round(value, 6) and abs(value) < 1e9 else f"{value:.4g}"
    else:
        text = str(value).replace("\n", " ").strip()
        if len(text) > TEXT_WIDTH:
            text = text[:TEXT_WIDTH - 1] + "…"
    return f"{text} {unit}" if unit else text


def figure_text(value: Any, unit: str) -> str:
    if isinstance(value, float):
        return f"{value:.4g}" + (f" {unit}" if unit else "")
    return show(value, unit)


def delta_text(item: FigureChange) -> str:
    pct = item.relative_pct
    return f"{pct:+.1f} %" if pct is not None else ""


def as_text(result: Comparison) -> str:
    """The terminal summary: aircraft, installations, catalogues, discrepancies, figures, then the counts."""
    lines = [f"OLD  {result.old.label}, as of {result.old.as_of}",
             f"NEW  {result.new.label}, as of {result.new.as_of}"]
    if result.old.as_of != result.new.as_of:
        lines.append("note: the as-of dates differ, so measurement ages move with them")
    lines.append(f"tolerance: relative {result.tolerance.rel * 100:g} %, absolute {result.tolerance.abs:g}")
    lines.append("")

    def fields(changes: Iterable[FieldChange], indent: str = "             ") -> None:
        for change in changes:
            lines.append(f"{indent}{change.field}: {show(change.old)} → {show(change.new)}")

    aircraft = [item for item in result.items if item.kind == "aircraft"]
    if aircraft:
        lines.append("Aircraft")
        for item in aircraft:
            lines.append(f"  {item.change:<9}{item.id} ({result.registrations.get(item.id, item.id)})")
            fields(item.fields)
        lines.append("")
    if result.installations:
        lines.append("Installations")
        for item in result.installations:
            name = f"{item.aircraft}/{item.position}"
            if item.change == "moved":
                lines.append(f"  {'moved':<9}{item.aircraft}/{item.old_position} → {name}")
            else:
                lines.append(f"  {item.change:<9}{name}" + (f"  {item.summary}" if item.change in ("added", "removed") else ""))
            fields(item.fields)
        lines.append("")
    catalogue = [item for item in result.items if item.kind != "aircraft"]
    if catalogue:
        lines.append("Catalogues and policy")
        for item in catalogue:
            lines.append(f"  {item.change:<9}{item.kind} {item.id}" if item.kind not in ("policy", "fleet")
                         else f"  {item.change:<9}{item.kind}")
            fields(item.fields)
        lines.append("")
    if result.discrepancies:
        lines.append("Discrepancies")
        for item in result.discrepancies:
            if item.change == "new":
                entry = item.new
                lines.append(f"  {'new':<9}{item.id}  [{entry['severity']}] {entry['review']}, "
                             f"value {show(entry['value'], entry['unit'])}, limit {show(entry['limit'], entry['unit'])}")
                lines.append(f"             {entry['message']}")
            elif item.change == "resolved":
                entry = item.old
                lines.append(f"  {'resolved':<9}{item.id}  [{entry['severity']}] was {entry['review']}")
            else:
                moved = f" (was {item.old_id})" if item.old_id != item.id else ""
                lines.append(f"  {'changed':<9}{item.id}{moved}")
                unit = item.new["unit"]
                for aspect in item.aspects:
                    shown_unit = unit if aspect.field in ("value", "limit") else ""
                    lines.append(f"             {aspect.field}: {show(aspect.old, shown_unit)} → {show(aspect.new, shown_unit)}")
        lines.append("")
    if result.figures:
        lines.append("Figures moved beyond the tolerance")
        owner = None
        for item in result.figures:
            if item.owner != owner:
                owner = item.owner
                lines.append(f"  {item.scope} {owner}")
            lines.append(f"    {item.key:<32} {figure_text(item.old, item.unit)} → {figure_text(item.new, item.unit)}"
                         + (f"  ({delta_text(item)})" if delta_text(item) else ""))
        lines.append("")
    lines.append(summary_line(result))
    return "\n".join(lines) + "\n"


def summary_line(result: Comparison) -> str:
    if result.same:
        return "no differences"
    c = result.counts()
    return (f"installations: {c['installations_added']} added, {c['installations_removed']} removed, "
            f"{c['installations_moved']} moved, {c['installations_changed']} changed; "
            f"discrepancies: {c['discrepancies_new']} new, {c['discrepancies_resolved']} resolved, "
            f"{c['severity_changes']} changed severity, {c['review_changes']} changed review, "
            f"{c['value_changes']} changed value; figures moved: {c['figures_moved']}; "
            f"aircraft and catalogue entries changed: {sum(1 for _ in result.items)}")


def to_dict(result: Comparison) -> dict[str, Any]:
    """The comparison as JSON data (`--format json`)."""
    def figure(item: FigureChange) -> dict[str, Any]:
        data = asdict(item)
        data["positions"] = list(item.positions)
        data["relative_pct"] = None if item.relative_pct is None else round(item.relative_pct, 4)
        return data

    return {
        "format_version": build_record.FORMAT_VERSION,
        "old": asdict(result.old), "new": asdict(result.new),
        "tolerance": {"relative": result.tolerance.rel, "absolute": result.tolerance.abs},
        "same": result.same,
        "counts": result.counts(),
        "items": [asdict(item) for item in result.items],
        "installations": [asdict(item) for item in result.installations],
        "discrepancies": [asdict(item) for item in result.discrepancies],
        "figures": [figure(item) for item in result.figures],
    }


def as_json(result: Comparison) -> str:
    return json.dumps(to_dict(result), sort_keys=True, indent=2, ensure_ascii=False) + "\n"


# ---- the site's changes page ---------------------------------------------------------------------------


def changes_page(result: Comparison, *, aircraft_href: Callable[[str], str],
                 installation_href: Callable[[str, str], str]) -> dict[str, Any]:
    """Context of site_templates/changes.html. Hrefs are relative to the site root (the page prefixes
    `root`); pass the site's own path functions (render.aircraft_path, render.installation_path). Things
    that exist only in OLD get no link."""
    new_aircraft = {aircraft for aircraft, _ in result.new_positions} | {
        item.id for item in result.items if item.kind == "aircraft" and item.change != "removed"}

    def craft_href(aircraft_id: str) -> str | None:
        return aircraft_href(aircraft_id) if aircraft_id in new_aircraft else None

    def install_href(aircraft_id: str, position: str) -> str | None:
        return installation_href(aircraft_id, position) if (aircraft_id, position) in result.new_positions else None

    def fields(changes: Iterable[FieldChange], unit: str = "") -> list[dict[str, str]]:
        return [{"field": c.field, "old": show(c.old, unit if c.old is not None else ""),
                 "new": show(c.new, unit if c.new is not None else "")} for c in changes]

    def registration(aircraft_id: str | None) -> str:
        return result.registrations.get(aircraft_id, aircraft_id or "")

    aircraft_ids = sorted({item.id for item in result.items if item.kind == "aircraft"}
                          | {item.aircraft for item in result.installations}
                          | {item.aircraft for item in result.discrepancies}
                          | {item.aircraft for item in result.figures if item.aircraft})
    return {
        "old": asdict(result.old), "new": asdict(result.new), "same": result.same,
        "tolerance": {"rel_pct": show(result.tolerance.rel * 100), "abs": show(result.tolerance.abs)},
        "counts": result.counts(),
        "aircraft": [{"id": key, "registration": registration(key), "href": craft_href(key),
                      "marks": list(result.marks(key))} for key in aircraft_ids],
        "aircraft_items": [{"id": item.id, "registration": registration(item.id), "change": item.change,
                            "href": craft_href(item.id), "fields": fields(item.fields)}
                           for item in result.items if item.kind == "aircraft"],
        "installations": [{"aircraft": item.aircraft, "registration": registration(item.aircraft),
                           "position": item.position, "old_position": item.old_position, "change": item.change,
                           "summary": item.summary, "fields": fields(item.fields),
                           "href": None if item.change == "removed" else install_href(item.aircraft, item.position)}
                          for item in result.installations],
        "catalogue": [{"kind": item.kind, "id": item.id, "change": item.change, "fields": fields(item.fields)}
                      for item in result.items if item.kind != "aircraft"],
        "discrepancies": [discrepancy_row(item, registration(item.aircraft), install_href) for item in result.discrepancies],
        "figures": [{"scope": item.scope, "owner": item.owner, "key": item.key, "label": item.label,
                     "old": figure_text(item.old, item.unit), "new": figure_text(item.new, item.unit),
                     "delta": delta_text(item),
                     "href": install_href(item.aircraft, item.positions[0]) if item.aircraft else None}
                    for item in result.figures],
        "summary": summary_line(result),
    }


def discrepancy_row(item: DiscrepancyChange, registration: str, install_href) -> dict[str, Any]:
    entry = item.new or item.old
    unit = entry["unit"]
    return {"id": item.id, "change": item.change, "registration": registration, "rule": entry["rule"],
            "severity": entry["severity"], "review": entry["review"], "message": entry["message"],
            "old_id": item.old_id if item.old_id != item.id else None,
            "value": show(entry["value"], unit), "limit": show(entry["limit"], unit),
            "aspects": [{"field": a.field, "old": show(a.old, unit if a.field in ("value", "limit") else ""),
                         "new": show(a.new, unit if a.field in ("value", "limit") else "")} for a in item.aspects],
            "href": None if item.change == "resolved" else install_href(item.aircraft, item.positions[0])}


# ---- where records come from ---------------------------------------------------------------------------


@dataclass(frozen=True)
class Side:
    """One side of a comparison: a label for people and the record."""

    label: str
    record: dict[str, Any]


def read_side(spec: str, *, run: Callable[..., Any], git_data_dir: Path | str = "fleet_data",
              as_of: date | None = None) -> Side:
    """The record `spec` names:

    - `git:REV`: `git_data_dir` as it was at git revision REV, exported to a temporary folder and run;
    - a folder holding `record.json`: a built site;
    - a folder holding `fleet.yaml`: a registry folder, run through the pipeline;
    - a file: a record file.

    `run(data_dir, as_of)` is the pipeline's `run`; registry folders are computed as of `as_of`
    (None: the pipeline's own choice). Raises RecordError when `spec` names nothing usable.
    """
    kind = side_kind(spec)
    if kind == "git":
        return git_side(spec[len(GIT_PREFIX):], Path(git_data_dir), run, as_of)
    path = Path(spec)
    if kind == "site":
        return Side(f"site {spec}", build_record.read(path / build_record.RECORD_NAME))
    if kind == "registry":
        return Side(f"registry {spec}", build_record.to_record(run(path, as_of)))
    return Side(f"record {spec}", build_record.read(path))


def side_kind(spec: str) -> str:
    """`git`, `site`, `registry` or `record`: what `spec` names (RecordError when it names nothing usable)."""
    if spec.startswith(GIT_PREFIX):
        return "git"
    path = Path(spec)
    if path.is_dir():
        if (path / build_record.RECORD_NAME).is_file():
            return "site"
        if (path / "fleet.yaml").is_file():
            return "registry"
        raise RecordError(f"{spec}: found a folder with neither {build_record.RECORD_NAME} nor fleet.yaml, "
                          "expected a built site, a registry folder, a record file or git:REV")
    if path.is_file():
        return "record"
    raise RecordError(f"{spec}: no such file or folder, expected a built site, a registry folder, "
                      "a record file or git:REV")


def git(cwd: Path, *args: str) -> subprocess.CompletedProcess:
    try:
        return subprocess.run(["git", "-C", str(cwd), *args], capture_output=True, check=False, timeout=120)
    except (OSError, subprocess.TimeoutExpired) as error:
        raise RecordError(f"git {' '.join(args)}: cannot run git ({error})") from None


def git_side(rev: str, data_dir: Path, run: Callable[..., Any], as_of: date | None) -> Side:
    """`data_dir` at git revision `rev`: `git archive` of its tree into a temporary folder, then run."""
    from registry.core.errors import DataError

    if not rev or rev.startswith("-"):
        raise RecordError(f"git:{rev}: expected a git revision after 'git:' (HEAD~1, a tag, a commit)")
    if not data_dir.is_dir():
        raise RecordError(f"{data_dir}: no such folder, expected the registry folder whose history to read")
    prefix = git(data_dir, "rev-parse", "--show-prefix")
    if prefix.returncode != 0:
        raise RecordError(f"{data_dir}: not inside a git repository, so git:{rev} cannot be read")
    commit = git(data_dir, "rev-parse", "--verify", "--quiet", "--short", f"{rev}^{{commit}}")
    if commit.returncode != 0:
        raise RecordError(f"git:{rev}: no such revision in the repository of {data_dir}")
    short = commit.stdout.decode().strip()
    subdir = prefix.stdout.decode().strip()
    top = git(data_dir, "rev-parse", "--show-toplevel").stdout.decode().strip()
    archive = git(Path(top), "archive", "--format=tar", f"{rev}:{subdir}")  # from the top: a subfolder limits archive
    if archive.returncode != 0:
        message = archive.stderr.decode(errors="replace").strip().splitlines()
        raise RecordError(f"git:{rev}: {data_dir} cannot be exported at that revision "
                          f"({message[-1] if message else 'git archive failed'})")
    label = f"{data_dir.as_posix()} at git {rev} ({short})"
    with tempfile.TemporaryDirectory(prefix="aerialbook-diff-") as temp:
        target = Path(temp) / "data"
        target.mkdir()
        with tarfile.open(fileobj=io.BytesIO(archive.stdout)) as tar:
            tar.extractall(target, filter="data")
        try:
            return Side(label, build_record.to_record(run(target, as_of)))
        except DataError as error:  # point the problems at the revision, not at the temporary folder
            where = f"{rev}:{subdir}"
            raise DataError(replace(problem, path=problem.path.replace(str(target), where.rstrip("/")))
                            for problem in error.problems) from None
