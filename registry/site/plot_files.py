"""The plots drawn for the whole site before its pages: each pattern for every model that shows it, and
each cable's attenuation fit. Drawn (or read back) through the plot store."""
from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import replace

from registry.core.results import FleetResults
from registry.incremental import array_key
from registry.site import plots
from registry.site.paths import pattern_plot_path


def pattern_plots(results: FleetResults, model_patterns: Mapping[str, set[str]], store: plots.PlotStore,
                  workers: int = 1) -> dict[str, plots.Drawn]:
    """Every pattern's plot for each model that uses it, by path; those not drawn before are drawn in
    `workers` processes."""
    wanted = sorted((key, model_id) for model_id, keys in model_patterns.items() for key in keys
                    if key in results.patterns)
    drawings = store.get_all("pattern", [
        (array_key(key, model_id),
         functools.partial(plots.pattern_plot, replace(results.patterns[key], antenna=model_id)))
        for key, model_id in wanted], workers)
    return {pattern_plot_path(key, model_id, results.patterns[key].antenna): drawn
            for (key, model_id), drawn in zip(wanted, drawings)}


def cable_plots(results: FleetResults, cable_ids: list[str], store: plots.PlotStore) -> dict[str, plots.Drawn]:
    """The attenuation plot of each cable with a computed fit, by cable id."""
    drawn = {}
    for cable_id in cable_ids:
        result = results.cables.get(cable_id)
        if result is not None:
            drawn[cable_id] = store.get("cable", array_key(
                cable_id, result.table.x, result.table.y, result.fitted.x, result.fitted.y),
                functools.partial(plots.attenuation_plot, result))
    return drawn
