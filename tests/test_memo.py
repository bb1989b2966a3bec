"""The memo by identity (core.memo) and the computations that use it: a remembered answer is the one
worked out afresh, found again only for the very same objects, and cannot be changed by a caller.
Common practice, no source: these are properties of the code, not of the physics."""
from pathlib import Path

import numpy as np
import pytest

from registry.core.memo import ByIdentity, by_unordered

DEMO = Path(__file__).resolve().parent.parent / "fleet_data"


class Thing:
    def __init__(self, value):
        self.value = value

    def __eq__(self, other):
        return isinstance(other, Thing) and other.value == self.value

    def __hash__(self):
        return hash(self.value)


def test_an_answer_is_remembered_for_the_same_objects_only_and_the_memo_stays_bounded():
    memo, calls = ByIdentity(limit=3), []

    def make(value):
        calls.append(value)
        return value * 2

    one, twin = Thing(1), Thing(1)
    assert memo.get((one,), "x", lambda: make(1)) == 2
    assert memo.get((one,), "x", lambda: make(1)) == 2
    assert calls == [1]
    memo.get((twin,), "x", lambda: make(1))  # equal but not the same object: worked out again
    memo.get((one,), "y", lambda: make(1))   # the same object, another plain argument
    assert calls == [1, 1, 1]
    for n in range(10):
        memo.get((Thing(n),), None, lambda n=n: make(n))
    assert len(memo.held) <= 3
    with pytest.raises(TypeError):
        memo.get((one,), ["not hashable"], lambda: make(1))


def test_items_indexed_by_an_unordered_pair_keep_the_first_of_a_pair():
    class Rule:
        def __init__(self, services, value):
            self.services, self.value = services, value

    rules = (Rule(("vhf", "dme"), 1), Rule(("dme", "vhf"), 2), Rule(("gnss", "satcom"), 3))
    index = by_unordered(rules, "services")
    assert index[("dme", "vhf")].value == 1 and index[("gnss", "satcom")].value == 3
    assert by_unordered(rules, "services") is index


def test_the_modelled_vswr_is_the_callers_own_list_and_a_read_only_curve():
    """The demo's first installation with a modelled curve: two calls give equal figures; changing the first list
    does not reach the second, and the shared curve cannot be written to."""
    from pathlib import Path

    from registry.compute.element import bare_element_vswr, modelled_vswr
    from registry.load.fleet import load_fleet
    fleet = load_fleet(Path("fleet_data"))
    for aircraft, installation in fleet.installations():
        args = (fleet.antennas[installation.antenna], fleet.services[installation.service],
                fleet.cables[installation.feeder.cable], fleet.policy)
        fresh, fresh_curve = bare_element_vswr(*args)
        if not installation.coupler and fresh_curve is not None:
            break
    first, curve = modelled_vswr(*args)
    assert first == fresh and np.array_equal(curve.y, fresh_curve.y)
    first.clear()
    again, curve_again = modelled_vswr(*args)
    assert again == fresh and curve_again is curve
    with pytest.raises(ValueError):
        curve.y[0] = 1.0


def test_an_airframe_and_an_antenna_model_hash_once_and_equal_objects_hash_equal():
    """`hash_once` keeps the rule of the Python Language Reference (Data model, object.__hash__): objects
    that compare equal have the same hash value. Checked for two loads of the demo registry (equal, distinct
    objects), and the value is the hash of the fields the dataclass compares, as its own __hash__ gave."""
    from dataclasses import fields

    from registry import pipeline
    from registry.core import memo
    one, two = pipeline.load(DEMO), pipeline.load(DEMO)
    for kind in ("airframes", "antennas"):
        for key, item in getattr(one, kind).items():
            other = getattr(two, kind)[key]
            assert item is not other and item == other and hash(item) == hash(other)
            compared = tuple(getattr(item, f.name) for f in fields(item) if (f.compare if f.hash is None else f.hash))
            assert hash(item) == hash(compared)
            assert memo._HASHES.get((item,), None, lambda: -1) == hash(item)  # worked out once, kept
