"""record-plausibility: do a row's output, voltage and FLA belong to one motor?

The check's bounds live in the rulesets ([checks.record-plausibility], marked 'common practice');
the worked values here are computed by hand from the definition of the horsepower.
"""
import math

import pytest

from checker.model import Motor, SourceRef, Status
from checker.rules.common import ReviewOptions
from checker.rules.plausibility import check_record_plausibility, least_current_a
from checker.rules.ruleset import load_ruleset

CEC = load_ruleset("cec-2015")
OPTIONS = ReviewOptions()
# 1 hp = 550 ft-lbf/s = 745.7 W (NIST SP 811, 2008, Appendix B.8).
WATTS_PER_HP = 745.7


def motor(**record):
    record.setdefault("tag", "T-1")
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def check(**record):
    return check_record_plausibility(motor(**record), CEC, OPTIONS)


def test_params_are_in_the_ruleset_as_common_practice():
    spec = CEC.check("record-plausibility")
    assert spec.verification == "common practice"
    assert spec.params["watts_per_hp"] == WATTS_PER_HP  # NIST SP 811 Appendix B.8


def test_least_current_worked_value():
    # 10 hp x 745.7 W = 7457 W; three-phase at 575 V: 7457 / (sqrt(3) x 575) = 7.4875 A (by hand)
    assert least_current_a(10 * WATTS_PER_HP, 575, 3) == pytest.approx(7.4875, abs=1e-4)
    # single-phase at 230 V: 7457 / 230 = 32.4217 A
    assert least_current_a(10 * WATTS_PER_HP, 230, 1) == pytest.approx(32.4217, abs=1e-4)


def test_consistent_row_passes_with_its_ratio():
    [finding] = check(hp=25, voltage_v=575, phase=3, fla_a=27)  # 27 / 18.719 = 1.44
    assert finding.status == Status.PASS and "1.44 times" in finding.message
    assert finding.fields[0] == "fla_a" and "hp" in finding.fields


def test_5000_hp_on_120_v_needs_info():
    [finding] = check(hp=5000, voltage_v=120, phase=1, fla_a=40)
    # 5000 x 745.7 / 120 = 31,070.8 A, far above max_ideal_current_a
    assert finding.status == Status.NEEDS_INFO and "31070.8 A" in finding.message
    assert finding.provided == pytest.approx(31070.83, abs=0.01) and finding.limit == 2000


def test_fla_far_below_the_physical_floor_needs_info():
    [finding] = check(hp=100, voltage_v=575, phase=3, fla_a=2)  # floor 74.9 A
    assert finding.status == Status.NEEDS_INFO and "below" in finding.message


def test_fla_far_above_needs_info():
    [finding] = check(hp=1, voltage_v=575, phase=3, fla_a=50)  # floor 0.749 A: ratio 66.8
    assert finding.status == Status.NEEDS_INFO and "above" in finding.message


def test_dual_voltage_nameplate_fits_either_voltage():
    # 10 hp 208/460 V with the 460 V current: floor at 208 V is 20.70 A (14 A is below it),
    # at 460 V 9.36 A (ratio 1.50): the row is plausible for the 460 V connection
    [finding] = check(hp=10, voltage_v=208, voltage_alternatives_v=[460], phase=3, fla_a=14)
    assert finding.status == Status.PASS and "460 V" in finding.message
    [alone] = check(hp=10, voltage_v=208, phase=3, fla_a=14)
    assert alone.status == Status.NEEDS_INFO


def test_kw_used_when_no_hp_and_dc_uses_single_phase_formula():
    [finding] = check(kw=7.5, voltage_v=250, current_type="dc", fla_a=34)  # 7500 / 250 = 30 A, ratio 1.13
    assert finding.status == Status.PASS and "7.5 kW" in finding.message


def test_unknown_phase_is_taken_as_three_phase():
    [finding] = check(hp=10, voltage_v=575, fla_a=11)
    assert finding.status == Status.PASS and "taken as three-phase" in " ".join(finding.trail)


@pytest.mark.parametrize("record", [{"hp": 10}, {"voltage_v": 575}, {"hp": 10, "voltage_v": 0}, {}])
def test_nothing_to_compare_gives_no_finding(record):
    assert check(**record) == []


def test_no_fla_still_checks_the_output_on_the_voltage():
    [finding] = check(hp=2, voltage_v=575, phase=3)
    assert finding.status == Status.PASS and "no FLA" in finding.message


@pytest.mark.parametrize("code, three_phase, single_phase", [
    ("cec-2015", "table_44", "table_45"),
    ("nec-2023", "table_430_250", "table_430_248"),
])
def test_every_table_current_lies_inside_the_bounds_with_margin(code, three_phase, single_phase):
    """The ratio range the rulesets cite: table currents span 1.22 to 4.07 times the least current,
    and max_current_ratio leaves at least a factor of two above the largest."""
    ruleset = load_ruleset(code)
    params = ruleset.check("record-plausibility").params
    ratios = []
    for name, phase in ((three_phase, 3), (single_phase, 1)):
        table = ruleset.table(name)
        for hp, row in table.rows.items():
            for column, fla in zip(table.columns, row):
                if fla is not None:
                    ratios.append(fla / least_current_a(float(hp) * params["watts_per_hp"], float(column), phase))
    assert round(min(ratios), 2) == 1.22 and round(max(ratios), 2) == 4.07
    assert params["min_current_ratio"] <= min(ratios) and 2 * max(ratios) <= params["max_current_ratio"]
    largest = max(v for name in (three_phase, single_phase) for row in ruleset.table(name).rows.values()
                  for v in row if v is not None)
    assert largest == 590 and largest < params["max_ideal_current_a"]
    assert not math.isnan(sum(ratios))
