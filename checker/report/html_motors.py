"""The Motors section of the HTML page, and its 'Findings in full' list, written as text.

A facility schedule may hold 100 000 motors, so this part of the page is built
in Python rather than through a Jinja loop, and kept small: each motor is a
``<details>`` block (open unless it passes) with one line per finding, status,
rule, message and cells, plus its row as submitted. A finding's working
(limit and provided values, arithmetic, assumptions, citation) is written once
per distinct finding in 'Findings in full', where the motor's rule links to;
many motors share a finding because a review reuses a check's result for
motors with equal values (``FindingEntry.shared`` in ``build.py``). A failed
finding also shows its working inline, where the reviewer needs it.

Every value from the report is escaped the way markupsafe (Jinja's autoescape)
escapes it; nothing submitted is trusted.
"""
from __future__ import annotations

from collections.abc import Iterable, Iterator, Mapping
from functools import lru_cache
from typing import Any

from markupsafe import Markup

from checker.report.build import FINDINGS_HERE, MOTORS_HERE, MOTORS_PER_PIECE, shared_part

# Worst first; the labels shown for each status.
STATUS_LABELS = {"fail": "FAIL", "needs-info": "NEEDS INFO", "pass": "PASS"}
# Finding lines carry a short class (a 10 000-motor page has 100 000 of them); a pass has none.
_LINE_CLASS = {"pass": "", "fail": ' class="f"', "needs-info": ' class="n"'}
NO_FINDINGS = "No check gave a finding for this motor, so it is counted as needing information."
NO_MOTORS = "No motor rows were found in this file."


def anchor(check_id: Any) -> str:
    """Fragment-safe form of a check id, used for ``#check-<id>`` on both ends of a link."""
    return "".join(ch if (ch.isascii() and (ch.isalnum() or ch in "-_.")) else "-" for ch in str(check_id))


def format_number(value: Any) -> str:
    """A limit or provided value for people: up to 3 decimals, no trailing zeros; dash if missing."""
    if value is None or isinstance(value, bool):
        return "\u2014"
    if isinstance(value, (int, float)):
        text = f"{float(value):.3f}".rstrip("0").rstrip(".")
        return "0" if text == "-0" else text
    return str(value)


def escape_text(value: Any) -> str:
    """``value`` as HTML text, escaped as markupsafe escapes it (most cells need nothing: checked first).

    ``str.replace`` five times, '&' first: on a feeder's 2 KB working line with an apostrophe it takes
    3-6 us, where one ``str.translate`` with a table took 100 us (measured)."""
    text = value if value.__class__ is str else ("" if value is None else str(value))
    if "&" in text or "<" in text or ">" in text or '"' in text or "'" in text:
        return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace('"', "&#34;") \
            .replace("'", "&#39;")
    return text


def _status(value: Any) -> tuple[str, str]:
    """(class suffix, label) of a status; an unknown status is shown as given, escaped."""
    text = str(value)
    return escape_text(text), escape_text(STATUS_LABELS.get(text, text.upper()))


def working_html(finding: Mapping[str, Any]) -> str:
    """Limit and provided values, arithmetic and assumptions of one finding (may be '')."""
    parts = []
    limit, provided, unit = finding.get("limit"), finding.get("provided"), finding.get("unit") or ""
    if limit is not None or provided is not None:
        parts.append(f'<p class="lp">Limit {escape_text(format_number(limit))} {escape_text(unit)} · provided '
                     f'{escape_text(format_number(provided))} {escape_text(unit)}</p>')
    trail = finding.get("trail") or []
    if trail:
        parts.append('<ol class="trail">' + "".join(f"<li>{escape_text(step)}</li>" for step in trail) + "</ol>")
    assumptions = finding.get("assumptions") or []
    if assumptions:
        parts.append('<p class="assume-h">Assumed</p><ul class="assume">'
                     + "".join(f"<li>{escape_text(item)}</li>" for item in assumptions) + "</ul>")
    return "".join(parts)


class Catalogue:
    """Distinct findings in order of first appearance: id, motors counted, rendered line head."""

    def __init__(self, appendix_ids: set[str]) -> None:
        self.appendix_ids = appendix_ids
        self.ids: dict[int, int] = {}           # id(shared part) -> number
        self.entries: list[dict[str, Any]] = []  # the shared parts, in number order
        self.counts: list[int] = []
        self.heads: list[str] = []
        self.workings: dict[int, str] = {}  # number -> inline working of a failed finding

    def number(self, finding: Mapping[str, Any]) -> int:
        """Number of this finding's entry ('w-<n>'), adding it on first sight."""
        part = shared_part(finding) or finding
        key = id(part)
        number = self.ids.get(key)
        if number is None:
            number = self.ids[key] = len(self.entries) + 1
            self.entries.append(part)
            self.counts.append(0)
            kind = _LINE_CLASS.get(str(part.get("status")), f' class="st-{escape_text(part.get("status"))}"')
            self.heads.append(f'<li{kind}><a href="#w-{number}">{escape_text(part.get("rule"))}</a> {escape_text(part.get("message"))}')
        self.counts[number - 1] += 1
        return number

    def working_block(self, number: int, finding: Mapping[str, Any]) -> str:
        """The inline working of a failed finding (entry ``number``), written once per entry."""
        if self.entries[number - 1] is not (shared_part(finding) or finding):
            return f'<div class="wk">{working_html(finding)}</div>'  # changed by a caller: its own
        block = self.workings.get(number)
        if block is None:
            block = self.workings[number] = f'<div class="wk">{working_html(finding)}</div>'
        return block

    def html(self) -> str:
        out = []
        for number, (part, count) in enumerate(zip(self.entries, self.counts), start=1):
            status, label = _status(part.get("status"))
            check = str(part.get("check"))
            rule = escape_text(part.get("rule"))
            if check in self.appendix_ids:
                rule = f'<a href="#check-{escape_text(anchor(check))}">{rule}</a>'
            citation = part.get("citation")
            out.append(
                f'<article class="work st-{status}" id="w-{number}"><p class="work-h"><span class="badge st-{status}">'
                f'{label}</span> {rule} {escape_text(part.get("message"))} <span class="cnt">({count} '
                f'{"motor" if count == 1 else "motors"})</span></p>{working_html(part)}'
                + (f'<p class="cite">{escape_text(citation)}</p>' if citation else "") + "</article>\n")
        return "".join(out)


def _cells_text(finding: Mapping[str, Any], sheet_prefix: str) -> str:
    """' [D19 J19]': the cells a finding read, without the sheet name when it is the motor's own."""
    return cells_html([str(cell.get("label", "")) for cell in finding.get("cells") or []
                       if cell.__class__ is dict or isinstance(cell, Mapping)], sheet_prefix)


@lru_cache(maxsize=4096)
def _short_header(header: Any) -> str:
    """A column header's last level, escaped ('MOTOR / HP' -> 'HP'): the same for every row."""
    return escape_text(str(header).rsplit(" / ", 1)[-1])


_PAIRS: dict[tuple[Any, Any], str] = {}  # (header, cell text) -> 'HEADER: text', escaped (texts repeat down a column)
_MAX_PAIRS = 100_000


def _pair(header: Any, text: Any) -> str:
    try:
        pair = _PAIRS.get((header, text))
    except TypeError:  # not hashable: made each time
        return f"{_short_header(header)}: {escape_text(text)}"
    if pair is None:
        if len(_PAIRS) >= _MAX_PAIRS:
            _PAIRS.clear()
        pair = _PAIRS[(header, text)] = f"{_short_header(header)}: {escape_text(text)}"
    return pair


def _raw_text(raw: Any, shown: tuple[Any, ...]) -> str:
    """The row as submitted, 'HEADER: text' by column (the header's last level), leaving out
    the texts already in the motor's summary line (its tag and description)."""
    if not isinstance(raw, Mapping) or not raw:
        return ""
    known = _PAIRS.get
    try:  # most pairs are known already: looked up here, without a call each
        pairs = " · ".join([known((header, text)) or _pair(header, text)
                            for header, text in raw.items() if text not in shown])
    except TypeError:  # a header or text that cannot be hashed
        pairs = " · ".join([_pair(header, text) for header, text in raw.items() if text not in shown])
    return f'<p class="raw">As submitted: {pairs}</p>' if pairs else ""


class MotorsSection:
    """The motor blocks, one piece per motor when iterated, then (``findings()``) the entries of
    'Findings in full' those motors referred to. Iterated by the template as it is written out,
    so a 100 000-motor page is never held whole."""

    def __init__(self, motors: Iterable[Any], appendix_ids: set[str]) -> None:
        self.motors = motors
        self.appendix_ids = appendix_ids
        self.catalogue = Catalogue(appendix_ids)
        self.done = False

    def __iter__(self) -> Iterator[Markup]:
        """The blocks, a few dozen motors to a piece (each piece the template writes has a cost)."""
        apart = getattr(self.motors, "apart", None)
        if apart is not None:  # report/write.py writes the blocks, numbering in this catalogue
            self.catalogue = apart.catalogue
            self.catalogue.appendix_ids = self.appendix_ids
            self.done = True
            yield MOTORS_HERE
            return
        self.catalogue = Catalogue(self.appendix_ids)
        written = False
        blocks: list[str] = []
        for index, motor in enumerate(self.motors, start=1):
            if isinstance(motor, Mapping):
                written = True
                blocks.append(motor_block(motor, index, self.catalogue))
                if len(blocks) == MOTORS_PER_PIECE:
                    yield Markup("".join(blocks))
                    blocks = []
        if blocks:
            yield Markup("".join(blocks))
        if not written:
            yield Markup(f'<p class="empty">{NO_MOTORS}</p>\n')
        self.done = True

    def findings(self) -> Markup:
        if not self.done:
            for _ in self:
                pass
        apart = getattr(self.motors, "apart", None)
        if apart is not None and apart.findings_elsewhere:  # written by report/write.py too
            return FINDINGS_HERE
        return Markup(self.catalogue.html())


def motor_block(motor: Mapping[str, Any], index: int, catalogue: Catalogue) -> str:
    """The ``<details>`` block of motor number ``index`` (1-based), numbering its findings in ``catalogue``."""
    record = motor.get("record") if isinstance(motor.get("record"), Mapping) else {}
    source = motor.get("source") if isinstance(motor.get("source"), Mapping) else {}
    sheet = source.get("sheet")
    sheet_prefix = f"{sheet}!" if sheet and source.get("page") is None else ""
    findings = [f for f in motor.get("findings") or [] if isinstance(f, Mapping)]
    lines = []
    for finding in findings:
        number = catalogue.number(finding)
        working = catalogue.working_block(number, finding) if finding.get("status") == "fail" else ""
        lines.append((number, _cells_text(finding, sheet_prefix), working))
    not_run = [(n.get("check"), n.get("detail")) for n in motor.get("not_run") or [] if isinstance(n, Mapping)]
    return block_html(index, motor.get("status"), motor.get("tag"), record.get("description"),
                      source.get("label", ""), lines_html(lines, catalogue), not_run, motor.get("raw"))


def lines_html(lines: list[tuple[int, str, str]], catalogue: Catalogue) -> str:
    """Finding lines, each (catalogue number, cells text, inline working), as ``<li>`` items."""
    heads = catalogue.heads
    return "".join([f"{heads[number - 1]}{cells_text}{working}</li>\n" for number, cells_text, working in lines])


_NOT_RUN_HTML: dict[tuple, str] = {}  # (check, detail) pairs -> their line (most motors share a few)


def _not_run_html(not_run: Any) -> str:
    """The motor's checks that could not run, with their figures; the reasons are in the summary's
    "checks that could not run" table."""
    try:
        key = tuple(not_run)
        known = _NOT_RUN_HTML.get(key)
    except TypeError:  # a detail that cannot be hashed: made each time
        key = known = None
    if known is None:
        items = "; ".join(escape_text(check) + (f" ({escape_text(detail)})" if detail else "")
                          for check, detail in not_run)
        known = f'<p class="nr">Could not run: {items}</p>\n'
        if key is not None:
            if len(_NOT_RUN_HTML) >= _MAX_PAIRS:
                _NOT_RUN_HTML.clear()
            _NOT_RUN_HTML[key] = known
    return known


def block_html(index: int, status_value: Any, tag: Any, description: Any, location: Any, lines: str,
               not_run: list[tuple[Any, Any]], raw: Any) -> str:
    """A motor's block from its parts; ``lines`` are its findings' ``<li>`` items (:func:`lines_html`)."""
    status, label = _status(status_value)
    out = [f'<details class="motor st-{status}" id="motor-{index}"{"" if status_value == "pass" else " open"}>'
           f'<summary><span class="badge st-{status}">{label}</span> <span class="tag">{escape_text(tag)}</span>'
           + (f' <span class="desc">{escape_text(description)}</span>' if description else "")
           + f' <span class="loc">{escape_text(location)}</span></summary>\n']
    if lines:
        out.append('<ul class="fl">')
        out.append(lines)
        out.append("</ul>\n")
    else:
        out.append(f'<p class="empty">{NO_FINDINGS}</p>\n')
    if not_run:
        out.append(_not_run_html(not_run))
    out.append(_raw_text(raw, (tag, description)))
    out.append("</details>\n")
    return "".join(out)


def cells_html(labels: Iterable[str], sheet_prefix: str) -> str:
    """' [D19 J19]' from cell labels: each once, without the sheet name when it is the motor's own."""
    labels = dict.fromkeys(labels)
    if not labels:
        return ""
    if sheet_prefix:
        cut = len(sheet_prefix)
        labels = dict.fromkeys([label[cut:] if label.startswith(sheet_prefix) else label for label in labels])
    return f" [{escape_text(' '.join(labels))}]"


def motors_html(motors: Iterable[Any], appendix_ids: set[str]) -> tuple[Markup, Markup]:
    """(the motor blocks, the 'Findings in full' entries) as two pieces of markup."""
    section = MotorsSection(motors, appendix_ids)
    blocks = Markup("".join(section))
    return blocks, section.findings()
