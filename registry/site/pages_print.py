"""The printable reports: one per aircraft (`reports/<aircraft>.html`) and one for the fleet (`report.html`).

Each report carries a title block (operator, aircraft or fleet, data revision, build date, the register's
as-of date) that print.css repeats at the head of every printed page, the installation schedule, and
every finding with its disposition and review trail. The title block's revision and dates are the
build's; the rest of an aircraft's report shows nothing its pages' key does not hold. So an aircraft's
report is rendered with its pages, with placeholders in the title block (`STAMP`), kept with them, and
stamped with each build's revision and dates (`stamped`): an aircraft whose pages are reused gets its
report without rendering it again.
"""
from __future__ import annotations

from typing import Any

from markupsafe import escape

from registry.check.reviews import stale_reviews
from registry.core.model import Aircraft
from registry.core.results import Discrepancy
from registry.core.rulebook import SEVERITIES
from registry.site.context import SiteData
from registry.site.format import NONE_TEXT, exact
from registry.site.pages import Output, Page, page
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


STAMP = {name: f"\x00aerialbook report {name}\x00" for name in ("revision", "built", "as_of")}
"""Placeholders for what an aircraft's report shows of the build (its title block's revision, build date
and as-of date), each replaced by the build's value as the template would write it (`stamped`)."""


def aircraft_report_page(data: SiteData, aircraft: Aircraft) -> Page:
    """One aircraft's printable report, with `STAMP` in its title block. Needs the aircraft's findings in
    `data.by_aircraft` only: the reviews on file whose finding has gone are those of the aircraft whose
    discrepancy is not among them."""
    found = {item.id for item in data.by_aircraft.get(aircraft.id, [])}
    stale = [review for review in data.reviews_of.get(aircraft.id, ()) if review.discrepancy not in found]
    section = aircraft_section(data, aircraft, stale)
    return page(aircraft_report_path(aircraft.id), "report.html", "fleet",
                f"{aircraft.registration}: printable report",
                [("Fleet", "index.html"), (aircraft.registration, aircraft_path(aircraft.id)), ("Printable report", None)],
                block={**title_block(data, aircraft.registration, "", section["identity"]), **STAMP},
                fleet=None, sections=[section], screen_link=(aircraft_path(aircraft.id), "aircraft page"))


def stamped(data: SiteData, text: str) -> str | None:
    """An aircraft's report (`aircraft_report_page`, rendered) with this build's revision and dates in
    place of the placeholders; None unless each placeholder is there exactly once (a text field that
    holds one: the report is then rendered with the values, `unstamped`)."""
    if any(text.count(mark) != 1 for mark in STAMP.values()):
        return None
    for name, value in stamp_values(data).items():
        text = text.replace(STAMP[name], str(escape(value)))
    return text


def unstamped(data: SiteData, output: Page) -> Page:
    """An aircraft's report page with this build's revision and dates themselves in its title block."""
    return output._replace(context={**output.context, "block": {**output.context["block"], **stamp_values(data)}})


def stamp_values(data: SiteData) -> dict[str, str]:
    return {"revision": data.build.revision, "built": data.build.time, "as_of": data.as_of_text()}


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
