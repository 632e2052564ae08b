"""Motors fed by drives: drive supply conductors from the drive's rated input current (NEC 430.122; the CEC
reading applies Rule 28-106(1)'s 125 % to the drive input, from memory), bypass arrangements, and the
starter-cell and header parsing that feeds the check.
"""
import pytest

from checker.ingest import values
from checker.ingest.layout import match_header
from checker.model import Motor, SourceRef, Status
from checker.review import review_schedule
from checker.rules.drive import check_drive_input
from tests.check_helpers import CEC, CONT, LENIENT, NEC, STRICT, one
from tests.fixture_builders import write_csv


def motor(**record):
    record.setdefault("tag", "P-1")
    record.setdefault("duty", CONT)
    record.setdefault("starting", "vfd")
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def cond(size, sets=1):
    return {"sets": sets, "conductors_per_set": 3, "size": size, "material": "cu", "material_stated": True}


# ---- parsing --------------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("VFD W/ BYPASS", {"starting": "vfd", "drive_bypass": True}),
    ("VFD c/w FVNR bypass", {"starting": "vfd", "drive_bypass": True}),
    ("AFD", {"starting": "vfd"}),
    ("FVNR", {"starting": "full-voltage"}),
    ("soft start w/ bypass", {"starting": "soft-start"}),  # a soft starter's bypass contactor is not a drive bypass
])
def test_starting_cell_with_bypass(text, expected):
    assert values.parse_starting_details(text).value == expected


@pytest.mark.parametrize("header", ["VFD INPUT A", "DRIVE INPUT AMPS", "VFD Input Current", "Drive rated input current (A)"])
def test_drive_input_headers(header):
    assert match_header(header)[0][0] == "drive_input"


def test_a_bare_vfd_header_stays_the_starter_column():
    assert match_header("VFD")[0][0] == "starting"


# ---- CEC 2015 (Rule 28-106(1) applied to the drive input: from memory) ------------------------------------------------

@pytest.mark.parametrize("input_a, size, status", [
    (40, "8", Status.PASS),    # 40 A x 125 % = 50 A <= #8 Cu 50 A (Table 2, 75 C)
    (41, "8", Status.FAIL),    # 51.25 A > 50 A
    (104, "1/0", Status.PASS),  # 130 A <= 150 A
])
def test_cec_input_current(input_a, size, status):
    f = one(check_drive_input(motor(fla_a=38, drive_input_a=input_a, conductor=cond(size)), CEC, LENIENT))
    assert f.status is status and f.limit == pytest.approx(input_a * 1.25) and f.rule == "28-106(1)"


def test_missing_input_current_is_needs_info():
    f = one(check_drive_input(motor(fla_a=99, conductor=cond("3/0")), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "rated input current" in f.message


def test_bypass_gives_a_floor_even_without_the_input_current():
    f = one(check_drive_input(motor(fla_a=99, drive_bypass=True, conductor=cond("3/0")), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "123.8 A" in f.message  # 99 A x 125 %
    assert any("across the line" in a for a in f.assumptions)


def test_non_drive_motors_get_no_finding():
    assert check_drive_input(motor(starting="full-voltage", fla_a=20, conductor=cond("10")), CEC, LENIENT) == []
    assert check_drive_input(motor(starting=None, fla_a=20, conductor=cond("10")), CEC, LENIENT) == []


def test_no_conductor_is_needs_info():
    f = one(check_drive_input(motor(fla_a=20, drive_input_a=22), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and f.limit == pytest.approx(27.5)


# ---- NEC 2023, 430.122 --------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("size, status", [("8", Status.PASS), ("10", Status.FAIL)])
def test_nec_bypass_worked_example(size, status):
    # EC&M code quiz (430.122(B) of the 2005-2017 editions): drive input 36 A x 1.25 = 45 A; with a bypass also
    # 30 hp 480 V, Table 430.250 40 A x 1.25 = 50 A; the larger, 50 A -> 8 AWG at 75 C terminals.
    m = motor(hp=30, voltage_v=480, phase=3, drive_input_a=36, drive_bypass=True, conductor=cond(size))
    f = one(check_drive_input(m, NEC, LENIENT))
    assert f.limit == pytest.approx(50.0)
    assert f.status is status and f.rule == "430.122(C)"
    assert any("45.0 A" in t for t in f.trail) and any("50.0 A" in t for t in f.trail)


def test_nec_without_bypass_uses_the_input_only():
    m = motor(hp=30, voltage_v=480, phase=3, drive_input_a=36, conductor=cond("8"))
    f = one(check_drive_input(m, NEC, LENIENT))
    assert f.limit == pytest.approx(45.0) and f.rule == "430.122(A)" and f.status is Status.PASS


def test_nec_terminal_temperature_is_an_assumption_in_strict_review():
    # 45 A needs #8 at 75 C (50 A) but #8 is 40 A at 60 C (Table 310.16): 110.14(C)(1)(a) unless listed for 75 C.
    m = motor(hp=30, voltage_v=480, phase=3, drive_input_a=36, conductor=cond("8"))
    assert one(check_drive_input(m, NEC, STRICT)).status is Status.NEEDS_INFO


# ---- end to end ----------------------------------------------------------------------------------------------------------

def test_drive_schedule_end_to_end(tmp_path):
    path = write_csv(tmp_path / "vfd.csv", [
        ["TAG", "HP", "VOLTS", "FLA", "STARTER", "VFD INPUT A", "CONDUCTORS"],
        ["P-1", "30", "575/3/60", "32", "VFD", "34", "3#8 CU"],             # 42.5 A <= 50 A
        ["P-2", "30", "575/3/60", "32", "VFD W/ BYPASS", "", "3#10 CU"],   # input missing; bypass floor 40 A
        ["P-3", "30", "575/3/60", "32", "FVNR", "", "3#8 CU"],             # not a drive
    ])
    review = review_schedule(path)
    got = {m.motor.tag: [f for f in m.findings if f.check == "drive-input"] for m in review.motors}
    assert got["P-1"][0].status is Status.PASS
    assert got["P-2"][0].status is Status.NEEDS_INFO and "40.0 A" in got["P-2"][0].message
    assert got["P-3"] == []
    assert review.motors[1].motor.record["drive_bypass"] is True
    assert review.motors[0].motor.record["drive_input_a"] == 34
