"""The interference page in a browser: it loads without errors, and a matrix cell opens its arithmetic
with JavaScript on and off (details/summary)."""
from __future__ import annotations


def test_interference_page_cell_opens_the_arithmetic(page, demo_site):
    p = page.page
    p.goto((demo_site / "aircraft" / "qx-tja.html").as_uri())
    p.get_by_role("link", name="Interference between its radios").click()
    assert p.url.endswith("/aircraft/qx-tja/interference.html")
    cell = p.locator("details[data-tx='VHF3'][data-rx='GNSS1']")
    assert not cell.locator("table").first.is_visible()
    cell.locator("summary").click()
    margin_row = cell.locator("tr", has_text="Margin").first
    assert margin_row.is_visible() and "dB" in margin_row.inner_text()
    assert p.locator("svg.cosite-chart").is_visible()
    assert page.errors == []


def test_interference_page_reads_without_javascript(browser, demo_site):
    context = browser.new_context(java_script_enabled=False)
    p = context.new_page()
    p.goto((demo_site / "aircraft" / "qx-tja" / "interference.html").as_uri())
    cell = p.locator("details[data-tx='VHF3'][data-rx='GNSS1']")
    cell.locator("summary").click()
    assert cell.locator("tr", has_text="Protection threshold").first.is_visible()
    assert p.locator("svg.cosite-chart rect").count() > 0
    context.close()


def test_intermod_margin_opens_its_arithmetic_without_javascript(browser, demo_site):
    """The worst intermodulation product's margin opens its figures and the written-out arithmetic with
    scripts off; the not-analysed receivers are listed in plain HTML."""
    context = browser.new_context(java_script_enabled=False)
    p = context.new_page()
    p.goto((demo_site / "aircraft" / "qx-tja" / "interference.html").as_uri())
    first = p.locator("table.cosite-intermod details").first
    assert not first.locator("table").is_visible()
    first.locator("summary").click()
    assert first.locator("tr", has_text="Conversion loss").first.is_visible()
    assert "product = P_I − L_I + C_IG − L_G − L_conv" in first.inner_text()
    assert p.locator("#not-analysed + p + ul li", has_text="MKR").is_visible()
    context.close()
