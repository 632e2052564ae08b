"""The small shared vocabulary of motorcheck.

Every layer (ingest, rules, report, cli) speaks in these types and nothing
else imports upward. All types are plain frozen dataclasses so that a review
is deterministic and easy to serialise.

Units are carried in names: ``rating_a`` is amperes, ``voltage_v`` volts.
"""
from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from enum import Enum
from typing import Any


class Status(str, Enum):
    """Outcome of one check on one motor."""

    PASS = "pass"
    FAIL = "fail"
    NEEDS_INFO = "needs-info"


def column_letter(index0: int) -> str:
    """Spreadsheet column letters for a 0-based column index (0 -> 'A', 26 -> 'AA')."""
    letters = ""
    n = index0 + 1
    while n:
        n, rem = divmod(n - 1, 26)
        letters = chr(65 + rem) + letters
    return letters


@dataclass(frozen=True, slots=True)
class SourceRef:
    """Where a row or a value came from, as a person would find it.

    ``row`` is 1-based and is the row number a spreadsheet program shows (for
    CSV: the record's line number). ``column`` is the spreadsheet column letter
    (``"C"``) or, for a PDF table, the 1-based column number as text.
    """

    file: str
    row: int
    sheet: str | None = None
    page: int | None = None
    table: int | None = None
    column: str | None = None

    def at_column(self, column: str | None) -> SourceRef:
        return SourceRef(self.file, self.row, self.sheet, self.page, self.table, column)

    def label(self) -> str:
        """Short human locator: ``Motors!C12``, ``row 12`` or ``p. 3, table 1, row 5``."""
        return self.label_at(self.column)

    def label_at(self, column: str | None) -> str:
        """``label()`` of this row at ``column`` (``self.at_column(column).label()``, made directly)."""
        if self.page is not None:
            where = f"p. {self.page}"
            if self.table is not None:
                where += f", table {self.table}"
            where += f", row {self.row}"
            if column:
                where += f", col {column}"
            return where
        cell = f"{column}{self.row}" if column else f"row {self.row}"
        return f"{self.sheet}!{cell}" if self.sheet else cell

    def to_dict(self) -> dict[str, Any]:
        out: dict[str, Any] = {"file": self.file}
        if self.sheet is not None:
            out["sheet"] = self.sheet
        if self.page is not None:
            out["page"] = self.page
        if self.table is not None:
            out["table"] = self.table
        out["row"] = self.row
        if self.column is not None:
            out["column"] = self.column
        out["label"] = self.label()
        return out


class CellSources(Mapping):
    """Record field -> :class:`SourceRef` of one row, each made when it is asked for.

    ``columns`` gives each field's column (its letter, or a whole SourceRef for a value taken
    from elsewhere, such as a section heading). A 100 000-motor schedule would otherwise hold
    a million SourceRefs that only the few cells a finding names are ever asked for.
    """

    __slots__ = ("columns", "row")

    def __init__(self, row: SourceRef, columns: dict[str, str | SourceRef | None]) -> None:
        self.row = row
        self.columns = columns

    def __getitem__(self, name: str) -> SourceRef:
        where = self.columns[name]
        return where if where.__class__ is SourceRef else self.row.at_column(where)

    def place(self, name: str) -> tuple[SourceRef, str | None]:
        """(the row, the column) of field ``name``'s cell, without making a SourceRef for it:
        its label is ``row.label_at(column)``."""
        where = self.columns[name]
        return (where, where.column) if where.__class__ is SourceRef else (self.row, where)

    def __contains__(self, name: object) -> bool:
        return name in self.columns

    def __iter__(self) -> Iterator[str]:
        return iter(self.columns)

    def __len__(self) -> int:
        return len(self.columns)

    def __repr__(self) -> str:
        return f"CellSources({dict(self)!r})"


@dataclass(frozen=True, slots=True)
class Cell:
    """One raw cell: its text exactly as read (stripped) and where it was."""

    text: str
    source: SourceRef


@dataclass(frozen=True, slots=True)
class Parsed:
    """Result of reading one cell with a value parser.

    ``value`` is the normalised value (JSON-able: number, str, dict) or None.
    ``problem`` is a one-sentence reason when the cell could not be read fully
    (the value may still be partly filled). ``placeholder`` is True for cells
    that deliberately say "nothing yet" (TBD, N/A, ---, blank).
    """

    value: Any = None
    problem: str | None = None
    placeholder: bool = False
    notes: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class Finding:
    """One check's verdict on one motor.

    ``limit`` is the computed code limit (minimum ampacity for conductor checks,
    maximum rating for overcurrent checks), ``provided`` the value on the
    schedule, both in ``unit``. ``trail`` is the arithmetic, one step per item.
    ``fields`` names the motor-record fields the check read, so a report can
    point at the cells.
    """

    check: str
    rule: str
    status: Status
    message: str
    limit: float | None = None
    provided: float | None = None
    unit: str | None = None
    trail: tuple[str, ...] = ()
    assumptions: tuple[str, ...] = ()
    fields: tuple[str, ...] = ()
    citation: str | None = None


@dataclass(frozen=True, slots=True)
class Motor:
    """A normalised motor row.

    ``record`` follows ``schemas/motor.schema.json`` (the single definition of
    fields, types and units). ``sources`` maps a record field to the cell it
    came from. ``input_findings`` are needs-info findings raised while reading
    and validating the row (unreadable cells, schema violations).
    """

    tag: str
    record: dict[str, Any]
    source: SourceRef
    sources: Mapping[str, SourceRef] = field(default_factory=dict)
    raw: dict[str, str] = field(default_factory=dict)
    input_findings: tuple[Finding, ...] = ()


@dataclass(frozen=True, slots=True)
class SkippedRow:
    """An input row that is not a motor, with the reason it was passed over."""

    source: SourceRef
    reason: str
    text: str = ""


@dataclass(frozen=True, slots=True)
class NotRun:
    """A check that could not run on one motor because the schedule does not carry what it needs.

    Not a finding: a schedule that never shows, say, overload settings is summarised once per
    check ("could not run on N motors: ...") instead of producing a needs-info on every motor.
    ``reason`` is shared by all motors it applies to; ``detail`` is this motor's own figure.
    """

    check: str
    reason: str
    detail: str = ""


@dataclass(frozen=True, slots=True)
class MotorReview:
    motor: Motor
    findings: tuple[Finding, ...]
    not_run: tuple[NotRun, ...] = ()


@dataclass(frozen=True, slots=True)
class FeederReview:
    """One feeder, or one group of motors fed from the same source, and what was found.

    ``group`` is the source's name (``MCC-1``); ``motor_tags`` and
    ``motor_sources`` are the motors that name it. ``feeder`` is the feeder
    record as read (name, from, to, conductor, ocpd ...; None when the
    schedule lists no feeder for the group), ``feeder_source`` its row and
    ``feeder_sources`` its cells by field. ``computed`` holds the group's
    minimum feeder ampacity and maximum feeder device (given for information
    even when there is no feeder to check); ``findings`` are the group
    checks' verdicts on the listed feeder.
    """

    group: str
    motor_tags: tuple[str, ...] = ()
    motor_sources: tuple[SourceRef, ...] = ()
    feeder: dict[str, Any] | None = None
    feeder_source: SourceRef | None = None
    feeder_sources: dict[str, SourceRef] = field(default_factory=dict)
    computed: dict[str, Any] = field(default_factory=dict)
    findings: tuple[Finding, ...] = ()
    notes: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class Review:
    """Everything a renderer needs. Renderers see nothing else."""

    code: str
    ruleset: dict[str, Any]
    input: dict[str, Any]
    motors: tuple[MotorReview, ...]
    skipped: tuple[SkippedRow, ...]
    tables: tuple[dict[str, Any], ...] = ()
    notes: tuple[str, ...] = ()
    checks_not_run: tuple[dict[str, Any], ...] = ()
    feeders: tuple[FeederReview, ...] = ()
