"""Comparing two build records: what changed in the registry, in the discrepancies and in the figures.

`compare(old, new)` returns a `comparison.Comparison`.

Identity (docs/build-record.md): an installation is (aircraft id, position id). When one installation
disappears from an aircraft and exactly one appears on the same aircraft with the same antenna model,
service and feeder cable, the two are one installation that moved (or whose position was renamed); any
other disappearance or appearance is a removal or an addition. Discrepancy ids and pair figures of a
moved installation are followed to its new position id.

Both sides are evaluated at one date, NEW's: OLD is re-based to it first (`rebase.rebased`), so that no
measurement age, and no finding of one, differs merely because the two were computed on different days.
"""
from __future__ import annotations

from collections import defaultdict
from collections.abc import Mapping
from typing import Any

from registry.output.comparison import (Comparison, DiscrepancyChange, FieldChange, FigureChange, InstallationChange,
                                        ItemChange, PairChange, SideInfo, Tolerance)
from registry.output.display import figure_text, show
from registry.output.rebase import rebased

CATALOGUES = (("airframes", "airframe"), ("antennas", "antenna model"), ("cables", "cable"),
              ("services", "service"))


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
    """What changed from the `old` record to the `new` one, both evaluated at NEW's date."""
    result = Comparison(SideInfo(old_label, old["as_of"]), SideInfo(new_label, new["as_of"]), tolerance,
                        at=new["as_of"])
    old = rebased(old, new["as_of"])
    old_aircraft, new_aircraft = old["registry"]["aircraft"], new["registry"]["aircraft"]
    result.registrations = {**{key: craft["registration"] for key, craft in old_aircraft.items()},
                            **{key: craft["registration"] for key, craft in new_aircraft.items()}}
    result.items = compare_items(old, new)
    before_all, after_all = installations_of(old), installations_of(new)
    result.new_positions = frozenset(after_all)
    result.installations, identity = compare_installations(before_all, after_all)
    renamed = {old_key: new_key[1] for old_key, new_key in identity.items() if old_key != new_key}
    result.discrepancies = compare_discrepancies(old["discrepancies"], new["discrepancies"], renamed, tolerance)
    result.figures = compare_figures(old, new, identity, renamed, tolerance)
    result.pairs = compare_pairs(old, new, renamed)
    return result


def compare_items(old: Mapping[str, Any], new: Mapping[str, Any]) -> list[ItemChange]:
    """Aircraft's own fields, then catalogue entries, then the policy and fleet.yaml (exact: registry values)."""
    items = []
    old_aircraft, new_aircraft = old["registry"]["aircraft"], new["registry"]["aircraft"]
    for key in sorted(set(old_aircraft) | set(new_aircraft)):
        before, after = old_aircraft.get(key), new_aircraft.get(key)
        if before is None or after is None:
            items.append(ItemChange("aircraft", key, "added" if before is None else "removed"))
        elif changes := field_changes(before, after, skip=("installations",)):
            items.append(ItemChange("aircraft", key, "changed", changes))
    for section, kind in CATALOGUES:
        before_all, after_all = old["registry"][section], new["registry"][section]
        for key in sorted(set(before_all) | set(after_all)):
            before, after = before_all.get(key), after_all.get(key)
            if before is None or after is None:
                items.append(ItemChange(kind, key, "added" if before is None else "removed"))
            elif changes := field_changes(before, after):
                items.append(ItemChange(kind, key, "changed", changes))
    for kind, before, after in (("policy", old["registry"]["policy"], new["registry"]["policy"]),
                                ("fleet", old["fleet"], new["fleet"])):
        if changes := field_changes(before, after):
            items.append(ItemChange(kind, kind, "changed", changes))
    return items


def compare_installations(before_all: Mapping[tuple[str, str], Mapping[str, Any]],
                          after_all: Mapping[tuple[str, str], Mapping[str, Any]]
                          ) -> tuple[list[InstallationChange], dict[tuple[str, str], tuple[str, str]]]:
    """Installations moved, changed, removed and added, sorted by (aircraft, position, change); and the
    identity map, old identity → new identity, of every installation present on both sides."""
    out = []
    removed = {key: entry for key, entry in before_all.items() if key not in after_all}
    added = {key: entry for key, entry in after_all.items() if key not in before_all}
    moves = find_moves(removed, added)
    identity = {key: key for key in before_all if key in after_all} | moves
    for old_key, new_key in sorted(identity.items(), key=lambda pair: pair[1]):
        changes = field_changes(before_all[old_key], after_all[new_key])
        if old_key != new_key:
            out.append(InstallationChange(new_key[0], new_key[1], "moved",
                                          installation_summary(after_all[new_key]), old_key[1], changes))
        elif changes:
            out.append(InstallationChange(new_key[0], new_key[1], "changed",
                                          installation_summary(after_all[new_key]), None, changes))
    for key, entry in removed.items():
        if key not in moves:
            out.append(InstallationChange(key[0], key[1], "removed", installation_summary(entry)))
    moved_to = set(moves.values())
    for key, entry in added.items():
        if key not in moved_to:
            out.append(InstallationChange(key[0], key[1], "added", installation_summary(entry)))
    out.sort(key=lambda item: (item.aircraft, item.position, item.change))
    return out, identity


def follow(owner: str, renamed: Mapping[tuple[str, str], str], ordered: bool = False) -> str:
    """An `<aircraft>/<positions>[/<rule>]` id from OLD with moved positions renamed (pairs re-sorted,
    unless `ordered`: a co-site path keeps its transmitter first)."""
    aircraft_id, _, rest = owner.partition("/")
    positions, slash, rule = rest.partition("/")
    names = [renamed.get((aircraft_id, name), name) for name in positions.split("+")]
    return f"{aircraft_id}/{'+'.join(sorted(names) if len(names) > 1 and not ordered else names)}{slash}{rule}"


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
    old_cosite = {follow(key, renamed, ordered=True): entry for key, entry in old["figures"].get("cosite", {}).items()}
    new_cosite = new["figures"].get("cosite", {})
    for key in sorted(set(old_cosite) & set(new_cosite)):
        entry = new_cosite[key]
        out += compare_figure_maps("co-site", key, entry["aircraft"], (entry["tx"], entry["rx"]),
                                   old_cosite[key]["figures"], entry["figures"], tolerance)
    old_cables, new_cables = old["figures"]["cables"], new["figures"]["cables"]
    for key in sorted(set(old_cables) & set(new_cables)):
        out += compare_figure_maps("cable", key, None, (), old_cables[key]["figures"], new_cables[key]["figures"],
                                   tolerance)
    return out


PAIR_SUMMARY_KEYS = ("pair.distance_m", "pair.isolation_db", "pair.min_isolation_db", "pair.model")
"""What an added or removed antenna pair is summed up by; a co-site path by all its margins."""


def pair_summary(figures: Mapping[str, Any], keys: tuple[str, ...] | None = None) -> str:
    shown = [key for key in (keys if keys is not None else sorted(figures)) if key in figures]
    return "; ".join(f"{figures[key]['label']} {figure_text(figures[key]['value'], figures[key]['unit'], key)}"
                     for key in shown) or "no figures"


def compare_pairs(old: Mapping[str, Any], new: Mapping[str, Any], renamed: Mapping[tuple[str, str], str]
                  ) -> list[PairChange]:
    """Antenna pairs and co-site paths on one side only (those of an added or removed installation
    included; not those of an aircraft added or removed whole), with what their figures say, sorted by
    aircraft, owner and change."""
    both = set(old["registry"]["aircraft"]) & set(new["registry"]["aircraft"])
    out = []
    for scope, section, ordered, keys in (("pair", "pairs", False, PAIR_SUMMARY_KEYS), ("co-site", "cosite", True, None)):
        before = {follow(key, renamed, ordered): entry for key, entry in old["figures"].get(section, {}).items()}
        after = new["figures"].get(section, {})
        for change, side, other in (("added", after, before), ("removed", before, after)):
            for key in set(side) - set(other):
                entry = side[key]
                if entry["aircraft"] not in both:
                    continue
                positions = tuple(key.split("/", 1)[1].split("+"))
                out.append(PairChange(scope, key, entry["aircraft"], positions, change,
                                      pair_summary(entry["figures"], keys)))
    out.sort(key=lambda item: (item.aircraft, item.scope, item.owner, item.change))
    return out
