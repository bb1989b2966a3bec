"""`build.py demo-history OUT_DIR`: the demo registry in a fresh git repository with a short invented
history, made the same way every time (fixed dates, author and committer, so the same commit hashes).

The story, on QX-TJB (`fleet_data/scenario/qx-tjb-before-mod-2026-031.yaml` is its state before):
  1. 2026-08-03 the registry is opened with the fleet as maintained, QX-TJB before its satcom modification;
  2. 2026-09-14 MOD-2026-031 is recorded: SAT fitted, VHF3 moved aft, ADF1 removed, GNSS1's feeder
     re-routed; the SAT feeder is typed as RG-58 by mistake (a cable rated to 1000 MHz on L-band);
  3. 2026-09-21 the SAT feeder is corrected to the TCX-LL7 actually fitted.
The last commit holds the demo registry exactly as `fleet_data/` has it (without `scenario/`).
"""
from __future__ import annotations

import os
import shutil
import subprocess
from pathlib import Path

from registry.core.errors import AerialbookError

AUTHOR = ("Registry editor", "registry@example.invalid")
BEFORE = Path("scenario") / "qx-tjb-before-mod-2026-031.yaml"
AFTER = Path("aircraft") / "qx-tjb.yaml"
WRONG_CABLE = ("    feeder:\n      cable: TCX-LL7\n      length_m: 3.2\n",
               "    feeder:\n      cable: RG-58\n      length_m: 3.2\n")
STEPS = (
    ("2026-08-03T09:00:00+00:00", "before",
     "Registry opened: the fleet as maintained, QX-TJB in its delivery configuration"),
    ("2026-09-14T16:30:00+00:00", "wrong",
     "MOD-2026-031 on QX-TJB: satcom antenna SAT fitted, VHF3 moved aft (VHF3-AFT), ADF1 removed, "
     "GNSS1 feeder re-routed"),
    ("2026-09-21T10:15:00+00:00", "after",
     "QX-TJB SAT feeder: TCX-LL7 as fitted (RG-58 was typed in error with MOD-2026-031)"),
)


class DemoHistoryError(AerialbookError):
    """The demo history cannot be made (exit 2)."""


def make(source: Path, out_dir: Path) -> str:
    """Write the demo registry with its scripted history into `out_dir`; what to try next."""
    after_text = read(source / AFTER)
    before_text = read(source / BEFORE)
    if WRONG_CABLE[0] not in after_text:
        raise DemoHistoryError(f"{source / AFTER}: expected the SAT feeder in TCX-LL7 of 3.2 m, which the "
                               "scripted history records wrongly first")
    if out_dir.exists() and (not out_dir.is_dir() or any(out_dir.iterdir())):
        raise DemoHistoryError(f"{out_dir}: exists and is not an empty folder, expected a new folder")
    texts = {"before": before_text.replace("(not read by the loader). Copy it over aircraft/qx-tjb.yaml\n"
                                           "# in a scratch copy of the registry to build the \"before\" site "
                                           "for the comparison.", "(the registry's first commit)."),
             "wrong": after_text.replace(*WRONG_CABLE), "after": after_text}
    shutil.copytree(source, out_dir, dirs_exist_ok=True,
                    ignore=lambda folder, names: [name for name in names if name.startswith(".")
                                                  or (Path(folder) == source and name == "scenario")])
    run_git(out_dir, "init", "--quiet", "--initial-branch=main")
    for when, state, subject in STEPS:
        (out_dir / AFTER).write_text(texts[state], encoding="utf-8")
        run_git(out_dir, "add", "--all")
        run_git(out_dir, "commit", "--quiet", "--no-verify", "-m", subject, when=when)
    head = subprocess.run(["git", "-C", str(out_dir), "rev-parse", "--short=10", "HEAD"], capture_output=True,
                          text=True, check=False).stdout.strip()
    return (f"demo registry with {len(STEPS)} commits (HEAD {head}) written to {out_dir}: try\n"
            f"  python build.py history QX-TJB {out_dir}\n"
            f"  python build.py history QX-TJB {out_dir} --on 2026-09-15\n"
            f"  python build.py build {out_dir} -o SITE_DIR")


def read(path: Path) -> str:
    try:
        return path.read_text(encoding="utf-8")
    except OSError as error:
        raise DemoHistoryError(f"{path}: {error.strerror}, expected the demo registry's file") from None


def run_git(folder: Path, *args: str, when: str = "2026-08-03T09:00:00+00:00") -> None:
    """git in `folder` with the fixed author and dates, and no user or system configuration."""
    env = {**os.environ, "GIT_AUTHOR_NAME": AUTHOR[0], "GIT_AUTHOR_EMAIL": AUTHOR[1],
           "GIT_COMMITTER_NAME": AUTHOR[0], "GIT_COMMITTER_EMAIL": AUTHOR[1], "GIT_AUTHOR_DATE": when,
           "GIT_COMMITTER_DATE": when, "GIT_CONFIG_GLOBAL": os.devnull, "GIT_CONFIG_NOSYSTEM": "1", "TZ": "UTC"}
    try:
        done = subprocess.run(["git", "-C", str(folder), "-c", "commit.gpgsign=false", "-c", "core.autocrlf=false",
                               *args], capture_output=True, env=env, check=False, timeout=60)
    except (OSError, subprocess.SubprocessError) as error:
        raise DemoHistoryError(f"git cannot be run ({error}), expected git on the PATH") from None
    if done.returncode != 0:
        raise DemoHistoryError(f"git {' '.join(args[:1])} in {folder} failed: "
                               f"{done.stderr.decode(errors='replace').strip()}")
