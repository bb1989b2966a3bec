"""Dolph-Chebyshev array weights against the reference implementation, scipy.signal.windows.chebwin
(SciPy), over element counts and sidelobe levels an aircraft array catalogue uses; and the defining
property checked directly: every sidelobe of the array factor sits at the stated level (Dolph, Proc.
IRE 34, 1946)."""
from __future__ import annotations

import warnings

import numpy as np
import pytest
from scipy.signal.windows import chebwin

from registry.physics.arrays import dolph_chebyshev, taper_weights


@pytest.mark.parametrize("n", [2, 3, 4, 5, 6, 7, 8, 11, 16, 24, 33, 40])
@pytest.mark.parametrize("sidelobe_db", [13.0, 20.0, 25.0, 30.0, 40.0, 60.0])
def test_weights_match_scipy(n, sidelobe_db):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # scipy's note on low attenuation: not our use
        expected = chebwin(n, at=sidelobe_db)
    assert dolph_chebyshev(n, sidelobe_db) == pytest.approx(expected / expected.max(), rel=1e-9, abs=1e-12)
    assert taper_weights(n, "chebyshev", sidelobe_db) == pytest.approx(expected / expected.max(), rel=1e-9, abs=1e-12)


@pytest.mark.parametrize("n, sidelobe_db", [(8, 30.0), (12, 25.0)])
def test_every_sidelobe_is_at_the_stated_level(n, sidelobe_db):
    weights = dolph_chebyshev(n, sidelobe_db)
    psi = np.linspace(0, np.pi, 20001)  # half a period of the array factor, in the phase u = k·d·cosθ
    af = np.abs(np.exp(1j * np.outer(psi, np.arange(n) - (n - 1) / 2)) @ weights)
    af_db = 20 * np.log10(af / af.max())
    peaks = [af_db[i] for i in range(1, len(psi) - 1) if af_db[i - 1] < af_db[i] > af_db[i + 1]]
    assert peaks and all(level == pytest.approx(-sidelobe_db, abs=0.05) for level in peaks)
