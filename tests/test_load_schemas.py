"""The JSON Schemas shipped for editors and for the loader: valid, documented and closed."""
from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from jsonschema import Draft202012Validator

from registry.load.schemacheck import ID_PATTERN, number_words, unit_of

SCHEMAS = sorted((Path(__file__).parent.parent / "registry" / "schemas").glob("*.schema.json"))
KINDS = ["aircraft", "airframe", "antennas", "cables", "fleet", "modifications", "policy", "reviews", "services"]
REGISTRY_SCHEMAS = [path for path in SCHEMAS if path.name.removesuffix(".schema.json") in KINDS]
"""The schemas of registry files; the others (the build record's) are not edited by hand."""


def test_one_schema_per_file_kind():
    assert [path.name.removesuffix(".schema.json") for path in REGISTRY_SCHEMAS] == KINDS


def _objects(schema, where="#"):
    """Every object schema (one with `properties`) inside `schema`, with its location."""
    if isinstance(schema, dict):
        if schema.get("type") == "object" and ("properties" in schema or "additionalProperties" in schema):
            yield where, schema
        for key, value in schema.items():
            yield from _objects(value, f"{where}/{key}")
    elif isinstance(schema, list):
        for number, value in enumerate(schema):
            yield from _objects(value, f"{where}/{number}")


@pytest.mark.parametrize("path", SCHEMAS, ids=lambda path: path.name)
def test_schema_is_valid_draft_2020_12_with_id(path):
    schema = json.loads(path.read_text(encoding="utf-8"))
    Draft202012Validator.check_schema(schema)  # against the 2020-12 meta-schema
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["$id"].endswith(f"/{path.name}")


@pytest.mark.parametrize("path", REGISTRY_SCHEMAS, ids=lambda path: path.name)
def test_every_property_has_help_and_every_object_is_closed(path):
    schema = json.loads(path.read_text(encoding="utf-8"))
    for where, obj in _objects(schema):
        # closed, or a map keyed by service id whose key names are constrained
        assert obj.get("additionalProperties") is False or "propertyNames" in obj, where
        for name, prop in obj.get("properties", {}).items():
            if "$ref" in prop:
                continue
            assert prop.get("title") and prop.get("description"), f"{where}/properties/{name}"


@pytest.mark.parametrize("text, ok", [
    ("qx-fca", True), ("TCA-120-BLD", True), ("vhf_com", True), ("a" * 64, True), ("v1.2", True),
    ("a" * 65, False), ("../etc", False), ("a/b", False), (".hidden", False), ("with space", False),
    ("", False), ("-dash", False),
])
def test_id_pattern(text, ok):
    # the rule in docs/registry-format.md: no slashes, no '..' at the start, no spaces, at most 64
    assert bool(re.search(ID_PATTERN, text)) is ok


def test_expected_wording_for_number_ranges():
    assert number_words({"type": "number", "exclusiveMinimum": 0}, ("feeder", "length_m")) == \
        "a positive number of metres"
    assert number_words({"type": "number", "minimum": 0.001, "maximum": 300000}, ("bands_mhz", 0, 1)) == \
        "a frequency between 0.001 and 300000 MHz"
    assert number_words({"type": "integer", "minimum": 2}, ("geometry", "element_count")) == \
        "a whole number of at least 2"
    assert unit_of(("cables", 0, "attenuation_db_per_100ft", 1, 1)) == "dB per 100 ft"
    assert unit_of(("cables", 0, "attenuation_db_per_100ft", 1, 0)) == "MHz"
