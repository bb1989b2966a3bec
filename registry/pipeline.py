"""The build, top to bottom: load → compute → check → render → write.

Each stage is finished before the next starts, and no stage reaches back into an earlier one.
"""
from __future__ import annotations

from pathlib import Path

from registry import publish, render
from registry.load import load_fleet
from registry.model import Fleet


def load(data_dir: Path) -> Fleet:
    """Load and validate the registry; raises DataError with every problem found."""
    return load_fleet(data_dir)


def summary(fleet: Fleet) -> str:
    """A few lines saying what the registry holds."""
    installations = sum(len(aircraft.installations) for aircraft in fleet.aircraft.values())
    return "\n".join([
        f"{fleet.operator}: registry is valid",
        f"  {len(fleet.aircraft)} aircraft, {installations} installations",
        f"  {len(fleet.airframes)} airframe types, {len(fleet.antennas)} antenna models, "
        f"{len(fleet.cables)} cables, {len(fleet.services)} services",
    ])


def build(data_dir: Path, out_dir: Path) -> Path:
    """Load, compute, check and render the registry, then publish it atomically to `out_dir`."""
    fleet = load(data_dir)
    pages = render.render_site(fleet)
    with publish.staging_dir(out_dir) as stage:
        for rel_path, content in pages.items():
            target = stage / rel_path
            target.parent.mkdir(parents=True, exist_ok=True)
            if isinstance(content, bytes):
                target.write_bytes(content)
            else:
                target.write_text(content, encoding="utf-8")
    return out_dir
