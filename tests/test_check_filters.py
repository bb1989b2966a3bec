"""`check` filters list only what was selected and say so; findings come in one order on the terminal, in
the exports, in the record and on the site. The order and the filter wording are the product's own
definitions (README, "Working through the findings"; docs/registry-format.md); the demo data is invented."""
from __future__ import annotations

import csv
import io
import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

from registry import cli
from registry.site.paths import anchor

DEMO_DAY_EPOCH = "1796169600"  # 2026-12-02T00:00:00Z, the demo's "today" (fleet_data/README.md)
REGISTRATION = re.compile(r"^(QX-[A-Z]{3}) \(")


@pytest.fixture(autouse=True)
def demo_day(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", DEMO_DAY_EPOCH)


def run(capsys, *args) -> tuple[int, str]:
    code = cli.main(["check", *args])
    return code, capsys.readouterr().out


def listed_aircraft(text: str) -> list[str]:
    return [match.group(1) for line in text.splitlines() if (match := REGISTRATION.match(line))]


def terminal_ids(text: str) -> list[str]:
    return [line.split()[1] for line in text.splitlines() if line.startswith("  [")]


def test_aircraft_filter_lists_only_that_aircraft_and_says_so(demo_data, capsys):
    code, text = run(capsys, str(demo_data), "--aircraft", "QX-TCE")
    assert listed_aircraft(text) == ["QX-TCE"]
    assert "0 discrepancies" not in text  # no other aircraft reads as clean
    assert re.search(r"^filtered: aircraft QX-TCE: 3 of 15 findings, 1 of 8 aircraft listed", text, re.M)
    assert text.rstrip().splitlines()[-1].startswith("selected: 3 discrepancies")
    assert code == 1  # the action-raised 75 Ω cable is still fitted


def test_unfiltered_report_lists_every_aircraft_and_no_filter_line(demo_data, capsys):
    _, text = run(capsys, str(demo_data))
    assert len(listed_aircraft(text)) == 8
    assert "filtered:" not in text and text.rstrip().splitlines()[-1].startswith("fleet: 15 discrepancies")


def test_service_filter_lists_only_aircraft_with_that_service(demo_data, demo_fleet, capsys):
    _, text = run(capsys, str(demo_data), "--service", "marker")
    fitted = [craft.registration for craft in demo_fleet.aircraft.values()
              if any(i.service == "marker" for i in craft.installations.values())]
    assert listed_aircraft(text) == fitted
    assert "filtered: service marker:" in text


def test_severity_filter_says_what_it_kept(demo_data, capsys):
    code, text = run(capsys, str(demo_data), "--severity", "note")
    assert "filtered: severity note:" in text
    assert all(line.startswith("  [note]") for line in text.splitlines() if line.startswith("  ["))
    assert code == 0  # only note findings selected: none counts for the gate


def test_json_export_names_its_filters(demo_data, capsys):
    _, out = run(capsys, str(demo_data), "--aircraft", "qx-tce", "--severity", "unserviceable", "--format", "json")
    document = json.loads(out)
    assert document["filters"] == {"aircraft": ["qx-tce"], "severity": ["unserviceable"]}
    assert [item["id"] for item in document["discrepancies"]] == ["qx-tce/MKR/impedance-match"]


def test_one_order_on_terminal_exports_record_and_site(demo_data, demo_site, capsys):
    _, text = run(capsys, str(demo_data))
    _, out = run(capsys, str(demo_data), "--format", "json")
    _, table = run(capsys, str(demo_data), "--format", "csv")
    by_json = [item["id"] for item in json.loads(out)["discrepancies"]]
    by_csv = [row["id"] for row in csv.DictReader(io.StringIO(table.lstrip("\ufeff")))]
    record = json.loads((demo_site / "record.json").read_text(encoding="utf-8"))
    by_record = list(record["discrepancies"])
    assert terminal_ids(text) == by_json == by_csv == by_record == sorted(by_json)
    site_csv = (demo_site / "audit" / "discrepancies.csv").read_text(encoding="utf-8-sig")
    assert [row["id"] for row in csv.DictReader(io.StringIO(site_csv))] == by_record
    for aircraft_id in {item.split("/", 1)[0] for item in by_json}:
        html = (demo_site / "aircraft" / f"{aircraft_id}.html").read_text(encoding="utf-8")
        shown = re.findall(r'<tr id="d-([^"]+)"', html.split('id="findings"', 1)[1])
        assert shown == [anchor(item) for item in by_json if item.startswith(aircraft_id + "/")], aircraft_id


def test_the_command_line_entry_delivers_all_its_output_and_exit_code(demo_data, capsys, tmp_path):
    # build.py ends its process without the interpreter's clean-up (os._exit): what main wrote must still
    # reach a file (block-buffered: one aircraft's findings fit in the buffer, so nothing is written before
    # the end) whole, with main's exit code (common practice, no source: a CLI's output and status are its
    # contract)
    args = [str(demo_data), "--format", "json", "--no-cache", "--aircraft", "QX-TCC"]
    code, expected = run(capsys, *args)
    assert 0 < len(expected.encode()) < io.DEFAULT_BUFFER_SIZE
    out = tmp_path / "findings.json"
    env = {name: value for name, value in os.environ.items() if name != "PYTHONUNBUFFERED"}  # buffered, as usual
    env["SOURCE_DATE_EPOCH"] = DEMO_DAY_EPOCH
    with open(out, "w") as handle:
        result = subprocess.run([sys.executable, str(Path(cli.__file__).parent.parent / "build.py"), "check", *args],
                                stdout=handle, env=env)
    assert result.returncode == code
    assert out.read_text() == expected
    assert json.loads(out.read_text())["discrepancies"]
