"""Keys: the SHA-256 names under which the build keeps and finds what it made.

Every cached result, drawn plot and published site is named by a key of its inputs. `key_of` includes
the tool itself (`code_key`), so new code or any changed input simply misses. The short keys
(`repr_key`, `array_key`, `text_key`) name content inside one build (a pattern, a plot, a file name)
and are stable across runs.
"""
from __future__ import annotations

import functools
import hashlib
import sys
from importlib import metadata
from pathlib import Path


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


def repr_key(*parts: object) -> str:
    """16 hex digits of the SHA-256 of the parts' repr (floats repr exactly: equal content, equal key).
    Names a physics result (pattern, impedance) by its kind, geometry and frequency."""
    return hashlib.sha256(repr(parts).encode()).hexdigest()[:16]


def array_key(*parts: object) -> str:
    """20 hex digits naming plot inputs: numpy arrays by their bytes, anything else by repr."""
    import numpy as np  # here, not at the top: a build that finds its site up to date never loads numpy
    digest = hashlib.sha256()
    for part in parts:
        if isinstance(part, np.ndarray):
            digest.update(np.ascontiguousarray(part, dtype=float).tobytes())
        else:
            digest.update(repr(part).encode())
        digest.update(b"|")
    return digest.hexdigest()[:20]


def line_digest(data: bytes) -> bytes:
    """32 bytes naming a piece of text (SHA-256): two records' lines compared without holding them.
    SHA-256 rather than BLAKE2b: on this project's machines (SHA extensions) it hashes a 200 MB record
    in 0.11 s against 0.22 s."""
    return hashlib.sha256(data).digest()


def text_key(text: str, digits: int = 12) -> str:
    """The first `digits` hex digits of the SHA-256 of `text` (UTF-8): a file-name suffix."""
    return hashlib.sha256(text.encode()).hexdigest()[:digits]
