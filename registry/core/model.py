"""The registry as frozen dataclasses: what `load_fleet` returns and every later stage reads.

Every object carries `src`, the position of its mapping in the YAML, and `where(field)` gives the position
of any field inside it (`installation.where("feeder.length_m")`), so a discrepancy can point to the line
a value came from. Collections keyed by id are read-only mappings iterated in sorted id order.
Lengths are in metres, frequencies in MHz; aircraft coordinates and airframe dimensions are in the
airframe type's `coord_unit`. No physics here.
"""
from __future__ import annotations

from collections.abc import Iterator
from dataclasses import MISSING, dataclass, field, fields
from datetime import date
from pathlib import Path

from registry.core.base import FrozenMap, Sourced
from registry.core.memo import by_unordered, hash_once
from registry.core.hardware import (AdapterPart, Amplifier, Bonding, ConnectorEnd, ManualRef,  # noqa: F401
                                    RadioUnit, Splitter)

SURFACES = ("top", "bottom", "fin", "nose", "tail", "wing_left", "wing_right", "side_left", "side_right")


# --- aircraft -------------------------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True, slots=True)
class Location(Sourced):
    """Body-axis position in the airframe's coord_unit: station, buttline (+ right), waterline."""

    sta: float
    bl: float
    wl: float


@dataclass(frozen=True, kw_only=True, slots=True)
class GroundPlane(Sourced):
    """`skin`, `plate` (round with `radius_m`, or square with `side_m`) or `none`."""

    type: str
    radius_m: float | None = None
    side_m: float | None = None


@dataclass(frozen=True, kw_only=True, slots=True)
class Feeder(Sourced):
    """The cable run; `adapters` counts `adapter_parts` when the file leaves it out."""
    cable: str
    length_m: float
    connectors: int
    adapters: int = 0
    antenna_end: ConnectorEnd | None = None
    radio_end: ConnectorEnd | None = None
    adapter_parts: tuple[AdapterPart, ...] = ()
    radio_unit: RadioUnit | None = None


@dataclass(frozen=True, kw_only=True, slots=True)
class Measured(Sourced):
    """The last measurement. `sweep` is the Touchstone file's path (joined onto the data folder)."""

    date: date
    vswr: float | None = None
    sweep: Path | None = None


@dataclass(frozen=True, kw_only=True, slots=True)
class RadioFigures(Sourced):
    """The installed radio's own figures (its data sheet), in place of the service table's typical ones."""

    tx_peak_power_dbm: float | None = None
    spurious_dbc: float | None = None
    protection_dbm: float | None = None
    source: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class Installation(Sourced):
    position: str
    service: str
    antenna: str
    location: Location
    surface: str
    feeder: Feeder
    ground_plane: GroundPlane | None = None
    measured: Measured | None = None
    coupler: bool = False
    installed: date | None = None
    notes: str = ""
    radio: RadioFigures | None = None
    """The installed radio's own co-site figures, overriding the service table's."""
    antenna_serial: str = ""
    access_panel: str = ""
    bonding: Bonding | None = None
    manuals: tuple[ManualRef, ...] = ()
    amplifier: Amplifier | None = None  # an active antenna's; a position sharing the antenna has the owner's
    splitter: Splitter | None = None  # on the antenna's owner and on every position it feeds
    shared_from: str | None = None  # the position whose antenna this one uses through its splitter


@dataclass(frozen=True, kw_only=True, slots=True)
class Modification(Sourced):
    ref: str
    date: date
    summary: str


@dataclass(frozen=True, kw_only=True, slots=True)
class Aircraft(Sourced):
    """One aircraft; `installations` maps position id to installation, in sorted position order."""

    id: str
    registration: str
    airframe: str
    installations: FrozenMap
    serial: str | None = None
    modifications: tuple[Modification, ...] = ()


# --- airframe types -------------------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True, slots=True)
class Section(Sourced):
    """One fuselage cross section: an ellipse at `sta` centred on (BL 0, `centre_wl`)."""

    sta: float
    centre_wl: float
    half_width: float
    half_height: float


@dataclass(frozen=True, kw_only=True, slots=True)
class Fuselage(Sourced):
    """The outline (length, width, height, centreline) and, when the file gives them, the cross sections
    along the length (`sections`, in increasing STA) that the three-dimensional shape is lofted from."""

    nose_sta: float
    tail_sta: float
    width: float
    height: float
    centreline_wl: float
    sections: tuple[Section, ...] = ()


@dataclass(frozen=True, kw_only=True, slots=True)
class Wing(Sourced):
    """`wl`: the wing plane's waterline when the file gives it (else a mid wing is assumed)."""

    root_le_sta: float
    root_chord: float
    span: float
    sweep_deg: float
    wl: float | None = None


@dataclass(frozen=True, kw_only=True, slots=True)
class Fin(Sourced):
    root_le_sta: float
    root_chord: float
    height: float
    sweep_deg: float


@dataclass(frozen=True, kw_only=True, slots=True)
class Tailplane(Sourced):
    """The horizontal stabiliser as a thin surface: root leading edge, root chord, span tip to tip,
    leading-edge sweep and the waterline of its plane (a low tail on the tail cone, or a T-tail)."""

    root_le_sta: float
    root_chord: float
    span: float
    sweep_deg: float
    wl: float


@dataclass(frozen=True, kw_only=True, slots=True)
class Zone(Sourced):
    """Skin material over stations [sta_from, sta_to); `surfaces` empty means every surface."""

    name: str
    sta_from: float
    sta_to: float
    material: str
    surfaces: tuple[str, ...] = ()

    def covers(self, sta: float, surface: str) -> bool:
        return self.sta_from <= sta < self.sta_to and (not self.surfaces or surface in self.surfaces)


@dataclass(frozen=True, kw_only=True, slots=True)
class Airframe(Sourced):
    id: str
    name: str
    coord_unit: str
    fuselage: Fuselage
    zones: tuple[Zone, ...]
    wing: Wing | None = None
    fin: Fin | None = None
    tailplane: Tailplane | None = None

    def zone_at(self, sta: float, surface: str) -> Zone | None:
        """The zone covering `sta` on `surface`: one that lists the surface wins over one for every surface."""
        covering = [zone for zone in self.zones if zone.covers(sta, surface)]
        covering.sort(key=lambda zone: not zone.surfaces)
        return covering[0] if covering else None

    def material_at(self, sta: float, surface: str) -> str | None:
        """`metal` or `composite` at `sta` on `surface`, or None when no zone covers it."""
        zone = self.zone_at(sta, surface)
        return zone.material if zone else None


# --- catalogues -----------------------------------------------------------------------------------------


@dataclass(frozen=True, kw_only=True, slots=True)
class AntennaModel(Sourced):
    """An antenna model; `geometry` holds the kind's keys (lengths in metres) as a read-only mapping."""

    id: str
    kind: str
    polarisation: str
    impedance_ohm: float
    rated_vswr: float
    bands_mhz: tuple[tuple[float, float], ...]
    geometry: FrozenMap
    description: str = ""


Airframe.__hash__ = AntennaModel.__hash__ = hash_once  # type: ignore[method-assign]  # they key every cache


@dataclass(frozen=True, kw_only=True, slots=True)
class Cable(Sourced):
    """A cable type. `attenuation_db_per_100m` is per 100 m; `declared_unit` the file's, db_per_100m or db_per_100ft."""

    id: str
    impedance_ohm: float
    velocity_factor: float
    max_freq_mhz: float
    attenuation_db_per_100m: tuple[tuple[float, float], ...]
    declared_unit: str
    designation: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class Attitudes(Sourced):
    """The bank and pitch angles (degrees) the coverage rule checks besides level flight, for one kind of
    must_see region: the policy's coverage_bank_deg and coverage_pitch_deg; `src` is the policy's line."""

    bank_deg: float
    pitch_deg: float
    source: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class Service(Sourced):
    """A radio service; `design_freq_mhz` is the declared one or the centre of the first band.
    `shipped` is true when the entry comes from the package's table rather than the fleet's file."""

    id: str
    name: str
    bands_mhz: tuple[tuple[float, float], ...]
    design_freq_mhz: float
    polarisation: str
    coverage: str
    transmits: bool
    group: str
    source: str = ""
    shipped: bool = False
    # Co-site figures (harmonics, intermodulation, margin); None or () when the table gives none.
    tx_bands_mhz: tuple[tuple[float, float], ...] = ()
    """Transmit ranges, MHz; the loader fills them from `bands_mhz` for a transmitting service."""
    tx_channel_steps_khz: tuple[float, ...] = ()
    tx_peak_power_dbm: float | None = None
    spurious_dbc: float | None = None
    rx_bands_mhz: tuple[tuple[float, float], ...] = ()
    """Receive bands, MHz; the loader fills them from `bands_mhz`."""
    protection_dbm: float | None = None
    suppression_line: str | None = None
    protection_plane: str = "receiver_input"
    """Where `protection_dbm` is stated: "receiver_input" (after the feeder) or "antenna_port" (before it)."""
    im3_conversion_loss_db: float | None = None
    """Transmitter intermodulation: a carrier coupled into the output stage comes out as a 3rd-order product
    this many dB lower (the 5th-order figure likewise)."""
    im5_conversion_loss_db: float | None = None
    max_harmonic_order: int | None = None
    """The highest harmonic order followed for this transmitter (None: the policy's)."""
    sources: FrozenMap = field(default_factory=FrozenMap)
    """Co-site figure key → its standing and document ('sourced: …', 'unverified: …', ...)."""
    must_see: FrozenMap | None = None
    """What the service's antenna must see past the airframe (region, elevation, share, source)."""
    attitudes: Attitudes | None = None
    """The bank and pitch its must_see is also held at: the policy's, filled in by the loader."""


@dataclass(frozen=True, kw_only=True, slots=True)
class IsolationRule(Sourced):
    services: tuple[str, str]
    isolation_db: float


@dataclass(frozen=True, kw_only=True, slots=True)
class Policy(Sourced):
    """Thresholds the checks use: the shipped defaults with the fleet's overrides applied.
    `where(key)` points into whichever file the key's value came from."""

    length_tolerance_pct: float
    vswr_limit: float
    vswr_limit_by_service: FrozenMap
    feeder_loss_budget_db: FrozenMap
    connector_loss_db: float
    adapter_loss_db: float
    measurement_max_age_days: int
    ground_plane_min_radius_wavelengths: float
    min_isolation_db: tuple[IsolationRule, ...]
    sources: FrozenMap = field(default_factory=FrozenMap)
    cosite_max_harmonic_order: int = 15
    cosite_small_margin_db: float = 6.0
    coverage_bank_deg: FrozenMap = field(default_factory=FrozenMap)
    """Bank angle (degrees, each way) the coverage rule checks, by must_see region (sky, ground, horizon)."""
    coverage_pitch_deg: FrozenMap = field(default_factory=FrozenMap)
    """Pitch angle (degrees, nose up and down) the coverage rule checks, by must_see region."""
    cosite_services: FrozenMap = field(default_factory=FrozenMap)
    """Service id → co-site figure key → (value, source): the policy's overrides of the service table."""
    action_raised_counts_open: bool = True

    def vswr_limit_for(self, service: str) -> float:
        return self.vswr_limit_by_service.get(service, self.vswr_limit)

    def feeder_loss_budget_for(self, service: str) -> float:
        return self.feeder_loss_budget_db.get(service, self.feeder_loss_budget_db["default"])

    def min_isolation_for(self, service_a: str, service_b: str) -> IsolationRule | None:
        """The isolation rule for a pair of services (in either order), or None."""
        return by_unordered(self.min_isolation_db, "services").get(tuple(sorted((service_a, service_b))))


POLICY_KEYS = tuple(item.name for item in fields(Policy) if item.name not in ("sources", "src", "locator"))
"""The thresholds a policy file sets, in the order the methods page lists them: Policy's own fields."""
REQUIRED_POLICY_KEYS = tuple(item.name for item in fields(Policy) if item.name in POLICY_KEYS and item.default
                             is MISSING and item.default_factory is MISSING)  # the others have a default


@dataclass(frozen=True, kw_only=True, slots=True)
class Review(Sourced):
    """An auditor's disposition of one discrepancy (`<aircraft>/<position>[+<position>]/<rule>`)."""

    discrepancy: str
    state: str
    reviewer: str
    date: date
    reference: str = ""
    comment: str = ""
    value_seen: float | str | None = None

    @property
    def aircraft_id(self) -> str:
        return self.discrepancy.split("/")[0]

    @property
    def positions(self) -> tuple[str, ...]:
        return tuple(self.discrepancy.split("/")[1].split("+"))

    @property
    def rule(self) -> str:
        return self.discrepancy.split("/")[2]


@dataclass(frozen=True, kw_only=True, slots=True)
class Fleet(Sourced):
    """The whole registry. Every mapping is keyed by id and iterates in sorted id order; `reviews` by discrepancy id."""

    operator: str
    data_dir: Path
    airframes: FrozenMap
    aircraft: FrozenMap
    antennas: FrozenMap
    cables: FrozenMap
    services: FrozenMap
    policy: Policy
    reviews: FrozenMap
    title: str | None = None
    sweeps: FrozenMap = FrozenMap()
    """Each measured sweep file's text by its path, read by the load stage."""
    input_keys: FrozenMap = FrozenMap()
    """Each aircraft's inputs (its file, its sweeps, the shared files) as one key (`load.inputs`)."""
    modifications: tuple = ()  # effectivity.FleetModification of modifications.yaml, in the file's order

    site_title = property(lambda self: self.title or self.operator)

    def installations(self) -> Iterator[tuple[Aircraft, Installation]]:
        """Every (aircraft, installation), by aircraft id then position."""
        for aircraft in self.aircraft.values():
            for installation in aircraft.installations.values():
                yield aircraft, installation

    def airframe_of(self, aircraft: Aircraft) -> Airframe:
        return self.airframes[aircraft.airframe]
