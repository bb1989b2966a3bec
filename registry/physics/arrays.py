"""Amplitude tapers and array factors of uniformly spaced linear and planar arrays.

AF = sum_n a_n exp(j n (k d sin theta cos phi + beta)) for elements along x (Balanis, Antenna Theory,
4th ed., ch. 6); a planar array's factor is the product of its x and y factors (ch. 6, planar arrays)
when the excitation is separable. Patterns are power (|AF|^2, relative).
"""
from __future__ import annotations


import numpy as np

from registry.physics.elements import wavenumber_rad_per_m

TAPERS = ("uniform", "cosine", "triangular", "chebyshev", "explicit")


def taper_weights(n_elements: int, taper: str = "uniform", sidelobe_db: float = 30.0, amplitudes=()):
    """Element amplitudes (peak 1) for a taper.

    uniform: all 1. cosine: cos(pi x_n / N), x_n = n - (N-1)/2. triangular: 1 - |x_n| / ((N+1)/2).
    chebyshev: Dolph-Chebyshev weights for equal sidelobes sidelobe_db below the main beam
    (C. L. Dolph, Proc. IRE 34, 1946; `dolph_chebyshev`). explicit: `amplitudes`.
    """
    n = int(n_elements)
    if n < 1:
        raise ValueError("n_elements must be at least 1")
    x = np.arange(n) - (n - 1) / 2
    if taper == "uniform":
        w = np.ones(n)
    elif taper == "cosine":
        w = np.cos(np.pi * x / n)
    elif taper == "triangular":
        w = 1 - np.abs(x) / ((n + 1) / 2)
    elif taper == "chebyshev":
        if not sidelobe_db > 0:
            raise ValueError("chebyshev taper needs sidelobe_db > 0")
        w = dolph_chebyshev(n, sidelobe_db) if n > 1 else np.ones(1)
    elif taper == "explicit":
        w = np.asarray(amplitudes, dtype=float)
        if w.shape != (n,):
            raise ValueError(f"explicit taper needs {n} amplitudes, got {w.size}")
    else:
        raise ValueError(f"unknown taper '{taper}'; known: {', '.join(TAPERS)}")
    peak = np.max(np.abs(w))
    if not peak > 0:
        raise ValueError("taper amplitudes are all zero")
    return w / peak


def dolph_chebyshev(n: int, sidelobe_db: float) -> np.ndarray:
    """Dolph-Chebyshev weights of n > 1 elements, sidelobes sidelobe_db (dB) below the main beam, peak 1.

    The array pattern is the Chebyshev polynomial T_{n-1}(β·cos(πk/n)) sampled at n points, with
    β = cosh(arccosh(10^(SLL/20)) / (n−1)); the weights are its discrete Fourier transform (for even n
    after a half-sample phase shift) (Dolph, Proc. IRE 34, 1946; the same construction as SciPy's
    scipy.signal.windows.chebwin, which tests/test_physics_chebyshev.py checks it against). NumPy only:
    importing scipy.signal took 1.4 s of every build that draws a Chebyshev array.
    """
    order = n - 1.0
    beta = np.cosh(np.arccosh(10 ** (abs(sidelobe_db) / 20.0)) / order)
    k = np.arange(n)
    x = beta * np.cos(np.pi * k / n)
    p = np.empty(n)
    above, below, inside = x > 1, x < -1, np.abs(x) <= 1
    p[above] = np.cosh(order * np.arccosh(x[above]))
    p[below] = (2 * (n % 2) - 1) * np.cosh(order * np.arccosh(-x[below]))
    p[inside] = np.cos(order * np.arccos(x[inside]))
    if n % 2:
        w = np.real(np.fft.fft(p))
        half = (n + 1) // 2
        w = np.concatenate((w[half - 1:0:-1], w[:half]))
    else:
        w = np.real(np.fft.fft(p * np.exp(1j * np.pi / n * k)))
        half = n // 2 + 1
        w = np.concatenate((w[half - 1:0:-1], w[1:half]))
    return w / np.max(w)


def array_factor(direction_cosine, weights, spacing_m: float, freq_hz: float, steer_rad: float = 0.0):
    """Complex array factor of weights a_n at positions x_n = (n - (N-1)/2) d along an axis.

    direction_cosine: cosine of the angle to the array axis (e.g. sin theta cos phi for the x axis),
    any shape. Phase beta = -k d sin(steer) points the beam steer_rad from broadside toward +axis.
    Evaluated by Horner's rule in z = exp(j psi), psi = k d (u - sin steer).
    """
    w = np.asarray(weights, dtype=complex)
    k = float(wavenumber_rad_per_m(freq_hz))
    psi = k * spacing_m * (np.asarray(direction_cosine, dtype=float) - np.sin(steer_rad))
    z = np.exp(1j * psi)
    acc = np.full(psi.shape, w[-1], dtype=complex)
    for a in w[-2::-1]:
        acc = acc * z + a
    # centre the phase reference on the array's middle
    return acc * np.exp(-1j * psi * (w.size - 1) / 2)


def linear_array_power(theta_rad, phi_rad, weights, spacing_m: float, freq_hz: float, steer_rad: float = 0.0):
    """|AF|^2 of a linear array along x (beam broadside toward +/- z, steered in the xz plane)."""
    u = np.sin(np.asarray(theta_rad, dtype=float)) * np.cos(np.asarray(phi_rad, dtype=float))
    return np.abs(array_factor(u, weights, spacing_m, freq_hz, steer_rad)) ** 2


def planar_array_power(theta_rad, phi_rad, weights_x, weights_y, spacing_x_m: float, spacing_y_m: float,
                       freq_hz: float):
    """|AF_x AF_y|^2 of a rectangular grid in the xy plane with separable weights (broadside, +/- z)."""
    th = np.asarray(theta_rad, dtype=float)
    ph = np.asarray(phi_rad, dtype=float)
    ux = np.sin(th) * np.cos(ph)
    uy = np.sin(th) * np.sin(ph)
    return (np.abs(array_factor(ux, weights_x, spacing_x_m, freq_hz)) ** 2
            * np.abs(array_factor(uy, weights_y, spacing_y_m, freq_hz)) ** 2)
