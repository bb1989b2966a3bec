"""Numbers formatted by quantity (`registry/output/numbers.py`) on the terminal and the site, labels in
words, full precision kept in the record. The digits per unit are common practice, no source (the
module's table gives the reason for each); VSWR written as a ratio n.nn:1 is common practice, no source."""
from __future__ import annotations

import json
import math
import re

import pytest

from registry import cli
from registry.output.numbers import VSWR_KEYS, number_text
from registry.site.format import field_rows, fmt
from registry.site.labels import field_label

DEMO_DAY_EPOCH = "1796169600"  # 2026-12-02T00:00:00Z, the demo's "today" (fleet_data/README.md)


@pytest.mark.parametrize("value, unit, key, expected", [
    (1.0085, "dB", "", "1.01 dB"), (18.066, "dB", "", "18.1 dB"), (0.25028, "dB", "", "0.25 dB"),
    (0.004, "dB", "", "0.004 dB"), (7.4847, "m", "", "7.48 m"), (0.5452, "m", "", "0.545 m"),
    (56.131, "%", "", "56.1 %"), (-8.671, "%", "", "-8.7 %"), (1576.443, "MHz", "", "1576.443 MHz"),
    (127.5, "MHz", "", "127.5 MHz"), (75.0, "Ω", "", "75 Ω"), (815, "days", "", "815 days"),
    (2.7, "", "measured-vswr", "2.70:1"), (2, "", "measured-vswr", "2.00:1"), (2.524, "", "sweep.max_vswr", "2.52:1"),
    (float("nan"), "°", "", "n/a"), (float("nan"), "dB", "", "n/a"), (3.0, "dB", "", "3 dB"),
    (12.3456, "", "vswr.q", "12.35"),
])
def test_numbers_by_quantity(value, unit, key, expected):
    assert number_text(value, unit, key) == expected


def test_site_uses_the_same_rule_with_a_typeset_minus():
    assert fmt(-8.671, "%") == "−8.7 %" and fmt(2.7, "", "measured-vswr") == "2.70:1" and fmt(None, "dB") == "—"


@pytest.mark.parametrize("name, label, unit", [
    ("element_diameter_m", "Element diameter", "m"), ("element_length_m", "Element length", "m"),
    ("radius_m", "Radius", "m"), ("impedance_ohm", "Impedance", "Ω"), ("taper", "Taper", ""),
])
def test_field_names_become_words(name, label, unit):
    assert field_label(name) == (label, unit)


def test_geometry_rows_keep_registry_values_as_typed():
    assert field_rows({"element_diameter_m": 0.012, "element_length_m": 1.8937}) == [
        ("Element diameter", "0.012 m", "element_diameter_m"), ("Element length", "1.8937 m", "element_length_m")]


def test_terminal_report_formats_by_quantity_and_says_what_value_seen_to_record(capsys, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", DEMO_DAY_EPOCH)
    cli.main(["check", "fleet_data", "--aircraft", "QX-TJA", "--aircraft", "QX-TCE"])
    out = capsys.readouterr().out
    assert "value 2.52:1, limit 2.00:1 (value_seen: 2.524)" in out
    assert "value 18.1 dB, limit 20 dB (value_seen: 18.066)" in out
    assert "value 75 Ω, limit 50 Ω;" in out


def figure_cells(html: str) -> list[tuple[str, str]]:
    """(figure anchor, value cell) of every figure row of a page."""
    return re.findall(r'<tr id="fig-([^"]+)">\s*<th scope="row">[^<]*</th>\s*<td class="num">([^<]*)</td>', html)


def test_site_figures_have_digits_suited_to_their_quantity(demo_site):
    pages = sorted((demo_site / "aircraft").glob("*/*.html"))
    assert pages
    seen = ratios = 0
    for path in pages:
        for key, value in figure_cells(path.read_text(encoding="utf-8")):
            seen += 1
            assert not re.match(r"n/a .", value), (path.name, key, value)  # "n/a" never carries a unit
            if key.replace("_", ".", 1) in VSWR_KEYS and value not in ("—", "n/a"):
                assert re.fullmatch(r"\d+\.\d\d:1", value), (path.name, key, value)
                ratios += 1
            number = re.fullmatch(r"−?(\d+)(?:\.(\d+))? (dB|dBi|m|%)", value)
            if number:
                whole, decimals, unit = number.groups()
                allowed = {"dB": 2, "dBi": 2, "m": 3, "%": 1}[unit]
                tiny = int(whole) == 0 and decimals and set(decimals[:allowed]) <= {"0"}
                assert tiny or len(decimals or "") <= allowed, (path.name, key, value)
    assert seen > 1000 and ratios > 100


def test_antenna_pages_label_geometry_in_words(demo_site):
    for path in (demo_site / "antennas").glob("*.html"):
        html = path.read_text(encoding="utf-8")
        geometry = html.split('id="geometry"', 1)[1].split("</table>", 1)[0]
        labels = re.findall(r'<th scope="row"[^>]*>([^<]*)</th>', geometry)
        assert labels and not any("_" in label for label in labels), path.name


def test_record_keeps_full_precision(demo_site):
    record = json.loads((demo_site / "record.json").read_text(encoding="utf-8"))
    total = record["figures"]["installations"]["qx-tce/MKR"]["figures"]["feeder.total_loss_db"]["value"]
    html = (demo_site / "aircraft" / "qx-tce" / "MKR.html").read_text(encoding="utf-8")
    shown = dict(figure_cells(html))["feeder_total_loss_db"]
    assert shown == fmt(total, "dB") and len(repr(total)) > len(shown.split()[0])
    assert math.isclose(float(shown.split()[0]), total, abs_tol=0.005)
