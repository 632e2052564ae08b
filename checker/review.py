"""The one orchestration function the CLI (and any later front end) calls.

ingest (read grids, locate tables) -> normalize (motor records) -> check
(registry x ruleset) -> a ``Review`` that the report renderers turn into
files. Every row of every sheet that holds a schedule is accounted for:
it is either a reviewed motor or a skipped row with its reason.
"""
from __future__ import annotations

import hashlib
from collections import defaultdict
from collections.abc import Callable
from itertools import repeat
from operator import itemgetter
from pathlib import Path

from checker.ingest.feeders import (
    FeederRow,
    FeederTable,
    feeder_table_info,
    locate_feeder_tables,
    read_feeder_table,
    split_heading_feeders,
    trim_motor_tables,
)
from checker.ingest.layout import LocatedTable, describe_columns, locate_tables
from checker.ingest.normalize import FrozenValues, normalize_table
from checker.ingest.readers import Grid, InputError, read_grids
from checker.model import Motor, MotorReview, NotRun, Review, SkippedRow
from checker.progress import Progress
from checker.rules.common import ReviewOptions
from checker.rules.feeders import review_feeders
from checker.rules.memo import ReadLog
from checker.rules.registry import CHECKS, GROUP_CHECKS, runnable
from checker.rules.ruleset import Ruleset, RulesetError, select_ruleset

__all__ = ["InputError", "RulesetError", "review_schedule"]


def _ruleset_info(ruleset: Ruleset) -> dict:
    info = dict(ruleset.summary())
    info["cautions"] = list(ruleset.cautions)
    info["checks"] = [
        {"id": spec.id, "rule": spec.rule, "title": spec.title, "rationale": spec.rationale,
         "citation": spec.citation, "verification": spec.verification}
        for spec in ruleset.checks.values()
    ]
    if ruleset.extends is not None:  # local amendments: say what they changed, value by value
        info["extends"] = ruleset.extends
        info["base_sha256"] = ruleset.base_sha256
        info["amendment"] = dict(ruleset.amendment or {})
        info["amendments"] = [dict(change) for change in ruleset.amendments]
    return info


class _MotorView:
    """What a check sees while its reads are logged: the logged record, and any other Motor attribute
    (read from the real motor, noted in ``others``)."""

    __slots__ = ("_motor", "others", "record")

    def __init__(self, motor: Motor, record: ReadLog) -> None:
        self.record, self._motor, self.others = record, motor, set()

    def __getattr__(self, name: str):
        self.others.add(name)
        return getattr(self._motor, name)


class _Frozen(dict):
    """Hashable stand-ins of one record's values; a field the record lacks reads as _MISSING."""

    __slots__ = ()

    def __missing__(self, key):
        return _MISSING


_MISSING = object()
_MAX_BY_OBJECT = 4096  # value-object look-ups kept per plan (each holds its values)


def _key_getter(fields: tuple) -> Callable[[dict], object]:
    return itemgetter(*fields) if fields else (lambda frozen: ())


class _CheckMemo:
    """Runs the per-motor checks, reusing a check's findings for a motor whose record agrees, value for
    value, on every field that check has read so far.

    Checks are pure functions of the motor record (the ruleset and options are fixed for a review), and
    a check that reads the same values takes the same path, reads no other field and returns the same
    findings; findings name fields, never cells, so they can be shared. A check that reads anything
    but record fields, reads the whole record, or writes to it is run directly from then on (and if it
    wrote, so is every check, as the written values would be missing from the keys).
    """

    def __init__(self, ruleset: Ruleset, options: ReviewOptions) -> None:
        self.ruleset, self.options = ruleset, options
        self.fields: dict[str, tuple] = {}          # check id -> fields read so far, sorted
        self.keys: dict[str, Callable] = {}         # check id -> key of a frozen record for those fields
        self.found: dict[str, dict] = {}            # check id -> key -> findings
        self.direct: set[str] = set()
        self.all_direct = False
        self.frozen = FrozenValues()
        # Whole motors: for a list of checks each keyed by the fields it reads, a motor agreeing with
        # an earlier one on all those fields gets that motor's results at one look-up. Any change of
        # what a check reads (or a check run directly) moves ``version`` on and forgets them.
        self.version = 0
        # check ids -> (version, fields, results by frozen values, (values, results) by the values' ids)
        self.wholes: dict[tuple, tuple] = {}

    def _whole(self, check_ids: tuple) -> tuple | None:
        """(fields, results by their frozen values, by the value objects) for motors checked by
        ``check_ids``, or None."""
        plan = self.wholes.get(check_ids)
        if plan is not None and plan[0] == self.version:
            return plan[1:]
        if self.all_direct or any(cid not in self.keys or cid in self.direct for cid in check_ids):
            return None
        fields = tuple(sorted({field for cid in check_ids for field in self.fields[cid]}, key=str))
        self.wholes[check_ids] = (self.version, fields, {}, {})
        return self.wholes[check_ids][1:]

    def run(self, motor: Motor, check_ids: list[str]) -> tuple:
        record = motor.record
        ids = tuple(check_ids)
        whole = self._whole(ids)
        if whole is None:
            return self._run(motor, check_ids)
        fields, results, by_object = whole
        # Rows with the same cell texts hold the very same value objects (normalize reads each distinct
        # text once): most motors are found by the objects' identities, without freezing a value.
        values = tuple(map(record.get, fields, repeat(_MISSING)))
        identities = tuple(map(id, values))
        known = by_object.get(identities)
        if known is not None:
            return known[1]
        frozen = self.frozen
        try:
            key = tuple([frozen(value) for value in values])
            hit = results.get(key)
        except TypeError:  # a value that cannot be hashed
            return self._run(motor, check_ids)
        if hit is None:
            version = self.version
            hit = self._run(motor, check_ids)
            if self.version != version:  # a field read anew: the plan is gone
                return hit
            results[key] = hit  # nothing read anew: the same fields decide it for every motor
        if len(by_object) < _MAX_BY_OBJECT:
            by_object[identities] = (values, hit)  # the values are held, so their ids are not reused
        return hit

    def _run(self, motor: Motor, check_ids: list[str]) -> tuple:
        findings: list = []
        record = motor.record
        try:
            frozen = None if self.all_direct else _Frozen(zip(record, map(self.frozen, record.values())))
        except TypeError:
            frozen = None
        for cid in check_ids:
            function = CHECKS[cid].function
            if frozen is None or cid in self.direct:
                findings.extend(function(motor, self.ruleset, self.options))
                continue
            if cid not in self.keys:
                self.fields[cid], self.keys[cid], self.found[cid] = (), _key_getter(()), {}
                self.version += 1
            cache = self.found[cid]
            try:
                key = self.keys[cid](frozen)
                hit = cache.get(key)
            except TypeError:
                hit, key = None, None
            if hit is not None:
                findings.extend(hit)
                continue
            log = ReadLog(record)
            view = _MotorView(motor, log)
            result = function(view, self.ruleset, self.options)
            findings.extend(result)
            if log.written:
                record.clear()
                record.update(dict.items(log))
                self.all_direct, frozen = True, None
                self.version += 1
                continue
            if log.whole or view.others or key is None:
                self.direct.add(cid)
                self.version += 1
                continue
            if not log.read <= set(self.fields[cid]):
                self.version += 1
                fields = self.fields[cid] = tuple(sorted(set(self.fields[cid]) | log.read, key=str))
                self.keys[cid] = _key_getter(fields)
                cache.clear()
                key = self.keys[cid](frozen)
            cache[key] = tuple(result)
        return tuple(findings)


def _check_registry(ruleset: Ruleset) -> None:
    unknown = sorted(set(ruleset.checks) - set(CHECKS) - set(GROUP_CHECKS))
    if unknown:
        raise RulesetError(f"{ruleset.path.name}: check(s) {', '.join(unknown)} have no implementation in motorcheck")


def _pdf_place(grid: Grid) -> dict:
    """Page and table of a PDF grid, and every page a continued table runs over; {} for spreadsheets."""
    if grid.row_pages is None or not grid.rows:
        return {}
    first = grid.source(0)
    pages = sorted(set(grid.row_pages))
    return {"page": first.page, "table": first.table, **({"pages": pages} if len(pages) > 1 else {})}


def _row_span(grid: Grid, first: int, last: int) -> str:
    """'4-38', or for a PDF table continued over pages '4-38 (p. 1 table 2), 1-12 (p. 2 table 1)'."""
    rn = grid.row_numbers
    if grid.row_pages is None or grid.row_pages[first] == grid.row_pages[last]:
        return f"{rn[first]}-{rn[last]}"
    parts, start = [], first
    for i in range(first, last + 1):
        if i == last or grid.source(i + 1).page != grid.source(start).page:
            where = grid.source(start)
            parts.append(f"{rn[start]}-{rn[i]} (p. {where.page} table {where.table})")
            start = i + 1
    return ", ".join(parts)


def _table_info(table: LocatedTable) -> dict:
    grid = table.grid
    return {
        "sheet": grid.sheet, **_pdf_place(grid), "status": "read",
        "header_rows": _row_span(grid, table.header_first, table.header_last),
        "data_rows": _row_span(grid, table.data_first, table.data_last) if table.data_last >= table.data_first else "",
        "columns": describe_columns(table),
        "unmapped": [f"{header}" for _, header in table.unmapped],
    }


def _outside_reason(index: int, tables: list[LocatedTable], cells: list[str],
                    feeder_tables: list[FeederTable] = ()) -> str:
    if not any(cells):
        return "blank row"
    firsts = [t.header_first for t in tables] + [t.first for t in feeder_tables]
    if firsts and index < min(firsts):
        return "above the schedule header (title block)"
    for table in tables:
        if table.header_first <= index <= table.header_last:
            return "header row"
    return "outside the schedule table"


def _read_grid(grid: Grid, tables: list[LocatedTable], motors: list, skipped: list, notes: list, ruleset: Ruleset,
               options: ReviewOptions, not_run: dict, feeder_tables: list[FeederTable] = (),
               feeder_rows: list[FeederRow] | None = None, memo: _CheckMemo | None = None,
               progress: Progress | None = None) -> None:
    memo = memo or _CheckMemo(ruleset, options)
    progress = progress or Progress(enabled=False)
    covered: set[int] = set()
    rows_skipped: list[tuple[tuple[int, int], SkippedRow]] = []
    feeder_rows = [] if feeder_rows is None else feeder_rows
    for table in tables:
        covered.update(range(table.data_first, table.data_last + 1))
        progress.stage("reading rows")
        result = normalize_table(table)
        # Heading rows that carry a feeder's conductors or device are feeders, not motors.
        result.motors, heading_feeders = split_heading_feeders(result.motors)
        feeder_rows.extend(heading_feeders)
        columns = {col.field for col in table.columns}
        active = [cid for cid in ruleset.checks if cid in CHECKS and runnable(cid, columns)]
        for cid in ruleset.checks:
            if cid in CHECKS and cid not in active and result.motors:
                entry = not_run.setdefault(cid, {"check": cid, "reason": CHECKS[cid].missing_reason, "motors": 0})
                entry["motors"] += len(result.motors)
        progress.stage("checking motors")
        split: dict[int, tuple] = {}  # id(results) -> (results, findings, checks not run): results are shared
        for number, motor in enumerate(result.motors, start=1):
            results = memo.run(motor, active)
            known = split.get(id(results))
            if known is None or known[0] is not results:
                known = split[id(results)] = (results, tuple(r for r in results if not isinstance(r, NotRun)),
                                              tuple(r for r in results if isinstance(r, NotRun)))
            _, findings, skipped_checks = known
            for item in skipped_checks:
                entry = not_run.setdefault((item.check, item.reason),
                                           {"check": item.check, "reason": item.reason, "motors": 0})
                entry["motors"] += 1
            motors.append(MotorReview(motor, findings, skipped_checks))
            progress.step(number, len(result.motors))
        for row in result.skipped:
            rows_skipped.append(((row.source.page or 0, row.source.row), row))
        if result.hidden_motor_rows:
            rows = ", ".join(str(r) for r in result.hidden_motor_rows)
            notes.append(f"Sheet {grid.sheet}: rows {rows} are hidden in the workbook; they were reviewed all the same.")
    for feeder_table in feeder_tables:
        covered.update(range(feeder_table.first, feeder_table.data_last + 1))
        read, passed_over = read_feeder_table(feeder_table)
        feeder_rows.extend(read)
        rows_skipped.extend(((row.source.page or 0, row.source.row), row) for row in passed_over)
    for index, cells in enumerate(grid.rows):
        if index in covered:
            continue
        reason = _outside_reason(index, tables, cells, feeder_tables)
        source = grid.source(index)
        text = " | ".join(c for c in cells if c)
        rows_skipped.append(((source.page or 0, source.row), SkippedRow(source, reason, text[:200])))
    skipped.extend(row for _, row in sorted(rows_skipped, key=lambda item: item[0]))


def _duplicate_tag_notes(motors: list[MotorReview]) -> list[str]:
    seen: dict[str, list] = defaultdict(list)
    for review in motors:
        seen[review.motor.tag.strip().upper()].append(review.motor.source)
    return [f"Tag {tag} appears more than once ({', '.join(s.label() for s in where)}); each row was reviewed "
            f"separately." for tag, where in seen.items() if len(where) > 1]


def _rows_text(table: dict) -> str:
    """'Motors row 3' or 'rows 3-4' for a table's header rows."""
    first, _, last = str(table["header_rows"]).partition("-")
    rows = f"row {first}" if first == last or not last else f"rows {first}-{last}"
    return f"{table['sheet']} {rows}" if table.get("sheet") else rows


def _sheet_notes(grids: list[Grid], tables: list[dict]) -> list[str]:
    """Say which read sheets were hidden, when several sheets held a schedule, and what a format cannot show."""
    read = list(dict.fromkeys(t["sheet"] for t in tables if t["status"] == "read" and t.get("sheet") is not None))
    notes = [f"Sheet {g.sheet} is hidden in the workbook; its schedule was reviewed all the same."
             for g in grids if g.hidden and g.sheet in read]
    if len(read) > 1:
        notes.append(f"Motor schedules were found on {len(read)} sheets ({', '.join(read)}); all were reviewed. "
                     f"Check that none is an old copy of another.")
    kinds = {g.kind for g in grids} & {"xls", "xlsb", "ods"}
    if kinds:
        notes.append(f"Read from a .{'/.'.join(sorted(kinds))} workbook: hidden rows and formulas saved without a "
                     f"result cannot be detected in this format; saved formula results were used as they are.")
    return notes


def review_schedule(path: Path, code: str | None = "cec-2015", sheet: str | None = None,
                    options: ReviewOptions | None = None, amendments: str | Path | None = None,
                    progress: Progress | None = None,
                    motors_checked: Callable[[tuple[MotorReview, ...], Ruleset], None] | None = None) -> Review:
    """Review one submitted schedule file against one ruleset.

    ``code`` names the ruleset (None: the default, or the base of
    ``amendments``); ``amendments`` is a local amendments file extending it.
    Raises InputError (the file cannot be used) or RulesetError (the ruleset
    is invalid); both carry a one-line message for the reviewer. ``progress``
    hears of each stage (see ``checker.progress``). ``motors_checked`` is given the
    reviewed motors, as the review will hold them, and the ruleset once every motor is
    checked and before the feeder groups are worked out (the command line starts writing
    them there).
    """
    options = options or ReviewOptions()
    progress = progress or Progress(enabled=False)
    ruleset = select_ruleset(code, amendments)
    _check_registry(ruleset)
    path = Path(path)
    progress.stage(f"reading {path.name}")
    grids = read_grids(path, sheet)
    motors: list[MotorReview] = []
    skipped: list[SkippedRow] = []
    notes: list[str] = []
    tables: list[dict] = []
    not_run: dict[str, dict] = {}
    feeder_rows: list[FeederRow] = []
    memo = _CheckMemo(ruleset, options)
    for grid in grids:
        progress.stage("finding the schedule")
        located = locate_tables(grid)
        feeder_tables = locate_feeder_tables(grid, located)
        located = trim_motor_tables(located, feeder_tables)
        if not located and not feeder_tables:
            tables.append({"sheet": grid.sheet, **_pdf_place(grid), "status": "passed over",
                           "reason": "no motor schedule header found"})
            continue
        tables.extend(_table_info(t) for t in located)
        tables.extend(feeder_table_info(t) for t in feeder_tables)
        _read_grid(grid, located, motors, skipped, notes, ruleset, options, not_run, feeder_tables, feeder_rows, memo,
                   progress)
    if not motors and not any(t["status"] == "read" for t in tables):
        seen = ", ".join(repr(g.sheet) if g.sheet else f"p. {g.row_pages[0]} table {g.table}"
                         for g in grids if g.sheet or g.row_pages) or "the file"
        raise InputError(f"no motor schedule found in {path.name} (looked at {seen}); expected a header row with a "
                         f"tag column and hp, kW, volts or FLA columns")
    if not motors and not feeder_rows:
        where = ", ".join(_rows_text(t) for t in tables if t["status"] == "read" and t.get("header_rows"))
        raise InputError(f"{path.name}: a motor schedule header was found ({where or 'see the file'}) but no motor "
                         f"rows under it; nothing to review - check that the schedule's rows were saved in this file")
    notes[:0] = _sheet_notes(grids, tables)
    notes.extend(_duplicate_tag_notes(motors))
    if motors_checked is not None:
        motors_checked(tuple(motors), ruleset)
    # Group checks run after every motor is read: a feeder table may come on a later sheet.
    progress.stage("checking feeders")
    feeders = review_feeders([m.motor for m in motors], feeder_rows, ruleset, options, GROUP_CHECKS)
    digest = hashlib.sha256(path.read_bytes()).hexdigest()
    input_info = {"file": path.name, "sha256": digest, "format": grids[0].kind if grids else "",
                  "sheets": [g.sheet for g in grids if g.sheet]}
    return Review(code=ruleset.id, ruleset=_ruleset_info(ruleset), input=input_info, motors=tuple(motors),
                  skipped=tuple(skipped), tables=tuple(tables), notes=tuple(notes),
                  checks_not_run=tuple(not_run.values()), feeders=feeders)
