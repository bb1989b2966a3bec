"""The fleet overview's modification tables in a real browser with JavaScript off: each modification's rows
(embodied, planned) are visible, and the disagreeing row's finding link lands on the finding on the aircraft
page. Screenshots in /tmp/shots/modifications/. (Planted problem #15, fleet_data/README.md.)"""
from __future__ import annotations

import re
from pathlib import Path

SHOTS = Path("/tmp/shots/modifications")


def test_modification_table_reads_without_javascript_and_links_to_the_finding(browser, demo_site):
    context = browser.new_context(viewport={"width": 1280, "height": 900}, java_script_enabled=False)
    page = context.new_page()
    try:
        page.goto((demo_site / "index.html").as_uri() + "#mod-MOD-2018-006")
        section = page.locator("section.modification", has=page.locator("#mod-MOD-2018-006"))
        assert section.is_visible()
        states = section.locator("tbody tr td .mod-state").all_inner_texts()
        assert states == ["embodied", "embodied", "embodied", "planned"]
        SHOTS.mkdir(parents=True, exist_ok=True)
        section.screenshot(path=str(SHOTS / "mod-2018-006.png"))
        section.locator("a", has_text="qx-tce/HF1/embodiment").click()
        page.wait_for_url(re.compile(r"/aircraft/qx-tce\.html#d-qx-tce__HF1__embodiment$"))
        row = page.locator("#d-qx-tce__HF1__embodiment")
        assert row.is_visible() and "MOD-2018-006" in row.inner_text()
        mods = page.locator("#modifications + table, #modifications ~ .table-wrap table").first
        assert "MOD-2018-006" in mods.inner_text()
    finally:
        context.close()
