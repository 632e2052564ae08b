"""Read the tables of PDF drawing sheets into text grids (pdfplumber).

A permit set's motor schedule is a table on an electrical sheet, next to a
title block, general notes and other schedules. This reader turns every
candidate table into a :class:`~checker.ingest.readers.Grid`; the layout step
then finds the motor schedule header as it does for a spreadsheet, and
tables whose header names no motor fields are listed as passed over.

How a file is read
------------------
1. **Cheap passes.** pdfium (installed with pdfplumber) extracts every
   page's text in a few milliseconds; a page that does not name two motor
   columns (hp, kW, FLA, volts, MCA, MOCP) is not opened with pdfplumber at
   all. On the remaining pages the characters are grouped into lines, and a
   page is parsed in depth when three neighbouring lines name a tag column
   and two motor columns (the synonyms of ``headers.py``). The page after a
   schedule is parsed too (the table may go on). When nothing is found, the
   first ``FALLBACK_PAGES`` pages are parsed in depth anyway, so a schedule
   the cheap tests missed is still read.
2. **Ruled tables.** pdfplumber finds cells from the drawn lines. Cells
   larger than ``GIANT_CELL_SHARE`` of the page (the drawing border, a
   viewport) are dropped first, so a title block that shares the border's
   lines is still a table of its own. Each character goes to the smallest
   cell holding its centre; a cell's lines of text are joined with a space
   (a multi-line cell is one value). Where a band between two horizontal
   rules holds several rows (schedules often rule only the columns), the
   band is split into rows at lines that start a new row (see
   ``_merge_lines``).
3. **Unruled tables.** In the text outside ruled tables, a line of three or
   more header-like phrases starts a table. Its columns come from the
   header words' positions (a header wrapped over two lines is stacked into
   one column; a phrase spanning several columns is a merged group
   heading), and each boundary between two columns is put in the widest gap
   that no data word crosses.
4. **Continuation.** A table on the next page that has no header of its own
   and whose columns line up with the schedule's is stitched to it (one
   grid, each row keeping its page). A continuation page that repeats the
   header is read as a table of its own.

Text is built from the characters, not taken from pdfplumber's word
extraction: a superscript (a character at most ``SUPERSCRIPT_SIZE`` of the
line's size whose bottom sits at least ``SUPERSCRIPT_RISE`` ems above the
line's) becomes a Unicode superscript, so ``60`` with a footnote ``2`` reads
``60²`` and the value parser reports the footnote instead of reading 602.
Vertical text (header cells written bottom to top, or top to bottom) is
read along its direction. Pages stored with ``/Rotate`` are read as a viewer
shows them (pdfplumber applies the rotation); a schedule drawn sideways on a
page that is not stored rotated is read turned a quarter (``_Turn``), and
its tables are then numbered in that turned frame.

Provenance
----------
``row_pages`` is the page number as a PDF viewer shows it (1 = first page of
the file). ``row_tables`` is the table's index on that page: tables are
numbered 1, 2, ... top to bottom, then left to right by their top-left
corner. ``row_numbers`` is the row's 1-based index within that table on that
page (header rows count; a cell wrapped over several lines is one row).
Columns are numbered 1, 2, ... from the left (``Grid.column_label``).

Failures are one-line :class:`InputError`: encrypted, damaged, no text layer
(OCR needed), no motor schedule (naming the tables seen).
"""
from __future__ import annotations

import bisect
import io
import itertools
import logging
import statistics
import sys
import zlib
from collections.abc import Callable
from dataclasses import dataclass, field

from checker.ingest import headers as H
from checker.ingest.layout import (
    MIN_SCORE,
    STRONG_SCORE,
    is_value_like,
    locate_tables,
    match_header,
    normalise_header,
)
from checker.ingest.readers import Grid, InputError

__all__ = ["read_pdf_grids"]

# --- Geometry thresholds (all "common practice" judgement, tuned on the fixtures) --------------
GIANT_CELL_SHARE = 0.12      # a ruled "cell" over this share of the page area is a border or viewport
SNAP_PT = 2.5                # rule positions closer than this are one rule
WORD_GAP_EM = 0.18           # a gap wider than this (in ems of the text size) separates two words
PHRASE_GAP_EM = 0.8          # ... and wider than this two phrases (cells of an unruled table)
SUPERSCRIPT_SIZE = 0.9       # a superscript is at most this share of its line's text size ...
SUPERSCRIPT_RISE = 0.12      # ... and its bottom sits at least this many ems above the line's bottom
HEADER_LINE_GAP_EM = 0.8     # lines of one header block are at most this far apart
WRAP_GAP_EM = 0.6            # a wrapped continuation line is at most this far below the line above
BODY_GAP_EM = 3.0            # an unruled table ends at a vertical gap wider than this ...
BODY_GAP_FACTOR = 2.5        # ... or this many times its usual gap between lines
DUPLICATE_PT = 0.8           # the same character drawn again this close is one character (fake bold)
SIDEWAYS_SHARE = 0.6         # a page whose characters mostly read up (or down) is read turned
ALIGN_PT = 4.0               # column rules of a continued table line up within this distance
CID_SHARE = 0.5              # pages whose characters are mostly '(cid:N)' have no usable text
PROGRESS_MIN_PAGES = 10      # progress on stderr (a terminal only) for files with at least this many pages
FALLBACK_PAGES = 20          # pages parsed in depth to list the tables seen when no page looks like a schedule
# Guard against pages that would stall pdfminer (it lays out ~5,000 drawn objects a second) or unpack a
# compressed-stream bomb: a page's content streams may unpack to at most this much (common practice; a
# CAD schedule sheet with a plan view on it stays under it). Added for tests/test_corpus.py's many-objects case.
MAX_PAGE_CONTENT_BYTES = 8 * 2**20

_SUPERSCRIPT_DIGITS = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
_SUPERSCRIPT_KEEP = "*†‡§"


# --------------------------------------------------------------------------- characters, words, lines

@dataclass(slots=True)
class _Ch:
    text: str
    x0: float
    x1: float
    top: float
    bottom: float
    size: float
    upright: bool
    upward: bool  # non-upright text reading bottom to top

    @property
    def cx(self) -> float:
        return (self.x0 + self.x1) / 2

    @property
    def cy(self) -> float:
        return (self.top + self.bottom) / 2


@dataclass(slots=True)
class _Word:
    text: str
    x0: float
    x1: float
    top: float
    bottom: float
    size: float


@dataclass(slots=True)
class _Line:
    """One line of text: words left to right (for vertical text: along the reading direction)."""

    words: list[_Word]
    top: float
    bottom: float
    size: float

    @property
    def x0(self) -> float:
        return min(w.x0 for w in self.words)

    @property
    def x1(self) -> float:
        return max(w.x1 for w in self.words)

    @property
    def text(self) -> str:
        return " ".join(w.text for w in self.words)


def _chars(page) -> list[_Ch]:
    """The page's visible characters; a character drawn again within ``DUPLICATE_PT`` of itself
    (CAD programs fake bold lettering that way) is kept once, so 'TAG' does not read 'TTAAGG'."""
    out = []
    kept: dict[tuple[str, int], list[tuple[float, float]]] = {}
    for c in page.chars:
        text = c.get("text") or ""
        if not text.strip():
            continue
        upright = bool(c.get("upright", True))
        x0, x1, top, bottom = float(c["x0"]), float(c["x1"]), float(c["top"]), float(c["bottom"])
        # a duplicate overlaps its twin by more than half its width ('ll' in small type does not)
        near = min(DUPLICATE_PT, 0.5 * (x1 - x0))
        row = int(top // (2 * DUPLICATE_PT))
        if any(abs(x0 - kx) <= near and abs(top - kt) <= DUPLICATE_PT
               for r in (row - 1, row, row + 1) for kx, kt in kept.get((text, r), ())):
            continue
        kept.setdefault((text, row), []).append((x0, top))
        # pdfplumber's 'size' is the glyph box height; for rotated text the font size is its width
        size = (bottom - top) if upright else (x1 - x0)
        matrix = c.get("matrix") or (1, 0, 0, 1, 0, 0)
        out.append(_Ch(text, x0, x1, top, bottom, max(size, 0.1), upright, matrix[1] > 0))
    return out


@dataclass(frozen=True)
class _Turn:
    """A quarter turn of the page that makes sideways text upright.

    Schedules are sometimes drawn sideways on a sheet that is not stored
    rotated (no ``/Rotate``): most of the page's text then reads bottom to
    top (``kind='up'``) or top to bottom (``'down'``). Characters, cells and
    rules are all turned into the frame in which that text reads left to
    right; ``kind=None`` leaves the page as it is.
    """

    kind: str | None
    width: float
    height: float

    def box(self, x0: float, top: float, x1: float, bottom: float) -> tuple[float, float, float, float]:
        if self.kind == "up":
            return self.height - bottom, x0, self.height - top, x1
        if self.kind == "down":
            return top, self.width - x1, bottom, self.width - x0
        return x0, top, x1, bottom

    def char(self, ch: _Ch) -> _Ch:
        if self.kind is None:
            return ch
        x0, top, x1, bottom = self.box(ch.x0, ch.top, ch.x1, ch.bottom)
        # the turned text becomes upright; upright text becomes vertical (reading down after an
        # 'up' turn, up after a 'down' turn)
        reads_with = (not ch.upright) and ch.upward == (self.kind == "up")
        upward = self.kind != "up"
        return _Ch(ch.text, x0, x1, top, bottom, ch.size, reads_with, upward if not reads_with else False)


def _turn_for(chars: list[_Ch], width: float, height: float) -> _Turn:
    """The quarter turn under which most of the page's characters read upright (usually none)."""
    up = sum(1 for c in chars if not c.upright and c.upward)
    down = sum(1 for c in chars if not c.upright and not c.upward)
    if up > SIDEWAYS_SHARE * len(chars):
        return _Turn("up", width, height)
    if down > SIDEWAYS_SHARE * len(chars):
        return _Turn("down", width, height)
    return _Turn(None, width, height)


def _build_lines(chars: list[_Ch]) -> list[_Line]:
    """Upright characters grouped into lines, top to bottom.

    Larger characters found the lines; a smaller one joins the line whose
    band holds its centre, so a raised footnote digit stays on its number's
    line (and is then marked as a superscript).
    """
    bands: list[list[float]] = []   # [top, bottom, size] per line, kept sorted by top
    members: list[list[_Ch]] = []
    tops: list[float] = []
    for ch in sorted(chars, key=lambda c: (-round(c.size, 1), c.top, c.x0)):
        cy = ch.cy
        i = bisect.bisect_right(tops, cy)
        hit = None
        for j in (i - 1, i - 2, i):
            if 0 <= j < len(bands) and bands[j][0] - 0.05 * bands[j][2] <= cy <= bands[j][1] + 0.05 * bands[j][2]:
                hit = j
                break
        if hit is None:
            hit = bisect.bisect_right(tops, ch.top)
            bands.insert(hit, [ch.top, ch.bottom, ch.size])
            members.insert(hit, [])
            tops.insert(hit, ch.top)
        members[hit].append(ch)
    return [_line_from_chars(group, band[2]) for band, group in zip(bands, members)]


def _line_from_chars(chars: list[_Ch], size: float) -> _Line:
    chars = sorted(chars, key=lambda c: c.x0)
    main = [c for c in chars if c.size >= SUPERSCRIPT_SIZE * size] or chars
    bottom = statistics.median(c.bottom for c in main)
    words: list[_Word] = []
    prev: _Ch | None = None
    for ch in chars:
        sup = ch.size < SUPERSCRIPT_SIZE * size and ch.bottom < bottom - SUPERSCRIPT_RISE * size
        text = _superscript(ch.text) if sup else ch.text
        gap = ch.x0 - prev.x1 if prev is not None else 0.0
        joins = prev is not None and gap <= WORD_GAP_EM * size
        if sup and joins and not _superscript_ok(ch.text):
            joins = False  # a raised letter next to a value: keep it apart so the parser questions it
        if joins:
            w = words[-1]
            w.text += text
            w.x1 = max(w.x1, ch.x1)
            w.top, w.bottom = min(w.top, ch.top), max(w.bottom, ch.bottom)
        else:
            words.append(_Word(text, ch.x0, ch.x1, ch.top, ch.bottom, size))
        prev = ch
    return _Line(words, min(c.top for c in main), max(c.bottom for c in main), size)


def _superscript(text: str) -> str:
    return text.translate(_SUPERSCRIPT_DIGITS)


def _superscript_ok(text: str) -> bool:
    return text.isdigit() or text in _SUPERSCRIPT_KEEP


def _vertical_lines(chars: list[_Ch]) -> list[_Line]:
    """Rotated characters grouped into vertical lines, read along their direction.

    Lines of text reading upward follow each other left to right (downward:
    right to left). Each returned line's words hold the text in reading order.
    """
    columns: list[list[_Ch]] = []
    centre_sum = 0.0
    for ch in sorted(chars, key=lambda c: (c.upward, c.cx)):
        if columns and columns[-1][0].upward == ch.upward \
                and abs(ch.cx - centre_sum / len(columns[-1])) <= 0.5 * ch.size:
            columns[-1].append(ch)
            centre_sum += ch.cx
        else:
            columns.append([ch])
            centre_sum = ch.cx
    lines = []
    for group in columns:
        upward = group[0].upward
        size = statistics.median(c.size for c in group)
        ordered = sorted(group, key=lambda c: -c.bottom if upward else c.top)
        text, prev = "", None
        for ch in ordered:
            if prev is not None:
                gap = (prev.top - ch.bottom) if upward else (ch.top - prev.bottom)
                if gap > WORD_GAP_EM * size:
                    text += " "
            text += ch.text
            prev = ch
        x0, x1 = min(c.x0 for c in group), max(c.x1 for c in group)
        top, bottom = min(c.top for c in group), max(c.bottom for c in group)
        lines.append(_Line([_Word(text, x0, x1, top, bottom, size)], top, bottom, size))
    downward = [ln for ln, g in zip(lines, columns) if not g[0].upward]
    upward_lines = sorted((ln for ln, g in zip(lines, columns) if g[0].upward), key=lambda ln: ln.x0)
    return upward_lines + sorted(downward, key=lambda ln: -ln.x0)


def _join_lines(texts: list[str]) -> str:
    """Lines of one cell as one value: a space between lines, none after a hyphen ending a word
    ('FILTER-TO-' + 'WASTE'); 'CRANE -' + 'HOIST' keeps its space."""
    out = ""
    for text in texts:
        text = text.strip()
        if not text:
            continue
        if out and not (out.endswith("-") and len(out) > 1 and out[-2].isalnum()):
            out += " "
        out += text
    return out


def _region_text(chars: list[_Ch]) -> str:
    upright = [c for c in chars if c.upright]
    rotated = [c for c in chars if not c.upright]
    parts = [ln.text for ln in _build_lines(upright)] if upright else []
    if rotated:
        parts += [ln.text for ln in _vertical_lines(rotated)]
    return _join_lines(parts)


# --------------------------------------------------------------------------- phrases and header words

@dataclass(slots=True)
class _Phrase:
    words: list[_Word]

    @property
    def x0(self) -> float:
        return self.words[0].x0

    @property
    def x1(self) -> float:
        return self.words[-1].x1

    @property
    def text(self) -> str:
        return " ".join(w.text for w in self.words)


def _phrases(line: _Line, lo: float = float("-inf"), hi: float = float("inf")) -> list[_Phrase]:
    """The line's words grouped into phrases (cells of an unruled table); only phrases starting in [lo, hi]."""
    out: list[_Phrase] = []
    for w in line.words:
        if out and w.x0 - out[-1].x1 <= PHRASE_GAP_EM * line.size:
            out[-1].words.append(w)
        else:
            out.append(_Phrase([w]))
    return [p for p in out if lo <= p.x0 <= hi]


def _headerish(text: str) -> bool:
    """A header word or phrase: maps to a field, or is generic header vocabulary (SIZE, TYPE)."""
    matches = match_header(text)
    if matches and matches[0][1] >= MIN_SCORE:
        return True
    tokens = normalise_header(text).split()
    return bool(tokens) and all(t in H.GENERIC_HEADER_WORDS or t in H.UNIT_WORDS for t in tokens)


def _strong_fields(texts: list[str]) -> set[str]:
    fields = set()
    for text in texts:
        for field_name, score in match_header(text):
            if score >= STRONG_SCORE:
                fields.add(field_name)
    return fields


def _line_fields(line: _Line) -> set[str]:
    """Fields named strongly by a line's phrases, words and word pairs (the cheap test)."""
    words = [w.text for w in line.words if not is_value_like(w.text)]
    texts = words + [f"{a} {b}" for a, b in itertools.pairwise(words)] + [p.text for p in _phrases(line)]
    return _strong_fields(texts)


def _is_motor_fields(fields: set[str]) -> bool:
    return bool(fields & H.TAG_FIELDS) and len(fields & H.MOTOR_FIELDS) >= H.MIN_MOTOR_FIELDS


def _looks_like_schedule(lines: list[_Line], vertical: list[_Line]) -> bool:
    """Cheap test: do up to three neighbouring lines name a tag column and two motor columns?"""
    extra = _strong_fields([ln.text for ln in vertical])
    per_line = [_line_fields(ln) for ln in lines]
    for i in range(len(lines)):
        fields = set(extra)
        for j in range(i, min(i + 3, len(lines))):
            if j > i and lines[j].top - lines[j - 1].bottom > 4 * lines[j].size:
                break
            fields |= per_line[j]
        if _is_motor_fields(fields):
            return True
    return False


# --------------------------------------------------------------------------- page tables

@dataclass
class _PageTable:
    """One table found on one page (before continued tables are stitched together)."""

    page: int
    kind: str                       # 'ruled' or 'unruled'
    bbox: tuple[float, float, float, float]
    bounds: list[float]             # column boundaries, left to right (len = columns + 1)
    rows: list[list[str]]
    merged: list[tuple[int, int, int, int]] = field(default_factory=list)
    index: int = 0                  # 1-based position on the page (set once all tables are known)

    @property
    def width(self) -> int:
        return len(self.bounds) - 1

    def grid(self, name: str) -> Grid:
        return _chain_grid([self], name)

    def first_text(self) -> str:
        for row in self.rows:
            for text in row:
                if text:
                    return text if len(text) <= 30 else text[:29] + "…"
        return ""


def _cluster(values: list[float], tol: float = SNAP_PT) -> list[float]:
    out: list[list[float]] = []
    for v in sorted(values):
        if out and v - out[-1][-1] <= tol:
            out[-1].append(v)
        else:
            out.append([v])
    return [sum(g) / len(g) for g in out]


def _nearest(values: list[float], v: float) -> int:
    i = bisect.bisect_left(values, v)
    if i == 0:
        return 0
    if i == len(values):
        return len(values) - 1
    return i if values[i] - v < v - values[i - 1] else i - 1


@dataclass
class _Ruled:
    cells: list[tuple[int, int, int, int]]          # (r0, c0, r1, c1), end exclusive
    xs: list[float]
    ys: list[float]
    at: dict[tuple[int, int], int]                   # (band, column) -> cell id
    chars: dict[int, list[_Ch]] = field(default_factory=dict)

    @property
    def bbox(self) -> tuple[float, float, float, float]:
        return self.xs[0], self.ys[0], self.xs[-1], self.ys[-1]

    @property
    def area(self) -> float:
        x0, t, x1, b = self.bbox
        return (x1 - x0) * (b - t)


def _ruled_structures(page, turn: _Turn) -> list[_Ruled]:
    from pdfplumber.table import TableFinder, cells_to_tables

    finder = TableFinder(page, {"vertical_strategy": "lines", "horizontal_strategy": "lines",
                                "snap_tolerance": SNAP_PT, "join_tolerance": SNAP_PT,
                                "intersection_tolerance": SNAP_PT})
    page_area = float(page.width) * float(page.height)
    cells = [turn.box(*c) for c in finder.cells if (c[2] - c[0]) * (c[3] - c[1]) < GIANT_CELL_SHARE * page_area]
    out = []
    for group in cells_to_tables(cells):
        xs = _cluster([v for c in group for v in (c[0], c[2])])
        ys = _cluster([v for c in group for v in (c[1], c[3])])
        if len(xs) < 3:
            continue  # one column: a box (a notes panel), not a table; its text stays free
        spans, at = [], {}
        for c in group:
            r0, r1 = _nearest(ys, c[1]), _nearest(ys, c[3])
            c0, c1 = _nearest(xs, c[0]), _nearest(xs, c[2])
            if r1 <= r0 or c1 <= c0:
                continue
            cid = len(spans)
            spans.append((r0, c0, r1, c1))
            for r in range(r0, r1):
                for col in range(c0, c1):
                    at.setdefault((r, col), cid)
        out.append(_Ruled(spans, xs, ys, at))
    return out


def _assign_chars(chars: list[_Ch], structures: list[_Ruled]) -> list[_Ch]:
    """Put each character into the smallest ruled cell holding its centre; return the others."""
    free = []
    ordered = sorted(structures, key=lambda s: s.area)
    for ch in chars:
        cx, cy = ch.cx, ch.cy
        for s in ordered:
            x0, t, x1, b = s.bbox
            if not (x0 <= cx <= x1 and t <= cy <= b):
                continue
            col = bisect.bisect_right(s.xs, cx) - 1
            band = bisect.bisect_right(s.ys, cy) - 1
            cid = s.at.get((band, col))
            if cid is not None:
                s.chars.setdefault(cid, []).append(ch)
                break
        else:
            free.append(ch)
    return free


@dataclass(slots=True)
class _RowLine:
    """One line of a table body: its text per column."""

    top: float
    bottom: float
    size: float
    cells: dict[int, list[str]]


def _merge_lines(lines: list[_RowLine], first_column_wraps: bool = False) -> list[dict[int, list[str]]]:
    """Table body lines -> rows; a wrapped line is joined to the row above.

    A line continues the row above when it writes only in columns that row
    already uses (and in at most half of them, or two) and sits at most
    ``WRAP_GAP_EM`` below the line above: a wrapped description or conductor
    spec. In unruled tables a line with text in the first column always
    starts a row (a section title, or a tag); between column rules
    (``first_column_wraps``) a tag may wrap too ('MOV-' over '401'). A motor
    row is never folded into its neighbour: it writes in too many columns.
    """
    rows: list[dict[int, list[str]]] = []
    prev: _RowLine | None = None
    for ln in lines:
        if rows and prev is not None and _continues(ln, prev, rows[-1], first_column_wraps):
            for col, parts in ln.cells.items():
                rows[-1].setdefault(col, []).extend(parts)
        else:
            rows.append({col: list(parts) for col, parts in ln.cells.items()})
        prev = ln
    return rows


def _continues(ln: _RowLine, prev: _RowLine, row: dict[int, list[str]], first_column_wraps: bool) -> bool:
    cols = set(ln.cells)
    if (0 in cols and not first_column_wraps) or not cols <= set(row):
        return False
    if len(cols) > max(2, len(row) // 2):
        return False
    return ln.top - prev.bottom <= WRAP_GAP_EM * max(ln.size, prev.size)


def _band_lines(cell_lines: dict[int, list[_Line]]) -> list[_RowLine]:
    """Lines of several cells of one band, aligned across the columns by their position."""
    items = sorted(((ln, col) for col, lines in cell_lines.items() for ln in lines), key=lambda it: it[0].top)
    out: list[_RowLine] = []
    for ln, col in items:
        if out and abs((ln.top + ln.bottom) / 2 - (out[-1].top + out[-1].bottom) / 2) <= 0.5 * ln.size:
            row = out[-1]
            row.top, row.bottom = min(row.top, ln.top), max(row.bottom, ln.bottom)
        else:
            row = _RowLine(ln.top, ln.bottom, ln.size, {})
            out.append(row)
        row.cells.setdefault(col, []).append(ln.text)
    return out


def _ruled_table(s: _Ruled, page_no: int) -> _PageTable:
    """Grid rows of one ruled structure; bands holding several rows are split at row starts.

    A cell spanning columns or bands is a merged range (its text in its top-left cell); cells of a
    band that was split into rows are not merged, each line went to its own row.
    """
    n_cols = len(s.xs) - 1
    by_band: dict[int, list[int]] = {}
    for cid, (r0, _, _, _) in enumerate(s.cells):
        by_band.setdefault(r0, []).append(cid)
    rows: list[list[str]] = []
    band_rows: list[tuple[int, int]] = []       # grid rows [first, last] of each band
    split: set[int] = set()
    for band in range(len(s.ys) - 1):
        first = len(rows)
        single = [cid for cid in by_band.get(band, ()) if s.cells[cid][2] == band + 1]
        lines = {cid: _cell_lines(s.chars.get(cid, [])) for cid in single}
        band_lines = _band_lines({s.cells[cid][1]: lines[cid] for cid in single if lines[cid]})
        if _several_rows(band_lines):
            split.add(band)
            for row in _merge_lines(band_lines, first_column_wraps=True):
                cells = [""] * n_cols
                for col, parts in row.items():
                    cells[col] = _join_lines(parts)
                rows.append(cells)
        else:
            cells = [""] * n_cols
            for cid in single:
                cells[s.cells[cid][1]] = _join_lines([ln.text for ln in lines[cid]])
            rows.append(cells)
        if len(rows) == first:
            rows.append([""] * n_cols)
        band_rows.append((first, len(rows) - 1))
    merged = []
    for cid, (r0, c0, r1, c1) in enumerate(s.cells):
        top, bottom = band_rows[r0][0], band_rows[r1 - 1][1]
        if r1 > r0 + 1:
            rows[top][c0] = _region_text(s.chars.get(cid, []))
        elif r0 in split:
            continue
        if (bottom, c1 - 1) != (top, c0):
            merged.append((top, c0, bottom, c1 - 1))
    return _PageTable(page_no, "ruled", s.bbox, list(s.xs), rows, merged)


def _cell_lines(chars: list[_Ch]) -> list[_Line]:
    upright = [c for c in chars if c.upright]
    lines = _build_lines(upright) if upright else []
    rotated = [c for c in chars if not c.upright]
    if rotated:
        lines += _vertical_lines(rotated)
    return lines


def _several_rows(band_lines: list[_RowLine]) -> bool:
    """A band between two rules holds several rows (a schedule ruled only by columns) when two of
    its lines look like rows: text in the first column and in at least half as many columns as
    its fullest line (and three). Wrapped cells of one row ('MOV-' / '401', 'ACTUATOR') do not."""
    widest = max((len(ln.cells) for ln in band_lines), default=0)
    rowlike = [ln for ln in band_lines if 0 in ln.cells and len(ln.cells) >= max(3, widest / 2)]
    return len(rowlike) >= 2


# --------------------------------------------------------------------------- unruled tables

@dataclass
class _Col:
    x0: float
    x1: float


def _header_candidate(line: _Line) -> bool:
    phrases = _phrases(line)
    if len(phrases) < 3 or any(is_value_like(p.text) for p in phrases):
        return False
    return sum(_headerish(p.text) for p in phrases) >= 3


def _rule_between(rules: list[tuple[float, float, float]], upper: _Line, lower: _Line) -> bool:
    lo, hi = upper.bottom, lower.top
    x0, x1 = max(upper.x0, lower.x0), min(upper.x1, lower.x1)
    return any(lo - 1 <= y <= hi + 1 and rx0 <= x1 and rx1 >= x0 for y, rx0, rx1 in rules)


def _header_block(lines: list[_Line], i: int, rules) -> tuple[int, int]:
    first = last = i
    while first > 0 and i - first < 3:
        up, below = lines[first - 1], lines[first]
        if below.top - up.bottom > HEADER_LINE_GAP_EM * below.size or _rule_between(rules, up, below):
            break
        if any(is_value_like(p.text) for p in _phrases(up)):
            break
        first -= 1
    while last + 1 < len(lines) and last - first < 3:
        above, down = lines[last], lines[last + 1]
        if down.top - above.bottom > HEADER_LINE_GAP_EM * down.size or _rule_between(rules, above, down):
            break
        phrases = _phrases(down)
        if any(is_value_like(p.text) for p in phrases) or sum(_headerish(p.text) for p in phrases) * 2 < len(phrases):
            break
        last += 1
    return first, last


def _overlap(a0: float, a1: float, b0: float, b1: float) -> float:
    return min(a1, b1) - max(a0, b0)


def _header_columns(block: list[_Line]) -> tuple[list[_Col], list[list[tuple[_Phrase, int, int]]]]:
    """Columns from header phrases, bottom line first; each line's phrases with their column span.

    A phrase over no column yet makes a new column; over one column it is
    part of that column's (wrapped) header; over several it is a group heading.
    """
    cols: list[_Col] = []
    placed: list[list[tuple[_Phrase, int, int]]] = [[] for _ in block]
    for li in range(len(block) - 1, -1, -1):
        for p in _phrases(block[li]):
            hits = [k for k, c in enumerate(cols) if _overlap(p.x0, p.x1, c.x0, c.x1) > 0]
            if not hits:
                cols.append(_Col(p.x0, p.x1))
                cols.sort(key=lambda c: c.x0)
            elif len(hits) == 1:
                c = cols[hits[0]]
                c.x0, c.x1 = min(c.x0, p.x0), max(c.x1, p.x1)
    # second pass: spans against the final columns
    for li, line in enumerate(block):
        for p in _phrases(line):
            hits = [k for k, c in enumerate(cols) if _overlap(p.x0, p.x1, c.x0, c.x1) > 0]
            if not hits:
                hits = [min(range(len(cols)), key=lambda k: abs((cols[k].x0 + cols[k].x1) / 2 - (p.x0 + p.x1) / 2))]
            placed[li].append((p, hits[0], hits[-1]))
    return cols, placed


def _boundaries(cols: list[_Col], body: list[list[_Phrase]], lo: float, hi: float) -> list[float]:
    """Column boundaries: between two header columns, the widest gap no body word crosses."""
    words = [(w.x0, w.x1) for phrases in body for p in phrases for w in p.words]
    phrases = [(p.x0, p.x1) for ps in body for p in ps]
    bounds = [lo]
    for a, b in itertools.pairwise(cols):
        g0, g1 = a.x1, b.x0
        if g1 <= g0:
            bounds.append((g0 + g1) / 2)
            continue
        covered = sorted((max(x0, g0), min(x1, g1)) for x0, x1 in words if x1 > g0 and x0 < g1)
        free, cursor = [], g0
        for x0, x1 in covered:
            if x0 > cursor:
                free.append((cursor, x0))
            cursor = max(cursor, x1)
        if cursor < g1:
            free.append((cursor, g1))
        if not free:
            bounds.append((g0 + g1) / 2)
            continue

        def crossing(gap):
            mid = (gap[0] + gap[1]) / 2
            return sum(1 for x0, x1 in phrases if x0 < mid < x1)
        best = min(free, key=lambda g: (crossing(g), -(g[1] - g[0])))
        bounds.append((best[0] + best[1]) / 2)
    bounds.append(hi)
    return bounds


def _column_of(bounds: list[float], x: float) -> int:
    return min(max(bisect.bisect_right(bounds, x) - 1, 0), len(bounds) - 2)


def _line_cells(phrases: list[_Phrase], bounds: list[float]) -> dict[int, list[str]]:
    """Phrases of one body line placed in columns.

    A phrase crossing a boundary is split in the gap between two of its words
    when the boundary falls there (two cells set close together); a lone
    phrase on its line (a section title running across) stays whole in the
    column where it starts.
    """
    cells: dict[int, list[str]] = {}
    for p in phrases:
        pieces: list[list[_Word]] = [[p.words[0]]]
        if len(phrases) > 1:
            for prev, w in zip(p.words, p.words[1:]):
                if any(prev.x1 <= b <= w.x0 for b in bounds[1:-1]):
                    pieces.append([w])
                else:
                    pieces[-1].append(w)
        else:
            pieces = [list(p.words)]
        for piece in pieces:
            if len(phrases) > 1:
                col = _column_of(bounds, (piece[0].x0 + piece[-1].x1) / 2)
            else:
                col = _column_of(bounds, piece[0].x0 + 0.1)
            cells.setdefault(col, []).append(" ".join(w.text for w in piece))
    return {col: [" ".join(parts)] for col, parts in cells.items()}


def _body(lines: list[_Line], start: int, lo: float, hi: float, stop_at_header: bool = True) -> tuple[list[int], int]:
    """Indices of the body lines of a table from ``start``; returns (indices, index after the body)."""
    taken: list[int] = []
    gaps: list[float] = []
    i = start
    while i < len(lines):
        line = lines[i]
        if not _phrases(line, lo, hi):
            i += 1
            continue
        if stop_at_header and _header_candidate(line):
            break
        if taken:
            gap = line.top - lines[taken[-1]].bottom
            limit = BODY_GAP_EM * line.size
            if len(gaps) >= 3:
                limit = max(limit, BODY_GAP_FACTOR * statistics.median(gaps))
            if gap > limit:
                break
            gaps.append(max(gap, 0.0))
        taken.append(i)
        i += 1
    return taken, i


def _unruled_tables(lines: list[_Line], rules, page_no: int) -> tuple[list[_PageTable], set[int]]:
    """Tables of free text lines found from their header rows; returns the tables and the lines used."""
    tables, used = [], set()
    i = 0
    while i < len(lines):
        if not _header_candidate(lines[i]):
            i += 1
            continue
        first, last = _header_block(lines, i, rules)
        cols, placed = _header_columns(lines[first:last + 1])
        if len(cols) < 3:
            i = last + 1
            continue
        span = cols[-1].x1 - cols[0].x0
        lo, hi = cols[0].x0 - 1.5 * lines[i].size, cols[-1].x1 + 0.25 * span
        body_idx, end = _body(lines, last + 1, lo, cols[-1].x1 + 2 * lines[i].size)
        body = [_phrases(lines[k], lo, hi) for k in body_idx]
        bounds = _boundaries(cols, body, lo, max([hi] + [p.x1 for ps in body for p in ps]))
        rows, merged = _unruled_header_rows(placed, len(cols))
        rows += _body_rows([lines[k] for k in body_idx], body, bounds)
        bottom = lines[body_idx[-1]].bottom if body_idx else lines[last].bottom
        tables.append(_PageTable(page_no, "unruled", (bounds[0], lines[first].top, bounds[-1], bottom), bounds,
                                 rows, merged))
        used.update(range(first, last + 1))
        used.update(body_idx)
        i = max(end, last + 1)
    return tables, used


def _unruled_header_rows(placed, n_cols: int) -> tuple[list[list[str]], list[tuple[int, int, int, int]]]:
    """Group headings (one row per line that has them, merged over their span), then one leaf row
    holding each column's stacked header words top to bottom."""
    rows, merged = [], []
    leaf: dict[int, list[str]] = {}
    for line in placed:
        group_row = [""] * n_cols
        has_group = False
        for p, c0, c1 in line:
            if c1 > c0:
                group_row[c0] = p.text
                merged.append((len(rows), c0, len(rows), c1))
                has_group = True
            else:
                leaf.setdefault(c0, []).append(p.text)
        if has_group:
            rows.append(group_row)
    rows.append([_join_lines(leaf.get(c, [])) for c in range(n_cols)])
    return rows, merged


def _body_rows(lines: list[_Line], body: list[list[_Phrase]], bounds: list[float]) -> list[list[str]]:
    row_lines = [_RowLine(ln.top, ln.bottom, ln.size, _line_cells(ps, bounds)) for ln, ps in zip(lines, body) if ps]
    out = []
    n_cols = len(bounds) - 1
    for row in _merge_lines(row_lines):
        cells = [""] * n_cols
        for col, parts in row.items():
            cells[col] = _join_lines(parts)
        out.append(cells)
    return out


# --------------------------------------------------------------------------- continued tables

def _aligned(a: list[float], b: list[float]) -> bool:
    if len(a) != len(b):
        return False
    return all(abs((x - a[0]) - (y - b[0])) <= ALIGN_PT for x, y in zip(a, b))


def _continuation(prev: _PageTable, ruled: list[_PageTable], free_lines: list[_Line], page_no: int,
                  name: str) -> _PageTable | None:
    """The table on this page that continues ``prev`` without a header of its own, if any.

    Ruled: the topmost ruled table with no motor header whose column rules line up with
    ``prev``'s. Unruled: from the first free line whose phrases sit in ``prev``'s columns, the
    lines below it, cut into ``prev``'s columns.
    """
    if prev.kind == "ruled":
        for table in sorted(ruled, key=lambda t: t.bbox[1]):
            if _aligned(prev.bounds, table.bounds) and not locate_tables(table.grid(name)):
                return table
        return None
    lo, hi = prev.bounds[0], prev.bounds[-1]
    for i, line in enumerate(free_lines):
        phrases = _phrases(line, lo, hi)
        if len(phrases) < 3 or _header_candidate(line):
            continue
        fits = sum(1 for p in phrases if _column_of(prev.bounds, p.x0 + 0.1) == _column_of(prev.bounds, p.x1 - 0.1))
        if fits < 0.8 * len(phrases):
            continue
        body_idx, _ = _body(free_lines, i, lo, hi)
        body = [_phrases(free_lines[k], lo, hi) for k in body_idx]
        rows = _body_rows([free_lines[k] for k in body_idx], body, prev.bounds)
        bbox = (prev.bounds[0], free_lines[body_idx[0]].top, prev.bounds[-1], free_lines[body_idx[-1]].bottom)
        return _PageTable(page_no, "unruled", bbox, list(prev.bounds), rows)
    return None


# --------------------------------------------------------------------------- grids

def _chain_grid(parts: list[_PageTable], name: str) -> Grid:
    """One grid from a table and the parts that continue it on later pages."""
    width = max(p.width for p in parts)
    rows: list[list[str]] = []
    numbers: list[int] = []
    pages: list[int] = []
    tables: list[int] = []
    merged: list[tuple[int, int, int, int]] = []
    for part in parts:
        offset = len(rows)
        for k, row in enumerate(part.rows, start=1):
            rows.append((row + [""] * width)[:width])
            numbers.append(k)
            pages.append(part.page)
            tables.append(part.index)
        merged += [(r0 + offset, c0, r1 + offset, c1) for r0, c0, r1, c1 in part.merged]
    return Grid(file=name, kind="pdf", sheet=None, rows=rows, row_numbers=numbers, hidden_rows=frozenset(),
                merged=tuple(sorted(set(merged))), row_pages=tuple(pages), table=parts[0].index,
                row_tables=tuple(tables))


# --------------------------------------------------------------------------- pages

@dataclass
class _PageScan:
    number: int
    chars: int = 0
    usable: bool = True


def _page_tables(page, page_no: int, chars: list[_Ch], turn: _Turn, open_part: _PageTable | None,
                 name: str) -> tuple[list[_PageTable], _PageTable | None]:
    """All tables of one page, numbered; and the part that continues ``open_part`` (if any).

    ``chars`` are already turned by ``turn`` (see ``_Turn``); cells and rules are turned here.
    """
    structures = _ruled_structures(page, turn)
    free = _assign_chars(chars, structures)
    ruled = [t for t in (_ruled_table(s, page_no) for s in structures) if any(any(r) for r in t.rows)]
    free_lines = _build_lines([c for c in free if c.upright])
    rules = []
    for e in page.edges:
        x0, top, x1, bottom = turn.box(float(e["x0"]), float(e["top"]), float(e["x1"]), float(e["bottom"]))
        if x1 - x0 > bottom - top:
            rules.append((top, x0, x1))
    unruled, used = _unruled_tables(free_lines, rules, page_no)
    continued = None
    if open_part is not None:
        remaining = [ln for k, ln in enumerate(free_lines) if k not in used]
        continued = _continuation(open_part, ruled, remaining, page_no, name)
        if continued is not None and continued.kind == "unruled":
            unruled.append(continued)
    tables = ruled + unruled
    tables.sort(key=lambda t: (round(t.bbox[1]), t.bbox[0]))
    for k, t in enumerate(tables, start=1):
        t.index = k
    return tables, continued


def _content_bytes(page, limit: int) -> int:
    """Unpacked size of the page's content streams, counted no further than ``limit + 1`` bytes."""
    from pdfminer.pdftypes import LITERALS_FLATE_DECODE, resolve1

    contents = getattr(page.page_obj, "contents", None) or []
    total = 0
    for ref in contents:
        stream = resolve1(ref)
        filters = stream.get_filters()
        raw = stream.rawdata if stream.rawdata is not None else stream.data or b""
        if not filters:
            total += len(raw)
        elif len(filters) == 1 and filters[0][0] in LITERALS_FLATE_DECODE:
            total += len(zlib.decompressobj().decompress(raw, limit + 1 - total))
        else:
            total += len(stream.get_data())
        if total > limit:
            break
    return total


def _page_objects(page, page_no: int, name: str) -> list[_Ch]:
    try:
        size = _content_bytes(page, MAX_PAGE_CONTENT_BYTES)
    except Exception:  # noqa: BLE001 - damaged streams are reported by the full read below
        size = 0
    if size > MAX_PAGE_CONTENT_BYTES:
        raise InputError(f"{name}: page {page_no} holds more than {MAX_PAGE_CONTENT_BYTES // 2**20} MiB of drawing "
                         f"instructions, more than this tool reads on one page; print the schedule sheet on its own "
                         f"to PDF (or submit the schedule as .xlsx or CSV) and resubmit")
    try:
        return _chars(page)
    except Exception as exc:  # noqa: BLE001 - pdfminer raises many types on a damaged page
        raise InputError(f"{name}: page {page_no} could not be read, the file looks damaged "
                         f"({_reason(exc)}); save or print it to PDF again and resubmit") from None


def _reason(exc: BaseException) -> str:
    inner = exc.args[0] if exc.args and isinstance(exc.args[0], BaseException) else exc
    text = " ".join(str(inner).split()) or type(inner).__name__
    return text[:100]


class _StderrProgress:
    """'reading X.pdf: page 12 of 57' rewritten in place on a terminal; the line is wiped at the end
    so that an error message or the summary starts on a clean line."""

    def __init__(self, name: str, total: int):
        self.name, self.total, self.width = name, total, 0

    def __call__(self, done: int) -> None:
        text = f"\rmotorcheck: reading {self.name}: page {done} of {self.total}"
        self.width = max(self.width, len(text))
        sys.stderr.write(text)
        sys.stderr.flush()

    def close(self) -> None:
        if self.width:
            sys.stderr.write("\r" + " " * self.width + "\r")
            sys.stderr.flush()


def _stderr_progress(name: str, total: int) -> _StderrProgress | None:
    if total < PROGRESS_MIN_PAGES or not sys.stderr.isatty():
        return None
    return _StderrProgress(name, total)


def _open(data: bytes, name: str):
    import pdfplumber
    from pdfplumber.utils.exceptions import PdfminerException

    try:
        pdf = pdfplumber.open(io.BytesIO(data))
        pages = pdf.pages
    except PdfminerException as exc:
        inner = exc.args[0] if exc.args else exc
        if type(inner).__name__ in ("PDFPasswordIncorrect", "PDFEncryptionError", "PDFEncryptionWarning",
                                    "PDFEncryptionV4Error"):
            raise InputError(f"{name} is encrypted (password-protected); ask for a copy without a password, "
                             f"or remove it, and resubmit") from None
        raise InputError(f"{name} is damaged or not a complete PDF ({_reason(exc)}); save or print it to PDF "
                         f"again and resubmit") from None
    except Exception as exc:  # noqa: BLE001 - a damaged file may raise anything from the parser
        raise InputError(f"{name} is damaged or not a complete PDF ({_reason(exc)}); save or print it to PDF "
                         f"again and resubmit") from None
    if not pages:
        pdf.close()
        raise InputError(f"{name} has no pages; save or print it to PDF again and resubmit")
    return pdf, pages


def read_pdf_grids(data: bytes, name: str, progress: Callable[[int], None] | None = None) -> list[Grid]:
    """Every table on the PDF's schedule pages as a text grid, continued tables stitched.

    Parameters
    ----------
    data : the PDF file's bytes.
    name : the file name shown in messages and provenance.
    progress : called with the number of pages done; by default a progress
        line on stderr for files of ``PROGRESS_MIN_PAGES`` pages or more when
        stderr is a terminal.

    Returns
    -------
    list[Grid]
        One grid per table (kind ``'pdf'``); see the module docstring for
        ``row_pages``, ``row_tables`` and ``row_numbers``. At least one grid
        holds a motor schedule header.

    Raises
    ------
    InputError
        Encrypted, damaged, without a text layer, or without a motor schedule
        (the message lists the tables seen); always one line.
    """
    logging.getLogger("pdfminer").setLevel(logging.ERROR)  # malformed-file chatter is not the reviewer's concern
    pdf, pages = _open(data, name)
    shown = progress or _stderr_progress(name, len(pages))
    try:
        return _read(pages, data, name, shown)
    finally:
        pdf.close()
        if isinstance(shown, _StderrProgress):
            shown.close()


def _read(pages, data: bytes, name: str, progress) -> list[Grid]:
    scans: list[_PageScan] = []
    chains: list[list[_PageTable]] = []
    open_chain: list[_PageTable] | None = None
    deep: set[int] = set()
    quick = _quick_scan(data, len(pages))
    for k, page in enumerate(pages, start=1):
        if quick is not None and not quick[k - 1][1] and open_chain is None:
            scans.append(_PageScan(k, quick[k - 1][0], quick[k - 1][0] > 0))  # no motor words: not parsed
            if progress:
                progress(k)
            continue
        chars = _page_objects(page, k, name)
        scan = _PageScan(k, len(chars), _usable(chars))
        scans.append(scan)
        open_chain = _scan_page(page, k, chars if scan.usable else [], name, open_chain, chains, deep)
        page.close()
        if progress:
            progress(k)
    if not any(s.usable and s.chars for s in scans):
        raise InputError(f"{name} has no text layer ({_pages_text(len(scans))} of images or drawn strokes, e.g. a "
                         f"scan or a CAD export with text as lines); run OCR on it, or ask for a PDF with "
                         f"selectable text, and resubmit")
    grids = [_chain_grid(chain, name) for chain in chains]
    if any(locate_tables(g) for g in grids):
        return grids
    # No schedule found: parse the first pages in depth whatever the cheap tests said. A schedule the
    # tests missed (text pdfium reads differently, say) is still found; otherwise the message can
    # say which tables were seen.
    extra = [k for k in range(1, len(pages) + 1) if k not in deep and scans[k - 1].usable][:FALLBACK_PAGES]
    open_chain = None
    for k in extra:
        page = pages[k - 1]
        open_chain = _scan_page(page, k, _page_objects(page, k, name), name, open_chain, chains, deep, force=True)
        page.close()
    grids = [_chain_grid(chain, name) for chain in chains]
    if any(locate_tables(g) for g in grids):
        return grids
    partial = any(s.usable and s.number not in deep for s in scans)
    raise InputError(_no_schedule_message(name, chains, scans, partial))


# Motor-column words looked for, as plain substrings, in a page's text with spaces and punctuation
# removed (vertical header text comes out glued: 'HPFLA(A)VOLTS'). A subset of the spellings in
# headers.py; a page naming two of these fields is read with pdfplumber, any other page is not.
_QUICK_FIELDS = (
    ("hp", "horsepower"), ("kw", "kilowatt"), ("fla", "flc", "fullload", "amp", "rla"), ("volt",),
    ("mca", "minimumcircuit", "wiresizing"), ("mocp", "mop", "maxfuse", "maxbreaker", "maxocp", "mfs"),
)


def _quick_scan(data: bytes, n_pages: int) -> list[tuple[int, bool]] | None:
    """Per page (characters, may hold a schedule) from pdfium's text, about 50 times faster than
    parsing the page with pdfplumber; None when pdfium cannot read the file (every page is then
    read with pdfplumber)."""
    try:
        import pypdfium2 as pdfium  # installed with pdfplumber

        doc = pdfium.PdfDocument(data)
    except Exception:  # noqa: BLE001 - any failure only means no shortcut
        return None
    try:
        if len(doc) != n_pages:
            return None
        out = []
        for i in range(n_pages):
            page = doc[i]
            textpage = page.get_textpage()
            text = textpage.get_text_bounded()
            textpage.close()
            page.close()
            squashed = "".join(ch for ch in text.lower() if ch.isalnum())
            hits = sum(1 for words in _QUICK_FIELDS if any(w in squashed for w in words))
            out.append((len(squashed), hits >= H.MIN_MOTOR_FIELDS))
        return out
    except Exception:  # noqa: BLE001
        return None
    finally:
        doc.close()


def _usable(chars: list[_Ch]) -> bool:
    if not chars:
        return False
    cid = sum(1 for c in chars if c.text.startswith("(cid:"))
    return cid < CID_SHARE * len(chars)


def _scan_page(page, k: int, chars: list[_Ch], name: str, open_chain, chains, deep,
               force: bool = False) -> list[_PageTable] | None:
    """Cheap test, and the deep parse of schedule pages (and of the page after one).

    New tables go to ``chains``; returns the chain a table on the next page may continue (the
    lowest motor schedule on this page), or None.
    """
    if not chars:
        return None
    turn = _turn_for(chars, float(page.width), float(page.height))
    chars = [turn.char(c) for c in chars]
    upright = [c for c in chars if c.upright]
    candidate = force or _looks_like_schedule(_build_lines(upright),
                                              _vertical_lines([c for c in chars if not c.upright]))
    if not candidate and open_chain is None:
        return None
    deep.add(k)
    tables, continued = _page_tables(page, k, chars, turn, open_chain[-1] if open_chain else None, name)
    if continued is not None:
        open_chain.append(continued)
    motor_bottoms = []
    for table in tables:
        if table is continued:
            motor_bottoms.append((table.bbox[3], open_chain))
            continue
        if not candidate:
            continue  # a page read only for a continuation: its other tables are not listed
        chain = [table]
        chains.append(chain)
        if locate_tables(table.grid(name)):
            motor_bottoms.append((table.bbox[3], chain))
    return max(motor_bottoms, key=lambda mb: mb[0])[1] if motor_bottoms else None


def _pages_text(n: int) -> str:
    return "1 page" if n == 1 else f"{n} pages"


def _no_schedule_message(name: str, chains: list[list[_PageTable]], scans: list[_PageScan], partial: bool) -> str:
    seen = [f"p. {c[0].page} table {c[0].index} ('{c[0].first_text()}')" for c in chains]
    if len(seen) > 8:
        seen = seen[:8] + [f"and {len(seen) - 8} more"]
    listing = "tables seen: " + "; ".join(seen) if seen else "no table was found"
    if partial:
        listing += f" (first {FALLBACK_PAGES} pages looked at)"
    blank = [s.number for s in scans if not s.usable]
    ocr = ""
    if blank:
        shown = ", ".join(str(n) for n in blank[:10]) + (" ..." if len(blank) > 10 else "")
        ocr = f"; page(s) {shown} have no text layer (OCR needed)"
    return (f"no motor schedule found in {name}: no table has a header with a tag column and hp, kW, volts or FLA "
            f"columns; {listing}{ocr}")
