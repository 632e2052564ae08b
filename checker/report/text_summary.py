"""One-screen text summary of a report, for the terminal."""
from __future__ import annotations

import re
import unicodedata
from collections.abc import Iterator
from itertools import chain, islice
from typing import Any

from checker.report.build import MotorDicts

LINE_WIDTH = 120
STATUS_WORDS = {"fail": "FAIL", "needs-info": "NEEDS-INFO", "pass": "PASS"}
# Failures are listed before needs-info so that a capped screen still shows every failure it can.
LISTED_STATUSES = ("fail", "needs-info")

_SPACES = re.compile(r"\s+")


def clean(text: Any) -> str:
    """``text`` on one line with control characters removed.

    Submitted cells reach the terminal through this summary, so escape
    sequences and line breaks in them must not reach it raw.
    """
    flat = _SPACES.sub(" ", str(text))
    return "".join(ch for ch in flat if unicodedata.category(ch) not in ("Cc", "Cf")).strip()


def clip(line: str, width: int = LINE_WIDTH) -> str:
    """``line`` cut to ``width`` characters, ending in '...' when cut."""
    return line if len(line) <= width else line[: width - 3].rstrip() + "..."


def finding_lines(report: dict[str, Any]) -> list[str]:
    """One line per fail or needs-info finding, failures first, each group in report order."""
    return list(_finding_lines(report))


def _finding_lines(report: dict[str, Any]) -> Iterator[str]:
    motors = report.get("motors", [])
    for status in LISTED_STATUSES:
        for motor in (motors.having(status) if isinstance(motors, MotorDicts) else motors):
            findings = [f for f in motor.get("findings", []) if f.get("status") == status]
            if not findings:
                continue
            location = clean((motor.get("source") or {}).get("label", ""))
            tag = clean(motor.get("tag", ""))
            for finding in findings:
                parts = (location, tag, STATUS_WORDS[status], clean(finding.get("rule", "")), clean(finding.get("message", "")))
                yield clip("  ".join(parts))


def _count(number: Any, noun: str) -> str:
    """'1 motor', '2 motors', '0 motors'."""
    return f"{number} {noun}" if number == 1 else f"{number} {noun}s"


def _listed_count(items: list[Any], statuses: tuple[str, ...]) -> int:
    """How many lines the findings of ``items`` (motors or feeders) with these statuses give."""
    if isinstance(items, MotorDicts):
        every_status = items.statuses()[1]  # one per finding: a facility review has hundreds of thousands
        return sum(every_status.count(status) for status in set(statuses))
    return sum(1 for item in items for f in item.get("findings", []) if f.get("status") in statuses)


def feeder_lines(report: dict[str, Any], statuses: tuple[str, ...] = LISTED_STATUSES) -> list[str]:
    """One line per finding of these statuses on a listed feeder, as ``<location>  FEEDER <group>  ...``."""
    lines = []
    for status in statuses:
        for feeder in report.get("feeders", []):
            listed = feeder.get("feeder") or {}
            location = clean((listed.get("source") or {}).get("label", ""))
            group = clean(feeder.get("group", ""))
            for finding in feeder.get("findings", []):
                if finding.get("status") != status:
                    continue
                parts = (location, f"FEEDER {group}", STATUS_WORDS[status], clean(finding.get("rule", "")),
                         clean(finding.get("message", "")))
                lines.append(clip("  ".join(parts)))
    return lines


def head_lines(report: dict[str, Any]) -> list[str]:
    """File and code; result and counts; checks that could not run (only when there are any)."""
    summary = report.get("summary", {})
    file_name = clean((report.get("input") or {}).get("file", "(unnamed input)"))
    title = clean((report.get("ruleset") or {}).get("title", ""))
    first = f"{file_name}  {clean(report.get('code', ''))}" + (f" ({title})" if title else "")
    by_status = summary.get("motors_by_status", {})
    result = summary.get("result", "")
    counts = (
        f"result: {STATUS_WORDS.get(result, clean(result).upper())} | "
        f"{_count(summary.get('rows_read', 0), 'row')} read: {_count(summary.get('motors', 0), 'motor')}, "
        + (f"{_count(summary['feeder_rows'], 'feeder')}, " if summary.get("feeder_rows") else "")
        + f"{summary.get('skipped', 0)} not reviewed | motors: {by_status.get('fail', 0)} fail, "
        f"{by_status.get('needs-info', 0)} needs info, {by_status.get('pass', 0)} pass"
    )
    lines = [clip(first), counts]  # counts are never cut
    feeders = summary.get("feeders") or {}
    if feeders.get("groups") or feeders.get("listed"):
        checked = feeders.get("by_status") or {}
        line = f"feeders: {_count(feeders.get('groups', 0), 'motor group')}, "
        if feeders.get("listed"):
            line += (f"{_count(feeders['listed'], 'feeder')} listed | {checked.get('fail', 0)} fail, "
                     f"{checked.get('needs-info', 0)} needs info, {checked.get('pass', 0)} pass")
        else:
            line += "no feeder listed (minimum ampacity and maximum device in the report, for information)"
        lines.append(clip(line))
    not_run = summary.get("checks_not_run") or []
    if not_run:
        per_check: dict[str, int] = {}
        for entry in not_run:  # one check may be summarised under several reasons
            per_check[entry.get("check", "")] = per_check.get(entry.get("check", ""), 0) + entry.get("motors", 0)
        listed = ", ".join(f"{clean(check)} ({_count(motors, 'motor')})" for check, motors in per_check.items())
        lines.append(clip(f"checks that could not run: {listed}"))
    return lines


def summary_text(report: dict[str, Any], max_lines: int = 40) -> str:
    """The summary, at most ``max_lines`` lines (the header lines are always kept).

    Layout: ``<file>  <code>``; a counts line; one line per fail/needs-info
    finding as ``<location>  <tag>  <STATUS>  <rule>  <message>`` (at most
    120 characters), with failed feeders (``<location>  FEEDER <group>  ...``)
    before the motors and feeder needs-info after them; ``... N more (see
    report)`` when lines were left out.
    """
    head = head_lines(report)
    # Feeder failures come first: one feeder can affect every motor on it. Only the lines shown
    # are written (a large plant has tens of thousands); the rest are only counted.
    total = (_listed_count(report.get("motors", []), LISTED_STATUSES)
             + _listed_count(report.get("feeders", []), LISTED_STATUSES))
    room = max(max_lines - len(head), 0)
    shown = total if total <= room else max(room - 1, 0)
    lines = chain(feeder_lines(report, ("fail",)), _finding_lines(report), feeder_lines(report, ("needs-info",)))
    body = list(islice(lines, shown))
    if total > room:
        body.append(f"... {total - shown} more (see report)")
    return "\n".join(head + body) + "\n"
