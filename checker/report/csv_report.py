"""Findings as CSV, one row per finding, safe to open in a spreadsheet program.

Columns: tag, location, check, rule, status, limit, provided, unit, message.

Submitted text (tags, and messages that quote cells) reaches this file, and a
spreadsheet program treats a cell that starts with ``=``, ``+``, ``-`` or ``@``
as a formula, which can run commands or send data away ("CSV injection" or
formula injection). Following the OWASP CSV Injection guidance, every text cell
that starts with one of those characters, a tab or a carriage return is
prefixed with a single quote, so it is shown as the text it is.

Like the other emitters this reads only the report dict.
"""
from __future__ import annotations

import csv
import io
from collections.abc import Iterator
from typing import Any

CSV_COLUMNS = ("tag", "location", "check", "rule", "status", "limit", "provided", "unit", "message")

# Leading characters a spreadsheet program may read as the start of a formula (OWASP CSV Injection).
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")
# Excel reads a UTF-8 CSV as UTF-8 only when it starts with a byte-order mark.
BOM = "\ufeff"


def neutralise(text: str) -> str:
    """``text`` with a leading single quote when a spreadsheet would take it for a formula."""
    return "'" + text if text.startswith(FORMULA_TRIGGERS) else text


def _number(value: Any) -> str:
    """A limit or provided value as plain decimal text (no exponent); empty when absent."""
    if value is None or isinstance(value, bool) or not isinstance(value, (int, float)):
        return ""
    text = f"{float(value):.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("", "-0") else text


def _location(finding: dict[str, Any], fallback: str) -> str:
    labels = [str(cell.get("label", "")) for cell in finding.get("cells") or [] if cell.get("label")]
    return "; ".join(dict.fromkeys(labels)) or fallback


def _row(tag: str, finding: dict[str, Any], fallback_location: str) -> list[str]:
    text = {
        "tag": tag,
        "location": _location(finding, fallback_location),
        "check": str(finding.get("check", "")),
        "rule": str(finding.get("rule", "")),
        "status": str(finding.get("status", "")),
        "unit": str(finding.get("unit") or ""),
        "message": str(finding.get("message", "")),
    }
    numbers = {"limit": _number(finding.get("limit")), "provided": _number(finding.get("provided"))}
    return [numbers[c] if c in numbers else neutralise(text[c]) for c in CSV_COLUMNS]


def finding_rows(report: dict[str, Any]) -> Iterator[list[str]]:
    """Rows for every motor finding in report order, then every feeder-group finding."""
    for motor in report.get("motors") or []:
        location = str((motor.get("source") or {}).get("label", ""))
        for finding in motor.get("findings") or []:
            yield _row(str(motor.get("tag", "")), finding, location)
    for feeder in report.get("feeders") or []:
        listed = feeder.get("feeder") or {}
        location = str((listed.get("source") or {}).get("label", ""))
        for finding in feeder.get("findings") or []:
            yield _row(f"feeder {feeder.get('group', '')}", finding, location)


def render_csv(report: dict[str, Any]) -> str:
    """The findings of ``report`` (``checker.report.build.review_to_dict``) as CSV text.

    RFC 4180 layout (comma, double quotes, CRLF line ends) after a UTF-8 byte-order
    mark; a header row, then one row per finding. Deterministic for a given report.
    """
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, lineterminator="\r\n", quoting=csv.QUOTE_MINIMAL)
    writer.writerow(CSV_COLUMNS)
    writer.writerows(finding_rows(report))
    return BOM + buffer.getvalue()
