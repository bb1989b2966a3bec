"""Content-keyed memory of results that depend only on an antenna model's content and a frequency.

A fleet has thousands of installations but few distinct antenna models: a pattern or an impedance
sweep is computed once per (kind, geometry, frequency) and shared. The key is the content, never the
model's id, so two models with the same geometry share one result and an edited geometry gets a new one.
"""
from __future__ import annotations

import functools
import math
from typing import NamedTuple

import numpy as np

from registry.core import figure_keys as FK
from registry.core.model import AntennaModel
from registry.incremental import kept, repr_key
from registry.compute.kinds import PATTERN_METHODS, kind_of
from registry.physics import impedance, patterns
from registry.physics import kinds as physics_kinds
from registry.core.results import Curve, Figure, PatternResult

MHZ = 1e6


@functools.lru_cache(maxsize=None)
def physics_geometry(model: AntennaModel) -> tuple[str, tuple[tuple[str, object], ...]]:
    """The physics kind and canonical geometry of a catalogue antenna model (`kinds.KINDS`); once per
    model, since every installation of the model asks for it."""
    kind = kind_of(model.kind)
    return kind.physics, physics_kinds.canonical_geometry(kind.physics, kind.parameters(model.geometry))


def pattern(model: AntennaModel, freq_mhz: float) -> PatternResult:
    """The model's pattern at `freq_mhz`, computed once per distinct content."""
    kind, geometry = physics_geometry(model)
    return _pattern(kind, geometry, float(freq_mhz))


@functools.lru_cache(maxsize=None)
def _pattern(kind: str, geometry: tuple, freq_mhz: float) -> PatternResult:
    key = repr_key(kind, geometry, freq_mhz)
    try:
        raw = patterns.pattern_for_kind(kind, geometry, freq_mhz * MHZ)
    except impedance.Unmodellable as problem:
        return _unmodelled_pattern(key, kind, freq_mhz, str(problem))
    m = raw.metrics
    peak = m.peak_directivity_dbi
    method = PATTERN_METHODS[kind]
    figures = [
        Figure(FK.PATTERN_DIRECTIVITY_DBI, "Peak directivity", peak, "dBi", "D = 4π U_max / P_rad",
               source=f"{method}; numerical integration over the sphere"),
        _metric(FK.PATTERN_HPBW_E_DEG, "Half-power beamwidth, E-plane", m.hpbw_e_deg, "°",
                "none: the E-plane cut stays above half power all round", HALF_POWER_FORMULA, method),
        _metric(FK.PATTERN_HPBW_H_DEG, "Half-power beamwidth, H-plane", m.hpbw_h_deg, "°",
                "none: the H-plane cut stays above half power all round", HALF_POWER_FORMULA, method),
        _metric(FK.PATTERN_FRONT_TO_BACK_DB, "Front-to-back ratio", m.front_to_back_db, "dB",
                "not defined for this pattern", "", method),
        _metric(FK.PATTERN_FIRST_SIDELOBE_DB, "First sidelobe level", m.first_sidelobe_db, "dB",
                "none: neither cut has a side lobe", "", method),
        _metric(FK.PATTERN_AZIMUTH_RIPPLE_DB, "Azimuth ripple", m.azimuth_ripple_db, "dB",
                "not computed: the kind is not meant to be omnidirectional", "", method),
    ]
    if raw.segments:
        _, _, seg = impedance.choose_segments(kind, geometry, freq_mhz * MHZ, freq_mhz * MHZ, freq_mhz * MHZ)
        figures.append(segments_figure(FK.PATTERN_SEGMENTS, raw.segments, seg))
    return PatternResult(
        key=key,
        antenna="",
        kind=kind,
        freq_mhz=freq_mhz,
        e_plane=Curve(np.asarray(raw.e_angle_deg), np.asarray(raw.e_db) + peak, "Angle (°)", DIRECTIVITY_LABEL),
        h_plane=Curve(np.asarray(raw.h_angle_deg), np.asarray(raw.h_db) + peak, "Angle (°)", DIRECTIVITY_LABEL),
        metrics=tuple(figures),
    )


HALF_POWER_FORMULA = "width of the cut above 10·log₁₀(0.5) ≈ −3.01 dB re peak"
DIRECTIVITY_LABEL = "Directivity (dBi)"
"""The pattern is lossless (the catalogue gives no efficiency): its level is directivity, not gain."""


def _unmodelled_pattern(key: str, kind: str, freq_mhz: float, reason: str) -> PatternResult:
    """A pattern that could not be modelled: empty cuts and one figure saying why."""
    empty = Curve(np.zeros(0), np.zeros(0), "Angle (°)", DIRECTIVITY_LABEL)
    note = Figure(FK.PATTERN_UNMODELLABLE, "Pattern not modelled", reason, "", source=PATTERN_METHODS[kind])
    return PatternResult(key=key, antenna="", kind=kind, freq_mhz=freq_mhz, e_plane=empty, h_plane=empty,
                         metrics=(note,))


STOPPED_WORDS = {
    "segment length limit": "segments may not be shorter than 4 wire radii (the thin-wire kernel's limit)",
    "segment budget": "the segment budget of the solver is reached",
    "refinement limit": "the refinement limit is reached",
}
"""Why a segmentation stopped short of convergence, in words (physics.segmentation's reasons)."""


def segments_figure(key: str, segments: tuple[int, ...], seg) -> Figure:
    """The segment count on each element and how it was reached (seg: physics Segmentation or None)."""
    counts = ", ".join(str(n) for n in segments)
    if seg is None:
        how = "as given in the geometry"
    elif seg.converged:
        how = (f"converged: |Z| changed {100 * seg.change:.2f} % at the last of {seg.refinements} "
               f"refinement(s) at {seg.freq_hz / MHZ:g} MHz")
    else:
        why = STOPPED_WORDS.get(seg.stopped_by, seg.stopped_by)
        last = (f"; |Z| changed {100 * seg.change:.2f} % at the last of {seg.refinements} refinement(s)"
                if math.isfinite(seg.change) else "; no refinement was possible")
        how = f"not converged to 1 %: {why}{last}"
    label = "Segments per element" if len(segments) > 1 else "Segments"
    return Figure(key, label, f"{counts}; {how}", "", "refined from 24 per wavelength until |Z| changes < 1 %",
                  source="common practice for thin-wire moment methods, checked against NEC-2 (segmentation.py)")


def gain_toward_dbi(model: AntennaModel, freq_mhz: float, theta_rad: float, phi_rad: float) -> float:
    """Gain (dBi, lossless so equal to directivity) of the model toward (θ, φ) in its own axes: the
    nearest point of its pattern grid."""
    theta_deg, phi_deg, gain = _raw_grid(*physics_geometry(model), float(freq_mhz))
    step_t = theta_deg[1] - theta_deg[0]
    step_p = phi_deg[1] - phi_deg[0]
    i = min(max(int(round((math.degrees(theta_rad) - theta_deg[0]) / step_t)), 0), len(theta_deg) - 1)
    j = int(round(((math.degrees(phi_rad) - phi_deg[0]) % 360.0) / step_p)) % len(phi_deg)
    return float(gain[i, j])


@kept("pattern-grids", tuple[np.ndarray, np.ndarray, np.ndarray])
def _raw_grid(kind: str, geometry: tuple, freq_mhz: float):
    try:
        raw = patterns.pattern_for_kind(kind, geometry, freq_mhz * MHZ)
    except impedance.Unmodellable:  # no pattern: the pair's figures fall back on the gain floor
        return np.array([0.0, 180.0]), np.array([0.0, 180.0]), np.full((2, 2), math.nan)
    return raw.theta_deg, raw.phi_deg, raw.gain_dbi


class WireImpedance(NamedTuple):
    """The modelled input impedance of a wire antenna, or why it could not be modelled.

    z: Z_in over the sweep (ohm); resonance_mhz: series resonance (nan if none in 0.5–1.5 × design);
    r_design: Re Z_in at the design frequency; slopes: (Z, dZ/dω) at each band centre; segments: a
    Figure with the segment counts used; reason: '' when modelled, else why not (the rest is empty).
    """

    z: np.ndarray | None
    resonance_mhz: float
    r_design: float
    slopes: tuple[tuple[complex, complex], ...]
    segments: Figure | None
    reason: str = ""


def impedance_sweep(model: AntennaModel, freqs_mhz: tuple[float, ...], design_mhz: float,
                    centres_mhz: tuple[float, ...]) -> WireImpedance | None:
    """Modelled input impedance of a wire kind (`WireImpedance`), or None for kinds without an
    input-impedance model. Every frequency is solved with one segmentation, refined at design_mhz."""
    kind, geometry = physics_geometry(model)
    if kind not in physics_kinds.WIRE_KINDS:
        return None
    return _impedance(kind, geometry, freqs_mhz, float(design_mhz), centres_mhz)


@kept("impedances", WireImpedance)
def _impedance(kind: str, geometry: tuple, freqs_mhz: tuple[float, ...], design_mhz: float,
               centres_mhz: tuple[float, ...]) -> WireImpedance:
    steps = [1e-3 * centre for centre in centres_mhz]
    extra = [design_mhz] + [f for c, h in zip(centres_mhz, steps) for f in (c - h, c, c + h)]
    freqs_hz = np.asarray(list(freqs_mhz) + extra) * MHZ
    try:
        sweep, resonance_hz = impedance.solve_with_resonance(
            kind, geometry, freqs_hz, design_mhz * MHZ, 0.5 * design_mhz * MHZ, 1.5 * design_mhz * MHZ)
    except impedance.Unmodellable as problem:
        return WireImpedance(None, math.nan, math.nan, (), None, str(problem))
    n = len(freqs_mhz)
    z_all = sweep.z_in_ohm
    slopes = []
    for i, h in enumerate(steps):
        z3 = z_all[n + 1 + 3 * i: n + 4 + 3 * i]
        slopes.append((complex(z3[1]), complex((z3[2] - z3[0]) / (2 * h * MHZ * 2 * np.pi))))
    seg_figure = segments_figure(FK.VSWR_SEGMENTS, sweep.segments, sweep.segmentation)
    return WireImpedance(z_all[:n], resonance_hz / MHZ, float(z_all[n].real), tuple(slopes), seg_figure)


def _metric(key: str, label: str, value: float, unit: str, why: str, formula: str, method: str) -> Figure:
    """A pattern figure: its number when it is finite, else the words `why` (no NaN reaches a page,
    the record or the terminal)."""
    if math.isfinite(value):
        return Figure(key, label, value, unit, formula, source=method)
    return Figure(key, label, why, "", formula, source=method)
