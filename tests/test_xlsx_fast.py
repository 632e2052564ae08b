"""The fast .xlsx reader (python-calamine plus a byte scan) gives exactly the openpyxl reader's grids.

Every workbook here is read by both ``readers._read_workbook`` (openpyxl, the reference) and
``xlsx_fast.read_workbook``; the grids must be equal field by field: rows as text, row numbers,
hidden rows, merged ranges, hidden sheets and formulas saved without a value. Workbooks the fast
path does not read exactly (comments, odd prefixes) must come back as None, so that the openpyxl
path reads them. All data is invented.
"""
from __future__ import annotations

import dataclasses
import datetime as dt
import io
import sys
import zipfile
from pathlib import Path

import fixture_builders as fb
import pytest
from openpyxl import Workbook
from openpyxl.cell.rich_text import CellRichText, TextBlock
from openpyxl.cell.text import InlineFont

from checker.ingest import readers, xlsx_fast
from checker.ingest.readers import InputError, read_grids

ROOT = Path(__file__).resolve().parents[1]
DEMO_XLSX = ROOT / "fixtures" / "demo" / "northfield-pump-station.xlsx"
MAIN_NS = b"http://schemas.openxmlformats.org/spreadsheetml/2006/main"


def both(data: bytes, name: str = "t.xlsx", sheet: str | None = None):
    reference = readers._read_workbook(data, name, sheet)
    fast = xlsx_fast.read_workbook(data, name, sheet)
    return reference, fast


def assert_same(data: bytes, sheet: str | None = None) -> list[readers.Grid]:
    reference, fast = both(data, sheet=sheet)
    assert fast is not None, "the fast path handed a plain workbook back to openpyxl"
    assert len(fast) == len(reference)
    for ref, got in zip(reference, fast):
        for field in dataclasses.fields(ref):
            assert getattr(got, field.name) == getattr(ref, field.name), (ref.sheet, field.name)
    return fast


def sheet_xml(data: bytes, member: str = "xl/worksheets/sheet1.xml") -> bytes:
    with zipfile.ZipFile(io.BytesIO(data)) as archive:
        return archive.read(member)


def replace_member(data: bytes, member: str, new: bytes) -> bytes:
    out = io.BytesIO()
    with zipfile.ZipFile(io.BytesIO(data)) as src, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            dst.writestr(info.filename, new if info.filename == member else src.read(info.filename))
    return out.getvalue()


# --------------------------------------------------------------------------- same grids

def test_demo_schedule():
    grids = assert_same(DEMO_XLSX.read_bytes())
    assert [g.sheet for g in grids] == ["MOTOR SCHED", "Revisions"]
    assert grids[0].merged  # merged title rows and two-row header


@pytest.mark.parametrize("writer", [fb.write_messy_xlsx, fb.write_two_row_header_xlsx, fb.write_three_row_header_xlsx,
                                    fb.write_two_schedules_xlsx, fb.write_no_schedule_xlsx, fb.write_typed_cells_xlsx])
def test_test_fixtures(tmp_path, writer):
    assert_same(writer(tmp_path / "f.xlsx").read_bytes())


def test_messy_fixture_keeps_hidden_row_hidden_sheet_and_merge(tmp_path):
    grids = assert_same(fb.write_messy_xlsx(tmp_path / "m.xlsx").read_bytes())
    messy = next(g for g in grids if g.sheet == fb.MESSY_SHEET)
    assert fb.MESSY_HIDDEN_ROW in messy.hidden_rows
    assert (0, 0, 0, 10) in messy.merged
    assert next(g for g in grids if g.sheet == "Calc").hidden


def test_cell_kinds(tmp_path):
    """Dates, times, durations, booleans, rich text, an error cell, float noise, large integers,
    a leading blank area, a merged range with a value in a covered cell, a hidden row."""
    book = Workbook()
    ws = book.active
    ws.title = "Kinds"
    ws["C3"], ws["D3"], ws["E3"] = "start", 7.5, True
    ws["F3"], ws["G3"] = dt.datetime(2025, 1, 2), dt.datetime(2025, 1, 2, 9, 30)
    ws["H3"], ws["I3"] = dt.time(14, 30), dt.timedelta(hours=30)
    ws["J3"] = "#N/A"
    ws["J3"].data_type = "e"
    ws["C4"] = CellRichText([TextBlock(InlineFont(b=True), "RICH"), " text"])
    ws["D4"], ws["E4"], ws["F4"] = 12345678901, 0.1 + 0.2, dt.date(2024, 3, 1)
    ws["G4"], ws["H4"], ws["I4"] = "  padded  ", -0.0, 1e20
    ws["C6"], ws["D6"] = "merged", "covered (dropped as a spreadsheet program drops it)"
    ws.merge_cells("C6:E6")
    ws.row_dimensions[4].hidden = True
    other = book.create_sheet("Hidden")
    other["A1"] = "x"
    other.sheet_state = "hidden"
    path = tmp_path / "kinds.xlsx"
    book.save(path)
    grids = assert_same(path.read_bytes())
    kinds = grids[0]
    assert kinds.rows[2][2:10] == ["start", "7.5", "TRUE", "2025-01-02", "2025-01-02 09:30", "14:30",
                                   "1 day, 6:00:00", "#N/A"]
    assert kinds.rows[3][2:9] == ["RICH text", "12345678901", "0.3", "2024-03-01", "padded", "0", "100000000000000000000"]
    assert kinds.rows[5][3] == "" and kinds.hidden_rows == frozenset({4}) and grids[1].hidden


def test_formulas_with_and_without_saved_values(tmp_path):
    book = Workbook()
    ws = book.active
    ws.append(["Tag", "HP", "FLA"])
    ws.append(["P-1", 10, "=B2*1.4"])
    ws.append(["P-2", 5, "=B3*1.4"])
    path = tmp_path / "f.xlsx"
    book.save(path)
    data = path.read_bytes()
    # openpyxl saves formulas without a value; a spreadsheet program saves the result with them.
    xml = sheet_xml(data).replace(b"<f>B2*1.4</f><v></v>", b"<f>B2*1.4</f><v>14</v>")
    xml = xml.replace(b"<f>B2*1.4</f><v />", b"<f>B2*1.4</f><v>14</v>")
    grids = assert_same(replace_member(data, "xl/worksheets/sheet1.xml", xml))
    assert grids[0].rows[1][2] == "14"
    assert grids[0].formula_cells == frozenset({(2, 2)})


def test_error_cells_and_inline_strings_written_by_hand(tmp_path):
    book = Workbook()
    book.active.append(["Tag", "FLA"])
    book.active.append(["P-1", 1])
    path = tmp_path / "e.xlsx"
    book.save(path)
    data = path.read_bytes()
    rows = (b'<row r="1"><c r="A1" t="inlineStr"><is><t>Tag</t></is></c><c r="B1" t="inlineStr"><is><t>FLA</t></is></c>'
            b'</row><row r="2" hidden="true"><c r="A2" t="inlineStr"><is><t>P-1</t></is></c>'
            b'<c r="B2" t=\'e\'><v>#DIV/0!</v></c></row><row r="3"><c r="A3" t="e"><f>1/0</f><v>#DIV/0!</v></c></row>')
    xml = sheet_xml(data)
    start, end = xml.index(b"<sheetData>") + len(b"<sheetData>"), xml.index(b"</sheetData>")
    grids = assert_same(replace_member(data, "xl/worksheets/sheet1.xml", xml[:start] + rows + xml[end:]))
    assert grids[0].rows == [["Tag", "FLA"], ["P-1", "#DIV/0!"], ["#DIV/0!", ""]]
    assert grids[0].hidden_rows == frozenset({2})


def test_benchmark_generator_workbook(tmp_path):
    """The benchmark's own writer: shared strings, a date style, merges, hidden rows, 200 motors."""
    import importlib.util

    spec = importlib.util.spec_from_file_location("bench_generate", ROOT / "tests" / "bench" / "generate.py")
    generate = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = generate  # dataclasses look their module up while building the class
    spec.loader.exec_module(generate)
    schedule = generate.build_schedule(200)
    schedule.hidden_rows.add(12)
    path = generate.write_schedule_xlsx(tmp_path / "b.xlsx", schedule)
    grids = assert_same(path.read_bytes())
    assert 12 in grids[0].hidden_rows and grids[0].rows[2][10] == "2025-11-14"


def test_sheet_selection_is_the_same(tmp_path):
    data = fb.write_messy_xlsx(tmp_path / "m.xlsx").read_bytes()
    assert_same(data, sheet=fb.MESSY_SHEET)
    assert_same(data, sheet=fb.MESSY_SHEET.upper())
    with pytest.raises(InputError, match="no sheet named"):
        xlsx_fast.read_workbook(data, "m.xlsx", "Nope")


# --------------------------------------------------------------------------- handed back to openpyxl

@pytest.mark.parametrize("change", [
    lambda xml: xml.replace(b"<sheetData>", b"<!-- a comment --><sheetData>", 1),
    lambda xml: xml.replace(b"<worksheet ", b'<worksheet xmlns:x="' + MAIN_NS + b'" ', 1)
                   .replace(b"<row ", b"<x:row ").replace(b"</row>", b"</x:row>"),
    lambda xml: xml.replace(b' r="A1"', b'\tr="A1"', 1),
])
def test_unusual_xml_goes_to_openpyxl(tmp_path, change):
    data = fb.write_messy_xlsx(tmp_path / "m.xlsx").read_bytes()
    parts = readers._sheet_parts(zipfile.ZipFile(io.BytesIO(data)))
    member = parts[fb.MESSY_SHEET]
    odd = replace_member(data, member, change(sheet_xml(data, member)))
    assert xlsx_fast.read_workbook(odd, "m.xlsx", None) is None
    path = tmp_path / "odd.xlsx"
    path.write_bytes(odd)
    assert read_grids(path)  # read all the same, by openpyxl


def test_cell_limit_of_the_fast_path(tmp_path, monkeypatch):
    data = fb.write_messy_xlsx(tmp_path / "m.xlsx").read_bytes()
    monkeypatch.setattr(xlsx_fast, "MAX_STORED_CELLS", 20)
    with pytest.raises(InputError, match="stores more than 20 cells"):
        xlsx_fast.read_workbook(data, "m.xlsx", None)


def test_read_grids_uses_the_fast_path(tmp_path, monkeypatch):
    path = fb.write_messy_xlsx(tmp_path / "m.xlsx")

    def refuse(*_args):
        raise AssertionError("openpyxl path used")

    monkeypatch.setattr(readers, "_read_workbook", refuse)
    assert [g.sheet for g in read_grids(path)] == ["Cover", fb.MESSY_SHEET, "Calc"]
