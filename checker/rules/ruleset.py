"""Rulesets: the code values, tables and check parameters a review applies.

A ruleset is one TOML file in ``rulesets/`` (format explained at the top of
``rulesets/cec-2015.toml``). Loading it

1. reads the file and hashes its bytes (the report quotes the SHA-256),
2. validates it against ``schemas/ruleset.schema.json`` (Draft 2020-12),
3. cross-checks what the schema cannot: every table a check parameter names
   (a key ending in ``_table``) exists, every table row has one value per
   column, and every ``row_verification`` key names an existing row or value,
4. builds frozen dataclasses that the checks read.

A file may instead *extend* another ruleset (``extends = "cec-2015"``) and
change single values, parameters or citations under ``[override.*]`` (the
syntax is described in the header of ``rulesets/nec-2023.toml`` and in
DEVELOPERS.md). Such an amendment file is validated by the same schema, then
applied to a copy of its base, and the result is validated and cross-checked
like any ruleset. Every change is kept as ``{'path', 'old', 'new'}`` in
:attr:`Ruleset.amendments` so that a report can list it.

Any problem raises :class:`RulesetError` whose text is one line naming the
file and the first problem found. Every number keeps the verification mark
its file gives it ('published source', 'common practice' or 'from memory'),
so a report can tell a reviewer which values still need a licensed copy.
"""
from __future__ import annotations

import copy
import functools
import hashlib
import json
import os
import pathlib
import tomllib
from dataclasses import dataclass, field, replace
from typing import Any

from jsonschema import Draft202012Validator

VERIFICATION_MARKS: tuple[str, ...] = ("published source", "common practice", "from memory")
NO_VALUE = "-"  # how a ruleset file writes a code-table cell that has no value
_MESSAGE_LIMIT = 240  # characters of a schema message kept in the one-line error
MAX_EXTENDS_DEPTH = 4  # base -> amendment -> local amendment ... deeper chains are almost surely a mistake
_LOADING: list[pathlib.Path] = []  # files being loaded right now (finds an `extends` loop)


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
    document: dict = field(default_factory=dict, repr=False, compare=False)  # the (merged) file content
    amendments: tuple[dict, ...] = ()  # {'path', 'old', 'new'} per value an amendment file changed
    extends: str | None = None  # id of the base ruleset when this is an amendment file
    amendment: dict | None = None  # the amendment file's [amendment] block
    base_sha256: str | None = None

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


DEFAULT_CODE = "cec-2015"  # the ruleset a review uses when neither the command line nor the project names one


def select_ruleset(code: str | pathlib.Path | None, amendments: str | pathlib.Path | None = None) -> Ruleset:
    """The ruleset a review applies: ``code`` (default :data:`DEFAULT_CODE`), or the amendments file
    that extends it. With amendments and no code, the amendments' own base is used. An amendments
    file that does not extend ``code`` is refused (one-line :class:`RulesetError`)."""
    if amendments is None:
        return load_ruleset(code if code is not None else DEFAULT_CODE)
    amended = load_ruleset(pathlib.Path(amendments))
    if amended.extends is None:
        raise RulesetError(f"{amendments}: not an amendments file (it has no 'extends' key)")
    if code is not None:
        base = load_ruleset(code)
        if base.id not in (amended.extends, amended.id):
            raise RulesetError(f"{amendments}: amends {amended.extends}, but the review is against {base.id}; "
                               f"choose the matching --code or amendments file")
    return amended


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
    if path in _LOADING:
        raise RulesetError(f"{path}: 'extends' loops back to this file")
    if len(_LOADING) >= MAX_EXTENDS_DEPTH:
        raise RulesetError(f"{path}: more than {MAX_EXTENDS_DEPTH} rulesets extend one another")
    _LOADING.append(path)
    try:
        return _load_file(path)
    finally:
        _LOADING.pop()


def _load_file(path: pathlib.Path) -> Ruleset:
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
    sha256 = hashlib.sha256(raw).hexdigest()
    if not _schema_checked_already(sha256):
        _validate_schema(path, doc)
    if "extends" not in doc:
        _cross_check(path, doc)
        return _build(path, doc, sha256)
    base = _load_path(_resolve_base(doc["extends"], path))
    if doc["id"] == base.id:
        raise RulesetError(f"{path}: an amendment needs its own id (it has the id of its base, {base.id!r})")
    try:
        merged, changes = apply_amendment(base.document, doc)
    except AmendmentError as exc:
        raise RulesetError(f"{path}: {exc}") from None
    _validate_schema(path, merged, "after applying it to " + base.id)
    _cross_check(path, merged)
    ruleset = _build(path, merged, sha256)
    return replace(ruleset, amendments=tuple(changes), extends=base.id, amendment=dict(doc["amendment"]),
                   base_sha256=base.sha256)


def _resolve_base(ref: str, amendment_path: pathlib.Path) -> pathlib.Path:
    """A base named like a ruleset ('cec-2015') is looked up in the rulesets directory; a
    path ('../cec-2015.toml') is relative to the amendment file."""
    if ref.endswith(".toml") or "/" in ref or os.sep in ref:
        path = (amendment_path.parent / ref).resolve()
        if not path.is_file():
            raise RulesetError(f"{amendment_path}: extends {ref!r}, which is not a file ({path})")
        return path
    try:
        return _resolve(ref)
    except RulesetError as exc:
        raise RulesetError(f"{amendment_path}: extends {exc}") from None


class AmendmentError(Exception):
    """An override that cannot be applied to its base (one line, without the file name)."""


_AMENDMENT_KEYS = ("schema_version", "extends", "amendment", "override", "checks", "tables")


def apply_amendment(base_doc: dict, amend: dict) -> tuple[dict, list[dict]]:
    """Apply an amendment document to a copy of its base document.

    Returns the merged document (a plain ruleset document, without
    ``extends``/``amendment``/``override``) and the list of changes, each
    ``{'path': 'tables.table_29.rows.dc.time-delay-fuse', 'old': 150.0, 'new': 175}``
    (``old`` is None for something added). Values that an override leaves
    unchanged are not listed. Everything changed is re-marked with the
    amendment's verification mark so that ``verification_counts`` stays honest.
    """
    merged = copy.deepcopy(base_doc)
    changes: list[dict] = []
    mark = amend["amendment"]["verification"]
    reference = amend["amendment"]["reference"]
    for key, value in amend.items():
        if key in _AMENDMENT_KEYS:
            continue
        if key == "cautions":
            added = [c for c in value if c not in merged["cautions"]]
            merged["cautions"] = merged["cautions"] + added
            changes.extend({"path": "cautions", "old": None, "new": c} for c in added)
        elif merged.get(key) != value:
            if key not in ("id", "title"):  # identity of the amended ruleset, not a changed code value
                changes.append({"path": key, "old": merged.get(key), "new": value})
            merged[key] = value
    override = amend.get("override", {})
    for check_id, block in override.get("checks", {}).items():
        if check_id not in merged["checks"]:
            raise AmendmentError(f"override.checks.{check_id}: the base has no such check (add a new check "
                                 f"under [checks.{check_id}] in full)")
        _override_check(merged["checks"][check_id], block, f"checks.{check_id}", mark, reference, changes)
    for name, block in override.get("tables", {}).items():
        if name not in merged["tables"]:
            raise AmendmentError(f"override.tables.{name}: the base has no such table (add a new table under "
                                 f"[tables.{name}] in full)")
        _override_table(merged["tables"][name], block, f"tables.{name}", mark, reference, changes)
    for section in ("checks", "tables"):
        for name, block in amend.get(section, {}).items():
            if name in merged[section]:
                raise AmendmentError(f"{section}.{name} already exists in the base; change it under "
                                     f"[override.{section}.{name}]")
            merged[section][name] = copy.deepcopy(block)
            changes.append({"path": f"{section}.{name}", "old": None, "new": f"added: {block.get('title', name)}"})
    return merged, changes


def _override_check(check: dict, block: dict, where: str, mark: str, reference: str, changes: list[dict]) -> None:
    changed_params: list[str] = []
    for key, value in block.items():
        if key == "params":
            before = len(changes)
            _merge_params(check["params"], value, f"{where}.params", changes)
            changed_params += [c["path"].rsplit(".params.", 1)[1] for c in changes[before:]]
        elif check.get(key) != value:
            changes.append({"path": f"{where}.{key}", "old": check.get(key), "new": value})
            check[key] = value
    if changed_params and "verification" not in block:
        check["verification"] = mark
    if changed_params and "verified_by" not in block:
        check["verified_by"] = (f"{check['verified_by']} AMENDED by {reference}: "
                                f"{', '.join(changed_params)} (marked '{mark}').")


def _merge_params(params: dict, update: dict, where: str, changes: list[dict]) -> None:
    """Dicts merge key by key; anything else replaces the base value."""
    for key, value in update.items():
        old = params.get(key)
        if isinstance(old, dict) and isinstance(value, dict):
            _merge_params(old, value, f"{where}.{key}", changes)
        elif old != value:
            changes.append({"path": f"{where}.{key}", "old": old, "new": value})
            params[key] = value


def _override_table(table: dict, block: dict, where: str, mark: str, reference: str, changes: list[dict]) -> None:
    marks = table.setdefault("row_verification", {})
    for key, value in block.items():
        if key in ("rows", "cells"):
            if "rows" not in table:
                raise AmendmentError(f"override.{where}.{key}: the base table is a list of values, not rows")
            columns = table["columns"]
            for row_key, row in value.items():
                if key == "cells":
                    if row_key not in table["rows"]:
                        raise AmendmentError(f"override.{where}.cells names row {row_key!r}, which the base table "
                                             f"does not have")
                    unknown = [c for c in row if c not in columns]
                    if unknown:
                        raise AmendmentError(f"override.{where}.cells.{row_key} names column {unknown[0]!r}; the "
                                             f"table's columns are {', '.join(columns)}")
                    new_row = [row.get(c, old) for c, old in zip(columns, table["rows"][row_key])]
                else:
                    new_row = list(row)
                if len(new_row) != len(columns):
                    raise AmendmentError(f"override.{where}.rows: row {row_key!r} has {len(new_row)} values but the "
                                         f"table has {len(columns)} columns")
                old_row = table["rows"].get(row_key)
                if old_row is None:
                    changes.append({"path": f"{where}.rows.{row_key}", "old": None, "new": new_row})
                else:
                    changes.extend({"path": f"{where}.rows.{row_key}.{col}", "old": _cell(o), "new": _cell(n)}
                                   for col, o, n in zip(columns, old_row, new_row) if o != n)
                if old_row != new_row:
                    table["rows"][row_key] = new_row
                    marks[row_key] = mark
        elif key == "values":
            if "values" not in table:
                raise AmendmentError(f"override.{where}.values: the base table has rows, not a list of values")
            if table["values"] != value:
                changes.append({"path": f"{where}.values", "old": list(table["values"]), "new": list(value)})
                old_set = set(table["values"])
                table["values"] = list(value)
                kept = {_value_key(v) for v in value}
                for stale in [k for k in marks if k not in kept]:
                    del marks[stale]
                marks.update({_value_key(v): mark for v in value if v not in old_set})
        elif key == "row_verification":
            marks.update(value)
        elif table.get(key) != value:
            changes.append({"path": f"{where}.{key}", "old": table.get(key), "new": value})
            table[key] = value
    if not marks:
        table.pop("row_verification", None)
    values_changed = any(c["path"].startswith(where + ".rows") or c["path"] == where + ".values" for c in changes)
    if values_changed and "verified_by" not in block and "AMENDED by" not in table["verified_by"]:
        table["verified_by"] = f"{table['verified_by']} AMENDED by {reference} (changed values marked '{mark}')."


def _cell(value: Any) -> Any:
    return None if value == NO_VALUE else value


@functools.lru_cache(maxsize=1)
def _validator() -> Draft202012Validator:
    schema_path = schemas_dir() / "ruleset.schema.json"
    try:
        raw = schema_path.read_bytes()
        schema = json.loads(raw.decode("utf-8"))
        # The bundled schema is checked against the Draft 2020-12 meta-schema by the tests
        # (tests/test_ruleset.py), not on every run, where it would cost ~0.2 s.
    except (OSError, ValueError) as exc:
        raise RulesetError(f"{schema_path}: unusable ruleset schema: {_one_line(str(exc))}") from None
    return Draft202012Validator(schema)


SCHEMA_CHECKED_FILE = "schema-checked.json"  # in <repo>/rulesets: the bundled rulesets the tests validated


def _sha256_of(path: pathlib.Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _schema_checked_already(ruleset_sha256: str) -> bool:
    """Whether a file with exactly these bytes was validated against exactly the present ruleset
    schema by the tests (``rulesets/schema-checked.json``, written by :func:`write_schema_checked`):
    the bundled rulesets, unchanged. Validating one costs ~0.04 s of every review; any other or
    edited file, or a changed schema, is validated as always."""
    try:
        checked = json.loads((repo_root() / "rulesets" / SCHEMA_CHECKED_FILE).read_text(encoding="utf-8"))
        listed = checked["rulesets_sha256"]
        return isinstance(listed, list) and ruleset_sha256 in listed and \
            checked["schema_sha256"] == _sha256_of(schemas_dir() / "ruleset.schema.json")
    except (OSError, ValueError, KeyError, TypeError):
        return False


def write_schema_checked() -> pathlib.Path:
    """Validate every bundled ruleset (``<repo>/rulesets/*.toml``) against the ruleset schema and
    record their SHA-256 with the schema's (run after changing either; a test fails until then)."""
    directory = repo_root() / "rulesets"
    digests = []
    for path in sorted(directory.glob("*.toml")):
        _validate_schema(path, tomllib.loads(path.read_text(encoding="utf-8")))  # raises if invalid
        digests.append(_sha256_of(path))
    target = directory / SCHEMA_CHECKED_FILE
    target.write_text(json.dumps({"schema_sha256": _sha256_of(schemas_dir() / "ruleset.schema.json"),
                                  "rulesets_sha256": digests}, indent=2) + "\n", encoding="utf-8")
    return target


def _validate_schema(path: pathlib.Path, doc: dict, stage: str = "") -> None:
    errors = sorted(_validator().iter_errors(doc), key=lambda e: (e.json_path, e.message))
    if not errors:
        return
    first = errors[0]
    more = f" (and {len(errors) - 1} more problem{'s' if len(errors) > 2 else ''})" if len(errors) > 1 else ""
    when = f" ({stage})" if stage else ""
    raise RulesetError(f"{path}{when}: {first.json_path}: {_error_text(first)}{more}")


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
                   path=path, sha256=sha256, document=doc)


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
