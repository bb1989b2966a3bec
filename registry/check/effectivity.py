"""Effectivity of modifications: one aircraft's register against the fleet's modifications file.

Two rules, both configuration bookkeeping (no physics, no threshold but agreement):

- `embodiment` (query): a modification the fleet's file marks embodied on the aircraft fits an installation
  the aircraft's register does not hold (or holds with another service or antenna model than the
  modification names), or takes off one the register still holds. Where several embodied modifications
  touch one position, the latest embodied (by date, then reference) decides what the position must be.
  Id `<aircraft>/<position>/embodiment`.
- `embodiment-record` (note): the aircraft file's `modifications` list (the aircraft's own record of what
  was embodied on it) and the fleet's file disagree about a modification the fleet's file describes: listed
  in one and not embodied in the other, or embodied on different dates. Id `<aircraft>/<reference>/embodiment-record`
  (the modification's reference stands where a position would). A reference the fleet's file does not
  describe is the aircraft's own record and is not compared.
"""
from __future__ import annotations

from datetime import date
from typing import NamedTuple

from registry.core.effectivity import Embodiment, FleetModification, ModInstallation
from registry.core.model import Aircraft, Fleet, Modification
from registry.core.results import Discrepancy
from registry.core.rulebook import RULE_SEVERITY
from registry.core.sources import where

METHOD = ("comparison of the register with the fleet's modifications file (common practice, no source: "
          "configuration bookkeeping, the register must hold the aircraft as modified)")

STATE_WORDS = {"embodied": "embodied", "planned": "planned", "recorded": "recorded on the aircraft only"}
"""The states a modification can show on an aircraft's page: the fleet file's two, and `recorded` for an entry
of the aircraft file that the fleet's file does not describe."""


class ModState(NamedTuple):
    """One modification as one aircraft sees it: its state, dates, and where the two records disagree."""

    ref: str
    title: str
    state: str                        # embodied, planned or recorded (EMBODIMENT_STATES + "recorded")
    date: date | None                 # date embodied (the fleet file's, else the aircraft file's)
    due: date | None                  # date planned for, if given
    recorded: Modification | None     # the aircraft file's entry
    described: FleetModification | None
    disagreement: str                 # "" when the two records agree


class _Index(NamedTuple):
    """The fleet's modifications by aircraft id (with the state there) and by reference."""

    made_of: tuple
    by_aircraft: dict[str, list[tuple[FleetModification, Embodiment]]]
    by_ref: dict[str, FleetModification]


_INDEX = [_Index((), {}, {})]
"""The last fleet's index (one fleet a run; forked workers inherit it)."""


def _index(fleet: Fleet) -> _Index:
    """Made once per fleet, so a fleet of a thousand aircraft and as many modifications is not scanned again
    for each aircraft."""
    if _INDEX[0].made_of is not fleet.modifications:
        by_aircraft: dict[str, list] = {}
        for mod in fleet.modifications:
            for entry in mod.effectivity:
                by_aircraft.setdefault(entry.aircraft, []).append((mod, entry))
        _INDEX[0] = _Index(fleet.modifications, by_aircraft, {mod.ref: mod for mod in fleet.modifications})
    return _INDEX[0]


def applying_to(fleet: Fleet, aircraft_id: str) -> list[tuple[FleetModification, Embodiment]]:
    """The modifications that name the aircraft, each with its state there, in the file's order."""
    return _index(fleet).by_aircraft.get(aircraft_id, [])


def aircraft_modifications(fleet: Fleet, aircraft: Aircraft) -> list[ModState]:
    """Every modification of the aircraft: those its own file records and those the fleet's file applies to it;
    those still to come (no date) first, then the dated ones newest first."""
    recorded = {mod.ref: mod for mod in aircraft.modifications}
    named = {mod.ref: (mod, entry) for mod, entry in applying_to(fleet, aircraft.id)}
    described = _index(fleet).by_ref
    states = []
    for ref in sorted(set(recorded) | set(named)):
        own, mod = recorded.get(ref), described.get(ref)
        entry = named[ref][1] if ref in named else None
        if mod is None:
            states.append(ModState(ref, own.summary, "recorded", own.date, None, own, None, ""))
            continue
        state = entry.state if entry else "recorded"
        when = entry.date if entry and entry.date else (own.date if own else None)
        states.append(ModState(ref, mod.title, state, when, entry.due if entry else None, own, mod,
                               _disagreement(own, entry)))
    return sorted(states, key=lambda s: (s.date is None, s.date or date.min, s.ref), reverse=True)


def _disagreement(own: Modification | None, entry: Embodiment | None) -> str:
    """How the aircraft file's entry and the fleet file's state disagree, in words; "" if they agree."""
    if entry is None:
        return "the aircraft file lists it as embodied but modifications.yaml does not name this aircraft"
    if entry.state == "embodied" and own is None:
        return f"modifications.yaml has it embodied on {entry.date.isoformat()} but the aircraft file does not list it"
    if entry.state == "planned" and own is not None:
        return (f"the aircraft file lists it as embodied on {own.date.isoformat()} but modifications.yaml has it "
                "planned")
    if own is not None and entry.date != own.date:
        return (f"embodied on {entry.date.isoformat()} in modifications.yaml but on {own.date.isoformat()} in the "
                "aircraft file")
    return ""


def effectivity_discrepancies(fleet: Fleet, aircraft: Aircraft) -> list[Discrepancy]:
    """Both rules over one aircraft (nothing without a fleet modifications file)."""
    if not fleet.modifications:
        return []
    found = [_record_finding(aircraft, state) for state in aircraft_modifications(fleet, aircraft)
             if state.disagreement]
    for position, (mod, entry, change, added) in sorted(expected_positions(fleet, aircraft).items()):
        finding = _position_finding(aircraft, position, mod, entry, change, added)
        if finding is not None:
            found.append(finding)
    return found


def expected_positions(fleet: Fleet, aircraft: Aircraft) -> dict[str, tuple]:
    """Each position an embodied modification touches on the aircraft → (the latest such modification, its
    embodiment, the change, True if it adds the position); later embodiments replace earlier ones."""
    embodied = sorted(((mod, entry) for mod, entry in applying_to(fleet, aircraft.id) if entry.state == "embodied"),
                      key=lambda pair: (pair[1].date, pair[0].ref))
    positions: dict[str, tuple] = {}
    for mod, entry in embodied:
        for change in mod.removes:
            positions[change.position] = (mod, entry, change, False)
        for change in mod.adds:
            positions[change.position] = (mod, entry, change, True)
    return positions


def _position_finding(aircraft: Aircraft, position: str, mod: FleetModification, entry: Embodiment,
                      change: ModInstallation, added: bool) -> Discrepancy | None:
    fitted = aircraft.installations.get(position)
    when = f"{mod.ref}, embodied {entry.date.isoformat()}"
    if added and fitted is None:
        return _make("embodiment", aircraft, position, "absent", "present",
                     f"{when}, adds {position} but the register of {aircraft.registration} holds no {position}: "
                     "record the installation, or correct the modification's state.", where(entry, "state"))
    if added and change.service and fitted.service != change.service:
        return _make("embodiment", aircraft, position, fitted.service, change.service,
                     f"{when}, fits {position} for {change.service} but the register has it serving "
                     f"{fitted.service}.", where(fitted, "service"))
    if added and change.antenna and fitted.antenna != change.antenna:
        return _make("embodiment", aircraft, position, fitted.antenna, change.antenna,
                     f"{when}, fits antenna {change.antenna} at {position} but the register has "
                     f"{fitted.antenna} there.", where(fitted, "antenna"))
    if not added and fitted is not None:
        return _make("embodiment", aircraft, position, "present", "absent",
                     f"{when}, removes {position} but the register of {aircraft.registration} still holds it: "
                     "remove it from the register, or correct the modification's state.", where(fitted, "position"))
    return None


def _record_finding(aircraft: Aircraft, state: ModState) -> Discrepancy:
    entry = state.described.on(aircraft.id)
    src = where(entry, "state") if entry is not None else where(state.recorded, "ref")
    value = state.recorded.date.isoformat() if state.recorded else "not listed"
    limit = entry.date.isoformat() if entry is not None and entry.date else (entry.state if entry else "not named")
    return _make("embodiment-record", aircraft, state.ref, value, limit,
                 f"{state.ref}: {state.disagreement}; the two records must agree.", src)


def _make(rule: str, aircraft: Aircraft, position: str, value: str, limit: str, message: str,
          src: str) -> Discrepancy:
    return Discrepancy(id=f"{aircraft.id}/{position}/{rule}", rule=rule, severity=RULE_SEVERITY[rule],
                       aircraft=aircraft.id, position=position, value=value, limit=limit, unit="", message=message,
                       method=METHOD, src=src)
