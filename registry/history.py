"""`build.py history AIRCRAFT`: an aircraft's timeline from the registry's git history, and the findings
that appeared or cleared at each change.

The timeline is `load.history` (the same code the aircraft page's timeline comes from). The findings are
the terminal's only: for each change, the data folder is exported as it was after the commit and before
it (`git archive` of the data folder, every other aircraft file left out) and both are run through
`pipeline.run` with `check`'s cache, both as of the change's commit date (as `diff` evaluates both sides
at one date), so a finding appears or clears because of the change and not because time passed.
"""
from __future__ import annotations

import shutil
import tempfile
from datetime import date
from pathlib import Path

import yaml

from registry.core.errors import AerialbookError, DataError, EXIT_DATA
from registry.core.results import Discrepancy
from registry.load import git
from registry.load import history as timeline
from registry.load.fleet import REGISTRY_FILES
from registry.load.yamlsource import MAX_BYTES, parse_yaml
from registry.output.history_text import AircraftTimeline, ChangeFindings

SHARED = (*REGISTRY_FILES, "airframes/")
"""The files every aircraft's findings depend on (all the loader reads but the aircraft files): a commit
changing one of them is a change of the history (nothing fitted changes, findings may)."""


class NoHistory(AerialbookError):
    """The history cannot be read at all (not a git checkout, git missing, no commit): exit 2, and the
    note says why."""

    exit_code = EXIT_DATA

    def report(self) -> str:
        return str(self)


class UnknownAircraft(AerialbookError):
    exit_code = EXIT_DATA


def resolve(data_dir: Path, name: str) -> tuple[str, str, str]:
    """(aircraft id, registration, file path in the data folder) of the aircraft named by id or
    registration in the working copy's aircraft files; else `aircraft/<name>.yaml` for one that is gone."""
    folder = data_dir / "aircraft"
    if not data_dir.is_dir():
        raise UnknownAircraft(f"{data_dir}: no such folder, expected the registry folder")
    named = folder / f"{name.lower()}.yaml"  # the usual file name first: no need to read the whole fleet
    for path in [named] * named.is_file() + sorted(folder.glob("*.yaml")):
        doc, _ = parse_yaml(path.read_bytes()[:MAX_BYTES + 1], str(path))
        data = doc.data if doc is not None and isinstance(doc.data, dict) else {}
        if name in (str(data.get("id")), str(data.get("registration"))) or name.lower() == path.stem:
            return str(data.get("id") or path.stem), str(data.get("registration") or name), f"aircraft/{path.name}"
    return name.lower(), name, f"aircraft/{name.lower()}.yaml"


def aircraft_timeline(data_dir: Path, name: str, with_findings: bool, cache_dir: Path | None) -> AircraftTimeline:
    """The aircraft's history; NoHistory when git cannot give one, UnknownAircraft when it has none."""
    aircraft_id, registration, path = resolve(data_dir, name)
    # the whole aircraft folder's log, so that a rename is seen; only this file's contents are read
    fleet = timeline.fleet_history(data_dir, shown=str(data_dir), shared=SHARED if with_findings else (), only=path)
    if fleet.note and not fleet.aircraft:
        raise NoHistory(fleet.note)
    history = next(iter(fleet.aircraft.values()), None)  # the file's, under its name now if it was renamed
    if history is None:
        raise UnknownAircraft(f"{name}: no aircraft of that id or registration in {data_dir / 'aircraft'}, "
                              f"and no file {path} in its git history")
    path = history.path
    findings = change_findings(data_dir, aircraft_id, path, history, cache_dir) if with_findings else None
    return AircraftTimeline(aircraft_id, registration, history, fleet.note, path in fleet.uncommitted, findings)


def change_findings(data_dir: Path, aircraft_id: str, path: str, history: timeline.AircraftHistory,
                    cache_dir: Path | None) -> list[ChangeFindings]:
    """Per change, the aircraft's findings after it against those before it, both as of its commit date."""
    checkout = git.checkout_of(data_dir)
    if isinstance(checkout, str):
        return [ChangeFindings(problem=checkout) for _ in history.changes]
    found = []
    with tempfile.TemporaryDirectory(prefix="aerialbook-history-") as temp:
        for change, after_path in zip(history.changes, paths_after(history, path)):
            day = change.commit.day
            after = findings_at(checkout, change.commit.hash, after_path, day, Path(temp), cache_dir)
            before: dict | str = {}
            if change.kind != "added":  # an added file had no findings before
                before = findings_at(checkout, change.commit.hash + "^", change.renamed_from or after_path, day,
                                     Path(temp), cache_dir)
            if change.renamed_from and isinstance(before, dict):  # the same airframe: its findings under its new id
                before = renamed(before, Path(change.renamed_from).stem, Path(after_path).stem)
            found.append(compared(before, after))
    return found


def renamed(found: dict[str, tuple[str, str, str]], old_id: str, new_id: str) -> dict[str, tuple[str, str, str]]:
    """Findings keyed as the aircraft's new id would have them (an aircraft id is its file's name, and a
    finding's id starts with it), so that a rename alone makes none appear or clear."""
    prefix = f"{old_id}/"
    return {(f"{new_id}/{key[len(prefix):]}" if key.startswith(prefix) else key): row for key, row in found.items()}


def paths_after(history: timeline.AircraftHistory, path: str) -> list[str]:
    """The aircraft file's path after each change, oldest first: `path` back to its last rename, the name
    it had before that further back."""
    paths = []
    for change in reversed(history.changes):
        paths.append(path)
        path = change.renamed_from or path
    return paths[::-1]


def compared(before: dict | str, after: dict | str) -> ChangeFindings:
    """The findings that appeared and cleared between two runs (a str is why a run could not be made)."""
    if isinstance(after, str) or isinstance(before, str):
        reasons = [f"{side}: {text}" for side, text in (("before", before), ("after", after)) if isinstance(text, str)]
        return ChangeFindings(problem="; ".join(reasons))
    return ChangeFindings(appeared=[after[key] for key in sorted(after) if key not in before],
                          cleared=[before[key] for key in sorted(before) if key not in after])


def keep_one_aircraft_modifications(target: Path, path: str) -> None:
    """The fleet's modifications file at a revision, cut down to the one aircraft kept at `path`: the
    others' effectivity would name aircraft no longer in the exported register. A file that does not read
    as the schema's shape is left as it is, for the loader to report."""
    mods_file = target / "modifications.yaml"
    if not mods_file.is_file():
        return
    craft, _ = parse_yaml((target / path).read_bytes()[:MAX_BYTES + 1], path)
    mods, _ = parse_yaml(mods_file.read_bytes()[:MAX_BYTES + 1], str(mods_file))
    data = craft.data if craft is not None and isinstance(craft.data, dict) else {}
    names = {("registration", str(data.get("registration"))), ("serial", str(data.get("serial")))}
    if mods is None or not isinstance(mods.data, dict) or not isinstance(mods.data.get("modifications"), list):
        return
    kept = []
    for mod in mods.data["modifications"]:
        if not isinstance(mod, dict) or not isinstance(mod.get("effectivity"), list):
            return
        mine = [entry for entry in mod["effectivity"] if isinstance(entry, dict)
                and any((key, str(entry.get(key))) in names for key in ("registration", "serial") if key in entry)]
        if mine:
            kept.append({**mod, "effectivity": mine})
    mods_file.write_text(yaml.safe_dump({**mods.data, "modifications": kept}, sort_keys=False, allow_unicode=True),
                         encoding="utf-8")


def findings_at(checkout: git.Checkout, rev: str, path: str, day: date, temp: Path,
                cache_dir: Path | None) -> dict[str, tuple[str, str, str]] | str:
    """The aircraft's findings (id → id, severity with the review state when it is not open, message) with the data folder as at `rev`, as of `day`;
    {} when the file does not exist there; a str saying why they could not be computed."""
    from registry import pipeline

    target = temp / "data"  # one path for every revision: the cache's keys hold file paths
    shutil.rmtree(target, ignore_errors=True)
    target.mkdir()
    failed = git.export_at(checkout, rev, target)
    if failed is not None:
        return failed
    if not (target / path).is_file():
        return {}
    for other in (target / "aircraft").glob("*.yaml"):
        if other.name != Path(path).name:
            other.unlink()
    keep_one_aircraft_modifications(target, path)
    try:
        outcome = pipeline.run(target, as_of=day, cache_dir=cache_dir, workers=1, lazy=True)
    except DataError as error:
        first = error.problems[0] if error.problems else None
        where = str(first).replace(str(target), f"{rev[:10]}:{checkout.prefix}".rstrip("/")) if first else ""
        return f"the registry could not be loaded ({len(error.problems)} problems; first: {where})"
    return {item.id: (item.id, item.severity if item.is_open else f"{item.severity}, {item.review}", item.message)
            for item in outcome.discrepancies
            if isinstance(item, Discrepancy)}
