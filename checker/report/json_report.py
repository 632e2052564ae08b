"""JSON form of the report, and validation against ``schemas/review.schema.json``."""
from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path
from typing import Any

from jsonschema import Draft202012Validator
from jsonschema.exceptions import SchemaError

SCHEMAS_DIR = Path(__file__).resolve().parents[2] / "schemas"
REVIEW_SCHEMA = SCHEMAS_DIR / "review.schema.json"


def dumps(report: dict[str, Any]) -> str:
    """The report as JSON text: 2-space indent, UTF-8 kept as is, keys in report order.

    Raises ``ValueError`` for NaN or infinity (never produced by ``review_to_dict``).
    """
    text = json.dumps(report, indent=2, ensure_ascii=False, sort_keys=False, allow_nan=False)
    return text + "\n"


@lru_cache(maxsize=1)
def _validator() -> Draft202012Validator:
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
    try:
        validator = _validator()
    except (OSError, ValueError) as exc:  # json.JSONDecodeError is a ValueError
        return [f"review schema {REVIEW_SCHEMA.name} could not be loaded: {exc}"]
    except SchemaError as exc:
        return [f"review schema {REVIEW_SCHEMA.name} is not a valid schema: {exc.message}"]
    problems = [f"{_where(error.absolute_path)}: {error.message}" for error in validator.iter_errors(report)]
    return sorted(problems)
