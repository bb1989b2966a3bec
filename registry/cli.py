"""The command line: parse arguments, run a pipeline stage, decide the exit code.

Exit codes are decided here and only here:
  0  success
  1  open discrepancies of the top severity (`check` only)
  2  data errors or usage errors
  3  an internal error (a bug: please report it with the output of --debug)
Library code never calls sys.exit and never prints; it raises DataError or PublishError.
"""
from __future__ import annotations

import argparse
import sys
import traceback
from pathlib import Path

from registry import __version__

EXIT_OK = 0
EXIT_OPEN = 1
EXIT_DATA = 2
EXIT_INTERNAL = 3


def make_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="build.py",
        description="Fleet antenna register: validate, check and publish.",
    )
    parser.add_argument("--version", action="version", version=f"aerialbook {__version__}")
    parser.add_argument("--debug", action="store_true", help="show a traceback on errors")
    commands = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    check = commands.add_parser("check", help="validate the registry and report its figures")
    check.add_argument("data_dir", nargs="?", default="fleet_data", metavar="DATA_DIR",
                       help="registry folder (default: fleet_data)")

    build = commands.add_parser("build", help="publish the registry as a static site")
    build.add_argument("data_dir", nargs="?", default="fleet_data", metavar="DATA_DIR",
                       help="registry folder (default: fleet_data)")
    build.add_argument("-o", "--out", default="site", metavar="OUT",
                       help="site folder, replaced whole on success (default: site)")
    return parser


def main(argv: list[str]) -> int:
    parser = make_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as stop:  # argparse has printed its message
        return EXIT_OK if stop.code == 0 else EXIT_DATA
    try:
        return run(args)
    except Exception as error:  # noqa: BLE001 - the one place that turns errors into exit codes
        return report_error(error, debug=args.debug)


def run(args: argparse.Namespace) -> int:
    from registry import pipeline

    data_dir = Path(args.data_dir)
    if args.command == "check":
        fleet = pipeline.load(data_dir)
        print(pipeline.summary(fleet))
        return EXIT_OK
    if args.command == "build":
        out_dir = pipeline.build(data_dir, Path(args.out))
        print(f"site written to {out_dir}: open {out_dir / 'index.html'}")
        return EXIT_OK
    raise AssertionError(f"unhandled command {args.command}")


def report_error(error: Exception, debug: bool) -> int:
    from registry.errors import DataError
    from registry.publish import PublishError

    if debug:
        traceback.print_exception(error, file=sys.stderr)
    if isinstance(error, DataError):
        for problem in error.problems:
            print(problem, file=sys.stderr)
        print(error.summary(), file=sys.stderr)
        return EXIT_DATA
    if isinstance(error, PublishError):
        print(f"error: {error}", file=sys.stderr)
        return EXIT_DATA
    if isinstance(error, OSError):
        print(f"error: {error.filename or ''}: {error.strerror or error}", file=sys.stderr)
        return EXIT_DATA
    if not debug:
        print(f"internal error: {type(error).__name__}: {error} (run with --debug for the traceback)",
              file=sys.stderr)
    return EXIT_INTERNAL
