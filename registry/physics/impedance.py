"""Input impedance across frequency of wire antennas, resonance, and the band where VSWR stays low.

Entry point: `solve_wire_antenna(kind, geometry, freqs_hz)` for the kinds in kinds.WIRE_KINDS.
Elements are lossless perfect conductors in free space (thin-wire method of moments, wire.py).

* dipole: one centre-fed wire.
* monopole: image theory (Balanis, Antenna Theory, 4th ed., ch. 4, ground effects): a monopole of height h on an
  infinite perfectly conducting ground plane has half the input impedance of the 2h dipole.
* folded_dipole: the closed loop of both conductors (each its own radius) and the two end wires, fed by a
  delta gap in the middle of the first conductor, solved by the moment method on bent wires (wire_path.py).
  The older transmission-line / antenna-mode model (Balanis 4th ed., ch. 9) resonated 1.7 % long and gave
  |Z| 7.5 % low against NEC-2 models with the end wires; the loop agrees with them (tests).
* yagi: parallel elements (mutual coupling solved in one matrix), driven element centre-fed.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.physics import kinds as _kinds
from registry.physics import segmentation as _seg
from registry.physics.mismatch import vswr_from_z
from registry.physics.segmentation import Segmentation, Unmodellable  # noqa: F401  (re-exported)
from registry.physics.wire import WireSolution



@dataclass(frozen=True)
class ImpedanceSweep:
    """Input impedance of an antenna across frequency.

    freqs_hz (F,), z_in_ohm (F,) complex; solution: the underlying wire solution (its currents feed the
    pattern of a Yagi); for a monopole it is the image dipole's; None for a folded dipole (its loop is
    solved by wire_path.py, and its pattern is the dipole formula's). segments: the segment count used on each element (for a monopole, on its
    image dipole); segmentation: how that count was reached (segmentation.Segmentation; None when the
    geometry gave 'segments').
    """

    kind: str
    freqs_hz: np.ndarray
    z_in_ohm: np.ndarray
    solution: WireSolution | None
    segments: tuple[int, ...] = ()
    segmentation: Segmentation | None = None


def _positive_freqs(freqs_hz) -> np.ndarray:
    freqs = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    if freqs.size == 0 or not np.all(np.isfinite(freqs)) or np.any(freqs <= 0):
        raise ValueError("freqs_hz must be positive")
    return freqs


def choose_segments(kind: str, geometry, freq_low_hz: float, freq_high_hz: float, design_hz: float):
    """(layout, per-element segment counts, Segmentation or None) for solving between two frequencies (Hz).

    The counts are refined at design_hz (segmentation.converged_segments) and raised where needed so no
    segment exceeds segmentation.MAX_SEGMENT_WAVELENGTHS at freq_high_hz. A 'segments' value in the
    geometry (on the longest element; the others in proportion) replaces the refinement.
    Raises Unmodellable when the thin-wire model does not apply.
    """
    g = dict(_kinds.canonical_geometry(kind, geometry))
    layout = _seg.wire_layout(kind, g)
    lo, hi = min(freq_low_hz, design_hz), max(freq_high_hz, design_hz)
    _seg.check_modellable(layout, lo, hi)
    fewest, most = _seg.count_bounds(layout, hi)
    if g.get("segments"):
        longest = max(layout.lengths_m)
        asked = tuple(_seg._even(g["segments"] * length / longest) for length in layout.lengths_m)
        if any(n < f for n, f in zip(asked, fewest)) or any(n > m for n, m in zip(asked, most)):
            raise Unmodellable(f"{kind.replace('_', ' ')}: the 'segments' given ({g['segments']}) put segments "
                               "outside the thin-wire model's bounds; leave 'segments' out to have them chosen")
        return layout, asked, None
    seg = _seg.converged_segments(layout, float(design_hz))
    return layout, tuple(max(n, f) for n, f in zip(seg.per_wire, fewest)), seg


def solve_wire_antenna(kind: str, geometry, freqs_hz, design_hz: float | None = None) -> ImpedanceSweep:
    """Input impedance (ohm) of a wire antenna at each frequency in freqs_hz (Hz).

    kind: 'dipole' | 'monopole' | 'folded_dipole' | 'yagi'; geometry: mapping or (name, value) pairs
    (see kinds.KIND_PARAMETERS; lengths and diameters in metres); freqs_hz: float or sequence.
    The segment counts are refined at design_hz (default: the highest frequency asked) until |Z| settles
    (segmentation.py) and reused across the sweep; pass the same design_hz to every call for one
    antenna so that a frequency's result does not depend on the other frequencies asked for.
    Raises segmentation.Unmodellable (a ValueError) when the thin-wire model does not apply.
    """
    freqs = _positive_freqs(freqs_hz)
    design = float(freqs.max() if design_hz is None else design_hz)
    layout, counts, seg = choose_segments(kind, geometry, float(freqs.min()), float(freqs.max()), design)
    return _solve(kind, geometry, layout, counts, seg, freqs)


def _solve(kind, geometry, layout, counts, seg, freqs) -> ImpedanceSweep:
    z, solution = _seg.feed_impedance_ohm(layout, counts, freqs)
    if kind == "monopole":
        z = z / 2
    if not np.all(np.isfinite(z)):
        raise Unmodellable(f"{kind.replace('_', ' ')}: the moment-method solution is not finite (singular matrix)")
    return ImpedanceSweep(kind, freqs, z, solution, tuple(int(n) for n in counts), seg)


def solve_with_resonance(kind: str, geometry, freqs_hz, design_hz: float, search_low_hz: float,
                         search_high_hz: float, n_scan: int = 21) -> tuple[ImpedanceSweep, float]:
    """(sweep over freqs_hz, lowest series resonance in [search_low_hz, search_high_hz] or nan), Hz.

    One segmentation serves both: refined at design_hz and bounded for the union of the two ranges, so
    the sweep, the design point and the resonance come from the same model. The resonance is the first
    rising zero of X_in on an n_scan-point scan, refined by Brent's method. The sweep's `solution` holds
    the currents at freqs_hz followed by the scan's frequencies. Raises Unmodellable like solve_wire_antenna.
    """
    freqs = _positive_freqs(freqs_hz)
    lo, hi = min(float(freqs.min()), search_low_hz), max(float(freqs.max()), search_high_hz)
    layout, counts, seg = choose_segments(kind, geometry, lo, hi, float(design_hz))
    scan = np.linspace(search_low_hz, search_high_hz, n_scan)
    both = _solve(kind, geometry, layout, counts, seg, np.concatenate([freqs, scan]))
    sweep = ImpedanceSweep(kind, freqs, both.z_in_ohm[:freqs.size], both.solution, both.segments, seg)
    x = both.z_in_ohm[freqs.size:].imag
    up = np.flatnonzero((x[:-1] < 0) & (x[1:] >= 0))
    if up.size == 0:
        return sweep, float("nan")
    i = int(up[0])

    def reactance(f):
        return float(_solve(kind, geometry, layout, counts, seg, np.array([f])).z_in_ohm[0].imag)

    from scipy.optimize import brentq  # imported when first needed: a build from the cache never loads scipy

    return sweep, float(brentq(reactance, scan[i], scan[i + 1], xtol=1e-7 * scan[i]))


def resonant_frequency_hz(kind: str, geometry, f_low_hz: float, f_high_hz: float, n_scan: int = 21,
                          design_hz: float | None = None) -> float:
    """Lowest series resonance (X_in = 0 rising through zero) in [f_low_hz, f_high_hz], Hz.

    Scans n_scan frequencies, then refines the first sign change of the reactance with Brent's method.
    One segmentation serves the whole search (refined at design_hz, default the middle of the range), so
    the reactance is a smooth function of frequency. Returns nan when the reactance does not cross zero
    from below in the range. Raises Unmodellable like solve_wire_antenna.
    """
    design = 0.5 * (f_low_hz + f_high_hz) if design_hz is None else float(design_hz)
    layout, counts, seg = choose_segments(kind, geometry, f_low_hz, f_high_hz, design)
    scan = np.linspace(f_low_hz, f_high_hz, n_scan)
    x = _solve(kind, geometry, layout, counts, seg, scan).z_in_ohm.imag
    up = np.flatnonzero((x[:-1] < 0) & (x[1:] >= 0))
    if up.size == 0:
        return float("nan")
    i = int(up[0])

    def reactance(f):
        return float(_solve(kind, geometry, layout, counts, seg, np.array([f])).z_in_ohm[0].imag)

    from scipy.optimize import brentq  # imported when first needed: a build from the cache never loads scipy

    return float(brentq(reactance, scan[i], scan[i + 1], xtol=1e-7 * scan[i]))


def vswr_sweep(z_in_ohm, z0_ohm: float = 50.0):
    """VSWR of each input impedance (ohm) against a feeder of characteristic impedance z0_ohm."""
    return vswr_from_z(z_in_ohm, z0_ohm)


def band_under_vswr(freqs_hz, vswr, limit: float):
    """(f_low_hz, f_high_hz) of the contiguous band around the VSWR minimum where VSWR <= limit.

    Edges are linearly interpolated between samples. Returns (nan, nan) when no sample is under the
    limit; an edge at the end of the sweep is the sweep's end (the band may extend further).
    """
    f = np.asarray(freqs_hz, dtype=float)
    s = np.asarray(vswr, dtype=float)
    i0 = int(np.argmin(s))
    if not s[i0] <= limit:
        return float("nan"), float("nan")
    lo = i0
    while lo > 0 and s[lo - 1] <= limit:
        lo -= 1
    hi = i0
    while hi < s.size - 1 and s[hi + 1] <= limit:
        hi += 1

    def edge(i_in, i_out):
        return float(f[i_in] + (limit - s[i_in]) * (f[i_out] - f[i_in]) / (s[i_out] - s[i_in]))

    f_lo = edge(lo, lo - 1) if lo > 0 else float(f[0])
    f_hi = edge(hi, hi + 1) if hi < s.size - 1 else float(f[-1])
    return f_lo, f_hi
