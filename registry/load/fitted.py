"""What one revision of an aircraft file says is fitted, for the history (`history.py`): per installation
position the antenna, its feeder and the hardware as short texts, the file's modification references and
its serial number. Read with the registry's YAML reader but not validated (an old revision need not pass
today's schema); each reading kept in the cache by blob id, as JSON text checked on read.
"""
from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from registry.incremental import DiskCache, key_of
from registry.load import git
from registry.load.yamlsource import MAX_BYTES, parse_yaml

FITTED: tuple[tuple[str, tuple[str, ...]], ...] = (
    ("service", ("service",)), ("antenna", ("antenna",)), ("antenna serial", ("antenna_serial",)),
    ("location", ("location",)), ("surface", ("surface",)), ("ground plane", ("ground_plane",)),
    ("cable", ("feeder", "cable")), ("length", ("feeder", "length_m")), ("connectors", ("feeder", "connectors")),
    ("adapters", ("feeder", "adapters")), ("antenna end", ("feeder", "antenna_end")),
    ("radio end", ("feeder", "radio_end")), ("adapter parts", ("feeder", "adapter_parts")),
    ("radio unit", ("feeder", "radio_unit")), ("splitter", ("splitter",)), ("amplifier", ("amplifier",)),
)
"""What an installation position carries, label → path in the aircraft file: the antenna, its feeder and
the hardware. Measurements and notes are not what is fitted and are left out."""
UNIT_SUFFIXES = {"_m": "m", "_db": "dB", "_milliohm": "mΩ", "_mhz": "MHz"}
Fitted = tuple[tuple[str, str], ...]
"""(label, value as text) of the FITTED fields an installation has, in FITTED's order."""
Parsed = tuple[dict[str, Fitted] | None, tuple[str, ...], str, str]
"""What one aircraft file's content says (`positions_of`): positions (None when unreadable), modification
references, the problem, the manufacturer's serial number ("" when it names none). Kept in the cache by
blob id as JSON text: a fleet's files are read once, not at every build."""


def read_contents(top: Path, blob_ids: set[str], cache_root: Path | None) -> dict[str, Parsed]:
    """Each blob's reading (`positions_of`): from the cache, else from one `git cat-file --batch` of the
    rest, parsed and kept."""
    cache = DiskCache(cache_root, "history", str)  # JSON text: read back in C, then checked (`from_json`)
    found: dict[str, Parsed] = {}
    for blob in sorted(blob_ids):
        kept = from_json(cache.get(key_of("history-blob", blob)))
        if kept is not None:
            found[blob] = kept
    missing = sorted(blob_ids - set(found))
    raw = git.read_blobs(top, missing, MAX_BYTES)
    for blob in missing:
        found[blob] = positions_of(raw.get(blob), blob[:10])
        if blob in raw:
            cache.put(key_of("history-blob", blob), json.dumps(found[blob], ensure_ascii=False))
    return found


def from_json(text: str | None) -> Parsed | None:
    """A reading kept as JSON, or None when there is none or it is not of the shape `Parsed` (a damaged or
    forged cache entry is a miss)."""
    try:
        fitted, mods, problem, serial = json.loads(text) if text is not None else (None, None, None, None)
    except (ValueError, TypeError):
        return None
    if not isinstance(problem, str) or not isinstance(serial, str) or not isinstance(mods, list) \
            or not all(isinstance(m, str) for m in mods):
        return None
    if fitted is None:
        return None, tuple(mods), problem, serial
    if not isinstance(fitted, dict):
        return None
    positions = {}
    for position, pairs in fitted.items():
        if not isinstance(pairs, list) or not all(isinstance(pair, list) and len(pair) == 2 and isinstance(pair[0], str)
                                                  and isinstance(pair[1], str) for pair in pairs):
            return None
        positions[position] = tuple((label, value) for label, value in pairs)
    return positions, tuple(mods), problem, serial


def positions_of(raw: bytes | None, shown: str) -> Parsed:
    """What an aircraft file's content says is fitted at each position, its modification references, a
    problem ("" when it could be read) and its serial number ("" when it names none)."""
    if raw is None:
        return None, (), "its content could not be read from git (too large or missing)", ""
    doc, problems = parse_yaml(raw, shown)
    if doc is None or not isinstance(doc.data, dict):
        first = problems[0] if problems else None
        where = f"line {first.line}: found {first.found}, expected {first.expected}" if first else "not a mapping"
        return None, (), f"not a readable aircraft file ({where})", ""
    data = doc.data
    mods = tuple(str(item.get("ref")) for item in data.get("modifications") or []
                 if isinstance(item, dict) and item.get("ref") is not None)
    serial = str(data["serial"]) if isinstance(data.get("serial"), (str, int)) and str(data["serial"]) else ""
    installations = data.get("installations")
    if not isinstance(installations, list):
        return None, mods, "no list of installations", serial
    fitted: dict[str, Fitted] = {}
    for item in installations:
        if isinstance(item, dict) and item.get("position") is not None:
            fitted.setdefault(str(item["position"]), fitted_of(item))
    return fitted, mods, "", serial


def fitted_of(installation: dict[str, Any]) -> Fitted:
    """The FITTED fields an installation has, as text."""
    found = []
    for label, path in FITTED:
        value: Any = installation
        for key in path:
            value = value.get(key) if isinstance(value, dict) else None
        if value is not None and value != [] and value != {}:
            found.append((label, value_text(path[-1], value)))
    return tuple(found)


def value_text(key: str, value: Any) -> str:
    """A registry value as short text: numbers with the unit their key names, mappings as their members
    (`member_text`), lists joined with semicolons; a `source` (a document's title) is left out."""
    if isinstance(value, dict):
        return ", ".join(member_text(name, item) for name, item in value.items() if name != "source" and item is not None)
    if isinstance(value, list):
        return "; ".join(value_text(key, item) for item in value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    unit = next((unit for suffix, unit in UNIT_SUFFIXES.items() if key.endswith(suffix)), "")
    if unit and isinstance(value, (int, float)):
        return f"{value:g} {unit}"
    return str(value)


def member_text(name: str, item: Any) -> str:
    """A mapping's member: text as it is ("TNC", "male"); STA/BL/WL and other numbers and lists named
    ("STA 250.0", "gain 26.5 dB", "feeds LOC")."""
    text = value_text(name, item)
    if name in ("sta", "bl", "wl"):
        return f"{name.upper()} {text}"
    if isinstance(item, str):
        return text
    words = name
    for suffix in UNIT_SUFFIXES:
        words = words.removesuffix(suffix)
    return f"{words.replace('_', ' ')} {text}"
