"""Rules the demo's planted problems do not exercise, each on a copy of the demo with one flaw.

Sources: polarisation and coverage of each service from the shipped service table (field notes: ICAO
Annex 10, 47 CFR Part 87); the Bode–Fano limit, Pozar, Microwave Engineering, 4th ed., §5.9 (no
lossless network matches a load of quality factor Q over more than π / (Q·ln(1/Γm)) of its centre
frequency); "a transmitting antenna needs a measured VSWR" is the product's own completeness rule.
"""
import shutil
from pathlib import Path

import pytest

from registry import pipeline

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
TCA_VHF1 = """  - position: VHF1
    service: vhf_com
    antenna: TCA-120-BLD
"""


@pytest.fixture(autouse=True)
def demo_day(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796169600")


def findings(tmp_path, file: str, old: str, new: str, extra: dict[str, str] | None = None) -> dict[str, object]:
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    text = (data / file).read_text(encoding="utf-8")
    assert old in text
    (data / file).write_text(text.replace(old, new, 1), encoding="utf-8")
    for name, content in (extra or {}).items():
        (data / name).write_text(content, encoding="utf-8")
    outcome = pipeline.run(data, workers=1)
    return {item.id: item for item in outcome.discrepancies if item.aircraft == "qx-tca"}


def test_horizontal_antenna_on_a_vertical_service(tmp_path):
    found = findings(tmp_path, "aircraft/qx-tca.yaml", TCA_VHF1, TCA_VHF1.replace("TCA-120-BLD", "TCA-113-VOR"))
    item = found["qx-tca/VHF1/antenna-suitability"]
    assert "needs vertical polarisation but the antenna is horizontal" in item.message
    assert item.severity == "query"


def test_directional_antenna_on_an_omnidirectional_service(tmp_path):
    found = findings(tmp_path, "aircraft/qx-tca.yaml", TCA_VHF1, TCA_VHF1.replace("TCA-120-BLD", "TCA-1060-ACA"))
    assert "is directional" in found["qx-tca/VHF1/antenna-suitability"].message


def test_transmitter_without_a_measurement_is_missing_data(tmp_path):
    measured = """    measured:
      vswr: 1.45
      date: 2026-03-18
      sweep: sweeps/qx-tca-vhf1.s1p
"""
    found = findings(tmp_path, "aircraft/qx-tca.yaml", measured, "")
    item = found["qx-tca/VHF1/missing-data"]
    assert "no measured VSWR or sweep" in item.message and item.severity == "note"
    assert item.src.endswith("qx-tca.yaml:16")  # the service line of that installation


def test_band_too_wide_for_any_matching_network(tmp_path):
    # a service 60-200 MHz wide (107 % of its centre) served by a quarter-wave blade whose Q is about 4:
    # Bode–Fano allows at most π / (4.3 · ln 3) ≈ 66 % at VSWR 2
    services = """services:
  - id: vhf_com
    name: Wide test service
    bands_mhz: [[60.0, 200.0]]
    design_freq_mhz: 127.5
    polarisation: vertical
    coverage: omni
    transmits: true
    group: communication
    source: invented for this test
"""
    found = findings(tmp_path, "fleet.yaml", "operator:", "operator:", {"services.yaml": services})
    item = found["qx-tca/VHF1/vswr-bandwidth"]
    assert item.value > 100 and item.limit < item.value
    assert "no matching network can hold VSWR" in item.message
