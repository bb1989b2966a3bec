"""`diff` of two built sites compares only the aircraft whose lines differ (`output/record_lines.py`),
and says exactly what comparing the two records read whole says (the reference here is the comparison
of the fully parsed records, the path every other kind of side takes)."""
from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from registry import pipeline
from registry.cli import main
from registry.output import compare_text, record, sides
from registry.output.compare import compare

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
SCENARIO = DEMO / "scenario" / "qx-tjb-before-mod-2026-031.yaml"


@pytest.fixture(scope="module")
def two_sites(tmp_path_factory):
    """The demo before QX-TJB's satcom modification and after it, built as sites (README's scenario)."""
    work = tmp_path_factory.mktemp("sites")
    before = work / "before"
    shutil.copytree(DEMO, before)
    shutil.copyfile(SCENARIO, before / "aircraft" / "qx-tjb.yaml")
    shutil.copyfile(SCENARIO.with_name("modifications-before-mod-2026-031.yaml"), before / "modifications.yaml")
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("SOURCE_DATE_EPOCH", "1764806400")
        pipeline.build(before, work / "old", cache_dir=None)
        pipeline.build(DEMO, work / "new", cache_dir=None)
    return work / "old", work / "new"


def whole(site: Path) -> dict:
    return record.read(site / record.RECORD_NAME)


def test_a_modification_reads_as_when_both_records_are_read_whole(two_sites, capsys):
    old, new = two_sites
    pair = sides.read_record_pair(str(old), str(new))
    assert pair is not None
    assert set(pair[1].record["registry"]["aircraft"]) == {"qx-tjb"}  # only the modified aircraft was read
    expected = compare(whole(old), whole(new), old_label=f"site {old}", new_label=f"site {new}")
    assert main(["diff", str(old), str(new)]) == 1
    assert capsys.readouterr().out == compare_text.as_text(expected)
    assert main(["diff", str(old), str(new), "--format", "json"]) == 1
    assert json.loads(capsys.readouterr().out) == json.loads(compare_text.as_json(expected))


def test_two_identical_builds_read_no_aircraft_and_no_differences(two_sites, tmp_path, capsys):
    _, new = two_sites
    copy = tmp_path / "copy.json"
    shutil.copyfile(new / record.RECORD_NAME, copy)
    pair = sides.read_record_pair(str(new), str(copy))
    assert pair is not None and pair[0].record["registry"]["aircraft"] == {}
    assert main(["diff", str(new), str(copy)]) == 0
    assert "no differences" in capsys.readouterr().out


def test_a_review_change_alone_brings_its_aircraft_in(two_sites, tmp_path, capsys):
    # a finding's review state lives with the discrepancies, not on the aircraft's lines
    _, new = two_sites
    text = (new / record.RECORD_NAME).read_text(encoding="utf-8")
    data = json.loads(text)
    finding = next(key for key, item in data["discrepancies"].items() if item["review"] == "open")
    entry = json.dumps(data["discrepancies"][finding], sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    changed = text.replace(entry, entry.replace('"review":"open"', '"review":"accepted"'), 1)
    assert changed != text
    edited = tmp_path / "edited.json"
    edited.write_text(changed, encoding="utf-8")
    pair = sides.read_record_pair(str(new), str(edited))
    assert set(pair[1].record["registry"]["aircraft"]) == {finding.split("/")[0]}
    expected = compare(whole(new), record.read(edited), old_label=f"site {new}", new_label=f"record {edited}")
    assert main(["diff", str(new), str(edited)]) == 1
    assert capsys.readouterr().out == compare_text.as_text(expected)


def test_a_record_on_one_line_is_read_whole(two_sites, tmp_path, capsys):
    # a record written as one compact line (by hand, or by an earlier version) is not in the layout
    old, new = two_sites
    one_line = tmp_path / "one-line.json"
    one_line.write_text(record.dumps(whole(old)), encoding="utf-8")
    assert sides.read_record_pair(str(one_line), str(new)) is None
    expected = compare(whole(old), whole(new), old_label=f"record {one_line}", new_label=f"site {new}")
    assert main(["diff", str(one_line), str(new)]) == 1
    assert capsys.readouterr().out == compare_text.as_text(expected)
