"""End-to-end tests of the command line on the bundled demo and on bad input.

The demo schedule is invented (fixtures/demo/README.md); its designed outcomes
were derived by hand from CEC 2015 values, independently of motorcheck, in
fixtures/demo/make_demo.py.
"""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from checker.cli import main
from checker.report.json_report import validate

ROOT = Path(__file__).resolve().parents[1]
DEMO_XLSX = ROOT / "fixtures" / "demo" / "northfield-pump-station.xlsx"
DEMO_CSV = ROOT / "fixtures" / "demo" / "northfield-pump-station.csv"

# (tag, check) -> status designed into the demo (see fixtures/demo/README.md).
DESIGNED = {
    ("P-403", "conductor-ampacity"): "fail",      # #1/0 Al: 120 A < 99 A x 125 % = 123.75 A
    ("P-409", "conductor-ampacity"): "fail",      # #2 RW90: 75 C column 115 A < 123.75 A (90 C would pass)
    ("B-401", "conductor-ampacity"): "fail",      # #6 Cu 65 A < 77.5 A
    ("SG-401", "conductor-ampacity"): "fail",     # short-time 30-min: Table 27 150 % -> 51 A > #8 Cu 50 A
    ("H-401", "conductor-ampacity"): "pass",      # passes only with the Table 27 intermittent 85 %
    ("P-408", "conductor-ampacity"): "pass",      # exact boundary 50 A = 50 A
    ("P-415", "conductor-ampacity"): "needs-info",  # no conductor
    ("P-406", "branch-ocpd"): "fail",             # star-delta: 200 % -> 154 A < 175 A breaker
    ("P-407", "branch-ocpd"): "fail",             # 150 A breaker > 130 A (rounded up)
    ("P-413", "branch-ocpd"): "fail",             # 60 A time-delay fuse > 32 A x 175 % = 56 A
    ("P-414", "branch-ocpd"): "fail",             # 65 A > 62.5 A
    ("P-408", "branch-ocpd"): "pass",             # 100 A breaker = 40 A x 250 % exactly
    ("P-401", "branch-ocpd"): "needs-info",       # VFD: no Table 29 row
    ("C-402", "branch-ocpd"): "needs-info",       # instantaneous-trip breaker
    ("EF-403", "branch-ocpd"): "needs-info",      # breaker without rating
    ("PKG-401", "motor-current"): "needs-info",   # FLA TBD and no hp
    ("CR-401", "motor-current"): "pass",          # FLA blank: table value used
}


@pytest.fixture(scope="module")
def demo_report(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    code = main(["review", str(DEMO_XLSX), "--json", str(out / "r.json"), "--html", str(out / "r.html"), "--quiet"])
    return code, json.loads((out / "r.json").read_text(encoding="utf-8")), out


def _status(report, tag, check):
    motor = next(m for m in report["motors"] if m["tag"] == tag)
    return [f["status"] for f in motor["findings"] if f["check"] == check]


def test_demo_exit_code_and_schema(demo_report):
    code, report, _ = demo_report
    assert code == 1  # the demo contains deliberate failures
    assert validate(report) == []
    assert report["code"] == "cec-2015"


@pytest.mark.parametrize("tag, check", sorted(DESIGNED))
def test_demo_designed_outcomes(demo_report, tag, check):
    _, report, _ = demo_report
    assert _status(report, tag, check) == [DESIGNED[(tag, check)]]


def test_demo_every_row_accounted_for(demo_report):
    _, report, _ = demo_report
    summary = report["summary"]
    assert summary["rows_read"] == summary["motors"] + summary["skipped"] + summary.get("feeder_rows", 0)
    assert summary["motors"] == 35
    # The MOTOR SCHED sheet runs from row 1 to row 59: each row is a motor or a skipped row, once.
    rows = sorted([m["source"]["row"] for m in report["motors"]] + [s["source"]["row"] for s in report["skipped"]])
    assert rows == list(range(1, 60))
    reasons = {s["source"]["row"]: s["reason"] for s in report["skipped"]}
    assert reasons[7].startswith("section heading")
    assert reasons[19].startswith("spare")
    assert reasons[52].startswith("total")
    assert reasons[5] == "header row" and reasons[1].startswith("above the schedule header")


def test_demo_findings_point_at_cells(demo_report):
    _, report, _ = demo_report
    p403 = next(m for m in report["motors"] if m["tag"] == "P-403")
    assert p403["source"]["row"] == 10 and p403["source"]["sheet"] == "MOTOR SCHED"
    conductor = next(f for f in p403["findings"] if f["check"] == "conductor-ampacity")
    assert {"field": "conductor", "label": "MOTOR SCHED!I10", "column": "I"} in conductor["cells"]
    assert conductor["rule"] == "28-106(1)" and conductor["unit"] == "A"
    assert conductor["limit"] == pytest.approx(123.75) and conductor["provided"] == 120


def test_demo_json_is_byte_identical(tmp_path):
    a, b = tmp_path / "a.json", tmp_path / "b.json"
    for target in (a, b):
        main(["review", str(DEMO_XLSX), "--json", str(target), "--html", str(tmp_path / "x.html"), "--quiet"])
    assert a.read_bytes() == b.read_bytes()


def test_demo_csv_gives_the_same_findings(demo_report, tmp_path):
    _, xlsx_report, _ = demo_report
    main(["review", str(DEMO_CSV), "--json", str(tmp_path / "c.json"), "--html", str(tmp_path / "c.html"), "--quiet"])
    csv_report = json.loads((tmp_path / "c.json").read_text(encoding="utf-8"))

    def outcomes(report):
        return {(m["tag"], f["check"]): (f["status"], f["limit"], f["provided"])
                for m in report["motors"] for f in m["findings"] if f["check"] not in ("cell-value", "record-schema")}
    assert outcomes(csv_report) == outcomes(xlsx_report)


def test_html_report_written_with_cautions(demo_report):
    _, _, out = demo_report
    html = (out / "r.html").read_text(encoding="utf-8")
    assert "P-403" in html and "authority having jurisdiction" in html
    assert "https://" not in html and "http://" not in html


def test_default_report_paths(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["review", str(DEMO_XLSX)]) == 1
    assert (tmp_path / "reports" / "northfield-pump-station.html").exists()
    assert (tmp_path / "reports" / "northfield-pump-station.json").exists()
    out = capsys.readouterr().out
    assert "35 motors" in out and "P-403" in out


@pytest.mark.parametrize("argv, words", [
    (["review", "no-such-file.xlsx"], "does not exist"),
    (["review", str(DEMO_XLSX), "--code", "xx-1999"], "xx-1999"),
    (["review", str(DEMO_XLSX), "--sheet", "Nope"], "Nope"),
    (["review"], "SCHEDULE"),
    (["frobnicate"], "frobnicate"),
])
def test_unusable_input_is_one_line_exit_2(argv, words, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    with pytest.raises(SystemExit) as exc:
        raise SystemExit(main(argv))
    assert exc.value.code == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and words in err and "Traceback" not in err


def test_file_without_a_schedule_is_exit_2(tmp_path, capsys):
    path = tmp_path / "notes.csv"
    path.write_text("Meeting notes\nnothing here,at all\n", encoding="utf-8")
    assert main(["review", str(path), "--json", str(tmp_path / "r.json"), "--html", str(tmp_path / "r.html")]) == 2
    err = capsys.readouterr().err.strip()
    assert "no motor schedule" in err and len(err.splitlines()) == 1


def test_codes_lists_verification_counts(capsys):
    assert main(["codes"]) == 0
    out = capsys.readouterr().out
    assert "cec-2015" in out and "from memory" in out and "published source" in out


def test_python_dash_m_entry_point(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "checker", "review", str(DEMO_XLSX), "--quiet",
                           "--json", str(tmp_path / "r.json"), "--html", str(tmp_path / "r.html")],
                          check=False, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 1 and "Traceback" not in proc.stderr
    assert "result: FAIL" in proc.stdout


def test_soft_starter_device_is_needs_info(demo_report):
    _, report, _ = demo_report
    assert _status(report, "P-404", "branch-ocpd") == ["needs-info"]


def test_the_command_holds_its_review_until_the_process_leaves(tmp_path, monkeypatch):
    """``run()`` leaves with ``os._exit`` so that a large review is never freed object by object; the
    review command hands it to ``run()`` to hold, and holds nothing when called as a library."""
    from checker import cli

    argv = ["review", str(DEMO_CSV), "--json", str(tmp_path / "r.json"), "--html", str(tmp_path / "r.html"), "--quiet"]
    monkeypatch.setattr(cli, "_HELD_UNTIL_EXIT", None)
    assert main(argv) == 1
    held = []
    monkeypatch.setattr(cli, "_HELD_UNTIL_EXIT", held)
    assert main(argv) == 1
    (review, report), = held
    assert len(review.motors) == 35 and report["summary"]["findings"]["fail"] > 0
