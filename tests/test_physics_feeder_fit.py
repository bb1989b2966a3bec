"""The attenuation fit's non-negative least squares agrees with scipy.optimize.nnls (Lawson and Hanson's
active-set algorithm, the reference implementation) on tables of every shape: physical ones, ones that
drive either term to zero, and noise."""
from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import nnls

from registry.physics.feeder import fit_attenuation, nnls2


@pytest.mark.parametrize("seed", range(200))
def test_nnls2_matches_the_reference_solver(seed):
    rng = np.random.default_rng(seed)
    rows = int(rng.integers(2, 12))
    a_matrix = np.abs(rng.normal(size=(rows, 2)))
    y = rng.normal(size=rows) * rng.choice([0.1, 1.0, 10.0]) + rng.choice([-2.0, 0.0, 2.0]) * a_matrix[:, 0]
    expected, _ = nnls(a_matrix, y)
    found = nnls2(a_matrix, y)
    assert np.all(found >= 0)
    # the same residual (the optimum is unique when A has full rank; compare what is minimised)
    assert np.sum((a_matrix @ found - y) ** 2) == pytest.approx(np.sum((a_matrix @ expected - y) ** 2), rel=1e-9, abs=1e-12)
    assert found == pytest.approx(expected, rel=1e-6, abs=1e-9)


def test_a_table_with_only_dielectric_loss_fits_a_zero_conductor_term():
    # loss growing exactly as f (no √f term): the conductor term must come out 0, not negative
    freqs_hz = np.array([10e6, 100e6, 1e9, 3e9])
    fit = fit_attenuation(freqs_hz, 2e-9 * freqs_hz)
    assert fit.a_db_per_100m_sqrt_hz == pytest.approx(0.0, abs=1e-15)
    assert fit.b_db_per_100m_hz == pytest.approx(2e-9, rel=1e-9)
