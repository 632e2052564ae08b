"""Feeders: find feeder schedules, read feeder rows, and name the source a motor hangs from.

A schedule can say which feeder supplies a group of motors in three ways:

1. a feeder table on the same sheet (below or above the motor schedule) or on
   another sheet, with headers such as ``FEEDER | FROM | TO | CONDUCTORS | OCPD``;
2. a heading row inside the motor schedule that carries the feeder's own
   conductors or device (``MCC-1 (600 V) | ... | 3#3/0 RW90 | 200 A CB``);
3. nothing: the motors only name their source (``FED FROM`` column or a
   section heading), and the feeder calculation is given for information.

Feeder rows are "read as feeders": they are neither motors nor skipped rows,
and the report counts them separately so that every input row is accounted
for. The group key of a source (``MCC-1 / 1A`` -> ``MCC-1``) is made here so
that motors and feeders are matched the same way.

Nothing here holds a code value; the header words are our own judgement of
trade usage (common practice), like ``headers.py``.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field, replace
from functools import lru_cache

from checker.ingest import values
from checker.ingest.layout import (
    Column,
    LocatedTable,
    is_value_like,
    match_header,
    merged_origins,
    normalise_header,
)
from checker.ingest.readers import Grid
from checker.model import Motor, SkippedRow, SourceRef

__all__ = [
    "FeederRow",
    "FeederTable",
    "feeder_table_info",
    "group_key",
    "locate_feeder_tables",
    "read_feeder_table",
    "split_heading_feeders",
    "trim_motor_tables",
]

# --------------------------------------------------------------------------- group keys

_BRACKETS = re.compile(r"\([^)]*\)?|\[[^\]]*\]?")
_ELECTRICAL_WORDS = re.compile(
    r"\b\d{2,5}(?:\s*/\s*\d{2,5})?\s*(?:v|vac|volts?)\b|\b[13]\s*(?:ph|phase|pole)\b|[13]\s*[øφϕ∅Ø]|[øφϕ∅Ø]|\b[34]\s*w(?:ire)?\b",
    re.IGNORECASE)
# Every alternative above holds one of these: text without any cannot hold an electrical word.
_ELECTRICAL_HINT = re.compile(r"[vw]|ph|pole|[øφϕ∅Ø]", re.IGNORECASE)
_NOT_KEY = re.compile(r"[^A-Z0-9]")
# Everything after one of these is a bucket, circuit or position inside the source.
_POSITION = re.compile(
    r"\s*(?:/|,|;|#|\s[-–]\s|\b(?:ckt|cct|circuit|circ|bucket|bkt|cubicle|cub|unit|position|pos|cell|compartment|"
    r"section|sect|space|breaker|cb)\b).*$", re.IGNORECASE)
_LEADING = re.compile(r"^(?:(?:fed|supplied|supply)\s+(?:from|by)|from|(?:feeder|fdr)(?:\s+to)?|to|panelboard|panel|"
                      r"pnl|switchboard|distribution\s+panel)\b[\s:.\-]*", re.IGNORECASE)
_TRAILING = re.compile(r"[\s:.\-]*\b(?:feeder|fdr|feed|supply)\b[\s:.\-]*$", re.IGNORECASE)


@lru_cache(maxsize=65_536)  # a schedule names a few sources thousands of times over
def group_key(text: str) -> tuple[str, str]:
    """(comparison key, display label) of the source a motor or feeder names.

    ``'MCC-1 / 1A'``, ``'MCC-1  (600 V, 3Ø)'`` and ``'mcc 1'`` all give the key
    ``'MCC1'``; ``'PANEL LP-1 (120/208 V)'`` and ``'LP-1 / 13,15'`` give ``'LP1'``.
    The label is the source name as first written (``'MCC-1'``). Returns
    ``('', '')`` for text that names nothing.
    """
    flat = " ".join(str(text).split())
    label = _BRACKETS.sub(" ", flat)
    if _ELECTRICAL_HINT.search(label):
        label = _ELECTRICAL_WORDS.sub(" ", label)
    label = _POSITION.sub("", " ".join(label.split()))
    stripped = _TRAILING.sub("", _LEADING.sub("", label.strip())).strip(" :.-")
    key = _NOT_KEY.sub("", (stripped or label).upper())
    # 'Panel A' keys as 'A' but keeps its leading word in the label: a bare 'A' reads as nothing.
    label = stripped if len(stripped) > 2 else label.strip(" :.-")
    if not key:  # only position words: fall back to the whole text
        label = flat
        key = _NOT_KEY.sub("", flat.upper())
    return key, label


# --------------------------------------------------------------------------- feeder records

@dataclass(frozen=True, slots=True)
class FeederRow:
    """One feeder as the schedule lists it.

    ``record`` holds ``name`` (text), ``from`` / ``to`` (text), ``conductor`` and
    ``ocpd`` (the motor schema's shapes, from the same cell parsers), and any
    ``bond``, ``raceway``, ``length``, ``voltage`` or ``remarks`` text.
    ``key`` / ``label`` name the source the feeder supplies (see
    :func:`group_key`). ``origin`` is ``'feeder table'`` or ``'schedule heading'``.
    ``problems`` are cells that could not be read, one sentence each.
    """

    key: str
    label: str
    record: dict
    source: SourceRef
    sources: dict[str, SourceRef] = field(default_factory=dict)
    raw: dict[str, str] = field(default_factory=dict)
    problems: tuple[str, ...] = ()
    origin: str = "feeder table"


@dataclass(frozen=True)
class FeederTable:
    """A feeder schedule found in a grid; row values are 0-based indices into ``grid.rows``.

    ``first`` is the first row of the table including a title row above the
    header (``FEEDER SCHEDULE``); ``data_first > data_last`` means no rows.
    """

    grid: Grid
    first: int
    header_first: int
    header_last: int
    data_first: int
    data_last: int
    columns: tuple[Column, ...]


# Header words of a feeder table's own columns, matched against the whole
# normalised header text (layout.normalise_header): our judgement of trade usage.
_OWN_FIELDS: dict[str, re.Pattern[str]] = {
    "name": re.compile(r"(?:feeder|fdr)(?: (?:no|number|id|name|tag|ref|designation|mark))?"
                       r"|(?:feeder )?(?:circuit|ckt|cct)(?: (?:no|number|id))?|tag|mark|id|designation|ref"),
    "from": re.compile(r"from|(?:fed|supplied|supply) (?:from|by)|source|origin|supply|upstream(?: equipment)?"
                       r"|feeder from"),
    "to": re.compile(r"to|load|(?:equipment|load) (?:served|fed)|serves|serving|feeds|feeding|destination|"
                     r"downstream(?: equipment)?|fed to|supplies|equipment"),
}
# Fields a feeder column may take from the motor-schedule synonyms (headers.py).
_BORROWED = ("conductor", "bond", "raceway", "ocpd", "ocpd_type", "length", "voltage", "voltage_phase",
             "description", "remarks")
# A header naming any of these is a motor schedule, not a feeder table.
_MOTOR_ONLY = frozenset({"hp", "kw", "fla", "mca", "mocp", "starting", "service_factor", "duty"})
_FEEDER_WORD = re.compile(r"\b(?:feeders?|fdrs?)\b", re.IGNORECASE)
_MAX_TITLE_ROWS = 2
_NOTE = re.compile(r"^\s*(?:general\s+)?notes?\b|^\s*\(?\d{1,2}[.)]\s+[A-Za-z]|^\s*\*+\s*[A-Za-z]", re.IGNORECASE)
_TOTAL = re.compile(r"^\W*(?:grand\s+)?(?:sub-?)?totals?\b", re.IGNORECASE)
_SPARE = re.compile(r"^\W*(?:spare|space|future|provision|not\s+used|deleted|vacant)\b", re.IGNORECASE)


def _cell_field(text: str) -> tuple[str, float] | None:
    """Feeder-table field a header cell names, with a score (None if none)."""
    norm = normalise_header(text)
    if not norm:
        return None
    for name, pattern in _OWN_FIELDS.items():
        if pattern.fullmatch(norm):
            return name, 1.0
    for name, score in match_header(text):
        if name in _MOTOR_ONLY and score >= 0.8:
            return "motor:" + name, score
        if name in _BORROWED:
            return name, score
    return None


def _header_texts(grid: Grid, first: int, last: int) -> dict[int, str]:
    """Column -> header text of rows first..last, group cells spread over their merged span."""
    origins = merged_origins(grid)
    out: dict[int, list[str]] = {}
    width = len(grid.rows[last])
    for r in range(first, last + 1):
        for c in range(width):
            text = grid.rows[r][c]
            if not text and (r, c) in origins:
                r0, c0 = origins[(r, c)]
                text = grid.rows[r0][c0] if r0 >= first else ""
            if text and text not in out.get(c, []):
                out.setdefault(c, []).append(" ".join(text.split()))
    return {c: " / ".join(levels) for c, levels in out.items()}


def _map_columns(texts: dict[int, str]) -> tuple[dict[int, str], float, bool]:
    """(column -> field, total score, names a motor-only field) for one header block.

    The leaf (last level) names the column; a group level is used when the
    leaf alone names nothing (``OCPD / SIZE``).
    """
    candidates: list[tuple[float, int, str]] = []
    motorish = False
    for col, text in texts.items():
        levels = text.split(" / ")
        found = _cell_field(levels[-1])
        if found is None and len(levels) > 1:
            found = _cell_field(" ".join(levels)) or _cell_field(levels[0])
        if found is None:
            continue
        name, score = found
        if name.startswith("motor:"):
            motorish = True
            continue
        candidates.append((score, col, name))
    mapping: dict[int, str] = {}
    used: set[str] = set()
    total = 0.0
    for score, col, name in sorted(candidates, key=lambda c: (-c[0], c[1])):
        if name in used or col in mapping:
            continue
        mapping[col] = name
        used.add(name)
        total += score
    return mapping, total, motorish


def _headerish_row(cells: list[str]) -> bool:
    return any(cells) and not any(map(is_value_like, filter(None, cells)))


def _title_rows_above(grid: Grid, header_first: int, floor: int) -> int:
    """Index of the first title row (one filled cell naming feeders) directly above the header."""
    first = header_first
    r = header_first - 1
    while r >= floor and header_first - r <= _MAX_TITLE_ROWS:
        filled = [c for c in grid.rows[r] if c]
        if len(filled) != 1 or not _FEEDER_WORD.search(filled[0]):
            break
        first = r
        r -= 1
    return first


def _is_feeder_header(grid: Grid, first: int, last: int, mapping: dict[int, str], texts: dict[int, str]) -> bool:
    fields = set(mapping.values())
    if len(fields) < 3 or not fields & {"conductor", "ocpd"} or not fields & {"to", "name"}:
        return False
    above = [c for r in range(max(0, first - _MAX_TITLE_ROWS), first) for c in grid.rows[r] if c]
    hint = any(_FEEDER_WORD.search(t) for t in list(texts.values()) + above) or _FEEDER_WORD.search(grid.sheet or "")
    return bool(hint) or {"from", "to"} <= fields


def _header_block_at(grid: Grid, last: int, floor: int) -> tuple[int, dict[int, str], dict[int, str]] | None:
    """Best feeder header block ending at row ``last`` (one or two rows), or None."""
    if not _headerish_row(grid.rows[last]) or sum(1 for c in grid.rows[last] if c) < 2:
        return None
    best = None
    for first in (last, last - 1):
        if first < floor or not _headerish_row(grid.rows[first]):
            continue
        texts = _header_texts(grid, first, last)
        mapping, score, motorish = _map_columns(texts)
        if motorish or not _is_feeder_header(grid, first, last, mapping, texts):
            continue
        if best is None or score > best[0] + 1e-9:
            best = (score, first, mapping, texts)
    return None if best is None else (best[1], best[2], best[3])


def _last_non_empty(grid: Grid, first: int, stop: int) -> int:
    for r in range(stop - 1, first - 1, -1):
        if any(grid.rows[r]):
            return r
    return first - 1


def _without_next_title(grid: Grid, first: int, last: int) -> int:
    """Leave out one to three single-cell rows after a blank row: the next table's title."""
    r = last
    while r >= first and last - r < 3 and sum(1 for c in grid.rows[r] if c) == 1:
        r -= 1
    if r < last and r >= first and not any(grid.rows[r]):
        return _last_non_empty(grid, first, r)
    return last


def locate_feeder_tables(grid: Grid, motor_tables: list[LocatedTable] | tuple = ()) -> list[FeederTable]:
    """Every feeder schedule in one grid, top to bottom.

    A feeder table's rows run to the row before the next table's header
    (feeder or motor schedule) or the end of the grid.
    """
    n = len(grid.rows)
    motor_headers = {r for t in motor_tables for r in range(t.header_first, t.header_last + 1)}
    blocks = []
    floor = 0
    for last in range(n):
        if last in motor_headers:
            floor = last + 1
            continue
        found = _header_block_at(grid, last, floor)
        if found is None:
            continue
        first, mapping, texts = found
        if blocks and first <= blocks[-1][2]:
            continue  # the second row of a two-row header already taken
        blocks.append((_title_rows_above(grid, first, floor), first, last, mapping, texts))
        floor = last + 1
    starts = sorted({b[0] for b in blocks} | {t.header_first for t in motor_tables})
    motor_starts = {t.header_first for t in motor_tables}
    tables = []
    for title_first, first, last, mapping, texts in blocks:
        stop = next((s for s in starts if s > last), n)
        data_last = max(_last_non_empty(grid, last + 1, stop), last)
        if data_last == last and last + 1 in motor_starts:
            continue  # no rows of its own, right over a motor header: that header's group row (EQUIPMENT | SUPPLY ...)
        if stop < n:
            data_last = _without_next_title(grid, last + 1, data_last)
        columns = tuple(Column(c, grid.column_label(c), name, texts[c]) for c, name in sorted(mapping.items()))
        tables.append(FeederTable(grid, title_first, first, last, last + 1, data_last, columns))
    return tables


def trim_motor_tables(motor_tables: list[LocatedTable], feeder_tables: list[FeederTable]) -> list[LocatedTable]:
    """Motor tables without the feeder tables they swallowed.

    A motor header that is really a feeder header is dropped; a motor table
    whose data run into a feeder table ends at the last non-empty row above it.
    """
    out = []
    for table in motor_tables:
        if any(f.first <= table.header_last and table.header_first <= f.header_last for f in feeder_tables):
            continue
        starts = [f.first for f in feeder_tables if table.data_first <= f.first <= table.data_last]
        if starts:
            data_last = max(_last_non_empty(table.grid, table.data_first, min(starts)), table.header_last)
            table = replace(table, data_last=data_last)
        out.append(table)
    return out


def feeder_table_info(table: FeederTable) -> dict:
    """The 'tables read' entry of a feeder schedule (same keys as a motor table's)."""
    rn = table.grid.row_numbers
    mapped = {c.index for c in table.columns}
    texts = _header_texts(table.grid, table.header_first, table.header_last)
    where = table.grid.source(table.header_first)
    place = {"page": where.page, "table": where.table} if where.page is not None else {}
    return {
        "sheet": table.grid.sheet, **place, "status": "read as feeder schedule",
        "header_rows": f"{rn[table.header_first]}-{rn[table.header_last]}",
        "data_rows": f"{rn[table.data_first]}-{rn[table.data_last]}" if table.data_last >= table.data_first else "",
        "columns": [f"{c.letter}: {c.header} -> feeder {c.field}" for c in table.columns],
        "unmapped": [text for c, text in sorted(texts.items()) if c not in mapped],
    }


def _short(text: str, limit: int = 200) -> str:
    text = " ".join(text.split())
    return text if len(text) <= limit else text[: limit - 1] + "…"


def _row_reason(cells: list[str], mapped: dict[str, str], header_words: dict[str, str]) -> str | None:
    """Why a feeder-table row is not a feeder, or None when it is one."""
    filled = [c for c in cells if c]
    if not filled:
        return "blank row"
    first = filled[0]
    if _SPARE.match(mapped.get("name", "") or mapped.get("to", "") or first):
        return f"spare or space in the feeder schedule: '{_short(first, 60)}'"
    if _TOTAL.match(first):
        return f"total row in the feeder schedule: '{_short(' '.join(filled), 60)}'"
    repeats = sum(1 for f, text in mapped.items() if text and text.lower() == header_words.get(f, "").lower())
    if repeats >= 3:
        return "repeated feeder schedule header row"
    has_data = any(mapped.get(f) for f in ("conductor", "ocpd", "to", "from"))
    if _NOTE.match(first) and (not has_data or len(filled) == 1):
        return f"note under the feeder schedule: '{_short(' '.join(filled), 60)}'"
    if not has_data:
        return "no feeder data in the row (no source, load, conductor or device)"
    return None


def _parse_into(record: dict, sources: dict, problems: list, name: str, text: str, source: SourceRef,
                header: str, parser) -> None:
    parsed = parser(text)
    if parsed.value is not None:
        record[name] = parsed.value
        sources[name] = source
    elif not parsed.placeholder:
        problems.append(f"Cell {source.label()} ({header}) '{_short(text, 60)}' could not be read: "
                        f"{parsed.problem or 'unrecognised'}")


def read_feeder_table(table: FeederTable) -> tuple[list[FeederRow], list[SkippedRow]]:
    """Every row of a feeder table as a feeder or a skipped row (title, header, blank, note ...)."""
    grid = table.grid
    feeders: list[FeederRow] = []
    skipped: list[SkippedRow] = []
    for index in range(table.first, table.header_first):
        text = " | ".join(c for c in grid.rows[index] if c)
        skipped.append(SkippedRow(grid.source(index), "feeder schedule title", _short(text)))
    for index in range(table.header_first, table.header_last + 1):
        text = " | ".join(c for c in grid.rows[index] if c)
        skipped.append(SkippedRow(grid.source(index), "feeder schedule header row", _short(text)))
    header_words = {c.field: c.header.split(" / ")[-1] for c in table.columns}
    for index in range(table.data_first, table.data_last + 1):
        cells = grid.rows[index]
        mapped = {c.field: cells[c.index] for c in table.columns}
        reason = _row_reason(cells, mapped, header_words)
        row_source = grid.source(index)
        if reason is not None:
            skipped.append(SkippedRow(row_source, reason, _short(" | ".join(c for c in cells if c))))
            continue
        feeders.append(_read_feeder_row(table, index, mapped, row_source))
    return feeders, skipped


def _read_feeder_row(table: FeederTable, index: int, mapped: dict[str, str], row_source: SourceRef) -> FeederRow:
    record: dict = {}
    sources: dict[str, SourceRef] = {}
    raw: dict[str, str] = {}
    problems: list[str] = []
    for col in table.columns:
        text = " ".join(mapped[col.field].split())
        if not text:
            continue
        raw[col.header] = text
        source = row_source.at_column(col.letter)
        if col.field == "conductor":
            _parse_into(record, sources, problems, "conductor", text, source, col.header, values.parse_conductor)
        elif col.field == "ocpd":
            kind = " ".join(mapped.get("ocpd_type", "").split())
            _parse_into(record, sources, problems, "ocpd", f"{text} {kind}".strip(), source, col.header,
                        values.parse_device)
        elif col.field != "ocpd_type":
            record[col.field] = text
            sources[col.field] = source
    target = record.get("to") or record.get("name") or ""
    key, label = group_key(target) if target else ("", "")
    name = record.get("name") or record.get("to") or f"(row {row_source.row})"
    record.setdefault("name", name)
    return FeederRow(key, label, record, row_source, sources, raw, tuple(problems), "feeder table")


# --------------------------------------------------------------------------- feeder rows inside a motor schedule

# A heading row that names a source: distribution-equipment words, or a voltage in brackets.
_SOURCE_WORDS = re.compile(r"\b(?:mcc|panel|panelboard|pnl|swbd|switchboard|switchgear|feeder|fdr|splitter|busway|"
                           r"distribution|msb|mdp|cdp)\b|\(\s*\d{2,5}(?:\s*/\s*\d{2,5})?\s*v\b", re.IGNORECASE)
_RATING_FIELDS = ("hp", "kw", "fla_a")


def _heading_feeder(motor: Motor) -> FeederRow | None:
    """The motor-schedule row as a feeder, when it is a source heading carrying feeder data."""
    record = motor.record
    if any(record.get(f) is not None for f in _RATING_FIELDS):
        return None
    if record.get("conductor") is None and record.get("ocpd") is None:
        return None
    title = str(record.get("tag", ""))  # the description is not enough: 'CONTROL PANEL FAN' is a motor
    if not _SOURCE_WORDS.search(title):
        return None
    key, label = group_key(title)
    if not key:
        return None
    feeder = {"name": " ".join(title.split()), "to": label}
    sources = {"name": motor.sources.get("tag", motor.source), "to": motor.sources.get("tag", motor.source)}
    for name in ("conductor", "ocpd", "fed_from", "remarks"):
        if record.get(name) is not None:
            feeder["from" if name == "fed_from" else name] = record[name]
            if name in motor.sources:
                sources["from" if name == "fed_from" else name] = motor.sources[name]
    problems = tuple(f.message for f in motor.input_findings)
    return FeederRow(key, label, feeder, motor.source, sources, dict(motor.raw), problems, "schedule heading")


def split_heading_feeders(motors: list[Motor]) -> tuple[list[Motor], list[FeederRow]]:
    """Take feeder heading rows out of one table's motors.

    Motors below such a heading whose source came from an earlier heading
    (not from their own FED FROM cell) are moved to the heading's source.
    """
    kept: list[Motor] = []
    feeders: list[FeederRow] = []
    current: FeederRow | None = None
    for motor in motors:
        feeder = _heading_feeder(motor)
        if feeder is not None:
            feeders.append(feeder)
            current = feeder
            continue
        if current is not None:
            motor = _under_heading(motor, current)
        kept.append(motor)
    return kept, feeders


def _under_heading(motor: Motor, heading: FeederRow) -> Motor:
    source = motor.sources.get("fed_from")
    own_cell = source is not None and source.row == motor.source.row and source.sheet == motor.source.sheet
    if own_cell:
        return motor
    if source is not None and (source.page or 0, source.row) > (heading.source.page or 0, heading.source.row):
        return motor  # a later plain heading already named its source
    record = {**motor.record, "fed_from": heading.record["name"]}
    sources = {**motor.sources, "fed_from": heading.sources.get("name", heading.source)}
    return replace(motor, record=record, sources=sources)
