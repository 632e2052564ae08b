"""Render the report dict as one self-contained HTML page.

Everything shown comes from the report dict; all of it is escaped by Jinja2's
autoescape. The page carries its own style and script inline, and a
Content-Security-Policy that allows only those two (by their SHA-256), so
nothing else in the page can run or fetch anything, even if a submitted cell
somehow got past escaping.
"""
from __future__ import annotations

import base64
import hashlib
import json
from collections.abc import Iterator
from functools import lru_cache
from pathlib import Path
from typing import Any

import jinja2
from jinja2 import Environment, FileSystemLoader, StrictUndefined, Template
from markupsafe import Markup

from checker.report.build import MotorDicts
from checker.report.html_motors import MotorsSection, anchor, escape_text, format_number

TEMPLATES_DIR = Path(__file__).resolve().parent / "templates"
TEMPLATE_NAME = "review.html.j2"
# The page template as Jinja compiles it, made ahead (``write_compiled_page()``): Jinja takes ~0.04 s to compile the template in every run. Used only while its
# header names this template's SHA-256 and the installed Jinja version; otherwise the template
# is compiled as usual (tests/test_report.py holds the file to what Jinja makes).
COMPILED_NAME = "review.html.compiled"

# Worst first, the order counts are shown in.
STATUS_LABELS = {"fail": "FAIL", "needs-info": "NEEDS INFO", "pass": "PASS"}

# Filter buttons, in the order they are shown: (data-filter value, button text).
FILTERS = (("all", "All"), ("fail", "Fail"), ("needs-info", "Needs info"), ("pass", "Pass"))


def csp_hash(text: str) -> str:
    """CSP source expression for an inline element whose text is ``text``.

    Browsers hash the element's text as UTF-8 and compare base64 SHA-256
    digests (CSP Level 3, "hash-source").
    """
    digest = hashlib.sha256(str(text).encode("utf-8")).digest()
    return "sha256-" + base64.b64encode(digest).decode("ascii")


def status_label(status: Any) -> str:
    return STATUS_LABELS.get(str(status), str(status).upper())


def cell_text(value: Any) -> str:
    """A pass-through value (tables, verification counts) as short text."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (list, tuple)):
        return ", ".join(cell_text(item) for item in value)
    if isinstance(value, dict):
        return json.dumps(value, ensure_ascii=False, sort_keys=False)
    return str(value)


def list_items(items: Any) -> Markup:
    """``<li>`` lines of a list (a feeder's working runs to a line per motor: joined here, not
    looped in the template), each item escaped."""
    return Markup("".join([f"<li>{escape_text(item)}</li>\n" for item in _list(items)]))


def tag_list(motors: Any) -> Markup:
    """The tags of a group's motors, comma-separated and escaped."""
    return Markup(", ".join([escape_text(motor.get("tag")) for motor in _list(motors) if isinstance(motor, dict)]))


@lru_cache(maxsize=1)
def _environment() -> Environment:
    env = Environment(
        loader=FileSystemLoader(str(TEMPLATES_DIR)),
        autoescape=True,
        undefined=StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )
    env.filters.update(
        csp_hash=csp_hash, num=format_number, anchor=anchor, status_label=status_label, cell_text=cell_text,
        list_items=list_items, tag_list=tag_list,
    )
    return env


def _mapping(value: Any) -> dict[str, Any]:
    return value if isinstance(value, dict) else {}


def _list(value: Any) -> list[Any]:
    return value if isinstance(value, list) else []


def table_grid(tables: list[Any]) -> tuple[list[str], list[list[str]]]:
    """Column names (first-seen order) and text rows for the 'Tables read' section.

    The table descriptions are passed through from ingest, so their keys are
    not fixed here; every key any table has becomes a column.
    """
    columns: list[str] = []
    for table in tables:
        for key in _mapping(table):
            if key not in columns:
                columns.append(key)
    rows = [[cell_text(_mapping(table).get(key)) for key in columns] for table in tables]
    return columns, rows


def verification_pairs(ruleset: dict[str, Any]) -> list[tuple[str, str]]:
    """``ruleset['verification']`` as (label, count) pairs; one pair if it is a single value."""
    given = ruleset.get("verification")
    if isinstance(given, dict):
        return [(str(key).replace("_", " "), cell_text(value)) for key, value in given.items()]
    if given is None:
        return []
    return [("", cell_text(given))]


def appendix_ids(report: dict[str, Any]) -> set[str]:
    """Ids of the checks the page's appendix describes (rule links point there)."""
    return {str(entry.get("id")) for entry in _list(report.get("checks")) if isinstance(entry, dict)}


def _context(report: dict[str, Any]) -> dict[str, Any]:
    ruleset = _mapping(report.get("ruleset"))
    given_input = _mapping(report.get("input"))
    summary = _mapping(report.get("summary"))
    motors = report.get("motors") if isinstance(report.get("motors"), MotorDicts) else _list(report.get("motors"))
    checks = [entry for entry in _list(report.get("checks")) if isinstance(entry, dict)]
    columns, rows = table_grid(_list(report.get("tables")))
    by_status = _mapping(summary.get("motors_by_status"))
    filter_counts = {"all": len(motors), **{key: by_status.get(key, 0) for key in STATUS_LABELS}}
    appendix = appendix_ids(report)
    return {
        "report": report,
        "tool": _mapping(report.get("tool")),
        "ruleset": ruleset,
        "input": given_input,
        "file_name": str(given_input.get("file") or "(unnamed input)"),
        "code": str(report.get("code", "")),
        "summary": summary,
        "cautions": _list(report.get("cautions")),
        "notes": _list(report.get("notes")),
        "motors": motors,
        "motors_section": MotorsSection(motors, appendix),
        "skipped": _list(report.get("skipped")),
        "feeders": [entry for entry in _list(report.get("feeders")) if isinstance(entry, dict)],
        "checks": checks,
        "appendix_ids": appendix,
        "verification": verification_pairs(ruleset),
        "table_columns": columns,
        "table_rows": rows,
        "filters": [(value, text, filter_counts.get(value, 0)) for value, text in FILTERS],
        "status_keys": list(STATUS_LABELS),
    }


def render_html(report: dict[str, Any]) -> str:
    """The report as one self-contained HTML page (no external resources).

    Parameters
    ----------
    report : dict
        Output of :func:`checker.report.build.review_to_dict`.

    Returns
    -------
    str
        The page; its inline ``<style>`` and ``<script>`` are the only ones the
        page's Content-Security-Policy allows.
    """
    return "".join(iter_html(report))


def iter_html(report: dict[str, Any]) -> Iterator[str]:
    """The page of :func:`render_html` in pieces (about one per motor), to write as they come."""
    return _page_template().generate(**_context(report))


@lru_cache(maxsize=1)
def _page_template() -> Template:
    return page_template(_environment())


def compiled_page_text(env: Environment) -> str:
    """The text of ``templates/review.html.compiled``: the page template compiled by ``env``'s
    Jinja, after a header naming the template's SHA-256 and the Jinja version."""
    source, filename, _ = env.loader.get_source(env, TEMPLATE_NAME)
    code = env.compile(source, TEMPLATE_NAME, filename, raw=True)
    return "".join(f"# {line}\n" for line in _compiled_header(source)) + code + "\n"


def _compiled_header(source: str) -> list[str]:
    return ["motorcheck: templates/review.html.j2 compiled by Jinja; do not edit (to make it anew: python -c "
            "'from checker.report.html_report import write_compiled_page; write_compiled_page()')",
            f"template-sha256: {hashlib.sha256(source.encode('utf-8')).hexdigest()}",
            f"jinja-version: {jinja2.__version__}"]


def page_template(env: Environment) -> Template:
    """The page template: compiled ahead when that compilation is of this template by this
    Jinja (see ``COMPILED_NAME``), else compiled now."""
    source, filename, _ = env.loader.get_source(env, TEMPLATE_NAME)
    try:
        text = (TEMPLATES_DIR / COMPILED_NAME).read_text(encoding="utf-8")
    except OSError:
        text = ""
    header = "".join(f"# {line}\n" for line in _compiled_header(source))
    if text.startswith(header):
        code = compile(text, str(TEMPLATES_DIR / COMPILED_NAME), "exec")
        return env.template_class.from_code(env, code, env.make_globals(None))
    return env.get_template(TEMPLATE_NAME)


def write_compiled_page() -> Path:
    """Write ``templates/review.html.compiled`` anew (after changing the template or Jinja)."""
    path = TEMPLATES_DIR / COMPILED_NAME
    path.write_text(compiled_page_text(_environment()), encoding="utf-8")
    return path
