"""Report layer: turns a :class:`checker.model.Review` into JSON, HTML and a text summary.

It reads only :mod:`checker.model` types and plain dicts; nothing here imports
ingest, rules or the command line.
"""
from checker.report.build import review_to_dict
from checker.report.files import write_atomic
from checker.report.html_report import render_html
from checker.report.json_report import dumps, validate
from checker.report.text_summary import summary_text

__all__ = ["dumps", "render_html", "review_to_dict", "summary_text", "validate", "write_atomic"]
