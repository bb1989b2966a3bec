"""The printable reports: each aircraft's and the fleet's hold the title block, the installation schedule
(every installation of the register), and every finding with its disposition and review trail as
reviews.yaml records it. Checked against the demo register itself (fleet_data/reviews.yaml), not against
the page code's own lists."""
import html
import json
import re

import yaml


def text_of(path) -> str:
    return html.unescape(path.read_text(encoding="utf-8"))


def test_each_aircraft_report_lists_its_installations_and_findings_with_their_reviews(demo_site, demo_fleet, demo_data):
    fleet = demo_fleet
    record = json.loads((demo_site / "record.json").read_text(encoding="utf-8"))
    reviews = {entry["discrepancy"]: entry
               for entry in yaml.safe_load((demo_data / "reviews.yaml").read_text(encoding="utf-8"))["reviews"]}
    for aircraft in fleet.aircraft.values():
        page = text_of(demo_site / "reports" / f"{aircraft.id}.html")
        head = page.split('class="title-block"', 1)[1].split("</header>", 1)[0]
        assert fleet.operator in head and aircraft.registration in head
        assert "Data revision" in head and "Build date" in head and f"Register as of</dt><dd>{record['as_of']}" in head
        schedule = page.split('class="report-schedule"', 1)[1].split("</table>", 1)[0]
        assert re.findall(r'<th scope="row"><a [^>]*>([^<]+)</a>', schedule) == list(aircraft.installations)
        ids = [key for key, entry in record["discrepancies"].items() if entry["aircraft"] == aircraft.id]
        shown = re.findall(r'<p class="report-finding-head">.*?<code>([^<]+)</code>', page)
        assert len(shown) == len(ids) and sorted(shown) == sorted(ids)
        for key in ids:
            finding = re.sub(r"<[^>]+>", "", page.split(f"<code>{key}</code></p>", 1)[1].split("</li>", 1)[0])
            if key in reviews:
                review = reviews[key]
                assert f"{review['state']} by {review['reviewer']} on {review['date']}" in finding
                assert review["reference"] in finding and "reviews.yaml:" in finding
            else:
                assert "None recorded" in finding


def test_the_fleet_report_holds_every_aircraft_and_links_each_report(demo_site, demo_fleet):
    fleet = demo_fleet
    page = text_of(demo_site / "report.html")
    assert fleet.operator in page.split("</header>", 1)[0]
    assert page.count('class="report-aircraft"') == len(fleet.aircraft)
    for aircraft in fleet.aircraft.values():
        assert f'href="reports/{aircraft.id}.html">{aircraft.registration}</a>' in page
        assert f'href="../reports/{aircraft.id}.html">Printable report</a>' in text_of(
            demo_site / "aircraft" / f"{aircraft.id}.html")
    assert 'href="report.html">Printable fleet report</a>' in text_of(demo_site / "index.html")


def test_every_page_links_the_print_stylesheet_for_print_only(demo_site):
    for path in (demo_site / "index.html", demo_site / "report.html", demo_site / "aircraft" / "qx-tce.html"):
        depth = "../" * (len(path.relative_to(demo_site).parts) - 1)
        assert f'<link rel="stylesheet" href="{depth}static/print.css" media="print">' in path.read_text(encoding="utf-8")
    assert (demo_site / "static" / "print.css").is_file()
