"""Compute stage: every figure of every installation, from the model through the physics.

Reads the model, calls the pure functions in registry.physics, and returns `FleetResults` of plain
`Figure` records (value, unit, formula, inputs, source, registry line). A result that depends only on
an antenna model's content and a frequency (pattern, modelled impedance) is computed once per distinct
content and reused by every installation that shares it (`cache.py`).
"""
from __future__ import annotations

import functools
import math
from datetime import date

import numpy as np

from registry import cache
from registry.model import AntennaModel, Cable, Fleet, Installation, Policy, Service
from registry.physics import coupling, feeder, impedance, mismatch, sweep, wave
from registry.results import CableResult, Curve, Figure, FleetResults, InstallationResult, PairResult
from registry.units import C_M_PER_S

MHZ = 1e6

MONOPOLE_KINDS = ("quarter_wave_monopole",)
ELEMENT_KINDS = {"quarter_wave_monopole": 0.25, "half_wave_dipole": 0.5, "folded_dipole": 0.5}
"""Kinds whose single element is cut to a fraction of a wavelength: the fraction."""

POLARISATION_OF_KIND = {
    "quarter_wave_monopole": "vertical", "half_wave_dipole": None, "folded_dipole": None,
}


def compute_fleet(fleet: Fleet, as_of: date) -> FleetResults:
    """All figures of the fleet. `as_of` is the date measurement ages are counted to."""
    results = FleetResults()
    for cable in fleet.cables.values():
        results.cables[cable.id] = cable_result(cable)
    for aircraft, installation in fleet.installations():
        service = fleet.services[installation.service]
        model = fleet.antennas[installation.antenna]
        cable = fleet.cables[installation.feeder.cable]
        airframe = fleet.airframe_of(aircraft)
        figures: list[Figure] = []
        figures += length_figures(installation, model, service)
        figures += band_figures(installation, model, service)
        modelled = ([], None) if installation.coupler else modelled_vswr(model, service, cable, fleet.policy)
        figures += modelled[0]
        measured, measured_curve = measured_figures(installation, service, cable, fleet.policy, as_of)
        figures += measured
        figures += feeder_figures(installation, model, service, cable, fleet.policy, figures)
        figures += ground_plane_figures(installation, model, service, airframe.material_at(
            installation.location.sta, installation.surface), fleet.policy)
        pattern = cache.pattern(model, service.design_freq_mhz)
        if pattern is not None:
            results.patterns.setdefault(pattern.key, pattern)
        results.installations[(aircraft.id, installation.position)] = InstallationResult(
            aircraft=aircraft.id,
            position=installation.position,
            figures=tuple(figures),
            pattern_key=pattern.key if pattern is not None else None,
            vswr_modelled=modelled[1],
            vswr_measured=measured_curve,
            service_bands_mhz=service.bands_mhz,
            vswr_limit=fleet.policy.vswr_limit_for(service.id),
        )
    for aircraft in fleet.aircraft.values():
        results.pairs += pair_results(fleet, aircraft)
    return results


def where(obj, field: str) -> str:
    """The registry line of a field, as `file:line`."""
    src = obj.where(field)
    return f"{src.path}:{src.line}"


# --- element length -------------------------------------------------------------------------------------


def length_figures(installation: Installation, model: AntennaModel, service: Service) -> list[Figure]:
    """Installed element length against the resonant length at the service's design frequency."""
    fraction = ELEMENT_KINDS.get(model.kind)
    if fraction is None or installation.coupler:
        return []
    freq_hz = service.design_freq_mhz * MHZ
    element = "quarter_wave" if fraction == 0.25 else "half_wave"
    length_m = float(model.geometry["element_length_m"])
    diameter_m = float(model.geometry["element_diameter_m"])
    image_ratio = (2.0 if element == "quarter_wave" else 1.0) * length_m / diameter_m
    wavelength_m = wave.wavelength_m(freq_hz)
    rule_m = wave.rule_of_thumb_length_m(freq_hz, element)
    try:
        factor = wave.end_effect_factor(image_ratio)
        resonant_m = wave.resonant_length_m(freq_hz, diameter_m, element)
        reference = "end effect"
    except ValueError:  # a fat element: the thin-wire fit does not apply, fall back on the trade's rule
        factor = wave.RULE_OF_THUMB_FACTOR
        resonant_m = rule_m
        reference = "95 % rule (element too thick for the end-effect fit)"
    deviation_pct, deviation_mm = wave.length_deviation(length_m, resonant_m)
    src = where(model, "geometry.element_length_m")
    name = "λ/4" if fraction == 0.25 else "λ/2"
    return [
        Figure("length.design_freq_mhz", "Design frequency", service.design_freq_mhz, "MHz",
               source=f"service table: {service.source}", src=where(service, "bands_mhz")),
        Figure("length.wavelength_m", "Free-space wavelength", wavelength_m, "m", "λ = c / f",
               (("c", "299 792 458 m/s"), ("f", f"{service.design_freq_mhz:g} MHz")), "SI definition of c"),
        Figure("length.rule95_m", f"Resonant length, 95 % rule ({name})", rule_m, "m", f"0.95 · {name}",
               (("λ", f"{wavelength_m:.4f} m"),), "common practice, no source"),
        Figure("length.resonant_m", f"Resonant length, {reference} ({name})", resonant_m, "m",
               f"K(L/D) · {name}", (("L/D of the dipole or image dipole", f"{image_ratio:.1f}"),
                                    ("K", f"{factor:.4f}")),
               "K = 1 − 0.219 / (ln(2L/D) − 1.855): transmission-line model of a dipole (Balanis, Antenna "
               "Theory, 4th ed., ch. 4 and 9), constants fitted to NEC-2 resonant lengths"),
        Figure("length.installed_m", "Installed element length", length_m, "m", src=src),
        Figure("length.deviation_pct", "Deviation from resonant length", deviation_pct, "%",
               "(ℓ − ℓ_res) / ℓ_res · 100", (("ℓ", f"{length_m:.4f} m"), ("ℓ_res", f"{resonant_m:.4f} m")),
               src=src),
        Figure("length.deviation_mm", "Deviation from resonant length", deviation_mm, "mm", "ℓ − ℓ_res",
               src=src),
    ]


# --- band coverage --------------------------------------------------------------------------------------


def uncovered_mhz(service_bands, rated_bands) -> list[tuple[float, float]]:
    """The parts of the service bands (MHz) that no rated band covers, as (low, high) pairs."""
    gaps = []
    for low, high in service_bands:
        pieces = [(low, high)]
        for r_low, r_high in rated_bands:
            next_pieces = []
            for p_low, p_high in pieces:
                if r_high <= p_low or r_low >= p_high:
                    next_pieces.append((p_low, p_high))
                    continue
                if p_low < r_low:
                    next_pieces.append((p_low, r_low))
                if r_high < p_high:
                    next_pieces.append((r_high, p_high))
            pieces = next_pieces
        gaps += pieces
    return gaps


def format_bands(bands) -> str:
    return ", ".join(f"{low:g}–{high:g}" for low, high in bands) or "none"


def band_figures(installation: Installation, model: AntennaModel, service: Service) -> list[Figure]:
    """The antenna's rated band(s) against the service band(s)."""
    gaps = uncovered_mhz(service.bands_mhz, model.bands_mhz)
    total = sum(high - low for low, high in service.bands_mhz)
    missing = sum(high - low for low, high in gaps)
    return [
        Figure("band.service_mhz", "Service band", format_bands(service.bands_mhz), "MHz",
               source=service.source, src=where(service, "bands_mhz")),
        Figure("band.rated_mhz", "Antenna rated band", format_bands(model.bands_mhz), "MHz",
               src=where(model, "bands_mhz")),
        Figure("band.uncovered_mhz", "Service band not covered", format_bands(gaps), "MHz",
               "service bands − rated bands", src=where(model, "bands_mhz")),
        Figure("band.covered_pct", "Share of the service band covered", 100.0 * (total - missing) / total, "%",
               src=where(model, "bands_mhz")),
    ]


# --- modelled VSWR --------------------------------------------------------------------------------------


def sweep_freqs_mhz(service: Service, points: int = 41) -> np.ndarray:
    """Frequencies (MHz) spanning every service band with a 10 % margin each side, plus each band's edges
    and centre so that even a narrow band has points inside it."""
    low = min(low for low, _ in service.bands_mhz)
    high = max(high for _, high in service.bands_mhz)
    margin = 0.1 * (high - low) + 0.01 * low
    edges = [value for low_b, high_b in service.bands_mhz for value in (low_b, (low_b + high_b) / 2, high_b)]
    return np.unique(np.round(np.concatenate([np.linspace(low - margin, high + margin, points), edges]), 6))


def in_bands(freqs_mhz: np.ndarray, bands) -> np.ndarray:
    mask = np.zeros(freqs_mhz.shape, dtype=bool)
    for low, high in bands:
        mask |= (freqs_mhz >= low - 1e-9) & (freqs_mhz <= high + 1e-9)
    return mask


def modelled_vswr(model: AntennaModel, service: Service, cable: Cable,
                  policy: Policy) -> tuple[list[Figure], Curve | None]:
    """VSWR across the service band from the method-of-moments input impedance of the element, and
    whether any matching network could hold the VSWR limit across each service band.

    The curve is the bare element seen through an ideal lossless transformer that brings its resistance
    at the design frequency to the antenna's declared impedance, against the feeder's impedance: the
    antenna's own matching network is not modelled, so the curve is an indicator. The check uses the
    Bode–Fano limit instead: with the element's Q from its modelled impedance slope,
    Q ≈ ω₀·|Z′(ω₀)| / (2R₀) (Yaghjian and Best, IEEE Trans. AP-53, 2005), no lossless matching network
    can hold |Γ| ≤ Γm over a fractional bandwidth wider than π / (Q·ln(1/Γm)) (Pozar, Microwave
    Engineering, 4th ed., §5.9).
    """
    freqs_mhz = sweep_freqs_mhz(service)
    centres = tuple((low + high) / 2 for low, high in service.bands_mhz)
    solved = cache.impedance_sweep(model, tuple(freqs_mhz.tolist()), service.design_freq_mhz, centres)
    if solved is None:
        return [], None
    z_element, resonance_mhz, r_design, slopes = solved
    ratio = model.impedance_ohm / r_design
    vswr = mismatch.vswr_from_z(z_element * ratio, cable.impedance_ohm)
    band = in_bands(freqs_mhz, service.bands_mhz)
    limit = policy.vswr_limit_for(service.id)
    gamma_max = (limit - 1) / (limit + 1)
    band_low, band_high = impedance.band_under_vswr(freqs_mhz, vswr, limit)
    worst = None  # the band whose needed bandwidth comes closest to (or beyond) the Bode–Fano limit
    for (low, high), centre, (z_centre, slope) in zip(service.bands_mhz, centres, slopes):
        q = 2 * math.pi * centre * MHZ * abs(slope) / (2 * z_centre.real)
        limit_pct = 100 * math.pi / (q * math.log(1 / gamma_max))
        needed_pct = 100 * (high - low) / centre
        if worst is None or needed_pct / limit_pct > worst[3] / worst[2]:
            worst = (centre, q, limit_pct, needed_pct)
    centre, q, limit_pct, needed_pct = worst
    src = where(model, "geometry")
    figures = [
        Figure("vswr.resonance_mhz", "Modelled series resonance", resonance_mhz, "MHz", "X_in(f) = 0",
               source=METHOD_MOM, src=src),
        Figure("vswr.r_design_ohm", "Element resistance at design frequency", r_design, "Ω",
               "Re Z_in(f_design)", source=METHOD_MOM, src=src),
        Figure("vswr.max_in_band", "Modelled VSWR of the bare element, worst in band", float(vswr[band].max()), "",
               "VSWR = (1 + |Γ|)/(1 − |Γ|), Γ = (Z·Z_ant/R − Z₀)/(Z·Z_ant/R + Z₀)",
               (("Z_ant", f"{model.impedance_ohm:g} Ω"), ("R", f"{r_design:.1f} Ω"),
                ("Z₀ (cable)", f"{cable.impedance_ohm:g} Ω")),
               "Pozar, Microwave Engineering, 4th ed., §2.3; matching network not modelled", src),
        Figure("vswr.band_under_limit_mhz", f"Band with bare-element VSWR ≤ {limit:g}",
               "none" if math.isnan(band_low) else f"{band_low:.2f}–{band_high:.2f}", "MHz", src=src),
        Figure("vswr.q", "Element Q", q, "", "Q ≈ ω₀·|Z′(ω₀)| / (2R₀)", (("f₀", f"{centre:g} MHz"),),
               "Yaghjian and Best, IEEE Trans. Antennas Propag. 53(4), 2005", src),
        Figure("vswr.needed_pct", "Fractional bandwidth the service needs", needed_pct, "%", "Δf / f₀",
               (("f₀", f"{centre:g} MHz"),), src=where(service, "bands_mhz")),
        Figure("vswr.bode_fano_pct", f"Widest band matchable to VSWR {limit:g}", limit_pct, "%",
               "π / (Q·ln(1/Γm))", (("Q", f"{q:.2f}"), ("Γm", f"{gamma_max:.3f}")),
               "Bode–Fano limit (Pozar, Microwave Engineering, 4th ed., §5.9)", src),
    ]
    curve = Curve(freqs_mhz, vswr, "Frequency (MHz)", "VSWR")
    return figures, curve


METHOD_MOM = ("thin-wire method of moments, piecewise-sinusoidal Galerkin (Richmond); monopole by image "
              "theory; checked against NEC-2")


# --- feeder ---------------------------------------------------------------------------------------------


@functools.lru_cache(maxsize=None)
def attenuation_fit(table: tuple[tuple[float, float], ...]) -> feeder.AttenuationFit:
    """The a·√f + b·f fit of a cable table ((freq_mhz, dB per 100 m) pairs), once per distinct table."""
    freqs_hz = np.array([freq for freq, _ in table]) * MHZ
    return feeder.fit_attenuation(freqs_hz, np.array([loss for _, loss in table]))


def cable_result(cable: Cable) -> CableResult:
    """A cable's table, its fit over the table's range and the fit's residual."""
    fit = attenuation_fit(cable.attenuation_db_per_100m)
    table_mhz = np.array([freq for freq, _ in cable.attenuation_db_per_100m])
    fit_mhz = np.geomspace(table_mhz.min(), max(table_mhz.max(), cable.max_freq_mhz), 60)
    src = where(cable, "attenuation_db_per_100m" if cable.declared_unit == "db_per_100m"
                else "attenuation_db_per_100ft")
    figures = (
        Figure("cable.a", "Conductor term a", fit.a_db_per_100m_sqrt_hz * math.sqrt(MHZ), "dB/100 m/√MHz",
               "α(f) = a·√f + b·f", source=FEEDER_SOURCE, src=src),
        Figure("cable.b", "Dielectric term b", fit.b_db_per_100m_hz * MHZ, "dB/100 m/MHz",
               "α(f) = a·√f + b·f", source=FEEDER_SOURCE, src=src),
        Figure("cable.rms_residual", "Fit residual, RMS", fit.rms_residual_db_per_100m, "dB/100 m", src=src),
        Figure("cable.max_residual", "Fit residual, largest", fit.max_residual_db_per_100m, "dB/100 m", src=src),
    )
    return CableResult(
        cable=cable.id,
        table=Curve(table_mhz, np.array([loss for _, loss in cable.attenuation_db_per_100m]),
                    "Frequency (MHz)", "Attenuation (dB/100 m)"),
        fitted=Curve(fit_mhz, feeder.attenuation_db_per_100m(fit, fit_mhz * MHZ),
                     "Frequency (MHz)", "Attenuation (dB/100 m)"),
        figures=figures,
    )


FEEDER_SOURCE = "Pozar, Microwave Engineering, 4th ed., §2.7 (conductor √f and dielectric f terms), §2.3 (mismatch)"


def vswr_for_mismatch(figures: list[Figure], model: AntennaModel) -> tuple[float, str]:
    """The antenna VSWR the mismatch loss is taken from: measured, else modelled, else rated."""
    by_key = {figure.key: figure for figure in figures}
    for key, label in (("sweep.max_vswr", "measured sweep, worst in band"), ("measured.vswr", "measured"),
                       ("vswr.max_in_band", "modelled, worst in band")):
        if key in by_key and isinstance(by_key[key].value, float):
            return by_key[key].value, label
    return model.rated_vswr, "rated (no measurement or model)"


def feeder_figures(installation: Installation, model: AntennaModel, service: Service, cable: Cable,
                   policy: Policy, figures_so_far: list[Figure]) -> list[Figure]:
    """Feeder loss at the highest frequency of the service: cable, connectors, adapters, mismatch."""
    run = installation.feeder
    freq_mhz = max(high for _, high in service.bands_mhz)
    fit = attenuation_fit(cable.attenuation_db_per_100m)
    alpha = feeder.attenuation_db_per_100m(fit, freq_mhz * MHZ)
    cable_db = float(feeder.cable_loss_db(fit, freq_mhz * MHZ, run.length_m))
    connector_db = run.connectors * policy.connector_loss_db
    adapter_db = run.adapters * policy.adapter_loss_db
    vswr, vswr_from = vswr_for_mismatch(figures_so_far, model)
    budget = feeder.feeder_budget(cable_db, (connector_db, adapter_db), vswr)
    src_len = where(installation, "feeder.length_m")
    table_top = max(freq for freq, _ in cable.attenuation_db_per_100m)
    return [
        Figure("feeder.freq_mhz", "Evaluated at (highest service frequency)", freq_mhz, "MHz",
               src=where(service, "bands_mhz")),
        Figure("feeder.attenuation_db_per_100m", "Cable attenuation", alpha, "dB/100 m", "α(f) = a·√f + b·f",
               (("cable", cable.id), ("table up to", f"{table_top:g} MHz")), FEEDER_SOURCE,
               where(cable, "id")),
        Figure("feeder.cable_loss_db", "Cable loss", cable_db, "dB", "α(f) · ℓ / 100",
               (("α", f"{alpha:.2f} dB/100 m"), ("ℓ", f"{run.length_m:g} m")), FEEDER_SOURCE, src_len),
        Figure("feeder.connector_loss_db", "Connector loss", connector_db, "dB", "n · L_c",
               (("n", str(run.connectors)), ("L_c", f"{policy.connector_loss_db:g} dB")), "fleet policy",
               where(installation, "feeder.connectors")),
        Figure("feeder.adapter_loss_db", "Adapter loss", adapter_db, "dB", "n · L_a",
               (("n", str(run.adapters)), ("L_a", f"{policy.adapter_loss_db:g} dB")), "fleet policy",
               where(installation, "feeder.adapters")),
        Figure("feeder.mismatch_loss_db", "Mismatch loss", budget.mismatch_loss_db, "dB",
               "ML = −10·log₁₀(1 − |Γ|²), |Γ| = (VSWR − 1)/(VSWR + 1)",
               (("VSWR", f"{vswr:.2f} ({vswr_from})"),), "Pozar, Microwave Engineering, 4th ed., §2.3"),
        Figure("feeder.return_loss_db", "Return loss at the antenna", budget.return_loss_db, "dB",
               "RL = −20·log₁₀|Γ|", source="Pozar, Microwave Engineering, 4th ed., §2.3"),
        Figure("feeder.total_loss_db", "Total feeder loss", budget.total_loss_db, "dB",
               "cable + connectors + adapters + mismatch",
               (("budget", f"{policy.feeder_loss_budget_for(service.id):g} dB"),), FEEDER_SOURCE, src_len),
        Figure("feeder.delivered_pct", "Power reaching the antenna", 100.0 * budget.delivered_fraction, "%",
               "10^(−total/10) · 100", source=FEEDER_SOURCE, src=src_len),
    ]


# --- ground plane ---------------------------------------------------------------------------------------


def ground_plane_figures(installation: Installation, model: AntennaModel, service: Service,
                         material: str | None, policy: Policy) -> list[Figure]:
    """For monopoles: what the element stands on and whether it reaches the policy's radius."""
    if model.kind not in MONOPOLE_KINDS:
        return []
    low_mhz = min(low for low, _ in service.bands_mhz)
    required_m = policy.ground_plane_min_radius_wavelengths * wave.wavelength_m(low_mhz * MHZ)
    plane = installation.ground_plane
    plane_type = plane.type if plane is not None else "skin"
    src = where(installation, "ground_plane") if plane is not None else where(installation, "surface")
    if plane_type == "plate":
        radius: float | str = float(plane.radius_m)
    elif plane_type == "skin" and material == "metal":
        radius = "metal skin"
    else:
        radius = 0.0
    return [
        Figure("ground.material", "Skin material at the base", material or "unknown (no zone covers it)", "",
               src=where(installation, "location")),
        Figure("ground.type", "Ground plane", plane_type, "", src=src),
        Figure("ground.radius_m", "Ground-plane radius", radius, "m" if isinstance(radius, float) else "", src=src),
        Figure("ground.required_m", "Required radius at the lowest service frequency", required_m, "m",
               "k · λ(f_low)", (("k", f"{policy.ground_plane_min_radius_wavelengths:g} λ"),
                                ("f_low", f"{low_mhz:g} MHz")), "common practice, no source (λ/4 radius)"),
    ]


# --- measurements ---------------------------------------------------------------------------------------


def measured_figures(installation: Installation, service: Service, cable: Cable, policy: Policy,
                     as_of: date) -> tuple[list[Figure], Curve | None]:
    """Measured VSWR, its age, and what a measured sweep shows across the service band."""
    measured = installation.measured
    if measured is None:
        return [], None
    figures = [
        Figure("measured.date", "Last measured", measured.date.isoformat(), "", src=where(measured, "date")),
        Figure("measured.age_days", "Age of the measurement", float((as_of - measured.date).days), "days",
               "as-of date − measurement date", (("as of", as_of.isoformat()),), src=where(measured, "date")),
    ]
    if measured.vswr is not None:
        figures.append(Figure("measured.vswr", "Measured VSWR", float(measured.vswr), "",
                              src=where(measured, "vswr")))
    if measured.sweep is None:
        return figures, None
    src = where(measured, "sweep")
    try:
        data = sweep.read_s1p(measured.sweep)
        worst = max((sweep.band_summary(data, low * MHZ, high * MHZ) for low, high in service.bands_mhz
                     if np.any((data.freqs_hz >= low * MHZ) & (data.freqs_hz <= high * MHZ))),
                    key=lambda summary: summary.max_vswr, default=None)
    except (OSError, ValueError) as error:
        figures.append(Figure("sweep.error", "Measured sweep could not be used", str(error), "", src=src))
        return figures, None
    if worst is None:
        figures.append(Figure("sweep.error", "Measured sweep could not be used",
                              "the sweep has no point inside the service band", "", src=src))
        return figures, None
    figures += [
        Figure("sweep.max_vswr", "Measured sweep VSWR, worst in band", worst.max_vswr, "",
               "VSWR = (1 + |S11|) / (1 − |S11|)", (("points in band", str(worst.n_points)),
                                                    ("at", f"{worst.freq_at_max_vswr_hz / MHZ:.3f} MHz")),
               "Pozar, Microwave Engineering, 4th ed., §2.3; Touchstone (IBIS Open Forum)", src),
        Figure("sweep.min_return_loss_db", "Measured return loss, worst in band", worst.min_return_loss_db,
               "dB", "RL = −20·log₁₀|S11|", source="Pozar, Microwave Engineering, 4th ed., §2.3", src=src),
    ]
    try:
        fault = sweep.distance_to_reflection(data, cable.velocity_factor)
        figures.append(Figure(
            "sweep.fault_distance_m", "Largest reflection along the feeder at", fault.peak_distance_m, "m",
            "d = v·t / 2, v = VF·c, t from the inverse FFT of S11 (Hann window)",
            (("VF", f"{cable.velocity_factor:g}"), ("resolution", f"{fault.resolution_m:.2f} m"),
             ("feeder length", f"{installation.feeder.length_m:g} m")),
            "band-pass time-domain reflectometry (inverse DFT of S11)", src))
    except ValueError as error:
        figures.append(Figure("sweep.fault_distance_m", "Largest reflection along the feeder at",
                              f"not available: {error}", "", src=src))
    vswr_curve = mismatch.vswr_from_gamma(np.abs(data.s11))
    return figures, Curve(data.freqs_hz / MHZ, vswr_curve, "Frequency (MHz)", "VSWR")


# --- isolation between pairs ----------------------------------------------------------------------------

SURFACE_AXES = {
    "top": ((0, 0, 1), (-1, 0, 0)), "fin": ((0, 0, 1), (-1, 0, 0)),
    "wing_left": ((0, 0, 1), (-1, 0, 0)), "wing_right": ((0, 0, 1), (-1, 0, 0)),
    "bottom": ((0, 0, -1), (-1, 0, 0)),
    "nose": ((-1, 0, 0), (0, 0, 1)), "tail": ((1, 0, 0), (0, 0, 1)),
    "side_left": ((0, -1, 0), (-1, 0, 0)), "side_right": ((0, 1, 0), (-1, 0, 0)),
}
"""The antenna's own z and x axes in airframe (STA aft, BL right, WL up) components, by surface: z is the
outward normal (the axis of a monopole, the boresight of an aperture)."""
COORD_UNITS = {"in": "inch", "mm": "mm"}


def antenna_axes(installation: Installation, model: AntennaModel):
    """(z, x) axes of the antenna; a horizontally polarised dipole lies athwartships (along BL)."""
    if model.kind in ("half_wave_dipole", "folded_dipole") and model.polarisation == "horizontal":
        return (0, 1, 0), (-1, 0, 0)
    return SURFACE_AXES[installation.surface]


def pair_results(fleet: Fleet, aircraft) -> list[PairResult]:
    """Isolation of every pair of installations whose services the policy wants kept apart."""
    unit = COORD_UNITS[fleet.airframe_of(aircraft).coord_unit]
    installations = list(aircraft.installations.values())
    out = []
    for i, a in enumerate(installations):
        for b in installations[i + 1:]:
            rule = fleet.policy.min_isolation_for(a.service, b.service)
            if rule is None:
                continue
            out.append(pair_result(fleet, aircraft.id, a, b, unit, rule))
    return out


def pair_result(fleet: Fleet, aircraft_id: str, a: Installation, b: Installation, unit: str, rule) -> PairResult:
    """Friis isolation at each pair service's design frequency; the worse (lower) one is reported."""
    point_a = (a.location.sta, a.location.bl, a.location.wl)
    point_b = (b.location.sta, b.location.bl, b.location.wl)
    model_a, model_b = fleet.antennas[a.antenna], fleet.antennas[b.antenna]
    a_to_b = coupling.direction_vector(point_a, point_b, unit)
    worst = None
    for freq_mhz in sorted({fleet.services[a.service].design_freq_mhz, fleet.services[b.service].design_freq_mhz}):
        gain_a = cache.gain_toward_dbi(model_a, freq_mhz, *np.deg2rad(
            coupling.antenna_angles_deg(a_to_b, *antenna_axes(a, model_a))))
        gain_b = cache.gain_toward_dbi(model_b, freq_mhz, *np.deg2rad(
            coupling.antenna_angles_deg(-a_to_b, *antenna_axes(b, model_b))))
        result = coupling.isolation(point_a, point_b, unit, freq_mhz * MHZ, gain_a, gain_b,
                                    size_m(model_a), size_m(model_b))
        if worst is None or result.isolation_db < worst[0].isolation_db:
            worst = (result, freq_mhz, gain_a, gain_b)
    result, freq_mhz, gain_a, gain_b = worst
    first, second = sorted((a, b), key=lambda inst: inst.position)
    src = where(second, "location")
    friis = "Friis, Proc. IRE 34 (1946); free-space loss per ITU-R P.525"
    figures = (
        Figure("pair.distance_m", "Distance between the antennas", result.distance_m, "m",
               "|P_B − P_A| from STA/BL/WL", (("unit", unit),), src=src),
        Figure("pair.freq_mhz", "Evaluated at", freq_mhz, "MHz", source="lower-isolation design frequency"),
        Figure("pair.gain_a_dbi", f"Gain of {a.position} toward {b.position}", gain_a, "dBi", source="pattern"),
        Figure("pair.gain_b_dbi", f"Gain of {b.position} toward {a.position}", gain_b, "dBi", source="pattern"),
        Figure("pair.path_loss_db", "Free-space loss", result.free_space_loss_db, "dB", "20·log₁₀(4πd/λ)",
               source=friis),
        Figure("pair.isolation_db", "Isolation", result.isolation_db, "dB", "I = 20·log₁₀(4πd/λ) − G_A − G_B",
               source=friis, src=src),
        Figure("pair.min_isolation_db", "Policy minimum", rule.isolation_db, "dB", src=f"{rule.src.path}:{rule.src.line}"),
        Figure("pair.far_field_m", "Far field begins at", result.far_field_distance_m, "m",
               "max(2(D_A + D_B)²/λ, λ/2π)", source="IEEE Std 149-1979 §2.3; Balanis 4th ed. ch. 2"),
    )
    return PairResult(aircraft_id, first.position, second.position, figures, result.indicative_only)


def size_m(model: AntennaModel) -> float:
    """The antenna's largest dimension (m), for the near-field test."""
    g = model.geometry
    kind = model.kind
    if kind in ("quarter_wave_monopole", "half_wave_dipole", "folded_dipole"):
        return float(g["element_length_m"])
    if kind == "small_loop":
        return float(g["loop_diameter_m"])
    if kind == "yagi_uda":
        positions = [element["position_m"] for element in g["elements"]]
        return max(max(positions) - min(positions), max(element["length_m"] for element in g["elements"]))
    if kind == "linear_array":
        return float(g["element_count"] * g["spacing_m"])
    if kind == "slotted_planar_array":
        return math.hypot(g["columns"] * g["spacing_x_m"], g["rows"] * g["spacing_y_m"])
    if kind == "parabolic_reflector":
        return float(g["diameter_m"])
    return math.hypot(g["length_m"], g["width_m"])
