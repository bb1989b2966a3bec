"""Pure pieces of the compute and check stages: band arithmetic, reviews, the merge gate.

Sources: interval arithmetic and the review rules are the product's own definitions (docs/registry-format.md);
the mismatch figure of a 75 Ω cable on a 50 Ω antenna is Pozar, Microwave Engineering, 4th ed., §2.3
(VSWR = Z_high / Z_low for two real impedances).
"""
from dataclasses import replace
from datetime import date

import pytest

from registry.check import reviews as checks
from registry.compute.element import uncovered_mhz
from registry.core.errors import Src
from registry.core.base import FrozenMap
from registry.core.model import Review
from registry.core.results import Discrepancy


def test_uncovered_band_is_service_minus_rated():
    # common practice, no source: the 8.33 kHz VHF band starts at 117.975 MHz; an antenna rated 118-137 misses 25 kHz
    assert uncovered_mhz([(117.975, 137.0)], [(118.0, 137.0)]) == [(117.975, 118.0)]
    assert uncovered_mhz([(108.0, 118.0)], [(100.0, 110.0), (112.0, 120.0)]) == [(110.0, 112.0)]
    assert uncovered_mhz([(1030.0, 1090.0)], [(960.0, 1215.0)]) == []


def test_uncovered_band_covers_every_service_band():
    gaps = uncovered_mhz([(121.45, 121.55), (406.0, 406.1)], [(118.0, 137.0)])
    assert gaps == [(406.0, 406.1)]


def discrepancy(value=3.4):
    return Discrepancy(id="qx-aaa/VHF1/feeder-loss", rule="feeder-loss", severity="query", aircraft="qx-aaa",
                       position="VHF1", value=value, limit=3.0, unit="dB", message="m", method="", src="")


def review(value_seen, state="accepted"):
    return Review(src=Src("reviews.yaml", 3, 5), discrepancy="qx-aaa/VHF1/feeder-loss", state=state,
                  reviewer="R. Marlow", date=date(2026, 1, 15), value_seen=value_seen)


def test_review_with_same_value_applies():
    out = checks.apply_reviews([discrepancy(3.4)], FrozenMap({"qx-aaa/VHF1/feeder-loss": review(3.4)}))
    assert out[0].review == "accepted" and out[0].reviewer == "R. Marlow"


def test_review_reopens_when_value_changed():
    out = checks.apply_reviews([discrepancy(3.9)], FrozenMap({"qx-aaa/VHF1/feeder-loss": review(3.4)}))
    assert out[0].review == "reopened"


def test_review_without_discrepancy_is_stale():
    reviews = FrozenMap({"qx-aaa/VHF1/feeder-loss": review(3.4)})
    assert checks.stale_reviews([], reviews) == [reviews["qx-aaa/VHF1/feeder-loss"]]
    assert checks.stale_reviews([discrepancy()], reviews) == []


@pytest.mark.parametrize("severity, state, fails", [
    ("unserviceable", "open", True), ("unserviceable", "reopened", True), ("unserviceable", "accepted", False),
    ("unserviceable", "action-raised", True), ("unserviceable", "no-fault", False), ("query", "open", False),
    ("note", "open", False), ("query", "action-raised", False),
])
def test_gate_fails_only_on_open_unserviceable(severity, state, fails):
    # the product's own definition (docs/registry-format.md): an action raised leaves the fault fitted
    item = replace(discrepancy(), severity=severity)
    reviewed = checks.apply_reviews([item], FrozenMap({item.id: review(item.value, state)})) \
        if state not in ("open", "reopened") else [replace(item, review=state)]
    assert checks.gate_fails(reviewed) is fails


@pytest.mark.parametrize("state, counts_open, expected", [
    ("action-raised", True, True), ("action-raised", False, False), ("accepted", True, False),
    ("no-fault", True, False), ("accepted", False, False),
])
def test_policy_switch_decides_whether_an_action_raised_stays_open(state, counts_open, expected):
    out = checks.apply_reviews([discrepancy(3.4)], FrozenMap({"qx-aaa/VHF1/feeder-loss": review(3.4, state)}),
                               action_raised_counts_open=counts_open)
    assert out[0].is_open is expected and out[0].review == state
    assert out[0].review_date == "2026-01-15"


def test_reopened_review_is_open_whatever_the_switch():
    out = checks.apply_reviews([discrepancy(3.9)], FrozenMap({"qx-aaa/VHF1/feeder-loss": review(3.4, "accepted")}),
                               action_raised_counts_open=False)
    assert out[0].review == "reopened" and out[0].is_open


def test_findings_are_ordered_by_id_whatever_their_severity():
    items = [replace(discrepancy(), id="qx-aaa/VHF2/isolation", severity="note"),
             replace(discrepancy(), id="qx-aaa/MKR/band-coverage", severity="unserviceable"),
             replace(discrepancy(), id="qx-aaa/DME1/feeder-loss", severity="query")]
    assert [d.id for d in checks.check_fleet(items, FrozenMap({}))] == [
        "qx-aaa/DME1/feeder-loss", "qx-aaa/MKR/band-coverage", "qx-aaa/VHF2/isolation"]
