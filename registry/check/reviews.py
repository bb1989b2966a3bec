"""Check stage, second half: the fleet's findings gathered, the auditors' reviews applied, the merge gate.

A review whose recorded value no longer matches the finding reopens it; a review whose finding has gone
is stale.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import replace

from registry.core.model import Review
from registry.core.results import Discrepancy
from registry.core.rulebook import OPEN_STATES, SEVERITIES


def check_fleet(findings: Iterable[Discrepancy], reviews: Mapping[str, Review]) -> list[Discrepancy]:
    """Every finding of the fleet (the rules' output, aircraft by aircraft), sorted by id, with the
    reviews applied."""
    found = sorted(findings, key=lambda item: item.id)
    return apply_reviews(found, reviews)


def apply_reviews(found: list[Discrepancy], reviews) -> list[Discrepancy]:
    """Attach each review to its discrepancy; a review whose value no longer matches reopens it."""
    out = []
    for item in found:
        review: Review | None = reviews.get(item.id)
        if review is None:
            out.append(item)
            continue
        seen = review.value_seen
        changed = seen is not None and not same_value(seen, item.value)
        out.append(replace(item, review="reopened" if changed else review.state, reviewer=review.reviewer,
                           review_comment=review.comment, review_reference=review.reference))
    return out


def stale_reviews(found: list[Discrepancy], reviews) -> list[Review]:
    """Reviews whose discrepancy no longer exists."""
    ids = {item.id for item in found}
    return [review for key, review in reviews.items() if key not in ids]


def same_value(seen, value) -> bool:
    """A reviewer's recorded value matches the current one (numbers to 0.1 % or 0.001)."""
    if isinstance(seen, (int, float)) and isinstance(value, (int, float)):
        return abs(seen - value) <= max(1e-3, 1e-3 * abs(value))
    return str(seen) == str(value)


def is_open(item: Discrepancy) -> bool:
    return item.review in OPEN_STATES


def gate_fails(found: list[Discrepancy]) -> bool:
    """True when a discrepancy of the top severity is open: `check` then exits 1."""
    return any(item.severity == SEVERITIES[0] and is_open(item) for item in found)
