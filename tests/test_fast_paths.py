"""The speed-ups change how a review is computed and written, never what it says.

* checks reused across motors with equal values (``review._CheckMemo``) give the same review as
  running every check on every motor;
* the cached per-field schema check (``normalize.record_valid``) agrees with the JSON-schema
  validator on any record;
* the lazily built report (``review_to_dict(..., lazy=True)``) and the streamed JSON and HTML are
  the same as the eager report and its one-piece renderings, and so are the files the CLI writes
  (``report.write``, motors written straight from the review);
* the progress line appears only on a terminal, after its delay, and is erased.

All schedules here are invented (the demo, the test fixtures and the benchmark generator).
"""
from __future__ import annotations

import io
import json
import math
from pathlib import Path

import fixture_builders as fb
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from jsonschema import Draft202012Validator

from checker import review as review_module
from checker.ingest import normalize
from checker.model import Finding, Motor, SourceRef, Status
from checker.progress import Progress
from checker.report.build import MotorDicts, review_to_dict
from checker.report.html_report import iter_html, render_html
from checker.report.json_report import dumps, iter_json
from checker.report.text_summary import summary_text
from checker.report.write import write_reports
from checker.review import _CheckMemo, review_schedule
from checker.rules import registry

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo"


# --------------------------------------------------------------------------- reused check results

def test_reused_check_results_give_the_same_review(schedule, monkeypatch):
    memoized = review_to_dict(review_schedule(schedule), "t")
    run = _CheckMemo.run

    def every_check_on_every_motor(self, motor, check_ids):
        self.all_direct = True
        return run(self, motor, check_ids)

    monkeypatch.setattr(_CheckMemo, "run", every_check_on_every_motor)
    assert review_to_dict(review_schedule(schedule), "t") == memoized


def _motor(tag: str, **record) -> Motor:
    return Motor(tag=tag, record={"tag": tag, **record}, source=SourceRef("s.csv", 2))


def _memo_with(monkeypatch, function) -> _CheckMemo:
    monkeypatch.setitem(registry.CHECKS, "probe", registry.CheckEntry(function, ()))
    monkeypatch.setattr(review_module, "CHECKS", registry.CHECKS)
    return _CheckMemo(ruleset=None, options=None)


@pytest.mark.parametrize("code", ["cec-2015", "nec-2023"])
def test_feeder_groups_worked_out_once_per_reading_equal_the_direct_way(schedule, code):
    """``review_feeders`` works out branch limits and table currents once per distinct reading of a
    motor (``feeders._LimitsMemo``); outside it every motor is worked out on its own. Same groups."""
    from checker.rules import feeders
    from checker.rules.common import ReviewOptions

    kept = {}
    review_schedule(schedule, code=code, motors_checked=lambda motors, ruleset: kept.update(m=motors, r=ruleset))
    motors, ruleset, options = [m.motor for m in kept["m"]], kept["r"], ReviewOptions()
    memoised = feeders.review_feeders(motors, [], ruleset, options, review_module.GROUP_CHECKS)
    assert feeders._LIMITS_MEMO.get() is None  # so the call below works every motor out directly
    direct = feeders._review_groups(motors, [], ruleset, options, review_module.GROUP_CHECKS)
    assert memoised == direct and len(direct) > 0


def test_equal_values_share_one_run(monkeypatch):
    calls = []

    def probe(motor, ruleset, options):
        calls.append(motor.record["hp"])
        return [Finding("probe", "r", Status.PASS, f"{motor.record['hp']} hp")]

    memo = _memo_with(monkeypatch, probe)
    first = memo.run(_motor("A", hp=5.0, fla_a=7.6), ["probe"])
    second = memo.run(_motor("B", hp=5.0, fla_a=9.9), ["probe"])  # fla_a is not read by the check
    third = memo.run(_motor("C", hp=5, fla_a=7.6), ["probe"])     # int 5 is not float 5.0
    assert calls == [5.0, 5] and first[0] is second[0] and third[0].message == "5 hp"


def test_whole_motor_reuse_follows_what_the_checks_read(monkeypatch):
    """A motor agreeing with an earlier one on every field the checks read gets its very results;
    a check that reads a new field for some motor makes every later motor be judged on it too."""
    calls = []

    def probe(motor, ruleset, options):
        hp = motor.record["hp"]
        calls.append(hp)  # (not the tag: a check reading it is run for every motor)
        extra = f" {motor.record['fla_a']} A" if hp > 10 else ""  # reads fla_a only for large motors
        return [Finding("probe", "r", Status.PASS, f"{hp} hp{extra}")]

    memo = _memo_with(monkeypatch, probe)
    a = memo.run(_motor("A", hp=5.0, fla_a=1.0), ["probe"])
    b = memo.run(_motor("B", hp=5.0, fla_a=2.0), ["probe"])
    c = memo.run(_motor("C", hp=20.0, fla_a=1.0), ["probe"])
    d = memo.run(_motor("D", hp=20.0, fla_a=2.0), ["probe"])
    e = memo.run(_motor("E", hp=20.0, fla_a=2.0, kw=15.0), ["probe"])  # kw is read by no check
    f = memo.run(_motor("F", hp=5.0, fla_a=3.0), ["probe"])
    assert b[0] is a[0] and e is d  # E: one look-up, the very results of D
    assert [r[0].message for r in (a, c, d, f)] == ["5.0 hp", "20.0 hp 1.0 A", "20.0 hp 2.0 A", "5.0 hp"]
    assert calls == [5.0, 20.0, 20.0, 5.0]  # A, C, D and F


def test_motors_holding_the_same_value_objects_are_found_by_identity(monkeypatch):
    """Rows with the same cell texts hold the very same value objects; such a motor is found by the
    objects' identities. Equal values in other objects are found by value, and the objects looked up
    by identity are held by the memo, so an id is never taken for another object's."""
    calls = []

    def probe(motor, ruleset, options):  # reads one record field, nothing else
        calls.append(motor.record["conductor"]["size"])
        return [Finding("probe", "r", Status.PASS, str(motor.record["conductor"]["size"]))]

    memo = _memo_with(monkeypatch, probe)
    shared = {"size": "12", "sets": 1}
    first = memo.run(_motor("A", conductor=shared), ["probe"])  # learns what the check reads
    second = memo.run(_motor("B", conductor=shared), ["probe"])
    by_object = next(iter(memo.wholes.values()))[3]
    assert [values for values, _ in by_object.values()] == [(shared,)]  # held while it is a key
    again = memo.run(_motor("C", conductor=shared), ["probe"])
    equal = memo.run(_motor("D", conductor={"size": "12", "sets": 1}), ["probe"])
    other = memo.run(_motor("E", conductor={"size": "10", "sets": 1}), ["probe"])
    assert calls == ["12", "10"] and second == first and again is second and equal is second
    assert other[0].message == "10" and len(by_object) == 3


def test_a_check_reading_the_tag_is_run_for_every_motor(monkeypatch):
    memo = _memo_with(monkeypatch, lambda motor, r, o: [Finding("probe", "r", Status.PASS, motor.tag)])
    messages = [memo.run(_motor(tag, hp=5.0), ["probe"])[0].message for tag in ("A", "B", "C")]
    assert messages == ["A", "B", "C"] and "probe" in memo.direct


def test_a_check_reading_every_field_is_run_for_every_motor(monkeypatch):
    memo = _memo_with(monkeypatch, lambda motor, r, o: [Finding("probe", "r", Status.PASS, str(sorted(motor.record)))])
    first = memo.run(_motor("A", hp=5.0), ["probe"])
    second = memo.run(_motor("B", hp=5.0, kw=3.7), ["probe"])
    assert first[0].message != second[0].message


def test_a_check_writing_the_record_stops_all_reuse_and_keeps_its_write(monkeypatch):
    def writer(motor, ruleset, options):
        motor.record["noted"] = True
        return []

    memo = _memo_with(monkeypatch, writer)
    motor = _motor("A", hp=5.0)
    memo.run(motor, ["probe"])
    assert motor.record["noted"] is True and memo.all_direct


# --------------------------------------------------------------------------- schema check by field

_SCHEMA = json.loads(normalize.SCHEMA_PATH.read_text(encoding="utf-8"))
_FIELDS = [*_SCHEMA["properties"], "not_a_field"]
_scalars = st.one_of(st.none(), st.booleans(), st.integers(-5, 30_000), st.sampled_from([1.0, 3.0, 60.0, 0.0, -2.5]),
                     st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=3),
                     st.sampled_from(["", "x" * 201, "cu", "al", "continuous", "5-min", "4/0", "250", "19", "ac"]))
_values = st.recursive(_scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=3),
    st.dictionaries(st.sampled_from(["size", "sets", "material", "service", "rating", "rating_a", "device", "kind",
                                     "means", "allows", "poles", "extra"]), inner, max_size=4)), max_leaves=6)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.dictionaries(st.sampled_from(_FIELDS), _values, max_size=6))
def test_field_by_field_check_agrees_with_the_validator(record):
    expected = Draft202012Validator(_SCHEMA).is_valid(record)
    got = normalize.record_valid(record)
    assert got is None or got == expected, record


def test_field_by_field_check_on_the_demo_records():
    validator = Draft202012Validator(_SCHEMA)
    for entry in review_schedule(DEMO / "northfield-pump-station.xlsx").motors:
        assert normalize.record_valid(entry.motor.record) == validator.is_valid(entry.motor.record)


# --------------------------------------------------------------------------- lazy report, streamed files

def test_lazy_report_and_streams_equal_the_eager_ones(schedule):
    review = review_schedule(schedule)
    eager = review_to_dict(review, "t")
    lazy = review_to_dict(review, "t", lazy=True)
    assert isinstance(lazy["motors"], MotorDicts) and len(lazy["motors"]) == len(eager["motors"])
    assert {k: v for k, v in lazy.items() if k != "motors"} == {k: v for k, v in eager.items() if k != "motors"}
    assert list(lazy["motors"]) == eager["motors"] and lazy["motors"][-1] == eager["motors"][-1]
    text = dumps(eager)
    assert "".join(iter_json(lazy)) == text and json.loads(text) == eager
    assert "".join(iter_html(lazy)) == render_html(eager)
    for lines in (0, 5, 40):
        assert summary_text(lazy, max_lines=lines) == summary_text(eager, max_lines=lines)


def _files_equal_the_renderings(review, tmp_path):
    eager = review_to_dict(review, "t")
    write_reports(review_to_dict(review, "t", lazy=True), tmp_path / "r.json", tmp_path / "r.html")
    assert (tmp_path / "r.json").read_bytes() == dumps(eager).encode("utf-8")
    assert (tmp_path / "r.html").read_bytes() == render_html(eager).encode("utf-8")
    assert not [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")]  # no temporary file left


def test_written_files_equal_the_eager_renderings(schedule, tmp_path):
    _files_equal_the_renderings(review_schedule(schedule), tmp_path)


def test_written_files_equal_the_eager_renderings_for_pdf_and_hostile_cells(more_schedules, tmp_path):
    _files_equal_the_renderings(review_schedule(more_schedules), tmp_path)


def test_json_shows_a_finding_changed_after_the_report_was_built():
    report = review_to_dict(review_schedule(DEMO / "northfield-pump-station.xlsx"), "t")
    report["motors"][0]["findings"][0]["message"] = "changed by a caller"
    assert json.loads(dumps(report)) == report


def test_json_has_one_motor_per_line():
    report = review_to_dict(review_schedule(DEMO / "northfield-pump-station.csv"), "t")
    lines = dumps(report).splitlines()
    motor_lines = [line for line in lines if line.startswith('    {"tag":')]
    assert len(motor_lines) == len(report["motors"])
    assert [json.loads(line.rstrip(","))["tag"] for line in motor_lines] == [m["tag"] for m in report["motors"]]


def test_html_page_is_small_per_motor(tmp_path):
    """Each motor is a few hundred bytes plus its findings' one-line entries."""
    review = review_schedule(fb.bench_schedule_csv(tmp_path, 300))
    page = render_html(review_to_dict(review, "t"))
    start, end = page.index('<section id="motors"'), page.index('<section id="findings-in-full"')
    assert (end - start) / len(review.motors) < 2048
    findings = sum(len(m.findings) + len(m.motor.input_findings) for m in review.motors)
    assert 3 * page.count('id="w-') < findings  # each distinct finding written in full once


# --------------------------------------------------------------------------- progress line

class _Terminal(io.StringIO):
    def isatty(self) -> bool:
        return True


@pytest.mark.parametrize(("stream", "delay_s"), [(io.StringIO(), 0), (_Terminal(), 60)],
                         ids=["off a terminal", "before its delay"])
def test_progress_is_silent(stream, delay_s):
    with Progress(stream, delay_s=delay_s) as progress:
        progress.stage("reading")
        progress.step(5, 10)
    assert stream.getvalue() == ""


def test_progress_draws_counts_and_erases_itself():
    stream = _Terminal()
    progress = Progress(stream, delay_s=0)
    progress.stage("checking motors")
    progress.next_draw = 0  # as if the throttle interval had passed
    progress.step(2_500, 10_000)
    shown = stream.getvalue()
    assert "checking motors 2,500/10,000 (25 %)" in shown and "\n" not in shown
    for number in range(10_000):  # throttled: not redrawn on every call
        progress.step(number, 10_000)
    assert stream.getvalue().count("\r") <= 3
    progress.close()
    assert stream.getvalue().endswith("\r") and stream.getvalue().rsplit("\r", 2)[-2].strip() == ""


def test_cli_prints_no_progress_when_not_on_a_terminal(tmp_path, capsys):
    from checker.cli import main

    main(["review", str(DEMO / "northfield-pump-station.csv"), "--json", str(tmp_path / "r.json"),
          "--html", str(tmp_path / "r.html"), "--quiet"])
    assert capsys.readouterr().err == ""


def test_nan_free_numbers_in_json():
    report = review_to_dict(review_schedule(DEMO / "northfield-pump-station.xlsx"), "t")
    for motor in report["motors"]:
        for finding in motor["findings"]:
            for key in ("limit", "provided"):
                assert finding[key] is None or math.isfinite(finding[key])


# --------------------------------------------------------------------------- row templates

_TEMPLATE_EDGES = (
    "TAG,DESCRIPTION,HP,VOLTS,FLA,FED FROM,CONDUCTORS,OCPD,REMARKS\n"
    "P-1,Pump,10,575/3/60,11,MCC-1 / 1A,3#12 RW90,25A CB,\n"
    "P-2,,10,575/3/60,11,MCC-1 / 1B,3#12 RW90,25A CB,spare bearing\n"       # same other cells, empty description
    "TBD,Pump  two,10,575/3/60,11,MCC-1,3#12 RW90,25A CB,=A1\n"               # placeholder tag, cleaned text, formula
    "P-4,Pump,ten,575/3/60,11,MCC-1 / 1C,3#12 RW90,25A CB,\n"                 # a cell that cannot be read
    "P-5,Pump,10,575/3/60,11,,3#12 RW90,25A CB,\n"                            # no source
    "P-6,Fan \u00e9,10,575/3/60,11,  MCC-2 ,3#12 RW90,25A CB,\n"              # text beyond ASCII, padding
    "P-7,Pump,10,575/3/60,11,MCC-1 / 1A,3#12 RW90,25A CB,\n"
)


_TWO_COLUMNS_ONE_FIELD = (  # the kW cell states hp: both columns give hp, and the later one is kept
    "TAG,HP,KW,VOLTS,FLA,FED FROM\n"
    "P-1,10,7.5 hp,575,11,MCC-1 / 1A\n"
    "P-2,10,7.5 hp,575,11,MCC-1 / 1B\n"
    "P-3,10,,575,11,MCC-1 / 1C\n"
)


def _tables(path):
    from checker.ingest.feeders import locate_feeder_tables, trim_motor_tables
    from checker.ingest.layout import locate_tables
    from checker.ingest.readers import read_grids

    for grid in read_grids(Path(path), None):
        located = locate_tables(grid)
        yield from trim_motor_tables(located, locate_feeder_tables(grid, located))


def _read_both_ways(path, monkeypatch):
    with monkeypatch.context() as patched:
        patched.setattr(normalize, "_plan_templates", lambda plans: None)
        by_column = [normalize.normalize_table(table) for table in _tables(path)]
    templated = [normalize.normalize_table(table) for table in _tables(path)]
    return by_column, templated


def test_rows_from_templates_equal_rows_read_column_by_column(schedule, more_schedules, monkeypatch, tmp_path):
    """Rows whose other columns repeat earlier texts are built from a template plus their own
    free-text cells (``normalize._templated_row``); the motors, their cells and findings, and the
    rows passed over are those of reading every column of every row."""
    edges, doubled = tmp_path / "edges.csv", tmp_path / "doubled.csv"
    edges.write_text(_TEMPLATE_EDGES, encoding="utf-8")
    doubled.write_text(_TWO_COLUMNS_ONE_FIELD, encoding="utf-8")
    for path in (schedule, more_schedules, edges, doubled):
        by_column, templated = _read_both_ways(path, monkeypatch)
        assert templated == by_column, path
        for result in templated:
            for motor in result.motors:  # key order too: it is the order of the report's record and raw
                expected = next(m for r in by_column for m in r.motors if m.source == motor.source)
                assert list(motor.record) == list(expected.record) and list(motor.raw) == list(expected.raw)
                assert dict(motor.sources.columns) == dict(expected.sources.columns)


def test_row_templates_are_used(monkeypatch, tmp_path):
    edges = tmp_path / "edges.csv"
    edges.write_text(_TEMPLATE_EDGES, encoding="utf-8")
    made = []
    real = normalize._row_template
    monkeypatch.setattr(normalize, "_row_template", lambda plans, cells: made.append(cells[0]) or real(plans, cells))
    result, = [normalize.normalize_table(table) for table in _tables(edges)]
    assert len(result.motors) == 7 and 0 < len(made) < 7  # rows sharing the other cells share one template
