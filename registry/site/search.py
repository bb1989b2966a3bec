"""The site's search index: one entry per aircraft, installation, antenna model, cable and service, and one
per interference page (each aircraft's and each airframe type's).

The index is written as a JavaScript file that assigns a global (`window.AERIALBOOK_SEARCH`), loaded with
a plain <script> tag, so search works from file:// where a browser refuses to fetch JSON.
Entries are sorted and serialised with sorted keys so the file is byte-identical between builds.
"""
from __future__ import annotations

import json
from typing import Callable

from registry.core.model import Aircraft, Fleet, Installation
from registry.site.pages_cosite import cosite_path, type_cosite_path

Paths = dict[str, Callable[..., str]]


def entry(kind: str, title: str, url: str, keys: list[str], text: list[str]) -> dict[str, str]:
    """`keys` are exact identifiers (position ids, part numbers) that rank first; `text` is free text."""
    return {
        "kind": kind,
        "title": title,
        "url": url,
        "keys": " ".join(sorted({key.lower() for key in keys if key})),
        "text": " · ".join(part for part in text if part),
    }


def order(item: dict[str, str]) -> tuple[str, str, str]:
    """The index's order: by kind, then title, then address."""
    return item["kind"], item["title"], item["url"]


def aircraft_entries(fleet: Fleet, aircraft: Aircraft, plain_text: Callable[[str], str],
                     paths: Paths) -> list[dict[str, str]]:
    """The entries of one aircraft and its installations (notes as plain words)."""
    airframe = fleet.airframes.get(aircraft.airframe)
    entries = [entry(
        "aircraft", aircraft.registration, paths["aircraft"](aircraft.id),
        [aircraft.id, aircraft.registration, aircraft.airframe, aircraft.serial or ""],
        [airframe.name if airframe else aircraft.airframe,
         f"serial {aircraft.serial}" if aircraft.serial else "",
         f"{len(aircraft.installations)} installations",
         *(f"{mod.ref}: {mod.summary}" for mod in aircraft.modifications)])]
    entries.append(interference_entry(fleet, aircraft))
    for installation in aircraft.installations.values():
        service = fleet.services.get(installation.service)
        model = fleet.antennas.get(installation.antenna)
        entries.append(entry(
            "installation", f"{aircraft.registration} {installation.position}",
            paths["installation"](aircraft.id, installation.position),
            [installation.position, aircraft.registration, aircraft.id, installation.antenna,
             installation.feeder.cable, installation.service, *hardware_keys(installation)],
            [service.name if service else installation.service,
             f"{installation.antenna} {model.description if model else ''}".strip(),
             f"{installation.surface.replace('_', ' ')} surface",
             f"feeder {installation.feeder.cable}",
             *hardware_text(installation),
             plain_text(installation.notes)]))
    return entries


def interference_entry(fleet: Fleet, aircraft: Aircraft) -> dict[str, str]:
    """The aircraft's interference page: its transmitters and the receivers analysed (with a protection
    threshold in the service table or policy) and those not analysed, from the model alone."""
    transmitters, analysed, not_analysed = [], [], []
    for installation in aircraft.installations.values():
        service = fleet.services.get(installation.service)
        if service is None:
            continue
        override = fleet.policy.cosite_services.get(service.id, {})
        if service.transmits:
            transmitters.append(installation.position)
        threshold = override["protection_dbm"][0] if "protection_dbm" in override else service.protection_dbm
        own = installation.radio.protection_dbm if installation.radio is not None else None
        (analysed if threshold is not None or own is not None else not_analysed).append(installation.position)
    return entry("interference", f"{aircraft.registration} interference", cosite_path(aircraft.id),
                 [aircraft.registration, aircraft.id],
                 ["co-site interference: harmonics and intermodulation between its radios, margins against "
                  "each receiver's protection threshold",
                  f"transmitters {', '.join(transmitters)}" if transmitters else "",
                  f"receivers analysed {', '.join(analysed)}" if analysed else "",
                  f"not analysed (no protection threshold) {', '.join(not_analysed)}" if not_analysed else ""])


def catalogue_entries(fleet: Fleet, paths: Paths) -> list[dict[str, str]]:
    """The entries of the antenna models, cables and services."""
    entries = []
    for model in fleet.antennas.values():
        entries.append(entry("antenna model", model.id, paths["antenna"](model.id), [model.id],
                             [model.description, model.kind.replace("_", " "), f"{model.polarisation} polarisation"]))
    for cable in fleet.cables.values():
        entries.append(entry("cable", cable.id, paths["cable"](cable.id), [cable.id],
                             [cable.designation, f"{cable.impedance_ohm:g} ohm"]))
    for service in fleet.services.values():
        entries.append(entry("service", service.name, paths["service"](service.id), [service.id],
                             [service.group, service.coverage.replace("_", " "), service.source]))
    for airframe in fleet.airframes.values():
        if any(aircraft.airframe == airframe.id for aircraft in fleet.aircraft.values()):
            entries.append(entry("interference", f"{airframe.name} interference", type_cosite_path(airframe.id),
                                 [airframe.id], ["co-site interference every aircraft of the type shares"]))
    return entries


def index_script(entries: list[dict[str, str]]) -> str:
    """The index as a script that sets `window.AERIALBOOK_SEARCH`."""
    payload = json.dumps(entries, ensure_ascii=False, sort_keys=True, separators=(",", ":"))
    # keep "</script" and line separators harmless whatever the data holds
    payload = payload.replace("</", "<\\/").replace("\u2028", "\\u2028").replace("\u2029", "\\u2029")
    return f"window.AERIALBOOK_SEARCH = {payload};\n"


def hardware_keys(installation: Installation) -> list[str]:
    """The installation's hardware identifiers a technician may type: connector types, part numbers (adapters,
    radio unit, splitter), the antenna's serial number, the access panel and the manual references."""
    run = installation.feeder
    keys = [end.connector for end in (run.antenna_end, run.radio_end) if end is not None]
    keys += [part.part_number for part in run.adapter_parts]
    keys += [run.radio_unit.part_number] if run.radio_unit is not None else []
    keys += [installation.splitter.part_number] if installation.splitter is not None else []
    keys += [installation.antenna_serial, installation.access_panel, installation.shared_from or ""]
    return keys + [ref.ref for ref in installation.manuals]


def hardware_text(installation: Installation) -> list[str]:
    """The same hardware in words: `TNC male connector at the antenna`, `radio unit ... rack ...`, ..."""
    run = installation.feeder
    text = [f"{end.connector} {end.gender} connector at the {side}"
            for side, end in (("antenna", run.antenna_end), ("radio", run.radio_end)) if end is not None]
    text += [f"adapter {part.part_number} {part.description}".strip() for part in run.adapter_parts]
    if run.radio_unit is not None:
        text.append(f"radio unit {run.radio_unit.part_number} rack {run.radio_unit.rack}".strip())
    if installation.splitter is not None:
        text.append(f"{installation.splitter.kind} {installation.splitter.part_number}"
                    + (f", antenna of {installation.shared_from}" if installation.shared_from else ""))
    if installation.amplifier is not None:
        text.append("active antenna with amplifier")
    if installation.antenna_serial:
        text.append(f"antenna serial {installation.antenna_serial}")
    if installation.access_panel:
        text.append(f"access panel {installation.access_panel}")
    return text + [f"{ref.kind} manual {ref.ref} {ref.title}".strip() for ref in installation.manuals]
