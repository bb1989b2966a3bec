"""Compute stage: every figure of every installation, from the model through the physics.

Reads the model, calls the figure builders (element, feeder and measurements, pairs), and returns
`FleetResults` of plain `Figure` records (value, unit, formula, inputs, source, registry line). A result
that depends only on an antenna model's content and a frequency (pattern, modelled impedance) is
computed once per distinct content and reused by every installation that shares it (`cache.py`).
"""
from __future__ import annotations

from dataclasses import replace
from datetime import date

from registry import cache
from registry.figures_element import band_figures, ground_plane_figures, length_figures, modelled_vswr
from registry.figures_feeder import cable_result, feeder_figures, measured_figures
from registry.figures_pair import pair_results
from registry.model import Fleet
from registry.results import Figure, FleetResults, InstallationResult


def compute_fleet(fleet: Fleet, as_of: date) -> FleetResults:
    """All figures of the fleet. `as_of` is the date measurement ages are counted to."""
    results = FleetResults()
    for cable in fleet.cables.values():
        results.cables[cable.id] = cable_result(cable)
    for aircraft, installation in fleet.installations():
        service = fleet.services[installation.service]
        model = fleet.antennas[installation.antenna]
        cable = fleet.cables[installation.feeder.cable]
        material = fleet.airframe_of(aircraft).material_at(installation.location.sta, installation.surface)
        figures: list[Figure] = []
        figures += length_figures(installation, model, service)
        figures += band_figures(installation, model, service)
        modelled, modelled_curve = ([], None) if installation.coupler else modelled_vswr(
            model, service, cable, fleet.policy)
        figures += modelled
        measured, measured_curve = measured_figures(installation, service, cable, fleet.policy, as_of)
        figures += measured
        figures += feeder_figures(installation, model, service, cable, fleet.policy, figures)
        figures += ground_plane_figures(installation, model, service, material, fleet.policy)
        pattern = cache.pattern(model, service.design_freq_mhz)
        if pattern.key not in results.patterns:  # shared by content: named after the first model using it
            results.patterns[pattern.key] = replace(pattern, antenna=model.id)
        results.installations[(aircraft.id, installation.position)] = InstallationResult(
            aircraft=aircraft.id,
            position=installation.position,
            figures=tuple(figures),
            pattern_key=pattern.key,
            vswr_modelled=modelled_curve,
            vswr_measured=measured_curve,
            service_bands_mhz=service.bands_mhz,
            vswr_limit=fleet.policy.vswr_limit_for(service.id),
        )
    for aircraft in fleet.aircraft.values():
        results.pairs += pair_results(fleet, aircraft)
    return results
