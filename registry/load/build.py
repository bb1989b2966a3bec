"""Building the model objects from registry files that read and validated cleanly.

Each builder takes a validated document (`Doc`) and returns frozen model objects carrying their source
location, so later stages can point at the YAML line a figure came from.
"""
from __future__ import annotations

import dataclasses
from datetime import date
from pathlib import Path
from typing import Any, Callable

from registry.core.errors import Problem, Src, parse_path
from registry.core.base import FrozenMap, Locator, freeze
from registry.core.model import (Aircraft, Airframe, AntennaModel, Cable, Feeder, Fin, Fuselage, GroundPlane,
                                 Installation, Location, Measured, Modification, RadioFigures, Review,
                                 Section, Service, Wing, Zone)
from registry.core.model import Attitudes, Policy, Tailplane
from registry.core.units import per_100ft_to_per_100m
from registry.load import integrity
from registry.load.yamlsource import YamlDoc


class Doc:
    """A file that read and validated cleanly, with a factory for the `src`/`locator` of its objects."""

    def __init__(self, doc: YamlDoc, file: Path):
        self.data = doc.data
        self.file = file
        self.path = doc.path
        self.srcs = {parts: placed.src for parts, placed in doc.index.items()}

    def at(self, *parts: str | int) -> dict[str, Any]:
        src = self.srcs.get(parts) or self.srcs[()]
        return {"src": src, "locator": Locator(self.srcs, parts, src)}


class LayeredLocator(Locator):
    """Finds a policy field in the first file (fleet, then shipped) that sets it."""

    def __init__(self, layers: list[Locator]):
        super().__init__(layers[-1].index, (), layers[-1].fallback)
        self.layers = layers

    def where(self, field_path: str) -> Src:
        parts = parse_path(field_path)
        for layer in self.layers:
            if parts in layer.index:
                return layer.index[parts]
        for layer in self.layers:
            if parts[:1] in layer.index:
                return layer.where(field_path)
        return self.fallback


def names(item: Airframe) -> set[str]:
    return {item.id, Path(item.src.path).stem}


def by_id(items: list[Any]) -> FrozenMap:
    return FrozenMap((item.id, item) for item in items)


def iso_date(text: str) -> date:
    return date.fromisoformat(text)  # the schema has checked the format


def band_pairs(pairs: list[list[float]]) -> tuple[tuple[float, float], ...]:
    return tuple((float(low), float(high)) for low, high in pairs)


def airframe(doc: Doc) -> Airframe:
    data = doc.data
    numbers = lambda mapping: {key: float(value) for key, value in mapping.items()  # noqa: E731
                               if key != "sections"}
    sections = tuple(Section(**doc.at("fuselage", "sections", n), **numbers(item))
                     for n, item in enumerate(data["fuselage"].get("sections", ())))
    return Airframe(
        **doc.at(),
        id=data["id"],
        name=data["name"],
        coord_unit=data["coord_unit"],
        fuselage=Fuselage(**doc.at("fuselage"), **numbers(data["fuselage"]), sections=sections),
        wing=Wing(**doc.at("wing"), **numbers(data["wing"])) if "wing" in data else None,
        fin=Fin(**doc.at("fin"), **numbers(data["fin"])) if "fin" in data else None,
        tailplane=Tailplane(**doc.at("tailplane"), **numbers(data["tailplane"])) if "tailplane" in data else None,
        zones=tuple(Zone(**doc.at("zones", n), name=item["name"], sta_from=float(item["sta_from"]),
                         sta_to=float(item["sta_to"]), material=item["material"],
                         surfaces=tuple(item.get("surfaces", ())))
                    for n, item in enumerate(data["zones"])),
    )


def antenna(doc: Doc, n: int, item: dict[str, Any]) -> AntennaModel:
    return AntennaModel(
        **doc.at("models", n),
        id=item["id"],
        description=item.get("description", ""),
        kind=item["kind"],
        polarisation=item["polarisation"],
        impedance_ohm=float(item["impedance_ohm"]),
        rated_vswr=float(item["rated_vswr"]),
        bands_mhz=band_pairs(item["bands_mhz"]),
        geometry=freeze(item["geometry"]),
    )


def cable(doc: Doc, n: int, item: dict[str, Any]) -> Cable:
    if "attenuation_db_per_100m" in item:
        unit, table = "db_per_100m", [(float(f), float(loss)) for f, loss in item["attenuation_db_per_100m"]]
    else:
        unit = "db_per_100ft"
        table = [(float(f), per_100ft_to_per_100m(loss)) for f, loss in item["attenuation_db_per_100ft"]]
    return Cable(
        **doc.at("cables", n),
        id=item["id"],
        designation=item.get("designation", ""),
        impedance_ohm=float(item["impedance_ohm"]),
        velocity_factor=float(item["velocity_factor"]),
        max_freq_mhz=float(item["max_freq_mhz"]),
        attenuation_db_per_100m=tuple(table),
        declared_unit=unit,
    )


def services(doc: Doc, shipped: bool) -> list[Service]:
    services = []
    for n, item in enumerate(doc.data["services"]):
        bands = band_pairs(item["bands_mhz"])
        services.append(Service(
            **doc.at("services", n),
            id=item["id"],
            name=item["name"],
            bands_mhz=bands,
            design_freq_mhz=float(item.get("design_freq_mhz", (bands[0][0] + bands[0][1]) / 2)),
            polarisation=item["polarisation"],
            coverage=item["coverage"],
            transmits=item["transmits"],
            group=item["group"],
            source=item.get("source", ""),
            shipped=shipped,
            **cosite_fields(item, bands),
            must_see=freeze(item["must_see"]) if "must_see" in item else None,
        ))
    return services


def with_attitudes(service: Service, policy: Policy) -> Service:
    """The service with the bank and pitch the policy names for its must_see region (none without must_see)."""
    if service.must_see is None:
        return service
    region = service.must_see["region"]
    keys = ("coverage_bank_deg", "coverage_pitch_deg")
    source = "; ".join(dict.fromkeys(str(policy.sources[key]) for key in keys if key in policy.sources))
    return dataclasses.replace(service, attitudes=Attitudes(
        src=policy.where(f"coverage_bank_deg.{region}"), bank_deg=float(policy.coverage_bank_deg.get(region, 0.0)),
        pitch_deg=float(policy.coverage_pitch_deg.get(region, 0.0)), source=source))


def cosite_fields(item: dict[str, Any], bands: tuple[tuple[float, float], ...]) -> dict[str, Any]:
    """A service's co-site figures; transmit and receive ranges default to its bands."""
    optional = lambda key: float(item[key]) if key in item else None  # noqa: E731
    return {
        "tx_bands_mhz": band_pairs(item["tx_bands_mhz"]) if "tx_bands_mhz" in item else (
            bands if item["transmits"] else ()),
        "tx_channel_steps_khz": tuple(float(step) for step in item.get("tx_channel_steps_khz", ())),
        "tx_peak_power_dbm": optional("tx_peak_power_dbm"),
        "spurious_dbc": optional("spurious_dbc"),
        "rx_bands_mhz": band_pairs(item["rx_bands_mhz"]) if "rx_bands_mhz" in item else bands,
        "protection_dbm": optional("protection_dbm"),
        "suppression_line": item.get("suppression_line"),
        "protection_plane": item.get("protection_plane", "receiver_input"),
        "im3_conversion_loss_db": optional("im3_conversion_loss_db"),
        "im5_conversion_loss_db": optional("im5_conversion_loss_db"),
        "max_harmonic_order": int(item["max_harmonic_order"]) if "max_harmonic_order" in item else None,
        "sources": freeze(item.get("sources", {})),
    }


def aircraft(doc: Doc, keep: Callable[[tuple[str | int, ...]], bool] = lambda parts: True
             ) -> tuple[Aircraft, list[Problem]]:
    """An aircraft file's model, and the problems found in building it (positions used twice).

    `keep` says which installations and modifications to build (by their path, `("installations", 2)`):
    a file with problems in some of them is built from the rest, so their references are checked too."""
    data = doc.data
    installations = [installation(doc, n, item) for n, item in enumerate(data["installations"])
                     if keep(("installations", n))]
    problems = integrity.duplicates(installations, "position", "position in this aircraft")
    return Aircraft(
        **doc.at(),
        id=data["id"],
        registration=data["registration"],
        airframe=data["airframe"],
        serial=data.get("serial"),
        modifications=tuple(
            Modification(**doc.at("modifications", n), ref=item["ref"], date=iso_date(item["date"]),
                         summary=item["summary"])
            for n, item in enumerate(data.get("modifications", [])) if keep(("modifications", n))),
        installations=FrozenMap((item.position, item) for item in installations),
    ), problems


def installation(doc: Doc, n: int, item: dict[str, Any]) -> Installation:
    at = ("installations", n)
    feeder = item["feeder"]
    ground_plane = item.get("ground_plane")
    measured = item.get("measured")
    return Installation(
        **doc.at(*at),
        position=item["position"],
        service=item["service"],
        antenna=item["antenna"],
        location=Location(**doc.at(*at, "location"), **{k: float(v) for k, v in item["location"].items()}),
        surface=item["surface"],
        feeder=Feeder(**doc.at(*at, "feeder"), cable=feeder["cable"], length_m=float(feeder["length_m"]),
                      connectors=int(feeder["connectors"]), adapters=int(feeder.get("adapters", 0))),
        ground_plane=None if ground_plane is None else GroundPlane(
            **doc.at(*at, "ground_plane"), type=ground_plane["type"],
            radius_m=float(ground_plane["radius_m"]) if "radius_m" in ground_plane else None),
        measured=None if measured is None else Measured(
            **doc.at(*at, "measured"), date=iso_date(measured["date"]),
            vswr=float(measured["vswr"]) if "vswr" in measured else None,
            sweep=doc.file.parent / measured["sweep"] if "sweep" in measured else None),
        coupler=item.get("coupler", False),
        installed=iso_date(item["installed"]) if "installed" in item else None,
        notes=item.get("notes", ""),
        radio=radio_figures(doc, at, item["radio"]) if "radio" in item else None,
    )


def radio_figures(doc: Doc, at: tuple[str, int], item: dict[str, Any]) -> RadioFigures:
    """The installed radio's own co-site figures."""
    optional = lambda key: float(item[key]) if key in item else None  # noqa: E731
    return RadioFigures(**doc.at(*at, "radio"), tx_peak_power_dbm=optional("tx_peak_power_dbm"),
                        spurious_dbc=optional("spurious_dbc"), protection_dbm=optional("protection_dbm"),
                        source=item["source"])


def review(doc: Doc, n: int, item: dict[str, Any]) -> Review:
    return Review(
        **doc.at("reviews", n),
        discrepancy=item["discrepancy"],
        state=item["state"],
        reviewer=item["reviewer"],
        date=iso_date(item["date"]),
        reference=item.get("reference", ""),
        comment=item.get("comment", ""),
        value_seen=item.get("value_seen"),
    )
