"""Physical constants (SI) and unit conversions. Nothing else lives here.

Constants follow the 2019 SI (BIPM, The International System of Units, 9th ed.):
c is exact; mu0 is the CODATA 2018 value (no longer exactly 4e-7*pi); eps0 and eta0
derive from c and mu0. Every conversion is named x_to_y and works on floats and numpy arrays.
"""
from __future__ import annotations

import math

import numpy as np

#: speed of light in vacuum, m/s (exact, SI 2019)
C_M_PER_S = 299_792_458.0
#: vacuum magnetic permeability, H/m (CODATA 2018)
MU0 = 1.25663706212e-6
#: vacuum electric permittivity, F/m: 1/(mu0 c^2)
EPS0 = 1.0 / (MU0 * C_M_PER_S**2)
#: impedance of free space, ohm: mu0 c (about 376.73 ohm)
ETA0 = MU0 * C_M_PER_S
#: decibels per neper for field quantities: 20/ln(10) (about 8.686 dB/Np)
NP_TO_DB = 20.0 / math.log(10.0)

INCH_M = 0.0254  # exact, international inch (1959)
FOOT_M = 0.3048  # exact, international foot (1959)


def inch_to_m(x):
    """Inches to metres (1 in = 0.0254 m exactly)."""
    return np.asarray(x, dtype=float) * INCH_M if np.ndim(x) else float(x) * INCH_M


def m_to_inch(x):
    """Metres to inches."""
    return np.asarray(x, dtype=float) / INCH_M if np.ndim(x) else float(x) / INCH_M


def mm_to_m(x):
    """Millimetres to metres."""
    return np.asarray(x, dtype=float) * 1e-3 if np.ndim(x) else float(x) * 1e-3


def m_to_mm(x):
    """Metres to millimetres."""
    return np.asarray(x, dtype=float) * 1e3 if np.ndim(x) else float(x) * 1e3


def ft_to_m(x):
    """Feet to metres (1 ft = 0.3048 m exactly)."""
    return np.asarray(x, dtype=float) * FOOT_M if np.ndim(x) else float(x) * FOOT_M


def m_to_ft(x):
    """Metres to feet."""
    return np.asarray(x, dtype=float) / FOOT_M if np.ndim(x) else float(x) / FOOT_M


def per_100ft_to_per_100m(x):
    """A quantity per 100 ft (e.g. dB/100 ft) to the same per 100 m: multiply by 1/0.3048."""
    return np.asarray(x, dtype=float) / FOOT_M if np.ndim(x) else float(x) / FOOT_M


def per_100m_to_per_100ft(x):
    """A quantity per 100 m to the same per 100 ft: multiply by 0.3048."""
    return np.asarray(x, dtype=float) * FOOT_M if np.ndim(x) else float(x) * FOOT_M


def mhz_to_hz(x):
    """Megahertz to hertz."""
    return np.asarray(x, dtype=float) * 1e6 if np.ndim(x) else float(x) * 1e6


def hz_to_mhz(x):
    """Hertz to megahertz."""
    return np.asarray(x, dtype=float) * 1e-6 if np.ndim(x) else float(x) * 1e-6


def deg_to_rad(x):
    """Degrees to radians."""
    return np.deg2rad(x) if np.ndim(x) else math.radians(x)


def rad_to_deg(x):
    """Radians to degrees."""
    return np.rad2deg(x) if np.ndim(x) else math.degrees(x)


def db_to_lin(x_db):
    """Power ratio in dB to a linear power ratio: 10**(x/10)."""
    return np.power(10.0, np.asarray(x_db, dtype=float) / 10.0) if np.ndim(x_db) else 10.0 ** (x_db / 10.0)


def lin_to_db(x):
    """Linear power ratio to dB: 10 log10(x). Zero gives -inf (numpy semantics)."""
    with np.errstate(divide="ignore"):
        out = 10.0 * np.log10(np.asarray(x, dtype=float))
    return out if np.ndim(x) else float(out)


def db_to_amplitude(x_db):
    """Field (voltage) ratio in dB to a linear amplitude ratio: 10**(x/20)."""
    return np.power(10.0, np.asarray(x_db, dtype=float) / 20.0) if np.ndim(x_db) else 10.0 ** (x_db / 20.0)


def amplitude_to_db(x):
    """Linear field (voltage) ratio to dB: 20 log10(x)."""
    with np.errstate(divide="ignore"):
        out = 20.0 * np.log10(np.abs(np.asarray(x, dtype=float)))
    return out if np.ndim(x) else float(out)


def np_to_db(x_np):
    """Nepers to decibels: multiply by 20/ln(10)."""
    return np.asarray(x_np, dtype=float) * NP_TO_DB if np.ndim(x_np) else float(x_np) * NP_TO_DB


def db_to_np(x_db):
    """Decibels to nepers: divide by 20/ln(10)."""
    return np.asarray(x_db, dtype=float) / NP_TO_DB if np.ndim(x_db) else float(x_db) / NP_TO_DB
