"""Atomic publishing: a failed build leaves the previous site untouched; foreign folders are refused.

Behaviour follows POSIX rename(2) semantics (IEEE Std 1003.1, rename: atomic replacement of a
directory entry); the tests check our use of it, not the operating system.
"""
import fcntl
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from registry.site import publish

ROOT = Path(__file__).resolve().parent.parent


def write_site(out_dir, text):
    with publish.staging_dir(out_dir) as stage:
        (stage / "index.html").write_text(text)


def test_first_build_creates_site_with_marker(tmp_path):
    out = tmp_path / "site"
    write_site(out, "one")
    assert (out / "index.html").read_text() == "one"
    assert (out / publish.MARKER).exists()


def test_second_build_replaces_whole_site(tmp_path):
    out = tmp_path / "site"
    with publish.staging_dir(out) as stage:
        (stage / "old-page.html").write_text("gone soon")
    write_site(out, "two")
    assert (out / "index.html").read_text() == "two"
    assert not (out / "old-page.html").exists()


def test_failed_build_leaves_previous_site_and_no_debris(tmp_path):
    out = tmp_path / "site"
    write_site(out, "good")
    before = sorted(p.name for p in tmp_path.iterdir())
    with pytest.raises(RuntimeError):
        with publish.staging_dir(out) as stage:
            (stage / "index.html").write_text("half")
            raise RuntimeError("render failed")
    assert (out / "index.html").read_text() == "good"
    assert sorted(p.name for p in tmp_path.iterdir()) == before


def test_foreign_folder_is_refused_and_kept(tmp_path):
    out = tmp_path / "documents"
    out.mkdir()
    (out / "thesis.txt").write_text("precious")
    with pytest.raises(publish.PublishError, match="not written by this tool"):
        write_site(out, "x")
    assert (out / "thesis.txt").read_text() == "precious"


def test_concurrent_build_into_same_target_is_refused(tmp_path):
    out = tmp_path / "site"
    lock_path = tmp_path / ".site.lock"
    with open(lock_path, "w") as held:
        fcntl.flock(held, fcntl.LOCK_EX)
        with pytest.raises(publish.PublishError, match="another build"):
            write_site(out, "x")
    assert not out.exists()


def test_no_lock_file_outlives_a_build_ended_failed_or_refused(tmp_path):
    out = tmp_path / "site"
    write_site(out, "one")
    assert not publish.lock_path(out).exists()
    with pytest.raises(RuntimeError):
        with publish.staging_dir(out):
            assert publish.lock_path(out).exists()  # held while building
            raise RuntimeError("render failed")
    assert not publish.lock_path(out).exists()
    foreign = tmp_path / "documents"
    foreign.mkdir()
    (foreign / "thesis.txt").write_text("precious")
    with pytest.raises(publish.PublishError):
        write_site(foreign, "x")
    assert not publish.lock_path(foreign).exists()


def test_a_build_refused_by_the_lock_leaves_the_holders_file_which_goes_with_the_holder(tmp_path):
    out = tmp_path / "site"
    with publish.staging_dir(out) as stage:
        (stage / "index.html").write_text("first")
        with pytest.raises(publish.SiteLocked, match="another build"):
            write_site(out, "second")
        assert publish.lock_path(out).exists()
    assert not publish.lock_path(out).exists()
    assert (out / "index.html").read_text() == "first"


def test_a_lock_file_left_by_a_killed_build_is_taken_over_and_removed(tmp_path):
    out = tmp_path / "site"
    publish.lock_path(out).write_text("")  # what a build killed with SIGKILL leaves: a file, no lock held
    write_site(out, "one")
    assert (out / "index.html").read_text() == "one"
    assert not publish.lock_path(out).exists()


def test_a_lock_file_that_is_a_link_is_not_followed(tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_text("keep me")
    out = tmp_path / "site"
    publish.lock_path(out).symlink_to(victim)
    with pytest.raises(OSError):
        write_site(out, "x")
    assert victim.read_text() == "keep me"


def test_leftovers_of_killed_builds_are_removed_by_the_next_build(tmp_path):
    out = tmp_path / "site"
    write_site(out, "one")
    stale = [tmp_path / ".site.build-ab12cd_9", tmp_path / ".site.old-zz99yy00"]
    for folder in stale:
        (folder / "aircraft").mkdir(parents=True)
        (folder / "aircraft" / "page.html").write_text("half written")
    kept = [tmp_path / ".site.build-keep", tmp_path / ".other.build-ab12cd_9", tmp_path / "notes.build-ab12cd_9"]
    for folder in kept:
        folder.mkdir()
    (tmp_path / ".site.old-file0000").write_text("a file, not a folder we made")
    write_site(out, "two")
    assert not any(folder.exists() for folder in stale)
    assert all(folder.exists() for folder in kept)
    assert (tmp_path / ".site.old-file0000").exists()
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".site.")) == [
        ".site.build-keep", ".site.old-file0000"]


def test_a_folder_with_a_copied_marker_is_not_a_site(tmp_path):
    out = tmp_path / "site"
    write_site(out, "one")
    documents = tmp_path / "documents"
    documents.mkdir()
    (documents / "thesis.txt").write_text("precious")
    shutil.copy(out / publish.MARKER, documents / publish.MARKER)
    with pytest.raises(publish.PublishError, match="not written by this tool"):
        write_site(documents, "x")
    assert (documents / "thesis.txt").read_text() == "precious"
    # a user's file under a name the marker lists, with other content, is not taken for the site's either
    (documents / "thesis.txt").unlink()
    (documents / "index.html").write_text("my own index page")
    with pytest.raises(publish.PublishError, match="not written by this tool"):
        write_site(documents, "x")
    assert (documents / "index.html").read_text() == "my own index page"


def test_a_file_added_to_a_site_is_never_deleted(tmp_path):
    out = tmp_path / "site"
    write_site(out, "one")
    (out / "my-notes.txt").write_text("mine")
    with pytest.raises(publish.PublishError, match="not written by this tool"):
        write_site(out, "two")
    assert (out / "my-notes.txt").read_text() == "mine"
    (out / "my-notes.txt").unlink()
    write_site(out, "two")  # the site as published again: replaced
    assert (out / "index.html").read_text() == "two"


def test_a_site_copied_whole_is_still_a_site(tmp_path):
    out = tmp_path / "site"
    write_site(out, "one")
    shutil.copytree(out, tmp_path / "copy")
    write_site(tmp_path / "copy", "two")
    assert (tmp_path / "copy" / "index.html").read_text() == "two"


def test_a_killed_build_leaves_nothing_the_next_build_does_not_remove(tmp_path):
    # SIGKILL mid-build (POSIX kill(2): the process gets no chance to clean up)
    out = tmp_path / "site"
    env = {**os.environ, "SOURCE_DATE_EPOCH": "1796169600"}
    command = [sys.executable, str(ROOT / "build.py"), "build", str(ROOT / "fleet_data"), "-o", str(out),
               "--no-cache"]
    child = subprocess.Popen(command, cwd=ROOT, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        deadline = time.monotonic() + 600
        while not list(tmp_path.glob(".site.build-*")) and child.poll() is None and time.monotonic() < deadline:
            time.sleep(0.05)
        assert child.poll() is None, "the build ended before it staged anything"
        child.send_signal(signal.SIGKILL)
    finally:
        child.wait()
    assert list(tmp_path.glob(".site.build-*")) and publish.lock_path(out).exists()
    result = subprocess.run(command, cwd=ROOT, env=env, capture_output=True, text=True)
    assert result.returncode == 0, result.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["site"]


@pytest.mark.parametrize("previous, chunks, kept", [
    ("{\"a\":1,\n\"b\":2}\n", ["{\"a\":1,", "\n\"b\":2}", "\n"], True),   # the same bytes in other pieces
    ("{\"a\":1,\n\"b\":2}\n", ["{\"a\":1,", "\n\"b\":3}", "\n"], False),  # one byte differs
    ("{\"a\":1,\n\"b\":2}\n", ["{\"a\":1,", "\n\"b\":2}"], False),        # the previous file is longer
    ("{\"a\":1,\n\"b\":2}", ["{\"a\":1,", "\n\"b\":2}", "\n"], False),    # the previous file is shorter
    (None, ["{}", "\n"], False),                                          # no previous file
])
def test_a_file_written_in_pieces_is_linked_only_when_it_equals_the_previous_one(tmp_path, previous, chunks, kept):
    # place_chunks compares as it writes (the build record is written this way); hard links keep an unchanged
    # file's inode (common practice for incremental publishing, no source)
    old, stage = tmp_path / "old", tmp_path / "stage"
    old.mkdir()
    stage.mkdir()
    if previous is not None:
        (old / "record.json").write_text(previous)
    publish.place_chunks(stage, old, "record.json", iter(chunks))
    assert (stage / "record.json").read_text() == "".join(chunks)
    if previous is not None:
        assert ((stage / "record.json").stat().st_ino == (old / "record.json").stat().st_ino) is kept


def test_a_previous_aircraft_is_reused_only_with_every_file_present_and_inside_the_site(tmp_path):
    # the marker file is input: an entry listing a path that leaves the site ("../x"), a missing file or a
    # folder in place of a file is not reused (common practice for path handling, no source)
    out = tmp_path / "site"
    (out / "aircraft" / "a").mkdir(parents=True)
    (out / "aircraft" / "a" / "p.html").write_text("page")
    (out / "aircraft" / "a" / "folder.html").mkdir()
    (tmp_path / "beside.html").write_text("not the site's")
    files = ["aircraft/a/p.html", "../beside.html", "aircraft/../../beside.html", "/etc/hostname",
             "aircraft/a/./p.html", "aircraft/a/gone.html", "aircraft/a/folder.html"]
    entries = {f"craft{n}": {"key": "k", "files": [path]} for n, path in enumerate(files)}
    (out / publish.MARKER).write_text(json.dumps({"aircraft": entries, "files": {path: 4 for path in files}}))
    assert list(publish.previous_aircraft(out)) == ["craft0"]
