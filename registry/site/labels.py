"""Words the pages show for the register's states, severities and figure groups."""
from __future__ import annotations

from registry.core.rulebook import SEVERITIES

SEVERITY_LABELS = {"blocking": "Blocking", "concern": "Concern", "advisory": "Advisory"}
STATUS_LABELS = {**SEVERITY_LABELS, "clear": "No open findings"}
STATE_LABELS = {"open": "Open", "reopened": "Reopened", "accepted": "Accepted",
                "action-raised": "Action raised", "no-fault": "No fault found"}

FIGURE_GROUPS = {
    "length": "Element length",
    "band": "Band coverage",
    "vswr": "Impedance and VSWR",
    "measured": "Measurement",
    "feeder": "Feeder",
    "ground": "Ground plane",
    "pattern": "Radiation pattern",
    "isolation": "Isolation",
    "cable": "Cable attenuation fit",
}
"""Headings of the figure tables, by the figure key's first part."""


def severity_rank(name: str) -> int:
    """Most severe first; anything that is not a severity ("clear") last."""
    return SEVERITIES.index(name) if name in SEVERITIES else len(SEVERITIES)
