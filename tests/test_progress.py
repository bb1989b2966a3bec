"""The progress bar: drawn on a terminal, silent otherwise (common practice for command-line tools)."""
import io
from pathlib import Path

from registry import cli
from registry.core.progress import Progress


class Terminal(io.StringIO):
    def isatty(self):
        return True


def test_bar_on_a_terminal_reaches_the_total():
    out = Terminal()
    progress = Progress(out)
    progress.stage("rendering aircraft", 4)
    for _ in range(4):
        progress.advance()
    progress.finish()
    text = out.getvalue()
    assert text.startswith("\rrendering aircraft")
    assert "[" + "#" * 30 + "] 4/4" in text and text.endswith("\n")


def test_silent_when_not_a_terminal():
    out = io.StringIO()
    progress = Progress(out)
    progress.stage("rendering aircraft", 3)
    progress.advance(3)
    progress.finish()
    assert out.getvalue() == ""


def test_build_prints_no_bar_into_a_pipe(tmp_path, capsys):
    assert cli.main(["build", str(Path(__file__).resolve().parent.parent / "fleet_data"), "-o", str(tmp_path / "site"), "--no-cache"]) == 0
    captured = capsys.readouterr()
    assert captured.err == ""
    assert "site written to" in captured.out
