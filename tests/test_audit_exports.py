"""The audit worksheet's exports and registry pages.

CSV: RFC 4180 (Common Format and MIME Type for CSV Files), section 2: records end in CR LF; a field
holding a comma, a double quote, CR or LF is enclosed in double quotes, and a double quote inside it is
written twice. UTF-8 with a byte-order mark: the Unicode Standard, section 23.8 ("Specials", U+FEFF, its
UTF-8 form EF BB BF), which spreadsheets use to tell UTF-8 from a legacy code page. Python's csv module
(standard library) reads the files back as a reference reader. HTML escaping of registry text: the HTML
Living Standard's text serialisation (<, >, & written as character references).
"""
from __future__ import annotations

import csv
import io
import json
import re
import shutil
from pathlib import Path

import pytest

from registry import cli, pipeline
from registry.core.results import Discrepancy
from registry.output import findings_export
from registry.site.pages_registry import line_href, registry_page_path

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
HOSTILE = '<script>alert("x")</script><img src=x onerror=alert(1)> & </pre>'


class Craft:
    registration = "QX-TQA"
    installations = {}


class Fleet:
    data_dir = Path("/data/fleet")
    aircraft = {"qx-tqa": Craft()}


def finding(**changes) -> Discrepancy:
    fields = dict(id="qx-tqa/VHF1/feeder-loss", rule="feeder-loss", severity="query", aircraft="qx-tqa",
                  position="VHF1", value=3.4, limit=3.0, unit="dB", message="m", method="",
                  src="/data/fleet/aircraft/qx-tqa.yaml:36")
    fields.update(changes)
    return Discrepancy(**fields)


def test_csv_starts_with_the_utf8_byte_order_mark_and_keeps_ohm_and_section_signs():
    text = findings_export.as_csv(findings_export.rows(
        [finding(unit="Ω", method="Pozar, Microwave Engineering, 4th ed., §2.3")], Fleet()))
    data = text.encode("utf-8")
    assert data.startswith(b"\xef\xbb\xbf")
    row = next(csv.DictReader(io.StringIO(data.decode("utf-8-sig"))))
    assert row["unit"] == "Ω" and row["method"].endswith("§2.3")
    assert row["source"] == "aircraft/qx-tqa.yaml:36"  # relative to the data folder


def test_csv_quotes_as_rfc_4180_says():
    awkward = 'Feeder "A", aft bay\r\nsecond line'
    text = findings_export.as_csv(findings_export.rows([finding(message=awkward)], Fleet()))
    body = text[1:]
    assert body.count("\r\n") == 3  # header, record (the CR LF inside the quoted field), end of the record
    assert '"Feeder ""A"", aft bay\r\nsecond line"' in body
    rows = list(csv.reader(io.StringIO(body, newline="")))
    assert rows[1][findings_export.COLUMNS.index("message")] == awkward


def test_csv_keeps_full_precision_and_says_whether_a_finding_counts_as_open():
    row = next(csv.DictReader(io.StringIO(findings_export.as_csv(findings_export.rows(
        [finding(value=3.4123456789, review="action-raised", is_open=True)], Fleet()))[1:])))
    assert row["value"] == "3.4123456789" and row["counts_open"] == "yes" and row["review"] == "action-raised"


def test_registry_line_links_to_the_line_anchor_of_its_file_page(tmp_path):
    (tmp_path / "aircraft").mkdir()
    (tmp_path / "aircraft" / "qx-tqa.yaml").write_text("a: 1\n", encoding="utf-8")
    assert line_href("aircraft/qx-tqa.yaml:36", tmp_path) == "registry/aircraft/qx-tqa.yaml.html#L36"
    assert line_href("aircraft/missing.yaml:3", tmp_path) is None
    assert line_href("registry/data/policy.yaml:12", tmp_path) is None  # a shipped file has no page
    assert line_href("../outside.yaml:1", tmp_path) is None
    assert registry_page_path("aircraft/q x<1>.yaml") == "registry/aircraft/q_x_1_.yaml.html"


@pytest.fixture(scope="module")
def built(tmp_path_factory) -> tuple[Path, Path]:
    """The demo, with hostile text in a comment of one aircraft file, built to a site."""
    data = tmp_path_factory.mktemp("audit") / "data"
    shutil.copytree(DEMO, data)
    aircraft = data / "aircraft" / "qx-tce.yaml"
    aircraft.write_text(f"# {HOSTILE}\n" + aircraft.read_text(encoding="utf-8"), encoding="utf-8")
    out = data.parent / "site"
    pipeline.build(data, out, cache_dir=None, workers=1)
    return data, out


def test_registry_page_numbers_every_line_and_keeps_hostile_text_inert(built):
    data, site = built
    html = (site / "registry" / "aircraft" / "qx-tce.yaml.html").read_text(encoding="utf-8")
    lines = (data / "aircraft" / "qx-tce.yaml").read_text(encoding="utf-8").splitlines()
    assert len(re.findall(r'<span class="line" id="L\d+">', html)) == len(lines)
    assert "<script>alert" not in html and "<img src=x" not in html
    assert "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt;&lt;img src=x onerror=alert(1)&gt; &amp; &lt;/pre&gt;" in html
    line = re.search(r'<span class="line" id="L77"><a class="ln" href="#L77">77</a>(.*)', html).group(1)
    assert line.strip() == lines[76].strip()


def test_site_downloads_are_checks_exports(built, capsys):
    data, site = built
    assert cli.main(["check", str(data), "--format", "csv"]) == 1
    terminal_csv = capsys.readouterr().out
    assert (site / "audit" / "discrepancies.csv").read_bytes() == terminal_csv.encode("utf-8")
    assert cli.main(["check", str(data), "--format", "json"]) == 1
    terminal_json = json.loads(capsys.readouterr().out)
    site_json = json.loads((site / "audit" / "discrepancies.json").read_text(encoding="utf-8"))
    assert set(site_json.pop("build")) == {"revision", "time", "version"}
    assert site_json == terminal_json


def test_audit_page_lists_ids_review_dates_and_registry_links(built):
    _, site = built
    html = (site / "audit.html").read_text(encoding="utf-8")
    assert '<code class="fid-text">qx-tce/<wbr>MKR/<wbr>impedance-match</code>' in html  # breaks, copies whole
    assert '<time datetime="2026-11-20">2026-11-20</time>' in html
    row = html.split('data-id="qx-tce/MKR/impedance-match"', 1)[1].split("</tr>", 1)[0]
    assert 'href="registry/aircraft/qx-tce.yaml.html#L80"' in row  # one line lower: the comment added above
    assert "Action raised, fault still fitted: open" in row


def test_stale_review_is_listed_on_the_audit_page(tmp_path):
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    with (data / "reviews.yaml").open("a", encoding="utf-8") as reviews:
        reviews.write("  - discrepancy: qx-tca/VHF1/feeder-loss\n    state: accepted\n    reviewer: R. Marlow\n"
                      "    date: 2026-11-02\n")
    pipeline.build(data, tmp_path / "site", cache_dir=None, workers=1)
    html = (tmp_path / "site" / "audit.html").read_text(encoding="utf-8")
    stale = html.split('id="stale"', 1)[1]
    assert 'data-stale-id="qx-tca/VHF1/feeder-loss"' in stale and "R. Marlow" in stale and "2026-11-02" in stale
    assert 'href="registry/reviews.yaml.html#L' in stale
    document = json.loads((tmp_path / "site" / "audit" / "discrepancies.json").read_text(encoding="utf-8"))
    assert [entry["discrepancy"] for entry in document["stale_reviews"]] == ["qx-tca/VHF1/feeder-loss"]


def test_figure_registry_lines_link_to_their_line(built):
    data, site = built
    html = (site / "aircraft" / "qx-tce" / "MKR.html").read_text(encoding="utf-8")
    links = re.findall(r'<td class="src"><a href="\.\./\.\./registry/aircraft/qx-tce\.yaml\.html#L(\d+)">'
                       r'aircraft/qx-tce\.yaml:(\d+)</a></td>', html)
    assert len(links) > 5 and all(anchor == line for anchor, line in links)
    lines = (data / "aircraft" / "qx-tce.yaml").read_text(encoding="utf-8").splitlines()
    assert any("cable: RG-59" in lines[int(line) - 1] for line, _ in links)


def test_action_raised_finding_shows_open_on_the_drawing_and_the_fleet_overview(built):
    # the demo's action-raised review on QX-TCE's marker beacon: the 75 Ω cable is still fitted
    _, site = built
    aircraft = (site / "aircraft" / "qx-tce.html").read_text(encoding="utf-8")
    assert re.search(r'class="mark st-unserviceable[^"]*" href="\.\./aircraft/qx-tce/MKR\.html"', aircraft)
    installation = (site / "aircraft" / "qx-tce" / "MKR.html").read_text(encoding="utf-8")
    assert '<span class="sev sev-unserviceable">' in installation.split('id="findings"', 1)[0]
    record = json.loads((site / "record.json").read_text(encoding="utf-8"))
    assert record["discrepancies"]["qx-tce/MKR/impedance-match"]["is_open"] is True
