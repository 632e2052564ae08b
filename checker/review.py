"""The one orchestration function the CLI (and any later front end) calls.

ingest (read grids, locate tables) -> normalize (motor records) -> check
(registry x ruleset) -> a ``Review`` that the report renderers turn into
files. Every row of every sheet that holds a schedule is accounted for:
it is either a reviewed motor or a skipped row with its reason.
"""
from __future__ import annotations

import hashlib
from collections import defaultdict
from pathlib import Path

from checker.ingest.layout import LocatedTable, describe_columns, locate_tables
from checker.ingest.normalize import normalize_table
from checker.ingest.readers import Grid, InputError, read_grids
from checker.model import MotorReview, Review, SkippedRow
from checker.rules.common import ReviewOptions
from checker.rules.registry import CHECKS, runnable
from checker.rules.ruleset import Ruleset, RulesetError, load_ruleset

__all__ = ["InputError", "RulesetError", "review_schedule"]


def _ruleset_info(ruleset: Ruleset) -> dict:
    info = dict(ruleset.summary())
    info["cautions"] = list(ruleset.cautions)
    info["checks"] = [
        {"id": spec.id, "rule": spec.rule, "title": spec.title, "rationale": spec.rationale,
         "citation": spec.citation, "verification": spec.verification}
        for spec in ruleset.checks.values()
    ]
    return info


def _check_registry(ruleset: Ruleset) -> None:
    unknown = sorted(set(ruleset.checks) - set(CHECKS))
    if unknown:
        raise RulesetError(f"{ruleset.path.name}: check(s) {', '.join(unknown)} have no implementation in motorcheck")


def _table_info(table: LocatedTable) -> dict:
    grid = table.grid
    rn = grid.row_numbers
    return {
        "sheet": grid.sheet, "status": "read",
        "header_rows": f"{rn[table.header_first]}-{rn[table.header_last]}",
        "data_rows": f"{rn[table.data_first]}-{rn[table.data_last]}" if table.data_last >= table.data_first else "",
        "columns": describe_columns(table),
        "unmapped": [f"{header}" for _, header in table.unmapped],
    }


def _outside_reason(index: int, tables: list[LocatedTable], cells: list[str]) -> str:
    if not any(cells):
        return "blank row"
    if index < tables[0].header_first:
        return "above the schedule header (title block)"
    for table in tables:
        if table.header_first <= index <= table.header_last:
            return "header row"
    return "outside the schedule table"


def _read_grid(grid: Grid, tables: list[LocatedTable], motors: list, skipped: list, notes: list, ruleset: Ruleset,
               options: ReviewOptions, not_run: dict) -> None:
    covered: set[int] = set()
    rows_skipped: list[tuple[tuple[int, int], SkippedRow]] = []
    for table in tables:
        covered.update(range(table.data_first, table.data_last + 1))
        result = normalize_table(table)
        columns = {col.field for col in table.columns}
        active = [cid for cid in ruleset.checks if runnable(cid, columns)]
        for cid in ruleset.checks:
            if cid not in active and result.motors:
                entry = not_run.setdefault(cid, {"check": cid, "reason": CHECKS[cid].missing_reason, "motors": 0})
                entry["motors"] += len(result.motors)
        for motor in result.motors:
            findings = []
            for cid in active:
                findings.extend(CHECKS[cid].function(motor, ruleset, options))
            motors.append(MotorReview(motor, tuple(findings)))
        for row in result.skipped:
            rows_skipped.append(((row.source.page or 0, row.source.row), row))
        if result.hidden_motor_rows:
            rows = ", ".join(str(r) for r in result.hidden_motor_rows)
            notes.append(f"Sheet {grid.sheet}: rows {rows} are hidden in the workbook; they were reviewed all the same.")
    for index, cells in enumerate(grid.rows):
        if index in covered:
            continue
        reason = _outside_reason(index, tables, cells)
        source = grid.source(index)
        text = " | ".join(c for c in cells if c)
        rows_skipped.append(((source.page or 0, source.row), SkippedRow(source, reason, text[:200])))
    skipped.extend(row for _, row in sorted(rows_skipped, key=lambda item: item[0]))


def _duplicate_tag_notes(motors: list[MotorReview]) -> list[str]:
    seen: dict[str, list[str]] = defaultdict(list)
    for review in motors:
        seen[review.motor.tag.strip().upper()].append(review.motor.source.label())
    return [f"Tag {tag} appears more than once ({', '.join(where)}); each row was reviewed separately."
            for tag, where in seen.items() if len(where) > 1]


def review_schedule(path: Path, code: str = "cec-2015", sheet: str | None = None,
                    options: ReviewOptions | None = None) -> Review:
    """Review one submitted schedule file against one ruleset.

    Raises InputError (the file cannot be used) or RulesetError (the ruleset
    is invalid); both carry a one-line message for the reviewer.
    """
    options = options or ReviewOptions()
    ruleset = load_ruleset(code)
    _check_registry(ruleset)
    path = Path(path)
    grids = read_grids(path, sheet)
    motors: list[MotorReview] = []
    skipped: list[SkippedRow] = []
    notes: list[str] = []
    tables: list[dict] = []
    not_run: dict[str, dict] = {}
    for grid in grids:
        located = locate_tables(grid)
        if not located:
            tables.append({"sheet": grid.sheet, "status": "passed over",
                           "reason": "no motor schedule header found"})
            continue
        tables.extend(_table_info(t) for t in located)
        _read_grid(grid, located, motors, skipped, notes, ruleset, options, not_run)
    if not motors and not any(t["status"] == "read" for t in tables):
        seen = ", ".join(repr(g.sheet) for g in grids if g.sheet) or "the file"
        raise InputError(f"no motor schedule found in {path.name} (looked at {seen}); expected a header row with a "
                         f"tag column and hp, kW, volts or FLA columns")
    notes.extend(_duplicate_tag_notes(motors))
    digest = hashlib.sha256(path.read_bytes()).hexdigest()
    input_info = {"file": path.name, "sha256": digest, "format": grids[0].kind if grids else "",
                  "sheets": [g.sheet for g in grids if g.sheet]}
    return Review(code=ruleset.id, ruleset=_ruleset_info(ruleset), input=input_info, motors=tuple(motors),
                  skipped=tuple(skipped), tables=tuple(tables), notes=tuple(notes),
                  checks_not_run=tuple(not_run.values()))
