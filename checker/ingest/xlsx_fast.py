"""Fast .xlsx reading: python-calamine for the values, one byte scan of each sheet for the rest.

openpyxl builds a Python object per stored cell (~4.5 s per 20 000 rows);
python-calamine reads the same values about twenty times faster but does not
report hidden rows, error cells (``#N/A``) or formulas saved without a value.
Those are recovered here by scanning each selected sheet's XML as bytes:
only ``<row ... hidden="1">`` tags, cells typed ``t="e"`` and ``<f>`` elements
are looked at, each found with ``bytes.find`` and read with a small regular
expression anchored at its tag. The result is the same :class:`Grid` the
openpyxl path in ``readers.py`` builds (row numbers as a spreadsheet shows
them, merged ranges with covered cells blank, hidden rows and sheets, cell
text by ``readers.cell_text``); ``tests/test_xlsx_fast.py`` compares both.

The byte scan is exact only for XML as spreadsheet programs write it. A sheet
with comments, CDATA, a DOCTYPE, cells whose reference the scan cannot read,
or namespace prefixes this scan does not expect is handed back to the openpyxl
path (``read_workbook`` returns None), as is any workbook calamine cannot
open, so that path's one-line messages stay the only ones a reviewer sees.

Limits: the openpyxl path refuses more than ``readers.MAX_STORED_CELLS`` cells
because each costs it ~700 B; here a cell costs calamine a few dozen bytes
until its text is made, so ``MAX_STORED_CELLS`` below is larger. The grid
limits of ``readers._check_area`` apply unchanged, checked before calamine
builds any Python value.
"""
from __future__ import annotations

import io
import re
import zipfile
from xml.sax.saxutils import unescape

from checker.ingest import readers
from checker.ingest.readers import Grid, InputError

__all__ = ["MAX_STORED_CELLS", "read_workbook"]

# Stored <c> elements over the selected sheets. A 100 000-motor schedule of 13
# columns stores ~1.3 million; each costs calamine ~50 B and the grid ~60 B of text.
MAX_STORED_CELLS = 4_000_000

_ROOT = re.compile(rb"<(?:([A-Za-z_][\w.-]{0,20}):)?worksheet[\s>]")
# An attribute (whitespace around '=' is legal XML, if never written by spreadsheet programs).
_ATTR = re.compile(rb'([A-Za-z_][\w.:-]*)\s*=\s*(?:"([^"]*)"|\'([^\']*)\')')
# A prefixed cell, row or formula element (a sheet whose root has no prefix must not have them).
_PREFIXED = re.compile(rb"<[A-Za-z_][\w.-]{0,20}:(?:c|row|f)[\s>/]")
_REF = re.compile(rb"([A-Z]{1,3})([0-9]{1,7})")
# Cell references as written in <c r="..."> (a row's r holds digits only, so it does not match).
_CELL_ROW_ATTR = re.compile(rb' r="\$?[A-Z]{1,3}\$?([0-9]{1,7})"')
_CELL_COLUMN_ATTR = re.compile(rb' r="\$?([A-Z]{1,3})\$?[0-9]{1,7}"')
_SPACE = b" \t\r\n"


def read_workbook(data: bytes, name: str, sheet: str | None) -> list[Grid] | None:
    """Every sheet of an .xlsx (or the one named) as text grids, or None to use the openpyxl path.

    Raises InputError for what the openpyxl path would also refuse before
    reading (a missing sheet name, too many cells, an oversized sheet).
    """
    try:
        import python_calamine
    except ImportError:  # an optional speed-up: without it the openpyxl path reads the file
        return None
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            parts = readers._sheet_parts(archive)
            titles = list(parts)
            chosen = [titles[i] for i in readers._select_titles(titles, name, sheet)]
            members = set(archive.namelist())
            if any(parts[t] not in members for t in chosen) or not _plain_support_parts(archive, members):
                return None
            scans = {}
            stored = 0
            for title in chosen:
                scan = _scan_sheet(archive.read(parts[title]))
                if scan is None:
                    return None
                stored += scan.cells
                readers._check_area(name, title, scan.max_row, scan.max_col)
                if stored > MAX_STORED_CELLS:
                    raise InputError(
                        f"{name} stores more than {MAX_STORED_CELLS:,} cells (sheet {readers._clip(title)} alone has "
                        f"{scan.cells:,}), above the limit this tool reads; save the schedule sheet on its own as "
                        f".xlsx or CSV and resubmit")
                scans[title] = scan
        book = python_calamine.CalamineWorkbook.from_filelike(io.BytesIO(data))
        try:
            meta = {m.name: m for m in book.sheets_metadata}
            if any(t not in meta or meta[t].typ != python_calamine.SheetTypeEnum.WorkSheet for t in chosen):
                return None
            grids = [_grid(book.get_sheet_by_name(t), meta[t], scans[t], name) for t in chosen]
        finally:
            book.close()
    except InputError:
        raise
    except Exception:  # noqa: BLE001 - anything odd: the openpyxl path reads it or words the refusal
        return None
    if not any(g.rows for g in grids):
        return None  # the openpyxl path words the 'no cell values' message
    return grids


def _plain_support_parts(archive: zipfile.ZipFile, members: set[str]) -> bool:
    """True when the shared strings and styles hold no DOCTYPE, comment or CDATA (calamine reads them)."""
    for member in ("xl/sharedStrings.xml", "xl/styles.xml"):
        if member in members and b"<!" in archive.read(member):
            return False
    return True


class _Scan:
    """What one sheet's XML says beyond calamine's values; rows and columns 1-based."""

    __slots__ = ("cells", "errors", "formulas_without_value", "hidden_rows", "max_col", "max_row")

    def __init__(self) -> None:
        self.cells = 0
        self.max_row = 0
        self.max_col = 0
        self.hidden_rows: set[int] = set()
        self.errors: dict[tuple[int, int], str] = {}
        self.formulas_without_value: set[tuple[int, int]] = set()


def _scan_sheet(xml: bytes) -> _Scan | None:
    """Hidden rows, error cells, formulas without a value and the cell count; None when unsure."""
    if b"<!" in xml:
        return None  # a comment, CDATA or DOCTYPE could hide or fake what the scan looks for
    root = _ROOT.search(xml, 0, 4096)
    if root is None:
        return None
    prefix = root.group(1) + b":" if root.group(1) else b""
    if not prefix and _PREFIXED.search(xml):
        return None  # prefixed cells under an unprefixed root: not what spreadsheet programs write
    scan = _Scan()
    cell_tag = b"<" + prefix + b"c"
    scan.cells = sum(xml.count(cell_tag + end) for end in (b" ", b">", b"/", b"\t", b"\r", b"\n"))
    # calamine allocates a dense range up to the last cell (one value in XFD1048576 asks it for
    # ~500 GB and aborts the process), so the extent is found here and checked before calamine runs.
    # Two flat findall passes (rows, then column letters) cost a third of one pass of (letters, row) pairs.
    rows = _CELL_ROW_ATTR.findall(xml)
    if len(rows) != scan.cells:
        return None  # a cell without its reference sits after the previous one: not bounded cheaply
    if rows:
        scan.max_row = max(map(int, set(rows)))
        scan.max_col = max(readers.column_index(letters.decode("ascii")) + 1
                           for letters in set(_CELL_COLUMN_ATTR.findall(xml)))
    for row, attrs in _tags_with(xml, b"hidden", b"<" + prefix + b"row"):
        if attrs.get(b"hidden") in (b"1", b"true"):
            if row is None:
                return None
            scan.hidden_rows.add(row)
    for quote in (b'"e"', b"'e'"):
        for start, attrs in _tags_at(xml, quote, cell_tag):
            if attrs.get(b"t") != b"e":
                continue
            ref = _cell_ref(attrs)
            if ref is None:
                return None
            text = _cell_value_text(xml, start, prefix)
            if text:
                scan.errors[ref] = text
    if not _formula_cells(xml, prefix, cell_tag, scan):
        return None
    return scan


def _tag_attrs(xml: bytes, start: int) -> tuple[dict[bytes, bytes], int] | None:
    """Attributes of the start tag beginning at ``start`` and the index just past it."""
    end = xml.find(b">", start)
    if end < 0:
        return None
    attrs = {}
    for match in _ATTR.finditer(xml, start, end):
        attrs[match.group(1)] = match.group(2) if match.group(2) is not None else match.group(3)
    return attrs, end + 1


def _tags_at(xml: bytes, needle: bytes, tag: bytes):
    """(tag start, attributes) of every ``tag`` start tag that contains ``needle``."""
    pos = xml.find(needle)
    while pos >= 0:
        start = xml.rfind(b"<", 0, pos)
        if start >= 0 and xml.startswith(tag, start) and xml[start + len(tag):start + len(tag) + 1] in (
                b" ", b"\t", b"\r", b"\n"):
            parsed = _tag_attrs(xml, start)
            if parsed is not None and parsed[1] > pos:
                yield start, parsed[0]
        pos = xml.find(needle, pos + 1)


def _tags_with(xml: bytes, needle: bytes, tag: bytes):
    """(row number or None, attributes) of every ``tag`` start tag containing ``needle``."""
    for _, attrs in _tags_at(xml, needle, tag):
        given = attrs.get(b"r")
        yield (int(given) if given and given.isdigit() else None), attrs


def _cell_ref(attrs: dict[bytes, bytes]) -> tuple[int, int] | None:
    match = _REF.fullmatch(attrs.get(b"r", b"").replace(b"$", b""))
    if match is None:
        return None
    return int(match.group(2)), readers.column_index(match.group(1).decode("ascii")) + 1


def _cell_end(xml: bytes, start: int, prefix: bytes) -> int:
    """Index just past the cell element starting at ``start`` (self-closing or with children)."""
    tag_end = xml.find(b">", start)
    if xml[tag_end - 1:tag_end] == b"/":
        return tag_end + 1
    close = xml.find(b"</" + prefix + b"c>", tag_end)
    return len(xml) if close < 0 else close + len(prefix) + 4


def _child(xml: bytes, start: int, end: int, prefix: bytes, name: bytes) -> tuple[bool, bytes]:
    """(present, text) of the first child element ``name`` inside xml[start:end]."""
    open_tag = b"<" + prefix + name
    pos = xml.find(open_tag, start, end)
    while pos >= 0:
        after = xml[pos + len(open_tag):pos + len(open_tag) + 1]
        if after in (b">", b"/") or (after and after in _SPACE):
            tag_end = xml.find(b">", pos, end)
            if tag_end < 0:
                return True, b""
            if xml[tag_end - 1:tag_end] == b"/":
                return True, b""
            close = xml.find(b"</" + prefix + name + b">", tag_end, end)
            return True, xml[tag_end + 1:close if close >= 0 else end]
        pos = xml.find(open_tag, pos + 1, end)
    return False, b""


def _cell_value_text(xml: bytes, start: int, prefix: bytes) -> str:
    present, text = _child(xml, start, _cell_end(xml, start, prefix), prefix, b"v")
    return unescape(text.decode("utf-8")).strip() if present else ""


def _formula_cells(xml: bytes, prefix: bytes, cell_tag: bytes, scan: _Scan) -> bool:
    """Record formulas saved without a value, as ``readers._formulas_without_value`` defines them.

    A formula cell whose ``<v>`` is missing, or empty while the cell is not a
    string type, and that has no inline string, counts. False when unsure.
    """
    f_tag = b"<" + prefix + b"f"
    pos = xml.find(f_tag)
    while pos >= 0:
        after = xml[pos + len(f_tag):pos + len(f_tag) + 1]
        if after in (b">", b"/") or (after and after in _SPACE):
            start = max(xml.rfind(cell_tag + b" ", 0, pos), xml.rfind(cell_tag + b">", 0, pos))
            if start < 0:
                return False
            parsed = _tag_attrs(xml, start)
            if parsed is None:
                return False
            attrs, body = parsed
            end = _cell_end(xml, start, prefix)
            if end < pos:
                return False  # an <f> outside any cell
            has_v, v_text = _child(xml, body, end, prefix, b"v")
            has_is, _ = _child(xml, body, end, prefix, b"is")
            empty = not has_v or (not v_text and attrs.get(b"t") not in (b"str", b"inlineStr"))
            if empty and not has_is:
                ref = _cell_ref(attrs)
                if ref is None:
                    return False
                scan.formulas_without_value.add(ref)
            pos = xml.find(f_tag, end)
            continue
        pos = xml.find(f_tag, pos + 1)
    return True


# --------------------------------------------------------------------------- values to text

def _number_text(value: float) -> str:
    """Like ``readers.cell_text`` for a number as openpyxl returns it: integers (stored without a
    decimal point, which calamine hands over as floats) print whole below 1e15."""
    if value.is_integer() and abs(value) < 1e15:
        return str(int(value))
    return readers.number_text(value)


def _value_text(value: object, numbers: dict[float, str]) -> str:
    """Text of a non-string value; number texts are kept in ``numbers`` (schedules repeat them)."""
    if value.__class__ is float:
        text = numbers.get(value)
        if text is None:
            text = numbers[value] = _number_text(value)
        return text
    return readers.cell_text(value)


def _last_used(row: list[str]) -> int:
    width = len(row)
    while width and not row[width - 1]:
        width -= 1
    return width


def _grid(ws, meta, scan: _Scan, name: str) -> Grid:
    import python_calamine

    end = ws.end  # (row, column) of the last stored value, 0-based; None for an empty sheet
    n_rows, n_cols = (end[0] + 1, end[1] + 1) if end else (0, 0)
    extra = [*scan.errors, *scan.formulas_without_value]
    n_rows = max([n_rows, *(r for r, _ in extra)])
    n_cols = max([n_cols, *(c for _, c in extra)])
    readers._check_area(name, meta.name, n_rows, n_cols)
    numbers: dict[float, str] = {}
    rows = [[v.strip() if v.__class__ is str else _value_text(v, numbers) for v in row]
            for row in (ws.to_python(skip_empty_area=False) if end else ())]
    for (r, c), text in scan.errors.items():
        while len(rows) < r:
            rows.append([])
        row = rows[r - 1]
        row.extend([""] * (c - len(row)))
        row[c - 1] = text
    merged = tuple((a[0], a[1], b[0], b[1]) for a, b in (ws.merged_cell_ranges or ()))
    _blank_covered(rows, merged)
    formula_refs = {ref for ref in scan.formulas_without_value
                    if not (ref[0] <= len(rows) and ref[1] <= len(rows[ref[0] - 1]) and rows[ref[0] - 1][ref[1] - 1])}
    widths = [_last_used(row) for row in rows]
    used_rows = max((i + 1 for i, width in enumerate(widths) if width), default=0)
    used_cols = max(widths, default=0)
    used_rows = max([used_rows, *(r for r, _ in formula_refs)])
    used_cols = max([used_cols, *(c for _, c in formula_refs)])
    grid_rows = []
    for i in range(used_rows):
        row = rows[i] if i < len(rows) else []
        grid_rows.append(row[:used_cols] if len(row) >= used_cols else row + [""] * (used_cols - len(row)))
    return Grid(file=name, kind="xlsx", sheet=meta.name, rows=grid_rows, row_numbers=list(range(1, used_rows + 1)),
                hidden_rows=frozenset(r for r in scan.hidden_rows if 1 <= r <= used_rows),
                merged=readers._clip_ranges(iter(merged), used_rows, used_cols),
                hidden=meta.visible != python_calamine.SheetVisibleEnum.Visible,
                formula_cells=frozenset((r - 1, c - 1) for r, c in formula_refs))


def _blank_covered(rows: list[list[str]], merged) -> None:
    """Blank the cells a merged range covers (all but its top-left), as openpyxl does on load."""
    for r0, c0, r1, c1 in merged:
        for r in range(r0, min(r1, len(rows) - 1) + 1):
            row = rows[r]
            for c in range(c0, min(c1, len(row) - 1) + 1):
                if (r, c) != (r0, c0):
                    row[c] = ""
