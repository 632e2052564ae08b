"""Writers for messy test schedules (xlsx and CSV), built in a tmp_path.

Every equipment tag, description and number here is invented for tests; the
electrical values are plausible-looking schedule entries, not code-table
values, and no test should treat them as published data.

Each ``write_*`` function writes one file and returns its path. The module
constants next to a writer say where things are (spreadsheet row numbers as a
spreadsheet program shows them), so tests in other modules can assert
against them without re-reading this file's code.
"""
from __future__ import annotations

import csv
import datetime as dt
import importlib.util
import io
import sys
import zipfile
from collections.abc import Iterable, Sequence
from pathlib import Path

from openpyxl import Workbook
from openpyxl.styles import Alignment

Row = Sequence[object]


# --------------------------------------------------------------------------- generic writers

def write_csv(path: Path, rows: Iterable[Row], encoding: str = "utf-8", delimiter: str = ",",
              line_end: str = "\r\n") -> Path:
    """Write rows as CSV (``encoding`` may be 'utf-8-sig', 'cp1252', 'utf-16')."""
    buffer = io.StringIO(newline="")
    writer = csv.writer(buffer, delimiter=delimiter, lineterminator=line_end)
    for row in rows:
        writer.writerow(["" if v is None else v for v in row])
    Path(path).write_bytes(buffer.getvalue().encode(encoding))
    return Path(path)


def write_xlsx(path: Path, sheets: dict[str, Sequence[Row]], merges: dict[str, Sequence[str]] | None = None,
               hidden_rows: dict[str, Sequence[int]] | None = None, hidden_sheets: Sequence[str] = (),
               wrap_header_row: dict[str, int] | None = None) -> Path:
    """Write a workbook: sheet name -> rows (row 1 first); merges as 'A1:D1' ranges.

    ``None`` or '' leaves a cell empty. Row numbers in ``hidden_rows`` are
    1-based, as a spreadsheet shows them.
    """
    book = Workbook()
    book.remove(book.active)
    for name, rows in sheets.items():
        ws = book.create_sheet(name)
        for r, row in enumerate(rows, start=1):
            for c, value in enumerate(row, start=1):
                if value is not None and value != "":
                    ws.cell(row=r, column=c, value=value)
        for rng in (merges or {}).get(name, ()):
            ws.merge_cells(rng)
        for r in (hidden_rows or {}).get(name, ()):
            ws.row_dimensions[r].hidden = True
        wrap_row = (wrap_header_row or {}).get(name)
        if wrap_row:
            for cell in ws[wrap_row]:
                cell.alignment = Alignment(wrap_text=True)
        if name in hidden_sheets:
            ws.sheet_state = "hidden"
    book.save(path)
    return Path(path)


# --------------------------------------------------------------------------- the messy schedule

MESSY_SHEET = "Motor Schedule"
MESSY_HEADER_ROW = 7          # spreadsheet row of the header
MESSY_FIRST_DATA_ROW = 8
MESSY_LAST_ROW = 20           # last used row (a note)
MESSY_HIDDEN_ROW = 12         # CP-202 sits in a hidden row
MESSY_COLUMNS = {             # column letter -> field the layout should find
    "A": "tag", "B": "description", "C": "hp", "D": "voltage_phase", "E": "fla", "F": "starting",
    "G": "conductor", "H": "raceway", "I": "ocpd", "J": "fed_from", "K": "remarks",
}
MESSY_ROWS: list[list[object]] = [
    ["NORTH RIVER WATER WORKS - PUMP HOUSE 2"],                                        # 1 (merged A1:K1)
    ["MOTOR SCHEDULE"],                                                                 # 2
    ["Rev", "Date", "Description", "By"],                                               # 3 revision block
    ["B", dt.date(2024, 3, 1), "Issued for permit", "KL"],                              # 4
    [],                                                                                 # 5
    ["All values per approved shop drawings unless noted."],                           # 6
    ["Equip. No.", "Service", "Motor HP¹", "V/PH/HZ", "FLA\n(A)", "Starter", "Wire Size (Note 2)",
     "Conduit", "OCPD", "Fed From", "Remarks"],                                         # 7 header
    ["P-101", "Raw water pump", 25, "575/3/60", 24.2, "FVNR", "3#8, 1#10 BOND", "27 mm", "60A TD FUSE",
     "MCC-1", ""],                                                                      # 8
    ["P-102", "Raw water pump (standby)", 25, "575/3/60", 24.2, "FVNR", "3#8, 1#10 BOND", "27 mm",
     "60A TD FUSE", "MCC-1", "Lead/lag with P-101"],                                   # 9
    ["CHEMICAL FEED"],                                                                  # 10 section row
    ["CP-201", "Alum metering pump", 0.5, "120/1/60", 9.8, "MANUAL", "2#14, 1#14 BOND", "21 mm", "15A CB",
     "LP-2/7", ""],                                                                     # 11
    ["CP-202", "Polymer metering pump", 0.5, "120/1/60", 9.8, "MANUAL", "2#14, 1#14 BOND", "21 mm", "15A CB",
     "LP-2/9", "hidden row"],                                                           # 12 hidden
    [],                                                                                 # 13
    ["AHU-3 SF", "Supply fan", 7.5, "575/3/60", 9, "VFD", "3#12, 1#12 BOND", "21 mm", "20A CB", "MCC-1", ""],  # 14
    ["SPARE"],                                                                          # 15
    ["TOTAL", "", 58.5],                                                                # 16
    [],                                                                                 # 17
    ["NOTES:"],                                                                         # 18
    ["1. Motor data from approved shop drawings."],                                     # 19
    ["2. Copper conductors, RW90."],                                                    # 20
]


def write_messy_xlsx(path: Path) -> Path:
    """Title and revision rows, header on row 7 with footnote marks, units and a
    line break; combined V/PH/HZ column; section, spare, total and notes rows;
    row 12 hidden; A1:K1 merged. A second visible sheet 'Cover' holds no
    schedule and a hidden sheet 'Calc' holds numbers only."""
    cover = [["Project", "North River Water Works"], ["Drawing", "E-601"], ["Sheet", "1 of 3"]]
    calc = [[1, 2, 3], [4.5, 6, 7]]
    return write_xlsx(path, {"Cover": cover, MESSY_SHEET: MESSY_ROWS, "Calc": calc},
                      merges={MESSY_SHEET: ["A1:K1"]}, hidden_rows={MESSY_SHEET: [MESSY_HIDDEN_ROW]},
                      hidden_sheets=["Calc"], wrap_header_row={MESSY_SHEET: MESSY_HEADER_ROW})


def messy_csv_rows() -> list[list[str]]:
    """The messy schedule's rows as CSV text (dates as ISO text)."""
    out = []
    for row in MESSY_ROWS:
        out.append(["" if v is None else (v.isoformat() if isinstance(v, dt.date) else str(v)) for v in row])
    return out


# --------------------------------------------------------------------------- multi-row headers

TWO_ROW_SHEET = "Motors"
TWO_ROW_HEADER_ROWS = (3, 4)
TWO_ROW_COLUMNS = {
    "A": "tag", "B": "description", "C": "hp", "D": "voltage", "E": "fla", "F": "conductor", "G": "bond",
    "H": "raceway", "I": "ocpd", "J": "ocpd_type", "K": "remarks",
}
TWO_ROW_ROWS: list[list[object]] = [
    ["MOTOR LIST - BUILDING 4 (invented)"],                                               # 1
    [],                                                                                   # 2
    ["MARK", "DESCRIPTION", "MOTOR", None, None, "FEEDER", None, None, "PROTECTION", None, "REMARKS"],  # 3
    [None, None, "HP", "VOLTS", "FLA", "PHASE", "BOND", "CONDUIT", "SIZE", "TYPE"],        # 4
    ["EF-1", "Washroom exhaust fan", 0.33, 120, 6.2, "#14", "#14", "16 mm", 15, "CB", ""],  # 5
    ["CT-1", "Cooling tower fan", 20, 575, 22, "#8", "#10", "27 mm", 45, "FUSE", "on roof"],  # 6
    ["HWP-1", "Heating water pump", 5, 575, 6.1, "#14", "#14", "21 mm", 15, "CB", ""],     # 7
]


def write_two_row_header_xlsx(path: Path) -> Path:
    """Group row with merged MOTOR (C3:E3), FEEDER (F3:H3) and PROTECTION (I3:J3)
    over a leaf row; MARK, DESCRIPTION and REMARKS merged down two rows."""
    merges = ["A3:A4", "B3:B4", "C3:E3", "F3:H3", "I3:J3", "K3:K4"]
    return write_xlsx(path, {TWO_ROW_SHEET: TWO_ROW_ROWS}, merges={TWO_ROW_SHEET: merges})


THREE_ROW_HEADER_ROWS = (2, 4)
THREE_ROW_COLUMNS = {
    "A": "tag", "B": "description", "C": "kw", "D": "voltage_phase", "E": "fla", "F": "conductor", "G": "bond",
    "H": "ocpd", "I": "ocpd_type",
}
THREE_ROW_ROWS: list[list[object]] = [
    ["PROCESS MOTORS"],                                                                   # 1
    ["TAG", "SERVICE", "MOTOR", None, None, "BRANCH CIRCUIT", None, None, None],         # 2
    [None, None, None, None, None, "CONDUCTORS", None, "OVERCURRENT", None],              # 3
    [None, None, "KW", "V-PH-HZ", "FLC", "PHASE", "BOND", "RATING", "TYPE"],              # 4
    ["M-301", "Clarifier drive", 0.75, "600-3-60", 1.7, "#14", "#14", 15, "FUSE"],         # 5
    ["M-302", "Sludge pump", 11, "600-3-60", 14, "#10", "#10", 30, "FUSE"],                # 6
]


def write_three_row_header_xlsx(path: Path) -> Path:
    """Three header rows (group, sub-group, leaf) with merged group cells."""
    merges = ["A2:A4", "B2:B4", "C2:E3", "F2:I2", "F3:G3", "H3:I3"]
    return write_xlsx(path, {"Process": THREE_ROW_ROWS}, merges={"Process": merges})


def write_three_row_header_csv(path: Path, **kwargs) -> Path:
    """The same three-row header as CSV: no merges, group cells left of blanks."""
    rows = [["" if v is None else str(v) for v in row] for row in THREE_ROW_ROWS]
    return write_csv(path, rows, **kwargs)


# --------------------------------------------------------------------------- two schedules, none, odd files

TWO_SCHEDULES_ROWS: list[list[object]] = [
    ["SCHEDULE A - PUMPS"],                                                   # 1
    [],                                                                       # 2
    ["Tag", "Description", "HP", "Volts", "Phase", "FLA", "Breaker"],         # 3 header A
    ["P-1", "Booster pump 1", 10, 575, 3, 11, "25A"],                         # 4
    ["P-2", "Booster pump 2", 10, 575, 3, 11, "25A"],                         # 5
    ["P-3", "Jockey pump", 1.5, 575, 3, 2.1, "15A"],                          # 6
    ["NOTE: pumps P-1 and P-2 alternate."],                                   # 7
    [],                                                                       # 8
    ["SCHEDULE B - FANS"],                                                    # 9
    ["Mark", "Equipment", "kW", "Voltage", "FLA", "Disconnect", "Fed from"],  # 10 header B
    ["EF-10", "Garage exhaust", 2.2, 600, 3.1, "30A NF", "MCC-2"],            # 11
    ["EF-11", "Garage exhaust", 2.2, 600, 3.1, "30A NF", "MCC-2"],            # 12
]
TWO_SCHEDULES_HEADER_ROWS = (3, 10)
TWO_SCHEDULES_LAST_DATA_ROWS = (7, 12)


def write_two_schedules_xlsx(path: Path) -> Path:
    """Two motor schedules one under the other on one sheet 'Motors'."""
    return write_xlsx(path, {"Motors": TWO_SCHEDULES_ROWS})


NO_SCHEDULE_ROWS: list[list[object]] = [
    ["PANEL LP-2"],
    ["CKT", "LOAD DESCRIPTION", "BREAKER", "POLES", "LOAD VA"],
    [1, "Lighting - corridor", "15A", 1, 640],
    [2, "Receptacles - office", "20A", 1, 1080],
]
TRANSPOSED_ROWS: list[list[object]] = [
    ["Unit size", "02", "03", "04"],
    ["HP", 0.5, 0.75, 1],
    ["Volts", 575, 575, 575],
    ["FLA", 0.9, 1.3, 1.7],
]


def write_no_schedule_xlsx(path: Path) -> Path:
    """A panel schedule ('Panel') and a transposed motor table ('Transposed'): no motor schedule."""
    return write_xlsx(path, {"Panel": NO_SCHEDULE_ROWS, "Transposed": TRANSPOSED_ROWS})


def write_typed_cells_xlsx(path: Path) -> Path:
    """One row of typed cells on sheet 'Types': A1 60.0, B1 7.5, C1 0.1+0.2, D1 a date,
    E1 True, F1 '  padded  ', G1 1e-05, H1 a datetime at 14:30, I1 12345678901.0."""
    row = [60.0, 7.5, 0.1 + 0.2, dt.date(2023, 11, 5), True, "  padded  ", 1e-05,
           dt.datetime(2023, 11, 5, 14, 30), 12345678901.0]
    return write_xlsx(path, {"Types": [row]})


def write_corrupt_zip(path: Path) -> Path:
    """Starts like a zip/xlsx but the rest is junk."""
    Path(path).write_bytes(b"PK\x03\x04" + b"\x14\x00\x00\x00" + b"not really a workbook" * 20)
    return Path(path)


def write_truncated_xlsx(path: Path) -> Path:
    """A real workbook cut in half (a failed upload)."""
    write_messy_xlsx(path)
    data = Path(path).read_bytes()
    Path(path).write_bytes(data[: len(data) // 2])
    return Path(path)


def _ole2_bytes(*stream_names: str) -> bytes:
    # Only the OLE2 signature and the UTF-16 directory names matter to the reader.
    body = b"".join(n.encode("utf-16-le") + b"\x00\x00" for n in stream_names)
    return b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 504 + body + b"\x00" * 512


def write_xls_signature(path: Path) -> Path:
    """An Excel 97-2003 (.xls) lookalike: OLE2 signature with a 'Workbook' stream name."""
    Path(path).write_bytes(_ole2_bytes("Root Entry", "Workbook"))
    return Path(path)


def write_encrypted_xlsx_signature(path: Path) -> Path:
    """What a password-protected .xlsx looks like from outside: OLE2 with EncryptedPackage."""
    Path(path).write_bytes(_ole2_bytes("Root Entry", "EncryptionInfo", "EncryptedPackage"))
    return Path(path)


def write_ods_like(path: Path) -> Path:
    """A zip whose first entry is an OpenDocument spreadsheet mimetype."""
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("mimetype", "application/vnd.oasis.opendocument.spreadsheet")
        archive.writestr("content.xml", "<office:document-content/>")
    return Path(path)


def bench_schedule_csv(tmp_path: Path, motors: int) -> Path:
    """The benchmark generator's schedule of ``motors`` motors, as CSV in ``tmp_path``."""
    generator = Path(__file__).resolve().parent / "bench" / "generate.py"
    spec = importlib.util.spec_from_file_location("bench_generate", generator)
    generate = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = generate
    spec.loader.exec_module(generate)
    return generate.write_schedule_csv(tmp_path / "bench.csv", generate.build_schedule(motors))
