"""Intermodulation between two transmitters of one aircraft: every 3rd- and 5th-order product that lands in a
receiver's band, with its level and margin by the transmitter-intermodulation (conversion-loss) model.

The transmitter whose carrier carries the larger coefficient in a·f1 + b·f2 generates the product (its own
carrier is the strong one in its output stage; for 2·f1 − f2 it is f1's); the other's carrier couples
into it through the two antennas and both feeders, comes out `imN_conversion_loss_db` lower, and reaches
the receiver like a harmonic would (`physics.cosite.transmitter_intermod`, `interference_margin`).
Coupling is taken at the lowest frequency of each range (the strongest free-space coupling).
"""
from __future__ import annotations

from functools import lru_cache
from typing import Any

from registry.compute.cosite_sides import (Geometry, Side, coupling_figures, feeder_figure, figure_of,
                                          level_figures, receive_figures)
from registry.core import figure_keys as FK
from registry.core.results import CositeIntermod, Figure
from registry.physics import cosite

INTERMOD_ORDERS = (3, 5)
"""Intermodulation orders located (ITU-R SM.329 §1.1.3: odd orders fall near the carriers)."""
INTERMOD_SOURCE = ("common practice, no source: transmitter intermodulation, conversion-loss model (a carrier "
                   "coupled into a transmitter's output stage returns as a product L_conv lower); check against "
                   "ITU-R SM.1134-1 Annex 1 §4 and Report ITU-R SM.2021 §2.1")


def intermod_products(aircraft_id: str, transmitters: list[Side], receivers: list[Side],
                      geometry: Geometry) -> list[CositeIntermod]:
    """Every 3rd- and 5th-order product of two transmitters over their ranges that lands in a receiver's
    band, with its level and margin (`Rating.rated`); products of transmitters and a receiver all on
    one suppression line are marked excused (and get no level)."""
    out = []
    rating = Rating(geometry)
    tx_bands = [_band_set(side.value("tx_bands_mhz")) for side in transmitters]
    rx_bands = [_band_set(side.value("rx_bands_mhz")) for side in receivers]
    for i, one in enumerate(transmitters):
        for j in range(i + 1, len(transmitters)):
            two = transmitters[j]
            pair = (one, two)
            for rx, victims in zip(receivers, rx_bands):
                if rx.installation is one.installation or rx.installation is two.installation:
                    continue
                line = one.line if one.line and one.line == two.line == rx.line else ""
                for a, b, label, order, r1, r2, product in _ranges_hits(tx_bands[i], tx_bands[j], victims):
                    head = (aircraft_id, one.position, two.position, rx.position, label, order, r1, r2, product, line)
                    out.append(CositeIntermod(*head) if line else rating.rated(head, abs(a) > abs(b), pair, rx))
    return out


class Rating:
    """Rates an aircraft's products, keeping the parts products share: an aircraft has
    thousands of products but few generator/intruder pairs and few coupling frequencies, so the figures up
    to the product at the generator's port are worked out once per (intruder, generator, order, frequency)
    and the way to the receiver once per (generator, receiver, frequency)."""

    def __init__(self, geometry: Geometry):
        self.geometry = geometry
        self.heads: dict[tuple, tuple] = {}
        self.tails: dict[tuple, tuple] = {}
        self.parts: dict[tuple, Any] = {}
        """`product_figures`' pieces that several heads share (a side's feeder, a coupling's labelled figures)."""

    def rated(self, head: tuple, first_generates: bool, pair: tuple[Side, Side], rx: Side) -> CositeIntermod:
        """The product (`head`: the `CositeIntermod` fields up to `excused_by`) with its generator, level and
        margin (figures step by step; margin None when a figure for the level is missing: a power or the
        conversion loss of the generator's order, and then the figures stop at the product's making, as
        nothing after it can give a level). The first transmitter of `pair` generates when its coefficient
        is the larger (`first_generates`)."""
        generator, intruder = pair if first_generates else (pair[1], pair[0])
        order, f1_mhz, f2_mhz, product_mhz = head[5], head[6], head[7], head[8]
        intruder_lo = (f2_mhz if generator is pair[0] else f1_mhz)[0]
        key = (intruder.position, generator.position, order, intruder_lo)
        if key not in self.heads:
            self.heads[key] = product_figures(intruder, generator, order, intruder_lo, self.geometry, self.parts)
        figures, tx = self.heads[key]
        if tx is None:  # no level: the figures end where one is missing (a power or the conversion loss)
            return CositeIntermod(*head, generator.position, None, figures)
        key = (generator.position, rx.position, product_mhz[0])
        if key not in self.tails:
            self.tails[key] = receiver_figures(generator, rx, product_mhz[0], self.geometry)
        out, receive, plane, generator_feeder = self.tails[key]
        m = cosite.interference_margin(tx.product_dbm, 0.0, generator_feeder, out[-1].value,
                                       receive[0].value if plane == "receiver_input" else 0.0, receive[-1].value,
                                       plane)
        level = tuple(level_figures(m, INTERMOD_SOURCE, figures[-1].src))
        return CositeIntermod(*head, generator.position, m.margin_db, figures + out + receive + level)


def product_figures(intruder: Side, generator: Side, order: int, intruder_lo_mhz: float, geometry: Geometry,
                    parts: dict[tuple, Any] | None = None) -> tuple[tuple[Figure, ...], cosite.TransmitterIntermod | None]:
    """The product at the generator's port, step by step: the intruder's power and feeder, the coupling
    into the generator (at the lowest frequency of the intruder's range), the generator's feeder and its
    conversion loss for the order, then the product; None for the level when a power or the conversion loss
    is missing (the figures end with the conversion loss then). `parts` keeps what the aircraft's other
    products share: the powers, feeder figures, conversion losses and labelled couplings (each looked up
    in place rather than through a helper taking a closure: this runs hundreds of times an aircraft)."""
    parts = {} if parts is None else parts
    key = ("power", intruder.position)
    if key not in parts:
        parts[key] = figure_of(intruder, "tx_peak_power_dbm", FK.COSITE_TX_POWER_DBM,
                               f"Peak power of {intruder.position}", "dBm")
    power = parts[key]
    intruder_feeder = _feeder(intruder, parts)
    key = ("into", intruder.position, generator.position, intruder_lo_mhz)
    if key not in parts:
        parts[key] = tuple(_relabelled(f, f"{f.label}, {intruder.position} → {generator.position}")
                           for f in coupling_figures(intruder, generator, geometry, intruder_lo_mhz))
    into = parts[key]
    generator_feeder = _feeder(generator, parts)
    key = ("conversion", generator.position, order)
    if key not in parts:
        parts[key] = figure_of(generator, f"im{order}_conversion_loss_db", FK.COSITE_CONVERSION_LOSS_DB,
                               f"Conversion loss of {generator.position}, order {order}", "dB")
    conversion = parts[key]
    figures = (power, intruder_feeder, *into, generator_feeder, conversion)
    if power.value is None or conversion.value is None:
        return figures, None
    tx = cosite.transmitter_intermod(power.value, intruder_feeder.value, into[-1].value, generator_feeder.value,
                                     conversion.value)
    product = Figure(FK.COSITE_PRODUCT_DBM, f"Product at {generator.position}'s port", tx.product_dbm, "dBm",
                     "P_I − L_I + C_IG − L_G − L_conv", (("coupled in", f"{tx.coupled_in_dbm:.1f} dBm"),),
                     INTERMOD_SOURCE, conversion.src)
    return (*figures, product), tx


def _relabelled(f: Figure, label: str) -> Figure:
    """`f` with another label (as `_replace` gives it, without its keyword handling: thousands a build)."""
    return Figure(f.key, label, f.value, f.unit, f.formula, f.inputs, f.source, f.src)


def _feeder(side: Side, parts: dict[tuple, Any]) -> Figure:
    """A transmitter's feeder figure as a product's arithmetic shows it, once per side."""
    key = ("feeder", side.position)
    if key not in parts:
        parts[key] = feeder_figure(FK.COSITE_TX_FEEDER_LOSS_DB, f"Feeder loss of {side.position}", side)
    return parts[key]


def receiver_figures(generator: Side, rx: Side, product_lo_mhz: float,
                     geometry: Geometry) -> tuple[tuple[Figure, ...], tuple[Figure, ...], str, float]:
    """From the generator's port to the receiver: the coupling (at the product's lowest frequency), the
    receive figures and the threshold's plane, and the generator's feeder loss (dB) the product passes."""
    out = tuple(_relabelled(f, f"{f.label}, {generator.position} → {rx.position}")
                for f in coupling_figures(generator, rx, geometry, product_lo_mhz))
    receive, plane = receive_figures(rx)
    feeder = feeder_figure(FK.COSITE_TX_FEEDER_LOSS_DB, "", generator).value
    return out, tuple(receive), plane, feeder


_BAND_SETS: dict[tuple[tuple[float, float], ...], int] = {}
_BAND_SET_LIST: list[tuple[tuple[float, float], ...]] = []


def _band_set(bands) -> int:
    """A number for a side's set of ranges (MHz), the same for the same ranges in this process: an
    aircraft asks `_ranges_hits` for about a thousand (transmitter, transmitter, receiver) sets, and
    three numbers are quicker to look up than three tuples of tuples. A fleet's services hold a few
    dozen sets."""
    ranges = tuple(tuple(band) for band in bands)
    found = _BAND_SETS.get(ranges)
    if found is None:
        found = _BAND_SETS[ranges] = len(_BAND_SET_LIST)
        _BAND_SET_LIST.append(ranges)
    return found


@lru_cache(maxsize=4096)
def _ranges_hits(f1_set: int, f2_set: int, victim_set: int) -> tuple:
    """`_intermod_hits` over every range of two transmitters and a receiver (`_band_set` numbers), in
    that order (first transmitter's ranges, the second's, the receiver's): once per set of services in
    a process, where an aircraft asks for a thousand sets, most of them without a product."""
    f1_ranges, f2_ranges, victims = (_BAND_SET_LIST[n] for n in (f1_set, f2_set, victim_set))
    return tuple(hit for f1 in f1_ranges for f2 in f2_ranges for victim in victims
                 for hit in _intermod_hits(f1, f2, victim))


@lru_cache(maxsize=4096)
def _intermod_hits(f1: tuple[float, float], f2: tuple[float, float], victim: tuple[float, float]) -> tuple:
    """`physics.cosite.intermod_hits` once per set of ranges in a process: the products depend on the
    ranges only, and every aircraft's transmitters and receivers draw them from the same service table."""
    return tuple((hit.a, hit.b, hit.label, hit.order, (hit.f1_lo_mhz, hit.f1_hi_mhz), (hit.f2_lo_mhz, hit.f2_hi_mhz),
                  (hit.product_lo_mhz, hit.product_hi_mhz))
                 for hit in cosite.intermod_hits(f1, f2, victim, INTERMOD_ORDERS))
