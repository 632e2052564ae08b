"""Ambient-temperature and conductor-count corrections (issue item 1), both codes.

Physics cross-check: every ambient correction factor is the square root of the
ratio of allowed temperature rises, sqrt((Tc - Ta) / (Tc - 30)), evaluated at the
upper end of its ambient band (the conservative end: the hottest ambient the
row covers) and rounded to the table's two decimals. Published values are
typed with their source beside the assertion.
"""
from __future__ import annotations

import math
from decimal import ROUND_HALF_UP, Decimal

import pytest

from checker.ingest import normalize, values
from checker.ingest.headers import FIELDS
from checker.model import Motor, SourceRef, Status
from checker.review import review_schedule
from checker.rules.conductors import _bands, band_row, check_conductor_ampacity
from tests.check_helpers import CEC, CONT, LENIENT, NEC, STRICT
from tests.fixture_builders import write_csv


def motor(**record):
    record.setdefault("tag", "C-1")
    record.setdefault("duty", CONT)
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 3))


def cond(size, insulation=None, per_set=None, sets=1, raceway=None, material="cu"):
    c = {"sets": sets, "size": size, "material": material, "material_stated": True}
    for key, value in (("insulation", insulation), ("conductors_per_set", per_set), ("raceway", raceway)):
        if value is not None:
            c[key] = value
    return c


def one(findings):
    assert len(findings) == 1, findings
    return findings[0]


def two_decimals(x: float) -> float:
    return float(Decimal(repr(x)).quantize(Decimal("0.01"), rounding=ROUND_HALF_UP))


# ---- physics cross-check ------------------------------------------------------------------------------

@pytest.mark.parametrize("ruleset, name", [(NEC, "table_310_15_b_1_1"), (CEC, "table_5a")])
def test_every_ambient_factor_follows_the_square_root_law(ruleset, name):
    """sqrt((Tc - Ta)/(Tc - 30)) at the band's upper end, to the table's 2 decimals (formula: Mike Holt forum
    thread on the correction tables; every NEC cell published in IRC 2021 Table E3705.2 = NEC 2020 310.15(B)(1))."""
    table = ruleset.table(name)
    checked = 0
    for key, _, high, _ in _bands(table, 30):
        for column in table.columns:
            tc = float(column.rstrip("C"))
            cell = table.get(key, column)
            if high >= tc:  # no allowed temperature rise left: the code prints no factor
                assert cell is None, (key, column)
                continue
            expected = math.sqrt((tc - high) / (tc - 30))
            assert cell is not None, (key, column)
            assert cell == pytest.approx(two_decimals(expected), abs=1e-9), (key, column, expected)
            checked += 1
    assert checked == table.value_count()  # every printed factor was compared


def test_nec_and_cec_ambient_tables_agree_where_both_have_rows():
    # CEC Tables 1-4 were harmonized with the NEC in 2012 (electricalindustry.ca, CEC 2012); the CEC row '40'
    # is the NEC band 36-40.
    nec, cec = NEC.table("table_310_15_b_1_1"), CEC.table("table_5a")
    for key in cec.rows:
        band = f"{int(key) - 4}-{key}"
        assert cec.rows[key] == nec.rows[band], key


# ---- band look-up ---------------------------------------------------------------------------------------

@pytest.mark.parametrize("ambient_c, row", [
    (5, "-10"), (10, "-10"), (10.5, "11-15"), (15.5, "16-20"), (30, "26-30"), (40, "36-40"), (85, "81-85"),
])
def test_nec_ambient_bands(ambient_c, row):
    assert band_row(NEC.table("table_310_15_b_1_1"), ambient_c, 30) == (row, "row")


def test_nec_ambient_above_the_table():
    assert band_row(NEC.table("table_310_15_b_1_1"), 86, 30) == (None, "above")


@pytest.mark.parametrize("ambient_c, expected", [(20, (None, "below")), (30, (None, "below")), (31, ("35", "row")),
                                                 (42, ("45", "row")), (80, ("80", "row")), (81, (None, "above"))])
def test_cec_ambient_rows_take_the_next_higher_row(ambient_c, expected):
    # Red Seal derating guide (CEC 2024): 42 C is taken on the 45 C row of Table 5A.
    assert band_row(CEC.table("table_5a"), ambient_c, 30) == expected


@pytest.mark.parametrize("ruleset, name, count, factor", [
    (NEC, "table_310_15_c_1", 3, None), (NEC, "table_310_15_c_1", 4, 0.80), (NEC, "table_310_15_c_1", 9, 0.70),
    (NEC, "table_310_15_c_1", 10, 0.50), (NEC, "table_310_15_c_1", 41, 0.35), (NEC, "table_310_15_c_1", 150, 0.35),
    (CEC, "table_5c", 3, None),
    (CEC, "table_5c", 4, 0.80),   # BC apprenticeship guide (CEC 2012/2015 era): 4 conductors -> 0.80
    (CEC, "table_5c", 7, 0.70),   # Red Seal derating guide (CEC 2024): 7 conductors -> 0.70
])
def test_conductor_count_bands(ruleset, name, count, factor):
    table = ruleset.table(name)
    key, where = band_row(table, count)
    if factor is None:
        assert where == "below"
    else:
        assert table.get(key, "factor") == pytest.approx(factor)


# ---- the conductor check with corrections ---------------------------------------------------------------

def test_three_conductor_set_alone_is_not_adjusted():
    # 44 A x 125 % = 55 A; #6 Cu 75 C = 65 A (CEC Table 2), 3 conductors: no Table 5C factor, same as before.
    f = one(check_conductor_ampacity(motor(fla_a=44, conductor=cond("6", "RW90", per_set=3)), CEC, LENIENT))
    assert f.status is Status.PASS and f.provided == 65


def test_cec_ambient_40_c_on_a_75_c_conductor():
    # BC apprenticeship guide (CEC 2012/2015 era): Table 5A, 40 C ambient, 75 C conductor -> 0.88.
    # #6 TWN75 Cu: 65 A x 0.88 = 57.2 A.
    f = one(check_conductor_ampacity(motor(fla_a=44, ambient_c=40, conductor=cond("6", "TWN75", 3)), CEC, LENIENT))
    assert f.status is Status.PASS and f.provided == pytest.approx(57.2)
    assert any("Table 5A" in t and "0.88" in t for t in f.trail)


def test_nec_ninety_degree_wire_derated_then_limited_to_the_termination():
    # 40 hp 460 V = 52 A (Table 430.250) -> 65 A minimum. #6 THHN: 75 A (90 C) x 0.91 (36-40 C) x 0.80 (4-6 CCC)
    # = 54.6 A < 65 A: fail. #4 THHN: 95 x 0.91 x 0.80 = 69.16 A, under the 75 C value 85 A: pass.
    base = {"hp": 40, "voltage_v": 460, "phase": 3, "ambient_c": 40}
    small = one(check_conductor_ampacity(motor(**base, conductor=cond("6", "THHN", 6)), NEC, STRICT))
    assert small.status is Status.FAIL and small.provided == pytest.approx(54.6)
    big = one(check_conductor_ampacity(motor(**base, conductor=cond("4", "THHN", 6)), NEC, STRICT))
    assert big.status is Status.PASS and big.provided == pytest.approx(69.16)


def test_cool_ambient_cannot_lift_ampacity_above_the_termination_column():
    # 25 C: factor 1.04 for 90 C wire, but the result is limited to the 75 C termination value.
    f = one(check_conductor_ampacity(motor(fla_a=150, ambient_c=25, conductor=cond("2/0", "THHN", 3)), NEC, LENIENT))
    assert f.provided == 175  # Table 310.16 2/0 Cu 75 C


def test_stallcup_120_f_in_the_90_c_column():
    # Stallcup (NEC 2020+): 120 F ambient, 90 C column -> 0.82. The cell parser converts 120 F to 48.9 C.
    ambient = values.parse_ambient_c("120 °F").value
    f = one(check_conductor_ampacity(motor(fla_a=20, ambient_c=ambient, conductor=cond("10", "THHN", 3)), NEC, LENIENT))
    assert any("46-50" in t and "0.82" in t for t in f.trail)
    assert f.provided == pytest.approx(min(40 * 0.82, 35))


def test_stated_conductor_count_wins_over_the_conductor_cell():
    # 9 current-carrying conductors: NEC 70 % (7-9 band), CEC 0.70 (7-24 band).
    for ruleset in (NEC, CEC):
        f = one(check_conductor_ampacity(motor(fla_a=20, current_carrying_conductors=9,
                                               conductor=cond("10", None, 3)), ruleset, LENIENT))
        assert any("9 current-carrying" in t and "0.7" in t for t in f.trail), ruleset.id


def test_parallel_sets_in_their_own_raceways_are_not_derated():
    # 2 sets of 3 x 250 kcmil in (2) raceways: 3 conductors per raceway, no adjustment: 2 x 255 A = 510 A.
    f = one(check_conductor_ampacity(motor(fla_a=400, ambient_c=30,
                                           conductor=cond("250", "RW90", 3, sets=2, raceway='(2) 3" EMT')),
                                     CEC, STRICT))
    assert f.status is Status.PASS and f.provided == 510


def test_parallel_sets_without_a_raceway_count_are_an_assumption():
    m = motor(fla_a=400, ambient_c=30, conductor=cond("250", "RW90", 3, sets=2))
    lenient = one(check_conductor_ampacity(m, CEC, LENIENT))
    assert lenient.status is Status.PASS and any("separate raceways" in a for a in lenient.assumptions)
    strict = one(check_conductor_ampacity(m, CEC, STRICT))
    assert strict.status is Status.NEEDS_INFO and "separate raceways" in strict.message


def test_sixty_degree_insulation_is_not_permitted_in_a_hot_ambient():
    # Table 310.15(B)(1)(1) prints no 60 C factor above 55 C.
    f = one(check_conductor_ampacity(motor(fla_a=10, ambient_c=58, conductor=cond("10", "TW", 3)), NEC, LENIENT))
    assert f.status is Status.FAIL and "cannot be used" in f.message


def test_ambient_above_every_row_is_needs_info():
    f = one(check_conductor_ampacity(motor(fla_a=10, ambient_c=90, conductor=cond("10", "THHN", 3)), NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "above every row" in f.message


def test_unknown_insulation_is_corrected_in_the_termination_column_and_said():
    f = one(check_conductor_ampacity(motor(fla_a=10, ambient_c=40, conductor=cond("10", None, 3)), NEC, LENIENT))
    assert any("Insulation rating unknown" in a for a in f.assumptions)
    assert f.provided == pytest.approx(35 * 0.88)  # 75 C column x 0.88


# ---- cells, schema and end-to-end -------------------------------------------------------------------------

@pytest.mark.parametrize("text, expected", [("40 °C", 40), ("40C", 40), ("104 °F", 40), ("-5 C", -5),
                                            ("45°C max", 45)])
def test_ambient_cells(text, expected):
    assert values.parse_ambient_c(text).value == pytest.approx(expected)


@pytest.mark.parametrize("text", ["40", "40/50 C", "300 F", "hot"])
def test_unusable_ambient_cells_are_problems(text):
    parsed = values.parse_ambient_c(text)
    assert parsed.value is None and parsed.problem


def test_ambient_unit_can_come_from_the_header():
    assert values.with_header_hint("ambient", "104", "Ambient (°F)") == "104 °F"
    assert values.with_header_hint("ambient", "40", "AMB TEMP (C)") == "40 °C"
    assert values.with_header_hint("ambient", "40", "Ambient") == "40"


@pytest.mark.parametrize("text, expected", [("6", 6), ("6 CCC", 6), ("9 conductors", 9)])
def test_conductor_count_cells(text, expected):
    assert values.parse_conductor_count(text).value == expected


def test_new_fields_are_wired():
    assert "ccc" in FIELDS and "ambient" in FIELDS
    assert normalize.FIELD_READERS["ambient"].target == "ambient_c"
    assert normalize.FIELD_READERS["ccc"].target == "current_carrying_conductors"
    validator = normalize.motor_validator()
    assert not list(validator.iter_errors({"tag": "x", "ambient_c": 40.0, "current_carrying_conductors": 6}))
    assert list(validator.iter_errors({"tag": "x", "current_carrying_conductors": 0}))


def test_schedule_columns_reach_the_conductor_check(tmp_path):
    path = write_csv(tmp_path / "hot-room.csv", [
        ["Tag", "HP", "Volts", "Phase", "FLA", "Conductors", "Breaker", "Ambient (°C)", "CCC"],
        ["EF-9", "40", "460", "3", "50", "3#6 THHN", "110A CB", "40", "6"],
        ["EF-10", "40", "460", "3", "50", "3#4 THHN", "110A CB", "40", "6"],
    ])
    review = review_schedule(path, code="nec-2023")
    by_tag = {m.motor.tag: m for m in review.motors}
    assert by_tag["EF-9"].motor.record["ambient_c"] == 40
    assert by_tag["EF-9"].motor.record["current_carrying_conductors"] == 6
    conductor = {t: next(f for f in m.findings if f.check == "conductor-ampacity") for t, m in by_tag.items()}
    assert conductor["EF-9"].status is Status.FAIL and conductor["EF-9"].provided == pytest.approx(54.6)
    assert conductor["EF-10"].status is Status.PASS
