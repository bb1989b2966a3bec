"""A folder of results keyed by their inputs' content and the tool itself; safe to delete at any time.

Used for what is costly and depends only on content: a registry file's parsed and schema-checked form,
an aircraft's computed figures. A key is the SHA-256 of the tool (`code_key`: its code, templates and
libraries) and the inputs, so new code or any changed input simply misses. Entries are pickles written
whole (temporary file, then rename), so an interrupted or concurrent build never reads half an entry;
an unreadable entry is a miss. Only this tool's own cache folder is read: never point it at files you
did not let it write.
"""
from __future__ import annotations

import functools
import hashlib
import os
import pickle
import re
import shutil
import sys
import tempfile
from importlib import metadata
from pathlib import Path
from typing import Any

PACKAGE_DIR = Path(__file__).resolve().parent.parent
TEMPLATE_DIR = PACKAGE_DIR.parent / "site_templates"
LIBRARIES = ("jinja2", "markdown", "matplotlib", "nh3", "numpy", "pyyaml", "scipy", "jsonschema")
"""Libraries whose version can change a figure, a page or a plot."""


def files_under(folder: Path) -> list[Path]:
    """Regular files under `folder`, sorted, skipping anything hidden or inside a hidden folder."""
    found = []
    for path in folder.rglob("*"):
        relative = path.relative_to(folder).parts
        if any(part.startswith(".") or part == "__pycache__" for part in relative):
            continue
        if path.is_file():
            found.append(path)
    return sorted(found)


def content_parts(folder: Path) -> list[str | bytes]:
    """Each file under `folder` (`files_under`) as its relative path and its bytes, for `key_of`."""
    parts: list[str | bytes] = []
    for path in files_under(folder):
        parts += [path.relative_to(folder).as_posix(), path.read_bytes()]
    return parts


def library_versions() -> list[str]:
    versions = [sys.version]
    for name in LIBRARIES:
        try:
            versions.append(f"{name} {metadata.version(name)}")
        except metadata.PackageNotFoundError:
            versions.append(f"{name} absent")
    return versions


@functools.lru_cache(maxsize=1)
def code_key() -> str:
    """Key of the tool itself: its modules (version included), schemas, shipped data and site templates,
    and the versions of Python and of the libraries that shape the output. Part of every cache key, so
    an edited rule or template, or an upgraded library, never reads an entry made by the code before."""
    return _digest([*library_versions(), *content_parts(PACKAGE_DIR), *content_parts(TEMPLATE_DIR)])


def _digest(parts: list[bytes | str], seed: str = "") -> str:
    digest = hashlib.sha256(seed.encode())
    for part in parts:
        data = part.encode() if isinstance(part, str) else part
        digest.update(len(data).to_bytes(8, "little"))
        digest.update(data)
    return digest.hexdigest()


def key_of(*parts: bytes | str) -> str:
    """SHA-256 (hex) of the tool (`code_key`) and the parts, each length-prefixed so no two inputs collide."""
    return _digest(list(parts), code_key())


def version_folder(cache_dir: Path) -> Path:
    """The folder, inside a cache folder, for entries made by this very code (`code_key`): nothing
    outside it can ever be read by this code again."""
    return Path(cache_dir) / code_key()[:16]


def prune(cache_dir: Path) -> None:
    """Remove what earlier code left in `cache_dir` (its other version folders, and the flat layout of
    older releases); this code's own folder stays."""
    keep = version_folder(cache_dir).name
    try:
        entries = list(Path(cache_dir).iterdir())
    except OSError:
        return
    for entry in entries:
        if entry.is_dir() and entry.name != keep and (
                re.fullmatch(r"[0-9a-f]{16}", entry.name) or entry.name in OLD_LAYOUT):
            shutil.rmtree(entry, ignore_errors=True)


OLD_LAYOUT = ("files", "models", "aircraft", "summaries", "patterns", "pieces", "plots")
"""Namespaces that earlier releases kept directly in the cache folder."""


class DiskCache:
    """Pickled values by key under `root/namespace`; with root None nothing is kept (every get misses)."""

    def __init__(self, root: Path | None, namespace: str):
        self.folder = Path(root) / namespace if root is not None else None

    def get(self, key: str) -> Any | None:
        if self.folder is None:
            return None
        try:
            with open(self.folder / key[:2] / f"{key}.pickle", "rb") as handle:
                return pickle.load(handle)
        except (OSError, EOFError, pickle.UnpicklingError, AttributeError, ImportError, IndexError, TypeError):
            return None  # absent, damaged or from an older layout: compute it again

    def put(self, key: str, value: Any) -> None:
        if self.folder is None:
            return
        folder = self.folder / key[:2]
        folder.mkdir(parents=True, exist_ok=True)
        handle, tmp = tempfile.mkstemp(dir=folder, prefix=".tmp-")
        try:
            with os.fdopen(handle, "wb") as out:
                pickle.dump(value, out, protocol=pickle.HIGHEST_PROTOCOL)
            os.replace(tmp, folder / f"{key}.pickle")
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
