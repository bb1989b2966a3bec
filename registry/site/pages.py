"""Page descriptions and the one place that turns them into files.

Page functions return what a page is (`Page`: path, template, context), what a file holds (`File`) and
which plot a page shows (`Plot`, drawn through the plot store); `Renderer` makes the files from them.
"""
from __future__ import annotations

from collections.abc import Callable, Iterable
from typing import Any, NamedTuple

import jinja2

from registry.site import plots
from registry.site.paths import root_of


class Page(NamedTuple):
    """One HTML page: where it goes, its template, and what the template is given."""

    path: str
    template: str
    context: dict[str, Any]


class File(NamedTuple):
    """A file whose content is already made (an export, the search index, a plot drawn for a page)."""

    path: str
    content: str | bytes


class Plot(NamedTuple):
    """A plot a page shows, drawn (or read back) through the plot store when rendered."""

    path: str
    kind: str
    key: str
    draw: Callable[[], plots.Drawn]


Output = Page | File | Plot


def page(path: str, template: str, nav: str, title: str, crumbs: list[tuple[str, str | None]],
         **context: Any) -> Page:
    """A page with its navigation entry, title and breadcrumbs; no change marks unless given."""
    context.setdefault("change_marks", ())
    return Page(path, template, {"nav": nav, "page_title": title, "crumbs": crumbs, **context})


class Renderer:
    """Renders pages with one Jinja environment and the context every page shares; draws each plot
    once per content in this process (plots are named by content, so two processes that both write one
    write the same bytes)."""

    def __init__(self, env: jinja2.Environment, shared: dict[str, Any], store: plots.PlotStore):
        self.env = env
        self.shared = shared
        self.store = store
        self.drawn: set[str] = set()

    def __call__(self, outputs: Iterable[Output]) -> dict[str, str | bytes]:
        files: dict[str, str | bytes] = {}
        for output in outputs:
            if isinstance(output, Page):
                files[output.path] = self.env.get_template(output.template).render(
                    root=root_of(output.path), **self.shared, **output.context)
            elif isinstance(output, Plot):
                if output.path not in self.drawn or self.store.naive:
                    files[output.path] = self.store.get(output.kind, output.key, output.draw).svg
                    self.drawn.add(output.path)
            else:
                files[output.path] = output.content
        return files
