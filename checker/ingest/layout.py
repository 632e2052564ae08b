"""Find motor-schedule header blocks in a grid and map their columns to fields.

Nobody tells us where the header is. Every row that could be a header row
(no value-like cells such as ``7.5`` or ``460V``) is tried as the last row of
a header block of one to three rows; each block's columns are matched
against the synonym table in ``headers.py`` and the block with the best total
match wins. A block counts as a motor schedule when it maps a tag-like column
and at least two motor columns (hp, kW, FLA, volts, ...).

Multi-row headers: group cells merged across columns are spread over their
span (and, in a CSV or an unmerged sheet, a group cell is carried right over
blank cells as long as the columns below it have their own header text);
levels are then joined ``GROUP / LEAF``. The leaf names the column; a group
decides only when the leaf is generic (``BREAKER / SIZE``) or names a part of
the group (``CONDUCTORS / PHASE``).

A table's data run from the row after its header to the last non-empty row
before the next header block (of a motor schedule or of any other table) or
the end of the grid; blank, section, note and total rows inside stay in the
range for the normaliser to classify.
"""
from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass
from functools import lru_cache

from checker.ingest import headers as H
from checker.ingest.readers import Grid

__all__ = [
    "Column",
    "LocatedTable",
    "describe_columns",
    "locate_tables",
    "match_header",
    "merged_origins",
    "normalise_header",
]

MIN_SCORE = 0.5            # weakest header/field match that maps a column
STRONG_SCORE = 0.8         # a match this good marks a row as some table's header
MAX_HEADER_ROWS = 3        # group + sub-group + leaf
MAX_HEADER_CELL_CHARS = 80  # longer cells are notes, not headers
GROUP_FACTOR_WEAK_LEAF = 0.95   # group decides for a generic leaf (BREAKER / SIZE) ...
GROUP_FACTOR_STRONG_LEAF = 0.6  # ... but hardly against a leaf that names a field itself
MIN_HEADERISH_SHARE = 1 / 3     # of a leaf row's cells that must read as header words


@dataclass(frozen=True)
class Column:
    """One mapped column: 0-based grid index, its label (``Grid.column_label``:
    spreadsheet letter, or number in a PDF table), canonical
    field id (see ``headers.FIELDS``) and the header text as written, levels
    joined with ' / ' (whitespace and line breaks shown as single spaces)."""

    index: int
    letter: str
    field: str
    header: str


@dataclass(frozen=True)
class LocatedTable:
    """A motor schedule found in a grid; all row values are 0-based indices into ``grid.rows``.

    ``data_first > data_last`` means a header with no rows under it.
    ``unmapped`` lists (index, header text) of header columns that map to no
    field or lost their field to a better column. ``score`` is the sum of
    the mapped columns' match scores (higher is a surer header).
    """

    grid: Grid
    header_first: int
    header_last: int
    data_first: int
    data_last: int
    columns: tuple[Column, ...]
    unmapped: tuple[tuple[int, str], ...]
    score: float


# --------------------------------------------------------------------------- header text matching

_SUPERSCRIPTS = "⁰¹²³⁴⁵⁶⁷⁸⁹⁺⁾⁽ᵃᵇ*†‡§¤"
_NOTE_REFS = (
    re.compile(r"[\(\[]\s*(?:see\s+)?notes?\s*(?:[\d\s,&-]|and)*[\)\]]"),  # (Note 2), [see notes 1 and 3]
    re.compile(r"\bnotes?\s+\d+(?:\s*[,&]\s*\d+)*"),                  # Note 2 (a bare "Notes" header stays)
    re.compile(r"[\(\[]\s*\d{1,2}\s*[\)\]]"),                           # (1), [2]
)
_DOTTED_ABBREV = re.compile(r"\b[a-z](?:\.[a-z])+\.?(?![a-z])")      # h.p. -> hp, o.l. -> ol
_PHASE_SYMBOLS = re.compile(r"[øφϕ∅Ø]")
_LETTER_DIGIT = re.compile(r"(?<=[a-z])(?=\d)|(?<=\d)(?=[a-z])")
_NON_WORD = re.compile(r"[^a-z0-9%.]+")
_PAREN_PART = re.compile(r"\([^)]*\)|\[[^\]]*\]")


@lru_cache(maxsize=65536)
def normalise_header(text: str) -> str:
    """Header text reduced to lower-case words (see headers.py for the rules)."""
    t = "".join(" " if ch in _SUPERSCRIPTS else ch for ch in text)
    t = unicodedata.normalize("NFKC", t).lower()
    for pattern in _NOTE_REFS:
        t = pattern.sub(" ", t)
    t = _PHASE_SYMBOLS.sub(" ph ", t)
    t = t.replace("#", " no ").replace("&", " and ").replace("'", "")
    t = _DOTTED_ABBREV.sub(lambda m: m.group(0).replace(".", ""), t)
    t = re.sub(r"(?<!\d)\.|\.(?!\d)", " ", t)   # keep only decimal points
    t = _LETTER_DIGIT.sub(" ", t)
    t = _NON_WORD.sub(" ", t)
    return " ".join(t.split())


def _top_level_alternatives(pattern: str) -> list[str]:
    parts, depth, start, i = [], 0, 0, 0
    while i < len(pattern):
        ch = pattern[i]
        if ch == "\\":
            i += 1
        elif ch in "([":
            depth += 1
        elif ch in ")]":
            depth -= 1
        elif ch == "|" and depth == 0:
            parts.append(pattern[start:i])
            start = i + 1
        i += 1
    parts.append(pattern[start:])
    return parts


def _compile(pattern: str) -> re.Pattern[str]:
    # Regex alternation takes the first alternative that matches, not the
    # longest: put longer spellings first so 'duty cycle' beats 'duty'.
    alternatives = sorted(_top_level_alternatives(pattern), key=len, reverse=True)
    return re.compile(r"(?<![a-z0-9])(?:" + "|".join(alternatives) + r")(?![a-z0-9])")


_PATTERNS: tuple[tuple[str, re.Pattern[str], float], ...] = tuple(
    (field, _compile(pattern), weight)
    for field, entries in H.FIELD_PATTERNS.items()
    for pattern, weight in entries
)
# One alternation of every pattern: a cheap first test that most data cells fail.
_ANY_PATTERN = _compile("|".join(p for entries in H.FIELD_PATTERNS.values() for p, _ in entries))


def _is_filler(token: str) -> bool:
    return token in H.FILLER_WORDS or bool(re.fullmatch(r"[\d.%]+", token))


@lru_cache(maxsize=65536)
def _score_normalised(norm: str) -> tuple[tuple[str, float], ...]:
    if not norm or not _ANY_PATTERN.search(norm):
        return ()
    tokens = norm.split(" ")
    starts, pos = [], 0
    for tok in tokens:
        starts.append(pos)
        pos += len(tok) + 1
    per_field: dict[str, list[float]] = {}
    for field, regex, weight in _PATTERNS:
        for m in regex.finditer(norm):
            weights = per_field.setdefault(field, [0.0] * len(tokens))
            for i, start in enumerate(starts):
                if m.start() <= start < m.end() and weight > weights[i]:
                    weights[i] = weight
    out = []
    for field, weights in per_field.items():
        covered = [w for w in weights if w > 0]
        uncovered_content = sum(1 for tok, w in zip(tokens, weights) if w == 0 and not _is_filler(tok))
        score = sum(covered) / (len(covered) + uncovered_content) if covered else 0.0
        if score > 0:
            out.append((field, round(score, 4)))
    return tuple(sorted(out, key=lambda fs: (-fs[1], H.FIELDS.index(fs[0]))))


@lru_cache(maxsize=65536)
def match_header(text: str) -> tuple[tuple[str, float], ...]:
    """Fields a header text could name, best first, as (field, score 0..1).

    The text is scored as written and with parenthesised parts removed
    ('Rated power (kW)' -> 'Rated power'); the better score per field counts.
    """
    if not text or len(text) > MAX_HEADER_CELL_CHARS:
        return ()
    best: dict[str, float] = dict(_score_normalised(normalise_header(text)))
    bare = _PAREN_PART.sub(" ", text)
    if bare != text:
        for field, score in _score_normalised(normalise_header(bare)):
            best[field] = max(best.get(field, 0.0), score)
    return tuple(sorted(best.items(), key=lambda fs: (-fs[1], H.FIELDS.index(fs[0]))))


def _best(text: str) -> tuple[str, float] | None:
    matches = match_header(text)
    return matches[0] if matches and matches[0][1] >= MIN_SCORE else None


# --------------------------------------------------------------------------- row classification

# Cells that are data values: numbers, fractions, dates, "7.5 HP", "460V", "3#10", "#12".
_VALUE_LIKE = re.compile(r"^[(\[]?\s*[#$±~+-]?\s*\.?\d")


_DIGITS = frozenset("0123456789")
_VALUE_PREFIX = frozenset("([#$±~+-. ")


def is_value_like(text: str) -> bool:
    """True for a cell that reads as a value (starts with a number), never as a header."""
    first = text[:1]
    if first in _DIGITS:
        return True
    return first in _VALUE_PREFIX and bool(_VALUE_LIKE.match(text))


@lru_cache(maxsize=65536)
def _is_headerish(text: str) -> bool:
    """A header word: maps to a field, or is generic header vocabulary (SIZE, TYPE, LRA)."""
    if _best(text):
        return True
    norm = normalise_header(text)
    tokens = norm.split()
    return bool(tokens) and all(t in H.GENERIC_HEADER_WORDS or _is_filler(t) for t in tokens)


def _is_units_text(text: str) -> bool:
    tokens = re.split(r"[\s/(),\[\]]+", unicodedata.normalize("NFKC", text).lower().replace("°", " deg"))
    tokens = [t for t in tokens if t]
    return bool(tokens) and all(t in H.UNIT_WORDS for t in tokens)


def _row_can_be_header(cells: list[str]) -> bool:
    return any(cells) and not any(map(is_value_like, filter(None, cells)))


def _leaf_row_ok(cells: list[str], alone: bool) -> bool:
    """Enough of the row reads as header words to be a block's last (leaf) row."""
    leaf = [c for c in cells if c]
    if alone and len(leaf) < 2:
        return False
    return sum(_is_headerish(c) for c in leaf) >= MIN_HEADERISH_SHARE * len(leaf)


# --------------------------------------------------------------------------- header blocks

@dataclass(frozen=True)
class _Block:
    first: int
    last: int
    columns: tuple[Column, ...]
    unmapped: tuple[tuple[int, str], ...]
    score: float
    motor: bool


# merged_origins by the identity of a grid's merged ranges (the tuple is kept, so its id stays its
# own): header searches ask for the same grid's map once per candidate row, and a 100 000-row
# sheet has ~5 000 merged section rows (~65 000 covered cells).
_ORIGINS: dict[int, tuple[tuple, dict[tuple[int, int], tuple[int, int]]]] = {}


def merged_origins(grid: Grid) -> dict[tuple[int, int], tuple[int, int]]:
    """(row, col) of every covered cell of a merged range -> its top-left cell.

    The map is built once per grid and shared by every caller: read it, do not change it.
    """
    known = _ORIGINS.get(id(grid.merged))
    if known is not None and known[0] is grid.merged:
        return known[1]
    out: dict[tuple[int, int], tuple[int, int]] = {}
    for r0, c0, r1, c1 in grid.merged:
        for r in range(r0, r1 + 1):
            for c in range(c0, c1 + 1):
                if (r, c) != (r0, c0):
                    out[(r, c)] = (r0, c0)
    if len(_ORIGINS) >= 16:
        _ORIGINS.clear()
    _ORIGINS[id(grid.merged)] = (grid.merged, out)
    return out


def _filled_header_rows(grid: Grid, first: int, last: int) -> list[list[str]]:
    """Header rows with merged text spread over its span and group cells carried right."""
    rows = [list(grid.rows[r]) for r in range(first, last + 1)]
    width = len(grid.rows[0]) if grid.rows else 0
    merged_rows: set[int] = set()
    for r0, c0, r1, c1 in grid.merged:
        if r1 < first or r0 > last:
            continue
        text = grid.rows[r0][c0]
        for r in range(max(r0, first), min(r1, last) + 1):
            if c1 > c0:
                merged_rows.add(r - first)
            for c in range(c0, c1 + 1):
                if not rows[r - first][c]:
                    rows[r - first][c] = text
    # Unmerged group cells: carry right over blanks, but only while the columns
    # below have their own header text (else the blank column is not in the group).
    for level in range(len(rows) - 1):
        if level in merged_rows:
            continue
        carry = ""
        for c in range(width):
            below = any(rows[k][c] for k in range(level + 1, len(rows)))
            if rows[level][c]:
                carry = rows[level][c] if below else ""
            elif carry and below:
                rows[level][c] = carry
            else:
                carry = ""
    return rows


def _levels(filled: list[list[str]], col: int) -> list[str]:
    levels: list[str] = []
    for row in filled:
        text = " ".join(row[col].split())
        if text and (not levels or levels[-1] != text):
            levels.append(text)
    return levels


def _column_candidates(levels: list[str]) -> dict[str, float]:
    """field -> score for one column from its header levels (group ..., leaf)."""
    leaf = levels[-1]
    cands: dict[str, float] = {}
    for i in range(len(levels)):
        for field, score in match_header(" ".join(levels[i:])):
            cands[field] = max(cands.get(field, 0.0), score)
    leaf_matches = match_header(leaf)
    leaf_best = leaf_matches[0] if leaf_matches else None
    for group in reversed(levels[:-1]):
        group_best = _best(group)
        if group_best is None:
            continue
        group_field, group_score = group_best
        if leaf_best and leaf_best[0] in H.GROUP_ABSORBS.get(group_field, ()):
            cands.pop(leaf_best[0], None)
            cands[group_field] = max(cands.get(group_field, 0.0), group_score, leaf_best[1])
        strong_leaf = leaf_best is not None and leaf_best[1] >= 0.9
        factor = GROUP_FACTOR_STRONG_LEAF if strong_leaf else GROUP_FACTOR_WEAK_LEAF
        cands[group_field] = max(cands.get(group_field, 0.0), group_score * factor)
        break
    return {f: s for f, s in cands.items() if s >= MIN_SCORE}


def _assign(candidates: dict[int, dict[str, float]]) -> dict[int, tuple[str, float]]:
    """Best match first: each column gets at most one field, each field one column."""
    pairs = sorted(((s, c, f) for c, fs in candidates.items() for f, s in fs.items()),
                   key=lambda p: (-p[0], p[1], H.FIELDS.index(p[2])))
    used_cols: set[int] = set()
    used_fields: set[str] = set()
    out: dict[int, tuple[str, float]] = {}
    for score, col, field in pairs:
        if col in used_cols or field in used_fields:
            continue
        out[col] = (field, score)
        used_cols.add(col)
        used_fields.add(field)
    return out


def _is_motor_schedule(fields: set[str]) -> bool:
    return bool(fields & H.TAG_FIELDS) and len(fields & H.MOTOR_FIELDS) >= H.MIN_MOTOR_FIELDS


def _evaluate_block(grid: Grid, first: int, last: int) -> _Block | None:
    """Score rows first..last as one header block; None if they cannot be one."""
    for r in range(first, last + 1):
        if not _row_can_be_header(grid.rows[r]):
            return None
    if not _leaf_row_ok(grid.rows[last], alone=first == last):
        return None
    filled = _filled_header_rows(grid, first, last)
    width = len(filled[0])
    texts: dict[int, str] = {}
    candidates: dict[int, dict[str, float]] = {}
    for col in range(width):
        levels = _levels(filled, col)
        if not levels:
            continue
        texts[col] = " / ".join(levels)
        cands = _column_candidates(levels)
        if cands:
            candidates[col] = cands
    assigned = _assign(candidates)
    if not assigned:
        return None
    columns = tuple(Column(c, grid.column_label(c), f, texts[c]) for c, (f, _) in sorted(assigned.items()))
    unmapped = tuple((c, texts[c]) for c in sorted(texts) if c not in assigned)
    score = round(sum(s for _, s in assigned.values()), 4)
    return _Block(first, last, columns, unmapped, score, _is_motor_schedule({f for f, _ in assigned.values()}))


def _better(a: _Block | None, b: _Block | None) -> _Block | None:
    """Higher score wins; on a tie the block with fewer rows, then the earlier one."""
    if a is None:
        return b
    if b is None:
        return a
    key_a = (a.score, -(a.last - a.first), -a.first)
    key_b = (b.score, -(b.last - b.first), -b.first)
    return b if key_b > key_a else a


def _best_block_ending_at(grid: Grid, last: int, floor: int) -> _Block | None:
    # cheap tests once per row before the three block depths are scored
    if not _row_can_be_header(grid.rows[last]) or not _leaf_row_ok(grid.rows[last], alone=False):
        return None
    best = None
    for depth in range(1, MAX_HEADER_ROWS + 1):
        first = last - depth + 1
        if first < floor:
            break
        block = _evaluate_block(grid, first, last)
        if block is not None and block.motor:
            best = _better(best, block)
    return best


def _is_foreign_header(grid: Grid, row: int, current: _Block) -> bool:
    """A row that heads some other table: three or more distinct fields matched well.

    A word that names the field of the column it stands in ('CB' under OCPD,
    'MCC' under FED FROM) is a value of this table, not a header of another.
    """
    cells = grid.rows[row]
    if sum(1 for c in cells if c) < 3 or not _row_can_be_header(cells):
        return False
    own = {c.index: c.field for c in current.columns}
    fields = set()
    for index, text in enumerate(cells):
        best = _best(text) if text else None
        if best and best[1] >= STRONG_SCORE and own.get(index) != best[0]:
            fields.add(best[0])
    return len(fields) >= 3


def _same_layout(a: _Block, b: _Block) -> bool:
    return [(c.index, c.field) for c in a.columns] == [(c.index, c.field) for c in b.columns]


def _find_motor_header(grid: Grid, start: int) -> _Block | None:
    """First motor header block at or after ``start``, improved by the next two rows."""
    n = len(grid.rows)
    for last in range(start, n):
        if not _row_can_be_header(grid.rows[last]):
            continue
        block = _best_block_ending_at(grid, last, start)
        if block is None:
            continue
        # A group row qualifies alone sometimes; the leaf row under it does better.
        for later in range(last + 1, min(last + MAX_HEADER_ROWS, n)):
            block = _better(block, _best_block_ending_at(grid, later, start))
        return _with_units_row(grid, _with_merged_top(grid, block, start))
    return None


def _with_merged_top(grid: Grid, block: _Block, floor: int) -> _Block:
    """Take in header rows above that a merged cell joins to the block (TAG merged down rows 2-4)."""
    tops = [r0 for r0, _, r1, _ in grid.merged
            if floor <= r0 < block.first <= r1 and block.last - r0 < MAX_HEADER_ROWS]
    if not tops:
        return block
    extended = _evaluate_block(grid, min(tops), block.last)
    if extended is None or not extended.motor or extended.score + 1e-9 < block.score:
        return block
    return extended


def _with_units_row(grid: Grid, block: _Block) -> _Block:
    """Take a units row ('(A)', 'HP', 'V') under the leaf row into the header."""
    nxt = block.last + 1
    if nxt >= len(grid.rows):
        return block
    cells = [c for c in grid.rows[nxt] if c]
    if not cells or not all(_is_units_text(c) for c in cells):
        return block
    extended = _evaluate_block(grid, block.first, nxt)
    if extended is None or not extended.motor or extended.score + 1e-9 < block.score:
        return block
    return extended


def _next_boundary(grid: Grid, start: int, current: _Block) -> int:
    """Index of the first row at or after ``start`` that begins another table's header.

    A repeat of the current header (a printout's page header) is not a
    boundary: it stays in the table, where the normaliser skips it.
    """
    n = len(grid.rows)
    for row in range(start, n):
        cells = grid.rows[row]
        if not _row_can_be_header(cells) or sum(1 for c in cells if c) < 2:
            continue
        block = _best_block_ending_at(grid, row, start)
        if block is not None and not _same_layout(block, current):
            return block.first
        if block is None and _is_foreign_header(grid, row, current):
            return row
    return n


def _last_non_empty(grid: Grid, first: int, stop: int) -> int:
    for r in range(stop - 1, first - 1, -1):
        if any(grid.rows[r]):
            return r
    return first - 1


def _drop_next_title(grid: Grid, data_first: int, data_last: int, boundary: int) -> int:
    """Leave out one to three single-cell rows (the next table's title) just above its header."""
    if boundary >= len(grid.rows) or data_last != boundary - 1:
        return data_last
    r = data_last
    while r >= data_first and r > data_last - 3 and sum(1 for c in grid.rows[r] if c) == 1:
        r -= 1
    if r < data_last and r >= data_first and not any(grid.rows[r]):
        return _last_non_empty(grid, data_first, r)
    return data_last


def locate_tables(grid: Grid) -> list[LocatedTable]:
    """Every motor schedule in one grid, top to bottom (0..n tables).

    Transposed tables (fields down the first column) are not recognised and
    give no table.
    """
    tables: list[LocatedTable] = []
    n = len(grid.rows)
    pos = 0
    while pos < n:
        block = _find_motor_header(grid, pos)
        if block is None:
            break
        data_first = block.last + 1
        boundary = _next_boundary(grid, data_first, block)
        data_last = max(_last_non_empty(grid, data_first, boundary), block.last)
        if data_last >= data_first:
            data_last = _drop_next_title(grid, data_first, data_last, boundary)
            data_last = max(data_last, block.last)
        tables.append(LocatedTable(grid, block.first, block.last, data_first, data_last, block.columns,
                                   block.unmapped, block.score))
        pos = boundary if boundary > block.last else block.last + 1
    return tables


def describe_columns(table: LocatedTable) -> list[str]:
    """One line per header column: 'C: FLA (A) -> fla', or '-> not used'."""
    lines = [(c.index, f"{c.letter}: {c.header} -> {c.field}") for c in table.columns]
    lines += [(i, f"{table.grid.column_label(i)}: {text} -> not used") for i, text in table.unmapped]
    return [line for _, line in sorted(lines)]
