"""What each aircraft file of the registry said at each commit that changed it: the registry's own git
history read into one timeline per aircraft, and per installation position the spans of what it carried.

One pass for the whole fleet: one `git log` of the mainline over `aircraft/` (first parents, so a merge
is one change, dated by its commit), then one `git cat-file --batch` for the file contents those commits
left. Each content is read with the registry's YAML reader, but not validated: an old revision need not
pass today's schema, and a revision that cannot be read is a change of its own ("unreadable") that ends
every span. Dates are commit dates in UTC: when the register recorded a change, not when the work was
done (the aircraft file's `installed` and modification dates say that).
"""
from __future__ import annotations

import json
from collections import defaultdict
from datetime import date, datetime, timezone
from pathlib import Path
from typing import Any, NamedTuple

from registry.incremental import DiskCache, key_of
from registry.load import git
from registry.load.yamlsource import MAX_BYTES, parse_yaml

MAX_CHANGES = 50
"""Changes kept per aircraft, the newest: older ones are left out and the history says it is cut."""
MAX_LOG_COMMITS = 5000
"""Commits of the whole `aircraft/` folder read in one pass (the site's bound)."""
NEEDS_GIT = "history needs the registry in a git checkout"

FITTED: tuple[tuple[str, tuple[str, ...]], ...] = (
    ("service", ("service",)), ("antenna", ("antenna",)), ("antenna serial", ("antenna_serial",)),
    ("location", ("location",)), ("surface", ("surface",)), ("ground plane", ("ground_plane",)),
    ("cable", ("feeder", "cable")), ("length", ("feeder", "length_m")), ("connectors", ("feeder", "connectors")),
    ("adapters", ("feeder", "adapters")), ("antenna end", ("feeder", "antenna_end")),
    ("radio end", ("feeder", "radio_end")), ("adapter parts", ("feeder", "adapter_parts")),
    ("radio unit", ("feeder", "radio_unit")), ("splitter", ("splitter",)), ("amplifier", ("amplifier",)),
)
"""What an installation position carries, label → path in the aircraft file: the antenna, its feeder and
the hardware. Measurements and notes are not what is fitted and are left out."""
UNIT_SUFFIXES = {"_m": "m", "_db": "dB", "_milliohm": "mΩ", "_mhz": "MHz"}
Fitted = tuple[tuple[str, str], ...]
"""(label, value as text) of the FITTED fields an installation has, in FITTED's order."""
Parsed = tuple[dict[str, Fitted] | None, tuple[str, ...], str]
"""What one aircraft file's content says (`positions_of`): positions (None when unreadable), modification
references, the problem. Kept in the cache by blob id as JSON text: a fleet's files are read once, not at
every build."""


class Commit(NamedTuple):
    """One commit of the mainline: full and short hash, commit time (seconds, UTC) and subject."""

    hash: str
    time: int
    subject: str

    @property
    def short(self) -> str:
        return self.hash[:10]

    @property
    def day(self) -> date:
        return datetime.fromtimestamp(self.time, tz=timezone.utc).date()

    @property
    def when(self) -> str:
        return datetime.fromtimestamp(self.time, tz=timezone.utc).strftime("%Y-%m-%d %H:%M UTC")


class Change(NamedTuple):
    """What one commit did to an aircraft file: `kind` added, changed, removed (the file deleted),
    unreadable (`problem` says why) or shared (only files it depends on changed); the modification
    references the file gained; per position what changed ("added", "removed", or the FITTED labels that
    differ); the other files of the data folder the commit changed, when they were asked for."""

    commit: Commit
    kind: str
    mods_added: tuple[str, ...]
    positions: tuple[tuple[str, str], ...]
    problem: str = ""
    files: tuple[str, ...] = ()


class Span(NamedTuple):
    """One position carrying one thing: from change `start` to change `end` (indices into the aircraft's
    changes, oldest first; `end` None while it is fitted still)."""

    position: str
    fitted: Fitted
    start: int
    end: int | None


class AircraftHistory(NamedTuple):
    """An aircraft file's changes (oldest first) and its positions' spans (by position, then start).
    `cut`: earlier changes exist but were not read (the bound, or a shallow clone)."""

    path: str
    changes: tuple[Change, ...]
    spans: tuple[Span, ...]
    cut: bool


class FleetHistory(NamedTuple):
    """The history of every aircraft file by its path in the data folder (`aircraft/<name>.yaml`), or
    the `note` saying why there is none; `uncommitted`: files whose working copy differs from the last
    commit, which no history shows."""

    aircraft: dict[str, AircraftHistory]
    note: str
    uncommitted: frozenset[str]


def fleet_history(data_dir: Path, paths: tuple[str, ...] = ("aircraft/",), max_changes: int = MAX_CHANGES,
                  max_commits: int = MAX_LOG_COMMITS, shown: str = "the data folder",
                  shared: tuple[str, ...] = (), cache_root: Path | None = None) -> FleetHistory:
    """Every aircraft file's history from the data folder's git history, in one pass (see the module).
    Notes name the data folder as `shown`: the site's pages never hold the path it was built from. With
    `shared` (files the aircraft depend on: the catalogues, the policy), a commit that changed one of them
    and not the aircraft file is a change of its own ("shared", nothing fitted changes), for `history`'s
    findings. `cache_root`: where each file content's reading is kept (by its blob id)."""
    checkout = git.checkout_of(data_dir, shown)
    if isinstance(checkout, str):
        return FleetHistory({}, f"{NEEDS_GIT}: {checkout}.", frozenset())
    log = git.first_parent_log(data_dir, [*paths, *shared], max_commits + 1)
    if log is None:
        return FleetHistory({}, f"{NEEDS_GIT}: git log failed in {shown}.", frozenset())
    commits, touched, others = parse_log(log, checkout.prefix)
    whole = len(commits) <= max_commits
    by_file: dict[str, list[tuple[Commit, str, str]]] = defaultdict(list)
    for commit in reversed(commits[:max_commits]):  # oldest first
        mine = {path for path, _, _ in touched[commit.hash]}
        for path, steps in by_file.items():
            if others[commit.hash] and path not in mine and steps[-1][1] != "D":
                steps.append((commit, "S", ""))
        for path, status, blob in touched[commit.hash]:
            by_file[path].append((commit, status, blob))
    kept = {path: steps[-max_changes:] for path, steps in by_file.items()}
    parsed = read_contents(checkout.top, {blob for steps in kept.values() for _, status, blob in steps
                                          if status != "D"}, cache_root)
    histories = {}
    for path, steps in sorted(kept.items()):
        cut = checkout.shallow or len(steps) < len(by_file[path]) or (not whole and steps[0][1] != "A")
        histories[path] = timeline(path, [(commit, status, parsed.get(blob), others[commit.hash])
                                          for commit, status, blob in steps], cut)
    note = ""
    if checkout.shallow:
        note = (f"{NEEDS_GIT} with its whole history: this clone is shallow, so what came before its first "
                "commit is unknown (git fetch --unshallow).")
    return FleetHistory(histories, note, uncommitted_files(data_dir, paths))


def read_contents(top: Path, blob_ids: set[str], cache_root: Path | None) -> dict[str, Parsed]:
    """Each blob's reading (`positions_of`): from the cache, else from one `git cat-file --batch` of the
    rest, parsed and kept."""
    cache = DiskCache(cache_root, "history", str)  # JSON text: read back in C, then checked (`from_json`)
    found: dict[str, Parsed] = {}
    for blob in sorted(blob_ids):
        kept = from_json(cache.get(key_of("history-blob", blob)))
        if kept is not None:
            found[blob] = kept
    missing = sorted(blob_ids - set(found))
    raw = git.read_blobs(top, missing, MAX_BYTES)
    for blob in missing:
        found[blob] = positions_of(raw.get(blob), blob[:10])
        if blob in raw:
            cache.put(key_of("history-blob", blob), json.dumps(found[blob], ensure_ascii=False))
    return found


def from_json(text: str | None) -> Parsed | None:
    """A reading kept as JSON, or None when there is none or it is not of the shape `Parsed` (a damaged or
    forged cache entry is a miss)."""
    try:
        fitted, mods, problem = json.loads(text) if text is not None else (None, None, None)
    except (ValueError, TypeError):
        return None
    if not isinstance(problem, str) or not isinstance(mods, list) or not all(isinstance(m, str) for m in mods):
        return None
    if fitted is None:
        return None, tuple(mods), problem
    if not isinstance(fitted, dict):
        return None
    positions = {}
    for position, pairs in fitted.items():
        if not isinstance(pairs, list) or not all(isinstance(pair, list) and len(pair) == 2 and isinstance(pair[0], str)
                                                  and isinstance(pair[1], str) for pair in pairs):
            return None
        positions[position] = tuple((label, value) for label, value in pairs)
    return positions, tuple(mods), problem


def uncommitted_files(data_dir: Path, paths: tuple[str, ...]) -> frozenset[str]:
    """Files under `paths` whose working copy differs from the last commit (relative to the data folder)."""
    status = git.git_text(data_dir, "status", "--porcelain", "--untracked-files=all", "--relative", "--",
                          *paths, timeout=30) or ""
    return frozenset(line[3:].strip() for line in status.splitlines() if len(line) > 3)


def parse_log(log: str, prefix: str) -> tuple[list[Commit], dict[str, list[tuple[str, str, str]]],
                                              dict[str, tuple[str, ...]]]:
    """`git.first_parent_log` output: the commits (newest first), per commit the aircraft files it touched
    as (path in the data folder, status A/M/D, blob id after the commit), and the other files it touched."""
    commits: list[Commit] = []
    touched: dict[str, list[tuple[str, str, str]]] = {}
    others: dict[str, tuple[str, ...]] = {}
    for record in log.split("\x1e")[1:]:
        head, _, body = record.partition("\n")
        parts = head.split("\x1f", 2)
        if len(parts) != 3 or not parts[1].isdigit():
            continue
        commit = Commit(parts[0], int(parts[1]), parts[2])
        commits.append(commit)
        touched[commit.hash] = []
        rest = []
        for line in body.splitlines():
            meta, _, path = line.partition("\t")
            fields = meta.split()
            if len(fields) != 5 or not path.startswith(prefix):
                continue
            inner = path[len(prefix):]
            if inner.startswith("aircraft/") and inner.count("/") == 1 and inner.endswith(".yaml"):
                touched[commit.hash].append((inner, fields[4][:1], fields[3]))  # aircraft/<name>.yaml
            else:
                rest.append(inner)
        others[commit.hash] = tuple(sorted(rest))
    return commits, touched, others


def positions_of(raw: bytes | None, shown: str) -> tuple[dict[str, Fitted] | None, tuple[str, ...], str]:
    """What an aircraft file's content says is fitted at each position, its modification references, and
    a problem ("" when it could be read)."""
    if raw is None:
        return None, (), "its content could not be read from git (too large or missing)"
    doc, problems = parse_yaml(raw, shown)
    if doc is None or not isinstance(doc.data, dict):
        first = problems[0] if problems else None
        where = f"line {first.line}: found {first.found}, expected {first.expected}" if first else "not a mapping"
        return None, (), f"not a readable aircraft file ({where})"
    data = doc.data
    mods = tuple(str(item.get("ref")) for item in data.get("modifications") or []
                 if isinstance(item, dict) and item.get("ref") is not None)
    installations = data.get("installations")
    if not isinstance(installations, list):
        return None, mods, "no list of installations"
    fitted: dict[str, Fitted] = {}
    for item in installations:
        if isinstance(item, dict) and item.get("position") is not None:
            fitted.setdefault(str(item["position"]), fitted_of(item))
    return fitted, mods, ""


def fitted_of(installation: dict[str, Any]) -> Fitted:
    """The FITTED fields an installation has, as text."""
    found = []
    for label, path in FITTED:
        value: Any = installation
        for key in path:
            value = value.get(key) if isinstance(value, dict) else None
        if value is not None and value != [] and value != {}:
            found.append((label, value_text(path[-1], value)))
    return tuple(found)


def value_text(key: str, value: Any) -> str:
    """A registry value as short text: numbers with the unit their key names, mappings as their members
    (`member_text`), lists joined with semicolons; a `source` (a document's title) is left out."""
    if isinstance(value, dict):
        return ", ".join(member_text(name, item) for name, item in value.items() if name != "source" and item is not None)
    if isinstance(value, list):
        return "; ".join(value_text(key, item) for item in value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    unit = next((unit for suffix, unit in UNIT_SUFFIXES.items() if key.endswith(suffix)), "")
    if unit and isinstance(value, (int, float)):
        return f"{value:g} {unit}"
    return str(value)


def member_text(name: str, item: Any) -> str:
    """A mapping's member: text as it is ("TNC", "male"); STA/BL/WL and other numbers and lists named
    ("STA 250.0", "gain 26.5 dB", "feeds LOC")."""
    text = value_text(name, item)
    if name in ("sta", "bl", "wl"):
        return f"{name.upper()} {text}"
    if isinstance(item, str):
        return text
    words = name
    for suffix in UNIT_SUFFIXES:
        words = words.removesuffix(suffix)
    return f"{words.replace('_', ' ')} {text}"


def timeline(path: str, steps: list[tuple[Commit, str, Parsed | None, tuple[str, ...]]], cut: bool) -> AircraftHistory:
    """An aircraft file's changes and spans from what its content said at each commit (oldest first):
    status A, M or D, or S for a commit that changed only the shared files named last."""
    changes: list[Change] = []
    spans: list[Span] = []
    open_spans: dict[str, int] = {}  # position -> index in spans
    before: dict[str, Fitted] = {}
    mods_before: tuple[str, ...] = ()
    for index, (commit, status, reading, files) in enumerate(steps):
        if status == "S":
            changes.append(Change(commit, "shared", (), (), files=files))
            continue
        now, mods, problem = ({}, (), "") if status == "D" else reading or positions_of(None, path)
        kind = "removed" if status == "D" else "unreadable" if now is None else "added" if status == "A" else "changed"
        now = now or {}
        moved = []
        for position in sorted(set(before) | set(now)):
            if before.get(position) == now.get(position):
                continue
            if position in open_spans:
                at = open_spans.pop(position)
                spans[at] = spans[at]._replace(end=index)
            if position in now:
                open_spans[position] = len(spans)
                spans.append(Span(position, now[position], index, None))
            moved.append((position, what_changed(before.get(position), now.get(position))))
        gained = tuple(ref for ref in mods if ref not in mods_before)
        changes.append(Change(commit, kind, gained, tuple(moved), problem, files))
        before = now
        if kind != "unreadable":  # an unreadable file says nothing of its modifications
            mods_before = mods
    ordered = tuple(sorted(spans, key=lambda span: (span.position, span.start)))
    return AircraftHistory(path, tuple(changes), ordered, cut)


def what_changed(old: Fitted | None, new: Fitted | None) -> str:
    """"added", "removed", or the labels of the FITTED fields that differ."""
    if old is None:
        return "added"
    if new is None:
        return "removed"
    old_map, new_map = dict(old), dict(new)
    return ", ".join(label for label, _ in FITTED if old_map.get(label) != new_map.get(label))


def fitted_on(history: AircraftHistory, day: date) -> tuple[Change | None, list[Span]]:
    """The last change recorded on or before `day` (by commit date, UTC) and the spans in force after it."""
    last = None
    for index, change in enumerate(history.changes):
        if change.commit.day <= day:
            last = index
    if last is None:
        return None, []
    return history.changes[last], [span for span in history.spans
                                   if span.start <= last and (span.end is None or span.end > last)]
