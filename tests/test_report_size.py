"""The fleet's printable report stays printable for a large fleet: above FLEET_SCHEDULES_UP_TO aircraft its
sections leave each aircraft's installation schedule to that aircraft's own report and link to it (our
own rule: a thousand aircraft's schedules would print to a thousand pages; no source)."""
from __future__ import annotations

from pathlib import Path

from registry import pipeline
from registry.site import pages_print

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"


def test_a_large_fleet_s_report_leaves_the_schedules_to_each_aircraft(tmp_path, monkeypatch):
    monkeypatch.setattr(pages_print, "FLEET_SCHEDULES_UP_TO", 3)  # the demo's 8 aircraft count as large
    pipeline.build(DEMO, tmp_path / "site", cache_dir=None)
    fleet = (tmp_path / "site" / "report.html").read_text(encoding="utf-8")
    own = (tmp_path / "site" / "reports" / "qx-tce.html").read_text(encoding="utf-8")
    assert 'class="report-schedule"' not in fleet
    assert 'href="reports/qx-tce.html">QX-TCE\'s own report</a>' in fleet
    assert "fleets of up to 3 aircraft" in fleet
    assert own.count('class="report-schedule"') == 1 and "RG-59" in own  # the marker's feeder is listed
    assert "Findings and their dispositions" in fleet and "qx-tce/MKR/impedance-match" in fleet
