"""Numbers as a reader takes them in, by quantity: the one rule for the terminal, the diff and the site
(`site/format.py` formats the site's numbers through it; output/ cannot import site/).

Digits by unit, chosen for what the figure is good to (common practice, no source; the model figures
are estimates, so more digits would claim more than they know):
  dB, dBi, dBm, dBc   0.01 dB below 10, 0.1 dB above (a connector pair is 0.1–0.2 dB)
  %                   0.1 % (0 decimals from 100 %)
  m                   1 mm below 1 m, 1 cm below 100 m, 0.1 m above; mm: 0.01 mm below 10 mm, then 0.1, 1
  MHz                 1 kHz (channel raster 8.33 kHz; band edges like 117.975 MHz stay as written)
  Ω                   0.1 Ω below 100 Ω, 1 Ω above
  °                   0.1°; days: whole days
  VSWR                n.nn:1 always (the ratio of maximum to minimum voltage; a figure key or rule names it)
  anything else       4 significant digits
Trailing zeros are dropped (VSWR keeps two decimals). A value too small for its unit's decimals keeps
two significant digits rather than reading 0. Full precision stays in record.json and the exports.
"""
from __future__ import annotations

import math
from typing import Any

VSWR_KEYS = frozenset({"measured.vswr", "sweep.max_vswr", "vswr.max_in_band", "ground.shift_vswr",
                       "measured-vswr", "vswr"})
"""Figure keys and rule names whose value is a VSWR."""

DB_UNITS = frozenset({"dB", "dBi", "dBm", "dBc", "dBd", "dBW"})
NOT_APPLICABLE = "n/a"
"""A figure that does not apply (a cut that never falls 3 dB): shown without its unit."""


def is_vswr(key: str = "", unit: str = "") -> bool:
    return unit == ":1" or key in VSWR_KEYS


FIXED_DECIMALS = {"MHz": 3, "GHz": 4, "kHz": 1, "°": 1, "deg": 1, "days": 0, "λ": 2}
"""Units whose decimals do not depend on the size of the value."""


def decimals(value: float, unit: str) -> int | None:
    """Decimal places for a value of this unit; None for "4 significant digits"."""
    size = abs(value)
    if unit in DB_UNITS:
        return 2 if size < 10 else 1
    if unit in FIXED_DECIMALS:
        return FIXED_DECIMALS[unit]
    if unit == "%":
        return 1 if size < 100 else 0
    if unit == "m":
        return 3 if size < 1 else 2 if size < 100 else 1
    if unit == "mm":
        return 2 if size < 10 else 1 if size < 100 else 0
    if unit == "Ω":
        return 1 if size < 100 else 0
    return None


def plain_number(value: float, places: int | None, keep_zeros: bool = False) -> str:
    """`value` to `places` decimals (or 4 significant digits), trailing zeros dropped unless kept."""
    if places is None:
        places = 0 if value == 0 else max(0, 3 - math.floor(math.log10(abs(value))))
    elif value != 0 and round(value, places) == 0:
        places = max(places, 1 - math.floor(math.log10(abs(value))))  # two significant digits
    text = f"{value:.{min(places, 10)}f}"
    if not keep_zeros and "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def number_text(value: Any, unit: str = "", key: str = "", minus: str = "-") -> str:
    """A value with its unit as a reader takes it in (see the module's table); text as it is."""
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if not isinstance(value, (int, float)):
        text = str(value)
        return f"{text} {unit}" if unit and text else text
    if isinstance(value, float) and math.isnan(value):
        return NOT_APPLICABLE
    if isinstance(value, float) and math.isinf(value):
        return ("∞" if value > 0 else minus + "∞") + (f" {unit}" if unit else "")
    if is_vswr(key, unit):
        return plain_number(float(value), 2, keep_zeros=True) + ":1"
    if isinstance(value, int) and unit not in DB_UNITS:
        text = str(value)
    else:
        text = plain_number(float(value), decimals(float(value), unit))
    text = text.replace("-", minus) if text.startswith("-") else text
    return f"{text} {unit}" if unit else text
