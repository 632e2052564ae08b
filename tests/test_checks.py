"""Unit tests of the CEC 2015 check functions: pass, fail and needs-info for each.

Expected values come from the code tables and published worked answers; the
source is named beside each case. Values shared with the ruleset are not read
back from it: they are typed here so that a wrong ruleset value fails a test.
"""
import pytest

from checker.model import Motor, SourceRef, Status
from checker.rules.conductors import check_conductor_ampacity
from checker.rules.current import check_motor_current
from checker.rules.overcurrent import check_branch_ocpd, check_ocpd_standard_rating
from checker.rules.ruleset import load_ruleset

RS = load_ruleset("cec-2015")


def motor(**record):
    record.setdefault("tag", "T-1")
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.xlsx", 7, sheet="S"))


def cu(size, sets=1, insulation=None, material="cu", stated=True):
    c = {"sets": sets, "conductors_per_set": 3, "size": size, "material": material, "material_stated": stated}
    if insulation:
        c["insulation"] = insulation
    return c


# ---- motor current -------------------------------------------------------------------------------

def test_nameplate_current_is_used_when_given():
    f = one(check_motor_current(motor(fla_a=44, hp=30, voltage_v=575, phase=3), RS, LENIENT))
    assert f.status is Status.PASS and f.provided == 44 and not f.assumptions


@pytest.mark.parametrize("hp, voltage_v, phase, expected_a", [
    (30, 575, 3, 32),   # CEC Table 44, 30 hp 575 V = 32 A (Red Seal overload guide, CEC 2024)
    (20, 575, 3, 22),   # CEC Table 44, 20 hp 575 V = 22 A (same source)
    (30, 230, 3, 80),   # CEC Table 44, 30 hp 230 V column = 80 A (Red Seal conductor guide, CEC 2024)
    (5, 230, 1, 28),    # CEC Table 45, 5 hp 230 V single-phase = 28 A (Red Seal intro guide, CEC 2024)
    (1, 115, 1, 16),    # NEC Table 430.248 1 hp 115 V = 16 A (EC&M Motor Calculations Part 2, 2019); CEC harmonized
    (7.5, 600, 3, 9),   # 600 V system voltage maps to the 575 V column; NEC Table 430.250 7-1/2 hp 575 V = 9 A
])
def test_table_current_when_no_nameplate(hp, voltage_v, phase, expected_a):
    f = one(check_motor_current(motor(hp=hp, voltage_v=voltage_v, phase=phase), RS, LENIENT))
    assert f.status is Status.PASS
    assert f.provided == pytest.approx(expected_a)
    assert f.assumptions and "table" in f.assumptions[0].lower()


def test_no_current_at_all_is_needs_info():
    f = one(check_motor_current(motor(hp=10), RS, LENIENT))
    assert f.status is Status.NEEDS_INFO and "voltage" in f.message


# ---- conductor ampacity ----------------------------------------------------------------------------

def test_conductor_pass_shows_arithmetic():
    # 44 A x 125 % = 55 A (Rule 28-106(1), common practice); #6 Cu 75 C = 65 A (CEC Table 2 = NEC 310.16)
    f = one(check_conductor_ampacity(motor(fla_a=44, duty=CONT, conductor=cu("6")), RS, LENIENT))
    assert f.status is Status.PASS
    assert f.limit == pytest.approx(55.0) and f.provided == 65
    assert f.rule == "28-106(1)"
    assert any("55.0 A" in step for step in f.trail)


def test_conductor_fail_when_below_125_percent():
    # 42 A x 125 % = 52.5 A > #8 Cu 75 C = 50 A
    f = one(check_conductor_ampacity(motor(fla_a=42, duty=CONT, conductor=cu("8")), RS, LENIENT))
    assert f.status is Status.FAIL and f.limit == pytest.approx(52.5) and f.provided == 50


def test_90c_insulation_still_uses_75c_column():
    # Rule 28-104: #8 RW90 would be 55 A in the 90 C column but counts as 50 A
    f = one(check_conductor_ampacity(motor(fla_a=42, duty=CONT, conductor=cu("8", insulation="RW90")), RS, LENIENT))
    assert f.status is Status.FAIL and f.provided == 50
    assert any("RW90" in step for step in f.trail)


def test_aluminium_uses_table_4():
    # #6 Al 75 C = 50 A (CEC Table 4 = NEC 310.16 Al column); the same size in copper would be 65 A
    f = one(check_conductor_ampacity(motor(fla_a=42, duty=CONT, conductor=cu("6", material="al")), RS, LENIENT))
    assert f.status is Status.FAIL and f.provided == 50


def test_parallel_sets_multiply():
    # 2 x 250 kcmil Cu at 75 C = 2 x 255 A = 510 A; 400 A x 125 % = 500 A
    f = one(check_conductor_ampacity(motor(fla_a=400, duty=CONT, conductor=cu("250", sets=2)), RS, LENIENT))
    assert f.status is Status.PASS and f.provided == 510


def test_copper_assumed_is_said():
    f = one(check_conductor_ampacity(motor(fla_a=20, duty=CONT, conductor=cu("10", stated=False)), RS, LENIENT))
    assert f.status is Status.PASS and any("copper assumed" in a for a in f.assumptions)


def test_aluminium_14_awg_is_not_a_listed_size():
    f = one(check_conductor_ampacity(motor(fla_a=5, duty=CONT, conductor=cu("14", material="al")), RS, LENIENT))
    assert f.status is Status.NEEDS_INFO and "not a size listed" in f.message


@pytest.mark.parametrize("duty, percent", [
    ({"service": "intermittent", "rating": "15-min"}, 85),   # Table 27, CEC 2024 exam-prep feeder guide
    ({"service": "intermittent", "rating": "5-min"}, 85),    # Table 27 intermittent 5-min (engineer's post, current CEC)
    ({"service": "short-time", "rating": "5-min"}, 110),     # Table 27, CEC 2024 exam-prep feeder guide
])
def test_non_continuous_duty_uses_table_27(duty, percent):
    f = one(check_conductor_ampacity(motor(fla_a=60, duty=duty, conductor=cu("6")), RS, LENIENT))
    assert f.limit == pytest.approx(60 * percent / 100)
    assert f.rule == "28-106(2)"


def test_intermittent_duty_changes_the_answer():
    # 60 A continuous needs 75 A (#6 Cu 65 A fails); intermittent 15-min needs 51 A (passes)
    cont = one(check_conductor_ampacity(motor(fla_a=60, duty=CONT, conductor=cu("6")), RS, LENIENT))
    inter = one(check_conductor_ampacity(
        motor(fla_a=60, duty={"service": "intermittent", "rating": "15-min"}, conductor=cu("6")), RS, LENIENT))
    assert cont.status is Status.FAIL and inter.status is Status.PASS


def test_duty_not_stated_is_assumed_continuous_or_needs_info_when_strict():
    m = motor(fla_a=44, conductor=cu("6"))
    lenient = one(check_conductor_ampacity(m, RS, LENIENT))
    assert lenient.status is Status.PASS and any("continuous" in a for a in lenient.assumptions)
    assert one(check_conductor_ampacity(m, RS, STRICT)).status is Status.NEEDS_INFO


def test_duty_without_time_rating_is_needs_info():
    f = one(check_conductor_ampacity(motor(fla_a=44, duty={"service": "periodic"}, conductor=cu("6")), RS, LENIENT))
    assert f.status is Status.NEEDS_INFO and "time rating" in f.message


def test_missing_conductor_is_needs_info_with_the_minimum():
    f = one(check_conductor_ampacity(motor(fla_a=44, duty=CONT), RS, LENIENT))
    assert f.status is Status.NEEDS_INFO and f.limit == pytest.approx(55.0)


# ---- branch overcurrent device -----------------------------------------------------------------------

def ocpd(rating_a, device=None):
    d = {"rating_a": rating_a}
    if device:
        d["device"] = device
    return d


def test_breaker_rounds_down_not_up():
    # Red Seal CEC 2024 overcurrent guide: 54 A x 250 % = 135 A -> 125 A breaker; 150 A would exceed it
    ok = one(check_branch_ocpd(motor(fla_a=54, phase=3, starting="full-voltage",
                                     ocpd=ocpd(125, "inverse-time-breaker")), RS, LENIENT))
    bad = one(check_branch_ocpd(motor(fla_a=54, phase=3, starting="full-voltage",
                                      ocpd=ocpd(150, "inverse-time-breaker")), RS, LENIENT))
    assert ok.status is Status.PASS and ok.limit == pytest.approx(135.0)
    assert bad.status is Status.FAIL and "125 A" in bad.message


def test_time_delay_fuse_175_percent():
    # apprenticeship question bank (CEC): 32 A x 175 % = 56 A -> 50 A time-delay fuse
    ok = one(check_branch_ocpd(motor(fla_a=32, phase=3, ocpd=ocpd(50, "time-delay-fuse")), RS, LENIENT))
    bad = one(check_branch_ocpd(motor(fla_a=32, phase=3, ocpd=ocpd(60, "time-delay-fuse")), RS, LENIENT))
    assert ok.status is Status.PASS and ok.limit == pytest.approx(56.0)
    assert bad.status is Status.FAIL


def test_autotransformer_start_breaker_200_percent():
    # Red Seal CEC 2024 motor bank guide: autotransformer-start motor, breaker 200 %
    f = one(check_branch_ocpd(motor(fla_a=60, phase=3, starting="autotransformer",
                                    ocpd=ocpd(125, "inverse-time-breaker")), RS, LENIENT))
    assert f.status is Status.FAIL and f.limit == pytest.approx(120.0)


def test_small_motor_may_have_a_15_amp_device():
    f = one(check_branch_ocpd(motor(fla_a=2.1, phase=3, ocpd=ocpd(15, "inverse-time-breaker")), RS, LENIENT))
    assert f.status is Status.PASS


def test_unstated_fuse_type_is_needs_info_between_limits():
    # 20 A: time-delay 175 % = 35 A, non-time-delay 300 % = 60 A; a 45 A fuse depends on the type
    m = motor(fla_a=20, phase=3, ocpd=ocpd(45, "fuse"))
    assert one(check_branch_ocpd(m, RS, LENIENT)).status is Status.NEEDS_INFO
    low = motor(fla_a=20, phase=3, ocpd=ocpd(30, "fuse"))
    assert one(check_branch_ocpd(low, RS, LENIENT)).status is Status.PASS


def test_breaker_type_not_stated_is_assumed_inverse_time():
    f = one(check_branch_ocpd(motor(fla_a=40, phase=3, ocpd=ocpd(100, "breaker")), RS, LENIENT))
    assert f.status is Status.PASS and any("inverse-time" in a for a in f.assumptions)


def test_vfd_starting_is_needs_info():
    f = one(check_branch_ocpd(motor(fla_a=40, phase=3, starting="vfd", ocpd=ocpd(60, "inverse-time-breaker")),
                              RS, LENIENT))
    assert f.status is Status.NEEDS_INFO


def test_no_device_is_needs_info_with_the_limit():
    f = one(check_branch_ocpd(motor(fla_a=40, phase=3, starting="full-voltage"), RS, LENIENT))
    assert f.status is Status.NEEDS_INFO


def test_strict_needs_starting_method():
    f = one(check_branch_ocpd(motor(fla_a=40, phase=3, motor_type="squirrel-cage",
                                    ocpd=ocpd(60, "inverse-time-breaker")), RS, STRICT))
    assert f.status is Status.NEEDS_INFO and "starting" in f.message


@pytest.mark.parametrize("rating_a, status", [(125, Status.PASS), (65, Status.NEEDS_INFO)])
def test_standard_rating(rating_a, status):
    assert one(check_ocpd_standard_rating(motor(ocpd=ocpd(rating_a)), RS, LENIENT)).status is status


def test_synchronous_motor_without_nameplate_current_is_needs_info():
    f = one(check_motor_current(motor(hp=60, voltage_v=575, phase=3, motor_type="synchronous"), RS, LENIENT))
    assert f.status is Status.NEEDS_INFO and "synchronous" in f.message


def test_standard_rating_check_is_silent_without_a_device():
    assert check_ocpd_standard_rating(motor(fla_a=10), RS, LENIENT) == []


# ---- properties of the CEC device limit -------------------------------------------------------------------

from hypothesis import given, settings
from hypothesis import strategies as st

from tests.check_helpers import CONT, LENIENT, STRICT, one

_CEC_RATINGS = sorted(RS.table("table_13").values)
_BREAKER_PERCENT = 250  # CEC Table 29, squirrel-cage full-voltage, inverse-time breaker (Red Seal CEC 2024 guide)


@settings(max_examples=200, deadline=None)
@given(fla=st.floats(0.5, 600), rating=st.sampled_from(_CEC_RATINGS),
       device=st.sampled_from([None, "fuse", "breaker", "time-delay-fuse", "non-time-delay-fuse",
                               "inverse-time-breaker"]),
       starting=st.sampled_from([None, "full-voltage", "autotransformer", "star-delta"]),
       phase=st.sampled_from([1, 3, None]))
def test_cec_rounding_never_lets_a_device_exceed_the_limit(fla, rating, device, starting, phase):
    """Under the CEC a passing device never exceeds the computed limit (or the 15 A small-motor minimum):
    there is no rounding up to the next standard rating."""
    f = one(check_branch_ocpd(motor(fla_a=fla, phase=phase, starting=starting, ocpd=ocpd(rating, device)),
                              RS, LENIENT))
    if f.status is Status.PASS:
        assert rating <= f.limit + 1e-9
        assert f.limit <= max(fla * 3.0, 15) + 1e-9  # no Table 29 cell exceeds 300 %


@settings(max_examples=100, deadline=None)
@given(fla=st.floats(0.5, 600), low=st.sampled_from(_CEC_RATINGS), high=st.sampled_from(_CEC_RATINGS))
def test_cec_larger_device_never_passes_where_a_smaller_failed(fla, low, high):
    low, high = sorted((low, high))
    rank = {Status.PASS: 0, Status.NEEDS_INFO: 1, Status.FAIL: 2}
    small = one(check_branch_ocpd(motor(fla_a=fla, phase=3, ocpd=ocpd(low, "breaker")), RS, LENIENT))
    big = one(check_branch_ocpd(motor(fla_a=fla, phase=3, ocpd=ocpd(high, "breaker")), RS, LENIENT))
    assert rank[big.status] >= rank[small.status]


@pytest.mark.parametrize("fla", [21.6, 32, 54, 99])
def test_cec_limit_is_the_exact_percentage(fla):
    # The limit is percent x FLC, unrounded (Red Seal CEC 2024: 54 A x 250 % = 135 A -> 125 A breaker).
    f = one(check_branch_ocpd(motor(fla_a=fla, phase=3, starting="full-voltage",
                                    ocpd=ocpd(15, "inverse-time-breaker")), RS, LENIENT))
    assert f.limit == pytest.approx(max(fla * _BREAKER_PERCENT / 100, 15))
