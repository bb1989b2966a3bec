#!/usr/bin/env python3
"""Benchmark of the whole build on synthetic fleets: prints a table, writes JSON (not a test; nothing asserted).

    python bench/bench_build.py [--sizes 10,100,1000] [--json bench/results/build.json] [--stage build|check]

At each size (number of aircraft) a registry is generated with bench/synth_fleet.py, then
`python build.py build DATA -o OUT` (or `check DATA`) is run in a child process, each measurement on its own:

  cold        fresh output folder, every cache folder deleted first
  no change   the same command again, nothing changed
  one changed one aircraft's feeder length edited in the generated data, then the same command again

and, for the build stage, the other two jobs on the same fleet:

  check cold  `check DATA --no-cache`: load, compute and check everything, keep nothing
  check warm  `check DATA` after the builds: the findings of unchanged aircraft from the build's cache
  diff same   `diff A B` of two identical build records (the cold build's record and a copy)
  diff one    `diff A OUT`: the cold build's record against the build with one aircraft changed

with the child's peak memory (ru_maxrss of that child, from os.wait4, and the peak summed RSS of the
child's whole process tree, sampled), the site's size (bytes and files) and the cold cost per
installation. At the smallest size it also times a naive cold build with AERIALBOOK_NAIVE=1 (no content
cache, every plot drawn per installation); if the pipeline does not honour that variable yet, the figure
is the ordinary code path and the output says so. See bench/README.md for the columns.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import asdict, dataclass, field
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))

import synth_fleet  # bench/ is not a package: imported from its folder

NAIVE_VARIABLE = "AERIALBOOK_NAIVE"
CACHE_VARIABLE = "AERIALBOOK_CACHE_DIR"
PAGE = os.sysconf("SC_PAGE_SIZE")


@dataclass
class Run:
    """One child process: the command's wall time, exit code and memory."""

    seconds: float | None
    exit_code: int | None
    cpu_seconds: float | None         # user + system time of the child and its waited-for descendants
    max_rss_mb: float | None          # largest single process (child or a waited-for descendant)
    tree_peak_mb: float | None        # sampled peak of the child's whole process tree, RSS summed
    tree_pss_mb: float | None = None  # the same, PSS summed (shared pages counted once in all)
    timed_out: bool = False
    log_tail: str = ""

    @property
    def ok(self) -> bool:
        return not self.timed_out and self.exit_code is not None


@dataclass
class SizeResult:
    aircraft: int
    installations: int
    stage: str
    generate_s: float
    cold: Run | None = None
    no_change: Run | None = None
    one_changed: Run | None = None
    naive: Run | None = None
    check_cold: Run | None = None
    check_warm: Run | None = None
    diff_same: Run | None = None
    diff_one: Run | None = None
    site_bytes: int | None = None
    site_files: int | None = None
    ms_per_installation: float | None = None
    caches_removed: list[str] = field(default_factory=list)
    changed: str = ""
    error: str = ""


# ---- running one measured child --------------------------------------------------------------------------


def tree_memory_bytes(pid: int) -> tuple[int, int]:
    """RSS and PSS of `pid` and all its descendants, summed (Linux /proc; 0 where unreadable).

    Forked workers share their parent's pages until they write to them: summed RSS counts a shared page
    once per process, summed PSS (proportional set size) shares it out, so it is what the tree really
    holds in memory."""
    rss, pss, stack, seen = 0, 0, [pid], set()
    while stack:
        current = stack.pop()
        if current in seen:
            continue
        seen.add(current)
        try:
            with open(f"/proc/{current}/statm") as statm:
                rss += int(statm.read().split()[1]) * PAGE
            try:
                with open(f"/proc/{current}/smaps_rollup") as rollup:
                    pss += next(int(line.split()[1]) * 1024 for line in rollup if line.startswith("Pss:"))
            except (OSError, StopIteration):
                pass
            for task in os.listdir(f"/proc/{current}/task"):
                with open(f"/proc/{current}/task/{task}/children") as children:
                    stack.extend(int(child) for child in children.read().split())
        except (OSError, ValueError):
            continue
    return rss, pss


def run_measured(command: list[str], env: dict[str, str], timeout: float | None, log: Path) -> Run:
    """Run `command` in its own session; wall time, exit code, ru_maxrss of this child, sampled tree peak."""
    log.parent.mkdir(parents=True, exist_ok=True)
    with open(log, "wb") as out:
        start = time.perf_counter()
        child = subprocess.Popen(command, cwd=ROOT, env=env, stdout=out, stderr=subprocess.STDOUT,
                                 start_new_session=True)
    peak, peak_pss = [0], [0]
    timed_out = threading.Event()
    done = threading.Event()

    def watch() -> None:
        while not done.wait(0.1):
            rss, pss = tree_memory_bytes(child.pid)
            peak[0] = max(peak[0], rss)
            peak_pss[0] = max(peak_pss[0], pss)
            if timeout is not None and time.perf_counter() - start > timeout:
                timed_out.set()
                try:
                    os.killpg(child.pid, signal.SIGKILL)  # the session this script started for the child
                except ProcessLookupError:
                    pass
                return

    watcher = threading.Thread(target=watch, daemon=True)
    watcher.start()
    _, status, usage = os.wait4(child.pid, 0)
    seconds = time.perf_counter() - start
    done.set()
    watcher.join()
    child.returncode = os.waitstatus_to_exitcode(status)
    tail = "\n".join(log.read_text(encoding="utf-8", errors="replace").splitlines()[-15:])
    if timed_out.is_set():  # the memory seen until the kill is still worth knowing
        return Run(None, None, None, None, round(peak[0] / 2**20, 1) if peak[0] else None,
                   round(peak_pss[0] / 2**20, 1) if peak_pss[0] else None, timed_out=True, log_tail=tail)
    return Run(round(seconds, 3), child.returncode, round(usage.ru_utime + usage.ru_stime, 3),
               round(usage.ru_maxrss / 1024, 1), round(peak[0] / 2**20, 1) if peak[0] else None,
               round(peak_pss[0] / 2**20, 1) if peak_pss[0] else None, log_tail=tail)


# ---- the steps -------------------------------------------------------------------------------------------


def stage_command(stage: str, data: Path, out: Path) -> list[str]:
    if stage == "build":
        return [sys.executable, str(ROOT / "build.py"), "build", str(data), "-o", str(out)]
    return [sys.executable, str(ROOT / "build.py"), "check", str(data)]


def accepted(stage: str, run: Run) -> bool:
    """build: exit 0; check: 0, or 1 (open unserviceable discrepancies: the planted faults); diff: 0 (the
    same) for "diff same", 1 (they differ) for "diff one"."""
    expected = {"build": (0,), "check": (0, 1), "diff same": (0,), "diff one": (1,)}[stage]
    return run.ok and run.exit_code in expected


def clear_caches(folders: list[Path]) -> list[str]:
    removed = []
    for folder in folders:
        if folder.exists():
            shutil.rmtree(folder)
            removed.append(str(folder))
    return removed


def site_size(out: Path) -> tuple[int, int]:
    files = [path for path in out.rglob("*") if path.is_file()]
    return sum(path.stat().st_size for path in files), len(files)


def change_one_aircraft(data: Path) -> str:
    """Lengthen the first feeder of the middle aircraft by 0.3 m, editing its YAML text in place."""
    files = sorted((data / "aircraft").glob("*.yaml"))
    target = files[len(files) // 2]
    text = target.read_text(encoding="utf-8")
    match = re.search(r"length_m: ([0-9.]+)", text)
    new = f"{float(match.group(1)) + 0.3:.1f}"
    target.write_text(text[:match.start(1)] + new + text[match.end(1):], encoding="utf-8")
    return f"{target.name}: feeder length {match.group(1)} -> {new} m"


def naive_honoured() -> bool:
    """Whether any pipeline module reads AERIALBOOK_NAIVE (a plain text search of registry/)."""
    return any(NAIVE_VARIABLE in path.read_text(encoding="utf-8", errors="replace")
               for path in (ROOT / "registry").rglob("*.py"))


def measure_size(n: int, args, work: Path, env: dict[str, str], caches: list[Path], with_naive: bool) -> SizeResult:
    data, out, logs = work / f"fleet-{n}", work / f"site-{n}", work / "logs"
    started = time.perf_counter()
    made = synth_fleet.generate(n, data, seed=args.seed, installations=args.installations)
    result = SizeResult(n, made.installations, args.stage, round(time.perf_counter() - started, 2))
    command = stage_command(args.stage, data, out)

    def step(name: str, extra_env: dict[str, str] | None = None, other: list[str] | None = None,
             stage: str = args.stage) -> Run | None:
        print(f"  {n} aircraft: {name} ...", end="", flush=True)
        run = run_measured(other or command, {**env, **(extra_env or {})}, args.timeout,
                           logs / f"{n}-{name.replace(' ', '-')}.log")
        verdict = ("timed out" if run.timed_out else f"{run.seconds:.2f} s" if accepted(stage, run)
                   else f"failed (exit {run.exit_code})")
        print(f" {verdict}", flush=True)
        if not accepted(stage, run):
            result.error = (f"{name}: " + (f"timed out after {args.timeout} s (tree peak so far "
                                            f"{fmt(run.tree_peak_mb, '.0f')} MB)" if run.timed_out
                                            else f"exit {run.exit_code}\n{run.log_tail}"))
            return None
        return run

    shutil.rmtree(out, ignore_errors=True)
    result.caches_removed = clear_caches(caches + [data / ".cache", out / ".cache"])
    result.cold = step("cold")
    if result.cold is None:
        return result
    result.ms_per_installation = round(1000 * result.cold.seconds / made.installations, 2)
    if args.stage == "build":
        result.site_bytes, result.site_files = site_size(out)
        cold_record, same_record = work / f"record-{n}-cold.json", work / f"record-{n}-copy.json"
        shutil.copyfile(out / "record.json", cold_record)
        shutil.copyfile(cold_record, same_record)
    result.no_change = step("no-change")
    if result.no_change is None:
        return result
    result.changed = change_one_aircraft(data)
    result.one_changed = step("one-changed")
    if result.one_changed is None:
        return result
    if args.stage == "build":
        tool = [sys.executable, str(ROOT / "build.py")]
        result.check_cold = step("check cold", other=tool + ["check", str(data), "--no-cache"], stage="check")
        result.check_warm = step("check warm", other=tool + ["check", str(data)], stage="check")
        result.diff_same = step("diff same", other=tool + ["diff", str(cold_record), str(same_record)],
                                stage="diff same")
        result.diff_one = step("diff one", other=tool + ["diff", str(cold_record), str(out)], stage="diff one")
    if with_naive:
        shutil.rmtree(out, ignore_errors=True)
        clear_caches(caches + [data / ".cache"])
        result.naive = step("naive", {NAIVE_VARIABLE: "1"})
    return result


# ---- output ----------------------------------------------------------------------------------------------


def fmt(value, spec: str = ".2f") -> str:
    return "-" if value is None else format(value, spec)


def table(results: list[SizeResult], stage: str) -> str:
    head = (f"{'aircraft':>8} {'install.':>8} {'cold s':>8} {'cold cpu':>8} {'nochg s':>8} {'1chg s':>8} "
            f"{'maxrss MB':>9} "
            f"{'tree MB':>8} {'tree PSS':>8} {'site MB':>8} {'files':>7} {'ms/inst':>8}")
    lines = [f"stage: {stage}", head, "-" * len(head)]
    for r in results:
        runs = [run for run in (r.cold, r.no_change, r.one_changed) if run]
        rss = max((run.max_rss_mb for run in runs if run.max_rss_mb), default=None)
        tree = max((run.tree_peak_mb for run in runs if run.tree_peak_mb), default=None)
        pss = max((run.tree_pss_mb for run in runs if run.tree_pss_mb), default=None)
        lines.append(
            f"{r.aircraft:>8} {r.installations:>8} {fmt(r.cold and r.cold.seconds):>8} "
            f"{fmt(r.cold and r.cold.cpu_seconds):>8} "
            f"{fmt(r.no_change and r.no_change.seconds):>8} {fmt(r.one_changed and r.one_changed.seconds):>8} "
            f"{fmt(rss, '.0f'):>9} {fmt(tree, '.0f'):>8} {fmt(pss, '.0f'):>8} "
            f"{fmt(r.site_bytes and r.site_bytes / 1e6, '.1f'):>8} {fmt(r.site_files, 'd'):>7} "
            f"{fmt(r.ms_per_installation, '.1f'):>8}")
        if r.error:
            lines.append(f"{'':>8} stopped: {r.error.splitlines()[0]}")
    if any(r.check_cold or r.diff_same for r in results):
        head = (f"{'aircraft':>8} {'check cold s':>12} {'check warm s':>12} {'diff same s':>11} {'diff one s':>10} "
                f"{'max MB':>7}")
        lines += ["", "check and diff", head, "-" * len(head)]
        for r in results:
            runs = [r.check_cold, r.check_warm, r.diff_same, r.diff_one]
            rss = max((run.max_rss_mb for run in runs if run and run.max_rss_mb), default=None)
            lines.append(f"{r.aircraft:>8} " + " ".join(
                f"{fmt(run and run.seconds):>{width}}" for run, width in zip(runs, (12, 12, 11, 10)))
                + f" {fmt(rss, '.0f'):>7}")
    return "\n".join(lines)


def machine() -> dict:
    try:
        commit = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT, capture_output=True,
                                text=True, timeout=20, check=False).stdout.strip()
        dirty = bool(subprocess.run(["git", "status", "--porcelain", "--", "registry", "build.py"], cwd=ROOT,
                                    capture_output=True, text=True, timeout=20, check=False).stdout.strip())
    except (OSError, subprocess.SubprocessError):
        commit, dirty = "", False
    return {"cpus": os.cpu_count(), "python": platform.python_version(), "platform": platform.platform(),
            "commit": commit, "pipeline_modified_in_working_tree": dirty}


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--sizes", default="10,100,1000", help="aircraft counts, comma-separated (default 10,100,1000)")
    parser.add_argument("--json", type=Path, default=HERE / "results" / "build.json", help="where to write the JSON")
    parser.add_argument("--stage", choices=("build", "check"), default="build",
                        help="what to time: the whole site build, or load + compute + check (default build)")
    parser.add_argument("--installations", type=int, default=synth_fleet.DEFAULT_INSTALLATIONS,
                        help="installations per aircraft (default %(default)s)")
    parser.add_argument("--seed", type=int, default=synth_fleet.DEFAULT_SEED, help="generator seed")
    parser.add_argument("--timeout", type=float, default=1800.0,
                        help="seconds allowed per run before it is killed and the size abandoned (default 1800)")
    parser.add_argument("--workdir", type=Path, help="keep the generated fleets, sites and logs here "
                                                     "(default: a temporary folder, removed afterwards)")
    parser.add_argument("--cache-dir", type=Path, action="append", default=[],
                        help="another cache folder to delete before each cold run; repeatable")
    parser.add_argument("--no-naive", action="store_true", help="skip the naive run at the smallest size")
    args = parser.parse_args(argv)
    sizes = sorted({int(size) for size in args.sizes.split(",") if size.strip()})
    if not sizes or sizes[0] < 1:
        parser.error("--sizes needs positive aircraft counts")

    temporary = args.workdir is None
    work = Path(tempfile.mkdtemp(prefix="aerialbook-bench-")) if temporary else args.workdir.resolve()
    work.mkdir(parents=True, exist_ok=True)
    own_cache = work / "cache"
    caches = [own_cache, ROOT / ".cache", *[path.resolve() for path in args.cache_dir]]
    env = {**os.environ, "SOURCE_DATE_EPOCH": str(synth_fleet.AS_OF_EPOCH), CACHE_VARIABLE: str(own_cache)}
    env.pop(NAIVE_VARIABLE, None)
    honoured = naive_honoured()
    print(f"aerialbook build benchmark: stage {args.stage}, sizes {sizes}, {args.installations} installations "
          f"per aircraft, seed {args.seed}, {os.cpu_count()} CPUs; work folder {work}")
    results = []
    try:
        for n in sizes:
            results.append(measure_size(n, args, work, env, caches, with_naive=(n == sizes[0] and not args.no_naive)))
    finally:
        if temporary:
            shutil.rmtree(work, ignore_errors=True)

    print()
    print(table(results, args.stage))
    notes = []
    first = results[0]
    if first.naive is not None:
        speedup = first.naive.seconds / first.cold.seconds if first.cold.seconds else None
        notes.append(f"naive ({NAIVE_VARIABLE}=1) at {first.aircraft} aircraft: {first.naive.seconds:.2f} s "
                     f"cold against {first.cold.seconds:.2f} s" + (f" (x{speedup:.2f})" if speedup else ""))
        if not honoured:
            notes.append(f"the pipeline does not read {NAIVE_VARIABLE} yet: the naive figure is the same code path "
                         "as the cold build")
    for r in results:
        if r.changed:
            notes.append(f"{r.aircraft} aircraft, one changed: {r.changed}")
        if r.caches_removed:
            notes.append(f"{r.aircraft} aircraft, cache folders removed before cold: {', '.join(r.caches_removed)}")
    for note in notes:
        print(f"note: {note}")

    report = {"stage": args.stage, "seed": args.seed, "installations_per_aircraft": args.installations,
              "as_of": synth_fleet.AS_OF.isoformat(), "machine": machine(), "naive_variable": NAIVE_VARIABLE,
              "naive_honoured": honoured, "notes": notes,
              "results": [{**asdict(r), "total_seconds": None} for r in results]}
    for entry in report["results"]:
        runs = [entry[name] for name in ("cold", "no_change", "one_changed", "naive") if entry[name]]
        entry["total_seconds"] = round(sum(run["seconds"] for run in runs if run["seconds"]), 3)
    args.json.parent.mkdir(parents=True, exist_ok=True)
    args.json.write_text(json.dumps(report, indent=2) + "\n", encoding="utf-8")
    print(f"JSON written to {args.json}")
    return 0 if all(not r.error for r in results) else 1


if __name__ == "__main__":
    sys.exit(main())
