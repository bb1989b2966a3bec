"""The build record: one JSON document holding the registry, every computed figure and every discrepancy.

Every build writes it into the site as `record.json`; `build.py diff` compares two of them. The format is
described in docs/build-record.md and by the JSON Schema in registry/schemas/record.schema.json.

Deterministic by construction: keys are sorted, nothing depends on the clock except the as-of date the
registry speaks for, paths are relative to the data folder, registry numbers keep 10 significant digits
(which leaves any number typed into YAML unchanged) and computed figures keep 6. The same registry and
the same as-of date give the same bytes.
"""
from __future__ import annotations

import base64
import dataclasses
import functools
import json
import math
import zlib
from collections.abc import Callable, Iterable, Iterator, Mapping
from datetime import date
from pathlib import Path
from typing import Any, NamedTuple

from registry import __version__
from registry.core.errors import AerialbookError
from registry.core.results import Figure

FORMAT_VERSION = 2
RECORD_NAME = "record.json"
SCHEMA_PATH = Path(__file__).parent.parent / "schemas" / "record.schema.json"
REGISTRY_DIGITS = 10
FIGURE_DIGITS = 6
SKIPPED_FIELDS = ("src", "locator")
"""Model fields left out of the record: where a value sits in a file is not part of what it is."""


class RecordError(AerialbookError):
    """A record cannot be read or made: not JSON, wrong format version, not valid against the schema,
    or a git revision that cannot be exported. The command line reports it as a data or usage error."""


def round_sig(value: float, digits: int) -> float | str:
    """`value` to `digits` significant digits; infinities and NaN become the strings "inf", "-inf", "nan"."""
    value = float(value)
    if not math.isfinite(value):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf")
    if value == 0:
        return 0.0
    return float(f"{value:.{digits}g}")


def plain(value: Any, data_dir: Path, digits: int = REGISTRY_DIGITS) -> Any:
    """A model value as JSON data: dataclasses and mappings become objects, tuples lists, dates ISO text,
    paths text relative to the data folder, floats rounded to `digits` significant digits."""
    kind = type(value)
    if kind is str or kind is bool or value is None or kind is int:  # the commonest first (a model holds thousands)
        return value
    if kind is float:
        return round_sig(value, digits)
    if kind is tuple or kind is list:
        return [plain(item, data_dir, digits) for item in value]
    names = _recorded_fields(kind)
    if names is not None:
        return {name: plain(getattr(value, name), data_dir, digits) for name in names}
    if isinstance(value, Mapping):
        return {str(key): plain(item, data_dir, digits) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(item, data_dir, digits) for item in value]
    if isinstance(value, bool) or value is None or isinstance(value, str):
        return value
    if isinstance(value, int):
        return int(value)
    if isinstance(value, float):
        return round_sig(value, digits)
    if isinstance(value, date):
        return value.isoformat()
    if isinstance(value, Path):
        return relative_path(value, data_dir)
    if hasattr(value, "item"):  # a numpy scalar
        return plain(value.item(), data_dir, digits)
    raise TypeError(f"cannot record a value of type {type(value).__name__}")


@functools.lru_cache(maxsize=None)
def _recorded_fields(kind: type) -> tuple[str, ...] | None:
    """The fields `plain` records of a dataclass (all but `SKIPPED_FIELDS`), in order; None for any other type."""
    if not dataclasses.is_dataclass(kind):
        return None
    return tuple(item.name for item in dataclasses.fields(kind) if item.name not in SKIPPED_FIELDS)


def relative_path(path: Path | str, data_dir: Path) -> str:
    """`path` relative to the data folder, with forward slashes, whether it was given relative or absolute."""
    path = Path(path)
    for base, target in ((Path(data_dir), path), (Path(data_dir).resolve(), path.resolve())):
        try:
            return target.relative_to(base).as_posix()
        except ValueError:
            continue
    return path.as_posix()


def relative_src(text: str, data_dir: Path) -> str:
    """A "file:line" with the file made relative to the data folder."""
    if not text:
        return ""
    file, _, line = str(text).rpartition(":")
    if not file or not line.isdigit():
        return relative_path(text, data_dir)
    return f"{relative_path(file, data_dir)}:{line}"


def figures(items: tuple[Figure, ...] | list[Figure]) -> dict[str, dict[str, Any]]:
    """Figures keyed by their key: label, unit and value (6 significant digits); the first of a key wins."""
    out: dict[str, dict[str, Any]] = {}
    for item in items:
        if item.key and item.key not in out:
            value = item.value
            out[item.key] = {"label": item.label, "unit": item.unit,
                             "value": round_sig(value, FIGURE_DIGITS) if isinstance(value, (int, float))
                             and not isinstance(value, bool) else value}
    return out


def cosite_record(cosite) -> dict[str, Any]:
    """Each transmitter → receiver path's margins, keyed `<aircraft>/<TX>+<RX>` (transmitter first):
    one figure per harmonic order (the worst of its hits), and one per intermodulation order (the worst
    product the transmitter makes that lands in the receiver), so `diff` shows what a new radio breaks."""
    out: dict[str, Any] = {}
    for path in cosite.paths if cosite is not None else ():
        worst: dict[int, Any] = {}
        for hit in path.hits:
            if hit.order not in worst or (hit.margin_db or 0.0) < (worst[hit.order].margin_db or 0.0):
                worst[hit.order] = hit
        out[f"{path.aircraft}/{path.tx}+{path.rx}"] = {
            "aircraft": path.aircraft, "tx": path.tx, "rx": path.rx, "excused_by": path.excused_by or None,
            "figures": {f"cosite.margin_db.h{order}": {
                "label": f"Margin, {hit.product} ({hit.channels})", "unit": "dB",
                "value": None if hit.margin_db is None else round_sig(hit.margin_db, FIGURE_DIGITS)}
                for order, hit in sorted(worst.items())}}
    for item in cosite.intermod if cosite is not None else ():
        if item.excused_by or item.margin_db is None:
            continue
        entry = out.setdefault(f"{item.aircraft}/{item.generator}+{item.rx}", {
            "aircraft": item.aircraft, "tx": item.generator, "rx": item.rx, "excused_by": None, "figures": {}})
        key = f"cosite.margin_db.im{item.order}"
        value = round_sig(item.margin_db, FIGURE_DIGITS)
        if key not in entry["figures"] or value < entry["figures"][key]["value"]:
            entry["figures"][key] = {"label": f"Margin, worst intermodulation product of order {item.order} made "
                                              f"in {item.generator}", "unit": "dB", "value": value}
    return out


def aircraft_record(aircraft, installations, pairs, data_dir: Path, cosite=None) -> dict[str, Any]:
    """One aircraft's share of the record: its registry entry and the figures of its installations,
    pairs and co-site paths. Made where the aircraft is computed, so that it is kept in the cache with
    its figures."""
    entry = plain(aircraft, data_dir)
    entry["modifications"] = sorted(entry["modifications"], key=lambda mod: (mod["date"], mod["ref"]))
    return {
        "aircraft": entry,
        "installations": {f"{aircraft_id}/{position}": {
            "aircraft": aircraft_id, "position": position, "pattern_key": result.pattern_key,
            "figures": figures(result.figures)} for (aircraft_id, position), result in installations.items()},
        "pairs": {f"{pair.aircraft}/{pair.position_a}+{pair.position_b}": {
            "aircraft": pair.aircraft, "positions": [pair.position_a, pair.position_b],
            "near_field": bool(pair.near_field), "figures": figures(pair.figures)} for pair in pairs},
        "cosite": cosite_record(cosite),
    }


class ShareText(NamedTuple):
    """One aircraft's share of the record as JSON text, kept with its figures in the cache so that a
    rebuild does not encode it again: its registry entry (an object), and the members (no braces) of
    its entries in the record's installation and pair maps."""

    aircraft: str
    installations: str
    pairs: str
    cosite: str = ""


def share_text(share: Mapping[str, Any]) -> ShareText:
    """`aircraft_record`'s result as JSON text, encoded as `dumps` would."""
    return ShareText(_json(share["aircraft"]), _json(share["installations"])[1:-1], _json(share["pairs"])[1:-1],
                     _json(share.get("cosite", {}))[1:-1])


Packed = tuple[str, ...]
"""An aircraft's `ShareText` as the cache keeps it and the main process holds it until the record is
written (`pack_share`)."""


def pack_share(share: ShareText) -> Packed:
    """Each text of an aircraft's share compressed apart (zlib, fastest level) and written in base64: the
    shares are mostly repeated keys and labels, a seventh of their size packed. Packed where the aircraft
    is computed, so the cache keeps and reads back the small form and the main process, which holds every
    aircraft's share until the record is written, never compresses anything."""
    return tuple(base64.b64encode(zlib.compress(text.encode("utf-8"), 1)).decode("ascii") for text in share)


def unpack_field(packed: Packed, field_index: int) -> str:
    """One text of a packed share (0 aircraft, 1 installations, 2 pairs, 3 co-site)."""
    return zlib.decompress(base64.b64decode(packed[field_index])).decode("utf-8")


def to_record(outcome) -> dict[str, Any]:
    """The record of one pipeline run (`pipeline.Outcome`) as plain JSON data: what `to_text` writes."""
    return json.loads(to_text(outcome))


def to_text(outcome) -> str:
    """The record of one pipeline run as one text (`to_chunks`, joined)."""
    return "".join(to_chunks(outcome))


def to_chunks(outcome) -> Iterator[str]:
    """The record of one pipeline run (`pipeline.Outcome`) as the JSON text `dumps` would give, but for
    line breaks: each aircraft's share of a per-aircraft map (the registry's aircraft, the installation,
    pair and co-site figures) is on a line of its own, so that two records can be compared aircraft by
    aircraft without parsing what both hold alike (`record_lines`).

    Each aircraft's share is taken as text (`ShareText`, made where it was computed, held packed) and
    joined in the order `dumps` sorts keys: registry.aircraft by id, and the installation and pair maps
    (keys `<aircraft>/...`) by `<aircraft>/`, which orders them as the whole keys would be. In pieces,
    one aircraft's text unpacked at a time, to be written one after the other (`to_text` joins them)."""
    fleet, results = outcome.fleet, outcome.results
    data_dir = Path(fleet.data_dir)
    packed: dict[str, Packed] = {}
    for craft in fleet.aircraft.values():
        share = results.records.get(craft.id)
        if share is None:
            share = pack_share(share_text(aircraft_record(
                craft, {key: result for key, result in results.installations.items() if key[0] == craft.id},
                [pair for pair in results.pairs if pair.aircraft == craft.id], data_dir, results.cosite.get(craft.id))))
        packed[craft.id] = share
    by_prefix = sorted(packed, key=lambda aircraft_id: aircraft_id + "/")

    def texts(field_index: int, ids: Iterable[str]) -> Iterator[str]:
        return (unpack_field(packed[aircraft_id], field_index) for aircraft_id in ids)

    patterns = {key: {"antenna": pattern.antenna, "kind": pattern.kind,
                      "freq_mhz": round_sig(pattern.freq_mhz, FIGURE_DIGITS), "metrics": figures(pattern.metrics)}
                for key, pattern in results.patterns.items()}
    cables = {cable_id: {"figures": figures(result.figures)} for cable_id, result in results.cables.items()}
    discrepancies = {}
    for item in outcome.discrepancies:
        entry = plain(item, data_dir, FIGURE_DIGITS)
        entry["source"] = relative_src(item.src, data_dir)
        discrepancies[item.id] = entry
    yield from _object({
        "format_version": _json(FORMAT_VERSION),
        "generator": _json({"name": "aerialbook", "version": __version__}),
        "as_of": _json(outcome.as_of.isoformat()),
        "fleet": _json({"operator": fleet.operator, "title": fleet.title}),
        "registry": _object({
            "aircraft": _lines(zip(sorted(packed), texts(0, sorted(packed)))),
            "airframes": _json({key: plain(value, data_dir) for key, value in fleet.airframes.items()}),
            "antennas": _json({key: plain(value, data_dir) for key, value in fleet.antennas.items()}),
            "cables": _json({key: plain(value, data_dir) for key, value in fleet.cables.items()}),
            "services": _json({key: plain(value, data_dir) for key, value in fleet.services.items()}),
            "policy": _json(plain(fleet.policy, data_dir)),
        }),
        "figures": _object({
            "installations": _joined(texts(1, by_prefix)),
            "pairs": _joined(texts(2, by_prefix)),
            "cosite": _joined(texts(3, by_prefix)),
            "patterns": _json(patterns),
            "cables": _json(cables),
        }),
        "discrepancies": _json(discrepancies),
        "stale_reviews": _json(sorted(({"discrepancy": review.discrepancy, "state": review.state}
                                       for review in outcome.stale_reviews), key=lambda entry: entry["discrepancy"])),
    })
    yield "\n"


def _json(value: Any) -> str:
    return json.dumps(value, sort_keys=True, separators=(",", ":"), ensure_ascii=False, allow_nan=False)


Chunks = Iterable[str]
"""JSON text in pieces, written (or joined) once at the end: the record runs to a hundred megabytes at
1,000 aircraft, and joining level by level would copy it at every level."""


def _object(members: Mapping[str, str | Chunks]) -> Iterator[str]:
    """A JSON object from already encoded values (text, or pieces of text made as they are asked for),
    keys sorted as `dumps` sorts them."""
    yield "{"
    for n, key in enumerate(sorted(members)):
        yield ("," if n else "") + _json(key) + ":"
        value = members[key]
        if isinstance(value, str):
            yield value
        else:
            yield from value
    yield "}"


def _joined(members: Iterable[str]) -> Iterator[str]:
    """A JSON object from runs of already encoded, already ordered members ("" for none), one aircraft's
    run on each line (`record_lines`)."""
    yield "{\n"
    first = True
    for run in members:
        if run:
            yield run if first else ",\n" + run
            first = False
    yield "\n}"


def _lines(members: Iterable[tuple[str, str]]) -> Iterator[str]:
    """A JSON object from (aircraft id, encoded value) pairs in id order, one member on each line."""
    return _joined(_json(key) + ":" + value for key, value in members)


def dumps(record: Mapping[str, Any]) -> str:
    """The record as JSON text: sorted keys, compact (the fast encoder), UTF-8 characters kept, a final
    newline. `python -m json.tool record.json` shows it indented."""
    return _json(record) + "\n"


def write(record: Mapping[str, Any], path: Path) -> None:
    Path(path).write_text(dumps(record), encoding="utf-8")


def schema() -> dict[str, Any]:
    return json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))


@functools.lru_cache(maxsize=1)
def _fast_validator() -> Callable[[Any], Any]:
    """The record schema compiled to Python (fastjsonschema): a 1,000-aircraft record is checked in
    seconds where the reference validator takes minutes. The schema uses only keywords draft 7 shares
    with 2020-12, so it is compiled as draft 7; a record it refuses is checked again by jsonschema,
    whose messages name every problem. Imported here: a build that reads no record never needs it."""
    import fastjsonschema
    return fastjsonschema.compile({**schema(), "$schema": "http://json-schema.org/draft-07/schema#"})


def validate(record: Any, where: str) -> dict[str, Any]:
    """`record` if it is a record this version can read; RecordError naming `where` and the first problem.
    The reference validator (jsonschema, a tenth of a second to import) is imported only to word a refusal."""
    from fastjsonschema import JsonSchemaException
    if not isinstance(record, dict):
        raise RecordError(f"{where}: found {type(record).__name__}, expected a JSON object (a build record)")
    version = record.get("format_version")
    if version != FORMAT_VERSION:
        raise RecordError(f"{where}: format_version: found {version!r}, expected {FORMAT_VERSION} "
                          f"(this aerialbook reads build records of format version {FORMAT_VERSION})")
    try:
        _fast_validator()(record)
        return record
    except JsonSchemaException:
        pass  # worded below by the reference validator, which lists every problem
    import jsonschema
    validator = jsonschema.Draft202012Validator(schema())
    problems = sorted(validator.iter_errors(record), key=lambda error: list(map(str, error.absolute_path)))
    if problems:
        first = problems[0]
        field = ".".join(str(part) for part in first.absolute_path) or "(record)"
        more = f" (and {len(problems) - 1} more)" if len(problems) > 1 else ""
        raise RecordError(f"{where}: {field}: {first.message}{more}")
    return record


def read_text(path: Path) -> str:
    """A record file's text; RecordError if it cannot be read."""
    path = Path(path)
    try:
        return path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise RecordError(f"{path}: no such file") from None
    except (OSError, UnicodeDecodeError) as error:
        raise RecordError(f"{path}: cannot be read ({error})") from None


def read(path: Path) -> dict[str, Any]:
    """A record file, checked against the schema; RecordError if it cannot be used."""
    path = Path(path)
    text = read_text(path)
    try:
        data = json.loads(text)
    except json.JSONDecodeError as error:
        raise RecordError(f"{path}:{error.lineno}:{error.colno}: not JSON ({error.msg})") from None
    return validate(data, str(path))
