"""The one exporter of findings: the rows, columns and bytes of `check --format csv/json` and of the audit
page's downloads (whole, and in the browser for what is filtered).

CSV: UTF-8 with a byte-order mark, so spreadsheets that guess the encoding read Ω and § as written;
fields quoted as RFC 4180 section 2 says (a field holding a comma, a double quote, CR or LF is enclosed in
double quotes, a double quote inside it doubled) and records ended by CR LF; text cells neutralised
against formula injection (`safe_text.spreadsheet_cell`, OWASP's guidance on CSV injection); numbers
written at full precision. Paths ("source") are relative to the data folder; shipped files relative to
the tool's folder (`registry/data/policy.yaml`).
"""
from __future__ import annotations

import csv
import io
import json
import math
from collections.abc import Iterable, Mapping
from pathlib import Path
from typing import Any

from registry.core.results import Discrepancy
from registry.output.record import relative_src
from registry.output.safe_text import spreadsheet_cell

COLUMNS = ("id", "severity", "counts_open", "aircraft", "registration", "position", "services", "rule", "value",
           "limit", "unit", "message", "method", "source", "review", "review_date", "reviewer", "review_reference",
           "review_comment")
"""The columns, in order, of every export of findings."""

BOM = "\ufeff"
"""UTF-8 byte-order mark: the first character of every CSV export."""

PACKAGE_ROOT = Path(__file__).resolve().parent.parent.parent
"""Shipped files (registry/data/...) are named relative to the tool's folder, never as absolute paths."""


def source_text(src: str, data_dir: Path) -> str:
    """A finding's "file:line", the file relative to the data folder (or to the tool's folder if shipped)."""
    text = relative_src(src, data_dir)
    prefix = str(PACKAGE_ROOT) + "/"
    return text[len(prefix):] if text.startswith(prefix) else text


def number(value: Any) -> Any:
    """Numbers stay numbers where JSON can hold them; anything else becomes text."""
    if value is None or isinstance(value, (str, bool, int)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else str(value)
    return str(value)


def finding_row(item: Discrepancy, fleet) -> dict[str, Any]:
    """One finding in the exports' columns (registration and services read from the fleet)."""
    craft = fleet.aircraft.get(item.aircraft)
    installs = craft.installations if craft else {}
    services = sorted({installs[p].service for p in item.position.split("+") if p in installs})
    return {"id": item.id, "severity": item.severity, "counts_open": item.is_open, "aircraft": item.aircraft,
            "registration": craft.registration if craft else item.aircraft, "position": item.position,
            "services": " ".join(services), "rule": item.rule, "value": number(item.value),
            "limit": number(item.limit), "unit": item.unit, "message": item.message, "method": item.method,
            "source": source_text(item.src, Path(fleet.data_dir)), "review": item.review,
            "review_date": item.review_date, "reviewer": item.reviewer, "review_reference": item.review_reference,
            "review_comment": item.review_comment}


def rows(found: Iterable[Discrepancy], fleet) -> list[dict[str, Any]]:
    return [finding_row(item, fleet) for item in found]


def csv_cell(value: Any) -> Any:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return repr(value)
    return spreadsheet_cell(value)


def csv_record(values: Iterable[Any]) -> str:
    """One CSV record (RFC 4180: quoted where needed, CR LF at the end)."""
    buffer = io.StringIO()
    csv.writer(buffer, lineterminator="\r\n").writerow(list(values))
    return buffer.getvalue()


def csv_header() -> str:
    return csv_record(COLUMNS)


def csv_line(row: Mapping[str, Any]) -> str:
    return csv_record(csv_cell(row[name]) for name in COLUMNS)


def as_csv(found_rows: Iterable[Mapping[str, Any]]) -> str:
    """The CSV export: byte-order mark, header, one record per finding."""
    return BOM + csv_header() + "".join(csv_line(row) for row in found_rows)


def stale_entry(review, data_dir: Path) -> dict[str, Any]:
    """A review whose finding no longer exists, as the JSON export and the audit page list it."""
    return {"discrepancy": review.discrepancy, "aircraft": review.discrepancy.split("/", 1)[0],
            "state": review.state, "reviewer": review.reviewer, "review_date": review.date.isoformat(),
            "source": source_text(f"{review.src.path}:{review.src.line}", data_dir)}


def document(found_rows: list[dict[str, Any]], stale: list[dict[str, Any]], as_of: str,
             filters: Mapping[str, list[str]], build: Mapping[str, str] | None = None) -> dict[str, Any]:
    """The JSON export: the as-of date, the filters applied (name to values; {} for none), the columns,
    the findings, the stale reviews, and (from the site) the build's revision."""
    out = {"as_of": as_of, "filters": {name: list(values) for name, values in filters.items() if values},
           "columns": list(COLUMNS), "discrepancies": found_rows, "stale_reviews": stale}
    if build is not None:
        out["build"] = dict(build)
    return out


def as_json(found_rows: list[dict[str, Any]], stale: list[dict[str, Any]], as_of: str,
            filters: Mapping[str, list[str]], build: Mapping[str, str] | None = None) -> str:
    return json.dumps(document(found_rows, stale, as_of, filters, build), indent=2, ensure_ascii=False,
                      allow_nan=False) + "\n"
