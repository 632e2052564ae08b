"""Read a submitted spreadsheet or CSV file into plain text grids.

A ``Grid`` holds every cell of one sheet as stripped text, with the row
numbers a spreadsheet program shows, the hidden rows and the merged ranges,
so that later steps can point a reviewer at ``Motors!C12``. Nothing here
interprets values beyond turning a stored number, date or boolean into the
text a person would read; the value parsers do the rest.

The file type is decided by the file's content first and its name second:
a CSV saved with an ``.xlsx`` name is read as CSV, and a workbook named
``.csv`` is read as a workbook. Legacy ``.xls``, ``.xlsb`` and OpenDocument
``.ods`` workbooks are read through python-calamine. Input files are only
ever opened for reading.

Files come from strangers, so reading is bounded: the file size, a zip
archive's member count, total unpacked size and compression ratio (zip
bombs), the number of stored cells (padded sheets) and the grid area are
checked before anything large is built, and a file over a limit is refused
with one line naming the limit (the ``MAX_*`` constants below). Workbook XML
is parsed through defusedxml, which refuses entity declarations (entity
expansion attacks). Formulas are never evaluated: the value the spreadsheet
program saved with the formula is read, and a formula saved without a
value is marked in ``Grid.formula_cells`` for the normaliser to report.
"""
from __future__ import annotations

import csv
import datetime as dt
import io
import math
import pathlib
import posixpath
import re
import warnings
import zipfile
from collections.abc import Iterator
from dataclasses import dataclass
from decimal import Decimal

from checker.model import SourceRef, column_letter

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
    # PDF tables continued on later pages: the table's index on each row's page.
    row_tables: tuple[int, ...] | None = None
    # xlsx: 0-based (row index, column index) of cells holding a formula that was
    # saved without a computed value; their text is "". Never evaluated here.
    formula_cells: frozenset[tuple[int, int]] = frozenset()

    def source(self, index: int, column: str | None = None) -> SourceRef:
        """Where grid row ``index`` (and optionally a column) is, as a person finds it."""
        page = self.row_pages[index] if self.row_pages is not None else None
        table = self.row_tables[index] if self.row_tables is not None else self.table
        return SourceRef(self.file, self.row_numbers[index], sheet=self.sheet, page=page, table=table,
                         column=column)

    def column_label(self, index: int) -> str:
        """How a person names 0-based column ``index``: 'C' in a spreadsheet, '3' in a PDF table."""
        return str(index + 1) if self.kind == "pdf" else column_letter(index)


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

# --- Limits on what one submitted file may make this tool do ----------------------------------
# A large real schedule (2,000 motors x 25 columns) is ~50,000 cells, ~4 MB of sheet XML and
# well under 1 MB as a file, so every limit leaves a wide margin. They are set so that the worst
# file inside them is read in seconds and well under 1 GiB of memory (tests/test_corpus.py
# measures the bomb cases). openpyxl builds a Python object per stored cell (~700 B each,
# ~65,000 cells a second), which is why stored cells are counted before it is called.
MAX_INPUT_BYTES = 64 * 2**20        # size of the submitted file
MAX_ZIP_MEMBERS = 10_000            # entries in an xlsx/ods/xlsb archive
MAX_UNZIPPED_BYTES = 100 * 2**20    # sum of the archive members' unpacked sizes
MAX_ZIP_RATIO = 100                 # unpacked/packed size of one member (deflate tops out near 1,030)
ZIP_RATIO_FLOOR_BYTES = 2**20       # members smaller than this unpacked are not ratio-checked
MAX_STORED_CELLS = 500_000          # <c> elements over all worksheets of an xlsx
MAX_SHEET_ROWS = 150_000            # last used row of a sheet (or records of a CSV): a 100,000-motor schedule
                                    # with its section and title rows (~113,000 rows) fits
MAX_GRID_CELLS = 2_000_000          # rows x columns of one sheet's text grid
CSV_FIELD_CHARS = 131_072           # longest CSV cell (the csv module's default limit, kept explicit)
# python-calamine reads these workbook formats (content decides, see sniff_kind).
_CALAMINE_KINDS = ("xls", "xlsb", "ods")
_FORMAT_NAMES = {"xls": "Excel 97-2003 workbook (.xls)", "xlsb": "Excel binary workbook (.xlsb)",
                 "ods": "OpenDocument spreadsheet (.ods)"}


def read_grids(path: pathlib.Path, sheet: str | None = None) -> list[Grid]:
    """Read every sheet of a workbook (or the one CSV table) as text grids.

    Parameters
    ----------
    path : file to read (xlsx/xlsm, CSV/TSV/TXT, or PDF via ``checker.ingest.pdf``; decided by content).
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
        size = path.stat().st_size
    except OSError as exc:
        raise InputError(f"{name}: cannot be read ({exc.strerror or exc}); check the file permissions") from None
    if size > MAX_INPUT_BYTES:
        raise InputError(f"{name} is {_mib(size)}, larger than the {_mib(MAX_INPUT_BYTES)} limit for one schedule; "
                         f"save the motor schedule on its own (one sheet, .xlsx or CSV) and resubmit")
    try:
        data = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{name}: cannot be read ({exc.strerror or exc}); check the file permissions") from None
    if not data.strip():
        raise InputError(f"{name} is empty; export the schedule again and resubmit")
    kind = sniff_kind(data, name)
    if kind == "pdf":
        from checker.ingest.pdf import read_pdf_grids  # imported here: pdfplumber is slow to import

        return read_pdf_grids(data, name)
    if kind == "xlsx":
        from checker.ingest.xlsx_fast import read_workbook  # same grids, ~20x faster; None -> openpyxl

        return read_workbook(data, name, sheet) or _read_workbook(data, name, sheet)
    if kind in _CALAMINE_KINDS:
        return _read_calamine(data, name, sheet, kind)
    return [_read_csv(data, name)]


# --------------------------------------------------------------------------- dispatch

def sniff_kind(data: bytes, name: str) -> str:
    """'xlsx', 'xls', 'xlsb', 'ods', 'pdf' or 'csv' from the file's bytes; InputError for formats not read.

    The content decides; the name only colours the messages.
    """
    head = data[:8]
    if head.startswith(_ZIP_MAGIC):
        return _zip_kind(data, name)
    if head.startswith(_OLE2_MAGIC):
        return _ole2_kind(data, name)
    if head.startswith(_PDF_MAGIC):
        return "pdf"
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
            check_archive(archive.infolist(), name)
            names = set(archive.namelist())
            mimetype = archive.read("mimetype")[:100] if "mimetype" in names else b""
    except (zipfile.BadZipFile, zipfile.LargeZipFile, OSError, EOFError, ValueError, KeyError,
            NotImplementedError) as exc:
        raise InputError(f"{name} looks like an Excel workbook but the file is damaged ({_short_reason(exc)}); "
                         f"open it in a spreadsheet program, save it again as .xlsx and resubmit") from None
    if mimetype.startswith(_ODS_MIMETYPE):
        return "ods"
    if mimetype.startswith(_ODF_MIMETYPE):
        raise InputError(f"{name} is an OpenDocument file, not a spreadsheet; submit the schedule as .xlsx or CSV")
    if "xl/workbook.xml" in names:
        return "xlsx"
    if "xl/workbook.bin" in names:
        return "xlsb"
    raise InputError(f"{name} is a zip archive, not an Excel workbook; submit the schedule as .xlsx or CSV")


def _ole2_kind(data: bytes, name: str) -> str:
    """'xls' for a legacy workbook; InputError for an encrypted package or another OLE2 document."""
    # An encrypted .xlsx is stored inside an OLE2 container with these streams.
    if "EncryptedPackage".encode("utf-16-le") in data or "EncryptionInfo".encode("utf-16-le") in data:
        raise InputError(f"{name} is password-protected; remove the password (save a copy without it) as .xlsx "
                         f"and resubmit")
    if "Workbook".encode("utf-16-le") in data or "Book".encode("utf-16-le") in data:
        return "xls"
    raise InputError(f"{name} is an older binary Office file (OLE2, e.g. .doc) but not a workbook; "
                     f"save the schedule as .xlsx or CSV")


def check_archive(members: list[zipfile.ZipInfo], name: str) -> None:
    """Refuse a zip archive whose members would unpack too large (a zip bomb) before reading any.

    The sizes checked are the ones the archive declares. That is enough: Python's
    zipfile (used by openpyxl) and the Rust zip reader inside python-calamine both
    stop with an error when a member inflates past its declared size.
    """
    if len(members) > MAX_ZIP_MEMBERS:
        raise InputError(f"{name} is an archive of {len(members):,} parts, more than the {MAX_ZIP_MEMBERS:,} limit "
                         f"for a workbook; save the schedule again as .xlsx or CSV and resubmit")
    total = sum(info.file_size for info in members)
    if total > MAX_UNZIPPED_BYTES:
        raise InputError(f"{name} would unpack to {_mib(total)}, more than the {_mib(MAX_UNZIPPED_BYTES)} limit "
                         f"(a compressed-file bomb or a padded workbook); refused unread - save the schedule "
                         f"on its own as .xlsx or CSV and resubmit")
    for info in members:
        ratio = info.file_size / max(info.compress_size, 1)
        if info.file_size > ZIP_RATIO_FLOOR_BYTES and ratio > MAX_ZIP_RATIO:
            raise InputError(f"{name}: part {_clip(info.filename)} is compressed {ratio:,.0f} to 1, beyond the "
                             f"{MAX_ZIP_RATIO} to 1 limit (a compressed-file bomb); refused unread - save the "
                             f"schedule again as .xlsx or CSV and resubmit")


def _mib(size: int) -> str:
    return f"{size / 2**20:,.1f} MiB" if size < 10 * 2**20 else f"{size / 2**20:,.0f} MiB"


def _clip(text: str, limit: int = 60) -> str:
    """A name from the file, printable and short, for a one-line message."""
    shown = "".join(ch if ch.isprintable() else "?" for ch in text)
    return repr(shown if len(shown) <= limit else shown[: limit - 1] + "…")


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

_SHEET_MAIN_REL = "/worksheet"   # relationship types end like this (transitional and strict OOXML)
# Start tags of a cell (<c ...>) and of a formula (<f ...>), with or without a namespace prefix.
_CELL_TAG = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,20}:)?c[\s/>]")
_FORMULA_TAG = re.compile(rb"<(?:[A-Za-z_][\w.-]{0,20}:)?f[\s/>]")
_SCAN_CHUNK = 2**20
_SCAN_KEEP = 64                  # bytes carried between chunks: longer than any tag matched above
_CELL_REF = re.compile(r"\$?([A-Za-z]{1,3})\$?(\d{1,7})")


def _read_workbook(data: bytes, name: str, sheet: str | None) -> list[Grid]:
    import openpyxl  # imported here so CSV-only use does not pay for it
    from openpyxl.xml import DEFUSEDXML

    if not DEFUSEDXML:
        # openpyxl parses with the standard library's XML parser unless defusedxml is installed.
        raise InputError("reading .xlsx needs the defusedxml package (XML hardened against entity attacks), which "
                         "is not installed; install motorcheck with its dependencies (pip install -e .) and run again")
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            parts = _sheet_parts(archive)
            with_formulas = _scan_sheets(archive, parts, name)
            with warnings.catch_warnings():
                # openpyxl warns about features it drops (data validation, styles); not the reviewer's concern
                warnings.simplefilter("ignore")
                book = openpyxl.load_workbook(io.BytesIO(data), data_only=True, read_only=False)
            try:
                sheets = _select_sheets(book, name, sheet)
                grids = [_sheet_grid(ws, name, _formulas_without_value(archive, with_formulas.get(ws.title)))
                         for ws in sheets]
            finally:
                book.close()
    except InputError:
        raise
    except Exception as exc:  # noqa: BLE001 - openpyxl raises many types for damaged files; none may escape
        raise InputError(_workbook_error(name, exc)) from None
    if not any(g.rows for g in grids):
        which = f"sheet '{sheet}'" if sheet is not None else "any sheet"
        raise InputError(f"{name} has no cell values in {which}; check that the schedule was saved in this file")
    return grids


def _workbook_error(name: str, exc: BaseException) -> str:
    """One line for an xlsx that could not be read, naming an XML attack when that is what stopped it."""
    from defusedxml import DefusedXmlException

    cause: BaseException | None = exc
    while cause is not None and not isinstance(cause, DefusedXmlException):
        cause = cause.__cause__ or cause.__context__  # openpyxl re-raises parse errors as ValueError
    if cause is not None:
        exc = cause
    if isinstance(exc, DefusedXmlException):
        return (f"{name}: the workbook's XML declares entities or a document type ({type(exc).__name__}), which "
                f"spreadsheet programs never write and which can be used to exhaust memory; refused unread - save "
                f"the schedule again from a spreadsheet program as .xlsx and resubmit")
    if isinstance(exc, MemoryError):
        return (f"{name}: the workbook needs more memory than is available; save the motor schedule on its own "
                f"as .xlsx or CSV and resubmit")
    return (f"{name}: the workbook could not be opened ({_short_reason(exc)}); open it in a spreadsheet "
            f"program, save it again as .xlsx and resubmit")


def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1]


def _sheet_parts(archive: zipfile.ZipFile) -> dict[str, str]:
    """Worksheet title -> archive member, from xl/workbook.xml and its relationships (parsed by defusedxml)."""
    from defusedxml.ElementTree import fromstring

    workbook = fromstring(archive.read("xl/workbook.xml"))
    rels = fromstring(archive.read("xl/_rels/workbook.xml.rels"))
    targets = {}
    for rel in rels.iter():
        if _local(rel.tag) == "Relationship" and str(rel.get("Type", "")).endswith(_SHEET_MAIN_REL):
            target = str(rel.get("Target", ""))
            member = target.lstrip("/") if target.startswith("/") else posixpath.normpath(f"xl/{target}")
            targets[rel.get("Id")] = member
    parts = {}
    for element in workbook.iter():
        if _local(element.tag) != "sheet":
            continue
        rel_id = next((v for k, v in element.attrib.items() if _local(k) == "id"), None)
        if rel_id in targets:
            parts[str(element.get("name", ""))] = targets[rel_id]
    return parts


def _scan_sheets(archive: zipfile.ZipFile, parts: dict[str, str], name: str) -> dict[str, str]:
    """Count stored cells over all worksheets (refusing past the limit); return those holding formulas.

    A byte scan of the unpacked XML, cheap next to openpyxl building one object
    per cell, so a padded sheet is refused before it costs memory.
    """
    stored = 0
    with_formulas = {}
    members = set(archive.namelist())
    for title, member in parts.items():
        if member not in members:
            continue
        cells, has_formula = _scan_part(archive, member, MAX_STORED_CELLS - stored)
        stored += cells
        if stored > MAX_STORED_CELLS:
            raise InputError(f"{name} stores more than {MAX_STORED_CELLS:,} cells (sheet {_clip(title)} alone has "
                             f"{cells:,} or more), above the limit this tool reads; a motor schedule is far smaller - "
                             f"save the schedule sheet on its own as .xlsx or CSV and resubmit")
        if has_formula:
            with_formulas[title] = member
    return with_formulas


def _scan_part(archive: zipfile.ZipFile, member: str, budget: int) -> tuple[int, bool]:
    """(cell start tags, any formula start tag) in one XML member; stops counting once past ``budget``."""
    cells, has_formula, tail = 0, False, b""
    with archive.open(member) as stream:
        while True:
            chunk = stream.read(_SCAN_CHUNK)
            buffer = tail + chunk
            last = not chunk
            # Tags starting in the kept tail are counted with the next chunk, so none is counted twice.
            end = len(buffer) if last else max(len(buffer) - _SCAN_KEEP, 0)
            cells += sum(1 for match in _CELL_TAG.finditer(buffer) if match.start() < end)
            has_formula = has_formula or _FORMULA_TAG.search(buffer) is not None
            if last or cells > budget:
                return cells, has_formula
            tail = buffer[end:]


def _formulas_without_value(archive: zipfile.ZipFile, member: str | None) -> frozenset[tuple[int, int]]:
    """1-based (row, column) of formula cells saved without a computed value (``<f>`` and no ``<v>``).

    A formula whose saved result is an empty string (``t="str"``) has a value: blank.
    """
    if member is None:
        return frozenset()
    from defusedxml.ElementTree import iterparse

    found = set()
    row = col = 0
    with archive.open(member) as stream:
        for event, element in iterparse(stream, events=("start", "end")):
            tag = _local(element.tag)
            if event == "start":
                if tag == "row":
                    given = element.get("r")
                    row, col = (int(given) if given and given.isdigit() else row + 1), 0
                elif tag == "c":
                    ref = _CELL_REF.fullmatch(element.get("r") or "")
                    if ref:
                        row, col = int(ref.group(2)), column_index(ref.group(1)) + 1
                    else:
                        col += 1
                continue
            if tag == "c":
                children = {_local(child.tag): child for child in element}
                value = children.get("v")
                empty = value is None or not (value.text or "") and element.get("t") not in ("str", "inlineStr")
                if "f" in children and empty and "is" not in children:
                    found.add((row, col))
                element.clear()
            elif tag == "row":
                element.clear()
    return frozenset(found)


def column_index(letters: str) -> int:
    """0-based column index of spreadsheet column letters ('A' -> 0, 'AA' -> 26)."""
    index = 0
    for ch in letters.upper():
        index = index * 26 + (ord(ch) - 64)
    return index - 1


def _select_sheets(book, name: str, sheet: str | None) -> list:
    worksheets = list(book.worksheets)  # chart sheets are left out by openpyxl
    return [worksheets[i] for i in _select_titles([ws.title for ws in worksheets], name, sheet)]


def _select_titles(titles: list[str], name: str, sheet: str | None) -> list[int]:
    """Indices of the sheets to read: all, or the one named (exact, else case- and space-insensitive)."""
    if sheet is None:
        return list(range(len(titles)))
    exact = [i for i, title in enumerate(titles) if title == sheet]
    if exact:
        return exact
    loose = [i for i, title in enumerate(titles) if title.strip().casefold() == sheet.strip().casefold()]
    if len(loose) == 1:
        return loose
    listed = ", ".join(f"'{title}'" for title in titles) or "none"
    raise InputError(f"{name} has no sheet named '{sheet}'; its sheets are {listed}")


def _check_area(name: str, title: str | None, n_rows: int, n_cols: int) -> None:
    """Refuse a sheet whose used range would make an oversized grid (a value far down or far right)."""
    where = f"sheet {_clip(title)}" if title is not None else "the table"
    if n_rows > MAX_SHEET_ROWS:
        raise InputError(f"{name}: {where} uses rows up to {n_rows:,}, more than the {MAX_SHEET_ROWS:,} rows this "
                         f"tool reads; delete the unused rows (or save the schedule on its own) and resubmit")
    if n_rows * n_cols > MAX_GRID_CELLS:
        raise InputError(f"{name}: {where} spans {n_rows:,} rows x {n_cols:,} columns, more than the "
                         f"{MAX_GRID_CELLS:,} cells this tool reads; delete the unused rows and columns (or save "
                         f"the schedule on its own) and resubmit")


def _sheet_grid(ws, name: str, formula_refs: frozenset[tuple[int, int]] = frozenset()) -> Grid:
    """Text grid of one openpyxl worksheet, from row 1 to the last used row.

    ``formula_refs`` are 1-based (row, column) of formulas saved without a value;
    the grid reaches them too, so a row of such formulas is not lost.
    """
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
    formula_refs = frozenset(ref for ref in formula_refs if ref not in texts)
    n_rows = max((r for r, _ in (*texts, *formula_refs)), default=0)
    n_cols = max((c for _, c in (*texts, *formula_refs)), default=0)
    _check_area(name, ws.title, n_rows, n_cols)
    rows = [[""] * n_cols for _ in range(n_rows)]
    for (row, col), text in texts.items():
        rows[row - 1][col - 1] = text
    hidden_rows = frozenset(
        r for r, dim in ws.row_dimensions.items() if dim.hidden and 1 <= r <= n_rows)
    merged = _merged_ranges(ws, n_rows, n_cols)
    return Grid(file=name, kind="xlsx", sheet=ws.title, rows=rows, row_numbers=list(range(1, n_rows + 1)),
                hidden_rows=hidden_rows, merged=merged, hidden=ws.sheet_state != "visible",
                formula_cells=frozenset((r - 1, c - 1) for r, c in formula_refs))


def _merged_ranges(ws, n_rows: int, n_cols: int) -> tuple[tuple[int, int, int, int], ...]:
    """Merged ranges clipped to the grid, as 0-based index tuples."""
    return _clip_ranges(((rng.min_row - 1, rng.min_col - 1, rng.max_row - 1, rng.max_col - 1)
                         for rng in ws.merged_cells.ranges), n_rows, n_cols)


def _clip_ranges(ranges: Iterator[tuple[int, int, int, int]], n_rows: int,
                 n_cols: int) -> tuple[tuple[int, int, int, int], ...]:
    out = set()
    for first_row, first_col, last_row, last_col in ranges:
        last_row, last_col = min(last_row, n_rows - 1), min(last_col, n_cols - 1)
        if first_row <= last_row and first_col <= last_col and (first_row, first_col) != (last_row, last_col):
            out.add((first_row, first_col, last_row, last_col))
    return tuple(sorted(out))


# --------------------------------------------------------------------------- xls, xlsb, ods

def _read_calamine(data: bytes, name: str, sheet: str | None, kind: str) -> list[Grid]:
    """Every sheet (or the one named) of a legacy .xls, an .xlsb or an .ods workbook, via python-calamine.

    These formats carry the saved values of formulas, which are used as they are;
    hidden rows and formulas saved without a value are not reported for them.
    """
    import python_calamine

    what = _FORMAT_NAMES[kind]
    try:
        book = python_calamine.CalamineWorkbook.from_filelike(io.BytesIO(data))
    except python_calamine.PasswordError:
        raise InputError(f"{name} is password-protected; remove the password (save a copy without it) as .xlsx "
                         f"and resubmit") from None
    except Exception as exc:  # noqa: BLE001 - the reader raises its own types for damaged files; none may escape
        raise InputError(f"{name}: the {what} could not be opened ({_short_reason(exc)}); open it in a spreadsheet "
                         f"program, save it as .xlsx or CSV and resubmit") from None
    try:
        sheets = [m for m in book.sheets_metadata if m.typ == python_calamine.SheetTypeEnum.WorkSheet]
        chosen = _select_titles([m.name for m in sheets], name, sheet)
        grids = [_calamine_grid(book, sheets[i], name, kind) for i in chosen]
    except InputError:
        raise
    except Exception as exc:  # noqa: BLE001
        raise InputError(f"{name}: the {what} could not be read ({_short_reason(exc)}); open it in a spreadsheet "
                         f"program, save it as .xlsx or CSV and resubmit") from None
    finally:
        book.close()
    if not any(g.rows for g in grids):
        which = f"sheet '{sheet}'" if sheet is not None else "any sheet"
        raise InputError(f"{name} has no cell values in {which}; check that the schedule was saved in this file")
    return grids


def _calamine_grid(book, meta, name: str, kind: str) -> Grid:
    import python_calamine

    ws = book.get_sheet_by_name(meta.name)
    end = ws.end  # (row, column) of the last used cell, 0-based; None for an empty sheet
    n_rows, n_cols = (end[0] + 1, end[1] + 1) if end else (0, 0)
    _check_area(name, meta.name, n_rows, n_cols)
    values = ws.to_python(skip_empty_area=False) if end else []
    texts = {(r, c): text for r, row in enumerate(values) for c, value in enumerate(row)
             if (text := cell_text(value))}
    n_rows = max((r + 1 for r, _ in texts), default=0)
    n_cols = max((c + 1 for _, c in texts), default=0)
    rows = [[""] * n_cols for _ in range(n_rows)]
    for (r, c), text in texts.items():
        rows[r][c] = text
    merged = _clip_ranges(((a[0], a[1], b[0], b[1]) for a, b in (ws.merged_cell_ranges or ())), n_rows, n_cols)
    return Grid(file=name, kind=kind, sheet=meta.name, rows=rows, row_numbers=list(range(1, n_rows + 1)),
                hidden_rows=frozenset(), merged=merged,
                hidden=meta.visible != python_calamine.SheetVisibleEnum.Visible)


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
    rows = _csv_records(text, delimiter, name)
    while rows and not any(rows[-1]):
        rows.pop()
    if not rows:
        raise InputError(f"{name} is empty (no cell holds a value); export the schedule again and resubmit")
    width = max(map(_filled_width, rows), default=0)
    _check_area(name, None, len(rows), width)
    rows = [r if len(r) == width else (r + [""] * width)[:width] for r in rows]
    return Grid(file=name, kind="csv", sheet=None, rows=rows, row_numbers=list(range(1, len(rows) + 1)),
                hidden_rows=frozenset(), merged=())


def _filled_width(row: list[str]) -> int:
    """Cells up to and including the row's last non-empty one."""
    width = len(row)
    while width and not row[width - 1]:
        width -= 1
    return width


def _csv_records(text: str, delimiter: str, name: str) -> list[list[str]]:
    """Stripped records, refusing a file past the row or cell limits while reading, not after."""
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    rows: list[list[str]] = []
    cells = 0
    try:
        for record in reader:
            rows.append(list(map(str.strip, record)))
            cells += len(record)
            if len(rows) > MAX_SHEET_ROWS:
                _check_area(name, None, len(rows), 1)
            if cells > MAX_GRID_CELLS:
                raise InputError(f"{name} holds more than {MAX_GRID_CELLS:,} cells, more than the limit this tool "
                                 f"reads; save the schedule on its own and resubmit")
    except csv.Error as exc:
        if "field larger than field limit" in str(exc):
            raise InputError(f"{name}: a cell ending near line {reader.line_num:,} is longer than "
                             f"{csv.field_size_limit():,} characters, usually a quote mark that is never closed; "
                             f"check the quoting there or save the file again from a spreadsheet program") from None
        raise InputError(f"{name} could not be read as CSV ({_short_reason(exc)}); check the file's quoting or "
                         f"save it again from a spreadsheet program") from None
    return rows


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

    The most records of one common width wins; then the fewest cells holding another delimiter
    (decimal commas set aside: ``P-1;7,5;9,6`` is ';'); a tie left after both goes to
    csv.Sniffer's guess, then to the order above. Falls back to ','. Each measure is taken only
    when the ones before it tie (on a 64 KB sample, 0.04 s all together).
    """
    shapes = {d: _record_shape(sample, d) for d in _CSV_DELIMITERS}
    usable = [d for d in _CSV_DELIMITERS if shapes[d][0]]
    if not usable:
        return ","
    top = max(shapes[d][:2] for d in usable)
    tied = [d for d in usable if shapes[d][:2] == top]
    if len(tied) > 1:
        dirt = {d: _cells_with_other_delimiters(shapes[d][2], d) for d in tied}
        tied = [d for d in tied if dirt[d] == min(dirt.values())]
    if len(tied) > 1:
        try:
            sniffed = csv.Sniffer().sniff(sample, delimiters=_CSV_DELIMITERS).delimiter
        except csv.Error:
            sniffed = None
        if sniffed in tied:
            return sniffed
    return tied[0]


_DECIMAL_COMMA = re.compile(r"(?<=\d),(?=\d)")


def _record_shape(sample: str, delimiter: str) -> tuple[int, int, list[list[str]]]:
    """(records sharing the commonest width >= 2, that width, the non-empty records) of the sample
    read with ``delimiter``; (0, 0, []) if it cannot be read or no record has two cells."""
    try:
        records = [r for r in csv.reader(io.StringIO(sample, newline=""), delimiter=delimiter) if any(r)]
    except csv.Error:
        return (0, 0, [])
    counts: dict[int, int] = {}
    for record in records:
        if len(record) >= 2:
            counts[len(record)] = counts.get(len(record), 0) + 1
    if not counts:
        return (0, 0, [])
    width, count = max(counts.items(), key=lambda item: (item[1], item[0]))
    return (count, width, records)


def _cells_with_other_delimiters(records: list[list[str]], delimiter: str) -> int:
    others = [d for d in _CSV_DELIMITERS if d != delimiter]
    return sum(1 for record in records for c in record if any(d in _DECIMAL_COMMA.sub("", c) for d in others))
