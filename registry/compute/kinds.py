"""The antenna-kind table: everything the tool knows about a registry antenna kind, in one place.

For each kind the registry accepts (`registry/schemas/antennas.schema.json`): the physics kind that models
it and how the registry's geometry maps onto that kind's parameters; its largest dimension (for the
near-field test between two antennas); the fraction of a wavelength its single resonant element is cut
to, if it has one; whether it is directional; whether a horizontally polarised one lies athwartships; whether it needs a
ground plane.
The pattern method and its citation are the physics kind's (`PATTERN_METHODS`). Adding a kind means a
row here, a physics model (`registry/physics/`), and a schema branch; DEVELOPERS.md has the steps.
"""
from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from typing import Any

Geometry = Mapping[str, Any]


@dataclass(frozen=True)
class AntennaKind:
    """One registry antenna kind (see the module docstring)."""

    physics: str
    parameters: Callable[[Geometry], dict[str, Any]]
    size_m: Callable[[Geometry], float]
    element_fraction: float | None = None
    directional: bool = False
    lies_flat_when_horizontal: bool = False
    needs_ground_plane: bool = False


def _element_length(g: Geometry) -> float:
    return float(g["element_length_m"])


def _yagi(g: Geometry) -> dict[str, Any]:
    elements = sorted(g["elements"], key=lambda element: element["position_m"])
    driven = [i for i, element in enumerate(elements) if element["role"] == "driven"]
    return {"element_lengths_m": [element["length_m"] for element in elements],
            "element_positions_m": [element["position_m"] for element in elements],
            "diameter_m": g["element_diameter_m"], "driven_index": driven[0]}


def _yagi_size(g: Geometry) -> float:
    positions = [element["position_m"] for element in g["elements"]]
    return max(max(positions) - min(positions), max(element["length_m"] for element in g["elements"]))


ARRAY_ELEMENTS = {"isotropic": "isotropic", "dipole": "half_wave_dipole", "monopole": "monopole"}
"""The registry's array element → the physics element: a monopole element stands on the skin (its ground
plane) and is modelled as a quarter-wave monopole over it, not as a dipole in free space."""


def _linear_array(g: Geometry) -> dict[str, Any]:
    params = {"n_elements": g["element_count"], "spacing_m": g["spacing_m"], "taper": g.get("taper", "uniform"),
              "element": ARRAY_ELEMENTS[g.get("element", "isotropic")]}
    if "sidelobe_db" in g:
        params["sidelobe_db"] = g["sidelobe_db"]
    if "amplitudes" in g:
        params["amplitudes"] = list(g["amplitudes"])
    return params


def _slotted_array(g: Geometry) -> dict[str, Any]:
    params = {"nx": g["columns"], "ny": g["rows"], "spacing_x_m": g["spacing_x_m"],
              "spacing_y_m": g["spacing_y_m"], "taper": g.get("taper", "uniform")}
    if "sidelobe_db" in g:
        params["sidelobe_db"] = g["sidelobe_db"]
    return params


KINDS: dict[str, AntennaKind] = {
    "quarter_wave_monopole": AntennaKind(
        "monopole", lambda g: {"height_m": g["element_length_m"], "diameter_m": g["element_diameter_m"]},
        _element_length, element_fraction=0.25, needs_ground_plane=True),
    "half_wave_dipole": AntennaKind(
        "dipole", lambda g: {"length_m": g["element_length_m"], "diameter_m": g["element_diameter_m"]},
        _element_length, element_fraction=0.5, lies_flat_when_horizontal=True),
    "folded_dipole": AntennaKind(
        "folded_dipole", lambda g: {"length_m": g["element_length_m"], "diameter_m": g["element_diameter_m"],
                                    "spacing_m": g["spacing_m"]},
        _element_length, element_fraction=0.5, lies_flat_when_horizontal=True),
    "small_loop": AntennaKind(
        "small_loop", lambda g: {"diameter_m": g["loop_diameter_m"]}, lambda g: float(g["loop_diameter_m"])),
    "yagi_uda": AntennaKind("yagi", _yagi, _yagi_size, directional=True),
    "linear_array": AntennaKind(
        "linear_array", _linear_array, lambda g: float(g["element_count"] * g["spacing_m"]), directional=True),
    "slotted_planar_array": AntennaKind(
        "slotted_array", _slotted_array,
        lambda g: math.hypot(g["columns"] * g["spacing_x_m"], g["rows"] * g["spacing_y_m"]), directional=True),
    "parabolic_reflector": AntennaKind(
        "parabolic", lambda g: {"diameter_m": g["diameter_m"], "edge_taper_db": g["edge_taper_db"]},
        lambda g: float(g["diameter_m"]), directional=True),
    "patch": AntennaKind(
        "patch", lambda g: {"length_m": g["length_m"], "width_m": g["width_m"],
                            "substrate_height_m": g["substrate_height_m"], "eps_r": g["substrate_permittivity"]},
        lambda g: math.hypot(g["length_m"], g["width_m"])),
}
"""Every registry antenna kind, by the name the registry uses."""

PATTERN_METHODS = {
    "dipole": "finite-dipole formula (Balanis, Antenna Theory, 4th ed., Eq. 4-62)",
    "monopole": "finite-dipole formula over a perfect ground plane by image theory (Balanis 4th ed., §4.7)",
    "folded_dipole": "antenna mode of a folded dipole: the dipole pattern (Balanis 4th ed., §9.5)",
    "small_loop": "electrically small loop, sin θ pattern (Balanis 4th ed., §5.2)",
    "yagi": "thin-wire method-of-moments currents, mutual coupling included (Richmond's PWS Galerkin)",
    "linear_array": "array factor times element pattern (Balanis 4th ed., ch. 6); monopole elements over the "
                    "skin by image theory (§4.7)",
    "slotted_array": "2-D array factor times the half-wave slot pattern (Balanis 4th ed., ch. 6 and 12)",
    "parabolic": "circular aperture, parabolic-on-pedestal illumination (Balanis 4th ed., §12.7, ch. 15)",
    "patch": "cavity model, two radiating slots (Balanis 4th ed., §14.2)",
}
"""How each physics kind's pattern is computed, with its source."""


def kind_of(name: str) -> AntennaKind:
    """The table row of a registry antenna kind; ValueError for a kind the tool does not know."""
    try:
        return KINDS[name]
    except KeyError:
        raise ValueError(f"no physics for antenna kind '{name}'") from None
