"""The compiled schema check (fastjsonschema, draft 7) never passes a file the reference validator
(jsonschema, Draft 2020-12, the JSON Schema specification's own keywords) refuses: the fast path only
skips the wording of problems, it never hides one. Checked over every YAML file the project ships or
tests with, and over mutations of the demo's aircraft and airframe files."""
from __future__ import annotations

import copy
import random
from pathlib import Path

import pytest

from registry.load import schemacheck
from registry.load.yamlsource import read_yaml

ROOT = Path(__file__).resolve().parent.parent
NAMED = {"fleet": "fleet", "policy": "policy", "reviews": "reviews", "modifications": "modifications"}
WRONG = [None, -1, 0, 1e308, -1e308, "", "x" * 70, "12 m", "2026-02-30", "2026-13-01", "2026-1-1", True, [], {},
         [1, 2], {"unexpected": 1}, 1.5, "qx tca", "QX-TCA"]


def kind_of(file: Path) -> str | None:
    if file.parent.name == "aircraft":
        return "aircraft"
    if file.parent.name == "airframes":
        return "airframe"
    return NAMED.get(file.stem)


def files() -> list[tuple[Path, str]]:
    found = []
    for folder in (ROOT / "fleet_data", ROOT / "tests" / "fixtures", ROOT / "registry" / "data"):
        for file in sorted(folder.rglob("*.yaml")):
            kind = kind_of(file)
            if kind is not None and schemacheck.fast_validator(kind) is not None:
                found.append((file, kind))
    return found


def reference_problems(data, kind: str) -> list:
    return list(schemacheck.validator(kind).iter_errors(data))


def fast_passes(data, kind: str) -> bool:
    try:
        schemacheck.fast_validator(kind)(data)
        return True
    except Exception:  # noqa: BLE001 - any refusal sends the file to the reference validator
        return False


def test_the_fast_path_covers_the_files_read_most():
    # the aircraft files are most of a registry's files; the shared catalogues use 2020-12's prefixItems
    assert schemacheck.fast_validator("aircraft") is not None
    assert schemacheck.fast_validator("antennas") is None


@pytest.mark.parametrize("file, kind", files(), ids=lambda value: str(value).rsplit("/", 2)[-1])
def test_a_file_the_fast_check_passes_has_no_reference_problem(file, kind):
    doc, _ = read_yaml(file, str(file))
    if doc is None:
        return
    if fast_passes(doc.data, kind):
        assert reference_problems(doc.data, kind) == []


def leaves(value, path=()):
    if isinstance(value, dict):
        for key, item in value.items():
            yield from leaves(item, path + (key,))
    elif isinstance(value, list):
        for n, item in enumerate(value):
            yield from leaves(item, path + (n,))
    yield path


def replaced(data, path, new):
    data = copy.deepcopy(data)
    if not path:
        return new
    target = data
    for part in path[:-1]:
        target = target[part]
    target[path[-1]] = new
    return data


@pytest.mark.parametrize("name, kind", [("aircraft/qx-tca.yaml", "aircraft"), ("aircraft/qx-tjb.yaml", "aircraft"),
                                        ("airframes/tc-44.yaml", "airframe"), ("policy.yaml", "policy"),
                                        ("reviews.yaml", "reviews")])
def test_mutated_files_the_fast_check_passes_have_no_reference_problem(name, kind):
    doc, _ = read_yaml(ROOT / "fleet_data" / name, name)
    paths = list(leaves(doc.data))
    rng = random.Random(17)
    refused = 0
    for _ in range(400):
        data = replaced(doc.data, rng.choice(paths), rng.choice(WRONG))
        if fast_passes(data, kind):
            assert reference_problems(data, kind) == [], name
        else:
            refused += 1
    assert refused > 100  # the mutations do break files
