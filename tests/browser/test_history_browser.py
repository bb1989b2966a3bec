"""The aircraft page's register history in a browser, without JavaScript: the demo's scripted history
(`build.py demo-history`, invented data) built into a site, QX-TJB's SAT feeder first RG-58 then TCX-LL7.
Screenshots go to /tmp/shots/history/ to be looked at. History semantics: common practice, no source."""
from __future__ import annotations

from pathlib import Path

import pytest

from registry import demo_history, pipeline

DEMO = Path(__file__).resolve().parent.parent.parent / "fleet_data"
SHOTS = Path("/tmp/shots/history")


@pytest.fixture(scope="module")
def history_site(tmp_path_factory) -> Path:
    root = tmp_path_factory.mktemp("history")
    demo_history.make(DEMO, root / "registry")
    pipeline.build(root / "registry", root / "site", cache_dir=root / "cache")
    return root / "site"


@pytest.mark.parametrize("width", [1280, 390])
def test_the_timeline_reads_without_javascript(browser, history_site, width):
    context = browser.new_context(viewport={"width": width, "height": 900}, java_script_enabled=False)
    page = context.new_page()
    page.goto((history_site / "aircraft" / "qx-tjb.html").as_uri())
    table = page.locator("table.timeline")
    assert table.is_visible()
    rows = page.eval_on_selector_all("table.timeline tbody tr", "rows => rows.map(r => r.innerText)")
    sat = [row for row in rows if "TCA-1600-SAT" in row]
    assert len(sat) == 2 and "RG-58" in sat[0] and "2026-09-14" in sat[0] and "2026-09-21" in sat[0]
    assert "TCX-LL7" in sat[1] and "fitted still" in sat[1]
    assert any("ADF1" in row and "(removed)" in row for row in rows)
    assert "--on YYYY-MM-DD" in page.inner_text("#history ~ p.meta, #history + p")
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.locator("#history").scroll_into_view_if_needed()
    page.screenshot(path=str(SHOTS / f"qx-tjb-{width}.png"), full_page=True)
    widths = page.evaluate("() => [document.documentElement.scrollWidth, document.documentElement.clientWidth]")
    assert widths[0] <= widths[1]
    context.close()
