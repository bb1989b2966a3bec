"""What the footer says about a build: the data's revision and time, and the tool's version."""
from __future__ import annotations

import os
from dataclasses import dataclass
from datetime import datetime, timezone
from pathlib import Path

from registry import __version__
from registry.load.git import git_text


@dataclass(frozen=True)
class BuildInfo:
    """What a reader needs to tell two builds apart; never the wall-clock time of the build."""

    revision: str
    time: str
    version: str


def _utc(epoch: float) -> str:
    return datetime.fromtimestamp(int(epoch), tz=timezone.utc).strftime("%Y-%m-%d %H:%M:%S UTC")


def build_info(data_dir: Path, environ: dict[str, str] | None = None) -> BuildInfo:
    """Revision and time of the data, for the footer.

    Revision: the last commit touching `data_dir` (with `+modified` when its files differ from it), or
    "not in version control". Time: SOURCE_DATE_EPOCH when set, else the data's last commit time, else
    the newest data file's modification time; never the time of the build.
    """
    environ = os.environ if environ is None else environ
    data_dir = Path(data_dir).resolve()
    revision = "not in version control"
    commit_time: str | None = None
    if git_text(data_dir, "rev-parse", "--is-inside-work-tree") == "true":
        last = git_text(data_dir, "log", "-1", "--format=%h %ct", "--", ".")
        if last:
            short, commit_time = last.split()
            dirty = git_text(data_dir, "status", "--porcelain", "--untracked-files=all", "--", ".")
            revision = short + ("+modified" if dirty else "")
        else:
            revision = "not committed yet"
    epoch_text = environ.get("SOURCE_DATE_EPOCH", "").strip()
    if epoch_text.isdigit():
        time = _utc(int(epoch_text))
    elif commit_time:
        time = _utc(int(commit_time))
    else:
        mtimes = [path.stat().st_mtime for path in data_dir.rglob("*") if path.is_file()]
        time = _utc(max(mtimes)) if mtimes else "unknown"
    return BuildInfo(revision=revision, time=time, version=__version__)
