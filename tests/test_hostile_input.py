"""Hostile and broken input to the loader: links out of the registry, files that are not registry YAML,
reviews from the future, oversized or impossible sweeps, numbers at the edges of their ranges.

Each test builds a registry from tests/fixtures/good (or the demo) in a temporary folder and checks what
the technician sees. Sources: Touchstone, IBIS Open Forum, Touchstone File Format Specification 2.0
(its version 1.0 syntax) for the sweep files; the ranges are common practice, no source (see
docs/registry-format.md).
"""
from __future__ import annotations

import json
import re
import shutil
from datetime import date, datetime, timezone
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, event, given, settings
from hypothesis import strategies as st

from registry import cli
from registry.compute import feeder as feeder_figures
from registry.core import figure_keys as FK
from registry.core.errors import DataError
from registry.load import extent, inputs, sweepcheck
from registry.load.fleet import load_fleet

FIXTURES = Path(__file__).parent / "fixtures"
SHIPPED = FIXTURES / "shipped"
DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
SWEEP = "aircraft/sweeps/qx-fca-vhf1.s1p"
SECRET = "root:x:0:0:root:/root:/bin/bash token-3f9a1c"


def registry(tmp_path: Path) -> Path:
    data = tmp_path / "registry"
    shutil.copytree(FIXTURES / "good", data)
    return data


def problems(data: Path, **options) -> list[str]:
    with pytest.raises(DataError) as caught:
        load_fleet(data, SHIPPED, **options)
    return [str(problem).replace(f"{data}/", "") for problem in caught.value.problems]


# --- files outside the registry, files that are not registry YAML --------------------------------------


def test_a_link_to_an_aircraft_file_outside_the_registry_is_a_located_problem(tmp_path):
    data = registry(tmp_path)
    outside = tmp_path / "elsewhere.yaml"
    shutil.copy(data / "aircraft" / "qx-fcb.yaml", outside)
    (data / "aircraft" / "qx-fcb.yaml").unlink()
    (data / "aircraft" / "qx-fcb.yaml").symlink_to(outside)
    assert problems(data) == [
        "aircraft/qx-fcb.yaml:1:1: error: (file): found a link to a file outside the registry folder, "
        f"expected a file inside {data} (links are followed, and must stay inside)"]


@pytest.mark.parametrize("name", ["fleet.yaml", "antennas.yaml", "airframes/fx-20.yaml", "reviews.yaml",
                                  "modifications.yaml"])
def test_every_registry_file_is_held_inside_the_folder(tmp_path, name):
    data = registry(tmp_path)
    outside = tmp_path / "outside.yaml"
    shutil.move(data / name, outside)
    (data / name).symlink_to(outside)
    assert any(line.startswith(f"{name}:1:1: error: (file): found a link to a file outside") for line in problems(data))


def test_a_link_inside_the_registry_is_followed(tmp_path):
    data = registry(tmp_path)
    shutil.move(data / "cables.yaml", data / "aircraft" / "sweeps" / "cables-kept-here.yaml")
    (data / "cables.yaml").symlink_to(data / "aircraft" / "sweeps" / "cables-kept-here.yaml")
    assert set(load_fleet(data, SHIPPED).cables) == {"FXC-400", "FXC-142"}


def test_a_link_to_a_secret_never_shows_its_contents(tmp_path):
    data = registry(tmp_path)
    secret = tmp_path / "passwd"
    secret.write_text(SECRET + "\n", encoding="utf-8")
    (data / "aircraft" / "qx-fcc.yaml").symlink_to(secret)
    shutil.copy(secret, data / "aircraft" / "qx-fcd.yaml")  # copied in: read, but still not echoed
    lines = problems(data)
    assert lines == [
        "aircraft/qx-fcc.yaml:1:1: error: (file): found a link to a file outside the registry folder, "
        f"expected a file inside {data} (links are followed, and must stay inside)",
        "aircraft/qx-fcd.yaml:1:1: error: (file): found a file of plain text, not a YAML mapping, "
        "expected a mapping of keys and values"]
    assert not any("token-3f9a1c" in line or "/bin/bash" in line for line in lines)


def test_a_device_or_fifo_in_a_registry_folder_is_not_read(tmp_path):
    data = registry(tmp_path)
    (data / "aircraft" / "qx-fcz.yaml").symlink_to("/dev/zero")
    assert problems(data)[0].startswith("aircraft/qx-fcz.yaml:1:1: error: (file): found a link to a file outside")


def test_a_stray_link_in_the_registry_is_not_read_for_the_cache_key(tmp_path):
    # a link to a device (/dev/zero, /dev/urandom) would never end: a stray link is left unread
    data = registry(tmp_path)
    outside = tmp_path / "outside.yaml"
    outside.write_text("a: 1\n", encoding="utf-8")
    (data / "notes.yaml").symlink_to(outside)
    (data / "zeros.yaml").symlink_to("/dev/zero")
    before = inputs.shared_key(data, SHIPPED)
    outside.write_text("a: 2\n", encoding="utf-8")
    assert inputs.shared_key(data, SHIPPED) == before
    (data / "fleet.yaml").write_text((data / "fleet.yaml").read_text(encoding="utf-8") + "# edited\n",
                                     encoding="utf-8")
    assert inputs.shared_key(data, SHIPPED) != before


# --- every problem in one run -------------------------------------------------------------------------


def test_installations_of_an_aircraft_without_an_id_are_still_checked(tmp_path):
    data = registry(tmp_path)
    file = data / "aircraft" / "qx-fcb.yaml"
    file.write_text(file.read_text(encoding="utf-8").replace("id: qx-fcb\n", "")
                    .replace("antenna: FXA-120-BLD", "antenna: FXA-NOPE"), encoding="utf-8")
    assert problems(data) == [
        "aircraft/qx-fcb.yaml:2:1: error: id: found nothing, expected a value (the key is required)",
        "aircraft/qx-fcb.yaml:7:5: error: installations[0].antenna: found 'FXA-NOPE', "
        "expected an antenna model id from antennas.yaml"]


def test_a_key_written_like_a_path_does_not_upset_the_partial_build(tmp_path):
    data = registry(tmp_path)
    file = data / "aircraft" / "qx-fcb.yaml"
    file.write_text(file.read_text(encoding="utf-8") + "'notes[x]': 1\n", encoding="utf-8")
    assert problems(data) == [
        "aircraft/qx-fcb.yaml:15:1: error: notes[x]: found an unknown key 'notes[x]', expected one of "
        "id, registration, airframe, serial, modifications, installations"]


# --- reviews from the future --------------------------------------------------------------------------


def future(data: Path) -> None:
    reviews = data / "reviews.yaml"
    reviews.write_text(reviews.read_text(encoding="utf-8").replace("2026-01-16", "2999-01-16"), encoding="utf-8")


def test_a_review_dated_in_the_future_is_an_error(tmp_path, monkeypatch):
    # no git here: the registry's as-of date is today (or SOURCE_DATE_EPOCH)
    data = registry(tmp_path)
    future(data)
    monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
    today = datetime.now(tz=timezone.utc).date().isoformat()
    assert problems(data) == [
        f"reviews.yaml:13:5: error: reviews[1].date: found 2999-01-16, after {today}, expected a date on or "
        f"before {today} (the registry's as-of date, or today when that is later: a review cannot be dated "
        "in the future)"]
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1772323200")  # 2026-03-01: an as-of date in the past ...
    assert problems(data)[0].startswith(f"reviews.yaml:13:5: error: reviews[1].date: found 2999-01-16, after {today}")
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "32503680000")  # ... or, 3000-01-01, one beyond the review
    assert load_fleet(data, SHIPPED).reviews


def test_the_loader_takes_the_as_of_date(tmp_path):
    data = registry(tmp_path)
    future(data)
    assert problems(data, as_of=date(2999, 1, 15))[0].startswith(
        "reviews.yaml:13:5: error: reviews[1].date: found 2999-01-16, after 2999-01-15, expected")
    assert load_fleet(data, SHIPPED, as_of=date(2999, 1, 16)).reviews


# --- sweeps: size and values --------------------------------------------------------------------------


def write_sweep(data: Path, lines: list[str], option: str = "# MHZ S MA R 50") -> None:
    (data / SWEEP).write_text("\n".join([option, *lines]) + "\n", encoding="latin-1")


def test_a_sweep_with_too_many_points_is_refused(tmp_path):
    data = registry(tmp_path)
    count = sweepcheck.MAX_SWEEP_POINTS + 1
    write_sweep(data, [f"{100 + n * 0.001:.3f} 0.2 0" for n in range(count)])
    assert problems(data) == [
        f"aircraft/qx-fca.yaml:24:7: error: installations[0].measured.sweep: found a sweep of {count} points, "
        f"expected at most {sweepcheck.MAX_SWEEP_POINTS} frequency points per sweep"]


def test_a_sweep_over_the_byte_limit_is_refused_unread(tmp_path):
    data = registry(tmp_path)
    with open(data / SWEEP, "ab") as stream:
        stream.write(b"! padding\n" * (sweepcheck.MAX_SWEEP_BYTES // 10 + 1))
    size = (data / SWEEP).stat().st_size
    assert problems(data) == [
        f"aircraft/qx-fca.yaml:24:7: error: installations[0].measured.sweep: found a sweep file of {size} bytes, "
        "expected at most 2097152 bytes (2 MiB) per sweep"]


@pytest.mark.parametrize("option, line, found", [
    ("# MHZ S DB R 50", "127.5 1.0e+308 0", "a value too large to be a measured reflection"),
    ("# MHZ S MA R 50", "127.5 1.0e+300 0", "|S11| of 1e+300 at 127.5 MHz (data point 2)"),
    ("# MHZ S RI R 50", "127.5 3.0 0.0", "|S11| of 3 at 127.5 MHz (data point 2)"),
    ("# MHZ Z RI R 50", "127.5 -1.0 0.0", "|S11| of no finite value at 127.5 MHz (data point 2)"),
])
def test_a_sweep_value_no_antenna_can_reflect_is_refused(tmp_path, option, line, found):
    # |S11| <= 1 for a passive one-port (Pozar, Microwave Engineering, 4th ed., §2.3); Z = -1 (normalised)
    # gives S11 = (z - 1)/(z + 1), a division by zero
    data = registry(tmp_path)
    write_sweep(data, ["118.0 0.2 0", line, "137.0 0.2 0"], option)
    lines = problems(data)
    assert len(lines) == 1 and f"installations[0].measured.sweep: found {found}, expected " in lines[0]


def test_a_sweep_above_the_registry_frequency_range_is_refused(tmp_path):
    data = registry(tmp_path)
    write_sweep(data, ["118.0 0.2 0", "127.5 0.2 0", "137.0 0.2 0"], "# HZ S MA R 50")
    assert load_fleet(data, SHIPPED).sweeps  # 137 Hz: accepted, if useless; its figure says it has no point in band
    write_sweep(data, ["118.0 0.2 0", "127.5 0.2 0", "9.0e+9 0.2 0"], "# MHZ S MA R 50")
    assert problems(data)[0].endswith("found a frequency of 9e+09 MHz, expected frequencies up to 300000 MHz "
                                      "(is the option line's unit right?)")


# --- finite figures -----------------------------------------------------------------------------------


def test_a_perfect_match_gives_words_not_infinity(tmp_path):
    # return loss -20 log10 |Gamma| has no finite value at VSWR 1.0 (Pozar, Microwave Engineering, §2.3)
    data = registry(tmp_path)
    file = data / "aircraft" / "qx-fca.yaml"
    file.write_text(file.read_text(encoding="utf-8").replace("vswr: 1.35", "vswr: 1.0"), encoding="utf-8")
    (data / SWEEP).unlink()
    file.write_text(file.read_text(encoding="utf-8").replace("      sweep: sweeps/qx-fca-vhf1.s1p\n", ""),
                    encoding="utf-8")
    fleet = load_fleet(data, SHIPPED)
    craft = fleet.aircraft["qx-fca"]
    item = craft.installations["VHF1"]
    measured = feeder_figures.measured_figures(item, fleet.services[item.service], fleet.cables["FXC-400"],
                                               fleet.policy, date(2026, 3, 1), fleet.sweeps)[0]
    figures = feeder_figures.feeder_figures(item, fleet.antennas[item.antenna], fleet.services[item.service],
                                            fleet.cables["FXC-400"], fleet.policy, measured)
    by_key = {figure.key: figure.value for figure in figures}
    assert by_key[FK.FEEDER_RETURN_LOSS_DB].startswith("not available: a perfect match (VSWR 1.0)")
    assert by_key[FK.FEEDER_MISMATCH_LOSS_DB] == 0.0


def test_a_sweep_of_total_reflection_gives_words_not_infinity(tmp_path):
    data = registry(tmp_path)
    write_sweep(data, ["118.0 0.2 0", "127.5 1.0 0", "137.0 0.2 0"])
    fleet = load_fleet(data, SHIPPED)
    item = fleet.aircraft["qx-fca"].installations["VHF1"]
    figures, curve = feeder_figures.measured_figures(item, fleet.services[item.service], fleet.cables["FXC-400"],
                                                     fleet.policy, date(2026, 3, 1), fleet.sweeps)
    by_key = {figure.key: figure.value for figure in figures}
    assert by_key[FK.SWEEP_MAX_VSWR].startswith("not available: the sweep reflects everything")
    assert list(curve.x) == [118.0, 137.0]  # the point of total reflection has no VSWR to draw


# --- extreme but valid numbers through the whole check -------------------------------------------------

SCHEMA = json.loads((Path(cli.__file__).parent / "schemas" / "aircraft.schema.json").read_text(encoding="utf-8"))


def numeric_fields(schema: dict, parts: tuple = ()) -> list[tuple[tuple, dict]]:
    """Every number or whole number an installation may hold, with its schema (ranges included)."""
    if "$ref" in schema:  # a shared definition (feeder, measured, ...): "#/$defs/<name>"
        return numeric_fields(SCHEMA["$defs"][schema["$ref"].rsplit("/", 1)[-1]], parts)
    if schema.get("type") in ("number", "integer"):
        return [(parts, schema)]
    found = []
    for name, sub in schema.get("properties", {}).items():
        found += numeric_fields(sub, parts + (name,))
    return found


FIELDS = numeric_fields(SCHEMA["$defs"]["installation"])
OUTLINE = extent.extent(load_fleet(DEMO).airframes["tc-44"])


def extreme(schema: dict) -> st.SearchStrategy:
    low = schema.get("minimum", schema.get("exclusiveMinimum", -1e308))
    high = schema.get("maximum", schema.get("exclusiveMaximum", 1e308))
    if schema["type"] == "integer":
        return st.integers(int(low), int(high))
    edges = [value for value in (low, high) if "exclusiveMinimum" not in schema or value != low]
    return st.one_of(st.sampled_from(edges), st.floats(low, high, exclude_min="exclusiveMinimum" in schema))


@pytest.fixture(scope="module")
def one_aircraft(tmp_path_factory) -> Path:
    """The demo registry with one aircraft (qx-tca), so each example runs quickly."""
    data = tmp_path_factory.mktemp("hostile") / "registry"
    shutil.copytree(DEMO, data, ignore=shutil.ignore_patterns("scenario"))
    for file in (data / "aircraft").glob("*.yaml"):
        if file.name != "qx-tca.yaml":
            file.unlink()
    (data / "modifications.yaml").unlink()  # it names the aircraft taken out
    return data


def test_the_ranges_cover_every_numeric_field_of_an_installation():
    names = {".".join(parts) for parts, _ in FIELDS}
    assert {"location.sta", "feeder.length_m", "measured.vswr", "ground_plane.radius_m"} <= names
    assert all("maximum" in schema for _, schema in FIELDS)


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_extreme_valid_numbers_never_crash_check(one_aircraft, capsys, data):
    file = one_aircraft / "aircraft" / "qx-tca.yaml"
    original = file.read_text(encoding="utf-8")
    document = yaml.safe_load(original)
    installations = document["installations"]
    for _ in range(data.draw(st.integers(1, 4))):
        item = installations[data.draw(st.integers(0, len(installations) - 1))]
        parts, schema = data.draw(st.sampled_from(FIELDS))
        holder = item
        for name in parts[:-1]:
            holder = holder.setdefault(name, {"type": "plate"} if name == "ground_plane" else {})
        if parts[0] in ("measured", "bonding"):
            holder.setdefault("date", date(2026, 1, 1))
        if parts[0] == "amplifier":
            holder.update({key: value for key, value in (("gain_db", 26.0), ("noise_figure_db", 2.0), ("source", "x"))
                           if key not in holder})
        inside = getattr(OUTLINE, parts[-1], None)  # a coordinate: often inside the airframe, to reach compute
        values = extreme(schema) if inside is None else st.one_of(extreme(schema), st.floats(*inside))
        holder[parts[-1]] = data.draw(values)
    try:
        file.write_text(yaml.safe_dump(document, sort_keys=False), encoding="utf-8")
        code = cli.main(["check", str(one_aircraft)])
    finally:
        file.write_text(original, encoding="utf-8")
    out, err = capsys.readouterr()
    event(f"exit {code}")  # pytest --hypothesis-show-statistics: how many examples reached the checks
    assert code in (0, 1, 2), err
    for text in (out, err):
        assert "Traceback" not in text and "internal error" not in text
        assert "Warning" not in text and not re.search(r"\b(inf|nan)\b", text, re.IGNORECASE)


def test_no_nan_or_infinity_in_the_demo_record():
    """A figure that has no number (a pattern without side lobes, a cut above half power all round) says
    why in words: the build record holds no NaN or infinity (issue: no inf or NaN reaches the record)."""
    from registry import pipeline
    from registry.output import record

    text = record.to_text(pipeline.run(DEMO, as_of=date(2026, 12, 2), workers=1))
    assert not re.search(r'"(nan|-?inf)"|\bNaN\b|\bInfinity\b', text)
    assert "none: neither cut has a side lobe" in text
