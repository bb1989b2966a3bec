"""Text leaving the tool for a spreadsheet or a terminal, made inert there.

Registry text (reviewer names, comments, references, messages) is written by many hands. Two places
would otherwise act on it:

- a spreadsheet opening a CSV export takes a cell that starts with `=`, `+`, `-`, `@`, a tab or a
  carriage return for a formula. OWASP's guidance on CSV injection
  (https://owasp.org/www-community/attacks/CSV_Injection, as quoted in Symfony's advisory for
  CVE-2021-41270, https://symfony.com/cve-2021-41270) is to prefix such a cell with a single quote,
  which spreadsheets take as "this is text"; OWASP ASVS 5.0 requirement 1.2.10 adds the NUL character
  to the list. `spreadsheet_cell` does exactly that for text cells; numbers stay numbers (a negative
  number is a value, not a formula).
- a terminal acts on control characters: ESC sequences (ECMA-48) can move the cursor, rewrite what was
  printed, set the window title or hide text; a carriage return or backspace overwrites a line; C1
  controls (U+0080–U+009F) are 8-bit equivalents of ESC sequences; bidirectional overrides reorder what
  is shown. `terminal_text` removes all of them, keeping line breaks and tabs; `terminal_line` also
  turns those into spaces, so one field cannot pose as another line.
"""
from __future__ import annotations

import re

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r", "\0")
"""A text cell starting with one of these is taken for a formula by spreadsheets (see the module)."""

_ESCAPE_SEQUENCE = re.compile(
    r"\x1b(?:\[[0-?]*[ -/]*[@-~]"          # CSI: ESC [ parameters intermediates final
    r"|\][^\x07\x1b]*(?:\x07|\x1b\\)?"     # OSC: ESC ] text, ended by BEL or ESC \
    r"|[PX^_][^\x1b]*(?:\x1b\\)?"          # DCS, SOS, PM, APC strings
    r"|[ -/]*[0-~])?"                      # any other escape: ESC intermediates final
    r"|\x9b[0-?]*[ -/]*[@-~]",             # the 8-bit CSI
)
_CONTROLS = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069]")
"""C0 controls but tab and line feed, DEL, C1 controls, and the bidirectional embeddings and isolates."""
_C1_AND_BIDI = re.compile("[\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069]")


def spreadsheet_cell(value: object) -> object:
    """A CSV cell as OWASP advises: text starting with a formula character gets a leading `'`."""
    if isinstance(value, str) and value.startswith(FORMULA_STARTS):
        return "'" + value
    return value


def terminal_text(text: str) -> str:
    """`text` without escape sequences and control characters; line breaks and tabs kept."""
    return _CONTROLS.sub("", _ESCAPE_SEQUENCE.sub("", text))


def terminal_line(text: str) -> str:
    """`terminal_text` on one line: line breaks and tabs inside it become spaces."""
    return terminal_text(text.replace("\r\n", " ").replace("\n", " ").replace("\t", " "))


def json_for_terminal(text: str) -> str:
    """JSON text with DEL, the C1 controls, the line and paragraph separators and the bidirectional
    controls written as \\u escapes (JSON escapes C0 itself): the same JSON value, inert on a terminal.
    They can only occur inside strings, where an escape means the same character."""
    return _C1_AND_BIDI.sub(lambda match: f"\\u{ord(match.group()):04x}", text)
