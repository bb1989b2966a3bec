"""Content-keyed memory of results that depend only on an antenna model's content and a frequency.

A fleet has thousands of installations but few distinct antenna models: a pattern or an impedance
sweep is computed once per (kind, geometry, frequency) and shared. The key is the content, never the
model's id, so two models with the same geometry share one result and an edited geometry gets a new one.
"""
from __future__ import annotations

import functools
import math

import numpy as np

from registry.core import figure_keys as FK
from registry.core.model import AntennaModel
from registry.incremental import repr_key
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
    raw = patterns.pattern_for_kind(kind, geometry, freq_mhz * MHZ)
    m = raw.metrics
    peak = m.peak_directivity_dbi
    method = PATTERN_METHODS[kind]
    figures = [
        Figure(FK.PATTERN_DIRECTIVITY_DBI, "Peak directivity", peak, "dBi", "D = 4π U_max / P_rad",
               source=f"{method}; numerical integration over the sphere"),
        Figure(FK.PATTERN_HPBW_E_DEG, "Half-power beamwidth, E-plane", m.hpbw_e_deg, "°", source=method),
        Figure(FK.PATTERN_HPBW_H_DEG, "Half-power beamwidth, H-plane", m.hpbw_h_deg, "°", source=method),
        Figure(FK.PATTERN_FRONT_TO_BACK_DB, "Front-to-back ratio", m.front_to_back_db, "dB", source=method),
        Figure(FK.PATTERN_FIRST_SIDELOBE_DB, "First sidelobe level", m.first_sidelobe_db, "dB", source=method),
        Figure(FK.PATTERN_AZIMUTH_RIPPLE_DB, "Azimuth ripple", m.azimuth_ripple_db, "dB", source=method),
    ]
    return PatternResult(
        key=repr_key(kind, geometry, freq_mhz),
        antenna="",
        kind=kind,
        freq_mhz=freq_mhz,
        e_plane=Curve(np.asarray(raw.e_angle_deg), np.asarray(raw.e_db) + peak, "Angle (°)", "Gain (dBi)"),
        h_plane=Curve(np.asarray(raw.h_angle_deg), np.asarray(raw.h_db) + peak, "Angle (°)", "Gain (dBi)"),
        metrics=tuple(figures),
    )


def gain_toward_dbi(model: AntennaModel, freq_mhz: float, theta_rad: float, phi_rad: float) -> float:
    """Gain (dBi, lossless so equal to directivity) of the model toward (θ, φ) in its own axes: the
    nearest point of its pattern grid."""
    theta_deg, phi_deg, gain = _raw_grid(*physics_geometry(model), float(freq_mhz))
    step_t = theta_deg[1] - theta_deg[0]
    step_p = phi_deg[1] - phi_deg[0]
    i = min(max(int(round((math.degrees(theta_rad) - theta_deg[0]) / step_t)), 0), len(theta_deg) - 1)
    j = int(round(((math.degrees(phi_rad) - phi_deg[0]) % 360.0) / step_p)) % len(phi_deg)
    return float(gain[i, j])


@functools.lru_cache(maxsize=None)
def _raw_grid(kind: str, geometry: tuple, freq_mhz: float):
    raw = patterns.pattern_for_kind(kind, geometry, freq_mhz * MHZ)
    return raw.theta_deg, raw.phi_deg, raw.gain_dbi


def impedance_sweep(model: AntennaModel, freqs_mhz: tuple[float, ...], design_mhz: float,
                    centres_mhz: tuple[float, ...]):
    """Modelled input impedance of a wire kind, or None for kinds without an input-impedance model.

    Returns (Z_in over freqs_mhz, series resonance in MHz or nan, Re Z_in at design_mhz,
    ((Z, dZ/dω) at each of centres_mhz)).
    """
    kind, geometry = physics_geometry(model)
    if kind not in physics_kinds.WIRE_KINDS:
        return None
    return _impedance(kind, geometry, freqs_mhz, float(design_mhz), centres_mhz)


@functools.lru_cache(maxsize=None)
def _impedance(kind: str, geometry: tuple, freqs_mhz: tuple[float, ...], design_mhz: float,
               centres_mhz: tuple[float, ...]):
    freqs_hz = np.asarray(freqs_mhz) * MHZ
    z = impedance.solve_wire_antenna(kind, geometry, freqs_hz).z_in_ohm
    r_design = float(impedance.solve_wire_antenna(kind, geometry, [design_mhz * MHZ]).z_in_ohm[0].real)
    resonance_hz = impedance.resonant_frequency_hz(kind, geometry, 0.5 * design_mhz * MHZ, 1.5 * design_mhz * MHZ)
    slopes = []
    for centre in centres_mhz:
        step = 1e-3 * centre * MHZ
        z3 = impedance.solve_wire_antenna(kind, geometry, [centre * MHZ - step, centre * MHZ, centre * MHZ + step]).z_in_ohm
        slopes.append((complex(z3[1]), complex((z3[2] - z3[0]) / (2 * step * 2 * np.pi))))
    return z, resonance_hz / MHZ, r_design, tuple(slopes)
