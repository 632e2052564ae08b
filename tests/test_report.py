"""Tests for the report layer (build, JSON, HTML, text summary, atomic write).

All numbers in these reviews are invented to exercise the layout; they are
not code values and nothing here checks engineering results.
"""
from __future__ import annotations

import ast
import base64
import hashlib
import json
import os
import re
from datetime import date
from html.parser import HTMLParser
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker import model
from checker.model import Finding, Motor, MotorReview, Review, SkippedRow, SourceRef, Status
from checker.report import build, dumps, render_html, review_to_dict, summary_text, validate, write_atomic

SCRIPT = "<script>alert(1)</script>"
ATTR = '"><img src=x onerror=alert(1)>'
REPORT_DIR = Path(__file__).resolve().parents[1] / "checker" / "report"


def src(row: int, column: str | None = None, sheet: str = "Motors") -> SourceRef:
    return SourceRef(file="schedule.xlsx", row=row, sheet=sheet, column=column)


def make_review() -> Review:
    """Two motors (one fail, one needs-info with hostile text), one skipped row."""
    pump = Motor(
        tag="P-101",
        record={"tag": "P-101", "description": "Chilled water pump", "fla_a": 11.0, "ocpd": {"rating_a": 40}},
        source=src(5),
        sources={"fla_a": src(5, "F"), "ocpd": src(5, "J")},
        raw={"TAG": "P-101", "FLA": "11", "BKR": "40A"},
    )
    pump_findings = (
        Finding(
            check="conductor-ampacity", rule="28-106(1)", status=Status.PASS,
            message="Conductor ampacity is enough.", limit=13.7500000001, provided=20, unit="A",
            trail=("11 A x 1.25 = 13.75 A",), fields=("fla_a", "conductor"), citation="CEC Part I, Rule 28-106(1)",
        ),
        Finding(
            check="ocpd-max", rule="28-200", status=Status.FAIL,
            message="Breaker is above the maximum.", limit=27.5, provided=40.0, unit="A",
            trail=("11 A x 2.50 = 27.5 A",), assumptions=("inverse-time breaker assumed",),
            fields=("fla_a", "ocpd"), citation="CEC Part I, Rule 28-200 and Table 29",
        ),
    )
    hostile = Motor(
        tag=SCRIPT,
        record={"tag": SCRIPT, "description": ATTR},
        source=src(6),
        sources={"hp": src(6, "C")},
        raw={"TAG": SCRIPT, "HP": ATTR},
        input_findings=(
            Finding(
                check="input-hp", rule="input", status=Status.NEEDS_INFO,
                message=f"HP cell could not be read: {ATTR}", fields=("hp", "voltage_v"),
            ),
        ),
    )
    return Review(
        code="cec-2015",
        ruleset={
            "id": "cec-2015", "title": "CEC Part I Section 28 (test)", "code": "CSA C22.1", "edition": "2015",
            "sha256": "ab" * 32, "verification": {"published": 3, "from_memory": 1},
            "released": date(2015, 1, 1), "tuple_values": (1, 2),
            "cautions": ["Values marked from memory must be checked against a licensed copy."],
            "checks": [
                {"id": "conductor-ampacity", "rule": "28-106(1)", "title": "Conductor ampacity",
                 "rationale": "Conductors carry the motor current continuously.", "citation": "CEC Part I, Rule 28-106"},
                {"id": "ocpd-max", "rule": "28-200", "title": "Overcurrent device rating",
                 "rationale": "The device must clear faults.", "citation": "CEC Part I, Rule 28-200"},
            ],
        },
        input={"file": "/home/someone/jobs/schedule.xlsx", "sha256": "cd" * 32, "format": "xlsx"},
        motors=(MotorReview(pump, pump_findings), MotorReview(hostile, ())),
        skipped=(SkippedRow(src(4), "section heading", f"PUMPS {SCRIPT}"),),
        tables=({"sheet": "Motors", "rows": 3, "used": True}, {"sheet": "Notes", "used": False, "reason": "no motor headings"}),
        notes=("Header found on row 3.",),
        checks_not_run=({"check": "bond-size", "reason": "no bond column", "motors": 2},),
    )


@pytest.fixture(scope="module")
def report() -> dict:
    return review_to_dict(make_review(), "0.1.0")


@pytest.fixture(scope="module")
def html(report) -> str:
    return render_html(report)


# --- build ---------------------------------------------------------------------------------------

def test_review_to_dict_validates_against_schema(report):
    assert validate(report) == []


def test_review_to_dict_key_order_is_fixed(report):
    assert list(report) == ["tool", "code", "ruleset", "input", "summary", "cautions", "notes", "tables",
                            "motors", "skipped", "feeders", "checks"]
    assert list(report["motors"][0]["findings"][0]) == [
        "check", "rule", "status", "message", "limit", "provided", "unit", "trail", "assumptions", "citation", "cells"]


def test_summary_counts(report):
    summary = report["summary"]
    assert summary["rows_read"] == 3 and summary["motors"] == 2 and summary["skipped"] == 1
    assert summary["findings"] == {"pass": 1, "fail": 1, "needs-info": 1}
    assert summary["motors_by_status"] == {"pass": 0, "fail": 1, "needs-info": 1}
    assert summary["result"] == "fail"
    assert summary["checks_not_run"] == [{"check": "bond-size", "reason": "no bond column", "motors": 2}]


def test_motor_findings_input_first_and_cells(report):
    pump, hostile = report["motors"]
    assert [f["check"] for f in pump["findings"]] == ["conductor-ampacity", "ocpd-max"]
    # 'conductor' has no source cell, so only fla_a appears.
    assert pump["findings"][0]["cells"] == [{"field": "fla_a", "label": "Motors!F5", "column": "F"}]
    assert pump["findings"][1]["cells"][1] == {"field": "ocpd", "label": "Motors!J5", "column": "J"}
    assert hostile["status"] == "needs-info"
    assert hostile["findings"][0]["cells"] == [{"field": "hp", "label": "Motors!C6", "column": "C"}]


def test_values_rounded_and_paths_relative(report):
    assert report["motors"][0]["findings"][0]["limit"] == 13.75
    assert report["input"]["file"] == "schedule.xlsx"
    assert report["ruleset"]["released"] == "2015-01-01"
    assert report["ruleset"]["tuple_values"] == [1, 2]
    assert report["cautions"] == ["Values marked from memory must be checked against a licensed copy."]
    assert [c["id"] for c in report["checks"]] == ["conductor-ampacity", "ocpd-max"]


def test_motor_without_findings_is_needs_info_and_result_statuses():
    motor = Motor(tag="M-1", record={"tag": "M-1"}, source=src(2))
    passing = Finding(check="c", rule="r", status=Status.PASS, message="ok")
    empty = review_to_dict(Review("x", {}, {}, (MotorReview(motor, ()),), ()), "1")
    assert empty["summary"]["motors_by_status"]["needs-info"] == 1
    assert empty["summary"]["result"] == "needs-info"
    clean_pass = review_to_dict(Review("x", {}, {}, (MotorReview(motor, (passing,)),), ()), "1")
    assert clean_pass["summary"]["result"] == "pass"
    not_run = review_to_dict(
        Review("x", {}, {}, (MotorReview(motor, (passing,)),), (), checks_not_run=({"check": "c2", "reason": "n", "motors": 1},)),
        "1",
    )
    assert not_run["summary"]["result"] == "needs-info"
    nothing = review_to_dict(Review("x", {}, {}, (), ()), "1")
    assert nothing["summary"]["result"] == "needs-info"
    assert validate(nothing) == []


def test_non_finite_values_become_null():
    motor = Motor(tag="M-1", record={"tag": "M-1", "x": float("nan")}, source=src(2))
    bad = Finding(check="c", rule="r", status=Status.FAIL, message="m", limit=float("inf"), provided=float("nan"))
    out = review_to_dict(Review("x", {}, {}, (MotorReview(motor, (bad,)),), ()), "1")
    assert out["motors"][0]["findings"][0]["limit"] is None
    assert out["motors"][0]["record"]["x"] is None
    text = dumps(out)
    assert "NaN" not in text and "Infinity" not in text


def test_worst_status_order():
    assert build.worst_status(["pass", "needs-info"]) == "needs-info"
    assert build.worst_status(["needs-info", "fail", "pass"]) == "fail"
    assert build.worst_status([]) == "needs-info"


# --- JSON ----------------------------------------------------------------------------------------

def test_dumps_is_deterministic(report):
    first = dumps(review_to_dict(make_review(), "0.1.0"))
    second = dumps(review_to_dict(make_review(), "0.1.0"))
    assert first.encode("utf-8") == second.encode("utf-8")
    assert first.endswith("}\n") and json.loads(first) == report
    assert SCRIPT in first  # kept as text, not \u-escaped (ensure_ascii=False)


def test_validate_reports_bad_reports(report):
    broken = json.loads(dumps(report))
    broken["motors"][0]["findings"][1]["status"] = "ok"
    broken["summary"]["rows_read"] = -1
    del broken["tool"]
    problems = validate(broken)
    assert any(p.startswith("$.motors[0].findings[1].status:") for p in problems)
    assert any(p.startswith("$.summary.rows_read:") for p in problems)
    assert any("'tool' is a required property" in p for p in problems)


# --- HTML ----------------------------------------------------------------------------------------

class TagCollector(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.text_of: dict[str, list[str]] = {"style": [], "script": []}
        self._open: str | None = None

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        if tag in self.text_of:
            self._open = tag
            self.text_of[tag].append("")

    def handle_endtag(self, tag):
        if tag == self._open:
            self._open = None

    def handle_data(self, data):
        if self._open:
            self.text_of[self._open][-1] += data


def parse(html: str) -> TagCollector:
    collector = TagCollector()
    collector.feed(html)
    return collector


def test_html_escapes_submitted_text(html):
    assert "<script>alert" not in html
    assert "<img" not in html
    # 'onerror=' may only appear inside escaped text: right after the escaped '<img src=x '.
    for match in re.finditer("onerror=", html):
        assert html[match.start() - len("&lt;img src=x "): match.start()] == "&lt;img src=x "
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    tags = parse(html).tags
    assert [t for t, _ in tags].count("script") == 1
    assert "img" not in [t for t, _ in tags]
    assert not [name for _, attrs in tags for name in attrs if name.startswith("on")]


def test_html_fetches_nothing(html):
    assert "http://" not in html and "https://" not in html
    for tag, attrs in parse(html).tags:
        assert "src" not in attrs, tag
        if "href" in attrs:
            assert attrs["href"].startswith("#"), attrs
    assert "@import" not in html and "url(" not in html


def test_html_csp_hashes_match_inline_code(html):
    doc = parse(html)
    csp = [a["content"] for t, a in doc.tags if t == "meta" and a.get("http-equiv") == "Content-Security-Policy"]
    assert len(csp) == 1
    directives = dict(part.strip().split(" ", 1) for part in csp[0].split(";"))
    assert directives["default-src"] == "'none'" and directives["img-src"] == "data:"

    def hashes(texts):
        return {"'sha256-" + base64.b64encode(hashlib.sha256(t.encode()).digest()).decode() + "'" for t in texts}

    assert set(directives["style-src"].split()) == hashes(doc.text_of["style"])
    assert set(directives["script-src"].split()) == hashes(doc.text_of["script"])
    assert len(doc.text_of["script"]) == 1 and "data-filter" in doc.text_of["script"][0]


def test_html_structure(html, report):
    doc = parse(html)
    details = [a for t, a in doc.tags if t == "details"]
    assert [("open" in a, a["class"]) for a in details] == [(True, "motor st-fail"), (True, "motor st-needs-info")]
    ids = {a.get("id") for _, a in doc.tags}
    assert {"check-conductor-ampacity", "check-ocpd-max", "not-reviewed", "tables-read", "rules"} <= ids
    hrefs = [a["href"] for t, a in doc.tags if t == "a"]
    assert "#check-ocpd-max" in hrefs and all(h[1:] in ids for h in hrefs)
    assert ('body', {'data-filter': 'all'}) in doc.tags
    buttons = [a["data-filter"] for t, a in doc.tags if t == "button"]
    assert buttons == ["all", "fail", "needs-info", "pass"]
    # Filtering is one attribute change on <body>; CSS hides the other motors.
    css = "".join(doc.text_of["style"])
    for status in ("fail", "needs-info", "pass"):
        assert f'body[data-filter="{status}"] .motor:not(.st-{status})' in css
    assert ".motor" not in doc.text_of["script"][0]
    for text in ("Must be checked against a licensed copy", "NEEDS INFO", "Motors!row 5", "[F5 J5]", "section heading",
                 "Rows not reviewed (1)", "no motor headings", "11 A x 2.50 = 27.5 A", "inverse-time breaker assumed",
                 "published: 3", "from memory: 1", "bond-size", "13.75", "schedule.xlsx", "@media print"):
        assert text.lower() in html.lower(), text


def test_html_passing_motor_is_collapsed():
    motor = Motor(tag="M-9", record={"tag": "M-9"}, source=src(2))
    passing = Finding(check="c", rule="r", status=Status.PASS, message="ok")
    page = render_html(review_to_dict(Review("x", {}, {}, (MotorReview(motor, (passing,)),), ()), "1"))
    details = [a for t, a in parse(page).tags if t == "details"]
    assert len(details) == 1 and "open" not in details[0]


# --- text ----------------------------------------------------------------------------------------

def test_summary_text_lines(report):
    lines = summary_text(report).splitlines()
    assert lines == [
        "schedule.xlsx  cec-2015 (CEC Part I Section 28 (test))",
        "result: FAIL | 3 rows read: 2 motors, 1 not reviewed | motors: 1 fail, 1 needs info, 0 pass",
        "checks that could not run: bond-size (2 motors)",
        "Motors!row 5  P-101  FAIL  28-200  Breaker is above the maximum.",
        f"Motors!row 6  {SCRIPT}  NEEDS-INFO  input  HP cell could not be read: {ATTR}",
    ]


def test_summary_text_caps_and_cleans():
    motor = Motor(tag="M\x1b[31m-1\nX", record={"tag": "M-1"}, source=src(2))
    findings = tuple(
        Finding(check="c", rule="28-200", status=Status.FAIL, message=f"problem {i} " + "x" * 200) for i in range(50)
    )
    text = summary_text(review_to_dict(Review("x", {}, {"file": "a.csv"}, (MotorReview(motor, findings),), ()), "1"),
                        max_lines=10)
    lines = text.splitlines()
    assert len(lines) == 10
    assert lines[-1] == "... 43 more (see report)"
    assert "\x1b" not in text and all(len(line) <= 120 for line in lines)
    assert lines[2].startswith("Motors!row 2  M[31m-1 X  FAIL  28-200  problem 0 xxx")
    assert lines[2].endswith("x...") and len(lines[2]) == 120


# --- files ---------------------------------------------------------------------------------------

def test_write_atomic_writes_and_leaves_no_temp(tmp_path):
    target = tmp_path / "new" / "deeper" / "review.json"
    write_atomic(target, "first\n")
    write_atomic(target, "second \u00b0C\r\n")
    assert target.read_bytes() == "second \u00b0C\r\n".encode("utf-8")
    assert sorted(p.name for p in target.parent.iterdir()) == ["review.json"]


def test_write_atomic_failure_keeps_old_file(tmp_path, monkeypatch):
    target = tmp_path / "review.html"
    target.write_text("old", encoding="utf-8")

    def refuse(src_name, dst_name):
        raise OSError("disk said no")

    monkeypatch.setattr(os, "replace", refuse)
    with pytest.raises(OSError):
        write_atomic(target, "new")
    assert target.read_text(encoding="utf-8") == "old"
    assert [p.name for p in tmp_path.iterdir()] == ["review.html"]


# --- layering ------------------------------------------------------------------------------------

def test_report_layer_imports_only_model():
    for path in REPORT_DIR.glob("*.py"):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        for node in ast.walk(tree):
            names = []
            if isinstance(node, ast.Import):
                names = [alias.name for alias in node.names]
            elif isinstance(node, ast.ImportFrom) and node.module:
                names = [node.module] + [f"{node.module}.{alias.name}" for alias in node.names]
            for name in names:
                assert not name.startswith(("checker.ingest", "checker.rules", "checker.cli")), (path.name, name)
                if name == "checker":
                    assert all(alias.name == "model" for alias in node.names), (path.name, name)
    assert model.Status.FAIL.value == "fail"


@pytest.mark.parametrize("value", [
    {"a": 1, "b": [1, (2, 3)], "c": {"d": float("nan"), "e": float("-inf")}, "s": Status.FAIL, "t": True,
     "n": None, "f": 2.5, "day": date(2025, 1, 2), "text": "é \u2028 <x>"},
    {"set": {2, 1}}, {1: "key not text"}, {"big": 10**30}, {"path": Path("/home/someone/schedule.xlsx")},
])
def test_plain_record_is_plain(value):
    """The compiled copy of a record gives exactly what the reference ``plain`` gives, also for the
    values it hands back to ``plain`` (sets, non-text keys, big integers, paths)."""
    assert build.plain_record(value) == build.plain(value)
    assert json.dumps(build.plain_record(value), allow_nan=False)


# --------------------------------------------------------------------------- the page template compiled ahead

def test_compiled_page_is_what_jinja_makes_of_the_template():
    """The file shipped is the template as this Jinja compiles it; remake it with
    ``write_compiled_page()`` after changing the template."""
    import jinja2

    from checker.report import html_report

    path = html_report.TEMPLATES_DIR / html_report.COMPILED_NAME
    shipped = path.read_text(encoding="utf-8")
    version_line = next(line for line in shipped.splitlines() if line.startswith("# jinja-version: "))
    if version_line != f"# jinja-version: {jinja2.__version__}":
        pytest.skip(f"compiled with another Jinja ({version_line}); this one compiles the template at run time")
    assert shipped == html_report.compiled_page_text(html_report._environment()), \
        "templates/review.html.compiled is stale: run write_compiled_page()"


def test_page_from_the_compiled_template_equals_the_page_compiled_now(tmp_path, monkeypatch):
    from jinja2 import FileSystemLoader

    from checker.report import html_report
    from checker.review import review_schedule

    root = Path(__file__).resolve().parents[1]
    report = review_to_dict(review_schedule(root / "fixtures" / "demo" / "northfield-pump-station.xlsx"), "t")
    env = html_report._environment.__wrapped__()  # a fresh environment: the shared one is not changed
    ahead = html_report.page_template(env)
    import jinja2

    shipped_version = (REPORT_DIR / "templates" / html_report.COMPILED_NAME).read_text(encoding="utf-8").split(
        "# jinja-version: ", 1)[1].split("\n", 1)[0]
    made_ahead = ahead.filename.endswith(html_report.COMPILED_NAME)
    assert made_ahead == (shipped_version == jinja2.__version__)  # another Jinja compiles the template itself
    now = html_report._environment.__wrapped__().get_template(html_report.TEMPLATE_NAME)
    context = html_report._context(report)
    assert "".join(ahead.generate(**context)) == "".join(now.generate(**html_report._context(report)))
    # a stale compiled file (another template) is not used
    monkeypatch.setattr(html_report, "TEMPLATES_DIR", tmp_path)
    (tmp_path / html_report.TEMPLATE_NAME).write_text("<p>{{ code }}</p>\n", encoding="utf-8")
    (tmp_path / html_report.COMPILED_NAME).write_text(
        (REPORT_DIR / "templates" / html_report.COMPILED_NAME).read_text(encoding="utf-8"),
        encoding="utf-8")
    env = html_report._environment.__wrapped__()
    env.loader = FileSystemLoader(str(tmp_path))
    assert html_report.page_template(env).render(code="x") == "<p>x</p>\n"



# --------------------------------------------------------------------------- feeder articles written in Python

# The Jinja loop the feeder section was written with before html_report.feeder_articles took its place:
# kept here as the reference the Python must match, character for character.
_FEEDER_LOOP = """{% for group in feeders %}
{% set listed = group.get('feeder') %}
{% set record = (listed or {}).get('record') or {} %}
{% set computed = group.get('computed') or {} %}
<article class="feeder st-{{ group.get('status') }}" id="feeder-{{ loop.index }}">
<div class="fd-head"><span class="badge st-{{ group.get('status') }}">{% if group.get('status') == 'not-checked' %}FOR INFORMATION{% else %}{{ group.get('status')|status_label }}{% endif %}</span> <span class="grp">{{ group.get('group') }}</span>{% if listed %} <span>feeder {{ record.get('name', '') }}{% if record.get('from') %} from {{ record.get('from') }}{% endif %}</span>{% else %} <span class="empty">no feeder listed</span>{% endif %} <span class="loc">{{ ((listed or {}).get('source') or {}).get('label', '') }}</span></div>
<div class="fd-body">
{% if group.get('motors') %}
<p class="fd-motors">{{ group.get('motors')|length }} motor{{ '' if group.get('motors')|length == 1 else 's' }}: {{ group.get('motors')|tag_list }}</p>
{% endif %}
{% if 'min_ampacity_a' in computed or computed.get('max_device') %}
<div class="fd-figs">
{% if 'min_ampacity_a' in computed %}
<div class="fd-fig"><span class="l">Minimum ampacity{% if computed.get('ampacity_rule') %} ({{ computed.get('ampacity_rule') }}){% endif %}</span>{% if computed.get('min_ampacity_a') is not none %}<span class="n">{{ computed.get('min_ampacity_a')|num }} A</span>{% else %}<span class="n">at least {{ computed.get('ampacity_counted_a')|num }} A</span><span class="sub">some motors could not be counted</span>{% endif %}{% if computed.get('listed_conductor') %}<span class="sub">listed: {{ computed.get('listed_conductor') }}</span>{% endif %}</div>
{% endif %}
{% for device in computed.get('max_device') or [] %}
<div class="fd-fig"><span class="l">Maximum device, {{ (device.get('device') or '')|replace('-', ' ') }}{% if computed.get('device_rule') %} ({{ computed.get('device_rule') }}){% endif %}</span>{% if device.get('limit_a') is not none %}<span class="n">{{ device.get('limit_a')|num }} A</span>{% elif device.get('counted_a') is not none %}<span class="n">at least {{ device.get('counted_a')|num }} A</span>{% else %}<span class="n">&mdash;</span>{% endif %}{% if device.get('standard_a') is not none %}<span class="sub">largest standard rating not above it: {{ device.get('standard_a')|num }} A</span>{% endif %}{% if loop.first and computed.get('listed_device') %}<span class="sub">listed: {{ computed.get('listed_device') }}</span>{% endif %}</div>
{% endfor %}
</div>
{% endif %}
{% if group.get('findings') %}
<div class="scroll">
<table class="grid findings">
<colgroup><col class="c-status"><col class="c-rule"><col class="c-message"><col class="c-values"><col class="c-work"></colgroup>
<thead><tr><th scope="col">Status</th><th scope="col">Rule</th><th scope="col">Finding</th><th scope="col">Limit / provided</th><th scope="col">Working</th></tr></thead>
<tbody>
{% for finding in group.get('findings') %}
<tr>
<td><span class="badge st-{{ finding.get('status') }}">{{ finding.get('status')|status_label }}</span></td>
<td>{% if finding.get('check') in appendix_ids %}<a href="#check-{{ finding.get('check')|anchor }}">{{ finding.get('rule') }}</a>{% else %}{{ finding.get('rule') }}{% endif %}</td>
<td>{{ finding.get('message') }}{% if finding.get('citation') %}<span class="cite">{{ finding.get('citation') }}</span>{% endif %}{% for cell in finding.get('cells') or [] %}<span class="cite">cell <code>{{ cell.get('label') }}</code></span>{% endfor %}</td>
<td>{% if finding.get('limit') is not none or finding.get('provided') is not none %}<span class="lp"><span class="k">Limit</span> {{ finding.get('limit')|num }} {{ finding.get('unit') or '' }}</span><span class="lp"><span class="k">Provided</span> {{ finding.get('provided')|num }} {{ finding.get('unit') or '' }}</span>{% else %}<span class="empty">none</span>{% endif %}</td>
<td>
{% if finding.get('trail') %}
<ol class="trail">
{{ finding.get('trail')|list_items }}
</ol>
{% endif %}
{% if finding.get('assumptions') %}
<p class="assume-h">Assumed</p>
<ul class="assume">
{{ finding.get('assumptions')|list_items }}
</ul>
{% endif %}
</td>
</tr>
{% endfor %}
</tbody>
</table>
</div>
{% elif computed.get('trail') %}
<details class="fd-work">
<summary>Working</summary>
<ol class="trail">
{{ computed.get('trail')|list_items }}
</ol>
{% if computed.get('assumptions') %}
<p class="assume-h">Assumed</p>
<ul class="assume">
{{ computed.get('assumptions')|list_items }}
</ul>
{% endif %}
</details>
{% endif %}
{% if computed.get('not_counted') %}
<p class="assume-h">Not counted</p>
<ul class="assume">
{{ computed.get('not_counted')|list_items }}
</ul>
{% endif %}
{% if group.get('notes') %}
<ul class="assume">
{% for note in group.get('notes') %}
<li>{{ note }}</li>
{% endfor %}
</ul>
{% endif %}
</div>
</article>
{% endfor %}
"""


def _feeder_loop_html(feeders, appendix) -> str:
    from jinja2 import Environment, StrictUndefined

    from checker.report import html_report

    env = Environment(autoescape=True, undefined=StrictUndefined, trim_blocks=True, lstrip_blocks=True,
                      keep_trailing_newline=True)
    env.filters.update(num=html_report.format_number, anchor=html_report.anchor,
                       status_label=html_report.status_label, list_items=html_report.list_items,
                       tag_list=html_report.tag_list)
    return env.from_string(_FEEDER_LOOP).render(feeders=feeders, appendix_ids=appendix)


_TEXTS = st.one_of(st.none(), st.text(max_size=8), st.sampled_from(['<b>"x" & \'y\'</b>', "MCC-1", "fuse-td", "-", "0"]),
                   st.integers(-3, 500), st.floats(allow_nan=False, allow_infinity=False, width=32))
_NUMBERS = st.one_of(st.none(), st.integers(0, 1000), st.floats(0, 2000, allow_nan=False), st.just("12"))
_LINES = st.lists(st.one_of(st.text(max_size=6), st.just("a < b & c")), max_size=3)
_FINDING = st.fixed_dictionaries({}, optional={
    "status": st.sampled_from(["pass", "fail", "needs-info", "odd<"]), "check": st.sampled_from(["feeder-ocpd", "x&y"]),
    "rule": _TEXTS, "message": _TEXTS, "citation": _TEXTS, "limit": _NUMBERS, "provided": _NUMBERS, "unit": _TEXTS,
    "trail": _LINES, "assumptions": _LINES,
    "cells": st.lists(st.fixed_dictionaries({"label": _TEXTS}), max_size=2)})
_GROUP = st.fixed_dictionaries({}, optional={
    "status": st.sampled_from(["pass", "fail", "needs-info", "not-checked", "<x>"]), "group": _TEXTS,
    "feeder": st.one_of(st.none(), st.fixed_dictionaries({}, optional={
        "record": st.fixed_dictionaries({}, optional={"name": _TEXTS, "from": _TEXTS}),
        "source": st.one_of(st.none(), st.fixed_dictionaries({"label": _TEXTS}))})),
    "motors": st.lists(st.fixed_dictionaries({"tag": _TEXTS}), max_size=3),
    "computed": st.fixed_dictionaries({}, optional={
        "min_ampacity_a": _NUMBERS, "ampacity_counted_a": _NUMBERS, "ampacity_rule": _TEXTS,
        "listed_conductor": _TEXTS, "listed_device": _TEXTS, "device_rule": _TEXTS, "trail": _LINES,
        "assumptions": _LINES, "not_counted": _LINES,
        "max_device": st.lists(st.fixed_dictionaries({}, optional={
            "device": _TEXTS, "limit_a": _NUMBERS, "counted_a": _NUMBERS, "standard_a": _NUMBERS}), max_size=3)}),
    "findings": st.lists(_FINDING, max_size=2),
    "notes": _LINES})


@settings(max_examples=300, deadline=None)
@given(st.lists(_GROUP, max_size=3), st.sets(st.sampled_from(["feeder-ocpd", "x&y", "other"])))
def test_feeder_articles_are_the_template_loop_they_replaced(feeders, appendix):
    from checker.report import html_report

    assert str(html_report.feeder_articles(feeders, appendix)) == _feeder_loop_html(feeders, appendix)


@settings(max_examples=400, deadline=None)
@given(st.one_of(st.text(max_size=40), st.text(alphabet="&<>\"'a; #3", max_size=40), st.integers(), st.none()))
def test_escape_text_escapes_as_markupsafe_does(value):
    """The motor blocks and the feeder section escape text themselves; the page's template escapes
    with markupsafe. Both must give the same bytes (None is empty text, as in the template)."""
    from markupsafe import escape

    from checker.report.html_motors import escape_text

    assert escape_text(value) == ("" if value is None else str(escape(value)))


def test_summary_counts_read_in_the_singular_and_the_plural(tmp_path):
    schedule = tmp_path / "two.csv"
    schedule.write_text("TAG,HP,VOLTS,FLA,FED FROM,BREAKER\nP-1,10,575,11,MCC-1 / 1A,30 A\n"
                        "P-2,7-1/2,575,9,MCC-1 / 1B,25A CB\n", encoding="utf-8")
    from checker.review import review_schedule

    report = review_to_dict(review_schedule(schedule), "t")
    text = summary_text(report, max_lines=0)
    assert "3 rows read: 2 motors, 1 not reviewed" in text
    assert "feeders: 1 motor group, no feeder listed" in text and "motor groups" not in text
    assert "(2 motors)" in text
    page = render_html(report)  # one motor fails, one needs information, none passes
    assert page.count('<span class="n">1</span><span class="l">motor <span') == 2
    assert '<span class="n">0</span><span class="l">motors <span' in page
