"""Report layer: turns a :class:`checker.model.Review` into JSON, HTML and a text summary.

It reads only :mod:`checker.model` types and plain dicts; nothing here imports
ingest, rules or the command line. The names below are loaded on first use: a large
review starts writing its motors (``write.MotorParts``) before the page template and
Jinja are needed.
"""
from __future__ import annotations

from importlib import import_module
from typing import Any

_WHERE = {
    "dumps": "checker.report.json_report", "validate": "checker.report.json_report",
    "render_html": "checker.report.html_report", "review_to_dict": "checker.report.build",
    "summary_text": "checker.report.text_summary", "write_atomic": "checker.report.files",
}

__all__ = ["dumps", "render_html", "review_to_dict", "summary_text", "validate", "write_atomic"]


def __getattr__(name: str) -> Any:
    if name in _WHERE:
        return getattr(import_module(_WHERE[name]), name)
    raise AttributeError(f"module 'checker.report' has no attribute {name!r}")
