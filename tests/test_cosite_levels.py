"""Co-site level arithmetic beyond the harmonic margin: the threshold's plane and transmitter-generated
intermodulation, worked by hand, then on the demo fleet against an independent free-space computation.

Sources: the margin's form is that of CEPT wiki 'Example of calculations' §4.1 (iRSSunwanted), checked in
test_physics_cosite.py against its published rows; free-space loss in ITU-R P.525's engineering form
L = 32.45 + 20·log10(f/MHz) + 20·log10(d/km) dB. The transmitter-intermodulation (conversion-loss) model
is common practice, no source (the document to check it against: ITU-R SM.1134-1 Annex 1 §4); the
numbers below are worked by hand, no published source.
"""
from __future__ import annotations

import dataclasses
import math
from datetime import date

import pytest

from registry.check.rules import cosite_discrepancies
from registry.compute.aircraft import compute_aircraft
from registry.core import figure_keys as FK
from registry.core.base import FrozenMap
from registry.physics import cosite
from registry.physics.coupling import distance_m

AS_OF = date(2026, 12, 2)


def test_antenna_port_threshold_leaves_out_the_receive_feeder():
    """Worked by hand, no published source: −16.02 dBm harmonic at the port (25 W, −60 dBc), 1.5 dB
    transmit feeder, coupling −40 dB → −57.52 dBm at the receive antenna's port; a 2 dB receive feeder
    → −59.52 dBm at the receiver's input. Against −120 dBm stated at the antenna port the margin is
    −120 − (−57.52) = −62.48 dB; stated at the receiver's input −60.48 dB."""
    tx = cosite.dbm_from_w(25.0)
    port = cosite.interference_margin(tx, -60.0, 1.5, -40.0, 2.0, -120.0, plane="antenna_port")
    inside = cosite.interference_margin(tx, -60.0, 1.5, -40.0, 2.0, -120.0, plane="receiver_input")
    assert port.compared_dbm == pytest.approx(-57.5206, abs=1e-4) == port.at_rx_antenna_dbm
    assert port.margin_db == pytest.approx(-62.4794, abs=1e-4)
    assert inside.compared_dbm == pytest.approx(-59.5206, abs=1e-4) == inside.at_receiver_dbm
    assert inside.margin_db == pytest.approx(-60.4794, abs=1e-4)
    # with no receive feeder the two planes are one (the CEPT rows' case)
    assert (cosite.interference_margin(tx, -60.0, 1.5, -40.0, 0.0, -120.0, plane="antenna_port").margin_db
            == cosite.interference_margin(tx, -60.0, 1.5, -40.0, 0.0, -120.0).margin_db)
    with pytest.raises(ValueError):
        cosite.interference_margin(tx, -60.0, 1.5, -40.0, 2.0, -120.0, plane="lna_output")


def test_transmitter_intermodulation_worked_by_hand():
    """Worked by hand, no published source: a 50 W intruder (46.99 dBm) behind a 1.0 dB feeder, −30 dB
    between the antennas, the generator's 1.5 dB feeder: 46.99 − 1.0 − 30 − 1.5 = 14.49 dBm reaches the
    generator's output stage; 10 dB conversion loss → 4.49 dBm product at its port. Out through its 1.5 dB
    feeder, −40 dB to the victim antenna and a 2 dB receive feeder: −39.01 dBm against −107 dBm at the
    receiver's input: margin −67.99 dB."""
    p_dbm = cosite.dbm_from_w(50.0)
    im = cosite.transmitter_intermod(p_dbm, 1.0, -30.0, 1.5, 10.0)
    assert im.coupled_in_dbm == pytest.approx(14.4897, abs=1e-4)
    assert im.product_dbm == pytest.approx(4.4897, abs=1e-4)
    m = cosite.interference_margin(im.product_dbm, 0.0, 1.5, -40.0, 2.0, -107.0)
    assert m.at_receiver_dbm == pytest.approx(-39.0103, abs=1e-4)
    assert m.margin_db == pytest.approx(-67.9897, abs=1e-4)


def _free_space_db(f_mhz: float, d_m: float) -> float:
    """ITU-R P.525 engineering form."""
    return 32.45 + 20 * math.log10(f_mhz) + 20 * math.log10(d_m / 1000.0)


@pytest.fixture(scope="module")
def tja(demo_fleet):
    part, _ = compute_aircraft(demo_fleet, demo_fleet.aircraft["qx-tja"], AS_OF)
    return part


def test_a_demo_product_level_recomputed_from_the_registry(demo_fleet, tja):
    """QX-TJA DME2 + RA-TX → VHF1, 4·f1 − f2 (order 5, made in DME2): recomputed from the antennas'
    STA/BL/WL, each installation's total feeder loss, the policy's 100 dB conversion loss and the service
    table's figures, with free-space coupling at the lowest frequency of each range (the check's stated
    assumption)."""
    item = next(i for i in tja.cosite.intermod if (i.tx_a, i.tx_b, i.rx, i.product) == ("DME2", "RA-TX", "VHF1",
                                                                                         "4·f1 − f2"))
    assert item.generator == "DME2" and item.order == 5
    craft = demo_fleet.aircraft["qx-tja"]
    unit = {"in": "inch", "mm": "mm"}[demo_fleet.airframe_of(craft).coord_unit]
    where = {p: craft.installations[p].location for p in ("DME2", "RA-TX", "VHF1")}
    d = lambda a, b: distance_m((where[a].sta, where[a].bl, where[a].wl),  # noqa: E731
                                (where[b].sta, where[b].bl, where[b].wl), unit)
    loss = {p: tja.installations[("qx-tja", p)].figure(FK.FEEDER_TOTAL_LOSS_DB).value for p in where}
    ra_power = demo_fleet.services["radio_altimeter"].tx_peak_power_dbm
    coupled_in = ra_power - loss["RA-TX"] - _free_space_db(item.f2_mhz[0], d("RA-TX", "DME2")) - loss["DME2"]
    product = coupled_in - 100.0
    level = product - loss["DME2"] - _free_space_db(item.product_mhz[0], d("DME2", "VHF1")) - loss["VHF1"]
    margin = demo_fleet.services["vhf_com"].protection_dbm - level
    value = {f.key: f.value for f in item.figures}
    assert value[FK.COSITE_PRODUCT_DBM] == pytest.approx(product, abs=0.01)
    assert value[FK.COSITE_LEVEL_DBM] == pytest.approx(level, abs=0.01)
    assert item.margin_db == pytest.approx(margin, abs=0.01)


def test_negative_intermod_margin_is_the_cosite_finding_on_the_makers_pair(demo_fleet):
    """Without the operator's conversion losses (the shipped 10 / 30 dB, an output stage without an
    isolator) QX-TJA's products fall below the thresholds: each gives `cosite` on the pair of the
    transmitter that makes it and the receiver, with the worst margin as its value."""
    fleet = dataclasses.replace(demo_fleet, policy=dataclasses.replace(demo_fleet.policy, cosite_services=FrozenMap()))
    part, _ = compute_aircraft(fleet, fleet.aircraft["qx-tja"], AS_OF)
    worst = {}
    for item in part.cosite.intermod:
        if item.margin_db is not None and not item.excused_by:
            key = tuple(sorted((item.generator, item.rx)))
            worst[key] = min(worst.get(key, math.inf), item.margin_db)
    for path in part.cosite.paths:
        for hit in path.hits:
            if hit.margin_db is not None:
                key = tuple(sorted((path.tx, path.rx)))
                worst[key] = min(worst.get(key, math.inf), hit.margin_db)
    found = {item.id: item for item in cosite_discrepancies(fleet, part.cosite)}
    negative = {key for key, margin in worst.items() if margin < 0}
    assert len(negative) > 1
    assert {f"qx-tja/{a}+{b}/cosite" for a, b in negative} == {k for k in found if k.endswith("/cosite")}
    item = found["qx-tja/VHF1+XPDR-T/cosite"]
    assert item.value == pytest.approx(worst[("VHF1", "XPDR-T")], abs=1e-3)
    assert "An intermodulation product lands above" in item.message and "made in XPDR-T" in item.message
    assert item.severity == "unserviceable"


def test_small_intermod_margin_is_the_lesser_finding(demo_fleet, tja):
    """With the operator's figures QX-TJA's worst product margin is positive; a small-margin policy above
    it turns that pair's products into `cosite-small`."""
    rated = [i for i in tja.cosite.intermod if i.margin_db is not None]
    best_bad = min(rated, key=lambda i: i.margin_db)
    assert best_bad.margin_db > demo_fleet.policy.cosite_small_margin_db
    fleet = dataclasses.replace(demo_fleet, policy=dataclasses.replace(
        demo_fleet.policy, cosite_small_margin_db=best_bad.margin_db + 0.5))
    ends = sorted((best_bad.generator, best_bad.rx))
    on_pair = [i.margin_db for i in rated if sorted((i.generator, i.rx)) == ends]
    on_pair += [h.margin_db for p in tja.cosite.paths if sorted((p.tx, p.rx)) == ends for h in p.hits
                if h.margin_db is not None]  # harmonics on the same pair count too
    found = {item.id: item for item in cosite_discrepancies(fleet, tja.cosite)}
    item = found[f"qx-tja/{'+'.join(ends)}/cosite-small"]
    assert item.severity == "query" and item.value == pytest.approx(min(on_pair), abs=1e-3)
    assert "made in" in item.message


def test_products_without_a_conversion_loss_say_so(demo_fleet, tja):
    """The operator's VHF sets (fleet services.yaml) give no conversion loss: the products they make get
    no margin, and the missing figure is named among the product's figures."""
    made_in_vhf = [i for i in tja.cosite.intermod if i.generator.startswith("VHF") and not i.excused_by]
    assert made_in_vhf and all(i.margin_db is None for i in made_in_vhf)
    missing = {f.label for f in made_in_vhf[0].figures if f.value is None}
    assert any(label.startswith("Conversion loss of VHF") for label in missing)


def test_record_carries_the_worst_intermod_margin_per_maker_and_receiver(tja):
    """The record's co-site entry `<aircraft>/<maker>+<receiver>` holds, per order, the lowest margin of
    the products that transmitter makes in that receiver, so `diff` shows what a new radio breaks."""
    from registry.output import record

    out = record.cosite_record(tja.cosite)
    rated = [i for i in tja.cosite.intermod if i.margin_db is not None and not i.excused_by]
    for order in (3, 5):
        of_order = [i for i in rated if i.order == order]
        assert of_order
        worst = min(of_order, key=lambda i: i.margin_db)
        entry = out[f"qx-tja/{worst.generator}+{worst.rx}"]
        assert entry["tx"] == worst.generator and entry["rx"] == worst.rx
        assert entry["figures"][f"cosite.margin_db.im{order}"]["value"] == pytest.approx(worst.margin_db, abs=1e-3)
