"""Check stage, first half: the rules over one aircraft's computed figures → findings (`reviews.py` does the rest).

Each rule reads figures from `FleetResults` and the thresholds from the fleet's policy, and never
raises on bad data: a figure a rule needs but cannot find becomes a `missing-data` discrepancy.
A discrepancy's id is `<aircraft>/<position>/<rule>` (pairs: `<aircraft>/<A>+<B>/isolation`), so it
survives unrelated edits of the registry.
"""
from __future__ import annotations

from typing import NamedTuple

from registry.compute.element import HORIZON_LOSS_LIMIT_DB
from registry.compute.kinds import kind_of
from registry.check.effectivity import effectivity_discrepancies
from registry.core import figure_keys as FK
from registry.core.model import Aircraft, AntennaModel, Cable, Fleet, Installation, Service
from registry.core.sources import where
from registry.core.results import AircraftCosite, Discrepancy, Figure, InstallationResult
from registry.core.rulebook import RULE_SEVERITY

IMPEDANCE_TOLERANCE_PCT = 5.0
"""Cable and antenna impedances further apart than this are a mismatch (50 vs 75 Ω is 50 %); common
practice, no source: catalogue impedances are nominal to a few per cent."""



def aircraft_discrepancies(fleet: Fleet, aircraft: Aircraft, installations: dict[tuple[str, str], InstallationResult],
                           pairs: list, cosite: AircraftCosite | None = None) -> list[Discrepancy]:
    """Every rule over one aircraft's figures: its installations', its pairs', its co-site paths' and its
    modifications' (`effectivity`; no reviews applied)."""
    found: list[Discrepancy] = []
    for installation in aircraft.installations.values():
        found += installation_discrepancies(fleet, aircraft, installation,
                                            installations[(aircraft.id, installation.position)])
    for pair in pairs:
        found += pair_discrepancies(fleet, pair)
    if cosite is not None:
        found += cosite_discrepancies(fleet, cosite)
    return found + effectivity_discrepancies(fleet, aircraft)


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
        src=figure.src if figure else "",
    )


class Subject(NamedTuple):
    """One installation as the single-installation rules see it: the model objects and its figures."""

    fleet: Fleet
    aircraft: Aircraft
    installation: Installation
    result: InstallationResult
    service: Service
    model: AntennaModel
    cable: Cable

    @property
    def ids(self) -> tuple[str, str]:
        return self.aircraft.id, self.installation.position

    def fig(self, key: str) -> Figure | None:
        return self.result.figure(key)


def installation_discrepancies(fleet: Fleet, aircraft: Aircraft, installation: Installation,
                               result: InstallationResult) -> list[Discrepancy]:
    """All single-installation rules for one installation, in `INSTALLATION_RULES` order."""
    subject = Subject(fleet, aircraft, installation, result, fleet.services[installation.service],
                      fleet.antennas[installation.antenna], fleet.cables[installation.feeder.cable])
    out: list[Discrepancy] = []
    for rule in INSTALLATION_RULES:
        out += rule(subject)
    return out


def element_length(s: Subject) -> list[Discrepancy]:
    """The element's length against the resonant length, beyond the policy's tolerance."""
    tolerance = s.fleet.policy.length_tolerance_pct
    deviation = s.fig(FK.LENGTH_DEVIATION_PCT)
    if deviation is None or abs(deviation.value) <= tolerance:
        return []
    resonant = s.fig(FK.LENGTH_RESONANT_M)
    return [make(
        "element-length", *s.ids, deviation.value, tolerance, "%",
        f"Element is {s.fig(FK.LENGTH_INSTALLED_M).value:.3f} m, {abs(deviation.value):.1f} % "
        f"{'longer' if deviation.value > 0 else 'shorter'} than the {resonant.value:.3f} m resonant length "
        f"at {s.service.design_freq_mhz:g} MHz (tolerance ±{tolerance:g} %).",
        deviation, resonant.source)]


def band_coverage(s: Subject) -> list[Discrepancy]:
    """The antenna's rated bands must cover every service band."""
    covered = s.fig(FK.BAND_COVERED_PCT)
    if covered is None or covered.value >= 100.0 - 1e-9:
        return []
    return [make(
        "band-coverage", *s.ids, covered.value, 100.0, "%",
        f"Antenna {s.model.id} is rated for {s.fig(FK.BAND_RATED_MHZ).value} but {s.service.name} needs "
        f"{s.fig(FK.BAND_SERVICE_MHZ).value}; {s.fig(FK.BAND_UNCOVERED_MHZ).value} is not covered.",
        covered, "interval comparison of rated and service bands")]


def vswr_bandwidth(s: Subject) -> list[Discrepancy]:
    """The service band wider than any matching network can hold under the VSWR limit (Bode–Fano)."""
    needed, matchable = s.fig(FK.VSWR_NEEDED_PCT), s.fig(FK.VSWR_BODE_FANO_PCT)
    if needed is None or needed.value <= matchable.value:
        return []
    limit = s.fleet.policy.vswr_limit_for(s.service.id)
    return [make(
        "vswr-bandwidth", *s.ids, needed.value, matchable.value, "%",
        f"The {s.service.name} band is {needed.value:.1f} % wide but with its modelled Q of "
        f"{s.fig(FK.VSWR_Q).value:.1f} no matching network can hold VSWR {limit:.2f}:1 over more than "
        f"{matchable.value:.1f} %.", matchable)]


def measured_vswr(s: Subject) -> list[Discrepancy]:
    """The measured VSWR (or the sweep's worst in band) over the policy's limit."""
    limit = s.fleet.policy.vswr_limit_for(s.service.id)
    for key, what in ((FK.MEASURED_VSWR, "Measured VSWR"), (FK.SWEEP_MAX_VSWR, "Measured sweep VSWR")):
        measured = s.fig(key)
        if measured is not None and isinstance(measured.value, float) and measured.value > limit:
            return [make(
                "measured-vswr", *s.ids, measured.value, limit, "",
                f"{what} is {measured.value:.2f}:1 against a limit of {limit:.2f}:1"
                f"{' inside the service band' if key == FK.SWEEP_MAX_VSWR else ''}.",
                measured, "Pozar, Microwave Engineering, 4th ed., §2.3")]
    return []


def feeder_loss(s: Subject) -> list[Discrepancy]:
    """The feeder's total loss over the service's budget."""
    total = s.fig(FK.FEEDER_TOTAL_LOSS_DB)
    budget = s.fleet.policy.feeder_loss_budget_for(s.service.id)
    if total is None or total.value <= budget:
        return []
    return [make(
        "feeder-loss", *s.ids, total.value, budget, "dB",
        f"Feeder loss is {total.value:.2f} dB at {s.fig(FK.FEEDER_FREQ_MHZ).value:g} MHz "
        f"({s.installation.feeder.length_m:g} m of {s.cable.id}), over the {budget:g} dB budget.",
        total)]


def impedance_match(s: Subject) -> list[Discrepancy]:
    """Cable and antenna of different nominal impedance."""
    cable_ohm, antenna_ohm = s.cable.impedance_ohm, s.model.impedance_ohm
    if 100.0 * abs(cable_ohm - antenna_ohm) / antenna_ohm <= IMPEDANCE_TOLERANCE_PCT:
        return []
    return [make(
        "impedance-match", *s.ids, cable_ohm, antenna_ohm, "Ω",
        f"Cable {s.cable.id} is {cable_ohm:g} Ω but antenna {s.model.id} is "
        f"{antenna_ohm:g} Ω: the joint alone gives VSWR "
        f"{max(cable_ohm, antenna_ohm) / min(cable_ohm, antenna_ohm):.2f}:1.",
        Figure("", "", cable_ohm, "Ω", src=where(s.installation, "feeder.cable")),
        "Pozar, Microwave Engineering, 4th ed., §2.3")]


def cable_frequency(s: Subject) -> list[Discrepancy]:
    """A cable carrying a service above its rated frequency."""
    top_mhz = max(high for _, high in s.service.bands_mhz)
    if top_mhz <= s.cable.max_freq_mhz:
        return []
    return [make(
        "cable-frequency", *s.ids, top_mhz, s.cable.max_freq_mhz, "MHz",
        f"Cable {s.cable.id} is rated to {s.cable.max_freq_mhz:g} MHz but carries {s.service.name} up to "
        f"{top_mhz:g} MHz.",
        Figure("", "", top_mhz, "MHz", src=where(s.installation, "feeder.cable")), "cable catalogue")]


def measurement_age(s: Subject) -> list[Discrepancy]:
    """The last measurement older than the policy allows."""
    max_days = s.fleet.policy.measurement_max_age_days
    age = s.fig(FK.MEASURED_AGE_DAYS)
    if age is None or age.value <= max_days:
        return []
    return [make(
        "measurement-age", *s.ids, age.value, max_days, "days",
        f"Last measurement is {age.value:g} days old; the policy asks for one every "
        f"{max_days} days.", age, "fleet policy")]


def missing_data(s: Subject) -> list[Discrepancy]:
    """One discrepancy listing every figure a check needs but cannot find for this installation."""
    installation, service, result = s.installation, s.service, s.result
    gaps: list[tuple[str, str]] = []
    if service.transmits and installation.measured is None:
        gaps.append(("no measured VSWR or sweep for a transmitting service, so the measured-VSWR check cannot run",
                     where(installation, "service")))
    unreadable = result.figure(FK.SWEEP_ERROR)
    if unreadable is not None:
        gaps.append((f"the measured sweep cannot be used ({unreadable.value})", unreadable.src))
    material = result.figure(FK.GROUND_MATERIAL)
    if material is not None and str(material.value).startswith("unknown"):
        gaps.append(("no skin zone of the airframe type covers this station and surface, so the ground-plane "
                     "check cannot tell metal from composite", material.src))
    if not gaps:
        return []
    message = "Missing data: " + "; ".join(text for text, _ in gaps) + "."
    return [make("missing-data", *s.ids, len(gaps), 0, "items", message,
                 Figure("", "", None, "", src=gaps[0][1]), "completeness of the registry")]


def ground_plane(s: Subject) -> list[Discrepancy]:
    """A monopole with no conductive ground: on composite skin with no plate, or a plate under the policy's
    radius whose finite-plate figures could not be computed. Coupler-tuned elements (the airframe is their
    counterpoise) and monopoles on metal skin are not held to it; a plate of any size is graded by
    `ground_plane_effect` instead."""
    result = s.result
    plane, radius, required = (result.figure(k) for k in (FK.GROUND_TYPE, FK.GROUND_RADIUS_M, FK.GROUND_REQUIRED_M))
    if plane is None or radius.value == "metal skin" or s.installation.coupler:
        return []
    if result.figure(FK.GROUND_SHIFT_VSWR) is not None:
        return []
    material = result.figure(FK.GROUND_MATERIAL).value
    if isinstance(radius.value, float) and radius.value >= required.value:
        return []
    if plane.value == "plate":
        message = (f"Ground plate radius {radius.value:.3f} m is under the {required.value:.3f} m the monopole "
                   "needs at the lowest service frequency.")
    else:
        message = (f"Monopole stands on {material} skin with no installed ground plane "
                   f"(needs a conductive plane of {required.value:.3f} m radius).")
    return [make("ground-plane", *s.ids, radius.value if isinstance(radius.value, float) else 0.0,
                 required.value, "m", message, radius, required.source)]


def ground_plane_effect(s: Subject) -> list[Discrepancy]:
    """A monopole on a finite plate: the match made for a large ground no longer holds the service's VSWR
    limit on it, or the plate takes more horizon gain than HORIZON_LOSS_LIMIT_DB."""
    shift, lost = s.fig(FK.GROUND_SHIFT_VSWR), s.fig(FK.GROUND_HORIZON_LOST_DB)
    if shift is None or s.installation.coupler:
        return []
    limit = s.fleet.policy.vswr_limit_for(s.service.id)
    radius = s.fig(FK.GROUND_RADIUS_WAVELENGTHS)
    if shift.value > limit:
        return [make("ground-plane-effect", *s.ids, shift.value, limit, "",
                     f"On its {s.fig(FK.GROUND_RADIUS_M).value:.3f} m plate ({radius.value:.2f} λ) the monopole's "
                     f"input impedance moves from {s.fig(FK.GROUND_Z_REFERENCE_OHM).value} Ω to "
                     f"{s.fig(FK.GROUND_Z_PLATE_OHM).value} Ω: a match made for a large ground reads VSWR "
                     f"{shift.value:.2f}:1 against the {limit:.2f}:1 limit.", shift)]
    if lost.value > HORIZON_LOSS_LIMIT_DB:
        return [make("ground-plane-effect", *s.ids, lost.value, HORIZON_LOSS_LIMIT_DB, "dB",
                     f"On its {radius.value:.2f} λ plate the monopole loses {lost.value:.1f} dB of horizon gain "
                     f"against an infinite ground (beam peak at {s.fig(FK.GROUND_PEAK_ELEVATION_DEG).value:.0f}°).",
                     lost)]
    return []


def skin_position(s: Subject) -> list[Discrepancy]:
    """A fuselage antenna whose recorded position is further from the modelled skin than the tolerance."""
    distance, tolerance = s.fig(FK.SKIN_DISTANCE_M), s.fig(FK.SKIN_TOLERANCE_M)
    if tolerance is None or (distance.value is not None and distance.value <= tolerance.value):
        return []
    shape = s.fig(FK.SKIN_SHAPE).value
    where_text = "no fuselage skin within 2 m" if distance.value is None else (
        f"{distance.value:.3f} m {distance.label.split('(')[-1].rstrip(')')} the skin")
    return [make("skin-position", *s.ids, distance.value if distance.value is not None else 2.0,
                 tolerance.value, "m",
                 f"The recorded position of this {s.installation.surface.replace('_', ' ')} antenna is {where_text} "
                 f"(shape {shape}); check its STA/BL/WL.", distance)]


def coverage(s: Subject) -> list[Discrepancy]:
    """The share of what the service must see that the airframe leaves clear, under the service's need."""
    worst, required = s.fig(FK.COVERAGE_WORST_PCT), s.fig(FK.COVERAGE_REQUIRED_PCT)
    if worst is None or worst.value >= required.value:
        return []
    return [make("coverage", *s.ids, worst.value, required.value, "%",
                 f"From its {s.installation.surface.replace('_', ' ')} position the antenna sees "
                 f"{worst.value:.0f} % of the {s.fig(FK.COVERAGE_REGION).value} ({s.fig(FK.COVERAGE_ATTITUDE).value}; "
                 f"{s.fig(FK.COVERAGE_LEVEL_PCT).value:.0f} % in level flight) against the {required.value:g} % "
                 f"{s.service.name} needs; widest blocked sector: {s.fig(FK.COVERAGE_SECTOR).value}.", worst)]


def antenna_suitability(s: Subject) -> list[Discrepancy]:
    """Polarisation and coverage of the antenna against what the service needs."""
    installation, service, model = s.installation, s.service, s.model
    problems = []
    wanted, has = service.polarisation, model.polarisation
    if wanted == "circular" and has not in ("rhcp", "lhcp"):
        problems.append(f"{service.name} is circularly polarised but the antenna is {has}")
    elif wanted in ("vertical", "horizontal") and has != wanted:
        problems.append(f"{service.name} needs {wanted} polarisation but the antenna is {has}")
    if service.coverage == "omni" and kind_of(model.kind).directional:
        problems.append(f"{service.name} needs all-round coverage but a {model.kind.replace('_', ' ')} is directional")
    if not problems:
        return []
    return [make("antenna-suitability", *s.ids, model.polarisation, service.polarisation, "",
                 "; ".join(problems) + ".", Figure("", "", None, "", src=where(installation, "antenna")),
                 "service table (polarisation, coverage)")]


def unmodellable(s: Subject) -> list[Discrepancy]:
    """A figure the physics could not compute for this geometry (the thin-wire model does not apply)."""
    notes = [f for f in (s.fig(FK.LENGTH_UNMODELLABLE), s.fig(FK.VSWR_UNMODELLABLE)) if f is not None]
    if not notes:
        return []
    reasons = list(dict.fromkeys(str(f.value) for f in notes))
    return [make("unmodellable", *s.ids, len(notes), 0, "figures",
                 f"Antenna {s.model.id} cannot be modelled as recorded: " + "; ".join(reasons)
                 + ". Check its geometry in the catalogue.", notes[0])]


def pair_discrepancies(fleet: Fleet, pair) -> list[Discrepancy]:
    """Isolation below the policy's minimum for the pair's services."""
    isolation = pair.figure(FK.PAIR_ISOLATION_DB)
    minimum = pair.figure(FK.PAIR_MIN_ISOLATION_DB)
    if isolation is None or minimum is None or isolation.value is None or isolation.value >= minimum.value:
        return []
    distance, model = pair.figure(FK.PAIR_DISTANCE_M), pair.figure(FK.PAIR_MODEL)
    how = f" ({model.value})" if model is not None else ""
    return [make(
        "isolation", pair.aircraft, f"{pair.position_a}+{pair.position_b}", isolation.value, minimum.value, "dB",
        f"{pair.position_a} and {pair.position_b} are {distance.value:.2f} m apart: isolation "
        f"{isolation.value:.1f} dB{how} is under the {minimum.value:g} dB minimum.", isolation)]


def cosite_discrepancies(fleet: Fleet, cosite: AircraftCosite) -> list[Discrepancy]:
    """Co-site margins: `cosite` for any negative margin between two installations (each negative harmonic
    named with its channels and margin, each intermodulation product with its transmitters, ranges and
    margin, on the pair of the transmitter that makes it and the receiver), `cosite-small` for margins
    under the policy's small margin. One finding per pair of positions (sorted, as reviews name pairs);
    its value is the worst margin."""
    small = fleet.policy.cosite_small_margin_db
    by_pair: dict[tuple[str, str], list[tuple[float, str, Figure, str]]] = {}
    # only margins under the small margin can make a finding: an aircraft has about a thousand products
    for path in cosite.paths:
        for hit in path.hits:
            if hit.margin_db is not None and hit.margin_db < small:
                by_pair.setdefault(tuple(sorted((path.tx, path.rx))), []).append(
                    (hit.margin_db, f"{path.tx} → {path.rx}: {hit.channels}, {hit.product} at "
                     f"{hit.product_lo_mhz:.3f}–{hit.product_hi_mhz:.3f} MHz", _margin_of(hit.figures), "harmonic"))
    for item in cosite.intermod:
        if item.margin_db is not None and item.margin_db < small and not item.excused_by:
            by_pair.setdefault(tuple(sorted((item.generator, item.rx))), []).append(
                (item.margin_db, f"{item.tx_a} + {item.tx_b} → {item.rx}: {item.product} (order {item.order}, made in "
                 f"{item.generator}) at {item.product_mhz[0]:.3f}–{item.product_mhz[1]:.3f} MHz from f1 "
                 f"{item.f1_mhz[0]:.3f}–{item.f1_mhz[1]:.3f} MHz and f2 {item.f2_mhz[0]:.3f}–{item.f2_mhz[1]:.3f} MHz",
                 _margin_of(item.figures), "intermodulation"))
    found = []
    for (a, b), rated in sorted(by_pair.items()):
        for rule, limit, bad in (("cosite", 0.0, [r for r in rated if r[0] < 0.0]),
                                 ("cosite-small", small, [r for r in rated if 0.0 <= r[0] < small])):
            if bad and (rule == "cosite" or not any(r[0] < 0.0 for r in rated)):
                found.append(cosite_finding(rule, cosite.aircraft, f"{a}+{b}", limit,
                                            sorted(bad, key=lambda r: (r[0], r[1]))))
    return found


def _margin_of(figures: tuple[Figure, ...]) -> Figure:
    return next(f for f in figures if f.key == FK.COSITE_MARGIN_DB)


def cosite_finding(rule: str, aircraft: str, pair: str, limit: float, bad: list) -> Discrepancy:
    worst_margin, _, margin, _ = bad[0]
    what = "; ".join(f"{text}, margin {value:.1f} dB" for value, text, _, _ in bad[:3])
    what += f"; and {len(bad) - 3} more" if len(bad) > 3 else ""
    kinds = {kind for *_, kind in bad}
    subject = ("A transmitter harmonic" if kinds == {"harmonic"} else "An intermodulation product"
               if kinds == {"intermodulation"} else "Transmitter harmonics and intermodulation products")
    verb = "lands above the receiver's protection threshold" if rule == "cosite" else "leaves a small margin"
    method = ("harmonic level at the receiver against its protection threshold (co-site)" if kinds == {"harmonic"}
              else "harmonic and intermodulation levels at the receiver against its protection threshold (co-site)")
    return make(rule, aircraft, pair, worst_margin, limit, "dB", f"{subject} {verb}: {what}.", margin, method)


INSTALLATION_RULES = (element_length, band_coverage, vswr_bandwidth, measured_vswr, feeder_loss, impedance_match,
                      cable_frequency, ground_plane, antenna_suitability, measurement_age, missing_data,
                      unmodellable, skin_position, coverage, ground_plane_effect)
"""The single-installation rules, in the order their findings are listed (pairs follow)."""
