"""The command line: parse arguments, run a pipeline stage, decide the exit code.

Exit codes are decided here and only here:
  0  success (`diff`: the two builds are the same)
  1  open discrepancies of the top severity (`check`); the two builds differ (`diff`)
  2  data errors or usage errors (`history`: also an unknown aircraft, or no git history to read)
  3  an internal error (a bug: please report it with the output of --debug)
Library code never calls sys.exit and never prints; it raises an AerialbookError (core/errors.py),
which knows its exit code and how it prints. Whatever reaches the terminal from here is cleared of
control characters and escape sequences (`output.safe_text`): registry text is written by many hands.
"""
from __future__ import annotations

import argparse
import os
import sys
import traceback
from pathlib import Path

from registry import __version__
from registry.core.errors import EXIT_DATA, EXIT_FINDINGS, EXIT_INTERNAL, EXIT_OK, AerialbookError
from registry.core.rulebook import SEVERITIES
from registry.output.safe_text import json_for_terminal, terminal_text

EXIT_OPEN = EXIT_FINDINGS
EXIT_DIFFERENT = EXIT_FINDINGS


def make_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="build.py",
        description="Fleet antenna register: validate, check and publish.",
    )
    parser.add_argument("--version", action="version", version=f"aerialbook {__version__}")
    parser.add_argument("--debug", action="store_true", help="show a traceback on errors")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    add_check_and_build(commands)
    add_serve_and_diff(commands)
    add_history(commands)
    return parser


def add_history(commands) -> None:
    """The `history` and `demo-history` commands' arguments."""
    history = commands.add_parser(
        "history", help="what an aircraft carried, from the registry's git history",
        description="An aircraft's changes (mainline commits of its file: date, commit, subject, modifications "
                    "gained, positions changed, findings that appeared or cleared) and each position's antenna, "
                    "feeder and hardware from which commit to which. Exit 0 on success, 2 when the aircraft is "
                    "unknown or the data folder's git history cannot be read (a one-line note says why).")
    history.add_argument("aircraft", metavar="AIRCRAFT", help="aircraft id or registration")
    history.add_argument("data_dir", nargs="?", default="fleet_data", metavar="DATA_DIR",
                         help="registry folder in a git checkout (default: fleet_data)")
    history.add_argument("--on", metavar="YYYY-MM-DD",
                         help="what was fitted on this date: the state after the last commit on or before it")
    history.add_argument("--format", choices=("text", "json"), default="text", help="output format (default: text)")
    history.add_argument("--no-findings", action="store_true",
                         help="leave out the findings that appeared or cleared at each change (much faster)")
    history.add_argument("--cache", metavar="DIR", help="check's cache folder (default: as check)")
    history.add_argument("--no-cache", action="store_true", help="compute the findings afresh, keep nothing")
    demo = commands.add_parser(
        "demo-history", help="write the demo registry with a short scripted git history into a new folder",
        description="Creates OUT_DIR as a fresh git repository holding the demo registry, committed in a few "
                    "steps with fixed dates and author (the same commits every time), for trying `history`.")
    demo.add_argument("out_dir", metavar="OUT_DIR", help="folder to create (must not exist or be empty)")
    demo.add_argument("--from", dest="source", default="fleet_data", metavar="DATA_DIR",
                      help="the demo registry to start from (default: fleet_data)")


def add_check_and_build(commands) -> None:
    """The `check` and `build` commands' arguments."""
    check = commands.add_parser(
        "check", help="validate the registry, compute every figure and report the discrepancies",
        description="Exit 0 when no unserviceable discrepancy is open, 1 when one is, 2 on data or usage errors. "
                    "An unserviceable finding whose review is action-raised stays open (the fault is still fitted) "
                    "unless the policy's action_raised_counts_open is false. With filters, only the findings "
                    "selected are listed and counted for the exit code.")
    check.add_argument("data_dir", nargs="?", default="fleet_data", metavar="DATA_DIR",
                       help="registry folder (default: fleet_data)")
    check.add_argument("--format", choices=("text", "json", "csv"), default="text",
                       help="report format (default: text)")
    check.add_argument("--aircraft", action="append", metavar="ID",
                       help="only this aircraft (id or registration); repeatable")
    check.add_argument("--service", action="append", metavar="ID", help="only this service id; repeatable")
    check.add_argument("--severity", action="append", choices=SEVERITIES, help="only this severity; repeatable")
    check.add_argument("--details", action="store_true",
                       help="also print every computed figure of every installation (text format)")
    check.add_argument("--cache", metavar="DIR",
                       help="folder that keeps parsed files and each aircraft's findings between runs, shared "
                            "with build, safe to delete (default: $AERIALBOOK_CACHE_DIR, else .aerialbook-cache "
                            "in the current folder, where build keeps it for the default site folder)")
    check.add_argument("--no-cache", action="store_true", help="compute everything afresh, keep nothing")

    build = commands.add_parser("build", help="publish the registry as a static site")
    build.add_argument("data_dir", nargs="?", default="fleet_data", metavar="DATA_DIR",
                       help="registry folder (default: fleet_data)")
    build.add_argument("-o", "--out", default="site", metavar="OUT",
                       help="site folder, replaced whole on success (default: site)")
    build.add_argument("--cache", metavar="DIR",
                       help="folder that keeps parsed files, computed figures and drawn plots between builds, "
                            "safe to delete (default: $AERIALBOOK_CACHE_DIR, else .aerialbook-cache beside OUT)")
    build.add_argument("--no-cache", action="store_true", help="draw every plot afresh, keep nothing")
    build.add_argument("--compare", metavar="OLD",
                       help="add a page of what changed since OLD: a built site, a record file, a registry "
                            "folder, or git:REV (DATA_DIR at git revision REV)")


def add_serve_and_diff(commands) -> None:
    """The `serve` and `diff` commands' arguments."""
    serve = commands.add_parser(
        "serve", help="build, serve the site on this machine, and rebuild when the data changes",
        description="Serves on 127.0.0.1 only. A data error keeps the last good site and prints the problems.")
    serve.add_argument("data_dir", nargs="?", default="fleet_data", metavar="DATA_DIR",
                       help="registry folder (default: fleet_data)")
    serve.add_argument("-o", "--out", default="site", metavar="OUT", help="site folder (default: site)")
    serve.add_argument("--port", type=int, default=8000, help="port on 127.0.0.1 (default: 8000)")

    diff = commands.add_parser(
        "diff", help="show what changed between two builds of the registry",
        usage="build.py diff [options] OLD [NEW]\n       build.py diff [options] --git REV [NEW]",
        description="Compare OLD with NEW. Each is a built site (its record.json), a record file, a registry "
                    "folder, or git:REV (the registry folder at git revision REV). Exit 0 when they are the "
                    "same, 1 when they differ, 2 on data or usage errors.")
    diff.add_argument("sides", nargs="*", metavar="OLD [NEW]",
                      help="NEW defaults to fleet_data; with --git only NEW may be given")
    diff.add_argument("--git", metavar="REV", help="OLD is the registry folder at git revision REV (same as git:REV)")
    diff.add_argument("--data", metavar="DATA_DIR",
                      help="registry folder whose history git:REV reads (default: NEW when it is a registry "
                           "folder, else fleet_data)")
    diff.add_argument("--format", choices=("text", "json"), default="text", help="output format (default: text)")
    diff.add_argument("--rel-tol", type=float, default=1e-3, metavar="FRACTION",
                      help="a figure has moved when it differs by more than this fraction (default: 0.001)")
    diff.add_argument("--abs-tol", type=float, default=1e-3, metavar="VALUE",
                      help="...and by more than this, in its own unit (default: 0.001)")
    diff.add_argument("--as-of", metavar="YYYY-MM-DD",
                      help="compute registry folders and git revisions as of this date (default: NEW's as-of date)")


def main(argv: list[str]) -> int:
    parser = make_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as stop:  # argparse has printed its message
        return EXIT_OK if stop.code == 0 else EXIT_DATA
    try:
        return run(args)
    except BrokenPipeError:  # the reader (head, less) went away: not an error of ours
        sys.stdout = open(os.devnull, "w")
        return EXIT_OK
    except Exception as error:  # noqa: BLE001 - the one place that turns errors into exit codes
        return report_error(error, debug=args.debug)


def run(args: argparse.Namespace) -> int:
    if args.command == "diff":
        return run_diff(args)
    if args.command == "history":
        return run_history(args)
    if args.command == "demo-history":
        from registry import demo_history
        print(terminal_text(demo_history.make(Path(args.source), Path(args.out_dir))))
        return EXIT_OK
    from registry import pipeline

    if args.command == "serve":
        from registry import serve
        serve.serve(Path(args.data_dir), Path(args.out), port=args.port)
        return EXIT_OK
    data_dir = Path(args.data_dir)
    if args.command == "check":
        cache_dir = cache_folder(args, ".aerialbook-cache")
        # the findings of unchanged aircraft come from the cache; --details computes the figures of the
        # aircraft it prints only (`run_check`)
        return run_check(args, pipeline.run(data_dir, cache_dir=cache_dir, lazy=True))
    if args.command == "build":
        baseline = None
        if args.compare:
            from registry.output import sides as sides_
            baseline = sides_.read_side(args.compare, run=pipeline.run, git_data_dir=data_dir,
                                      as_of=pipeline.as_of_date(data_dir))
        out = Path(args.out)
        naive = os.environ.get("AERIALBOOK_NAIVE") == "1"  # the benchmark's baseline: no reuse at all
        cache_dir = None if naive else cache_folder(args, out.parent / ".aerialbook-cache")
        from registry.core.progress import Progress
        out_dir, written = pipeline.build(data_dir, out, baseline=baseline, cache_dir=cache_dir, naive=naive,
                                          progress=Progress(sys.stderr))
        if written:
            print(terminal_text(f"site written to {out_dir}: open {out_dir / 'index.html'}"))
        else:
            print(terminal_text(f"site in {out_dir} is up to date (same data, tool and options): "
                                f"open {out_dir / 'index.html'}"))
        if baseline is not None:
            print(terminal_text(f"changes since {baseline.label}: open {out_dir / 'changes.html'}"))
        return EXIT_OK
    raise AssertionError(f"unhandled command {args.command}")


def run_check(args: argparse.Namespace, outcome) -> int:
    from registry.check import reviews
    from registry.output import report

    fleet = outcome.fleet
    unknown = [name for name in args.aircraft or () if name not in fleet.aircraft
               and name not in {craft.registration for craft in fleet.aircraft.values()}]
    unknown += [name for name in args.service or () if name not in fleet.services]
    if unknown:
        print(terminal_text(f"error: no aircraft or service named {', '.join(unknown)}"), file=sys.stderr)
        return EXIT_DATA
    found = report.select(outcome.discrepancies, fleet, args.aircraft, args.service, args.severity)
    filters = {"aircraft": args.aircraft or [], "service": args.service or [], "severity": args.severity or []}
    as_of = outcome.as_of.isoformat()
    if args.format == "json":
        sys.stdout.write(report.as_json(fleet, found, outcome.stale_reviews, as_of, filters))
    elif args.format == "csv":
        sys.stdout.write(report.as_csv(fleet, found))
    else:
        if args.details:
            outcome.results.load([craft.id for craft in fleet.aircraft.values() if report.matches(
                craft, [item.service for item in craft.installations.values()], args.aircraft, args.service)])
            sys.stdout.write(report.details(fleet, outcome.results, args.aircraft, args.service))
        sys.stdout.write(report.as_text(fleet, found, outcome.stale_reviews, as_of, filters,
                                        total=len(outcome.discrepancies)))
    return EXIT_OPEN if reviews.gate_fails(found) else EXIT_OK


def run_diff(args: argparse.Namespace) -> int:
    from datetime import date

    from registry.output import compare, compare_text
    from registry.output import sides as sides_
    from registry.output.comparison import Tolerance

    sides = list(args.sides)
    if args.git:
        sides.insert(0, sides_.GIT_PREFIX + args.git)
    if not 1 <= len(sides) <= 2:
        print("error: diff: expected OLD [NEW], or --git REV [NEW]", file=sys.stderr)
        return EXIT_DATA
    if len(sides) == 1:
        sides.append("fleet_data")
    if args.rel_tol < 0 or args.abs_tol < 0:
        print("error: diff: tolerances must not be negative", file=sys.stderr)
        return EXIT_DATA
    try:
        as_of = date.fromisoformat(args.as_of) if args.as_of else None
    except ValueError:
        print(f"error: diff: --as-of: found {args.as_of!r}, expected a date YYYY-MM-DD", file=sys.stderr)
        return EXIT_DATA
    old_spec, new_spec = sides
    kinds = [sides_.side_kind(spec) for spec in sides]
    git_dir = Path(args.data) if args.data else Path(new_spec) if kinds[1] == "registry" else Path("fleet_data")
    pair = sides_.read_record_pair(old_spec, new_spec)
    if pair is not None:
        old, new = pair
    else:
        new = sides_.read_side(new_spec, run=run_registry, git_data_dir=git_dir, as_of=as_of)
        old = sides_.read_side(old_spec, run=run_registry, git_data_dir=git_dir,
                               as_of=as_of or date.fromisoformat(new.record["as_of"]))
    comparison = compare.compare(old.record, new.record, Tolerance(args.rel_tol, args.abs_tol), old.label, new.label)
    sys.stdout.write(json_for_terminal(compare_text.as_json(comparison)) if args.format == "json"
                     else terminal_text(compare_text.as_text(comparison)))
    return EXIT_OK if comparison.same else EXIT_DIFFERENT


def run_history(args: argparse.Namespace) -> int:
    from datetime import date

    from registry import history
    from registry.output import history_text

    try:
        day = date.fromisoformat(args.on) if args.on else None
    except ValueError:
        print(terminal_text(f"error: history: --on: found {args.on!r}, expected a date YYYY-MM-DD"), file=sys.stderr)
        return EXIT_DATA
    cache_dir = cache_folder(args, ".aerialbook-cache")
    item = history.aircraft_timeline(Path(args.data_dir), args.aircraft,
                                     with_findings=not args.no_findings and day is None, cache_dir=cache_dir)
    if args.format == "json":
        sys.stdout.write(json_for_terminal(history_text.as_json(item, day)))
    else:
        sys.stdout.write(terminal_text(history_text.on_text(item, day) if day else history_text.as_text(item)))
    return EXIT_OK


def cache_folder(args: argparse.Namespace, default: Path | str) -> Path | None:
    """The cache folder a command uses (`--cache`, `$AERIALBOOK_CACHE_DIR`, else `default`; None with
    `--no-cache`). When its entries cannot be signed with a key kept between runs, a note says why."""
    if args.no_cache:
        return None
    from registry.incremental import signing_key
    note = signing_key().note
    if note:
        print(terminal_text(f"note: {note}"), file=sys.stderr)
    return Path(args.cache or os.environ.get("AERIALBOOK_CACHE_DIR") or default)


def run_registry(*args, **kwargs):
    """`pipeline.run`, imported only when a side of a comparison is a registry to compute: comparing two
    build records needs none of the computation's modules."""
    from registry import pipeline

    return pipeline.run(*args, **kwargs)


def report_error(error: Exception, debug: bool) -> int:
    """Print `error` for the user and return its exit code: the tool's own errors print themselves."""
    if debug:
        traceback.print_exception(error, file=sys.stderr)
    if isinstance(error, AerialbookError):
        print(terminal_text(error.report()), file=sys.stderr)
        return error.exit_code
    if isinstance(error, OSError):
        print(terminal_text(f"error: {error.filename or ''}: {error.strerror or error}"), file=sys.stderr)
        return EXIT_DATA
    if not debug:
        print(terminal_text(f"internal error: {type(error).__name__}: {error} (run with --debug for the traceback)"),
              file=sys.stderr)
    return EXIT_INTERNAL
