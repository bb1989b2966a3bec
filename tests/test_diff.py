"""Comparing two builds: installations added, removed, moved and changed; discrepancies new, resolved and
re-reviewed; figures beyond the tolerance; the command's outputs and exit codes; git revisions as a side;
the site's changes page."""
import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest

import registry.load.fleet
from registry import pipeline
from registry.output.compare import compare as compare_records
from registry.output.compare_text import as_text
from registry.output.comparison import Comparison, FieldChange, Tolerance
from registry.site.changes import changes_page
from registry.output import record
from registry.site import render
from registry.cli import main

FIXTURES = Path(__file__).parent / "fixtures"
GOOD = FIXTURES / "good"
DEMO = Path(__file__).parent.parent / "fleet_data"
AS_OF_EPOCH = "1772323200"  # 2026-03-01 00:00 UTC

GNSS_ON_FCB = """  - position: GNSS1
    service: gnss_l1
    antenna: FXA-L1-PATCH
    location: {sta: 330.0, bl: 0.0, wl: 160.0}
    surface: top
    feeder: {cable: FXC-400, length_m: 5.0, connectors: 2}
"""


@pytest.fixture
def fixture_shipped(monkeypatch):
    monkeypatch.setattr(registry.load.fleet, "SHIPPED_DIR", FIXTURES / "shipped")
    monkeypatch.setenv("SOURCE_DATE_EPOCH", AS_OF_EPOCH)


@pytest.fixture
def pair(tmp_path, fixture_shipped):
    """Two copies of the good registry: edit NEW's YAML text, then compare."""
    old, new = tmp_path / "old", tmp_path / "new"
    shutil.copytree(GOOD, old)
    shutil.copytree(GOOD, new)
    return old, new


def edit(path: Path, old: str, new: str) -> None:
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, f"{old!r} must occur once in {path}"
    path.write_text(text.replace(old, new), encoding="utf-8")


def records(old: Path, new: Path) -> tuple[dict, dict]:
    return record.to_record(pipeline.run(old)), record.to_record(pipeline.run(new))


def compare(old: Path, new: Path, **tolerance) -> Comparison:
    return compare_records(*records(old, new), Tolerance(**tolerance))


# ---- the same ------------------------------------------------------------------------------------------


def test_identical_builds_compare_as_the_same(pair, capsys):
    old, new = pair
    assert main(["diff", str(old), str(new)]) == 0
    out = capsys.readouterr().out
    assert out.endswith("no differences\n")
    assert f"OLD  registry {old}, as of 2026-03-01" in out
    assert main(["diff", "--format", "json", str(old), str(new)]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["same"] is True and data["installations"] == [] and data["figures"] == []


# ---- installations -------------------------------------------------------------------------------------


def test_changed_cable_length_is_shown_field_by_field_and_moves_the_feeder_figures(pair, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: 5.0,")
    result = compare(old, new)
    change = result.installation("qx-fca", "DME1")
    assert change.change == "changed"
    assert change.fields == (FieldChange("feeder.length_m", 6.1, 5.0),)
    assert [item.change for item in result.installations] == ["changed"]
    moved = {item.key: item for item in result.figures_of("qx-fca", "DME1")}
    cable = moved["feeder.cable_loss_db"]
    assert cable.new / cable.old == pytest.approx(5.0 / 6.1, rel=1e-5)  # loss is linear in length
    assert "feeder.total_loss_db" in moved and "feeder.connector_loss_db" not in moved
    assert result.figures_of("qx-fca", "VHF1") == [] and result.figures_of("qx-fcb") == []
    loss = next(item for item in result.discrepancies if item.id == "qx-fca/DME1/feeder-loss")
    assert loss.change == "changed"
    assert [aspect.field for aspect in loss.aspects] == ["value"]
    assert loss.aspects[0].new == pytest.approx(moved["feeder.total_loss_db"].new, abs=1e-3)

    assert main(["diff", str(old), str(new)]) == 1
    out = capsys.readouterr().out
    assert "  changed  qx-fca/DME1\n             feeder.length_m: 6.1 → 5\n" in out
    # a loss in dB moves by a difference in dB, not a percentage of a level (issue 15, item 5)
    line = next(line for line in out.splitlines() if line.strip().startswith("feeder.cable_loss_db"))
    shown = re.search(r"\(([-+]\d+(?:\.\d+)?) dB\)$", line)
    assert shown and "%" not in line
    assert float(shown.group(1)) == pytest.approx(cable.new - cable.old, abs=0.006)


def test_a_loss_brought_under_budget_resolves_the_discrepancy(pair):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: 1.0,")
    result = compare(old, new)
    total = next(item for item in result.figures_of("qx-fca", "DME1") if item.key == "feeder.total_loss_db")
    resolved = next(item for item in result.discrepancies if item.id == "qx-fca/DME1/feeder-loss")
    assert total.new < resolved.old["limit"] < total.old
    assert resolved.change == "resolved" and resolved.new is None
    assert result.counts()["discrepancies_resolved"] == 1


def test_added_antenna_is_listed_with_its_new_discrepancies(pair, capsys):
    old, new = pair
    path = new / "aircraft" / "qx-fcb.yaml"
    path.write_text(path.read_text(encoding="utf-8") + GNSS_ON_FCB, encoding="utf-8")
    old_record, new_record = records(old, new)
    result = compare_records(old_record, new_record)
    added = result.installation("qx-fcb", "GNSS1")
    assert added.change == "added"
    assert added.summary == "gnss_l1, FXA-L1-PATCH, STA 330 BL 0 WL 160 top, FXC-400 5 m"
    assert [item.change for item in result.installations] == ["added"]
    expected_new = {key for key, entry in new_record["discrepancies"].items() if entry["position"] == "GNSS1"}
    assert {item.id for item in result.discrepancies if item.change == "new"} == expected_new
    assert result.figures == []  # an added installation is reported whole, not figure by figure
    assert result.marks("qx-fcb") == ("1 installation added",) + (
        (f"{len(expected_new)} finding{'s' if len(expected_new) > 1 else ''} changed",) if expected_new else ())
    assert main(["diff", str(old), str(new)]) == 1
    assert "  added    qx-fcb/GNSS1  gnss_l1, FXA-L1-PATCH" in capsys.readouterr().out


def test_removed_antenna_resolves_its_discrepancies(pair, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml",
         "  - position: GS1\n    service: ils_gs\n    antenna: FXA-GS-FD\n"
         "    location: {sta: 20.0, bl: 0.0, wl: 100.0}\n    surface: nose\n"
         "    feeder: {cable: FXC-400, length_m: 4.0, connectors: 2}\n", "")
    old_record, new_record = records(old, new)
    result = compare_records(old_record, new_record)
    removed = result.installation("qx-fca", "GS1")
    assert removed.change == "removed" and removed.summary.startswith("ils_gs, FXA-GS-FD, STA 20 BL 0 WL 100 nose")
    on_gs1 = {key for key, entry in old_record["discrepancies"].items() if entry["position"] == "GS1"}
    assert on_gs1  # the fixture's folded dipole is cut long, so GS1 has a finding to resolve
    assert {item.id for item in result.discrepancies} == on_gs1
    assert all(item.change == "resolved" for item in result.discrepancies)
    assert main(["diff", str(old), str(new)]) == 1
    out = capsys.readouterr().out
    assert "  removed  qx-fca/GS1" in out and "  resolved qx-fca/GS1/element-length" in out


def test_antenna_moved_to_another_position_is_one_move_and_its_findings_follow(pair, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "  - position: VHF1\n", "  - position: VHF1-AFT\n")
    edit(new / "aircraft" / "qx-fca.yaml", "location: {sta: 312.0, bl: 0.0, wl: 158.0}",
         "location: {sta: 420.0, bl: 0.0, wl: 158.0}")
    result = compare(old, new)
    assert [item.change for item in result.installations] == ["moved"]
    moved = result.installation("qx-fca", "VHF1-AFT")
    assert moved.old_position == "VHF1"
    assert moved.fields == (FieldChange("location.sta", 312.0, 420.0),
                            FieldChange("position", "VHF1", "VHF1-AFT"))
    assert result.installation("qx-fca", "VHF1") is None
    # the band-coverage finding moved with its antenna: neither new nor resolved
    assert [item for item in result.discrepancies if item.change in ("new", "resolved")] == []
    assert result.marks("qx-fca", "VHF1-AFT") == ("installation moved from VHF1",)
    assert main(["diff", str(old), str(new)]) == 1
    out = capsys.readouterr().out
    assert "  moved    qx-fca/VHF1 → qx-fca/VHF1-AFT\n" in out
    assert "             location.sta: 312 → 420\n" in out


def test_a_move_needs_the_same_antenna_service_and_cable(pair):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "  - position: VHF1\n", "  - position: VHF1-AFT\n")
    edit(new / "aircraft" / "qx-fca.yaml", "      cable: FXC-400\n      length_m: 7.8\n",
         "      cable: FXC-142\n      length_m: 7.8\n")
    result = compare(old, new)
    assert sorted((item.position, item.change) for item in result.installations) == [
        ("VHF1", "removed"), ("VHF1-AFT", "added")]


def test_two_lookalike_installations_renamed_together_are_not_guessed_as_moves(pair):
    old, new = pair
    second = ("  - position: VHF2\n    service: vhf_com\n    antenna: FXA-120-BLD\n"
              "    location: {sta: 400.0, bl: 0.0, wl: 158.0}\n    surface: top\n"
              "    feeder: {cable: FXC-400, length_m: 9.0, connectors: 2}\n")
    for folder in (old, new):
        path = folder / "aircraft" / "qx-fca.yaml"
        path.write_text(path.read_text(encoding="utf-8") + second, encoding="utf-8")
    edit(new / "aircraft" / "qx-fca.yaml", "  - position: VHF1\n", "  - position: VHF-A\n")
    edit(new / "aircraft" / "qx-fca.yaml", "  - position: VHF2\n", "  - position: VHF-B\n")
    result = compare(old, new)
    assert sorted((item.position, item.change) for item in result.installations) == [
        ("VHF-A", "added"), ("VHF-B", "added"), ("VHF1", "removed"), ("VHF2", "removed")]


# ---- reviews, tolerance --------------------------------------------------------------------------------


def test_changed_review_is_reported(pair, capsys):
    old, new = pair
    # the fixture's 6 mm L-band blade (a/λ = 0.011) is beyond the thin-wire model: its finding is `unmodellable`
    path = new / "reviews.yaml"
    path.write_text(path.read_text(encoding="utf-8")
                    + "  - discrepancy: qx-fca/DME1/unmodellable\n    state: action-raised\n"
                      "    reviewer: R. Example\n    date: 2026-02-20\n    reference: ENG-REQ-0311\n",
                    encoding="utf-8")
    result = compare(old, new)
    assert result.installations == [] and result.figures == []
    [change] = result.discrepancies
    assert (change.id, change.change) == ("qx-fca/DME1/unmodellable", "changed")
    assert change.aspects == (FieldChange("review", "open", "action-raised (R. Example, ENG-REQ-0311)"),)
    assert result.counts()["review_changes"] == 1
    assert result.marks("qx-fca", "DME1") == ("1 finding changed",)
    assert main(["diff", str(old), str(new)]) == 1
    assert "review: open → action-raised (R. Example, ENG-REQ-0311)" in capsys.readouterr().out


def test_tolerance_decides_which_figures_moved(pair):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: 6.1001,")
    default = compare(old, new)
    assert default.installation("qx-fca", "DME1").fields == (FieldChange("feeder.length_m", 6.1, 6.1001),)
    assert default.figures == []  # a 0.002 % change moves no figure beyond 0.1 %
    exact = compare(old, new, rel=0.0, abs=0.0)
    assert "feeder.cable_loss_db" in {item.key for item in exact.figures}


def test_tolerance_rule():
    tolerance = Tolerance(rel=1e-3, abs=1e-3)
    assert tolerance.same(100.0, 100.09) and not tolerance.same(100.0, 100.2)
    assert tolerance.same(0.0, 0.0009) and not tolerance.same(0.0, 0.002)
    assert tolerance.same("metal", "metal") and not tolerance.same("metal", "composite")
    assert not tolerance.same(None, 1.0)


# ---- command line --------------------------------------------------------------------------------------


def test_json_output_for_other_tools(pair, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: 5.0,")
    assert main(["diff", "--format", "json", str(old), str(new)]) == 1
    data = json.loads(capsys.readouterr().out)
    assert data["same"] is False
    assert data["installations"] == [{"aircraft": "qx-fca", "position": "DME1", "change": "changed",
                                      "old_position": None,
                                      "summary": "dme, FXA-1000-BLD, STA 280 BL 0 WL 42 bottom, FXC-142 5 m",
                                      "fields": [{"field": "feeder.length_m", "old": 6.1, "new": 5.0}]}]
    assert data["counts"]["figures_moved"] == len(data["figures"]) > 0
    assert {item["owner"] for item in data["figures"]} == {"qx-fca/DME1"}


def test_sides_may_be_sites_and_record_files(pair, tmp_path, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: 5.0,")
    old_record, new_record = records(old, new)
    (tmp_path / "old-site").mkdir()
    record.write(old_record, tmp_path / "old-site" / "record.json")
    record.write(new_record, tmp_path / "new.json")
    assert main(["diff", "--format", "json", str(tmp_path / "old-site"), str(tmp_path / "new.json")]) == 1
    from_files = json.loads(capsys.readouterr().out)
    assert main(["diff", "--format", "json", str(old), str(new)]) == 1
    from_folders = json.loads(capsys.readouterr().out)
    for data in (from_files, from_folders):
        del data["old"], data["new"]
    assert from_files == from_folders


@pytest.mark.parametrize("args, message", [
    (["diff", "no-such-folder", "other"], "no-such-folder: no such file or folder"),
    (["diff", "a", "b", "c"], "expected OLD [NEW], or --git REV [NEW]"),
    (["diff", "--rel-tol", "-1", "a"], "tolerances must not be negative"),
])
def test_usage_errors_exit_2(args, message, capsys, monkeypatch, tmp_path):
    monkeypatch.chdir(tmp_path)
    assert main(args) == 2
    assert message in capsys.readouterr().err


def test_data_errors_exit_2(pair, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: -6.1,")
    assert main(["diff", str(old), str(new)]) == 2
    assert "feeder.length_m" in capsys.readouterr().err


# ---- git revisions -------------------------------------------------------------------------------------


def git(repo: Path, *args: str, when: str = "2025-06-01T12:00:00Z") -> str:
    stamp = {"GIT_AUTHOR_DATE": when, "GIT_COMMITTER_DATE": when}
    done = subprocess.run(["git", "-C", str(repo), "-c", "user.name=Test Engineer", "-c", "user.email=test@example.invalid",
                           "-c", "commit.gpgsign=false", *args], capture_output=True, text=True, check=True,
                          env={**os.environ, **stamp})
    return done.stdout


@pytest.fixture
def repo(tmp_path, fixture_shipped):
    """A git repository with the registry in `reg/`, two commits: the fixture, then DME1's feeder at 5 m."""
    root = tmp_path / "repo"
    root.mkdir()
    git(root, "init", "-q")
    shutil.copytree(GOOD, root / "reg")
    (root / "README").write_text("not registry data\n")
    git(root, "add", ".")
    git(root, "commit", "-q", "-m", "registry", when="2025-01-10T12:00:00Z")
    edit(root / "reg" / "aircraft" / "qx-fca.yaml", "length_m: 6.1,", "length_m: 5.0,")
    git(root, "commit", "-q", "-am", "DME1 feeder shortened")
    return root


def test_git_revision_as_the_old_side(repo, capsys):
    assert main(["diff", "--git", "HEAD~1", str(repo / "reg")]) == 1
    out = capsys.readouterr().out
    short = git(repo, "rev-parse", "--short", "HEAD~1").strip()
    assert out.startswith(f"OLD  {(repo / 'reg').as_posix()} at git HEAD~1 ({short}), as of 2026-03-01\n")
    assert "  changed  qx-fca/DME1\n             feeder.length_m: 6.1 → 5\n" in out
    assert main(["diff", "--git", "HEAD", str(repo / "reg")]) == 0
    capsys.readouterr()
    # git:REV works on either side, and --data names the registry folder whose history is read
    assert main(["diff", "--format", "json", "--data", str(repo / "reg"), "git:HEAD~1", "git:HEAD"]) == 1
    data = json.loads(capsys.readouterr().out)
    assert [(item["position"], item["change"]) for item in data["installations"]] == [("DME1", "changed")]


def test_git_side_sees_the_revision_not_the_working_tree(repo, capsys):
    edit(repo / "reg" / "aircraft" / "qx-fca.yaml", "length_m: 5.0,", "length_m: 4.0,")  # not committed
    assert main(["diff", "--format", "json", "--git", "HEAD", str(repo / "reg")]) == 1
    data = json.loads(capsys.readouterr().out)
    assert data["installations"][0]["fields"] == [{"field": "feeder.length_m", "old": 5.0, "new": 4.0}]


def test_git_side_is_computed_as_of_the_new_sides_date(repo, monkeypatch, capsys):
    monkeypatch.delenv("SOURCE_DATE_EPOCH")
    assert main(["diff", "--format", "json", "--git", "HEAD~1", str(repo / "reg")]) == 1
    data = json.loads(capsys.readouterr().out)
    assert data["new"]["as_of"] == "2025-06-01"  # the last commit of the registry folder
    assert data["old"]["as_of"] == "2025-06-01"  # not HEAD~1's own date, nor the day the test runs
    assert not any(item["key"] == "measured.age_days" for item in data["figures"])
    assert main(["diff", "--format", "json", "--as-of", "2025-03-01", "--git", "HEAD~1", str(repo / "reg")]) == 1
    data = json.loads(capsys.readouterr().out)
    assert data["old"]["as_of"] == data["new"]["as_of"] == "2025-03-01"


@pytest.mark.parametrize("rev, message", [
    ("no-such-rev", "git:no-such-rev: no such revision"),
    ("", "expected a git revision"),
])
def test_bad_git_revisions_exit_2(repo, rev, message, capsys):
    assert main(["diff", f"git:{rev}", str(repo / "reg")]) == 2
    assert message in capsys.readouterr().err


def test_git_outside_a_repository_exits_2(pair, capsys):
    old, _ = pair
    assert main(["diff", "--git", "HEAD", str(old)]) == 2
    assert "not inside a git repository" in capsys.readouterr().err


def test_data_errors_at_a_revision_point_at_the_revision(repo, capsys):
    edit(repo / "reg" / "aircraft" / "qx-fca.yaml", "length_m: 5.0,", "length_m: -5.0,")
    git(repo, "commit", "-q", "-am", "a typo")
    edit(repo / "reg" / "aircraft" / "qx-fca.yaml", "length_m: -5.0,", "length_m: 5.0,")
    assert main(["diff", "--git", "HEAD", str(repo / "reg")]) == 2
    err = capsys.readouterr().err
    assert "HEAD:reg/aircraft/qx-fca.yaml:" in err and "aerialbook-diff-" not in err


# ---- the site ------------------------------------------------------------------------------------------


def test_build_writes_the_record_and_with_compare_a_changes_page(pair, tmp_path, capsys):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "  - position: VHF1\n", "  - position: VHF1-AFT\n")
    assert main(["build", str(old), "-o", str(tmp_path / "old-site")]) == 0
    assert (tmp_path / "old-site" / "record.json").read_text(encoding="utf-8") == record.to_text(pipeline.run(old))
    assert "changes.html" not in {path.name for path in (tmp_path / "old-site").iterdir()}
    assert main(["build", str(new), "-o", str(tmp_path / "new-site"), "--compare", str(tmp_path / "old-site")]) == 0
    page = (tmp_path / "new-site" / "changes.html").read_text(encoding="utf-8")
    assert "<h1>Changes in this build</h1>" in page
    assert 'href="aircraft/qx-fca/VHF1-AFT.html"' in page and "(was VHF1)" in page
    capsys.readouterr()
    assert main(["diff", str(tmp_path / "old-site"), str(tmp_path / "new-site")]) == 1
    assert "  moved    qx-fca/VHF1 → qx-fca/VHF1-AFT" in capsys.readouterr().out


def test_changes_page_links_only_what_exists_in_the_new_build(pair):
    old, new = pair
    edit(new / "aircraft" / "qx-fca.yaml", "  - position: VHF1\n", "  - position: VHF1-AFT\n")
    edit(new / "aircraft" / "qx-fca.yaml", "      cable: FXC-400\n      length_m: 7.8\n",
         "      cable: FXC-142\n      length_m: 7.8\n")  # no longer a move: removed + added
    context = changes_page(compare(old, new), aircraft_href=render.aircraft_path,
                                installation_href=render.installation_path)
    links = {(row["position"], row["change"]): row["href"] for row in context["installations"]}
    assert links == {("VHF1", "removed"): None, ("VHF1-AFT", "added"): "aircraft/qx-fca/VHF1-AFT.html"}
    [craft] = context["aircraft"]
    assert (craft["id"], craft["registration"], craft["href"]) == ("qx-fca", "QX-FCA", "aircraft/qx-fca.html")
    assert craft["marks"][:2] == ["1 installation added", "1 installation removed"]
    findings = {(row["id"], row["change"], row["href"]) for row in context["discrepancies"]}
    assert ("qx-fca/VHF1/band-coverage", "resolved", None) in findings
    assert ("qx-fca/VHF1-AFT/band-coverage", "new", "aircraft/qx-fca/VHF1-AFT.html") in findings


# ---- the demo's modification scenario ------------------------------------------------------------------


SCENARIO = DEMO / "scenario" / "qx-tjb-before-mod-2026-031.yaml"


@pytest.mark.skipif(not SCENARIO.is_file(), reason="the demo's modification scenario is not in this tree")
def test_demo_modification_scenario_end_to_end(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", AS_OF_EPOCH)
    before = tmp_path / "before"
    shutil.copytree(DEMO, before)
    shutil.copy(SCENARIO, before / "aircraft" / "qx-tjb.yaml")
    shutil.copy(SCENARIO.with_name("modifications-before-mod-2026-031.yaml"), before / "modifications.yaml")
    assert main(["diff", "--format", "json", str(before), str(DEMO)]) == 1
    data = json.loads(capsys.readouterr().out)
    assert {item["aircraft"] for item in data["installations"]} == {"qx-tjb"}
    assert [item["id"] for item in data["items"] if item["kind"] == "aircraft"] == ["qx-tjb"]
    old_record, new_record = (record.to_record(pipeline.run(folder)) for folder in (before, DEMO))
    old_positions = set(old_record["registry"]["aircraft"]["qx-tjb"]["installations"])
    new_positions = set(new_record["registry"]["aircraft"]["qx-tjb"]["installations"])
    moves = {(item["old_position"], item["position"]) for item in data["installations"] if item["change"] == "moved"}
    gone = {item["position"] for item in data["installations"] if item["change"] == "removed"}
    came = {item["position"] for item in data["installations"] if item["change"] == "added"}
    assert gone | {old for old, _ in moves} == old_positions - new_positions
    assert came | {new for _, new in moves} == new_positions - old_positions
    assert main(["diff", str(before), str(DEMO)]) == 1
    assert capsys.readouterr().out.splitlines()[-1].startswith("installations: ")


def test_changed_severity_is_reported(pair):
    old, _ = pair
    before = record.to_record(pipeline.run(old))
    after = json.loads(record.dumps(before))
    after["discrepancies"]["qx-fca/GS1/element-length"]["severity"] = "unserviceable"  # as a rule change would do
    result = compare_records(before, after)
    [change] = result.discrepancies
    assert change.aspects == (FieldChange("severity", before["discrepancies"]["qx-fca/GS1/element-length"]
                                               ["severity"], "unserviceable"),)
    assert result.counts()["severity_changes"] == 1 and not result.same
    assert "             severity: query → unserviceable\n" in as_text(result)
