"""Tests for checker.ingest.pdf: motor schedules read from PDF drawing sheets.

The fixtures in fixtures/pdf are drawn by fixtures/pdf/make_pdfs.py (reportlab) from the invented
demo motors of fixtures/demo/make_demo.py, except northfield-chromium.pdf, which headless Chromium
printed from HTML (fixtures/pdf/make_chromium_pdf.py). No value here is a code-table value.
"""
from __future__ import annotations

import functools
import importlib.util
import re
import subprocess
import sys
from pathlib import Path

import pdfplumber
import pytest

from checker.ingest import pdf as pdf_reader
from checker.ingest.layout import locate_tables
from checker.ingest.readers import InputError, read_grids
from checker.review import review_schedule

ROOT = Path(__file__).resolve().parents[1]
PDF_DIR = ROOT / "fixtures" / "pdf"
DEMO_XLSX = ROOT / "fixtures" / "demo" / "northfield-pump-station.xlsx"
DEMO_CSV = ROOT / "fixtures" / "demo" / "northfield-pump-station.csv"
E601 = PDF_DIR / "e601-motor-schedule.pdf"
UNRULED = PDF_DIR / "unruled-schedule.pdf"
CHROMIUM = PDF_DIR / "northfield-chromium.pdf"
NO_REPEAT = PDF_DIR / "ruled-no-repeat.pdf"
TWO = PDF_DIR / "two-schedules.pdf"
FOOTNOTES = PDF_DIR / "footnotes.pdf"
VERTICAL = PDF_DIR / "vertical-headers.pdf"
SIDEWAYS = PDF_DIR / "sideways-schedule.pdf"

READABLE = [E601, UNRULED, CHROMIUM, NO_REPEAT, TWO, FOOTNOTES, VERTICAL, SIDEWAYS]


def load_script(name: str):
    spec = importlib.util.spec_from_file_location(name, PDF_DIR / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module  # dataclasses look their module up while the script runs
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def reviews():
    """Reviews are the slow part; each file is reviewed once for the whole module."""
    cache = {}

    def get(path: Path):
        if path not in cache:
            cache[path] = review_schedule(path)
        return cache[path]
    return get


@functools.cache
def grids_of(path: Path) -> tuple:
    """read_grids once per file (the tests only read the grids)."""
    return tuple(read_grids(path))


def motor(review, tag):
    return next(m.motor for m in review.motors if m.motor.tag == tag)


# --------------------------------------------------------------------------- every fixture reads

@pytest.mark.parametrize("path", READABLE, ids=lambda p: p.name)
def test_each_fixture_reads_to_pdf_grids_with_a_motor_schedule(path):
    grids = grids_of(path)
    assert grids and {g.kind for g in grids} == {"pdf"}
    assert {g.sheet for g in grids} == {None}
    assert sum(len(locate_tables(g)) for g in grids) >= 1
    for g in grids:
        assert len(g.rows) == len(g.row_numbers) == len(g.row_pages) == len(g.row_tables)
        assert all(n >= 1 for n in g.row_numbers) and all(t >= 1 for t in g.row_tables)
        assert len({len(r) for r in g.rows}) == 1


def test_fixture_pdfs_stay_small():
    for path in PDF_DIR.glob("*.pdf"):
        assert path.stat().st_size < 300 * 1024, path.name


def test_chromium_fixture_comes_from_another_producer():
    with pdfplumber.open(CHROMIUM) as pdf:
        producer = str(pdf.metadata.get("Producer", "")) + str(pdf.metadata.get("Creator", ""))
        assert len(pdf.pages) >= 2  # long enough that the browser repeats the header on page 2
    assert "reportlab" not in producer.lower() and re.search(r"skia|chrom", producer, re.IGNORECASE)


# --------------------------------------------------------------------------- provenance

def test_provenance_page_table_row_and_column_number(reviews):
    review = reviews(E601)
    p401 = motor(review, "P-401")
    # page 1: table 1 is the title block strip (its top-left corner is highest); the schedule is
    # table 2: row 1 title, 2 group headings, 3 column headings, 4 'MCC-1' section, 5 P-401
    assert (p401.source.page, p401.source.table, p401.source.row) == (1, 2, 5)
    assert p401.source.sheet is None
    assert p401.sources["fla_a"].column == "4" and p401.sources["fla_a"].label() == "p. 1, table 2, row 5, col 4"
    # a motor on the continuation sheet: page 2 as a viewer numbers it
    sp401 = motor(review, "SP-401")
    assert (sp401.source.page, sp401.source.table, sp401.source.row) == (2, 2, 5)


def test_findings_point_at_page_and_row(reviews):
    review = reviews(E601)
    ef403 = next(m for m in review.motors if m.motor.tag == "EF-403")
    unreadable = [f for f in ef403.motor.input_findings if f.check == "cell-value"]
    assert unreadable and "p. 1, table 2, row " in unreadable[0].message and ", col 10 " in unreadable[0].message


def test_tables_read_and_passed_over_say_page_and_table(reviews):
    tables = reviews(E601).tables
    read = [(t["page"], t["table"]) for t in tables if t["status"] == "read"]
    passed = [(t["page"], t["table"]) for t in tables if t["status"] == "passed over"]
    assert read == [(1, 2), (2, 2)]
    assert (1, 1) in passed and (2, 1) in passed     # the title blocks
    assert (1, 3) in passed                           # the MCC elevation (a ruled grid, not a schedule)
    assert all(t.get("page") and t.get("table") for t in tables)


def test_only_schedule_pages_are_parsed_in_depth(tmp_path, monkeypatch):
    make_pdfs = load_script("make_pdfs")
    path = tmp_path / "set.pdf"
    schedule_pages = make_pdfs.write_drawing_set(path, pages=8)
    parsed = []
    real = pdf_reader._page_objects

    def spy(page, number, name):
        parsed.append(number)
        return real(page, number, name)
    monkeypatch.setattr(pdf_reader, "_page_objects", spy)
    done = []
    grids = pdf_reader.read_pdf_grids(path.read_bytes(), path.name, progress=done.append)
    assert done == list(range(1, 9))
    # the schedule sheets, plus the page after them (read only to see whether the table goes on)
    assert parsed == [*schedule_pages, schedule_pages[-1] + 1]
    assert {p for g in grids for p in g.row_pages} == set(schedule_pages)


def test_no_progress_line_when_stderr_is_not_a_terminal(capsys):
    read_grids(FOOTNOTES)
    assert capsys.readouterr().err == ""


# --------------------------------------------------------------------------- same findings as the spreadsheet

LABELS = re.compile(r"p\. \d+, table \d+, row \d+(?:, col \d+)?|[A-Z][A-Z ]*![A-Z]+\d+|\b[A-Z]{1,2}\d+\b|row \d+")
HEADER_IN_MESSAGE = re.compile(r"\((?:[^()]|\([^()]*\))*\) '")


def comparable(review) -> dict[str, list[tuple]]:
    """check/rule/status/limit/provided/message per tag, with cell locations (and the column header
    a cell message quotes) replaced: those are provenance, which differs between the files."""
    def message(text: str) -> str:
        return LABELS.sub("<cell>", HEADER_IN_MESSAGE.sub("(<column>) '", text))
    return {m.motor.tag: [(f.check, f.rule, f.status, f.limit, f.provided, message(f.message))
                          for f in (*m.motor.input_findings, *m.findings)] for m in review.motors}


@pytest.mark.parametrize("spreadsheet, pdf", [(DEMO_XLSX, E601), (DEMO_XLSX, CHROMIUM), (DEMO_CSV, UNRULED)],
                         ids=["e601-ruled-rotated", "chromium", "unruled"])
def test_same_motors_same_findings_as_the_spreadsheet(reviews, spreadsheet, pdf):
    expected, got = comparable(reviews(spreadsheet)), comparable(reviews(pdf))
    assert list(got) == list(expected)          # every motor, in schedule order
    assert len(got) == 35
    for tag in expected:
        assert got[tag] == expected[tag], tag
    # and the records the checks saw are the same
    for tag in ("P-404", "SG-401", "CP-401", "AHU-402"):
        assert motor(reviews(pdf), tag).record == motor(reviews(spreadsheet), tag).record


def test_every_row_of_a_read_table_is_accounted_for(reviews):
    review = reviews(E601)
    grids = [g for g in grids_of(E601) if locate_tables(g)]
    rows = sum(len(g.rows) for g in grids)
    assert len(review.motors) + len(review.skipped) == rows
    reasons = {s.reason.split(":")[0] for s in review.skipped}
    assert {"header row", "section heading", "note", "blank row"} <= reasons


# --------------------------------------------------------------------------- continuation and rotation

def test_rotated_continuation_sheet_is_read_upright():
    with pdfplumber.open(E601) as pdf:
        assert pdf.pages[1].rotation == 90            # stored portrait, shown landscape
        assert pdf.pages[1].width > pdf.pages[1].height
    continued = [g for g in grids_of(E601) if set(g.row_pages) == {2} and locate_tables(g)]
    assert len(continued) == 1
    rows = continued[0].rows
    assert rows[0][0] == "MOTOR SCHEDULE (CONTINUED)"
    assert rows[2][:4] == ["TAG", "DESCRIPTION", "HP", "FLA (A)¹"]   # the repeated header
    assert rows[4][:3] == ["SP-401", "ELECTRICAL ROOM SUMP PUMP", "1/2"]


def test_schedule_drawn_sideways_on_an_unrotated_page(reviews):
    with pdfplumber.open(SIDEWAYS) as pdf:
        page = pdf.pages[0]
        assert page.rotation == 0 and page.width < page.height and not page.chars[0]["upright"]
    grid = grids_of(SIDEWAYS)[0]
    assert grid.rows[1][:4] == ["TAG", "DESCRIPTION", "HP", "FLA (A)¹"]
    review = reviews(SIDEWAYS)
    expected = comparable(reviews(DEMO_XLSX))
    got = comparable(review)
    assert list(got) == [m.cells[0] for m in load_script("make_pdfs").demo.MCC1]
    for tag in got:
        assert got[tag] == expected[tag], tag


@pytest.mark.parametrize("path, split_tag", [(NO_REPEAT, "P-412"), (UNRULED, "P-414")], ids=["ruled", "unruled"])
def test_table_continued_without_a_header_is_stitched(path, split_tag):
    grids = [g for g in grids_of(path) if locate_tables(g)]
    assert len(grids) == 1
    grid = grids[0]
    assert set(grid.row_pages) == {1, 2}
    index = next(i for i, r in enumerate(grid.rows) if r[0] == split_tag)
    assert grid.row_pages[index] == 2 and grid.row_numbers[index] == 1 and grid.row_pages[index - 1] == 1
    source = grid.source(index)
    assert (source.page, source.row) == (2, 1)
    header_last = locate_tables(grid)[0].header_last
    assert all(r1 <= header_last for _, _, r1, _ in grid.merged)   # body rows are never merged


def test_two_schedules_on_one_sheet_read_the_motor_table_and_pass_over_the_panel(reviews):
    with pdfplumber.open(TWO) as pdf:
        assert pdf.pages[0].rotation == 270
    review = reviews(TWO)
    assert [m.motor.tag for m in review.motors] == ["SP-401", "UH-401", "CP-401", "EF-405", "P-416", "AHU-402"]
    status = {(t["page"], t["table"]): t["status"] for t in review.tables}
    assert status == {(1, 1): "passed over", (1, 2): "read", (1, 3): "passed over"}
    panel = next(g for g in grids_of(TWO) if g.table == 3)
    assert panel.rows[0][0].startswith("PANEL LP-1")


# --------------------------------------------------------------------------- cell text

def test_footnote_superscript_is_not_glued_to_the_number(reviews):
    grid = grids_of(FOOTNOTES)[0]
    p501 = next(r for r in grid.rows if r[0] == "P-501")
    assert p501[3] == "60²"                      # not '602'
    review = reviews(FOOTNOTES)
    assert motor(review, "P-501").record["fla_a"] == 60
    assert motor(review, "B-501").record["ocpd"]["rating_a"] == 60      # '60³'
    assert motor(review, "EF-501").raw["CONDUCTORS"] == "3C#12 TECK90¹"


def test_half_and_phase_glyphs(reviews):
    review = reviews(FOOTNOTES)
    assert motor(review, "EF-501").record["hp"] == 7.5     # '7½'
    assert motor(review, "P-502").record["hp"] == 0.5      # '½'
    assert motor(review, "P-502").record["phase"] == 1     # '1Ø'
    assert motor(review, "EF-501").record["phase"] == 3


def test_vertical_header_text_is_read_along_its_direction():
    grid = grids_of(VERTICAL)[0]
    table = locate_tables(grid)[0]
    fields = {c.header: c.field for c in table.columns}
    assert fields["HP"] == "hp" and fields["FLA (A)"] == "fla" and fields["VOLTS"] == "voltage"
    assert fields["PHASE"] == "phase" and fields["DUTY"] == "duty"
    # the horizontal headings are drawn twice, 0.3 pt apart: read once
    assert fields["TAG"] == "tag" and fields["CONDUCTORS"] == "conductor" and fields["BREAKER"] == "ocpd"


def test_multi_line_cells_are_one_value():
    grid = next(g for g in grids_of(E601) if locate_tables(g))
    by_tag = {r[0]: r for r in grid.rows}
    assert by_tag["MOV-401"][1] == "RAW WATER INTAKE VALVE ACTUATOR"        # wrapped over two lines
    assert by_tag["SG-401"][8] == "3-#8 CU, 1-#10 BOND, 27 mm EMT"
    assert by_tag["H-401"][1] == "PUMP ROOM CRANE - HOIST"
    chromium = grids_of(CHROMIUM)[0]
    assert any(r[0] == "MOV-401" for r in chromium.rows)                     # 'MOV-' over '401' in one cell


def test_unruled_header_from_word_positions():
    grid = next(g for g in grids_of(UNRULED) if locate_tables(g))
    assert grid.rows[0][:6] == ["Equipment Tag", "Description", "Fed From", "HP", "Volts/Ph/Hz", "FLA (A)"]
    assert grid.rows[1][0] == "MCC-1 (600 V, 3Ø)" and not any(grid.rows[1][1:])   # a section title stays whole


def test_wrapped_line_joins_its_row_but_a_motor_row_without_a_tag_does_not():
    Line = pdf_reader._RowLine
    lines = [
        Line(100, 107, 7, {0: ["P-1"], 1: ["RAW WATER INTAKE"], 3: ["30"], 4: ["34"], 5: ["575/3/60"]}),
        Line(108, 115, 7, {1: ["VALVE ACTUATOR"]}),                                  # tight: a wrap
        Line(122, 129, 7, {1: ["SECOND PUMP"], 3: ["25"], 4: ["27"], 5: ["575/3/60"]}),  # no tag, full row
        Line(136, 143, 7, {1: ["NOTE"]}),                                           # loose: its own row
    ]
    rows = pdf_reader._merge_lines(lines)
    assert [r.get(1) for r in rows] == [["RAW WATER INTAKE", "VALVE ACTUATOR"], ["SECOND PUMP"], ["NOTE"]]


# --------------------------------------------------------------------------- bad files: one line, exit 2

BAD_FILES = {
    "no-text-layer.pdf": ("no text layer", "OCR"),
    "encrypted.pdf": ("encrypted", "password"),
    "no-schedule.pdf": ("no motor schedule", "p. 1 table 2 ('PANEL LP-1"),
    "junk.pdf": ("damaged",),
}


@pytest.fixture(scope="module")
def cli_runs(tmp_path_factory):
    """``python -m checker review`` on every bad file, the processes run side by side to save time."""
    tmp = tmp_path_factory.mktemp("bad")
    (tmp / "junk.pdf").write_bytes(b"%PDF-1.7\n" + b"this is not a pdf body " * 40)
    procs = {}
    for name in BAD_FILES:
        path = PDF_DIR / name if (PDF_DIR / name).exists() else tmp / name
        out = tmp / name.replace(".pdf", "")
        procs[name] = (out, subprocess.Popen(
            [sys.executable, "-m", "checker", "review", str(path), "--json", f"{out}.json", "--html", f"{out}.html"],
            cwd=ROOT, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True))
    results = {}
    for name, (out, proc) in procs.items():
        _, stderr = proc.communicate(timeout=120)
        results[name] = (proc.returncode, stderr, out)
    return results


@pytest.mark.parametrize("name", list(BAD_FILES))
def test_unusable_pdf_gives_exit_2_and_one_line(cli_runs, name):
    code, stderr, out = cli_runs[name]
    assert code == 2, stderr
    assert "Traceback" not in stderr and stderr.count("\n") == 1
    for word in BAD_FILES[name]:
        assert word in stderr
    assert not Path(f"{out}.json").exists()


def test_truncated_pdf_is_damaged(tmp_path):
    path = tmp_path / "truncated.pdf"
    path.write_bytes(E601.read_bytes()[:4000])
    with pytest.raises(InputError) as excinfo:
        read_grids(path)
    assert "damaged" in str(excinfo.value) and "\n" not in str(excinfo.value)


def test_pdf_with_text_but_no_table(tmp_path):
    from reportlab.pdfgen import canvas

    path = tmp_path / "letter.pdf"
    c = canvas.Canvas(str(path), invariant=1)
    c.drawString(72, 700, "Dear reviewer, the motor schedule will follow under separate cover.")
    c.save()
    with pytest.raises(InputError) as excinfo:
        read_grids(path)
    message = str(excinfo.value)
    assert "no motor schedule" in message and "no table was found" in message and "\n" not in message


def test_schedule_missed_by_the_cheap_tests_is_still_found(tmp_path):
    """Headers the page filters do not count as motor words ('POWER', 'CURRENT') are still read:
    with nothing found, the first pages are parsed in depth anyway."""
    from reportlab.pdfgen import canvas

    path = tmp_path / "loose-words.pdf"
    c = canvas.Canvas(str(path), pagesize=(792, 612), invariant=1)
    rows = [("TAG", "SERVICE", "POWER", "CURRENT", "VOLTAGE"), ("P-1", "TRANSFER PUMP", "7.5", "14", "400"),
            ("P-2", "DOSING PUMP", "0.75", "1.8", "400")]
    for r, row in enumerate(rows):
        for x, text in zip((60, 140, 300, 380, 460), row):
            c.drawString(x, 520 - 18 * r, text)
    c.save()
    assert not any(hit for _, hit in pdf_reader._quick_scan(path.read_bytes(), 1))
    grids = read_grids(path)
    table = locate_tables(grids[0])[0]
    assert {c.field for c in table.columns} >= {"tag", "kw", "fla", "voltage"}
    assert grids[0].rows[table.data_first][:3] == ["P-1", "TRANSFER PUMP", "7.5"]
