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
    feeders = [entry for entry in _list(report.get("feeders")) if isinstance(entry, dict)]
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
        "feeders": feeders,
        "feeder_articles": lambda: feeder_articles(feeders, appendix),
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
    return [("motorcheck: templates/review.html.j2 compiled by Jinja; do not edit (to make it anew: python -c "
             "'from checker.report.html_report import write_compiled_page; write_compiled_page()')"),
            f"template-sha256: {hashlib.sha256(source.encode('utf-8')).hexdigest()}",
            f"jinja-version: {jinja2.__version__}"]


def page_template(env: Environment) -> Template:
    """The page template: compiled ahead when that compilation is of this template by this
    Jinja (see ``COMPILED_NAME``), else compiled now."""
    source, _, _ = env.loader.get_source(env, TEMPLATE_NAME)
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


def feeder_articles(feeders: list[dict[str, Any]], appendix: set[str]) -> Markup:
    """One ``<article>`` per feeder or motor group, escaped as the template's autoescape would.

    Written here rather than looped in the page template: a facility's groups list every motor
    in their working, and the template loop cost a tenth of a second per 10 000 motors.
    """
    out: list[str] = []
    for number, group in enumerate(feeders, start=1):
        out.append(_feeder_article(group, number, appendix))
    return Markup("".join(out))


def _h(value: Any) -> str:
    """``{{ value }}`` in an autoescaped template: markup as it is, anything else as escaped text
    (a plain ``str``: adding text to ``Markup`` would escape the text)."""
    if hasattr(value, "__html__"):
        return str.__str__(value.__html__())
    return escape_text(value if value.__class__ is str else str(value))


def _feeder_article(group: dict[str, Any], number: int, appendix: set[str]) -> str:
    listed = group.get("feeder")
    record = (listed or {}).get("record") or {}
    computed = group.get("computed") or {}
    status = group.get("status")
    out = [f'<article class="feeder st-{_h(status)}" id="feeder-{number}">\n'
           f'<div class="fd-head"><span class="badge st-{_h(status)}">'
           + ("FOR INFORMATION" if status == "not-checked" else _h(status_label(status)))
           + f'</span> <span class="grp">{_h(group.get("group"))}</span>']
    if listed:
        out.append(f' <span>feeder {_h(record.get("name", ""))}'
                   + (f' from {_h(record.get("from"))}' if record.get("from") else "") + "</span>")
    else:
        out.append(' <span class="empty">no feeder listed</span>')
    out.append(f' <span class="loc">{_h(((listed or {}).get("source") or {}).get("label", ""))}</span></div>\n'
               '<div class="fd-body">\n')
    motors = group.get("motors")
    if motors:
        out.append(f'<p class="fd-motors">{len(motors)} motor{"" if len(motors) == 1 else "s"}: '
                   f'{_h(tag_list(motors))}</p>\n')
    if "min_ampacity_a" in computed or computed.get("max_device"):
        out.append('<div class="fd-figs">\n')
        if "min_ampacity_a" in computed:
            out.append('<div class="fd-fig"><span class="l">Minimum ampacity'
                       + (f" ({_h(computed.get('ampacity_rule'))})" if computed.get("ampacity_rule") else "")
                       + "</span>")
            if computed.get("min_ampacity_a") is not None:
                out.append(f'<span class="n">{_h(format_number(computed.get("min_ampacity_a")))} A</span>')
            else:
                out.append(f'<span class="n">at least {_h(format_number(computed.get("ampacity_counted_a")))} A</span>'
                           '<span class="sub">some motors could not be counted</span>')
            if computed.get("listed_conductor"):
                out.append(f'<span class="sub">listed: {_h(computed.get("listed_conductor"))}</span>')
            out.append("</div>\n")
        for index, device in enumerate(computed.get("max_device") or []):
            out.append(f'<div class="fd-fig"><span class="l">Maximum device, '
                       f'{_h(str(device.get("device") or "").replace("-", " "))}'
                       + (f" ({_h(computed.get('device_rule'))})" if computed.get("device_rule") else "") + "</span>")
            if device.get("limit_a") is not None:
                out.append(f'<span class="n">{_h(format_number(device.get("limit_a")))} A</span>')
            elif device.get("counted_a") is not None:
                out.append(f'<span class="n">at least {_h(format_number(device.get("counted_a")))} A</span>')
            else:
                out.append('<span class="n">&mdash;</span>')
            if device.get("standard_a") is not None:
                out.append(f'<span class="sub">largest standard rating not above it: '
                           f'{_h(format_number(device.get("standard_a")))} A</span>')
            if index == 0 and computed.get("listed_device"):
                out.append(f'<span class="sub">listed: {_h(computed.get("listed_device"))}</span>')
            out.append("</div>\n")
        out.append("</div>\n")
    findings = group.get("findings")
    if findings:
        out.append('<div class="scroll">\n<table class="grid findings">\n<colgroup><col class="c-status">'
                   '<col class="c-rule"><col class="c-message"><col class="c-values"><col class="c-work"></colgroup>\n'
                   '<thead><tr><th scope="col">Status</th><th scope="col">Rule</th><th scope="col">Finding</th>'
                   '<th scope="col">Limit / provided</th><th scope="col">Working</th></tr></thead>\n<tbody>\n')
        for finding in findings:
            out.append(_feeder_finding_row(finding, appendix))
        out.append("</tbody>\n</table>\n</div>\n")
    elif computed.get("trail"):
        out.append(f'<details class="fd-work">\n<summary>Working</summary>\n<ol class="trail">\n'
                   f'{list_items(computed.get("trail"))}\n</ol>\n')
        if computed.get("assumptions"):
            out.append(_headed_list("Assumed", computed.get("assumptions")))
        out.append("</details>\n")
    if computed.get("not_counted"):
        out.append(_headed_list("Not counted", computed.get("not_counted")))
    if group.get("notes"):
        out.append('<ul class="assume">\n' + "".join(f"<li>{_h(note)}</li>\n" for note in group.get("notes"))
                   + "</ul>\n")
    out.append("</div>\n</article>\n")
    return "".join(out)


def _headed_list(heading: str, items: Any) -> str:
    return f'<p class="assume-h">{heading}</p>\n<ul class="assume">\n{list_items(items)}\n</ul>\n'


def _feeder_finding_row(finding: dict[str, Any], appendix: set[str]) -> str:
    status, check, rule, unit = finding.get("status"), finding.get("check"), finding.get("rule"), finding.get("unit")
    if check in appendix:
        rule_html = f'<a href="#check-{_h(anchor(check))}">{_h(rule)}</a>'
    else:
        rule_html = _h(rule)
    out = [(f'<tr>\n<td><span class="badge st-{_h(status)}">{_h(status_label(status))}</span></td>\n'
            f"<td>{rule_html}</td>\n<td>{_h(finding.get('message'))}")]
    if finding.get("citation"):
        out.append(f'<span class="cite">{_h(finding.get("citation"))}</span>')
    out.extend(f'<span class="cite">cell <code>{_h(cell.get("label"))}</code></span>'
               for cell in finding.get("cells") or [])
    out.append("</td>\n<td>")
    if finding.get("limit") is not None or finding.get("provided") is not None:
        out.append(f'<span class="lp"><span class="k">Limit</span> {_h(format_number(finding.get("limit")))} '
                   f'{_h(unit or "")}</span><span class="lp"><span class="k">Provided</span> '
                   f'{_h(format_number(finding.get("provided")))} {_h(unit or "")}</span>')
    else:
        out.append('<span class="empty">none</span>')
    out.append("</td>\n<td>\n")
    if finding.get("trail"):
        out.append(f'<ol class="trail">\n{list_items(finding.get("trail"))}\n</ol>\n')
    if finding.get("assumptions"):
        out.append(_headed_list("Assumed", finding.get("assumptions")))
    out.append("</td>\n</tr>\n")
    return "".join(out)
