"""The preview server: serves the built site on the loopback address and rebuilds on data changes."""
from __future__ import annotations

import shutil
import urllib.request

from registry import serve


def fetch(url: str) -> str:
    with urllib.request.urlopen(url, timeout=30) as response:
        return response.read().decode("utf-8")


def test_serves_and_rebuilds_when_data_changes(tmp_path, demo_data, demo_fleet):
    data = tmp_path / "data"
    shutil.copytree(demo_data, data)
    lines: list[str] = []
    site = serve.LiveSite(data, tmp_path / "site", port=0, log=lines.append)
    site.start()
    try:
        assert site.url.startswith("http://127.0.0.1:")
        assert "Fleet overview" in fetch(site.url + "index.html")
        assert site.rebuild_if_changed() is False  # nothing changed, nothing rebuilt
        aircraft = next(iter(demo_fleet.aircraft.values()))
        path = data / "aircraft" / f"{aircraft.id}.yaml"
        text = path.read_text(encoding="utf-8")
        new_registration = "QX-ZZZ"
        path.write_text(text.replace(f"registration: {aircraft.registration}", f"registration: {new_registration}"),
                        encoding="utf-8")
        assert site.rebuild_if_changed() is True
        assert new_registration in fetch(site.url + f"aircraft/{aircraft.id}.html")
        # a broken file keeps the last good site and reports the problem
        path.write_text(text + "\nunknown_key_for_test: 1\n", encoding="utf-8")
        assert site.rebuild_if_changed() is False
        assert new_registration in fetch(site.url + f"aircraft/{aircraft.id}.html")
        assert any(f"{aircraft.id}.yaml" in line for line in lines)
        assert site.builds == 2
    finally:
        site.close()
