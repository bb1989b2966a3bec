"""Where an installation may sit: inside its airframe's own extent, which a schema cannot know.

The extent is the box the airframe file describes (fuselage from nose to tail, its width and height
about the centreline, the wing's span and swept tips, the fin's height and swept tip), widened on each
side by `MARGIN_FRACTION` of the fuselage length, so an antenna on a tail cone, a wing-tip pod or a fin
cap is accepted and an STA of 9750 for 975 (or 1e308) is not. Common practice, no source: a margin wide
enough for any fitting on the outside of the airframe, narrow enough to catch a slipped decimal point.
"""
from __future__ import annotations

import math
from typing import NamedTuple

from registry.core.errors import Problem
from registry.core.model import Aircraft, Airframe, Location

MARGIN_FRACTION = 0.1
"""How far beyond the airframe's outline an installation may sit, as a fraction of the fuselage length."""


class Span(NamedTuple):
    """A closed range of one coordinate, in the airframe's coord_unit."""

    low: float
    high: float

    def holds(self, value: float) -> bool:
        return self.low <= value <= self.high


class Extent(NamedTuple):
    """The ranges of STA, BL and WL an installation on an airframe may take."""

    sta: Span
    bl: Span
    wl: Span


def extent(airframe: Airframe) -> Extent:
    """The airframe's outline as STA, BL and WL ranges, with the margin on every side."""
    body = airframe.fuselage
    margin = MARGIN_FRACTION * abs(body.tail_sta - body.nose_sta)
    sta_high = max(body.nose_sta, body.tail_sta)
    half_width = body.width / 2
    wl_high = body.centreline_wl + body.height / 2
    if airframe.wing is not None:
        wing = airframe.wing
        sweep_run = wing.span / 2 * math.tan(math.radians(wing.sweep_deg))
        sta_high = max(sta_high, wing.root_le_sta + wing.root_chord + max(sweep_run, 0.0))
        half_width = max(half_width, wing.span / 2)
    if airframe.fin is not None:
        fin = airframe.fin
        sweep_run = fin.height * math.tan(math.radians(fin.sweep_deg))
        sta_high = max(sta_high, fin.root_le_sta + fin.root_chord + max(sweep_run, 0.0))
        wl_high += fin.height
    sta_low = min(body.nose_sta, body.tail_sta)
    wl_low = body.centreline_wl - body.height / 2
    return Extent(Span(sta_low - margin, sta_high + margin), Span(-half_width - margin, half_width + margin),
                  Span(wl_low - margin, wl_high + margin))


_WORDS = {"sta": "a station (STA)", "bl": "a buttock line (BL)", "wl": "a water line (WL)"}


def check_locations(fleet: list[Aircraft], airframes: dict[str, Airframe]) -> list[Problem]:
    """A problem for each installation coordinate outside its airframe's extent (an airframe that did not
    load is not checked against)."""
    problems: list[Problem] = []
    for aircraft in fleet:
        airframe = airframes.get(aircraft.airframe)
        if airframe is None:
            continue
        box = extent(airframe)
        for installation in aircraft.installations.values():
            problems += _outside(installation.location, box, airframe)
    return problems


def _outside(location: Location, box: Extent, airframe: Airframe) -> list[Problem]:
    problems = []
    for name in ("sta", "bl", "wl"):
        value, span = getattr(location, name), getattr(box, name)
        if span.holds(value):
            continue
        problems.append(Problem.at(
            location.where(name), location.field_path(name), f"{value:g}",
            f"{_WORDS[name]} within the airframe {airframe.id}, from {span.low:g} to {span.high:g} "
            f"{airframe.coord_unit} (its outline with a margin of {MARGIN_FRACTION:.0%} of its length)"))
    return problems
