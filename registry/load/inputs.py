"""What the later stages read from outside the model: measured sweep files, and the keys of each
aircraft's inputs.

Load reads every input file, so a cache key made here can never miss an input: an aircraft's key covers
its own file, the sweep files it names and every shared file (catalogues, services, policy, airframe
types, fleet, and the shipped service table and policy). Reviews are left out: they change no figure.
"""
from __future__ import annotations

from pathlib import Path

from registry.core.model import Aircraft
from registry.incremental import key_of


def sweep_files(aircraft: list[Aircraft]) -> list[Path]:
    """Every measured sweep file the aircraft name, once each, sorted."""
    return sorted({installation.measured.sweep for craft in aircraft for installation in craft.installations.values()
                   if installation.measured is not None and installation.measured.sweep is not None})


def read_sweeps(files: list[Path]) -> dict[str, str]:
    """Each sweep file's text (Touchstone is ASCII; read as Latin-1 so any byte reads), by path; a file
    that cannot be read is left out, and the compute stage says so on its figure."""
    texts = {}
    for file in files:
        try:
            texts[str(file)] = file.read_bytes().decode("latin-1")
        except OSError:
            continue
    return texts


def shared_key(data_dir: Path, shipped_dir: Path) -> str:
    """Key of every file an aircraft's figures depend on besides its own and its sweeps."""
    files = sorted(data_dir.glob("*.yaml")) + sorted((data_dir / "airframes").glob("*.yaml"))
    files = [file for file in files if _regular_inside(file, data_dir)] + sorted(shipped_dir.glob("*.yaml"))
    parts: list[str | bytes] = [str(data_dir)]
    for file in files:
        if file.name != "reviews.yaml":
            parts += [str(file), file.read_bytes()]
    return key_of(*parts)


def _regular_inside(file: Path, data_dir: Path) -> bool:
    """A regular file inside the registry once links are followed: a stray link to a device or to a file
    outside (which the loader does not read) is not read for the key either."""
    target = file.resolve()
    return target.is_file() and target.is_relative_to(data_dir.resolve())


def aircraft_keys(aircraft: list[Aircraft], shared: str, sweeps: dict[str, str],
                  file_keys: dict[str, str | None]) -> dict[str, str]:
    """Key of each aircraft's inputs: its own file (by the key the loader made of its bytes, `file_keys`
    by path, so the file is not read again), the sweep files it names, and the shared files."""
    keys = {}
    for craft in aircraft:
        own = file_keys.get(craft.src.path)
        parts: list[str | bytes] = [shared, craft.src.path, own if own else Path(craft.src.path).read_bytes()]
        for installation in craft.installations.values():
            if installation.measured is not None and installation.measured.sweep is not None:
                path = str(installation.measured.sweep)
                parts += [path, sweeps.get(path, "unreadable")]
        keys[craft.id] = key_of(*parts)
    return keys
