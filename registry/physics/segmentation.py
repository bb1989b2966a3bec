"""How finely each wire is cut for the thin-wire method of moments, and what cannot be modelled.

Wire kinds are laid out as straight elements parallel to z (see `wire_layout`); every element gets its own
segment count. The count is chosen in three steps, all deterministic for (kind, geometry, frequency):

1. Start: START_SEGMENTS_PER_WAVELENGTH segments per wavelength of the element at the design frequency
   (12 on a half-wave element), at least 2.
2. Bounds of the thin-wire model (common practice for thin-wire moment methods, no single source; the
   values were checked against NEC-2 runs, tests/test_physics_wire_accuracy.py):
   * a segment is at most MAX_SEGMENT_WAVELENGTHS of a wavelength at the highest frequency solved,
     so the sinusoidal basis can follow the current;
   * a segment is at least MIN_SEGMENT_RADII wire radii long: the reduced kernel (current on the axis,
     field on the surface) stops being a fair model of a tube when segments are shorter (our solver's
     impedance breaks down below about 1.5 radii, and its reactance drifts away from NEC-2's below 4);
   * the radius is at most MAX_RADIUS_WAVELENGTHS of a wavelength (2 pi a / lambda = 0.06: the current
     is no longer uniform round the wire when the wire is fatter);
   * the element is at least MIN_LENGTH_WAVELENGTHS of a wavelength long: below that, the radiation
     resistance (about 20 pi^2 (L/lambda)^2 ohm) is lost in the rounding of a reactance a million times
     larger;
   * at most MAX_BASIS basis functions in all (speed).
3. Refinement: the counts are doubled (within the bounds) until the feed-point |Z| at the design
   frequency changes by less than CONVERGENCE (1 %) between two refinements and, for a layout of several
   elements (a Yagi), the front-to-back ratio along the boom by less than FB_CONVERGENCE_DB, at most
   MAX_REFINEMENTS times. The finer of the last two counts is the one used. (The front-to-back ratio
   converges much more slowly than |Z|: a deep back null is the difference of nearly equal fields, so a
   1 % change of a parasitic element's current moves it by decibels. With |Z| alone the refinement stopped
   at half the segments it needs, and the ratio came out 1.6-2.3 dB above NEC-2's.)

Free wire ends: a tube's end carries charge that the thin-wire model (current vanishing at the end of the
axis) leaves out; each free end is lengthened by END_CAP_RADII radii to stand for it. The value is
empirical, fitted to NEC-2 (extended thin-wire kernel, which converges with its segments) on the same
tubes, with the feed gap of wire_path.FEED_GAP_RADII radii: 0.35 radii puts the front-to-back ratio of
Yagis with elements of d/lambda 0.0048 to 0.0085 within 0.3 dB of NEC-2's, their feed |Z| within 1.2 %,
and dipoles' R and |Z| within 2 % for L/lambda 0.40-0.55 and a/lambda 1e-5 to 5e-3 (the accuracy tests;
0.30 and 0.40 do nearly as well for dipoles but put the Yagis' ratio 0.9 dB high or 0.8 dB low). The
earlier 0.25, fitted to the feed reactance of a delta-gap feed, left the parasitic elements short.

A geometry outside the bounds raises Unmodellable (a ValueError) with the reason in plain words.
"""
from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from registry.physics import kinds as _kinds
from registry.physics.wire import Wire, build_structure, far_field_theta, solve_structure
from registry.physics.wire_path import FEED_GAP_RADII, folded_dipole_solver
from registry.core.units import C_M_PER_S

START_SEGMENTS_PER_WAVELENGTH = 24
MAX_SEGMENT_WAVELENGTHS = 0.1
MIN_SEGMENT_RADII = 4.0
END_CAP_RADII = 0.35
MAX_RADIUS_WAVELENGTHS = 0.01
MIN_LENGTH_WAVELENGTHS = 1e-3
MAX_BASIS = 800
FOLDED_BASIS_SHARE = 2  # a loop unknown costs about twice a straight one (numerical integration, memory)
CONVERGENCE = 0.01
FB_CONVERGENCE_DB = 0.3
MAX_REFINEMENTS = 3


class Unmodellable(ValueError):
    """A wire geometry the thin-wire method of moments cannot model; the message says why in plain words."""


@dataclass(frozen=True)
class WireLayout:
    """Elements of a wire antenna: lengths (m) along z, x positions (m), one radius (m), the fed element.

    For a monopole the layout is its image dipole. A folded dipole's one element stands for its closed loop
    (both conductors and the two end wires, wire_path.py): radius_m is the thicker conductor's radius,
    spacing_m the centre-to-centre spacing, fed_radius_m and other_radius_m the radii of the fed and the
    other conductor. end_cap_m: how much each free end is lengthened (END_CAP_RADII radii).
    """

    kind: str
    lengths_m: tuple[float, ...]
    x_m: tuple[float, ...]
    radius_m: float
    driven: int
    end_cap_m: float = 0.0
    spacing_m: float = 0.0
    fed_radius_m: float = 0.0
    other_radius_m: float = 0.0


@dataclass(frozen=True)
class Segmentation:
    """Segment count of each element, and how it was reached.

    per_wire: segments on each element; freq_hz: the frequency the refinement was judged at;
    refinements: how many times the counts were doubled; change: relative change of |Z| at the last
    refinement (nan when none was possible); fb_change_db: change of the front-to-back ratio along the
    boom at the last refinement (nan for one element or none); converged: change < CONVERGENCE (and
    fb_change_db < FB_CONVERGENCE_DB for several elements); stopped_by: '' when
    converged, else what stopped the refinement ('segment length limit', 'segment budget',
    'refinement limit').
    """

    per_wire: tuple[int, ...]
    freq_hz: float
    refinements: int
    change: float
    converged: bool
    stopped_by: str
    fb_change_db: float = float("nan")


def _even(n: float) -> int:
    n = int(math.ceil(n))
    return max(2, n + (n % 2))


def wire_layout(kind: str, g: dict) -> WireLayout:
    """Layout of a canonical geometry dict (kinds.canonical_geometry) of a wire kind."""
    if kind == "dipole":
        a = g["diameter_m"] / 2
        return WireLayout(kind, (g["length_m"],), (0.0,), a, 0, END_CAP_RADII * a)
    if kind == "monopole":
        a = g["diameter_m"] / 2
        return WireLayout(kind, (2 * g["height_m"],), (0.0,), a, 0, END_CAP_RADII * a)
    if kind == "folded_dipole":
        a_fed = g["diameter_m"] / 2
        a_other = (g.get("diameter_other_m") or g["diameter_m"]) / 2
        s = g["spacing_m"]
        if not s > a_fed + a_other:
            raise Unmodellable(f"folded dipole: the conductors touch (spacing {s:g} m is not more than the sum "
                               f"of their radii, {a_fed + a_other:g} m)")
        return WireLayout(kind, (g["length_m"],), (0.0,), max(a_fed, a_other), 0, 0.0, s, a_fed, a_other)
    if kind == "yagi":
        lengths, positions = g["element_lengths_m"], g["element_positions_m"]
        if len(lengths) != len(positions) or len(lengths) < 2:
            raise ValueError("yagi: element_lengths_m and element_positions_m need the same length (>= 2)")
        if not 0 <= g["driven_index"] < len(lengths):
            raise ValueError("yagi: driven_index out of range")
        gaps = np.diff(np.sort(np.asarray(positions, dtype=float)))
        if gaps.size and gaps.min() <= g["diameter_m"]:
            raise Unmodellable(f"yagi: two elements are {gaps.min():g} m apart, not more than the element "
                               f"diameter {g['diameter_m']:g} m: they touch")
        a = g["diameter_m"] / 2
        return WireLayout(kind, tuple(lengths), tuple(positions), a, g["driven_index"], END_CAP_RADII * a)
    raise ValueError(f"'{kind}' is not a wire antenna kind ({', '.join(_kinds.WIRE_KINDS)})")


def check_modellable(layout: WireLayout, freq_low_hz: float, freq_high_hz: float) -> None:
    """Raise Unmodellable when the thin-wire model does not apply between the two frequencies (Hz)."""
    name = layout.kind.replace("_", " ")
    a = layout.radius_m
    lam_high = C_M_PER_S / freq_high_hz
    if a > MAX_RADIUS_WAVELENGTHS * lam_high:
        raise Unmodellable(
            f"{name}: the wire radius ({a:.4g} m) is too large against the wavelength at {freq_high_hz / 1e6:.6g} MHz "
            f"(a/λ = {a / lam_high:.3g}, the thin-wire model needs at most {MAX_RADIUS_WAVELENGTHS:g})")
    # a monopole's layout is its image dipole: speak of the monopole's own height
    shown, what = (0.5, "a monopole height") if layout.kind == "monopole" else (1.0, "an element length")
    for length in layout.lengths_m:
        if length < 2 * MIN_SEGMENT_RADII * a:
            raise Unmodellable(
                f"{name}: {what} of {shown * length:.4g} m is too short for its radius ({a:.4g} m): the "
                f"thin-wire model needs at least {2 * MIN_SEGMENT_RADII * shown:g} radii")
        lam_low = C_M_PER_S / freq_low_hz
        if length < MIN_LENGTH_WAVELENGTHS * lam_low:
            raise Unmodellable(
                f"{name}: {what} of {shown * length:.4g} m is electrically too short at {freq_low_hz / 1e6:.6g} MHz "
                f"(below {shown * MIN_LENGTH_WAVELENGTHS:g} λ): its radiation resistance is lost in rounding")


def count_bounds(layout: WireLayout, freq_high_hz: float) -> tuple[tuple[int, ...], tuple[int, ...]]:
    """(fewest, most) segments on each element: MAX_SEGMENT_WAVELENGTHS at freq_high_hz and MIN_SEGMENT_RADII.

    Raises Unmodellable when the fewest exceed the most or the fewest exceed MAX_BASIS in all.
    """
    lam = C_M_PER_S / freq_high_hz
    fewest = tuple(_even(length / (MAX_SEGMENT_WAVELENGTHS * lam)) for length in layout.lengths_m)
    most = tuple(max(2, int(length / (MIN_SEGMENT_RADII * layout.radius_m)) // 2 * 2) for length in layout.lengths_m)
    name = layout.kind.replace("_", " ")
    if any(lo > hi for lo, hi in zip(fewest, most)):
        raise Unmodellable(
            f"{name}: at {freq_high_hz / 1e6:.6g} MHz segments would have to be shorter than "
            f"{MIN_SEGMENT_RADII:g} wire radii ({layout.radius_m:.4g} m): the wire is too thick against the "
            "wavelength for the thin-wire model")
    if basis_count(layout, fewest) > MAX_BASIS:
        raise Unmodellable(
            f"{name}: the elements are {max(layout.lengths_m) / lam:.4g} wavelengths long at "
            f"{freq_high_hz / 1e6:.6g} MHz and would need {basis_count(layout, fewest)} basis functions, more "
            f"than the solver's limit of {MAX_BASIS}")
    return fewest, most


def build_wires(layout: WireLayout, per_wire) -> tuple[Wire, ...]:
    """Wires parallel to z centred on z = 0 with the given segment counts, each end lengthened by end_cap_m."""
    e = layout.end_cap_m
    return tuple(Wire(float(x), 0.0, -length / 2 - e, length / 2 + e, layout.radius_m, int(n))
                 for length, x, n in zip(layout.lengths_m, layout.x_m, per_wire))


def end_wire_segments(layout: WireLayout, n_conductor: int) -> int:
    """Segments on each end wire of a folded dipole: none longer than the conductors' segments."""
    return max(1, math.ceil(layout.spacing_m / (layout.lengths_m[0] / n_conductor) - 1e-9))


def basis_count(layout: WireLayout, per_wire) -> int:
    """Unknowns of the moment-method system: n - 1 per straight element; a folded dipole's closed loop has
    one per segment (both conductors and both end wires), each counted FOLDED_BASIS_SHARE times."""
    if layout.kind == "folded_dipole":
        n = int(per_wire[0])
        return FOLDED_BASIS_SHARE * 2 * (n + end_wire_segments(layout, n))
    return sum(int(n) - 1 for n in per_wire)


def feed_impedance_ohm(layout: WireLayout, per_wire, freqs_hz):
    """Feed-point impedance (ohm) of the layout's wires (centre gap source on the driven element) and the
    solution (wire.WireSolution; None for a folded dipole, whose loop is solved by wire_path.py)."""
    if layout.kind == "folded_dipole":
        n = int(per_wire[0])
        solver = folded_dipole_solver(layout.lengths_m[0], layout.spacing_m, layout.fed_radius_m,
                                      layout.other_radius_m, n, end_wire_segments(layout, n))
        return solver.feed_impedance_ohm(freqs_hz), None
    structure = build_structure(build_wires(layout, per_wire))
    solution = solve_structure(structure, structure.centre_basis(layout.driven), freqs_hz,
                               FEED_GAP_RADII * layout.radius_m)
    return solution.z_in_ohm, solution


def _clamp(counts, fewest, most):
    return tuple(min(hi, max(lo, n)) for n, lo, hi in zip(counts, fewest, most))


def _settling_figures(layout: WireLayout, counts, freq_hz: float) -> tuple[float, float]:
    """(|Z_in| (ohm), front-to-back ratio along the boom (dB), nan for a single element) at freq_hz."""
    z, solution = feed_impedance_ohm(layout, counts, [freq_hz])
    if len(layout.lengths_m) < 2:
        return abs(z[0]), float("nan")
    e = np.abs(far_field_theta(solution, 0, np.pi / 2, np.array([0.0, np.pi])))
    return abs(z[0]), float(20 * np.log10(max(e[0], 1e-300) / max(e[1], 1e-300)))


@functools.lru_cache(maxsize=4096)
def converged_segments(layout: WireLayout, freq_hz: float) -> Segmentation:
    """Segment counts of a layout refined at freq_hz (Hz) until |Z| changes by under CONVERGENCE (and the
    front-to-back ratio of several elements by under FB_CONVERGENCE_DB).

    Deterministic in (layout, freq_hz). The layout must already have passed check_modellable at freq_hz.
    """
    fewest, most = count_bounds(layout, freq_hz)
    lam = C_M_PER_S / freq_hz
    counts = _clamp(tuple(_even(START_SEGMENTS_PER_WAVELENGTH * length / lam) for length in layout.lengths_m),
                    fewest, most)
    z_prev, fb_prev = _settling_figures(layout, counts, freq_hz)
    change, fb_change, stopped_by = float("nan"), float("nan"), "refinement limit"
    for level in range(1, MAX_REFINEMENTS + 1):
        finer = _clamp(tuple(2 * n for n in counts), fewest, most)
        if finer == counts:
            return Segmentation(counts, freq_hz, level - 1, change, False, "segment length limit", fb_change)
        if basis_count(layout, finer) > MAX_BASIS:
            return Segmentation(counts, freq_hz, level - 1, change, False, "segment budget", fb_change)
        z, fb = _settling_figures(layout, finer, freq_hz)
        change = abs(z - z_prev) / max(z, z_prev)
        fb_change = abs(fb - fb_prev)
        counts, z_prev, fb_prev = finer, z, fb
        if change < CONVERGENCE and not fb_change >= FB_CONVERGENCE_DB:  # nan (one element) passes
            return Segmentation(counts, freq_hz, level, change, True, "", fb_change)
    return Segmentation(counts, freq_hz, MAX_REFINEMENTS, change, False, stopped_by, fb_change)
