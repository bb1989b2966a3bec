"""Feeder loss: cable attenuation tables and their fit, loss budget with mismatch, coax from geometry.

* A coaxial cable's attenuation grows as a sqrt(f) (conductor skin effect) + b f (dielectric loss)
  (Pozar, Microwave Engineering, 4th ed., §2.7). A manufacturer's table (dB per 100 m or per 100 ft
  against frequency) is fitted to that form by non-negative least squares; the fit's residual is
  reported so a caller can flag a table that does not fit.
* Budget: cable loss = attenuation x length; plus connectors and adapters; plus mismatch loss
  -10 log10(1 - |Gamma|^2) from the antenna's VSWR (Pozar §2.3). The share of the transmitter's
  power that reaches the antenna is 10^(-loss/10) with the mismatch counted (reflected power lost,
  re-reflections at the source ignored: matched source assumed).
* Coax from geometry (Pozar 4th ed. §2.7): Z0 = eta0 / (2 pi sqrt(eps_r)) ln(b/a);
  alpha_c = R_s / (2 eta ln(b/a)) (1/a + 1/b) Np/m, R_s = sqrt(pi f mu0 / sigma), eta = eta0/sqrt(eps_r);
  alpha_d = pi f sqrt(eps_r) tan_delta / c Np/m.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from registry.physics.mismatch import gamma_from_vswr, mismatch_loss_db, return_loss_db
from registry.core.units import C_M_PER_S, ETA0, MU0, NP_TO_DB, per_100ft_to_per_100m

#: annealed copper conductivity, S/m (IEC 60028: 58.0 MS/m)
COPPER_S_PER_M = 5.8e7


@dataclass(frozen=True)
class AttenuationFit:
    """alpha(f) [dB/100 m] = a_db_per_100m_sqrt_hz sqrt(f[Hz]) + b_db_per_100m_hz f[Hz].

    rms_residual_db_per_100m / max_residual_db_per_100m: misfit over the table's points.
    """

    a_db_per_100m_sqrt_hz: float
    b_db_per_100m_hz: float
    rms_residual_db_per_100m: float
    max_residual_db_per_100m: float
    freq_min_hz: float
    freq_max_hz: float


def table_to_db_per_100m(loss_values, per: str):
    """Attenuation table values to dB/100 m; per is '100m' or '100ft' (never guessed)."""
    v = np.asarray(loss_values, dtype=float)
    if per == "100m":
        return v
    if per == "100ft":
        return per_100ft_to_per_100m(v)
    raise ValueError(f"attenuation table unit must be '100m' or '100ft', got '{per}'")


def nnls2(a_matrix: np.ndarray, y: np.ndarray) -> np.ndarray:
    """argmin ‖A·x − y‖² over x ≥ 0 for a two-column A (non-negative least squares, Lawson and Hanson,
    Solving Least Squares Problems, 1974, ch. 23): the problem is convex, so the optimum is the
    unconstrained least-squares solution when it is non-negative, else the best of the two faces x₁ = 0
    and x₂ = 0, each a one-variable fit clamped at zero."""
    x, *_ = np.linalg.lstsq(a_matrix, y, rcond=None)
    if np.all(x >= 0):
        return x
    faces = []
    for j in range(2):
        column = a_matrix[:, j]
        on_face = np.zeros(2)
        on_face[j] = max(float(column @ y) / float(column @ column), 0.0) if column @ column > 0 else 0.0
        faces.append((float(np.sum((y - a_matrix @ on_face) ** 2)), j, on_face))
    return min(faces, key=lambda face: face[:2])[2]


def fit_attenuation(freqs_hz, loss_db_per_100m) -> AttenuationFit:
    """Least-squares fit of a sqrt(f) + b f (a, b >= 0) to an attenuation table (dB/100 m vs Hz).

    Needs at least two distinct frequencies. Non-negative least squares (`nnls2`) keeps both terms
    physical, so the fit cannot predict a negative loss.
    """
    f = np.asarray(freqs_hz, dtype=float)
    y = np.asarray(loss_db_per_100m, dtype=float)
    if f.shape != y.shape or f.ndim != 1:
        raise ValueError("frequency and loss tables must be 1-D and of the same length")
    if np.unique(f).size < 2:
        raise ValueError("the attenuation table needs at least two distinct frequencies")
    if np.any(f <= 0) or np.any(y < 0):
        raise ValueError("table frequencies must be positive and losses non-negative")
    # scale columns for conditioning
    s1, s2 = np.sqrt(f.max()), f.max()
    coef = nnls2(np.column_stack([np.sqrt(f) / s1, f / s2]), y)
    a, b = coef[0] / s1, coef[1] / s2
    resid = y - (a * np.sqrt(f) + b * f)
    return AttenuationFit(float(a), float(b), float(np.sqrt(np.mean(resid**2))), float(np.max(np.abs(resid))),
                          float(f.min()), float(f.max()))


def attenuation_db_per_100m(fit: AttenuationFit, freq_hz):
    """Attenuation (dB/100 m) at freq_hz (Hz) from a fit."""
    f = np.asarray(freq_hz, dtype=float)
    out = fit.a_db_per_100m_sqrt_hz * np.sqrt(f) + fit.b_db_per_100m_hz * f
    return out if np.ndim(freq_hz) else float(out)


def cable_loss_db(fit: AttenuationFit, freq_hz, length_m):
    """Cable loss (dB) = attenuation(f) [dB/100 m] x length_m / 100."""
    return attenuation_db_per_100m(fit, freq_hz) * np.asarray(length_m, dtype=float) / 100.0


@dataclass(frozen=True)
class FeederBudget:
    """Loss budget of a feeder and its antenna match (all dB except the fraction)."""

    cable_loss_db: float
    connector_loss_db: float
    mismatch_loss_db: float
    total_loss_db: float
    return_loss_db: float
    delivered_fraction: float


def feeder_budget(cable_loss_db_: float, connector_losses_db=(), vswr: float = 1.0) -> FeederBudget:
    """Total feeder loss (dB) and the share of power that reaches the antenna.

    total = cable + sum(connector and adapter losses) + mismatch loss(VSWR); delivered = 10^(-total/10).
    vswr is the antenna's (modelled or measured) VSWR against the feeder; return loss is of that VSWR.
    """
    connectors = float(np.sum(np.asarray(connector_losses_db, dtype=float)))
    if cable_loss_db_ < 0 or connectors < 0:
        raise ValueError("losses must not be negative")
    g = gamma_from_vswr(vswr)
    ml = float(mismatch_loss_db(g))
    total = float(cable_loss_db_) + connectors + ml
    return FeederBudget(float(cable_loss_db_), connectors, ml, total, float(return_loss_db(g)), 10 ** (-total / 10))


def coax_z0_ohm(inner_diameter_m: float, outer_diameter_m: float, eps_r: float = 1.0) -> float:
    """Characteristic impedance (ohm) of a lossless coax: eta0/(2 pi sqrt(eps_r)) ln(b/a) (Pozar §2.7)."""
    if not outer_diameter_m > inner_diameter_m > 0:
        raise ValueError("coax needs outer diameter > inner diameter > 0")
    return float(ETA0 / (2 * np.pi * np.sqrt(eps_r)) * np.log(outer_diameter_m / inner_diameter_m))


def coax_attenuation_db_per_m(freq_hz, inner_diameter_m: float, outer_diameter_m: float, eps_r: float = 1.0,
                              tan_delta: float = 0.0, conductivity_s_per_m: float = COPPER_S_PER_M):
    """(conductor, dielectric) attenuation of a coax in dB/m at freq_hz (Hz), Pozar 4th ed. §2.7.

    Both conductors of the given conductivity (S/m); skin effect fully developed (skin depth << radii).
    """
    f = np.asarray(freq_hz, dtype=float)
    a, b = inner_diameter_m / 2, outer_diameter_m / 2
    if not b > a > 0:
        raise ValueError("coax needs outer diameter > inner diameter > 0")
    rs = np.sqrt(np.pi * f * MU0 / conductivity_s_per_m)
    eta = ETA0 / np.sqrt(eps_r)
    alpha_c = rs / (2 * eta * np.log(b / a)) * (1 / a + 1 / b)
    alpha_d = np.pi * f * np.sqrt(eps_r) * tan_delta / C_M_PER_S
    return alpha_c * NP_TO_DB, alpha_d * NP_TO_DB


def velocity_factor(eps_r: float) -> float:
    """Velocity factor 1/sqrt(eps_r) of a TEM line with a uniform dielectric (Pozar §2.7)."""
    return float(1 / np.sqrt(eps_r))
