"""An aircraft's interference page: the transmitter × receiver matrix of worst co-site margins (each cell
opens the arithmetic, details/summary, no script), a frequency chart drawn here as SVG, the
intermodulation products with their margins (each opening its arithmetic), and the installations not
analysed as receivers."""
from __future__ import annotations

import math
from collections.abc import Iterator
from typing import Any

from markupsafe import Markup, escape

from registry.core import figure_keys as FK
from registry.core.model import Aircraft
from registry.core.results import AircraftCosite, CositeHit, CositeIntermod, CositePath, Figure
from registry.output.numbers import number_text
from registry.output.report import format_value
from registry.site.context import SiteData
from registry.site.pages import Page, page
from registry.site.paths import aircraft_path, root_of
from registry.site.svg import n

INTERMOD_SHOWN = 60
"""Intermodulation products listed on the page; the rest are counted (`check --details` lists all)."""
INTERMOD_ARITHMETIC = 10
"""Listed products whose arithmetic the page lays out: the worst this many, and every one whose margin is
under the policy's small margin; the others show their margin (their arithmetic is the same, with their
own numbers, and `check --details` lays each out)."""


def cosite_path(aircraft_id: str) -> str:
    return f"aircraft/{aircraft_id}/interference.html"


def type_cosite_path(airframe_id: str) -> str:
    return f"interference/{airframe_id}.html"


def cosite_outputs(data: SiteData, aircraft: Aircraft) -> list[Page]:
    """The aircraft's interference page, when its co-site analysis is loaded."""
    cosite = data.results.cosite.get(aircraft.id)
    return [] if cosite is None else [cosite_page(data, aircraft, cosite)]


def cosite_page(data: SiteData, aircraft: Aircraft, cosite: AircraftCosite) -> Page:
    small = data.fleet.policy.cosite_small_margin_db
    transmitters = sorted({p for p, _, side, _ in cosite.bands if side == "tx"})
    receivers = sorted({p for p, _, side, _ in cosite.bands if side == "rx"})
    paths = {(path.tx, path.rx): path for path in cosite.paths}
    notes = Notes(data.src_text, data.figure_cells.macros.arithmetic_row)
    rows = [{"tx": tx, "cells": [cell(paths.get((tx, rx)), tx == rx, small, notes) for rx in receivers]}
            for tx in transmitters]
    products = sorted((item for item in cosite.intermod if not item.excused_by), key=intermod_order)
    return page(cosite_path(aircraft.id), "cosite.html", "fleet", f"{aircraft.registration} interference",
                [("Fleet", "index.html"), (aircraft.registration, aircraft_path(aircraft.id)),
                 ("Interference", None)],
                aircraft=aircraft, receivers=receivers, rows=rows, small_db=small,
                airframe=data.fleet.airframe_of(aircraft), type_href=type_cosite_path(aircraft.airframe),
                max_order=data.fleet.policy.cosite_max_harmonic_order,
                chart=frequency_chart(cosite),
                intermod=[intermod_view(item, small, notes, n, n < INTERMOD_ARITHMETIC)
                          for n, item in enumerate(products[:INTERMOD_SHOWN])],
                arithmetic_shown=INTERMOD_ARITHMETIC,
                intermod_more=max(0, len(products) - INTERMOD_SHOWN),
                intermod_unrated=sum(1 for item in products if item.margin_db is None),
                not_analysed=cosite.not_analysed,
                intermod_excused=len(cosite.intermod) - len(products),
                excused=[path for path in cosite.paths if path.excused_by],
                notes=sorted((number, text) for text, number in notes.numbers.items()))


def cell(path: CositePath | None, same: bool, small_db: float, notes: Notes) -> dict[str, Any]:
    """One matrix cell: its state, the worst margin as `check --details` writes it, and every hit."""
    if same:
        return {"state": "self", "text": "—", "hits": ()}
    if path is None:
        return {"state": "clear", "text": "·", "hits": ()}
    if path.excused_by:
        return {"state": "excused", "text": f"excused: {path.excused_by}", "hits": ()}
    worst = path.worst
    margin = worst.margin_db if worst is not None else None
    state = ("unrated" if margin is None else "unserviceable" if margin < 0 else "query" if margin < small_db
             else "ok")
    text = margin_text(worst) if margin is not None else "no level"
    others = [{"product": hit.product, "channels": hit.channels,
               "margin": margin_text(hit) if hit.margin_db is not None else "no level"}
              for hit in path.hits if hit is not worst]
    return {"state": state, "text": text, "id": f"c-{path.tx}-{path.rx}", "tx": path.tx, "rx": path.rx,
            "hits": [hit_view(worst, notes)], "others": others}


def margin_text(hit: CositeHit) -> str:
    figure = next(f for f in hit.figures if f.key == FK.COSITE_MARGIN_DB)
    return format_value(figure)


class Notes:
    """The page's numbered sources, how it shows a registry line (relative to the data folder), and its
    arithmetic rows: a page's products share most of their figures (the same feeders, couplings and
    thresholds recur), so each distinct figure's row is rendered once per page."""

    def __init__(self, src_text, row_macro):
        self.numbers: dict[str, int] = {}
        self.src_text = src_text
        self.row_macro = row_macro
        self.rows: dict[Figure, str] = {}

    def number(self, source: str) -> int | None:
        return self.numbers.setdefault(source, len(self.numbers) + 1) if source else None

    def rows_of(self, figures: tuple[Figure, ...]) -> Markup:
        """The figures' rows of an arithmetic table (`partials/figures.html`, `arithmetic_row`);
        sources numbered in the order the page first shows them."""
        out = []
        for f in figures:
            try:
                row = self.rows.get(f)
            except TypeError:  # a value that cannot be hashed: rendered, not remembered
                out.append(self.row(f))
                continue
            if row is None:
                row = self.rows[f] = self.row(f)
            out.append(row)
        return Markup("".join(out))

    def row(self, f: Figure) -> str:
        return str(self.row_macro(arithmetic_view(f, self)))


STANDINGS = ("sourced", "common practice, no source", "unverified", "installed radio", "policy")


def arithmetic_view(f: Figure, notes: Notes) -> dict[str, Any]:
    """A figure as an arithmetic table's row; its source is numbered once per page (`notes`) and shown by its
    number and standing, so long source texts are not repeated in every cell."""
    standing = next((word for word in STANDINGS if f.source.startswith(word)), "")
    return {"label": f.label, "value": format_value(f),
            "inputs": ", ".join(f"{k} = {v}" for k, v in f.inputs) if f.key == FK.COSITE_COUPLING_DB else "",
            "note": notes.number(f.source), "standing": standing, "src": notes.src_text(f.src) if f.src else ""}


def hit_view(hit: CositeHit, notes: Notes) -> dict[str, Any]:
    """A hit's arithmetic, figure by figure and written out."""
    return {"product": hit.product, "channels": hit.channels,
            "at": f"{hit.product_lo_mhz:.3f}–{hit.product_hi_mhz:.3f} MHz", "rows": notes.rows_of(hit.figures),
            "sum": arithmetic(hit.figures)}


def arithmetic(figures: tuple[Figure, ...]) -> str:
    """The margin written out with the figures' numbers, at the threshold's plane: at the receiver's input
    level = P + E − L_tx + C − L_rx; at the antenna port the receive feeder is not in it."""
    value = {f.key: f for f in figures}
    at_port = FK.COSITE_RX_FEEDER_LOSS_DB not in value
    keys = (FK.COSITE_TX_POWER_DBM, FK.COSITE_EMISSION_DBC, FK.COSITE_TX_FEEDER_LOSS_DB, FK.COSITE_COUPLING_DB,
            FK.COSITE_LEVEL_DBM, FK.COSITE_THRESHOLD_DBM, FK.COSITE_MARGIN_DB)
    if any(key not in value or value[key].value is None for key in keys):
        return ""
    p, e, ltx, c, level, threshold, margin = (format_value(value[key]) for key in keys)
    if at_port:
        head = f"level at the receive antenna's port = P + E − L_tx + C = {p} + ({e}) − {ltx} + ({c}) = {level}"
    else:
        lrx = format_value(value[FK.COSITE_RX_FEEDER_LOSS_DB])
        head = (f"level at the receiver's input = P + E − L_tx + C − L_rx = {p} + ({e}) − {ltx} + ({c}) − {lrx} "
                f"= {level}")
    return f"{head}; margin = threshold − level = {threshold} − ({level}) = {margin}"


def intermod_arithmetic(figures: tuple[Figure, ...]) -> str:
    """An intermodulation product's level and margin written out with its figures' numbers."""
    value = {f.key: f for f in figures}
    if FK.COSITE_MARGIN_DB not in value:
        return ""
    couplings = [format_value(f) for f in figures if f.key == FK.COSITE_COUPLING_DB]
    losses = [format_value(f) for f in figures if f.key == FK.COSITE_TX_FEEDER_LOSS_DB]
    p, conv, product, level, threshold, margin = (format_value(value[key]) for key in (
        FK.COSITE_TX_POWER_DBM, FK.COSITE_CONVERSION_LOSS_DB, FK.COSITE_PRODUCT_DBM, FK.COSITE_LEVEL_DBM,
        FK.COSITE_THRESHOLD_DBM, FK.COSITE_MARGIN_DB))
    rx = (f" − {format_value(value[FK.COSITE_RX_FEEDER_LOSS_DB])}" if FK.COSITE_RX_FEEDER_LOSS_DB in value else "")
    plane = "receiver's input" if rx else "receive antenna's port"
    return (f"product = P_I − L_I + C_IG − L_G − L_conv = {p} − {losses[0]} + ({couplings[0]}) − {losses[1]} − {conv} "
            f"= {product}; level at the {plane} = product − L_G + C{' − L_rx' if rx else ''} = {product} − "
            f"{losses[1]} + ({couplings[1]}){rx} = {level}; margin = threshold − level = {threshold} − ({level}) "
            f"= {margin}")


def intermod_order(item: CositeIntermod) -> tuple:
    """Rated products first, the worst margin first; then by position and product."""
    return (item.margin_db is None, item.margin_db or 0.0, item.tx_a, item.tx_b, item.rx, item.product)


def intermod_view(item: CositeIntermod, small_db: float, notes: Notes, number: int, worst: bool) -> dict[str, Any]:
    """One product's row: where it lands, which transmitter makes it, its margin, and its arithmetic when it
    is among the `worst` or its margin is under the small margin (`INTERMOD_ARITHMETIC`)."""
    margin = item.margin_db
    state = ("unrated" if margin is None else "unserviceable" if margin < 0 else "query" if margin < small_db else "ok")
    laid_out = margin is not None and (worst or state != "ok")
    missing = [f.label for f in item.figures if f.value is None]
    text = (format_value(next(f for f in item.figures if f.key == FK.COSITE_MARGIN_DB)) if margin is not None
            else "no level" + (f" ({'; '.join(missing)}: not given)" if missing else ""))
    return {"item": item, "state": state, "text": text, "id": f"im-{number + 1}",
            "rows": notes.rows_of(item.figures) if laid_out else Markup(""),
            "sum": intermod_arithmetic(item.figures) if laid_out else ""}


CHART_WIDTH, ROW_HEIGHT, LEFT, TOP = 860, 22, 150, 28


def frequency_chart(cosite: AircraftCosite) -> Markup:
    """Transmit ranges and receive bands on a logarithmic frequency axis, one row per installation and
    side; the harmonics that land are drawn on their receiver's row."""
    rows = sorted(cosite.bands, key=lambda row: (row[2], row[0]))
    if not rows:
        return Markup("")
    edges = [f for _, _, _, ranges in rows for band in ranges for f in band]
    lo, hi = math.log10(min(edges) / 1.5), math.log10(max(edges) * 1.5)
    x = lambda f: LEFT + (math.log10(f) - lo) / (hi - lo) * (CHART_WIDTH - LEFT - 10)  # noqa: E731
    height = TOP + ROW_HEIGHT * len(rows) + 10
    parts = [f'<svg class="cosite-chart" viewBox="0 0 {CHART_WIDTH} {height}" role="img" '
             f'aria-labelledby="chart-title"><title id="chart-title">Transmit ranges, receive bands and the '
             f'harmonics that land, frequency in MHz on a logarithmic scale</title>']
    for decade in range(math.ceil(lo), math.floor(hi) + 1):
        gx = n(x(10 ** decade))
        parts.append(f'<line x1="{gx}" y1="{TOP - 6}" x2="{gx}" y2="{height - 10}" class="grid"/>'
                     f'<text x="{gx}" y="{TOP - 10}" class="tick">{10 ** decade:g} MHz</text>')
    landing = {}
    for path in cosite.paths:
        for hit in path.hits:
            landing.setdefault(path.rx, []).append((hit, path.tx))
    for i, (position, service, side, ranges) in enumerate(rows):
        y = TOP + i * ROW_HEIGHT
        parts.append(f'<text x="4" y="{n(y + 14)}" class="label">{escape(position)} {side}</text>')
        for band_lo, band_hi in ranges:
            width = max(2.0, x(band_hi) - x(band_lo))
            parts.append(f'<rect x="{n(x(band_lo))}" y="{n(y + 4)}" width="{n(width)}" height="12" class="{side}">'
                         f'<title>{escape(position)} ({escape(service)}) {side} {band_lo:g}–{band_hi:g} MHz</title></rect>')
        if side == "rx":
            for hit, tx in landing.get(position, ()):
                hx = n(x(hit.product_lo_mhz))
                bad = "hit-bad" if hit.margin_db is not None and hit.margin_db < 0 else "hit"
                parts.append(f'<path d="M{hx} {n(y + 2)} l-4 -6 h8 z" class="{bad}"><title>{escape(tx)} '
                             f'{hit.product} at {hit.product_lo_mhz:.3f}–{hit.product_hi_mhz:.3f} MHz</title></path>')
    parts.append("</svg>")
    return Markup("".join(parts))


def _each_margin(links: list[str], cells: list, texts: dict[tuple, str]) -> Markup:
    """Each aircraft's margin on one path, as the list items of the path's row (`links`: each aircraft's
    item up to its margin; `texts`: the rest of an item by margin and words, as made so far). Made here
    rather than by a template loop: a type's page lists every aircraft on every path it shares (55,000
    items for a type of 500 aircraft), and most aircraft share their margins with others."""
    out = []
    for link, c in zip(links, cells):
        text = texts.get((c.margin_db, c.what))
        if text is None:
            margin = "—" if c.margin_db is None else number_text(c.margin_db, "dB")
            text = texts[(c.margin_db, c.what)] = f"{escape(margin)}{f' ({escape(c.what)})' if c.what else ''}</li>"
        out.append(link + text)
    return Markup("".join(out))


def type_cosite_pages(data: SiteData) -> Iterator[Page]:
    """One page per airframe type, made as it is asked for: the transmitter → receiver paths every
    aircraft of the type has, with the worst margin over them and each aircraft's own (from the aircraft
    summaries, no figures loaded)."""
    small = data.fleet.policy.cosite_small_margin_db
    for airframe in data.fleet.airframes.values():
        members = [a for a in data.fleet.aircraft.values() if a.airframe == airframe.id]
        summaries = [data.results.summaries.get(a.id) for a in members]
        if not members or any(summary is None for summary in summaries):
            continue
        cells = [{(c.tx, c.rx): c for c in summary.cosite} for summary in summaries]
        shared = sorted(set.intersection(*(set(c) for c in cells)))
        path = type_cosite_path(airframe.id)
        links = [f'<li><a href="{escape(root_of(path) + cosite_path(a.id))}">{escape(a.registration)}</a>: '
                 for a in members]
        rows, texts = [], {}
        for key in shared:
            each = [by_path[key] for by_path in cells]
            rated = [c.margin_db for c in each if c.margin_db is not None]
            worst = min(rated) if rated else None
            state = ("excused" if each[0].excused_by else "unrated" if worst is None else
                     "unserviceable" if worst < 0 else "query" if worst < small else "ok")
            rows.append({"tx": key[0], "rx": key[1], "services": f"{each[0].tx_service} → {each[0].rx_service}",
                         "state": state, "worst": "—" if worst is None else number_text(worst, "dB"),
                         "excused_by": each[0].excused_by, "each": _each_margin(links, each, texts)})
        yield page(path, "cosite_type.html", "fleet",
                   f"{airframe.name} interference", [("Fleet", "index.html"), (airframe.name, None)],
                   airframe=airframe, members=members, rows=rows, small_db=small)
