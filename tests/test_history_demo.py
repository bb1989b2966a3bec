"""The demo's scripted history (`build.py demo-history`) and `build.py history` on it: the same commits every
time, the last one holding the demo registry as it is, and the findings that appeared and cleared at each
change through the check path `check` uses. Demo data is invented; what appears and clears follows from the
cable catalogue (RG-58 rated to 1000 MHz carrying L-band satcom up to 1660.5 MHz: the cable-frequency rule).
History semantics: common practice, no source."""
from __future__ import annotations

import json
import re
import subprocess
from pathlib import Path

from registry import cli, demo_history

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"


def head(repo: Path) -> str:
    return subprocess.run(["git", "-C", str(repo), "rev-parse", "HEAD"], capture_output=True, text=True,
                          check=True).stdout.strip()


def test_demo_history_is_reproducible_and_ends_with_the_demo_registry(tmp_path):
    demo_history.make(DEMO, tmp_path / "one")
    demo_history.make(DEMO, tmp_path / "two")
    assert head(tmp_path / "one") == head(tmp_path / "two")
    kept = sorted(path.relative_to(DEMO) for path in DEMO.rglob("*") if path.is_file()
                  and "scenario" not in path.relative_to(DEMO).parts)
    made = sorted(path.relative_to(tmp_path / "one") for path in (tmp_path / "one").rglob("*") if path.is_file()
                  and ".git" not in path.relative_to(tmp_path / "one").parts)
    assert made == kept
    assert all((tmp_path / "one" / name).read_bytes() == (DEMO / name).read_bytes() for name in kept)


def test_demo_history_refuses_a_folder_that_is_not_empty(tmp_path, capsys):
    (tmp_path / "taken.txt").write_text("mine", encoding="utf-8")
    assert cli.main(["demo-history", str(tmp_path)]) == 2
    assert "is not an empty folder" in capsys.readouterr().err
    assert (tmp_path / "taken.txt").read_text(encoding="utf-8") == "mine"


def test_findings_appear_with_the_wrong_cable_and_clear_with_the_fix(tmp_path, capsys):
    repo = tmp_path / "registry"
    demo_history.make(DEMO, repo)
    assert cli.main(["history", "QX-TJB", str(repo), "--format", "json", "--cache", str(tmp_path / "cache")]) == 0
    doc = json.loads(capsys.readouterr().out)
    opened, modified, fixed = doc["changes"]
    assert opened["kind"] == "added" and opened["modifications_added"] == ["MOD-2019-002"]
    assert modified["modifications_added"] == ["MOD-2026-031"]
    assert modified["positions"] == {"ADF1": "removed", "GNSS1": "length", "SAT": "added", "VHF3": "removed",
                                     "VHF3-AFT": "added"}
    appeared = {row[0] for row in modified["findings"]["appeared"]}
    assert "qx-tjb/SAT/cable-frequency" in appeared
    assert fixed["positions"] == {"SAT": "cable"}
    assert "qx-tjb/SAT/cable-frequency" in {row[0] for row in fixed["findings"]["cleared"]}
    assert fixed["findings"]["appeared"] == []
    sat = doc["positions"]["SAT"]
    assert [span["fitted"]["cable"] for span in sat] == ["RG-58", "TCX-LL7"] and sat[-1]["to"] is None


def test_a_catalogue_change_is_a_change_of_the_aircraft_history(tmp_path, capsys):
    """A commit that changes only cables.yaml fits nothing new, but its findings are compared too: TCX-LL7
    rated down to 1500 MHz cannot carry L-band satcom (1660.5 MHz) any more."""
    from tests.test_history import commit

    repo = tmp_path / "registry"
    demo_history.make(DEMO, repo)
    cables = (repo / "cables.yaml").read_text(encoding="utf-8")
    block = cables[cables.index("  - id: TCX-LL7"):]
    rated = block[:block.index("max_freq_mhz: 18000") + len("max_freq_mhz: 18000")]
    commit(repo, "2026-10-01T08:00:00+00:00", "TCX-LL7 re-rated",
           {"cables.yaml": cables.replace(rated, rated.replace("18000", "1500"))})
    assert cli.main(["history", "QX-TJB", str(repo), "--format", "json", "--cache", str(tmp_path / "cache")]) == 0
    last = json.loads(capsys.readouterr().out)["changes"][-1]
    assert last["kind"] == "shared" and last["positions"] == {} and last["subject"] == "TCX-LL7 re-rated"
    assert "qx-tjb/SAT/cable-frequency" in {row[0] for row in last["findings"]["appeared"]}
    assert cli.main(["history", "QX-TJB", str(repo), "--no-findings", "--format", "json"]) == 0
    assert len(json.loads(capsys.readouterr().out)["changes"]) == 3  # without findings, the aircraft file only


def test_the_readme_walkthrough_quotes_the_demo_history_as_it_is(tmp_path, capsys):
    """README.md's "After an incident (history)" quotes commit hashes and output lines of the scripted demo
    history: they must be what `demo-history` and `history --on` give today."""
    repo = tmp_path / "registry"
    demo_history.make(DEMO, repo)
    readme = (DEMO.parent / "README.md").read_text(encoding="utf-8")
    section = readme[readme.index("## After an incident (history)"):readme.index("## An auditor's workflow")]
    hashes = subprocess.run(["git", "-C", str(repo), "log", "--format=%H"], capture_output=True, text=True,
                            check=True).stdout.split()
    quoted = set(re.findall(r"\b[0-9a-f]{10}\b", section))
    assert quoted and quoted <= {full[:10] for full in hashes}, (
        f"README quotes {sorted(quoted)}; the demo history's commits are now {[full[:10] for full in hashes]} "
        "(newest first): a change to fleet_data/ changes them, so refresh the README's walkthrough")
    assert cli.main(["history", "QX-TJB", str(repo), "--on", "2026-09-15"]) == 0
    out = capsys.readouterr().out
    sat = next(line for line in section.splitlines() if line.strip().startswith("SAT "))
    assert sat.strip() in out


def test_a_modifications_file_change_is_a_change_of_the_aircraft_history(tmp_path, capsys):
    """A commit that changes only modifications.yaml fits nothing new, but its findings are compared too:
    MOD-2019-011, planned on QX-TJB, marked embodied without its VHF1 blade fitted (common practice, no source:
    the effectivity rules' bookkeeping)."""
    from tests.test_history import commit

    repo = tmp_path / "registry"
    demo_history.make(DEMO, repo)
    mods = (repo / "modifications.yaml").read_text(encoding="utf-8")
    planned = "{registration: QX-TJB, state: planned, due: 2027-01-20}"
    assert planned in mods
    commit(repo, "2026-10-02T08:00:00+00:00", "MOD-2019-011 embodied on QX-TJB",
           {"modifications.yaml": mods.replace(planned, "{registration: QX-TJB, state: embodied, date: 2026-10-01}")})
    assert cli.main(["history", "QX-TJB", str(repo), "--format", "json", "--cache", str(tmp_path / "cache")]) == 0
    last = json.loads(capsys.readouterr().out)["changes"][-1]
    assert last["kind"] == "shared" and last["subject"] == "MOD-2019-011 embodied on QX-TJB"
    assert {row[0] for row in last["findings"]["appeared"]} & {"qx-tjb/VHF1/embodiment",
                                                               "qx-tjb/MOD-2019-011/embodiment-record"}


def test_a_re_registered_aircraft_keeps_its_history_and_its_findings(tmp_path, capsys):
    """QX-TJB re-registered QX-TJZ: its file renamed (same serial number), the modifications and reviews
    that name it updated in the same commit. Its history runs on through the rename, each earlier change's
    findings are still compared (at the file's old name), and the rename itself makes no finding appear or
    clear (the findings' ids follow the aircraft's id)."""
    from tests.test_history import commit

    repo = tmp_path / "registry"
    demo_history.make(DEMO, repo)
    aircraft = (repo / "aircraft" / "qx-tjb.yaml").read_text(encoding="utf-8")
    mods = (repo / "modifications.yaml").read_text(encoding="utf-8")
    reviews = (repo / "reviews.yaml").read_text(encoding="utf-8")
    commit(repo, "2026-10-01T08:00:00+00:00", "QX-TJB re-registered QX-TJZ", {
        "aircraft/qx-tjb.yaml": None,
        "aircraft/qx-tjz.yaml": aircraft.replace("id: qx-tjb", "id: qx-tjz").replace("registration: QX-TJB",
                                                                                  "registration: QX-TJZ"),
        "modifications.yaml": mods.replace("registration: QX-TJB", "registration: QX-TJZ"),
        "reviews.yaml": reviews.replace("qx-tjb/", "qx-tjz/")})
    assert cli.main(["history", "QX-TJZ", str(repo), "--format", "json", "--cache", str(tmp_path / "cache")]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["file"] == "aircraft/qx-tjz.yaml"
    assert [change["kind"] for change in doc["changes"]] == ["added", "changed", "changed", "renamed"]
    opened, modified, fixed, rename = doc["changes"]
    assert rename["renamed_from"] == "aircraft/qx-tjb.yaml" and rename["positions"] == {}
    assert rename["findings"] == {"appeared": [], "cleared": [], "problem": ""}
    assert "qx-tjb/SAT/cable-frequency" in {row[0] for row in modified["findings"]["appeared"]}
    assert "qx-tjb/SAT/cable-frequency" in {row[0] for row in fixed["findings"]["cleared"]}
    assert [span["fitted"]["cable"] for span in doc["positions"]["SAT"]] == ["RG-58", "TCX-LL7"]
