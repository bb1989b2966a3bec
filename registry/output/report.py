"""The `check` command's report: terminal text grouped by aircraft, JSON and CSV."""
from __future__ import annotations

import csv
import io
import json
from collections import Counter
from dataclasses import asdict

from registry.core.model import Fleet
from registry.core.results import Discrepancy, Figure, FleetResults
from registry.core.rulebook import ALL_STATES, SEVERITIES
from registry.output.safe_text import json_for_terminal, spreadsheet_cell, terminal_line

FIELDS = ("id", "rule", "severity", "aircraft", "position", "value", "limit", "unit", "message", "method",
          "source", "review", "reviewer", "review_reference", "review_comment")
"""The columns of `check --format csv/json`; "source" is the finding's registry line (`Discrepancy.src`)."""


def exported(item: Discrepancy) -> dict:
    """A finding as the `check` exports name its fields."""
    row = asdict(item)
    row["source"] = row.pop("src")
    return {name: row[name] for name in FIELDS}


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
        services = [craft.installations[pos].service for pos in item.position.split("+")]
        if matches(craft, services, aircraft, service) and (not severity or item.severity in severity):
            out.append(item)
    return out


def as_json(found: list[Discrepancy], stale: list, as_of: str) -> str:
    """The report as JSON; control characters that JSON leaves as they are come out as \\u escapes."""
    return json_for_terminal(json.dumps({
        "as_of": as_of,
        "discrepancies": [exported(item) for item in found],
        "stale_reviews": [{"discrepancy": review.discrepancy, "state": review.state,
                           "source": f"{review.src.path}:{review.src.line}"} for review in stale],
    }, indent=2, ensure_ascii=False)) + "\n"


def as_csv(found: list[Discrepancy]) -> str:
    """The report as CSV, each text cell neutralised for spreadsheets (`safe_text.spreadsheet_cell`).
    Lines end in CR LF (RFC 4180, section 2), so a cell holding a carriage return is quoted too."""
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\r\n")
    writer.writerow(FIELDS)
    for item in found:
        writer.writerow(["" if value is None else spreadsheet_cell(value) for value in exported(item).values()])
    return buffer.getvalue()


def counts_line(found: list[Discrepancy]) -> str:
    by_severity = Counter(item.severity for item in found)
    by_state = Counter(item.review for item in found)
    severities = ", ".join(f"{by_severity[name]} {name}" for name in SEVERITIES)
    states = ", ".join(f"{by_state[name]} {name}" for name in ALL_STATES if by_state[name])
    noun = "discrepancy" if len(found) == 1 else "discrepancies"
    return f"{len(found)} {noun} ({severities}); review: {states or 'none'}"


def as_text(fleet: Fleet, found: list[Discrepancy], stale: list, as_of: str) -> str:
    """Grouped by aircraft, each with its counts; then stale reviews; then the fleet's totals. Every line
    is cleared of control characters and escape sequences (`safe_text.terminal_line`)."""
    lines = [f"{fleet.operator}: {len(fleet.aircraft)} aircraft, "
             f"{sum(len(a.installations) for a in fleet.aircraft.values())} installations, as of {as_of}", ""]
    for craft in fleet.aircraft.values():
        mine = [item for item in found if item.aircraft == craft.id]
        lines.append(f"{craft.registration} ({craft.id}, {craft.airframe}): {counts_line(mine)}")
        for item in mine:
            value = f"{item.value}{(' ' + item.unit) if item.unit else ''}"
            review = item.review
            if item.reviewer:
                review += f" by {item.reviewer}" + (f", {item.review_reference}" if item.review_reference else "")
            lines.append(f"  [{item.severity}] {item.id}  ({review})")
            lines.append(f"      {item.message}")
            lines.append(f"      value {value}, limit {item.limit}; {item.src}")
        lines.append("")
    for review in stale:
        lines.append(f"stale review: {review.src.path}:{review.src.line}: {review.discrepancy} "
                     f"({review.state}) matches no current discrepancy")
    if stale:
        lines.append("")
    lines.append(f"fleet: {counts_line(found)}")
    return "\n".join(terminal_line(line) for line in lines) + "\n"


def format_value(figure: Figure) -> str:
    value = figure.value
    if isinstance(value, float) and value != value:
        return "n/a"
    if isinstance(value, float):
        text = f"{value:.4g}" if abs(value) < 1e5 else f"{value:.6g}"
    else:
        text = "—" if value is None else str(value)
    return f"{text} {figure.unit}".rstrip()


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
