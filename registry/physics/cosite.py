"""Co-site interference between radios on one airframe: harmonics, intermodulation, margin.

Frequencies in MHz, levels in dBm, ratios and losses in dB. Plain floats and tuples in and out.

Harmonics. The n-th harmonic of a carrier f is n·f, so a transmit range [f_lo, f_hi] puts its n-th
harmonic on [n·f_lo, n·f_hi] (field notes, "Co-site interference"; ITU-R SM.329, §1.1.1 defines
harmonic emissions as spurious emissions at whole multiples of the carrier). Only carriers are
followed: an emission of bandwidth B has an n-th harmonic about n·B wide, which a caller covers by
widening the victim band.

Intermodulation. Two carriers f1 and f2 in a non-linear stage give products a·f1 + b·f2 with whole
non-zero a, b; the order is |a| + |b| (third order: 2f1 − f2, 2f2 − f1, 2f1 + f2, f1 + 2f2; fifth:
3f1 − 2f2, ...; ITU-R SM.329, §1.1.3). Over two transmit ranges the set of (f1, f2) giving a product
inside a victim band is a rectangle cut by a slab; its projections on the f1 and f2 axes, and the
product range inside the band, follow from interval arithmetic and are exact.

Margin. Level of the unwanted emission at the victim receiver's input, all in dB:
  level_dbm = tx_power_dbm + emission_dbc − tx_feeder_loss_db + coupling_db − rx_feeder_loss_db
  margin_db = threshold_dbm − level_dbm
coupling_db is the antenna-to-antenna coupling (negative; coupling = −isolation), as in the field
notes' co-site paragraph and policy's isolation rules. A positive margin means the receiver
tolerates the emission. The threshold is compared at the plane it is stated for: at the receiver's
input (after the receive feeder, the level above), or at the antenna's port (before the feeder:
level_dbm = tx_power_dbm + emission_dbc − tx_feeder_loss_db + coupling_db, no receive feeder loss).

Transmitter intermodulation (conversion-loss model). A carrier of transmitter I reaches the output
stage of transmitter G through the two antennas and both feeders; the stage mixes it with its own
carrier and sends the product out, conversion_loss_db below the coupled-in level:
  coupled_in_dbm = P_I − L_I + C_IG − L_G
  product_dbm    = coupled_in_dbm − conversion_loss_db        (at G's port)
The product then reaches the victim like a harmonic of G (the margin above, emission 0 dBc).
Common practice, no source for the form; the document to check it against is ITU-R SM.1134-1,
Annex 1 §4 (power of transmitter intermodulation products), and Report ITU-R SM.2021 §2.1.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import NamedTuple

_EPS_MHZ = 1e-9
"""Tolerance on frequency comparisons, MHz (1 mHz): absorbs rounding in channel arithmetic."""


def _band(lo_mhz: float, hi_mhz: float, what: str) -> tuple[float, float]:
    lo, hi = float(lo_mhz), float(hi_mhz)
    if not (0.0 < lo <= hi and math.isfinite(hi)):
        raise ValueError(f"{what} must be 0 < low <= high MHz, got [{lo_mhz}, {hi_mhz}]")
    return lo, hi


# --- harmonics ----------------------------------------------------------------------------------

@dataclass(frozen=True)
class HarmonicHit:
    """Transmit frequencies [tx_lo_mhz, tx_hi_mhz] whose `order`-th harmonic falls in the victim band,
    and that harmonic's range [product_lo_mhz, product_hi_mhz] = order × the transmit range."""

    order: int
    tx_lo_mhz: float
    tx_hi_mhz: float
    product_lo_mhz: float
    product_hi_mhz: float


def harmonic_hits(tx_mhz: tuple[float, float], victim_mhz: tuple[float, float],
                  max_order: int) -> list[HarmonicHit]:
    """For orders n = 2..max_order, the transmit sub-range whose n-th harmonic lies in the victim band.

    n·f ∈ [v_lo, v_hi]  ⇔  f ∈ [v_lo/n, v_hi/n]; intersected with the transmit range [f_lo, f_hi].
    Frequencies in MHz. Orders with an empty intersection are left out; ascending order.
    """
    f_lo, f_hi = _band(*tx_mhz, "transmit range")
    v_lo, v_hi = _band(*victim_mhz, "victim band")
    hits = []
    for n in range(2, int(max_order) + 1):
        lo, hi = max(f_lo, v_lo / n), min(f_hi, v_hi / n)
        if lo <= hi:
            hits.append(HarmonicHit(n, lo, hi, n * lo, n * hi))
    return hits


@dataclass(frozen=True)
class ChannelHarmonicHit:
    """Channels first_channel_mhz..last_channel_mhz (channel_count of them, inclusive) whose
    `order`-th harmonic lies in the victim band, and the harmonics' range in MHz."""

    order: int
    first_channel_mhz: float
    last_channel_mhz: float
    channel_count: int
    product_lo_mhz: float
    product_hi_mhz: float


def channel_count(first_mhz: float, last_mhz: float, step_khz: float) -> int:
    """Number of channels from first to last (inclusive) at step_khz spacing.

    The plan's steps are (last − first)/round((last − first)/step), so a step given to a few digits
    (8.333 for 25/3 kHz; ED-23C defines the 8.33 kHz spacing as 25 kHz / 3) lands on the true grid.
    """
    first, last = _band(first_mhz, last_mhz, "channel plan")
    if not step_khz > 0:
        raise ValueError(f"channel step must be positive, got {step_khz} kHz")
    return int(round((last - first) * 1000.0 / step_khz)) + 1


def channel_mhz(first_mhz: float, last_mhz: float, step_khz: float, index: int) -> float:
    """Frequency (MHz) of channel `index` (0 = first) of the plan first..last at step_khz."""
    steps = channel_count(first_mhz, last_mhz, step_khz) - 1
    if steps == 0:
        return float(first_mhz)
    return float(first_mhz) + index * (float(last_mhz) - float(first_mhz)) / steps


def channel_harmonic_hits(plan: tuple[float, float, float], victim_mhz: tuple[float, float],
                          max_order: int) -> list[ChannelHarmonicHit]:
    """Harmonic hits snapped to a channel plan (first_mhz, last_mhz, step_khz).

    Channel k is f_k = first + k·(last − first)/K, k = 0..K. Its n-th harmonic is in the band when
    v_lo ≤ n·f_k ≤ v_hi, i.e. k from ceil((v_lo/n − first)/Δ) to floor((v_hi/n − first)/Δ), clipped
    to 0..K. Orders with no channel are left out.
    """
    first, last, step_khz = plan
    count = channel_count(first, last, step_khz)
    delta = (last - first) / (count - 1) if count > 1 else 1.0
    hits = []
    for hit in harmonic_hits((first, last), victim_mhz, max_order):
        k_lo = max(0, math.ceil((hit.tx_lo_mhz - first) / delta - _EPS_MHZ / delta))
        k_hi = min(count - 1, math.floor((hit.tx_hi_mhz - first) / delta + _EPS_MHZ / delta))
        if k_lo > k_hi:
            continue
        f_lo, f_hi = channel_mhz(first, last, step_khz, k_lo), channel_mhz(first, last, step_khz, k_hi)
        hits.append(ChannelHarmonicHit(hit.order, f_lo, f_hi, k_hi - k_lo + 1,
                                       hit.order * f_lo, hit.order * f_hi))
    return hits


# --- intermodulation ----------------------------------------------------------------------------

@dataclass(frozen=True)
class IntermodHit:
    """Product a·f1 + b·f2 of order |a| + |b| lying in the victim band over [product_lo, product_hi]
    MHz, produced only by f1 in [f1_lo, f1_hi] and f2 in [f2_lo, f2_hi] MHz."""

    a: int
    b: int
    f1_lo_mhz: float
    f1_hi_mhz: float
    f2_lo_mhz: float
    f2_hi_mhz: float
    product_lo_mhz: float
    product_hi_mhz: float

    @property
    def order(self) -> int:
        return abs(self.a) + abs(self.b)

    @property
    def label(self) -> str:
        """The product written out, e.g. '2·f1 − f2', 'f1 + 2·f2', '3·f2 − 2·f1'."""
        terms = sorted([(self.a, "f1"), (self.b, "f2")], key=lambda t: t[0] < 0)
        text = ""
        for n, (k, name) in enumerate(terms):
            word = name if abs(k) == 1 else f"{abs(k)}·{name}"
            text += (word if n == 0 else f" {'+' if k > 0 else '−'} {word}")
        return text


def coefficient_pairs(order: int) -> list[tuple[int, int]]:
    """Every (a, b), both non-zero whole numbers, with |a| + |b| = order (order ≥ 2)."""
    pairs = []
    for m in range(1, order):
        n = order - m
        pairs += [(m, n), (m, -n), (-m, n)]
    return pairs


def _span(k: int, lo: float, hi: float) -> tuple[float, float]:
    """Range of k·f for f in [lo, hi]."""
    return (k * lo, k * hi) if k > 0 else (k * hi, k * lo)


def _solve(k: int, lo: float, hi: float) -> tuple[float, float]:
    """Range of f with k·f in [lo, hi] (k ≠ 0)."""
    return (lo / k, hi / k) if k > 0 else (hi / k, lo / k)


def intermod_hit(a: int, b: int, f1_mhz: tuple[float, float], f2_mhz: tuple[float, float],
                 victim_mhz: tuple[float, float]) -> IntermodHit | None:
    """The product a·f1 + b·f2 over the two transmit ranges, where it meets the victim band.

    Interval arithmetic: a·f1 + b·f2 spans span(a·f1) + span(b·f2); it meets [v_lo, v_hi] on
    [max(p_lo, v_lo), min(p_hi, v_hi)]. f1 gives an in-band product for some f2 exactly when
    a·f1 ∈ [v_lo − max(b·f2), v_hi − min(b·f2)], and likewise for f2. None when they do not meet.
    """
    l1, h1 = _band(*f1_mhz, "first transmit range")
    l2, h2 = _band(*f2_mhz, "second transmit range")
    v_lo, v_hi = _band(*victim_mhz, "victim band")
    s1, s2 = _span(a, l1, h1), _span(b, l2, h2)
    p_lo, p_hi = max(s1[0] + s2[0], v_lo), min(s1[1] + s2[1], v_hi)
    if p_lo > p_hi:
        return None
    g1 = _solve(a, v_lo - s2[1], v_hi - s2[0])
    g2 = _solve(b, v_lo - s1[1], v_hi - s1[0])
    f1 = _ordered(max(l1, g1[0]), min(h1, g1[1]))
    f2 = _ordered(max(l2, g2[0]), min(h2, g2[1]))
    return IntermodHit(a, b, f1[0], f1[1], f2[0], f2[1], p_lo, p_hi)


def _ordered(lo: float, hi: float) -> tuple[float, float]:
    """An interval known to be non-empty; ends crossed by rounding (a last-digit difference) meet."""
    return (lo, hi) if lo <= hi else ((lo + hi) / 2, (lo + hi) / 2)


def intermod_hits(f1_mhz: tuple[float, float], f2_mhz: tuple[float, float],
                  victim_mhz: tuple[float, float], orders: tuple[int, ...] = (3, 5)) -> list[IntermodHit]:
    """Every product a·f1 + b·f2 of the given orders that meets the victim band (see intermod_hit).

    Products are positive frequencies: 2f2 − f1 appears as (a, b) = (−1, 2), f1 − 2f2 as (1, −2);
    pairs that cannot be positive over the ranges never meet a band above 0 MHz.
    """
    hits = []
    for order in orders:
        if order < 2:
            raise ValueError(f"an intermodulation order is at least 2, got {order}")
        for a, b in coefficient_pairs(order):
            hit = intermod_hit(a, b, f1_mhz, f2_mhz, victim_mhz)
            if hit is not None:
                hits.append(hit)
    return hits


# --- margin -------------------------------------------------------------------------------------

class InterferenceMargin(NamedTuple):
    """Every step of the co-site level and margin, so a page can lay the arithmetic out (a named tuple:
    an aircraft rates a thousand intermodulation products, and tuples are the cheapest to make).

    emission_dbm        = tx_power_dbm + emission_dbc         (at the transmitter's port)
    at_tx_antenna_dbm   = emission_dbm − tx_feeder_loss_db
    at_rx_antenna_dbm   = at_tx_antenna_dbm + coupling_db     (coupling = −isolation)
    at_receiver_dbm     = at_rx_antenna_dbm − rx_feeder_loss_db
    compared_dbm        = at_receiver_dbm, or at_rx_antenna_dbm for a threshold at the antenna port
    margin_db           = threshold_dbm − compared_dbm        (≥ 0: tolerated)
    """

    tx_power_dbm: float
    emission_dbc: float
    emission_dbm: float
    tx_feeder_loss_db: float
    at_tx_antenna_dbm: float
    coupling_db: float
    at_rx_antenna_dbm: float
    rx_feeder_loss_db: float
    at_receiver_dbm: float
    threshold_dbm: float
    margin_db: float
    plane: str = "receiver_input"
    compared_dbm: float = 0.0

    @property
    def tolerated(self) -> bool:
        return self.margin_db >= 0.0


PLANES = ("receiver_input", "antenna_port")
"""Where a protection threshold is stated: after the receive feeder, or before it."""


def interference_margin(tx_power_dbm: float, emission_dbc: float, tx_feeder_loss_db: float,
                        coupling_db: float, rx_feeder_loss_db: float,
                        threshold_dbm: float, plane: str = "receiver_input") -> InterferenceMargin:
    """Unwanted level at the victim and its margin against the receiver's threshold, at the threshold's plane.

    receiver_input: level = P_tx + E − L_tx + C − L_rx (dBm); antenna_port: level = P_tx + E − L_tx + C
    (the receive feeder lies behind the plane). margin = threshold − level (dB); E in dBc (negative for
    an emission below the carrier), C the coupling in dB (negative), losses positive dB.
    """
    if plane not in PLANES:
        raise ValueError(f"a threshold's plane is one of {PLANES}, got {plane!r}")
    emission_dbm = tx_power_dbm + emission_dbc
    at_tx = emission_dbm - tx_feeder_loss_db
    at_rx = at_tx + coupling_db
    at_receiver = at_rx - rx_feeder_loss_db
    compared = at_rx if plane == "antenna_port" else at_receiver
    return InterferenceMargin(tx_power_dbm, emission_dbc, emission_dbm, tx_feeder_loss_db, at_tx,
                              coupling_db, at_rx, rx_feeder_loss_db, at_receiver, threshold_dbm,
                              threshold_dbm - compared, plane, compared)


@dataclass(frozen=True)
class TransmitterIntermod:
    """Transmitter intermodulation at the generating transmitter G's port, step by step (dBm, dB)."""

    intruder_power_dbm: float
    intruder_feeder_loss_db: float
    coupling_db: float
    generator_feeder_loss_db: float
    coupled_in_dbm: float
    conversion_loss_db: float
    product_dbm: float


def transmitter_intermod(intruder_power_dbm: float, intruder_feeder_loss_db: float, coupling_db: float,
                         generator_feeder_loss_db: float, conversion_loss_db: float) -> TransmitterIntermod:
    """Level of a transmitter-generated intermodulation product at the generating transmitter's port.

    coupled_in = P_I − L_I + C_IG − L_G (dBm): the intruder's carrier reaching G's output stage through
    both feeders and the antennas' coupling C_IG (negative dB); product = coupled_in − L_conv (dBm).
    Common practice, no source (the conversion-loss model; check ITU-R SM.1134-1 Annex 1 §4).
    """
    coupled_in = intruder_power_dbm - intruder_feeder_loss_db + coupling_db - generator_feeder_loss_db
    return TransmitterIntermod(intruder_power_dbm, intruder_feeder_loss_db, coupling_db, generator_feeder_loss_db,
                               coupled_in, conversion_loss_db, coupled_in - conversion_loss_db)


def coupling_from_isolation_db(isolation_db: float) -> float:
    """Coupling (dB) from isolation (dB): coupling = −isolation (field notes, Friis paragraph)."""
    return -float(isolation_db)


def dbm_from_w(power_w: float) -> float:
    """Power in dBm: 10·log10(P / 1 mW)."""
    if not power_w > 0:
        raise ValueError(f"power must be positive, got {power_w} W")
    return 10.0 * math.log10(power_w * 1000.0)


def dbc_from_dbm(emission_dbm: float, carrier_dbm: float) -> float:
    """An absolute emission level (dBm) as dB relative to the carrier (dBc): emission − carrier."""
    return float(emission_dbm) - float(carrier_dbm)


def excused_by_suppression(line_a: str | None, line_b: str | None) -> bool:
    """True when both services sit on the same suppression line (e.g. 'lband'): the line blanks one
    while the other transmits, so the pair is excused from the interference analysis (field notes)."""
    return bool(line_a) and line_a == line_b
