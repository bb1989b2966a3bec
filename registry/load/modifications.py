"""The fleet's modifications file (`modifications.yaml`, optional): built into `FleetModification`s and checked
for what its schema cannot say: each reference once, each aircraft named once per modification and known to
the register, a date only where the state has one, a position not both added and removed, and the services
and antenna models an added installation names known to the tables."""
from __future__ import annotations

from typing import Any

from registry.core.effectivity import Embodiment, FleetModification, ModInstallation
from registry.core.errors import Problem
from registry.core.model import Aircraft
from registry.load.build import Doc, iso_date
from registry.load.integrity import Catalogue, duplicates, problem, reference
from registry.load.schemacheck import suggest


def build(doc: Doc, aircraft: list[Aircraft]) -> tuple[list[FleetModification], list[Problem]]:
    """The file's modifications, each aircraft named by registration or serial resolved to its id; with the
    problems of aircraft that could not be resolved (left out of the effectivity)."""
    by_registration = {craft.registration.casefold(): (craft.id, craft.registration) for craft in aircraft}
    by_serial = {craft.serial: craft.id for craft in aircraft if craft.serial}
    mods, problems = [], []
    for n, item in enumerate(doc.data["modifications"]):
        effectivity = []
        for k, entry in enumerate(item["effectivity"]):
            made = _embodiment(doc, ("modifications", n, "effectivity", k), entry, by_registration, by_serial)
            if isinstance(made, Problem):
                problems.append(made)
            else:
                effectivity.append(made)
        mods.append(FleetModification(
            **doc.at("modifications", n), ref=item["ref"], title=item["title"],
            adds=_installations(doc, n, "adds", item), removes=_installations(doc, n, "removes", item),
            effectivity=tuple(effectivity)))
    return mods, problems


def _installations(doc: Doc, n: int, key: str, item: dict[str, Any]) -> tuple[ModInstallation, ...]:
    return tuple(ModInstallation(**doc.at("modifications", n, key, k), position=entry["position"],
                                 service=entry.get("service", ""), antenna=entry.get("antenna", ""))
                 for k, entry in enumerate(item.get(key, ())))


def _embodiment(doc: Doc, parts: tuple, entry: dict[str, Any], by_registration: dict[str, tuple[str, str]],
                by_serial: dict[str, str]) -> Embodiment | Problem:
    """One aircraft's state, or the problem of an aircraft the register does not hold."""
    key = "registration" if "registration" in entry else "serial"
    named = entry[key]
    known = by_registration if key == "registration" else by_serial
    found = known.get(named.casefold() if key == "registration" else named)
    aircraft_id = found[0] if isinstance(found, tuple) else found
    at = doc.at(*parts)
    if aircraft_id is None:
        choices = sorted(known) if key == "serial" else sorted(by_registration[name][1] for name in known)
        return Problem.at(at["locator"].where(key), at["locator"].field_path(key), f"'{named}'",
                          f"the {key} of an aircraft in aircraft/{suggest(named, choices)}")
    return Embodiment(**at, aircraft=aircraft_id, named=f"{key} {named}", state=entry["state"],
                      date=iso_date(entry["date"]) if "date" in entry else None,
                      due=iso_date(entry["due"]) if "due" in entry else None)


def check(mods: list[FleetModification], known: Catalogue) -> list[Problem]:
    """What the schema cannot check in the modifications file."""
    problems = duplicates(mods, "ref", "modification reference")
    for mod in mods:
        seen: dict[str, Embodiment] = {}
        for item in mod.effectivity:
            first = seen.setdefault(item.aircraft, item)
            if first is not item:
                key, named = item.named.split(" ", 1)
                problems.append(problem(item, key, f"'{named}' again (the same aircraft as line {first.src.line})",
                                        "each aircraft once per modification"))
            if item.state == "planned" and item.date is not None:
                problems.append(problem(item, "date", "a date embodied on a planned modification",
                                        "no date while planned (give the planned date as 'due')"))
            if item.state == "embodied" and item.due is not None:
                problems.append(problem(item, "due", "a due date on an embodied modification",
                                        "only the date embodied ('date') once embodied"))
        removed = {item.position: item for item in mod.removes}
        for item in mod.adds:
            if item.position in removed:
                problems.append(problem(item, "position", f"'{item.position}' both added and removed",
                                        "each position either added or removed by one modification"))
            if item.service:
                problems += reference(item, "service", item.service, known.services,
                                      "a service id from the shipped table or services.yaml")
            if item.antenna:
                problems += reference(item, "antenna", item.antenna, known.antennas,
                                      "an antenna model id from antennas.yaml")
    return problems
