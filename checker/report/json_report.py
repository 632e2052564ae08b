"""JSON form of the report, and validation against ``schemas/review.schema.json``."""
from __future__ import annotations

import json
from collections.abc import Iterator
from functools import lru_cache
from pathlib import Path
from typing import Any

import orjson

from checker.report.build import MOTORS_HERE, MOTORS_PER_PIECE, MotorDicts

SCHEMAS_DIR = Path(__file__).resolve().parents[2] / "schemas"
REVIEW_SCHEMA = SCHEMAS_DIR / "review.schema.json"

# The standard library's C encoder (the pure-Python one, used whenever ``indent`` is set, is ~5x slower);
# orjson writes the same compact text several times faster and is used whenever it can.
_std_encode = json.JSONEncoder(ensure_ascii=False, allow_nan=False, separators=(",", ":")).encode


# Between two objects of a list (motors, skipped rows, feeders): one object per line.
OBJECT_SEPARATOR = ",\n    "


def encode(value: Any) -> str:
    """Compact JSON of ``value``, UTF-8 kept as is, keys in insertion order.

    orjson and the standard encoder differ only in float exponents (``1e16`` / ``1e+16``), both
    valid JSON. What orjson refuses (integers beyond 64 bits, keys that are not strings) goes to
    the standard encoder. A NaN or infinity, which ``review_to_dict`` never leaves in a report,
    is written as null by orjson.
    """
    try:
        return orjson.dumps(value).decode("utf-8")
    except TypeError:  # orjson.JSONEncodeError is a TypeError
        return _std_encode(value)


def dumps(report: dict[str, Any]) -> str:
    """The report as JSON text: UTF-8 kept as is, keys in report order, one top-level key per line
    and, in lists of objects (motors, skipped rows, feeders, ...), one object per line.

    One object per line keeps a 100 000-motor report greppable and diffable, and lets every
    value be written by a compiled encoder (see ``encode``).
    """
    return "".join(iter_json(report))


def iter_json(report: dict[str, Any]) -> Iterator[str]:
    """The text of :func:`dumps` in pieces (up to ``MOTORS_PER_PIECE`` objects each), to write as they come."""
    yield "{\n"
    for number, (key, value) in enumerate(report.items()):
        head = (",\n  " if number else "  ") + encode(str(key)) + ": "
        if isinstance(value, MotorDicts) or (isinstance(value, list) and value
                                              and all(isinstance(item, dict) for item in value)):
            if not len(value):
                yield head + "[]"
                continue
            if getattr(value, "apart", None) is not None:  # written by report/write.py
                yield head + "[\n    "
                yield MOTORS_HERE
                yield "\n  ]"
                continue
            out = [head, "[\n    "]
            for index, item in enumerate(value):
                if index:
                    out.append(OBJECT_SEPARATOR)
                out.append(encode(item))
                if index % MOTORS_PER_PIECE == MOTORS_PER_PIECE - 1:
                    yield "".join(out)
                    out = []
            yield "".join(out) + "\n  ]"
        else:
            yield head + encode(value)
    yield "\n}\n"


@lru_cache(maxsize=1)
def _validator():
    from jsonschema import Draft202012Validator  # only tests and callers of validate() pay for it

    schema = json.loads(REVIEW_SCHEMA.read_text(encoding="utf-8"))
    Draft202012Validator.check_schema(schema)
    return Draft202012Validator(schema)


def _where(path: Any) -> str:
    """JSON-path-like location, ``$.motors[0].findings[1].status``."""
    out = "$"
    for part in path:
        out += f"[{part}]" if isinstance(part, int) else f".{part}"
    return out


def validate(report: dict[str, Any]) -> list[str]:
    """Problems of ``report`` against the review schema, one line each; empty when valid.

    Lines are sorted so that two runs list them the same way. A missing or
    broken schema file is reported as a single problem, not raised.
    """
    from jsonschema.exceptions import SchemaError

    try:
        validator = _validator()
    except (OSError, ValueError) as exc:  # json.JSONDecodeError is a ValueError
        return [f"review schema {REVIEW_SCHEMA.name} could not be loaded: {exc}"]
    except SchemaError as exc:
        return [f"review schema {REVIEW_SCHEMA.name} is not a valid schema: {exc.message}"]
    problems = [f"{_where(error.absolute_path)}: {error.message}" for error in validator.iter_errors(report)]
    return sorted(problems)
