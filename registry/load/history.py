"""What each aircraft file of the registry said at each commit that changed it: the registry's own git
history read into one timeline per aircraft, and per installation position the spans of what it carried.

One pass for the whole fleet: one `git log` of the mainline over `aircraft/` (first parents, so a merge
is one change, dated by its commit), then one `git cat-file --batch` for the file contents those commits
left. Each content is read with the registry's YAML reader, but not validated: an old revision need not
pass today's schema, and a revision that cannot be read is a change of its own ("unreadable") that ends
every span. Dates are commit dates in UTC: when the register recorded a change, not when the work was
done (the aircraft file's `installed` and modification dates say that).

An aircraft file renamed (a new registration, say) keeps its history when git finds the rename and both
revisions name the same manufacturer's serial number: the serial, not the file name or the registration,
is what identifies an airframe. Without a serial, or with another one, the rename is the old file removed
and a new one added, so two airframes' histories are never joined because their files look alike.
"""
from __future__ import annotations

from collections import defaultdict
from datetime import date, datetime, timezone
from pathlib import Path
from typing import NamedTuple

from registry.load import git
from registry.load.fitted import FITTED, Fitted, Parsed, positions_of, read_contents

MAX_CHANGES = 50
"""Changes kept per aircraft, the newest: older ones are left out and the history says it is cut."""
MAX_LOG_COMMITS = 5000
"""Commits of the whole `aircraft/` folder read in one pass (the site's bound)."""
NEEDS_GIT = "history needs the registry in a git checkout"


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
    """What one commit did to an aircraft file: `kind` added, changed, renamed (from `renamed_from`, the
    same airframe), removed (the file deleted), unreadable (`problem` says why) or shared (only files it
    depends on changed); the modification references the file gained; per position what changed ("added",
    "removed", or the FITTED labels that differ); the other files of the data folder the commit changed,
    when they were asked for."""

    commit: Commit
    kind: str
    mods_added: tuple[str, ...]
    positions: tuple[tuple[str, str], ...]
    problem: str = ""
    files: tuple[str, ...] = ()
    renamed_from: str = ""


class Touched(NamedTuple):
    """An aircraft file a commit touched: its path in the data folder after the commit, git's status (A, M,
    D, or R for a rename from `source`, whose content before was `source_blob`) and its blob after."""

    path: str
    status: str
    blob: str
    source: str = ""
    source_blob: str = ""


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
                  shared: tuple[str, ...] = (), cache_root: Path | None = None, only: str = "") -> FleetHistory:
    """Every aircraft file's history from the data folder's git history, in one pass (see the module).
    Notes name the data folder as `shown`: the site's pages never hold the path it was built from. With
    `shared` (files the aircraft depend on: the catalogues, the policy), a commit that changed one of them
    and not the aircraft file is a change of its own ("shared", nothing fitted changes), for `history`'s
    findings. `cache_root`: where each file content's reading is kept (by its blob id). `only`: the one
    aircraft file whose history is wanted (a name it had before a rename leads to its name now); the
    others' contents are not read."""
    checkout = git.checkout_of(data_dir, shown)
    if isinstance(checkout, str):
        return FleetHistory({}, f"{NEEDS_GIT}: {checkout}.", frozenset())
    log = git.first_parent_log(data_dir, [*paths, *shared], max_commits + 1)
    if log is None:
        return FleetHistory({}, f"{NEEDS_GIT}: git log failed in {shown}.", frozenset())
    commits, touched, others = parse_log(log, checkout.prefix)
    whole = len(commits) <= max_commits
    commits = commits[:max_commits]
    renames = [item for commit in commits for item in touched[commit.hash] if item.status == "R"]
    readings = read_contents(checkout.top, {blob for item in renames for blob in (item.blob, item.source_blob)},
                             cache_root)
    order = {commit.hash: n for n, commit in enumerate(reversed(commits))}
    by_file: dict[str, list[tuple[Commit, str, str, str]]] = defaultdict(list)
    renamed_to: dict[str, str] = {}
    for commit in reversed(commits):  # oldest first
        moves = [step for item in touched[commit.hash] for step in same_airframe(item, readings)]
        mine = {item.path for item in moves} | {item.source for item in moves}
        for path, steps in by_file.items():
            if others[commit.hash] and path not in mine and steps[-1][1] != "D":
                steps.append((commit, "S", "", ""))
        carried = {item.source: by_file.pop(item.source, []) for item in moves if item.status == "R"}
        for item in moves:
            if item.status == "R":  # the file's changes so far go with it (after any earlier file of this name's)
                by_file[item.path] = sorted(by_file.get(item.path, []) + carried[item.source],
                                            key=lambda step: order[step[0].hash])
                renamed_to[item.source] = item.path
            by_file[item.path].append((commit, item.status, item.blob, item.source))
    while only in renamed_to and only not in by_file:
        only = renamed_to[only]
    kept = {path: steps[-max_changes:] for path, steps in by_file.items() if not only or path == only}
    wanted = {blob for steps in kept.values() for _, status, blob, _ in steps if status != "D"}
    parsed = readings | read_contents(checkout.top, wanted - set(readings), cache_root)
    histories = {}
    for path, steps in sorted(kept.items()):
        cut = checkout.shallow or len(steps) < len(by_file[path]) or (not whole and steps[0][1] != "A")
        histories[path] = timeline(path, [(commit, status, parsed.get(blob), others[commit.hash], source)
                                          for commit, status, blob, source in steps], cut)
    note = ""
    if checkout.shallow:
        note = (f"{NEEDS_GIT} with its whole history: this clone is shallow, so what came before its first "
                "commit is unknown (git fetch --unshallow).")
    return FleetHistory(histories, note, uncommitted_files(data_dir, paths))


def same_airframe(item: Touched, readings: dict[str, Parsed]) -> list[Touched]:
    """A rename as it is (`item`) when both revisions name the same serial number; else the old file removed
    and the new one added (two airframes whose files git found alike)."""
    if item.status != "R":
        return [item]
    before, after = readings.get(item.source_blob), readings.get(item.blob)
    if before is not None and after is not None and before[3] and before[3] == after[3]:
        return [item]
    return [Touched(item.source, "D", ""), Touched(item.path, "A", item.blob)]


def uncommitted_files(data_dir: Path, paths: tuple[str, ...]) -> frozenset[str]:
    """Files under `paths` whose working copy differs from the last commit (relative to the data folder)."""
    status = git.git_text(data_dir, "status", "--porcelain", "--untracked-files=all", "--relative", "--",
                          *paths, timeout=30) or ""
    return frozenset(line[3:].strip() for line in status.splitlines() if len(line) > 3)


def parse_log(log: str, prefix: str) -> tuple[list[Commit], dict[str, list[Touched]], dict[str, tuple[str, ...]]]:
    """`git.first_parent_log` output: the commits (newest first), per commit the aircraft files it touched
    (`Touched`: a rename into or out of the aircraft folder is the file added or removed there), and the
    other files it touched."""
    commits: list[Commit] = []
    touched: dict[str, list[Touched]] = {}
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
            meta, _, paths = line.partition("\t")
            fields = meta.split()
            if len(fields) != 5:
                continue
            status = fields[4][:1]
            source, _, path = paths.partition("\t") if status == "R" else ("", "", paths)
            old, new = _aircraft_file(source, prefix), _aircraft_file(path, prefix)
            if status == "R" and old and new:
                touched[commit.hash].append(Touched(new, "R", fields[3], old, fields[2]))
                continue
            if old:  # renamed out of the aircraft folder: gone from it
                touched[commit.hash].append(Touched(old, "D", ""))
            if new:
                touched[commit.hash].append(Touched(new, "A" if status == "R" else status, fields[3]))
            elif path.startswith(prefix):
                rest.append(path[len(prefix):])
        others[commit.hash] = tuple(sorted(rest))
    return commits, touched, others


def _aircraft_file(path: str, prefix: str) -> str:
    """`aircraft/<name>.yaml` for a path from the repository's top that is an aircraft file of the data
    folder at `prefix`; "" for any other path."""
    inner = path[len(prefix):] if path.startswith(prefix) else ""
    return inner if inner.startswith("aircraft/") and inner.count("/") == 1 and inner.endswith(".yaml") else ""


def timeline(path: str, steps: list[tuple[Commit, str, Parsed | None, tuple[str, ...], str]],
             cut: bool) -> AircraftHistory:
    """An aircraft file's changes and spans from what its content said at each commit (oldest first):
    status A, M, R (renamed from the path last) or D, or S for a commit that changed only the shared files
    named fourth."""
    changes: list[Change] = []
    spans: list[Span] = []
    open_spans: dict[str, int] = {}  # position -> index in spans
    before: dict[str, Fitted] = {}
    mods_before: tuple[str, ...] = ()
    for index, (commit, status, reading, files, source) in enumerate(steps):
        if status == "S":
            changes.append(Change(commit, "shared", (), (), files=files))
            continue
        now, mods, problem, _ = ({}, (), "", "") if status == "D" else reading or positions_of(None, path)
        kind = ("removed" if status == "D" else "unreadable" if now is None else "added" if status == "A"
                else "renamed" if status == "R" else "changed")
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
        changes.append(Change(commit, kind, gained, tuple(moved), problem, files, source))
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
