"""The catalogue pages: antenna models, cables and services, each with where the fleet uses it."""
from __future__ import annotations

from collections import defaultdict
from collections.abc import Mapping
from typing import Any

from markupsafe import Markup

from registry.core.model import Cable, Service
from registry.site.band_chart import band_chart
from registry.site import plots
from registry.site.context import SiteData
from registry.site.format import bands_text, exact, field_rows, fmt, vswr_text, words
from registry.site.context import AircraftPieces
from registry.site.pages import File, Output, page
from registry.site.paths import antenna_path, cable_path, cable_plot_path, root_of, service_anchor
from registry.site.views import pattern_view


Pieces = Mapping[str, AircraftPieces]
"""Each aircraft's share of the fleet-wide pages, by aircraft id."""


def joined_uses(data: SiteData, pieces: Pieces, key: str) -> tuple[int, Markup]:
    """Installations and "where used" rows of catalogue entry `key` ("antenna/<id>", "cable/<id>"),
    in fleet order."""
    found = [pieces[aircraft_id].uses[key] for aircraft_id in data.fleet.aircraft if key in pieces[aircraft_id].uses]
    return sum(count for count, _ in found), Markup("\n".join(html for _, html in found))


def antenna_pages(data: SiteData, pieces: Pieces) -> list[Output]:
    """A page per antenna model (its patterns and where it is used) and the models' list."""
    outputs: list[Output] = []
    rows = []
    for model in data.fleet.antennas.values():
        uses_count, uses_rows = joined_uses(data, pieces, f"antenna/{model.id}")
        patterns = sorted((data.results.patterns[key] for key in data.model_patterns.get(model.id, ())),
                          key=lambda p: (p.freq_mhz, p.key))
        rows.append({"id": model.id, "href": antenna_path(model.id), "description": model.description,
                     "kind": words(model.kind), "polarisation": model.polarisation,
                     "impedance": fmt(model.impedance_ohm, "Ω"), "rated_vswr": vswr_text(model.rated_vswr),
                     "bands": bands_text(model.bands_mhz), "uses": uses_count})
        outputs.append(page(antenna_path(model.id), "antenna.html", "antennas", model.id,
                            [("Antennas", "antennas.html"), (model.id, None)],
                            model=model, kind=words(model.kind), bands=bands_text(model.bands_mhz),
                            geometry=field_rows(model.geometry),
                            patterns=[pattern_view(data, p, model.id, root_of(antenna_path(model.id)),
                                                    f"{p.freq_mhz:g}MHz-") for p in patterns],
                            uses_count=uses_count, uses_rows=uses_rows, src=data.model_src(model)))
    outputs.append(page("antennas.html", "antennas.html", "antennas", "Antenna models", [], models=rows))
    return outputs


def cable_page(data: SiteData, pieces: Pieces, cable: Cable, drawn: plots.Drawn | None) -> tuple[Output, dict]:
    """A cable's page and its row in the cables' list."""
    uses_count, uses_rows = joined_uses(data, pieces, f"cable/{cable.id}")
    result = data.results.cables.get(cable.id)
    plot = {"src": cable_plot_path(cable.id), "alt": drawn.alt} if drawn is not None else None
    row = {"id": cable.id, "href": cable_path(cable.id), "designation": cable.designation,
           "impedance": fmt(cable.impedance_ohm, "Ω"), "vf": fmt(cable.velocity_factor),
           "max_freq": fmt(cable.max_freq_mhz, "MHz"), "uses": uses_count}
    return page(cable_path(cable.id), "cable.html", "cables", cable.id, [("Cables", "cables.html"), (cable.id, None)],
                cable=cable, table=[(exact(f), fmt(a)) for f, a in cable.attenuation_db_per_100m],
                declared=("per 100 ft in the registry, shown per 100 m"
                          if cable.declared_unit == "db_per_100ft" else "per 100 m"),
                plot=plot, figures=data.figure_rows(result.figures if result else (), root_of(cable_path(cable.id))),
                uses_count=uses_count, uses_rows=uses_rows, src=data.model_src(cable)), row


def cable_pages(data: SiteData, pieces: Pieces, drawn: Mapping[str, plots.Drawn]) -> list[Output]:
    """A page per cable (its attenuation plot, as `drawn` by cable id) and the cables' list."""
    outputs: list[Output] = []
    rows = []
    for cable in data.fleet.cables.values():
        if cable.id in drawn:
            outputs.append(File(cable_plot_path(cable.id), drawn[cable.id].svg))
        cable_output, row = cable_page(data, pieces, cable, drawn.get(cable.id))
        outputs.append(cable_output)
        rows.append(row)
    outputs.append(page("cables.html", "cables.html", "cables", "Cables", [], cables=rows))
    return outputs


def service_antennas(data: SiteData, service: Service, model_ids: list[str]) -> list[tuple]:
    """The models serving a service, each with whether its rated bands cover the service's bands."""
    antennas = []
    for model_id in model_ids:
        model = data.fleet.antennas.get(model_id)
        if model is None:
            continue
        covers = all(any(lo <= a and b <= hi for lo, hi in model.bands_mhz) for a, b in service.bands_mhz)
        antennas.append((model.id, "rated band covers the service" if covers else "rated band falls short",
                         antenna_path(model.id), model.bands_mhz, covers))
    return antennas


def services_page(data: SiteData, pieces: Pieces) -> Output:
    """Every service with its bands, the models serving it and the installations that fly it."""
    groups = []
    rows: list[dict[str, Any]] = []
    services = sorted(data.fleet.services.values(), key=lambda s: (min(b[0] for b in s.bands_mhz), s.id))
    models_by_service: dict[str, set[str]] = defaultdict(set)
    for _, installation in data.fleet.installations():
        models_by_service[installation.service].add(installation.antenna)
    for service in services:
        found = [pieces[aircraft_id].service_links[service.id] for aircraft_id in data.fleet.aircraft
                 if service.id in pieces[aircraft_id].service_links]
        model_ids = sorted(models_by_service.get(service.id, ()))
        groups.append((service.name, service.id, f"#{service_anchor(service.id)}", service.bands_mhz,
                       service_antennas(data, service, model_ids)))
        rows.append({"service": service, "anchor": service_anchor(service.id), "bands": bands_text(service.bands_mhz),
                     "design": fmt(service.design_freq_mhz, "MHz"), "uses": sum(count for count, _ in found),
                     "models": [(m, antenna_path(m)) for m in model_ids],
                     "links": Markup(", ".join(links for _, links in found))})
    chart = band_chart(groups)
    return page("services.html", "services.html", "services", "Services and bands", [], chart=chart, services=rows)
