"""Atomic publishing: a failed build leaves the previous site untouched; foreign folders are refused.

Behaviour follows POSIX rename(2) semantics (IEEE Std 1003.1, rename: atomic replacement of a
directory entry); the tests check our use of it, not the operating system.
"""
import fcntl

import pytest

from registry.site import publish


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
