"""Reflection, VSWR, return loss and mismatch loss (Pozar, Microwave Engineering, 4th ed., §2.3).

Gamma = (Z - Z0)/(Z + Z0); VSWR = (1 + |Gamma|)/(1 - |Gamma|); RL = -20 log10 |Gamma| dB;
mismatch loss ML = -10 log10(1 - |Gamma|^2) dB. VSWR 2 <-> |Gamma| 1/3 <-> RL 9.54 dB <-> ML 0.51 dB.
All functions take floats or numpy arrays.
"""
from __future__ import annotations

import numpy as np


def reflection_coefficient(z_ohm, z0_ohm=50.0):
    """Complex reflection coefficient Gamma = (Z - Z0)/(Z + Z0) of a load Z (ohm) on a line Z0 (ohm)."""
    z = np.asarray(z_ohm, dtype=complex)
    return (z - z0_ohm) / (z + z0_ohm)


def vswr_from_gamma(gamma):
    """VSWR = (1 + |Gamma|)/(1 - |Gamma|); infinite for |Gamma| = 1."""
    g = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore"):
        out = np.where(g < 1.0, (1.0 + g) / np.where(g < 1.0, 1.0 - g, 1.0), np.inf)
    return out if np.ndim(gamma) else float(out)


def gamma_from_vswr(vswr):
    """|Gamma| = (VSWR - 1)/(VSWR + 1); VSWR must be >= 1."""
    s = np.asarray(vswr, dtype=float)
    if np.any(s < 1.0):
        raise ValueError("VSWR must be at least 1")
    out = np.where(np.isinf(s), 1.0, (s - 1.0) / np.where(np.isinf(s), 1.0, s + 1.0))
    return out if np.ndim(vswr) else float(out)


def vswr_from_z(z_ohm, z0_ohm=50.0):
    """VSWR of a load Z (ohm) on a line of characteristic impedance Z0 (ohm)."""
    return vswr_from_gamma(reflection_coefficient(z_ohm, z0_ohm))


def return_loss_db(gamma):
    """Return loss RL = -20 log10 |Gamma| (dB, positive for a passive load)."""
    g = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore"):
        out = -20.0 * np.log10(g)
    return out if np.ndim(gamma) else float(out)


def mismatch_loss_db(gamma):
    """Mismatch loss ML = -10 log10(1 - |Gamma|^2) (dB): power reflected back, not delivered."""
    g = np.abs(np.asarray(gamma))
    with np.errstate(divide="ignore"):
        out = -10.0 * np.log10(1.0 - g**2)
    return out if np.ndim(gamma) else float(out)


def mismatch_loss_db_from_vswr(vswr):
    """Mismatch loss (dB) of a load with the given VSWR."""
    return mismatch_loss_db(gamma_from_vswr(vswr))


def return_loss_db_from_vswr(vswr):
    """Return loss (dB) of a load with the given VSWR."""
    return return_loss_db(gamma_from_vswr(vswr))
