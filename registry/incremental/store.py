"""A folder of results keyed by their inputs' content and the tool itself; safe to delete at any time.

Used for what is costly and depends only on content: a registry file's parsed and schema-checked form,
an aircraft's computed figures. A key is the SHA-256 of the tool (`code_key`: its code, templates and
libraries) and the inputs, so new code or any changed input simply misses. Entries are pickles written
whole (temporary file, then rename), so an interrupted or concurrent build never reads half an entry;
an unreadable entry is a miss. Only this tool's own cache folder is read: never point it at files you
did not let it write.
"""
from __future__ import annotations

import os
import pickle
import re
import shutil
import tempfile
from pathlib import Path
from typing import Any

from registry.incremental.keys import code_key

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


def write_text_atomically(path: Path, text: str) -> None:
    """Write a text file whole or not at all (a concurrent or interrupted build never sees half a file)."""
    path.parent.mkdir(parents=True, exist_ok=True)
    handle, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-")
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(text)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
