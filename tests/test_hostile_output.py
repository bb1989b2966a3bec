"""Registry text that would act in a spreadsheet or a terminal comes out inert.

CSV: OWASP's guidance on CSV injection (https://owasp.org/www-community/attacks/CSV_Injection, as quoted
in the advisory for CVE-2021-41270): a cell starting with =, +, -, @, tab or carriage return gets a
leading single quote. Terminal: ECMA-48 control functions (ESC sequences, C0 and C1 controls) are removed.
"""
from __future__ import annotations

import csv
import io
import re
import shutil
from pathlib import Path

import pytest

from registry import cli, pipeline
from registry.output.safe_text import json_for_terminal, spreadsheet_cell, terminal_line, terminal_text

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"
FORMULAS = {"reviewer": '=HYPERLINK("https://example.invalid/?"&A1,"x")', "reference": "+1+2",
            "comment": "@SUM(A1:A9)"}
ESCAPES = "\x1b]0;window title\x07\x1b[2J\x1b[31mRed\x1b[0m \x9b1mC1\rBack\x08space\u202eevil"
"""Escape sequences and controls: the loader refuses them in registry text (YAML 1.2.2 §5.1, c-printable)."""
PRINTABLE_TRICKS = "Red C1\rBackspace\u202eevil"
"""What YAML still lets through as text and a terminal would act on: a carriage return, a bidirectional override."""


def quoted_yaml(text: str) -> str:
    """`text` as a YAML double-quoted scalar (YAML 1.1 escapes: \\e, \\x.., \\u....)."""
    out = []
    for char in text:
        if char == '"' or char == "\\":
            out.append("\\" + char)
        elif ord(char) < 0x20 or 0x7f <= ord(char) <= 0x9f or 0x2000 <= ord(char) <= 0x206f:
            out.append(f"\\u{ord(char):04x}")
        else:
            out.append(char)
    return '"' + "".join(out) + '"'


@pytest.fixture(scope="module")
def hostile_data(tmp_path_factory) -> Path:
    """The demo with formulas in the first review's text fields and terminal tricks in the second's."""
    data = tmp_path_factory.mktemp("hostile") / "data"
    shutil.copytree(DEMO, data)
    reviews = data / "reviews.yaml"
    text = reviews.read_text(encoding="utf-8")
    first, second = "reviewer: H. Quill\n", "reviewer: H. Quill\n"
    assert text.count(first) >= 2
    head, rest = text.split(first, 1)
    text = head + f"reviewer: {quoted_yaml(FORMULAS['reviewer'])}\n" + rest
    head, rest = text.split(second, 1)
    text = head + f"reviewer: {quoted_yaml(PRINTABLE_TRICKS)}\n" + rest
    text = text.replace("reference: ENG-REQ-2026-118", f"reference: {quoted_yaml(FORMULAS['reference'])}", 1)
    text = re.sub(r"    comment: >-\n(      .*\n)+", f"    comment: {quoted_yaml(FORMULAS['comment'])}\n", text, count=1)
    reviews.write_text(text, encoding="utf-8")
    return data


def run(argv: list[str], capsys) -> tuple[int, str, str]:
    code = cli.main(argv)
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def formula_rows(rows: list[dict[str, str]]) -> dict[str, str]:
    row = next(row for row in rows if row["reviewer"].endswith(FORMULAS["reviewer"]))
    return {name: row[name] for name in ("reviewer", "review_reference", "review_comment", "value")}


def test_check_csv_neutralises_formula_cells_and_keeps_numbers(hostile_data, capsys):
    code, out, err = run(["check", str(hostile_data), "--format", "csv"], capsys)
    assert code in (0, 1), err
    cells = formula_rows(list(csv.DictReader(io.StringIO(out))))
    assert cells["reviewer"] == "'" + FORMULAS["reviewer"]
    assert cells["review_reference"] == "'" + FORMULAS["reference"]
    assert cells["review_comment"] == "'" + FORMULAS["comment"]
    assert float(cells["value"]) < 0  # a negative number stays a number: no quote before its minus sign


def test_site_csv_download_neutralises_formula_cells(hostile_data, tmp_path):
    pipeline.build(hostile_data, tmp_path / "site", cache_dir=None, workers=1)
    text = (tmp_path / "site" / "audit" / "discrepancies.csv").read_text(encoding="utf-8")
    cells = formula_rows(list(csv.DictReader(io.StringIO(text))))
    assert cells["reviewer"] == "'" + FORMULAS["reviewer"]
    assert cells["review_reference"] == "'" + FORMULAS["reference"]
    assert cells["review_comment"] == "'" + FORMULAS["comment"]
    assert float(cells["value"]) < 0
    for row in csv.reader(io.StringIO(text)):
        assert not any(cell.startswith(("=", "+", "@", "\t", "\r")) for cell in row)


def test_check_prints_no_control_characters(hostile_data, capsys):
    code, out, err = run(["check", str(hostile_data)], capsys)
    assert code in (0, 1), err
    assert "by Red C1Backspaceevil" in out  # the printable text is kept, on its own line
    for char in out + err:
        assert char in "\n\t" or not (ord(char) < 0x20 or 0x7f <= ord(char) <= 0x9f or 0x202a <= ord(char) <= 0x202e)
    code, out, err = run(["check", str(hostile_data), "--format", "json"], capsys)
    assert "\r" not in out and "\u202e" not in out
    assert "\\r" in out and "\\u202e" in out  # escaped in JSON: the value itself is kept


def test_escape_sequences_written_into_the_registry_are_refused_and_never_printed(tmp_path, capsys):
    data = tmp_path / "data"
    shutil.copytree(DEMO, data)
    reviews = data / "reviews.yaml"
    text = reviews.read_text(encoding="utf-8").replace("reviewer: H. Quill\n", f"reviewer: {quoted_yaml(ESCAPES)}\n", 1)
    reviews.write_text(text, encoding="utf-8")
    line = next(n for n, row in enumerate(text.splitlines(), 1) if "window title" in row)
    code, out, err = run(["check", str(data)], capsys)
    assert code == 2
    assert f"reviews.yaml:{line}:" in err and "found the control character U+001B (written as an escape)" in err
    for char in out + err:
        assert char in "\n\t" or not (ord(char) < 0x20 or 0x7f <= ord(char) <= 0x9f or 0x202a <= ord(char) <= 0x202e)


@pytest.mark.parametrize("text, expected", [
    ("=1+1", "'=1+1"), ("+1", "'+1"), ("-1+A1", "'-1+A1"), ("@SUM(A1)", "'@SUM(A1)"), ("\tx", "'\tx"),
    ("\rx", "'\rx"), ("H. Quill", "H. Quill"), ("", ""), ("a=b", "a=b"), (-7.9, -7.9), (3, 3),
])
def test_spreadsheet_cells(text, expected):
    assert spreadsheet_cell(text) == expected


@pytest.mark.parametrize("text, expected", [
    ("\x1b[31mred\x1b[0m", "red"),                       # SGR colour (ECMA-48 CSI)
    ("\x1b]0;title\x07name", "name"),                    # OSC window title, ended by BEL
    ("\x1b]8;;https://example.invalid\x1b\\link\x1b]8;;\x1b\\", "link"),  # OSC hyperlink, ended by ST
    ("\x1bPdevice\x1b\\x", "x"),                         # DCS string
    ("a\x9b2Jb", "ab"),                                  # 8-bit CSI
    ("ab\rcd\x08e\x00\x7f", "abcde"),                    # C0 and DEL
    ("\u202egnp.exe", "gnp.exe"),                        # bidirectional override
    ("line one\nline two\tend", "line one\nline two\tend"),
])
def test_terminal_text(text, expected):
    assert terminal_text(text) == expected


def test_terminal_line_and_json():
    assert terminal_line("name\nfake line\tx") == "name fake line x"
    assert json_for_terminal('{"a": "\x9b2J\u202e"}') == '{"a": "\\u009b2J\\u202e"}'
