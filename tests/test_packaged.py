"""Packaged equipment rated by MCA and maximum overcurrent device (MOCP / max fuse).

Ampacities typed here are the 75 C column of CEC Table 2 / NEC Table 310.16 (copper): #10 35 A, #8 50 A,
#6 65 A (NEC 2014 Table 310.15(B)(16) reproduction; CEC harmonized since 2012).
"""
import pytest

from checker.ingest import values
from checker.ingest.layout import match_header
from checker.model import Motor, SourceRef, Status
from checker.review import review_schedule
from checker.rules.conductors import check_conductor_ampacity
from checker.rules.packaged import check_packaged_mca_mocp
from tests.check_helpers import CEC, LENIENT, NEC, STRICT, one
from tests.fixture_builders import write_csv


def motor(**record):
    record.setdefault("tag", "RTU-1")
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def cond(size, material="cu"):
    return {"sets": 1, "conductors_per_set": 3, "size": size, "material": material, "material_stated": True}


def mocp(text):
    parsed = values.parse_mocp(text)
    assert parsed.problem is None, parsed.problem
    return parsed.value


# ---- parser ------------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("text, expected", [
    ("MAX FUSE 40", {"rating_a": 40.0, "allows": "fuse"}),
    ("Maximum Size Fuse 40 A", {"rating_a": 40.0, "allows": "fuse"}),
    ("MFS 40", {"rating_a": 40.0, "allows": "fuse"}),
    ("40A MAX FUSE OR HACR", {"rating_a": 40.0, "allows": "fuse-or-breaker", "hacr": True}),
    ("MAX FUSE/CKT BKR 40", {"rating_a": 40.0, "allows": "fuse-or-breaker"}),
    ("MAX CKT BKR 40", {"rating_a": 40.0, "allows": "breaker"}),
    ("MOCP 40 A", {"rating_a": 40.0, "allows": "unstated"}),
    ("MOP 40", {"rating_a": 40.0, "allows": "unstated"}),
    ("40", {"rating_a": 40.0, "allows": "unstated"}),
])
def test_mocp_cells(text, expected):
    assert mocp(text) == expected


@pytest.mark.parametrize("text, words", [("MAX FUSE", "no number"), ("40/50", "two values"), ("0 A", "greater than zero")])
def test_mocp_problems(text, words):
    parsed = values.parse_mocp(text)
    assert parsed.value is None and words in parsed.problem


@pytest.mark.parametrize("text, header, expected", [
    ("40", "MAX FUSE", "40 MAX FUSE"),
    ("40", "MAX FUSE OR HACR BKR", "40 MAX FUSE OR HACR BREAKER"),
    ("40", "MOCP", "40"),
    ("40A HACR", "MAX FUSE", "40A HACR"),   # the cell's own device word wins
])
def test_header_device_words_complete_a_bare_rating(text, header, expected):
    assert values.with_header_hint("mocp", text, header) == expected


@pytest.mark.parametrize("header, field", [("MCA", "mca"), ("Min. circuit ampacity", "mca"), ("MOCP", "mocp"),
                                           ("Max fuse", "mocp")])
def test_headers(header, field):
    assert match_header(header)[0][0] == field


# ---- the check -------------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("size, mca_a, status", [("10", 35, Status.PASS), ("10", 35.1, Status.FAIL), ("8", 48.5, Status.PASS)])
def test_conductor_against_mca(size, mca_a, status):
    f = one(check_packaged_mca_mocp(motor(mca_a=mca_a, conductor=cond(size)), CEC, LENIENT))
    assert f.status is status and f.limit == mca_a


@pytest.mark.parametrize("marking, ocpd, status, words", [
    ("MAX FUSE 40", {"rating_a": 40, "device": "time-delay-fuse"}, Status.PASS, "within"),
    ("MAX FUSE 40", {"rating_a": 45, "device": "fuse"}, Status.FAIL, "exceeds"),
    ("MAX FUSE 40", {"rating_a": 40, "device": "breaker"}, Status.FAIL, "fuses only"),
    ("MAX FUSE 40", {"rating_a": 35}, Status.NEEDS_INFO, "type"),
    ("40A MAX FUSE OR HACR", {"rating_a": 40, "device": "breaker"}, Status.PASS, "within"),
    ("MAX CKT BKR 40", {"rating_a": 40, "device": "fuse"}, Status.NEEDS_INFO, "listing"),
    ("MOCP 40 A", {"rating_a": 40, "device": "breaker"}, Status.PASS, "within"),
    ("MOCP 40 A", {"rating_a": 50, "device": "breaker"}, Status.FAIL, "no rounding up"),
])
def test_device_against_the_marking(marking, ocpd, status, words):
    f = one(check_packaged_mca_mocp(motor(mocp=mocp(marking), ocpd=ocpd), CEC, LENIENT))
    assert f.status is status and words in f.message


def test_hacr_marking_is_stated_as_an_assumption():
    f = one(check_packaged_mca_mocp(motor(mocp=mocp("40A MAX FUSE OR HACR"), ocpd={"rating_a": 40, "device": "breaker"}),
                                    NEC, LENIENT))
    assert any("HACR" in a for a in f.assumptions)


def test_worst_part_decides_and_both_are_reported():
    m = motor(mca_a=28, conductor=cond("10"), mocp=mocp("MAX FUSE 40"), ocpd={"rating_a": 40, "device": "breaker"})
    f = one(check_packaged_mca_mocp(m, CEC, LENIENT))
    assert f.status is Status.FAIL and "MCA" in f.message and "fuses only" in f.message


@pytest.mark.parametrize("record", [{"mca_a": 28}, {"mocp": {"rating_a": 40, "allows": "fuse"}}])
def test_missing_conductor_or_device_is_needs_info(record):
    assert one(check_packaged_mca_mocp(motor(**record), CEC, LENIENT)).status is Status.NEEDS_INFO


def test_rows_without_mca_or_mocp_are_not_packaged_equipment():
    assert check_packaged_mca_mocp(motor(fla_a=20, conductor=cond("10")), CEC, LENIENT) == []


def test_motor_level_conductor_check_defers_to_the_mca():
    m = motor(fla_a=30, mca_a=36, conductor=cond("8"), duty={"service": "continuous"})
    assert check_conductor_ampacity(m, CEC, LENIENT) == []
    assert check_conductor_ampacity(motor(fla_a=30, conductor=cond("8"), duty={"service": "continuous"}), CEC,
                                    LENIENT) != []


def test_nec_sixty_degree_terminations_are_an_assumption():
    # NEC 110.14(C)(1)(a): a circuit of 100 A or less uses the 60 C column unless the equipment is listed for 75 C.
    # #10 Cu: 35 A at 75 C, 30 A at 60 C (Table 310.16): an MCA of 32 A passes only on the 75 C assumption.
    m = motor(mca_a=32, conductor=cond("10"))
    lenient = one(check_packaged_mca_mocp(m, NEC, LENIENT))
    assert lenient.status is Status.PASS and lenient.assumptions
    assert one(check_packaged_mca_mocp(m, NEC, STRICT)).status is Status.NEEDS_INFO


# ---- end to end --------------------------------------------------------------------------------------------------------

def test_rooftop_units_end_to_end(tmp_path):
    path = write_csv(tmp_path / "rtu.csv", [
        ["TAG", "DESCRIPTION", "VOLTS", "MCA", "MAX FUSE", "CONDUCTORS", "OCPD"],
        ["RTU-1", "ROOFTOP UNIT", "575/3/60", "28.5", "40", "3#10 CU", "40A TD FUSE"],
        ["RTU-2", "ROOFTOP UNIT", "575/3/60", "28.5", "40", "3#10 CU", "40A CB"],
        ["RTU-3", "ROOFTOP UNIT", "575/3/60", "38", "50", "3#10 CU", "50A FUSE"],
    ])
    review = review_schedule(path)
    got = {m.motor.tag: m.findings for m in review.motors}
    status = {tag: next(f for f in fs if f.check == "packaged-mca-mocp").status for tag, fs in got.items()}
    assert status == {"RTU-1": Status.PASS, "RTU-2": Status.FAIL, "RTU-3": Status.FAIL}
    assert not any(f.check == "conductor-ampacity" for fs in got.values() for f in fs)
    assert review.motors[0].motor.record["mocp"] == {"rating_a": 40.0, "allows": "fuse"}


def test_packaged_rows_without_an_overload_entry_get_no_overload_finding():
    from checker.rules.overload import check_overload
    assert check_overload(motor(mca_a=28, mocp={"rating_a": 40, "allows": "fuse"}), CEC, LENIENT) == []
    assert check_overload(motor(fla_a=20), CEC, LENIENT) != []  # an ordinary motor without a setting is asked
