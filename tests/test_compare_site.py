"""The site of a build compared with an earlier one marks what changed, and a failed build publishes
nothing. Scenario: the demo's QX-TJB before and after MOD-2026-031 (fleet_data/README.md)."""
import shutil
from pathlib import Path

from registry import cli

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"


def test_changed_pages_are_marked_and_others_are_not(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796169600")
    before = tmp_path / "before"
    shutil.copytree(DEMO, before)
    shutil.copy(DEMO / "scenario" / "qx-tjb-before-mod-2026-031.yaml", before / "aircraft" / "qx-tjb.yaml")
    shutil.copy(DEMO / "scenario" / "modifications-before-mod-2026-031.yaml", before / "modifications.yaml")
    assert cli.main(["build", str(before), "-o", str(tmp_path / "old"), "--no-cache"]) == 0
    assert cli.main(["build", str(DEMO), "-o", str(tmp_path / "new"), "--no-cache",
                     "--compare", str(tmp_path / "old")]) == 0
    site = tmp_path / "new"
    assert 'href="changes.html"' in (site / "index.html").read_text(encoding="utf-8")
    changed = (site / "aircraft" / "qx-tjb.html").read_text(encoding="utf-8")
    assert 'class="changed-note"' in changed and "1 installation added" in changed
    assert 'class="changed-note"' in (site / "aircraft" / "qx-tjb" / "SAT.html").read_text(encoding="utf-8")
    assert 'class="changed-note"' not in (site / "aircraft" / "qx-tca.html").read_text(encoding="utf-8")
    assert "VHF3-AFT" in (site / "changes.html").read_text(encoding="utf-8")


def test_a_build_with_bad_data_leaves_the_published_site_as_it_was(tmp_path, capsys):
    out = tmp_path / "site"
    assert cli.main(["build", str(DEMO), "-o", str(out), "--no-cache"]) == 0
    before = {p: p.read_bytes() for p in out.rglob("*") if p.is_file()}
    broken = tmp_path / "broken"
    shutil.copytree(DEMO, broken)
    (broken / "cables.yaml").write_text("cables:\n  - id: [unclosed\n", encoding="utf-8")
    assert cli.main(["build", str(broken), "-o", str(out), "--no-cache"]) == 2
    err = capsys.readouterr().err
    assert "cables.yaml:3:1: error: (file): found the end of the file inside a [...] list" in err
    assert "Traceback" not in err
    assert {p: p.read_bytes() for p in out.rglob("*") if p.is_file()} == before
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".site.build-")]  # no half-built folder left
