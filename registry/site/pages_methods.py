"""The methods page: every figure's formula and source as used across the fleet, the checks, the policy."""
from __future__ import annotations

from collections import Counter, defaultdict
from typing import Any

from registry.compute.cosite import METHODS as COSITE_METHODS
from registry.core.results import figure_uses
from registry.site.context import SiteData
from registry.site.limits import standing_counts, threshold_rows
from registry.site.labels import FIGURE_GROUPS
from registry.site.pages import Output, page
from registry.site.paths import anchor



def figure_tally(data: SiteData) -> Counter:
    """(key, label, unit, formula, source, where) -> uses: one pass, no per-figure calls."""
    tally: Counter = Counter()
    results = data.results
    for aircraft in data.fleet.aircraft.values():
        summary = results.summaries.get(aircraft.id)
        if summary is not None:
            tally.update(summary.figure_uses)
            continue
        tally.update(figure_uses(
            (result for (aircraft_id, _), result in results.installations.items() if aircraft_id == aircraft.id),
            (pair for pair in results.pairs if pair.aircraft == aircraft.id)))
    tally.update((f.key, f.label, f.unit, f.formula, f.source, "pattern")
                 for pattern in results.patterns.values() for f in pattern.metrics)
    tally.update((f.key, f.label, f.unit, f.formula, f.source, "cable")
                 for cable in results.cables.values() for f in cable.figures)
    return tally


def figure_catalogue(tally: Counter) -> list[dict[str, Any]]:
    """Each figure key with its labels and its (formula, source) variants, most used first, in groups."""
    catalogue: dict[str, dict[str, Any]] = {}
    for (key, label, unit, formula, source, where), count in sorted(tally.items()):
        entry = catalogue.setdefault(key, {"key": key, "labels": set(), "unit": unit, "variants": Counter(),
                                           "where": set()})
        entry["labels"].add(label)
        entry["variants"][(formula, source)] += count
        entry["where"].add(where)
    grouped: dict[str, list[dict[str, Any]]] = defaultdict(list)
    for key in sorted(catalogue):
        entry = catalogue[key]
        variants = sorted(entry["variants"].items(), key=lambda item: (-item[1], item[0]))
        grouped[key.split(".")[0]].append({
            "key": key, "label": " / ".join(sorted(entry["labels"])), "unit": entry["unit"],
            "variants": [{"formula": f, "source": s, "count": c} for (f, s), c in variants],
        })

    def group_order(item: tuple[str, list]) -> tuple[int, str]:
        return list(FIGURE_GROUPS).index(item[0]) if item[0] in FIGURE_GROUPS else 99, item[0]

    return [{"title": FIGURE_GROUPS.get(prefix, prefix.capitalize()), "id": anchor(prefix), "items": items}
            for prefix, items in sorted(grouped.items(), key=group_order)]


def check_rows(data: SiteData) -> list[dict[str, Any]]:
    """Each check rule with how many discrepancies it raised and by which methods."""
    checks: dict[str, dict[str, Any]] = {}
    for item in data.discrepancies:
        entry = checks.setdefault(item.rule, {"rule": item.rule, "methods": Counter(), "count": 0})
        entry["methods"][item.method] += 1
        entry["count"] += 1
    return [{"rule": rule, "count": entry["count"], "methods": sorted(entry["methods"])}
            for rule, entry in sorted(checks.items())]


def methods_page(data: SiteData) -> Output:
    thresholds = threshold_rows(data.fleet, data.src_text)
    return page("methods.html", "methods.html", "methods", "Methods and cautions", [],
                groups=figure_catalogue(figure_tally(data)), checks=check_rows(data), thresholds=thresholds,
                standing_counts=standing_counts(thresholds),
                cosite=[{"step": step, "formula": formula, "source": source, "standing": standing}
                        for step, formula, source, standing in COSITE_METHODS])
