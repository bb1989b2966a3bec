"""Measured one-port sweeps: a Touchstone v1 (.s1p) reader, VSWR/return loss in band, distance to fault.

Touchstone (IBIS Open Forum, Touchstone File Format Specification, Version 2.0, 2009; its Version 1.0
syntax): '!' starts a comment anywhere on a line; the first option line
'# [Hz|kHz|MHz|GHz] [S|Y|Z] [DB|MA|RI] [R n]' (any order, case-insensitive, defaults GHz S MA R 50)
sets the units, later option lines are ignored; each one-port data line is 'freq a b'. MA: magnitude and
angle (deg); DB: 20 log10|x| and angle (deg); RI: real and imaginary. Version 1.0 Z and Y data are
normalised to R, so S11 = (z - 1)/(z + 1) and (1 - y)/(1 + y).

Distance to the largest reflection (band-pass time-domain reflectometry): the Hann-windowed S11 on a
uniform frequency grid, zero-padded and inverse-FFT'd, gives the reflection against round-trip delay t;
distance = v t / 2 with v = velocity_factor c. Resolution about v / (2 B) for a sweep of width B; the
unambiguous range is v / (2 delta f).
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from registry.physics.mismatch import return_loss_db, vswr_from_gamma
from registry.core.units import C_M_PER_S

_FREQ_UNITS = {"HZ": 1.0, "KHZ": 1e3, "MHZ": 1e6, "GHZ": 1e9}


@dataclass(frozen=True)
class OnePortSweep:
    """freqs_hz (F,) strictly increasing; s11 (F,) complex; z0_ohm the reference resistance."""

    freqs_hz: np.ndarray
    s11: np.ndarray
    z0_ohm: float


def _option_line(tokens, where):
    unit, param, fmt, r = "GHZ", "S", "MA", 50.0
    i = 0
    while i < len(tokens):
        t = tokens[i].upper()
        if t in _FREQ_UNITS:
            unit = t
        elif t in ("S", "Y", "Z", "G", "H"):
            param = t
        elif t in ("DB", "MA", "RI"):
            fmt = t
        elif t == "R":
            if i + 1 >= len(tokens):
                raise ValueError(f"{where}: option line: 'R' needs a reference resistance")
            try:
                r = float(tokens[i + 1])
            except ValueError:
                raise ValueError(f"{where}: option line: reference resistance '{tokens[i + 1]}' is not a number") from None
            if not r > 0:
                raise ValueError(f"{where}: option line: reference resistance must be positive")
            i += 1
        else:
            raise ValueError(f"{where}: option line: unknown option '{tokens[i]}'")
        i += 1
    if param not in ("S", "Y", "Z"):
        raise ValueError(f"{where}: option line: {param} parameters are not one-port reflection data")
    return unit, param, fmt, r


def parse_s1p(text: str, source: str = "<s1p>") -> OnePortSweep:
    """Parse one-port Touchstone v1 text. Errors are ValueError('source:line: message')."""
    option = None
    freqs, values = [], []
    for number, raw in enumerate(text.splitlines(), start=1):
        where = f"{source}:{number}"
        line = raw.split("!", 1)[0].strip()
        if not line:
            continue
        if line.startswith("#"):
            if option is None:
                option = _option_line(line[1:].split(), where)
            continue
        if line.startswith("["):
            raise ValueError(f"{where}: keyword '{line.split()[0]}' is Touchstone 2.0 syntax; expected version 1.0")
        if option is None:
            raise ValueError(f"{where}: data before the option line ('# <unit> S <RI|MA|DB> R <ohm>')")
        tokens = line.split()
        if len(tokens) != 3:
            raise ValueError(f"{where}: expected 3 numbers (frequency and one complex value), got {len(tokens)}")
        try:
            f, a, b = (float(t) for t in tokens)
        except ValueError:
            bad = next(t for t in tokens if not _is_number(t))
            raise ValueError(f"{where}: '{bad}' is not a number") from None
        if not np.isfinite([f, a, b]).all():
            raise ValueError(f"{where}: values must be finite")
        f *= _FREQ_UNITS[option[0]]
        if f < 0:
            raise ValueError(f"{where}: frequency must not be negative")
        if freqs and f <= freqs[-1]:
            raise ValueError(f"{where}: frequencies must increase (got {f:g} Hz after {freqs[-1]:g} Hz)")
        fmt = option[2]
        if fmt == "RI":
            v = complex(a, b)
        elif fmt == "MA":
            v = a * np.exp(1j * np.deg2rad(b))
        else:
            v = 10 ** (a / 20) * np.exp(1j * np.deg2rad(b))
        freqs.append(f)
        values.append(v)
    if option is None:
        raise ValueError(f"{source}: no option line ('# <unit> S <RI|MA|DB> R <ohm>')")
    if not freqs:
        raise ValueError(f"{source}: no data lines")
    x = np.asarray(values, dtype=complex)
    param = option[1]
    if param == "Z":
        s = (x - 1) / (x + 1)
    elif param == "Y":
        s = (1 - x) / (1 + x)
    else:
        s = x
    return OnePortSweep(np.asarray(freqs, dtype=float), s, float(option[3]))


def _is_number(token: str) -> bool:
    try:
        float(token)
    except ValueError:
        return False
    return True


def read_s1p(path) -> OnePortSweep:
    """Read a .s1p file (ASCII/Latin-1 text) with parse_s1p; messages name the file and line."""
    p = Path(path)
    return parse_s1p(p.read_text(encoding="latin-1"), source=str(p))


@dataclass(frozen=True)
class BandSummary:
    """VSWR and return loss of a sweep within a band (points inside [f_low, f_high] only)."""

    n_points: int
    max_vswr: float
    min_return_loss_db: float
    freq_at_max_vswr_hz: float


def band_summary(sweep: OnePortSweep, f_low_hz: float, f_high_hz: float) -> BandSummary:
    """Worst VSWR and return loss of the measured points in [f_low_hz, f_high_hz] (Pozar §2.3).

    Raises ValueError when the sweep has no point in the band.
    """
    sel = (sweep.freqs_hz >= f_low_hz) & (sweep.freqs_hz <= f_high_hz)
    if not np.any(sel):
        raise ValueError(f"the sweep has no point between {f_low_hz:g} and {f_high_hz:g} Hz")
    g = np.abs(sweep.s11[sel])
    i = int(np.argmax(g))
    return BandSummary(int(sel.sum()), float(vswr_from_gamma(g[i])), float(return_loss_db(g[i])),
                       float(sweep.freqs_hz[sel][i]))


@dataclass(frozen=True)
class DistanceResponse:
    """distance_m (N,) along the feeder, magnitude (N,) of the windowed reflection response
    (normalised so that a single reflection of |Gamma| shows about |Gamma|), peak_distance_m."""

    distance_m: np.ndarray
    magnitude: np.ndarray
    peak_distance_m: float
    resolution_m: float


def distance_to_reflection(sweep: OnePortSweep, velocity_factor: float, pad_factor: int = 16,
                           min_distance_m: float = 0.0) -> DistanceResponse:
    """Distance (m) to the largest reflection by inverse FFT of S11 (band-pass mode, Hann window).

    The sweep must be uniformly spaced (relative spacing error < 1e-6). velocity_factor: the cable's
    v/c (unitless). pad_factor: zero padding for a finer distance grid. Peaks closer than
    min_distance_m are ignored (e.g. the analyser's own connector).
    """
    if not 0 < velocity_factor <= 1:
        raise ValueError("velocity_factor must be in (0, 1]")
    f = sweep.freqs_hz
    if f.size < 8:
        raise ValueError("a distance-to-fault sweep needs at least 8 points")
    df = np.diff(f)
    if np.max(np.abs(df - df.mean())) > 1e-6 * df.mean():
        raise ValueError("a distance-to-fault sweep must be uniformly spaced in frequency")
    n = f.size
    w = np.hanning(n + 2)[1:-1]
    n_fft = int(pad_factor) * n
    h = np.fft.ifft(sweep.s11 * w, n_fft) * n_fft / w.sum()
    t = np.arange(n_fft) / (n_fft * df.mean())
    v = velocity_factor * C_M_PER_S
    dist = v * t / 2
    mag = np.abs(h)
    keep = dist >= min_distance_m
    if not np.any(keep):
        raise ValueError("min_distance_m is beyond the unambiguous range")
    i = int(np.flatnonzero(keep)[np.argmax(mag[keep])])
    return DistanceResponse(dist, mag, float(dist[i]), float(v / (2 * (f[-1] - f[0]))))
