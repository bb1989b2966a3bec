"""The rules' names and severities, and the review states: one table each, read by every stage.

A finding's id ends with its rule's name (`<aircraft>/<position>/<rule>`), reviews.yaml names rules,
`check --severity` filters on severities, and the site colours by them: all read them from here.
"""
from __future__ import annotations

SEVERITIES = ("blocking", "concern", "advisory")
"""Severity names, most severe first. `blocking` left open makes `check` exit 1: the installation cannot
do its job as recorded; `concern` an engineer must judge it; `advisory` the record needs attention."""

RULE_SEVERITY = {
    "element-length": "concern",
    "band-coverage": "blocking",
    "vswr-bandwidth": "concern",
    "measured-vswr": "blocking",
    "feeder-loss": "concern",
    "impedance-match": "blocking",
    "cable-frequency": "blocking",
    "isolation": "concern",
    "ground-plane": "blocking",
    "antenna-suitability": "concern",
    "measurement-age": "advisory",
    "missing-data": "advisory",
    "unmodellable": "concern",
    "cosite": "blocking",
    "cosite-small": "concern",
    "skin-position": "concern",
    "coverage": "concern",
    "ground-plane-effect": "concern",
}
"""Every rule (in the order docs/registry-format.md lists them) and its severity."""

RULES = tuple(RULE_SEVERITY)
"""Rule names a discrepancy id ends with."""

REVIEW_STATES = ("accepted", "action-raised", "no-fault")
"""Dispositions an auditor records in reviews.yaml."""

OPEN_STATES = ("open", "reopened")
"""Derived states: no review yet, or the value changed since the reviewer saw it."""

ALL_STATES = OPEN_STATES + REVIEW_STATES

FAULT_REMAINS_STATES = ("action-raised",)
"""Dispositions that leave the fault fitted (an action raised is not an action done): the finding stays
open for the merge gate, the chips and the counts unless the policy's `action_raised_counts_open` is false."""
