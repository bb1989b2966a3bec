"""The demo registry's planted problems, held both ways: every one is found, nothing else is.

The expected list is the table in fleet_data/README.md (hand calculations beside each row); invented
demo data, checked against the rules' published methods named in docs/registry-format.md.
"""
import json
import re
import shutil
from pathlib import Path

import pytest

from registry import cli

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "fleet_data"
DEMO_DAY_EPOCH = "1796169600"  # 2026-12-02T00:00:00Z, the demo's "today" (fleet_data/README.md)


def planted_ids() -> set[str]:
    table = (DEMO / "README.md").read_text(encoding="utf-8").split("## Planted problems", 1)[1]
    rows = [line for line in table.splitlines() if re.match(r"\|\s*\d+\s*\|", line)]
    return {re.findall(r"`([^`]+)`", row.rsplit("|", 2)[-2])[0] for row in rows}


def run_check(capsys, *args) -> tuple[int, str]:
    code = cli.main(["check", *args])
    return code, capsys.readouterr().out


@pytest.fixture(autouse=True)
def demo_day(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", DEMO_DAY_EPOCH)


def test_planted_table_lists_fourteen_problems():
    assert len(planted_ids()) == 14


def test_check_finds_exactly_the_planted_problems(capsys):
    code, out = run_check(capsys, str(DEMO), "--format", "json")
    found = json.loads(out)["discrepancies"]
    assert {item["id"] for item in found} == planted_ids()
    for item in found:  # every discrepancy points at the registry line its value came from
        path, line = item["source"].rsplit(":", 1)
        assert Path(path).is_file() and path.endswith(".yaml") and int(line) > 0
    assert code == 1  # blocking problems are open in the demo


def test_clean_aircraft_has_no_discrepancy(capsys):
    code, out = run_check(capsys, str(DEMO), "--aircraft", "QX-TCA", "--format", "json")
    assert json.loads(out)["discrepancies"] == []
    assert code == 0


def reviewed_copy(tmp_path, reviews: list[dict]) -> Path:
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    lines = ["reviews:"]
    for review in reviews:
        lines.append(f"  - discrepancy: {review['id']}")
        for key in ("state", "reviewer", "date", "reference", "comment", "value_seen"):
            if key in review:
                lines.append(f"    {key}: {json.dumps(review[key])}")
    (data / "reviews.yaml").write_text("\n".join(lines) + "\n", encoding="utf-8")
    return data


def test_reviewing_every_blocking_problem_opens_the_gate(tmp_path, capsys):
    _, out = run_check(capsys, str(DEMO), "--format", "json", "--severity", "blocking")
    blocking = json.loads(out)["discrepancies"]
    assert blocking
    reviews = [{"id": item["id"], "state": "action-raised", "reviewer": "R. Marlow", "date": "2026-12-01",
                "reference": "CR-2026-0001", "value_seen": item["value"]} for item in blocking]
    code, out = run_check(capsys, str(reviewed_copy(tmp_path, reviews)), "--format", "json")
    assert code == 0
    states = {item["id"]: item["review"] for item in json.loads(out)["discrepancies"]}
    assert all(states[item["id"]] == "action-raised" for item in blocking)


def test_review_reopens_when_the_value_changes(tmp_path, capsys):
    _, out = run_check(capsys, str(DEMO), "--format", "json", "--severity", "blocking")
    blocking = json.loads(out)["discrepancies"]
    reviews = [{"id": item["id"], "state": "accepted", "reviewer": "R. Marlow", "date": "2026-12-01",
                "comment": "seen", "value_seen": item["value"]} for item in blocking]
    reviews[0]["value_seen"] = "something else"
    code, out = run_check(capsys, str(reviewed_copy(tmp_path, reviews)), "--format", "json")
    assert code == 1
    states = {item["id"]: item["review"] for item in json.loads(out)["discrepancies"]}
    assert states[blocking[0]["id"]] == "reopened"


def test_csv_and_text_carry_the_same_problems(capsys):
    _, out = run_check(capsys, str(DEMO), "--format", "csv")
    rows = out.strip().splitlines()
    assert rows[0].startswith("id,rule,severity,aircraft,position,value,limit,unit,message")
    assert {row.split(",", 1)[0] for row in rows[1:]} == planted_ids()
    _, text = run_check(capsys, str(DEMO))
    assert all(item in text for item in planted_ids())


def test_details_print_every_figure_of_the_chosen_aircraft(capsys):
    # --details is the terminal view of every computed figure (resonant length, feeder budget, pattern...)
    code, out = run_check(capsys, str(DEMO), "--details", "--aircraft", "QX-TJA")
    headers = [line for line in out.splitlines() if line.startswith("QX-TJA ") and "(" in line]
    assert len(headers) >= 19  # every installation of QX-TJA, then its pairs
    for label in ("Resonant length, 95 % rule", "Total feeder loss", "Peak directivity", "Isolation"):
        assert label in out
    assert "QX-TCA VHF2 (" not in out
