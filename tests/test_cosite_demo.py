"""Co-site analysis on the demo fleet: the planted problem worked by hand, the suppression line's excuse,
the rules, the record and `diff`, and the interference page against `check --details`.

Demo data is invented (fleet_data/README.md); the arithmetic it is checked against is independent:
free-space loss in ITU-R P.525's engineering form L = 32.45 + 20·log10(f/MHz) + 20·log10(d/km) dB
(the constant 20·log10(4π·10⁹/c) = 32.45 dB), and the margin of the field notes' co-site paragraph.
"""
from __future__ import annotations

import dataclasses
import math
import re
from datetime import date

import pytest

from registry import cli
from registry.check.rules import cosite_discrepancies
from registry.compute.aircraft import compute_aircraft
from registry.core import figure_keys as FK
from registry.core.base import FrozenMap
from registry.output import record
from registry.output.compare import compare_figures, compare_pairs
from registry.output.comparison import Tolerance

AS_OF = date(2026, 12, 2)


@pytest.fixture(scope="module")
def tja(demo_fleet):
    part, _ = compute_aircraft(demo_fleet, demo_fleet.aircraft["qx-tja"], AS_OF)
    return part


def path_of(part, tx, rx):
    return next(path for path in part.cosite.paths if (path.tx, path.rx) == (tx, rx))


def test_planted_vhf_harmonic_into_gnss_worked_by_hand_p525(demo_fleet, tja):
    """QX-TJA VHF3 (pool unit, −100 dBc harmonics) at STA 13400 mm, GNSS1 at STA 10200 mm, both on the
    crown at BL 0, WL 3950: d = 3.2 m. 13th harmonic: 1574.397/13 = 121.1075 MHz up to 1576.443/13 =
    121.2648 MHz; on the 25/3 kHz grid from 118.000 MHz the channels 121.108333 … 121.258333 MHz (19)."""
    hit = next(h for h in path_of(tja, "VHF3", "GNSS1").hits if h.order == 13)
    assert hit.channels_lo_mhz == pytest.approx(118.0 + 373 * 25 / 3000, abs=1e-6)
    assert hit.channels_hi_mhz == pytest.approx(118.0 + 391 * 25 / 3000, abs=1e-6)
    assert hit.channel_count == 19
    f_mhz = 13 * hit.channels_lo_mhz
    free_space_db = 32.45 + 20 * math.log10(f_mhz) + 20 * math.log10(3.2e-3)
    value = {f.key: f.value for f in hit.figures}
    assert value[FK.COSITE_DISTANCE_M] == pytest.approx(3.2, abs=1e-9)
    assert value[FK.COSITE_COUPLING_DB] == pytest.approx(-free_space_db, abs=0.01)
    tx_loss = tja.installations[("qx-tja", "VHF3")].figure(FK.FEEDER_TOTAL_LOSS_DB).value
    assert value[FK.COSITE_TX_FEEDER_LOSS_DB] == tx_loss
    # the GNSS threshold is stated at the antenna port: the receive feeder lies behind it, not subtracted
    assert FK.COSITE_RX_FEEDER_LOSS_DB not in value
    assert value[FK.COSITE_THRESHOLD_PLANE].startswith("at the antenna's port")
    level = 47.4 + (-100.0) - tx_loss - free_space_db
    assert value[FK.COSITE_LEVEL_DBM] == pytest.approx(level, abs=0.01)
    assert hit.margin_db == pytest.approx(-120.5 - level, abs=0.01)
    assert hit.margin_db < 0


def test_planted_problem_is_one_finding_with_channels_order_and_margin(demo_fleet, tja):
    found = cosite_discrepancies(demo_fleet, tja.cosite)
    assert [item.id for item in found] == ["qx-tja/GNSS1+VHF3/cosite"]
    item = found[0]
    assert item.severity == "unserviceable" and item.unit == "dB" and item.value < 0 and item.limit == 0.0
    assert "channels 121.108–121.258 MHz (19 at 8.333 kHz), 13th harmonic" in item.message
    assert f"margin {item.value:.1f} dB" in item.message
    assert item.src.endswith("qx-tja.yaml:" + item.src.rsplit(":", 1)[1])  # the pool unit's line


def test_small_margin_is_the_lesser_finding(demo_fleet, tja):
    """VHF1 → GNSS1 on QX-TJA has a margin between 6 and 15 dB: not small under the shipped 6 dB, small
    under a 15 dB policy (and then the only other small one is not on this pair)."""
    margin = path_of(tja, "VHF1", "GNSS1").worst.margin_db
    assert 6.0 <= margin < 15.0
    assert not any(item.id.endswith("/cosite-small") for item in cosite_discrepancies(demo_fleet, tja.cosite))
    fleet = dataclasses.replace(demo_fleet, policy=dataclasses.replace(demo_fleet.policy, cosite_small_margin_db=15.0))
    found = {item.id: item for item in cosite_discrepancies(fleet, tja.cosite)}
    assert found["qx-tja/GNSS1+VHF1/cosite-small"].severity == "query"
    assert found["qx-tja/GNSS1+VHF1/cosite-small"].value == pytest.approx(margin, abs=1e-3)


def test_suppression_line_excuses_the_lband_family_and_only_it(demo_fleet, tja):
    """ACAS (1030 MHz) and transponder (1087–1093 MHz) give 2·f1 − f2 = 967–973 MHz, inside the DME
    receive band 962–1213 MHz: all three on the lband line, so excused. Without the line it is listed."""
    excused = [item for item in tja.cosite.intermod if item.excused_by]
    assert any(i.tx_a.startswith("ACAS") and i.tx_b.startswith("XPDR") and i.rx.startswith("DME")
               and i.product == "2·f1 − f2" for i in excused)
    assert path_of(tja, "ACAS-T", "XPDR-B").excused_by == "lband" and not path_of(tja, "ACAS-T", "XPDR-B").hits
    services = FrozenMap((key, dataclasses.replace(service, suppression_line=None))
                         for key, service in demo_fleet.services.items())
    unlined = dataclasses.replace(demo_fleet, services=services)
    part, _ = compute_aircraft(unlined, unlined.aircraft["qx-tja"], AS_OF)
    assert not any(item.excused_by for item in part.cosite.intermod)
    assert any(i.tx_a.startswith("ACAS") and i.tx_b.startswith("XPDR") and i.rx.startswith("DME")
               and i.product == "2·f1 − f2" and i.product_mhz[0] >= 962.0 for i in part.cosite.intermod)
    assert not any(path.excused_by for path in part.cosite.paths)


def test_record_and_diff_carry_the_margins(demo_fleet, tja):
    """A new radio's harmonic appears in `diff` as a co-site path that was added, with its margin."""
    new = record.cosite_record(tja.cosite)
    entry = new["qx-tja/VHF3+GNSS1"]
    assert entry["figures"]["cosite.margin_db.h13"]["value"] == pytest.approx(
        path_of(tja, "VHF3", "GNSS1").worst.margin_db, abs=1e-4)
    old = {key: value for key, value in new.items() if key != "qx-tja/VHF3+GNSS1"}
    shape = lambda cosite: {"registry": {"aircraft": {"qx-tja": {}}},  # noqa: E731
                            "figures": {"installations": {}, "pairs": {}, "cables": {}, "cosite": cosite}}
    assert compare_figures(shape(old), shape(new), {}, {}, Tolerance()) == []  # listed whole, not figure by figure
    added = compare_pairs(shape(old), shape(new), {})
    assert [(c.scope, c.owner, c.change) for c in added] == [("co-site", "qx-tja/VHF3+GNSS1", "added")]
    assert entry["figures"]["cosite.margin_db.h13"]["label"] in added[0].summary


def test_interference_page_agrees_with_check_details(demo_site, capsys):
    """Every matrix cell's worst margin on QX-TJA's page is the lowest margin `check --details` prints
    for that transmitter → receiver."""
    assert cli.main(["check", "fleet_data", "--details", "--aircraft", "QX-TJA"]) in (0, 1)
    text = capsys.readouterr().out
    blocks = re.findall(r"^QX-TJA co-site (\S+) → (\S+) \([^)]*\)\n((?:  .*\n)+)", text, re.M)
    details = {(tx, rx): min(float(m) for m in re.findall(r"^    Margin\s+(-?[\d.]+) dB", body, re.M))
               for tx, rx, body in blocks}
    html = (demo_site / "aircraft" / "qx-tja" / "interference.html").read_text(encoding="utf-8")
    cells = {(tx, rx): float(value) for tx, rx, value in
             re.findall(r'<details id="[^"]+" data-tx="([^"]+)" data-rx="([^"]+)"><summary>(-?[\d.]+) dB</summary>', html)}
    assert cells and set(cells) == set(details)
    assert cells == details
    assert cells[("VHF3", "GNSS1")] < 0


def test_type_page_shows_the_worst_margin_of_the_paths_every_aircraft_shares(demo_site, demo_fleet):
    """The TJ-88 page: VHF1 → GNSS1 is on all three jets; its worst margin is the lowest of the three
    aircraft pages' cells. VHF3 is not on every jet (QX-TJC's third radio is VHF3-AFT): not listed."""
    def cell(html: str, tx: str, rx: str) -> float:
        match = re.search(rf'data-tx="{tx}" data-rx="{rx}"><summary>(-?[\d.]+) dB</summary>', html)
        return float(match.group(1))
    jets = [a.id for a in demo_fleet.aircraft.values() if a.airframe == "tj-88"]
    each = [cell((demo_site / "aircraft" / a / "interference.html").read_text(encoding="utf-8"), "VHF1", "GNSS1")
            for a in jets]
    html = (demo_site / "interference" / "tj-88.html").read_text(encoding="utf-8")
    assert cell(html, "VHF1", "GNSS1") == min(each)
    assert 'data-tx="VHF3"' not in html


def test_every_reported_product_lies_in_the_victims_band(demo_fleet):
    """Over the whole demo fleet, independent of the interval arithmetic: each harmonic's range is its
    order times its channels and lies in one of the receiver's bands; each channel run is on the plan
    (first + k·step); each intermodulation product a·f1 + b·f2 evaluated at the reported ends lies in a band."""
    for aircraft in demo_fleet.aircraft.values():
        part, _ = compute_aircraft(demo_fleet, aircraft, AS_OF)
        for path in part.cosite.paths:
            tx = demo_fleet.services[path.tx_service]
            bands = demo_fleet.services[path.rx_service].rx_bands_mhz
            for hit in path.hits:
                assert hit.product_lo_mhz == pytest.approx(hit.order * hit.channels_lo_mhz)
                assert hit.product_hi_mhz == pytest.approx(hit.order * hit.channels_hi_mhz)
                assert any(lo - 1e-6 <= hit.product_lo_mhz <= hit.product_hi_mhz <= hi + 1e-6 for lo, hi in bands)
                if hit.channel_count:
                    step_khz = 25 / 3 if hit.step_khz == 8.333 else hit.step_khz  # ED-23C: 25 kHz / 3
                    k = (hit.channels_lo_mhz - tx.tx_bands_mhz[0][0]) * 1000 / step_khz
                    assert abs(k - round(k)) < 1e-6
        for item in part.cosite.intermod:
            rx = demo_fleet.aircraft[aircraft.id].installations[item.rx]
            bands = demo_fleet.services[rx.service].rx_bands_mhz
            assert any(lo - 1e-6 <= item.product_mhz[0] <= item.product_mhz[1] <= hi + 1e-6 for lo, hi in bands)


def test_interference_page_lays_out_the_worst_and_the_small_margin_products(demo_site, demo_fleet):
    """QX-TJA's intermodulation table: the worst INTERMOD_ARITHMETIC rated products and every product under
    the policy's small margin open their arithmetic; a product with a larger margin further down shows its
    margin only (internal page rule, no external source)."""
    from registry.site.pages_cosite import INTERMOD_ARITHMETIC
    html = (demo_site / "aircraft" / "qx-tja" / "interference.html").read_text(encoding="utf-8")
    table = html[html.index('<table class="cosite-intermod">'):]
    table = table[:table.index("</table></div>")]
    rows = re.findall(r'<tr data-product="[^"]*">.*?<td class="cosite-(\w+)">([^<]*)</td></tr>\n'
                      r'(<tr class="cosite-im-arith">)?', table, re.S)
    assert len(rows) > INTERMOD_ARITHMETIC
    for n, (state, margin, arithmetic) in enumerate(rows):
        assert bool(arithmetic) == (state != "unrated" and (n < INTERMOD_ARITHMETIC or state != "ok")), (n, state, margin)
    assert any(state == "ok" and not arithmetic for state, _, arithmetic in rows)
