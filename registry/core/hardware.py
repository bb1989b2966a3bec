"""The hardware of an installation a technician needs before a job, and what sits between an antenna and its
radios: connectors, adapters, the radio unit, bonding, manual references, an active antenna's amplifier and
a splitter or diplexer. Frozen dataclasses like the rest of the model (`registry.core.model` imports them)."""
from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from registry.core.base import Sourced


@dataclass(frozen=True, kw_only=True, slots=True)
class ConnectorEnd(Sourced):
    """The cable's connector at one end of a feeder: `connector` (TNC, BNC, N, ...) and `gender` (male, female)."""

    connector: str
    gender: str


@dataclass(frozen=True, kw_only=True, slots=True)
class AdapterPart(Sourced):
    """One adapter in a feeder run, by part number."""

    part_number: str
    description: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class RadioUnit(Sourced):
    """The radio unit a feeder runs to (part number) and where it sits (`rack`, free text)."""

    part_number: str
    rack: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class Bonding(Sourced):
    """The last bonding resistance measured between the antenna's base and the structure."""

    resistance_milliohm: float
    date: date


@dataclass(frozen=True, kw_only=True, slots=True)
class ManualRef(Sourced):
    """A reference into the operator's documents: `kind` maintenance, wiring, parts or other."""

    kind: str
    ref: str
    title: str = ""


@dataclass(frozen=True, kw_only=True, slots=True)
class Amplifier(Sourced):
    """An active antenna's built-in amplifier: gain and noise figure (dB), with the document they come from."""

    gain_db: float
    noise_figure_db: float
    source: str


@dataclass(frozen=True, kw_only=True, slots=True)
class Splitter(Sourced):
    """A splitter or diplexer between one antenna and several services' feeders; `loss_db` is the insertion
    loss from the antenna to each output port. `feeds` are the positions fed besides the owner's."""

    part_number: str
    kind: str
    loss_db: float
    source: str
    feeds: tuple[str, ...] = ()
