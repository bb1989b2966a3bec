#!/usr/bin/env python3
"""Synthetic fleet generator: a complete, deterministic registry folder of N invented aircraft.

    python bench/synth_fleet.py N OUT_DIR [--seed S] [--installations 30] [--fault-rate 0.01]

The catalogues, policy, fleet file, airframe types and the measured sweeps the aircraft reference are
copied from the demo registry (fleet_data/); reviews.yaml is written empty. Each aircraft is drawn from
one of the demo's airframe types and built from that type's demo aircraft:

* templates: every position that appears on a demo aircraft of the type, taken from an aircraft on which
  the demo's own check finds nothing wrong with it (the demo's planted problems are not copied);
* extra positions to reach the requested count (third and fourth VHF, second GNSS, satcom, extra radio
  altimeters, a second glide slope and VOR, ...), placed by fraction of the fuselage and nudged until
  they are well clear of every other antenna (further still from one the policy wants isolated);
* per-aircraft variation: a choice among the sound demo variants of each position, small STA/BL shifts,
  feeder lengths within a few percent, fresh measured VSWR and dates, delivery and modification dates;
* a fleet modifications file (`modifications.yaml`): each modification reference the aircraft record, embodied
  where recorded with the installations its package fitted, planned on one more aircraft (no finding);
* planted faults, a seeded fraction of all installations, cycling through three kinds: a long feeder
  (feeder-loss), an old measurement (measurement-age) and a wrong cable (cable-frequency or
  impedance-match). `generate` returns them so a test can look for each one.

Dates are drawn relative to AS_OF; set SOURCE_DATE_EPOCH=AS_OF_EPOCH when checking or building the
generated registry so its measurement ages, and therefore its report, are reproducible.
The same arguments always write byte-identical files.
"""
from __future__ import annotations

import argparse
import functools
import itertools
import math
import random
import shutil
import sys
from collections import defaultdict
from dataclasses import dataclass, field
from datetime import UTC, date, datetime, timedelta
from pathlib import Path

import yaml

ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

DEMO_DIR = ROOT / "fleet_data"
AS_OF = date(2026, 9, 30)
"""The day the synthetic registry speaks for: measurement dates are drawn back from it."""
AS_OF_EPOCH = int(datetime(AS_OF.year, AS_OF.month, AS_OF.day, tzinfo=UTC).timestamp())

DEFAULT_SEED = 1
DEFAULT_INSTALLATIONS = 30
DEFAULT_FAULT_RATE = 0.01
COPIED_FILES = ("fleet.yaml", "policy.yaml", "services.yaml", "antennas.yaml", "cables.yaml")
SCHEMA_LINE = "# yaml-language-server: $schema=../{up}registry/schemas/{kind}.schema.json\n"

FAULT_KINDS = ("long-feeder", "old-measurement", "wrong-cable")
MONOPOLE_KINDS = {"quarter_wave_monopole"}
FT_PER_100 = 30.48  # metres in 100 ft


@dataclass(frozen=True)
class Extra:
    """An extra position: where it goes (fractions of the airframe) and what it carries."""

    position: str
    service: str
    antenna: str
    surface: str        # top | bottom | nose | fin
    frac: float         # top/bottom: fraction of the fuselage length; nose: fraction; fin: fraction of fin height
    bl_frac: float      # fraction of the fuselage half-width (right positive)
    cable: str
    package: str        # the modification that fitted it
    fixed_length_m: float | None = None  # a local unit (altimeter, ELT) rather than a run to the racks


EXTRAS = (
    Extra("VHF3", "vhf_com", "TCA-120-BLD", "top", 0.66, 0.0, "RG-400", "vhf"),
    Extra("GNSS2", "gnss_l1", "TCA-1575-GPS", "top", 0.54, 0.0, "TCX-LL7", "gnss"),
    Extra("SAT", "satcom_l", "TCA-1600-SAT", "top", 0.44, 0.0, "TCX-LL7", "satcom", 4.0),
    Extra("VHF4", "vhf_com", "TCA-120-BLD", "bottom", 0.36, 0.0, "RG-393", "vhf"),
    Extra("ADF2", "adf", "TCA-ADF-XL", "bottom", 0.70, 0.0, "RG-58", "adf"),
    Extra("RA2-TX", "radio_altimeter", "TCA-4300-RAD", "bottom", 0.56, -0.25, "TCX-LL7", "ra", 3.8),
    Extra("RA2-RX", "radio_altimeter", "TCA-4300-RAD", "bottom", 0.56, 0.25, "TCX-LL7", "ra", 4.0),
    Extra("GS2", "ils_gs", "TCA-332-GSF", "nose", 0.05, 0.25, "RG-142", "nav"),
    Extra("VOR2", "vor", "TCA-113-VOR", "fin", 0.72, 0.0, "TCX-LL10", "nav"),
    Extra("DME3", "dme", "TCA-1087-DME", "bottom", 0.22, 0.12, "TCX-LL7", "lband"),
    Extra("XPDR2-T", "transponder", "TCA-1060-XPD", "top", 0.28, 0.0, "TCX-LL7", "lband"),
    Extra("XPDR2-B", "transponder", "TCA-1060-XPD", "bottom", 0.30, 0.0, "TCX-LL7", "lband"),
    Extra("GNSS3", "gnss_l1", "TCA-1575-GPS", "top", 0.46, 0.18, "TCX-LL7", "gnss"),
    Extra("MKR2", "marker", "TCA-075-MKR", "bottom", 0.74, 0.0, "RG-400", "nav"),
    Extra("ELT2", "elt", "TCA-121-ELT", "top", 0.76, 0.0, "RG-400", "elt", 2.5),
    Extra("RA3-TX", "radio_altimeter", "TCA-4300-RAD", "bottom", 0.64, -0.25, "TCX-LL7", "ra", 3.8),
    Extra("RA3-RX", "radio_altimeter", "TCA-4300-RAD", "bottom", 0.64, 0.25, "TCX-LL7", "ra", 4.0),
    Extra("VHF5", "vhf_com", "TCA-120-BLD", "bottom", 0.60, 0.0, "RG-393", "vhf"),
    Extra("ADF3", "adf", "TCA-ADF-XL", "bottom", 0.78, 0.0, "RG-58", "adf"),
    Extra("GS3", "ils_gs", "TCA-332-GSF", "nose", 0.05, -0.25, "RG-142", "nav"),
    Extra("DME4", "dme", "TCA-1087-DME", "bottom", 0.72, -0.12, "TCX-LL10", "lband"),
    Extra("GNSS4", "gnss_l1", "TCA-1575-GPS", "top", 0.46, -0.18, "TCX-LL7", "gnss"),
    Extra("SAT2", "satcom_l", "TCA-1600-SAT", "top", 0.30, 0.0, "TCX-LL7", "satcom", 4.0),
    Extra("MKR3", "marker", "TCA-075-MKR", "bottom", 0.82, 0.0, "RG-400", "nav"),
)
"""In the order they are added; the first (requested - template) of those a type lacks are used."""

PACKAGES = {
    "vhf": "Additional VHF communication and datalink antennas.",
    "gnss": "Additional GNSS L1 antennas for dual and triple navigation sensors.",
    "satcom": "L-band satellite communication terminal and its antenna.",
    "adf": "Additional ADF receiver and crossed-loop antenna.",
    "ra": "Additional radio altimeter with its transmit and receive antennas.",
    "nav": "Additional navigation receivers: glide slope, VOR and marker antennas.",
    "lband": "Additional DME and transponder antennas.",
    "elt": "Second emergency locator transmitter.",
}

MIN_SEPARATION_M = 0.6      # any two antennas on the same airframe
RULED_SEPARATION_M = 2.5    # two antennas whose services the policy wants isolated
SAME_PLACE_M = 0.15         # two demo template variants this close are one place


@dataclass
class Fault:
    """One planted fault: where, what kind, and the rule expected to flag it."""

    aircraft: str
    position: str
    kind: str
    rule: str

    @property
    def discrepancy(self) -> str:
        return f"{self.aircraft}/{self.position}/{self.rule}"


@dataclass
class Generated:
    """What `generate` wrote."""

    out_dir: Path
    aircraft: list[str] = field(default_factory=list)
    installations: int = 0
    faults: list[Fault] = field(default_factory=list)
    as_of: date = AS_OF


# ---- the demo registry as templates ------------------------------------------------------------------


@dataclass(frozen=True)
class Demo:
    fleet: object                     # registry.model.Fleet of the demo
    templates: dict                   # airframe id -> {position: [installation dicts (sound variants)]}
    weights: dict                     # airframe id -> number of demo aircraft of the type
    sweeps: dict                      # sweep path as written -> source file


@functools.lru_cache(maxsize=4)
def load_demo(demo_dir: Path = DEMO_DIR) -> Demo:
    """The demo registry loaded and checked once; its sound installations grouped by type and position.

    An installation is a template only if the demo's check names no discrepancy on it (measurement ages
    aside: every measurement date is drawn afresh here).
    """
    from registry import pipeline

    outcome = pipeline.run(demo_dir)
    faulty = set()
    for found in outcome.discrepancies:
        aircraft_id, positions, rule = found.id.split("/")
        if rule != "measurement-age":
            faulty.update((aircraft_id, position) for position in positions.split("+"))
    templates: dict[str, dict[str, list[dict]]] = defaultdict(dict)
    weights: dict[str, int] = defaultdict(int)
    sweeps: dict[str, Path] = {}
    for path in sorted((demo_dir / "aircraft").glob("*.yaml")):
        doc = yaml.safe_load(path.read_text(encoding="utf-8"))
        weights[doc["airframe"]] += 1
        for item in doc["installations"]:
            by_position = templates[doc["airframe"]].setdefault(item["position"], [])
            if (doc["id"], item["position"]) in faulty:
                continue
            sweep = (item.get("measured") or {}).get("sweep")
            if sweep:
                sweeps[sweep] = (path.parent / sweep).resolve()
            by_position.append(item)
    clean = {airframe: separate(positions, outcome.fleet, outcome.fleet.airframes[airframe].coord_unit)
             for airframe, positions in templates.items()}
    return Demo(outcome.fleet, clean, dict(weights), sweeps)


def separate(positions: dict[str, list[dict]], fleet, unit: str) -> dict[str, list[dict]]:
    """Template variants that can share one airframe: a variant in the same place as a kept variant of
    another position (the same antenna under another name, or two demo aircraft using one place for
    different antennas) is dropped. Positions with fewer distinct places are served first; order is kept."""
    kept: dict[str, list[dict]] = {}
    taken: list[dict] = []
    places = {name: {tuple(v["location"].values()) for v in variants} for name, variants in positions.items()}
    for name in sorted(positions, key=lambda name: len(places[name])):
        ok = [v for v in positions[name]
              if all(distance_m(v["location"], other, unit) >= SAME_PLACE_M for other in taken)]
        if ok:
            kept[name] = ok
            taken += [v["location"] for v in ok]
    return {name: kept[name] for name in positions if name in kept}


# ---- small physics for placement and faults (estimates with margin; the registry computes the real ones) -


def metres(value: float, unit: str) -> float:
    return value * (0.0254 if unit == "in" else 0.001)


def attenuation_db_per_m(cable, freq_mhz: float) -> float:
    """Log-log interpolation of the cable's table (extrapolated by the end segments)."""
    table = cable.attenuation_db_per_100m
    points = [(math.log(f), math.log(a)) for f, a in table]
    x = math.log(freq_mhz)
    (x0, y0), (x1, y1) = (points[0], points[1]) if x <= points[0][0] else (points[-2], points[-1])
    for (xa, ya), (xb, yb) in itertools.pairwise(points):
        if xa <= x <= xb:
            (x0, y0), (x1, y1) = (xa, ya), (xb, yb)
            break
    return math.exp(y0 + (y1 - y0) * (x - x0) / (x1 - x0)) / 100.0


def top_freq_mhz(service) -> float:
    return max(high for _, high in service.bands_mhz)


def feeder_loss_db(fleet, service_id: str, cable_id: str, length_m: float, connectors: int) -> float:
    service = fleet.services[service_id]
    cable = fleet.cables[cable_id]
    return (attenuation_db_per_m(cable, top_freq_mhz(service)) * length_m
            + connectors * fleet.policy.connector_loss_db)


# ---- placing extra positions on an airframe ------------------------------------------------------------


def onto_skin(location: dict, airframe, surface: str) -> dict:
    """A fuselage position moved onto the airframe type's three-dimensional skin (the shape the checks use),
    so that the skin-position check finds nothing to say about sound positions."""
    from registry.compute.airframe import FUSELAGE_SURFACES, SCALE_M, skin_point

    if surface not in FUSELAGE_SURFACES:
        return location
    hit = skin_point(airframe, (location["sta"], location["bl"], location["wl"]))
    if hit is None:
        return location
    sta, bl, wl = (float(v) / SCALE_M[airframe.coord_unit] for v in hit.on_skin_m)
    return {"sta": sta, "bl": bl, "wl": wl}


def place(extra: Extra, airframe, frac: float) -> dict:
    """STA/BL/WL of an extra at `frac` (see Extra), in the airframe's unit."""
    body = airframe.fuselage
    length = body.tail_sta - body.nose_sta
    half_width = body.width / 2
    top, bottom = body.centreline_wl + body.height / 2, body.centreline_wl - body.height / 2
    if extra.surface == "fin":
        fin = airframe.fin
        rise = frac * fin.height
        sta = fin.root_le_sta + rise * math.tan(math.radians(fin.sweep_deg)) + 0.3 * fin.root_chord * (1 - frac)
        return {"sta": sta, "bl": 0.0, "wl": top + rise}
    if extra.surface == "nose":
        return {"sta": body.nose_sta + frac * length, "bl": extra.bl_frac * half_width * 0.3,
                "wl": body.centreline_wl - 0.15 * body.height}
    wl = top if extra.surface == "top" else bottom
    return onto_skin({"sta": body.nose_sta + frac * length, "bl": extra.bl_frac * half_width, "wl": wl},
                     airframe, extra.surface)


def distance_m(a: dict, b: dict, unit: str) -> float:
    return metres(math.dist((a["sta"], a["bl"], a["wl"]), (b["sta"], b["bl"], b["wl"])), unit)


def clear_of(candidate: dict, service: str, placed: list[tuple[dict, str]], fleet, unit: str) -> bool:
    for location, other in placed:
        need = RULED_SEPARATION_M if fleet.policy.min_isolation_for(service, other) else MIN_SEPARATION_M
        if distance_m(candidate, location, unit) < need:
            return False
    return True


def sound_skin(extra: Extra, airframe, location: dict, fleet) -> bool:
    """Monopoles only where the skin is metal (a composite skin would need a ground plate)."""
    if fleet.antennas[extra.antenna].kind not in MONOPOLE_KINDS:
        return True
    length = airframe.fuselage.tail_sta - airframe.fuselage.nose_sta
    margin = 0.03 * length
    return all(airframe.material_at(location["sta"] + d, extra.surface) == "metal" for d in (-margin, 0, margin))


def sees_enough(extra: Extra, airframe, location: dict, fleet) -> bool:
    """The coverage rule's own test: the position, and every corner of the spread `shift` may move it by,
    leaves clear what the service must see at every attitude the policy names (so a horizon service is
    not put on the nose's or the tail cone's slope)."""
    from types import SimpleNamespace

    from registry.compute import coverage

    need = coverage.requirement(fleet.services[extra.service])
    if need is None:
        return True
    length = airframe.fuselage.tail_sta - airframe.fuselage.nose_sta
    d_sta = 0.003 * length
    d_bl = 0.02 * airframe.fuselage.width if location["bl"] != 0.0 else 0.0
    for ds in (-d_sta, 0.0, d_sta):
        for db in (-d_bl, 0.0, d_bl):
            moved = onto_skin({"sta": location["sta"] + ds, "bl": location["bl"] + db, "wl": location["wl"]},
                              airframe, extra.surface)
            point = coverage.antenna_point(airframe, SimpleNamespace(location=SimpleNamespace(**moved),
                                                                     surface=extra.surface))
            for bank, pitch in need.attitudes:
                grid = coverage.grid_at(airframe, point, bank, pitch)
                if coverage.share_clear(grid, coverage.region_mask(grid, need), need) < need.min_pct:
                    return False
    return True


def layout(airframe_id: str, installations: int, demo: Demo) -> list[tuple[str, object]]:
    """The type's positions: ("template", name) or ("extra", (Extra, nominal location)), `installations` long."""
    fleet = demo.fleet
    airframe = fleet.airframes[airframe_id]
    unit = airframe.coord_unit
    templates = demo.templates[airframe_id]
    names = list(templates)
    if installations <= len(names):
        return [("template", name) for name in names[:installations]]
    out: list[tuple[str, object]] = [("template", name) for name in names]
    placed = [(variant["location"], variant["service"]) for variants in templates.values() for variant in variants]
    for extra in EXTRAS:
        if len(out) == installations:
            break
        if extra.position in templates:
            continue
        steps = [0.0] + [sign * k * 0.015 for k in range(1, 30) for sign in (1, -1)]
        for step in steps:
            frac = extra.frac + step
            if not 0.02 <= frac <= 0.9:
                continue
            location = place(extra, airframe, frac)
            if clear_of(location, extra.service, placed, fleet, unit) and sound_skin(extra, airframe, location, fleet) \
                    and sees_enough(extra, airframe, location, fleet):
                placed.append((location, extra.service))
                out.append(("extra", (extra, location)))
                break
    if len(out) < installations:
        raise ValueError(f"{airframe_id}: at most {len(out)} installations can be placed, {installations} asked")
    return out


# ---- one aircraft -----------------------------------------------------------------------------------------


def rounded(value: float, digits: int = 1) -> float:
    return round(float(value), digits)


def random_date(rng: random.Random, start: date, end: date) -> date:
    return start + timedelta(days=rng.randint(0, max(0, (end - start).days)))


def measured_block(rng: random.Random, fleet, service: str, installed: date, template: dict | None) -> dict:
    max_age = fleet.policy.measurement_max_age_days
    when = AS_OF - timedelta(days=rng.randint(10, int(0.65 * max_age)))
    when = max(when, installed)
    if template and template.get("sweep"):
        return {"vswr": template["vswr"], "date": when, "sweep": template["sweep"]}
    limit = fleet.policy.vswr_limit_for(service)
    return {"vswr": rounded(rng.uniform(1.08, min(1.42, limit - 0.1)), 2), "date": when}


def shift(location: dict, airframe, rng: random.Random, surface: str) -> dict:
    """A small manufacturing/installation spread: STA by up to 0.3 % of the fuselage, BL a little."""
    length = airframe.fuselage.tail_sta - airframe.fuselage.nose_sta
    sta = location["sta"] + rng.uniform(-0.003, 0.003) * length
    bl = location["bl"]
    if bl != 0.0 and surface in ("top", "bottom"):
        bl += rng.uniform(-0.02, 0.02) * airframe.fuselage.width
    digits = 1 if airframe.coord_unit == "in" else 0
    moved = onto_skin({"sta": sta, "bl": bl, "wl": location["wl"]}, airframe, surface)
    return {key: rounded(value, digits) for key, value in moved.items()}


def template_installation(rng, fleet, airframe, name: str, variants: list[dict], delivered: date) -> dict:
    source = rng.choice(variants)
    item = {"position": name, "service": source["service"], "antenna": source["antenna"],
            "location": shift(source["location"], airframe, rng, source["surface"]),
            "surface": source["surface"]}
    if source.get("ground_plane"):
        item["ground_plane"] = dict(source["ground_plane"])
    feeder = dict(source["feeder"])
    feeder["length_m"] = rounded(feeder["length_m"] * rng.uniform(0.96, 1.04))
    item["feeder"] = feeder
    if source.get("measured"):
        item["measured"] = measured_block(rng, fleet, source["service"], delivered, source["measured"])
    if source.get("coupler"):
        item["coupler"] = True
    item["installed"] = delivered
    if source.get("notes"):
        item["notes"] = source["notes"]
    return item


def extra_installation(rng, fleet, airframe, extra: Extra, location: dict, fitted: date) -> dict:
    unit = airframe.coord_unit
    item = {"position": extra.position, "service": extra.service, "antenna": extra.antenna,
            "location": shift(location, airframe, rng, extra.surface), "surface": extra.surface}
    if fleet.antennas[extra.antenna].kind in MONOPOLE_KINDS:
        item["ground_plane"] = {"type": "skin"}
    if extra.fixed_length_m is not None:
        length = extra.fixed_length_m
    else:  # a run from the racks behind the flight deck, along the fuselage and up the fin
        run = metres(location["sta"] - airframe.fuselage.nose_sta, unit)
        if extra.surface == "fin":
            run += metres(location["wl"] - airframe.fuselage.centreline_wl, unit)
        length = 0.8 + 0.9 * run
    budget = fleet.policy.feeder_loss_budget_for(extra.service)
    most = (0.7 * budget - 2 * fleet.policy.connector_loss_db) / attenuation_db_per_m(
        fleet.cables[extra.cable], top_freq_mhz(fleet.services[extra.service]))
    length = min(length, most) * rng.uniform(0.96, 1.04)
    item["feeder"] = {"cable": extra.cable, "length_m": rounded(max(length, 0.8)), "connectors": 2, "adapters": 0}
    if extra.service not in ("gnss_l1", "adf"):
        item["measured"] = measured_block(rng, fleet, extra.service, fitted, None)
    item["installed"] = fitted
    return item


def aircraft_doc(index: int, width: int, airframe_id: str, plan, rng: random.Random, demo: Demo) -> dict:
    fleet = demo.fleet
    airframe = fleet.airframes[airframe_id]
    number = f"{index:0{width}d}"
    delivered = random_date(rng, date(2008, 1, 1), AS_OF - timedelta(days=5 * 365))
    packages = sorted({spec[0].package for kind, spec in plan if kind == "extra"})
    fitted = {}
    modifications = []
    for n, package in enumerate(packages):
        when = random_date(rng, delivered + timedelta(days=365), AS_OF - timedelta(days=2 * 365))
        fitted[package] = when
        modifications.append({"ref": f"MOD-{when.year}-{100 + 7 * n + index % 7:03d}", "date": when,
                              "summary": PACKAGES[package]})
    modifications.sort(key=lambda mod: (mod["date"], mod["ref"]))
    installations = []
    for kind, spec in plan:
        if kind == "template":
            installations.append(template_installation(rng, fleet, airframe, spec, demo.templates[airframe_id][spec],
                                                       delivered))
        else:
            extra, location = spec
            installations.append(extra_installation(rng, fleet, airframe, extra, location, fitted[extra.package]))
    digits = "".join(ch for ch in airframe_id if ch.isdigit()) or "1"
    doc = {"id": f"qx-{number}", "registration": f"QX-{number}", "airframe": airframe_id,
           "serial": f"{digits}{index:05d}"}
    if modifications:
        doc["modifications"] = modifications
    doc["installations"] = installations
    return doc


# ---- planted faults ------------------------------------------------------------------------------------


def plant(kind: str, doc: dict, item: dict, fleet, rng: random.Random) -> str | None:
    """Make `item` faulty in the way `kind` says; the rule expected to flag it, or None if it cannot be."""
    service = fleet.services[item["service"]]
    if kind == "long-feeder":
        budget = fleet.policy.feeder_loss_budget_for(item["service"])
        per_m = attenuation_db_per_m(fleet.cables[item["feeder"]["cable"]], top_freq_mhz(service))
        length = (1.6 * budget + 1.0) / per_m
        if length > 90.0:
            return None
        item["feeder"]["length_m"] = rounded(max(length, 2 * item["feeder"]["length_m"]) * rng.uniform(1.0, 1.2))
        return "feeder-loss"
    if kind == "old-measurement":
        if "measured" not in item:
            return None
        max_age = fleet.policy.measurement_max_age_days
        item["measured"]["date"] = AS_OF - timedelta(days=max_age + rng.randint(90, 900))
        item["installed"] = min(item["installed"], item["measured"]["date"])
        return "measurement-age"
    if kind == "wrong-cable":
        antenna = fleet.antennas[item["antenna"]]
        top = top_freq_mhz(service)
        too_slow = [c.id for c in fleet.cables.values()
                    if c.max_freq_mhz < top and c.impedance_ohm == antenna.impedance_ohm]
        mismatched = [c.id for c in fleet.cables.values()
                      if c.impedance_ohm != antenna.impedance_ohm and c.max_freq_mhz >= top]
        if too_slow:
            item["feeder"]["cable"] = rng.choice(too_slow)
            return "cable-frequency"
        if mismatched:
            item["feeder"]["cable"] = rng.choice(mismatched)
            return "impedance-match"
        return None
    raise ValueError(f"unknown fault kind {kind}")


def plant_faults(docs: list[dict], fault_rate: float, fleet, rng: random.Random) -> list[Fault]:
    slots = [(doc, item) for doc in docs for item in doc["installations"]]
    wanted = round(fault_rate * len(slots))
    order = list(range(len(slots)))
    rng.shuffle(order)
    faults: list[Fault] = []
    used: set[int] = set()
    for n in range(wanted):
        kind = FAULT_KINDS[n % len(FAULT_KINDS)]
        for slot in order:
            if slot in used:
                continue
            doc, item = slots[slot]
            rule = plant(kind, doc, item, fleet, rng)
            if rule is not None:
                used.add(slot)
                faults.append(Fault(doc["id"], item["position"], kind, rule))
                break
    faults.sort(key=lambda fault: (fault.aircraft, fault.position))
    return faults


# ---- writing -------------------------------------------------------------------------------------------


class _Dumper(yaml.SafeDumper):
    """Safe dumping without anchors (a shared date object is written twice, not aliased), and
    multi-line text as a literal block, as an engineer would write it."""

    def ignore_aliases(self, data) -> bool:
        return True


def _text(dumper: yaml.SafeDumper, text: str):
    style = "|" if "\n" in text else None
    return dumper.represent_scalar("tag:yaml.org,2002:str", text, style=style)


_Dumper.add_representer(str, _text)


def dump(doc: dict, kind: str, depth: int) -> str:
    return SCHEMA_LINE.format(up="../" * (depth - 1), kind=kind) + yaml.dump(
        doc, Dumper=_Dumper, sort_keys=False, allow_unicode=True, default_flow_style=False, width=100)


def copy_catalogues(demo_dir: Path, out_dir: Path, sweeps: set[str]) -> None:
    for name in COPIED_FILES:
        if (demo_dir / name).is_file():
            shutil.copyfile(demo_dir / name, out_dir / name)
    shutil.rmtree(out_dir / "airframes", ignore_errors=True)
    shutil.copytree(demo_dir / "airframes", out_dir / "airframes")
    for sweep in sorted(sweeps):
        target = out_dir / "aircraft" / sweep
        target.parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(demo_dir / "aircraft" / sweep, target)
    (out_dir / "reviews.yaml").write_text(dump({"reviews": []}, "reviews", 1), encoding="utf-8")


def modifications_doc(docs: list[dict], plans: dict) -> dict:
    """The fleet's modifications file for the synthetic aircraft: each reference their files record, embodied
    on every aircraft that records it (at its date) with the installations its package fitted there, those
    every such aircraft carries alike (so a correct register raises nothing), and planned on the next aircraft
    that does not record it. Sorted by reference, so the same fleet always writes the same file."""
    refs: dict[str, dict] = {}
    for doc in docs:
        plan = plans[doc["airframe"]]
        for mod in doc.get("modifications", []):
            package = next(name for name, text in PACKAGES.items() if text == mod["summary"])
            fitted = {(item["position"], item["service"], item["antenna"])
                      for (kind, spec), item in zip(plan, doc["installations"])
                      if kind == "extra" and spec[0].package == package}
            entry = refs.setdefault(mod["ref"], {"title": mod["summary"], "adds": fitted, "effectivity": []})
            entry["adds"] = entry["adds"] & fitted
            entry["effectivity"].append({"registration": doc["registration"], "state": "embodied", "date": mod["date"]})
    registrations = [doc["registration"] for doc in docs]
    mods = []
    for ref, entry in sorted(refs.items()):
        named = {item["registration"] for item in entry["effectivity"]}
        spare = next((reg for reg in registrations if reg not in named), None)
        planned = [{"registration": spare, "state": "planned"}] if spare else []
        mods.append({"ref": ref, "title": entry["title"],
                     "adds": [{"position": p, "service": s, "antenna": a} for p, s, a in sorted(entry["adds"])],
                     "effectivity": entry["effectivity"] + planned})
    return {"modifications": mods}


def generate(n_aircraft: int, out_dir: Path | str, seed: int = DEFAULT_SEED,
             installations: int = DEFAULT_INSTALLATIONS, fault_rate: float = DEFAULT_FAULT_RATE,
             demo_dir: Path | str = DEMO_DIR) -> Generated:
    """Write a registry of `n_aircraft` aircraft with `installations` each into `out_dir`.

    `out_dir` is created if needed; its aircraft/ folder is replaced whole. Returns what was written,
    with the planted faults.
    """
    if n_aircraft < 1:
        raise ValueError("n_aircraft must be at least 1")
    if installations < 1:
        raise ValueError("installations must be at least 1")
    if not 0.0 <= fault_rate <= 1.0:
        raise ValueError("fault_rate must be between 0 and 1")
    demo_dir = Path(demo_dir).resolve()
    out_dir = Path(out_dir)
    demo = load_demo(demo_dir)
    rng = random.Random(seed)
    types = sorted(demo.templates)
    plans = {airframe: layout(airframe, installations, demo) for airframe in types}
    width = max(4, len(str(n_aircraft)))
    docs = []
    for index in range(1, n_aircraft + 1):
        airframe = rng.choices(types, weights=[demo.weights[t] for t in types])[0]
        docs.append(aircraft_doc(index, width, airframe, plans[airframe], rng, demo))
    faults = plant_faults(docs, fault_rate, demo.fleet, random.Random(f"{seed}/faults"))

    out_dir.mkdir(parents=True, exist_ok=True)
    shutil.rmtree(out_dir / "aircraft", ignore_errors=True)
    (out_dir / "aircraft").mkdir()
    used_sweeps = {item["measured"]["sweep"] for doc in docs for item in doc["installations"]
                   if item.get("measured", {}).get("sweep")}
    copy_catalogues(demo_dir, out_dir, used_sweeps)
    for doc in docs:
        (out_dir / "aircraft" / f"{doc['id']}.yaml").write_text(dump(doc, "aircraft", 2), encoding="utf-8")
    (out_dir / "modifications.yaml").write_text(dump(modifications_doc(docs, plans), "modifications", 1),
                                                encoding="utf-8")
    return Generated(out_dir, [doc["id"] for doc in docs], sum(len(doc["installations"]) for doc in docs), faults)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("n_aircraft", type=int, metavar="N", help="number of aircraft")
    parser.add_argument("out_dir", type=Path, metavar="OUT_DIR", help="registry folder to write")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED, help=f"random seed (default {DEFAULT_SEED})")
    parser.add_argument("--installations", type=int, default=DEFAULT_INSTALLATIONS,
                        help=f"installations per aircraft (default {DEFAULT_INSTALLATIONS})")
    parser.add_argument("--fault-rate", type=float, default=DEFAULT_FAULT_RATE,
                        help=f"fraction of installations given a planted fault (default {DEFAULT_FAULT_RATE})")
    args = parser.parse_args(argv)
    try:
        made = generate(args.n_aircraft, args.out_dir, seed=args.seed, installations=args.installations,
                        fault_rate=args.fault_rate)
    except ValueError as error:
        print(f"error: {error}", file=sys.stderr)
        return 2
    print(f"{made.out_dir}: {len(made.aircraft)} aircraft, {made.installations} installations, "
          f"{len(made.faults)} planted faults")
    for fault in made.faults:
        print(f"  planted {fault.kind:16s} {fault.discrepancy}")
    print(f"as of {AS_OF.isoformat()}: check with SOURCE_DATE_EPOCH={AS_OF_EPOCH} for reproducible ages")
    return 0


if __name__ == "__main__":
    sys.exit(main())
