"""The rules' names and severities, and the review states: one table each, read by every stage.

A finding's id ends with its rule's name (`<aircraft>/<position>/<rule>`), reviews.yaml names rules,
`check --severity` filters on severities, and the site colours by them: all read them from here.
"""
from __future__ import annotations

SEVERITIES = ("unserviceable", "query", "note")
"""Severity names, most severe first. `unserviceable` left open makes `check` exit 1: the installation cannot
do its job as recorded; `query` an engineer must judge it; `note` the record needs attention."""

RULE_SEVERITY = {
    "element-length": "query",
    "band-coverage": "unserviceable",
    "vswr-bandwidth": "query",
    "measured-vswr": "unserviceable",
    "feeder-loss": "query",
    "impedance-match": "unserviceable",
    "cable-frequency": "unserviceable",
    "isolation": "query",
    "ground-plane": "unserviceable",
    "antenna-suitability": "query",
    "measurement-age": "note",
    "missing-data": "note",
    "unmodellable": "query",
    "cosite": "unserviceable",
    "cosite-small": "query",
    "skin-position": "query",
    "coverage": "query",
    "ground-plane-effect": "query",
    "embodiment": "query",
    "embodiment-record": "note",
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
