"""The printable reports: one per aircraft (`reports/<aircraft>.html`) and one for the fleet (`report.html`).

Each report carries a title block (operator, aircraft or fleet, data revision, build date, the register's
as-of date) that print.css repeats at the head of every printed page, the installation schedule, and
every finding with its disposition and review trail. They are made of the model and the findings only
(no computed figures), so they are rendered with the fleet-wide pages, every build: the title block's
revision and date are the build's, which an aircraft's reused pages could not promise.
"""
from __future__ import annotations

import functools
from collections.abc import Callable
from typing import Any

from registry.check.reviews import stale_reviews
from registry.core.model import Aircraft
from registry.core.results import Discrepancy
from registry.core.rulebook import SEVERITIES
from registry.site.context import SiteData
from registry.site.format import NONE_TEXT, exact
from registry.site.pages import Output, page
from registry.site.pages_fleet import aircraft_row
from registry.site.pages_registry import line_href
from registry.site.paths import aircraft_path
from registry.site.views import discrepancy_view, installation_row, severity_matrix

FLEET_REPORT = "report.html"


def aircraft_report_path(aircraft_id: str) -> str:
    return f"reports/{aircraft_id}.html"


FLEET_SCHEDULES_UP_TO = 50
"""The fleet's report lists every installation of every aircraft up to this many aircraft; above, its
aircraft sections hold their modifications and findings, and each aircraft's own report its schedule
(a thousand aircraft's schedules would print to a thousand pages)."""


def report_pages(data: SiteData) -> list[Output]:
    """The fleet's report and each aircraft's."""
    return [fleet_report_page(data)] + [make() for make in aircraft_report_pages(data)]


def aircraft_report_pages(data: SiteData) -> list[Callable[[], Output]]:
    """Each aircraft's report, as a function that makes it: the page's content is worked out where it is
    rendered (in the workers, for a fleet), not all in this process first."""
    as_of = data.as_of_text()
    stale = stale_reviews(list(data.discrepancies), data.fleet.reviews)
    return [functools.partial(aircraft_report_page, data, aircraft, as_of, stale)
            for aircraft in data.fleet.aircraft.values()]


def aircraft_report_page(data: SiteData, aircraft: Aircraft, as_of: str, stale: list) -> Output:
    """One aircraft's printable report."""
    section = aircraft_section(data, aircraft, stale)
    return page(aircraft_report_path(aircraft.id), "report.html", "fleet",
                f"{aircraft.registration}: printable report",
                [("Fleet", "index.html"), (aircraft.registration, aircraft_path(aircraft.id)), ("Printable report", None)],
                block=title_block(data, aircraft.registration, as_of, section["identity"]),
                fleet=None, sections=[section], screen_link=(aircraft_path(aircraft.id), "aircraft page"))


def fleet_report_page(data: SiteData) -> Output:
    """The fleet's report: every aircraft's section (without the schedules above FLEET_SCHEDULES_UP_TO)."""
    as_of = data.as_of_text()
    stale = stale_reviews(list(data.discrepancies), data.fleet.reviews)
    schedules = len(data.fleet.aircraft) <= FLEET_SCHEDULES_UP_TO
    sections = [aircraft_section(data, aircraft, stale, schedules) for aircraft in data.fleet.aircraft.values()]
    return fleet_report(data, sections, as_of)


def fleet_report(data: SiteData, sections: list[dict[str, Any]], as_of: str) -> Output:
    rows = [aircraft_row(data, aircraft, data.by_aircraft.get(aircraft.id, []))
            for aircraft in data.fleet.aircraft.values()]
    for row in rows:
        row["report_href"] = aircraft_report_path(row["id"])
    return page(FLEET_REPORT, "report.html", "fleet", "Fleet: printable report",
                [("Fleet", "index.html"), ("Printable report", None)],
                block=title_block(data, data.fleet.site_title, as_of, f"{len(rows)} aircraft"),
                fleet={"aircraft": rows, "matrix": severity_matrix(data.discrepancies), "severities": SEVERITIES},
                schedule_limit=FLEET_SCHEDULES_UP_TO,
                sections=sections, screen_link=("index.html", "fleet overview"))


def title_block(data: SiteData, subject: str, as_of: str, detail: str) -> dict[str, str]:
    """What heads every printed page of a report."""
    return {"operator": data.fleet.operator, "title": data.fleet.site_title, "subject": subject, "detail": detail,
            "revision": data.build.revision, "built": data.build.time, "as_of": as_of, "version": data.build.version}


def aircraft_section(data: SiteData, aircraft: Aircraft, stale: list, schedule: bool = True) -> dict[str, Any]:
    """One aircraft's part of a report: who it is, its installation schedule (None without `schedule`: it
    is in the aircraft's own report), its modifications, its findings with their dispositions, and the
    reviews on file whose finding has gone."""
    airframe = data.fleet.airframes.get(aircraft.airframe)
    items = data.by_aircraft.get(aircraft.id, [])
    return {
        "id": aircraft.id, "registration": aircraft.registration, "href": aircraft_path(aircraft.id),
        "identity": ", ".join(part for part in (airframe.name if airframe else aircraft.airframe,
                                                f"serial {aircraft.serial}" if aircraft.serial else "") if part),
        "coord_unit": airframe.coord_unit if airframe else "",
        "schedule": [schedule_row(data, aircraft, installation) for installation in aircraft.installations.values()]
        if schedule else None, "report_href": aircraft_report_path(aircraft.id), "count": len(aircraft.installations),
        "modifications": sorted(aircraft.modifications, key=lambda m: (m.date, m.ref), reverse=True),
        "matrix": severity_matrix(items),
        "findings": [finding_entry(data, item) for item in items],
        "stale": [stale_entry(data, review) for review in stale if review.aircraft_id == aircraft.id],
    }


def schedule_row(data: SiteData, aircraft: Aircraft, installation) -> dict[str, Any]:
    """An installation as the schedule lists it: the aircraft page's row, with the feeder's fittings and
    the installation date."""
    row = installation_row(data, aircraft, installation)
    feeder = installation.feeder
    fittings = f"{feeder.connectors} connector{'s' if feeder.connectors != 1 else ''}"
    if feeder.adapters:
        fittings += f", {feeder.adapters} adapter{'s' if feeder.adapters != 1 else ''}"
    return {**row, "fittings": fittings, "src": data.model_src(installation),
            "installed": installation.installed.isoformat() if installation.installed else NONE_TEXT}


def finding_entry(data: SiteData, item: Discrepancy) -> dict[str, Any]:
    """A finding with its review trail: the disposition on file, when and by whom, the value the reviewer
    judged against the value now, and the line of reviews.yaml that holds it."""
    view = discrepancy_view(data, item)
    review = data.fleet.reviews.get(item.id)
    trail = None
    if review is not None:
        src = data.model_src(review)
        trail = {"state": review.state, "reviewer": review.reviewer, "date": review.date.isoformat(),
                 "reference": review.reference, "comment": review.comment,
                 "value_seen": NONE_TEXT if review.value_seen is None else exact(review.value_seen, item.unit),
                 "src": src, "src_href": line_href(src, data.fleet.data_dir)}
    return {**view, "trail": trail}


def stale_entry(data: SiteData, review) -> dict[str, Any]:
    src = data.model_src(review)
    return {"discrepancy": review.discrepancy, "state": review.state, "reviewer": review.reviewer,
            "date": review.date.isoformat(), "reference": review.reference, "src": src,
            "src_href": line_href(src, data.fleet.data_dir)}
