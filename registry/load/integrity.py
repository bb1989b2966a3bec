"""Checks a schema cannot make, run on the model built from files that passed their schema.

References resolve, ids are unique (ignoring case, since ids become file names), ids equal file names,
bands and tables are in order, sweep files exist inside the registry, and a kind's geometry is coherent.
Each problem points at the line of the value concerned, through the model's `where()`.
"""
from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import Iterable

from registry.core.errors import Problem
from registry.core.rulebook import RULES
from registry.core.base import Sourced
from registry.core.model import (Aircraft, Airframe, AntennaModel, Cable, Installation, IsolationRule,
                                 Policy, Review, Service)
from registry.load import sweepcheck
from registry.load.schemacheck import suggest


@dataclass(frozen=True)
class Catalogue:
    """The ids references may name; None where that file did not load (its references are not checked)."""

    airframes: set[str] | None
    antennas: set[str] | None
    cables: set[str] | None
    services: set[str] | None


def problem(obj: Sourced, field: str, found: str, expected: str) -> Problem:
    return Problem.at(obj.where(field), obj.field_path(field), found, expected)


def reference(obj: Sourced, field: str, value: str, known: set[str] | None, what: str) -> list[Problem]:
    """A problem when `value` is not among `known` ids, with the closest one suggested."""
    if known is None or value in known:
        return []
    return [problem(obj, field, f"'{value}'", f"{what}{suggest(value, sorted(known))}")]


def duplicates(objects: Iterable[Sourced], field: str, what: str) -> list[Problem]:
    """A problem for each object whose `field` repeats an earlier one's, ignoring case."""
    first: dict[str, Sourced] = {}
    problems = []
    for obj in objects:
        value = getattr(obj, field)
        earlier = first.setdefault(value.casefold(), obj)
        if earlier is obj:
            continue
        there = earlier.where(field)
        place = f"line {there.line}" if there.path == obj.where(field).path else str(there)
        same = getattr(earlier, field)
        found = f"'{value}' again (first on {place})" if same == value else f"'{value}' (and '{same}' on {place})"
        problems.append(problem(obj, field, found, f"each {what} once, ignoring upper and lower case"))
    return problems


def file_id(obj: Airframe | Aircraft) -> list[Problem]:
    stem = Path(obj.src.path).stem
    if obj.id == stem:
        return []
    return [problem(obj, "id", f"'{obj.id}' in the file {Path(obj.src.path).name}",
                    f"the id to equal the file name ('{stem}')")]


def bands(obj: AntennaModel | Service) -> list[Problem]:
    return [problem(obj, f"bands_mhz[{n}]", f"[{low:g}, {high:g}]", "the lower band edge first (low < high)")
            for n, (low, high) in enumerate(obj.bands_mhz) if not low < high]


def check_airframes(airframes: list[Airframe]) -> list[Problem]:
    problems = duplicates(airframes, "id", "airframe id")
    for airframe in airframes:
        problems += file_id(airframe)
        body = airframe.fuselage
        if not body.nose_sta < body.tail_sta:
            problems.append(problem(body, "tail_sta", f"{body.tail_sta:g}, not beyond nose_sta {body.nose_sta:g}",
                                    "a tail STA greater than the nose STA"))
        problems += sections(body.sections)
        for n, zone in enumerate(airframe.zones):
            if not zone.sta_from < zone.sta_to:
                problems.append(problem(zone, "sta_to", f"{zone.sta_to:g}, not beyond sta_from {zone.sta_from:g}",
                                        "sta_to greater than sta_from"))
            for other in airframe.zones[:n]:
                shared = bool(zone.surfaces) == bool(other.surfaces) and (
                    not zone.surfaces or set(zone.surfaces) & set(other.surfaces))
                if shared and zone.sta_from < other.sta_to and other.sta_from < zone.sta_to:
                    problems.append(problem(zone, "sta_from", f"stations overlapping the zone '{other.name}' "
                                                              f"(line {other.src.line})",
                                            "zones for the same surfaces that do not overlap"))
    return problems


def sections(items) -> list[Problem]:
    """Fuselage cross sections in increasing STA, no two neighbours both of zero width."""
    problems = []
    for before, section in zip(items, items[1:]):
        if not section.sta > before.sta:
            problems.append(problem(section, "sta", f"{section.sta:g}, not beyond the section before ({before.sta:g})",
                                    "sections in increasing STA"))
        elif before.half_width + section.half_width <= 0:
            problems.append(problem(section, "half_width", "0 here and in the section before",
                                    "no two neighbouring sections of zero width"))
    return problems


def check_antennas(models: list[AntennaModel]) -> list[Problem]:
    problems = duplicates(models, "id", "antenna model id")
    for model in models:
        problems += bands(model)
        geometry = model.geometry
        if model.kind == "yagi_uda":
            roles = [element["role"] for element in geometry["elements"]]
            if roles.count("driven") != 1:
                problems.append(problem(model, "geometry.elements", f"{roles.count('driven')} driven elements",
                                        "exactly one driven element"))
            positions = [element["position_m"] for element in geometry["elements"]]
            if len(set(positions)) != len(positions):
                problems.append(problem(model, "geometry.elements", "two elements at the same position_m",
                                        "each element at its own position along the boom"))
        if model.kind == "folded_dipole" and not geometry["spacing_m"] > geometry["element_diameter_m"]:
            problems.append(problem(model, "geometry.spacing_m", f"{geometry['spacing_m']:g} m, not beyond the "
                                    f"element diameter {geometry['element_diameter_m']:g} m",
                                    "a spacing between the two wires' centres greater than their diameter"))
        amplitudes = geometry.get("amplitudes")
        if model.kind == "linear_array" and amplitudes is not None and len(amplitudes) != geometry["element_count"]:
            problems.append(problem(model, "geometry.amplitudes",
                                    f"{len(amplitudes)} amplitudes for {geometry['element_count']} elements",
                                    "one amplitude per element"))
        if "sidelobe_db" in geometry and geometry.get("taper") != "chebyshev":
            problems.append(problem(model, "geometry.sidelobe_db", f"sidelobe_db with taper '{geometry['taper']}'",
                                    "sidelobe_db only with taper chebyshev"))
    return problems


def check_cables(cables: list[Cable]) -> list[Problem]:
    problems = duplicates(cables, "id", "cable id")
    for cable in cables:
        table = cable.attenuation_db_per_100m
        for n in range(1, len(table)):
            if not table[n - 1][0] < table[n][0]:
                problems.append(problem(cable, f"attenuation_{cable.declared_unit}[{n}][0]",
                                        f"{table[n][0]:g} MHz after {table[n - 1][0]:g} MHz",
                                        "frequencies increasing down the table"))
    return problems


def check_services(services: list[Service]) -> list[Problem]:
    problems: list[Problem] = []
    for service in services:
        unordered = bands(service)
        problems += unordered
        # a split band (receive / transmit) may be served by one element cut between its parts
        lowest = min(low for low, _ in service.bands_mhz)
        highest = max(high for _, high in service.bands_mhz)
        if not unordered and not lowest <= service.design_freq_mhz <= highest:
            problems.append(problem(service, "design_freq_mhz", f"{service.design_freq_mhz:g} MHz",
                                    f"a frequency within the service's bands, {lowest:g} to {highest:g} MHz"))
        problems += cosite_fields(service)
    return problems


TX_FIGURES = ("tx_bands_mhz", "tx_channel_steps_khz", "tx_peak_power_dbm", "spurious_dbc",
              "im3_conversion_loss_db", "im5_conversion_loss_db", "max_harmonic_order")


def cosite_fields(service: Service) -> list[Problem]:
    """Co-site figures: ranges in order, transmit figures only on a transmitting service, and a source
    only for a figure the entry gives."""
    problems = [problem(service, f"{key}[{n}]", f"[{low:g}, {high:g}]", "the lower band edge first (low < high)")
                for key in ("tx_bands_mhz", "rx_bands_mhz") if getattr(service, key) != service.bands_mhz
                for n, (low, high) in enumerate(getattr(service, key)) if not low < high]  # not the defaults
    if not service.transmits:
        problems += [problem(service, key, f"{key} on a service with transmits: false",
                             "transmit figures only on a transmitting service")
                     for key in TX_FIGURES if getattr(service, key) not in (None, ())]
    problems += [problem(service, f"sources.{key}", f"a source for {key}, which this entry does not give",
                         "a source only for a figure the entry gives")
                 for key in service.sources if getattr(service, key, None) in (None, ())]
    return problems


def check_aircraft(fleet: list[Aircraft], known: Catalogue, data_dir: Path) -> list[Problem]:
    problems = duplicates(fleet, "id", "aircraft id") + duplicates(fleet, "registration", "registration mark")
    for aircraft in fleet:
        problems += file_id(aircraft)
        problems += reference(aircraft, "airframe", aircraft.airframe, known.airframes,
                              "the id of a file in airframes/")
        for installation in aircraft.installations.values():
            problems += check_installation(installation, known, data_dir)
    return problems


def check_installation(item: Installation, known: Catalogue, data_dir: Path) -> list[Problem]:
    problems = (reference(item, "service", item.service, known.services,
                          "a service id from the shipped table or services.yaml")
                + ([] if item.shared_from else  # its owner's antenna, checked there
                   reference(item, "antenna", item.antenna, known.antennas, "an antenna model id from antennas.yaml"))
                + reference(item, "feeder.cable", item.feeder.cable, known.cables, "a cable id from cables.yaml"))
    plane = item.ground_plane
    for name in ("radius_m", "side_m"):
        if plane is not None and not item.shared_from and plane.type != "plate" and getattr(plane, name) is not None:
            problems.append(problem(item, f"ground_plane.{name}", f"{name} with type '{plane.type}'",
                                    f"{name} only with type plate"))
    sweep = item.measured.sweep if item.measured else None
    if sweep is not None:
        if not sweep.resolve().is_relative_to(data_dir.resolve()):
            problems.append(problem(item, "measured.sweep", f"a path outside the registry folder ({sweep})",
                                    f"a sweep file inside {data_dir}"))
        elif not sweep.is_file():
            problems.append(problem(item, "measured.sweep", f"no file at {sweep}",
                                    "the sweep file this installation names"))
        elif (trouble := sweepcheck.sweep_trouble(sweep)) is not None:
            problems.append(problem(item, "measured.sweep", *trouble))
    return problems


def check_reviews(reviews: list[Review]) -> list[Problem]:
    """Reviews that could never match a discrepancy: an unknown rule, a pair not in sorted order.

    A review naming an aircraft or position that no longer exists is left to the check stage, which
    reports it as stale rather than refusing the registry.
    """
    problems = duplicates(reviews, "discrepancy", "discrepancy id")
    for review in reviews:
        if review.rule not in RULES:
            problems.append(problem(review, "discrepancy", f"the rule '{review.rule}'",
                                    f"one of {', '.join(RULES)}{suggest(review.rule, RULES)}"))
        positions = review.positions
        if len(positions) == 2 and not positions[0] < positions[1]:
            problems.append(problem(review, "discrepancy", f"the positions '{'+'.join(positions)}'",
                                    f"two different positions in sorted order ('{'+'.join(sorted(positions))}')"))
    return problems


def future_reviews(reviews: list[Review], limit: date) -> list[Problem]:
    """Reviews dated after `limit` (`git.review_limit`): a disposition cannot come before its day."""
    return [problem(review, "date", f"{review.date.isoformat()}, after {limit.isoformat()}",
                    f"a date on or before {limit.isoformat()} (the registry's as-of date, or today when that is "
                    "later: a review cannot be dated in the future)")
            for review in reviews if review.date > limit]


def duplicate_pairs(rules: list[IsolationRule]) -> list[Problem]:
    """Isolation rules in one file naming the same pair of services (in either order) twice."""
    first: dict[tuple[str, ...], IsolationRule] = {}
    problems = []
    for rule in rules:
        earlier = first.setdefault(tuple(sorted(rule.services)), rule)
        if earlier is not rule:
            problems.append(problem(rule, "services", f"the pair {' + '.join(rule.services)} again "
                                                      f"(first on line {earlier.src.line})", "each pair once"))
    return problems


def check_policy(policy: Policy, known: Catalogue) -> list[Problem]:
    what = "a service id from the shipped table or services.yaml"
    problems: list[Problem] = []
    for key in ("vswr_limit_by_service", "feeder_loss_budget_db"):
        for service in getattr(policy, key):
            if service != "default" or key != "feeder_loss_budget_db":
                problems += reference(policy, f"{key}.{service}", service, known.services, what)
    for rule in policy.min_isolation_db:
        for n, service in enumerate(rule.services):
            problems += reference(rule, f"services[{n}]", service, known.services, what)
    return problems
