"""The technician's card of an installation ("before a job"): what to bring and where it is.

Plain data for `partials/technician_card.html`, from the registry alone: the antenna and its serial, the
connectors at each end of the feeder, the adapters by part number, the radio unit and its rack position,
the splitter and the services sharing the antenna, the access panel, the last bonding measurement and the
operator's manual references. A value the register does not give is said to be not recorded.
"""
from __future__ import annotations

from typing import Any

from registry.core.model import Aircraft, Installation
from registry.core.hardware import ConnectorEnd
from registry.site.format import exact, location_text, words

NOT_RECORDED = "not recorded"
MANUAL_KINDS = {"maintenance": "Maintenance", "wiring": "Wiring", "parts": "Parts", "other": "Other"}


def end_text(end: ConnectorEnd | None) -> str:
    """`TNC, male` or not recorded."""
    return f"{end.connector}, {end.gender}" if end is not None else NOT_RECORDED


def shared_text(aircraft: Aircraft, installation: Installation) -> str:
    """Which services share this installation's antenna, and through what (empty when none)."""
    splitter = installation.splitter
    if splitter is None:
        return ""
    owner = installation.shared_from or installation.position
    named = [f"{position} ({aircraft.installations[position].service})" if position in aircraft.installations
             else position for position in (owner, *splitter.feeds) if position != installation.position]
    through = f"through {splitter.kind} {splitter.part_number} ({exact(splitter.loss_db, 'dB')} to each port)"
    if installation.shared_from:
        return f"uses the antenna of {named[0]} {through}" + (f"; also feeds {', '.join(named[1:])}"
                                                              if len(named) > 1 else "")
    return f"the antenna also feeds {', '.join(named)} {through}"


def technician_card(aircraft: Aircraft, installation: Installation, coord_unit: str) -> dict[str, Any]:
    """What the card shows: `bring` (what to take to the aircraft), `where` (where things are), `manuals`."""
    run = installation.feeder
    bonding = installation.bonding
    unit = run.radio_unit
    bring = [
        ("Antenna", installation.antenna + (f", serial {installation.antenna_serial}"
                                            if installation.antenna_serial else ", serial not recorded")),
        ("Cable", f"{run.cable}, {exact(run.length_m, 'm')}, {run.connectors} connector pair"
                  f"{'s' * (run.connectors != 1)}"),
        ("Connector at the antenna", end_text(run.antenna_end)),
        ("Connector at the radio", end_text(run.radio_end)),
        ("Adapters", "; ".join(part.part_number + (f" ({part.description})" if part.description else "")
                               for part in run.adapter_parts)
         or (f"{run.adapters}, part numbers not recorded" if run.adapters else "none")),
    ]
    if installation.splitter is not None:
        bring.append((installation.splitter.kind.capitalize(), shared_text(aircraft, installation)))
    if installation.amplifier is not None:
        bring.append(("Antenna amplifier", f"active antenna: gain {exact(installation.amplifier.gain_db, 'dB')}, "
                                           f"noise figure {exact(installation.amplifier.noise_figure_db, 'dB')}"))
    where = [
        ("Antenna", f"{location_text(installation.location, coord_unit)}, {words(installation.surface)}"),
        ("Access panel", installation.access_panel or NOT_RECORDED),
        ("Radio unit", (unit.part_number + (f", rack {unit.rack}" if unit.rack else ", rack position not recorded"))
         if unit is not None else NOT_RECORDED),
        ("Last bonding measurement", f"{exact(bonding.resistance_milliohm, 'mΩ')} on {bonding.date.isoformat()} "
                                     "(shown as measured: the policy sets no bonding limit)"
         if bonding is not None else NOT_RECORDED),
    ]
    manuals = [{"kind": MANUAL_KINDS.get(ref.kind, ref.kind), "ref": ref.ref, "title": ref.title}
               for ref in installation.manuals]
    recorded = any(value != NOT_RECORDED for _, value in bring[2:4] + where[1:]) or bool(manuals)
    return {"bring": bring, "where": where, "manuals": manuals, "recorded": recorded}
