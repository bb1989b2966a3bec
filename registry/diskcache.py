"""A folder of results keyed by their inputs' content and the tool version; safe to delete at any time.

Used for what is costly and depends only on content: a registry file's parsed and schema-checked form,
an aircraft's computed figures. A key is the SHA-256 of the tool version, a namespace and the inputs,
so a new version or any changed input simply misses. Entries are pickles written whole (temporary file,
then rename), so an interrupted or concurrent build never reads half an entry; an unreadable entry is a
miss. Only this tool's own cache folder is read: never point it at files you did not let it write.
"""
from __future__ import annotations

import hashlib
import os
import pickle
import tempfile
from pathlib import Path
from typing import Any

from registry import __version__

FORMAT = "8"
"""Bumped when what the cache holds changes shape, so an old entry is never read as a new one."""


def key_of(*parts: bytes | str) -> str:
    """SHA-256 (hex) of the tool version and the parts, each length-prefixed so no two inputs collide."""
    digest = hashlib.sha256(f"{__version__}|{FORMAT}".encode())
    for part in parts:
        data = part.encode() if isinstance(part, str) else part
        digest.update(len(data).to_bytes(8, "little"))
        digest.update(data)
    return digest.hexdigest()


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
