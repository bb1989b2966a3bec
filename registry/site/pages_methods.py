"""The methods page: every figure's formula and source as used across the fleet, the checks, the policy."""
from __future__ import annotations

from registry.compute.cosite import METHODS as COSITE_METHODS
from registry.core.model import POLICY_KEYS

from collections import Counter, defaultdict
from typing import Any

from registry.core.results import figure_uses
from registry.site.context import SiteData
from registry.site.format import NONE_TEXT, fmt
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


def policy_rows(data: SiteData) -> list[dict[str, str]]:
    """The policy's limits as the register sets them, with their sources and registry lines."""
    policy = data.fleet.policy
    rows = []
    for key in POLICY_KEYS:
        value = getattr(policy, key)
        if key == "min_isolation_db":
            text = "; ".join(f"{' + '.join(rule.services)}: {fmt(rule.isolation_db)} dB"
                             for rule in value) or NONE_TEXT
        elif key == "cosite_services":
            text = "; ".join(f"{service}.{name} = {fmt(figure[0]) if isinstance(figure[0], (int, float)) else figure[0]}"
                             f" ({figure[1]})" for service, figures in value.items()
                             for name, figure in figures.items()) or NONE_TEXT
        elif hasattr(value, "items"):
            text = ", ".join(f"{k}: {fmt(v)}" for k, v in value.items()) or NONE_TEXT
        else:
            text = fmt(value)
        where = policy.where(key)
        rows.append({"key": key, "value": text, "source": str(policy.sources.get(key, "")),
                     "src": data.src_text(f"{where.path}:{where.line}")})
    return rows


def methods_page(data: SiteData) -> Output:
    return page("methods.html", "methods.html", "methods", "Methods and cautions", [],
                groups=figure_catalogue(figure_tally(data)), checks=check_rows(data), policy=policy_rows(data),
                cosite=[{"step": step, "formula": formula, "source": source, "standing": standing}
                        for step, formula, source, standing in COSITE_METHODS])
