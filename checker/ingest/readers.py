"""Read a submitted spreadsheet or CSV file into plain text grids.

A ``Grid`` holds every cell of one sheet as stripped text, with the row
numbers a spreadsheet program shows, the hidden rows and the merged ranges,
so that later steps can point a reviewer at ``Motors!C12``. Nothing here
interprets values beyond turning a stored number, date or boolean into the
text a person would read; the value parsers do the rest.

The file type is decided by the file's content first and its name second:
a CSV saved with an ``.xlsx`` name is read as CSV, and a workbook named
``.csv`` is read as a workbook. Input files are only ever opened for reading.
"""
from __future__ import annotations

import csv
import datetime as dt
import io
import math
import pathlib
import re
import warnings
import zipfile
from dataclasses import dataclass
from decimal import Decimal

from checker.model import SourceRef

__all__ = ["Grid", "InputError", "cell_text", "read_grids"]


class InputError(Exception):
    """Input cannot be used; str(e) is ONE line telling the reviewer what is wrong and what to do."""


@dataclass(frozen=True)
class Grid:
    """One sheet (or one CSV file) as rectangular text.

    ``rows[i]`` is shown by a spreadsheet program as row ``row_numbers[i]``.
    ``merged`` holds 0-based ``(first_row, first_col, last_row, last_col)``
    grid indices; a merged range's text sits in its top-left cell only.
    """

    file: str
    kind: str
    sheet: str | None
    rows: list[list[str]]
    row_numbers: list[int]
    hidden_rows: frozenset[int]
    merged: tuple[tuple[int, int, int, int], ...]
    hidden: bool = False
    # PDF tables: the page (as a viewer numbers it) of each row, and the table's
    # index on its first page. None for spreadsheets and CSV.
    row_pages: tuple[int, ...] | None = None
    table: int | None = None

    def source(self, index: int, column: str | None = None) -> SourceRef:
        """Where grid row ``index`` (and optionally a column) is, as a person finds it."""
        page = self.row_pages[index] if self.row_pages is not None else None
        return SourceRef(self.file, self.row_numbers[index], sheet=self.sheet, page=page, table=self.table,
                         column=column)


# File signatures (first bytes of the file).
_ZIP_MAGIC = (b"PK\x03\x04", b"PK\x05\x06")
_OLE2_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
_PDF_MAGIC = b"%PDF-"
_ODS_MIMETYPE = b"application/vnd.oasis.opendocument.spreadsheet"
_ODF_MIMETYPE = b"application/vnd.oasis.opendocument"

_CSV_DELIMITERS = ",;\t|"
_SNIFF_BYTES = 64 * 1024
# Float noise such as 0.1 + 0.2 is cut at this many significant digits, as a
# spreadsheet's General format shows it.
_SIGNIFICANT_DIGITS = 10


def read_grids(path: pathlib.Path, sheet: str | None = None) -> list[Grid]:
    """Read every sheet of a workbook (or the one CSV table) as text grids.

    Parameters
    ----------
    path : file to read (xlsx/xlsm or CSV/TSV/TXT; decided by content).
    sheet : for a workbook, the one sheet to read; ``None`` reads every sheet,
        hidden ones included (``Grid.hidden`` says which). Ignored for CSV,
        which has no sheets.

    Raises
    ------
    InputError
        The file is missing, empty, encrypted, corrupt or in a format this
        tool does not read; the message is one line saying what to do.
    """
    path = pathlib.Path(path)
    name = path.name
    if not path.is_file():
        raise InputError(f"{name}: file not found (or not a file); check the path")
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{name}: cannot be read ({exc.strerror or exc}); check the file permissions") from None
    if not data.strip():
        raise InputError(f"{name} is empty; export the schedule again and resubmit")
    kind = sniff_kind(data, name)
    if kind == "xlsx":
        return _read_workbook(data, name, sheet)
    return [_read_csv(data, name)]


# --------------------------------------------------------------------------- dispatch

def sniff_kind(data: bytes, name: str) -> str:
    """'xlsx' or 'csv' from the file's bytes; InputError for formats not read.

    The content decides; the name only colours the messages.
    """
    head = data[:8]
    if head.startswith(_ZIP_MAGIC):
        return _zip_kind(data, name)
    if head.startswith(_OLE2_MAGIC):
        raise InputError(_ole2_message(data, name))
    if head.startswith(_PDF_MAGIC):
        raise InputError(f"{name} is a PDF document, not a spreadsheet; submit the schedule as .xlsx or CSV "
                         f"(or use the PDF reader)")
    start = data[:2048].lstrip(b"\xef\xbb\xbf \t\r\n").lower()
    if start.startswith((b"<!doctype html", b"<html", b"<table")):
        raise InputError(f"{name} is a web page (HTML) saved under a spreadsheet name; open it in a spreadsheet "
                         f"program and save it as .xlsx or CSV")
    if start.startswith(b"<?xml") and b"urn:schemas-microsoft-com:office:spreadsheet" in data[:8192]:
        raise InputError(f"{name} is an Excel 2003 XML spreadsheet; open it and save it as .xlsx or CSV")
    if not data.startswith((b"\xff\xfe", b"\xfe\xff")) and b"\x00" in data[:8192]:
        raise InputError(f"{name} is a binary file of a kind this tool does not read; submit the schedule as "
                         f".xlsx or CSV")
    return "csv"


def _zip_kind(data: bytes, name: str) -> str:
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            names = set(archive.namelist())
            mimetype = archive.read("mimetype")[:100] if "mimetype" in names else b""
    except (zipfile.BadZipFile, zipfile.LargeZipFile, OSError, EOFError, ValueError, KeyError) as exc:
        raise InputError(f"{name} looks like an Excel workbook but the file is damaged ({_short_reason(exc)}); "
                         f"open it in a spreadsheet program, save it again as .xlsx and resubmit") from None
    if mimetype.startswith(_ODS_MIMETYPE):
        raise InputError(f"{name} is an OpenDocument spreadsheet (.ods); open it and save it as .xlsx or CSV")
    if mimetype.startswith(_ODF_MIMETYPE):
        raise InputError(f"{name} is an OpenDocument file, not a spreadsheet; submit the schedule as .xlsx or CSV")
    if "xl/workbook.xml" in names:
        return "xlsx"
    if "xl/workbook.bin" in names:
        raise InputError(f"{name} is an Excel binary workbook (.xlsb); open it and save it as .xlsx or CSV")
    raise InputError(f"{name} is a zip archive, not an Excel workbook; submit the schedule as .xlsx or CSV")


def _ole2_message(data: bytes, name: str) -> str:
    # An encrypted .xlsx is stored inside an OLE2 container with these streams.
    if "EncryptedPackage".encode("utf-16-le") in data or "EncryptionInfo".encode("utf-16-le") in data:
        return (f"{name} is password-protected; remove the password (save a copy without it) as .xlsx "
                f"and resubmit")
    if "Workbook".encode("utf-16-le") in data or "Book".encode("utf-16-le") in data:
        return (f"{name} is a legacy Excel 97-2003 workbook (.xls), which this tool does not read; open it and "
                f"save it as .xlsx or CSV")
    return (f"{name} is an older binary Office file (OLE2, e.g. .xls or .doc), which this tool does not read; "
            f"save the schedule as .xlsx or CSV")


def _short_reason(exc: BaseException) -> str:
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text[:120]


# --------------------------------------------------------------------------- cell text

def cell_text(value: object) -> str:
    """The text a reviewer reads for one stored cell value.

    Numbers print shortest (``60.0`` -> ``'60'``, ``7.5`` -> ``'7.5'``) after
    rounding float noise to 10 significant digits; dates print as ISO dates;
    booleans as ``TRUE``/``FALSE``; strings are stripped.
    """
    if value is None:
        return ""
    if isinstance(value, str):
        return value.strip()
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return number_text(value)
    if isinstance(value, dt.datetime):
        if value.time() == dt.time(0, 0):
            return value.date().isoformat()
        return value.isoformat(sep=" ", timespec="seconds" if value.second else "minutes")
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, dt.time):
        return value.isoformat(timespec="seconds" if value.second else "minutes")
    if isinstance(value, dt.timedelta):
        return str(value)
    return str(value).strip()


def number_text(value: float) -> str:
    """Shortest plain text for a float, without exponent or float noise."""
    if not math.isfinite(value):
        return str(value)
    rounded = float(f"{value:.{_SIGNIFICANT_DIGITS}g}")
    if rounded.is_integer() and abs(rounded) < 1e15:
        return str(int(rounded))
    text = repr(rounded)
    if "e" in text or "E" in text:
        text = format(Decimal(text), "f")
    return text


# --------------------------------------------------------------------------- xlsx

def _read_workbook(data: bytes, name: str, sheet: str | None) -> list[Grid]:
    import openpyxl  # imported here so CSV-only use does not pay for it

    try:
        with warnings.catch_warnings():
            # openpyxl warns about features it drops (data validation, styles); not the reviewer's concern
            warnings.simplefilter("ignore")
            book = openpyxl.load_workbook(io.BytesIO(data), data_only=True, read_only=False)
    except Exception as exc:  # noqa: BLE001 - openpyxl raises many types for damaged files; none may escape
        raise InputError(f"{name}: the workbook could not be opened ({_short_reason(exc)}); open it in a "
                         f"spreadsheet program, save it again as .xlsx and resubmit") from None
    try:
        sheets = _select_sheets(book, name, sheet)
        grids = [_sheet_grid(ws, name) for ws in sheets]
    finally:
        book.close()
    if not any(g.rows for g in grids):
        which = f"sheet '{sheet}'" if sheet is not None else "any sheet"
        raise InputError(f"{name} has no cell values in {which}; check that the schedule was saved in this file")
    return grids


def _select_sheets(book, name: str, sheet: str | None) -> list:
    worksheets = list(book.worksheets)  # chart sheets are left out by openpyxl
    if sheet is None:
        return worksheets
    exact = [ws for ws in worksheets if ws.title == sheet]
    if exact:
        return exact
    loose = [ws for ws in worksheets if ws.title.strip().casefold() == sheet.strip().casefold()]
    if len(loose) == 1:
        return loose
    listed = ", ".join(f"'{ws.title}'" for ws in worksheets) or "none"
    raise InputError(f"{name} has no sheet named '{sheet}'; its sheets are {listed}")


def _sheet_grid(ws, name: str) -> Grid:
    """Text grid of one openpyxl worksheet, from row 1 to the last used row."""
    # ws._cells holds only the cells stored in the file; iterating ws.iter_rows()
    # would create every cell of the max_row x max_column rectangle, which is
    # slow for sheets whose formatting runs far past the data.
    stored = getattr(ws, "_cells", None)
    if stored is None:
        stored = {(c.row, c.column): c for row in ws.iter_rows() for c in row}
    texts: dict[tuple[int, int], str] = {}
    for (row, col), cell in stored.items():
        text = cell_text(cell.value)
        if text:
            texts[(row, col)] = text
    n_rows = max((r for r, _ in texts), default=0)
    n_cols = max((c for _, c in texts), default=0)
    rows = [[""] * n_cols for _ in range(n_rows)]
    for (row, col), text in texts.items():
        rows[row - 1][col - 1] = text
    hidden_rows = frozenset(
        r for r, dim in ws.row_dimensions.items() if dim.hidden and 1 <= r <= n_rows)
    merged = _merged_ranges(ws, n_rows, n_cols)
    return Grid(file=name, kind="xlsx", sheet=ws.title, rows=rows, row_numbers=list(range(1, n_rows + 1)),
                hidden_rows=hidden_rows, merged=merged, hidden=ws.sheet_state != "visible")


def _merged_ranges(ws, n_rows: int, n_cols: int) -> tuple[tuple[int, int, int, int], ...]:
    """Merged ranges clipped to the grid, as 0-based index tuples."""
    out = []
    for rng in ws.merged_cells.ranges:
        first_row, first_col = rng.min_row - 1, rng.min_col - 1
        last_row, last_col = min(rng.max_row, n_rows) - 1, min(rng.max_col, n_cols) - 1
        if first_row <= last_row and first_col <= last_col and (first_row, first_col) != (last_row, last_col):
            out.append((first_row, first_col, last_row, last_col))
    return tuple(sorted(out))


# --------------------------------------------------------------------------- csv

def _read_csv(data: bytes, name: str) -> Grid:
    """One CSV/TSV file as a grid.

    Row numbers are 1-based record numbers, which is what a spreadsheet
    program shows when it opens the file: a record whose quoted cell holds a
    line break is still one row. A leading ``sep=;`` line (an Excel hint) sets
    the delimiter and is not counted, as Excel hides it.
    """
    text = _decode(data, name)
    if not text.strip():
        raise InputError(f"{name} is empty; export the schedule again and resubmit")
    delimiter, text = _sep_hint(text)
    if delimiter is None:
        delimiter = detect_delimiter(_sample(text))
    try:
        records = list(csv.reader(io.StringIO(text, newline=""), delimiter=delimiter))
    except csv.Error as exc:
        raise InputError(f"{name} could not be read as CSV ({_short_reason(exc)}); check the file's quoting or "
                         f"save it again from a spreadsheet program") from None
    rows = [[cell.strip() for cell in record] for record in records]
    while rows and not any(rows[-1]):
        rows.pop()
    if not rows:
        raise InputError(f"{name} is empty (no cell holds a value); export the schedule again and resubmit")
    width = max((max((i + 1 for i, c in enumerate(r) if c), default=0) for r in rows), default=0)
    rows = [(r + [""] * width)[:width] for r in rows]
    return Grid(file=name, kind="csv", sheet=None, rows=rows, row_numbers=list(range(1, len(rows) + 1)),
                hidden_rows=frozenset(), merged=())


def _decode(data: bytes, name: str) -> str:
    """Text of a CSV file: UTF-16 (BOM), UTF-8 with or without BOM, else cp1252."""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError:
            raise InputError(f"{name} claims UTF-16 text but does not decode; save it again as CSV UTF-8") from None
    if data.startswith(b"\xef\xbb\xbf"):
        try:
            return data.decode("utf-8-sig")
        except UnicodeDecodeError:
            pass
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError:
        pass
    try:
        return data.decode("cp1252")
    except UnicodeDecodeError:
        # cp1252 leaves five byte values undefined; latin-1 reads every byte
        return data.decode("latin-1")


def _sep_hint(text: str) -> tuple[str | None, str]:
    match = re.match(r"sep=(.)\r?\n", text)
    if match:
        return match.group(1), text[match.end():]
    return None, text


def _sample(text: str) -> str:
    sample = text[:_SNIFF_BYTES]
    if len(text) > _SNIFF_BYTES and "\n" in sample:
        sample = sample[: sample.rindex("\n")]
    return sample


def detect_delimiter(sample: str) -> str:
    """The delimiter among ``, ; TAB |`` that makes the sample most table-like.

    csv.Sniffer's guess is tried first; it is kept unless another delimiter
    gives more records of one common width (Sniffer prefers ',' on ties, which
    misreads ';' files with decimal commas). Falls back to ','.
    """
    try:
        sniffed = csv.Sniffer().sniff(sample, delimiters=_CSV_DELIMITERS).delimiter
    except csv.Error:
        sniffed = None
    order = ([sniffed] if sniffed else []) + [d for d in _CSV_DELIMITERS if d != sniffed]
    best, best_key = ",", (0, 0, 0)
    for delimiter in order:
        key = _table_likeness(sample, delimiter)
        if key[0] and key > best_key:
            best, best_key = delimiter, key
    return best


_DECIMAL_COMMA = re.compile(r"(?<=\d),(?=\d)")


def _table_likeness(sample: str, delimiter: str) -> tuple[int, int, int]:
    """(records sharing the commonest width >= 2, that width, -cells holding another delimiter).

    The last key breaks ties such as ``P-1;7,5;9,6``: read with ';' no cell
    holds a delimiter once decimal commas are set aside, read with ',' two do.
    """
    try:
        records = [r for r in csv.reader(io.StringIO(sample, newline=""), delimiter=delimiter) if any(r)]
    except csv.Error:
        return (0, 0, 0)
    counts: dict[int, int] = {}
    for record in records:
        if len(record) >= 2:
            counts[len(record)] = counts.get(len(record), 0) + 1
    if not counts:
        return (0, 0, 0)
    width, count = max(counts.items(), key=lambda item: (item[1], item[0]))
    others = [d for d in _CSV_DELIMITERS if d != delimiter]
    dirty = sum(1 for record in records for c in record if any(d in _DECIMAL_COMMA.sub("", c) for d in others))
    return (count, width, -dirty)
