"""Check stage, second half: the fleet's findings gathered, the auditors' reviews applied, the merge gate.

A review whose recorded value no longer matches the finding reopens it; a review whose finding has gone
is stale. A disposition that leaves the fault fitted (`FAULT_REMAINS_STATES`: an action raised is not an
action done) keeps the finding open for the gate, the chips and the counts unless the policy's
`action_raised_counts_open` is false. Findings are in one order everywhere (`finding_order`: by id, so
within an aircraft by position, then rule), the order of the terminal, the site, the CSV and the record.
"""
from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import replace

from registry.core.model import Review
from registry.core.results import Discrepancy
from registry.core.rulebook import FAULT_REMAINS_STATES, OPEN_STATES, SEVERITIES


def finding_order(item: Discrepancy) -> str:
    """The one order of findings: by id (`<aircraft>/<position>/<rule>`), as record.json's keys are sorted."""
    return item.id


def check_fleet(findings: Iterable[Discrepancy], reviews: Mapping[str, Review], policy=None) -> list[Discrepancy]:
    """Every finding of the fleet (the rules' output, aircraft by aircraft), in `finding_order`, with the
    reviews applied under the policy's review switch."""
    found = sorted(findings, key=finding_order)
    return apply_reviews(found, reviews, action_raised_open(policy))


def action_raised_open(policy) -> bool:
    """The policy's switch: does an action raised keep its finding open? (Yes unless the policy says no.)"""
    return bool(getattr(policy, "action_raised_counts_open", True))


def apply_reviews(found: list[Discrepancy], reviews, action_raised_counts_open: bool = True) -> list[Discrepancy]:
    """Attach each review to its discrepancy; a review whose value no longer matches reopens it. Each
    finding's `is_open` says whether it still counts as open (`open_after`)."""
    out = []
    for item in found:
        review: Review | None = reviews.get(item.id)
        if review is None:
            out.append(replace(item, is_open=True))
            continue
        seen = review.value_seen
        changed = seen is not None and not same_value(seen, item.value)
        state = "reopened" if changed else review.state
        out.append(replace(item, review=state, reviewer=review.reviewer, review_comment=review.comment,
                           review_reference=review.reference, review_date=review.date.isoformat(),
                           is_open=open_after(state, action_raised_counts_open)))
    return out


def open_after(state: str, action_raised_counts_open: bool = True) -> bool:
    """A review state counts as open: open, reopened, or a disposition that leaves the fault fitted."""
    return state in OPEN_STATES or (action_raised_counts_open and state in FAULT_REMAINS_STATES)


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
    """Open for the gate and the counts, as `apply_reviews` decided under the policy."""
    return item.is_open


def gate_fails(found: list[Discrepancy]) -> bool:
    """True when a discrepancy of the top severity is open: `check` then exits 1."""
    return any(item.severity == SEVERITIES[0] and is_open(item) for item in found)
