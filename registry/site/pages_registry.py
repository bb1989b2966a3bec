"""The registry files as pages: one HTML page per YAML file of the data folder, every line numbered and
anchored (`#L<line>`), so a finding's or a figure's registry line links to the line itself.

The text is shown as it is, escaped by the template (autoescape): whatever a registry file holds stays
inert text on the page. Shipped files (the tool's own `registry/data/...`) are not shown.
"""
from __future__ import annotations

import functools
import re
from pathlib import Path

from typing import TYPE_CHECKING

from markupsafe import Markup, escape

from registry.load.fleet import REGISTRY_FILES, REGISTRY_FOLDERS
from registry.site.pages import Output, page

if TYPE_CHECKING:  # context.py links figures' registry lines through `line_href`
    from registry.site.context import SiteData

MAX_FILE_BYTES = 4 * 1024 * 1024
"""A registry file larger than this is not shown (the loader refuses far smaller ones)."""

LINE_SRC = re.compile(r"^(?P<path>[^:]+\.ya?ml):(?P<line>\d+)$")


def registry_page_path(relative: str) -> str:
    """Where the page of a registry file (given relative to the data folder) lives: under `registry/`."""
    safe = "/".join(re.sub(r"[^A-Za-z0-9._-]", "_", part) for part in relative.split("/") if part not in ("", ".", ".."))
    return f"registry/{safe}.html"


@functools.lru_cache(maxsize=65536)
def line_href(src_text: str, data_dir: Path) -> str | None:
    """The link of a registry line ("aircraft/qx-tce.yaml:76", relative to the data folder), or None when
    it names no YAML file of the data folder (a shipped file, a sweep file, no line). Kept per line in a
    process: a page shows dozens of figures from the same lines, and a build does not change its data."""
    match = LINE_SRC.match(src_text or "")
    if not match:
        return None
    if not is_registry_file(match["path"], Path(data_dir)):
        return None
    return f"{registry_page_path(match['path'])}#L{match['line']}"


def forget() -> None:
    """Drop what `line_href` and `is_registry_file` kept: a new build may see other files (`serve`)."""
    line_href.cache_clear()
    is_registry_file.cache_clear()




def registry_files(data_dir: Path) -> list[str]:
    """Every registry file of the data folder the loader reads, relative, sorted; links are not followed."""
    root = Path(data_dir)
    found = [name for name in REGISTRY_FILES if (root / name).is_file() and not (root / name).is_symlink()]
    for folder in REGISTRY_FOLDERS:
        if (root / folder).is_dir():
            found += [f"{folder}/{path.name}" for path in (root / folder).glob("*.yaml")
                      if path.is_file() and not path.is_symlink()]
    return sorted(found)


@functools.lru_cache(maxsize=4096)
def is_registry_file(relative: str, data_dir: Path) -> bool:
    """`relative` is one of `registry_files(data_dir)`."""
    parts = relative.split("/")
    shaped = (len(parts) == 1 and relative in REGISTRY_FILES) or \
        (len(parts) == 2 and parts[0] in REGISTRY_FOLDERS and parts[1].endswith(".yaml"))
    path = Path(data_dir) / relative
    return shaped and path.is_file() and not path.is_symlink()


def file_lines(path: Path) -> list[str] | None:
    """A file's lines as text (undecodable bytes shown as U+FFFD), or None if it is too large to show."""
    if path.stat().st_size > MAX_FILE_BYTES:
        return None
    return path.read_bytes().decode("utf-8", errors="replace").splitlines()


def registry_pages(data: "SiteData") -> list[Output]:
    """A page for every YAML file of the data folder but the aircraft files (each is rendered with its
    aircraft's pages, `aircraft_registry_page`, and reused with them when unchanged)."""
    data_dir = Path(data.fleet.data_dir)
    return [registry_page(data_dir, relative) for relative in registry_files(data_dir)
            if not relative.startswith("aircraft/")]


def aircraft_registry_page(data: "SiteData", aircraft) -> Output | None:
    """The page of the aircraft's own registry file, or None when it is not one of the data folder's."""
    data_dir = Path(data.fleet.data_dir)
    relative = data.src_text(str(aircraft.src.path))
    return registry_page(data_dir, relative) if is_registry_file(relative, data_dir) else None


def registry_page(data_dir: Path, relative: str) -> Output:
    """One registry file's page: its lines numbered and anchored, the text escaped."""
    lines = file_lines(data_dir / relative)
    return page(registry_page_path(relative), "registry_file.html", "audit", relative,
                [("Audit", "audit.html"), (relative, None)], file=relative,
                source=source_html(lines or []), too_large=lines is None)


def source_html(lines: list[str]) -> Markup:
    """The lines as the page's source listing; each line's text escaped (markupsafe's escape, in C: a
    thousand aircraft files are 600,000 lines, and `Markup.format` took ten times as long)."""
    return Markup("".join([f'<span class="line" id="L{number}"><a class="ln" href="#L{number}">{number}</a>'
                           f'{escape(text)}\n</span>' for number, text in enumerate(lines, start=1)]))
