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
    band, with its level and margin (`intermod_figures`); products of transmitters and a receiver all on
    one suppression line are marked excused (and get no level)."""
    out = []
    for i, one in enumerate(transmitters):
        for two in transmitters[i + 1:]:
            for rx in receivers:
                if rx.installation in (one.installation, two.installation):
                    continue
                line = one.line if one.line and one.line == two.line == rx.line else ""
                for f1 in one.value("tx_bands_mhz"):
                    for f2 in two.value("tx_bands_mhz"):
                        for victim in rx.value("rx_bands_mhz"):
                            for a, b, label, order, r1, r2, product in _intermod_hits(tuple(f1), tuple(f2),
                                                                                      tuple(victim)):
                                item = CositeIntermod(aircraft_id, one.position, two.position, rx.position,
                                                      label, order, r1, r2, product, line)
                                out.append(item if line else rated_intermod(item, abs(a) > abs(b), (one, two), rx,
                                                                            geometry))
    return out


def rated_intermod(item: CositeIntermod, first_generates: bool, pair: tuple[Side, Side], rx: Side,
                   geometry: Geometry) -> CositeIntermod:
    """The product with its generator, level and margin (figures step by step; margin None when a figure
    for the level is missing: a power or the conversion loss of the generator's order). The first
    transmitter of `pair` generates when its coefficient is the larger (`first_generates`)."""
    generator, intruder = pair if first_generates else (pair[1], pair[0])
    intruder_lo = (item.f2_mhz if generator is pair[0] else item.f1_mhz)[0]
    conversion_key = f"im{item.order}_conversion_loss_db"
    power = figure_of(intruder, "tx_peak_power_dbm", FK.COSITE_TX_POWER_DBM, f"Peak power of {intruder.position}",
                      "dBm")
    intruder_feeder = feeder_figure(FK.COSITE_TX_FEEDER_LOSS_DB, f"Feeder loss of {intruder.position}", intruder)
    into = [f._replace(label=f"{f.label}, {intruder.position} → {generator.position}")
            for f in coupling_figures(intruder, generator, geometry, intruder_lo)]
    generator_feeder = feeder_figure(FK.COSITE_TX_FEEDER_LOSS_DB, f"Feeder loss of {generator.position}", generator)
    conversion = figure_of(generator, conversion_key, FK.COSITE_CONVERSION_LOSS_DB,
                           f"Conversion loss of {generator.position}, order {item.order}", "dB")
    out = [f._replace(label=f"{f.label}, {generator.position} → {rx.position}")
           for f in coupling_figures(generator, rx, geometry, item.product_mhz[0])]
    receive, plane = receive_figures(rx)
    figures = [power, intruder_feeder, *into, generator_feeder, conversion]
    if power.value is None or conversion.value is None:
        return item._replace(generator=generator.position, figures=tuple(figures + out + receive))
    tx = cosite.transmitter_intermod(power.value, intruder_feeder.value, into[-1].value, generator_feeder.value,
                                     conversion.value)
    m = cosite.interference_margin(tx.product_dbm, 0.0, generator_feeder.value, out[-1].value,
                                   receive[0].value if plane == "receiver_input" else 0.0, receive[-1].value, plane)
    product = Figure(FK.COSITE_PRODUCT_DBM, f"Product at {generator.position}'s port", tx.product_dbm, "dBm",
                     "P_I − L_I + C_IG − L_G − L_conv", (("coupled in", f"{tx.coupled_in_dbm:.1f} dBm"),),
                     INTERMOD_SOURCE, conversion.src)
    figures += [product, *out, *receive, *level_figures(m, INTERMOD_SOURCE, conversion.src)]
    return item._replace(generator=generator.position, margin_db=m.margin_db, figures=tuple(figures))


@lru_cache(maxsize=4096)
def _intermod_hits(f1: tuple[float, float], f2: tuple[float, float], victim: tuple[float, float]) -> tuple:
    """`physics.cosite.intermod_hits` once per set of ranges in a process: the products depend on the
    ranges only, and every aircraft's transmitters and receivers draw them from the same service table."""
    return tuple((hit.a, hit.b, hit.label, hit.order, (hit.f1_lo_mhz, hit.f1_hi_mhz), (hit.f2_lo_mhz, hit.f2_hi_mhz),
                  (hit.product_lo_mhz, hit.product_hi_mhz))
                 for hit in cosite.intermod_hits(f1, f2, victim, INTERMOD_ORDERS))
