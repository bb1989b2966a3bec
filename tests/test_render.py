"""render_site on a small hand-built fleet: escaping, sanitised notes, links, reproducibility, exports."""
from __future__ import annotations

import csv
import io
import json
import os
import re
import subprocess
from datetime import date
from pathlib import Path

import numpy as np
import pytest

from registry.site import render
from registry.site.format import fmt, notes_html
from registry.site.info import BuildInfo, build_info
from registry.site.paths import safe_name
from registry.core.errors import Src
from registry.core.base import FrozenMap
from registry.core.model import (Aircraft, Airframe, AntennaModel, Cable, Feeder, Fin, Fleet, Fuselage,
                                 Installation, Location, Measured, Modification, Policy, Service, Wing, Zone)
from registry.core.results import (CableResult, Curve, Discrepancy, Figure, FleetResults, InstallationResult, PairResult,
                              PatternResult)

BUILD = BuildInfo(revision="abc1234", time="2026-01-15 10:00:00 UTC", version="0.1.0")
HOSTILE = '<script>alert("x")</script>'


def src(path: str = "aircraft/qx-tqa.yaml", line: int = 1) -> Src:
    return Src(f"/data/fleet/{path}", line, 1)


def small_fleet(notes: str = "", registration: str = "QX-TQA", description: str = "VHF blade") -> Fleet:
    """An invented one-aircraft fleet: two VHF blades and a transponder blade on a composite-tailed type."""
    airframe = Airframe(
        src=src("airframes/tq-20.yaml"), id="tq-20", name="TQ-20 light twin", coord_unit="in",
        fuselage=Fuselage(src=src(), nose_sta=0.0, tail_sta=600.0, width=80.0, height=84.0, centreline_wl=100.0),
        wing=Wing(src=src(), root_le_sta=220.0, root_chord=80.0, span=700.0, sweep_deg=2.0),
        fin=Fin(src=src(), root_le_sta=500.0, root_chord=90.0, height=120.0, sweep_deg=30.0),
        zones=(Zone(src=src(), name="cabin", sta_from=0.0, sta_to=480.0, material="metal"),
               Zone(src=src(), name="tail", sta_from=480.0, sta_to=600.0, material="composite")),
    )

    def inst(position: str, service: str, antenna: str, sta: float, wl: float, surface: str, line: int,
             text: str = "") -> Installation:
        return Installation(
            src=src(line=line), position=position, service=service, antenna=antenna,
            location=Location(src=src(line=line + 3), sta=sta, bl=0.0, wl=wl), surface=surface,
            feeder=Feeder(src=src(line=line + 6), cable="QX-C400", length_m=6.5, connectors=2),
            measured=Measured(src=src(line=line + 10), date=date(2025, 3, 1), vswr=1.4), notes=text)

    installations = {
        "VHF1": inst("VHF1", "vhf_com", "QXA-118", 250.0, 142.0, "top", 10, notes),
        "VHF2": inst("VHF2", "vhf_com", "QXA-118", 300.0, 58.0, "bottom", 30),
        "XPDR1": inst("XPDR1", "transponder", "QXA-1090", 180.0, 58.0, "bottom", 50),
    }
    aircraft = Aircraft(src=src(), id="qx-tqa", registration=registration, airframe="tq-20",
                        installations=FrozenMap(installations), serial="2041",
                        modifications=(Modification(src=src(), ref="MOD-QX-7", date=date(2024, 5, 2),
                                                    summary="Second VHF blade moved aft."),))
    service = Service(src=src("services.yaml"), id="vhf_com", name="VHF communication", bands_mhz=((117.975, 137.0),),
                      design_freq_mhz=127.5, polarisation="vertical", coverage="omni", transmits=True,
                      group="communication", source="invented governing text")
    xpdr = Service(src=src("services.yaml"), id="transponder", name="Transponder", bands_mhz=((1030.0, 1090.0),),
                   design_freq_mhz=1060.0, polarisation="vertical", coverage="omni", transmits=True,
                   group="surveillance")
    antennas = {
        "QXA-118": AntennaModel(src=src("antennas.yaml"), id="QXA-118", kind="quarter_wave_monopole",
                                polarisation="vertical", impedance_ohm=50.0, rated_vswr=2.0,
                                bands_mhz=((118.0, 137.0),), description=description,
                                geometry=FrozenMap({"element_length_m": 0.56, "element_diameter_m": 0.012})),
        "QXA-1090": AntennaModel(src=src("antennas.yaml"), id="QXA-1090", kind="quarter_wave_monopole",
                                 polarisation="vertical", impedance_ohm=50.0, rated_vswr=1.5,
                                 bands_mhz=((960.0, 1220.0),), description="L-band blade",
                                 geometry=FrozenMap({"element_length_m": 0.066, "element_diameter_m": 0.006})),
    }
    cable = Cable(src=src("cables.yaml"), id="QX-C400", impedance_ohm=50.0, velocity_factor=0.7, max_freq_mhz=6000.0,
                  attenuation_db_per_100m=((100.0, 15.0), (1000.0, 50.0)), declared_unit="db_per_100m",
                  designation="invented PTFE double braid")
    policy = Policy(src=src("policy.yaml"), length_tolerance_pct=3.0, vswr_limit=2.0,
                    vswr_limit_by_service=FrozenMap(), feeder_loss_budget_db=FrozenMap({"default": 3.0}),
                    connector_loss_db=0.15, adapter_loss_db=0.25, measurement_max_age_days=730,
                    ground_plane_min_radius_wavelengths=0.25, min_isolation_db=())
    return Fleet(src=src("fleet.yaml"), operator="Quillwort Air Test", data_dir=Path("/data/fleet"),
                 airframes=FrozenMap({"tq-20": airframe}), aircraft=FrozenMap({"qx-tqa": aircraft}),
                 antennas=FrozenMap(antennas), cables=FrozenMap({"QX-C400": cable}),
                 services=FrozenMap({"vhf_com": service, "transponder": xpdr}), policy=policy,
                 reviews=FrozenMap(), title="Test fleet")


def small_results() -> FleetResults:
    angle = np.arange(0.0, 361.0, 5.0)
    e_plane = Curve(angle, 5.0 + 10 * np.log10(np.maximum(np.abs(np.sin(np.radians(angle))), 1e-3) ** 2),
                    "elevation (deg)", "gain (dBi)")
    h_plane = Curve(angle, np.full(angle.shape, 5.0), "azimuth (deg)", "gain (dBi)")
    pattern = PatternResult("QXA-118@127.5", "QXA-118", "quarter_wave_monopole", 127.5, e_plane, h_plane,
                            (Figure("pattern.peak_dbi", "Peak gain", 5.0, "dBi", "max G(θ)", source="Balanis §4"),))
    freq = np.linspace(110.0, 145.0, 36)
    figures = (
        Figure("length.wavelength_m", "Free-space wavelength", 2.3513, "m", "λ = c / f",
               (("c", "299792458 m/s"), ("f", "127.5 MHz")), "SI definition of c", "/data/fleet/aircraft/qx-tqa.yaml:12"),
        Figure("feeder.cable_loss_db", "Cable loss", 1.9, "dB", "α(f) · ℓ / 100"),
        Figure("feeder.connector_loss_db", "Connector loss", 0.3, "dB", "n · L_c"),
        Figure("feeder.mismatch_loss_db", "Mismatch loss", 0.12, "dB", "−10·log₁₀(1 − |Γ|²)"),
        Figure("feeder.return_loss_db", "Return loss at the antenna", 17.7, "dB", "−20·log₁₀|Γ|"),
        Figure("feeder.total_loss_db", "Total feeder loss", 2.32, "dB", "sum", (("budget", "3 dB"),)),
    )
    results = FleetResults()
    for position in ("VHF1", "VHF2"):
        results.installations[("qx-tqa", position)] = InstallationResult(
            "qx-tqa", position, figures, pattern_key=pattern.key,
            vswr_modelled=Curve(freq, 1 + 0.002 * (freq - 127) ** 2, "frequency (MHz)", "VSWR"),
            service_bands_mhz=((117.975, 137.0),), vswr_limit=2.0)
    results.patterns[pattern.key] = pattern
    results.pairs.append(PairResult("qx-tqa", "VHF1", "VHF2", (
        Figure("pair.distance_m", "Distance between the antennas", 2.4, "m"),
        Figure("pair.isolation_db", "Isolation", 31.0, "dB", "I = 20·log₁₀(4πd/λ) − G_A − G_B"),
        Figure("pair.min_isolation_db", "Policy minimum", 40.0, "dB")), True))
    table = Curve(np.array([100.0, 1000.0]), np.array([15.0, 50.0]), "frequency (MHz)", "attenuation (dB/100 m)")
    results.cables["QX-C400"] = CableResult("QX-C400", table, table, (Figure("cable.a", "Conductor term a", 1.4, "dB"),))
    return results


def small_discrepancies() -> list[Discrepancy]:
    return [
        Discrepancy("qx-tqa/VHF1+VHF2/isolation", "isolation", "query", "qx-tqa", "VHF1+VHF2", 31.0, 40.0, "dB",
                    "Isolation 31 dB below the 40 dB minimum", "Friis free-space", "/data/fleet/aircraft/qx-tqa.yaml:13"),
        Discrepancy("qx-tqa/XPDR1/measurement-age", "measurement-age", "note", "qx-tqa", "XPDR1", 800, 730,
                    "days", "Measurement is 800 days old", "policy age", "/data/fleet/aircraft/qx-tqa.yaml:60",
                    review="accepted", reviewer="A. Fictional", review_reference="ENG-1", review_date="2026-01-10",
                    is_open=False),
        Discrepancy("qx-tqa/VHF2/feeder-loss", "feeder-loss", "unserviceable", "qx-tqa", "VHF2", 3.4, 3.0, "dB",
                    "Feeder loss 3.4 dB above the 3 dB budget", "loss budget", "/data/fleet/aircraft/qx-tqa.yaml:36"),
    ]


def site(**fleet_args) -> dict[str, str | bytes]:
    return render.render_site(small_fleet(**fleet_args), small_results(), small_discrepancies(), BUILD)


def text(files, path: str) -> str:
    content = files[path]
    assert isinstance(content, str), path
    return content


# ---- pages and paths -----------------------------------------------------------------------------------


def test_every_page_kind_is_rendered():
    files = site()
    for path in ("index.html", "aircraft/qx-tqa.html", "aircraft/qx-tqa/VHF1.html", "aircraft/qx-tqa/XPDR1.html",
                 "antennas.html", "antennas/QXA-118.html", "cables.html", "cables/QX-C400.html", "services.html",
                 "audit.html", "methods.html", "search.html", "static/site.css", "static/site.js",
                 "static/search-index.js", "audit/discrepancies.csv", "audit/discrepancies.json",
                 "plots/cable/QX-C400.svg",
                 f"plots/pattern/{safe_name('QXA-118@127.5')}.svg"):
        assert path in files, path
    vswr = re.search(r'src="\.\./\.\./(plots/vswr/[0-9a-f]+\.svg)"', files["aircraft/qx-tqa/VHF1.html"])
    assert vswr and vswr.group(1) in files  # VSWR plots are named by their content


def test_pattern_is_drawn_once_for_the_fleet():
    files = site()
    patterns = [path for path in files if path.startswith("plots/pattern/")]
    assert len(patterns) == 1
    name = patterns[0]
    assert text(files, "aircraft/qx-tqa/VHF1.html").count(f'src="../../{name}"') == 1
    assert text(files, "aircraft/qx-tqa/VHF2.html").count(f'src="../../{name}"') == 1
    assert f'src="../{name}"' in text(files, "antennas/QXA-118.html")


def test_links_are_relative_to_each_page_depth():
    files = site()
    assert 'href="static/site.css"' in text(files, "index.html")
    assert 'href="../static/site.css"' in text(files, "aircraft/qx-tqa.html")
    assert 'href="../../static/site.css"' in text(files, "aircraft/qx-tqa/VHF1.html")
    for path, content in files.items():
        if path.endswith(".html"):
            assert not re.search(r'(?:href|src)="(?:/|https?:|//)', content), path


def test_status_marks_worst_open_severity():
    html = text(site(), "aircraft/qx-tqa.html")
    # VHF2 has an open unserviceable finding, VHF1 an open query (pair), XPDR1 only an accepted one
    assert re.search(r'class="mark st-unserviceable[^"]*" href="../aircraft/qx-tqa/VHF2.html"', html)
    assert re.search(r'class="mark st-query[^"]*" href="../aircraft/qx-tqa/VHF1.html"', html)
    assert re.search(r'class="mark st-clear[^"]*" href="../aircraft/qx-tqa/XPDR1.html"', html)


def test_installation_page_shows_figures_breakdown_and_pair():
    html = text(site(), "aircraft/qx-tqa/VHF1.html")
    assert "λ = c / f" in html and "SI definition of c" in html
    assert "aircraft/qx-tqa.yaml:12" in html and "/data/fleet" not in html
    bar = html.split('class="loss-bar"')[1].split("</div>")[0]
    assert "Total feeder loss" not in bar and "Return loss" not in bar  # parts only: return loss is no loss
    assert bar.count("<span") == 3
    assert "Feeder loss: 2.32 dB" in html and "budget 3 dB" in html
    assert 'href="../../aircraft/qx-tqa/VHF2.html">VHF2</a>' in html and "Model</th>" in html
    assert "Isolation 31 dB below" in html
    pair_row = html.split('id="isolation"')[1].split("</tr>")[1]
    assert "2.4 m" in pair_row and "31 dB" in pair_row and "40 dB" in pair_row


def test_discrepancy_links_go_to_installation_and_audit_rows_carry_filters():
    html = text(site(), "audit.html")
    row = re.search(r'<tr id="d-qx-tqa__VHF2__feeder-loss"[^>]*>', html).group(0)
    assert 'data-aircraft="qx-tqa"' in row and 'data-service="vhf_com"' in row
    assert 'data-severity="unserviceable"' in row and 'data-state="open open-any"' in row
    pair = re.search(r'<tr id="d-qx-tqa__VHF1--VHF2__isolation"[^>]*>', html).group(0)
    assert 'data-service="vhf_com"' in pair
    assert 'href="aircraft/qx-tqa/VHF2.html">VHF2</a>' in html


# ---- escaping and sanitising ---------------------------------------------------------------------------


def test_registry_strings_are_escaped_everywhere():
    files = site(registration=HOSTILE, description=HOSTILE)
    for path, content in files.items():
        if path.endswith(".html"):
            assert HOSTILE not in content, path
    assert "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt;" in text(files, "aircraft/qx-tqa.html")
    index = text(files, "static/search-index.js")
    assert "</script" not in index
    assert json.loads(index.split("=", 1)[1].rstrip(";\n"))  # still valid JSON after the escaping


@pytest.mark.parametrize("notes, forbidden", [
    ("Fine.\n\n<script>alert(1)</script>", "<script"),
    ('<img src="x" onerror="alert(1)">', "onerror"),
    ("[click](javascript:alert(1))", "javascript:"),
    ('<a href="JaVaScRiPt:alert(1)">x</a>', "javascript:"),
    ('<p onclick="alert(1)">x</p>', "onclick"),
    ("<iframe src=x></iframe>", "<iframe"),
])
def test_notes_markdown_is_sanitised(notes, forbidden):
    html = text(site(notes=notes), "aircraft/qx-tqa/VHF1.html")
    notes_block = html.split('<h2 id="plots">')[0].split('<h2 id="findings">')[1]
    assert forbidden not in notes_block.lower()


def test_notes_keep_ordinary_markdown():
    notes = "Bonded to **frame 12**; see [the bulletin](https://example.invalid/sb) and `QX-9`.\n\n- one\n- two"
    html = text(site(notes=notes), "aircraft/qx-tqa/VHF1.html")
    assert "<strong>frame 12</strong>" in html
    assert 'href="https://example.invalid/sb"' in html and 'rel="noopener noreferrer"' in html
    assert "<code>QX-9</code>" in html and "<li>two</li>" in html


def test_relative_links_in_notes_are_dropped_but_text_kept():
    html = notes_html("see [sweep](sweeps/a.s1p)")
    assert "href" not in html and "sweep" in html


# ---- reproducibility and exports -----------------------------------------------------------------------


def test_render_twice_gives_identical_bytes():
    first, second = site(), site()
    assert list(first) == list(second)
    for path in first:
        assert first[path] == second[path], path


def test_exports_hold_every_discrepancy():
    files = site()
    table = text(files, "audit/discrepancies.csv")
    assert table.startswith("\ufeffid,")  # UTF-8 byte-order mark first, so spreadsheets read Ω and § as written
    rows = list(csv.DictReader(io.StringIO(table[1:])))
    assert [row["id"] for row in rows] == ["qx-tqa/VHF1+VHF2/isolation", "qx-tqa/VHF2/feeder-loss",
                                           "qx-tqa/XPDR1/measurement-age"]  # by id, as check and the record
    assert rows[1]["value"] == "3.4" and rows[1]["source"] == "aircraft/qx-tqa.yaml:36"
    document = json.loads(text(files, "audit/discrepancies.json"))
    assert document["build"]["revision"] == "abc1234"
    assert [d["review"] for d in document["discrepancies"]] == ["open", "open", "accepted"]
    assert document["discrepancies"][2]["value"] == 800


def test_renders_without_computed_results():
    files = render.render_site(small_fleet(), FleetResults(), [], BUILD)
    html = text(files, "aircraft/qx-tqa/VHF1.html")
    assert "No figures have been computed" in html
    assert not any(path.startswith("plots/") for path in files)


def test_methods_page_groups_formulas_and_carries_cautions():
    html = text(site(), "methods.html")
    assert "λ = c / f" in html and "Balanis §4" in html and "n · L_c" in html
    assert "RF exposure" in html and "Work at height" in html and "approved data" in html


# ---- formatting and build info -------------------------------------------------------------------------


@pytest.mark.parametrize("value, unit, expected", [
    (1575.42, "MHz", "1575.42 MHz"), (127.5, "", "127.5"), (0.561, "m", "0.561 m"), (2.0, "", "2"),
    (-3.25, "dB", "−3.25 dB"), (None, "dB", "—"), ("metal skin", "", "metal skin"), (0, "", "0"),
    (float("inf"), "", "∞"), (12345.6, "", "12346"),
])
def test_fmt(value, unit, expected):
    assert fmt(value, unit) == expected


def test_safe_name_keeps_tame_keys_and_digests_others():
    assert safe_name("QXA-118_127.5") == "QXA-118_127.5"
    odd = safe_name("QXA 118/../127.5 MHz")
    assert "/" not in odd and " " not in odd and ".." not in odd
    assert odd != safe_name("QXA 118/../127.6 MHz")


def git(cwd: Path, *args: str) -> None:
    subprocess.run(["git", "-C", str(cwd), "-c", "user.name=t", "-c", "user.email=t@t.invalid", *args],
                   check=True, capture_output=True)


def test_build_info_outside_git_uses_newest_file_time(tmp_path):
    data = tmp_path / "data"
    data.mkdir()
    (data / "fleet.yaml").write_text("operator: x\n")
    os.utime(data / "fleet.yaml", (1_700_000_000, 1_700_000_000))
    info = build_info(data, environ={})
    assert info.revision == "not in version control"
    assert info.time == "2023-11-14 22:13:20 UTC"
    assert build_info(data, environ={"SOURCE_DATE_EPOCH": "86400"}).time == "1970-01-02 00:00:00 UTC"


def test_build_info_in_git_uses_commit_and_marks_changes(tmp_path):
    data = tmp_path / "repo" / "data"
    data.mkdir(parents=True)
    (data / "fleet.yaml").write_text("operator: x\n")
    git(tmp_path / "repo", "init", "-q")
    git(tmp_path / "repo", "add", ".")
    env_date = "2024-02-03T04:05:06+00:00"
    subprocess.run(["git", "-C", str(tmp_path / "repo"), "-c", "user.name=t", "-c", "user.email=t@t.invalid",
                    "commit", "-q", "-m", "data"], check=True, capture_output=True,
                   env={"GIT_AUTHOR_DATE": env_date, "GIT_COMMITTER_DATE": env_date, "PATH": "/usr/bin:/bin"})
    info = build_info(data, environ={})
    assert re.fullmatch(r"[0-9a-f]{7,}", info.revision)
    assert info.time == "2024-02-03 04:05:06 UTC"
    (data / "fleet.yaml").write_text("operator: y\n")
    assert build_info(data, environ={}).revision == info.revision + "+modified"


def test_the_pages_print_the_date_the_figures_were_computed_as_of():
    # The audit worksheet and the printable reports state the as-of date the build computed with, not
    # one read again from the data folder (internal behaviour, no external source).
    files = render.render_site(small_fleet(), small_results(), small_discrepancies(), BUILD, as_of=date(2031, 5, 6))
    aircraft_reports = [path for path in files if path.startswith("reports/")]
    assert aircraft_reports
    for path in ["audit.html", "report.html", *aircraft_reports]:
        assert "2031-05-06" in text(files, path), path


def test_a_build_leaves_no_page_context_in_a_reference_cycle(demo_data, tmp_path):
    """Common practice, no source: memory that reference counting frees is freed the moment a page is
    made, while what sits in a reference cycle waits for the cycle collector, which the build pauses and
    runs in its workers every few aircraft (incremental/parallel.py). A partial imported "with context"
    makes a module per page that holds the page's context in such a cycle, and with it everything the page
    was given. The templates pass what their macros need as arguments instead; what is left is each
    partial's own module, made once per process."""
    import gc
    from collections import Counter

    import jinja2.runtime

    from registry import pipeline
    gc.unfreeze()  # what earlier tests' builds left frozen is freed now, not counted below
    gc.collect()
    gc.set_debug(gc.DEBUG_SAVEALL)
    try:
        pipeline.build(demo_data, tmp_path / "site", workers=1)
        gc.collect()
        contexts = Counter(item.name for item in gc.garbage if isinstance(item, jinja2.runtime.Context))
    finally:
        gc.set_debug(0)
        gc.garbage.clear()
    assert {name: count for name, count in contexts.items() if count > 1 or not name.startswith("partials/")} == {}
