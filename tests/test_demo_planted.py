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


def test_planted_table_lists_fifteen_problems():
    assert len(planted_ids()) == 15


def test_the_effectivity_plant_is_found_and_correcting_the_record_clears_it(tmp_path, capsys):
    # planted problem #15 (fleet_data/README.md): MOD-2018-006 is embodied on QX-TCE in both records, but the HF1
    # it adds is not in the register (common practice, no source: configuration bookkeeping)
    _, out = run_check(capsys, str(DEMO), "--aircraft", "QX-TCE", "--format", "json")
    found = {item["id"]: item for item in json.loads(out)["discrepancies"]}
    item = found["qx-tce/HF1/embodiment"]
    assert item["severity"] == "query" and item["value"] == "absent" and item["source"] == "modifications.yaml:14"
    assert "MOD-2018-006" in item["message"]
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    # the fix: the kit is only planned on QX-TCE, and its aircraft file no longer lists it
    mods = (data / "modifications.yaml").read_text(encoding="utf-8")
    (data / "modifications.yaml").write_text(mods.replace(
        "{serial: \"4460\", state: embodied, date: 2026-11-24}", "{serial: \"4460\", state: planned}"),
        encoding="utf-8")
    own = (data / "aircraft" / "qx-tce.yaml").read_text(encoding="utf-8")
    entry = own[own.index("  - ref: MOD-2018-006"):own.index("installations:")]
    (data / "aircraft" / "qx-tce.yaml").write_text(own.replace(entry, ""), encoding="utf-8")
    _, out = run_check(capsys, str(data), "--format", "json")
    assert {item["id"] for item in json.loads(out)["discrepancies"]} == planted_ids() - {"qx-tce/HF1/embodiment"}
    # half a fix (only the fleet's file says planned) leaves the two records disagreeing: a note instead
    (data / "aircraft" / "qx-tce.yaml").write_text(own, encoding="utf-8")
    _, out = run_check(capsys, str(data), "--format", "json")
    found = {item["id"]: item for item in json.loads(out)["discrepancies"]}
    assert set(found) == planted_ids() - {"qx-tce/HF1/embodiment"} | {"qx-tce/MOD-2018-006/embodiment-record"}
    assert found["qx-tce/MOD-2018-006/embodiment-record"]["severity"] == "note"


def test_check_finds_exactly_the_planted_problems(capsys):
    code, out = run_check(capsys, str(DEMO), "--format", "json")
    found = json.loads(out)["discrepancies"]
    assert {item["id"] for item in found} == planted_ids()
    for item in found:  # every discrepancy points at the registry line its value came from
        path, line = item["source"].rsplit(":", 1)
        assert (DEMO / path).is_file() and path.endswith(".yaml") and int(line) > 0  # relative to the data folder
    assert code == 1  # unserviceable problems are open in the demo


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


def test_accepting_every_unserviceable_problem_opens_the_gate(tmp_path, capsys):
    _, out = run_check(capsys, str(DEMO), "--format", "json", "--severity", "unserviceable")
    unserviceable = json.loads(out)["discrepancies"]
    assert unserviceable
    reviews = [{"id": item["id"], "state": "accepted", "reviewer": "R. Marlow", "date": "2026-12-01",
                "reference": "ENG-2026-0001", "value_seen": item["value"]} for item in unserviceable]
    code, out = run_check(capsys, str(reviewed_copy(tmp_path, reviews)), "--format", "json")
    assert code == 0
    found = {item["id"]: item for item in json.loads(out)["discrepancies"]}
    assert all(found[item["id"]]["review"] == "accepted" and not found[item["id"]]["counts_open"]
               for item in unserviceable)


def test_an_action_raised_keeps_the_gate_shut_unless_the_policy_says_otherwise(tmp_path, capsys):
    # an action raised is not an action done: the fault is still fitted (docs/registry-format.md, reviews)
    _, out = run_check(capsys, str(DEMO), "--format", "json", "--severity", "unserviceable")
    unserviceable = json.loads(out)["discrepancies"]
    reviews = [{"id": item["id"], "state": "action-raised", "reviewer": "R. Marlow", "date": "2026-12-01",
                "reference": "CR-2026-0001", "value_seen": item["value"]} for item in unserviceable]
    data = reviewed_copy(tmp_path, reviews)
    code, out = run_check(capsys, str(data), "--format", "json")
    assert code == 1
    found = {item["id"]: item for item in json.loads(out)["discrepancies"]}
    assert all(found[item["id"]]["review"] == "action-raised" and found[item["id"]]["counts_open"]
               for item in unserviceable)
    with (data / "policy.yaml").open("a", encoding="utf-8") as policy:
        policy.write("\naction_raised_counts_open: false\n")
    code, out = run_check(capsys, str(data), "--format", "json")
    assert code == 0
    assert not any(item["counts_open"] for item in json.loads(out)["discrepancies"] if item["severity"] == "unserviceable")


def test_the_demo_action_raised_review_leaves_qx_tce_open(capsys):
    # fleet_data/reviews.yaml: the 75 Ω cable on QX-TCE's marker beacon is still fitted (action raised only)
    code, out = run_check(capsys, str(DEMO), "--aircraft", "QX-TCE", "--format", "json")
    item = next(d for d in json.loads(out)["discrepancies"] if d["id"] == "qx-tce/MKR/impedance-match")
    assert item["review"] == "action-raised" and item["counts_open"] and item["review_date"] == "2026-11-20"
    assert code == 1
    code, text = run_check(capsys, str(DEMO), "--aircraft", "QX-TCE")
    assert code == 1
    assert "action-raised by H. Quill, CR-2026-0412, 2026-11-20: fault still fitted, counts as open" in text


def test_the_policy_switch_is_schema_checked(tmp_path, capsys):
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    with (data / "policy.yaml").open("a", encoding="utf-8") as policy:
        policy.write("\naction_raised_counts_open: sometimes\n")
    code = cli.main(["check", str(data)])
    err = capsys.readouterr().err
    assert code == 2
    assert "policy.yaml" in err and "action_raised_counts_open" in err and "Traceback" not in err


def test_review_reopens_when_the_value_changes(tmp_path, capsys):
    _, out = run_check(capsys, str(DEMO), "--format", "json", "--severity", "unserviceable")
    unserviceable = json.loads(out)["discrepancies"]
    reviews = [{"id": item["id"], "state": "accepted", "reviewer": "R. Marlow", "date": "2026-12-01",
                "comment": "seen", "value_seen": item["value"]} for item in unserviceable]
    reviews[0]["value_seen"] = "something else"
    code, out = run_check(capsys, str(reviewed_copy(tmp_path, reviews)), "--format", "json")
    assert code == 1
    states = {item["id"]: item["review"] for item in json.loads(out)["discrepancies"]}
    assert states[unserviceable[0]["id"]] == "reopened"


def test_csv_and_text_carry_the_same_problems(capsys):
    _, out = run_check(capsys, str(DEMO), "--format", "csv")
    rows = out.strip().splitlines()
    assert rows[0].startswith("\ufeffid,severity,counts_open,aircraft,registration,position,services,rule,value")
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
