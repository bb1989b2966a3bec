"""Words the pages show for the register's states, severities and figure groups."""
from __future__ import annotations

from registry.core.rulebook import FAULT_REMAINS_STATES, SEVERITIES

SEVERITY_LABELS = {"unserviceable": "Unserviceable", "query": "Query", "note": "Note"}
STATUS_LABELS = {**SEVERITY_LABELS, "clear": "No open findings"}
STATE_LABELS = {"open": "Open", "reopened": "Reopened", "accepted": "Accepted",
                "action-raised": "Action raised", "no-fault": "No fault found",
                "action-raised-open": "Action raised, fault still fitted: open"}
STATE_KEYS = ("open", "reopened", "action-raised-open", "accepted", "action-raised", "no-fault")
"""What a page shows of a finding's review (`state_key`), in the order tables and filters list them."""

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


def state_key(review: str, is_open: bool) -> str:
    """The badge of a review: "action-raised-open" for a disposition that leaves the fault fitted and so
    still counts as open (`check.reviews.open_after`), else the state itself."""
    return f"{review}-open" if is_open and review in FAULT_REMAINS_STATES else review


UNIT_SUFFIXES = {"m": "m", "mm": "mm", "mhz": "MHz", "ghz": "GHz", "ohm": "Ω", "deg": "°", "db": "dB",
                 "dbi": "dBi", "pct": "%", "days": "days", "wavelengths": "λ"}
"""A registry field's last word when it names the field's unit (`element_diameter_m` is in metres)."""

FIELD_WORDS = {"bl": "BL", "wl": "WL", "sta": "STA", "vswr": "VSWR", "hf": "HF", "vhf": "VHF", "uhf": "UHF"}


def field_label(name: str) -> tuple[str, str]:
    """A registry field name as words and its unit: "element_diameter_m" → ("Element diameter", "m")."""
    parts = name.split("_")
    unit = UNIT_SUFFIXES.get(parts[-1], "") if len(parts) > 1 else ""
    if unit:
        parts = parts[:-1]
    text = " ".join(FIELD_WORDS.get(part, part) for part in parts)
    return (text[:1].upper() + text[1:]), unit
