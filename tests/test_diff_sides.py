"""Reading a side of a comparison: a record nested deeper than a build record can be is refused with a
data error (exit 2) naming the file, instead of ending in Python's RecursionError (exit 3).

The depth limit is this program's own (registry/output/sides.py, MAX_RECORD_DEPTH): common practice for
readers of untrusted nested data, no source."""
import json
from pathlib import Path

import pytest

import registry.load.fleet
from registry import pipeline
from registry.cli import main
from registry.output import record
from registry.output.sides import MAX_RECORD_DEPTH, record_depth

FIXTURES = Path(__file__).parent / "fixtures"
AS_OF_EPOCH = "1772323200"  # 2026-03-01 00:00 UTC


@pytest.fixture
def good_record(monkeypatch, tmp_path) -> Path:
    """The good fixture registry's record, written to a file; its policy is where the tests nest data."""
    monkeypatch.setattr(registry.load.fleet, "SHIPPED_DIR", FIXTURES / "shipped")
    monkeypatch.setenv("SOURCE_DATE_EPOCH", AS_OF_EPOCH)
    path = tmp_path / "good.json"
    record.write(record.to_record(pipeline.run(FIXTURES / "good")), path)
    return path


def nested_copy(source: Path, target: Path, levels: int) -> Path:
    """`source` with `registry.policy.nested` holding `levels` objects one inside the other (written as
    text: the JSON writer itself cannot follow very deep data)."""
    data = json.loads(source.read_text(encoding="utf-8"))
    data["registry"]["policy"]["nested"] = "@NESTED@"
    deep = '{"level": ' * levels + "1" + "}" * levels
    target.write_text(json.dumps(data).replace('"@NESTED@"', deep), encoding="utf-8")
    return target


def test_record_depth_counts_containers():
    assert record_depth(1) == 0
    assert record_depth({"a": 1}) == 1
    assert record_depth({"a": [1, {"b": None}]}) == 3


def test_a_nested_but_plausible_record_is_compared(good_record, tmp_path, capsys):
    deeper = nested_copy(good_record, tmp_path / "deeper.json", 20)
    assert main(["diff", str(good_record), str(deeper)]) == 1
    out = capsys.readouterr().out
    assert "  changed  policy\n" in out
    assert "policy.nested" not in out  # field paths name the policy's own fields
    assert "nested." + ".".join(["level"] * 20) + ": — → 1" in out


@pytest.mark.parametrize("levels", [MAX_RECORD_DEPTH + 1, 5000, 100_000])
def test_a_record_nested_too_deep_is_a_data_error(good_record, tmp_path, capsys, levels):
    deep = nested_copy(good_record, tmp_path / "deep.json", levels)
    assert main(["diff", str(good_record), str(deep)]) == 2
    err = capsys.readouterr().err
    assert f"{deep}:" in err and f"({MAX_RECORD_DEPTH} levels at most)" in err
    assert "RecursionError" not in err and "internal error" not in err


def test_a_built_site_nested_too_deep_is_a_data_error(good_record, tmp_path, capsys):
    site = tmp_path / "site"
    site.mkdir()
    nested_copy(good_record, site / record.RECORD_NAME, 500)
    assert main(["diff", str(site), str(good_record)]) == 2
    assert f"site {site}: nested " in capsys.readouterr().err
