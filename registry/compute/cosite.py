"""Co-site figures of one aircraft: which transmitter harmonics land in which receiver's band, and the margin.

For every transmitter → receiver pair of installations whose services do not share a suppression line,
every harmonic order 2..policy limit of the transmit ranges (snapped to the channel plan where the table
gives one) that lands in a receive band, with the level at the receiver and its margin against the
receiver's protection threshold (`physics.cosite.interference_margin`), compared at the plane the
threshold is stated for (receiver input or antenna port). Intermodulation products of two transmitters
get a level and margin in `cosite_intermod`. Installations without a protection threshold are named as
not analysed. The figures, the coupling and the feeders are `cosite_sides`'.

Feeder losses are the installations' total feeder loss figures (each at its own service's frequency;
the transmit cable loses more at the harmonic, so the figure understates that loss: conservative).
"""
from __future__ import annotations

from functools import lru_cache

from registry.compute.cosite_intermod import intermod_products
from registry.compute.cosite_sides import (COORD_UNITS, FRIIS, MARGIN_SOURCE, Geometry, Side, coupling_figures,
                                          feeder_figure, figure_of, level_figures, receive_figures)
from registry.core import figure_keys as FK
from registry.core.model import Aircraft, Fleet
from registry.core.results import AircraftCosite, CositeHit, CositePath, Figure, InstallationResult, PairResult
from registry.physics import cosite

def cosite_result(fleet: Fleet, aircraft: Aircraft, installations: dict[tuple[str, str], InstallationResult],
                  pairs: list[PairResult]) -> AircraftCosite:
    """Every transmitter → receiver path and every intermodulation product that lands, for one aircraft;
    the installations without a protection threshold are named as not analysed."""
    sides = [Side(fleet, inst, installations.get((aircraft.id, inst.position)))
             for inst in aircraft.installations.values()]
    transmitters = [side for side in sides if side.service.transmits and side.value("tx_bands_mhz")]
    listening = [side for side in sides if side.value("rx_bands_mhz")]
    receivers = [side for side in listening if side.value("protection_dbm") is not None]
    geometry = Geometry(COORD_UNITS[fleet.airframe_of(aircraft).coord_unit], pairs)
    paths = []
    for tx in transmitters:
        for rx in receivers:
            if tx.installation is rx.installation:
                continue
            line = tx.line if cosite.excused_by_suppression(tx.line, rx.line) else ""
            hits = () if line else tuple(harmonic_hits(fleet, tx, rx, geometry))
            if hits or line:
                paths.append(CositePath(aircraft.id, tx.position, rx.position, tx.service.id, rx.service.id, hits, line))
    bands = tuple((s.position, s.service.id, "tx", s.value("tx_bands_mhz")) for s in transmitters)
    bands += tuple((s.position, s.service.id, "rx", s.value("rx_bands_mhz")) for s in receivers)
    not_analysed = tuple((s.position, s.service.id) for s in listening if s not in receivers)
    return AircraftCosite(aircraft.id, tuple(paths), tuple(intermod_products(aircraft.id, transmitters, receivers,
                                                                             geometry)), bands, not_analysed)


def harmonic_hits(fleet: Fleet, tx: Side, rx: Side, geometry: Geometry) -> list[CositeHit]:
    """Every harmonic 2..order limit (the transmitter's, else the policy's) of the transmitter's ranges
    that lands in one of the receive bands."""
    order_limit = tx.value("max_harmonic_order") or fleet.policy.cosite_max_harmonic_order
    steps = tx.value("tx_channel_steps_khz")
    step = min(steps) if steps else 0.0
    hits = []
    for band in tx.value("tx_bands_mhz"):
        for victim in rx.value("rx_bands_mhz"):
            for order, lo, hi, count, p_lo, p_hi in _harmonic_hits(tuple(band), step, tuple(victim), order_limit):
                figures, margin = margin_figures(tx, rx, geometry, p_lo)
                hits.append(CositeHit(order, lo, hi, count, step, p_lo, p_hi, figures, margin))
    return hits


def margin_figures(tx: Side, rx: Side, geometry: Geometry, freq_mhz: float) -> tuple[tuple[Figure, ...], float | None]:
    """The margin's arithmetic as figures, step by step; the margin, or None without a level."""
    coupling = coupling_figures(tx, rx, geometry, freq_mhz)
    tx_feeder = feeder_figure(FK.COSITE_TX_FEEDER_LOSS_DB, "Transmit feeder loss", tx)
    receive, plane = receive_figures(rx)
    power = figure_of(tx, "tx_peak_power_dbm", FK.COSITE_TX_POWER_DBM, f"Peak power of {tx.position}", "dBm")
    emission = figure_of(tx, "spurious_dbc", FK.COSITE_EMISSION_DBC, "Harmonic level", "dBc")
    figures = [power, emission, tx_feeder, *coupling, *receive]
    if power.value is None or emission.value is None:
        return tuple(figures), None
    rx_loss = receive[0].value if plane == "receiver_input" else 0.0
    m = cosite.interference_margin(power.value, emission.value, tx_feeder.value, coupling[-1].value,
                                   rx_loss, receive[-1].value, plane)
    return tuple(figures + level_figures(m, MARGIN_SOURCE, emission.src)), m.margin_db


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


METHODS = (
    ("Harmonic frequencies", "n·f over the transmit range, n = 2 … the order limit; channels k with "
     "v_lo ≤ n·(f_first + k·Δ) ≤ v_hi", "ITU-R SM.329-13 §1.1.1 (harmonic emissions at whole multiples of the "
     "carrier); channel grid of EUROCAE ED-23C (8.33 kHz = 25 kHz / 3)", "sourced"),
    ("Intermodulation frequencies", "a·f1 + b·f2, |a| + |b| = 3 or 5, over both transmit ranges (interval "
     "arithmetic)", "ITU-R SM.329-13 §1.1.3 (intermodulation products)", "sourced"),
    ("Coupling between two antennas", "C = −20·log₁₀(4πd/λ) (isotropic, free space, no shadowing), or the pair's "
     "isolation scaled by 20·log₁₀(f/f_pair)", FRIIS, "sourced; the isotropic, unshadowed path is an assumption"),
    ("Level at the victim", "P + E − L_tx + C − L_rx at the receiver's input; P + E − L_tx + C at the antenna's "
     "port, for a threshold stated there", MARGIN_SOURCE, "sourced (the form); the plane is the threshold's own"),
    ("Margin", "threshold − level; below 0 dB: cosite; below the policy's small margin: cosite-small",
     MARGIN_SOURCE, "sourced (the form); the small margin is the policy's"),
    ("Transmitter intermodulation", "product = P_I − L_I + C_IG − L_G − L_conv at the port of the transmitter "
     "with the larger coefficient; then as a harmonic of it (emission 0 dBc)", "check against ITU-R SM.1134-1 "
     "Annex 1 §4 (power of transmitter intermodulation products) and Report ITU-R SM.2021 §2.1",
     "common practice, no source"),
    ("Figures used", "the installed radio's own (radio), else the policy's (cosite_services), else the "
     "service table's; each shown with its standing", "registry/data/services.yaml, policy.yaml",
     "each figure's own"),
)
"""The co-site method step by step, as the methods page lists it: (step, formula, source, standing)."""
