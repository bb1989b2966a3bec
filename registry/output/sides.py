"""Where the records of a comparison come from: a built site, a record file, a registry folder or `git:REV`.

A registry folder (and a git revision, once exported) is run through the pipeline: not by importing it
(the pipeline imports the comparison), but through the `run` the caller passes in, `pipeline.run`
(registry/cli.py passes it for `build.py diff` and `build.py build --compare`).
"""
from __future__ import annotations

import io
import subprocess
import tarfile
import tempfile
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from datetime import date
from pathlib import Path
from typing import Any

from registry.load.git import git as run_git
from registry.output import record as build_record
from registry.output import record_lines
from registry.output.record import RecordError

GIT_PREFIX = "git:"
MAX_RECORD_DEPTH = 64
"""Levels of nesting a record may have. The record schema and the registry's file schemas
(registry/schemas) give a record this program writes 7 levels (the demo's; an antenna's free-form
`geometry` may add a few); deeper data is not a record, and the comparison, which walks every level,
would run out of Python's recursion limit (about 1000 frames) on it."""


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
    (None: the pipeline's own choice). Raises RecordError when `spec` names nothing usable, or a record
    nested deeper than MAX_RECORD_DEPTH.
    """
    kind = side_kind(spec)
    if kind == "git":
        side = git_side(spec[len(GIT_PREFIX):], Path(git_data_dir), run, as_of)
    elif kind == "site":
        side = Side(f"site {spec}", read_record(Path(spec) / build_record.RECORD_NAME))
    elif kind == "registry":
        side = Side(f"registry {spec}", build_record.to_record(run(Path(spec), as_of)))
    else:
        side = Side(f"record {spec}", read_record(Path(spec)))
    check_depth(side.record, side.label)
    return side


def read_record_pair(old_spec: str, new_spec: str) -> tuple[Side, Side] | None:
    """Both sides, when both name record files or built sites whose records are in this version's
    layout, with the aircraft alike on both sides left out of both (`record_lines`): the comparison
    finds the same changes in a fraction of the time. None otherwise."""
    if any(side_kind(spec) not in ("site", "record") for spec in (old_spec, new_spec)):
        return None
    paths = [Path(spec) / build_record.RECORD_NAME if side_kind(spec) == "site" else Path(spec)
             for spec in (old_spec, new_spec)]
    pair = record_lines.trimmed_pair(*paths, *map(str, paths))
    if pair is None:
        return None
    sides = tuple(Side(f"{side_kind(spec)} {spec}", record) for spec, record in zip((old_spec, new_spec), pair))
    for side in sides:
        check_depth(side.record, side.label)
    return sides


def read_record(path: Path) -> dict[str, Any]:
    """`record.read`, with data nested too deep for the JSON reader turned into a RecordError."""
    try:
        return build_record.read(path)
    except RecursionError:
        raise RecordError(f"{path}: nested deeper than Python's JSON reader can follow, expected a build "
                          f"record ({MAX_RECORD_DEPTH} levels at most)") from None


def record_depth(value: Any, stop_after: int = MAX_RECORD_DEPTH) -> int:
    """Levels of nesting of JSON data: 0 for a scalar, 1 for a flat object or list. Walked level by level
    without recursion, and no further than `stop_after` + 1 levels."""
    depth, level = 0, [value]
    while depth <= stop_after:
        children: list[Any] = []
        for item in level:
            if isinstance(item, dict):
                children.extend(item.values())
            elif isinstance(item, (list, tuple)):
                children.extend(item)
        if not children and not any(isinstance(item, (dict, list, tuple)) for item in level):
            return depth
        depth, level = depth + 1, children
    return depth


def check_depth(record: Mapping[str, Any], where: str) -> None:
    """RecordError naming `where` when `record` nests deeper than MAX_RECORD_DEPTH."""
    depth = record_depth(record)
    if depth > MAX_RECORD_DEPTH:
        raise RecordError(f"{where}: nested {depth} levels deep, expected a build record "
                          f"({MAX_RECORD_DEPTH} levels at most)")


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
    """`load.git.git`, with git that cannot run at all a RecordError."""
    done = run_git(cwd, *args)
    if done is None:
        raise RecordError(f"git {' '.join(args)}: cannot run git")
    return done


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
