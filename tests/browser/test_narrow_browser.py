"""Phone width: the fleet, an aircraft and an installation page at 390 CSS pixels (a common phone's width,
common practice, no source) have no horizontal overflow: document.documentElement.scrollWidth is at most
its clientWidth. Tables and the airframe drawing may scroll inside their own wrapper, never the page.
Screenshots go to /tmp/shots/narrow/ to be looked at. The one shape code is checked on the same pages: a
badge's shape and the drawing's marker for one status are the same."""
from __future__ import annotations

from pathlib import Path

import pytest

SHOTS = Path("/tmp/shots/narrow")
PAGES = [("fleet", "index.html"), ("aircraft", "aircraft/qx-tja.html"), ("installation", "aircraft/qx-tja/VHF2.html"),
         ("audit", "audit.html"), ("methods", "methods.html")]


@pytest.fixture
def phone(browser):
    context = browser.new_context(viewport={"width": 390, "height": 844}, device_scale_factor=1)
    page = context.new_page()
    errors: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    yield page, errors
    context.close()


@pytest.mark.parametrize("name, path", PAGES)
def test_no_horizontal_overflow_at_390_px(phone, sub_path_url, name, path):
    page, errors = phone
    page.goto(sub_path_url + path)
    widths = page.evaluate("() => [document.documentElement.scrollWidth, document.documentElement.clientWidth]")
    SHOTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(SHOTS / f"{name}-390.png"), full_page=True)
    assert widths[1] == 390
    assert widths[0] <= widths[1], f"{path}: the page is {widths[0]} px wide in a {widths[1]} px window"
    offenders = page.evaluate("""() => Array.from(document.querySelectorAll('body *')).filter(el => {
        const box = el.getBoundingClientRect();
        if (box.width === 0 || box.right <= document.documentElement.clientWidth + 0.5) return false;
        for (let up = el.parentElement; up; up = up.parentElement) {   // inside a scrolling wrapper: fine
            const style = getComputedStyle(up);
            if (style.overflowX === 'auto' || style.overflowX === 'scroll' || style.position === 'absolute') return false;
        }
        return getComputedStyle(el).position !== 'absolute';
    }).map(el => el.tagName + '.' + el.className).slice(0, 5)""")
    assert offenders == [], f"{path}: sticks out of the page: {offenders}"
    assert errors == []


def test_findings_read_as_cards_on_a_phone(phone, sub_path_url):
    """At 390 px each finding of the installation page is one block whose cells name their column."""
    page, _ = phone
    page.goto(sub_path_url + "aircraft/qx-tja/VHF2.html")
    row = page.locator("table.discrepancies tbody tr").first
    assert row.evaluate("el => getComputedStyle(el).display") == "block"
    label = row.locator("td[data-label='Limit']").evaluate("el => getComputedStyle(el, '::before').content")
    assert "Limit" in label
    box = row.bounding_box()
    assert box["x"] >= 0 and box["x"] + box["width"] <= 390


def test_badge_and_marker_share_one_shape_and_colour(phone, sub_path_url):
    """The aircraft page's status badge and the drawing's marker for an unserviceable antenna: a diamond (◆)
    in both, in one colour."""
    page, _ = phone
    page.set_viewport_size({"width": 1280, "height": 900})
    page.goto(sub_path_url + "aircraft/qx-tja.html")
    badge = page.locator(".sev.sev-unserviceable").first
    glyph = badge.evaluate("el => getComputedStyle(el, '::before').content")
    assert glyph == '"◆"'
    marker = page.locator(".drawing .mark.st-unserviceable .shape").first
    d = marker.get_attribute("d")
    assert d.count("L") == 3 and d.endswith("Z")  # four corners: the diamond drawing.py draws
    assert badge.evaluate("el => getComputedStyle(el).color") == marker.evaluate("el => getComputedStyle(el).fill")
    clear_glyph = page.locator(".sev.sev-clear").first.evaluate("el => getComputedStyle(el, '::before').content")
    assert clear_glyph == '"✓"'
    clear_marker = page.locator(".drawing .mark.st-clear .shape").first.get_attribute("d")
    assert clear_marker.count("L") == 5  # the six-cornered tick, not the square it used to be
