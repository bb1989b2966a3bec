"""NEC-2 (PyNEC) reference models the tests share: one way to build each, so that every comparison
against NEC-2 uses the same geometry and feed."""
from __future__ import annotations

import PyNEC


def folded_dipole_z(length_m: float, radius_m: float, spacing_m: float, freq_hz: float, nseg: int = 41,
                    extended_kernel_below_radii: float = 0.0) -> complex:
    """NEC-2 folded dipole: both conductors (`nseg` segments each) and the two end wires (one segment
    each), fed by a voltage source at the centre segment of the first conductor. The extended thin-wire
    kernel is switched on when a segment is shorter than `extended_kernel_below_radii` radii (0: never)."""
    ctx = PyNEC.nec_context()
    geo = ctx.get_geometry()
    half = length_m / 2
    geo.wire(1, nseg, 0, 0, -half, 0, 0, half, radius_m, 1.0, 1.0)
    geo.wire(2, nseg, spacing_m, 0, -half, spacing_m, 0, half, radius_m, 1.0, 1.0)
    geo.wire(3, 1, 0, 0, half, spacing_m, 0, half, radius_m, 1.0, 1.0)
    geo.wire(4, 1, 0, 0, -half, spacing_m, 0, -half, radius_m, 1.0, 1.0)
    ctx.geometry_complete(0)
    if length_m / nseg < extended_kernel_below_radii * radius_m:
        ctx.set_extended_thin_wire_kernel(True)
    ctx.ex_card(0, 1, nseg // 2 + 1, 0, 1.0, 0, 0, 0, 0, 0)
    ctx.fr_card(0, 1, freq_hz / 1e6, 0)
    ctx.xq_card(0)
    return complex(ctx.get_input_parameters(0).get_impedance()[0])
