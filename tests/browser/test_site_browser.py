"""The demo site in a real browser: navigation, images, filters, search, file:// and a sub-path server."""
from __future__ import annotations

import re
from pathlib import Path

import pytest


SHOTS = Path("/tmp/shots")


def images_ok(page) -> list[str]:
    """Every <img> that failed to load (naturalWidth 0), after waiting for all of them."""
    page.wait_for_load_state("load")
    return page.evaluate("""() => Array.from(document.images)
        .filter(img => !(img.complete && img.naturalWidth > 0)).map(img => img.getAttribute('src'))""")


def stylesheet_applied(page) -> bool:
    return page.evaluate("""() => getComputedStyle(document.querySelector('.site-head')).backgroundColor
        !== 'rgba(0, 0, 0, 0)'""")


def test_fleet_to_installation_through_the_drawing(page, demo_site):
    p = page.page
    p.goto((demo_site / "index.html").as_uri())
    assert stylesheet_applied(p)
    first = p.locator("table tbody th a").first
    registration = first.inner_text()
    first.click()
    p.wait_for_url(re.compile(r"/aircraft/[^/]+\.html$"))
    assert registration in p.locator("h1").inner_text()
    marker = p.locator("figure.drawing a.mark").first
    marker.scroll_into_view_if_needed()
    label = marker.get_attribute("aria-label")
    position = label.split(" · ")[0]
    marker.click()
    p.wait_for_url(re.compile(rf"/aircraft/[^/]+/{re.escape(position)}\.html$"))
    assert position in p.locator("h1").inner_text()
    assert images_ok(p) == []
    assert page.errors == []


def test_marker_tooltip_shows_on_keyboard_focus(page, demo_site, demo_fleet):
    p = page.page
    p.goto((demo_site / "aircraft" / f"{next(iter(demo_fleet.aircraft))}.html").as_uri())
    marker = p.locator("figure.drawing a.mark").first
    tip_id = "t-" + marker.get_attribute("id")[2:]
    assert p.evaluate(f"getComputedStyle(document.getElementById('{tip_id}')).visibility") == "hidden"
    p.locator("h1").click()
    for _ in range(200):  # tab until the first marker has focus: it must be reachable by keyboard
        p.keyboard.press("Tab")
        if p.evaluate("document.activeElement && document.activeElement.classList.contains('mark')"):
            break
    assert p.evaluate("document.activeElement.id") == marker.get_attribute("id")
    assert p.evaluate(f"getComputedStyle(document.getElementById('{tip_id}')).visibility") == "visible"
    SHOTS.mkdir(exist_ok=True)
    p.locator("figure.drawing").screenshot(path=str(SHOTS / "drawing-focus.png"))


PAGES = ["index.html", "services.html", "antennas.html", "cables.html", "audit.html", "methods.html", "search.html"]


def sample_pages(demo_site: Path) -> list[Path]:
    pages = [demo_site / name for name in PAGES]
    pages += sorted((demo_site / "aircraft").glob("*.html"))[:2]
    with_plots = [p for p in sorted((demo_site / "aircraft").glob("*/*.html"))
                  if 'class="plot"' in p.read_text(encoding="utf-8")]
    pages += with_plots[:4]
    pages += sorted((demo_site / "antennas").glob("*.html"))[:3] + sorted((demo_site / "cables").glob("*.html"))[:2]
    return pages


def test_pages_load_images_without_console_errors(page, demo_site):
    p = page.page
    SHOTS.mkdir(exist_ok=True)
    checked_images = 0
    for path in sample_pages(demo_site):
        p.goto(path.as_uri())
        assert images_ok(p) == [], path
        checked_images += p.evaluate("document.images.length")
        assert stylesheet_applied(p), path
        name = str(path.relative_to(demo_site)).replace("/", "_").replace(".html", "")
        p.screenshot(path=str(SHOTS / f"page-{name}.png"), full_page=True)
    assert checked_images > 5
    assert page.errors == []


def visible_rows(p):
    return p.evaluate("""() => Array.from(document.querySelectorAll('#audit-table tbody tr'))
        .filter(row => !row.hidden).map(row => ({id: row.id, severity: row.dataset.severity,
            aircraft: row.dataset.aircraft, state: row.dataset.state.split(' ')[0],
            service: row.dataset.service}))""")


def test_audit_filters_change_rows_and_counts(page, demo_site):
    p = page.page
    p.goto((demo_site / "audit.html").as_uri())
    everything = visible_rows(p)
    assert len(everything) > 3
    assert p.locator("output[data-count='shown']").inner_text() == str(len(everything))
    severities = sorted({row["severity"] for row in everything})
    assert len(severities) >= 2
    for severity in severities:
        p.select_option("#filter-severity", severity)
        rows = visible_rows(p)
        expected = [row for row in everything if row["severity"] == severity]
        assert [row["id"] for row in rows] == [row["id"] for row in expected]
        assert p.locator("output[data-count='shown']").inner_text() == str(len(expected))
        assert p.locator(f"output[data-count-severity='{severity}']").inner_text() == str(len(expected))
        for other in severities:
            if other != severity:
                assert p.locator(f"output[data-count-severity='{other}']").inner_text() == "0"
        assert "#severity=" + severity in p.url
    # two filters at once: severity and aircraft
    severity = severities[0]
    aircraft = next(row["aircraft"] for row in everything if row["severity"] == severity)
    p.select_option("#filter-severity", severity)
    p.select_option("#filter-aircraft", aircraft)
    expected = [r["id"] for r in everything if r["severity"] == severity and r["aircraft"] == aircraft]
    assert [row["id"] for row in visible_rows(p)] == expected
    # a service filter keeps pair findings of either installation
    service = everything[0]["service"].split()[0]
    p.click("button[type=reset]")
    p.select_option("#filter-service", service)
    assert [r["id"] for r in visible_rows(p)] == [r["id"] for r in everything if service in r["service"].split()]
    # a filter that matches nothing shows the empty note
    p.click("button[type=reset]")
    p.select_option("#filter-state", "no-fault")
    if not any(r["state"] == "no-fault" for r in everything):
        assert visible_rows(p) == []
        assert p.locator("[data-empty-for='audit-table']").is_visible()
    p.click("button[type=reset]")
    assert len(visible_rows(p)) == len(everything)
    assert page.errors == []


def test_audit_filter_from_link_hash_and_sorting(page, demo_site):
    p = page.page
    p.goto((demo_site / "audit.html").as_uri())
    everything = visible_rows(p)
    aircraft = everything[-1]["aircraft"]
    p.goto((demo_site / "audit.html").as_uri() + f"#aircraft={aircraft}")
    p.reload()
    assert {r["aircraft"] for r in visible_rows(p)} == {aircraft}
    p.click("button[type=reset]")
    header = p.locator("#audit-table thead th", has_text="Aircraft")
    header.locator("button").click()
    assert header.get_attribute("aria-sort") == "ascending"
    names = p.eval_on_selector_all("#audit-table tbody tr td:nth-child(3)", "cells => cells.map(c => c.innerText)")
    assert names == sorted(names, key=str.lower)
    header.locator("button").click()
    names = p.eval_on_selector_all("#audit-table tbody tr td:nth-child(3)", "cells => cells.map(c => c.innerText)")
    assert names == sorted(names, key=str.lower, reverse=True)


def note_word(fleet) -> tuple[str, str, str]:
    """A word that appears in exactly one installation's notes: (word, aircraft id, position)."""
    counts: dict[str, set[tuple[str, str]]] = {}
    for aircraft, installation in fleet.installations():
        for word in set(re.findall(r"[A-Za-z]{7,}", installation.notes)):
            counts.setdefault(word.lower(), set()).add((aircraft.id, installation.position))
    unique = sorted((word, *next(iter(where))) for word, where in counts.items() if len(where) == 1)
    if not unique:
        pytest.skip("the demo notes hold no word unique to one installation")
    return unique[0]


def search(p, demo_site: Path, query: str) -> list[str]:
    p.goto((demo_site / "search.html").as_uri())
    p.fill("#search-q", query)
    return p.eval_on_selector_all("#search-results li a", "links => links.map(a => a.getAttribute('href'))")


def test_search_finds_installation_by_position_and_by_note_word(page, demo_site, demo_fleet):
    p = page.page
    fleet = demo_fleet
    aircraft, installation = next(iter(fleet.installations()))
    hits = search(p, demo_site, installation.position)
    assert f"aircraft/{aircraft.id}/{installation.position}.html" in hits
    word, aircraft_id, position = note_word(fleet)
    hits = search(p, demo_site, word)
    assert hits[0] == f"aircraft/{aircraft_id}/{position}.html" or \
        f"aircraft/{aircraft_id}/{position}.html" in hits
    assert "<mark>" in p.inner_html("#search-results")
    # the header search box sends its query to the search page
    p.goto((demo_site / "index.html").as_uri())
    p.fill("#quick-q", installation.position)
    p.press("#quick-q", "Enter")
    p.wait_for_url(re.compile(r"search\.html\?q="))
    p.wait_for_selector("#search-results li")
    assert f"aircraft/{aircraft.id}/{installation.position}.html" in p.eval_on_selector_all(
        "#search-results li a", "links => links.map(a => a.getAttribute('href'))")
    # results are links that work
    p.click(f"#search-results a[href='aircraft/{aircraft.id}/{installation.position}.html']")
    p.wait_for_url(re.compile(rf"{re.escape(installation.position)}\.html$"))
    assert page.errors == []


def test_site_works_under_a_sub_path_of_a_web_server(page, sub_path_url):
    p = page.page
    response = p.goto(sub_path_url + "index.html")
    assert response.status == 200
    assert stylesheet_applied(p)
    p.locator("table tbody th a").first.click()
    p.wait_for_url(re.compile(r"/intranet/fleet/aircraft/[^/]+\.html$"))
    p.locator("figure.drawing a.mark").first.click()
    p.wait_for_url(re.compile(r"/intranet/fleet/aircraft/[^/]+/[^/]+\.html$"))
    assert images_ok(p) == []
    p.goto(sub_path_url + "audit.html")
    p.select_option("#filter-severity", "unserviceable")
    assert p.locator("output[data-count='shown']").inner_text().isdigit()
    download = p.request.get(sub_path_url + "audit/discrepancies.csv")
    assert download.ok and download.text().startswith("\ufeffid,severity")  # UTF-8 byte-order mark first
    assert page.errors == []


def test_pages_read_without_javascript(browser, demo_site):
    context = browser.new_context(java_script_enabled=False)
    p = context.new_page()
    p.goto((demo_site / "audit.html").as_uri())
    rows = p.locator("#audit-table tbody tr")
    assert rows.count() > 0 and rows.first.is_visible()
    assert not p.locator("form.filters").is_visible()  # filters need script: hidden without it
    p.goto((demo_site / "index.html").as_uri())
    p.locator("table tbody th a").first.click()
    assert p.locator("figure.drawing a.mark").first.is_visible()
    context.close()
