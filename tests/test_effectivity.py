"""Effectivity of modifications: the fleet's modifications file against each aircraft's register and its own
modification list (registry/check/effectivity.py), through the loader and the check the site uses, and the
fleet overview's table per modification.

The rules are configuration bookkeeping, so their reference is the data itself: common practice, no source
(the register must hold the aircraft as modified, and two records of one embodiment must agree)."""
from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

import pytest

import registry.load.fleet
from registry import cli
from registry.check.effectivity import aircraft_modifications, effectivity_discrepancies
from registry.load.fleet import load_fleet

FIXTURES = Path(__file__).parent / "fixtures"
SHIPPED = FIXTURES / "shipped"
HEADER = "# yaml-language-server: $schema=../../registry/schemas/modifications.schema.json\nmodifications:\n"
CORRECT = """\
  - ref: MOD-2023-011
    title: Second VHF communication antenna moved aft.
    adds:
      - {position: VHF1, service: vhf_com, antenna: FXA-120-BLD}
    effectivity:
      - {registration: QX-FCA, state: embodied, date: 2023-04-18}
      - {registration: QX-FCB, state: planned, due: 2027-05-01}
"""


def registry_with(tmp_path: Path, modifications: str) -> Path:
    data = tmp_path / "registry"
    shutil.copytree(FIXTURES / "good", data)
    (data / "modifications.yaml").write_text(HEADER + modifications, encoding="utf-8")
    return data


def findings(data: Path, aircraft_id: str = "qx-fca") -> dict[str, object]:
    fleet = load_fleet(data, SHIPPED)
    return {item.id: item for item in effectivity_discrepancies(fleet, fleet.aircraft[aircraft_id])}


def test_the_file_is_built_with_aircraft_by_registration_or_serial(tmp_path):
    data = registry_with(tmp_path, CORRECT + """\
  - ref: MOD-2024-002
    title: Glide-slope antenna refitted.
    effectivity:
      - {serial: "2017", state: planned}
""")
    fleet = load_fleet(data, SHIPPED)
    first, second = fleet.modifications
    assert [(item.aircraft, item.state, str(item.date), str(item.due)) for item in first.effectivity] == [
        ("qx-fca", "embodied", "2023-04-18", "None"), ("qx-fcb", "planned", "None", "2027-05-01")]
    assert first.adds[0].position == "VHF1" and first.adds[0].antenna == "FXA-120-BLD"
    assert second.on("qx-fca").named == 'serial 2017' and second.on("qx-fcb") is None
    assert first.on("qx-fca").src.line == 8  # each entry knows its line


def test_without_the_file_nothing_is_compared(tmp_path):
    data = tmp_path / "registry"
    shutil.copytree(FIXTURES / "good", data)
    (data / "modifications.yaml").unlink()
    fleet = load_fleet(data, SHIPPED)
    assert fleet.modifications == ()
    assert effectivity_discrepancies(fleet, fleet.aircraft["qx-fca"]) == []
    assert [state.state for state in aircraft_modifications(fleet, fleet.aircraft["qx-fca"])] == ["recorded"]


def test_a_correct_embodiment_raises_nothing(tmp_path):
    data = registry_with(tmp_path, CORRECT)
    assert findings(data) == {}
    assert findings(data, "qx-fcb") == {}  # planned there: nothing is expected of its register yet
    fleet = load_fleet(data, SHIPPED)
    (state,) = aircraft_modifications(fleet, fleet.aircraft["qx-fca"])
    assert (state.state, str(state.date), state.disagreement) == ("embodied", "2023-04-18", "")


def test_an_added_installation_missing_where_embodied_is_a_query(tmp_path):
    data = registry_with(tmp_path, CORRECT.replace("{position: VHF1, service: vhf_com, antenna: FXA-120-BLD}",
                                                   "{position: VHF2, service: vhf_com}"))
    found = findings(data)
    assert list(found) == ["qx-fca/VHF2/embodiment"]
    item = found["qx-fca/VHF2/embodiment"]
    assert (item.severity, item.value, item.limit) == ("query", "absent", "present")
    assert item.src.endswith("modifications.yaml:8")  # the embodiment's line
    assert "MOD-2023-011" in item.message and "common practice, no source" in item.method


def test_an_added_installation_with_another_antenna_or_service_is_a_query(tmp_path):
    data = registry_with(tmp_path, CORRECT.replace("antenna: FXA-120-BLD}", "antenna: FXA-1000-BLD}"))
    item = findings(data)["qx-fca/VHF1/embodiment"]
    assert (item.value, item.limit) == ("FXA-120-BLD", "FXA-1000-BLD")
    assert re.search(r"qx-fca\.yaml:\d+$", item.src)
    data = registry_with(tmp_path / "b", CORRECT.replace("service: vhf_com", "service: dme"))
    assert (findings(data)["qx-fca/VHF1/embodiment"].value, findings(data)["qx-fca/VHF1/embodiment"].limit) == \
        ("vhf_com", "dme")


def test_a_removed_installation_still_in_the_register_is_a_query_unless_a_later_one_refits_it(tmp_path):
    removes = CORRECT.replace("adds:\n      - {position: VHF1, service: vhf_com, antenna: FXA-120-BLD}",
                              "removes:\n      - {position: GS1}")
    assert set(findings(registry_with(tmp_path, removes))) == {"qx-fca/GS1/embodiment"}
    refit = removes + """\
  - ref: MOD-2024-005
    title: Glide-slope antenna refitted.
    adds:
      - {position: GS1}
    effectivity:
      - {registration: QX-FCA, state: embodied, date: 2024-01-09}
"""
    own = (FIXTURES / "good" / "aircraft" / "qx-fca.yaml").read_text(encoding="utf-8").replace(
        "modifications:\n", "modifications:\n  - ref: MOD-2024-005\n    date: 2024-01-09\n    summary: GS1 refitted.\n")
    data = registry_with(tmp_path / "b", refit)
    (data / "aircraft" / "qx-fca.yaml").write_text(own, encoding="utf-8")
    assert findings(data) == {}  # the latest embodiment decides the position


@pytest.mark.parametrize("entry, own_date, words", [
    ("{registration: QX-FCA, state: planned}", "2023-04-18", "has it planned"),
    ("{registration: QX-FCA, state: embodied, date: 2023-05-02}", "2023-04-18", "embodied on 2023-05-02"),
    ("{registration: QX-FCB, state: planned}", "2023-04-18", "does not name this aircraft"),
    ("{registration: QX-FCA, state: embodied, date: 2023-04-18}", None, "the aircraft file does not list it"),
])
def test_the_two_records_disagreeing_either_way_is_a_note(tmp_path, entry, own_date, words):
    data = registry_with(tmp_path, f"""\
  - ref: MOD-2023-011
    title: Second VHF communication antenna moved aft.
    effectivity:
      - {entry}
""")
    if own_date is None:
        own = (data / "aircraft" / "qx-fca.yaml").read_text(encoding="utf-8")
        (data / "aircraft" / "qx-fca.yaml").write_text(own.replace("MOD-2023-011", "MOD-2023-012"), encoding="utf-8")
    found = findings(data)
    item = found["qx-fca/MOD-2023-011/embodiment-record"]
    assert item.severity == "note" and words in item.message
    assert set(found) == {"qx-fca/MOD-2023-011/embodiment-record"}


def test_a_reference_the_fleet_file_does_not_describe_is_the_aircraft_s_own_record(tmp_path):
    data = registry_with(tmp_path, CORRECT.replace("MOD-2023-011", "MOD-2025-001").replace(
        "{registration: QX-FCA, state: embodied, date: 2023-04-18}", "{registration: QX-FCA, state: planned}"))
    assert findings(data) == {}
    fleet = load_fleet(data, SHIPPED)
    states = {state.ref: state.state for state in aircraft_modifications(fleet, fleet.aircraft["qx-fca"])}
    assert states == {"MOD-2023-011": "recorded", "MOD-2025-001": "planned"}


def test_the_rules_run_with_the_others_and_check_prints_them(tmp_path, monkeypatch, capsys):
    data = registry_with(tmp_path, CORRECT.replace("position: VHF1", "position: VHF3"))
    monkeypatch.setattr(registry.load.fleet, "SHIPPED_DIR", SHIPPED)
    cli.main(["check", str(data), "--format", "json", "--aircraft", "QX-FCA"])
    found = {item["id"]: item for item in json.loads(capsys.readouterr().out)["discrepancies"]}
    assert found["qx-fca/VHF3/embodiment"]["source"] == "modifications.yaml:8"
    cli.main(["check", str(data), "--aircraft", "QX-FCA"])
    text = capsys.readouterr().out
    assert "[query] qx-fca/VHF3/embodiment" in text and "value absent, limit present" in text


def test_the_fleet_overview_shows_each_modification_where_embodied_planned_and_disagreeing(demo_site):
    page = (demo_site / "index.html").read_text(encoding="utf-8")
    section = page[page.index('id="mod-MOD-2018-006"'):page.index('id="mod-MOD-2019-002"')]
    rows = re.findall(r'<tr class="mod-(\w+)">\s*<th scope="row"><a href="[^"]+">([A-Z0-9-]+)</a></th>', section)
    assert rows == [("embodied", "QX-TCA"), ("embodied", "QX-TCD"), ("embodied", "QX-TCE"), ("planned", "QX-TCB")]
    assert "2018-09-03" in section and "due 2027-03-15" in section
    assert "qx-tce/HF1/embodiment" in section and 'href="aircraft/qx-tce.html#d-qx-tce__HF1__embodiment"' in section
    assert "1 where the data disagree" in section
    assert "<script" not in section  # the table reads without JavaScript
    aircraft = (demo_site / "aircraft" / "qx-tjb.html").read_text(encoding="utf-8")
    mods = aircraft[aircraft.index('id="modifications"'):aircraft.index('id="findings"')]
    assert re.search(r"due 2027-01-20.*MOD-2019-011.*planned", mods, re.S)
    assert re.search(r"2026-09-14.*MOD-2026-031.*embodied", mods, re.S)


def test_a_finding_on_a_position_not_fitted_takes_the_service_the_modification_names(demo_site, capsys):
    """QX-TCE has no HF1; MOD-2018-006 adds HF1 for hf_com, so the service filters of `check` and of the
    Audit page both select its embodiment finding (common practice, no source: filter semantics)."""
    assert cli.main(["check", "fleet_data", "--service", "hf_com", "--no-cache"]) == 0
    text = capsys.readouterr().out
    assert "filtered: service hf_com: 1 of " in text
    assert "QX-TCE (qx-tce, tc-44): 1 discrepancy" in text and "[query] qx-tce/HF1/embodiment" in text
    audit = (demo_site / "audit.html").read_text(encoding="utf-8")
    row = re.search(r'<tr id="d-qx-tce__HF1__embodiment"[^>]*>', audit).group(0)
    assert 'data-service="hf_com"' in row


def test_an_aircraft_file_that_cannot_be_read_is_reported_once(tmp_path):
    from registry.core.errors import DataError

    data = registry_with(tmp_path, CORRECT)
    (data / "aircraft" / "qx-fcb.yaml").write_text("id: qx-fcb\nregistration: [QX-FCB\n", encoding="utf-8")
    with pytest.raises(DataError) as caught:
        load_fleet(data, SHIPPED)
    assert [problem.src.path.endswith("qx-fcb.yaml") for problem in caught.value.problems] == [True]


def test_hostile_text_in_a_modification_title_is_escaped(tmp_path, monkeypatch):
    from registry import pipeline

    monkeypatch.setattr(registry.load.fleet, "SHIPPED_DIR", SHIPPED)
    data = registry_with(tmp_path, CORRECT.replace(
        "title: Second VHF communication antenna moved aft.",
        "title: \"<script>alert(1)</script><img src=x onerror=alert(2)>\""))
    pipeline.build(data, tmp_path / "site", cache_dir=None, workers=1)
    for page in ("index.html", "aircraft/qx-fcb.html"):
        html = (tmp_path / "site" / page).read_text(encoding="utf-8")
        assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html, page
        assert "<img src=x" not in html and "<script>alert" not in html
