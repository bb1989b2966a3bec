"""The audit page's downloads, made by the one exporter of findings (`output.findings_export`) that
`check --format csv/json` uses: the whole list as files, and each finding's CSV record and JSON row for
the page's script, which joins those of the rows a filter leaves into the downloads (nothing re-encoded
in the browser but the JSON document's layout)."""
from __future__ import annotations

from typing import Any

from registry.output import findings_export
from registry.site.info import BuildInfo


def build_block(build: BuildInfo) -> dict[str, str]:
    return {"revision": build.revision, "time": build.time, "version": build.version}


def discrepancies_csv(rows: list[dict[str, Any]]) -> str:
    """Every finding as CSV: the same bytes as `check --format csv` over the same data."""
    return findings_export.as_csv(rows)


def discrepancies_json(rows: list[dict[str, Any]], stale: list[dict[str, Any]], as_of: str, build: BuildInfo) -> str:
    """Every finding as JSON: `check --format json`'s document, with the build's revision added."""
    return findings_export.as_json(rows, stale, as_of, {}, build=build_block(build))


def browser_export(rows: list[dict[str, Any]], stale: list[dict[str, Any]], as_of: str,
                   build: BuildInfo) -> dict[str, Any]:
    """What the page's script needs to make the downloads of the rows shown: the CSV's byte-order mark and
    header, each finding's CSV record and JSON row (in the one order), the stale reviews, the document's
    other fields."""
    return {"bom": findings_export.BOM, "header": findings_export.csv_header(),
            "order": [row["id"] for row in rows],
            "rows": {row["id"]: {"csv": findings_export.csv_line(row), "json": row} for row in rows},
            "stale": stale, "as_of": as_of, "columns": list(findings_export.COLUMNS), "build": build_block(build)}
