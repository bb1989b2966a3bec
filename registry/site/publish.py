"""Atomic publishing of a built site.

The site is written into a temporary folder beside the target (`.NAME.build-*`) and swapped in only when
the build succeeded, so a failed or interrupted build leaves the previous site exactly as it was. A lock
file beside the target (`.NAME.lock`) keeps two builds into one target from interleaving; the build
holding it removes it when it ends, and under it removes what a killed build left beside the target
(its staging folder, the previous site it was about to delete: `clean_leftovers`).

A folder is replaced only if it is empty or is a site this tool wrote: its marker file lists every file
of the site with its size, and every file in the folder must be one of them (`is_site`). A marker file
copied into another folder therefore does not make that folder a site, and a file the user put into a
site is never deleted: the build is refused instead.
"""
from __future__ import annotations

import contextlib
import fcntl
import json
import os
import re
import shutil
import stat
import tempfile
from pathlib import Path
from typing import BinaryIO, Iterable, Iterator

from registry.core.errors import AerialbookError
from registry.incremental import read_regular_file

MARKER = ".aerialbook-site"
MARKER_NOTE = ("Written by aerialbook; this folder is replaced whole by each build, as long as it holds "
               "only the files listed here.")
MAX_MARKER_BYTES = 64 * 1024 * 1024


def read_manifest(out_dir: Path) -> dict:
    """What the previous build recorded in its marker file (which aircraft pages it holds under which
    key); empty when there is no previous site or the marker is not ours or unreadable."""
    data = read_regular_file(Path(out_dir) / MARKER, MAX_MARKER_BYTES)
    try:
        manifest = json.loads(data) if data is not None else {}
    except (ValueError, RecursionError):
        return {}
    return manifest if isinstance(manifest, dict) else {}


def previous_aircraft(out_dir: Path) -> dict[str, dict]:
    """Each aircraft's entry (page key and files) as the previous build recorded it, for the aircraft
    whose files are all still in the site (as regular files: each folder listed once, not each file
    looked up: 34,000 files at 1,000 aircraft)."""
    manifest = read_manifest(out_dir)
    previous, listed = manifest.get("aircraft", {}), manifest.get("files")
    if not isinstance(previous, dict) or not isinstance(listed, dict):
        return {}
    present = _FilesPresent(str(out_dir))
    return {aircraft_id: entry for aircraft_id, entry in previous.items() if isinstance(entry, dict)
            and isinstance(entry.get("files", ()), (list, tuple))
            and all(isinstance(path, str) and _inside(path) and path in listed and present(path)
                    for path in entry.get("files", ()))}


def _inside(path: str) -> bool:
    """Whether `path` is a plain relative path that stays inside the site: a marker file is input like any
    other, and a listed "../name" would otherwise be linked (and its folder made) beside the site."""
    return "\\" not in path and all(part not in ("", ".", "..") for part in path.split("/"))


class _FilesPresent:
    """Whether a relative path names a regular file under `root` (not a link), its folder listed once."""

    def __init__(self, root: str):
        self.root = root
        self.folders: dict[str, frozenset[str]] = {}

    def __call__(self, path: str) -> bool:
        folder, _, name = path.rpartition("/")
        if folder not in self.folders:
            try:
                with os.scandir(os.path.join(self.root, folder)) as entries:
                    self.folders[folder] = frozenset(entry.name for entry in entries
                                                     if entry.is_file(follow_symlinks=False))
            except (OSError, ValueError):
                self.folders[folder] = frozenset()
        return name in self.folders[folder]


def up_to_date(out_dir: Path, site_key: str) -> bool:
    """True when the site in `out_dir` was built from inputs with this key (`sitekey.site_key`) and every
    file it was published with is still there: building again would write the same bytes."""
    manifest = read_manifest(out_dir)
    files = manifest.get("files")
    folder = str(out_dir)
    return (bool(site_key) and manifest.get("site_key") == site_key and isinstance(files, dict)
            and all(_size(os.path.join(folder, name)) == size for name, size in files.items()))


def _size(path: str) -> int | None:
    """The size of the regular file at `path` (not following a link), or None."""
    try:
        info = os.lstat(path)
    except (OSError, ValueError):
        return None
    return info.st_size if stat.S_ISREG(info.st_mode) else None


def write_manifest(stage: Path, manifest: dict) -> None:
    """The marker file, holding `manifest` and every file the stage holds with its size (`is_site`)."""
    files = dict(site_files(stage))
    (stage / MARKER).write_text(json.dumps({"note": MARKER_NOTE, **manifest, "files": files}, sort_keys=True) + "\n")


def site_files(folder: Path) -> Iterator[tuple[str, int | None]]:
    """Each file under `folder` but the marker (relative path with "/") and its size; None for anything
    that is not a regular file (a link, a pipe) or a link to a folder."""
    root = str(folder).rstrip(os.sep) + os.sep
    for parent, folders, names in os.walk(root):
        for name in names + [name for name in folders if os.path.islink(os.path.join(parent, name))]:
            path = os.path.join(parent, name)
            relative = path[len(root):].replace(os.sep, "/")
            if relative != MARKER:
                yield relative, _size(path)


def is_site(out_dir: Path) -> bool:
    """True when `out_dir` holds only what its marker lists: every file, with the size it was published
    with. Files may have gone missing (a build puts them back); no file may have been added or changed."""
    listed = read_manifest(out_dir).get("files")
    if isinstance(listed, list):  # the marker of earlier releases: names only
        listed = {name: None for name in listed if isinstance(name, str)}
    if not isinstance(listed, dict):
        return False
    return all(relative in listed and size is not None and listed[relative] in (size, None)
               for relative, size in site_files(out_dir))


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


def place_chunks(stage: Path, out_dir: Path, rel_path: str, chunks: Iterable[str]) -> None:
    """`place` for a file given as text in pieces (the build record): written piece by piece, never held
    whole, and compared with the previous site's file as it is written (up to the first difference: the
    record runs to hundreds of megabytes); replaced by a hard link to that file when the two are
    byte-identical."""
    target = os.path.join(stage, rel_path)
    os.makedirs(os.path.dirname(target), exist_ok=True)
    old = os.path.join(out_dir, rel_path)
    with open(target, "xb") as out, _open_regular(old) as previous:
        same = previous is not None
        for chunk in chunks:
            data = chunk.encode("utf-8")
            out.write(data)
            same = same and previous.read(len(data)) == data
        same = same and not previous.read(1)
    if not same:
        return
    try:
        os.unlink(target)
        os.link(old, target)
    except OSError:  # no link across file systems: a copy of the same bytes
        if not os.path.exists(target):
            shutil.copyfile(old, target)


@contextlib.contextmanager
def _open_regular(path: str) -> Iterator[BinaryIO | None]:
    """The regular file at `path` open for reading, or None (absent, a link, anything else)."""
    try:
        handle = open(path, "rb") if stat.S_ISREG(os.lstat(path).st_mode) else None
    except OSError:
        handle = None
    try:
        yield handle
    finally:
        if handle is not None:
            handle.close()


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


class SiteLocked(PublishError):
    """Another build is writing the same site: try again when it ends."""


def lock_path(out_dir: Path) -> Path:
    return out_dir.parent / f".{out_dir.name}.lock"


@contextlib.contextmanager
def target_lock(out_dir: Path) -> Iterator[None]:
    """Hold an exclusive lock on `<parent>/.<name>.lock` while building into `out_dir`; SiteLocked when
    another build holds it. The holder removes the file before it lets go, so no lock file outlives a
    build that ended, and one left by a killed build is taken over and removed by the next."""
    out_dir.parent.mkdir(parents=True, exist_ok=True)
    path = lock_path(out_dir)
    handle = _locked(path)
    try:
        yield
    finally:
        with contextlib.suppress(OSError):
            os.unlink(path)  # while still holding it: a build waiting on this file tries again (`_locked`)
        fcntl.flock(handle, fcntl.LOCK_UN)
        os.close(handle)


def _locked(path: Path) -> int:
    """An open descriptor of the lock file at `path`, exclusively locked, which is still the file at
    `path` (one removed by the build that held it before is let go and the new one taken)."""
    while True:
        handle = os.open(path, os.O_RDWR | os.O_CREAT | os.O_NOFOLLOW | getattr(os, "O_CLOEXEC", 0), 0o644)
        try:
            fcntl.flock(handle, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            os.close(handle)
            raise SiteLocked(f"{path.parent / path.name[1:-5]}: another build is writing this site; "
                             "try again when it ends") from None
        except BaseException:
            os.close(handle)
            raise
        try:
            same = os.fstat(handle).st_ino == os.lstat(path).st_ino
        except OSError:
            same = False
        if same:
            return handle
        os.close(handle)


def held_by_another(out_dir: Path) -> bool:
    """True when a build holds the lock of `out_dir` right now (the lock file is neither made nor removed)."""
    try:
        handle = os.open(lock_path(out_dir), os.O_RDWR | os.O_NOFOLLOW | getattr(os, "O_CLOEXEC", 0))
    except OSError:
        return False
    try:
        fcntl.flock(handle, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except BlockingIOError:
        return True
    finally:
        os.close(handle)  # closing lets go of a lock taken here
    return False


def clean_leftovers(out_dir: Path) -> None:
    """Remove the staging folders and old sites a killed build left beside `out_dir` (`.NAME.build-*`,
    `.NAME.old-*`, as `staging_dir` and `swap_in` name them). Called under the lock: no live build of
    this target can own them. Links and files of those names are left alone."""
    pattern = re.compile(rf"\.{re.escape(out_dir.name)}\.(build|old)-[a-z0-9_]{{8}}")
    try:
        entries = list(os.scandir(out_dir.parent))
    except OSError:
        return
    for entry in entries:
        if pattern.fullmatch(entry.name) and entry.is_dir(follow_symlinks=False):
            shutil.rmtree(entry.path, ignore_errors=True)


def check_target(out_dir: Path) -> None:
    """Refuse a target that exists, is not empty and is not a site written by us (`is_site`)."""
    if not out_dir.exists() and not out_dir.is_symlink():
        return
    if out_dir.is_symlink() or not out_dir.is_dir():
        raise PublishError(f"{out_dir}: exists and is not a folder, expected a folder for the site")
    if any(out_dir.iterdir()) and not is_site(out_dir):
        raise PublishError(
            f"{out_dir}: folder holds files not written by this tool (or changed since), expected an empty "
            "folder or an earlier site"
        )


@contextlib.contextmanager
def staging_dir(out_dir: Path) -> Iterator[Path]:
    """Yield a fresh temporary folder beside `out_dir`; on success swap it in, on failure remove it."""
    out_dir = out_dir.resolve()
    with target_lock(out_dir):
        clean_leftovers(out_dir)
        check_target(out_dir)
        stage = Path(tempfile.mkdtemp(prefix=f".{out_dir.name}.build-", dir=out_dir.parent))
        _MADE.clear()
        try:
            yield stage
            if not (stage / MARKER).exists():
                write_manifest(stage, {})
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
