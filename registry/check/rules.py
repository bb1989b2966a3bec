"""Check stage: rules over the computed figures → discrepancies, then the auditors' reviews applied.

Each rule reads figures from `FleetResults` and the thresholds from the fleet's policy, and never
raises on bad data: a figure a rule needs but cannot find becomes a `missing-data` discrepancy.
A discrepancy's id is `<aircraft>/<position>/<rule>` (pairs: `<aircraft>/<A>+<B>/isolation`), so it
survives unrelated edits of the registry.
"""
from __future__ import annotations

from dataclasses import replace

from registry.core.model import Aircraft, Fleet, Installation, Review
from registry.core.sources import where
from registry.core.results import Discrepancy, Figure, FleetResults, InstallationResult, SEVERITIES

DIRECTIONAL_KINDS = ("yagi_uda", "linear_array", "slotted_planar_array", "parabolic_reflector")
IMPEDANCE_TOLERANCE_PCT = 5.0
"""Cable and antenna impedances further apart than this are a mismatch (50 vs 75 Ω is 50 %); common
practice, no source: catalogue impedances are nominal to a few per cent."""

RULE_SEVERITY = {
    "band-coverage": "blocking",
    "measured-vswr": "blocking",
    "impedance-match": "blocking",
    "cable-frequency": "blocking",
    "ground-plane": "blocking",
    "element-length": "concern",
    "vswr-bandwidth": "concern",
    "feeder-loss": "concern",
    "isolation": "concern",
    "antenna-suitability": "concern",
    "measurement-age": "advisory",
    "missing-data": "advisory",
}
"""Severity of each rule: `blocking` when the installation cannot do its job as recorded, `concern` when
an engineer must judge it, `advisory` when the record needs attention."""


def check_fleet(fleet: Fleet, results: FleetResults) -> list[Discrepancy]:
    """Every discrepancy of the fleet, sorted by id, with the reviews applied.

    The rules run over each aircraft where it is computed (`aircraft_discrepancies`, kept in its
    summary and cached with its figures); an aircraft computed without them is checked here."""
    found: list[Discrepancy] = []
    for aircraft in fleet.aircraft.values():
        summary = results.summaries.get(aircraft.id)
        if summary is not None and summary.findings is not None:
            found += summary.findings
            continue
        results.load([aircraft.id])
        found += aircraft_discrepancies(
            fleet, aircraft, {key: results.installations[key] for key in
                              ((aircraft.id, position) for position in aircraft.installations)},
            [pair for pair in results.pairs if pair.aircraft == aircraft.id])
    found.sort(key=lambda item: item.id)
    return apply_reviews(found, fleet.reviews)


def aircraft_discrepancies(fleet: Fleet, aircraft: Aircraft, installations: dict[tuple[str, str], InstallationResult],
                           pairs: list) -> list[Discrepancy]:
    """Every rule over one aircraft's figures: its installations' and its pairs' (no reviews applied)."""
    found: list[Discrepancy] = []
    for installation in aircraft.installations.values():
        found += installation_discrepancies(fleet, aircraft, installation,
                                            installations[(aircraft.id, installation.position)])
    for pair in pairs:
        found += pair_discrepancies(fleet, pair)
    return found


def make(rule: str, aircraft: str, position: str, value, limit, unit: str, message: str,
         figure: Figure | None, method: str = "") -> Discrepancy:
    return Discrepancy(
        id=f"{aircraft}/{position}/{rule}",
        rule=rule,
        severity=RULE_SEVERITY[rule],
        aircraft=aircraft,
        position=position,
        value=round(value, 3) if isinstance(value, float) else value,
        limit=round(limit, 3) if isinstance(limit, float) else limit,
        unit=unit,
        message=message,
        method=method or (figure.source if figure else ""),
        source=figure.src if figure else "",
    )


def installation_discrepancies(fleet: Fleet, aircraft: Aircraft, installation: Installation,
                               result: InstallationResult) -> list[Discrepancy]:
    """All single-installation rules for one installation."""
    policy = fleet.policy
    service = fleet.services[installation.service]
    model = fleet.antennas[installation.antenna]
    cable = fleet.cables[installation.feeder.cable]
    ac, pos = aircraft.id, installation.position
    out: list[Discrepancy] = []
    fig = result.figure

    deviation = fig("length.deviation_pct")
    if deviation is not None and abs(deviation.value) > policy.length_tolerance_pct:
        resonant = fig("length.resonant_m")
        out.append(make(
            "element-length", ac, pos, deviation.value, policy.length_tolerance_pct, "%",
            f"Element is {fig('length.installed_m').value:.3f} m, {abs(deviation.value):.1f} % "
            f"{'longer' if deviation.value > 0 else 'shorter'} than the {resonant.value:.3f} m resonant length "
            f"at {service.design_freq_mhz:g} MHz (tolerance ±{policy.length_tolerance_pct:g} %).",
            deviation, resonant.source))

    covered = fig("band.covered_pct")
    if covered is not None and covered.value < 100.0 - 1e-9:
        out.append(make(
            "band-coverage", ac, pos, covered.value, 100.0, "%",
            f"Antenna {model.id} is rated for {fig('band.rated_mhz').value} but {service.name} needs "
            f"{fig('band.service_mhz').value}; {fig('band.uncovered_mhz').value} is not covered.",
            covered, "interval comparison of rated and service bands"))

    limit = policy.vswr_limit_for(service.id)
    needed, matchable = fig("vswr.needed_pct"), fig("vswr.bode_fano_pct")
    if needed is not None and needed.value > matchable.value:
        out.append(make(
            "vswr-bandwidth", ac, pos, needed.value, matchable.value, "%",
            f"The {service.name} band is {needed.value:.1f} % wide but with its modelled Q of "
            f"{fig('vswr.q').value:.1f} no matching network can hold VSWR {limit:g} over more than "
            f"{matchable.value:.1f} %.", matchable))

    for key, what in (("measured.vswr", "Measured VSWR"), ("sweep.max_vswr", "Measured sweep VSWR")):
        measured = fig(key)
        if measured is not None and isinstance(measured.value, float) and measured.value > limit:
            out.append(make(
                "measured-vswr", ac, pos, measured.value, limit, "",
                f"{what} is {measured.value:.2f} against a limit of {limit:g}"
                f"{' inside the service band' if key.startswith('sweep') else ''}.",
                measured, "Pozar, Microwave Engineering, 4th ed., §2.3"))
            break

    total = fig("feeder.total_loss_db")
    budget = policy.feeder_loss_budget_for(service.id)
    if total is not None and total.value > budget:
        out.append(make(
            "feeder-loss", ac, pos, total.value, budget, "dB",
            f"Feeder loss is {total.value:.2f} dB at {fig('feeder.freq_mhz').value:g} MHz "
            f"({installation.feeder.length_m:g} m of {cable.id}), over the {budget:g} dB budget.",
            total))

    mismatch_pct = 100.0 * abs(cable.impedance_ohm - model.impedance_ohm) / model.impedance_ohm
    if mismatch_pct > IMPEDANCE_TOLERANCE_PCT:
        out.append(make(
            "impedance-match", ac, pos, cable.impedance_ohm, model.impedance_ohm, "Ω",
            f"Cable {cable.id} is {cable.impedance_ohm:g} Ω but antenna {model.id} is "
            f"{model.impedance_ohm:g} Ω: the joint alone gives VSWR "
            f"{max(cable.impedance_ohm, model.impedance_ohm) / min(cable.impedance_ohm, model.impedance_ohm):.2f}.",
            Figure("", "", cable.impedance_ohm, "Ω", src=where(installation, "feeder.cable")),
            "Pozar, Microwave Engineering, 4th ed., §2.3"))

    top_mhz = max(high for _, high in service.bands_mhz)
    if top_mhz > cable.max_freq_mhz:
        out.append(make(
            "cable-frequency", ac, pos, top_mhz, cable.max_freq_mhz, "MHz",
            f"Cable {cable.id} is rated to {cable.max_freq_mhz:g} MHz but carries {service.name} up to "
            f"{top_mhz:g} MHz.",
            Figure("", "", top_mhz, "MHz", src=where(installation, "feeder.cable")), "cable catalogue"))

    out += ground_plane_discrepancies(ac, pos, result)
    out += suitability_discrepancies(ac, pos, installation, service, model)

    age = fig("measured.age_days")
    if age is not None and age.value > policy.measurement_max_age_days:
        out.append(make(
            "measurement-age", ac, pos, age.value, policy.measurement_max_age_days, "days",
            f"Last measurement is {age.value:g} days old; the policy asks for one every "
            f"{policy.measurement_max_age_days} days.", age, "fleet policy"))
    out += missing_data(ac, pos, installation, service, result)
    return out


def missing_data(ac: str, pos: str, installation: Installation, service, result: InstallationResult
                 ) -> list[Discrepancy]:
    """One discrepancy listing every figure a check needs but cannot find for this installation."""
    gaps: list[tuple[str, str]] = []
    if service.transmits and installation.measured is None:
        gaps.append(("no measured VSWR or sweep for a transmitting service, so the measured-VSWR check cannot run",
                     where(installation, "service")))
    unreadable = result.figure("sweep.error")
    if unreadable is not None:
        gaps.append((f"the measured sweep cannot be used ({unreadable.value})", unreadable.src))
    material = result.figure("ground.material")
    if material is not None and str(material.value).startswith("unknown"):
        gaps.append(("no skin zone of the airframe type covers this station and surface, so the ground-plane "
                     "check cannot tell metal from composite", material.src))
    if not gaps:
        return []
    message = "Missing data: " + "; ".join(text for text, _ in gaps) + "."
    return [make("missing-data", ac, pos, len(gaps), 0, "items", message,
                 Figure("", "", None, "", src=gaps[0][1]), "completeness of the registry")]


def ground_plane_discrepancies(ac: str, pos: str, result: InstallationResult) -> list[Discrepancy]:
    """A monopole without a conductive ground plane, or with a plate smaller than the policy radius."""
    plane, radius, required = (result.figure(k) for k in ("ground.type", "ground.radius_m", "ground.required_m"))
    if plane is None or radius.value == "metal skin":
        return []
    material = result.figure("ground.material").value
    if isinstance(radius.value, float) and radius.value >= required.value:
        return []
    if plane.value == "plate":
        message = (f"Ground plate radius {radius.value:.3f} m is under the {required.value:.3f} m the monopole "
                   "needs at the lowest service frequency.")
    else:
        message = (f"Monopole stands on {material} skin with no installed ground plane "
                   f"(needs a conductive plane of {required.value:.3f} m radius).")
    return [make("ground-plane", ac, pos, radius.value if isinstance(radius.value, float) else 0.0,
                 required.value, "m", message, radius, required.source)]


def suitability_discrepancies(ac: str, pos: str, installation: Installation, service, model) -> list[Discrepancy]:
    """Polarisation and coverage of the antenna against what the service needs."""
    problems = []
    wanted, has = service.polarisation, model.polarisation
    if wanted == "circular" and has not in ("rhcp", "lhcp"):
        problems.append(f"{service.name} is circularly polarised but the antenna is {has}")
    elif wanted in ("vertical", "horizontal") and has != wanted:
        problems.append(f"{service.name} needs {wanted} polarisation but the antenna is {has}")
    if service.coverage == "omni" and model.kind in DIRECTIONAL_KINDS:
        problems.append(f"{service.name} needs all-round coverage but a {model.kind.replace('_', ' ')} is directional")
    if not problems:
        return []
    return [make("antenna-suitability", ac, pos, model.polarisation, service.polarisation, "",
                 "; ".join(problems) + ".", Figure("", "", None, "", src=where(installation, "antenna")),
                 "service table (polarisation, coverage)")]


def pair_discrepancies(fleet: Fleet, pair) -> list[Discrepancy]:
    """Isolation below the policy's minimum for the pair's services."""
    isolation = pair.figure("pair.isolation_db")
    minimum = pair.figure("pair.min_isolation_db")
    if isolation is None or minimum is None or isolation.value >= minimum.value:
        return []
    distance = pair.figure("pair.distance_m")
    caveat = " (near field: indicative only)" if pair.near_field else ""
    return [make(
        "isolation", pair.aircraft, f"{pair.position_a}+{pair.position_b}", isolation.value, minimum.value, "dB",
        f"{pair.position_a} and {pair.position_b} are {distance.value:.2f} m apart: free-space isolation "
        f"{isolation.value:.1f} dB is under the {minimum.value:g} dB minimum{caveat}.", isolation)]


def apply_reviews(found: list[Discrepancy], reviews) -> list[Discrepancy]:
    """Attach each review to its discrepancy; a review whose value no longer matches reopens it."""
    out = []
    for item in found:
        review: Review | None = reviews.get(item.id)
        if review is None:
            out.append(item)
            continue
        seen = review.value_seen
        changed = seen is not None and not same_value(seen, item.value)
        out.append(replace(item, review="reopened" if changed else review.state, reviewer=review.reviewer,
                           review_comment=review.comment, review_reference=review.reference))
    return out


def stale_reviews(found: list[Discrepancy], reviews) -> list[Review]:
    """Reviews whose discrepancy no longer exists."""
    ids = {item.id for item in found}
    return [review for key, review in reviews.items() if key not in ids]


def same_value(seen, value) -> bool:
    """A reviewer's recorded value matches the current one (numbers to 0.1 % or 0.001)."""
    if isinstance(seen, (int, float)) and isinstance(value, (int, float)):
        return abs(seen - value) <= max(1e-3, 1e-3 * abs(value))
    return str(seen) == str(value)


def is_open(item: Discrepancy) -> bool:
    return item.review in ("open", "reopened")


def gate_fails(found: list[Discrepancy]) -> bool:
    """True when a discrepancy of the top severity is open: `check` then exits 1."""
    return any(item.severity == SEVERITIES[0] and is_open(item) for item in found)
