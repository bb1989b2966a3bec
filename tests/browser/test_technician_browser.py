"""The technician's side of the site in a browser: searching a connector type, the "Before a job" card and a
shared antenna's splitter in both feeder budgets (demo registry, invented data)."""
from __future__ import annotations

from pathlib import Path


def search(p, demo_site: Path, query: str) -> list[str]:
    p.goto((demo_site / "search.html").as_uri())
    p.fill("#search-q", query)
    return p.eval_on_selector_all("#search-results li a", "links => links.map(a => a.getAttribute('href'))")


def test_searching_tnc_lists_the_installations_with_tnc_connectors(page, demo_site, demo_fleet):
    hits = search(page.page, demo_site, "TNC")
    expected = {f"aircraft/{aircraft.id}/{inst.position}.html" for aircraft, inst in demo_fleet.installations()
                if any(end is not None and end.connector == "TNC"
                       for end in (inst.feeder.antenna_end, inst.feeder.radio_end))}
    assert expected and expected <= set(hits)
    assert page.errors == []


def test_card_and_splitter_on_the_shared_localizer(page, demo_site):
    p = page.page
    p.goto((demo_site / "aircraft" / "qx-tca" / "LOC.html").as_uri())
    card = p.inner_text("#before-a-job")
    assert "What to bring" in card and "Where it is" in card
    assert "uses the antenna of VOR (vor) through splitter TCS-2W-110" in card
    assert "TCR-4120-N, rack E1 shelf 3, left (nav 1, localizer input)" in card
    for position in ("LOC", "VOR"):
        p.goto((demo_site / "aircraft" / "qx-tca" / f"{position}.html").as_uri())
        parts = p.eval_on_selector_all("table.compact tbody th[scope=row]", "cells => cells.map(c => c.innerText)")
        assert any("Splitter loss" in part for part in parts), position
    assert page.errors == []
