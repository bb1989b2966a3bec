"""The cache folder as untrusted input: nothing placed in it runs code, crashes the build, exhausts memory
or changes a published byte.

The reference is a plain build with no cache (common practice for reproducible builds, no source): after
a first build fills a real cache folder, entries are replaced by garbage, by entries of the wrong type
with a correct checksum, by a pickle whose loading would create a file, by a plot whose SVG carries a
script, and by a symlink to /dev/urandom; the rebuild must publish the same bytes as the plain build.
Pickle's documentation warns that loading can run arbitrary code ("The pickle module is not secure",
Python 3 library reference, pickle); the payload below is the classic __reduce__ construction.
"""
from __future__ import annotations

import dataclasses
import functools
import json
import os
import pickle
import shutil
from pathlib import Path

import numpy as np
import pytest

from registry import pipeline
from registry.core.results import AircraftSummary, Curve, Figure, PatternResult
from registry.evaluate import evaluate_fleet
from registry.incremental import DiskCache, version_folder
from registry.incremental import codec, store
from registry.load.partial import AircraftRead
from registry.load.fleet import Parsed
from registry.output import record
from registry.site import plots
from registry.site.render import AircraftPieces

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
KINDS = {"summaries": (AircraftSummary, (record.ShareText,)),
         "patterns": (PatternResult, ()), "files": (Parsed, ()),
         "models": (AircraftRead, ()), "pieces": (AircraftPieces, ()),
         "plots": (plots.Drawn, ())}
"""Each namespace of the cache and the type its reader expects (as evaluate, load, render and plots ask)."""


class Trap:
    """Unpickling this creates the file named in it: the proof that a pickle ran code."""

    def __init__(self, path: str):
        self.path = path

    def __reduce__(self):
        return (open, (self.path, "w"))


def tree(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*"))
            if p.is_file() and p.name != ".aerialbook-site"}


def entries(cache: Path, namespace: str) -> list[Path]:
    return sorted((version_folder(cache) / namespace).rglob("*" + store.SUFFIX))


def signed(key: str, payload: bytes) -> bytes:
    """An entry signed with this user's key (`signing.py`): the checks behind the signature must still
    refuse what it holds (a key can leak; the build's own bugs can write a bad entry)."""
    return store.MAGIC + store.checksum(key, payload) + b"\n" + payload


@pytest.fixture(autouse=True)
def fixed_date(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796169600")


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    out = tmp_path_factory.mktemp("plain") / "site"
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("SOURCE_DATE_EPOCH", "1796169600")
        pipeline.build(DEMO, out, cache_dir=None, workers=1)
    return tree(out)


@pytest.fixture(scope="module")
def filled_cache(tmp_path_factory):
    """A real cache folder after one build of the demo."""
    folder = tmp_path_factory.mktemp("filled")
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("SOURCE_DATE_EPOCH", "1796169600")
        pipeline.build(DEMO, folder / "site", cache_dir=folder / "cache", workers=1)
    return folder / "cache"


@pytest.fixture
def cache(tmp_path, filled_cache):
    copy = tmp_path / "cache"
    shutil.copytree(filled_cache, copy, symlinks=True)
    return copy


def rebuild(cache: Path, tmp_path: Path) -> dict[str, bytes]:
    out = tmp_path / "rebuilt"  # a fresh folder: the build cannot take the site as up to date
    assert pipeline.build(DEMO, out, cache_dir=cache, workers=1).written
    return tree(out)


def assert_every_entry_reads_back(cache: Path) -> None:
    """Every entry left in the cache is one its reader accepts: refused entries were replaced."""
    for namespace, (kind, also) in KINDS.items():
        found = entries(cache, namespace)
        assert found, namespace
        reader = DiskCache(version_folder(cache), namespace, kind, also)
        assert all(reader.get(path.stem) is not None for path in found), namespace


def test_every_entry_of_a_real_build_reads_back_as_its_type(filled_cache):
    assert_every_entry_reads_back(filled_cache)
    findings = entries(filled_cache, "findings")  # what check reads (a build reads the whole summaries)
    reader = DiskCache(version_folder(filled_cache), "findings", AircraftSummary)
    assert findings and all(reader.get(path.stem) is not None for path in findings)
    assert not list(filled_cache.rglob("*.pickle"))


def test_garbage_truncated_and_linked_entries_give_the_plain_build(cache, tmp_path, reference):
    for namespace in KINDS:
        found = entries(cache, namespace)
        found[0].write_bytes(b"\x80\x04garbage, not an entry")
        if len(found) > 1:
            found[1].write_bytes(found[1].read_bytes()[:-20])  # cut short: checksum no longer matches
        if len(found) > 2:
            found[2].unlink()
            found[2].symlink_to("/dev/urandom")
    assert rebuild(cache, tmp_path) == reference
    assert_every_entry_reads_back(cache)
    assert not [path for path in cache.rglob("*") if path.is_symlink()]


def test_wrong_types_with_correct_checksums_give_the_plain_build(cache, tmp_path, reference):
    pattern = entries(cache, "patterns")[0]
    pattern_payload = store.checked_payload(pattern.stem, pattern.read_bytes())
    for namespace in ("summaries", "files", "models", "pieces", "plots"):
        for path in entries(cache, namespace)[:3]:
            path.write_bytes(signed(path.stem, pattern_payload))  # a PatternResult where another type belongs
    summary = entries(cache, "summaries")[3]  # the right type, one field of the wrong type inside
    payload = store.checked_payload(summary.stem, summary.read_bytes())
    value = codec.loads(payload, AircraftSummary, (record.ShareText,))
    forged = codec.dumps(value._replace(pattern_of={}), AircraftSummary, (record.ShareText,))
    summary.write_bytes(signed(summary.stem, forged.replace(b'["d"]', b'"not a mapping"', 1)))
    assert rebuild(cache, tmp_path) == reference
    assert_every_entry_reads_back(cache)


def test_a_cached_document_holding_what_its_schema_refuses_is_a_miss(cache, tmp_path, reference):
    # a files entry of the right type, correctly signed, whose data holds a date, a complex number or a text
    # where the schema wants a number (a document's data is plain values of any type): each is read back,
    # checked against its schema again, refused and the file parsed afresh (common practice for untrusted
    # caches, no source), so the site is the plain build's
    import datetime
    from registry.load.fleet import Parsed

    forged = 0
    for path in entries(cache, "files"):
        doc, problems = codec.loads(store.checked_payload(path.stem, path.read_bytes()), Parsed)
        if doc is None or not isinstance(doc.data, dict):
            continue
        for item, bad in zip(doc.data.get("cables", ()), (datetime.date(2026, 1, 1), complex(0.7, 0.1), "0.66")):
            item["velocity_factor"] = bad
        for item in doc.data.get("models", ())[:1]:
            item["geometry"] = {1: 2.0}  # a key that is not a text
        if "cables" in doc.data or "models" in doc.data:
            path.write_bytes(signed(path.stem, codec.dumps((doc, problems), Parsed)))
            forged += 1
    assert forged == 2
    assert rebuild(cache, tmp_path) == reference
    assert_every_entry_reads_back(cache)


def test_a_cached_document_whose_positions_are_garbage_still_builds(cache, tmp_path, reference):
    # a files entry of the right type, correctly signed, whose index of positions is rows of another
    # shape: the rows are left out, the objects take the file's first line, and the build runs through
    # (the site's data is the same; only registry lines can differ: content is not the checksum's to vouch for)
    from registry.load.fleet import Parsed
    from registry.load.yamldoc import PlacedIndex

    forged = 0
    for path in entries(cache, "files"):
        doc, problems = codec.loads(store.checked_payload(path.stem, path.read_bytes()), Parsed)
        if doc is None:
            continue
        bad = dataclasses.replace(doc, index=PlacedIndex(doc.path, '[["x"], {"a": 1}, [1, 2, 3]]'))
        path.write_bytes(signed(path.stem, codec.dumps((bad, problems), Parsed)))
        forged += 1
    assert forged >= 5
    site = rebuild(cache, tmp_path)
    assert sorted(site) == sorted(reference)
    assert json.loads(site["record.json"])["discrepancies"].keys() == json.loads(reference["record.json"])["discrepancies"].keys()


def test_a_pickle_in_the_cache_runs_nothing(cache, tmp_path, reference):
    trap = tmp_path / "pickle-ran-code"
    payload = pickle.dumps(Trap(str(trap)))
    for namespace in KINDS:
        for path in entries(cache, namespace)[:2]:
            path.write_bytes(payload)  # as the pickle store wrote it
        for path in entries(cache, namespace)[2:4]:
            path.write_bytes(signed(path.stem, payload))  # with a correct header and checksum
    (version_folder(cache) / "summaries" / "aa").mkdir(exist_ok=True)
    (version_folder(cache) / "summaries" / "aa" / ("a" * 64 + ".pickle")).write_bytes(payload)
    assert rebuild(cache, tmp_path) == reference
    assert not trap.exists()


def test_a_plot_with_a_script_is_drawn_again(cache, tmp_path, reference):
    tampered = []
    for n, path in enumerate(entries(cache, "plots")[:6]):
        drawn = codec.loads(store.checked_payload(path.stem, path.read_bytes()), plots.Drawn)
        svg = drawn.svg.replace("</svg>", '<script>tamperedInCache()</script></svg>') if n % 2 else \
            drawn.svg.replace("<svg ", '<svg onload="tamperedInCache()" ', 1)
        payload = codec.dumps(plots.Drawn(svg, drawn.alt), plots.Drawn)
        path.write_bytes(signed(path.stem, payload) if n < 4 else b"x" + signed(path.stem, payload))
        tampered.append(path)
    site = rebuild(cache, tmp_path)
    assert site == reference
    assert not any(b"tamperedInCache" in content for content in site.values())
    assert all(b"tamperedInCache" not in path.read_bytes() for path in tampered if path.exists())


def test_reading_refuses_links_devices_pipes_and_oversized_files_without_reading_them(tmp_path):
    reader = DiskCache(tmp_path, "patterns", PatternResult)
    links = {"1" * 16: "/dev/urandom", "2" * 16: "/dev/zero", "3" * 16: str(tmp_path / "elsewhere")}
    (tmp_path / "elsewhere").write_bytes(b"anything")
    for key, target in links.items():
        reader.path(key).parent.mkdir(parents=True, exist_ok=True)
        reader.path(key).symlink_to(target)
    pipe_key, big_key = "4" * 16, "5" * 16
    reader.path(pipe_key).parent.mkdir(parents=True, exist_ok=True)
    os.mkfifo(reader.path(pipe_key))  # a pipe nobody writes to: opening it for reading would hang
    reader.path(big_key).parent.mkdir(parents=True, exist_ok=True)
    with open(reader.path(big_key), "wb") as handle:
        handle.truncate(store.MAX_ENTRY_BYTES + 1)  # sparse: over the limit without using the disk
    for key in [*links, pipe_key, big_key]:
        assert reader.get(key) is None
    assert not any(reader.path(key).is_symlink() for key in links)
    assert not reader.path(big_key).exists()
    assert (tmp_path / "elsewhere").read_bytes() == b"anything"  # the target of a link is never touched


def pattern() -> PatternResult:
    angles = np.linspace(0.0, 360.0, 5)
    cut = Curve(angles, np.array([0.0, -3.0, -np.inf, np.nan, 2.5]), "angle (deg)", "gain (dBi)")
    return PatternResult("k" * 16, "ant", "monopole", 121.5, cut, cut,
                         (Figure("gain", "Gain", 2.5, "dBi", inputs=(("f", "121.5 MHz"),)),))


def test_an_entry_reads_back_equal_and_copied_under_another_key_is_refused(tmp_path):
    reader = DiskCache(tmp_path, "patterns", PatternResult)
    reader.put("a" * 16, pattern())
    back = reader.get("a" * 16)
    assert back.metrics == pattern().metrics and back.e_plane.y.tobytes() == pattern().e_plane.y.tobytes()
    assert back.e_plane.y.dtype == np.float64 and back.e_plane.y.flags.writeable
    reader.path("b" * 16).parent.mkdir(parents=True, exist_ok=True)
    shutil.copy(reader.path("a" * 16), reader.path("b" * 16))
    assert reader.get("b" * 16) is None  # the checksum covers the key
    assert not reader.path("b" * 16).exists()


@pytest.mark.parametrize("payload", [
    b'["PatternResult"' + b',["t"' * 100_000 + b"]" * 100_001,  # nested past any recursion limit
    b'{"a": 1}',  # a JSON object: no entry holds one
    b'["a","<f8",[1000000000,1000000000],""]',  # an array claiming 8 EB
    b'["a","<U8",[1],"AAAAAAAAAAA="]',  # a dtype outside the allowed ones
    b'["Trap","x"]',  # a class outside the allow-list
    b'["PatternResult","k","a","m",1.0]',  # too few fields
    b'["r",0]',  # a reference to nothing
    b'["t",' + b"1" * 5000 + b"]",  # an integer too long to convert
])
def test_malformed_payloads_with_correct_checksums_are_misses(tmp_path, payload):
    reader = DiskCache(tmp_path, "patterns", PatternResult)
    key = "c" * 16
    reader.path(key).parent.mkdir(parents=True, exist_ok=True)
    reader.path(key).write_bytes(signed(key, payload))
    assert reader.get(key) is None
    assert not reader.path(key).exists()


def test_evaluation_reads_a_forged_figure_field_as_a_miss(tmp_path, demo_fleet):
    # entries of the right type with a correct checksum, but a Figure whose value is a list inside:
    # the record check refuses them and the patterns are computed again, to the same figures
    as_of = pipeline.as_of_date(DEMO)
    first = evaluate_fleet(demo_fleet, as_of, cache_dir=tmp_path, workers=1, lazy=True)
    forged = sorted((tmp_path / "patterns").rglob("*" + store.SUFFIX))
    assert forged
    for path in forged:
        pattern = codec.loads(store.checked_payload(path.stem, path.read_bytes()), PatternResult)
        bad = pattern.metrics[0]._replace(value=[1.0])
        path.write_bytes(signed(path.stem, codec.dumps(dataclasses.replace(pattern, metrics=(bad, *pattern.metrics[1:])),
                                                       PatternResult)))
        with pytest.raises(codec.BadEntry, match="Figure.value"):
            codec.loads(store.checked_payload(path.stem, path.read_bytes()), PatternResult)
    again = evaluate_fleet(demo_fleet, as_of, cache_dir=tmp_path, workers=1, lazy=True)
    assert sorted(again.patterns) == sorted(first.patterns)
    assert all(again.patterns[key].metrics == first.patterns[key].metrics for key in first.patterns)



@functools.lru_cache(maxsize=1)
def drawn_plot() -> str:
    """A real plot as the site draws it (a pattern cut), the kind of SVG the check must accept."""
    angles = np.linspace(0.0, 360.0, 73)
    cut = Curve(angles, -3.0 * np.abs(np.sin(np.radians(angles))), "angle (deg)", "gain (dBi)")
    result = PatternResult("p" * 16, "ant", "monopole", 121.5, cut, cut, ())
    return plots.pattern_plot(result).svg


@pytest.mark.parametrize("change", [
    lambda svg: svg.replace("</svg>", "<script>x()</script></svg>"),
    lambda svg: svg.replace("</svg>", "<SCRIPT>x()</SCRIPT></svg>"),
    lambda svg: svg.replace("</svg>", '<foreignObject><div xmlns="http://www.w3.org/1999/xhtml">x</div>'
                                      "</foreignObject></svg>"),
    lambda svg: svg.replace("<svg ", '<svg onload="x()" ', 1),
    lambda svg: svg.replace("</svg>", '<a href="https://example.invalid/">x</a></svg>'),
    lambda svg: svg.replace("</svg>", '<use xlink:href="https://example.invalid/s.svg#a"/></svg>'),
    lambda svg: svg.replace("</svg>", '<image href="data:image/svg+xml;base64,AAAA"/></svg>'),
    lambda svg: svg.replace("</svg>", '<rect style="fill:url(https://example.invalid/f)"/></svg>'),
    lambda svg: svg.replace("</svg>", "<style>@import 'https://example.invalid/s.css';</style></svg>"),
    lambda svg: svg.replace("<svg ", '<!DOCTYPE svg [<!ENTITY a "b">]><svg ', 1),
    lambda svg: svg[: len(svg) // 2],  # cut short: not XML
    lambda svg: "<html><body>not a drawing</body></html>",
])
def test_only_a_plain_drawing_passes_the_plot_check(change):
    from registry.site.plot_check import plain_svg

    svg = drawn_plot()
    assert plain_svg(svg)  # matplotlib's own output, with its #id references and clip paths
    assert not plain_svg(change(svg))


def test_a_table_of_positions_reads_back_and_a_bad_row_is_refused():
    from registry.core.errors import Src

    kind = dict[tuple[str | int, ...], Src]
    index = {("installations", n, "feeder"): Src("fleet_data/aircraft/qx-tca.yaml", 10 + n, 5) for n in range(9)}
    payload = codec.dumps(index, kind)
    assert payload.startswith(b'["R","Src",')  # nine values of one flat record type: written as a table
    back = codec.loads(payload, kind)
    assert back == index and all(type(value) is Src for value in back.values())
    assert len({id(value.path) for value in back.values()}) == 1  # one path string, as the model held it
    for bad in (payload.replace(b",10,5]", b',"10",5]', 1), payload.replace(b",10,5]", b",10]", 1),
                payload.replace(b'["R","Src"', b'["R","Locator"', 1), payload[:-1] + b',["t","x"]]'):
        with pytest.raises(codec.BadEntry):
            codec.loads(bad, kind)


def test_an_aircraft_model_reads_back_with_every_position_and_its_index_written_once(demo_fleet):
    # the model cache's entry type (AircraftRead): every object of the aircraft holds its file's index
    # of positions; the entry holds the index once, and each position once however many objects hold it
    # (an object's own and its locator's fallback), and every field's line survives the round trip
    aircraft = demo_fleet.aircraft["qx-tca"]
    payload = codec.dumps(AircraftRead(aircraft, []), AircraftRead)
    assert payload.count(b'"FieldIndex"') == 1
    first = next(iter(aircraft.installations.values()))
    assert first.locator.fallback is first.src  # as the loader builds them: one position, held twice
    back = codec.loads(payload, AircraftRead).model
    assert all(item.locator.fallback is item.src and item.src == aircraft.installations[position].src
               for position, item in back.installations.items())
    index = next(iter(aircraft.installations.values())).locator.index
    assert back.locator.index is next(iter(back.installations.values())).locator.index
    assert dict(back.locator.index) == dict(index) and len(index) > 100
    for position, installation in aircraft.installations.items():
        again = back.installations[position]
        for field in ("feeder.length_m", "location.sta", "measured.vswr", "antenna"):
            assert again.where(field) == installation.where(field)
            assert again.field_path(field) == installation.field_path(field)
    assert dict(pickle.loads(pickle.dumps(back.locator.index))) == dict(index)  # handed between processes


@pytest.mark.parametrize("rows", ['[[3,"x","a"]]', '{"a": 1}', "[[3]]", "not json", '[[1,2,["a"]]]'])
def test_an_index_of_positions_with_bad_rows_falls_back_to_the_objects_own_line(rows):
    from registry.core.base import FieldIndex, Locator
    from registry.core.errors import Src

    own = Src("fleet_data/aircraft/qx-tca.yaml", 7, 3)
    payload = codec.dumps(Locator(FieldIndex("fleet_data/aircraft/qx-tca.yaml", rows), ("installations", 0), own),
                          Locator)
    back = codec.loads(payload, Locator)  # the rows are read only when a position is asked
    assert back.where("feeder.length_m") == own
    top = codec.loads(codec.dumps(Locator(FieldIndex("fleet_data/policy.yaml", rows), (), own), Locator), Locator)
    assert top.where("vswr_limit") == own  # a file's own locator (no prefix) with no root row: still an answer


def test_a_complex_number_reads_back_exactly_and_a_bad_one_is_refused():
    # complex numbers are kept as ["c", re, im] (the plate models' input impedances): floats repr exactly
    # in JSON (from memory: a float's repr reads back to the same float, Python tutorial, "Floating Point Arithmetic")
    kind = tuple[float, float, complex]
    value = (-3.25, 12.5, complex(36.51234567891234, -21.000000000000004))
    payload = codec.dumps(value, kind)
    assert codec.loads(payload, kind) == value
    for bad in (b'["t",-3.25,12.5,["c","36.5",-21.0]]', b'["t",-3.25,12.5,["c",36.5]]',
                b'["t",-3.25,12.5,["c",36.5,-21.0,1.0]]', b'["t",-3.25,12.5,36.5]'):
        with pytest.raises(codec.BadEntry):
            codec.loads(bad, kind)
