"""Loading the good registry: what the model holds, and where each value came from."""
from __future__ import annotations

import dataclasses
import shutil
from pathlib import Path

import pytest

from registry.core.errors import DataError, Problem, Src
from registry.load.fleet import load_fleet
from registry.core.units import FOOT_M

FIXTURES = Path(__file__).parent / "fixtures"
GOOD = FIXTURES / "good"


@pytest.fixture(scope="module")
def fleet():
    return load_fleet(GOOD, FIXTURES / "shipped")


def line_of(path: Path, text: str) -> int:
    """The 1-based line of the first line of `path` containing `text`."""
    lines = path.read_text(encoding="utf-8").splitlines()
    return next(number for number, line in enumerate(lines, 1) if text in line)


def test_fleet_file(fleet):
    assert fleet.operator == "Ferncliff Island Air"
    assert fleet.site_title == "Ferncliff antenna register"
    assert fleet.data_dir == GOOD


def test_collections_iterate_in_sorted_id_order(fleet):
    assert list(fleet.aircraft) == ["qx-fca", "qx-fcb"]
    assert list(fleet.airframes) == ["fx-20"]
    assert list(fleet.antennas) == sorted(fleet.antennas)
    assert list(fleet.cables) == ["FXC-142", "FXC-400"]
    assert list(fleet.aircraft["qx-fca"].installations) == ["DME1", "GS1", "VHF1"]
    assert [(aircraft.id, item.position) for aircraft, item in fleet.installations()] == [
        ("qx-fca", "DME1"), ("qx-fca", "GS1"), ("qx-fca", "VHF1"), ("qx-fcb", "VHF1")]


def test_installation_values(fleet):
    vhf1 = fleet.aircraft["qx-fca"].installations["VHF1"]
    assert (vhf1.location.sta, vhf1.location.bl, vhf1.location.wl) == (312.0, 0.0, 158.0)
    assert vhf1.feeder.length_m == 7.8 and vhf1.feeder.connectors == 2 and vhf1.feeder.adapters == 0
    assert vhf1.measured.vswr == 1.35 and vhf1.measured.date.isoformat() == "2025-02-11"
    assert vhf1.measured.sweep.is_file()
    assert vhf1.ground_plane.type == "skin" and vhf1.ground_plane.radius_m is None
    assert vhf1.notes.startswith("Top centreline")
    dme1 = fleet.aircraft["qx-fca"].installations["DME1"]
    assert dme1.ground_plane.radius_m == 0.2 and dme1.feeder.adapters == 1 and dme1.measured is None
    assert fleet.aircraft["qx-fca"].modifications[0].date.isoformat() == "2023-04-18"
    assert fleet.aircraft["qx-fcb"].serial is None


def test_where_points_to_the_line_of_each_value(fleet):
    path = GOOD / "aircraft" / "qx-fca.yaml"
    vhf1 = fleet.aircraft["qx-fca"].installations["VHF1"]
    assert vhf1.where("feeder.length_m") == Src(str(path), line_of(path, "length_m: 7.8"), 7)
    assert vhf1.feeder.where("length_m") == vhf1.where("feeder.length_m")
    assert vhf1.where("measured.vswr").line == line_of(path, "vswr: 1.35")
    assert vhf1.src.line == line_of(path, "position: VHF1")
    assert vhf1.field_path("feeder.length_m") == "installations[0].feeder.length_m"  # first in the file
    # a field that is not written falls back to the nearest written parent
    assert vhf1.where("feeder.adapters") == vhf1.where("feeder")
    gs1 = fleet.aircraft["qx-fca"].installations["GS1"]
    assert gs1.where("measured.vswr") == gs1.src
    antennas = GOOD / "antennas.yaml"
    assert fleet.antennas["FXA-TEST-YAGI"].where("geometry.elements[1].length_m").line == line_of(
        antennas, "{role: driven")


def test_cable_table_normalised_to_db_per_100m(fleet):
    per_ft = fleet.cables["FXC-142"]
    assert per_ft.declared_unit == "db_per_100ft"
    # 4.5 dB per 100 ft is 4.5 dB per 30.48 m
    assert per_ft.attenuation_db_per_100m[0] == pytest.approx((100.0, 4.5 * 100 / (100 * FOOT_M)))
    per_m = fleet.cables["FXC-400"]
    assert per_m.declared_unit == "db_per_100m"
    assert per_m.attenuation_db_per_100m == ((100.0, 14.8), (400.0, 30.5), (1000.0, 49.5))


def test_services_shipped_and_overridden(fleet):
    assert list(fleet.services) == ["dme", "gnss_l1", "ils_gs", "ops_data", "vhf_com"]
    assert fleet.services["vhf_com"].shipped and fleet.services["vhf_com"].design_freq_mhz == 127.5
    dme = fleet.services["dme"]
    assert not dme.shipped and dme.design_freq_mhz == 1087.5
    assert dme.src.path == str(GOOD / "services.yaml")
    # no design frequency given: the centre of the first band
    assert fleet.services["ops_data"].design_freq_mhz == pytest.approx((131.0 + 137.0) / 2)


def test_policy_merges_fleet_over_shipped(fleet):
    policy = fleet.policy
    assert policy.vswr_limit == 1.9
    assert policy.where("vswr_limit").path == str(GOOD / "policy.yaml")
    assert policy.where("connector_loss_db").path == str(FIXTURES / "shipped" / "policy.yaml")
    assert policy.vswr_limit_for("dme") == 1.5 and policy.vswr_limit_for("vhf_com") == 1.9
    assert policy.feeder_loss_budget_for("vhf_com") == 2.5
    assert policy.feeder_loss_budget_for("gnss_l1") == 6.0
    assert policy.feeder_loss_budget_for("ils_gs") == 3.0
    assert policy.min_isolation_for("dme", "dme").isolation_db == 35.0
    assert policy.min_isolation_for("vhf_com", "vhf_com").isolation_db == 40.0
    assert policy.min_isolation_for("dme", "vhf_com") is None
    assert policy.sources["vswr_limit"] == "common practice"


def test_airframe_material_by_zone(fleet):
    airframe = fleet.airframe_of(fleet.aircraft["qx-fca"])
    assert airframe.coord_unit == "in" and airframe.wing.span == 1020.0 and airframe.fin.height == 190.0
    assert airframe.material_at(20.0, "nose") == "composite"  # the zone that lists the surface wins
    assert airframe.material_at(20.0, "top") == "metal"
    assert airframe.material_at(700.0, "fin") == "composite"
    assert airframe.material_at(640.0, "bottom") is None  # [sta_from, sta_to): 640 is past the first zone
    assert airframe.material_at(639.9, "bottom") == "metal"


def test_antenna_models(fleet):
    blade = fleet.antennas["FXA-120-BLD"]
    assert blade.kind == "quarter_wave_monopole" and blade.bands_mhz == ((118.0, 137.0),)
    assert blade.geometry["element_length_m"] == 0.56
    yagi = fleet.antennas["FXA-TEST-YAGI"].geometry
    assert [element["role"] for element in yagi["elements"]] == ["reflector", "driven", "director"]
    with pytest.raises(TypeError):
        yagi["element_diameter_m"] = 1.0  # read-only
    assert hash(fleet.antennas["FXA-TEST-YAGI"]) == hash(load_fleet(GOOD, FIXTURES / "shipped").antennas["FXA-TEST-YAGI"])


def test_model_objects_are_frozen(fleet):
    with pytest.raises(dataclasses.FrozenInstanceError):
        fleet.aircraft["qx-fca"].registration = "QX-ZZZ"


def test_reviews_keyed_by_discrepancy(fleet):
    assert list(fleet.reviews) == ["qx-fca/DME1+VHF1/isolation", "qx-fca/VHF1/feeder-loss"]
    pair = fleet.reviews["qx-fca/DME1+VHF1/isolation"]
    assert (pair.aircraft_id, pair.positions, pair.rule) == ("qx-fca", ("DME1", "VHF1"), "isolation")
    assert fleet.reviews["qx-fca/VHF1/feeder-loss"].value_seen == 3.4


def test_good_registry_loads_with_the_package_service_table_and_policy():
    fleet = load_fleet(GOOD)  # registry/data/services.yaml and policy.yaml
    assert fleet.services["vhf_com"].src.path.endswith("services.yaml")
    assert fleet.services["vhf_com"].shipped and not fleet.services["dme"].shipped
    assert fleet.policy.vswr_limit == 1.9  # the fleet's policy.yaml still wins


def test_optional_files_may_be_left_out(tmp_path):
    data = tmp_path / "registry"
    shutil.copytree(GOOD, data)
    for name in ("policy.yaml", "services.yaml", "reviews.yaml", "modifications.yaml"):
        (data / name).unlink()
    fleet = load_fleet(data, FIXTURES / "shipped")
    assert fleet.policy.vswr_limit == 2.0 and fleet.reviews == {} and fleet.modifications == ()
    assert "ops_data" not in fleet.services and fleet.services["dme"].shipped


def test_review_of_a_removed_position_still_loads(tmp_path):
    # the check stage reports such a review as stale; the loader refuses only reviews that can never match
    data = tmp_path / "registry"
    shutil.copytree(GOOD, data)
    reviews = data / "reviews.yaml"
    reviews.write_text(reviews.read_text(encoding="utf-8").replace("qx-fca/VHF1/feeder-loss", "qx-fca/VHF9/feeder-loss"),
                       encoding="utf-8")
    fleet = load_fleet(data, FIXTURES / "shipped")
    assert fleet.reviews["qx-fca/VHF9/feeder-loss"].positions == ("VHF9",)


def test_problem_prints_gcc_style():
    problem = Problem("fleet_data/aircraft/qx-fca.yaml", 14, 17, "installations[2].feeder.length_m",
                      "-3.5", "a positive number of metres")
    assert str(problem) == ("fleet_data/aircraft/qx-fca.yaml:14:17: error: installations[2].feeder.length_m: "
                            "found -3.5, expected a positive number of metres")


def test_data_error_sorts_by_file_line_and_column_and_counts():
    problems = [Problem("b.yaml", 2, 1, "x", "1", "2"), Problem("a.yaml", 10, 1, "x", "1", "2"),
                Problem("a.yaml", 9, 5, "x", "1", "2"), Problem("a.yaml", 9, 3, "x", "1", "2")]
    error = DataError(problems)
    assert [(p.path, p.line, p.column) for p in error.problems] == [
        ("a.yaml", 9, 3), ("a.yaml", 9, 5), ("a.yaml", 10, 1), ("b.yaml", 2, 1)]
    assert error.summary() == "4 problems in 2 files"
    assert DataError(problems[:1]).summary() == "1 problem in 1 file"
    assert error.report().splitlines()[-1] == "4 problems in 2 files"
