"""Rulesets: the code values, tables and check parameters a review applies.

A ruleset is one TOML file in ``rulesets/`` (format explained at the top of
``rulesets/cec-2015.toml``). Loading it

1. reads the file and hashes its bytes (the report quotes the SHA-256),
2. validates it against ``schemas/ruleset.schema.json`` (Draft 2020-12),
3. cross-checks what the schema cannot: every table a check parameter names
   (a key ending in ``_table``) exists, every table row has one value per
   column, and every ``row_verification`` key names an existing row or value,
4. builds frozen dataclasses that the checks read.

Any problem raises :class:`RulesetError` whose text is one line naming the
file and the first problem found. Every number keeps the verification mark
its file gives it ('published source', 'common practice' or 'from memory'),
so a report can tell a reviewer which values still need a licensed copy.
"""
from __future__ import annotations

import functools
import hashlib
import json
import os
import pathlib
import tomllib
from dataclasses import dataclass
from typing import Any

from jsonschema import Draft202012Validator
from jsonschema.exceptions import SchemaError

VERIFICATION_MARKS: tuple[str, ...] = ("published source", "common practice", "from memory")
NO_VALUE = "-"  # how a ruleset file writes a code-table cell that has no value
_MESSAGE_LIMIT = 240  # characters of a schema message kept in the one-line error


class RulesetError(Exception):
    """A ruleset that cannot be used. ``str(e)`` is one line: which file, what is wrong."""


@dataclass(frozen=True)
class Table:
    """One code table, or one list of values (e.g. standard device ratings).

    A 2-D table has ``columns`` and ``rows`` (row key -> one value per column,
    ``None`` where the code table prints no value). A 1-D list has ``values``.
    Treat the containers as read-only: loaded rulesets are cached and shared.
    """

    name: str
    title: str
    citation: str
    unit: str | None
    columns: tuple[str, ...] | None
    rows: dict[str, tuple[float | None, ...]]
    values: tuple[float, ...] | None
    verification: str
    verified_by: str
    row_verification: dict[str, str]

    def get(self, key: str, column: str) -> float | None:
        """The cell at (row ``key``, ``column``); None if either is missing or the cell is empty."""
        if self.columns is None or column not in self.columns:
            return None
        row = self.rows.get(key)
        if row is None:
            return None
        return row[self.columns.index(column)]

    def value_count(self) -> int:
        """Number of values the table holds (empty cells not counted)."""
        if self.values is not None:
            return len(self.values)
        return sum(cell is not None for row in self.rows.values() for cell in row)

    def _marked_values(self) -> list[tuple[str, int]]:
        """(verification mark, number of values) per row, or per value for a list."""
        if self.values is not None:
            return [(self.row_verification.get(_value_key(v), self.verification), 1) for v in self.values]
        return [(self.row_verification.get(key, self.verification), sum(c is not None for c in row))
                for key, row in self.rows.items()]


@dataclass(frozen=True)
class CheckSpec:
    """One check as a ruleset configures it: which rule, why, and its parameters."""

    id: str
    rule: str
    title: str
    rationale: str
    citation: str
    params: dict
    verification: str
    verified_by: str


@dataclass(frozen=True)
class Ruleset:
    """A loaded, validated ruleset file."""

    id: str
    title: str
    code: str
    edition: str
    country: str
    cautions: tuple[str, ...]
    checks: dict[str, CheckSpec]
    tables: dict[str, Table]
    path: pathlib.Path
    sha256: str

    def check(self, check_id: str) -> CheckSpec:
        try:
            return self.checks[check_id]
        except KeyError:
            raise KeyError(f"ruleset {self.id!r} ({self.path.name}) has no check {check_id!r}; "
                           f"it has: {', '.join(sorted(self.checks))}") from None

    def table(self, name: str) -> Table:
        try:
            return self.tables[name]
        except KeyError:
            raise KeyError(f"ruleset {self.id!r} ({self.path.name}) has no table {name!r}; "
                           f"it has: {', '.join(sorted(self.tables))}") from None

    def verification_counts(self) -> dict[str, int]:
        """Number of values per verification mark: table values plus numeric check parameters."""
        counts = dict.fromkeys(VERIFICATION_MARKS, 0)
        for table in self.tables.values():
            for mark, n in table._marked_values():
                counts[mark] += n
        for spec in self.checks.values():
            counts[spec.verification] += numeric_param_count(spec.params)
        return counts

    def summary(self) -> dict:
        return {"id": self.id, "title": self.title, "code": self.code, "edition": self.edition,
                "sha256": self.sha256, "verification": self.verification_counts()}


def hp_key(hp: float) -> str:
    """Row key of a motor full-load current table for a rating in horsepower.

    Decimal text rounded to 4 places without trailing zeros, so fractional
    ratings have one spelling: 0.5 -> '0.5', 1/3 -> '0.3333', 1/6 -> '0.1667',
    7.5 -> '7.5', 10 -> '10'.
    """
    text = f"{float(hp):.4f}".rstrip("0").rstrip(".")
    return text or "0"


def numeric_param_count(value: Any) -> int:
    """Number of numeric leaves (bools excluded) in a parameter value, however nested."""
    if isinstance(value, bool):
        return 0
    if isinstance(value, (int, float)):
        return 1
    if isinstance(value, dict):
        return sum(numeric_param_count(v) for v in value.values())
    if isinstance(value, (list, tuple)):
        return sum(numeric_param_count(v) for v in value)
    return 0


def _value_key(value: float) -> str:
    """Text key of a list value for row_verification: 125.0 -> '125', 0.5 -> '0.5'."""
    return hp_key(value)


def repo_root() -> pathlib.Path:
    return pathlib.Path(__file__).resolve().parents[2]


def rulesets_dir() -> pathlib.Path:
    """``$MOTORCHECK_RULESETS`` if set, else ``<repo>/rulesets``."""
    override = os.environ.get("MOTORCHECK_RULESETS")
    return pathlib.Path(override) if override else repo_root() / "rulesets"


def schemas_dir() -> pathlib.Path:
    return repo_root() / "schemas"


def available_rulesets() -> list[str]:
    """Names accepted by :func:`load_ruleset` (file stems in the rulesets directory)."""
    directory = rulesets_dir()
    return sorted(p.stem for p in directory.glob("*.toml")) if directory.is_dir() else []


def load_ruleset(name_or_path: str | pathlib.Path) -> Ruleset:
    """Load a ruleset by name ('cec-2015') or by path to a .toml file.

    Raises RulesetError (one line) for a missing, unreadable or invalid file.
    Results are cached per resolved path.
    """
    return _load_path(_resolve(name_or_path))


def _resolve(name_or_path: str | pathlib.Path) -> pathlib.Path:
    text = str(name_or_path)
    looks_like_path = isinstance(name_or_path, pathlib.Path) or text.endswith(".toml") or os.sep in text or "/" in text
    if looks_like_path:
        path = pathlib.Path(text).expanduser().resolve()
        if not path.is_file():
            raise RulesetError(f"{path}: ruleset file not found")
        return path
    path = (rulesets_dir() / f"{text}.toml").resolve()
    if not path.is_file():
        known = ", ".join(available_rulesets()) or "none"
        raise RulesetError(f"{text}: no such ruleset in {rulesets_dir()} (available: {known})")
    return path


@functools.cache
def _load_path(path: pathlib.Path) -> Ruleset:
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise RulesetError(f"{path}: cannot read ({exc.strerror or exc})") from None
    try:
        doc = tomllib.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise RulesetError(f"{path}: not UTF-8 text") from None
    except tomllib.TOMLDecodeError as exc:
        raise RulesetError(f"{path}: not valid TOML: {_one_line(str(exc))}") from None
    _validate_schema(path, doc)
    _cross_check(path, doc)
    return _build(path, doc, hashlib.sha256(raw).hexdigest())


@functools.lru_cache(maxsize=1)
def _validator() -> Draft202012Validator:
    schema_path = schemas_dir() / "ruleset.schema.json"
    try:
        schema = json.loads(schema_path.read_text(encoding="utf-8"))
        Draft202012Validator.check_schema(schema)
    except (OSError, ValueError, SchemaError) as exc:
        raise RulesetError(f"{schema_path}: unusable ruleset schema: {_one_line(str(exc))}") from None
    return Draft202012Validator(schema)


def _validate_schema(path: pathlib.Path, doc: dict) -> None:
    errors = sorted(_validator().iter_errors(doc), key=lambda e: (e.json_path, e.message))
    if not errors:
        return
    first = errors[0]
    more = f" (and {len(errors) - 1} more problem{'s' if len(errors) > 2 else ''})" if len(errors) > 1 else ""
    raise RulesetError(f"{path}: {first.json_path}: {_error_text(first)}{more}")


def _error_text(error) -> str:
    # `{"not": {}}` marks a key that is forbidden in its position; jsonschema's own text for it is cryptic.
    if error.validator == "not" and error.validator_value == {}:
        return "this key is not allowed here"
    return _one_line(error.message)


def _cross_check(path: pathlib.Path, doc: dict) -> None:
    """What the schema cannot say. Raises on the first problem found."""
    tables = doc["tables"]
    for check_id, check in doc["checks"].items():
        for key, value in check["params"].items():
            if key.endswith("_table") and (not isinstance(value, str) or value not in tables):
                raise RulesetError(f"{path}: check {check_id!r} parameter {key} names table {value!r}, "
                                   f"which is not in this file")
    for name, table in tables.items():
        columns = table.get("columns")
        for key, row in table.get("rows", {}).items():
            if len(row) != len(columns):
                raise RulesetError(f"{path}: table {name!r} row {key!r} has {len(row)} values "
                                   f"but the table has {len(columns)} columns")
        keys = ({_value_key(v) for v in table["values"]} if "values" in table else set(table["rows"]))
        for key, mark in table.get("row_verification", {}).items():
            if key not in keys:
                raise RulesetError(f"{path}: table {name!r} row_verification names {key!r}, "
                                   f"which is not a row (or value) of the table")
            if mark not in VERIFICATION_MARKS:  # also enforced by the schema
                raise RulesetError(f"{path}: table {name!r} row {key!r}: unknown verification mark {mark!r}")


def _build(path: pathlib.Path, doc: dict, sha256: str) -> Ruleset:
    tables = {name: _build_table(name, t) for name, t in doc["tables"].items()}
    checks = {cid: CheckSpec(id=cid, rule=c["rule"], title=c["title"], rationale=c["rationale"],
                             citation=c["citation"], params=c["params"], verification=c["verification"],
                             verified_by=c["verified_by"])
              for cid, c in doc["checks"].items()}
    return Ruleset(id=doc["id"], title=doc["title"], code=doc["code"], edition=doc["edition"],
                   country=doc["country"], cautions=tuple(doc["cautions"]), checks=checks, tables=tables,
                   path=path, sha256=sha256)


def _build_table(name: str, t: dict) -> Table:
    is_list = "values" in t
    return Table(
        name=name, title=t["title"], citation=t["citation"], unit=t.get("unit"),
        columns=None if is_list else tuple(t["columns"]),
        rows={} if is_list else {k: tuple(None if c == NO_VALUE else float(c) for c in row)
                                 for k, row in t["rows"].items()},
        values=tuple(float(v) for v in t["values"]) if is_list else None,
        verification=t["verification"], verified_by=t["verified_by"],
        row_verification=dict(t.get("row_verification", {})),
    )


def _one_line(text: str) -> str:
    flat = " ".join(text.split())
    return flat if len(flat) <= _MESSAGE_LIMIT else flat[: _MESSAGE_LIMIT - 1] + "…"
