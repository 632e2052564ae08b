"""Each motor's JSON line and HTML block, written straight from the review.

The same text as encoding ``build.motor_dict`` with ``json_report`` and rendering it with
``html_motors.motor_block`` (tests/test_fast_paths.py holds them to it, byte for byte), without
building that dict: a finding's shared part (everything but its cells) is encoded once for all
the motors that share it, and each cell of a motor once for all of its findings.
"""
from __future__ import annotations

from functools import lru_cache
from typing import Any

import orjson

from checker import model
from checker.report.build import _shared_part as shared_part_of
from checker.report.build import plain_record, source_dict, worst_status
from checker.report.html_motors import Catalogue, block_html, cells_html
from checker.report.json_report import _encode


class MotorText:
    """Writes motors of one review; ``shared`` is the report's map of finding id -> (finding,
    shared part) (``MotorDicts._shared``), ``catalogue`` the page's numbering of findings."""

    def __init__(self, shared: dict[int, tuple[model.Finding, dict[str, Any]]], catalogue: Catalogue) -> None:
        self.shared = shared
        self.catalogue = catalogue
        self.entries: dict[int, tuple] = {}  # id(finding) -> see _entry

    def _entry(self, finding: model.Finding) -> tuple:
        """(finding, shared part, its JSON up to the cells, catalogue number, inline working)."""
        entry = self.entries.get(id(finding))
        if entry is None or entry[0] is not finding:
            known = self.shared.get(id(finding))
            if known is None:
                known = self.shared[id(finding)] = (finding, shared_part_of(finding))
            part = known[1]
            number = self.catalogue.number(part)
            working = self.catalogue.working_block(number, part) if part["status"] == "fail" else ""
            entry = self.entries[id(finding)] = (finding, part, _encode(part)[:-1] + ',"cells":[', number, working)
        else:
            self.catalogue.counts[entry[3] - 1] += 1  # numbered on first sight; counted at each
        return entry

    def both(self, review: model.MotorReview, index: int) -> tuple[str, str]:
        """(JSON object, HTML block) of motor number ``index`` (1-based)."""
        motor = review.motor
        source = motor.source
        sheet_prefix = f"{source.sheet}!" if source.sheet and source.page is None else ""
        sources = motor.sources
        described: dict[str, tuple[str, str] | None] = {}  # field -> (label, cell JSON), None: no cell
        statuses = []
        finding_json = []
        lines = []
        for finding in (*motor.input_findings, *review.findings):
            _, part, prefix, number, working = self._entry(finding)
            statuses.append(part["status"])
            cells = []
            for name in finding.fields:
                cell = described.get(name, _UNSET)
                if cell is _UNSET:
                    cell = described[name] = _describe(sources, name)
                if cell is not None:
                    cells.append(cell)
            finding_json.append(prefix + ",".join([cell[1] for cell in cells]) + "]}")
            lines.append((number, cells_html([cell[0] for cell in cells], sheet_prefix), working))
        status = worst_status(statuses)
        # JSON: the motor's own values, then each finding's shared part and its cells
        not_run = [{"check": item.check, "reason": item.reason, "detail": item.detail} for item in review.not_run]
        json_text = "".join([
            _encode({"tag": motor.tag, "status": status, "source": source_dict(motor.source)})[:-1],
            ',"record":', _json_of(motor.record), ',"raw":', _json_of(motor.raw),
            ',"findings":[', ",".join(finding_json), '],"not_run":', _encode(not_run), "}"])
        # HTML: the same block html_motors.motor_block makes from the motor's dict
        html = block_html(index, status, motor.tag, motor.record.get("description"), source.label(), lines,
                          self.catalogue, [(item.check, item.detail) for item in review.not_run], motor.raw)
        return json_text, html


_UNSET = object()


def _json_of(value: dict) -> str:
    """JSON of a record or row, as ``_encode(plain_record(value))`` writes it."""
    try:
        return orjson.dumps(value).decode("utf-8")
    except TypeError:  # what plain_record hands to plain
        return _encode(plain_record(value))


def _describe(sources: Any, name: str) -> tuple[str, str] | None:
    """(label, JSON of ``{"field", "label", "column"}``) of a field's cell, as ``build.cells_for``
    describes it; None when the field has no cell."""
    if name not in sources:
        return None
    if sources.__class__ is model.CellSources:
        row, column = sources.row, sources.columns[name]
        if column.__class__ is model.SourceRef:
            row, column = column, column.column
        # A label is the same text around the row number for every row of a column: the JSON
        # around it is made once per column.
        around = _cell_json_around(name, column, row.sheet, row.page, row.table)
        number = str(row.row)
        return around[0] + number + around[1], around[2] + number + around[3]
    source = sources[name]
    label, column = source.label(), source.column
    return label, _encode({"field": name, "label": label, "column": column})


@lru_cache(maxsize=4096)
def _cell_json_around(name: str, column: str | None, sheet: str | None, page: int | None,
                      table: int | None) -> tuple[str, str, str, str]:
    """(label before the row number, label after it, JSON before it, JSON after it) of the cell of
    field ``name`` in ``column`` of any row; checked against ``SourceRef.label_at`` for two rows."""
    marks = (987_654_321, 123_456_789)  # row numbers no other part of a label can hold
    labels = [model.SourceRef("", row, sheet, page, table).label_at(column) for row in marks]
    before, found, after = labels[0].partition(str(marks[0]))
    if not found or labels[1] != f"{before}{marks[1]}{after}":
        raise ValueError(f"a cell label does not read 'text, row number, text': {labels[0]!r}")
    # a private-use character (written as it is) that nothing else in the cell's JSON holds
    mark = next(chr(code) for code in range(0xE000, 0xF900) if chr(code) not in f"{name}{column}{before}{after}")
    text = _encode({"field": name, "label": f"{before}{mark}{after}", "column": column})
    json_before, found, json_after = text.partition(mark)
    if not found:
        raise ValueError(f"cell JSON without its row mark: {text!r}")
    return before, after, json_before, json_after
