"""A build record read as of another date: what the date alone makes differ, moved to that date.

The date enters a record in one place: a measurement's age (`compute/feeder.py`: as-of date −
measurement date, in whole days) and the `measurement-age` finding that age gives once it exceeds the
policy's `measurement_max_age_days` (`check/rules.py`). A record computed at its own date (a built site,
a record file) is re-based to the other side's date before two records are compared (`compare.compare`),
so that a comparison shows only what changed in the register, the tool or the reviews: both sides are
then evaluated at one date, as `diff` does when it computes a registry side at NEW's date.
"""
from __future__ import annotations

from collections.abc import Mapping
from datetime import date
from typing import Any

from registry.core import figure_keys as FK
from registry.core.rulebook import RULE_SEVERITY
from registry.output.comparison import is_number

AGE_RULE = "measurement-age"


def gap_days(record: Mapping[str, Any], as_of: str) -> int:
    """Days from the record's own date to `as_of` (negative when `as_of` is earlier)."""
    return (date.fromisoformat(as_of) - date.fromisoformat(record["as_of"])).days


def rebased(record: Mapping[str, Any], as_of: str) -> Mapping[str, Any]:
    """`record` as it reads at `as_of`: each measurement age moved by the gap between the dates, and the
    measurement-age findings those ages give at that date under the record's own policy (a finding the
    later date makes appears, one the earlier date drops goes). The record itself when the dates agree."""
    gap = gap_days(record, as_of)
    if gap == 0:
        return record
    ages: dict[str, float] = {}
    installations = {}
    for owner, entry in record["figures"]["installations"].items():
        figure = entry["figures"].get(FK.MEASURED_AGE_DAYS)
        if figure is None or not is_number(figure["value"]):
            installations[owner] = entry
            continue
        ages[owner] = figure["value"] + gap
        installations[owner] = {**entry, "figures": {**entry["figures"],
                                                     FK.MEASURED_AGE_DAYS: {**figure, "value": ages[owner]}}}
    return {**record, "as_of": as_of, "figures": {**record["figures"], "installations": installations},
            "discrepancies": rebased_findings(record, ages)}


def rebased_findings(record: Mapping[str, Any], ages: Mapping[str, float]) -> dict[str, Any]:
    """The record's findings with those of the measurement-age rule as the re-based `ages` give them."""
    limit = record["registry"]["policy"].get("measurement_max_age_days")
    found = dict(record["discrepancies"])
    stale = {entry["discrepancy"]: entry.get("state", "") for entry in record.get("stale_reviews", ())}
    for owner, age in ages.items():
        key = f"{owner}/{AGE_RULE}"
        if not is_number(limit) or age <= limit:
            found.pop(key, None)
        elif key in found:
            found[key] = {**found[key], "value": age, "message": age_message(age, limit)}
        else:
            found[key] = age_finding(owner, age, limit, stale.get(key))
    return found


def age_message(age: float, limit: float) -> str:
    """The rule's own wording (`check.rules.measurement_age`)."""
    return f"Last measurement is {age:g} days old; the policy asks for one every {limit} days."


def age_finding(owner: str, age: float, limit: float, stale_state: str | None) -> dict[str, Any]:
    """The measurement-age finding the record would hold at the later date. Its review is the one
    reviews.yaml already held for it (listed as stale at the record's own date), else none."""
    aircraft, position = owner.split("/", 1)
    review = stale_state or "open"
    return {"id": f"{owner}/{AGE_RULE}", "rule": AGE_RULE, "severity": RULE_SEVERITY[AGE_RULE],
            "aircraft": aircraft, "position": position, "value": age, "limit": limit, "unit": "days",
            "message": age_message(age, limit), "method": "fleet policy", "source": "",
            "review": review, "reviewer": "", "review_reference": "", "review_comment": "", "review_date": "",
            "is_open": True}
