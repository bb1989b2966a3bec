"""All access to git: the registry's as-of date, its revision for the footer, a folder at a revision, the
mainline log of the registry's files and their contents at each commit (for `history`).

The data folder is usually a git checkout; none of this needs it to be. Every call has a timeout and
failure is an answer (None), never an exception the user sees unexplained.
"""
from __future__ import annotations

import io
import os
import subprocess
import tarfile
from datetime import date, datetime, timezone
from pathlib import Path
from typing import NamedTuple


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


class Checkout(NamedTuple):
    """Where a data folder sits in its git repository: the repository's top folder, the data folder's
    path inside it (`prefix`, "" or ending in "/"), and whether the history is cut short (a shallow clone)."""

    top: Path
    prefix: str
    shallow: bool


def checkout_of(data_dir: Path, shown: str = "") -> Checkout | str:
    """The data folder's checkout, or why its history cannot be read (a sentence naming the folder as
    `shown`, default its path, for the history note)."""
    shown = shown or str(data_dir)
    inside = git(data_dir, "rev-parse", "--is-inside-work-tree", "--show-prefix", "--show-toplevel",
                 "--is-shallow-repository", timeout=20)
    if inside is None:
        return "git cannot be run on this machine"
    lines = inside.stdout.decode(errors="replace").splitlines()
    if inside.returncode != 0 or len(lines) < 4 or lines[0] != "true":
        return f"{shown} is not inside a git checkout"
    prefix = lines[1].strip()
    if git_text(data_dir, "rev-parse", "--verify", "--quiet", "HEAD", timeout=20) is None:
        return f"{shown} is in a git repository with no commit yet"
    return Checkout(Path(lines[2]), prefix, lines[3].strip() == "true")


def first_parent_log(data_dir: Path, paths: list[str], limit: int) -> str | None:
    """`git log` of the mainline (first parents, merges compared with their first parent) for `paths`
    inside `data_dir`: per commit a line `\\x1e<hash>\\x1f<commit time>\\x1f<subject>`, then the raw changes
    (`:mode mode blob blob status\\tpath`, or `...Rnnn\\told path\\tnew path` for a file git finds renamed
    inside `paths`; blob ids in full, paths from the repository's top). Newest first, at most `limit`
    commits; None when git fails."""
    done = git(data_dir, "log", "--first-parent", "--diff-merges=first-parent", "--raw", "--no-abbrev",
               "--find-renames", f"--max-count={limit}", "--format=%x1e%H%x1f%ct%x1f%s", "--", *paths, timeout=120)
    if done is None or done.returncode != 0:
        return None
    return done.stdout.decode(errors="replace")


def read_blobs(top: Path, blob_ids: list[str], max_bytes: int) -> dict[str, bytes]:
    """The contents of git blobs by id, through one `git cat-file --batch`; a blob over `max_bytes` (or
    missing) is left out. Empty when git fails."""
    if not blob_ids:
        return {}
    try:
        done = subprocess.run(["git", "-C", str(top), "cat-file", "--batch"], capture_output=True, check=False,
                              timeout=120, input="".join(f"{blob}\n" for blob in blob_ids).encode())
    except (OSError, subprocess.SubprocessError):
        return {}
    if done.returncode != 0:
        return {}
    return _batch_contents(done.stdout, max_bytes)


def _batch_contents(out: bytes, max_bytes: int) -> dict[str, bytes]:
    """Split `git cat-file --batch` output (`<id> <type> <size>\\n<content>\\n`, or `<id> missing\\n`)."""
    found: dict[str, bytes] = {}
    at = 0
    while at < len(out):
        end = out.find(b"\n", at)
        if end < 0:
            break
        header = out[at:end].decode(errors="replace").split()
        at = end + 1
        if len(header) != 3 or not header[2].isdigit():
            continue  # "<id> missing"
        size = int(header[2])
        if size <= max_bytes:
            found[header[0]] = out[at:at + size]
        at += size + 1
    return found


def export_at(checkout: Checkout, rev: str, target: Path) -> str | None:
    """The data folder as it was at commit `rev`, unpacked into the (empty) folder `target`: None when
    done, else why not."""
    archive = git(checkout.top, "archive", "--format=tar", f"{rev}:{checkout.prefix}")
    if archive is None or archive.returncode != 0:
        message = archive.stderr.decode(errors="replace").strip().splitlines() if archive else []
        return message[-1] if message else "git archive failed"
    with tarfile.open(fileobj=io.BytesIO(archive.stdout)) as tar:
        tar.extractall(target, filter="data")
    return None
