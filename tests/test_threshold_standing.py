"""Every threshold in the shipped data (registry/data/*.yaml: the policy's defaults, the service table's bands
and must_see figures, its co-site figures) has a standing: "sourced: <document, edition, section>", "common
practice, no source: <reason>", "unverified: <document to check it against>" or "operator's choice:
<reason>". The files are read with PyYAML as they ship, not through the loader. The methods page lists
them in one table; each finding on the installation and audit pages names where its limit comes from."""
from __future__ import annotations

import html as html_text
import re

import pytest
import yaml

from registry.load.fleet import SHIPPED_DIR
from registry.site.limits import STANDINGS, has_standing, standing_of

DESCRIPTIVE_SERVICE_KEYS = {"id", "name", "bands_mhz", "design_freq_mhz", "polarisation", "coverage", "transmits",
                            "group", "must_see", "source", "sources"}
"""A service's keys that are not co-site figures: the band has `source`, must_see its own `source`, the rest
describe the service (design_freq_mhz is the table's design choice, not a limit any check holds a value to)."""


def shipped(name: str):
    return yaml.safe_load((SHIPPED_DIR / name).read_text(encoding="utf-8"))


def shipped_thresholds() -> list[tuple[str, str]]:
    """(threshold, source text) for every threshold the shipped files set."""
    policy = shipped("policy.yaml")
    items = [(f"policy {key}", str(policy.get("sources", {}).get(key, "")))
             for key in policy if key not in ("sources", "cosite_services")]
    for service in shipped("services.yaml")["services"]:
        sid = service["id"]
        items.append((f"{sid} bands_mhz", str(service.get("source", ""))))
        if "must_see" in service:
            items.append((f"{sid} must_see", str(service["must_see"].get("source", ""))))
        for key in sorted(set(service) - DESCRIPTIVE_SERVICE_KEYS):
            items.append((f"{sid} {key}", str(service.get("sources", {}).get(key, ""))))
    return items


@pytest.mark.parametrize("name, source", shipped_thresholds(), ids=[n for n, _ in shipped_thresholds()])
def test_every_shipped_threshold_has_a_standing(name, source):
    assert has_standing(source), f"{name}: {source!r} does not begin with a standing and say what it rests on"
    assert "(from memory)" not in source or standing_of(source) == "unverified", name


def test_the_standing_forms_and_what_fails_them():
    assert has_standing("sourced: 47 CFR 87.131 table, aircraft VHF A3E 55 W")
    assert has_standing("common practice, no source: 6 dB covers the spread of the estimate")
    assert has_standing("unverified: check against RTCA DO-185B")
    assert has_standing("operator's choice: two years, the heavy check interval")
    assert not has_standing("common practice, no source")          # no reason given
    assert not has_standing("47 CFR 87.475(b)(5) (from memory)")    # a citation without a standing
    assert not has_standing("unverified:")                          # no document to check against
    assert standing_of("Sourced: x") == "sourced" and standing_of("from memory") == "not given"


def test_unverified_count_is_known():
    """The count the closing note gives: how many shipped thresholds are still unverified."""
    counts = {word: 0 for word in STANDINGS}
    for _, source in shipped_thresholds():
        counts[standing_of(source)] += 1
    assert sum(counts.values()) == len(shipped_thresholds())
    print(f"shipped thresholds by standing: {counts}")


def test_methods_page_has_one_table_of_every_threshold(demo_site, demo_fleet):
    html = (demo_site / "methods.html").read_text(encoding="utf-8")
    assert html.count('<table id="thresholds"') == 1
    table = html[html.index('<table id="thresholds"'):]
    table = table[:table.index("</table>")]
    rows = re.findall(r'<tr data-standing="([^"]+)"><th scope="row"><code>([^<]+)</code>', table)
    names = {name for _, name in rows}
    assert {"vswr_limit", "cosite_small_margin_db", "vswr_limit_by_service.vor", "feeder_loss_budget_db.default",
            "min_isolation_db: vhf_com + vhf_com"} <= names
    for service in demo_fleet.services.values():
        assert f"{service.id}: bands_mhz" in names
        assert all(f"{service.id}: {key}" in names for key in service.sources)
    assert {html_text.unescape(standing) for standing, _ in rows} <= set(STANDINGS) | {"not given"}
    # the demo fleet's policy overrides: shown beside the shipped value, with the fleet's own source
    assert "dme: im5_conversion_loss_db" in names
    assert "fleet policy: 100 dB (operator&#39;s choice: radio specification TCA-RS-12 §4.5" in table
    assert re.search(r"<code>measurement_max_age_days</code></th><td class=\"num\">548 days</td>(?:(?!</tr>).)*set by the fleet", table, re.S)


def test_each_finding_shows_its_limits_source(demo_site):
    installation = (demo_site / "aircraft" / "qx-tja" / "VHF2.html").read_text(encoding="utf-8")
    audit = (demo_site / "audit.html").read_text(encoding="utf-8")
    vswr = "Limit from: shipped policy vswr_limit: common practice, no source: 2:1 is the figure most"
    assert vswr in installation.split('id="findings"', 1)[1]
    row = audit[audit.index('data-id="qx-tja/VHF2/measured-vswr"'):]
    assert vswr in row[:row.index("</tr>")]
    row = audit[audit.index('data-id="qx-tce/MKR/impedance-match"'):]
    assert "Limit from: the antenna&#39;s nominal impedance from the antenna catalogue" in row[:row.index("</tr>")]
