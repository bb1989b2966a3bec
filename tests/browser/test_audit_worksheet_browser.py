"""The audit worksheet in a real browser: the filters drive the downloads, the copy control copies the
finding id, a registry-line link lands on its line. CSV read back with Python's csv module (RFC 4180)."""
from __future__ import annotations

import csv
import io
import json
import re
from pathlib import Path

import pytest

SHOTS = Path("/tmp/shots/audit")
MKR = "qx-tce/MKR/impedance-match"


@pytest.fixture
def worksheet(browser, sub_path_url):
    """The audit page served over http (a secure context for the clipboard), clipboard access granted."""
    context = browser.new_context(viewport={"width": 1400, "height": 1000}, accept_downloads=True,
                                  permissions=["clipboard-read", "clipboard-write"])
    page = context.new_page()
    errors: list[str] = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.on("console", lambda msg: errors.append(msg.text) if msg.type == "error" else None)
    page.goto(sub_path_url + "audit.html")
    yield page, errors
    context.close()


def download(page, kind: str) -> str:
    with page.expect_download() as info:
        page.locator(f"a[data-download='{kind}']").click()
    return Path(info.value.path()).read_bytes().decode("utf-8")


def visible_ids(page) -> list[str]:
    return page.evaluate("""() => Array.from(document.querySelectorAll('#audit-table tbody tr'))
        .filter(row => !row.hidden).map(row => row.getAttribute('data-id'))""")


def test_audit_filters_drive_the_downloads(worksheet):
    page, errors = worksheet
    everything = download(page, "csv")
    assert everything.startswith("\ufeffid,severity,counts_open,")
    all_ids = [row["id"] for row in csv.DictReader(io.StringIO(everything[1:], newline=""))]
    assert all_ids == visible_ids(page) and len(all_ids) > 3
    page.select_option("#filter-aircraft", "qx-tce")
    shown = visible_ids(page)
    assert MKR in shown and len(shown) < len(all_ids)
    assert page.locator("a[data-download='csv']").inner_text() == f"Download CSV ({len(shown)} findings)"
    filtered = download(page, "csv")
    assert filtered.startswith("\ufeff") and filtered.endswith("\r\n")
    rows = list(csv.DictReader(io.StringIO(filtered[1:], newline="")))
    assert [row["id"] for row in rows] == shown
    assert next(row for row in rows if row["id"] == MKR)["counts_open"] == "yes"
    # the rows are the page's own copy of the exporter's records: byte for byte those of the full CSV
    for line in filtered[1:].split("\r\n")[1:-1]:
        assert line + "\r\n" in everything
    document = json.loads(download(page, "json"))
    assert document["filters"] == {"aircraft": ["qx-tce"]}
    assert [item["id"] for item in document["discrepancies"]] == shown
    page.select_option("#filter-severity", "unserviceable")
    document = json.loads(download(page, "json"))
    assert [item["id"] for item in document["discrepancies"]] == [MKR] == visible_ids(page)
    page.locator("#audit-table").screenshot(path=str(SHOTS / "audit-filtered.png"))
    assert not errors


def test_copy_control_copies_the_finding_id(worksheet):
    page, errors = worksheet
    row = page.locator(f"tr[data-id='{MKR}']")
    button = row.locator("button.copy")
    assert button.is_visible()
    page.evaluate("navigator.clipboard.writeText('something else')")
    button.click()
    assert page.evaluate("navigator.clipboard.readText()") == MKR
    row.locator("td.fid").screenshot(path=str(SHOTS / "audit-copy.png"))
    assert not errors


def test_registry_line_link_lands_on_the_line(worksheet):
    page, errors = worksheet
    link = page.locator(f"tr[data-id='{MKR}'] td.src a")
    assert link.inner_text() == "aircraft/qx-tce.yaml:79"
    link.click()
    page.wait_for_url(re.compile(r"/registry/aircraft/qx-tce\.yaml\.html#L79$"))
    target = page.locator("#L79")
    assert page.evaluate("document.querySelector(':target').id") == "L79"
    assert target.inner_text().split() == ["79", "cable:", "RG-59"]
    box, height = target.bounding_box(), page.viewport_size["height"]
    assert 0 <= box["y"] < height  # scrolled into view
    page.screenshot(path=str(SHOTS / "registry-line.png"))
    assert not errors


def test_value_sort_keeps_each_unit_together(worksheet):
    page, _ = worksheet
    page.locator("#audit-table thead th", has_text="Value").locator("button").click()
    units = page.evaluate("""() => Array.from(document.querySelectorAll('#audit-table tbody tr'))
        .map(row => row.cells[5].getAttribute('data-unit'))""")
    runs = [unit for n, unit in enumerate(units) if n == 0 or unit != units[n - 1]]
    assert len(runs) == len(set(units))  # one run per unit: values of different units never interleave
    values = page.evaluate("""() => Array.from(document.querySelectorAll('#audit-table tbody tr'))
        .map(row => [row.cells[5].getAttribute('data-unit'), parseFloat(row.cells[5].getAttribute('data-value'))])""")
    for unit in set(units):
        mine = [value for name, value in values if name == unit and value == value]
        assert mine == sorted(mine), unit
