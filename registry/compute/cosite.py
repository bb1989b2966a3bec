"""Co-site figures of one aircraft: which transmitter harmonics land in which receiver's band, and the margin.

For every transmitter → receiver pair of installations whose services do not share a suppression line,
every harmonic order 2..policy limit of the transmit ranges (snapped to the channel plan where the table
gives one) that lands in a receive band, with the level at the receiver and its margin against the
receiver's protection threshold (`physics.cosite.interference_margin`). Intermodulation products of two
transmitters are located in frequency only: the table has no level for them (no intercept point or
conversion figure), so they carry no margin.

Coupling between the two antennas: where the aircraft has a pair isolation figure for the two
installations (`pair.isolation_db` at `pair.freq_mhz`) it is scaled to the harmonic's frequency by the
free-space law (+20·log10(f/f_pair), gains held); otherwise free-space Friis between isotropic antennas
at the lowest frequency of the harmonic's range (ITU-R P.525): no gain, no fuselage shadowing, the
nearest end of the range, which overstates the coupling where the airframe shadows one antenna.
Feeder losses are the installations' total feeder loss figures (each at its own service's frequency;
the transmit cable loses more at the harmonic, so the figure understates that loss: conservative).
"""
from __future__ import annotations

import math
from functools import lru_cache

from registry.core import figure_keys as FK
from registry.core.model import Aircraft, Fleet, Installation, Service
from registry.core.results import (AircraftCosite, CositeHit, CositeIntermod, CositePath, Figure,
                                   InstallationResult, PairResult)
from registry.core.sources import where
from registry.physics import cosite
from registry.physics.coupling import distance_m, free_space_loss_db

COORD_UNITS = {"in": "inch", "mm": "mm"}
"""The airframe's coordinate unit as the physics names it."""
INTERMOD_ORDERS = (3, 5)
"""Intermodulation orders located (ITU-R SM.329 §1.1.3: odd orders fall near the carriers)."""
FRIIS = "Friis, Proc. IRE 34 (1946); free-space loss per ITU-R P.525"
MARGIN_SOURCE = ("unwanted level as in CEPT wiki 'Example of calculations' §4.1 (iRSSunwanted, Eq. 20–21), "
                 "with both feeders' losses")


class Side:
    """One installation as a transmitter or a receiver, with its figures and where each came from."""

    def __init__(self, fleet: Fleet, installation: Installation, result: InstallationResult | None):
        self.installation = installation
        self.service: Service = fleet.services[installation.service]
        radio = installation.radio
        self.values: dict[str, tuple[float | None, str, str]] = {}
        for key in ("tx_peak_power_dbm", "spurious_dbc", "protection_dbm"):
            own = getattr(radio, key) if radio is not None else None
            if own is not None:
                self.values[key] = (own, f"installed radio: {radio.source}", where(radio, key))
            else:
                self.values[key] = (getattr(self.service, key),
                                    self.service.sources.get(key, "service table, standing not given"),
                                    where(self.service, key))
        loss = result.figure(FK.FEEDER_TOTAL_LOSS_DB) if result is not None else None
        self.feeder = loss if loss is not None and isinstance(loss.value, float) else None

    def value(self, key: str) -> float | None:
        return self.values[key][0]

    @property
    def line(self) -> str:
        return self.service.suppression_line or ""


def cosite_result(fleet: Fleet, aircraft: Aircraft, installations: dict[tuple[str, str], InstallationResult],
                  pairs: list[PairResult]) -> AircraftCosite:
    """Every transmitter → receiver path and every intermodulation product that lands, for one aircraft."""
    sides = [Side(fleet, inst, installations.get((aircraft.id, inst.position)))
             for inst in aircraft.installations.values()]
    transmitters = [side for side in sides if side.service.transmits and side.service.tx_bands_mhz]
    receivers = [side for side in sides if side.value("protection_dbm") is not None and side.service.rx_bands_mhz]
    unit = COORD_UNITS[fleet.airframe_of(aircraft).coord_unit]
    isolation = {frozenset((pair.position_a, pair.position_b)): pair for pair in pairs}
    paths = []
    for tx in transmitters:
        for rx in receivers:
            if tx.installation is rx.installation:
                continue
            line = tx.line if cosite.excused_by_suppression(tx.line, rx.line) else ""
            hits = () if line else tuple(harmonic_hits(fleet, tx, rx, unit, isolation))
            if hits or line:
                paths.append(CositePath(aircraft.id, tx.installation.position, rx.installation.position,
                                        tx.service.id, rx.service.id, hits, line))
    bands = tuple((s.installation.position, s.service.id, "tx", s.service.tx_bands_mhz) for s in transmitters)
    bands += tuple((s.installation.position, s.service.id, "rx", s.service.rx_bands_mhz) for s in receivers)
    return AircraftCosite(aircraft.id, tuple(paths), tuple(intermod_products(aircraft.id, transmitters, receivers)),
                          bands)


def harmonic_hits(fleet: Fleet, tx: Side, rx: Side, unit: str, isolation: dict) -> list[CositeHit]:
    """Every harmonic 2..policy limit of the transmitter's ranges that lands in one of the receive bands."""
    order_limit = fleet.policy.cosite_max_harmonic_order
    step = min(tx.service.tx_channel_steps_khz) if tx.service.tx_channel_steps_khz else 0.0
    hits = []
    for band in tx.service.tx_bands_mhz:
        for victim in rx.service.rx_bands_mhz:
            for order, lo, hi, count, p_lo, p_hi in _harmonic_hits(band, step, victim, order_limit):
                figures, margin = margin_figures(tx, rx, unit, isolation, p_lo)
                hits.append(CositeHit(order, lo, hi, count, step, p_lo, p_hi, figures, margin))
    return hits


def coupling_figures(tx: Side, rx: Side, unit: str, isolation: dict, freq_mhz: float) -> list[Figure]:
    """The coupling (dB, negative) between the two antennas at freq_mhz, with how it was estimated."""
    pair = isolation.get(frozenset((tx.installation.position, rx.installation.position)))
    iso = pair.figure(FK.PAIR_ISOLATION_DB) if pair is not None else None
    at = pair.figure(FK.PAIR_FREQ_MHZ) if pair is not None else None
    if iso is not None and at is not None and isinstance(iso.value, float):
        scaled = iso.value + 20.0 * math.log10(freq_mhz / float(at.value))
        return [Figure(FK.COSITE_COUPLING_DB, "Coupling between the antennas", -scaled, "dB",
                       "C = −(I_pair + 20·log₁₀(f / f_pair))",
                       (("I_pair", f"{iso.value:.1f} dB"), ("f_pair", f"{float(at.value):g} MHz"),
                        ("f", f"{freq_mhz:.3f} MHz")),
                       f"the pair's isolation figure scaled by the free-space law, gains held; {FRIIS}", iso.src)]
    a, b = tx.installation.location, rx.installation.location
    d = distance_m((a.sta, a.bl, a.wl), (b.sta, b.bl, b.wl), unit)
    loss = free_space_loss_db(freq_mhz * 1e6, d) if d > 0 else 0.0
    return [
        Figure(FK.COSITE_DISTANCE_M, "Distance between the antennas", d, "m", "|P_RX − P_TX| from STA/BL/WL",
               (("unit", unit),), src=where(rx.installation, "location")),
        Figure(FK.COSITE_COUPLING_DB, "Coupling between the antennas", -loss, "dB", "C = −20·log₁₀(4πd/λ)",
               (("d", f"{d:.2f} m"), ("f", f"{freq_mhz:.3f} MHz (lowest of the harmonic's range)")),
               f"free space between isotropic antennas, no fuselage shadowing (assumed); {FRIIS}",
               where(tx.installation, "location")),
    ]


def margin_figures(tx: Side, rx: Side, unit: str, isolation: dict,
                   freq_mhz: float) -> tuple[tuple[Figure, ...], float | None]:
    """The margin's arithmetic as figures, step by step; the margin, or None without a level."""
    power, power_source, power_src = tx.values["tx_peak_power_dbm"]
    emission, emission_source, emission_src = tx.values["spurious_dbc"]
    threshold, threshold_source, threshold_src = rx.values["protection_dbm"]
    coupling = coupling_figures(tx, rx, unit, isolation, freq_mhz)
    figures = [Figure(FK.COSITE_TX_POWER_DBM, f"Peak power of {tx.installation.position}", power, "dBm",
                      source=power_source, src=power_src),
               Figure(FK.COSITE_EMISSION_DBC, "Harmonic level", emission, "dBc",
                      source=emission_source, src=emission_src),
               feeder_figure(FK.COSITE_TX_FEEDER_LOSS_DB, "Transmit feeder loss", tx),
               *coupling,
               feeder_figure(FK.COSITE_RX_FEEDER_LOSS_DB, "Receive feeder loss", rx),
               Figure(FK.COSITE_THRESHOLD_DBM, f"Protection threshold of {rx.installation.position}", threshold,
                      "dBm", source=threshold_source, src=threshold_src)]
    if power is None or emission is None:
        return tuple(figures), None
    m = cosite.interference_margin(power, emission, figures[2].value, coupling[-1].value,
                                   figures[-2].value, threshold)
    figures += [
        Figure(FK.COSITE_LEVEL_DBM, "Level at the receiver's input", m.at_receiver_dbm, "dBm",
               "P + E − L_tx + C − L_rx", (("at the transmit antenna", f"{m.at_tx_antenna_dbm:.1f} dBm"),
                                           ("at the receive antenna", f"{m.at_rx_antenna_dbm:.1f} dBm")),
               MARGIN_SOURCE),
        Figure(FK.COSITE_MARGIN_DB, "Margin", m.margin_db, "dB", "threshold − level", source=MARGIN_SOURCE,
               src=emission_src),
    ]
    return tuple(figures), m.margin_db


def feeder_figure(key: str, label: str, side: Side) -> Figure:
    """A side's total feeder loss (0 dB, stated, when the feeder figure could not be computed)."""
    if side.feeder is None:
        return Figure(key, label, 0.0, "dB", source="no feeder figure: taken as 0 dB (conservative)",
                      src=where(side.installation, "feeder"))
    return Figure(key, label, side.feeder.value, "dB", "the installation's total feeder loss",
                  (("at", f"{side.service.id}'s highest frequency"),), side.feeder.source, side.feeder.src)


def intermod_products(aircraft_id: str, transmitters: list[Side], receivers: list[Side]) -> list[CositeIntermod]:
    """Every 3rd- and 5th-order product of two transmitters over their ranges that lands in a receiver's
    band; products of transmitters and a receiver all on one suppression line are marked excused."""
    out = []
    for i, one in enumerate(transmitters):
        for two in transmitters[i + 1:]:
            for rx in receivers:
                if rx.installation in (one.installation, two.installation):
                    continue
                line = one.line if one.line and one.line == two.line == rx.line else ""
                for f1 in one.service.tx_bands_mhz:
                    for f2 in two.service.tx_bands_mhz:
                        for victim in rx.service.rx_bands_mhz:
                            out += [CositeIntermod(aircraft_id, one.installation.position,
                                                   two.installation.position, rx.installation.position, *hit, line)
                                    for hit in _intermod_hits(f1, f2, victim)]
    return out


@lru_cache(maxsize=4096)
def _harmonic_hits(band: tuple[float, float], step_khz: float, victim: tuple[float, float],
                   order_limit: int) -> tuple[tuple[int, float, float, int, float, float], ...]:
    """(order, first, last, channel count (0: continuous), product low, product high) of each harmonic
    that lands, once per set of ranges in a process (they depend on the service table only)."""
    if step_khz:
        return tuple((h.order, h.first_channel_mhz, h.last_channel_mhz, h.channel_count, h.product_lo_mhz,
                      h.product_hi_mhz)
                     for h in cosite.channel_harmonic_hits((band[0], band[1], step_khz), victim, order_limit))
    return tuple((h.order, h.tx_lo_mhz, h.tx_hi_mhz, 0, h.product_lo_mhz, h.product_hi_mhz)
                 for h in cosite.harmonic_hits(band, victim, order_limit))


@lru_cache(maxsize=4096)
def _intermod_hits(f1: tuple[float, float], f2: tuple[float, float], victim: tuple[float, float]) -> tuple:
    """`physics.cosite.intermod_hits` once per set of ranges in a process: the products depend on the
    ranges only, and every aircraft's transmitters and receivers draw them from the same service table."""
    return tuple((hit.label, hit.order, (hit.f1_lo_mhz, hit.f1_hi_mhz), (hit.f2_lo_mhz, hit.f2_hi_mhz),
                  (hit.product_lo_mhz, hit.product_hi_mhz))
                 for hit in cosite.intermod_hits(f1, f2, victim, INTERMOD_ORDERS))
