"""Turn a :class:`checker.model.Review` into the one report dict every emitter reads.

The dict is deterministic: no timestamps, no absolute paths, motors in input
order, findings in the order the review gives them, our own keys in a fixed
order. The JSON emitter writes it as is; the HTML and text emitters only read it.
"""
from __future__ import annotations

import math
from collections.abc import Iterable, Iterator, Mapping, Sequence
from datetime import date, datetime, time
from enum import Enum
from functools import lru_cache
from pathlib import PurePath, PurePosixPath, PureWindowsPath
from typing import Any

import orjson

from checker import model

TOOL_NAME = "motorcheck"

# Worst first: a motor takes the first status that any of its findings has.
STATUS_ORDER: tuple[str, ...] = (
    model.Status.FAIL.value,
    model.Status.NEEDS_INFO.value,
    model.Status.PASS.value,
)

# Motors per piece of text that a report writer yields (each piece written has its own cost).
MOTORS_PER_PIECE = 32

# Limits and provided values are printed to 3 decimals; more would only show float noise.
VALUE_DECIMALS = 3


def worst_status(statuses: Iterable[str]) -> str:
    """Worst of ``statuses`` (fail > needs-info > pass); nothing to judge is needs-info."""
    seen = set(statuses)
    for status in STATUS_ORDER:
        if status in seen:
            return status
    return model.Status.NEEDS_INFO.value


def count_statuses(statuses: Iterable[str]) -> dict[str, int]:
    """Counts keyed ``pass``, ``fail``, ``needs-info`` (always all three, in that order)."""
    counts = {"pass": 0, "fail": 0, "needs-info": 0}
    if isinstance(statuses, list):  # a facility review's hundreds of thousands of findings: counted in C
        return {status: statuses.count(status) for status in counts}
    for status in statuses:
        if status in counts:
            counts[status] += 1
    return counts


def plain(value: Any) -> Any:
    """A JSON-safe deep copy of ``value``.

    Mappings keep their key order (keys become strings), tuples and lists become
    lists, sets become lists sorted by text (sets have no stable order), dates
    become ISO text (TOML can hold them), non-finite floats become None (JSON
    has no NaN) and anything else unknown becomes its ``str``.
    """
    cls = value.__class__  # the exact built-in types first: records are made of them
    if cls is str or cls is int or cls is bool or value is None:
        return value
    if cls is float:
        return value if math.isfinite(value) else None
    if cls is dict:
        return {(key if key.__class__ is str else str(key)): plain(item) for key, item in value.items()}
    if cls is list or cls is tuple:
        return [plain(item) for item in value]
    if value is None or isinstance(value, (bool, int, str)):
        return value
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, Enum):
        return plain(value.value)
    if isinstance(value, Mapping):
        return {str(key): plain(item) for key, item in value.items()}
    if isinstance(value, (list, tuple)):
        return [plain(item) for item in value]
    if isinstance(value, (set, frozenset)):
        return sorted((plain(item) for item in value), key=str)
    if isinstance(value, (datetime, date, time)):
        return value.isoformat()
    if isinstance(value, PurePath):
        return safe_file_name(str(value))
    return str(value)


def plain_record(value: dict[str, Any]) -> Any:
    """``plain(value)`` for a record or row of JSON-like values, copied by orjson's compiled
    writer and reader when it can (the same result: tuples become lists, NaN and infinity None);
    anything orjson cannot write (sets, paths, integers beyond 64 bits, keys that are not
    strings) goes to :func:`plain`."""
    try:
        return orjson.loads(orjson.dumps(value))
    except TypeError:  # orjson.JSONEncodeError
        return plain(value)


@lru_cache(maxsize=256)
def safe_file_name(path_text: str) -> str:
    """``path_text`` unchanged if relative, else only its final name.

    An absolute path would make two runs on different machines differ and
    leak the reviewer's directory layout into a document that is handed out.
    """
    for flavour in (PurePosixPath, PureWindowsPath):
        pure = flavour(path_text)
        if pure.is_absolute() or (flavour is PureWindowsPath and pure.drive):
            return pure.name
    return path_text


def round_value(value: float | None) -> float | int | None:
    """``value`` rounded to :data:`VALUE_DECIMALS`; None for missing or non-finite."""
    if value is None or isinstance(value, bool):
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    if not math.isfinite(number):
        return None
    return round(number, VALUE_DECIMALS)


def source_dict(source: model.SourceRef) -> dict[str, Any]:
    """``SourceRef.to_dict()`` with an absolute file path cut to its name."""
    out = source.to_dict()
    out["file"] = safe_file_name(out["file"])
    return out


def cells_for(finding: model.Finding, sources: Mapping[str, model.SourceRef],
              known: dict[str, dict[str, Any]] | None = None) -> list[dict[str, Any]]:
    """Cell locations of the fields a finding read; fields with no known cell are left out.

    ``known`` keeps the cell of each field already described for the same ``sources``.
    """
    cells = []
    for field_name in finding.fields:
        cell = known.get(field_name) if known is not None else None
        if cell is None:
            if field_name not in sources:
                continue
            if sources.__class__ is model.CellSources:  # the label without making a SourceRef
                row, column = sources.place(field_name)
                cell = {"field": field_name, "label": row.label_at(column), "column": column}
            else:
                source = sources[field_name]
                cell = {"field": field_name, "label": source.label(), "column": source.column}
            if known is not None:
                known[field_name] = cell
        cells.append(cell)
    return cells


class FindingEntry(dict):
    """One finding in report form: a plain dict whose keys are those of ``shared``, then ``cells``.

    ``shared`` (every key but ``cells``) is one object for all motors given the very same
    :class:`~checker.model.Finding` (a review reuses a check's findings for motors with equal
    values), so the emitters can render that part once; ``cells`` is this motor's own. Any
    change to the entry sets ``shared`` to None: the emitters then render the entry as it is.
    """

    __slots__ = ("shared",)

    def _changed(self) -> None:
        self.shared = None

    def __setitem__(self, key, value):
        self._changed()
        dict.__setitem__(self, key, value)

    def __delitem__(self, key):
        self._changed()
        dict.__delitem__(self, key)

    def __ior__(self, other):
        self._changed()
        return dict.__ior__(self, other)

    def pop(self, *args):
        self._changed()
        return dict.pop(self, *args)

    def popitem(self):
        self._changed()
        return dict.popitem(self)

    def setdefault(self, key, default=None):
        self._changed()
        return dict.setdefault(self, key, default)

    def update(self, *args, **kwargs):
        self._changed()
        dict.update(self, *args, **kwargs)

    def clear(self):
        self._changed()
        dict.clear(self)


def shared_part(entry: Any) -> dict[str, Any] | None:
    """The shared part of an unchanged :class:`FindingEntry`, else None."""
    return entry.shared if entry.__class__ is FindingEntry else None


def finding_shared_part(finding: model.Finding) -> dict[str, Any]:
    """A finding in report form but its cells: the same for every motor given this finding."""
    return {
        "check": finding.check,
        "rule": finding.rule,
        "status": model.Status(finding.status).value,
        "message": finding.message,
        "limit": round_value(finding.limit),
        "provided": round_value(finding.provided),
        "unit": finding.unit,
        "trail": [str(step) for step in finding.trail],
        "assumptions": [str(item) for item in finding.assumptions],
        "citation": finding.citation,
    }


def finding_dict(finding: model.Finding, sources: Mapping[str, model.SourceRef],
                 shared: dict[int, tuple[model.Finding, dict[str, Any]]] | None = None,
                 cells: dict[str, dict[str, Any]] | None = None) -> dict[str, Any]:
    """One finding in report form (fixed key order).

    ``shared`` maps ``id(finding)`` to the finding and its shared part, filled as it goes (the
    finding is kept so that its id cannot be reused while the map lives); ``cells`` is the
    ``known`` map of :func:`cells_for` for these ``sources``.
    """
    known = shared.get(id(finding)) if shared is not None else None
    part = known[1] if known is not None else finding_shared_part(finding)
    if shared is not None and known is None:
        shared[id(finding)] = (finding, part)
    entry = FindingEntry(part)
    dict.__setitem__(entry, "cells", cells_for(finding, sources, cells))
    entry.shared = part
    return entry


def motor_dict(motor_review: model.MotorReview,
               shared: dict[int, tuple[model.Finding, dict[str, Any]]] | None = None) -> dict[str, Any]:
    """One motor with its reading findings first, then its check findings."""
    motor = motor_review.motor
    cells: dict[str, dict[str, Any]] = {}
    findings = [
        finding_dict(finding, motor.sources, shared, cells)
        for finding in (*motor.input_findings, *motor_review.findings)
    ]
    return {
        "tag": motor.tag,
        "status": worst_status(item["status"] for item in findings),
        "source": source_dict(motor.source),
        "record": plain_record(motor.record),
        "raw": plain_record(motor.raw),
        "findings": findings,
        "not_run": [{"check": item.check, "reason": item.reason, "detail": item.detail}
                    for item in motor_review.not_run],
    }


class WrittenApart:
    """Set on a :class:`MotorDicts` (``apart``) while ``report/write.py`` writes its motors itself,
    into the JSON and HTML files at once: the two writers then give :data:`MOTORS_HERE` where
    the motors go instead of writing them. ``catalogue`` is the HTML page's numbering of distinct
    findings, shared with the motor writer."""

    __slots__ = ("catalogue", "findings_elsewhere")

    def __init__(self, catalogue: Any, findings_elsewhere: bool = False) -> None:
        self.catalogue = catalogue
        self.findings_elsewhere = findings_elsewhere  # the page's 'Findings in full' too: FINDINGS_HERE


class _MotorsHere(str):
    """The marker a writer gives where the motors go (see :class:`WrittenApart`)."""

    __slots__ = ()

    def __html__(self) -> str:  # passes through the page template as it is
        return self


MOTORS_HERE = _MotorsHere("\x00motors written here\x00")
FINDINGS_HERE = _MotorsHere("\x00findings in full written here\x00")


class MotorDicts(Sequence):
    """``report["motors"]`` built one motor at a time: each read makes that motor's dict anew.

    A 100 000-motor report as a list holds about a million finding dicts (~1 GB); read in
    order by the emitters, this holds one. The shared parts of findings stay shared, so
    the JSON and HTML emitters still write each distinct finding's text once.
    """

    def __init__(self, reviews: tuple[model.MotorReview, ...],
                 shared: dict[int, tuple[model.Finding, dict[str, Any]]]) -> None:
        self._reviews = reviews
        self._shared = shared
        self._statuses: tuple[list[str], list[str]] | None = None  # the reviews never change
        self.apart: WrittenApart | None = None

    def __len__(self) -> int:
        return len(self._reviews)

    def review(self, index: int) -> model.MotorReview:
        return self._reviews[index]

    @property
    def shared(self) -> dict[int, tuple[model.Finding, dict[str, Any]]]:
        """Finding id -> (finding, shared part), as the motors' dicts use them."""
        return self._shared

    def __getitem__(self, index):
        if isinstance(index, slice):
            return [motor_dict(review, self._shared) for review in self._reviews[index]]
        return motor_dict(self._reviews[index], self._shared)

    def __iter__(self) -> Iterator[dict[str, Any]]:
        for review in self._reviews:
            yield motor_dict(review, self._shared)

    def having(self, status: str) -> Iterator[dict[str, Any]]:
        """The dicts of the motors with at least one finding of ``status``, in order."""
        for review in self._reviews:
            if any(model.Status(f.status).value == status for f in (*review.motor.input_findings, *review.findings)):
                yield motor_dict(review, self._shared)

    def statuses(self) -> tuple[list[str], list[str]]:
        """(each motor's status, every finding's status), as ``motor_dict`` would give them."""
        if self._statuses is None:
            motor_statuses, finding_statuses = [], []
            value_of = {status: status.value for status in model.Status}

            def values(findings) -> list[str]:
                return [value_of.get(f.status) or model.Status(f.status).value for f in findings]

            # Motors whose records agree share one findings tuple (review._CheckMemo): judged once.
            shared: dict[int, tuple] = {}  # id(findings) -> (findings, their statuses, the worst)
            for review in self._reviews:
                findings = review.findings
                known = shared.get(id(findings))
                if known is None or known[0] is not findings:
                    statuses = values(findings)
                    known = shared[id(findings)] = (findings, statuses, worst_status(statuses))
                if review.motor.input_findings:  # the row's own reading problems come first
                    statuses = values(review.motor.input_findings) + known[1]
                    motor_statuses.append(worst_status(statuses))
                    finding_statuses.extend(statuses)
                else:
                    motor_statuses.append(known[2])
                    finding_statuses.extend(known[1])
            self._statuses = motor_statuses, finding_statuses
        return self._statuses


def skipped_dict(row: model.SkippedRow) -> dict[str, Any]:
    return {"source": source_dict(row.source), "reason": row.reason, "text": row.text}


def check_not_run_dict(entry: Mapping[str, Any]) -> dict[str, Any]:
    """Normalise one ``checks_not_run`` entry to ``{check, reason, motors}``."""
    try:
        motor_count = int(entry.get("motors", 0) or 0)
    except (TypeError, ValueError):
        motor_count = 0
    return {
        "check": str(entry.get("check", "")),
        "reason": str(entry.get("reason", "")),
        "motors": max(motor_count, 0),
    }


NOT_CHECKED = "not-checked"  # a feeder group shown for information only


def feeder_dict(feeder: model.FeederReview) -> dict[str, Any]:
    """One feeder or motor group: its motors, the feeder as read, computed limits and findings."""
    findings = [finding_dict(finding, feeder.feeder_sources) for finding in feeder.findings]
    computed = plain(feeder.computed)
    for key in ("min_ampacity_a", "ampacity_counted_a"):
        if key in computed:
            computed[key] = round_value(computed[key])
    for entry in computed.get("max_device", []):
        for key in ("limit_a", "counted_a", "standard_a"):
            entry[key] = round_value(entry.get(key))
    listed = None
    if feeder.feeder is not None:
        listed = {"record": plain(feeder.feeder),
                  "source": source_dict(feeder.feeder_source) if feeder.feeder_source else None}
    return {
        "group": feeder.group,
        "status": worst_status(item["status"] for item in findings) if findings else NOT_CHECKED,
        "motors": [{"tag": tag, "source": source_dict(source)}
                   for tag, source in zip(feeder.motor_tags, feeder.motor_sources)],
        "feeder": listed,
        "computed": computed,
        "findings": findings,
        "notes": [str(note) for note in feeder.notes],
    }


def feeder_summary(feeders: list[dict[str, Any]]) -> dict[str, Any]:
    """Counts for the summary: groups, feeders listed, and checked feeders by status."""
    return {
        "groups": sum(1 for item in feeders if item["motors"]),
        "listed": sum(1 for item in feeders if item["feeder"] is not None),
        "by_status": count_statuses(item["status"] for item in feeders),
    }


def overall_result(motor_statuses: list[str], checks_not_run: list[dict[str, Any]],
                   feeder_statuses: Iterable[str] = ()) -> str:
    """Result of the whole review.

    Worst motor (or checked feeder) status; a review with no motors, or where a
    check could not run on some motor, cannot be called a pass, so it is at
    best needs-info. Feeder groups shown only for information do not count.
    """
    checked = [status for status in feeder_statuses if status != NOT_CHECKED]
    result = worst_status([*motor_statuses, *checked]) if motor_statuses else worst_status(())
    if result == model.Status.PASS.value and any(entry["motors"] > 0 for entry in checks_not_run):
        return model.Status.NEEDS_INFO.value
    return result


def summary_dict(
    motors: list[dict[str, Any]], skipped_count: int, checks_not_run: list[dict[str, Any]],
    feeders: list[dict[str, Any]] = (),
) -> dict[str, Any]:
    """Counts and result. Every input row is a motor, a skipped row or a feeder row."""
    if isinstance(motors, MotorDicts):
        motor_statuses, finding_statuses = motors.statuses()
    else:
        motor_statuses = [motor["status"] for motor in motors]
        finding_statuses = [finding["status"] for motor in motors for finding in motor["findings"]]
    feeder_rows = sum(1 for item in feeders if item["feeder"] is not None)
    return {
        "rows_read": len(motors) + skipped_count + feeder_rows,
        "motors": len(motors),
        "skipped": skipped_count,
        "feeder_rows": feeder_rows,
        "findings": count_statuses(finding_statuses),
        "motors_by_status": count_statuses(motor_statuses),
        "feeders": feeder_summary(list(feeders)),
        "result": overall_result(motor_statuses, checks_not_run, (item["status"] for item in feeders)),
        "checks_not_run": checks_not_run,
    }


def as_list(value: Any) -> list[Any]:
    """``value`` if it is a list, else an empty list (a ruleset may leave a key out)."""
    return value if isinstance(value, list) else []


def text_list(value: Any) -> list[str]:
    """A list of strings from a list, a single string, or nothing."""
    if isinstance(value, str):
        return [value]
    return [str(item) for item in as_list(value)]


def input_dict(given: Mapping[str, Any]) -> dict[str, Any]:
    out = plain(given)
    if isinstance(out.get("file"), str):
        out["file"] = safe_file_name(out["file"])
    return out


def review_to_dict(review: model.Review, tool_version: str, lazy: bool = False) -> dict[str, Any]:
    """The report dict for ``review`` (shape: ``schemas/review.schema.json``).

    Parameters
    ----------
    review : checker.model.Review
        The finished review.
    tool_version : str
        motorcheck's version, written into ``tool.version``.
    lazy : bool
        Give ``motors`` as a :class:`MotorDicts` sequence that builds each motor's dict when it
        is read, instead of a list (what the emitters need for 100 000 motors in well under
        1 GiB; a JSON-schema validator wants the list).

    Returns
    -------
    dict
        Plain JSON-safe data; see the schema for every key.
    """
    shared: dict[int, tuple[model.Finding, dict[str, Any]]] = {}
    if lazy:
        motors: list[dict[str, Any]] | MotorDicts = MotorDicts(review.motors, shared)
    else:
        motors = [motor_dict(motor_review, shared) for motor_review in review.motors]
    skipped = [skipped_dict(row) for row in review.skipped]
    checks_not_run = [check_not_run_dict(entry) for entry in review.checks_not_run]
    feeders = [feeder_dict(feeder) for feeder in review.feeders]
    ruleset = plain(review.ruleset)
    return {
        "tool": {"name": TOOL_NAME, "version": str(tool_version)},
        "code": review.code,
        "ruleset": ruleset,
        "input": input_dict(review.input),
        "summary": summary_dict(motors, len(skipped), checks_not_run, feeders),
        "cautions": text_list(ruleset.get("cautions")),
        "notes": [str(item) for item in review.notes],
        "tables": [plain(table) for table in review.tables],
        "motors": motors,
        "skipped": skipped,
        "feeders": feeders,
        "checks": [entry for entry in as_list(ruleset.get("checks")) if isinstance(entry, dict)],
    }
