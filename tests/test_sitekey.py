"""The key of a published site changes with every input that can change its bytes, and only with those
(common practice for build caches, no source)."""
import shutil
from datetime import date
from pathlib import Path

from registry.incremental import keys as diskcache
from registry.incremental import sitekey

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
DAY = date(2026, 10, 1)


def key(data: Path, day: date = DAY, info: str = "build", baseline: str = "") -> str:
    return sitekey.site_key(data, day, info, baseline)


def test_site_key_follows_every_input(tmp_path):
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    first = key(data)
    assert key(data) == first
    assert key(data, day=date(2026, 10, 2)) != first
    assert key(data, info="other revision") != first
    assert key(data, baseline='{"format_version":1}') != first
    sweep = next((data / "aircraft" / "sweeps").glob("*.s1p"))
    original = sweep.read_bytes()
    sweep.write_bytes(original + b"! a comment\n")
    assert key(data) != first
    sweep.write_bytes(original)
    assert key(data) == first
    (data / "aircraft" / "qx-new.yaml").write_text("id: qx-new\n", encoding="utf-8")
    assert key(data) != first


def test_site_key_ignores_hidden_folders(tmp_path):
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    first = key(data)
    (data / ".git").mkdir()
    (data / ".git" / "index").write_bytes(b"anything")
    assert key(data) == first


def test_code_key_names_the_libraries_that_shape_the_output():
    versions = diskcache.library_versions()
    assert any(item.startswith("matplotlib ") for item in versions)
    assert any(item.startswith("jinja2 ") for item in versions)


def test_every_cache_key_follows_the_tool_itself(tmp_path, monkeypatch):
    # an edited template (or rule, or module) must never read a cache entry made by the code before it
    templates = tmp_path / "site_templates"
    shutil.copytree(diskcache.TEMPLATE_DIR, templates)
    monkeypatch.setattr(diskcache, "TEMPLATE_DIR", templates)
    before = diskcache.code_key.__wrapped__()
    base = templates / "base.html"
    base.write_text(base.read_text(encoding="utf-8") + "<!-- edited -->\n", encoding="utf-8")
    assert diskcache.code_key.__wrapped__() != before
