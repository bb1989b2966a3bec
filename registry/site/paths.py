"""Where each thing of the site lives: page and plot paths relative to the site root, and anchors.

Links are relative (each page gets a `root` prefix for its depth), so the site works from file://, a
file share or any sub-path of a web server.
"""
from __future__ import annotations

import re
from functools import lru_cache

from registry.incremental import text_key


def safe_name(key: str) -> str:
    """A file name for a content key: the key itself when it is tame, else a slug with a digest."""
    if re.fullmatch(r"[A-Za-z0-9][A-Za-z0-9._-]{0,79}", key) and ".." not in key:
        return key
    slug = re.sub(r"[^A-Za-z0-9_-]+", "-", key).strip("-")[:48] or "key"
    return f"{slug}-{text_key(key)}"


@lru_cache(maxsize=8192)
def anchor(text: str) -> str:
    """An id for an HTML anchor: only letters, digits, "_" and "-" (remembered: pages ask for the same
    figure keys, positions and aircraft ids again and again)."""
    return re.sub(r"[^A-Za-z0-9_-]", "_", text.replace("/", "__").replace("+", "--"))


def aircraft_path(aircraft_id: str) -> str:
    return f"aircraft/{aircraft_id}.html"


def installation_path(aircraft_id: str, position: str) -> str:
    return f"aircraft/{aircraft_id}/{position}.html"


def antenna_path(model_id: str) -> str:
    return f"antennas/{model_id}.html"


def cable_path(cable_id: str) -> str:
    return f"cables/{cable_id}.html"


def service_anchor(service_id: str) -> str:
    """The id of a service's row on the services page."""
    return f"svc-{anchor(service_id)}"


def service_href(service_id: str) -> str:
    return f"services.html#{service_anchor(service_id)}"


SEARCH_PATHS = {"aircraft": aircraft_path, "installation": installation_path, "antenna": antenna_path,
                "cable": cable_path, "service": service_href}
"""Where the search index points for each kind of thing."""


def pattern_plot_path(key: str, model_id: str, named_after: str) -> str:
    """A pattern's plot as drawn for one antenna model. Models of the same content share the pattern
    but each plot carries its model's name, so a model other than the one the pattern is named after
    gets a file of its own."""
    name = key if model_id == named_after else f"{key}~{model_id}"
    return f"plots/pattern/{safe_name(name)}.svg"


def vswr_plot_path(key: str) -> str:
    """VSWR plots are shared by installations with the same curves, so they are named by content."""
    return f"plots/vswr/{key}.svg"


def cable_plot_path(cable_id: str) -> str:
    return f"plots/cable/{cable_id}.svg"


def root_of(path: str) -> str:
    """The relative prefix from a page back to the site root."""
    return "../" * path.count("/")
