"""The built demo site as files: every internal link and image resolves, nothing is fetched from outside,
and a second build gives the same bytes."""
from __future__ import annotations

import re
from html.parser import HTMLParser
from pathlib import Path
from urllib.parse import unquote, urlsplit

from registry import pipeline


class Links(HTMLParser):
    """Collects every href/src and every id of one page (and the ids written more than once)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.refs: list[tuple[str, str]] = []
        self.ids: set[str] = set()
        self.repeated: set[str] = set()

    def handle_starttag(self, tag, attrs):
        for name, value in attrs:
            if name == "id" and value:
                if value in self.ids:
                    self.repeated.add(value)
                self.ids.add(value)
            if name in ("href", "src") and value is not None and not (tag == "form"):
                self.refs.append((tag, value))


def parse(path: Path) -> Links:
    parser = Links()
    parser.feed(path.read_text(encoding="utf-8"))
    return parser


def test_no_broken_internal_link_anywhere(demo_site):
    pages = sorted(demo_site.rglob("*.html"))
    assert len(pages) > 20
    parsed = {page: parse(page) for page in pages}
    broken, external_resources, checked = [], [], 0
    for page, links in parsed.items():
        for tag, ref in links.refs:
            parts = urlsplit(ref)
            if parts.scheme in ("http", "https", "mailto"):
                if tag in ("img", "script", "link"):
                    external_resources.append(f"{page.relative_to(demo_site)}: {ref}")
                continue
            assert not parts.scheme and not parts.netloc and not ref.startswith("/"), f"{page}: {ref} is not relative"
            target = (page.parent / unquote(parts.path)).resolve() if parts.path else page
            checked += 1
            if not target.is_file() or demo_site.resolve() not in target.parents:
                broken.append(f"{page.relative_to(demo_site)}: {ref}")
            elif parts.fragment and target.suffix == ".html":
                ids = parsed.get(target, None) or parse(target)
                if unquote(parts.fragment) not in ids.ids and "=" not in parts.fragment:
                    broken.append(f"{page.relative_to(demo_site)}: {ref} (no such anchor)")
    assert checked > 500
    assert broken == []
    assert external_resources == []


def test_every_id_is_written_once_on_its_page(demo_site):
    """HTML Living Standard, "The id attribute" (#the-id-attribute): the value "must be unique amongst all
    the IDs in the element's tree" (a link to a repeated one lands on the first). Pages that show several figure tables of the same keys (one per
    pair of antennas, one per pattern of an antenna model) give each table's rows their own prefix."""
    repeated = {str(page.relative_to(demo_site)): sorted(parse(page).repeated)[:3]
                for page in sorted(demo_site.rglob("*.html"))}
    assert {page: ids for page, ids in repeated.items() if ids} == {}


def test_every_installation_has_a_page_and_a_drawing_marker(demo_site, demo_fleet):
    fleet = demo_fleet
    for aircraft, installation in fleet.installations():
        page = demo_site / "aircraft" / aircraft.id / f"{installation.position}.html"
        assert page.is_file(), page
        drawing = (demo_site / "aircraft" / f"{aircraft.id}.html").read_text(encoding="utf-8")
        # a marker in each of the plan and side views
        href = f'href="../aircraft/{aircraft.id}/{installation.position}.html"'
        assert len(re.findall(r'<a id="m-[^"]+" class="mark[^"]*" ' + re.escape(href), drawing)) == 2


def test_second_build_is_byte_identical(demo_site, demo_data, tmp_path):
    again = pipeline.build(demo_data, tmp_path / "again").out_dir
    first = sorted(p.relative_to(demo_site) for p in demo_site.rglob("*") if p.is_file())
    second = sorted(p.relative_to(again) for p in again.rglob("*") if p.is_file())
    assert first == second
    for rel in first:
        assert (demo_site / rel).read_bytes() == (again / rel).read_bytes(), rel


def test_downloads_and_search_index_are_written(demo_site):
    assert (demo_site / "audit" / "discrepancies.csv").read_text(encoding="utf-8").startswith("\ufeffid,severity,")
    assert (demo_site / "audit" / "discrepancies.json").is_file()
    index = (demo_site / "static" / "search-index.js").read_text(encoding="utf-8")
    assert index.startswith("window.AERIALBOOK_SEARCH = [")


def test_a_pattern_shared_by_two_models_is_shown_under_each_models_name(demo_site, demo_fleet):
    # Two catalogue models of the same geometry share one computed pattern; each page's plot and its
    # alt text must still name the model installed there (common practice, no source).
    checked = 0
    for aircraft, installation in demo_fleet.installations():
        page = (demo_site / "aircraft" / aircraft.id / f"{installation.position}.html").read_text(encoding="utf-8")
        found = re.search(r'<img class="plot" src="\.\./\.\./(plots/pattern/[^"]+)" alt="([^"]*)"', page)
        if not found:
            continue
        assert f"antenna model {installation.antenna} at" in found.group(2), (aircraft.id, installation.position)
        assert f"{installation.antenna} at" in (demo_site / found.group(1)).read_text(encoding="utf-8")
        checked += 1
    assert checked > 100
