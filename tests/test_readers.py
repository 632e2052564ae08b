"""Tests for checker.ingest.readers: xlsx/CSV to text grids, and bad files to one-line errors."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path

import fixture_builders as fb
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.ingest.readers import Grid, InputError, cell_text, detect_delimiter, number_text, read_grids
from checker.model import column_letter


def cell(grid: Grid, ref: str) -> str:
    """Text of a cell by its spreadsheet address ('C12'), found through row_numbers."""
    letters = "".join(ch for ch in ref if ch.isalpha())
    row_number = int(ref[len(letters):])
    col = next(i for i in range(len(grid.rows[0])) if column_letter(i) == letters)
    return grid.rows[grid.row_numbers.index(row_number)][col]


def one_line_error(excinfo) -> str:
    message = str(excinfo.value)
    assert message and "\n" not in message and "Traceback" not in message
    return message


# --------------------------------------------------------------------------- xlsx

@pytest.fixture
def messy(tmp_path) -> Path:
    return fb.write_messy_xlsx(tmp_path / "pump-house.xlsx")


def test_xlsx_reads_all_sheets_hidden_included(messy):
    grids = read_grids(messy)
    assert [g.sheet for g in grids] == ["Cover", fb.MESSY_SHEET, "Calc"]
    assert [g.hidden for g in grids] == [False, False, True]
    assert {g.kind for g in grids} == {"xlsx"}
    assert {g.file for g in grids} == {"pump-house.xlsx"}


def test_xlsx_cells_by_row_number_and_letter(messy):
    grid = read_grids(messy, sheet=fb.MESSY_SHEET)[0]
    assert len(grid.rows) == fb.MESSY_LAST_ROW
    assert grid.row_numbers[0] == 1 and grid.row_numbers[-1] == fb.MESSY_LAST_ROW
    assert cell(grid, "A8") == "P-101"
    assert cell(grid, "C8") == "25"
    assert cell(grid, "E8") == "24.2"
    assert cell(grid, "C11") == "0.5"
    assert cell(grid, "E14") == "9"
    assert cell(grid, "A14") == "AHU-3 SF"
    assert cell(grid, "E7") == "FLA\n(A)"          # line break inside a header kept
    assert cell(grid, "C7") == "Motor HP¹"
    assert cell(grid, "B4") == "2024-03-01"         # a date cell as ISO text
    assert cell(grid, "K8") == ""


def test_xlsx_grid_is_rectangular(messy):
    grid = read_grids(messy, sheet=fb.MESSY_SHEET)[0]
    assert {len(r) for r in grid.rows} == {11}


def test_xlsx_hidden_rows_and_merged_ranges(messy):
    grid = read_grids(messy, sheet=fb.MESSY_SHEET)[0]
    assert grid.hidden_rows == frozenset({fb.MESSY_HIDDEN_ROW})
    assert cell(grid, f"A{fb.MESSY_HIDDEN_ROW}") == "CP-202"
    assert grid.merged == ((0, 0, 0, 10),)
    # the merged text sits in the top-left cell only
    assert cell(grid, "A1").startswith("NORTH RIVER") and cell(grid, "B1") == ""


def test_xlsx_merged_ranges_in_grid_indices(tmp_path):
    path = fb.write_two_row_header_xlsx(tmp_path / "two.xlsx")
    grid = read_grids(path)[0]
    assert (2, 2, 2, 4) in grid.merged      # C3:E3
    assert (2, 0, 3, 0) in grid.merged      # A3:A4
    assert cell(grid, "C3") == "MOTOR" and cell(grid, "D3") == ""


def test_xlsx_typed_cells_read_as_text(tmp_path):
    grid = read_grids(fb.write_typed_cells_xlsx(tmp_path / "types.xlsx"))[0]
    assert grid.rows[0] == ["60", "7.5", "0.3", "2023-11-05", "TRUE", "padded", "0.00001", "2023-11-05 14:30",
                            "12345678901"]


def test_xlsx_leading_blank_rows_and_columns_keep_positions(tmp_path):
    path = fb.write_xlsx(tmp_path / "offset.xlsx", {"S": [[], [], [None, None, "Tag", "HP"],
                                                        [None, None, "P-9", 3]]})
    grid = read_grids(path)[0]
    assert grid.row_numbers == [1, 2, 3, 4]
    assert cell(grid, "C4") == "P-9" and cell(grid, "D4") == "3"
    assert grid.rows[0] == ["", "", "", ""]


def test_sheet_selection_exact_and_loose(messy):
    assert [g.sheet for g in read_grids(messy, sheet="Cover")] == ["Cover"]
    assert [g.sheet for g in read_grids(messy, sheet=" motor schedule ")] == [fb.MESSY_SHEET]


def test_missing_sheet_lists_sheet_names(messy):
    with pytest.raises(InputError) as excinfo:
        read_grids(messy, sheet="Motors")
    message = one_line_error(excinfo)
    assert "'Motors'" in message
    for name in ("'Cover'", "'Motor Schedule'", "'Calc'"):
        assert name in message


def test_xlsx_named_csv_is_read_as_workbook(tmp_path):
    path = fb.write_messy_xlsx(tmp_path / "schedule.csv")
    grids = read_grids(path)
    assert grids[1].kind == "xlsx" and grids[1].file == "schedule.csv"
    assert cell(grids[1], "A9") == "P-102"


def test_input_file_is_not_modified(messy):
    before = (messy.read_bytes(), os.stat(messy).st_mtime_ns)
    read_grids(messy)
    assert (messy.read_bytes(), os.stat(messy).st_mtime_ns) == before


def test_workbook_without_values_is_an_input_error(tmp_path):
    path = fb.write_xlsx(tmp_path / "blank.xlsx", {"Sheet1": []})
    with pytest.raises(InputError) as excinfo:
        read_grids(path)
    assert "no cell values" in one_line_error(excinfo)


# --------------------------------------------------------------------------- bad files

def test_corrupt_zip_is_an_input_error(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(fb.write_corrupt_zip(tmp_path / "broken.xlsx"))
    message = one_line_error(excinfo)
    assert "broken.xlsx" in message and "damaged" in message


def test_truncated_workbook_is_an_input_error(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(fb.write_truncated_xlsx(tmp_path / "half.xlsx"))
    assert "half.xlsx" in one_line_error(excinfo)


def test_xls_signature_names_the_format(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(fb.write_xls_signature(tmp_path / "old.xls"))
    message = one_line_error(excinfo)
    assert ".xls" in message and "97-2003" in message and ".xlsx or CSV" in message


def test_xls_content_wins_over_xlsx_name(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(fb.write_xls_signature(tmp_path / "renamed.xlsx"))
    assert "97-2003" in one_line_error(excinfo)


def test_password_protected_workbook(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(fb.write_encrypted_xlsx_signature(tmp_path / "locked.xlsx"))
    assert "password" in one_line_error(excinfo)


def test_ods_names_the_format(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(fb.write_ods_like(tmp_path / "sched.ods"))
    message = one_line_error(excinfo)
    assert "OpenDocument" in message and ".xlsx or CSV" in message


def test_pdf_is_refused_with_a_hint(tmp_path):
    path = tmp_path / "sched.xlsx"
    path.write_bytes(b"%PDF-1.7\n%binary\n")
    with pytest.raises(InputError) as excinfo:
        read_grids(path)
    assert "PDF" in one_line_error(excinfo)


def test_binary_junk_is_refused(tmp_path):
    path = tmp_path / "junk.csv"
    path.write_bytes(bytes(range(256)) * 4)
    with pytest.raises(InputError) as excinfo:
        read_grids(path)
    assert "binary" in one_line_error(excinfo)


@pytest.mark.parametrize("content", [b"", b"   \r\n\r\n", b"\xef\xbb\xbf", b",,,\r\n,,\r\n"])
def test_empty_csv(tmp_path, content):
    path = tmp_path / "empty.csv"
    path.write_bytes(content)
    with pytest.raises(InputError) as excinfo:
        read_grids(path)
    assert "empty.csv is empty" in one_line_error(excinfo)


def test_missing_file(tmp_path):
    with pytest.raises(InputError) as excinfo:
        read_grids(tmp_path / "nope.xlsx")
    assert "not found" in one_line_error(excinfo)


# --------------------------------------------------------------------------- csv

SIMPLE = [["Tag", "Description", "HP", "Volts", "FLA"],
          ["P-101", "Raw water pump", "25", "575", "24.2"],
          ["AHU-3 SF", "Supply fan", "7.5", "575", "9"]]


def test_csv_cp1252(tmp_path):
    rows = [["Tag", "Description", "HP¹", "Ø", "Amb °C"], ["EF-2", "Ventilateur d'extraction", "½", "3", "40"]]
    grid = read_grids(fb.write_csv(tmp_path / "win.csv", rows, encoding="cp1252"))[0]
    assert grid.rows == rows
    assert grid.kind == "csv" and grid.sheet is None and grid.merged == () and grid.hidden_rows == frozenset()


def test_csv_utf8_sig_bom_is_not_in_first_cell(tmp_path):
    grid = read_grids(fb.write_csv(tmp_path / "bom.csv", SIMPLE, encoding="utf-8-sig"))[0]
    assert grid.rows[0][0] == "Tag"
    assert grid.rows == SIMPLE


def test_csv_utf16_tab_export(tmp_path):
    grid = read_grids(fb.write_csv(tmp_path / "unicode.txt", SIMPLE, encoding="utf-16", delimiter="\t"))[0]
    assert grid.rows == SIMPLE


@pytest.mark.parametrize("delimiter", [";", "\t", "|", ","])
def test_csv_delimiters(tmp_path, delimiter):
    grid = read_grids(fb.write_csv(tmp_path / "d.csv", SIMPLE, delimiter=delimiter))[0]
    assert grid.rows == SIMPLE


def test_semicolon_csv_with_decimal_commas(tmp_path):
    rows = [["Tag", "HP", "FLA"], ["P-1", "7,5", "9,6"], ["P-2", "1,5", "2,2"], ["P-3", "0,5", "1,1"]]
    grid = read_grids(fb.write_csv(tmp_path / "eu.csv", rows, delimiter=";"))[0]
    assert grid.rows == rows


def test_sep_hint_line_is_used_and_not_counted(tmp_path):
    path = tmp_path / "hint.csv"
    path.write_text("sep=;\r\nTag;HP\r\nP-1;5\r\n", encoding="utf-8")
    grid = read_grids(path)[0]
    assert grid.rows == [["Tag", "HP"], ["P-1", "5"]]
    assert grid.row_numbers == [1, 2]


def test_csv_quoted_newline_is_one_row_numbered_as_a_record(tmp_path):
    rows = [["Tag", "Description", "HP"], ["P-1", "Booster pump\nduty side", "10"], ["P-2", "Booster pump", "10"]]
    grid = read_grids(fb.write_csv(tmp_path / "nl.csv", rows))[0]
    assert grid.rows[1][1] == "Booster pump\nduty side"
    assert grid.rows[2][0] == "P-2"
    assert grid.row_numbers == [1, 2, 3]   # record numbers, as a spreadsheet program shows them


def test_csv_blank_lines_count_as_rows(tmp_path):
    path = tmp_path / "gaps.csv"
    path.write_text("Title\n\nTag,HP\nP-1,5\n\n\n", encoding="utf-8")
    grid = read_grids(path)[0]
    assert grid.rows == [["Title", ""], ["", ""], ["Tag", "HP"], ["P-1", "5"]]
    assert grid.row_numbers == [1, 2, 3, 4]


def test_csv_ragged_rows_padded_and_cells_stripped(tmp_path):
    path = tmp_path / "ragged.csv"
    path.write_text("Motor list\nTag, HP ,Volts\nP-1,5\nP-2,7.5,575,extra\n", encoding="utf-8")
    grid = read_grids(path)[0]
    assert grid.rows == [["Motor list", "", "", ""], ["Tag", "HP", "Volts", ""], ["P-1", "5", "", ""],
                         ["P-2", "7.5", "575", "extra"]]


def test_csv_named_xlsx_is_read_as_csv(tmp_path):
    grids = read_grids(fb.write_csv(tmp_path / "export.xlsx", SIMPLE, delimiter=";"))
    assert len(grids) == 1 and grids[0].kind == "csv" and grids[0].file == "export.xlsx"
    assert grids[0].rows == SIMPLE


def test_csv_ignores_sheet_argument(tmp_path):
    grids = read_grids(fb.write_csv(tmp_path / "s.csv", SIMPLE), sheet="Motors")
    assert grids[0].rows == SIMPLE


# --------------------------------------------------------------------------- helpers

@pytest.mark.parametrize("value, text", [
    (60.0, "60"), (7.5, "7.5"), (0.1 + 0.2, "0.3"), (1 / 3, "0.3333333333"), (-0.0, "0"), (1e-05, "0.00001"),
    (2.5e20, "250000000000000000000"), (24.200000000000003, "24.2"),
])
def test_number_text(value, text):
    assert number_text(value) == text


def test_cell_text_kinds():
    assert cell_text(None) == "" and cell_text(False) == "FALSE" and cell_text(3) == "3"
    assert cell_text("  x \n") == "x"


@pytest.mark.parametrize("sample, expected", [
    ("P-1;7,5;9,6\r\nP-2;1,5;2,2\r\nP-3;0,5;1,1\r\n", ";"),                  # decimal commas, no header
    ("MOTOR SCHEDULE, REV B\r\nTag;HP;FLA\r\nP-1;7,5;9,6\r\nP-2;1,5;2,2\r\n", ";"),  # title row fools Sniffer
    ("Tag;Desc;HP\r\nP-1;Pump, duty;7\r\nP-2;Pump, standby;7\r\n", ";"),
    ('Tag,Desc,HP\r\nP-1,"a;b",7\r\nP-2,c,7\r\n', ","),
])
def test_detect_delimiter_hard_cases(sample, expected):
    assert detect_delimiter(sample) == expected


def test_detect_delimiter_falls_back_to_comma():
    assert detect_delimiter("one column\nonly\n") == ","
    assert detect_delimiter("a|b|c\n1|2|3\n") == "|"


def _delimiter_one_pass(sample: str) -> str:
    """The delimiter choice worked out the long way (every measure of every delimiter, Sniffer first
    in the order), as ``detect_delimiter`` did before it took each measure only on a tie."""
    import csv
    import io

    from checker.ingest.readers import _CSV_DELIMITERS, _DECIMAL_COMMA

    def likeness(delimiter):
        records = [r for r in csv.reader(io.StringIO(sample, newline=""), delimiter=delimiter) if any(r)]
        counts = {}
        for record in records:
            if len(record) >= 2:
                counts[len(record)] = counts.get(len(record), 0) + 1
        if not counts:
            return (0, 0, 0)
        width, count = max(counts.items(), key=lambda item: (item[1], item[0]))
        others = [d for d in _CSV_DELIMITERS if d != delimiter]
        return (count, width, -sum(1 for r in records for c in r if any(d in _DECIMAL_COMMA.sub("", c) for d in others)))

    try:
        sniffed = csv.Sniffer().sniff(sample, delimiters=_CSV_DELIMITERS).delimiter
    except csv.Error:
        sniffed = None
    best, best_key = ",", (0, 0, 0)
    for delimiter in ([sniffed] if sniffed else []) + [d for d in _CSV_DELIMITERS if d != sniffed]:
        key = likeness(delimiter)
        if key[0] and key > best_key:
            best, best_key = delimiter, key
    return best


_cell_texts = st.text(alphabet="ab1,;|\t. -\"", max_size=6)


@settings(max_examples=300, deadline=None)
@given(st.lists(st.lists(_cell_texts, min_size=1, max_size=5), min_size=1, max_size=8),
       st.sampled_from([",", ";", "\t", "|"]), st.sampled_from(["\r\n", "\n"]))
def test_detect_delimiter_equals_the_one_pass_choice(rows, delimiter, newline):
    sample = newline.join(delimiter.join(cells) for cells in rows) + newline
    assert detect_delimiter(sample) == _delimiter_one_pass(sample)


@pytest.mark.parametrize("sample", ["\nb b\t|a;1a\n", "\n;a b\t\n\n"])
def test_a_tie_on_every_measure_goes_to_the_sniffers_guess(sample):
    """';' and TAB read these alike on every measure; csv.Sniffer guesses TAB, which comes later in order."""
    assert detect_delimiter(sample) == _delimiter_one_pass(sample) == "\t"


# --------------------------------------------------------------------------- properties


_CELL = st.text(alphabet=st.characters(blacklist_categories=("Cs", "Cc"), blacklist_characters="\x00"),
                max_size=12).map(str.strip)


@settings(max_examples=80, deadline=None)
@given(st.lists(st.lists(_CELL, min_size=3, max_size=3), min_size=2, max_size=8),
       st.sampled_from([",", ";", "\t"]), st.sampled_from(["utf-8", "utf-8-sig", "utf-16"]))
def test_csv_round_trip(rows, delimiter, encoding):
    rows = [["P-1", "x", "y"]] + rows          # at least one full row fixes the width
    with tempfile.TemporaryDirectory() as tmp:
        grid = read_grids(fb.write_csv(Path(tmp) / "r.csv", rows, encoding=encoding, delimiter=delimiter))[0]
    while not any(rows[-1]):
        rows.pop()
    assert grid.rows == rows


@settings(max_examples=80, deadline=None)
@given(st.binary(max_size=400), st.sampled_from(["a.csv", "a.xlsx", "a.xls"]))
def test_any_bytes_give_grids_or_one_line_error(content, name):
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / name
        path.write_bytes(content)
        try:
            grids = read_grids(path)
        except InputError as exc:
            assert str(exc) and "\n" not in str(exc)
        else:
            assert grids and all(len({len(r) for r in g.rows}) == 1 for g in grids)
