"""Coupling between two monopoles on one ground plane, a short distance apart: the moment method.

Two monopoles of heights h1, h2 standing on a perfectly conducting plane, axes parallel, d apart, are
by image theory two centre-fed dipoles of lengths 2 h1, 2 h2 in free space (Balanis, Antenna Theory,
4th ed., ch. 4, image theory; section from memory). The dipoles' two-port admittance matrix comes
from the thin-wire
Galerkin solver in wire.py (one 1 V delta gap per port, the other port shorted): Y = [[I11, I12],
[I21, I22]], Z_dipole = Y^-1. Each monopole sees half its dipole's voltage for the same current, so
Z_monopole = Z_dipole / 2 (self and mutual terms alike).

Coupling with both ports on z0 (50 ohm) lines: S = (Z - z0 U)(Z + z0 U)^-1 (Pozar, Microwave
Engineering, 4th ed., ch. 4, impedance-to-scattering conversion; section from memory);
coupling_db = 20 log10 |S21| (<= 0).
It is the power delivered to the second port's matched load over the power available from the first
port's source. Valid whatever the spacing, as long as the plane is large (see finite_ground for the
plate's own effect) and the wires thin (radius << height).

Units: metres, hertz, ohms, dB.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.physics.segmentation import Unmodellable
from registry.physics.wave import wavelength_m
from registry.physics.wire import Wire, build_structure, impedance_matrix, segments_for


@dataclass(frozen=True)
class MonopolePair:
    """Two-port figures of two monopoles over a ground plane: z_ohm (2, 2) complex monopole impedance
    matrix (ohm), s (2, 2) scattering matrix on z0_ohm, coupling_db = 20 log10 |S21|."""

    z_ohm: np.ndarray
    s: np.ndarray
    z0_ohm: float
    coupling_db: float


def s_from_z(z_ohm, z0_ohm: float = 50.0) -> np.ndarray:
    """S = (Z - z0 U)(Z + z0 U)^-1 for equal real reference impedances (Pozar 4th ed. §4.4)."""
    z = np.asarray(z_ohm, dtype=complex)
    u = np.eye(z.shape[0])
    return (z - z0_ohm * u) @ np.linalg.inv(z + z0_ohm * u)


def monopole_pair(height_a_m: float, height_b_m: float, spacing_m: float, freq_hz: float,
                  radius_m: float, z0_ohm: float = 50.0, per_wavelength: int = 40) -> MonopolePair:
    """Z matrix, S matrix and coupling (dB) of two monopoles spacing_m apart over a perfect ground.

    height_*_m: monopole heights (m); radius_m: wire radius (m), below a tenth of the spacing;
    per_wavelength: segments per wavelength on each image dipole (even count, at least 10).
    """
    if not spacing_m > 10 * radius_m:
        raise Unmodellable("spacing must exceed ten wire radii for the thin-wire model")
    wires = []
    for x_m, h in ((0.0, height_a_m), (spacing_m, height_b_m)):
        n = segments_for(2 * h, freq_hz, per_wavelength)
        wires.append(Wire(x_m, 0.0, -h, h, radius_m, n))
    st = build_structure(wires)
    feeds = [st.centre_basis(0), st.centre_basis(1)]
    zmat = impedance_matrix(st, freq_hz)
    v = np.zeros((zmat.shape[0], 2), dtype=complex)
    v[feeds[0], 0] = v[feeds[1], 1] = 1.0
    currents = np.linalg.solve(zmat, v)
    y_dipole = currents[feeds, :]
    z_mono = np.linalg.inv(y_dipole) / 2
    s = s_from_z(z_mono, z0_ohm)
    return MonopolePair(z_mono, s, z0_ohm, float(20 * np.log10(abs(s[1, 0]))))


def quarter_wave_pair_coupling_db(spacing_m: float, freq_hz: float, radius_m: float, z0_ohm: float = 50.0,
                                  height_factor: float = 0.25) -> float:
    """Coupling (dB) of two equal monopoles of height height_factor x lambda, spacing_m apart."""
    h = height_factor * wavelength_m(freq_hz)
    return monopole_pair(h, h, spacing_m, freq_hz, radius_m, z0_ohm).coupling_db
