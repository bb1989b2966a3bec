"""The key of a whole published site: everything its bytes depend on, hashed.

A build whose key equals the one recorded in the published site's marker file would write exactly the
same files (builds are reproducible), so it leaves the site as it is. The key covers every file under the
data folder (hidden ones such as .git aside), the tool's own code, data and templates, the versions of
Python and of the libraries that shape the output, the as-of date, the build information shown in the
footer, the compared build's record and the naive flag.
"""
from __future__ import annotations

import functools
import sys
from datetime import date
from importlib import metadata
from pathlib import Path

from registry.diskcache import key_of

PACKAGE_DIR = Path(__file__).resolve().parent
TEMPLATE_DIR = PACKAGE_DIR.parent / "site_templates"


def _files_under(folder: Path) -> list[Path]:
    """Regular files under `folder`, sorted, skipping anything inside a hidden folder or hidden itself."""
    found = []
    for path in folder.rglob("*"):
        relative = path.relative_to(folder).parts
        if any(part.startswith(".") or part == "__pycache__" for part in relative):
            continue
        if path.is_file():
            found.append(path)
    return sorted(found)


def _content_parts(folder: Path) -> list[str | bytes]:
    parts: list[str | bytes] = []
    for path in _files_under(folder):
        parts += [path.relative_to(folder).as_posix(), path.read_bytes()]
    return parts


LIBRARIES = ("jinja2", "markdown", "matplotlib", "nh3", "numpy", "pyyaml", "scipy", "jsonschema")
"""Libraries whose version can change what a page or plot looks like."""


def _library_versions() -> list[str]:
    versions = [sys.version]
    for name in LIBRARIES:
        try:
            versions.append(f"{name} {metadata.version(name)}")
        except metadata.PackageNotFoundError:
            versions.append(f"{name} absent")
    return versions


@functools.lru_cache(maxsize=1)
def code_key() -> str:
    """Key of the tool itself: its modules, schemas, shipped data and the site templates, the Python
    version and the versions of the libraries that shape the output."""
    return key_of(*_library_versions(), *_content_parts(PACKAGE_DIR), *_content_parts(TEMPLATE_DIR))


def site_key(data_dir: Path, as_of: date, build_info: object, baseline_text: str, naive: bool) -> str:
    """Key of the site a build of `data_dir` would publish. `build_info` is shown in every footer (its
    repr is hashed); `baseline_text` is the compared build's record as JSON text, "" without one."""
    return key_of(code_key(), str(Path(data_dir).resolve()), as_of.isoformat(), repr(build_info),
                  baseline_text, "naive" if naive else "", *_content_parts(Path(data_dir)))
