"""Property: every wire geometry in the register's ranges gives finite figures or raises Unmodellable.

Ranges (from the issue): element length 0.01-60 m, diameter 0.5 mm-0.2 m, frequency 0.1 MHz-20 GHz.
No external reference: this checks that the solver never fails in any other way (NaN, LinAlgError, ...).
"""
import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from registry.physics.impedance import solve_wire_antenna
from registry.physics.segmentation import Unmodellable

length_m = st.floats(0.01, 60.0)
diameter_m = st.floats(0.0005, 0.2)
freq_hz = st.floats(0.1e6, 20e9)


@settings(max_examples=40, deadline=None)
@given(kind=st.sampled_from(["dipole", "monopole", "folded_dipole"]), length=length_m, diameter=diameter_m,
       freq=freq_hz, spacing_factor=st.floats(1.5, 20.0))
def test_single_element_finite_or_unmodellable(kind, length, diameter, freq, spacing_factor):
    geometry = {"diameter_m": diameter}
    if kind == "monopole":
        geometry["height_m"] = length
    else:
        geometry["length_m"] = length
    if kind == "folded_dipole":
        geometry["spacing_m"] = spacing_factor * diameter
    try:
        sweep = solve_wire_antenna(kind, geometry, [freq])
    except Unmodellable as err:
        assert str(err)
        return
    assert np.all(np.isfinite(sweep.z_in_ohm))
    assert sweep.z_in_ohm[0].real > 0
    assert all(n >= 2 for n in sweep.segments)


@settings(max_examples=20, deadline=None)
@given(lengths=st.lists(length_m, min_size=2, max_size=4), diameter=diameter_m, freq=freq_hz,
       spacing=st.floats(0.01, 20.0))
def test_yagi_finite_or_unmodellable(lengths, diameter, freq, spacing):
    geometry = {"element_lengths_m": lengths, "element_positions_m": [i * spacing for i in range(len(lengths))],
                "diameter_m": diameter, "driven_index": 1}
    try:
        sweep = solve_wire_antenna("yagi", geometry, [freq])
    except Unmodellable as err:
        assert str(err)
        return
    assert np.all(np.isfinite(sweep.z_in_ohm))
