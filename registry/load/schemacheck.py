"""Validate a parsed file against its JSON Schema (Draft 2020-12) and word each error for a technician.

Every error is placed on the line of the offending key or value, using the positions `yamlsource` kept.
The schemas live in `registry/schemas/`; a YAML-aware editor uses the same files while the file is typed.
"""
from __future__ import annotations

import difflib
import functools
import json
import re
from collections.abc import Callable
from datetime import date
from importlib import resources
from typing import TYPE_CHECKING, Any, Iterable

from registry.core.errors import Problem, format_path
from registry.load.yamlsource import YamlDoc

if TYPE_CHECKING:
    from jsonschema import Draft202012Validator, ValidationError
# both validators are imported when a file is first checked: a run whose files all come from the cache
# (a check or a rebuild with a warm cache) never loads them (about 40 ms)

ID_PATTERN = "^[A-Za-z0-9][A-Za-z0-9._-]{0,63}$"
ID_WORDS = "an id of up to 64 letters, digits, '.', '_' or '-', starting with a letter or digit"
_PATTERN_WORDS = {
    ID_PATTERN: ID_WORDS,
    "^[A-Za-z0-9][A-Za-z0-9-]{1,15}$": "a registration mark of letters, digits and '-' (e.g. QX-TCA)",
    "^[^/\\\\].*\\.[sS]1[pP]$": "a path to a .s1p file, relative to this YAML file",
    "^[a-z_]+$": "a policy key name",
}
_TYPE_WORDS = {
    "string": "text", "number": "a number", "integer": "a whole number", "boolean": "true or false",
    "array": "a list", "object": "a mapping of keys and values", "null": "nothing",
}
_UNIT_SUFFIXES = (
    ("_db_per_100m", "dB per 100 m"), ("_db_per_100ft", "dB per 100 ft"), ("_mhz", "MHz"),
    ("_wavelengths", "wavelengths"), ("_days", "days"), ("_pct", "per cent"), ("_deg", "degrees"),
    ("_ohm", "ohms"), ("_db", "dB"), ("_m", "metres"), ("vswr", "(VSWR, the ratio n:1)"),
    ("vswr_limit", "(VSWR, the ratio n:1)"), ("sta", "in the airframe's coord_unit"),
    ("bl", "in the airframe's coord_unit"), ("wl", "in the airframe's coord_unit"),
    ("_dbm", "dBm"), ("_dbc", "dBc"), ("_khz", "kHz"),
)
_UNIT_NOUNS = {"metres": "a length", "MHz": "a frequency", "ohms": "an impedance", "degrees": "an angle",
               "in the airframe's coord_unit": "a coordinate"}
_WHOLE_FILE = {"str": "a file of plain text, not a YAML mapping", "list": "a list, not a mapping"}
_NUMBER_WITH_UNIT = re.compile(r"\s*[-+]?(\d+\.?\d*|\.\d+)\s*[A-Za-z%]")
_EXPONENT_WITHOUT_DOT = re.compile(r"[-+]?\d+[eE][-+]?\d+")


@functools.cache
def validator(kind: str) -> Draft202012Validator:
    """The validator for one file kind: fleet, airframe, antennas, cables, services, policy, aircraft, reviews."""
    from jsonschema import Draft202012Validator
    text = (resources.files("registry") / "schemas" / f"{kind}.schema.json").read_text(encoding="utf-8")
    return Draft202012Validator(json.loads(text), format_checker=Draft202012Validator.FORMAT_CHECKER)


DRAFT_2020_ONLY = frozenset({"prefixItems", "unevaluatedProperties", "unevaluatedItems", "dependentRequired",
                             "dependentSchemas", "$dynamicRef", "$dynamicAnchor", "minContains", "maxContains"})
"""Keywords draft 7 does not know: a schema using any of them gets no draft-7 fast path (draft 7 would
ignore them and pass what 2020-12 refuses)."""


def _keywords(schema: Any) -> set[str]:
    if isinstance(schema, dict):
        return set(schema).union(*(_keywords(value) for value in schema.values()))
    if isinstance(schema, list):
        return set().union(*(_keywords(value) for value in schema))
    return set()


def _iso_date(text: Any) -> bool:
    """The "date" format as the reference validator checks it: YYYY-MM-DD and a real day."""
    if not isinstance(text, str) or not re.fullmatch(r"\d{4}-\d{2}-\d{2}", text):
        return False
    try:
        date.fromisoformat(text)
    except ValueError:
        return False
    return True


@functools.cache
def fast_validator(kind: str) -> Callable[[Any], Any] | None:
    """The schema of one file kind compiled to Python (fastjsonschema, as draft 7, which shares every
    keyword the schema uses), or None when the schema uses a keyword only 2020-12 has. A file it passes
    has no schema problem; one it refuses is checked again by the reference validator, which words and
    places every problem. (An aircraft file is checked in a tenth of the time.)"""
    text = (resources.files("registry") / "schemas" / f"{kind}.schema.json").read_text(encoding="utf-8")
    schema = json.loads(text)
    if _keywords(schema) & DRAFT_2020_ONLY:
        return None
    import fastjsonschema
    return fastjsonschema.compile({**schema, "$schema": "http://json-schema.org/draft-07/schema#"},
                                  formats={"date": _iso_date})


def check(doc: YamlDoc, kind: str) -> list[Problem]:
    """Every schema problem in `doc`, each at the line of the key or value it concerns."""
    fast = fast_validator(kind)
    if fast is not None:
        from fastjsonschema import JsonSchemaException
        try:
            fast(doc.data)
            return []
        except JsonSchemaException:
            pass  # found and worded below
    problems: list[Problem] = []
    for error in validator(kind).iter_errors(doc.data):
        problems.extend(_problems(error, doc))
    return problems


def passes(doc: YamlDoc, kind: str) -> bool:
    """Whether `doc` has no schema problem. A document read back from the cache may hold any values at all
    (a forged entry), so any failure to check it counts as a problem."""
    try:
        return not check(doc, kind)
    except Exception:  # noqa: BLE001 - whatever the values, the document is refused, never the build
        return False


def suggest(word: str, choices: Iterable[str]) -> str:
    """` (did you mean 'x'?)` for the closest choice, ignoring case, or nothing."""
    by_folded = {choice.casefold(): choice for choice in choices}
    close = difflib.get_close_matches(word.casefold(), list(by_folded), n=1, cutoff=0.6)
    return f" (did you mean '{by_folded[close[0]]}'?)" if close else ""


def describe(value: Any, text: str | None = None) -> str:
    """A value as a message shows it: numbers as written, text in quotes, lists and mappings by name."""
    if value is None:
        return "an empty value"
    if isinstance(value, bool):
        word = "true" if value else "false"
        return f"{text} (read as {word})" if text and text.lower() != word else word
    if isinstance(value, (int, float)):
        return text if text is not None else f"{value:g}"
    if isinstance(value, str):
        shown = value if len(value) <= 60 else value[:57] + "..."
        return f"'{shown}'"
    return "a list" if isinstance(value, list) else "a mapping"


def unit_of(parts: tuple[str | int, ...]) -> str:
    """The unit a value at `parts` is in, read from the key names (`length_m` → metres)."""
    if len(parts) >= 3 and isinstance(parts[-3], str) and parts[-3].startswith("attenuation_db_per_100"):
        return "MHz" if parts[-1] == 0 else unit_of(parts[:-2])
    names = [part for part in parts if isinstance(part, str)]
    if not names:
        return ""
    if "vswr_limit_by_service" in names:
        return unit_of(("vswr_limit",))
    if names[-1] in ("sta_from", "sta_to"):
        return unit_of(("sta",))
    for suffix, unit in _UNIT_SUFFIXES:
        if names[-1].endswith(suffix):
            return unit
    return ""


def number_words(schema: dict[str, Any], parts: tuple[str | int, ...]) -> str:
    """`a positive number of metres`, `a frequency from 0.001 to 300000 MHz`, ... from a number schema."""
    unit = unit_of(parts)
    noun = "a whole number" if schema.get("type") == "integer" else "a number"
    low, low_open = schema.get("minimum"), schema.get("exclusiveMinimum")
    high, high_open = schema.get("maximum"), schema.get("exclusiveMaximum")
    after = f" {unit}" if unit else ""
    if low is not None and high is not None:
        noun = noun if schema.get("type") == "integer" else _UNIT_NOUNS.get(unit, noun)
        return f"{noun} between {low:g} and {high:g}{after}"
    if low_open == 0 and high is None and high_open is None:
        return f"a positive {noun.removeprefix('a ')}" + (f" of {unit}" if unit else "")
    bounds = []
    if low_open is not None:
        bounds.append(f"greater than {low_open:g}")
    if low is not None:
        bounds.append(f"of at least {low:g}")
    if high_open is not None:
        bounds.append(f"less than {high_open:g}")
    if high is not None:
        bounds.append(f"at most {high:g}")
    return f"{noun} {' and '.join(bounds)}{after}"


def _problems(error: ValidationError, doc: YamlDoc) -> list[Problem]:
    parts = tuple(error.absolute_path)
    placed = doc.placed(parts)
    value_src = placed.value if placed.text is not None else placed.src
    field = format_path(parts)
    instance = error.instance
    kind = error.validator
    schema = error.schema if isinstance(error.schema, dict) else {}

    if kind == "additionalProperties":
        known = list(schema.get("properties", {}))
        return [Problem.at(doc.placed(parts + (key,)).src, format_path(parts + (key,)),
                           f"an unknown key '{key}'", f"one of {', '.join(known)}{suggest(key, known)}")
                for key in instance if key not in known]
    if kind == "required":
        # a conditional requirement (if/then) says when it applies in the `then` schema's description
        conditional = list(error.relative_schema_path)[-2:] == ["then", "required"]
        why = schema.get("description", "") if conditional else ""
        why = why or "the key is required"
        return [Problem.at(placed.src, format_path(parts + (name,)), "nothing", f"a value ({why})")
                for name in error.validator_value if name not in instance]
    if kind in ("oneOf", "anyOf") and all(set(branch) == {"required"} for branch in error.validator_value):
        names = [branch["required"][0] for branch in error.validator_value]
        present = [name for name in names if name in instance]
        listed = " or ".join(f"'{name}'" for name in names)
        # under an if/then the `then` schema's description says when the choice applies
        when = f" ({schema['description']})" if list(error.relative_schema_path)[-2:-1] == ["then"] and \
            schema.get("description") else ""
        if present:
            return [Problem.at(placed.src, field, f"both {' and '.join(repr(n) for n in present)}",
                               f"exactly one of {listed}{when}")]
        return [Problem.at(placed.src, field, f"neither {' nor '.join(repr(n) for n in names)}",
                           f"{'exactly' if kind == 'oneOf' else 'at least'} one of {listed}{when}")]
    if "propertyNames" in error.relative_schema_path:
        key_src = doc.placed(parts + (instance,)).src
        return [Problem.at(key_src, format_path(parts + (instance,)), f"the key '{instance}'",
                           _PATTERN_WORDS.get(schema.get("pattern", ""), "a valid key name"))]

    found, expected = _found_expected(error, parts, placed.text, schema)
    return [Problem.at(value_src, field, found, expected)]


def _found_expected(error: ValidationError, parts: tuple, text: str | None, schema: dict) -> tuple[str, str]:
    """What was found and what was expected, in words, for an error on one value."""
    instance, kind = error.instance, error.validator
    # a whole file that is not a mapping is likely not registry YAML at all: say what it is, never what it says
    found = describe(instance, text) if parts else _WHOLE_FILE.get(type(instance).__name__, "a single value")
    if kind == "type":
        expected = _type_words(error.validator_value, instance, text)
    elif kind == "enum":
        expected = f"one of {', '.join(map(str, error.validator_value))}"
        if isinstance(instance, str):
            expected += suggest(instance, map(str, error.validator_value))
    elif kind == "pattern":
        expected = _PATTERN_WORDS.get(error.validator_value, f"text matching {error.validator_value}")
        if parts and parts[-1] == "discrepancy":
            expected = "'<aircraft id>/<position>/<rule>' or '<aircraft id>/<position>+<position>/<rule>'"
    elif kind in ("minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum"):
        expected = number_words(schema, parts)
    elif kind in ("minItems", "maxItems"):
        found = f"{len(instance)} item{'' if len(instance) == 1 else 's'}"
        low, high = schema.get("minItems"), schema.get("maxItems")
        expected = (f"exactly {low}" if low == high else
                    f"at least {low}" if kind == "minItems" else f"at most {high}") + " items"
        if low == high == 2 and parts and isinstance(parts[-1], int):
            expected += " ([low, high])" if "bands_mhz" in parts else " ([freq_mhz, loss_db])"
    elif kind == "minLength":
        found, expected = "empty text", "some text"
    elif kind == "format":
        expected = f"a real {error.validator_value} written YYYY-MM-DD"
    elif kind == "uniqueItems":
        found, expected = "an entry listed twice", "each entry once"
    else:
        expected = f"a value that satisfies '{kind}' ({error.message})"
    return found, expected


def _type_words(types: str | list[str], instance: Any, text: str | None) -> str:
    names = [types] if isinstance(types, str) else list(types)
    words = " or ".join(_TYPE_WORDS[name] for name in names)
    if "string" in names and isinstance(instance, (int, float)):
        return f"{words} (put it in quotes)"
    if {"number", "integer"} & set(names) and isinstance(instance, str):
        if _EXPONENT_WITHOUT_DOT.fullmatch(instance):
            return f"{words} (YAML reads {instance} as text: write it with a dot, e.g. 1.0e+3)"
        if _NUMBER_WITH_UNIT.match(instance):
            return f"{words} without a unit (the unit is in the key name)"
    if "integer" in names and isinstance(instance, float):
        return f"{words} (no decimal point)"
    return words
