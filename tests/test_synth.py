"""The synthetic fleet generator (bench/synth_fleet.py): deterministic, loadable, the size asked for,
and its planted faults, and only those, found by the checks."""
from __future__ import annotations

import importlib.util
import re
import sys
from pathlib import Path

import pytest
import yaml

from registry import pipeline
from registry.load.fleet import load_fleet

ROOT = Path(__file__).resolve().parent.parent
ID_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$")


def _load_generator():
    spec = importlib.util.spec_from_file_location("synth_fleet", ROOT / "bench" / "synth_fleet.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules["synth_fleet"] = module
    spec.loader.exec_module(module)
    return module


synth = _load_generator()


def files_of(folder: Path) -> dict[str, bytes]:
    return {path.relative_to(folder).as_posix(): path.read_bytes()
            for path in sorted(folder.rglob("*")) if path.is_file()}


@pytest.fixture(autouse=True)
def synthetic_day(monkeypatch):
    """Measurement ages counted to the generator's own date, as the benchmark does."""
    monkeypatch.setenv("SOURCE_DATE_EPOCH", str(synth.AS_OF_EPOCH))


@pytest.fixture(scope="module")
def faulty(tmp_path_factory):
    """Three aircraft of 30 installations with a fault in about one installation in twenty."""
    out = tmp_path_factory.mktemp("synth") / "fleet"
    return synth.generate(3, out, seed=5, installations=30, fault_rate=0.05)


def test_same_seed_writes_identical_files(tmp_path):
    synth.generate(3, tmp_path / "a", seed=9, installations=24)
    synth.generate(3, tmp_path / "b", seed=9, installations=24)
    first, second = files_of(tmp_path / "a"), files_of(tmp_path / "b")
    assert first.keys() == second.keys()
    assert [name for name in first if first[name] != second[name]] == []


def test_another_seed_writes_another_fleet(tmp_path):
    synth.generate(3, tmp_path / "a", seed=9)
    synth.generate(3, tmp_path / "b", seed=10)
    first, second = files_of(tmp_path / "a"), files_of(tmp_path / "b")
    assert first["aircraft/qx-0001.yaml"] != second["aircraft/qx-0001.yaml"]


def test_regenerating_into_a_folder_replaces_its_aircraft(tmp_path):
    synth.generate(5, tmp_path / "fleet", seed=1, installations=20)
    synth.generate(2, tmp_path / "fleet", seed=1, installations=20)
    assert sorted(path.name for path in (tmp_path / "fleet" / "aircraft").glob("*.yaml")) == [
        "qx-0001.yaml", "qx-0002.yaml"]


def test_loads_cleanly_with_the_requested_size(faulty):
    fleet = load_fleet(faulty.out_dir)
    assert sorted(fleet.aircraft) == ["qx-0001", "qx-0002", "qx-0003"] == faulty.aircraft
    assert [len(aircraft.installations) for aircraft in fleet.aircraft.values()] == [30, 30, 30]
    assert faulty.installations == 90
    assert set(fleet.airframes) == {"tc-44", "tj-88"}


@pytest.mark.parametrize("installations", [12, 20, 40])
def test_each_aircraft_has_the_requested_number_of_installations(tmp_path, installations):
    synth.generate(4, tmp_path, seed=3, installations=installations, fault_rate=0.0)
    fleet = load_fleet(tmp_path)
    assert {len(aircraft.installations) for aircraft in fleet.aircraft.values()} == {installations}


def test_more_installations_than_the_airframes_can_take_is_refused(tmp_path):
    with pytest.raises(ValueError, match="installations can be placed"):
        synth.generate(1, tmp_path, installations=200)


def test_ids_and_registrations_are_unique_and_valid(tmp_path):
    synth.generate(40, tmp_path, seed=2, installations=16, fault_rate=0.0)
    docs = [yaml.safe_load(path.read_text(encoding="utf-8"))
            for path in sorted((tmp_path / "aircraft").glob("*.yaml"))]
    ids = [doc["id"] for doc in docs]
    registrations = [doc["registration"] for doc in docs]
    assert len(set(ids)) == len(set(registrations)) == 40
    assert all(ID_PATTERN.match(aircraft_id) for aircraft_id in ids)
    assert all(re.fullmatch(r"QX-\d{4}", mark) for mark in registrations)
    for doc in docs:
        positions = [item["position"] for item in doc["installations"]]
        assert len(set(positions)) == len(positions)
    assert {doc["airframe"] for doc in docs} == {"tc-44", "tj-88"}


def test_catalogues_are_the_demos_and_reviews_are_empty(faulty):
    for name in ("fleet.yaml", "policy.yaml", "antennas.yaml", "cables.yaml", "airframes/tc-44.yaml"):
        assert (faulty.out_dir / name).read_bytes() == (ROOT / "fleet_data" / name).read_bytes()
    reviews = (faulty.out_dir / "reviews.yaml").read_text(encoding="utf-8")
    assert reviews.startswith("# yaml-language-server: $schema=")
    assert yaml.safe_load(reviews) == {"reviews": []}
    first_line = (faulty.out_dir / "aircraft" / "qx-0001.yaml").read_text(encoding="utf-8").splitlines()[0]
    assert first_line == "# yaml-language-server: $schema=../../registry/schemas/aircraft.schema.json"


def test_aircraft_vary_within_a_type(tmp_path):
    synth.generate(6, tmp_path, seed=4, installations=20, fault_rate=0.0)
    fleet = load_fleet(tmp_path)
    by_type: dict[str, list] = {}
    for aircraft in fleet.aircraft.values():
        by_type.setdefault(aircraft.airframe, []).append(aircraft)
    same_type = next(group for group in by_type.values() if len(group) > 1)
    first, second = same_type[0].installations, same_type[1].installations
    assert list(first) == list(second)  # the same positions on one type
    assert any(first[name].feeder.length_m != second[name].feeder.length_m for name in first)
    assert any(first[name].location.sta != second[name].location.sta for name in first)


def test_all_three_fault_kinds_are_planted(faulty):
    assert len(faulty.faults) == round(0.05 * 90)
    assert {fault.kind for fault in faulty.faults} == set(synth.FAULT_KINDS)
    assert {fault.rule for fault in faulty.faults} >= {"feeder-loss", "measurement-age"}


def test_planted_faults_are_found_by_the_checks(faulty):
    found = {discrepancy.id for discrepancy in pipeline.run(faulty.out_dir).discrepancies}
    assert [fault.discrepancy for fault in faulty.faults if fault.discrepancy not in found] == []
    assert any(found_id.endswith("/feeder-loss") for found_id in found)
    assert any(found_id.endswith("/measurement-age") for found_id in found)


def test_nothing_but_the_planted_faults_is_found(faulty):
    planted = {(fault.aircraft, fault.position) for fault in faulty.faults}
    outcome = pipeline.run(faulty.out_dir)
    unplanted = [d.id for d in outcome.discrepancies
                 if not all((d.id.split("/")[0], position) in planted for position in d.id.split("/")[1].split("+"))]
    assert unplanted == []


def test_without_faults_the_fleet_is_clean(tmp_path):
    made = synth.generate(4, tmp_path, seed=8, installations=34, fault_rate=0.0)
    assert made.faults == []
    assert pipeline.run(tmp_path).discrepancies == []


def test_command_line_writes_the_registry(tmp_path, capsys):
    assert synth.main(["2", str(tmp_path / "cli"), "--seed", "3", "--installations", "18"]) == 0
    assert "2 aircraft, 36 installations" in capsys.readouterr().out
    assert len(load_fleet(tmp_path / "cli").aircraft) == 2


def test_command_line_refuses_an_impossible_size(tmp_path, capsys):
    assert synth.main(["0", str(tmp_path / "none")]) == 2
    assert "at least 1" in capsys.readouterr().err
