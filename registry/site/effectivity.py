"""What the pages show of modifications: the fleet overview's table per modification (where it is embodied,
where it is still planned, where the register and the two records disagree) and the aircraft page's list of
its modifications with their state. The states and disagreements are the check stage's
(`check.effectivity`), so a page never says anything the findings do not."""
from __future__ import annotations

from typing import Any

from registry.check.effectivity import STATE_WORDS, aircraft_modifications, expected_positions
from registry.core.effectivity import FleetModification, ModInstallation
from registry.core.model import Aircraft
from registry.site.context import SiteData
from registry.site.pages_registry import line_href
from registry.site.paths import aircraft_path, anchor
from registry.site.views import discrepancy_view

EFFECTIVITY_RULES = ("embodiment", "embodiment-record")


def change_text(item: ModInstallation) -> str:
    """"HF1 (hf_com, TCA-HF-FP)", or the position alone when the modification names nothing else."""
    named = [text for text in (item.service, item.antenna) if text]
    return f"{item.position} ({', '.join(named)})" if named else item.position


def fleet_modification_views(data: SiteData) -> list[dict[str, Any]]:
    """One view per modification of the fleet's file, in the file's order, each with one row per aircraft:
    the aircraft it names, then any whose own file lists it without being named."""
    fleet = data.fleet
    owners: dict[tuple[str, str], str] = {}  # (aircraft, position) → the ref whose embodiment decides it
    recorded: dict[str, list[str]] = {}       # ref → the aircraft whose own file lists it
    for craft in fleet.aircraft.values():
        owners.update(((craft.id, position), mod.ref)
                      for position, (mod, *_) in expected_positions(fleet, craft).items())
        for own in craft.modifications:
            recorded.setdefault(own.ref, []).append(craft.id)
    views = []
    for mod in fleet.modifications:
        named = [item.aircraft for item in mod.effectivity]
        extra = [aircraft_id for aircraft_id in dict.fromkeys(recorded.get(mod.ref, ())) if aircraft_id not in named]
        rows = [_row(data, mod, fleet.aircraft[aircraft_id], owners) for aircraft_id in named + extra]
        views.append({
            "ref": mod.ref, "title": mod.title, "anchor": anchor(f"mod-{mod.ref}"),
            "adds": [change_text(item) for item in mod.adds], "removes": [change_text(item) for item in mod.removes],
            "rows": rows,
            "counts": {state: sum(1 for row in rows if row["state"] == state) for state in STATE_WORDS},
            "disagree": sum(1 for row in rows if row["findings"]),
        })
    return views


def _row(data: SiteData, mod: FleetModification, craft: Aircraft, owners: dict[tuple[str, str], str]) -> dict:
    entry = mod.on(craft.id)
    own = next((item for item in craft.modifications if item.ref == mod.ref), None)
    state = entry.state if entry else "recorded"
    when = entry.date if entry and entry.date else (own.date if own and not entry else None)
    findings = [discrepancy_view(data, item) for item in data.by_aircraft.get(craft.id, ())
                if item.rule in EFFECTIVITY_RULES
                and (item.position == mod.ref or owners.get((craft.id, item.position)) == mod.ref)]
    for view in findings:
        view["link"] = f"{aircraft_path(craft.id)}#d-{view['anchor']}"
    src = data.src_text(f"{entry.src.path}:{entry.src.line}") if entry else ""
    return {"registration": craft.registration, "href": aircraft_path(craft.id), "state": state,
            "state_text": STATE_WORDS[state], "date": when.isoformat() if when else "",
            "due": entry.due.isoformat() if entry and entry.due else "",
            "src": src, "src_href": line_href(src, data.fleet.data_dir) if src else None, "findings": findings}


def aircraft_modification_rows(data: SiteData, craft: Aircraft) -> list[dict[str, Any]]:
    """The aircraft page's modifications, newest first, with their state and any disagreement of the records."""
    return [{"ref": state.ref, "title": state.title, "state": state.state, "state_text": STATE_WORDS[state.state],
             "date": state.date.isoformat() if state.date else "", "due": state.due.isoformat() if state.due else "",
             "summary": state.recorded.summary if state.recorded else "",
             "fleet_href": f"index.html#{anchor('mod-' + state.ref)}" if state.described else "",
             "disagreement": state.disagreement}
            for state in aircraft_modifications(data.fleet, craft)]
