"""Choice of coupling model for a pair on one airframe (pair_coupling).

Each case checks the model chosen and that the figure is the chosen model's own figure, computed
independently here (Friis: H. T. Friis, Proc. IRE 34, 1946, as in coupling.py; moment method and
creeping wave: near_coupling and fuselage_coupling, themselves checked against NEC-2 in
test_physics_airframe_near_coupling.py and test_physics_airframe_fuselage_coupling.py). Geometry is
our own: a 30 m long cylindrical fuselage of 1.4 m radius with a flat fin, coordinates in metres.
"""
import math

import pytest

from registry.physics.airframe_shape import fuselage, slab
from registry.physics.coupling import coupling_db
from registry.physics.fuselage_coupling import around_cylinder
from registry.physics.near_coupling import monopole_pair
from registry.physics.pair_coupling import PairAntenna, pair_coupling
from registry.physics.shadowing import segment_clear
from registry.physics.wave import wavelength_m

FIN = slab("fin", [(24.0, 0.0, 1.4), (28.0, 0.0, 1.4), (29.5, 0.0, 6.0), (27.0, 0.0, 6.0)], 0.4, 1.0)
BODY = fuselage([0.0, 30.0], [0.0, 0.0], [1.4, 1.4], [1.4, 1.4], 1.0, plates=FIN)
F_VHF = 125e6
H = 0.24 * wavelength_m(F_VHF)


def _blade(point, gain=None):
    return PairAntenna(point, size_m=H, monopole_height_m=H, wire_radius_m=0.005, gain_dbi=gain)


def test_top_and_bottom_monopoles_use_the_creeping_wave():
    res = pair_coupling(BODY, _blade((10.0, 0.0, 1.4)), _blade((12.0, 0.0, -1.4)), 1.0, F_VHF)
    assert res.model == "creeping wave round the fuselage"
    ref = around_cylinder(1.4, math.pi, 2.0, F_VHF, H, H, 0.005).coupling_db
    assert res.coupling_db == pytest.approx(ref, abs=1e-9)


def test_monopoles_in_line_on_the_crown_use_the_moment_method():
    res = pair_coupling(BODY, _blade((10.0, 0.0, 1.4)), _blade((11.5, 0.0, 1.4)), 1.0, F_VHF)
    assert res.model == "moment method over the skin"
    ref = monopole_pair(H, H, 1.5, F_VHF, 0.005).coupling_db
    assert res.coupling_db == pytest.approx(ref, abs=0.05)  # the long way round adds almost nothing


def test_clear_far_pair_uses_friis():
    fin_tip = PairAntenna((28.0, 0.0, 6.2), size_m=0.3, gain_dbi=-1.0)
    crown = PairAntenna((3.0, 0.0, 1.4), size_m=0.1, gain_dbi=2.0)
    res = pair_coupling(BODY, fin_tip, crown, 1.0, 1090e6)
    assert res.model == "free-space Friis"
    dist = math.dist((28.0, 0.0, 6.2), (3.0, 0.0, 1.4))
    assert res.coupling_db == pytest.approx(coupling_db(-1.0, 2.0, 1090e6, dist), abs=1e-9)


def test_blocked_pair_off_the_fuselage_has_no_model():
    fin_tip = PairAntenna((28.0, 0.0, 6.2), size_m=0.3, gain_dbi=0.0)
    belly = PairAntenna((10.0, 0.0, -1.4), size_m=0.1, gain_dbi=0.0)
    res = pair_coupling(BODY, fin_tip, belly, 1.0, 1090e6)
    assert res.coupling_db is None and res.model == "none"


def test_near_pair_that_is_not_two_monopoles_has_no_model():
    a = PairAntenna((28.0, 0.0, 6.2), size_m=0.5, gain_dbi=0.0)
    b = PairAntenna((28.0, 0.0, 6.6), size_m=0.5, gain_dbi=0.0)
    res = pair_coupling(BODY, a, b, 1.0, 125e6)
    assert res.coupling_db is None and "near field" in res.reason


def test_far_pair_without_gains_has_no_model():
    a = PairAntenna((28.0, 0.0, 6.2), size_m=0.1)
    b = PairAntenna((3.0, 0.0, 1.4), size_m=0.1)
    assert pair_coupling(BODY, a, b, 1.0, 1090e6).coupling_db is None


def test_segment_clear_sees_the_fuselage_and_the_fin():
    assert not segment_clear(BODY, (10.0, 0.0, 1.4), (10.0, 0.0, -1.4), 1.0)  # through the body
    assert not segment_clear(BODY, (21.0, -3.0, 3.0), (31.0, 3.0, 3.0), 1.0)  # through the fin
    assert segment_clear(BODY, (20.0, -3.0, 7.0), (30.0, 3.0, 7.0), 1.0)  # over the fin tip
