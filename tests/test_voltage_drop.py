"""Voltage drop (CEC 8-102; NEC 210.19(A) Informational Note No. 4), the run-length parser, and a
cross-check of the rulesets' conductor tables against physics.

Physics used independently of the rulesets:
* ASTM B258 AWG diameter: d = 0.005 in x 92^((36 - n)/39), n = 0, -1, -2, -3 for 1/0 ... 4/0; area in
  circular mils = (d in mils)^2.
* Resistivity at 20 C: annealed copper 1.7241e-8 ohm m (IACS 100 %); aluminium 2.8264e-8 ohm m (61 % IACS);
  temperature coefficients 0.00393 /C (copper) and 0.00403 /C (aluminium); 75 C table temperature; stranded
  conductors about 2 % higher than solid (lay of the outer strands, ASTM B8 practice - an approximation).
"""
import math

import pytest

from checker.ingest import values
from checker.model import Motor, SourceRef, Status
from checker.review import review_schedule
from checker.rules.voltage_drop import check_voltage_drop, drop_v
from tests.check_helpers import CEC, CONT, LENIENT, NEC, one
from tests.fixture_builders import write_csv

AWG_N = {"14": 14, "12": 12, "10": 10, "8": 8, "6": 6, "4": 4, "3": 3, "2": 2, "1": 1,
         "1/0": 0, "2/0": -1, "3/0": -2, "4/0": -3}
CMIL_M2 = math.pi / 4 * (25.4e-6) ** 2      # one circular mil: a circle of 1 mil (25.4 um) diameter
M_PER_KFT = 304.8
RHO_20 = {"cu": 1.7241e-8, "al": 2.8264e-8}
ALPHA_20 = {"cu": 0.00393, "al": 0.00403}
STRANDING = 1.02
TABLES = [(CEC, "conductor_area", "conductor_resistance"), (NEC, "table_ch9_8_area", "table_ch9_8_resistance")]


def awg_area_cmil(size: str) -> float:
    diameter_mil = 1000 * 0.005 * 92 ** ((36 - AWG_N[size]) / 39)
    return diameter_mil ** 2


def resistance_75c_ohm_per_kft(area_cmil: float, material: str) -> float:
    per_m_20c = RHO_20[material] / (area_cmil * CMIL_M2)
    return per_m_20c * (1 + ALPHA_20[material] * (75 - 20)) * M_PER_KFT * STRANDING


def motor(**record):
    record.setdefault("tag", "M-1")
    record.setdefault("duty", CONT)
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def cond(size, material="cu", sets=1):
    return {"sets": sets, "size": size, "material": material, "material_stated": True}


# ---- physics cross-checks -------------------------------------------------------------------------------------------

@pytest.mark.parametrize("ruleset, area_name, _r", TABLES)
def test_awg_areas_agree_with_astm_b258(ruleset, area_name, _r):
    area = ruleset.table(area_name)
    for size in AWG_N:
        assert area.get(size, "cmil") == pytest.approx(awg_area_cmil(size), rel=0.02), size


@pytest.mark.parametrize("ruleset, area_name, _r", TABLES)
def test_kcmil_areas_are_the_definition(ruleset, area_name, _r):
    area = ruleset.table(area_name)
    for size in area.rows:
        if size not in AWG_N:
            assert area.get(size, "cmil") == int(size) * 1000


@pytest.mark.parametrize("ruleset, area_name, resistance_name", TABLES)
@pytest.mark.parametrize("material", ["cu", "al"])
def test_resistances_agree_with_resistivity_within_2_percent(ruleset, area_name, resistance_name, material):
    _area, resistance = ruleset.table(area_name), ruleset.table(resistance_name)
    checked = 0
    for size in resistance.rows:
        area_cmil = awg_area_cmil(size) if size in AWG_N else int(size) * 1000  # independent of the ruleset
        expected = resistance_75c_ohm_per_kft(area_cmil, material)
        assert resistance.get(size, material) == pytest.approx(expected, rel=0.02), (size, material)
        checked += 1
    assert checked >= 28


@pytest.mark.parametrize("size, material, ohm_per_kft", [
    # NEC Chapter 9 Table 8, stranded, 75 C (NEC 2011 reproduction, electrical-design-tutor.com)
    ("12", "cu", 1.98), ("10", "al", 2.04), ("500", "cu", 0.0258), ("4/0", "al", 0.100), ("1/0", "cu", 0.122),
])
def test_published_table_8_rows(size, material, ohm_per_kft):
    for ruleset, _a, name in TABLES:
        assert ruleset.table(name).get(size, material) == ohm_per_kft


def test_published_table_8_areas():
    # 14 AWG 4,110 and 12 AWG 6,530 cmil (Table 8 reproduction); 10 AWG 10,380 cmil (Mike Holt forum)
    for ruleset, name, _r in TABLES:
        area = ruleset.table(name)
        assert (area.get("14", "cmil"), area.get("12", "cmil"), area.get("10", "cmil")) == (4110, 6530, 10380)


# ---- the formula ---------------------------------------------------------------------------------------------------

def test_drop_formula_by_hand():
    # sqrt(3) x 10 A x 1.24 ohm/kft x 0.5 kft = 10.74 V; two-wire: 2 x 10 x 1.24 x 0.5 = 12.4 V
    assert drop_v(math.sqrt(3), 10, 1.24, 152.4) == pytest.approx(10.7387, rel=1e-4)
    assert drop_v(2, 10, 1.24, 152.4) == pytest.approx(12.4)
    assert drop_v(2, 10, 1.24, 152.4, sets=2) == pytest.approx(6.2)


# ---- CEC 2015, Rule 8-102: 3 % in a branch circuit -----------------------------------------------------------------

@pytest.mark.parametrize("length_m, status, percent", [
    # sqrt(3) x 27 A x 0.778 ohm/kft x (100 m / 304.8) = 11.94 V = 2.08 % of 575 V
    (100, Status.PASS, 2.076),
    (200, Status.FAIL, 4.152),
])
def test_cec_three_phase(length_m, status, percent):
    m = motor(fla_a=27, voltage_v=575, phase=3, conductor=cond("8"), length_m=length_m)
    f = one(check_voltage_drop(m, CEC, LENIENT))
    assert f.status is status and f.rule == "8-102"
    assert f.provided == pytest.approx(percent, abs=0.002) and f.limit == 3
    assert any("unity power factor" in a for a in f.assumptions)


def test_cec_single_phase():
    # 2 x 9.8 A (CEC Table 45, 1/2 hp 115 V column) x 1.98 ohm/kft x 30 m / 304.8 = 3.82 V = 3.18 % of 120 V
    m = motor(hp=0.5, voltage_v=120, phase=1, conductor=cond("12"), length_m=30)
    f = one(check_voltage_drop(m, CEC, LENIENT))
    assert f.status is Status.FAIL and f.provided == pytest.approx(3.183, abs=0.002)


def test_unknown_phase_evaluates_both_formulas():
    # 134.1 m: sqrt(3) x 27 x 0.778 x 0.44 kft = 16.0 V (2.78 %); 2 x ... = 18.5 V (3.21 %)
    m = motor(fla_a=27, voltage_v=575, conductor=cond("8"), length_m=134.112)
    f = one(check_voltage_drop(m, CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "phase" in f.message


def test_parallel_sets_share_the_current():
    one_set = one(check_voltage_drop(motor(fla_a=282, voltage_v=600, phase=3, conductor=cond("250"), length_m=150),
                                     CEC, LENIENT))
    two_sets = one(check_voltage_drop(motor(fla_a=282, voltage_v=600, phase=3, conductor=cond("250", sets=2),
                                            length_m=150), CEC, LENIENT))
    assert two_sets.provided == pytest.approx(one_set.provided / 2, rel=1e-3)


def test_large_conductors_carry_a_reactance_caution():
    f = one(check_voltage_drop(motor(fla_a=150, voltage_v=600, phase=3, conductor=cond("1/0"), length_m=20), CEC,
                               LENIENT))
    assert any("reactance" in a for a in f.assumptions)
    f = one(check_voltage_drop(motor(fla_a=20, voltage_v=600, phase=3, conductor=cond("10"), length_m=20), CEC,
                               LENIENT))
    assert not any("reactance is comparable" in a for a in f.assumptions)


def test_cec_demand_falls_back_to_80_percent_of_the_device():
    # 8-102: demand = connected load if known, else 80 % of the device rating: 20 A -> 16 A
    m = motor(voltage_v=120, phase=1, conductor=cond("12"), ocpd={"rating_a": 20}, length_m=10)
    f = one(check_voltage_drop(m, CEC, LENIENT))
    assert any("80 %" in t and "16" in t for t in f.trail)
    assert f.provided == pytest.approx(2 * 16 * 1.98 * 10 / 304.8 / 120 * 100, rel=1e-3)


def test_no_length_means_no_finding():
    assert check_voltage_drop(motor(fla_a=27, voltage_v=575, phase=3, conductor=cond("8")), CEC, LENIENT) == []


@pytest.mark.parametrize("record, words", [
    ({"fla_a": 27, "voltage_v": 575, "phase": 3}, "conductor"),
    ({"fla_a": 27, "phase": 3, "conductor": cond("8")}, "voltage"),
    ({"voltage_v": 575, "phase": 3, "conductor": cond("8")}, "cannot be computed"),
])
def test_missing_inputs_are_needs_info(record, words):
    f = one(check_voltage_drop(motor(length_m=50, **record), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and words in f.message


# ---- NEC 2023: an informational note, not a requirement --------------------------------------------------------------

def test_nec_over_the_recommendation_is_needs_info_not_fail():
    # Table 430.250 25 hp 460 V = 34 A (table current, 430.6(A)(1)); sqrt(3) x 34 x 0.778 x 300 m / 304.8 = 45.1 V
    m = motor(hp=25, voltage_v=460, phase=3, conductor=cond("8"), length_m=300)
    f = one(check_voltage_drop(m, NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "informational" in f.message
    assert f.provided == pytest.approx(math.sqrt(3) * 34 * 0.778 * 300 / 304.8 / 460 * 100, rel=1e-3)


def test_nec_within_the_recommendation_passes():
    m = motor(hp=25, voltage_v=460, phase=3, conductor=cond("8"), length_m=50)
    assert one(check_voltage_drop(m, NEC, LENIENT)).status is Status.PASS


# ---- the run-length cell -------------------------------------------------------------------------------------------

@pytest.mark.parametrize("text, metres", [
    ("45 m", 45.0), ("45m", 45.0), ("150 ft", 45.72), ("150'", 45.72), ("150 feet", 45.72), ("0.2 km", 200.0),
    ("approx. 30 m", 30.0),
])
def test_length_cells(text, metres):
    parsed = values.parse_length_m(text)
    assert parsed.problem is None and parsed.value == pytest.approx(metres)


@pytest.mark.parametrize("text, words", [("45", "no unit"), ("10 m 20 m", "more than one"), ("far", "no length"),
                                         ("0 m", "greater than zero")])
def test_length_problems(text, words):
    parsed = values.parse_length_m(text)
    assert parsed.value is None and words in parsed.problem


@pytest.mark.parametrize("text, header, expected", [
    ("45", "Length (ft)", "45 ft"), ("45", "RUN LENGTH (m)", "45 m"), ("45 m", "Length (ft)", "45 m"),
    ("45", "Length", "45"),
])
def test_header_unit_completes_a_bare_length(text, header, expected):
    assert values.with_header_hint("length", text, header) == expected


def test_length_column_end_to_end(tmp_path):
    path = write_csv(tmp_path / "s.csv", [
        ["TAG", "HP", "VOLTS", "FLA", "CONDUCTORS", "LENGTH (ft)"],
        ["P-1", "25", "575/3/60", "27", "3#8 CU", "328"],        # 100 m -> 2.08 %
        ["P-2", "25", "575/3/60", "27", "3#8 CU", "200 m"],      # the cell's unit wins -> 4.15 %
        ["P-3", "25", "575/3/60", "27", "3#8 CU", ""],           # no length, no finding
    ])
    review = review_schedule(path)
    got = {m.motor.tag: [f for f in m.findings if f.check == "voltage-drop"] for m in review.motors}
    assert got["P-1"][0].status is Status.PASS and got["P-2"][0].status is Status.FAIL and got["P-3"] == []
    assert review.motors[0].motor.record["length_m"] == pytest.approx(99.97, abs=0.01)


def test_packaged_equipment_uses_its_mca_as_the_current():
    # NEC has no device fallback; the marked MCA (28.5 A) bounds the running current: sqrt(3) x 28.5 x 1.24 x 0.08
    m = motor(mca_a=28.5, voltage_v=575, phase=3, conductor=cond("10"), length_m=24.384)
    f = one(check_voltage_drop(m, NEC, LENIENT))
    assert f.status is Status.PASS and any("minimum circuit ampacity" in a for a in f.assumptions)
    assert f.provided == pytest.approx(math.sqrt(3) * 28.5 * 1.24 * 0.08 / 575 * 100, rel=1e-3)
