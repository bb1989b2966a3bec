"""Atomic publishing of a built site.

The site is written into a temporary folder beside the target and swapped in only when the build
succeeded, so a failed or interrupted build leaves the previous site exactly as it was. A lock file
beside the target keeps two builds into one target from interleaving. A folder that does not carry
our marker file is never replaced, so a mistyped `-o` cannot wipe out unrelated files.
"""
from __future__ import annotations

import contextlib
import fcntl
import json
import os
import shutil
import tempfile
from pathlib import Path

from registry.core.errors import AerialbookError
from typing import Iterator

MARKER = ".aerialbook-site"
MARKER_NOTE = "Written by aerialbook; this folder is replaced whole by each build."


def read_manifest(out_dir: Path) -> dict:
    """What the previous build recorded in its marker file (which aircraft pages it holds under which
    key); empty when there is no previous site or the marker is not ours or unreadable."""
    try:
        manifest = json.loads((out_dir / MARKER).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    return manifest if isinstance(manifest, dict) else {}


def previous_aircraft(out_dir: Path) -> dict[str, dict]:
    """Each aircraft's entry (page key and files) as the previous build recorded it, for the aircraft
    whose files are all still in the site."""
    previous = read_manifest(out_dir).get("aircraft", {})
    folder = str(out_dir)
    return {aircraft_id: entry for aircraft_id, entry in previous.items() if isinstance(entry, dict)
            and all(os.path.isfile(os.path.join(folder, path)) for path in entry.get("files", ()))}


def up_to_date(out_dir: Path, site_key: str) -> bool:
    """True when the site in `out_dir` was built from inputs with this key (`sitekey.site_key`) and every
    file it was published with is still there: building again would write the same bytes."""
    manifest = read_manifest(out_dir)
    files = manifest.get("files")
    folder = str(out_dir)
    return (bool(site_key) and manifest.get("site_key") == site_key and isinstance(files, list)
            and all(isinstance(name, str) and os.path.isfile(os.path.join(folder, name)) for name in files))


def write_manifest(stage: Path, manifest: dict) -> None:
    """The marker file, holding `manifest` and the list of every file the stage holds."""
    root = str(stage).rstrip(os.sep) + os.sep
    files = sorted((os.path.join(folder, name)[len(root):]).replace(os.sep, "/")
                   for folder, _, names in os.walk(root) for name in names if name != MARKER)
    (stage / MARKER).write_text(json.dumps({"note": MARKER_NOTE, **manifest, "files": files}, sort_keys=True) + "\n")


def place(stage: Path, out_dir: Path, rel_path: str, content: str | bytes, reuse: bytes) -> None:
    """Put one file of the new site into `stage`: a hard link to the previous site's file when it is to be
    kept as it is (`content is reuse`) or is byte-identical, else freshly written. Unchanged files thus
    keep their inode and modification time. Plain string paths: a large site has tens of thousands."""
    target = os.path.join(stage, rel_path)
    folder = os.path.dirname(target)
    if folder not in _MADE:
        os.makedirs(folder, exist_ok=True)
        _MADE.add(folder)
    old = os.path.join(out_dir, rel_path)
    data = content.encode("utf-8") if isinstance(content, str) else content
    if data is reuse or same_content(old, data):
        try:
            os.link(old, target)
            return
        except FileExistsError:  # placed already by another worker: files named by content, same bytes
            return
        except OSError:
            if data is reuse:
                shutil.copyfile(old, target)
                return
    try:
        with open(target, "xb") as out:
            out.write(data)
    except FileExistsError:  # written already by another worker: files named by content, same bytes
        pass


_MADE: set[str] = set()
"""Folders `place` has made in this process for the current stage (cleared for each new stage)."""


def same_content(path: Path | str, data: bytes, block: int = 1 << 20) -> bool:
    """True when the file at `path` holds exactly `data`; read a block at a time, since the build record
    runs to a hundred megabytes and reading it whole would double what the build holds in memory."""
    try:
        if os.stat(path).st_size != len(data):
            return False
        view = memoryview(data)
        with open(path, "rb") as handle:
            for start in range(0, len(data), block):
                if handle.read(block) != view[start:start + block]:
                    return False
        return True
    except OSError:
        return False


class PublishError(AerialbookError):
    """The target cannot be published to (not ours, locked, not writable)."""


@contextlib.contextmanager
def target_lock(out_dir: Path) -> Iterator[None]:
    """Hold an exclusive lock on `<parent>/.<name>.lock` while building into `out_dir`."""
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    lock_path = out_dir.parent / f".{out_dir.name}.lock"
    with open(lock_path, "w") as handle:
        try:
            fcntl.flock(handle, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            raise PublishError(f"{out_dir}: another build is writing this site; try again when it ends") from None
        try:
            yield
        finally:
            fcntl.flock(handle, fcntl.LOCK_UN)


def check_target(out_dir: Path) -> None:
    """Refuse a target that exists, is not empty and was not written by us."""
    if not out_dir.exists():
        return
    if not out_dir.is_dir():
        raise PublishError(f"{out_dir}: exists and is not a folder, expected a folder for the site")
    if any(out_dir.iterdir()) and not (out_dir / MARKER).exists():
        raise PublishError(
            f"{out_dir}: folder holds files not written by this tool, expected an empty folder or an earlier site"
        )


@contextlib.contextmanager
def staging_dir(out_dir: Path) -> Iterator[Path]:
    """Yield a fresh temporary folder beside `out_dir`; on success swap it in, on failure remove it."""
    out_dir = out_dir.resolve()
    with target_lock(out_dir):
        check_target(out_dir)
        stage = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.build-", dir=out_dir.parent))
        _MADE.clear()
        try:
            yield stage
            if not (stage / MARKER).exists():
                (stage / MARKER).write_text(json.dumps({"note": MARKER_NOTE}) + "\n")
            os.chmod(stage, 0o755)
            swap_in(stage, out_dir)
        except BaseException:
            shutil.rmtree(stage, ignore_errors=True)
            raise


def swap_in(stage: Path, out_dir: Path) -> None:
    """Replace `out_dir` by `stage` with two renames; the old site is removed only afterwards."""
    old = None
    if out_dir.exists():
        old = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.old-", dir=out_dir.parent))
        old.rmdir()
        os.rename(out_dir, old)
    try:
        os.rename(stage, out_dir)
    except OSError:
        if old is not None:
            os.rename(old, out_dir)
        raise
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
