"""Input impedance across frequency of wire antennas, resonance, and the band where VSWR stays low.

Entry point: `solve_wire_antenna(kind, geometry, freqs_hz)` for the kinds in kinds.WIRE_KINDS.
Elements are lossless perfect conductors in free space (thin-wire method of moments, wire.py).

* dipole: one centre-fed wire.
* monopole: image theory (Balanis, Antenna Theory, 4th ed., ch. 4, ground effects): a monopole of height h on an
  infinite perfectly conducting ground plane has half the input impedance of the 2h dipole.
* folded_dipole: transmission-line / antenna-mode decomposition of two identical parallel wires joined
  at the ends (Balanis 4th ed., ch. 9, folded dipole; G. A. Thiele, E. P. Ekelman, L. W. Henderson,
  "On the accuracy of the transmission line model of the folded dipole", IEEE Trans. AP-28, 1980):
  Z_in = 4 Z_t Z_d / (Z_t + 2 Z_d), with the shorted-stub mode Z_t = j Z0 tan(kL/2),
  Z0 = (eta/pi) acosh(s/2a), and Z_d the dipole's impedance for the equivalent radius sqrt(a s).
* yagi: parallel elements (mutual coupling solved in one matrix), driven element centre-fed.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.physics import kinds as _kinds
from registry.physics.mismatch import vswr_from_z
from registry.physics.wire import Wire, WireSolution, build_structure, solve_structure
from registry.core.units import C_M_PER_S, ETA0

#: default segments on the longest wire of a structure (the others scale with their length)
DEFAULT_SEGMENTS = 20
#: a segment may be at most this fraction of a wavelength at the highest frequency solved
MAX_SEGMENT_WAVELENGTHS = 0.1


@dataclass(frozen=True)
class ImpedanceSweep:
    """Input impedance of an antenna across frequency.

    freqs_hz (F,), z_in_ohm (F,) complex; solution: the underlying wire solution (its currents feed the
    pattern of a Yagi); for a monopole it is the image dipole's, for a folded dipole the equivalent
    dipole's (antenna mode).
    """

    kind: str
    freqs_hz: np.ndarray
    z_in_ohm: np.ndarray
    solution: WireSolution


def _even(n: int) -> int:
    return int(n + (n % 2))


def _wire_set(kind: str, g: dict):
    """Wires and the driven wire's index for a canonical geometry dict of a wire kind."""
    seg = g["segments"] or DEFAULT_SEGMENTS
    if kind == "dipole":
        half = g["length_m"] / 2
        return (Wire(0.0, 0.0, -half, half, g["diameter_m"] / 2, _even(seg)),), 0
    if kind == "monopole":
        h = g["height_m"]
        return (Wire(0.0, 0.0, -h, h, g["diameter_m"] / 2, _even(seg)),), 0
    if kind == "folded_dipole":
        a = g["diameter_m"] / 2
        s = g["spacing_m"]
        if not s > 2 * a:
            raise ValueError("folded_dipole: spacing_m must exceed the wire diameter")
        half = g["length_m"] / 2
        return (Wire(0.0, 0.0, -half, half, np.sqrt(a * s), _even(seg)),), 0
    if kind == "yagi":
        lengths, positions = g["element_lengths_m"], g["element_positions_m"]
        if len(lengths) != len(positions) or len(lengths) < 2:
            raise ValueError("yagi: element_lengths_m and element_positions_m need the same length (>= 2)")
        if not 0 <= g["driven_index"] < len(lengths):
            raise ValueError("yagi: driven_index out of range")
        longest = max(lengths)
        wires = tuple(
            Wire(float(x), 0.0, -l / 2, l / 2, g["diameter_m"] / 2, _even(max(4, round(seg * l / longest))))
            for l, x in zip(lengths, positions)
        )
        return wires, g["driven_index"]
    raise ValueError(f"'{kind}' is not a wire antenna kind ({', '.join(_kinds.WIRE_KINDS)})")


def solve_wire_antenna(kind: str, geometry, freqs_hz) -> ImpedanceSweep:
    """Input impedance (ohm) of a wire antenna at each frequency in freqs_hz (Hz).

    kind: 'dipole' | 'monopole' | 'folded_dipole' | 'yagi'; geometry: mapping or (name, value) pairs
    (see kinds.KIND_PARAMETERS; lengths and diameters in metres); freqs_hz: float or sequence.
    The segmentation depends on the geometry only (DEFAULT_SEGMENTS on the longest wire unless
    'segments' is given), so a frequency's result does not depend on the other frequencies asked for.
    Raises ValueError when segments exceed MAX_SEGMENT_WAVELENGTHS at the highest frequency.
    """
    g = dict(_kinds.canonical_geometry(kind, geometry))
    freqs = np.atleast_1d(np.asarray(freqs_hz, dtype=float))
    if freqs.size == 0 or np.any(freqs <= 0):
        raise ValueError("freqs_hz must be positive")
    wires, driven = _wire_set(kind, g)
    lam_min = C_M_PER_S / freqs.max()
    longest_segment = max((w.z_end_m - w.z_start_m) / w.n_segments for w in wires)
    if longest_segment > MAX_SEGMENT_WAVELENGTHS * lam_min:
        raise ValueError(
            f"{kind}: segments of {longest_segment:.4g} m are too long at {freqs.max():.6g} Hz; "
            "give more 'segments'"
        )
    structure = build_structure(wires)
    solution = solve_structure(structure, structure.centre_basis(driven), freqs)
    z = solution.z_in_ohm
    if kind == "monopole":
        z = z / 2
    elif kind == "folded_dipole":
        z = folded_dipole_impedance_ohm(z, g["length_m"], g["diameter_m"] / 2, g["spacing_m"], freqs)
    return ImpedanceSweep(kind, freqs, z, solution)


def two_wire_line_z0_ohm(spacing_m: float, radius_m: float) -> float:
    """Characteristic impedance (ohm) of a two-wire line in air: (eta0/pi) acosh(s/2a).

    Balanis 4th ed., ch. 9, exact form; s centre-to-centre spacing, a wire radius (m).
    """
    return float(ETA0 / np.pi * np.arccosh(spacing_m / (2 * radius_m)))


def folded_dipole_impedance_ohm(z_dipole_ohm, length_m, radius_m, spacing_m, freqs_hz):
    """Folded dipole input impedance (ohm) from its equivalent dipole's impedance (ohm).

    Z_in = 4 Z_t Z_d / (Z_t + 2 Z_d), Z_t = j Z0 tan(k L/2) (Balanis 4th ed., ch. 9, equal wires).
    z_dipole_ohm must be the impedance of a dipole of radius sqrt(a s) (same source).
    """
    k = 2 * np.pi * np.asarray(freqs_hz, dtype=float) / C_M_PER_S
    z_t = 1j * two_wire_line_z0_ohm(spacing_m, radius_m) * np.tan(k * length_m / 2)
    z_d = np.asarray(z_dipole_ohm, dtype=complex)
    return 4 * z_t * z_d / (z_t + 2 * z_d)


def resonant_frequency_hz(kind: str, geometry, f_low_hz: float, f_high_hz: float, n_scan: int = 21) -> float:
    """Lowest series resonance (X_in = 0 rising through zero) in [f_low_hz, f_high_hz], Hz.

    Scans n_scan frequencies, then refines the first sign change of the reactance with Brent's method.
    Returns nan when the reactance does not cross zero from below in the range.
    """
    scan = np.linspace(f_low_hz, f_high_hz, n_scan)
    x = solve_wire_antenna(kind, geometry, scan).z_in_ohm.imag
    up = np.flatnonzero((x[:-1] < 0) & (x[1:] >= 0))
    if up.size == 0:
        return float("nan")
    i = int(up[0])

    def reactance(f):
        return float(solve_wire_antenna(kind, geometry, [f]).z_in_ohm[0].imag)

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
