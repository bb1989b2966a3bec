"""All access to git: the registry's as-of date, its revision for the footer, a folder at a revision.

The data folder is usually a git checkout; none of this needs it to be. Every call has a timeout and
failure is an answer (None), never an exception the user sees unexplained.
"""
from __future__ import annotations

import os
import subprocess
from datetime import date, datetime, timezone
from pathlib import Path


def git(cwd: Path, *args: str, timeout: float = 120) -> subprocess.CompletedProcess | None:
    """`git -C cwd args...` with its output as bytes; None when git cannot be run at all."""
    try:
        return subprocess.run(["git", "-C", str(cwd), *args], capture_output=True, check=False, timeout=timeout)
    except (OSError, subprocess.SubprocessError):
        return None


def git_text(cwd: Path, *args: str, timeout: float = 30) -> str | None:
    """What `git -C cwd args...` prints, stripped; None when it fails or cannot run."""
    done = git(cwd, *args, timeout=timeout)
    if done is None or done.returncode != 0:
        return None
    return done.stdout.decode(errors="replace").strip()


def as_of_date(data_dir: Path) -> date:
    """The date the registry speaks for: SOURCE_DATE_EPOCH, else the data's last commit, else today.

    Measurement ages are counted to it, so the same revision of the data gives the same report.
    """
    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch and epoch.strip().isdigit():
        return datetime.fromtimestamp(int(epoch), tz=timezone.utc).date()
    stamp = git_text(data_dir, "log", "-1", "--format=%ct", "--", ".", timeout=20) or ""
    if stamp.isdigit():
        return datetime.fromtimestamp(int(stamp), tz=timezone.utc).date()
    return datetime.now(tz=timezone.utc).date()


def review_limit(as_of: date) -> date:
    """The last day a review may be dated: the registry's as-of date, or today when that is later (a
    SOURCE_DATE_EPOCH or a history that pins the as-of date in the past does not make today's review
    one from the future)."""
    return max(as_of, datetime.now(tz=timezone.utc).date())
