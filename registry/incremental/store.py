"""A folder of results keyed by their inputs' content and the tool itself; safe to delete at any time.

Used for what is costly and depends only on content: a registry file's parsed and schema-checked form,
an aircraft's computed figures, a drawn plot. A key is the SHA-256 of the tool (`code_key`: its code,
templates and libraries) and the inputs, so new code or any changed input simply misses.

The folder is treated as untrusted input: whoever can write into it must not be able to run code in the
build, crash it, exhaust its memory or put a figure of their own into the site. An entry is

    aerialbook-cache 2 <HMAC-SHA-256 of the key and the payload, hex>\n<payload>

where the payload is tagged JSON (`codec.py`: no pickle, nothing that can run code). Reading an entry
refuses anything that is not a regular file (a symlink, a device, a pipe: never opened), anything over
`MAX_ENTRY_BYTES`, a checksum that does not match (damage, an entry copied under another key, or one
signed without this user's key: `signing.py`) and a payload that is not of the type the caller expects
(`DiskCache(root, namespace, kind)`). Any such entry is a miss: it is removed and computed again, so a
damaged cache gives the same output as none.
Entries are written whole (temporary file, then rename), so an interrupted or concurrent build never
reads half an entry.
"""
from __future__ import annotations

import hashlib
import hmac
import os
import re
import shutil
import stat
import tempfile
from pathlib import Path
from typing import Any

from registry.incremental import codec
from registry.incremental.keys import code_key
from registry.incremental.signing import signing_key

MAGIC = b"aerialbook-cache 2 "
"""Version 2: the checksum is keyed (HMAC); version 1's was a plain SHA-256 anyone could compute."""
SUFFIX = ".entry"
MAX_ENTRY_BYTES = 16 * 1024 * 1024
"""The largest entry read back: 16 MiB, a hundred times what an aircraft of 30 installations takes
(about 150 kB). A larger file is refused before it is read; parsed, the largest entry allowed holds a
few hundred MB at the very most (JSON's smallest values, `[]`, cost about 60 bytes each in Python)."""


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
    """Values of type `kind` by key under `root/namespace`; with root None nothing is kept (every get
    misses). `kind` is a class or a typing hint (tuple[YamlDoc | None, list[Problem]]); `also` names
    record classes an entry may hold that the hints do not reach (`codec.schema`)."""

    def __init__(self, root: Path | None, namespace: str, kind: Any, also: tuple[type, ...] = ()):
        self.folder = Path(root) / namespace if root is not None else None
        self.kind, self.also = kind, also
        if root is not None:
            signing_key()  # found here, in the process that starts the work: workers forked later inherit it

    def path(self, key: str) -> Path:
        return self.folder / key[:2] / f"{key}{SUFFIX}"

    def get(self, key: str) -> Any | None:
        """The value kept under `key`, or None when there is none or it is refused (and then removed)."""
        if self.folder is None or not re.fullmatch(r"[0-9a-zA-Z_-]{4,128}", key):
            return None
        path = self.path(key)
        data = read_regular_file(path)
        if data is None:
            return None
        try:
            return codec.loads(checked_payload(key, data), self.kind, self.also)
        except codec.BadEntry:
            discard(path)
            return None

    def discard(self, key: str) -> None:
        """Remove the entry under `key` (one its reader refused on grounds of its own)."""
        if self.folder is not None:
            discard(self.path(key))

    def put(self, key: str, value: Any) -> None:
        if self.folder is None:
            return
        payload = codec.dumps(value, self.kind, self.also)
        write_bytes_atomically(self.path(key), MAGIC + checksum(key, payload) + b"\n" + payload)


def checksum(key: str, payload: bytes) -> bytes:
    """HMAC-SHA-256 (hex) of the key and the payload under this user's signing key (`signing.py`): detects
    a damaged entry, one moved to another key, and one written by anyone who does not hold the key."""
    digest = hmac.new(signing_key().secret, key.encode("utf-8") + b"\0", hashlib.sha256)
    digest.update(payload)
    return digest.hexdigest().encode("ascii")


def checked_payload(key: str, data: bytes) -> bytes:
    """The payload of an entry's bytes, or BadEntry when its header or checksum is wrong."""
    header, _, payload = data.partition(b"\n")
    if not header.startswith(MAGIC) or header[len(MAGIC):] != checksum(key, payload):
        raise codec.BadEntry("a damaged entry: its checksum does not match")
    return payload


def read_regular_file(path: Path, limit: int = MAX_ENTRY_BYTES) -> bytes | None:
    """The bytes of the regular file at `path`, or None: absent, or refused (a symlink, device, pipe or
    folder is never opened; a file over `limit` bytes is never read) and then removed if it is a file
    or a link."""
    try:
        info = os.lstat(path)
    except OSError:
        return None
    if not stat.S_ISREG(info.st_mode) or info.st_size > limit:
        discard(path)
        return None
    try:
        handle = os.open(path, os.O_RDONLY | os.O_NOFOLLOW | os.O_NONBLOCK | getattr(os, "O_CLOEXEC", 0))
    except OSError:
        return None
    try:
        info = os.fstat(handle)
        if not stat.S_ISREG(info.st_mode) or info.st_size > limit:
            return None
        chunks, left = [], info.st_size + 1  # one byte more: a file that grew is refused
        while left > 0:
            chunk = os.read(handle, min(left, 1 << 20))
            if not chunk:
                break
            chunks.append(chunk)
            left -= len(chunk)
        data = b"".join(chunks)
        return data if len(data) <= limit else None
    except OSError:
        return None
    finally:
        os.close(handle)


def discard(path: Path) -> None:
    """Remove a refused entry (a file or a link; a folder is left alone and simply never read)."""
    try:
        if not stat.S_ISDIR(os.lstat(path).st_mode):
            os.unlink(path)
    except OSError:
        pass


def write_bytes_atomically(path: Path, data: bytes) -> None:
    """Write a file whole or not at all. Whatever stands in the way (a folder in its place) simply means
    the entry is not kept: the cache only ever saves work."""
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        handle, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-")
    except OSError:
        return
    try:
        with os.fdopen(handle, "wb") as out:
            out.write(data)
        os.replace(tmp, path)
    except OSError:
        Path(tmp).unlink(missing_ok=True)
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
