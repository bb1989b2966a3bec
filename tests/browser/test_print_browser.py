"""The print view in a real browser (Debian's chromium, print media emulated): the printable report shows
its title block, made to repeat at the head of every printed page; collapsed sections print open; sort
arrows and the navigation do not print. Screenshots and a PDF of the print view go to /tmp/shots/print."""
from __future__ import annotations

from pathlib import Path

SHOTS = Path("/tmp/shots/print")


def printed(browser, url: str):
    context = browser.new_context(viewport={"width": 1100, "height": 1400})
    page = context.new_page()
    page.goto(url)
    page.emulate_media(media="print")
    return context, page


def test_the_aircraft_report_prints_with_its_title_block(browser, sub_path_url):
    SHOTS.mkdir(parents=True, exist_ok=True)
    context, page = printed(browser, sub_path_url + "reports/qx-tce.html")
    try:
        block = page.locator(".title-block")
        assert block.is_visible()
        text = block.inner_text()
        for expected in ("Operator", "Aircraft", "QX-TCE", "Data revision", "Build date", "Register as of"):
            assert expected.lower() in text.lower()  # the look sets the labels in capitals (CSS)
        # a table header group is what chromium repeats at the head of each printed page
        assert block.evaluate("el => getComputedStyle(el).display") == "table-header-group"
        assert page.locator(".report").evaluate("el => getComputedStyle(el).display") == "table"
        assert page.locator("dd.print-only").first.is_visible()
        assert not page.locator(".site-nav").is_visible() and not page.locator(".quick-search").is_visible()
        page.screenshot(path=str(SHOTS / "report-qx-tce-print.png"), full_page=True)
        assert_every_printed_page_is_headed(page, "report-qx-tce", "QX-TCE")
        page.emulate_media(media="screen")
        assert not page.locator("dd.print-only").first.is_visible()
        assert page.locator(".title-block").evaluate("el => getComputedStyle(el).display") != "table-header-group"
    finally:
        context.close()


def assert_every_printed_page_is_headed(page, name: str, subject: str) -> int:
    """Print `page` to PDF as chromium does, read each page's text back (pypdfium2) and check the title
    block heads it and its foot says "page x of y". Returns the page count."""
    import pypdfium2

    path = SHOTS / f"{name}.pdf"
    path.write_bytes(page.pdf(format="A4", print_background=True))
    document = pypdfium2.PdfDocument(str(path))
    count = len(document)
    for number in range(count):
        text = document[number].get_textpage().get_text_range()
        for expected in ("Operator", "Data revision", "Build date", subject, f"page {number + 1} of {count}"):
            assert expected.lower() in text.lower(), f"{name}.pdf page {number + 1}: no {expected!r}"
        document[number].render(scale=1.2).to_pil().save(str(SHOTS / f"{name}-page{number + 1}.png"))
    document.close()
    return count


def test_the_fleet_report_carries_its_title_block_on_every_printed_page(browser, sub_path_url):
    SHOTS.mkdir(parents=True, exist_ok=True)
    context, page = printed(browser, sub_path_url + "report.html")
    try:
        pages = assert_every_printed_page_is_headed(page, "report-fleet", "Tern Coast Airlink")
        assert pages > page.locator(".report-aircraft").count()  # each aircraft starts a page of its own
    finally:
        context.close()


def test_collapsed_sections_print_open_and_sort_arrows_do_not_print(browser, sub_path_url):
    SHOTS.mkdir(parents=True, exist_ok=True)
    context, page = printed(browser, sub_path_url + "aircraft/qx-tjb/VHF1.html")
    try:
        closed = page.locator("details.pair:not([open])")
        assert closed.count() > 0
        inside = closed.first.locator(":scope > :not(summary)").first
        assert inside.is_visible()  # printed open, though the section is collapsed
        page.screenshot(path=str(SHOTS / "installation-qx-tjb-vhf1-print.png"), full_page=True)
        page.emulate_media(media="screen")
        assert not inside.is_visible()  # on screen it stays collapsed
    finally:
        context.close()
    context, page = printed(browser, sub_path_url + "index.html")
    try:
        button = page.locator("th button.sort").first
        assert button.count() == 1
        assert button.evaluate("el => getComputedStyle(el, '::after').content") in ("none", "normal")
        page.emulate_media(media="screen")
        assert button.evaluate("el => getComputedStyle(el, '::after').content") not in ("none", "normal")
    finally:
        context.close()
