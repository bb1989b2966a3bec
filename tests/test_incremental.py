"""Rebuilding: caches and reused pages never change what is published.

The reference is a plain build with no cache and one process; every faster path must give the same
bytes (common practice for reproducible builds, no source). Hard links keep an unchanged file's inode,
which is how "not rewritten" is observed (POSIX link(2)).
"""
import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import yaml

from registry import evaluate, pipeline
from registry import incremental as diskcache

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"


@pytest.fixture(autouse=True)
def fixed_date(monkeypatch):
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1796169600")


def tree(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*"))
            if p.is_file() and p.name != ".aerialbook-site"}


def built_copy(tmp_path: Path) -> tuple[Path, Path, Path]:
    """A copy of the demo registry built once with a cache: (data, site, cache)."""
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    out, cache = tmp_path / "site", tmp_path / "cache"
    pipeline.build(data, out, cache_dir=cache, workers=1)
    return data, out, cache


def assert_same_as_plain_build(data: Path, out: Path, tmp_path: Path) -> None:
    fresh = tmp_path / "fresh"
    pipeline.build(data, fresh, cache_dir=None, workers=1)
    assert tree(out) == tree(fresh)


def accept_to_no_fault(data: Path) -> None:
    """Change the first accepted review to no-fault: no figure changes, one aircraft's pages do."""
    reviews = data / "reviews.yaml"
    text = reviews.read_text(encoding="utf-8")
    assert "state: accepted" in text
    reviews.write_text(text.replace("state: accepted", "state: no-fault", 1), encoding="utf-8")


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    out = tmp_path_factory.mktemp("ref") / "site"
    with pytest.MonkeyPatch.context() as patch:  # set for this build only, not for later tests
        patch.setenv("SOURCE_DATE_EPOCH", "1796169600")
        pipeline.build(DEMO, out, cache_dir=None, workers=1)
    return tree(out)


def test_cached_parallel_build_equals_plain_build(tmp_path, reference):
    out = tmp_path / "site"
    pipeline.build(DEMO, out, cache_dir=tmp_path / "cache", workers=2)
    assert tree(out) == reference
    again = tmp_path / "again"  # another folder: everything from the cache, nothing from the first site
    assert pipeline.build(DEMO, again, cache_dir=tmp_path / "cache", workers=2).written
    assert tree(again) == reference


def test_a_site_built_from_the_same_inputs_is_left_as_it_is(tmp_path):
    data, out, cache = built_copy(tmp_path)
    before = {path: path.stat().st_ino for path in out.rglob("*") if path.is_file()}
    assert pipeline.build(data, out, cache_dir=cache, workers=1) == (out, False)
    assert {path: path.stat().st_ino for path in out.rglob("*") if path.is_file()} == before

    # any change to the data builds again: here a review, which changes no figure
    reviews = data / "reviews.yaml"
    reviews.write_text(reviews.read_text(encoding="utf-8") + "\n# a comment\n", encoding="utf-8")
    assert pipeline.build(data, out, cache_dir=cache, workers=1).written
    # a published file that went missing is put back
    (out / "aircraft/qx-tca/VHF1.html").unlink()
    assert pipeline.build(data, out, cache_dir=cache, workers=1).written
    assert (out / "aircraft/qx-tca/VHF1.html").is_file()
    # another as-of date (it counts measurement ages) builds again
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("SOURCE_DATE_EPOCH", "1796256000")
        assert pipeline.build(data, out, cache_dir=cache, workers=1).written


def test_unchanged_pages_are_kept_and_a_changed_aircraft_is_rendered_again(tmp_path, reference):
    data, out, cache = built_copy(tmp_path)
    inode = {path: (out / path).stat().st_ino
             for path in ("aircraft/qx-tca/VHF1.html", "aircraft/qx-tcb/VHF1.html", "aircraft/qx-tcb/ELT.html")}

    pipeline.build(data, out, cache_dir=cache, workers=1)
    assert (out / "aircraft/qx-tca/VHF1.html").stat().st_ino == inode["aircraft/qx-tca/VHF1.html"]

    aircraft = data / "aircraft" / "qx-tcb.yaml"
    text = aircraft.read_text(encoding="utf-8")
    assert "length_m: 7.0" in text  # the first feeder in the file: VHF1's
    aircraft.write_text(text.replace("length_m: 7.0", "length_m: 7.3", 1), encoding="utf-8")
    pipeline.build(data, out, cache_dir=cache, workers=1)
    assert (out / "aircraft/qx-tca/VHF1.html").stat().st_ino == inode["aircraft/qx-tca/VHF1.html"]
    assert (out / "aircraft/qx-tcb/VHF1.html").stat().st_ino != inode["aircraft/qx-tcb/VHF1.html"]
    # rendered again with its aircraft, but byte-identical: linked, not rewritten
    assert (out / "aircraft/qx-tcb/ELT.html").stat().st_ino == inode["aircraft/qx-tcb/ELT.html"]

    assert_same_as_plain_build(data, out, tmp_path)


def test_a_kept_aircraft_s_report_carries_the_new_build_s_date(tmp_path, monkeypatch):
    """A report's title block states the build it came from on every printed page (common practice for a
    controlled document, no source). An aircraft whose pages are kept gets its report from its kept text
    with this build's date in it; the site is what a plain build publishes."""
    monkeypatch.delenv("SOURCE_DATE_EPOCH")  # the build date is then the newest data file's time
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    for path in data.rglob("*"):
        os.utime(path, (1_790_000_000, 1_790_000_000))
    out, cache = tmp_path / "site", tmp_path / "cache"
    pipeline.build(data, out, cache_dir=cache, workers=1)
    page = out / "aircraft/qx-tca/VHF1.html"
    inode = page.stat().st_ino
    assert "<dt>Build date</dt><dd>2026-09-21 14:13:20 UTC</dd>" in (out / "reports/qx-tca.html").read_text()

    reviews = data / "reviews.yaml"  # a comment: no page shows it, but it is a newer file
    reviews.write_text(reviews.read_text(encoding="utf-8") + "\n# a comment\n", encoding="utf-8")
    os.utime(reviews, (1_790_086_400, 1_790_086_400))
    pipeline.build(data, out, cache_dir=cache, workers=1)
    assert page.stat().st_ino == inode  # kept
    report = (out / "reports/qx-tca.html").read_text()
    assert "<dt>Build date</dt><dd>2026-09-22 14:13:20 UTC</dd>" in report
    assert "\x00" not in report
    assert_same_as_plain_build(data, out, tmp_path)


def test_a_comment_holding_a_stamp_placeholder_is_refused_and_the_site_kept(tmp_path):
    """A review comment holding the placeholder a kept report's build date goes in (a hostile colleague's text,
    its NULs written as YAML escapes; from memory, no source): the loader refuses the control character with its
    line, as it refuses one written raw, and the published site stays as it was."""
    from registry.core.errors import DataError
    from registry.site.pages_print import STAMP
    data, out, cache = built_copy(tmp_path)
    before = {path: path.read_bytes() for path in out.rglob("*.html")}
    reviews = data / "reviews.yaml"
    text = reviews.read_text(encoding="utf-8")
    hostile = "see " + STAMP["built"].replace("\x00", "\\u0000") + " here"
    text = re.sub(r"    comment: >-\n(      .*\n)+", lambda _: f'    comment: "{hostile}"\n', text, count=1)
    reviews.write_text(text, encoding="utf-8")
    line = next(n for n, row in enumerate(text.splitlines(), 1) if hostile in row)
    with pytest.raises(DataError) as refused:
        pipeline.build(data, out, cache_dir=cache, workers=1)
    assert f"reviews.yaml:{line}:" in str(refused.value.problems[0])
    assert "found the control character U+0000 (written as an escape)" in str(refused.value.problems[0])
    assert {path: path.read_bytes() for path in out.rglob("*.html")} == before


def test_a_report_text_holding_a_placeholder_other_than_once_is_not_stamped():
    """The guard behind kept reports (defence in depth now that registry text cannot hold a NUL): a report
    whose text holds a placeholder twice, or not at all, is not stamped (`stamped` gives None) and is rendered
    with the values instead (from memory, no source)."""
    from registry.site.pages_print import STAMP, stamped
    once = "".join(STAMP.values())
    for text in (once + STAMP["built"], once.replace(STAMP["as_of"], "")):
        assert stamped(None, text) is None  # decided before the build's values are asked for


def test_removed_aircraft_pages_disappear(tmp_path):
    data, out, cache = built_copy(tmp_path)
    assert (out / "aircraft/qx-tce.html").exists()
    (data / "aircraft" / "qx-tce.yaml").unlink()
    mods = data / "modifications.yaml"  # an aircraft that leaves the register leaves the modifications' effectivity
    kept = yaml.safe_load(mods.read_text(encoding="utf-8"))
    for mod in kept["modifications"]:
        mod["effectivity"] = [entry for entry in mod["effectivity"] if entry.get("serial") != "4460"]  # QX-TCE
    kept["modifications"] = [mod for mod in kept["modifications"] if mod["effectivity"]]
    mods.write_text(yaml.safe_dump(kept, sort_keys=False), encoding="utf-8")
    reviews = data / "reviews.yaml"
    reviews.write_text(reviews.read_text(encoding="utf-8").split("  - discrepancy: qx-tce/")[0]
                       + "  - discrepancy: qx-tjb/" + reviews.read_text(encoding="utf-8").split(
                           "  - discrepancy: qx-tjb/")[1], encoding="utf-8")
    pipeline.build(data, out, cache_dir=cache, workers=1)
    assert not (out / "aircraft/qx-tce.html").exists()
    assert not (out / "aircraft/qx-tce").exists()


def test_damaged_cache_entries_are_misses(tmp_path, reference):
    out, cache = tmp_path / "site", tmp_path / "cache"
    pipeline.build(DEMO, out, cache_dir=cache, workers=1)
    for entry in cache.rglob("*"):
        if entry.is_file():
            entry.write_bytes(b"not a pickle")
    pipeline.build(DEMO, out, cache_dir=cache, workers=1)
    assert tree(out) == reference


def test_cache_keys_depend_on_every_part():
    assert diskcache.key_of("a", "bc") != diskcache.key_of("ab", "c")
    assert diskcache.key_of("a", b"b") == diskcache.key_of("a", "b")


def test_a_changed_review_renders_its_aircraft_again_from_cached_figures(tmp_path):
    # A review changes no figure: the aircraft's figures come from the cache (summary first, full figures
    # read back only for the pages rendered again), and the site equals a plain build.
    data, out, cache = built_copy(tmp_path)
    accept_to_no_fault(data)
    assert pipeline.build(data, out, cache_dir=cache, workers=1).written
    assert_same_as_plain_build(data, out, tmp_path)


def test_full_figures_gone_from_the_cache_are_computed_again(tmp_path):
    data, out, cache = built_copy(tmp_path)
    # summaries kept, full figures gone (a build that renders as it computes keeps none to begin with)
    shutil.rmtree(diskcache.version_folder(cache) / "aircraft", ignore_errors=True)
    aircraft = data / "aircraft" / "qx-tcb.yaml"
    aircraft.write_text(aircraft.read_text(encoding="utf-8") + "\n# touched\n", encoding="utf-8")
    accept_to_no_fault(data)
    pipeline.build(data, out, cache_dir=cache, workers=1)
    assert_same_as_plain_build(data, out, tmp_path)


def test_resonant_lengths_and_impedance_sweeps_are_read_back_from_the_cache_folder(tmp_path, monkeypatch):
    """`incremental.kept`: a later process reads the answer from the cache folder instead of solving again
    (the moment-method solver is made to fail here, so an answer can only come from the folder), and it
    reads back equal, the slopes as complex numbers (common practice for a content-keyed cache, no source)."""
    from registry.compute import antenna, element
    from registry.incremental import keep_in
    from registry.physics import impedance, wave
    fleet = pipeline.load(DEMO)
    model = next(m for m in fleet.antennas.values() if antenna.physics_geometry(m)[0] in {"dipole", "monopole"})
    keep_in(tmp_path)
    try:
        for memo in (element._straight_rule, antenna._impedance):
            memo.cache_clear()
        length = element._straight_rule(118e6, 0.02, "half_wave")  # L/D outside the fit: moment method
        sweep = antenna.impedance_sweep(model, (110.0, 118.0, 126.0), 118.0, (118.0,))
        assert length.method == "MoM" and sweep.reason == "" and isinstance(sweep.slopes[0][1], complex)
        for memo in (element._straight_rule, antenna._impedance):
            memo.cache_clear()  # as a fresh process

        def refuse(*_args, **_kwargs):
            raise AssertionError("solved again")
        monkeypatch.setattr(wave, "resonant_length_rule", refuse)
        monkeypatch.setattr(impedance, "solve_with_resonance", refuse)
        assert element._straight_rule(118e6, 0.02, "half_wave") == length
        again = antenna.impedance_sweep(model, (110.0, 118.0, 126.0), 118.0, (118.0,))
        assert np.array_equal(again.z, sweep.z) and again.slopes == sweep.slopes
        assert (again.resonance_mhz, again.r_design, again.segments) == (sweep.resonance_mhz, sweep.r_design,
                                                                        sweep.segments)
    finally:
        keep_in(None)
        for memo in (element._straight_rule, antenna._impedance):
            memo.cache_clear()


def test_plate_models_and_pattern_grids_are_read_back_from_the_cache_folder(tmp_path, monkeypatch):
    """The plate models' answers (monopole on a disc, on a square plate, on infinite ground) and the pattern
    grid a pair's gain is read from are kept like the resonant lengths: a later process reads them back equal
    with the solvers made to fail (common practice for a content-keyed cache, no source)."""
    from registry.compute import antenna, element
    from registry.incremental import keep_in
    from registry.physics import finite_ground, impedance, patterns, square_plate
    fleet = pipeline.load(DEMO)
    model = next(m for m in fleet.antennas.values() if antenna.physics_geometry(m)[0] == "monopole")
    memos = (element._on_disc, element._on_square, element._on_infinite_ground, antenna._raw_grid)
    freq_hz, lam = 118e6, 299792458.0 / 118e6
    keep_in(tmp_path)
    try:
        for memo in memos:
            memo.cache_clear()
        answers = (element._on_disc(lam / 4, lam / 2, 0.003, freq_hz), element._on_square(lam / 4, lam, 0.003, freq_hz),
                   element._on_infinite_ground(*antenna.physics_geometry(model), freq_hz))
        grid = antenna._raw_grid(*antenna.physics_geometry(model), 118.0)
        assert isinstance(answers[0][2], complex) and isinstance(answers[2], complex)
        for memo in memos:
            memo.cache_clear()  # as a fresh process

        def refuse(*_args, **_kwargs):
            raise AssertionError("solved again")
        for module, name in ((finite_ground, "monopole_on_disc"), (square_plate, "monopole_on_square"),
                             (impedance, "solve_wire_antenna"), (patterns, "pattern_for_kind")):
            monkeypatch.setattr(module, name, refuse)
        assert (element._on_disc(lam / 4, lam / 2, 0.003, freq_hz), element._on_square(lam / 4, lam, 0.003, freq_hz),
                element._on_infinite_ground(*antenna.physics_geometry(model), freq_hz)) == answers
        assert all(np.array_equal(a, b) for a, b in zip(antenna._raw_grid(*antenna.physics_geometry(model), 118.0), grid))
    finally:
        keep_in(None)
        for memo in memos:
            memo.cache_clear()


def test_cache_entries_of_earlier_code_are_removed(tmp_path):
    # entries made by other code can never be read (their keys hold that code), so a build removes them
    cache = tmp_path / "cache"
    (cache / "0123456789abcdef" / "aircraft").mkdir(parents=True)  # another version's folder
    (cache / "plots").mkdir()  # the flat layout of an earlier release
    (cache / "notes").mkdir()  # not ours: left alone
    pipeline.build(DEMO, tmp_path / "site", cache_dir=cache, workers=1)
    assert sorted(entry.name for entry in cache.iterdir()) == sorted(["notes", diskcache.version_folder(cache).name])
    assert (diskcache.version_folder(cache) / "summaries").is_dir()


def test_check_reads_the_findings_from_the_cache_and_says_the_same(tmp_path, capsys, monkeypatch):
    # a cold check fills the cache, a warm one reads each aircraft's findings from it: both say what a
    # check that keeps nothing says, with the same exit code (the gate: common practice, no source)
    from registry import cli

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1764806400")
    said = []
    for extra in (["--no-cache"], ["--cache", str(tmp_path / "c")], ["--cache", str(tmp_path / "c")]):
        code = cli.main(["check", str(DEMO), "--format", "json", *extra])
        said.append((code, capsys.readouterr().out))
    assert said[0] == said[1] == said[2]
    assert said[0][0] == 1 and json.loads(said[0][1])["discrepancies"]
    assert any((diskcache.version_folder(tmp_path / "c") / "summaries").rglob("*.entry"))


def test_a_warm_check_reads_each_aircraft_s_findings_entry_and_falls_back_to_its_summary(tmp_path, capsys, monkeypatch):
    # after a build, check reads `findings/` (findings and pattern keys only), not the whole summaries: with
    # the summaries gone it still computes nothing; with the findings entries gone or forged it reads the
    # summaries; every way it says what a check that keeps nothing says (internal behaviour, no source)
    from registry import cli
    from registry.incremental import codec, store

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1764806400")
    cache = tmp_path / "c"
    pipeline.build(DEMO, tmp_path / "site", cache_dir=cache, workers=1)
    folder = diskcache.version_folder(cache)
    findings = sorted((folder / "findings").rglob("*.entry"))
    assert findings and {path.name for path in findings} == {path.name for path in (folder / "summaries").rglob("*.entry")}

    def check(cache_args: list[str]) -> tuple[int, str]:
        code = cli.main(["check", str(DEMO), "--format", "json", *cache_args])
        return code, capsys.readouterr().out

    plain = check(["--no-cache"])
    computed: list[str] = []
    real = pipeline.run

    def counting(*args, **kwargs):
        outcome = real(*args, **kwargs)
        computed.extend(set(outcome.fleet.aircraft) - outcome.results.unloaded)
        return outcome

    monkeypatch.setattr(pipeline, "run", counting)
    summaries = folder / "summaries"
    kept = tmp_path / "summaries"
    summaries.rename(kept)
    assert check(["--cache", str(cache)]) == plain and computed == []
    kept.rename(summaries)
    payload = store.checked_payload(findings[1].stem, findings[1].read_bytes())
    wrong = codec.loads(payload, evaluate.AircraftSummary)._replace(pattern_of={})
    forged = codec.dumps(wrong, evaluate.AircraftSummary).replace(b'["d"]', b'"not a mapping"', 1)
    findings[1].write_bytes(store.MAGIC + store.checksum(findings[1].stem, forged) + b"\n" + forged)
    findings[0].unlink()
    assert check(["--cache", str(cache)]) == plain and computed == []


WARMED: dict[int, int] = {}
"""What a task left in its process's memory, by kind (for the warm-up test below)."""


def _note_and_report(item: int) -> tuple[int, int, tuple[int, ...]]:
    import os
    WARMED.setdefault(item % 3, item)
    return item, os.getpid(), tuple(sorted(WARMED))


def test_workers_start_with_what_the_first_item_of_each_kind_left_in_the_parent():
    """ordered_map(warm_by=...): the first item of each kind runs in this process before any worker is
    forked, results keep their order, and every worker sees what those items cached (internal behaviour,
    no external source)."""
    import os
    from registry.incremental.parallel import ordered_map
    WARMED.clear()
    try:
        out = list(ordered_map(_note_and_report, range(40), 2, warm_by=lambda item: item % 3))
    finally:
        WARMED.clear()
    assert [item for item, _, _ in out] == list(range(40))
    assert {item for item, pid, _ in out if pid == os.getpid()} == {0, 1, 2}
    assert all(pid != os.getpid() and kinds == (0, 1, 2) for item, pid, kinds in out[3:])


def test_no_worker_is_started_when_every_item_was_the_first_of_its_kind():
    """ordered_map(warm_by=...) with as many kinds as items: all run here, in order, and no pool is made
    (internal behaviour, no external source)."""
    import multiprocessing
    import os
    from registry.incremental import parallel
    WARMED.clear()
    made = []
    real = multiprocessing.get_context

    def spying(method=None):
        made.append(method)
        return real(method)

    multiprocessing.get_context = spying
    try:
        out = list(parallel.ordered_map(_note_and_report, range(12), 2, warm_by=lambda item: item))
    finally:
        multiprocessing.get_context = real
        WARMED.clear()
    assert [item for item, _, _ in out] == list(range(12))
    assert all(pid == os.getpid() for _, pid, _ in out)
    assert made == []


class _Cyclic:
    """An object kept alive only by a reference cycle; LIVE counts those not yet freed in this process."""

    LIVE = 0

    def __init__(self):
        _Cyclic.LIVE += 1
        self.me = self

    def __del__(self):
        _Cyclic.LIVE -= 1


def _leave_a_cycle(item: int) -> int:
    _Cyclic()
    return _Cyclic.LIVE


def test_workers_free_reference_cycles_while_the_collector_is_paused():
    """A build pauses the cycle collector (collector_paused); a worker still frees what its items leave in
    cycles every COLLECT_EVERY items, so its memory does not grow with the items it does (internal
    behaviour, no external source)."""
    import gc
    from registry.incremental import parallel
    enabled = gc.isenabled()
    gc.disable()
    try:
        live = list(parallel.ordered_map(_leave_a_cycle, range(300), 2))
    finally:
        if enabled:
            gc.enable()
    assert max(live) <= parallel.COLLECT_EVERY
    assert max(live) > 1


@pytest.mark.skipif(not Path("/proc/self/task").is_dir(), reason="counts threads in /proc (Linux)")
def test_a_process_of_the_package_runs_one_blas_thread_unless_its_caller_sets_the_number():
    # The build runs one process per core; OpenBLAS would add threads of its own in each (spinning while
    # they wait for work). Common practice, no source: OPENBLAS_NUM_THREADS is read when numpy loads.
    program = ("import os, registry, numpy, scipy.linalg; a = numpy.ones((600, 600)); a @ a; "
               "scipy.linalg.solve(a + 600 * numpy.eye(600), a); "
               "print(len(os.listdir('/proc/self/task')), os.environ['OPENBLAS_NUM_THREADS'])")
    env = {key: value for key, value in os.environ.items() if key != "OPENBLAS_NUM_THREADS"}
    ours = subprocess.run([sys.executable, "-c", program], env=env, capture_output=True, text=True, check=True)
    assert ours.stdout.split() == ["1", "1"]
    theirs = subprocess.run([sys.executable, "-c", program], env={**env, "OPENBLAS_NUM_THREADS": "2"},
                            capture_output=True, text=True, check=True)
    assert theirs.stdout.split()[1] == "2"


def test_a_check_that_keeps_nothing_makes_no_record_shares_and_a_cold_check_keeps_whole_summaries(tmp_path, monkeypatch):
    # what `check` is given: findings and pattern keys; with nothing kept, no aircraft's record share is
    # made (it went nowhere), while a check that fills a cache keeps whole summaries, so that a build
    # afterwards reuses them and publishes what a plain build does (internal behaviour, no source)
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1764806400")
    made: list[str] = []
    real = evaluate.record.aircraft_record

    def counting(aircraft, *args, **kwargs):
        made.append(aircraft.id)
        return real(aircraft, *args, **kwargs)

    monkeypatch.setattr(evaluate.record, "aircraft_record", counting)
    plain = pipeline.run(DEMO, workers=1, lazy=True)
    assert made == [] and plain.discrepancies
    assert all(summary.record is None for summary in plain.results.summaries.values())
    cache = tmp_path / "c"
    kept = pipeline.run(DEMO, cache_dir=cache, workers=1, lazy=True)
    assert sorted(made) == sorted(plain.fleet.aircraft)
    assert [d.id for d in kept.discrepancies] == [d.id for d in plain.discrepancies]
    pipeline.build(DEMO, tmp_path / "site", cache_dir=cache, workers=1)
    assert_same_as_plain_build(DEMO, tmp_path / "site", tmp_path)


def test_cache_entries_read_back_equal_whichever_way_their_dataclasses_are_made(tmp_path):
    # a dataclass whose __init__ dataclasses wrote is filled field by field without it; one with a
    # __post_init__ still goes through __init__ (internal behaviour, no source)
    from dataclasses import dataclass

    from registry.incremental import codec

    made = []

    @dataclass(frozen=True, kw_only=True, slots=True)
    class Plain:
        name: str
        size: float

    @dataclass(frozen=True)
    class Checked:
        name: str

        def __post_init__(self):
            made.append(self.name)

    fleet = pipeline.load(DEMO)
    aircraft = list(fleet.aircraft.values())
    assert codec.loads(codec.dumps(aircraft, list[type(aircraft[0])]), list[type(aircraft[0])]) == aircraft
    assert codec.loads(codec.dumps(Plain(name="a", size=1.5), Plain), Plain) == Plain(name="a", size=1.5)
    assert codec.loads(codec.dumps(Checked("b"), Checked), Checked) == Checked("b") and made == ["b", "b", "b"]
