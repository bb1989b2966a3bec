"""The policy's co-site figures (`cosite_services`): loaded over the service table with their sources,
located errors for bad values, shown as "policy" on the interference page and kept in the record; the
installations not analysed for want of a threshold; the page's intermodulation margins against
`check --details`.

Demo data is invented (fleet_data/README.md); the margin shifts below follow from the margin's form
(CEPT wiki 'Example of calculations' §4.1, see test_physics_cosite.py): a threshold lowered by x dB
lowers every margin against it by x dB.
"""
from __future__ import annotations

import json
import re
import shutil
from datetime import date

import pytest

from registry import cli
from registry.compute.aircraft import compute_aircraft
from registry.core.errors import DataError
from registry.load.fleet import load_fleet

AS_OF = date(2026, 12, 2)


def _copy(demo_data, tmp_path, extra: str):
    data = tmp_path / "data"
    shutil.copytree(demo_data, data)
    with (data / "policy.yaml").open("a", encoding="utf-8") as out:
        out.write(extra)
    return data


def _worst(fleet, aircraft_id, tx, rx):
    part, _ = compute_aircraft(fleet, fleet.aircraft[aircraft_id], AS_OF)
    return next(p for p in part.cosite.paths if (p.tx, p.rx) == (tx, rx)).worst


def test_policy_threshold_replaces_the_tables_and_names_its_line(demo_data, demo_fleet, tmp_path):
    """A fleet policy that sets GNSS L1's threshold 9.5 dB lower moves QX-TJA's VHF3 → GNSS1 margin by
    exactly 9.5 dB, and the threshold figure says "policy: ..." and points at its policy.yaml line."""
    data = _copy(demo_data, tmp_path, '  gnss_l1:\n    protection_dbm: {value: -130.0, source: '
                                      '"operator\'s choice: a test of the override"}\n')
    fleet = load_fleet(data)
    assert fleet.policy.cosite_services["gnss_l1"]["protection_dbm"] == (-130.0, "operator's choice: a test of the override")
    # the shipped table's other figures and the fleet's other policy entries are kept
    assert fleet.policy.cosite_services["dme"]["im3_conversion_loss_db"][0] == 70.0
    before, after = _worst(demo_fleet, "qx-tja", "VHF3", "GNSS1"), _worst(fleet, "qx-tja", "VHF3", "GNSS1")
    assert after.margin_db == pytest.approx(before.margin_db - 9.5, abs=1e-9)
    threshold = next(f for f in after.figures if f.key == "cosite.threshold_dbm")
    assert threshold.source == "policy: operator's choice: a test of the override"
    lines = (data / "policy.yaml").read_text(encoding="utf-8").splitlines()
    line = next(n for n, text in enumerate(lines, 1) if "value: -130.0" in text)
    assert threshold.src == f"{data / 'policy.yaml'}:{line}"


def test_policy_band_and_order_limit_reach_the_harmonics(demo_data, tmp_path):
    """A transmit range and an order limit set by the policy: VHF com limited to the 12th harmonic keeps
    only its 12th-harmonic hits in GNSS L1 (157.45/12 … the 12th of 131.2–131.37 MHz)."""
    data = _copy(demo_data, tmp_path, '  vhf_com:\n    max_harmonic_order: {value: 12, source: '
                                      '"operator\'s choice: a test"}\n')
    fleet = load_fleet(data)
    part, _ = compute_aircraft(fleet, fleet.aircraft["qx-tja"], AS_OF)
    path = next(p for p in part.cosite.paths if (p.tx, p.rx) == ("VHF3", "GNSS1"))
    assert {hit.order for hit in path.hits} == {12}


@pytest.mark.parametrize("extra, expected", [
    ('  gnss_l1:\n    protection_dbm: {value: low, source: "operator\'s choice: x"}\n',
     "cosite_services.gnss_l1.protection_dbm.value: found 'low', expected a number"),
    ('  gnss_l1:\n    protection_plane: {value: lna, source: "operator\'s choice: x"}\n',
     "cosite_services.gnss_l1.protection_plane.value: found 'lna', expected one of receiver_input, antenna_port"),
    ('  gnss_l1:\n    protection_dbm: {value: -100}\n',
     "cosite_services.gnss_l1.protection_dbm.source: found nothing, expected a value (the key is required)"),
    ('  gnss_l1:\n    protection_dbm: {value: -100, source: "from memory"}\n',
     "cosite_services.gnss_l1.protection_dbm.source: found 'from memory', expected text matching"),
    ('  gnss_l1:\n    spurious_dbc: {value: -80, source: "operator\'s choice: x"}\n',
     "cosite_services.gnss_l1.spurious_dbc: found spurious_dbc for gnss_l1, which does not transmit, "
     "expected transmit figures only for a service with transmits: true"),
    ('  vor:\n    rx_bands_mhz: {value: [[118.0, 108.0]], source: "operator\'s choice: x"}\n',
     "cosite_services.vor.rx_bands_mhz.value[0]: found [118, 108], expected the lower band edge first"),
    ('  gnss_l9:\n    protection_dbm: {value: -100, source: "operator\'s choice: x"}\n',
     "cosite_services.gnss_l9: found 'gnss_l9', expected a service id from the shipped table"),
])
def test_bad_policy_figures_are_located(demo_data, tmp_path, extra, expected):
    """Every bad value names policy.yaml, the line the appended entry's second line sits on, and what was
    expected; no traceback."""
    data = _copy(demo_data, tmp_path, extra)
    with pytest.raises(DataError) as caught:
        load_fleet(data)
    lines = (data / "policy.yaml").read_text(encoding="utf-8").splitlines()
    texts = [str(problem) for problem in caught.value.problems]
    assert len(texts) == 1 and expected in texts[0], texts
    entry_line = len(lines) - extra.count("\n") + 1  # the service id's line
    assert texts[0].startswith(f"{data / 'policy.yaml'}:")
    assert int(texts[0].split(":")[1]) in (entry_line, entry_line + 1)


def test_demo_policy_shows_as_policy_on_the_page_and_in_the_record(demo_site):
    """The operator's conversion losses (fleet_data/policy.yaml) are numbered on QX-TJA's page with the
    standing "policy", and the record's policy holds them with their sources."""
    html = (demo_site / "aircraft" / "qx-tja" / "interference.html").read_text(encoding="utf-8")
    assert re.search(r'Conversion loss of DME2, order 5</th><td class="num">100 dB</td><td class="meta">'
                     r'<a href="#note-\d+">\[\d+\]</a> policy', html)
    assert "policy: operator&#39;s choice: radio specification TCA-RS-12 §4.5" in html
    policy = json.loads((demo_site / "record.json").read_text(encoding="utf-8"))["registry"]["policy"]
    value, source = policy["cosite_services"]["dme"]["im5_conversion_loss_db"]
    assert value == 100.0 and source.startswith("operator's choice: radio specification TCA-RS-12 §4.5")


def test_receivers_without_a_threshold_are_named_on_the_page_and_in_details(demo_fleet, demo_site, capsys):
    """QX-TJA's marker, ADF, ELT, radio altimeter and weather radar have no protection threshold: the page
    lists each as not analysed, `check --details` names the same ones, and no receiver with a threshold
    is among them."""
    part, _ = compute_aircraft(demo_fleet, demo_fleet.aircraft["qx-tja"], AS_OF)
    names = {position for position, _ in part.cosite.not_analysed}
    assert {"MKR", "ADF1"} <= names and not names & {"GNSS1", "VHF1", "LOC", "DME1"}
    for position in names:
        service = demo_fleet.services[demo_fleet.aircraft["qx-tja"].installations[position].service]
        assert service.protection_dbm is None and "protection_dbm" not in demo_fleet.policy.cosite_services.get(
            service.id, {})
    html = (demo_site / "aircraft" / "qx-tja" / "interference.html").read_text(encoding="utf-8")
    page = set(re.findall(r"<li>(\S+) \([a-z_0-9]+\): not analysed: no protection threshold in the service table "
                          r"or policy</li>", html))
    assert cli.main(["check", "fleet_data", "--details", "--aircraft", "QX-TJA"]) in (0, 1)
    details = set(re.findall(r"^QX-TJA co-site not analysed: (\S+) \(", capsys.readouterr().out, re.M))
    assert page == details == names


def test_intermod_margins_on_the_page_agree_with_check_details(demo_site, capsys):
    """Each intermodulation row of QX-TJA's page carries the margin `check --details` prints for the same
    product (same transmitters, receiver, product and range); rated rows come worst first."""
    assert cli.main(["check", "fleet_data", "--details", "--aircraft", "QX-TJA"]) in (0, 1)
    text = capsys.readouterr().out
    details = {f"{what} at {at}": margin for what, at, margin in re.findall(
        r"^  (\S+ \+ \S+ → \S+: .+?) \(order \d\) at ([\d.]+–[\d.]+ MHz), made in \S+: (margin .+|no level.*)$",
        text, re.M)}
    html = (demo_site / "aircraft" / "qx-tja" / "interference.html").read_text(encoding="utf-8")
    rows = re.findall(r'<tr data-product="([^"]+)">.*?<td class="cosite-[a-z]+">(?:<details[^>]*><summary>)?'
                      r'([^<]+)', html, re.S)
    assert len(rows) > 20
    margins = []
    for key, shown in rows:
        key = key.replace("&gt;", ">")
        assert key in details, key
        if shown.strip().endswith("dB"):
            assert details[key] == f"margin {shown.strip()}"
            margins.append(float(shown.split()[0]))
        else:
            assert details[key] == shown.strip()
    assert margins == sorted(margins) and margins


def test_methods_page_lays_out_the_cosite_method_with_sources_and_standing(demo_site):
    """The methods page has the co-site method step by step, each with its source and standing (the
    transmitter-intermodulation model marked common practice, no source, with the document to check), and
    the policy's co-site figures among the thresholds in force."""
    html = (demo_site / "methods.html").read_text(encoding="utf-8")
    section = html[html.index('<h2 id="cosite">'):html.index('<h2 id="checks">')]
    for step in ("Harmonic frequencies", "Intermodulation frequencies", "Coupling between two antennas",
                 "Level at the victim", "Margin", "Transmitter intermodulation"):
        assert f"<th scope=\"row\">{step}</th>" in section
    assert "ITU-R SM.329-13 §1.1.1" in section and "ITU-R SM.1134-1" in section
    assert "common practice, no source" in section and "antenna&#39;s port" in section
    assert "<code>dme: im5_conversion_loss_db</code>" in html  # the one threshold table, with the policy's override
    assert "fleet policy: 100 dB (operator&#39;s choice: radio specification TCA-RS-12 §4.5" in html


def test_search_index_holds_the_interference_pages(demo_fleet, demo_site):
    """Each aircraft's interference page and each airframe type's are in the search index; an aircraft's
    entry names as not analysed exactly the installations the co-site analysis leaves out."""
    text = (demo_site / "static" / "search-index.js").read_text(encoding="utf-8")
    entries = json.loads(text[text.index("=") + 1:].strip().rstrip(";"))
    pages = {e["url"]: e for e in entries if e["kind"] == "interference"}
    for aircraft in demo_fleet.aircraft.values():
        assert f"aircraft/{aircraft.id}/interference.html" in pages
        assert (demo_site / "aircraft" / aircraft.id / "interference.html").is_file()
    assert "interference/tj-88.html" in pages and (demo_site / "interference" / "tj-88.html").is_file()
    part, _ = compute_aircraft(demo_fleet, demo_fleet.aircraft["qx-tja"], AS_OF)
    entry = pages["aircraft/qx-tja/interference.html"]
    listed = re.search(r"not analysed \(no protection threshold\) ([^·]+)", entry["text"]).group(1).strip()
    assert set(listed.split(", ")) == {position for position, _ in part.cosite.not_analysed}


def test_a_type_page_cell_is_the_worse_of_harmonic_and_intermodulation():
    # the cell of a transmitter → receiver path is its worst margin (the minimum, by definition): here the
    # intermodulation product DME1 makes in GNSS1 with XPDR1 (−3 dB) is worse than DME1's harmonic (+4 dB)
    from registry.core.results import AircraftCosite, CositeHit, CositeIntermod, CositePath, cosite_cells

    hit = CositeHit(2, 787.0, 788.0, 0, 0.0, 1574.0, 1576.0, (), 4.0)
    path = CositePath(aircraft="qx-a", tx="DME1", rx="GNSS1", tx_service="dme", rx_service="gnss_l1", hits=(hit,))
    other = CositePath(aircraft="qx-a", tx="XPDR1", rx="GNSS1", tx_service="xpdr", rx_service="gnss_l1", hits=())
    product = CositeIntermod("qx-a", "DME1", "XPDR1", "GNSS1", "2f1 − f2", 3, (1040.0, 1041.0), (1090.0, 1090.0),
                             (990.0, 992.0), generator="DME1", margin_db=-3.0)
    excused = product._replace(margin_db=-40.0, excused_by="lband")
    cells = {cell.tx: cell for cell in cosite_cells(AircraftCosite("qx-a", (path, other), (product, excused)))}
    assert cells["DME1"].margin_db == -3.0 and "intermodulation 2f1 − f2 with XPDR1" in cells["DME1"].what
    assert cells["XPDR1"].margin_db is None  # DME1 makes the product, not XPDR1; the excused one counts for none
    only_harmonic = cosite_cells(AircraftCosite("qx-a", (path,), (product._replace(margin_db=9.0),)))
    assert only_harmonic[0].margin_db == 4.0 and only_harmonic[0].what.startswith("2nd harmonic")
