"""Jinja environment and page contexts: one context builder per page kind."""
from __future__ import annotations

from pathlib import Path

import jinja2

from registry import __version__
from registry.model import Fleet

TEMPLATE_DIR = Path(__file__).resolve().parent.parent / "site_templates"


def environment() -> jinja2.Environment:
    """Autoescaping on, undefined variables fail loudly."""
    return jinja2.Environment(
        loader=jinja2.FileSystemLoader(TEMPLATE_DIR),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        keep_trailing_newline=True,
    )


def render_site(fleet: Fleet) -> dict[str, str | bytes]:
    """Every page of the site, keyed by its path relative to the site root."""
    env = environment()
    context = {"fleet": fleet, "version": __version__, "root": ""}
    return {"index.html": env.get_template("fleet.html").render(context)}
