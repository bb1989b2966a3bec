"""History from the registry's git history: spans, "as fitted on DATE", added and removed positions, cut and
unreadable revisions, no git checkout, hostile text on the page.

Each test makes its own scripted git history in tmp_path (fixed dates, fixed author). What counts as fitted
on a date (the state after the last mainline commit on or before it, by commit date in UTC) is bookkeeping:
common practice, no source.
"""
from __future__ import annotations

import os
import subprocess
from datetime import date
from pathlib import Path

import pytest

from registry import cli
from registry.load import git
from registry.load.history import fitted_on, fleet_history, parse_log
from registry.site import render

from tests.test_render import BUILD, small_discrepancies, small_fleet, small_results

HOSTILE = '<script>alert("x")</script>'


def aircraft_text(antenna: str = "TCA-120-BLD", cable: str = "RG-400", positions: tuple[str, ...] = ("VHF1", "VHF2"),
                  mods: tuple[str, ...] = ("MOD-1",), ident: str = "qx-tqa", serial: str = "") -> str:
    """A minimal aircraft file (history reads it without validating it); no serial number unless given."""
    lines = [f"id: {ident}", f"registration: {ident.upper()}", "airframe: tq-20"]
    lines += [f"serial: '{serial}'"] if serial else []
    lines.append("modifications:")
    lines += [f"  - {{ref: {ref}, date: 2026-01-01, summary: x}}" for ref in mods]
    lines.append("installations:")
    for position in positions:
        lines += [f"  - position: {position}", "    service: vhf_com", f"    antenna: '{antenna}'",
                  "    location: {sta: 250.0, bl: 0.0, wl: 142.0}", "    surface: top",
                  f"    feeder: {{cable: {cable}, length_m: 6.5, connectors: 2}}"]
    return "\n".join(lines) + "\n"


def commit(repo: Path, when: str, subject: str, files: dict[str, str | None]) -> None:
    """Write (or, for None, delete) `files` and commit them at `when` (ISO, UTC) as a fixed author."""
    for name, text in files.items():
        path = repo / name
        if text is None:
            path.unlink()
        else:
            path.parent.mkdir(parents=True, exist_ok=True)
            path.write_text(text, encoding="utf-8")
    env = {**os.environ, "GIT_AUTHOR_NAME": "Registry editor", "GIT_AUTHOR_EMAIL": "registry@example.invalid",
           "GIT_COMMITTER_NAME": "Registry editor", "GIT_COMMITTER_EMAIL": "registry@example.invalid",
           "GIT_AUTHOR_DATE": when, "GIT_COMMITTER_DATE": when, "GIT_CONFIG_GLOBAL": os.devnull,
           "GIT_CONFIG_NOSYSTEM": "1"}
    if not (repo / ".git").exists():
        subprocess.run(["git", "-C", str(repo), "init", "-q", "--initial-branch=main"], check=True, env=env)
    subprocess.run(["git", "-C", str(repo), "add", "--all"], check=True, env=env)
    subprocess.run(["git", "-C", str(repo), "-c", "commit.gpgsign=false", "commit", "-q", "-m", subject],
                   check=True, env=env)


@pytest.fixture
def scripted(tmp_path) -> Path:
    """Three commits: delivery (TCA-120-BLD on VHF1 and VHF2), an antenna change on 2026-05-10 at 12:00 UTC,
    then VHF2 removed and SAT added."""
    repo = tmp_path / "registry"
    repo.mkdir()
    commit(repo, "2026-03-01T09:00:00+00:00", "Delivery", {"aircraft/qx-tqa.yaml": aircraft_text()})
    commit(repo, "2026-05-10T12:00:00+00:00", "MOD-2: new blades",
           {"aircraft/qx-tqa.yaml": aircraft_text(antenna="TCA-122-LP", mods=("MOD-1", "MOD-2"))})
    commit(repo, "2026-07-01T08:00:00+00:00", "MOD-3: VHF2 out, SAT in",
           {"aircraft/qx-tqa.yaml": aircraft_text(antenna="TCA-122-LP", positions=("VHF1", "SAT"),
                                                  mods=("MOD-1", "MOD-2", "MOD-3"))})
    return repo


def antenna_on(history, day: date, position: str = "VHF1") -> str | None:
    _, spans = fitted_on(history, day)
    return next((dict(span.fitted)["antenna"] for span in spans if span.position == position), None)


def test_the_right_antenna_before_at_and_after_a_change(scripted):
    history = fleet_history(scripted).aircraft["aircraft/qx-tqa.yaml"]
    assert antenna_on(history, date(2026, 2, 28)) is None            # before the first commit: not known
    assert antenna_on(history, date(2026, 3, 1)) == "TCA-120-BLD"    # on the day of the first commit
    assert antenna_on(history, date(2026, 5, 9)) == "TCA-120-BLD"    # the day before the change
    assert antenna_on(history, date(2026, 5, 10)) == "TCA-122-LP"    # the day of the change (commit at or before)
    assert antenna_on(history, date(2026, 12, 31)) == "TCA-122-LP"   # long after
    change = history.changes[1]
    assert change.mods_added == ("MOD-2",) and dict(change.positions) == {"VHF1": "antenna", "VHF2": "antenna"}


def test_removed_and_added_positions(scripted):
    history = fleet_history(scripted).aircraft["aircraft/qx-tqa.yaml"]
    assert dict(history.changes[2].positions) == {"SAT": "added", "VHF2": "removed"}
    vhf2 = [span for span in history.spans if span.position == "VHF2"]
    assert [(span.start, span.end) for span in vhf2] == [(0, 1), (1, 2)]
    assert antenna_on(history, date(2026, 6, 1), "VHF2") == "TCA-122-LP"
    assert antenna_on(history, date(2026, 7, 1), "VHF2") is None
    assert antenna_on(history, date(2026, 7, 1), "SAT") == "TCA-122-LP"


def test_the_terminal_on_a_date_names_the_commit(scripted, capsys):
    assert cli.main(["history", "QX-TQA", str(scripted), "--on", "2026-05-09"]) == 0
    out = capsys.readouterr().out
    assert "QX-TQA as fitted on 2026-05-09" in out and "'Delivery'" in out
    assert "antenna TCA-120-BLD" in out and "TCA-122-LP" not in out


def test_a_cut_history_says_so_and_an_unreadable_revision_ends_the_spans(scripted):
    commit(scripted, "2026-08-01T08:00:00+00:00", "broken", {"aircraft/qx-tqa.yaml": "installations: [\n"})
    history = fleet_history(scripted, max_changes=2).aircraft["aircraft/qx-tqa.yaml"]
    assert history.cut and len(history.changes) == 2
    assert history.changes[-1].kind == "unreadable"
    assert history.changes[-1].problem.startswith("not a readable aircraft file (line 2: found the end of the file")
    assert all(span.end is not None for span in history.spans)


def test_not_a_git_checkout_gives_the_note_and_no_traceback(tmp_path, capsys):
    (tmp_path / "aircraft").mkdir()
    (tmp_path / "aircraft" / "qx-tqa.yaml").write_text(aircraft_text(), encoding="utf-8")
    assert cli.main(["history", "QX-TQA", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("history needs the registry in a git checkout: ") and "Traceback" not in err
    history = fleet_history(tmp_path)
    assert history.aircraft == {} and history.note.startswith("history needs the registry in a git checkout")
    page = render.render_site(small_fleet(), small_results(), small_discrepancies(), BUILD,
                              history=history)["aircraft/qx-tqa.html"]
    assert "history needs the registry in a git checkout: the data folder is not inside a git checkout." in page
    assert str(tmp_path) not in page  # the page never holds the path it was built from


def test_hostile_subject_and_part_number_are_escaped_on_the_page(tmp_path):
    repo = tmp_path / "registry"
    repo.mkdir()
    commit(repo, "2026-03-01T09:00:00+00:00", HOSTILE, {"aircraft/qx-tqa.yaml": aircraft_text(antenna=HOSTILE)})
    page = render.render_site(small_fleet(), small_results(), small_discrepancies(), BUILD,
                              history=fleet_history(repo))["aircraft/qx-tqa.html"]
    assert "Register history" in page and HOSTILE not in page
    assert "&lt;script&gt;alert(&#34;x&#34;)&lt;/script&gt;" in page


def test_the_page_shows_each_span(scripted):
    page = render.render_site(small_fleet(), small_results(), small_discrepancies(), BUILD,
                              history=fleet_history(scripted))["aircraft/qx-tqa.html"]
    section = page[page.index('id="history"'):page.index('id="findings"')]
    assert section.count("TCA-120-BLD") == 2 and section.count("TCA-122-LP") == 3
    assert "(removed)" in section and "MOD-3: VHF2 out, SAT in" in section


def test_a_shallow_clone_is_marked_cut(scripted, tmp_path):
    shallow = tmp_path / "shallow"
    subprocess.run(["git", "clone", "-q", "--depth", "1", scripted.as_uri(), str(shallow)], check=True)
    found = fleet_history(shallow)
    history = found.aircraft["aircraft/qx-tqa.yaml"]
    assert history.cut and len(history.changes) == 1 and "shallow" in found.note
    assert antenna_on(history, date(2026, 7, 1)) == "TCA-122-LP"


def test_the_cache_gives_the_same_history_and_a_forged_entry_is_read_again(scripted, tmp_path):
    """Each file content's reading is kept by blob id; an entry of the wrong shape (even one signed
    with the user's key) is a miss, never a wrong timeline."""
    import json

    from registry.incremental import DiskCache

    plain = fleet_history(scripted)
    cache = tmp_path / "cache"
    assert fleet_history(scripted, cache_root=cache) == plain
    entries = list((cache / "history").rglob("*.entry"))
    assert len(entries) == 3
    store = DiskCache(cache, "history", str)
    for entry in entries:
        store.put(entry.stem, json.dumps([{"VHF1": [["antenna", 5]]}, [], ""]))
    assert fleet_history(scripted, cache_root=cache) == plain


def renames_git_found(repo: Path) -> list[tuple[str, str]]:
    """(old, new) of every rename git reports in the aircraft folder's log: the tests below must not pass
    because git saw no rename at all."""
    commits, touched, _ = parse_log(git.first_parent_log(repo, ["aircraft/"], 100), "")
    return [(item.source, item.path) for commit in commits for item in touched[commit.hash] if item.status == "R"]


def test_a_renamed_file_keeps_its_history_when_it_names_the_same_serial(tmp_path, capsys):
    # an airframe is its manufacturer's serial number: a re-registration changes the marks (and here the
    # file's name), not the serial (common practice, no source)
    repo = tmp_path / "registry"
    repo.mkdir()
    commit(repo, "2026-03-01T09:00:00+00:00", "Delivery", {"aircraft/qx-tqa.yaml": aircraft_text(serial="2000101")})
    commit(repo, "2026-05-10T12:00:00+00:00", "MOD-2: new blades",
           {"aircraft/qx-tqa.yaml": aircraft_text(antenna="TCA-122-LP", mods=("MOD-1", "MOD-2"), serial="2000101")})
    commit(repo, "2026-07-01T08:00:00+00:00", "Re-registered QX-TQZ",
           {"aircraft/qx-tqa.yaml": None, "aircraft/qx-tqz.yaml": aircraft_text(
               antenna="TCA-122-LP", mods=("MOD-1", "MOD-2"), ident="qx-tqz", serial="2000101")})
    assert renames_git_found(repo) == [("aircraft/qx-tqa.yaml", "aircraft/qx-tqz.yaml")]
    found = fleet_history(repo).aircraft
    assert list(found) == ["aircraft/qx-tqz.yaml"]
    history = found["aircraft/qx-tqz.yaml"]
    assert [change.kind for change in history.changes] == ["added", "changed", "renamed"]
    assert history.changes[2].renamed_from == "aircraft/qx-tqa.yaml" and history.changes[2].positions == ()
    assert antenna_on(history, date(2026, 4, 1)) == "TCA-120-BLD"  # fitted under its old marks
    assert [(span.start, span.end) for span in history.spans if span.position == "VHF1"] == [(0, 1), (1, None)]
    assert cli.main(["history", "QX-TQZ", str(repo), "--no-findings"]) == 0
    out = capsys.readouterr().out
    assert "file renamed from aircraft/qx-tqa.yaml (the same serial number)" in out and "Delivery" in out
    assert cli.main(["history", "QX-TQA", str(repo), "--no-findings"]) == 0  # asked by its old marks
    assert capsys.readouterr().out.splitlines()[0].startswith("QX-TQA (qx-tqa): aircraft/qx-tqz.yaml, 3 changes")


@pytest.mark.parametrize("serials", [("2000101", "2000102"), ("", "")])
def test_files_git_finds_alike_are_not_joined_without_the_same_serial(tmp_path, serials):
    # one aircraft leaves and another of the same standard joins in one commit: git calls that a rename,
    # but two airframes' histories must stay apart
    repo = tmp_path / "registry"
    repo.mkdir()
    commit(repo, "2026-03-01T09:00:00+00:00", "Delivery", {"aircraft/qx-tqa.yaml": aircraft_text(serial=serials[0])})
    commit(repo, "2026-07-01T08:00:00+00:00", "QX-TQA out, QX-TQB in",
           {"aircraft/qx-tqa.yaml": None, "aircraft/qx-tqb.yaml": aircraft_text(ident="qx-tqb", serial=serials[1])})
    assert renames_git_found(repo) == [("aircraft/qx-tqa.yaml", "aircraft/qx-tqb.yaml")]
    found = fleet_history(repo).aircraft
    assert [change.kind for change in found["aircraft/qx-tqa.yaml"].changes] == ["added", "removed"]
    assert [change.kind for change in found["aircraft/qx-tqb.yaml"].changes] == ["added"]
    assert found["aircraft/qx-tqb.yaml"].changes[0].commit.subject == "QX-TQA out, QX-TQB in"
