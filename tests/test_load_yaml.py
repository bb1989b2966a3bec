"""The line-tracking YAML layer: positions, YAML 1.1 behaviour kept, and what it refuses."""
from __future__ import annotations

from pathlib import Path

import pytest

from registry.core.errors import Src
from registry.load.yamlsource import MAX_ALIAS_VALUES, MAX_DEPTH, read_yaml


def read(tmp_path: Path, text: str | bytes):
    path = tmp_path / "doc.yaml"
    path.write_bytes(text.encode("utf-8") if isinstance(text, str) else text)
    return read_yaml(path, "doc.yaml")


def messages(tmp_path: Path, text: str | bytes, read_on: bool = False) -> list[str]:
    """The problems of a document; `read_on`: a problem in one value, after which the rest of the file is
    kept (and validated by the loader), else a problem that stops the file."""
    doc, problems = read(tmp_path, text)
    assert (doc is not None) is read_on
    return [str(problem) for problem in problems]


def test_positions_of_keys_and_values(tmp_path):
    doc, problems = read(tmp_path, "a: 1\nb:\n  - {c: x, d: 2}\n  - plain\n")
    assert problems == []
    assert doc.data == {"a": 1, "b": [{"c": "x", "d": 2}, "plain"]}
    assert doc.index[("a",)].key == Src("doc.yaml", 1, 1)
    assert doc.index[("a",)].value == Src("doc.yaml", 1, 4)
    assert doc.index[("b", 0, "d")].key == Src("doc.yaml", 3, 12)
    assert doc.index[("b", 1)].key is None and doc.index[("b", 1)].value == Src("doc.yaml", 4, 5)
    assert doc.placed(("b", 0, "missing")) == doc.index[("b", 0)]


def test_positions_read_back_from_their_text_as_they_were_read(tmp_path):
    # A document's positions travel (in the cache, between processes) as JSON text and are made into
    # objects when asked: the same positions as the file just read, and the same index for the objects
    # built from it; a row of another shape (a forged cache entry) is left out (internal behaviour).
    import json
    import pickle

    from registry.incremental import codec
    from registry.load.yamlsource import PlacedIndex, YamlDoc

    doc, _ = read(tmp_path, "a: 1\nb:\n  - {c: x, d: 2}\n  - plain\nq: &x [1, 2]\nr: *x\n")
    back = codec.loads(codec.dumps(doc, YamlDoc), YamlDoc)
    assert back.index._table is None  # still text
    assert dict(back.index.srcs()) == dict(doc.index.srcs()) and len(doc.index.srcs()) == len(doc.index)
    assert dict(back.index) == dict(doc.index)
    assert dict(pickle.loads(pickle.dumps(doc.index))) == dict(doc.index)
    assert back.index.srcs()[("b", 0, "d")] == Src("doc.yaml", 3, 12)  # a key's position
    assert back.index.srcs()[("b", 1)] == Src("doc.yaml", 4, 5)  # a list item's: its value's
    rows = [row for row in json.loads(doc.index.rows) if row[5:] not in (["a"], ["b"])]
    forged = PlacedIndex("doc.yaml", json.dumps([["x", 1, 1, 1, None, "a"], [0, 0, 2, 1, 5, "b"], *rows]))
    assert ("a",) not in forged and ("b",) not in forged and forged[("q",)] == doc.index[("q",)]
    assert ("a",) not in forged.srcs() and len(forged.srcs()) == len(doc.index) - 2
    assert dict(PlacedIndex("doc.yaml", "not json")) == {} and dict(PlacedIndex("doc.yaml", "{}")) == {}


def test_scalars_follow_yaml_1_1_and_dates_stay_text(tmp_path):
    # YAML 1.1 (yaml.org/type/bool.html): yes/no are booleans; a float needs a dot (yaml.org/type/float.html),
    # so 1e3 stays text. Dates are kept as written for the schema's `format: date`.
    doc, _ = read(tmp_path, "a: yes\nb: 1e3\nc: 1.0e+3\nd: 2025-02-11\ne: ~\nf: 0x10\n")
    assert doc.data == {"a": True, "b": "1e3", "c": 1000.0, "d": "2025-02-11", "e": None, "f": 16}
    assert doc.index[("a",)].text == "yes"


def test_merge_keys_with_explicit_keys_winning(tmp_path):
    # YAML 1.1 merge key (yaml.org/type/merge.html): keys written in the mapping override merged ones.
    doc, problems = read(tmp_path, "base: &b {x: 1, y: 2}\nthing:\n  <<: *b\n  y: 3\n")
    assert problems == []
    assert doc.data["thing"] == {"x": 1, "y": 3}
    assert doc.index[("thing", "x")].key.line == 1  # a merged value points at the line it was written on


def test_merge_key_needs_a_mapping(tmp_path):
    assert messages(tmp_path, "thing:\n  <<: 5\n  y: 3\n", read_on=True) == [
        "doc.yaml:2:3: error: thing.<<: found a merge key (<<) with a value that is not a mapping, "
        "expected an alias of a mapping, e.g. <<: *common"]


def test_duplicate_keys_are_errors_even_in_flow_mappings(tmp_path):
    assert messages(tmp_path, "a: {x: 1, x: 2}\n", read_on=True) == [
        "doc.yaml:1:11: error: a.x: found a second 'x' key (the first is on line 1), expected each key once"]


def test_a_duplicate_key_keeps_the_first_and_reads_on(tmp_path):
    doc, problems = read(tmp_path, "a: {x: 1, x: 2}\nb: 3\n")
    assert doc.data == {"a": {"x": 1}, "b": 3} and len(problems) == 1


def test_alias_that_contains_itself(tmp_path):
    assert messages(tmp_path, "a: &a [1, *a]\n") == [
        "doc.yaml:1:4: error: a[1]: found an alias inside its own anchor, expected data that does not contain itself"]


def test_aliases_are_bounded_but_allowed_in_moderation(tmp_path):
    doc, problems = read(tmp_path, "a: &a [1, 2, 3]\nb: *a\nc: *a\n")
    assert problems == [] and doc.data["c"] == [1, 2, 3]
    width = 4
    levels = 1
    while width ** levels <= MAX_ALIAS_VALUES:
        levels += 1
    lines = ["l0: &l0 x"] + [f"l{n}: &l{n} [{', '.join([f'*l{n - 1}'] * width)}]" for n in range(1, levels + 1)]
    result = messages(tmp_path, "\n".join(lines) + "\n")
    assert len(result) == 1 and f"aliases (*name) that copy more than {MAX_ALIAS_VALUES} values" in result[0]


def test_merge_keys_cannot_multiply_without_bound(tmp_path):
    lines = ["m0: &m0 {" + ", ".join(f"k{n}: {n}" for n in range(10)) + "}"]
    for level in range(1, 8):
        lines.append(f"m{level}a: &m{level}a {{<<: [*m{level - 1}]}}")
        lines.append(f"m{level}: &m{level} {{<<: [*m{level}a, *m{level - 1}, *m{level}a, *m{level - 1}]}}")
    result = messages(tmp_path, "\n".join(lines) + "\n")
    assert len(result) == 1 and "aliases (*name) that copy more than" in result[0]


def test_nesting_depth_is_limited(tmp_path):
    # the top-level mapping is the first level, so the list opened at column 3 + MAX_DEPTH is one too many
    deep = "a: " + "[" * (MAX_DEPTH + 5) + "]" * (MAX_DEPTH + 5) + "\n"
    assert messages(tmp_path, deep) == [
        f"doc.yaml:1:{3 + MAX_DEPTH}: error: (file): found lists and mappings nested more than {MAX_DEPTH} deep, "
        f"expected at most {MAX_DEPTH} levels"]


def test_tags_are_refused(tmp_path):
    assert messages(tmp_path, "a: !!python/object:os.system x\n", read_on=True) == [
        "doc.yaml:1:4: error: a: found the tag !!python/object:os.system, expected plain YAML without tags"]
    assert messages(tmp_path, "a: !!int abc\n", read_on=True) == [
        "doc.yaml:1:4: error: a: found 'abc' marked !!int, expected a value that can be read as !!int"]


def test_non_finite_numbers_are_refused(tmp_path):
    assert messages(tmp_path, "a: .nan\nb: -.inf\n", read_on=True) == [
        "doc.yaml:1:4: error: a: found .nan, expected a finite number",
        "doc.yaml:2:4: error: b: found -.inf, expected a finite number"]


def test_control_characters_and_second_documents(tmp_path):
    assert messages(tmp_path, "a: 1\nb: \x07\n") == [
        "doc.yaml:2:4: error: (file): found the control character U+0007, expected printable text"]
    assert messages(tmp_path, "a: 1\n---\nb: 2\n") == [
        "doc.yaml:2:1: error: (file): found a second document (a line starting ---), expected one document per file"]


def test_utf8_bom_is_accepted(tmp_path):
    doc, problems = read(tmp_path, b"\xef\xbb\xbfa: 1\n")
    assert problems == [] and doc.data == {"a": 1}


def test_comment_only_file_is_empty(tmp_path):
    assert messages(tmp_path, "# yaml-language-server: $schema=x.json\n\n") == [
        "doc.yaml:1:1: error: (file): found an empty file, expected a YAML mapping of keys and values"]


def test_truncated_inside_quoted_text(tmp_path):
    assert messages(tmp_path, 'a: 1\nb: "half a sentence') == [
        "doc.yaml:2:20: error: (file): found the end of the file inside quoted text that starts on line 2, "
        "expected the rest of the file (is it cut short?)"]


def test_unreadable_file(tmp_path):
    doc, problems = read_yaml(tmp_path, "folder.yaml")  # a folder cannot be read as a file
    assert doc is None and len(problems) == 1
    assert str(problems[0]).startswith("folder.yaml:1:1: error: (file): found a file that cannot be read")


@pytest.mark.parametrize("text, expected", [
    ("a:\n  b: 1\n \tc: 2\n", "doc.yaml:3:2: error: (file): found a tab in the indentation, "
                              "expected spaces (YAML does not allow tabs for indentation)"),
    ("a: b: c\n", "doc.yaml:1:5: error: (file): found invalid YAML (mapping values are not allowed here), "
                  "expected well-formed YAML (check the indentation, colons and quotes here or just above)"),
])
def test_syntax_messages(tmp_path, text, expected):
    assert messages(tmp_path, text) == [expected]


@pytest.mark.parametrize("levels", [60, 990, 1500])
def test_deep_nesting_is_refused_at_the_limit_whatever_the_depth(tmp_path, levels):
    """Below libyaml's own nesting limit (1,000: the C composer builds the tree, the builder stops at
    MAX_DEPTH) and above it (the pure-Python scan stops first), the same message at the same column;
    never a RecursionError. Common practice, no source: libyaml 0.2.5 refuses deeper nesting."""
    deep = "a: " + "[" * levels + "]" * levels + "\n"
    assert messages(tmp_path, deep) == [
        f"doc.yaml:1:{3 + MAX_DEPTH}: error: (file): found lists and mappings nested more than {MAX_DEPTH} deep, "
        f"expected at most {MAX_DEPTH} levels"]


def test_deep_block_nesting_is_refused_where_it_passes_the_limit(tmp_path):
    # line n opens the mapping at level n (the document's is level 1) at column 2n - 1
    deep = "".join("  " * level + "k:\n" for level in range(300)) + "  " * 300 + "x\n"
    assert messages(tmp_path, deep) == [
        f"doc.yaml:{MAX_DEPTH + 1}:{2 * MAX_DEPTH + 1}: error: (file): found lists and mappings nested more than "
        f"{MAX_DEPTH} deep, expected at most {MAX_DEPTH} levels"]


def test_control_characters_written_as_escapes_are_refused_like_raw_ones(tmp_path):
    # YAML 1.2.2 §5.1 (c-printable): a stream holds printable characters only; PyYAML's reader enforces that on the
    # raw file, and double-quoted escapes (§5.7, escaped characters) could still put a NUL or an ESC into a value:
    # refused the same way, the rest of the file read on
    assert messages(tmp_path, 'a: "ok\\u0000"\nb: "\\e[31mred"\nc: "tab\\there, line\\nbreak"\n', read_on=True) == [
        "doc.yaml:1:4: error: a: found the control character U+0000 (written as an escape), expected printable text",
        "doc.yaml:2:4: error: b: found the control character U+001B (written as an escape), expected printable text"]
    doc, _ = read(tmp_path, 'c: "tab\\there, line\\nbreak"\n')
    assert doc.data == {"c": "tab\there, line\nbreak"}


def test_a_key_written_with_an_escaped_control_character_is_refused(tmp_path):
    # the same rule for keys as for values (YAML 1.2.2 §5.1, c-printable): the member is left out, the rest read on
    assert messages(tmp_path, 'a: 1\n"b\\x07": 2\nc: 3\n', read_on=True) == [
        "doc.yaml:2:1: error: (file): found the control character U+0007 (written as an escape), expected printable text"]
    doc, _ = read(tmp_path, 'a: 1\n"b\\x07": 2\nc: 3\n')
    assert doc.data == {"a": 1, "c": 3}
