"""Ruleset loading, validation and the CEC 2015 values.

Spot values are compared with published sources; each assertion names its
source and the edition that source quotes. Source addresses are in
rulesets/cec-2015.toml (verified_by) and shared/reference/code-values.md.
"""
from __future__ import annotations

import json
import math
import re
import shutil
import tomllib
from decimal import ROUND_HALF_UP, Decimal
from itertools import pairwise

import pytest
from hypothesis import given
from hypothesis import strategies as st
from jsonschema import Draft202012Validator

from checker.rules.ruleset import (
    VERIFICATION_MARKS,
    RulesetError,
    available_rulesets,
    hp_key,
    load_ruleset,
    rulesets_dir,
    schemas_dir,
)

CEC_PATH = rulesets_dir() / "cec-2015.toml"


@pytest.fixture(scope="module")
def cec():
    return load_ruleset("cec-2015")


@pytest.fixture(scope="module")
def cec_text():
    return CEC_PATH.read_text(encoding="utf-8")


# --- loading ---------------------------------------------------------------------------------------------

def test_cec_2015_loads_with_identity(cec):
    assert cec.id == "cec-2015"
    assert cec.edition == "2015"
    assert cec.country == "CA"
    assert "C22.1-15" in cec.code
    # Further checks (feeder groups, overloads ...) are added by their own issues; these four must stay.
    assert {"motor-current", "conductor-ampacity", "branch-ocpd", "ocpd-standard-rating"} <= set(cec.checks)
    assert {"table_2", "table_4", "table_13", "table_27", "table_29", "table_44", "table_45"} <= set(cec.tables)
    assert len(cec.cautions) >= 3
    assert re.fullmatch(r"[0-9a-f]{64}", cec.sha256)


def test_available_rulesets_lists_cec_2015():
    assert "cec-2015" in available_rulesets()


def test_load_by_path_is_cached_with_load_by_name(cec):
    assert load_ruleset(CEC_PATH) is cec
    assert load_ruleset(str(CEC_PATH)) is cec


def test_rulesets_dir_honours_environment(tmp_path, monkeypatch):
    shutil.copy(CEC_PATH, tmp_path / "local-copy.toml")
    monkeypatch.setenv("MOTORCHECK_RULESETS", str(tmp_path))
    assert available_rulesets() == ["local-copy"]
    assert load_ruleset("local-copy").id == "cec-2015"


def test_unknown_name_is_a_one_line_error():
    with pytest.raises(RulesetError) as info:
        load_ruleset("cec-1999")
    text = str(info.value)
    assert "cec-1999" in text and "cec-2015" in text and "\n" not in text


def test_missing_file_is_a_one_line_error(tmp_path):
    with pytest.raises(RulesetError, match="not found"):
        load_ruleset(tmp_path / "absent.toml")


def test_schema_is_valid_draft_2020_12():
    schema = json.loads((schemas_dir() / "ruleset.schema.json").read_text(encoding="utf-8"))
    Draft202012Validator.check_schema(schema)
    assert schema["$schema"].endswith("2020-12/schema")


# --- bundled rulesets validated once, by the tests ---------------------------------------------------------

def test_schema_checked_record_names_exactly_the_bundled_rulesets_and_schema():
    """``rulesets/schema-checked.json`` lets a review skip re-validating an unchanged bundled ruleset.
    It must list exactly the bundled files as they are now, each of which validates; after changing
    a ruleset or the schema run ``python -c 'from checker.rules.ruleset import write_schema_checked;
    write_schema_checked()'``."""
    from checker.rules import ruleset as module

    record = json.loads((module.repo_root() / "rulesets" / module.SCHEMA_CHECKED_FILE).read_text(encoding="utf-8"))
    bundled = sorted((module.repo_root() / "rulesets").glob("*.toml"))
    validator = Draft202012Validator(json.loads((schemas_dir() / "ruleset.schema.json").read_text(encoding="utf-8")))
    for path in bundled:
        assert validator.is_valid(tomllib.loads(path.read_text(encoding="utf-8"))), path
    assert record == {"schema_sha256": module._sha256_of(schemas_dir() / "ruleset.schema.json"),
                      "rulesets_sha256": [module._sha256_of(path) for path in bundled]}


def _count_validations(monkeypatch):
    from checker.rules import ruleset as module

    calls = []
    real = module._validate_schema
    monkeypatch.setattr(module, "_validate_schema", lambda *a, **k: (calls.append(a[0]), real(*a, **k)))
    return calls


def test_unchanged_bundled_bytes_are_not_validated_again_anywhere(tmp_path, monkeypatch, cec_text):
    calls = _count_validations(monkeypatch)
    copy = tmp_path / "copy.toml"
    shutil.copyfile(CEC_PATH, copy)  # the same bytes: the record vouches for them wherever they are
    load_ruleset(copy)
    assert calls == []
    edited = tmp_path / "edited.toml"
    edited.write_text(cec_text + "\n# a reviewer's note\n", encoding="utf-8")  # one byte more: validated
    load_ruleset(edited)
    assert calls == [edited.resolve()]


def test_a_changed_schema_revalidates_the_bundled_rulesets(tmp_path, monkeypatch):
    from checker.rules import ruleset as module

    calls = _count_validations(monkeypatch)
    changed = tmp_path / "schemas"
    shutil.copytree(schemas_dir(), changed)
    with open(changed / "ruleset.schema.json", "a", encoding="utf-8") as schema:
        schema.write("\n")
    monkeypatch.setattr(module, "schemas_dir", lambda: changed)
    copy = tmp_path / "copy.toml"
    shutil.copyfile(CEC_PATH, copy)
    load_ruleset(copy)
    assert calls == [copy.resolve()]


# --- rejection of bad files --------------------------------------------------------------------------------

EXTRA_CHECK = """
[checks.extra]
rule = "1-000"
title = "x"
rationale = "x"
citation = "x"
verification = "from memory"
verified_by = "x"
[checks.extra.params]
limit_table = "table_99"
"""

BAD_EDITS = [
    # (case id, old text, new text, words the one-line message must contain)
    ("unknown top-level key", 'country = "CA"', 'country = "CA"\ncolour = "red"', ["colour", "not allowed"]),
    ("unknown key in a check", 'rule = "28-200"', 'rule = "28-200"\nseverity = "high"', ["branch-ocpd", "severity"]),
    ("unknown key in a table", 'citation = "CSA C22.1-15, Table 27"',
     'citation = "CSA C22.1-15, Table 27"\nnotes = "x"', ["table_27", "notes"]),
    ("unknown param of a known check", "continuous_percent = 125", "continuous_percent = 125\nmargin = 3",
     ["conductor-ampacity", "margin"]),
    ("bad verification mark on a check", 'verification = "common practice"', 'verification = "checked"',
     ["ocpd-standard-rating", "checked"]),
    ("bad verification mark on a row", 'row_verification = { "dc" = "published source" }',
     'row_verification = { "dc" = "seen online" }', ["table_29", "seen online"]),
    ("row of wrong length", '"12" = [20, 25, 30]', '"12" = [20, 25]', ["table_2", "'12'", "2 values", "3 columns"]),
    ("param names a missing table", 'duty_table = "table_27"', 'duty_table = "table_99"',
     ["conductor-ampacity", "table_99"]),
    ("row_verification names a missing row", 'row_verification = { "dc" =', 'row_verification = { "ac" =',
     ["table_29", "'ac'"]),
    ("values list with columns", "values = [15,", 'columns = ["a"]\nvalues = [15,', ["table_13", "columns"]),
    ("text in a numeric cell", '"short-time" = [110, 120, 150, "-"]', '"short-time" = [110, 120, 150, "n/a"]',
     ["table_27", "short-time"]),
    ("percentage given as text", "continuous_percent = 125", 'continuous_percent = "125"',
     ["continuous_percent", "number"]),
    ("wrong schema version", "schema_version = 1", "schema_version = 2", ["schema_version"]),
    ("invalid TOML", "schema_version = 1", "schema_version = ", ["TOML"]),
]


@pytest.mark.parametrize("old,new,words", [case[1:] for case in BAD_EDITS], ids=[case[0] for case in BAD_EDITS])
def test_bad_ruleset_is_rejected_with_one_line(tmp_path, cec_text, old, new, words):
    assert old in cec_text, "test edit no longer matches the ruleset file"
    path = tmp_path / "bad.toml"
    path.write_text(cec_text.replace(old, new, 1), encoding="utf-8")
    with pytest.raises(RulesetError) as info:
        load_ruleset(path)
    message = str(info.value)
    assert "\n" not in message
    assert str(path) in message
    for word in words:
        assert word in message


def test_table_without_rows_is_rejected(tmp_path, cec_text):
    text, n = re.subn(r"\[tables\.table_27\.rows\].*?(?=\n\[tables)", "", cec_text, flags=re.DOTALL)
    assert n == 1
    path = tmp_path / "no-rows.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(RulesetError, match=r"table_27: 'rows' is a required property"):
        load_ruleset(path)


def test_param_naming_missing_table_in_unknown_check(tmp_path, cec_text):
    path = tmp_path / "extra.toml"
    path.write_text(cec_text + EXTRA_CHECK, encoding="utf-8")
    with pytest.raises(RulesetError, match=r"check 'extra' parameter limit_table names table 'table_99'"):
        load_ruleset(path)


MINIMAL = """
schema_version = 1
id = "tiny"
title = "t"
code = "c"
edition = "2000"
country = "CA"
cautions = ["c"]

[checks.demo]
rule = "1"
title = "t"
rationale = "r"
citation = "c"
verification = "common practice"
verified_by = "v"
[checks.demo.params]
limit_table = "grid"
factor = 1.25
bands = [{ low = 1, high = 2 }]
enabled = true

[tables.grid]
title = "t"
citation = "c"
verification = "from memory"
verified_by = "v"
columns = ["a", "b"]
row_verification = { "r2" = "published source" }
[tables.grid.rows]
r1 = [1, "-"]
r2 = [3, 4]

[tables.list]
title = "t"
citation = "c"
verification = "from memory"
verified_by = "v"
values = [10, 20, 30]
row_verification = { "20" = "published source" }
"""


def test_minimal_ruleset_counts_and_lookups(tmp_path):
    path = tmp_path / "tiny.toml"
    path.write_text(MINIMAL, encoding="utf-8")
    tiny = load_ruleset(path)
    grid = tiny.table("grid")
    assert grid.get("r1", "a") == 1.0
    assert grid.get("r1", "b") is None  # "-" cell
    assert grid.get("r9", "a") is None and grid.get("r1", "z") is None
    assert grid.value_count() == 3 and tiny.table("list").value_count() == 3
    assert tiny.table("list").get("10", "a") is None
    # grid: r1 one value (memory), r2 two values (published); list: 10 and 30 memory, 20 published;
    # params: 1.25, 1 and 2 are numeric (the bool is not) under 'common practice'.
    assert tiny.verification_counts() == {"published source": 3, "common practice": 3, "from memory": 3}
    assert grid.unit is None  # unit is optional


def test_check_and_table_lookup_errors_are_helpful(cec):
    with pytest.raises(KeyError, match="has no check 'no-such-check'.*motor-current"):
        cec.check("no-such-check")
    with pytest.raises(KeyError, match="has no table 'table_99'.*table_2"):
        cec.table("table_99")


# --- verification marks ------------------------------------------------------------------------------------

def _numeric_leaves(value) -> int:
    if isinstance(value, bool):
        return 0
    if isinstance(value, (int, float)):
        return 1
    if isinstance(value, dict):
        return sum(_numeric_leaves(v) for v in value.values())
    if isinstance(value, list):
        return sum(_numeric_leaves(v) for v in value)
    return 0


def test_verification_counts_cover_every_value(cec):
    raw = tomllib.loads(CEC_PATH.read_text(encoding="utf-8"))
    cells = sum(1 for t in raw["tables"].values() for row in t.get("rows", {}).values() for c in row if c != "-")
    listed = sum(len(t.get("values", [])) for t in raw["tables"].values())
    params = sum(_numeric_leaves(c["params"]) for c in raw["checks"].values())
    counts = cec.verification_counts()
    assert set(counts) == set(VERIFICATION_MARKS)
    assert sum(counts.values()) == cells + listed + params
    assert cec.summary()["verification"] == counts


def test_summary_shape(cec):
    assert set(cec.summary()) == {"id", "title", "code", "edition", "sha256", "verification"}


def test_published_marks_name_an_address(cec):
    """A 'published source' mark anywhere in a block needs a source address in its verified_by."""
    for table in cec.tables.values():
        marks = {table.verification, *table.row_verification.values()}
        if "published source" in marks:
            assert "http" in table.verified_by, table.name
    for spec in cec.checks.values():
        if spec.verification == "published source":
            assert "http" in spec.verified_by, spec.id


def test_weak_values_stay_marked_from_memory(cec):
    """Values our sources do not back for the CEC must not be upgraded silently."""
    assert cec.table("table_29").verification == "from memory"
    assert cec.table("table_29").row_verification == {"dc": "published source"}  # 150 % any device, CEC 2024
    assert cec.table("table_2").row_verification.get("1000") == "from memory"  # pre-2011 NEC only
    assert cec.table("table_4").row_verification.get("700") == "from memory"  # changed in 2011, memory
    assert cec.check("branch-ocpd").verification == "from memory"  # 15 A relief and 30 A split


# --- published spot values ---------------------------------------------------------------------------------

def test_copper_ampacity_spot_values(cec):
    t2 = cec.table("table_2")
    assert t2.get("500", "75C") == 380  # CEC 2012 Table 2 per IAEI (iaei.org Wiring-Methods blog post)
    assert t2.get("1/0", "75C") == 150  # BC apprenticeship guide G1, CEC 2012/2015 era (docsbay.net)
    assert t2.get("3/0", "75C") == 200  # dakotaprep motor-bank feeder guide, CEC 2024
    assert t2.get("14", "60C") == 15  # NEC Table 310.15(B)(16) post-2011 (scribd 602627451), harmonized in CEC 2012
    assert t2.get("600", "60C") == 350  # same NEC source; pre-2011 tables show 355


def test_aluminum_ampacity_spot_values(cec):
    t4 = cec.table("table_4")
    assert t4.get("4/0", "75C") == 180  # NEC Table 310.15(B)(16) aluminum, post-2011 (scribd 602627451)
    assert t4.get("12", "60C") == 15  # same source; pre-2011 tables show 20
    assert t4.get("14", "75C") is None  # Table 4 starts at 12 AWG


def test_motor_current_spot_values(cec):
    t44, t45 = cec.table("table_44"), cec.table("table_45")
    assert t44.get("30", "575") == 32  # dakotaprep overload guide, CEC 2024; question bank 442adocQ
    assert t44.get("20", "575") == 22  # dakotaprep overload guide, CEC 2024
    assert t44.get("30", "230") == 80  # dakotaprep conductor sizing guide, CEC 2024 ("240 V")
    assert t44.get("3", "115") is None  # no 115 V three-phase value above 2 hp (NEC 1999 Table 430-150)
    assert t45.get("5", "230") == 28  # dakotaprep intro to motor code, CEC 2024
    assert t45.get("5", "208") == pytest.approx(30.8)  # same source: note adds 10 % at 208 V
    assert t45.get(hp_key(1), "115") == 16  # NEC 2017 Table 430.248 per ECM Motor Calculations Part 2
    assert t45.get("5", "460") is None  # single-phase table has no 460 V column


def test_duty_cycle_spot_values(cec):
    t27 = cec.table("table_27")
    assert t27.get("intermittent", "15-min") == 85  # dakotaprep motor-bank feeder guide, CEC 2024
    assert t27.get("short-time", "5-min") == 110  # same source
    assert t27.get("intermittent", "5-min") == 85  # r/MEPEngineering engineer's post, current CEC
    assert t27.get("short-time", "continuous") is None  # no continuous rating for short-time duty


def test_branch_device_spot_values(cec):
    t29 = cec.table("table_29")
    assert t29.get("squirrel-cage-full-voltage", "inverse-time-breaker") == 250  # dakotaprep, CEC 2024
    assert t29.get("squirrel-cage-full-voltage", "time-delay-fuse") == 175  # question bank 442adocQ
    assert t29.get("squirrel-cage-reduced-voltage-large", "inverse-time-breaker") == 200  # dakotaprep, 60 A autotransformer motor
    assert t29.get("dc", "non-time-delay-fuse") == 150  # dakotaprep overcurrent guide, CEC 2024: 150 % any device
    assert cec.check("conductor-ampacity").params["continuous_percent"] == 125  # dakotaprep, CEC 2024


def _largest_standard_at_or_below(ratings, limit_a):
    return max(r for r in ratings if r <= limit_a)


@pytest.mark.parametrize("current_a,row,column,expected_a", [
    (32, "squirrel-cage-full-voltage", "time-delay-fuse", 50),  # 442adocQ: 32 A x 175 % = 56 A -> 50 A
    (54, "squirrel-cage-full-voltage", "inverse-time-breaker", 125),  # dakotaprep CEC 2024: 135 A -> 125 A
])
def test_published_worked_answers_round_down_in_table_13(cec, current_a, row, column, expected_a):
    percent = cec.table("table_29").get(row, column)
    assert _largest_standard_at_or_below(cec.table("table_13").values, current_a * percent / 100) == expected_a


def test_feeder_worked_answer_uses_table_13(cec):
    # dakotaprep motor-bank overcurrent guide, CEC 2024: 50 A x 250 % + 36 + 40 + 60 = 261 A -> 250 A
    limit_a = 50 * cec.table("table_29").get("squirrel-cage-full-voltage", "inverse-time-breaker") / 100 + 36 + 40 + 60
    assert _largest_standard_at_or_below(cec.table("table_13").values, limit_a) == 250


# --- internal consistency of the data ----------------------------------------------------------------------

def test_single_phase_200_208_columns_follow_the_table_note(cec):
    """Columns 200/208 are the 230 V value + 15 % / + 10 %, rounded half-up to 0.1 A (title of table_45)."""
    t45 = cec.table("table_45")
    for key in t45.rows:
        base = Decimal(str(t45.get(key, "230")))
        for column, factor in (("200", Decimal("1.15")), ("208", Decimal("1.10"))):
            expected = float((base * factor).quantize(Decimal("0.1"), rounding=ROUND_HALF_UP))
            assert t45.get(key, column) == pytest.approx(expected), (key, column)


@pytest.mark.parametrize("name", ["table_2", "table_4"])
def test_ampacities_rise_with_size_and_temperature(cec, name):
    table = cec.table(name)
    rows = list(table.rows.values())
    for row in rows:
        assert list(row) == sorted(row)
    for column in range(len(table.columns)):
        values = [row[column] for row in rows]
        assert values == sorted(values)


@pytest.mark.parametrize("name", ["table_44", "table_45"])
def test_full_load_currents_rise_with_hp_and_fall_with_voltage(cec, name):
    table = cec.table(name)
    keys = list(table.rows)
    assert [float(k) for k in keys] == sorted(float(k) for k in keys)
    for column in table.columns:
        values = [v for v in (table.get(k, column) for k in keys) if v is not None]
        assert values == sorted(values)
    for key, row in table.rows.items():
        present = [v for v in row if v is not None]
        assert present == sorted(present, reverse=True), key


def test_conductor_row_keys_use_motor_schema_sizes(cec):
    schema = json.loads((schemas_dir() / "motor.schema.json").read_text(encoding="utf-8"))
    pattern = re.compile(schema["$defs"]["wire_size"]["pattern"])
    for name in ("table_2", "table_4"):
        assert all(pattern.fullmatch(key) for key in cec.table(name).rows), name


def test_hp_row_keys_are_hp_key_text(cec):
    for name in ("table_44", "table_45"):
        for key in cec.table(name).rows:
            assert hp_key(float(key)) == key


def test_branch_params_name_existing_rows_and_columns(cec):
    params = cec.check("branch-ocpd").params
    rows = cec.table(params["max_percent_table"]).rows
    family = params["synchronous_uses"]
    for group in set(params["starting_rows"].values()):
        if group == "full-voltage":
            assert f"{family}-full-voltage" in rows
        else:
            assert {f"{family}-reduced-voltage-small", f"{family}-reduced-voltage-large"} <= set(rows)
    assert {"single-phase", "wound-rotor", "dc"} <= set(rows)
    assert params["minimum_rating_a"] in cec.table(params["standard_ratings_table"]).values


def test_motor_current_voltage_bands(cec):
    params = cec.check("motor-current").params
    bands = sorted(params["voltage_columns"], key=lambda b: b["min_v"])
    for low, high in pairwise(bands):
        assert low["max_v"] < high["min_v"]  # no voltage falls in two bands
    columns = {b["column"] for b in bands}
    assert columns == set(cec.table(params["three_phase_table"]).columns)
    assert set(cec.table(params["single_phase_table"]).columns) <= columns


def test_conductor_params_name_existing_columns(cec):
    params = cec.check("conductor-ampacity").params
    for key in ("copper_table", "aluminum_table"):
        assert params["ampacity_column"] in cec.table(params[key]).columns


# --- hp_key ------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("hp,expected", [
    (0.5, "0.5"), (0.75, "0.75"), (1, "1"), (10.0, "10"), (7.5, "7.5"), (1 / 3, "0.3333"), (1 / 6, "0.1667"),
    (0.25, "0.25"), (500, "500"),
])
def test_hp_key_format(hp, expected):
    assert hp_key(hp) == expected


@given(st.floats(min_value=0.01, max_value=10000, allow_nan=False, allow_infinity=False))
def test_hp_key_round_trips(hp):
    key = hp_key(hp)
    assert math.isclose(float(key), hp, abs_tol=5.1e-5)
    assert hp_key(float(key)) == key
    assert key == key.strip() and not key.endswith(".") and not (key.endswith("0") and "." in key)
