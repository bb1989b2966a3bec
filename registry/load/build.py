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
from registry.core.model import (AdapterPart, Aircraft, Airframe, Amplifier, AntennaModel, Bonding, Cable,
                                 ConnectorEnd, Feeder, Fin, Fuselage, GroundPlane, Installation, Location,
                                 ManualRef, Measured, Modification, RadioFigures, RadioUnit, Review, Section,
                                 Service, Splitter, Wing, Zone)
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
        self.srcs = doc.index.srcs()

    def at(self, *parts: str | int) -> dict[str, Any]:
        # the file's first line when even the document's own position is missing (a forged cache entry)
        src = self.srcs.get(parts) or self.srcs.get(()) or Src(self.path, 1, 1)
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
    """An aircraft file's model, and the problems found in building it (positions used twice, adapters
    counted otherwise than listed).

    `keep` says which installations and modifications to build (by their path, `("installations", 2)`):
    a file with problems in some of them is built from the rest, so their references are checked too.
    An installation whose splitter feeds other services brings one installation per service fed."""
    data = doc.data
    installations: list[Installation] = []
    problems: list[Problem] = []
    for n, item in enumerate(data["installations"]):
        if not keep(("installations", n)):
            continue
        owner = installation(doc, n, item)
        fed = fed_installations(doc, n, owner, item)
        installations += [owner, *fed]
        problems += [found for inst in (owner, *fed) for found in adapter_count(inst)]
    problems = integrity.duplicates(installations, "position", "position in this aircraft") + problems
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
    """One installation with its own antenna (the services its splitter feeds: `fed_installations`)."""
    at = ("installations", n)
    ground_plane = item.get("ground_plane")
    return Installation(
        **doc.at(*at),
        position=item["position"],
        service=item["service"],
        antenna=item["antenna"],
        location=Location(**doc.at(*at, "location"), **{k: float(v) for k, v in item["location"].items()}),
        surface=item["surface"],
        feeder=feeder(doc, (*at, "feeder"), item["feeder"]),
        ground_plane=None if ground_plane is None else GroundPlane(
            **doc.at(*at, "ground_plane"), type=ground_plane["type"],
            radius_m=float(ground_plane["radius_m"]) if "radius_m" in ground_plane else None,
            side_m=float(ground_plane["side_m"]) if "side_m" in ground_plane else None),
        coupler=item.get("coupler", False),
        antenna_serial=item.get("antenna_serial", ""),
        bonding=None if "bonding" not in item else Bonding(
            **doc.at(*at, "bonding"), resistance_milliohm=float(item["bonding"]["resistance_milliohm"]),
            date=iso_date(item["bonding"]["date"])),
        amplifier=None if "amplifier" not in item else Amplifier(
            **doc.at(*at, "amplifier"), gain_db=float(item["amplifier"]["gain_db"]),
            noise_figure_db=float(item["amplifier"]["noise_figure_db"]), source=item["amplifier"]["source"]),
        splitter=None if "splitter" not in item else Splitter(
            **doc.at(*at, "splitter"), part_number=item["splitter"]["part_number"], kind=item["splitter"]["kind"],
            loss_db=float(item["splitter"]["loss_db"]), source=item["splitter"]["source"],
            feeds=tuple(fed["position"] for fed in item["splitter"]["feeds"])),
        **own_fields(doc, at, item),
    )


def own_fields(doc: Doc, at: tuple[str | int, ...], item: dict[str, Any]) -> dict[str, Any]:
    """The fields a service fed through a splitter keeps of its own: measurement, dates, notes, radio, and
    where to reach it and what to read (access panel and manuals, when it gives them)."""
    measured = item.get("measured")
    fields = {
        "measured": None if measured is None else Measured(
            **doc.at(*at, "measured"), date=iso_date(measured["date"]),
            vswr=float(measured["vswr"]) if "vswr" in measured else None,
            sweep=doc.file.parent / measured["sweep"] if "sweep" in measured else None),
        "installed": iso_date(item["installed"]) if "installed" in item else None,
        "notes": item.get("notes", ""),
        "radio": radio_figures(doc, at, item["radio"]) if "radio" in item else None,
    }
    if "access_panel" in item:
        fields["access_panel"] = item["access_panel"]
    if "manuals" in item:
        fields["manuals"] = tuple(ManualRef(**doc.at(*at, "manuals", k), kind=ref["kind"], ref=ref["ref"],
                                            title=ref.get("title", "")) for k, ref in enumerate(item["manuals"]))
    return fields


def fed_installations(doc: Doc, n: int, owner: Installation, item: dict[str, Any]) -> list[Installation]:
    """The services `owner`'s splitter feeds: each uses the owner's antenna (model, place, ground plane,
    serial, bonding, amplifier, splitter) through its own feeder."""
    if "splitter" not in item:
        return []
    fed = []
    for k, entry in enumerate(item["splitter"]["feeds"]):
        at = ("installations", n, "splitter", "feeds", k)
        fed.append(dataclasses.replace(
            owner, **doc.at(*at), position=entry["position"], service=entry["service"],
            feeder=feeder(doc, (*at, "feeder"), entry["feeder"]), shared_from=owner.position,
            **own_fields(doc, at, entry)))
    return fed


def feeder(doc: Doc, at: tuple[str | int, ...], item: dict[str, Any]) -> Feeder:
    """A feeder run with its hardware; `adapters` is the number of adapter parts when the file leaves it out."""
    parts = tuple(AdapterPart(**doc.at(*at, "adapter_parts", k), part_number=part["part_number"],
                              description=part.get("description", ""))
                  for k, part in enumerate(item.get("adapter_parts", ())))
    ends = {key: ConnectorEnd(**doc.at(*at, key), connector=item[key]["connector"], gender=item[key]["gender"])
            for key in ("antenna_end", "radio_end") if key in item}
    unit = item.get("radio_unit")
    return Feeder(**doc.at(*at), cable=item["cable"], length_m=float(item["length_m"]),
                  connectors=int(item["connectors"]), adapters=int(item.get("adapters", len(parts))),
                  adapter_parts=parts, **ends,
                  radio_unit=None if unit is None else RadioUnit(
                      **doc.at(*at, "radio_unit"), part_number=unit["part_number"], rack=unit.get("rack", "")))


def adapter_count(item: Installation) -> list[Problem]:
    """A problem when a feeder lists its adapters by part number and counts them otherwise."""
    run = item.feeder
    if not run.adapter_parts or len(run.adapter_parts) == run.adapters:
        return []
    listed = len(run.adapter_parts)
    return [integrity.problem(run, "adapters", f"{run.adapters}, with {listed} adapter{'s' * (listed != 1)} "
                                               "listed in adapter_parts",
                              "as many adapters as adapter_parts lists (or leave adapters out to count them)")]


def radio_figures(doc: Doc, at: tuple[str | int, ...], item: dict[str, Any]) -> RadioFigures:
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
