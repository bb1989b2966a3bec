"""The audit page's downloads: every discrepancy as CSV and as JSON."""
from __future__ import annotations

import csv
import io
import json
import math
from typing import Any

from registry.output.safe_text import spreadsheet_cell
from registry.site.info import BuildInfo

CSV_FIELDS = ("id", "severity", "aircraft", "registration", "position", "services", "rule", "value", "limit", "unit",
              "message", "method", "source", "review", "reviewer", "review_reference", "review_comment")


def export_value(value: Any) -> Any:
    """Numbers stay numbers where JSON can hold them; anything else becomes text."""
    if value is None or isinstance(value, (str, bool, int)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else str(value)
    return str(value)


def export_row(view: dict[str, Any]) -> dict[str, Any]:
    """One discrepancy (as the audit page shows it) in the downloads' columns."""
    return {"id": view["id"], "severity": view["severity"], "aircraft": view["aircraft"],
            "registration": view["registration"], "position": view["position"], "services": " ".join(view["services"]),
            "rule": view["rule"], "value": export_value(view["value_raw"]), "limit": export_value(view["limit_raw"]),
            "unit": view["unit"], "message": view["message"], "method": view["method"], "source": view["src"],
            "review": view["review"], "reviewer": view["reviewer"], "review_reference": view["review_reference"],
            "review_comment": view["review_comment"]}


def discrepancies_csv(views: list[dict[str, Any]]) -> str:
    """Every discrepancy as CSV; text cells neutralised for spreadsheets (`safe_text.spreadsheet_cell`:
    OWASP's guidance on CSV injection), numbers written as numbers."""
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=CSV_FIELDS, lineterminator="\r\n")
    writer.writeheader()
    for view in views:
        row = export_row(view)
        writer.writerow({k: ("" if v is None else repr(v) if isinstance(v, float) else spreadsheet_cell(v))
                         for k, v in row.items()})
    return buffer.getvalue()


def discrepancies_json(views: list[dict[str, Any]], build: BuildInfo) -> str:
    document = {"build": {"revision": build.revision, "time": build.time, "version": build.version},
                "discrepancies": [export_row(view) for view in views]}
    return json.dumps(document, indent=2, ensure_ascii=False, sort_keys=False, allow_nan=False) + "\n"
