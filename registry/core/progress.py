"""A one-line progress bar for long builds, on a terminal only; silent when output is not a terminal."""
from __future__ import annotations

import sys
from typing import TextIO


class Progress:
    """`stage(name, total)` starts a bar, `advance()` moves it, `finish()` ends the line.

    Drawn on `stream` (default stderr) only when `enabled`, which defaults to whether the stream is a
    terminal, so logs and pipes stay clean. Redraws at most once per percent.
    """

    def __init__(self, stream: TextIO | None = None, enabled: bool | None = None, width: int = 30):
        self.stream = stream if stream is not None else sys.stderr
        self.enabled = self.stream.isatty() if enabled is None else enabled
        self.width = width
        self.name = ""
        self.total = 0
        self.count = 0
        self.shown = -1

    def stage(self, name: str, total: int) -> None:
        self.finish()
        self.name, self.total, self.count, self.shown = name, max(total, 0), 0, -1
        self.draw()

    def advance(self, steps: int = 1) -> None:
        self.count = min(self.count + steps, self.total)
        self.draw()

    def draw(self) -> None:
        if not self.enabled or not self.name:
            return
        percent = 100 * self.count // self.total if self.total else 100
        if percent == self.shown:
            return
        self.shown = percent
        filled = self.width * percent // 100
        bar = "#" * filled + "-" * (self.width - filled)
        self.stream.write(f"\r{self.name:<22} [{bar}] {self.count}/{self.total}")
        self.stream.flush()

    def finish(self) -> None:
        if self.enabled and self.name:
            self.stream.write("\n")
            self.stream.flush()
        self.name = ""


QUIET = Progress(enabled=False)
"""A progress that never draws: the default of library calls."""
