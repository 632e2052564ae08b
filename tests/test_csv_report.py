"""The CSV findings export: one row per finding, formula injection neutralised (OWASP CSV Injection)."""
import csv
import io
from pathlib import Path

import pytest

from checker.cli import main
from checker.report.csv_report import CSV_COLUMNS, neutralise, render_csv

ROOT = Path(__file__).resolve().parents[1]
DEMO_CSV = ROOT / "fixtures" / "demo" / "northfield-pump-station.csv"


def finding(**given):
    base = {"check": "cell-value", "rule": "input", "status": "needs-info", "message": "m", "limit": None,
            "provided": None, "unit": None, "trail": [], "assumptions": [], "citation": None, "cells": []}
    return {**base, **given}


def parse(text: str) -> list[list[str]]:
    assert text.startswith("\ufeff")
    return list(csv.reader(io.StringIO(text[1:], newline="")))


@pytest.mark.parametrize("text, shown", [
    ("=HYPERLINK(\"http://x.invalid\",\"a\")", "'=HYPERLINK(\"http://x.invalid\",\"a\")"),
    ("+cmd|' /C calc'!A0", "'+cmd|' /C calc'!A0"),
    ("-2+3", "'-2+3"),
    ("@SUM(A1)", "'@SUM(A1)"),
    ("\tTAB", "'\tTAB"),
    ("\rCR", "'\rCR"),
    ("P-101", "P-101"),
    (" =not first", " =not first"),
    ("", ""),
])
def test_neutralise(text, shown):
    assert neutralise(text) == shown


def test_one_row_per_finding_with_locations_and_numbers():
    report = {"motors": [
        {"tag": "=cmd", "source": {"label": "Motors!row 7"}, "findings": [
            finding(check="branch-ocpd", rule="28-200", status="fail", limit=47.25, provided=50.0, unit="A",
                    message="-50 A exceeds", cells=[{"field": "ocpd", "label": "Motors!G7", "column": "G"},
                                                    {"field": "fla_a", "label": "Motors!E7", "column": "E"}]),
            finding(message="@no cells")]},
    ], "feeders": [{"group": "MCC-1", "feeder": {"source": {"label": "Feeders!row 3"}}, "findings": [
        finding(check="feeder-ocpd", status="pass", limit=200, provided=200, unit="A", message="ok")]}]}
    rows = parse(render_csv(report))
    assert rows[0] == list(CSV_COLUMNS)
    assert rows[1] == ["'=cmd", "Motors!G7; Motors!E7", "branch-ocpd", "28-200", "fail", "47.25", "50", "A",
                       "'-50 A exceeds"]
    assert rows[2][:2] == ["'=cmd", "Motors!row 7"] and rows[2][-1] == "'@no cells"
    assert rows[3][:7] == ["feeder MCC-1", "Feeders!row 3", "feeder-ocpd", "input", "pass", "200", "200"]
    assert len(rows) == 4


def test_multiline_messages_stay_one_record_and_output_is_deterministic():
    report = {"motors": [{"tag": "A", "source": {"label": "row 2"}, "findings": [finding(message="two\nlines")]}]}
    text = render_csv(report)
    assert text == render_csv(report)
    assert parse(text)[1][-1] == "two\nlines"
    assert text.endswith("\r\n")


def test_cli_writes_csv_and_never_over_the_schedule(tmp_path, capsys):
    out = tmp_path / "findings.csv"
    code = main(["review", str(DEMO_CSV), "--json", str(tmp_path / "r.json"), "--html", str(tmp_path / "r.html"),
                 "--csv", str(out), "--quiet"])
    assert code in (0, 1)
    rows = parse(out.read_text(encoding="utf-8"))
    assert rows[0] == list(CSV_COLUMNS) and len(rows) > 35
    assert not list(tmp_path.glob(".*.tmp"))  # written through a temporary file, then renamed
    schedule = tmp_path / "copy.csv"
    schedule.write_bytes(DEMO_CSV.read_bytes())
    before = schedule.read_bytes()
    capsys.readouterr()
    assert main(["review", str(schedule), "--json", str(tmp_path / "r.json"), "--html", str(tmp_path / "r.html"),
                 "--csv", str(schedule)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "is the schedule being reviewed" in err
    assert schedule.read_bytes() == before
