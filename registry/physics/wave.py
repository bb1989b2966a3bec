"""Wavelength, resonant element length, length deviation and ground-plane adequacy.

lambda = c / f with c = 299 792 458 m/s exact (SI). Half-wave dipoles resonate a little short of lambda/2
and monopoles a little short of lambda/4; two estimates are offered:

* the trade's rule of thumb: 95 % of the free-space length (common practice, no single source);
* an end-effect factor of the element's length-to-diameter ratio L/D,
  K = 1 - A / (ln(2 L/D) - B), A = 0.219, B = 1.855: the form of the transmission-line model of a
  dipole (shortening 42.5 ohm / ((pi/2) Z_a) with Schelkunoff's Z_a = 120 (ln(2L/D) - 1);
  Balanis, Antenna Theory, 4th ed., ch. 4 and ch. 9), with A and B fitted by least squares to the
  resonant lengths NEC-2 (thin-wire kernel) gives for 30 <= L/D <= 8000 (within 0.6 %). It is used for
  100 <= L/D <= 8000 (FIT_RANGE_LD), where it meets the method of moments within 0.3 % at both ends.
  For a monopole on a ground plane use the L/D of its image dipole, 2h/D.

`resonant_length_rule` is the one rule for every L/D: the fit inside FIT_RANGE_LD, the thin-wire method of
moments (the site's own solver, impedance.py) outside it; it returns the factor used and which gave it.
"""
from __future__ import annotations

import numpy as np

from dataclasses import dataclass

from registry.core.units import C_M_PER_S

#: the trade's shortening rule: resonant length = 95 % of the free-space half or quarter wavelength
RULE_OF_THUMB_FACTOR = 0.95
_END_A = 0.219
_END_B = 1.855
#: L/D (of the dipole or image dipole) over which the end-effect fit was made and is used
FIT_RANGE_LD = (100.0, 8000.0)
#: below this L/D the end-effect fit raises (kept for callers of end_effect_factor)
MIN_LENGTH_TO_DIAMETER = FIT_RANGE_LD[0]

def wavelength_m(freq_hz):
    """Free-space wavelength lambda = c / f (m) for freq_hz (Hz). Floats or arrays."""
    if isinstance(freq_hz, float):
        if freq_hz <= 0:
            raise ValueError("frequency must be positive")
        return C_M_PER_S / freq_hz
    f = np.asarray(freq_hz, dtype=float)
    if np.any(f <= 0):
        raise ValueError("frequency must be positive")
    out = C_M_PER_S / f
    return out if np.ndim(freq_hz) else float(out)

def frequency_hz(wavelength_m_):
    """Frequency f = c / lambda (Hz) of a free-space wavelength (m)."""
    lam = np.asarray(wavelength_m_, dtype=float)
    if np.any(lam <= 0):
        raise ValueError("wavelength must be positive")
    out = C_M_PER_S / lam
    return out if np.ndim(wavelength_m_) else float(out)

def _fraction(element: str) -> float:
    if element == "half_wave":
        return 0.5
    if element == "quarter_wave":
        return 0.25
    raise ValueError(f"element must be 'half_wave' or 'quarter_wave', got '{element}'")

def free_space_length_m(freq_hz, element: str = "half_wave"):
    """lambda/2 ('half_wave') or lambda/4 ('quarter_wave') in metres at freq_hz (Hz)."""
    return _fraction(element) * wavelength_m(freq_hz)

def rule_of_thumb_length_m(freq_hz, element: str = "half_wave"):
    """Resonant length by the 95 % rule: 0.95 lambda/2 or 0.95 lambda/4 (m). Common practice."""
    return RULE_OF_THUMB_FACTOR * free_space_length_m(freq_hz, element)

def end_effect_factor(length_to_diameter):
    """Shortening factor K = 1 - 0.219 / (ln(2 L/D) - 1.855) of a thin dipole (unitless).

    length_to_diameter: L/D of the dipole (2h/D for a monopole). Raises ValueError below
    MIN_LENGTH_TO_DIAMETER (the lower end of FIT_RANGE_LD, where the fit was made); use
    resonant_length_rule for a length at any L/D.
    """
    ld = np.asarray(length_to_diameter, dtype=float)
    if np.any(ld < MIN_LENGTH_TO_DIAMETER):
        raise ValueError(f"length-to-diameter ratio below {MIN_LENGTH_TO_DIAMETER:g}: thin-wire rule does not apply")
    out = 1.0 - _END_A / (np.log(2.0 * ld) - _END_B)
    return out if np.ndim(length_to_diameter) else float(out)

def resonant_length_m(freq_hz: float, diameter_m: float, element: str = "half_wave") -> float:
    """Resonant length (m) of a thin element of diameter D from the end-effect factor.

    Solves L = K(L_dipole / D) * fraction * lambda by fixed-point iteration (K varies slowly with L),
    where L_dipole = L for a half-wave dipole and 2L for a quarter-wave monopole.
    """
    free = free_space_length_m(freq_hz, element)
    image = 1.0 if element == "half_wave" else 2.0
    length = free
    for _ in range(50):
        new = end_effect_factor(image * length / diameter_m) * free
        if abs(new - length) < 1e-12 * free:
            break
        length = new
    return float(length)

def length_deviation(installed_m, reference_m):
    """(deviation_percent, deviation_mm) of an installed length from a reference length (both m).

    percent = 100 (installed - reference)/reference; mm = 1000 (installed - reference). Positive: longer.
    """
    inst = np.asarray(installed_m, dtype=float)
    ref = np.asarray(reference_m, dtype=float)
    if np.any(ref <= 0):
        raise ValueError("reference length must be positive")
    pct = 100.0 * (inst - ref) / ref
    mm = 1000.0 * (inst - ref)
    if np.ndim(installed_m) or np.ndim(reference_m):
        return pct, mm
    return float(pct), float(mm)

def ground_plane_ratio(radius_m: float, freq_low_hz: float) -> float:
    """Ground-plane radius over a quarter wavelength at the lowest frequency served (unitless).

    A monopole wants a conductive ground plane of at least lambda/4 radius around its base (common
    practice): adequate when this ratio is >= 1. The lowest frequency has the longest wavelength.
    """
    if radius_m < 0:
        raise ValueError("ground-plane radius must not be negative")
    return float(radius_m / (wavelength_m(freq_low_hz) / 4.0))

def ground_plane_adequate(radius_m: float, freq_low_hz: float) -> bool:
    """True when the ground-plane radius is at least lambda/4 at the lowest frequency (common practice)."""
    return ground_plane_ratio(radius_m, freq_low_hz) >= 1.0 - 1e-12

def quarter_wave_radius_m(freq_low_hz: float) -> float:
    """The minimum ground-plane radius lambda/4 (m) at the lowest frequency served."""
    return float(wavelength_m(freq_low_hz) / 4.0)



@dataclass(frozen=True)
class ResonantLength:
    """A resonant element length and how it was found.

    length_m: resonant length (m; the monopole's height for 'quarter_wave'); factor: length over the
    free-space lambda/2 or lambda/4, the factor actually used; method: 'fit' (end-effect factor) or 'MoM'
    (moment-method solution of X_in = 0); length_to_diameter: L/D of the dipole or image dipole at that
    length; fit_range: FIT_RANGE_LD, the L/D range of the fit.
    """

    length_m: float
    factor: float
    method: str
    length_to_diameter: float
    fit_range: tuple[float, float] = FIT_RANGE_LD


def _mom_resonant_length_m(freq_hz: float, diameter_m: float, element: str) -> float:
    """Length (m) at which the thin-wire MoM input reactance crosses zero at freq_hz (Brent's method)."""
    from scipy.optimize import brentq

    from registry.physics.impedance import solve_wire_antenna

    free = free_space_length_m(freq_hz, element)
    if element == "half_wave":
        def reactance(length):
            g = {"length_m": length, "diameter_m": diameter_m}
            return float(solve_wire_antenna("dipole", g, [freq_hz], design_hz=freq_hz).z_in_ohm[0].imag)
    else:
        def reactance(length):
            g = {"height_m": length, "diameter_m": diameter_m}
            return float(solve_wire_antenna("monopole", g, [freq_hz], design_hz=freq_hz).z_in_ohm[0].imag)
    lo, hi = 0.6 * free, 1.02 * free
    if not reactance(lo) < 0 < reactance(hi):
        from registry.physics.segmentation import Unmodellable

        raise Unmodellable(f"no series resonance between {lo:.4g} m and {hi:.4g} m for a {diameter_m:.4g} m "
                           f"diameter element at {freq_hz / 1e6:.6g} MHz")
    return float(brentq(reactance, lo, hi, xtol=1e-6 * free))


def resonant_length_rule(freq_hz: float, diameter_m: float, element: str = "half_wave") -> ResonantLength:
    """Resonant length of a straight element of diameter D at freq_hz, by the fit or by the MoM.

    The end-effect fit (resonant_length_m) is used when the resulting L/D (2L/D for a monopole) lies in
    FIT_RANGE_LD; otherwise the length is found by the moment-method solver (X_in = 0; thin-wire model,
    segmentation.py), which raises segmentation.Unmodellable where that model does not apply (an element
    too fat against the wavelength). Inside the range the two agree within 1 % of NEC-2 (tests).
    """
    free = free_space_length_m(freq_hz, element)
    image = 1.0 if element == "half_wave" else 2.0
    lo, hi = FIT_RANGE_LD
    try:
        fit_length = resonant_length_m(freq_hz, diameter_m, element)
    except ValueError:  # the fixed-point iteration left the fit's range
        fit_length = None
    if fit_length is not None and lo <= image * fit_length / diameter_m <= hi:
        length, method = fit_length, "fit"
    else:
        length, method = _mom_resonant_length_m(freq_hz, diameter_m, element), "MoM"
    return ResonantLength(length, length / free, method, image * length / diameter_m)


def folded_resonant_length_rule(freq_hz: float, diameter_m: float, spacing_m: float,
                                diameter_other_m: float = 0.0) -> ResonantLength:
    """Resonant length (m) of a folded dipole: fed conductor diameter D, the other diameter_other_m (0: D),
    centre spacing s.

    Found where the folded dipole's modelled input reactance crosses zero at freq_hz (Brent's method on
    impedance.solve_wire_antenna('folded_dipole', ...): the closed loop of both conductors and both end
    wires solved by the moment method, wire_path.py). The spacing and both radii enter through that model.
    method is 'loop'; length_to_diameter is L / D. Raises segmentation.Unmodellable where the model does not
    apply. Within 0.2 % of NEC-2 models with both conductors and their end wires (tests).
    """
    from scipy.optimize import brentq

    from registry.physics import segmentation as seg
    from registry.physics.kinds import canonical_geometry
    from registry.physics.segmentation import Unmodellable

    free = free_space_length_m(freq_hz, "half_wave")
    base = {"diameter_m": diameter_m, "spacing_m": spacing_m, "diameter_other_m": diameter_other_m}

    def layout(length):
        return seg.wire_layout("folded_dipole", dict(canonical_geometry("folded_dipole", {"length_m": length, **base})))

    # one segmentation for the whole search: refined at the free-space half wave, kept within each length's
    # bounds, so the reactance is a smooth function of the length and the loop's integrals are computed
    # once per length, not once per refinement
    reference = layout(0.95 * free)
    seg.check_modellable(reference, freq_hz, freq_hz)
    n_ref = seg.converged_segments(reference, float(freq_hz)).per_wire[0]

    def reactance(length):
        lay = layout(length)
        seg.check_modellable(lay, freq_hz, freq_hz)
        fewest, most = seg.count_bounds(lay, freq_hz)
        n = min(max(n_ref, fewest[0]), most[0])
        return float(seg.feed_impedance_ohm(lay, (n,), [freq_hz])[0][0].imag)

    lo, hi = 0.8 * free, 1.04 * free
    if not reactance(lo) < 0 < reactance(hi):
        raise Unmodellable(f"folded dipole: no series resonance between {lo:.4g} m and {hi:.4g} m at "
                           f"{freq_hz / 1e6:.6g} MHz for {diameter_m:.4g} m conductors {spacing_m:.4g} m apart")
    length = float(brentq(reactance, lo, hi, xtol=1e-6 * free))
    return ResonantLength(length, length / free, "loop", length / diameter_m)
