"""The antenna kinds the physics knows, the geometry parameters each needs, and canonical geometry keys.

A geometry is a flat mapping of parameter name -> number, string or tuple of numbers, with units in the
names (SI). `canonical_geometry` turns any mapping into a sorted tuple of pairs with lists made tuples and
numbers made floats (ints kept for counts), so that a caller can key a cache on (kind, geometry, freq).

Coordinate conventions (right-handed x, y, z; theta from +z, phi from +x toward +y):

* wire kinds (dipole, monopole, folded_dipole, yagi): elements parallel to z, centred on z = 0
  (a monopole stands on the ground plane z = 0); a Yagi's boom is the x axis, the beam toward +x.
* small_loop: loop in the xy plane (axis z).
* linear_array: elements along x, broadside beam toward +z (monopole elements: standing along z on the
  ground plane z = 0, broadside beam along the horizon toward +/- y); slotted_array: slots in the xy plane,
  beam toward +z; parabolic and patch: aperture in the xy plane, beam toward +z, E field along x.
"""
from __future__ import annotations

from collections.abc import Mapping

REQUIRED = "required"

#: kind -> {parameter: default or REQUIRED}
KIND_PARAMETERS: dict[str, dict[str, object]] = {
    "dipole": {"length_m": REQUIRED, "diameter_m": REQUIRED, "segments": 0},
    "monopole": {"height_m": REQUIRED, "diameter_m": REQUIRED, "segments": 0},
    "folded_dipole": {"length_m": REQUIRED, "diameter_m": REQUIRED, "spacing_m": REQUIRED, "segments": 0,
                      "diameter_other_m": 0.0},  # the second (unfed) conductor's diameter; 0: as diameter_m
    "small_loop": {"diameter_m": REQUIRED},
    "yagi": {
        "element_lengths_m": REQUIRED,
        "element_positions_m": REQUIRED,
        "diameter_m": REQUIRED,
        "driven_index": 1,
        "segments": 0,
    },
    "linear_array": {
        "n_elements": REQUIRED,
        "spacing_m": REQUIRED,
        "taper": "uniform",
        "sidelobe_db": 30.0,
        "amplitudes": (),
        "steer_deg": 0.0,
        "element": "isotropic",
    },
    "slotted_array": {
        "nx": REQUIRED,
        "ny": REQUIRED,
        "spacing_x_m": REQUIRED,
        "spacing_y_m": REQUIRED,
        "taper": "uniform",
        "sidelobe_db": 30.0,
    },
    "parabolic": {"diameter_m": REQUIRED, "edge_taper_db": 10.0, "taper_exponent": 1},
    "patch": {"length_m": REQUIRED, "width_m": REQUIRED, "substrate_height_m": REQUIRED, "eps_r": REQUIRED},
}

#: kinds solved by the thin-wire method of moments (they have an input impedance)
WIRE_KINDS = ("dipole", "monopole", "folded_dipole", "yagi")
#: kinds meant to be omnidirectional in the horizontal (xy) plane: azimuth ripple is reported
OMNI_KINDS = ("dipole", "monopole", "folded_dipole", "small_loop")

_INT_KEYS = {"segments", "driven_index", "n_elements", "nx", "ny", "taper_exponent"}
_STR_KEYS = {"taper", "element"}


def _canonical_value(key, value):
    if key in _STR_KEYS:
        if not isinstance(value, str):
            raise ValueError(f"geometry '{key}' must be a string, got {value!r}")
        return value
    if key in _INT_KEYS:
        if isinstance(value, bool) or int(value) != value:
            raise ValueError(f"geometry '{key}' must be a whole number, got {value!r}")
        return int(value)
    if isinstance(value, (list, tuple)):
        return tuple(float(v) for v in value)
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise ValueError(f"geometry '{key}' must be a number, got {value!r}")
    return float(value)


def canonical_geometry(kind: str, geometry) -> tuple[tuple[str, object], ...]:
    """Validated, defaulted, sorted (name, value) pairs for `kind`; raises ValueError naming the problem.

    `geometry` is a Mapping or an iterable of (name, value) pairs. Unknown names are errors.
    """
    if kind not in KIND_PARAMETERS:
        raise ValueError(f"unknown antenna kind '{kind}'; known: {', '.join(sorted(KIND_PARAMETERS))}")
    given = dict(geometry.items() if isinstance(geometry, Mapping) else geometry)
    spec = KIND_PARAMETERS[kind]
    unknown = sorted(set(given) - set(spec))
    if unknown:
        raise ValueError(f"{kind}: unknown geometry parameter(s) {', '.join(unknown)}")
    out = {}
    for key, default in spec.items():
        if key in given:
            out[key] = _canonical_value(key, given[key])
        elif default is REQUIRED:
            raise ValueError(f"{kind}: missing geometry parameter '{key}'")
        else:
            out[key] = default
    return tuple(sorted(out.items()))
