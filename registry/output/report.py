"""The `check` command's report: terminal text grouped by aircraft, JSON and CSV."""
from __future__ import annotations

import re
from collections import Counter
from collections.abc import Iterable, Mapping
from pathlib import Path

from registry.core.effectivity import position_services
from registry.core.model import Fleet
from registry.core.results import Discrepancy, Figure, FleetResults
from registry.core.rulebook import ALL_STATES, FAULT_REMAINS_STATES, SEVERITIES
from registry.output import findings_export
from registry.output.numbers import number_text
from registry.output.safe_text import json_for_terminal, terminal_line


def matches(craft, services, aircraft: list[str] | None, service: list[str] | None) -> bool:
    """An aircraft (by id or registration) and the services involved pass the aircraft and service filters."""
    return ((not aircraft or craft.id in aircraft or craft.registration in aircraft)
            and (not service or bool(set(services) & set(service))))


def select(found: list[Discrepancy], fleet: Fleet, aircraft: list[str] | None = None,
           service: list[str] | None = None, severity: list[str] | None = None) -> list[Discrepancy]:
    """Discrepancies matching every filter given (aircraft id or registration; service id; severity)."""
    out = []
    for item in found:
        craft = fleet.aircraft[item.aircraft]
        services = position_services(craft, fleet.modifications, item.position.split("+"))
        if matches(craft, services, aircraft, service) and (not severity or item.severity in severity):
            out.append(item)
    return out


def selected_aircraft(fleet: Fleet, filters: Mapping[str, list[str]], found: Iterable[Discrepancy] = ()) -> list:
    """The aircraft a filtered report lists: those named, or those with an installation of a named service,
    and those with a selected finding (an effectivity finding's service may be of a position not fitted)."""
    with_findings = {item.aircraft for item in found}
    return [craft for craft in fleet.aircraft.values() if craft.id in with_findings
            or matches(craft, [i.service for i in craft.installations.values()] or [""],
                       filters.get("aircraft"), filters.get("service"))]


def filters_text(filters: Mapping[str, list[str]]) -> str:
    """"aircraft QX-TCE; severity unserviceable", or "" without filters."""
    return "; ".join(f"{name} {', '.join(values)}" for name, values in filters.items() if values)


def stale_selected(stale: list, aircraft: list) -> list:
    ids = {craft.id for craft in aircraft}
    return [review for review in stale if review.aircraft_id in ids]


def as_json(fleet: Fleet, found: list[Discrepancy], stale: list, as_of: str,
            filters: Mapping[str, list[str]] | None = None) -> str:
    """The report as JSON (`findings_export`); control characters JSON leaves as they are come out as \\u escapes."""
    filters = filters or {}
    kept = stale_selected(stale, selected_aircraft(fleet, filters))
    return json_for_terminal(findings_export.as_json(
        findings_export.rows(found, fleet), [findings_export.stale_entry(r, Path(fleet.data_dir)) for r in kept],
        as_of, filters))


def as_csv(fleet: Fleet, found: list[Discrepancy]) -> str:
    """The report as CSV (`findings_export`: the audit page's download has the same bytes)."""
    return findings_export.as_csv(findings_export.rows(found, fleet))


def counts_line(found: list[Discrepancy]) -> str:
    by_severity = Counter(item.severity for item in found)
    by_state = Counter(item.review for item in found)
    severities = ", ".join(f"{by_severity[name]} {name}" for name in SEVERITIES)
    states = ", ".join(f"{by_state[name]} {name}" for name in ALL_STATES if by_state[name])
    noun = "discrepancy" if len(found) == 1 else "discrepancies"
    still_open = sum(1 for item in found if item.is_open)
    return f"{len(found)} {noun} ({severities}), {still_open} open; review: {states or 'none'}"


def value_seen(item: Discrepancy) -> str:
    """What to write as a review's value_seen, when the value shown is rounded from it."""
    if not isinstance(item.value, float):
        return ""
    shown = re.match(r"-?\d+(\.\d+)?", number_text(item.value, item.unit, item.rule))
    if shown and float(shown.group()) == item.value:
        return ""
    return f" (value_seen: {item.value!r})"


def review_text(item: Discrepancy) -> str:
    """The review part of a finding's line: state, who, reference, date, and whether it still counts as open."""
    text = item.review
    if item.reviewer:
        text += f" by {item.reviewer}" + (f", {item.review_reference}" if item.review_reference else "")
        text += f", {item.review_date}" if item.review_date else ""
    if item.review in FAULT_REMAINS_STATES:
        text += ": fault still fitted, counts as open" if item.is_open else ": counts as closed (policy)"
    return text


def as_text(fleet: Fleet, found: list[Discrepancy], stale: list, as_of: str,
            filters: Mapping[str, list[str]] | None = None, total: int | None = None) -> str:
    """Grouped by aircraft (only the aircraft selected), each with its counts; then stale reviews; then the
    totals. A filtered report says what was filtered first. Every line is cleared of control characters and
    escape sequences (`safe_text.terminal_line`)."""
    filters = filters or {}
    shown = selected_aircraft(fleet, filters, found)
    lines = [f"{fleet.operator}: {len(fleet.aircraft)} aircraft, "
             f"{sum(len(a.installations) for a in fleet.aircraft.values())} installations, as of {as_of}"]
    if filters_text(filters):
        lines.append(f"filtered: {filters_text(filters)}: {len(found)} of {total if total is not None else len(found)} "
                     f"findings, {len(shown)} of {len(fleet.aircraft)} aircraft listed; the exit code counts "
                     f"only these findings")
    lines.append("")
    for craft in shown:
        mine = [item for item in found if item.aircraft == craft.id]
        lines.append(f"{craft.registration} ({craft.id}, {craft.airframe}): {counts_line(mine)}")
        for item in mine:
            lines.append(f"  [{item.severity}] {item.id}  ({review_text(item)})")
            lines.append(f"      {item.message}")
            lines.append(f"      value {number_text(item.value, item.unit, item.rule)}, "
                         f"limit {number_text(item.limit, item.unit, item.rule)}{value_seen(item)}; {item.src}")
        lines.append("")
    kept = stale_selected(stale, shown)
    for review in kept:
        lines.append(f"stale review: {review.src.path}:{review.src.line}: {review.discrepancy} "
                     f"({review.state}) matches no current discrepancy")
    if kept:
        lines.append("")
    lines.append(f"{'selected' if filters_text(filters) else 'fleet'}: {counts_line(found)}")
    return "\n".join(terminal_line(line) for line in lines) + "\n"


def format_value(figure: Figure) -> str:
    """A figure as `check --details` prints it: by its quantity (`output.numbers`)."""
    return number_text(figure.value, figure.unit, figure.key)


def details(fleet: Fleet, results: FleetResults, aircraft: list[str] | None = None,
            service: list[str] | None = None) -> str:
    """Every computed figure of every installation and pair, for `check --details`; the aircraft (id or
    registration) and service filters narrow it like the report."""
    lines = []
    for craft, installation in fleet.installations():
        if not matches(craft, [installation.service], aircraft, service):
            continue
        result = results.installations[(craft.id, installation.position)]
        lines.append(f"{craft.registration} {installation.position} ({installation.service}, {installation.antenna})")
        figures = list(result.figures)
        if result.pattern_key:
            figures += results.patterns[result.pattern_key].metrics
        for figure in figures:
            lines.append(f"  {figure.label:<52} {format_value(figure)}")
        lines.append("")
    for pair in results.pairs:
        craft = fleet.aircraft[pair.aircraft]
        if not matches(craft, [craft.installations[pair.position_a].service,
                               craft.installations[pair.position_b].service], aircraft, service):
            continue
        note = "  (inside the far field)" if pair.near_field else ""
        lines.append(f"{craft.registration} {pair.position_a} + {pair.position_b}{note}")
        for figure in pair.figures:
            lines.append(f"  {figure.label:<52} {format_value(figure)}")
        lines.append("")
    for aircraft_id, cosite in sorted(results.cosite.items()):
        craft = fleet.aircraft[aircraft_id]
        lines += cosite_details(craft, cosite, lambda *services: matches(craft, list(services), aircraft, service))
    return "\n".join(terminal_line(line) for line in lines)


def cosite_details(craft, cosite, wanted) -> list[str]:
    """One aircraft's co-site paths for `check --details`: each harmonic that lands with its margin's
    arithmetic, the pairs a suppression line excuses, the intermodulation products with their margins'
    arithmetic, and the installations not analysed as receivers (no protection threshold)."""
    lines = []
    for path in cosite.paths:
        if not wanted(path.tx_service, path.rx_service):
            continue
        head = f"{craft.registration} co-site {path.tx} → {path.rx} ({path.tx_service} → {path.rx_service})"
        if path.excused_by:
            lines += [f"{head}: excused (both on suppression line {path.excused_by})", ""]
            continue
        lines.append(head)
        for hit in path.hits:
            lines.append(f"  {hit.product}, {hit.channels}, at {hit.product_lo_mhz:.3f}–{hit.product_hi_mhz:.3f} MHz")
            for figure in hit.figures:
                lines.append(f"    {figure.label:<50} {format_value(figure)}")
        lines.append("")
    service = lambda position: craft.installations[position].service  # noqa: E731
    products = [item for item in cosite.intermod
                if not item.excused_by and wanted(service(item.tx_a), service(item.tx_b), service(item.rx))]
    not_analysed = [(position, name) for position, name in cosite.not_analysed if wanted(name)]
    if products:
        lines.append(f"{craft.registration} intermodulation (transmitter intermodulation, conversion-loss model)")
        for item in products:
            margin = next((f for f in item.figures if f.key == "cosite.margin_db"), None)
            missing = "; ".join(f.label for f in item.figures if f.value is None)
            lines.append(f"  {item.tx_a} + {item.tx_b} → {item.rx}: {item.product} (order {item.order}) at "
                         f"{item.product_mhz[0]:.3f}–{item.product_mhz[1]:.3f} MHz, made in {item.generator}: "
                         + (f"margin {format_value(margin)}" if margin is not None
                            else "no level" + (f" ({missing}: not given)" if missing else "")))
            for figure in item.figures if margin is not None else ():
                lines.append(f"    {figure.label:<50} {format_value(figure)}")
        lines.append("")
    lines += [f"{craft.registration} co-site not analysed: {position} ({name}): no protection threshold in the "
              f"service table or policy" for position, name in not_analysed]
    return lines + ([""] if not_analysed else [])
