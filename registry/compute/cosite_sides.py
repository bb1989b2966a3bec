"""The two ends of a co-site path: each installation's co-site figures with where they came from, the
coupling between two antennas, the feeders, and the receive end's plane, level and margin figures.

A figure comes from the installed radio's own data (`radio`), else the policy (`cosite_services`), else
the service table; each keeps its standing ("policy: ..." for the policy's) and its registry line.

Coupling between the two antennas: where the aircraft has a pair isolation figure for the two
installations (`pair.isolation_db` at `pair.freq_mhz`) it is scaled to the frequency by the free-space
law (+20·log10(f/f_pair), gains held); otherwise free-space Friis between isotropic antennas at the
lowest frequency of the range (ITU-R P.525): no gain, no fuselage shadowing, the nearest end of the
range, which overstates the coupling where the airframe shadows one antenna.
"""
from __future__ import annotations

import math
from typing import Any

from registry.core import figure_keys as FK
from registry.core.model import Fleet, Installation, Service
from registry.core.results import Figure, InstallationResult, PairResult
from registry.core.sources import where
from registry.physics import cosite
from registry.physics.coupling import distance_m, free_space_loss_db

COORD_UNITS = {"in": "inch", "mm": "mm"}
"""The airframe's coordinate unit as the physics names it."""
FRIIS = "Friis, Proc. IRE 34 (1946); free-space loss per ITU-R P.525"
MARGIN_SOURCE = ("unwanted level as in CEPT wiki 'Example of calculations' §4.1 (iRSSunwanted, Eq. 20–21), "
                 "with the feeders' losses up to the threshold's plane")



FIGURE_KEYS = ("tx_bands_mhz", "tx_channel_steps_khz", "tx_peak_power_dbm", "spurious_dbc", "im3_conversion_loss_db",
               "im5_conversion_loss_db", "max_harmonic_order", "rx_bands_mhz", "protection_dbm", "protection_plane",
               "suppression_line")
"""Every co-site figure of a service: the table gives it, the policy may replace it (`cosite_services`)."""
RADIO_KEYS = ("tx_peak_power_dbm", "spurious_dbc", "protection_dbm")
"""The figures an installation's own `radio` may give, first of all."""
PLANE_DEFAULT = ("common practice, no source: a protection threshold is taken at the receiver's input unless the "
                 "service table or policy states another plane")
PLANE_WORDS = {"receiver_input": "at the receiver's input (after the receive feeder)",
               "antenna_port": "at the antenna's port (before the receive feeder)"}


class Side:
    """One installation as a transmitter or a receiver, with its figures and where each came from: the
    installed radio's own, else the policy's (`cosite_services`), else the service table's."""

    def __init__(self, fleet: Fleet, installation: Installation, result: InstallationResult | None):
        self.installation = installation
        self.service: Service = fleet.services[installation.service]
        radio = installation.radio
        policy = fleet.policy.cosite_services.get(self.service.id, {})
        self.values: dict[str, tuple] = {}
        for key in FIGURE_KEYS:
            own = getattr(radio, key) if radio is not None and key in RADIO_KEYS else None
            if own is not None:
                self.values[key] = (own, f"installed radio: {radio.source}", where(radio, key))
            elif key in policy:
                value, source = policy[key]
                self.values[key] = (value, f"policy: {source}",
                                    where(fleet.policy, f"cosite_services.{self.service.id}.{key}.value"))
            else:
                default = PLANE_DEFAULT if key == "protection_plane" else "service table, standing not given"
                self.values[key] = (getattr(self.service, key), self.service.sources.get(key, default),
                                    where(self.service, key))
        loss = result.figure(FK.FEEDER_TOTAL_LOSS_DB) if result is not None else None
        self.feeder = loss if loss is not None and isinstance(loss.value, float) else None
        self.receive: tuple[list[Figure], str] | None = None
        """`receive_figures` of this side, once worked out."""
        self.location_src = where(installation, "location")
        """The registry line of the antenna's location (every coupling figure names it)."""
        self.line: str = self.value("suppression_line") or ""
        self.position: str = installation.position

    def value(self, key: str) -> Any:
        return self.values[key][0]



class Geometry:
    """How two antennas of the aircraft couple: the pair isolation figures and the coordinate unit; and
    the couplings worked out so far (an aircraft's intermodulation products ask for the same ones again
    and again)."""

    def __init__(self, unit: str, pairs: list[PairResult]):
        self.unit = unit
        self.isolation = {frozenset((pair.position_a, pair.position_b)): pair for pair in pairs}
        self.couplings: dict[tuple[str, str, float], tuple[Figure, ...]] = {}
        self.between: dict[tuple[str, str], tuple[Figure | None, Figure | None, float]] = {}
        """Per (transmitter, receiver): the pair's isolation and its frequency figures, and the distance (m)."""

    def path(self, tx: Side, rx: Side) -> tuple[Figure | None, Figure | None, float]:
        """What a coupling between the two sides rests on at any frequency, worked out once per path."""
        key = (tx.position, rx.position)
        found = self.between.get(key)
        if found is None:
            pair = self.isolation.get(frozenset(key))
            a, b = tx.installation.location, rx.installation.location
            found = self.between[key] = (
                pair.figure(FK.PAIR_ISOLATION_DB) if pair is not None else None,
                pair.figure(FK.PAIR_FREQ_MHZ) if pair is not None else None,
                distance_m((a.sta, a.bl, a.wl), (b.sta, b.bl, b.wl), self.unit))
        return found


def coupling_figures(tx: Side, rx: Side, geometry: Geometry, freq_mhz: float) -> list[Figure]:
    """The coupling (dB, negative) between two installations' antennas at freq_mhz, with how it was estimated."""
    key = (tx.position, rx.position, freq_mhz)
    if key not in geometry.couplings:
        geometry.couplings[key] = tuple(_coupling_figures(tx, rx, geometry, freq_mhz))
    return list(geometry.couplings[key])


def _coupling_figures(tx: Side, rx: Side, geometry: Geometry, freq_mhz: float) -> list[Figure]:
    iso, at, d = geometry.path(tx, rx)
    if iso is not None and at is not None and isinstance(iso.value, float):
        scaled = iso.value + 20.0 * math.log10(freq_mhz / float(at.value))
        return [Figure(FK.COSITE_COUPLING_DB, "Coupling between the antennas", -scaled, "dB",
                       "C = −(I_pair + 20·log₁₀(f / f_pair))",
                       (("I_pair", f"{iso.value:.1f} dB"), ("f_pair", f"{float(at.value):g} MHz"),
                        ("f", f"{freq_mhz:.3f} MHz")),
                       f"the pair's isolation figure scaled by the free-space law, gains held; {FRIIS}", iso.src)]
    loss = free_space_loss_db(freq_mhz * 1e6, d) if d > 0 else 0.0
    return [
        Figure(FK.COSITE_DISTANCE_M, "Distance between the antennas", d, "m", "|P_RX − P_TX| from STA/BL/WL",
               (("unit", geometry.unit),), src=rx.location_src),
        Figure(FK.COSITE_COUPLING_DB, "Coupling between the antennas", -loss, "dB", "C = −20·log₁₀(4πd/λ)",
               (("d", f"{d:.2f} m"), ("f", f"{freq_mhz:.3f} MHz (lowest of the range)")),
               f"free space between isotropic antennas, no fuselage shadowing (assumed); {FRIIS}",
               tx.location_src),
    ]


def figure_of(side: Side, key: str, fk: str, label: str, unit: str) -> Figure:
    """One of a side's co-site figures, with its standing and registry line."""
    value, source, src = side.values[key]
    return Figure(fk, label, value, unit, source=source, src=src)


def receive_figures(rx: Side) -> tuple[list[Figure], str]:
    """The receive feeder (only for a threshold at the receiver's input), the plane and the threshold."""
    if rx.receive is None:
        rx.receive = _receive_figures(rx)
    return list(rx.receive[0]), rx.receive[1]


def _receive_figures(rx: Side) -> tuple[list[Figure], str]:
    plane = rx.value("protection_plane") or "receiver_input"
    plane_figure = figure_of(rx, "protection_plane", FK.COSITE_THRESHOLD_PLANE,
                             "Where the threshold applies", "")._replace(value=PLANE_WORDS[plane])
    feeder = [feeder_figure(FK.COSITE_RX_FEEDER_LOSS_DB, "Receive feeder loss", rx)] if plane == "receiver_input" else []
    return [*feeder, plane_figure, figure_of(rx, "protection_dbm", FK.COSITE_THRESHOLD_DBM,
                                             f"Protection threshold of {rx.position}", "dBm")], plane


def level_figures(m: cosite.InterferenceMargin, source: str, src: str) -> list[Figure]:
    """The level at the threshold's plane and the margin, with the arithmetic's steps."""
    at_port = m.plane == "antenna_port"
    formula = "P + E − L_tx + C" if at_port else "P + E − L_tx + C − L_rx"
    label = "Level at the receive antenna's port" if at_port else "Level at the receiver's input"
    return [Figure(FK.COSITE_LEVEL_DBM, label, m.compared_dbm, "dBm", formula,
                   (("at the transmit antenna", f"{m.at_tx_antenna_dbm:.1f} dBm"),
                    ("at the receive antenna", f"{m.at_rx_antenna_dbm:.1f} dBm")), source),
            Figure(FK.COSITE_MARGIN_DB, "Margin", m.margin_db, "dB", "threshold − level", source=source, src=src)]


def feeder_figure(key: str, label: str, side: Side) -> Figure:
    """A side's total feeder loss (0 dB, stated, when the feeder figure could not be computed)."""
    if side.feeder is None:
        return Figure(key, label, 0.0, "dB", source="no feeder figure: taken as 0 dB (conservative)",
                      src=where(side.installation, "feeder"))
    return Figure(key, label, side.feeder.value, "dB", "the installation's total feeder loss",
                  (("at", f"{side.service.id}'s highest frequency"),), side.feeder.source, side.feeder.src)
