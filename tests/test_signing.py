"""Cache entries signed with a key kept outside the cache folder (`registry/incremental/signing.py`).

The threat: a colleague who can write into the cache folder but not read the user's own files. A
checksum anyone can compute lets them forge a well-formed entry of the right types with a plausible
figure of their own, which the site would publish. A keyed checksum (HMAC, RFC 2104) under a secret
they cannot read stops that (common practice for untrusted caches, no source). The reference for the
build tests is a build with a fresh cache folder: the same bytes.
"""
from __future__ import annotations

import hashlib
import os
import stat
import subprocess
import sys
from pathlib import Path

import pytest

from registry import pipeline
from registry.incremental import DiskCache, signing, store, version_folder

from tests.test_hostile_cache import tree

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "fleet_data"


def plain_checksum(key: str, payload: bytes) -> bytes:
    """What anyone can compute: the SHA-256 of the key and the payload (the checksum before signing)."""
    digest = hashlib.sha256(key.encode("utf-8") + b"\0")
    digest.update(payload)
    return digest.hexdigest().encode("ascii")


@pytest.fixture
def fresh_key(monkeypatch, tmp_path):
    """A config folder of the test's own, and the key found afresh in it (and again after the test)."""
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "config"))
    monkeypatch.delenv(signing.KEY_ENV, raising=False)
    signing.signing_key.cache_clear()
    yield tmp_path / "config" / "aerialbook" / "cache-key"
    signing.signing_key.cache_clear()


def forge_feeder(cache: Path, sign) -> int:
    """QX-TCA's cached models given a feeder 12 m long where the file says 9.5 m (well formed, the right
    types), signed with `sign(key, payload)`; how many entries were forged."""
    forged = 0
    for path in (version_folder(cache) / "models").rglob("*" + store.SUFFIX):
        payload = path.read_bytes().partition(b"\n")[2]
        if b'qx-tca.yaml' in payload and b'"TCX-LL10",9.5,' in payload:
            payload = payload.replace(b'"TCX-LL10",9.5,', b'"TCX-LL10",12.0,', 1)
            path.write_bytes(store.MAGIC + sign(path.stem, payload) + b"\n" + payload)
            forged += 1
    return forged


def test_a_plausible_figure_forged_with_a_checksum_anyone_can_compute_never_reaches_the_site(tmp_path, monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796169600")
    cache = tmp_path / "cache"
    pipeline.build(DEMO, tmp_path / "first", cache_dir=cache, workers=1)
    assert forge_feeder(cache, plain_checksum) == 1
    assert pipeline.build(DEMO, tmp_path / "again", cache_dir=cache, workers=1).written
    assert tree(tmp_path / "again") == tree(tmp_path / "first")
    # the same entry signed with the key does change the site: the signature is what kept it out
    assert forge_feeder(cache, store.checksum) == 1
    pipeline.build(DEMO, tmp_path / "signed", cache_dir=cache, workers=1)
    assert tree(tmp_path / "signed")["aircraft/qx-tca.html"] != tree(tmp_path / "first")["aircraft/qx-tca.html"]


def test_the_key_is_made_on_first_use_for_its_owner_only_and_kept(fresh_key):
    first = signing.signing_key()
    assert first.note == "" and fresh_key.is_file()
    assert stat.S_IMODE(fresh_key.stat().st_mode) == 0o600
    assert stat.S_IMODE(fresh_key.parent.stat().st_mode) == 0o700
    assert first.secret == fresh_key.read_bytes().strip() and len(first.secret) == 64
    signing.signing_key.cache_clear()
    assert signing.signing_key() == first  # the next run signs with the same key


def test_entries_signed_under_another_key_are_misses(fresh_key, tmp_path, monkeypatch):
    writer = DiskCache(tmp_path / "cache", "summaries", str)
    writer.put("a" * 16, "kept")
    assert writer.get("a" * 16) == "kept"
    monkeypatch.setenv(signing.KEY_ENV, "another user's key, long enough to be one")
    signing.signing_key.cache_clear()
    assert DiskCache(tmp_path / "cache", "summaries", str).get("a" * 16) is None
    assert not writer.path("a" * 16).exists()  # refused and removed, like a damaged entry


@pytest.mark.parametrize("spoil, said", [
    (lambda path: path.chmod(0o644), "can be read or written by others (mode 0644): run chmod 600"),
    (lambda path: path.write_text("not a key\n"), "does not hold a key"),
    (lambda path: (path.rename(path.with_name("elsewhere")), path.symlink_to("elsewhere")), "cannot be read"),
    (lambda path: (path.unlink(), path.mkdir()), "is not a regular file"),
    pytest.param(lambda path: os.chown(path, 65534, 65534), "belongs to another user",
                 marks=pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() != 0,
                                          reason="only root can give a file away")),
])
def test_a_key_file_others_could_have_written_is_not_used(fresh_key, spoil, said):
    kept = signing.signing_key().secret
    spoil(fresh_key)
    signing.signing_key.cache_clear()
    key = signing.signing_key()
    assert key.note.startswith("cache entries are trusted for this run only: ") and said in key.note
    assert key.secret != kept and len(key.secret) == 32
    assert signing.signing_key() is key  # one key for the whole run, workers included


def test_a_key_that_cannot_be_kept_or_is_too_short_signs_for_this_run_only(fresh_key, monkeypatch, tmp_path):
    def full_disk(*args, **kwargs):
        raise OSError(28, "No space left on device")

    with monkeypatch.context() as patch:
        patch.setattr(signing.tempfile, "mkstemp", full_disk)
        note = signing.find_key(None).note
        assert f"cannot make {fresh_key} (No space left on device); to keep one, set $XDG_CONFIG_HOME" in note
    (tmp_path / "a file").write_text("a file where the config folder belongs")
    monkeypatch.setenv("XDG_CONFIG_HOME", str(tmp_path / "a file"))
    assert signing.find_key(None).note.endswith("aerialbook/cache-key cannot be read (Not a directory)")
    assert "shorter than 32 characters" in signing.find_key("short").note
    given = signing.find_key("x" * 32)
    assert given == signing.Key(b"x" * 32, "")


def test_check_says_when_entries_are_trusted_for_this_run_only(tmp_path):
    config = tmp_path / "config" / "aerialbook"
    config.mkdir(parents=True)
    (config / "cache-key").write_text("0" * 64 + "\n")
    (config / "cache-key").chmod(0o666)
    env = {**os.environ, "XDG_CONFIG_HOME": str(tmp_path / "config"), "SOURCE_DATE_EPOCH": "1796169600"}
    env.pop(signing.KEY_ENV, None)
    command = [sys.executable, str(ROOT / "build.py"), "check", str(DEMO), "--cache", str(tmp_path / "cache")]
    run = subprocess.run(command, cwd=tmp_path, env=env, capture_output=True, text=True, timeout=300)
    assert run.returncode in (0, 1), run.stderr
    assert (f"note: cache entries are trusted for this run only: {config / 'cache-key'} can be read or written "
            f"by others (mode 0666): run chmod 600") in run.stderr
    plain = subprocess.run(command[:-2] + ["--no-cache"], cwd=tmp_path, env=env, capture_output=True, text=True,
                           timeout=300)
    assert plain.stdout == run.stdout and "note:" not in plain.stderr
