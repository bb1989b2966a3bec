"""Hardware in the register (connectors, adapters, radio unit, serial, bonding, panel, manuals), shared
antennas (one antenna, several services through a splitter) and active antennas' amplifiers.

The splitter and amplifier checks run the compute path the site uses (`installation_result`) on the demo
registry (invented data). The noise figure is checked against published worked examples of Friis's cascade
formula, named beside each test.
"""
from __future__ import annotations

import dataclasses
import math
from datetime import date
from pathlib import Path

import pytest

from registry.compute.aircraft import installation_result
from registry.core import figure_keys as FK
from registry.load.fleet import load_fleet
from registry.physics import noise
from registry.site.search import aircraft_entries
from registry.site.technician import technician_card

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "fleet_data"
AS_OF = date(2026, 12, 2)  # the demo's "today" (fleet_data/README.md)


@pytest.fixture(scope="module")
def fleet():
    return load_fleet(DEMO)


def figures(fleet, aircraft_id: str, installation) -> dict[str, object]:
    aircraft = fleet.aircraft[aircraft_id]
    result, _ = installation_result(fleet, aircraft, installation, AS_OF)
    return {figure.key: figure.value for figure in result.figures}


# --- physics: Friis's cascade formula ----------------------------------------------------------------------

def test_cascade_worked_example_lna_mixer_if():
    # theprimecalculator.com, noise figure formula page, worked example: LNA 1.5 dB NF 20 dB gain, mixer
    # 10 dB NF 15 dB gain, IF amplifier 15 dB NF: F = 1.413 + 9/100 + 30.62/3162 = 1.513, NF = 1.80 dB
    assert noise.cascade_noise_figure_db([(1.5, 20.0), (10.0, 15.0), (15.0, 0.0)]) == pytest.approx(1.80, abs=0.005)


def test_cascade_worked_example_filter_before_lna():
    # rfview.com, "how to compute noise figure cascade", step-by-step example: filter 2 dB / -2 dB, LNA 1.5 dB /
    # 18 dB, filter 1 dB / -1 dB, mixer 8 dB: F = 2.414, NF = 3.83 dB
    stages = [(2.0, -2.0), (1.5, 18.0), (1.0, -1.0), (8.0, -6.0)]
    assert noise.cascade_noise_figure_db(stages) == pytest.approx(3.83, abs=0.01)


def test_passive_loss_alone_has_its_loss_as_noise_figure():
    # a passive loss at 290 K has F = L (effective noise temperature (L - 1)·290 K; Federal Standard 1037C,
    # "effective input noise temperature": T = 290 (F - 1))
    assert noise.cascade_noise_figure_db([(6.0, -6.0)]) == pytest.approx(6.0)
    # amplifier then feeder: F = F_a + (L - 1)/G_a, by hand: 10^0.2 + (10^0.5 - 1)/10^2.65
    by_hand = 10 * math.log10(10 ** 0.2 + (10 ** 0.5 - 1) / 10 ** 2.65)
    assert noise.amplifier_and_feeder_noise_figure_db(2.0, 26.5, 5.0) == pytest.approx(by_hand)


# --- the registry's hardware --------------------------------------------------------------------------------

def test_demo_hardware_is_read_into_the_model(fleet):
    vhf1 = fleet.aircraft["qx-tca"].installations["VHF1"]
    assert vhf1.antenna_serial == "TB-20417"
    assert vhf1.access_panel.startswith("231AT")
    assert (vhf1.bonding.resistance_milliohm, vhf1.bonding.date) == (1.8, date(2026, 3, 18))
    assert [(ref.kind, ref.ref) for ref in vhf1.manuals] == [("maintenance", "TCA-MM 23-11-00-400-801"),
                                                             ("wiring", "TCA-WM 23-11-10 sheet 2")]
    assert (vhf1.feeder.antenna_end.connector, vhf1.feeder.antenna_end.gender) == ("BNC", "male")
    assert (vhf1.feeder.radio_unit.part_number, vhf1.feeder.radio_unit.rack) == ("TCR-2310-V", "E1 shelf 2, left")
    # the line a technician is sent to is the bonding line of the file
    assert vhf1.bonding.src.line == vhf1.where("bonding").line
    vhf3 = fleet.aircraft["qx-tcd"].installations["VHF3"]
    assert [part.part_number for part in vhf3.feeder.adapter_parts] == ["TCP-AD-TB1"]
    assert vhf3.feeder.adapters == 1


def test_every_new_field_is_used_in_the_demo(fleet):
    used = set()
    for _, inst in fleet.installations():
        run = inst.feeder
        used |= {name for name, present in (
            ("antenna_end", run.antenna_end), ("radio_end", run.radio_end), ("adapter_parts", run.adapter_parts),
            ("radio_unit", run.radio_unit), ("rack", run.radio_unit and run.radio_unit.rack),
            ("antenna_serial", inst.antenna_serial), ("access_panel", inst.access_panel), ("bonding", inst.bonding),
            ("manuals", inst.manuals), ("amplifier", inst.amplifier), ("splitter", inst.splitter),
            ("shared_from", inst.shared_from)) if present}
    assert used == {"antenna_end", "radio_end", "adapter_parts", "radio_unit", "rack", "antenna_serial",
                    "access_panel", "bonding", "manuals", "amplifier", "splitter", "shared_from"}


def test_adapters_are_counted_from_their_part_numbers_when_left_out(tmp_path):
    from test_load_bad import SHIPPED, make_registry
    data = make_registry(tmp_path)
    path = data / "aircraft" / "qx-fcb.yaml"
    path.write_text(path.read_text(encoding="utf-8") + (
        "      adapter_parts:\n"
        "        - {part_number: FXP-AD-1, description: TNC female to BNC male}\n"
        "        - {part_number: FXP-AD-2}\n"), encoding="utf-8")
    run = load_fleet(data, SHIPPED).aircraft["qx-fcb"].installations["VHF1"].feeder
    assert run.adapters == 2
    assert [(part.part_number, part.description) for part in run.adapter_parts] == [
        ("FXP-AD-1", "TNC female to BNC male"), ("FXP-AD-2", "")]


# --- shared antennas: a splitter's loss in every service's budget -----------------------------------------

def test_localizer_fed_by_the_vor_antenna_shows_its_installation(fleet):
    aircraft = fleet.aircraft["qx-tca"]
    vor, loc = aircraft.installations["VOR"], aircraft.installations["LOC"]
    assert (loc.service, loc.shared_from) == ("ils_loc", "VOR")
    assert (loc.antenna, loc.location, loc.surface, loc.antenna_serial) == (
        vor.antenna, vor.location, vor.surface, vor.antenna_serial)
    assert loc.feeder.length_m == 25.3 and loc.splitter == vor.splitter
    assert loc.where("feeder.length_m").line > vor.where("splitter").line  # its own line, inside the splitter


@pytest.mark.parametrize("position", ["VOR", "LOC"])
def test_splitter_loss_enters_both_services_feeder_budgets(fleet, position):
    inst = fleet.aircraft["qx-tca"].installations[position]
    with_splitter = figures(fleet, "qx-tca", inst)
    without = figures(fleet, "qx-tca", dataclasses.replace(inst, splitter=None))
    assert with_splitter[FK.FEEDER_SPLITTER_LOSS_DB] == 3.4
    assert FK.FEEDER_SPLITTER_LOSS_DB not in without
    # the total is the sum of its parts, and the splitter adds exactly its loss (the mismatch is unchanged)
    parts = (FK.FEEDER_CABLE_LOSS_DB, FK.FEEDER_CONNECTOR_LOSS_DB, FK.FEEDER_ADAPTER_LOSS_DB,
             FK.FEEDER_SPLITTER_LOSS_DB, FK.FEEDER_MISMATCH_LOSS_DB)
    assert with_splitter[FK.FEEDER_TOTAL_LOSS_DB] == pytest.approx(sum(with_splitter[key] for key in parts))
    assert with_splitter[FK.FEEDER_TOTAL_LOSS_DB] - without[FK.FEEDER_TOTAL_LOSS_DB] == pytest.approx(3.4)


# --- an active antenna in the receive budget --------------------------------------------------------------

def test_gnss_amplifier_enters_the_receive_budget(fleet):
    inst = fleet.aircraft["qx-tca"].installations["GNSS1"]
    found = figures(fleet, "qx-tca", inst)
    loss = found[FK.FEEDER_TOTAL_LOSS_DB]
    assert found[FK.RECEIVE_AMPLIFIER_GAIN_DB] == 26.5
    assert found[FK.RECEIVE_NET_GAIN_DB] == pytest.approx(26.5 - loss)
    # Friis: F = F_a + (L - 1)/G_a, by hand from the registry's 2.0 dB and 26.5 dB
    by_hand = 10 * math.log10(10 ** 0.2 + (10 ** (loss / 10) - 1) / 10 ** 2.65)
    assert found[FK.RECEIVE_NOISE_FIGURE_DB] == pytest.approx(by_hand)
    passive = figures(fleet, "qx-tca", dataclasses.replace(inst, amplifier=None))
    assert not any(key.startswith("receive.") for key in passive)


# --- the card and the search ------------------------------------------------------------------------------

def test_technician_card_says_what_to_bring_and_where(fleet):
    aircraft = fleet.aircraft["qx-tca"]
    card = technician_card(aircraft, aircraft.installations["LOC"], "in")
    bring, where = dict(card["bring"]), dict(card["where"])
    assert bring["Connector at the radio"] == "BNC, male"
    assert bring["Splitter"].startswith("uses the antenna of VOR (vor) through splitter TCS-2W-110")
    assert where["Radio unit"] == "TCR-4120-N, rack E1 shelf 3, left (nav 1, localizer input)"
    assert where["Access panel"].startswith("325BL")  # the antenna's, from VOR
    assert [m["ref"] for m in card["manuals"]] == ["TCA-WM 34-51-11 sheet 2"]  # its own
    plain = technician_card(fleet.aircraft["qx-tjc"], fleet.aircraft["qx-tjc"].installations["ELT"], "mm")
    assert dict(plain["where"])["Access panel"] == "not recorded" and not plain["recorded"]


def test_searching_tnc_finds_the_installations_with_tnc_connectors(fleet):
    paths = {"aircraft": lambda a: a, "installation": lambda a, p: f"{a}/{p}"}
    found, expected = set(), set()
    for aircraft in fleet.aircraft.values():
        for entry in aircraft_entries(fleet, aircraft, lambda text: text, paths):
            if entry["kind"] == "installation" and "tnc" in entry["keys"].split():
                found.add(entry["url"])
        for inst in aircraft.installations.values():
            if any(end is not None and end.connector == "TNC" for end in (inst.feeder.antenna_end, inst.feeder.radio_end)):
                expected.add(f"{aircraft.id}/{inst.position}")
    assert found == expected
    assert {"qx-tca/VOR", "qx-tca/LOC", "qx-tca/GNSS1", "qx-tcd/VHF3"} <= found
