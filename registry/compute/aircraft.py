"""Compute stage: every figure of one aircraft, from the model through the physics.

`compute_aircraft` takes a loaded aircraft and returns its figures as plain `Figure` records (value,
unit, formula, inputs, source, registry line), with the radiation patterns its installations use. A
result that depends only on an antenna model's content and a frequency (pattern, modelled impedance) is
computed once per distinct content and reused by every installation that shares it (`antenna.py`).
Which aircraft to compute, and what to keep, is the pipeline's business (`registry/evaluate.py`).
"""
from __future__ import annotations

from datetime import date

from registry.compute import antenna
from registry.compute.cosite import cosite_result
from registry.compute.airframe import skin_figures
from registry.compute.coverage import coverage_figures
from registry.compute.element import band_figures, ground_plane_figures, length_figures, modelled_vswr
from registry.compute.feeder import cable_result, feeder_figures, measured_figures
from registry.compute.pair import pair_results
from registry.core.model import Aircraft, Fleet, Installation
from registry.core.results import AircraftPart, CableResult, Figure, InstallationResult, PatternResult


def cable_results(fleet: Fleet) -> dict[str, CableResult]:
    """Each catalogue cable's attenuation table and fit, by cable id."""
    return {cable.id: cable_result(cable) for cable in fleet.cables.values()}


def compute_aircraft(fleet: Fleet, aircraft: Aircraft, as_of: date) -> tuple[AircraftPart, dict[str, PatternResult]]:
    """Every figure of one aircraft's installations, and the isolation of its pairs; with the patterns
    its installations use, by content key. `as_of` is the date measurement ages are counted to."""
    part = AircraftPart({}, [])
    patterns: dict[str, PatternResult] = {}
    for installation in aircraft.installations.values():
        result, pattern = installation_result(fleet, aircraft, installation, as_of)
        patterns.setdefault(pattern.key, pattern)
        part.installations[(aircraft.id, installation.position)] = result
    part.pairs = pair_results(fleet, aircraft)
    part.cosite = cosite_result(fleet, aircraft, part.installations, part.pairs)
    return part, patterns


def shared_figures(fleet: Fleet, aircraft_ids: list[str]) -> dict[str, PatternResult]:
    """Work out, in this process, what installations share by content: each (antenna model, service,
    cable) combination's modelled impedance and each pattern, kept by the per-process caches of
    `antenna.py` (so that processes forked afterwards inherit them instead of each computing them again).
    The patterns, by content key."""
    patterns: dict[str, PatternResult] = {}
    seen = set()
    for aircraft_id in aircraft_ids:
        for installation in fleet.aircraft[aircraft_id].installations.values():
            combination = (installation.antenna, installation.service, installation.feeder.cable,
                           bool(installation.coupler))
            if combination in seen:
                continue
            seen.add(combination)
            model, service = fleet.antennas[installation.antenna], fleet.services[installation.service]
            length_figures(installation, fleet.antennas[installation.antenna], fleet.services[installation.service])
            if not installation.coupler:
                modelled_vswr(model, service, fleet.cables[installation.feeder.cable], fleet.policy)
            found = antenna.pattern(model, service.design_freq_mhz)
            patterns.setdefault(found.key, found)
    return patterns


def installation_result(fleet: Fleet, aircraft: Aircraft, installation: Installation,
                        as_of: date) -> tuple[InstallationResult, PatternResult]:
    """Every figure of one installation, and its antenna's pattern at the service's design frequency."""
    service = fleet.services[installation.service]
    model = fleet.antennas[installation.antenna]
    cable = fleet.cables[installation.feeder.cable]
    airframe = fleet.airframe_of(aircraft)
    material = airframe.material_at(installation.location.sta, installation.surface)
    figures: list[Figure] = []
    figures += length_figures(installation, model, service)
    figures += band_figures(installation, model, service)
    modelled, modelled_curve = ([], None) if installation.coupler else modelled_vswr(
        model, service, cable, fleet.policy)
    figures += modelled
    measured, measured_curve = measured_figures(installation, service, cable, fleet.policy, as_of, fleet.sweeps)
    figures += measured
    figures += feeder_figures(installation, model, service, cable, fleet.policy, figures)
    figures += ground_plane_figures(installation, model, service, material, fleet.policy)
    figures += skin_figures(airframe, installation)
    figures += coverage_figures(airframe, installation, service)
    pattern = antenna.pattern(model, service.design_freq_mhz)
    result = InstallationResult(
        aircraft=aircraft.id,
        position=installation.position,
        figures=tuple(figures),
        pattern_key=pattern.key,
        vswr_modelled=modelled_curve,
        vswr_measured=measured_curve,
        service_bands_mhz=service.bands_mhz,
        vswr_limit=fleet.policy.vswr_limit_for(service.id),
    )
    return result, pattern
