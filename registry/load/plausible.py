"""Antenna sizes a model can compute and an aircraft can carry, against the wavelength of its bands.

A schema bounds each number alone; these bound them together with the antenna's own frequencies, so a
slip (an element of 9.75 m for 0.975 at VHF, an array ten times too wide) is a located problem rather
than a crash or a computation that takes the machine's memory. Common practice, no source, for both
limits; each says why it sits where it does.
"""
from __future__ import annotations

import math

from registry.core.errors import Problem
from registry.core.model import AntennaModel
from registry.core.units import C_M_PER_S
from registry.load.integrity import problem

MAX_ELEMENT_WAVELENGTHS = 2.0
"""The longest wire element, in wavelengths at the top of its antenna's bands. Quarter- and half-wave
elements are 0.25 and 0.5; beyond 2 the wire model's 20 segments would each exceed a tenth of a wavelength
(`physics.impedance.MAX_SEGMENT_WAVELENGTHS`), and such a length is a slip (9.75 for 0.975)."""


def element_lengths(model: AntennaModel) -> list[Problem]:
    """Wire elements no longer than `MAX_ELEMENT_WAVELENGTHS` at the highest frequency of their bands."""
    top_mhz = max(high for _, high in model.bands_mhz)
    longest_m = MAX_ELEMENT_WAVELENGTHS * C_M_PER_S / (top_mhz * 1e6)
    geometry = model.geometry
    lengths = [("geometry.element_length_m", geometry.get("element_length_m"))]
    lengths += [(f"geometry.elements[{n}].length_m", element.get("length_m"))
                for n, element in enumerate(geometry.get("elements", ()))]
    return [problem(model, field, f"{length:g} m, {length / longest_m * MAX_ELEMENT_WAVELENGTHS:.3g} wavelengths "
                                  f"at {top_mhz:g} MHz (the top of its bands)",
                    f"an element of at most {MAX_ELEMENT_WAVELENGTHS:g} wavelengths there, {longest_m:.3g} metres")
            for field, length in lengths if isinstance(length, (int, float)) and length > longest_m]


MAX_SIZE_WAVELENGTHS = 200.0
"""The largest antenna, in wavelengths across at the top of its bands. Airborne apertures (a weather-radar
array, a satellite dish) are tens of wavelengths across; the pattern's sampling grows with the square of
the size, and at thousands of wavelengths would take the machine's memory. Common practice, no source."""


def size_m(geometry) -> float:
    """The antenna's largest dimension from its geometry: its largest length, or the extent of its array."""
    sizes = [value for key, value in geometry.items() if key.endswith("_m") and isinstance(value, (int, float))]
    if "element_count" in geometry and "spacing_m" in geometry:
        sizes.append((geometry["element_count"] - 1) * geometry["spacing_m"])
    if "rows" in geometry and "columns" in geometry:
        sizes.append(math.hypot((geometry["columns"] - 1) * geometry.get("spacing_x_m", 0.0),
                                (geometry["rows"] - 1) * geometry.get("spacing_y_m", 0.0)))
    elements = geometry.get("elements", ())
    if elements:
        positions = [element["position_m"] for element in elements]
        sizes += [max(positions) - min(positions)] + [element["length_m"] for element in elements]
    return max(sizes, default=0.0)


def antenna_size(model: AntennaModel) -> list[Problem]:
    """An antenna no more than `MAX_SIZE_WAVELENGTHS` across at the highest frequency of its bands."""
    top_mhz = max(high for _, high in model.bands_mhz)
    across = size_m(model.geometry) * top_mhz * 1e6 / C_M_PER_S
    if across <= MAX_SIZE_WAVELENGTHS:
        return []
    return [problem(model, "geometry", f"an antenna {size_m(model.geometry):g} m across, {across:.4g} wavelengths "
                                       f"at {top_mhz:g} MHz (the top of its bands)",
                    f"at most {MAX_SIZE_WAVELENGTHS:g} wavelengths across there "
                    f"({MAX_SIZE_WAVELENGTHS * C_M_PER_S / (top_mhz * 1e6):.3g} metres)")]


def check_antennas(models: list[AntennaModel]) -> list[Problem]:
    """Every model's wire elements and overall size against the wavelength at the top of its bands."""
    return [found for model in models for found in element_lengths(model) + antenna_size(model)]
