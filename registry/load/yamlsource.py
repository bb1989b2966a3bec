"""Read one YAML file into plain Python data, keeping the line and column of every key and value.

Built on PyYAML's safe composer (`yaml.compose` with `SafeLoader`): the node tree carries marks, which a
plain `yaml.safe_load` throws away. On top of the composer this layer

- refuses files above `MAX_BYTES`, bytes that are not UTF-8 and nesting deeper than `MAX_DEPTH`;
- reports duplicate keys (a plain load silently keeps the last one);
- bounds aliases: a document whose aliases would copy more than `MAX_ALIAS_VALUES` values (the
  "billion laughs" construct) is refused without being expanded;
- keeps dates as the text written (`2025-02-11`), so the schema checks them as `format: date`;
- turns every failure into a `Problem` with the file, line and column.

Scalars follow YAML 1.1 as PyYAML resolves them (`yes`/`no` are booleans, `1e3` without a dot is text).
"""
from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Any

import yaml
from yaml.nodes import MappingNode, Node, ScalarNode, SequenceNode

from registry.core.errors import FILE_FIELD, Problem, Src, format_path
from registry.load.yamldoc import Placed, PlacedIndex, YamlDoc

MAX_BYTES = 2 * 1024 * 1024
MAX_DEPTH = 50
MAX_ALIAS_VALUES = 10_000

_YAML_TAG = "tag:yaml.org,2002:"
_SCALAR_TAGS = {_YAML_TAG + name for name in ("str", "int", "float", "bool", "null")}
_TIMESTAMP = _YAML_TAG + "timestamp"
_MERGE = _YAML_TAG + "merge"
_NON_PRINTABLE = yaml.reader.Reader.NON_PRINTABLE
"""What a YAML file may not hold as it is (PyYAML's reader refuses it): refused in text written as an escape
("\\u0000", "\\e") too, so no control character reaches the pages or the exports."""
_LINE_BREAKS = "\n\r\x85\u2028\u2029"

# What PyYAML's parse contexts mean, in words a technician knows.
_CONTEXTS = {
    "simple key": "a key with no ':' after it",
    "quoted scalar": "quoted text",
    "flow mapping": "a {...} mapping",
    "flow sequence": "a [...] list",
    "block scalar": "a block of text",
    "block mapping": "a mapping",
    "block collection": "a list or mapping",
    "plain scalar": "a value",
    "flow node": "a {...} mapping or [...] list",
    "block node": "a value",
}


def read_yaml(file: Path, shown: str) -> tuple[YamlDoc | None, list[Problem]]:
    """Read `file` (shown in messages as `shown`): the document and the problems found. The document is
    None when the file cannot be read as a whole (syntax, encoding, size, aliases, an empty file); after
    a problem in one value (a duplicate key, a tag, a number that is not finite) it is the rest of the
    file, to be validated on."""
    top = Src(shown, 1, 1)
    try:
        with open(file, "rb") as stream:
            raw = stream.read(MAX_BYTES + 1)
            size = os.fstat(stream.fileno()).st_size
    except OSError as error:
        return None, [Problem.at(top, FILE_FIELD, f"a file that cannot be read ({error.strerror})",
                                 "a readable file")]
    if len(raw) > MAX_BYTES:
        return None, [Problem.at(top, FILE_FIELD, f"a file of {max(size, len(raw))} bytes",
                                 f"at most {MAX_BYTES} bytes ({MAX_BYTES // 1024 // 1024} MiB)")]
    return parse_yaml(raw, shown)


def parse_yaml(raw: bytes, shown: str) -> tuple[YamlDoc | None, list[Problem]]:
    """`read_yaml` of content already read (at most MAX_BYTES), e.g. a file at an earlier git revision."""
    top = Src(shown, 1, 1)
    if len(raw) > MAX_BYTES:
        return None, [Problem.at(top, FILE_FIELD, f"a file of {len(raw)} bytes", f"at most {MAX_BYTES} bytes")]
    text, problem = _decode(raw, shown)
    if problem:
        return None, [problem]
    root, composed = None, False
    if FAST_LOADER is not yaml.SafeLoader:
        # libyaml refuses nesting past its own limit (1,000 levels), so its composer needs no first pass;
        # the builder stops at MAX_DEPTH
        try:
            root, composed = yaml.compose(text, Loader=FAST_LOADER), True
        except yaml.YAMLError:
            pass
    if not composed:  # no libyaml, or a problem: the pure-Python parser words the message
        problem = _scan(text, shown, yaml.SafeLoader)
        if problem is not None:
            return None, [problem]
        try:
            root = yaml.compose(text, Loader=yaml.SafeLoader)
        except yaml.YAMLError as error:
            return None, [_yaml_problem(error, text, shown)]
    builder = _Builder(shown)
    data = None
    if root is not None:
        try:
            data = builder.value(root, (), None)
        except _Refused as refused:
            return None, [refused.problem]
    if data is None:
        return None, builder.problems or [Problem.at(top, FILE_FIELD, "an empty file",
                                                     "a YAML mapping of keys and values")]
    # a duplicate key, a tag or a number that is not finite stops nothing else: the document is read on
    # (the first of two keys kept, the value with a tag empty) and validated, so a run reports them all
    return YamlDoc(shown, data, PlacedIndex.of(shown, builder.index)), builder.problems


def _decode(raw: bytes, shown: str) -> tuple[str, Problem | None]:
    try:
        return raw.decode("utf-8").removeprefix("\ufeff"), None
    except UnicodeDecodeError as error:
        before = raw[:error.start]
        line_start = before.rfind(b"\n") + 1
        column = len(before[line_start:].decode("utf-8", errors="replace")) + 1
        src = Src(shown, before.count(b"\n") + 1, column)
        return "", Problem.at(src, FILE_FIELD, f"the byte 0x{raw[error.start]:02X}, which is not UTF-8",
                              "UTF-8 text (save the file with UTF-8 encoding)")


FAST_LOADER = getattr(yaml, "CSafeLoader", yaml.SafeLoader)
"""libyaml's safe loader where PyYAML was built with it, else the pure-Python one."""


def _scan(text: str, shown: str, loader=yaml.SafeLoader) -> Problem | None:
    """A first pass over the parse events: syntax errors and nesting depth, before any tree is built.

    PyYAML's parser works from a stack of states, so this pass cannot run out of recursion; its composer
    recurses per level, hence the depth limit first.
    """
    depth = 0
    try:
        for event in yaml.parse(text, Loader=loader):
            if isinstance(event, yaml.CollectionStartEvent):
                depth += 1
                if depth > MAX_DEPTH:
                    return Problem.at(_src(shown, event.start_mark), FILE_FIELD,
                                      f"lists and mappings nested more than {MAX_DEPTH} deep",
                                      f"at most {MAX_DEPTH} levels")
            elif isinstance(event, yaml.CollectionEndEvent):
                depth -= 1
    except yaml.YAMLError as error:
        return _yaml_problem(error, text, shown)
    return None


def _src(shown: str, mark: yaml.Mark) -> Src:
    return Src(shown, mark.line + 1, mark.column + 1)


def _yaml_problem(error: yaml.YAMLError, text: str, shown: str) -> Problem:
    """A PyYAML error as a problem, in plainer words where the cause is a common one."""
    if isinstance(error, yaml.reader.ReaderError):
        line = text.count("\n", 0, error.position) + 1
        column = error.position - (text.rfind("\n", 0, error.position) + 1) + 1
        return Problem.at(Src(shown, line, column), FILE_FIELD,
                          f"the control character U+{error.character:04X}", "printable text")
    mark = getattr(error, "problem_mark", None) or getattr(error, "context_mark", None)
    if mark is None:
        return Problem.at(Src(shown, 1, 1), FILE_FIELD, f"invalid YAML ({error})", "well-formed YAML")
    src = _src(shown, mark)
    tab = _tab_in_indent(text, mark.index)
    if tab is not None:
        return Problem.at(Src(shown, src.line, tab + 1), FILE_FIELD, "a tab in the indentation",
                          "spaces (YAML does not allow tabs for indentation)")
    context = (getattr(error, "context", None) or "").removeprefix("while ").removeprefix("parsing ").removeprefix("scanning ")
    context = context.removeprefix("a ").removeprefix("an ")
    if not text[mark.index:].strip() and getattr(error, "context_mark", None) is not None:
        what = _CONTEXTS.get(context, context or "a value")
        return Problem.at(src, FILE_FIELD,
                          f"the end of the file inside {what} that starts on line {error.context_mark.line + 1}",
                          "the rest of the file (is it cut short?)")
    if isinstance(error, yaml.composer.ComposerError) and "another document" in (error.problem or ""):
        return Problem.at(src, FILE_FIELD, "a second document (a line starting ---)", "one document per file")
    return Problem.at(src, FILE_FIELD, f"invalid YAML ({getattr(error, 'problem', None) or error})",
                      "well-formed YAML (check the indentation, colons and quotes here or just above)")


def _tab_in_indent(text: str, index: int) -> int | None:
    """The 0-based column of a tab in the leading whitespace of the line holding `index`, if any."""
    start = index
    while start > 0 and text[start - 1] not in _LINE_BREAKS:
        start -= 1
    end = start
    while end < len(text) and text[end] in " \t":
        end += 1
    indent = text[start:end]
    return indent.index("\t") if "\t" in indent else None


class _Refused(Exception):
    """Raised inside the builder when the document must not be read any further."""

    def __init__(self, problem: Problem):
        super().__init__(str(problem))
        self.problem = problem


class _Builder:
    """Turns a composed node tree into plain data, recording where each value sits."""

    def __init__(self, shown: str):
        self.shown = shown
        self.index: dict[tuple[str | int, ...], Placed] = {}
        self.problems: list[Problem] = []
        self.visits = 0
        self.seen: set[int] = set()
        self.active: set[int] = set()
        self.constructor = yaml.constructor.SafeConstructor()

    def value(self, node: Node, parts: tuple[str | int, ...], key: Src | None) -> Any:
        here = _src(self.shown, node.start_mark)
        text = node.value if isinstance(node, ScalarNode) else None
        self.index[parts] = Placed(key, here, text)
        first = id(node) not in self.seen  # where it is written, not a copy through an alias
        self.seen.add(id(node))
        self.count(here)
        if isinstance(node, ScalarNode):
            return self.scalar(node, parts, here)
        if first and len(parts) >= MAX_DEPTH:  # the document itself is the first level
            raise _Refused(Problem.at(here, FILE_FIELD, f"lists and mappings nested more than {MAX_DEPTH} deep",
                                      f"at most {MAX_DEPTH} levels"))
        if id(node) in self.active:
            raise _Refused(Problem.at(here, format_path(parts), "an alias inside its own anchor",
                                      "data that does not contain itself"))
        if len(parts) > 2 * MAX_DEPTH:
            raise _Refused(Problem.at(here, FILE_FIELD, f"aliases nesting data more than {2 * MAX_DEPTH} deep",
                                      f"at most {2 * MAX_DEPTH} levels"))
        self.active.add(id(node))
        try:
            if isinstance(node, SequenceNode):
                self.check_tag(node, "seq", parts, here)
                return [self.value(item, parts + (number,), None) for number, item in enumerate(node.value)]
            self.check_tag(node, "map", parts, here)
            return self.mapping(node, parts)
        finally:
            self.active.discard(id(node))

    def count(self, here: Src) -> None:
        """Count one value read; values read more than once came through aliases, and are bounded."""
        self.visits += 1
        if self.visits - len(self.seen) > MAX_ALIAS_VALUES:
            raise _Refused(Problem.at(here, FILE_FIELD,
                                      f"aliases (*name) that copy more than {MAX_ALIAS_VALUES} values",
                                      "a document that does not multiply itself through aliases"))

    def check_tag(self, node: Node, kind: str, parts: tuple[str | int, ...], here: Src) -> None:
        if node.tag != _YAML_TAG + kind:
            self.problems.append(Problem.at(here, format_path(parts), f"the tag {_short_tag(node.tag)}",
                                            "plain YAML without tags"))

    def mapping(self, node: MappingNode, parts: tuple[str | int, ...]) -> dict[str, Any]:
        result: dict[str, Any] = {}
        first: dict[str, Src] = {}
        for key_node, value_node, merged in self.pairs(node, parts):
            key_src = _src(self.shown, key_node.start_mark)
            if not isinstance(key_node, ScalarNode):
                self.problems.append(Problem.at(key_src, format_path(parts), "a list or mapping used as a key",
                                                "a plain name before the ':'"))
                continue
            name = key_node.value
            if self.printable(name, parts, key_src) is None:
                continue
            if name in result:
                if not merged:  # keys written in the mapping win over keys merged in with <<
                    self.problems.append(Problem.at(
                        key_src, format_path(parts + (name,)),
                        f"a second '{name}' key (the first is on line {first[name].line})", "each key once"))
                continue
            first[name] = key_src
            result[name] = self.value(value_node, parts + (name,), key_src)
        return result

    def pairs(self, node: MappingNode, parts: tuple[str | int, ...]) -> list[tuple[Node, Node, bool]]:
        """The mapping's own key/value pairs, then those merged in with `<<` (YAML 1.1 merge keys)."""
        own = [(key, value, False) for key, value in node.value if key.tag != _MERGE]
        merged: list[tuple[Node, Node, bool]] = []
        for key, value in node.value:
            if key.tag != _MERGE:
                continue
            sources = value.value if isinstance(value, SequenceNode) else [value]
            for source in sources:
                if not isinstance(source, MappingNode) or id(source) in self.active:
                    self.problems.append(Problem.at(
                        _src(self.shown, key.start_mark), format_path(parts + ("<<",)),
                        "a merge key (<<) with a value that is not a mapping",
                        "an alias of a mapping, e.g. <<: *common"))
                    continue
                for inner_key, inner_value, _ in self.pairs(source, parts):
                    self.count(_src(self.shown, inner_key.start_mark))
                    merged.append((inner_key, inner_value, True))
        return own + merged

    def scalar(self, node: ScalarNode, parts: tuple[str | int, ...], here: Src) -> Any:
        if node.tag == _TIMESTAMP:
            return node.value  # kept as written; the schema checks it is a real date
        if node.tag not in _SCALAR_TAGS:
            self.problems.append(Problem.at(here, format_path(parts), f"the tag {_short_tag(node.tag)}",
                                            "plain YAML without tags"))
            return None
        try:
            value = self.constructor.yaml_constructors[node.tag](self.constructor, node)
        except (ValueError, KeyError, yaml.constructor.ConstructorError):
            self.problems.append(Problem.at(here, format_path(parts),
                                            f"'{node.value}' marked {_short_tag(node.tag)}",
                                            f"a value that can be read as {_short_tag(node.tag)}"))
            return None
        if isinstance(value, float) and not math.isfinite(value):
            self.problems.append(Problem.at(here, format_path(parts), node.value, "a finite number"))
            return None
        return self.printable(value, parts, here) if type(value) is str else value

    def printable(self, text: str, parts: tuple[str | int, ...], here: Src) -> str | None:
        """`text`, or None (and a problem) when it holds a character the file itself may not (`_NON_PRINTABLE`):
        in a value or a key written as an escape."""
        control = _NON_PRINTABLE.search(text)
        if control is None:
            return text
        self.problems.append(Problem.at(here, format_path(parts), f"the control character "
                                        f"U+{ord(control.group()):04X} (written as an escape)", "printable text"))
        return None


def _short_tag(tag: str) -> str:
    return "!!" + tag.removeprefix(_YAML_TAG) if tag.startswith(_YAML_TAG) else tag
