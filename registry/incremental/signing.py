"""The key cache entries are signed with, kept outside the cache folder.

A checksum anyone can compute (SHA-256 of the entry) tells a damaged entry from a sound one, but not an
entry this user's builds wrote from one a colleague with write access to the cache folder wrote: such an
entry, well formed and of the right types, could carry a plausible figure that is not the registry's
(a feeder 12 m long where the file says 9.5 m), and the site would publish it. Entries are therefore
signed with HMAC-SHA-256 (RFC 2104; FIPS 198-1) under a secret key that never lies in the cache folder:

- `$AERIALBOOK_CACHE_KEY` when set (at least 32 characters: a secret a CI system hands its jobs, so that a
  cache it restores is trusted by the next job);
- else the file `aerialbook/cache-key` in `$XDG_CONFIG_HOME` (default `~/.config`), 64 random hex digits,
  made on first use, readable and writable by its owner only.

A key file that someone else could have written or read (another owner, a mode other than 0600 or stricter,
a link, not a key) is not used, and neither is a key that cannot be made (a read-only home): the build then
signs with a key of its own process only, so it trusts what it wrote itself during this run and nothing
from an earlier one (slower, never wrong), and the key's `note` says why.
"""
from __future__ import annotations

import functools
import os
import re
import secrets
import stat
import tempfile
from pathlib import Path
from typing import NamedTuple

KEY_ENV = "AERIALBOOK_CACHE_KEY"
MIN_ENV_KEY_CHARS = 32
_KEY_TEXT = re.compile(rb"[0-9a-f]{64}\n?")
_KEEP_ONE = f"; to keep one, set $XDG_CONFIG_HOME to a folder of yours or ${KEY_ENV} to a secret"


class Key(NamedTuple):
    secret: bytes
    note: str
    """Empty when the key is kept between runs; else why it is not, for the user."""


def key_file() -> Path:
    """Where the user's key is kept: `$XDG_CONFIG_HOME/aerialbook/cache-key` (default `~/.config/...`)."""
    base = os.environ.get("XDG_CONFIG_HOME") or Path.home() / ".config"
    return Path(base) / "aerialbook" / "cache-key"


@functools.lru_cache(maxsize=1)
def signing_key() -> Key:
    """This process's key (`find_key`), found once: worker processes forked later inherit it."""
    return find_key(os.environ.get(KEY_ENV))


def find_key(from_env: str | None) -> Key:
    """The key from the environment, else from the key file (made if absent); a key of this process only,
    with a note saying why, when neither can be used."""
    if from_env is not None:
        if len(from_env) >= MIN_ENV_KEY_CHARS:
            return Key(from_env.encode("utf-8", "surrogateescape"), "")
        return _this_run_only(f"${KEY_ENV} is shorter than {MIN_ENV_KEY_CHARS} characters")
    try:
        path = key_file()
    except RuntimeError:  # no home folder to be found
        return _this_run_only(f"no home folder to keep the key in{_KEEP_ONE}")
    found = _read_key(path)
    if found is None:
        problem = _make_key(path)
        found = _read_key(path) if not problem else problem
    return Key(found, "") if isinstance(found, bytes) else _this_run_only(found)


def _this_run_only(reason: str) -> Key:
    return Key(secrets.token_bytes(32), f"cache entries are trusted for this run only: {reason}")


def _read_key(path: Path) -> bytes | str | None:
    """The key in `path`; None when there is no file; else why it cannot be trusted."""
    try:
        handle = os.open(path, os.O_RDONLY | getattr(os, "O_NOFOLLOW", 0) | getattr(os, "O_NONBLOCK", 0)
                         | getattr(os, "O_CLOEXEC", 0))
    except FileNotFoundError:
        return None
    except OSError as error:
        return f"{path} cannot be read ({error.strerror})"
    try:
        info = os.fstat(handle)
        if not stat.S_ISREG(info.st_mode):
            return f"{path} is not a regular file"
        if hasattr(os, "geteuid") and info.st_uid != os.geteuid():
            return f"{path} belongs to another user"
        if info.st_mode & 0o077:
            return (f"{path} can be read or written by others (mode {stat.S_IMODE(info.st_mode):04o}): "
                    f"run chmod 600 {path}")
        text = os.read(handle, 100)
    finally:
        os.close(handle)
    if not _KEY_TEXT.fullmatch(text):
        return f"{path} does not hold a key (64 hex digits): remove it and a new one is made"
    return text.strip()


def _make_key(path: Path) -> str:
    """Make the key file, readable by its owner only; empty on success (or when another process made it
    first), else why it could not be made."""
    try:
        path.parent.mkdir(mode=0o700, parents=True, exist_ok=True)
        handle, tmp = tempfile.mkstemp(dir=path.parent, prefix=".tmp-")  # mode 0600
    except OSError as error:
        return f"cannot make {path} ({error.strerror}){_KEEP_ONE}"
    try:
        with os.fdopen(handle, "w", encoding="ascii") as out:
            out.write(secrets.token_hex(32) + "\n")
        os.link(tmp, path)  # never replaces a key another build made meanwhile
    except FileExistsError:
        pass
    except OSError as error:
        return f"cannot make {path} ({error.strerror}){_KEEP_ONE}"
    finally:
        Path(tmp).unlink(missing_ok=True)
    return ""
