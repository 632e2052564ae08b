"""Overload protection: the overload/heater cell parser and the overload check (CEC 28-306, NEC 430.32).

Percentages are typed here, not read back from the rulesets, so that a wrong
ruleset value fails a test. Sources are named beside each case.
"""
import pytest

from checker.ingest import values
from checker.model import Motor, NotRun, SourceRef, Status
from checker.review import review_schedule
from checker.rules.overload import check_overload
from tests.check_helpers import CEC, CONT, LENIENT, NEC, STRICT, one
from tests.fixture_builders import write_csv


def motor(**record):
    record.setdefault("tag", "M-1")
    record.setdefault("duty", CONT)
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def setting(text):
    parsed = values.parse_overload(text)
    assert parsed.problem is None, parsed.problem
    return parsed.value["overload_setting"]


def ol(**kw):
    return {"kind": "setting", **kw}


# ---- parser -------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("OL 27 A", ol(setting_a=27.0)),
    ("27A", ol(setting_a=27.0)),
    ("set 26.5 A", ol(setting_a=26.5)),
    ("OLR 4.2A", ol(setting_a=4.2)),
    ("class 20 / 30A", ol(setting_a=30.0, trip_class=20)),
    ("CL 10 / 27A", ol(setting_a=27.0, trip_class=10)),
    ("7-1/2 A", ol(setting_a=7.5)),
    ("heater 4.83", {"kind": "heater", "setting_a": 4.83}),
    ("24-32 A", {"kind": "range", "range_min_a": 24.0, "range_max_a": 32.0}),
    ("OL 115%", {"kind": "percent", "percent": 115.0}),
    ("CL 10", {"kind": "no-setting", "trip_class": 10}),
    ("SSOL", {"kind": "no-setting"}),
    ("INTEGRAL", {"kind": "integral"}),
    ("thermally protected", {"kind": "integral"}),
    ("BY VFD", {"kind": "drive"}),
    ("by soft starter", {"kind": "soft-starter"}),
    ("VFD set 27 A", ol(setting_a=27.0, provided_by="drive")),
])
def test_overload_cells(text, expected):
    assert setting(text) == expected
    assert values.parse_overload(text).value["overload"] == text


def test_heater_reading_is_noted():
    assert any("heater" in n for n in values.parse_overload("heater 4.83").notes)


@pytest.mark.parametrize("text, words", [
    ("H1034", "catalogue"),       # a heater catalogue code is not a current
    ("B6.25", "catalogue"),
    ("27 / 30", "two values"),
    ("CL 12", "trip class"),
    ("xyz", "no overload setting"),
])
def test_overload_problems(text, words):
    parsed = values.parse_overload(text)
    assert parsed.value is None and words in parsed.problem


@pytest.mark.parametrize("text", ["", "BY VENDOR", "N/A", "TBD", None])
def test_overload_placeholders(text):
    assert values.parse_overload(text).placeholder


@pytest.mark.parametrize("text", [12345, "=A1", "x" * 400, "%%%", "-5 A", "0 A", "1e400 A"])
def test_overload_parser_never_raises(text):
    parsed = values.parse_overload(text)
    assert parsed.value is None or parsed.value["overload_setting"]["kind"]
    assert "internal parser error" not in (parsed.problem or "")


# ---- CEC 2015, Rule 28-306 ----------------------------------------------------------------------------------

@pytest.mark.parametrize("sf, setting_a, status, limit_a", [
    # 28-306(1)(a): SF >= 1.15 -> 125 % (CEC 2024 exam-prep overload guide, dakotaprep; xlr8edlearning)
    (1.15, 40.0, Status.PASS, 40.0),    # 32 A x 125 % = 40 A exactly
    (1.15, 40.5, Status.FAIL, 40.0),
    (1.25, 39.0, Status.PASS, 40.0),
    # 28-306(1)(b): other motors -> 115 % (same sources)
    (1.0, 36.8, Status.PASS, 36.8),     # 32 A x 115 % = 36.8 A
    (1.0, 37.0, Status.FAIL, 36.8),
])
def test_cec_service_factor_percentages(sf, setting_a, status, limit_a):
    m = motor(fla_a=32, service_factor=sf, overload_setting=ol(setting_a=setting_a))
    f = one(check_overload(m, CEC, LENIENT))
    assert f.status is status
    assert f.limit == pytest.approx(limit_a)
    assert f.rule == ("28-306(1)(a)" if sf >= 1.15 else "28-306(1)(b)")


@pytest.mark.parametrize("setting_a, status", [(36.0, Status.PASS), (38.0, Status.NEEDS_INFO), (41.0, Status.FAIL)])
def test_cec_unknown_service_factor_is_decided_only_when_both_readings_agree(setting_a, status):
    m = motor(fla_a=32, overload_setting=ol(setting_a=setting_a))
    f = one(check_overload(m, CEC, LENIENT))
    assert f.status is status
    assert len([t for t in f.trail if "maximum" in t]) == 2  # both readings shown


@pytest.mark.parametrize("setting_a, status", [(30.0, Status.PASS), (38.0, Status.NEEDS_INFO), (41.0, Status.FAIL)])
def test_strict_review_assumes_no_service_factor_either(setting_a, status):
    f = one(check_overload(motor(fla_a=32, overload_setting=ol(setting_a=setting_a)), CEC, STRICT))
    assert f.status is status
    if status is Status.NEEDS_INFO:
        assert "marking" in f.message


def test_cec_has_no_temperature_rise_path_and_no_relief():
    # No temperature-rise criterion and no 'will not start' relief were found for the CEC (ruleset verified_by).
    m = motor(fla_a=20, service_factor=1.0, temp_rise_c=40, overload_setting=ol(setting_a=24.0))
    f = one(check_overload(m, CEC, LENIENT))
    assert f.status is Status.FAIL and f.limit == pytest.approx(23.0)  # 20 A x 115 %


def test_overloads_use_nameplate_not_table_current():
    # 30 hp 575 V has a table current (CEC Table 44: 32 A) but overloads follow the nameplate.
    f = one(check_overload(motor(hp=30, voltage_v=575, phase=3, overload_setting=ol(setting_a=35.0)), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "nameplate" in f.message


@pytest.mark.parametrize("text, words", [
    ("CL 10", "no current setting"),
    ("BY VFD", "drive"),
    ("by soft starter", "soft starter"),
])
def test_no_setting_means_the_check_could_not_run_with_the_maximum(text, words):
    f = one(check_overload(motor(fla_a=20, service_factor=1.15, overload_setting=setting(text)), CEC, LENIENT))
    assert isinstance(f, NotRun) and words in f.reason
    assert "25.0 A" in f.detail  # 20 A x 125 % (service factor 1.15)


def test_integral_thermal_protector_is_listed_as_not_run():
    f = one(check_overload(motor(fla_a=6.4, overload_setting=setting("INTEGRAL")), CEC, LENIENT))
    assert isinstance(f, NotRun) and "integral" in f.reason


def test_percent_setting_is_applied_to_nameplate():
    m = motor(fla_a=20, service_factor=1.0, overload_setting=setting("OL 115%"))
    f = one(check_overload(m, CEC, LENIENT))
    assert f.status is Status.PASS and f.provided == pytest.approx(23.0)
    m = motor(fla_a=20, service_factor=1.0, overload_setting=setting("OL 120%"))
    assert one(check_overload(m, CEC, LENIENT)).status is Status.FAIL


@pytest.mark.parametrize("fla_a, sf, status", [
    (27, 1.15, Status.PASS),        # 27 x 125 % = 33.75 A >= the whole 24-32 A dial
    (22, 1.0, Status.NEEDS_INFO),   # 25.3 A lies inside the dial: confirm the setting
    (18, 1.0, Status.FAIL),         # 20.7 A is below the lowest dial position
])
def test_adjustable_range(fla_a, sf, status):
    m = motor(fla_a=fla_a, service_factor=sf, overload_setting=setting("24-32 A"))
    assert one(check_overload(m, CEC, LENIENT)).status is status


def test_setting_below_nameplate_passes_with_a_note():
    f = one(check_overload(motor(fla_a=20, service_factor=1.15, overload_setting=ol(setting_a=18.0)), CEC, LENIENT))
    assert f.status is Status.PASS and "may trip" in f.message


def test_heater_is_compared_and_named():
    f = one(check_overload(motor(fla_a=4.2, service_factor=1.15, overload_setting=setting("heater 4.83")), CEC,
                           LENIENT))
    assert f.status is Status.PASS and "heater" in f.message  # 4.2 A x 125 % = 5.25 A


def test_non_continuous_duty_is_left_to_the_reviewer():
    m = motor(fla_a=22, duty={"service": "intermittent", "rating": "15-min"}, overload_setting=ol(setting_a=25.0))
    f = one(check_overload(m, CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "Intermittent" in f.message


def test_no_overload_setting_read():
    f = one(check_overload(motor(fla_a=10, service_factor=1.15), CEC, LENIENT))
    assert isinstance(f, NotRun) and "12.5 A" in f.detail  # 10 A x 125 %


# ---- NEC 2023, 430.32 -----------------------------------------------------------------------------------------

def test_nec_temperature_rise_qualifies_for_125_percent_with_the_or_reading_stated():
    # 430.32(A)(1): marked temperature rise 40 C or less -> 125 % (NEC 2008 text, solar365); 'or' reading (S53)
    m = motor(fla_a=38, service_factor=1.0, temp_rise_c=40, overload_setting=ol(setting_a=47.5))
    f = one(check_overload(m, NEC, LENIENT))
    assert f.status is Status.PASS and f.limit == pytest.approx(47.5)  # 38 A x 125 %
    assert any("OR" in a for a in f.assumptions)


@pytest.mark.parametrize("fla_a, sf, rise, setting_a, limit_a", [
    # NEC Annex D, Example D8, overload answers as recalled in the project notes (from memory, verify):
    (32, 1.15, None, 40.0, 40.0),   # 25 hp, SF 1.15: 32 A x 1.25 = 40 A
    (38, None, 40, 47.5, 47.5),     # 30 hp wound-rotor, 40 C rise: 38 A x 1.25 = 47.5 A
])
def test_nec_annex_d_example_d8_overloads(fla_a, sf, rise, setting_a, limit_a):
    record = {"fla_a": fla_a, "overload_setting": ol(setting_a=setting_a)}
    if sf is not None:
        record["service_factor"] = sf
    if rise is not None:
        record["temp_rise_c"] = rise
    f = one(check_overload(motor(**record), NEC, LENIENT))
    assert f.status is Status.PASS and f.limit == pytest.approx(limit_a)


@pytest.mark.parametrize("sf, setting_a, status", [
    # 430.32(C): up to 140 % (SF >= 1.15) / 130 % (others) where the (A)(1) setting will not start the motor
    # (EC&M code quiz 'selection of overload device'); the submission must justify it -> needs-info.
    (1.15, 27.0, Status.NEEDS_INFO),   # 20 A: 125 % = 25 A < 27 A <= 140 % = 28 A
    (1.15, 29.0, Status.FAIL),         # above 28 A
    (1.0, 25.0, Status.NEEDS_INFO),    # 115 % = 23 A < 25 A <= 130 % = 26 A
    (1.0, 26.5, Status.FAIL),
])
def test_nec_relief_band(sf, setting_a, status):
    m = motor(fla_a=20, service_factor=sf, temp_rise_c=60, overload_setting=ol(setting_a=setting_a))
    f = one(check_overload(m, NEC, LENIENT))
    assert f.status is status
    if status is Status.NEEDS_INFO:
        assert "430.32(C)" in f.message


def test_nec_overload_without_nameplate_is_needs_info_even_with_a_table_current():
    # 430.6(A)(2): overloads from the nameplate; Table 430.250 30 hp 460 V = 40 A is not used.
    f = one(check_overload(motor(hp=30, voltage_v=460, phase=3, overload_setting=ol(setting_a=45.0)), NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "nameplate" in f.message


# ---- end to end -----------------------------------------------------------------------------------------------

def test_schedule_without_overload_column_lists_the_check_once(tmp_path):
    path = write_csv(tmp_path / "s.csv", [
        ["TAG", "HP", "VOLTS", "FLA", "CONDUCTORS", "OCPD"],
        ["P-1", "25", "575/3/60", "27", "3#8 CU", "60A CB"],
        ["P-2", "10", "575/3/60", "11", "3#12 CU", "25A CB"],
    ])
    review = review_schedule(path)
    assert not any(f.check == "overload" for m in review.motors for f in m.findings)
    entry = next(e for e in review.checks_not_run if e["check"] == "overload")
    assert entry["motors"] == 2 and "overload" in entry["reason"]


def test_schedule_overload_and_service_factor_columns_are_read(tmp_path):
    path = write_csv(tmp_path / "s.csv", [
        ["TAG", "HP", "VOLTS", "FLA", "SF", "O/L SETTING"],
        ["P-1", "25", "575/3/60", "27", "1.15", "OL 33 A"],
        ["P-2", "25", "575/3/60", "27", "1.0", "class 20 / 33A"],
        ["P-3", "25", "575/3/60", "27", "1.15", "CL 10"],
    ])
    review = review_schedule(path)
    got = {m.motor.tag: next((f for f in m.findings if f.check == "overload"), None) for m in review.motors}
    assert got["P-1"].status is Status.PASS       # 27 A x 125 % = 33.75 A
    assert got["P-2"].status is Status.FAIL       # 27 A x 115 % = 31.05 A
    assert got["P-3"] is None                     # class only: the check could not run ...
    assert [n.check for n in review.motors[2].not_run] == ["overload"]  # ... and says so
    assert review.motors[1].motor.record["overload_setting"]["trip_class"] == 20


def test_unstated_duty_is_assumed_continuous_or_asked_in_strict_review():
    record = {"tag": "M-1", "fla_a": 20, "service_factor": 1.15, "overload_setting": ol(setting_a=24.0)}
    m = Motor(tag="M-1", record=record, source=SourceRef("t.csv", 5))
    f = one(check_overload(m, CEC, LENIENT))
    assert f.status is Status.PASS and any("continuous" in a for a in f.assumptions)
    assert one(check_overload(m, CEC, STRICT)).status is Status.NEEDS_INFO
