"""The build record: complete, valid against its own JSON Schema, byte-for-byte reproducible, and refused
when it is not a record this version can read."""
import json
import math
import shutil
from pathlib import Path

import jsonschema
import pytest

import registry.load.fleet
from registry import pipeline
from registry.output import record
from registry.output.record import RecordError

FIXTURES = Path(__file__).parent / "fixtures"
GOOD = FIXTURES / "good"
AS_OF_EPOCH = "1772323200"  # 2026-03-01 00:00 UTC: measurement ages do not depend on the day the tests run


@pytest.fixture(autouse=True)
def fixed_inputs(monkeypatch):
    monkeypatch.setattr(registry.load.fleet, "SHIPPED_DIR", FIXTURES / "shipped")
    monkeypatch.setenv("SOURCE_DATE_EPOCH", AS_OF_EPOCH)


def copy_registry(target: Path) -> Path:
    shutil.copytree(GOOD, target)
    return target


def add_review(data: Path, text: str) -> None:
    path = data / "reviews.yaml"
    path.write_text(path.read_text(encoding="utf-8") + text, encoding="utf-8")


def test_record_holds_every_installation_figure_and_discrepancy(tmp_path):
    data = copy_registry(tmp_path / "reg")
    add_review(data, "  - discrepancy: qx-fca/DME1/feeder-loss\n    state: accepted\n"
                     "    reviewer: R. Example\n    date: 2026-02-01\n    reference: ENG-REQ-0007\n")
    outcome = pipeline.run(data)
    made = record.to_record(outcome)
    jsonschema.Draft202012Validator(record.schema()).validate(made)

    assert made["format_version"] == record.FORMAT_VERSION
    assert made["as_of"] == "2026-03-01"
    assert set(made["registry"]["aircraft"]) == set(outcome.fleet.aircraft)
    for craft, installation in outcome.fleet.installations():
        entry = made["registry"]["aircraft"][craft.id]["installations"][installation.position]
        assert entry["antenna"] == installation.antenna
        assert entry["feeder"]["length_m"] == installation.feeder.length_m
        assert entry["location"] == {"sta": installation.location.sta, "bl": installation.location.bl,
                                     "wl": installation.location.wl}
        figures = made["figures"]["installations"][f"{craft.id}/{installation.position}"]
        result = outcome.results.installations[(craft.id, installation.position)]
        assert set(figures["figures"]) == {figure.key for figure in result.figures}
        assert figures["pattern_key"] == result.pattern_key
    assert set(made["figures"]["patterns"]) == set(outcome.results.patterns)
    assert set(made["figures"]["cables"]) == set(outcome.results.cables)
    assert set(made["discrepancies"]) == {item.id for item in outcome.discrepancies}
    reviewed = made["discrepancies"]["qx-fca/DME1/feeder-loss"]
    assert (reviewed["review"], reviewed["reviewer"], reviewed["review_reference"]) == (
        "accepted", "R. Example", "ENG-REQ-0007")
    assert {entry["discrepancy"] for entry in made["stale_reviews"]} == {
        review.discrepancy for review in outcome.stale_reviews}


def test_figures_keep_six_significant_digits_and_registry_values_stay_as_typed(tmp_path):
    outcome = pipeline.run(copy_registry(tmp_path / "reg"))
    made = record.to_record(outcome)
    result = outcome.results.installations[("qx-fca", "VHF1")]
    wavelength = result.figure("length.wavelength_m").value
    assert made["figures"]["installations"]["qx-fca/VHF1"]["figures"]["length.wavelength_m"]["value"] == float(
        f"{wavelength:.6g}")
    assert made["registry"]["aircraft"]["qx-fca"]["installations"]["VHF1"]["feeder"]["length_m"] == 7.8
    assert made["registry"]["aircraft"]["qx-fca"]["installations"]["VHF1"]["measured"]["sweep"] == \
        "aircraft/sweeps/qx-fca-vhf1.s1p"


def test_same_registry_in_two_folders_gives_the_same_bytes(tmp_path):
    first = record.dumps(record.to_record(pipeline.run(copy_registry(tmp_path / "one"))))
    again = record.dumps(record.to_record(pipeline.run(tmp_path / "one")))
    elsewhere = record.dumps(record.to_record(pipeline.run(copy_registry(tmp_path / "deeper" / "two"))))
    assert first == again == elsewhere
    assert str(tmp_path) not in first
    assert json.loads(first) == record.to_record(pipeline.run(tmp_path / "one"))
    assert list(json.loads(first)) == sorted(json.loads(first))


def test_round_sig_and_values_json_cannot_hold():
    assert record.round_sig(2.3513133960784316, 6) == 2.35131
    assert record.round_sig(-0.000123456789, 3) == -0.000123
    assert record.round_sig(math.inf, 6) == "inf"
    assert record.round_sig(-math.inf, 6) == "-inf"
    assert record.round_sig(math.nan, 6) == "nan"
    assert record.round_sig(0.0, 6) == 0.0


def test_written_record_reads_back(tmp_path):
    made = record.to_record(pipeline.run(copy_registry(tmp_path / "reg")))
    record.write(made, tmp_path / "record.json")
    assert record.read(tmp_path / "record.json") == made


@pytest.mark.parametrize("change, message", [
    (lambda r: r.update(format_version=1), "format_version: found 1, expected 2"),
    (lambda r: r.pop("discrepancies"), "(record): 'discrepancies' is a required property"),
    (lambda r: next(iter(r["discrepancies"].values())).update(severity="dire"), "severity: 'dire' is not one of"),
])
def test_unusable_records_are_refused_with_the_reason(tmp_path, change, message):
    made = record.to_record(pipeline.run(copy_registry(tmp_path / "reg")))
    change(made)
    path = tmp_path / "record.json"
    path.write_text(json.dumps(made), encoding="utf-8")
    with pytest.raises(RecordError) as caught:
        record.read(path)
    assert str(caught.value).startswith(f"{path}: ")
    assert message in str(caught.value)


def test_a_file_that_is_not_json_is_refused_with_its_line(tmp_path):
    path = tmp_path / "record.json"
    path.write_text('{\n  "format_version": 1,\n  oops\n}\n', encoding="utf-8")
    with pytest.raises(RecordError, match=r"record\.json:3:3: not JSON"):
        record.read(path)


def test_record_text_is_the_canonical_encoding_whatever_the_aircraft_ids(tmp_path):
    # The record is joined from each aircraft's pre-encoded share; it must come out exactly as one
    # sorted, compact json.dumps of the whole would (Python json module documentation, sort_keys), but
    # for the line breaks between aircraft (outside strings: JSON escapes a line break inside one).
    # "qx-fca-2" sorts after "qx-fca" as an id but before it as a key prefix ("-" < "/").
    data = copy_registry(tmp_path / "reg")
    source = (data / "aircraft" / "qx-fca.yaml").read_text(encoding="utf-8")
    twin = source.replace("id: qx-fca", "id: qx-fca-2").replace("registration: QX-FCA", "registration: QX-FCZ")
    (data / "aircraft" / "qx-fca-2.yaml").write_text(twin, encoding="utf-8")
    text = record.to_text(pipeline.run(data, cache_dir=tmp_path / "cache"))
    assert record.dumps(json.loads(text)) == text.replace("\n", "") + "\n"
    aircraft = len(json.loads(text)["registry"]["aircraft"])
    assert text.count("\n") >= 3 * aircraft  # each aircraft's share of the per-aircraft maps on its own line
    installations = list(json.loads(text)["figures"]["installations"])
    assert any(key.startswith("qx-fca-2/") for key in installations)
    assert installations == sorted(installations)
    # the same text from the cached shares as from a fresh computation
    assert record.to_text(pipeline.run(data, cache_dir=tmp_path / "cache")) == text
    assert record.to_text(pipeline.run(data)) == text
