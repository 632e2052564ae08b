"""Each motor's JSON line and HTML block, written straight from the review.

The same text as encoding ``build.motor_dict`` with ``json_report`` and rendering it with
``html_motors.motor_block`` (tests/test_fast_paths.py holds them to it, byte for byte), without
building that dict. A finding's shared part (everything but its cells) is encoded once for all
the motors that share it. Motors of a table whose checks gave the very same findings (a review
reuses findings for motors with equal values: a facility schedule has a few dozen such sets)
differ, in their findings' text, only in the row number of the cells: that text is made once
per set, around the row number, and each motor's is the row number put in.
"""
from __future__ import annotations

from functools import lru_cache
from typing import Any

import orjson

from checker import model
from checker.report.build import finding_shared_part, plain_record, source_dict, worst_status
from checker.report.html_motors import Catalogue, block_html, cells_html, lines_html
from checker.report.json_report import encode

# Stands for a motor's row number while the text of a set of findings is made (see _Template);
# a set whose text holds it for another reason is written motor by motor instead.
_ROW_MARK = "\ue0ff"


class _Template:
    """The text of one set of check findings, split where the motor's row number goes."""

    __slots__ = ("findings", "html", "json", "numbers", "statuses")

    def __init__(self, findings: tuple, json: list[str], html: list[str], numbers: list[int],
                 statuses: list[str]) -> None:
        self.findings = findings  # held, so that the ids in the template's key are not reused
        self.json, self.html, self.numbers, self.statuses = json, html, numbers, statuses


class MotorText:
    """Writes motors of one review; ``shared`` is the report's map of finding id -> (finding,
    shared part) (``MotorDicts._shared``), ``catalogue`` the page's numbering of findings."""

    def __init__(self, shared: dict[int, tuple[model.Finding, dict[str, Any]]], catalogue: Catalogue) -> None:
        self.shared = shared
        self.catalogue = catalogue
        self.entries: dict[int, tuple] = {}  # id(finding) -> see _entry
        self.templates: dict[tuple, _Template | None] = {}
        self.not_runs: dict[int, tuple] = {}  # id(checks not run) -> (them, their JSON, (check, detail) pairs)

    def _not_run(self, items: Any) -> tuple[str, tuple]:
        """(JSON, (check, detail) pairs) of a motor's checks that could not run: motors whose
        records agree share the tuple (review._CheckMemo), so it is written once."""
        known = self.not_runs.get(id(items))
        if known is None or known[0] is not items:
            known = (items, encode([{"check": item.check, "reason": item.reason, "detail": item.detail}
                                    for item in items]), tuple((item.check, item.detail) for item in items))
            if items.__class__ is tuple:  # held, never changed: its id stays its own
                self.not_runs[id(items)] = known
        return known[1], known[2]

    def _entry(self, finding: model.Finding, count: bool = True) -> tuple:
        """(finding, shared part, its JSON up to the cells, catalogue number, inline working);
        ``count``: the finding is counted once more in the catalogue."""
        entry = self.entries.get(id(finding))
        if entry is None or entry[0] is not finding:
            known = self.shared.get(id(finding))
            if known is None:
                known = self.shared[id(finding)] = (finding, finding_shared_part(finding))
            part = known[1]
            number = self.catalogue.number(part)  # numbered, and counted, on first sight
            working = self.catalogue.working_block(number, part) if part["status"] == "fail" else ""
            entry = self.entries[id(finding)] = (finding, part, encode(part)[:-1] + ',"cells":[', number, working)
        elif count:
            self.catalogue.counts[entry[3] - 1] += 1
        return entry

    def _texts(self, findings, sources, row_text: str, sheet_prefix: str, count: bool = True) -> tuple:
        """(statuses, JSON of each finding, HTML lines, catalogue numbers) of ``findings``, their
        cells labelled with ``row_text`` as the row."""
        described: dict[str, tuple[str, str] | None] = {}  # field -> (label, cell JSON), None: no cell
        statuses, json, lines, numbers = [], [], [], []
        for finding in findings:
            _, part, prefix, number, working = self._entry(finding, count)
            statuses.append(part["status"])
            numbers.append(number)
            cells = []
            for name in finding.fields:
                cell = described.get(name, _UNSET)
                if cell is _UNSET:
                    cell = described[name] = _describe(sources, name, row_text)
                if cell is not None:
                    cells.append(cell)
            json.append(prefix + ",".join([cell[1] for cell in cells]) + "]}")
            lines.append((number, cells_html([cell[0] for cell in cells], sheet_prefix), working))
        return statuses, json, lines_html(lines, self.catalogue), numbers

    def _template(self, review: model.MotorReview, sources, row_text: str, sheet_prefix: str) -> tuple:
        """(this motor's texts of its check findings, counted; the set's template or None)."""
        texts = self._texts(review.findings, sources, row_text, sheet_prefix)
        statuses, json, html, numbers = self._texts(review.findings, sources, _ROW_MARK, sheet_prefix, count=False)
        template = _Template(review.findings, ",".join(json).split(_ROW_MARK), html.split(_ROW_MARK), numbers,
                             statuses)
        # The mark must stand only where the row number goes (not in a sheet name or a message):
        # the template has to give this motor's own text exactly.
        if row_text.join(template.json) != ",".join(texts[1]) or row_text.join(template.html) != texts[2]:
            template = None
        return texts, template

    def count(self, reviews) -> None:
        """Number and count the findings of ``reviews`` in the catalogue as writing them with
        :meth:`both`, one after the other, would (a motor's reading problems, then its checks' findings)."""
        for review in reviews:
            for finding in review.motor.input_findings:
                self._entry(finding)
            for finding in review.findings:
                self._entry(finding)

    def both(self, review: model.MotorReview, index: int) -> tuple[str, str]:
        """(JSON object, HTML block) of motor number ``index`` (1-based)."""
        motor = review.motor
        source = motor.source
        sheet_prefix = f"{source.sheet}!" if source.sheet and source.page is None else ""
        sources = motor.sources
        row_text = str(source.row)
        statuses: list[str] = []
        finding_json: list[str] = []
        html_lines = ""
        if motor.input_findings:  # the row's own reading problems: never shared with another motor
            statuses, finding_json, html_lines, _ = self._texts(motor.input_findings, sources, row_text, sheet_prefix)
        if review.findings:
            template = texts = None
            key = None
            if sources.__class__ is model.CellSources and sources.row is source:
                try:
                    key = (tuple(map(id, review.findings)), tuple(sources.columns.items()), source.sheet,
                           source.page, source.table)
                    template = self.templates.get(key, _UNSET)
                except TypeError:  # a column value that cannot be hashed: no template
                    key = template = None
            if template is _UNSET:
                texts, template = self._template(review, sources, row_text, sheet_prefix)
                self.templates[key] = template
            elif template is not None:
                counts = self.catalogue.counts
                for number in template.numbers:
                    counts[number - 1] += 1
                texts = (template.statuses, [row_text.join(template.json)], row_text.join(template.html), None)
            if texts is None:
                texts = self._texts(review.findings, sources, row_text, sheet_prefix)
            statuses = statuses + texts[0]
            finding_json = finding_json + texts[1]
            html_lines += texts[2]
        status = worst_status(statuses)
        not_run_json, not_run_pairs = self._not_run(review.not_run)
        json_text = "".join([
            encode({"tag": motor.tag, "status": status, "source": source_dict(source)})[:-1],
            ',"record":', _json_of(motor.record), ',"raw":', _json_of(motor.raw),
            ',"findings":[', ",".join(finding_json), '],"not_run":', not_run_json, "}"])
        html = block_html(index, status, motor.tag, motor.record.get("description"), source.label(), html_lines,
                          not_run_pairs, motor.raw)
        return json_text, html


_UNSET = object()


def _json_of(value: dict) -> str:
    """JSON of a record or row, as ``encode(plain_record(value))`` writes it."""
    try:
        return orjson.dumps(value).decode("utf-8")
    except TypeError:  # what plain_record hands to plain
        return encode(plain_record(value))


def _describe(sources: Any, name: str, row_text: str) -> tuple[str, str] | None:
    """(label, JSON of ``{"field", "label", "column"}``) of a field's cell, as ``build.cells_for``
    describes it, with ``row_text`` as the motor's row number; None when the field has no cell."""
    if name not in sources:
        return None
    if sources.__class__ is model.CellSources:
        row, column = sources.place(name)
        if row is not sources.row:  # a value taken from another row (a section heading)
            row_text = str(row.row)
        # A label is the same text around the row number for every row of a column: the JSON
        # around it is made once per column.
        around = _cell_json_around(name, column, row.sheet, row.page, row.table)
        return around[0] + row_text + around[1], around[2] + row_text + around[3]
    source = sources[name]
    label, column = source.label(), source.column
    return label, encode({"field": name, "label": label, "column": column})


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
    text = encode({"field": name, "label": f"{before}{mark}{after}", "column": column})
    json_before, found, json_after = text.partition(mark)
    if not found:
        raise ValueError(f"cell JSON without its row mark: {text!r}")
    return before, after, json_before, json_after
