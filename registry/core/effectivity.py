"""The fleet's modifications and their effectivity (`modifications.yaml`): which aircraft each one applies to,
its state on each, and the installations it adds or removes. Frozen dataclasses like the rest of the model
(`Fleet.modifications` holds them); the aircraft file's own `modifications` list stays the aircraft's record
of what was embodied on it (`model.Modification`)."""
from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from registry.core.base import Sourced

EMBODIMENT_STATES = ("planned", "embodied")
"""A modification's state on one aircraft: `planned` (not yet done there, optionally with a `due` date) or
`embodied` (done, with its `date`)."""


@dataclass(frozen=True, kw_only=True, slots=True)
class ModInstallation(Sourced):
    """An installation a modification adds or removes, by position; an added one may name the service and the
    antenna model it must have."""

    position: str
    service: str = ""
    antenna: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class Embodiment(Sourced):
    """A modification's state on one aircraft. `aircraft` is the aircraft id the file's `registration` or
    `serial` names (`named` is what the file wrote, e.g. "registration QX-TCA")."""

    aircraft: str
    named: str
    state: str
    date: date | None = None
    due: date | None = None


@dataclass(frozen=True, kw_only=True, slots=True)
class FleetModification(Sourced):
    """One modification of the fleet: its reference, title, the installations it adds and removes, and its
    state on each aircraft it applies to (in the file's order)."""

    ref: str
    title: str
    adds: tuple[ModInstallation, ...] = ()
    removes: tuple[ModInstallation, ...] = ()
    effectivity: tuple[Embodiment, ...] = ()

    def on(self, aircraft_id: str) -> Embodiment | None:
        """Its state on one aircraft, or None when it does not apply there."""
        return next((item for item in self.effectivity if item.aircraft == aircraft_id), None)


def position_services(aircraft, modifications: tuple[FleetModification, ...], positions: list[str]) -> list[str]:
    """The services of an aircraft's positions, in order: each fitted installation's, else the service a
    modification that applies to the aircraft names for a position it adds (an effectivity finding may
    name a position that is not fitted). A position with neither gives none."""
    out = []
    for position in positions:
        if position in aircraft.installations:
            out.append(aircraft.installations[position].service)
            continue
        named = next((added.service for mod in modifications if mod.on(aircraft.id) is not None
                      for added in mod.adds if added.position == position and added.service), "")
        if named:
            out.append(named)
    return out
