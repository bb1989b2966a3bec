"""Bad registries: one flaw per fixture, each with the exact messages a technician sees.

Each folder under tests/fixtures/bad/ holds only the file(s) that differ from tests/fixtures/good/;
the test lays them over a copy of the good registry. Paths in the expected messages are relative to
the registry folder.
"""
from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import registry.load.fleet
from registry.core.errors import DataError
from registry.load.fleet import load_fleet
from registry.load.yamlsource import MAX_BYTES

FIXTURES = Path(__file__).parent / "fixtures"
SHIPPED = FIXTURES / "shipped"

EXPECTED = {
    "alias_bomb": [
        'fleet.yaml:4:7: error: (file): found aliases (*name) that copy more than 10000 values, expected a document that does not multiply itself through aliases',
    ],
    "array_too_wide": [
        # 255 gaps of 2 m = 510 m; λ at 9500 MHz = 0.0316 m: 16 160 wavelengths (a pattern sampled that
        # finely would take the machine's memory)
        "antennas.yaml:57:5: error: models[5].geometry: found an antenna 510 m across, 1.616e+04 wavelengths at 9500 MHz (the top of its bands), expected at most 200 wavelengths across there (6.31 metres)",
    ],
    "attenuation_not_increasing": [
        'cables.yaml:11:10: error: cables[0].attenuation_db_per_100m[2][0]: found 400 MHz after 1000 MHz, expected frequencies increasing down the table',
    ],
    "bad_date": [
        "reviews.yaml:6:11: error: reviews[0].date: found '2026-13-45', expected a real date written YYYY-MM-DD",
    ],
    "band_edges_reversed": [
        'services.yaml:5:17: error: services[0].bands_mhz[0]: found [137, 131], expected the lower band edge first (low < high)',
    ],
    "cosite_level_with_unit": [
        "services.yaml:10:24: error: services[0].tx_peak_power_dbm: found '44 dBm', expected a number without a unit (the unit is in the key name)",
        'services.yaml:11:28: error: services[0].tx_channel_steps_khz[0]: found 0, expected a number greater than 0 and at most 100000 kHz',
    ],
    "cosite_transmit_figures_on_receiver": [
        'services.yaml:10:5: error: services[0].tx_peak_power_dbm: found tx_peak_power_dbm on a service with transmits: false, expected transmit figures only on a transmitting service',
        'services.yaml:11:20: error: services[0].rx_bands_mhz[0]: found [137, 131], expected the lower band edge first (low < high)',
        'services.yaml:14:7: error: services[0].sources.spurious_dbc: found a source for spurious_dbc, which this entry does not give, expected a source only for a figure the entry gives',
    ],
    "design_freq_outside_bands": [
        "services.yaml:6:5: error: services[0].design_freq_mhz: found 150 MHz, expected a frequency within the service's bands, 131 to 137 MHz",
    ],
    "duplicate_id": [
        "cables.yaml:20:5: error: cables[2].id: found 'FXC-400' again (first on line 3), expected each cable id once, ignoring upper and lower case",
    ],
    "duplicate_isolation_pair": [
        "policy.yaml:7:5: error: min_isolation_db[1].services: found the pair dme + dme again (first on line 5), expected each pair once",
    ],
    "duplicate_key": [
        "aircraft/qx-fcb.yaml:14:7: error: installations[0].feeder.length_m: found a second 'length_m' key (the first is on line 13), expected each key once",
    ],
    "duplicate_registration": [
        "aircraft/qx-fcb.yaml:3:1: error: registration: found 'QX-FCA' again (first on aircraft/qx-fca.yaml:3:1), expected each registration mark once, ignoring upper and lower case",
    ],
    "element_length_implausible": [
        # a slip of the exponent: plausible ranges carry the unit (common practice, no source: 60 m is
        # longer than any wire antenna an aircraft carries)
        'antennas.yaml:11:25: error: models[0].geometry.element_length_m: found 56.0e+3, expected a length between 0.001 and 60 metres',
    ],
    "element_longer_than_its_band": [
        # λ = c / f = 299792458 / 137e6 = 2.188 m; 5.6 m is 2.56 λ (the slip of 0.56; a quarter-wave
        # element is 0.25 λ by its name)
        'antennas.yaml:11:7: error: models[0].geometry.element_length_m: found 5.6 m, 2.56 wavelengths at 137 MHz (the top of its bands), expected an element of at most 2 wavelengths there, 4.38 metres',
    ],
    "empty_file": [
        'fleet.yaml:1:1: error: (file): found an empty file, expected a YAML mapping of keys and values',
    ],
    "folded_wires_touch": [
        # two wires whose centres are one diameter apart touch: no folded dipole (and no wire model) is left
        "antennas.yaml:28:67: error: models[2].geometry.spacing_m: found 0.008 m, not beyond the element diameter 0.008 m, expected a spacing between the two wires' centres greater than their diameter",
    ],
    "frequency_out_of_range": [
        'cables.yaml:7:19: error: cables[0].max_freq_mhz: found 500000, expected a frequency between 0.001 and 300000 MHz',
    ],
    "geometry_unknown_key": [
        'antennas.yaml:28:5: error: models[2].geometry.spacing_m: found nothing, expected a value (the key is required)',
        "antennas.yaml:28:67: error: models[2].geometry.spacing: found an unknown key 'spacing', expected one of element_length_m, element_diameter_m, spacing_m (did you mean 'spacing_m'?)",
    ],
    "hardware_fields_wrong": [
        # every hardware field of an installation and its feeder, each wrong in its own way, in one run
        'aircraft/qx-fcb.yaml:11:21: error: installations[0].antenna_serial: found 20417, expected text (put it in quotes)',
        'aircraft/qx-fcb.yaml:12:19: error: installations[0].access_panel: found empty text, expected some text',
        "aircraft/qx-fcb.yaml:13:36: error: installations[0].bonding.resistance_milliohm: found '2 mohm', expected a number without a unit (the unit is in the key name)",
        "aircraft/qx-fcb.yaml:13:50: error: installations[0].bonding.date: found '2026-02-30', expected a real date written YYYY-MM-DD",
        "aircraft/qx-fcb.yaml:15:16: error: installations[0].manuals[0].kind: found 'amm', expected one of maintenance, wiring, parts, other",
        'aircraft/qx-fcb.yaml:16:9: error: installations[0].manuals[1].ref: found nothing, expected a value (the key is required)',
        "aircraft/qx-fcb.yaml:21:32: error: installations[0].feeder.antenna_end.connector: found 'TCN', expected one of BNC, TNC, N, C, HN, SC, SMA, SMB, SMC, QMA, UHF, MHV, twinax, triax, other (did you mean 'TNC'?)",
        "aircraft/qx-fcb.yaml:22:43: error: installations[0].feeder.radio_end.gender: found 'plug', expected one of male, female",
        'aircraft/qx-fcb.yaml:24:11: error: installations[0].feeder.adapter_parts[0].part_number: found nothing, expected a value (the key is required)',
        'aircraft/qx-fcb.yaml:25:51: error: installations[0].feeder.radio_unit.rack: found empty text, expected some text',
    ],
    "shared_antenna_mistakes": [
        # what a schema cannot check: adapters counted otherwise than listed, and the services a splitter feeds
        # checked like any installation (references, positions unique in the aircraft)
        'aircraft/qx-fcb.yaml:15:7: error: installations[0].feeder.adapters: found 2, with 1 adapter listed in adapter_parts, expected as many adapters as adapter_parts lists (or leave adapters out to count them)',
        "aircraft/qx-fcb.yaml:25:11: error: installations[0].splitter.feeds[0].service: found 'ops_dta', expected a service id from the shipped table or services.yaml (did you mean 'ops_data'?)",
        "aircraft/qx-fcb.yaml:26:20: error: installations[0].splitter.feeds[0].feeder.cable: found 'FXC-40', expected a cable id from cables.yaml (did you mean 'FXC-400'?)",
        "aircraft/qx-fcb.yaml:30:5: error: installations[1].position: found 'VHF2' again (first on line 27), expected each position in this aircraft once, ignoring upper and lower case",
    ],
    "splitter_fields_wrong": [
        # an active antenna's amplifier and a splitter: ranges, kinds, the source required, and a service fed
        # through the splitter takes the owner's antenna (no antenna key of its own)
        'aircraft/qx-fcb.yaml:11:5: error: installations[0].amplifier.source: found nothing, expected a value (the key is required)',
        'aircraft/qx-fcb.yaml:11:47: error: installations[0].amplifier.noise_figure_db: found 45, expected a number between 0 and 20 dB',
        "aircraft/qx-fcb.yaml:18:13: error: installations[0].splitter.kind: found 'combiner', expected one of splitter, diplexer",
        'aircraft/qx-fcb.yaml:19:16: error: installations[0].splitter.loss_db: found -1, expected a number between 0 and 30 dB',
        "aircraft/qx-fcb.yaml:24:11: error: installations[0].splitter.feeds[0].antenna: found an unknown key 'antenna', expected one of position, service, feeder, measured, installed, notes, radio, access_panel, manuals",
    ],
    "id_not_file_name": [
        "airframes/fx-20.yaml:2:1: error: id: found 'fx-21' in the file fx-20.yaml, expected the id to equal the file name ('fx-20')",
    ],
    "location_outside_airframe": [
        # fx-20: nose 0, tail 780, fin tip 640 + 120 + 190 tan 35° = 893.04; margin 78 (10 % of 780)
        'aircraft/qx-fcb.yaml:9:16: error: installations[0].location.sta: found 3120, expected a station (STA) within the airframe fx-20, from -78 to 971.039 in (its outline with a margin of 10% of its length)',
    ],
    "many_mistakes": [
        # one aircraft file, six kinds of mistakes, all in ONE run: a reference to another file, the schema,
        # a duplicate key, an unknown catalogue id, an implausible number, a missing sweep file
        "aircraft/qx-fcb.yaml:5:1: error: airframe: found 'fx-21', expected the id of a file in airframes/ (did you mean 'fx-20'?)",
        'aircraft/qx-fcb.yaml:6:9: error: serial: found 2018, expected text (put it in quotes)',
        "aircraft/qx-fcb.yaml:16:7: error: installations[0].feeder.length_m: found a second 'length_m' key (the first is on line 15), expected each key once",
        "aircraft/qx-fcb.yaml:20:5: error: installations[1].antenna: found 'FXA-120-BLB', expected an antenna model id from antennas.yaml (did you mean 'FXA-120-BLD'?)",
        'aircraft/qx-fcb.yaml:29:40: error: installations[2].feeder.length_m: found 1.0e+6, expected a length between 0.01 and 300 metres',
        'aircraft/qx-fcb.yaml:36:34: error: installations[3].measured.sweep: found no file at aircraft/sweeps/qx-fcb-dme1.s1p, expected the sweep file this installation names',
    ],
    "missing_required": [
        'fleet.yaml:2:1: error: operator: found nothing, expected a value (the key is required)',
    ],
    "modifications_bad_date": [
        "modifications.yaml:6:55: error: modifications[0].effectivity[0].date: found '2023-02-30', expected a real date written YYYY-MM-DD",
        "modifications.yaml:7:53: error: modifications[0].effectivity[1].due: found '18/04/2027', expected a real date written YYYY-MM-DD",
    ],
    "modifications_bad_state": [
        "modifications.yaml:6:39: error: modifications[0].effectivity[0].state: found 'done', expected one of planned, embodied",
    ],
    "modifications_conflicts": [
        # what the schema cannot say: one position added and removed, unknown ids, dates that do not fit the
        # state, one aircraft twice (registrations ignore case), one reference twice
        "modifications.yaml:6:10: error: modifications[0].adds[0].position: found 'VHF2' both added and removed, expected each position either added or removed by one modification",
        "modifications.yaml:6:26: error: modifications[0].adds[0].service: found 'vhf_comm', expected a service id from the shipped table or services.yaml (did you mean 'vhf_com'?)",
        "modifications.yaml:6:45: error: modifications[0].adds[0].antenna: found 'FXA-120-BLB', expected an antenna model id from antennas.yaml (did you mean 'FXA-120-BLD'?)",
        "modifications.yaml:11:48: error: modifications[0].effectivity[1].date: found a date embodied on a planned modification, expected no date while planned (give the planned date as 'due')",
        "modifications.yaml:12:10: error: modifications[0].effectivity[2].registration: found 'qx-fcb' again (the same aircraft as line 11), expected each aircraft once per modification",
        "modifications.yaml:12:67: error: modifications[0].effectivity[2].due: found a due date on an embodied modification, expected only the date embodied ('date') once embodied",
        "modifications.yaml:13:5: error: modifications[1].ref: found 'mod-2023-011' (and 'MOD-2023-011' on line 3), expected each modification reference once, ignoring upper and lower case",
    ],
    "modifications_mistakes": [
        'modifications.yaml:10:9: error: modifications[0].effectivity[0].date: found nothing, expected a value (an embodied modification gives the date it was embodied)',
        "modifications.yaml:11:9: error: modifications[0].effectivity[1]: found both 'registration' and 'serial', expected exactly one of 'registration' or 'serial'",
        "modifications.yaml:16:5: error: modifications[1].effect: found an unknown key 'effect', expected one of ref, title, adds, removes, effectivity (did you mean 'effectivity'?)",
    ],
    "modifications_truncated": [
        'modifications.yaml:6:58: error: (file): found the end of the file inside a {...} mapping that starts on line 6, expected the rest of the file (is it cut short?)',
    ],
    "modifications_unknown_aircraft": [
        "modifications.yaml:7:10: error: modifications[0].effectivity[1].registration: found 'QX-FCC', expected the registration of an aircraft in aircraft/ (did you mean 'QX-FCB'?)",
        "modifications.yaml:8:10: error: modifications[0].effectivity[2].serial: found '2071', expected the serial of an aircraft in aircraft/ (did you mean '2017'?)",
    ],
    "must_see_with_bank": [
        # the bank and pitch the coverage rule checks belong to the policy (coverage_bank_deg), not to a service
        "services.yaml:18:73: error: services[1].must_see.bank_deg: found an unknown key 'bank_deg', expected one of region, elevation_deg, min_covered_pct, source",
    ],
    "negative_length": [
        'aircraft/qx-fcb.yaml:13:17: error: installations[0].feeder.length_m: found -3.5, expected a length between 0.01 and 300 metres',
    ],
    "non_utf8": [
        'aircraft/qx-fcb.yaml:4:11: error: (file): found the byte 0xB0, which is not UTF-8, expected UTF-8 text (save the file with UTF-8 encoding)',
    ],
    "path_in_id": [
        "aircraft/qx-fcb.yaml:6:15: error: installations[0].position: found '../etc/passwd', expected an id of up to 64 letters, digits, '.', '_' or '-', starting with a letter or digit",
    ],
    "plate_without_radius": [
        "aircraft/qx-fcb.yaml:11:5: error: installations[0].ground_plane: found neither 'radius_m' nor 'side_m', expected exactly one of 'radius_m' or 'side_m' (required with type plate)",
    ],
    "plate_radius_and_side": [
        "aircraft/qx-fcb.yaml:11:5: error: installations[0].ground_plane: found both 'radius_m' and 'side_m', expected exactly one of 'radius_m' or 'side_m' (required with type plate)",
    ],
    "side_without_plate": [
        "aircraft/qx-fcb.yaml:11:32: error: installations[0].ground_plane.side_m: found side_m with type 'skin', expected side_m only with type plate",
    ],
    "policy_unknown_service": [
        "policy.yaml:3:25: error: feeder_loss_budget_db.vhf_con: found 'vhf_con', expected a service id from the shipped table or services.yaml (did you mean 'vhf_com'?)",
    ],
    "policy_limit_implausible": [
        'policy.yaml:2:13: error: vswr_limit: found 1.0e+308, expected a number between 1.01 and 100 (VSWR, the ratio n:1)',
    ],
    "review_unknown_rule": [
        "reviews.yaml:3:5: error: reviews[0].discrepancy: found the rule 'feeder-los', expected one of element-length, band-coverage, vswr-bandwidth, measured-vswr, feeder-loss, impedance-match, cable-frequency, isolation, ground-plane, antenna-suitability, measurement-age, missing-data, unmodellable, cosite, cosite-small, skin-position, coverage, ground-plane-effect, embodiment, embodiment-record (did you mean 'feeder-loss'?)",
    ],
    "serial_not_quoted": [
        'aircraft/qx-fcb.yaml:5:9: error: serial: found 2018, expected text (put it in quotes)',
    ],
    "sweep_missing": [
        'aircraft/qx-fca.yaml:24:7: error: installations[0].measured.sweep: found no file at aircraft/sweeps/qx-fca-vhf2.s1p, expected the sweep file this installation names',
    ],
    "syntax_error": [
        'fleet.yaml:2:20: error: (file): found invalid YAML (mapping values are not allowed here), expected well-formed YAML (check the indentation, colons and quotes here or just above)',
    ],
    "tailplane_without_wl": [
        'airframes/fx-20.yaml:21:1: error: tailplane.wl: found nothing, expected a value (the key is required)',
        "airframes/fx-20.yaml:24:9: error: tailplane.span: found 'wide', expected a number",
    ],
    "tab_indentation": [
        'services.yaml:4:1: error: (file): found a tab in the indentation, expected spaces (YAML does not allow tabs for indentation)',
    ],
    "truncated": [
        'aircraft/qx-fcb.yaml:9:35: error: (file): found the end of the file inside a {...} mapping that starts on line 9, expected the rest of the file (is it cut short?)',
    ],
    "unknown_airframe": [
        "aircraft/qx-fcb.yaml:4:1: error: airframe: found 'fx-2O', expected the id of a file in airframes/ (did you mean 'fx-20'?)",
    ],
    "unknown_antenna": [
        "aircraft/qx-fcb.yaml:8:5: error: installations[0].antenna: found 'FXA-12O-BLD', expected an antenna model id from antennas.yaml (did you mean 'FXA-120-BLD'?)",
    ],
    "unknown_cable": [
        "aircraft/qx-fcb.yaml:12:7: error: installations[0].feeder.cable: found 'FXC-40', expected a cable id from cables.yaml (did you mean 'FXC-400'?)",
    ],
    "unknown_key": [
        "aircraft/qx-fcb.yaml:15:7: error: installations[0].feeder.adaptors: found an unknown key 'adaptors', expected one of cable, length_m, connectors, adapters, antenna_end, radio_end, adapter_parts, radio_unit (did you mean 'adapters'?)",
    ],
    "unknown_service": [
        "aircraft/qx-fcb.yaml:7:5: error: installations[0].service: found 'vhf_comm', expected a service id from the shipped table or services.yaml (did you mean 'vhf_com'?)",
    ],
    "velocity_factor_above_one": [
        'cables.yaml:6:22: error: cables[0].velocity_factor: found 1.3, expected a number between 0.1 and 1',
    ],
    "wrong_type": [
        "aircraft/qx-fcb.yaml:13:17: error: installations[0].feeder.length_m: found 'twelve', expected a number",
    ],
    "yagi_two_driven": [
        'antennas.yaml:46:7: error: models[4].geometry.elements: found 2 driven elements, expected exactly one driven element',
    ],
    "zero_length": [
        'aircraft/qx-fcb.yaml:13:17: error: installations[0].feeder.length_m: found 0, expected a length between 0.01 and 300 metres',
    ],
    "zones_overlap": [
        "airframes/fx-20.yaml:37:5: error: zones[3].sta_from: found stations overlapping the zone 'fin and tail cone' (line 31), expected zones for the same surfaces that do not overlap",
    ],
}


def make_registry(root: Path, flaw: str | None = None) -> Path:
    """A copy of the good registry under `root`, with the flaw's files laid over it."""
    data = root / "registry"
    shutil.copytree(FIXTURES / "good", data)
    if flaw:
        shutil.copytree(FIXTURES / "bad" / flaw, data, dirs_exist_ok=True)
    return data


def problems(data: Path) -> tuple[list[str], str]:
    with pytest.raises(DataError) as caught:
        load_fleet(data, SHIPPED)
    prefix = f"{data}{os.sep}"
    return [str(problem).replace(prefix, "") for problem in caught.value.problems], caught.value.summary()


def test_every_bad_fixture_has_expected_messages():
    assert sorted(path.name for path in (FIXTURES / "bad").iterdir()) == sorted(EXPECTED)


@pytest.mark.parametrize("flaw", sorted(EXPECTED))
def test_bad_fixture_gives_exact_messages(tmp_path, flaw):
    lines, summary = problems(make_registry(tmp_path, flaw))
    assert lines == EXPECTED[flaw]
    files = len({line.split(":")[0] for line in lines})
    count = len(lines)
    assert summary == f"{count} problem{'s' * (count != 1)} in {files} file{'s' * (files != 1)}"


def test_oversized_file_is_refused_before_parsing(tmp_path):
    data = make_registry(tmp_path)
    filler = "# padding\n" * (MAX_BYTES // 10 + 1)
    (data / "fleet.yaml").write_text("operator: Ferncliff Island Air\n" + filler, encoding="utf-8")
    size = (data / "fleet.yaml").stat().st_size
    assert size > MAX_BYTES
    lines, _ = problems(data)
    assert lines == [f"fleet.yaml:1:1: error: (file): found a file of {size} bytes, "
                     f"expected at most {MAX_BYTES} bytes (2 MiB)"]


def test_all_problems_of_a_run_come_together_sorted(tmp_path):
    data = make_registry(tmp_path)
    for flaw in ("unknown_service", "frequency_out_of_range", "missing_required"):
        shutil.copytree(FIXTURES / "bad" / flaw, data, dirs_exist_ok=True)
    lines, summary = problems(data)
    expected = EXPECTED["unknown_service"] + EXPECTED["frequency_out_of_range"] + EXPECTED["missing_required"]
    assert lines == sorted(expected)
    assert summary == "3 problems in 3 files"


def test_a_syntax_error_stops_only_its_own_file(tmp_path):
    # fleet.yaml cannot be read at all; the aircraft file's duplicate key and the cable's range are still
    # reported in the same run
    data = make_registry(tmp_path)
    for flaw in ("syntax_error", "duplicate_key", "velocity_factor_above_one"):
        shutil.copytree(FIXTURES / "bad" / flaw, data, dirs_exist_ok=True)
    lines, summary = problems(data)
    assert lines == sorted(EXPECTED["syntax_error"] + EXPECTED["duplicate_key"] + EXPECTED["velocity_factor_above_one"])
    assert summary == "3 problems in 3 files"


def test_references_into_a_broken_catalogue_are_not_reported_again(tmp_path):
    # cables.yaml fails its schema, so the cable ids are unknown: the unknown cable in qx-fcb is not
    # reported on top (it would be a guess), only the catalogue's own problem.
    data = make_registry(tmp_path)
    for flaw in ("unknown_cable", "frequency_out_of_range"):
        shutil.copytree(FIXTURES / "bad" / flaw, data, dirs_exist_ok=True)
    lines, _ = problems(data)
    assert lines == EXPECTED["frequency_out_of_range"]


def test_missing_folder_and_missing_required_files(tmp_path):
    lines, _ = problems(tmp_path / "nowhere")
    assert lines == [f"{tmp_path / 'nowhere'}:1:1: error: (file): found no folder, "
                     "expected a registry folder holding fleet.yaml"]
    data = make_registry(tmp_path)
    (data / "cables.yaml").unlink()
    shutil.rmtree(data / "airframes")
    (data / "aircraft" / "qx-fcb.yaml").rename(data / "aircraft" / "qx-fcb.yml")
    lines, _ = problems(data)
    assert lines == [
        "aircraft/qx-fcb.yml:1:1: error: (file): found a file ending in .yml, "
        "expected the ending .yaml (other endings are not read)",
        "airframes:1:1: error: (file): found no .yaml files, expected at least one airframes/<id>.yaml file",
        "cables.yaml:1:1: error: (file): found no such file, expected cables.yaml (cables file, required)",
    ]


def test_missing_shipped_table_is_reported(tmp_path):
    data = make_registry(tmp_path)
    shipped = tmp_path / "shipped"
    shipped.mkdir()
    shutil.copy(SHIPPED / "policy.yaml", shipped)
    with pytest.raises(DataError) as caught:
        load_fleet(data, shipped)
    assert [str(problem) for problem in caught.value.problems] == [
        f"{shipped / 'services.yaml'}:1:1: error: (file): found no such file, "
        "expected services.yaml (services file, required)"]


def test_check_command_prints_problems_and_exits_2(tmp_path, monkeypatch, capsys):
    cli = pytest.importorskip("registry.cli")
    monkeypatch.setattr(registry.load.fleet, "SHIPPED_DIR", SHIPPED)
    data = make_registry(tmp_path, "unknown_cable")
    assert cli.main(["check", str(data)]) == 2
    err = capsys.readouterr().err
    assert err.splitlines() == [f"{data}{os.sep}{EXPECTED['unknown_cable'][0]}", "1 problem in 1 file"]
    assert "Traceback" not in err


# --- never anything but DataError -------------------------------------------------------------------------
# The loader must turn any input into either a Fleet or a DataError: no other exception escapes.

TARGETS = ["fleet.yaml", "antennas.yaml", "cables.yaml", "policy.yaml", "services.yaml", "reviews.yaml",
           "modifications.yaml", "airframes/fx-20.yaml", "aircraft/qx-fca.yaml", "aircraft/qx-fcb.yaml"]
scalars = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6), st.floats(allow_nan=True),
                    st.text(max_size=12))
documents = st.recursive(scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=4), st.dictionaries(st.text(max_size=10), inner, max_size=4)), max_leaves=20)
yaml_like = st.text(alphabet=st.sampled_from(list("ab:- \t\n[]{}&*!|>'\"#,?%@`0.\r\x00\xe9")), max_size=120)


def load_with(data: Path, target: str, content: bytes) -> None:
    original = (data / target).read_bytes() if (data / target).exists() else None
    (data / target).write_bytes(content)
    try:
        load_fleet(data, SHIPPED)
    except DataError as error:
        assert error.problems
    finally:
        if original is None:
            (data / target).unlink()
        else:
            (data / target).write_bytes(original)


@pytest.fixture(scope="module")
def scratch(tmp_path_factory) -> Path:
    return make_registry(tmp_path_factory.mktemp("fuzz"))


fuzz = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])


@fuzz
@given(target=st.sampled_from(TARGETS), text=yaml_like)
def test_random_text_gives_only_data_errors(scratch, target, text):
    load_with(scratch, target, text.encode("utf-8"))


@fuzz
@given(target=st.sampled_from(TARGETS), raw=st.binary(max_size=80))
def test_random_bytes_give_only_data_errors(scratch, target, raw):
    load_with(scratch, target, raw)


@fuzz
@given(target=st.sampled_from(TARGETS), document=documents)
def test_random_documents_give_only_data_errors(scratch, target, document):
    load_with(scratch, target, yaml.safe_dump(document).encode("utf-8"))


def _leaves(value, path=()):
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _leaves(item, path + (key,))
    elif isinstance(value, list):
        for number, item in enumerate(value):
            yield from _leaves(item, path + (number,))
    else:
        yield path


@fuzz
@given(data=st.data())
def test_one_changed_value_gives_only_data_errors(scratch, data):
    target = data.draw(st.sampled_from(TARGETS))
    document = yaml.safe_load((FIXTURES / "good" / target).read_text(encoding="utf-8"))
    path = data.draw(st.sampled_from(sorted(_leaves(document), key=str)))
    parent = document
    for part in path[:-1]:
        parent = parent[part]
    parent[path[-1]] = data.draw(documents)
    load_with(scratch, target, yaml.safe_dump(document).encode("utf-8"))


@pytest.mark.parametrize("flaw", ["syntax_error", "unknown_service", "wrong_type", "duplicate_registration"])
def test_files_parsed_in_worker_processes_report_the_same_problems(tmp_path, flaw):
    # enough aircraft files that the loader shares parsing out over processes (workers.MIN_ITEMS)
    data = make_registry(tmp_path, flaw)
    source = (FIXTURES / "good" / "aircraft" / "qx-fcb.yaml").read_text(encoding="utf-8")
    for n in range(8):
        (data / "aircraft" / f"qx-fx{n}.yaml").write_text(
            source.replace("id: qx-fcb", f"id: qx-fx{n}").replace("registration: QX-FCB", f"registration: QX-FX{n}"),
            encoding="utf-8")
    reported = []
    for workers in (1, 2):
        with pytest.raises(DataError) as caught:
            load_fleet(data, SHIPPED, workers=workers)
        reported.append([str(problem) for problem in caught.value.problems])
    assert reported[0] == reported[1]
    assert reported[0]  # the flaw is reported at all


def test_problems_found_in_building_an_aircraft_come_back_from_the_cache(tmp_path):
    # An aircraft's model is kept in the cache with the problems found in building it: a second load
    # from the cache reports exactly what the first did (common practice for build caches, no source).
    data = make_registry(tmp_path)
    path = data / "aircraft" / "qx-fca.yaml"
    text = path.read_text(encoding="utf-8")
    first = text.split("position: ")[1].split("\n")[0]
    second = text.split("position: ")[2].split("\n")[0]
    path.write_text(text.replace(f"position: {second}", f"position: {first}", 1), encoding="utf-8")
    reported = []
    for _ in range(2):
        with pytest.raises(DataError) as caught:
            load_fleet(data, SHIPPED, cache_dir=tmp_path / "cache")
        reported.append([str(problem) for problem in caught.value.problems])
    assert reported[0] == reported[1]
    assert any("position" in line and "again" in line for line in reported[0])
    assert (tmp_path / "cache" / "models").is_dir()  # the second load came from there
