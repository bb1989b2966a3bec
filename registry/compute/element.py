"""Figures of the element itself: resonant length, band coverage, modelled VSWR and matchability,
ground plane. Pure functions of the model objects; physics from registry.physics."""
from __future__ import annotations

import math

import numpy as np

from registry.core import figure_keys as FK
from registry.core.memo import ByIdentity, read_only
from registry.incremental import kept
from registry.compute import antenna as cache
from registry.compute.kinds import kind_of
from registry.core.model import AntennaModel, Cable, Installation, Policy, Service
from registry.physics import finite_ground, impedance, mismatch, square_plate, wave
from registry.core.results import Curve, Figure
from registry.core.sources import where

MHZ = 1e6


# --- element length -------------------------------------------------------------------------------------


def length_figures(installation: Installation, model: AntennaModel, service: Service) -> list[Figure]:
    """Installed element length against the resonant length at the service's design frequency.

    The resonant length is `wave.resonant_length_rule` (the end-effect fit inside its L/D range, the
    moment method outside it), or `wave.folded_resonant_length_rule` for a folded dipole; the factor shown
    is the one used. A geometry the moment method cannot model gives a figure saying why.
    """
    fraction = kind_of(model.kind).element_fraction
    if fraction is None or installation.coupler:
        return []
    freq_hz = service.design_freq_mhz * MHZ
    element = "quarter_wave" if fraction == 0.25 else "half_wave"
    length_m = float(model.geometry["element_length_m"])
    wavelength_m = wave.wavelength_m(freq_hz)
    rule_m = wave.rule_of_thumb_length_m(freq_hz, element)
    src = where(model, "geometry.element_length_m")
    name = "λ/4" if fraction == 0.25 else "λ/2"
    figures = [
        Figure(FK.LENGTH_DESIGN_FREQ_MHZ, "Design frequency", service.design_freq_mhz, "MHz",
               source=f"service table: {service.source}", src=where(service, "bands_mhz")),
        Figure(FK.LENGTH_WAVELENGTH_M, "Free-space wavelength", wavelength_m, "m", "λ = c / f",
               (("c", "299 792 458 m/s"), ("f", f"{service.design_freq_mhz:g} MHz")), "SI definition of c"),
        Figure("length.rule95_m", f"Resonant length, 95 % rule ({name})", rule_m, "m", f"0.95 · {name}",
               (("λ", f"{wavelength_m:.4f} m"),), "common practice, no source"),
    ]
    try:
        rule = _resonant_rule(model, freq_hz, element)
    except impedance.Unmodellable as problem:
        return figures + [
            Figure(FK.LENGTH_INSTALLED_M, "Installed element length", length_m, "m", src=src),
            Figure(FK.LENGTH_UNMODELLABLE, "Resonant length not modelled", str(problem), "",
                   source=LENGTH_METHODS["MoM"], src=where(model, "geometry"))]
    deviation_pct, deviation_mm = wave.length_deviation(length_m, rule.length_m)
    return figures + [
        Figure(FK.LENGTH_RESONANT_M, f"Resonant length, {LENGTH_REFERENCES[rule.method]} ({name})", rule.length_m,
               "m", f"K · {name}", (("L/D of the dipole or image dipole" if rule.method != "loop" else
                                     "L/D of the fed conductor", f"{rule.length_to_diameter:.1f}"),
                                    ("K", f"{rule.factor:.4f}")),
               LENGTH_METHODS[rule.method]),
        Figure(FK.LENGTH_FACTOR, f"Length factor used (resonant length over {name})", rule.factor, "",
               f"ℓ_res / {name}", source=LENGTH_METHODS[rule.method]),
        Figure(FK.LENGTH_METHOD, "How the resonant length was found", LENGTH_REFERENCES[rule.method], "",
               source="the folded dipole's own model" if rule.method == "loop" else
               f"end-effect fit used for L/D {wave.FIT_RANGE_LD[0]:g}–{wave.FIT_RANGE_LD[1]:g}, the moment method "
               "outside it"),
        Figure(FK.LENGTH_INSTALLED_M, "Installed element length", length_m, "m", src=src),
        Figure(FK.LENGTH_DEVIATION_PCT, "Deviation from resonant length", deviation_pct, "%",
               "(ℓ − ℓ_res) / ℓ_res · 100", (("ℓ", f"{length_m:.4f} m"), ("ℓ_res", f"{rule.length_m:.4f} m")),
               src=src),
        Figure(FK.LENGTH_DEVIATION_MM, "Deviation from resonant length", deviation_mm, "mm", "ℓ − ℓ_res",
               src=src),
    ]


def _resonant_rule(model: AntennaModel, freq_hz: float, element: str) -> wave.ResonantLength:
    g = model.geometry
    diameter_m = float(g["element_diameter_m"])
    if kind_of(model.kind).physics == "folded_dipole":
        return _folded_rule(freq_hz, diameter_m, float(g["spacing_m"]))
    return _straight_rule(freq_hz, diameter_m, element)


@kept("resonant-lengths", wave.ResonantLength)
def _straight_rule(freq_hz: float, diameter_m: float, element: str) -> wave.ResonantLength:
    return wave.resonant_length_rule(freq_hz, diameter_m, element)


@kept("folded-lengths", wave.ResonantLength)
def _folded_rule(freq_hz: float, diameter_m: float, spacing_m: float) -> wave.ResonantLength:
    return wave.folded_resonant_length_rule(freq_hz, diameter_m, spacing_m)


LENGTH_REFERENCES = {"fit": "end-effect fit", "MoM": "moment method (X_in = 0)",
                     "loop": "folded-dipole model (X_in = 0)"}
LENGTH_METHODS = {
    "fit": "K = 1 − 0.219 / (ln(2L/D) − 1.855): transmission-line model of a dipole (Balanis, Antenna "
           "Theory, 4th ed., ch. 4 and 9), constants fitted to NEC-2 resonant lengths for L/D 100–8000",
    "MoM": "thin-wire method of moments, X_in(ℓ) = 0 at the design frequency (the element is outside the "
           "end-effect fit's L/D range); checked against NEC-2",
    "loop": "folded dipole: both conductors and the two end wires as one closed loop, thin-wire method of "
            "moments on bent wires (Harrington, Field Computation by Moment Methods, 1968), fed across a gap "
            "of 4 conductor radii; X_in(ℓ) = 0. Checked against NEC-2 models of the same loop: within 0.2 %",
}


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
    """`108–117.975, 328.6–335.4 MHz`, or `none`."""
    text = ", ".join(f"{low:g}–{high:g}" for low, high in bands)
    return f"{text} MHz" if text else "none"


def band_figures(installation: Installation, model: AntennaModel, service: Service) -> list[Figure]:
    """The antenna's rated band(s) against the service band(s)."""
    gaps = uncovered_mhz(service.bands_mhz, model.bands_mhz)
    total = sum(high - low for low, high in service.bands_mhz)
    missing = sum(high - low for low, high in gaps)
    return [
        Figure(FK.BAND_SERVICE_MHZ, "Service band", format_bands(service.bands_mhz), "",
               source=service.source, src=where(service, "bands_mhz")),
        Figure(FK.BAND_RATED_MHZ, "Antenna rated band", format_bands(model.bands_mhz), "",
               src=where(model, "bands_mhz")),
        Figure(FK.BAND_UNCOVERED_MHZ, "Service band not covered", format_bands(gaps), "",
               "service bands − rated bands", src=where(model, "bands_mhz")),
        Figure(FK.BAND_COVERED_PCT, "Share of the service band covered", 100.0 * (total - missing) / total, "%",
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
    """`bare_element_vswr`, once per antenna model, service, cable and policy object in a process: it
    depends on nothing else, and a fleet fits the same antenna on the same cable over and over. The
    curve's arrays are read-only; the list is the caller's own."""
    figures, curve = _MODELLED.get((model, service, cable, policy), None,
                                   lambda: _read_only_curve(*bare_element_vswr(model, service, cable, policy)))
    return list(figures), curve


_MODELLED: ByIdentity[tuple[tuple[Figure, ...], Curve | None]] = ByIdentity(limit=1_024)


def _read_only_curve(figures: list[Figure], curve: Curve | None) -> tuple[tuple[Figure, ...], Curve | None]:
    if curve is not None:
        read_only(curve.x)
        read_only(curve.y)
    return tuple(figures), curve


def bare_element_vswr(model: AntennaModel, service: Service, cable: Cable,
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
    if solved.reason:
        return [Figure(FK.VSWR_UNMODELLABLE, "Input impedance not modelled", solved.reason, "",
                       source=METHOD_MOM, src=where(model, "geometry"))], None
    z_element, resonance_mhz, r_design, slopes = solved.z, solved.resonance_mhz, solved.r_design, solved.slopes
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
        Figure(FK.VSWR_RESONANCE_MHZ, "Modelled series resonance", resonance_mhz, "MHz", "X_in(f) = 0",
               source=METHOD_MOM, src=src),
        Figure(FK.VSWR_R_DESIGN_OHM, "Element resistance at design frequency", r_design, "Ω",
               "Re Z_in(f_design)", source=METHOD_MOM, src=src),
        Figure(FK.VSWR_MAX_IN_BAND, "Modelled VSWR of the bare element, worst in band", float(vswr[band].max()), "",
               "VSWR = (1 + |Γ|)/(1 − |Γ|), Γ = (Z·Z_ant/R − Z₀)/(Z·Z_ant/R + Z₀)",
               (("Z_ant", f"{model.impedance_ohm:g} Ω"), ("R", f"{r_design:.1f} Ω"),
                ("Z₀ (cable)", f"{cable.impedance_ohm:g} Ω")),
               "Pozar, Microwave Engineering, 4th ed., §2.3; matching network not modelled", src),
        Figure(FK.VSWR_BAND_UNDER_LIMIT_MHZ, f"Band with bare-element VSWR ≤ {limit:g}",
               "none" if math.isnan(band_low) else f"{band_low:.2f}–{band_high:.2f} MHz", "", src=src),
        Figure(FK.VSWR_Q, "Element Q", q, "", "Q ≈ ω₀·|Z′(ω₀)| / (2R₀)", (("f₀", f"{centre:g} MHz"),),
               "Yaghjian and Best, IEEE Trans. Antennas Propag. 53(4), 2005", src),
        Figure(FK.VSWR_NEEDED_PCT, "Fractional bandwidth the service needs", needed_pct, "%", "Δf / f₀",
               (("f₀", f"{centre:g} MHz"),), src=where(service, "bands_mhz")),
        Figure(FK.VSWR_BODE_FANO_PCT, f"Widest band matchable to VSWR {limit:g}", limit_pct, "%",
               "π / (Q·ln(1/Γm))", (("Q", f"{q:.2f}"), ("Γm", f"{gamma_max:.3f}")),
               "Bode–Fano limit (Pozar, Microwave Engineering, 4th ed., §5.9)", src),
    ]
    figures.append(solved.segments._replace(src=src))
    curve = Curve(freqs_mhz, vswr, "Frequency (MHz)", "VSWR")
    return figures, curve


METHOD_MOM = ("thin-wire method of moments, piecewise-sinusoidal Galerkin (Richmond); monopole by image "
              "theory; checked against NEC-2")


# --- ground plane ---------------------------------------------------------------------------------------


HORIZON_LOSS_LIMIT_DB = 10.0
"""Horizon gain a plate may lose against an infinite ground before the ground-plane-effect rule reports it.
Common practice, no source: on any finite plate the rim diffraction takes about 6 dB off the horizon
gain of the infinite-ground model (the field there is half the image-theory field), so a loss well past
6 dB means the plate itself, not its finiteness, spoils the horizon."""

FINITE_GROUND_METHOD = ("moment method for a body of revolution (Mautz and Harrington, monopole at the centre "
                        "of a disc as in Weiner et al., MITRE ESD-TR-86-241, 1986, from memory); checked against "
                        "NEC-2 wire-grid discs from 0.25 to 3 λ")
SQUARE_PLATE_METHOD = ("thin-wire moment method with the plate as a wire grid (common practice in moment-method "
                       "modelling; its origin is cited to J. H. Richmond, IEEE Trans. AP-14, 1966: unverified, check "
                       "against that paper); checked against NEC-2 on square wire grids from 0.25 to 3 λ: pattern "
                       "within 0.25 dB, resistance 5 %, reactance 13 Ω")
SQUARE_SIDE_MAX_WAVELENGTHS = 3.0
"""Largest square plate the wire-grid model is run on: the range checked against NEC-2 (the cost grows as the
fourth power of the side)."""


@kept("disc-monopoles", tuple[float, float, complex])
def _on_disc(height_m: float, radius_m: float, wire_radius_m: float, freq_hz: float):
    """finite_ground.monopole_on_disc, kept per content: (horizon dBi, peak elevation deg, Z_in)."""
    res = finite_ground.monopole_on_disc(height_m, radius_m, wire_radius_m, freq_hz)
    return res.horizon_gain_dbi, res.peak_elevation_deg, complex(res.z_in_ohm)


@kept("square-monopoles", tuple[float, float, complex])
def _on_square(height_m: float, side_m: float, wire_radius_m: float, freq_hz: float):
    """square_plate.monopole_on_square, kept per content: (horizon dBi, peak elevation deg, Z_in)."""
    side_lambda = side_m / wave.wavelength_m(freq_hz)
    if side_lambda > SQUARE_SIDE_MAX_WAVELENGTHS:
        raise impedance.Unmodellable(f"a square plate {side_lambda:.1f} λ across is past the "
                                     f"{SQUARE_SIDE_MAX_WAVELENGTHS:g} λ the wire-grid model is checked to")
    try:
        res = square_plate.monopole_on_square(height_m, side_m, wire_radius_m, freq_hz)
    except ValueError as problem:
        raise impedance.Unmodellable(str(problem)) from None
    return res.horizon_gain_dbi, res.peak_elevation_deg, complex(res.z_in_ohm)


@kept("ground-impedances", complex)
def _on_infinite_ground(kind: str, geometry: tuple, freq_hz: float) -> complex:
    return complex(impedance.solve_wire_antenna(kind, geometry, [freq_hz]).z_in_ohm[0])


def ground_plane_figures(installation: Installation, model: AntennaModel, service: Service,
                         material: str | None, policy: Policy) -> list[Figure]:
    """For monopoles: what the element stands on and, on a plate, what the plate's finite size does to
    its horizon gain, beam tilt and input impedance (finite_ground, at the design frequency).

    A coupler-tuned element is resonated by its coupler and uses the airframe as its counterpoise: the
    quarter-wave radius test does not apply to it (at HF λ/4 is longer than the aircraft)."""
    if not kind_of(model.kind).needs_ground_plane:
        return []
    low_mhz = min(low for low, _ in service.bands_mhz)
    required_m = policy.ground_plane_min_radius_wavelengths * wave.wavelength_m(low_mhz * MHZ)
    plane = installation.ground_plane
    plane_type = plane.type if plane is not None else "skin"
    src = where(installation, "ground_plane") if plane is not None else where(installation, "surface")
    side_m = plane.side_m if plane is not None and plane_type == "plate" else None
    if side_m is not None:
        radius: float | str = float(side_m) / 2  # the centre's distance to the nearest edge
    elif plane_type == "plate":
        radius = float(plane.radius_m)
    elif plane_type == "skin" and material == "metal":
        radius = "metal skin"
    else:
        radius = 0.0
    figures = [
        Figure(FK.GROUND_MATERIAL, "Skin material at the base", material or "unknown (no zone covers it)", "",
               src=where(installation, "location")),
        Figure(FK.GROUND_TYPE, "Ground plane", plane_type, "", src=src),
        Figure(FK.GROUND_RADIUS_M, "Ground-plane radius", radius, "m" if isinstance(radius, float) else "", src=src)
        if side_m is None else
        Figure(FK.GROUND_RADIUS_M, "Ground-plane radius (square plate: half its side)", radius, "m", "s / 2",
               (("s (plate side)", f"{side_m:.3f} m"),), src=src),
    ]
    if installation.coupler:
        return figures + [Figure(
            FK.GROUND_REQUIRED_M, "Required radius", "not applicable: coupler-tuned element", "",
            source="the coupler resonates the element and the airframe is its counterpoise (common practice, "
                   "no source)", src=where(installation, "coupler"))]
    figures.append(Figure(
        FK.GROUND_REQUIRED_M, "Required radius at the lowest service frequency", required_m, "m", "k · λ(f_low)",
        (("k", f"{policy.ground_plane_min_radius_wavelengths:g} λ"), ("f_low", f"{low_mhz:g} MHz")),
        "common practice, no source (λ/4 radius)"))
    if isinstance(radius, float) and radius > 0 and "element_length_m" in model.geometry:
        try:
            figures += finite_plate_figures(model, service, radius, src, policy, side_m)
        except impedance.Unmodellable as problem:
            figures.append(Figure(FK.GROUND_PLATE_NOT_MODELLED, "Effect of the finite plate", f"not modelled: {problem}",
                                  "", source=SQUARE_PLATE_METHOD if side_m else FINITE_GROUND_METHOD, src=src))
    return figures


def finite_plate_figures(model: AntennaModel, service: Service, radius_m: float, src: str,
                         policy: Policy, side_m: float | None = None) -> list[Figure]:
    """Horizon gain, beam tilt and input impedance on the plate against the infinite-ground model: a round
    plate of radius_m (finite_ground), or a square one side_m across (square_plate; radius_m its half-side).
    On a square plate the horizon gain is the lowest over azimuth and the peak the highest over azimuth."""
    freq_hz = service.design_freq_mhz * MHZ
    height = float(model.geometry["element_length_m"])
    diameter = float(model.geometry.get("element_diameter_m", 0.006))
    if side_m is None:
        horizon, peak_el, z_plate = _on_disc(height, radius_m, diameter / 2, freq_hz)
        method, size = FINITE_GROUND_METHOD, ("a (plate radius)", f"{radius_m:.3f} m")
    else:
        horizon, peak_el, z_plate = _on_square(height, side_m, diameter / 2, freq_hz)
        method, size = SQUARE_PLATE_METHOD, ("s (square plate side)", f"{side_m:.3f} m")
    infinite = cache.gain_toward_dbi(model, service.design_freq_mhz, math.pi / 2, 0.0)
    z_ref = _on_infinite_ground(*cache.physics_geometry(model), freq_hz)
    gamma = abs((z_plate - z_ref) / (z_plate + z_ref.conjugate()))
    shift_vswr = (1 + gamma) / (1 - gamma) if gamma < 1 else math.inf
    inputs = (("h", f"{height:.3f} m"), size, ("f", f"{service.design_freq_mhz:g} MHz"))
    z_text = lambda z: f"{z.real:.1f} {'+' if z.imag >= 0 else '−'} j{abs(z.imag):.1f}"  # noqa: E731
    return [
        Figure(FK.GROUND_RADIUS_WAVELENGTHS, "Plate radius in wavelengths", radius_m / wave.wavelength_m(freq_hz),
               "λ", "a / λ(f_design)" if side_m is None else "(s / 2) / λ(f_design)", inputs, src=src),
        Figure(FK.GROUND_HORIZON_DBI, "Horizon gain on the plate", horizon, "dBi",
               "D(θ = 90°)" if side_m is None else "min over φ of D(θ = 90°, φ)", inputs, method, src),
        Figure(FK.GROUND_PEAK_ELEVATION_DEG, "Beam peak elevation on the plate", peak_el, "°", "", inputs,
               method, src),
        Figure(FK.GROUND_HORIZON_LOST_DB, "Horizon gain lost against an infinite ground", infinite - horizon, "dB",
               "G_∞(90°) − G_plate(90°)", (("G_∞(90°)", f"{infinite:.2f} dBi (image theory)"),), method, src),
        Figure(FK.GROUND_Z_PLATE_OHM, "Input impedance on the plate", z_text(z_plate), "Ω", "", inputs,
               method, src),
        Figure(FK.GROUND_Z_REFERENCE_OHM, "Input impedance on an infinite ground", z_text(z_ref), "Ω", "", inputs,
               METHOD_MOM, src),
        Figure(FK.GROUND_SHIFT_VSWR, "VSWR of a match made for infinite ground, on this plate", shift_vswr, "",
               "(1 + |Γ|)/(1 − |Γ|), Γ = (Z_plate − Z_∞)/(Z_plate + Z_∞*)",
               (("limit", f"{policy.vswr_limit_for(service.id):g}"),),
               "power-wave reflection, reference Z_∞* (K. Kurokawa, Power waves and the scattering matrix, IEEE Trans. MTT-13(2), 1965)", src),
    ]
