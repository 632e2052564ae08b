"""Turn the data rows of a located table into motor records (or skipped rows).

Each row is classified first (blank, section heading, spare/space, total,
note, repeated header, motor). Motor rows have every mapped cell read by its
value parser; the record is then validated against
``schemas/motor.schema.json``. Unreadable cells and schema violations become
needs-info findings naming the field and cell, never exceptions, and the
offending value is left out of the record so that the checks which need it
say so.
"""
from __future__ import annotations

import json
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import lru_cache
from operator import itemgetter
from pathlib import Path
from typing import Any, NamedTuple

from jsonschema import Draft202012Validator

from checker.ingest import values
from checker.ingest.layout import LocatedTable
from checker.model import CellSources, Finding, Motor, Parsed, SkippedRow, SourceRef, Status

SCHEMA_PATH = Path(__file__).resolve().parents[2] / "schemas" / "motor.schema.json"

INPUT_CHECK = "cell-value"
SCHEMA_CHECK = "record-schema"
INPUT_RULE = "input"

_SPARE_RE = re.compile(r"^\W*(spare|space|future|provision|not\s+used|deleted|vacant)\b", re.IGNORECASE)
_TOTAL_RE = re.compile(r"^\W*(grand\s+)?(sub-?)?totals?\b|\btotal\s+(connected|hp|fla|load|kw|amps?)\b", re.IGNORECASE)
_NOTE_RE = re.compile(r"^\s*(general\s+)?notes?\b|^\s*\(?\d{1,2}[.)]\s+[A-Za-z]|^\s*\*+\s*[A-Za-z]", re.IGNORECASE)
_MOTOR_TYPE_WORDS = (
    (re.compile(r"wound|\bw\.?r\.?\b|slip[- ]?ring", re.IGNORECASE), "wound-rotor"),
    (re.compile(r"synch", re.IGNORECASE), "synchronous"),
    (re.compile(r"\bd\.?c\.?\b|direct[- ]current", re.IGNORECASE), "dc"),
    (re.compile(r"squirrel|induction|\bsc\b|\bsqc\b|\bnema\s+design\b|design\s+[abcd]\b", re.IGNORECASE), "squirrel-cage"),
)

# Words that make a section heading name the equipment feeding the motors below it.
_SOURCE_RE = re.compile(r"\b(mcc|panel|pnl|swbd|switchboard|switchgear|substation|bus|splitter|"
                        r"[a-z]{0,3}dp|lp|pp|fed\s+from)\b|\b(mcc|lp|pp|dp)-?\d", re.IGNORECASE)

# Layout fields whose presence makes a row a motor rather than a heading.
_MOTOR_DATA_FIELDS = ("hp", "kw", "fla", "voltage", "voltage_phase", "conductor", "ocpd", "mca", "mocp")

# Stands in for a formula saved without a value while a row is classified, so that a
# row of such formulas is still read as a motor (and each formula reported), not skipped.
_FORMULA_STAND_IN = "(formula without a saved value)"
# Fields that hold amounts or sizes; a date or time there is a cell formatted as a date.
_AMOUNT_FIELDS = frozenset({"hp", "kw", "fla", "voltage", "voltage_phase", "phase", "frequency", "service_factor",
                            "conductor", "ocpd", "mca", "mocp"})
_DATE_TEXT = re.compile(r"\d{4}-\d{2}-\d{2}(?:[ T]\d{2}:\d{2}(?::\d{2})?)?|\d{1,2}:\d{2}(?::\d{2})?"
                        r"|\d{1,2}/\d{1,2}/\d{4}")


def parse_motor_type(text: str) -> Parsed:
    if not text.strip():
        return Parsed(placeholder=True)
    for pattern, kind in _MOTOR_TYPE_WORDS:
        if pattern.search(text):
            return Parsed(kind)
    return Parsed(problem=f"motor type '{text[:60]}' is not one this checker knows")


def parse_frequency(text: str) -> Parsed:
    parsed = values.parse_current_a(re.sub(r"(?i)\s*hz\b", "", text))
    if parsed.value is None:
        return parsed
    return Parsed({"frequency_hz": parsed.value}, notes=parsed.notes)


def _nested(key: str, parser: Callable[[str], Parsed]) -> Callable[[str], Parsed]:
    def wrapped(text: str) -> Parsed:
        parsed = parser(text)
        return parsed if parsed.value is None else Parsed({key: parsed.value}, parsed.problem, notes=parsed.notes)
    return wrapped


@dataclass(frozen=True, slots=True)
class FieldReader:
    """How one layout field becomes part of the record.

    ``target`` is the record field the value goes to; ``merge`` readers
    return a dict merged into the record (voltage/phase/frequency cells).
    """

    parser: Callable[[str], Parsed]
    target: str | None = None
    merge: bool = False


FIELD_READERS: dict[str, FieldReader] = {
    "tag": FieldReader(values.parse_text, "tag"),
    "description": FieldReader(values.parse_text, "description"),
    "hp": FieldReader(values.parse_hp, "hp"),
    "kw": FieldReader(values.parse_kw, "kw"),
    "voltage_phase": FieldReader(values.parse_voltage_phase, merge=True),
    "voltage": FieldReader(values.parse_voltage, merge=True),
    "phase": FieldReader(values.parse_phase, merge=True),
    "frequency": FieldReader(parse_frequency, merge=True),
    "fla": FieldReader(values.parse_current_a, "fla_a"),
    "duty": FieldReader(values.parse_duty, "duty"),
    "starting": FieldReader(values.parse_starting_details, "starting", merge=True),
    "motor_type": FieldReader(parse_motor_type, "motor_type"),
    "service_factor": FieldReader(values.parse_service_factor, "service_factor"),
    "conductor": FieldReader(values.parse_conductor, "conductor"),
    "ocpd": FieldReader(values.parse_device, "ocpd"),
    "fed_from": FieldReader(values.parse_text, "fed_from"),
    "overload": FieldReader(values.parse_overload, "overload", merge=True),
    "disconnect": FieldReader(values.parse_disconnect, "disconnect", merge=True),
    "temp_rise": FieldReader(values.parse_temp_rise_c, "temp_rise_c"),
    "length": FieldReader(values.parse_length_m, "length_m"),
    "ambient": FieldReader(values.parse_ambient_c, "ambient_c"),
    "ccc": FieldReader(values.parse_conductor_count, "current_carrying_conductors"),
    "mca": FieldReader(values.parse_current_a, "mca_a"),
    "mocp": FieldReader(values.parse_mocp, "mocp"),
    "drive_input": FieldReader(values.parse_current_a, "drive_input_a"),
    "remarks": FieldReader(values.parse_text, "remarks"),
}


_STRICT_LEFTOVER_FIELDS = frozenset({"conductor", "ocpd"})

# A power cell whose own unit contradicts its column ('7.5 hp' under kW) is read in the unit it states.
_OTHER_POWER_UNIT = {"kw": ("hp", values.parse_hp), "hp": ("kw", values.parse_kw)}
# ... only when the cell names that unit: '7,5' under HP is not a kW value (a decimal comma, needs-info).
_POWER_UNIT_WORD = {"hp": re.compile(r"(?<![a-z])(?:h\.?\s*p\.?|horse\s*-?\s*power)(?![a-z])", re.IGNORECASE),
                    "kw": re.compile(r"(?<![a-z])kw(?![a-z])", re.IGNORECASE)}


@lru_cache(maxsize=1)
def motor_validator() -> Draft202012Validator:
    # The bundled schema itself is checked against the meta-schema by tests/test_normalize.py.
    return Draft202012Validator(json.loads(SCHEMA_PATH.read_text(encoding="utf-8")))


# Most rows are valid and most of their values repeat, so validity is decided field by field and
# remembered per value: exact, because the motor schema's top level only has keywords that judge
# each field on its own ("properties", "additionalProperties") or key presence ("required").
# A row found invalid (or a schema that does not split so) is validated whole, for its messages.
_SPLITTABLE_KEYWORDS = frozenset({"$schema", "$id", "title", "description", "$comment", "type", "required",
                                  "additionalProperties", "properties", "$defs"})
_LENGTH_ONLY_KEYWORDS = frozenset({"type", "minLength", "maxLength", "description", "title", "$comment"})
_MAX_REMEMBERED = 200_000
_field_validity: dict[tuple, bool] = {}


@lru_cache(maxsize=1)
def _field_validator() -> tuple[Draft202012Validator, frozenset[str], frozenset[str]] | None:
    """(validator of one-field records, required fields, fields whose text is judged by its length
    alone), or None when the schema's top level does not split into per-field checks."""
    schema = json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))
    if not set(schema) <= _SPLITTABLE_KEYWORDS or schema.get("type", "object") != "object":
        return None
    by_length = frozenset(name for name, sub in schema.get("properties", {}).items()
                          if isinstance(sub, dict) and sub.get("type") == "string" and set(sub) <= _LENGTH_ONLY_KEYWORDS)
    one_field = Draft202012Validator({k: v for k, v in schema.items() if k != "required"})
    return one_field, frozenset(schema.get("required", ())), by_length


def frozen_value(value: Any) -> Any:
    """Hashable stand-in for a record value; the class is kept so that 1, 1.0 and True differ."""
    cls = value.__class__
    if cls is str or value is None:
        return value
    if cls is dict:
        return cls, tuple((k, frozen_value(v)) for k, v in value.items())
    if cls is list or cls is tuple:
        return cls, tuple(frozen_value(v) for v in value)
    return cls, value


def value_valid(name: str, value: Any) -> bool:
    """Whether field ``name`` holding ``value`` satisfies the motor schema on its own (remembered
    per value; False also when the schema does not split into per-field checks)."""
    split = _field_validator()
    if split is None:
        return False
    one_field, _, by_length = split
    cls = value.__class__
    try:
        if cls is str:
            key = (name, len(value)) if name in by_length else (name, value)
        elif cls is dict or cls is list or cls is tuple:
            key = (name, frozen_value(value))
        else:  # a number, bool or None: its class keeps 1, 1.0 and True apart
            key = (name, cls, value)
        valid = _field_validity.get(key)
    except TypeError:  # a value that cannot be hashed: judged each time
        return one_field.is_valid({name: value})
    if valid is None:
        valid = one_field.is_valid({name: value})
        if len(_field_validity) >= _MAX_REMEMBERED:
            _field_validity.clear()
        _field_validity[key] = valid
    return valid


class FrozenValues:
    """Hashable stand-ins of record values, like ``frozen_value``, but each container (dict, list)
    stands in as one plain object: the same object for equal containers, equal to nothing else.

    Rows with the same cell text share one value object (each distinct text is read once per
    table and the value handed out is never changed afterwards), so a review freezes most
    containers once, by identity, and its memo keys hash a few objects instead of nested tuples.
    Text, floats, None and bare objects (a caller's marker for a missing field) stand for
    themselves: none of them equals another's stand-in (ints and bools are kept apart from floats
    by their class). Use one instance per review, on records nothing changes while it lives.
    """

    def __init__(self) -> None:
        self._known: dict[int, tuple[Any, object]] = {}  # id(container) -> (container, stand-in)
        self._stand_ins: dict[Any, object] = {}          # frozen_value(container) -> stand-in

    def __call__(self, value: Any) -> Any:
        cls = value.__class__
        if cls is str or cls is float or value is None or cls is object:  # a bare object: a caller's marker
            return value
        if cls is dict or cls is list or cls is tuple:
            known = self._known.get(id(value))
            if known is not None and known[0] is value:  # the object is held, so its id is not reused
                return known[1]
            frozen = frozen_value(value)
            stand_in = self._stand_ins.get(frozen)
            if stand_in is None:
                stand_in = self._stand_ins[frozen] = object()  # equal only to itself
            if len(self._known) >= _MAX_REMEMBERED:
                self._known.clear()
            self._known[id(value)] = (value, stand_in)
            return stand_in
        return cls, value


def record_valid(record: dict, known: dict[str, bool] | None = None) -> bool | None:
    """Whether ``record`` satisfies the motor schema (None: decide with the full validator).

    ``known`` gives the validity of fields already judged (a cell text's value is judged once
    per table); the other fields are judged here.
    """
    split = _field_validator()
    if split is None:
        return None
    _, required, _ = split
    if not record.keys() >= required:
        return False
    known = known or {}
    if all(map(known.get, record)):  # every field already judged, and valid (the usual row)
        return True
    for name, value in record.items():
        valid = known.get(name)
        if valid is None:
            valid = value_valid(name, value)
        if not valid:
            return False
    return True


@dataclass
class TableResult:
    motors: list[Motor] = field(default_factory=list)
    skipped: list[SkippedRow] = field(default_factory=list)
    hidden_motor_rows: list[int] = field(default_factory=list)


def _short(text: str, limit: int = 60) -> str:
    text = " ".join(text.split())
    return text if len(text) <= limit else text[: limit - 1] + "…"


def classify_row(cells: list[str], mapped: dict[str, str], header_texts: dict[str, str],
                 repeats: int | None = None) -> str | None:
    """Why a row is not a motor, or None when it is one. ``header_texts`` are the columns' last
    header level, in lower case; ``repeats``, if known, is ``header_repeats`` for the row."""
    filled = [c for c in cells if c]
    if not filled:
        return "blank row"
    first = filled[0]
    get = mapped.get
    # 'SPARE' as the tag marks an unused position; a description such as 'Spare sump pump' with motor
    # ratings is an installed standby motor and is reviewed.
    rated = get("hp") or get("kw") or get("fla")
    if _SPARE_RE.match(get("tag", "")) or (not rated and (
            _SPARE_RE.match(get("description", "")) or (len(filled) <= 2 and _SPARE_RE.match(first)))):
        return "spare or space, not a motor"
    if repeats is None:
        repeats = header_repeats(mapped, header_texts)
    if repeats >= 3 and repeats * 2 >= sum(1 for t in mapped.values() if t):
        return "repeated header row"
    if _TOTAL_RE.search(first) or _TOTAL_RE.search(get("tag", "")):
        return "total row"
    has_data = any(map(get, _MOTOR_DATA_FIELDS))
    if _NOTE_RE.match(first) and (not has_data or len(filled) == 1):
        return "note"
    if not has_data:
        if len(set(filled)) == 1 or (len(filled) == 2 and _SOURCE_RE.search(first)):
            return "section heading"
        return "no motor data in the row (no hp, kW, FLA, voltage, conductor or device)"
    return None


def header_repeats(mapped: dict[str, str], header_texts: dict[str, str]) -> int:
    """How many of a row's mapped cells repeat their column's header (``header_texts``: lower case)."""
    return sum(1 for f, text in mapped.items() if text and header_texts.get(f, "").endswith(text.lower()))


def _header_repeats_by_row(rows: list[list[str]], columns: dict[str, int], header_texts: dict[str, str]) -> list[int]:
    """``header_repeats`` of every row, a column at a time (``columns``: field -> the column it is read from)."""
    counts = [0] * len(rows)
    for name, index in columns.items():
        header = header_texts.get(name, "")
        texts = [cells[index] for cells in rows]
        # Each distinct text once; most columns have none that ends the header (no row to visit).
        repeating = {t for t in set(texts) if t and header.endswith(t.lower())}
        if repeating:
            for row, text in enumerate(texts):
                if text in repeating:
                    counts[row] += 1
    return counts


def _input_finding(message: str, target: str | None) -> Finding:
    return Finding(INPUT_CHECK, INPUT_RULE, Status.NEEDS_INFO, message, fields=(target,) if target else ())


def _read_cell(reader, col, text: str) -> tuple[Parsed, str | None]:
    """(parsed value, record field) of one non-empty cell: the same for every row of the column."""
    parsed = reader.parser(values.with_header_hint(col.field, text, col.header))  # 'LENGTH (FT)', 'MAX FUSE'
    target = reader.target
    if parsed.problem and col.field in _OTHER_POWER_UNIT and \
            _POWER_UNIT_WORD[_OTHER_POWER_UNIT[col.field][0]].search(text):
        other_field, other_parser = _OTHER_POWER_UNIT[col.field]
        other = other_parser(text)
        if other.value is not None and not other.problem:
            parsed, target = other, other_field  # the unit written in the cell wins
    return parsed, target


class _CellReading(NamedTuple):  # a tuple: made for every distinct text of every column
    """What one distinct cell text of a column reads as, worked out once per table.

    ``values`` are the (record field, value) pairs the cell gives, each with its validity
    against the motor schema (decided once, here); ``date`` marks a date or time where an
    amount belongs; ``leftovers`` are words of a conductor or device cell that were not read.
    """

    parsed: Parsed
    target: str | None
    values: tuple[tuple[str, Any, bool], ...]
    date: bool = False
    leftovers: tuple[str, ...] = ()
    flagged: bool = False  # the cell gets a finding: a date, a problem or leftovers


@dataclass(frozen=True, slots=True)
class _ColumnPlan:
    """One mapped column as the row loop uses it (worked out once per table)."""

    col: Any
    index: int
    raw_key: str
    letter: str | None
    reader: FieldReader | None
    cache: dict


class _ColumnPlans(list):
    """The table's column plans, the column of a separate device type ("FUSE" / "CB"), if any, and
    whether the table has separate bond or raceway columns; and the row templates (see
    ``_templated_row``): the free-text columns (tags, descriptions, sources: a new text on most rows)
    and a getter of the other columns' texts, which repeat from row to row."""

    device_type_index: int | None = None
    conductor_extras: bool = True
    free_text: tuple = ()        # plans of the free-text columns, in column order
    repeating: Any = None        # cells -> the texts of the other columns (None: no templates)
    templates: dict | None = None
    formula_rows: frozenset = frozenset()  # rows holding a formula saved without its value


def _plan_templates(plans: _ColumnPlans) -> None:
    """Set up row templates when they give exactly what the column loop gives: no device-type
    column (it changes another column's text), each column's own raw key, and at least one column
    of each kind."""
    raw_keys = [plan.raw_key for plan in plans]
    free = tuple(plan for plan in plans if plan.reader is not None and plan.reader.parser is values.parse_text)
    others = [plan.index for plan in plans if all(plan is not f for f in free)]
    if plans.device_type_index is not None or len(set(raw_keys)) != len(raw_keys) or not free or not others:
        return
    plans.free_text = free
    plans.repeating = itemgetter(*others) if len(others) > 1 else (lambda cells, i=others[0]: (cells[i],))
    plans.templates = {}


def _column_plans(table: LocatedTable) -> _ColumnPlans:
    plans = _ColumnPlans(_ColumnPlan(col, col.index, col.header or col.field, col.letter,
                                     None if col.field in ("bond", "raceway") else FIELD_READERS.get(col.field), {})
                         for col in table.columns)
    plans.device_type_index = next((col.index for col in table.columns if col.field == "ocpd_type"), None)
    plans.conductor_extras = any(col.field in ("bond", "raceway") for col in table.columns)
    plans.formula_rows = frozenset(row for row, _ in table.grid.formula_cells)
    _plan_templates(plans)
    return plans


_FREE = object()  # a free-text column's place in a template, filled (or left out) row by row
_MAX_TEMPLATES = 4096  # each holds a row's four dicts; rows with other texts are read column by column


def _reading(plan: _ColumnPlan, text: str) -> _CellReading:
    reading = plan.cache.get(text)
    if reading is None:
        if len(plan.cache) >= _MAX_REMEMBERED:
            plan.cache.clear()
        reading = plan.cache[text] = _cell_reading(plan, text)
    return reading


def _row_template(plans: _ColumnPlans, cells: list[str]) -> tuple | None:
    """(record, columns, validity, raw) as the column loop builds them from this row, with each
    free-text column's keys held in their places by ``_FREE``; None when a template would not give
    the same (a repeating cell with a finding, or two columns giving one field)."""
    record: dict[str, Any] = {}
    columns: dict[str, Any] = {}
    valid: dict[str, Any] = {}
    raw: dict[str, Any] = {}
    free_keys: set[str] = set()
    free_columns = {plan.index for plan in plans.free_text}
    for plan in plans:
        reader = plan.reader
        if plan.index in free_columns:
            key = reader.target
            if key in record:
                return None
            record[key] = columns[key] = valid[key] = raw[plan.raw_key] = _FREE
            free_keys.add(key)
            continue
        text = cells[plan.index]
        if not text:
            continue
        raw[plan.raw_key] = text
        if reader is None:
            continue
        reading = _reading(plan, text)
        if reading.flagged:
            return None  # its finding names the row's own cell
        for key, value, ok in reading.values:
            if key in free_keys or (key in record and not reader.merge):
                return None  # a free-text field given by another column too, or a field given twice
            if key not in record:
                record[key], columns[key], valid[key] = value, plan.letter, ok
    return record, columns, valid, raw


def _templated_row(plans: _ColumnPlans, cells: list[str], row_source: SourceRef,
                   findings: list[Finding]) -> tuple | None:
    """(record, columns, validity, raw) of a row from the template of the rows whose other
    columns hold the same texts, then its own free-text cells; None: read it column by column."""
    key = plans.repeating(cells)
    template = plans.templates.get(key)
    if template is None:
        if key in plans.templates or len(plans.templates) >= _MAX_TEMPLATES:
            return None  # no template for these texts, or as many kept as memory allows
        template = plans.templates[key] = _row_template(plans, cells)
        if template is None:
            return None
    record, columns, valid, raw = (part.copy() for part in template)
    for plan in plans.free_text:
        text = cells[plan.index]
        field = plan.reader.target
        if text:
            raw[plan.raw_key] = text
            reading = plan.cache.get(text)
            if reading is None and values.is_plain(text):  # a tag or description of its own: not kept
                record[field], columns[field], valid[field] = text, plan.letter, value_valid(field, text)
                continue
            reading = reading or _reading(plan, text)
            if reading.flagged:
                findings.append(_cell_finding(plan, row_source, text, reading))
            if reading.values:
                (_, value, ok), = reading.values
                record[field], columns[field], valid[field] = value, plan.letter, ok
                continue
        else:
            del raw[plan.raw_key]
        del record[field], columns[field], valid[field]
    return record, columns, valid, raw


def _cell_reading(plan: _ColumnPlan, text: str) -> _CellReading:
    col, reader = plan.col, plan.reader
    if reader.parser is values.parse_text:  # no header hint, date or unit applies to free text
        plain = values.plain_text(text)
        if plain is not None:
            return _CellReading(plain, reader.target, ((reader.target, text, value_valid(reader.target, text)),))
    if col.field in _AMOUNT_FIELDS and _DATE_TEXT.fullmatch(text):
        return _CellReading(Parsed(), reader.target, (), date=True, flagged=True)
    parsed, target = _read_cell(reader, col, text)
    leftovers: tuple[str, ...] = ()
    if not parsed.problem and parsed.value is not None and col.field in _STRICT_LEFTOVER_FIELDS:
        leftovers = tuple(n for n in parsed.notes if n.startswith("ignored '"))
    pairs: tuple = ()
    if parsed.value is not None:
        given = parsed.value.items() if reader.merge else ((target, parsed.value),)
        pairs = tuple((key, value, value_valid(key, value)) for key, value in given)
    return _CellReading(parsed, target, pairs, leftovers=leftovers, flagged=bool(parsed.problem or leftovers))


def read_motor(table: LocatedTable, row_index: int, section: tuple[str, SourceRef] | None,
               plans: _ColumnPlans | None = None) -> Motor:
    """Build and validate one motor record from a data row.

    ``plans`` (from ``_column_plans``, one list per table) remember what each distinct cell
    text of a column reads as, so a text repeated down a column is read and validated once.
    """
    plans = _column_plans(table) if plans is None else plans
    # Values are shared by every row with the same cell text and are never changed in place
    # (a conductor amended from other columns is copied first: see _attach_conductor_extras).
    grid = table.grid
    row_number = grid.row_numbers[row_index]
    cells = grid.rows[row_index]
    row_source = grid.source(row_index)
    record: dict[str, Any] = {}
    columns: dict[str, Any] = {}
    valid: dict[str, bool] = {}
    raw: dict[str, str] = {}
    findings: list[Finding] = []
    formula_cells = grid.formula_cells
    device_type = cells[plans.device_type_index] if plans.device_type_index is not None else ""
    built = None
    if plans.templates is not None and row_index not in plans.formula_rows:  # those say which cell: column by column
        built = _templated_row(plans, cells, row_source, findings)
    if built is not None:
        record, columns, valid, raw = built
    for plan in (plans if built is None else ()):
        text = cells[plan.index]
        if not text:
            if formula_cells and (row_index, plan.index) in formula_cells:
                col, reader = plan.col, plan.reader
                findings.append(_input_finding(
                    f"Cell {row_source.at_column(plan.letter).label()} ({col.header}) holds a formula saved without "
                    f"its result; formulas are never calculated here - recalculate and save the workbook in a "
                    f"spreadsheet program, or type the value, and resubmit", (reader.target if reader else None)
                    or col.field))
            continue
        raw[plan.raw_key] = text
        reader = plan.reader
        if reader is None:
            continue
        if device_type and plan.col.field == "ocpd":
            text = f"{text} {device_type}"  # a separate device-type column ("FUSE" / "CB") completes the cell
        reading = _reading(plan, text)
        if reading.flagged:
            findings.append(_cell_finding(plan, row_source, text, reading))
        if not reading.values:
            continue
        if reader.merge:
            for key, value, ok in reading.values:
                if key not in record:
                    record[key], columns[key], valid[key] = value, plan.letter, ok
        else:
            (key, value, ok), = reading.values
            record[key], columns[key], valid[key] = value, plan.letter, ok
    sources = CellSources(row_source, columns)
    if plans.conductor_extras and _attach_conductor_extras(table, cells, row_source, record, findings):
        valid.pop("conductor", None)  # amended from other columns: validated as it now is
    if "fed_from" not in record and section is not None:
        record["fed_from"], columns["fed_from"] = section
    tag = record.get("tag")
    if not tag:
        tag = f"(row {row_number})"
        findings.append(_input_finding(f"Row {row_number} has motor data but no tag; it is reviewed as '{tag}'.", "tag"))
        record["tag"] = tag
        valid.pop("tag", None)
    findings.extend(_schema_findings(record, sources, valid))
    return Motor(tag=str(record["tag"]), record=record, source=row_source, sources=sources, raw=raw,
                 input_findings=tuple(findings))


def _cell_finding(plan: _ColumnPlan, row_source: SourceRef, text: str, reading: _CellReading) -> Finding:
    """The needs-info finding of a cell that is a date, could not be read, or was read only in part."""
    col, target = plan.col, reading.target
    label = row_source.at_column(plan.letter).label()
    if reading.date:
        return _input_finding(
            f"Cell {label} ({col.header}) holds a date or time '{text}' where a number belongs; the "
            f"cell is probably formatted as a date - check the value and resubmit", target or col.field)
    if reading.parsed.problem:
        return _input_finding(f"Cell {label} ({col.header}) '{_short(text)}' could not be read: "
                              f"{reading.parsed.problem}", target or col.field)
    # unknown words in a conductor or device cell may change the answer
    return _input_finding(f"Cell {label} ({col.header}) '{_short(text)}' was read only in part "
                          f"({'; '.join(reading.leftovers)}); confirm the rest does not change it", target)


def _attach_conductor_extras(table, cells, row_source, record, findings) -> bool:
    """Fold separate bond/ground and raceway columns into the conductor record; True if it changed."""
    conductor = record.get("conductor")
    if conductor is None or not any(cells[col.index] for col in table.columns if col.field in ("bond", "raceway")):
        return False
    # The conductor value is shared with other rows of the same text: this row's is a copy.
    conductor = record["conductor"] = {k: (list(v) if isinstance(v, list) else v) for k, v in conductor.items()}
    changed = False
    for col in table.columns:
        if col.field not in ("bond", "raceway"):
            continue
        text = cells[col.index]
        if not text:
            continue
        if col.field == "raceway":
            changed = True
            conductor.setdefault("raceway", " ".join(text.split()))
            continue
        parsed = values.parse_conductor(text)
        if parsed.value is None:
            if not parsed.placeholder:
                findings.append(_input_finding(
                    f"Cell {row_source.at_column(col.letter).label()} ({col.header}) '{_short(text)}' could not be "
                    f"read as a bond conductor: {parsed.problem}", "conductor"))
            continue
        changed = True
        conductor.setdefault("bond_size", parsed.value["size"])
        if parsed.value.get("material_stated"):
            conductor.setdefault("bond_material", parsed.value["material"])
    return changed


def _schema_findings(record: dict, sources: CellSources, known: dict[str, bool] | None = None) -> list[Finding]:
    """Validate against the motor schema; drop each offending field and say why.

    ``known`` gives the validity of fields whose values were judged already (see ``record_valid``).
    """
    if record_valid(record, known):
        return []
    findings = []
    bad_fields: set[str] = set()
    for error in sorted(motor_validator().iter_errors(record), key=lambda e: list(e.absolute_path)):
        path = list(error.absolute_path)
        field_name = str(path[0]) if path else "record"
        if field_name in bad_fields:
            continue
        bad_fields.add(field_name)
        where = f"cell {sources[field_name].label()}" if field_name in sources else "the row"
        findings.append(Finding(SCHEMA_CHECK, INPUT_RULE, Status.NEEDS_INFO,
                                f"Value for {field_name} in {where} is not usable: {error.message}.",
                                fields=(field_name,)))
    for name in bad_fields:
        if name != "tag":
            record.pop(name, None)
    return findings


def normalize_table(table: LocatedTable) -> TableResult:
    """Every data row of the table becomes a motor or a skipped row."""
    result = TableResult()
    grid = table.grid
    header_texts = {col.field: col.header.split(" / ")[-1].lower() for col in table.columns}
    section: tuple[str, SourceRef] | None = None
    plans = _column_plans(table)
    formula_rows = plans.formula_rows
    mapped_columns = [(col.field, col.index) for col in table.columns]
    # A field mapped twice is read from its last column (as the dict below keeps it).
    repeats = _header_repeats_by_row(grid.rows[table.data_first:table.data_last + 1], dict(mapped_columns),
                                     header_texts)
    for index in range(table.data_first, table.data_last + 1):
        cells = grid.rows[index]
        row_number = grid.row_numbers[index]
        if index in formula_rows:  # the stand-in repeats no header: the count above still holds
            cells = [_FORMULA_STAND_IN if (index, i) in grid.formula_cells and not c else c for i, c in enumerate(cells)]
        mapped = {field: cells[column] for field, column in mapped_columns}
        reason = classify_row(cells, mapped, header_texts, repeats[index - table.data_first])
        cells = grid.rows[index]
        if reason is None:
            result.motors.append(read_motor(table, index, section, plans))
            if row_number in grid.hidden_rows:
                result.hidden_motor_rows.append(row_number)
            continue
        source = grid.source(index)
        if reason == "section heading":
            first_col = next(i for i, c in enumerate(cells) if c)
            heading = " ".join(cells[first_col].split())
            # Only a heading naming a source (MCC, panel, ...) feeds the rows below; an area heading does not.
            section = (heading, source.at_column(grid.column_label(first_col))) if _SOURCE_RE.search(heading) else None
        result.skipped.append(SkippedRow(source, reason, _short(" | ".join(c for c in cells if c), 200)))
    return result

