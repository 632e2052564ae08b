"""Disconnecting means: the disconnect cell parser and the disconnect check (CEC 28-602, NEC 430.110(A)).

The 115 % is typed here (CEC: ABB application note on CEC Section 28 and a forum quote of 28-602(1)(b);
NEC: Summit 'Motor disconnects part 5'), not read back from the rulesets.
"""
import pytest

from checker.ingest import values
from checker.model import Motor, SourceRef, Status
from checker.review import review_schedule
from checker.rules.disconnect import check_disconnect
from tests.check_helpers import CEC, LENIENT, NEC, one
from tests.fixture_builders import write_csv


def motor(**record):
    record.setdefault("tag", "M-1")
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def switch(text):
    parsed = values.parse_disconnect(text)
    assert parsed.problem is None, parsed.problem
    return parsed.value["disconnect_switch"]


# ---- parser -------------------------------------------------------------------------------------------------

SW = {"means": "switch"}


@pytest.mark.parametrize("text, expected", [
    ("60/3/45", {**SW, "rating_a": 60.0, "poles": 3, "fuse_a": 45.0, "fused": True}),
    ("60A/3P/45AF", {**SW, "rating_a": 60.0, "poles": 3, "fuse_a": 45.0, "fused": True}),   # AF = amperes of fuse
    ("60 A FUSED c/w 45 A", {**SW, "rating_a": 60.0, "fuse_a": 45.0, "fused": True}),
    ("60A FUSED 45A", {**SW, "rating_a": 60.0, "fuse_a": 45.0, "fused": True}),
    ("60AS/45AF", {**SW, "rating_a": 60.0, "fuse_a": 45.0, "fused": True}),
    ("FUSED 60/45", {**SW, "rating_a": 60.0, "fuse_a": 45.0, "fused": True}),
    ("30A FUSED", {**SW, "rating_a": 30.0, "fused": True}),
    ("30/3 NF", {**SW, "rating_a": 30.0, "poles": 3, "fused": False}),
    ("100A NF", {**SW, "rating_a": 100.0, "fused": False}),
    ("200A NF @ PUMP", {**SW, "rating_a": 200.0, "fused": False}),
    ("30A 2P NF", {**SW, "rating_a": 30.0, "poles": 2, "fused": False}),
    ("NEMA 4X 60A NF", {**SW, "rating_a": 60.0, "fused": False}),
    ("10 HP", {**SW, "hp": 10.0}),
    ("30A, 10HP", {**SW, "rating_a": 30.0, "hp": 10.0}),
    ("LOCKABLE @ MCC", {"means": "branch-device"}),
    ("INTEGRAL", {"means": "integral"}),
    ("TOGGLE", {"means": "general-use-switch"}),
    ("CORD & PLUG", {"means": "plug"}),
])
def test_disconnect_cells(text, expected):
    assert switch(text) == expected
    assert values.parse_disconnect(text).value["disconnect"] == text


def test_location_is_noted_not_read():
    assert any("PUMP" in n for n in values.parse_disconnect("200A NF @ PUMP").notes)


@pytest.mark.parametrize("text, words", [
    ("NF FUSED 30A", "both non-fused and fused"),
    ("30A 60A 100A", "more than one switch rating"),
    ("xyz", "no disconnect rating"),
    ("TOGGLE PLUG", "more than one kind"),
])
def test_disconnect_problems(text, words):
    parsed = values.parse_disconnect(text)
    assert parsed.value is None and words in parsed.problem


@pytest.mark.parametrize("text", [12345, "=B2", "x" * 400, "0 A NF", "/3/", "99999999 A"])
def test_disconnect_parser_never_raises(text):
    parsed = values.parse_disconnect(text)
    assert "internal parser error" not in (parsed.problem or "")


# ---- CEC 2015, Rule 28-602 (nameplate current first) -----------------------------------------------------------

@pytest.mark.parametrize("fla_a, text, status", [
    (40, "60/3/45", Status.PASS),     # 40 A x 115 % = 46 A <= 60 A
    (52, "60/3/45", Status.PASS),     # 59.8 A <= 60 A
    (53, "60/3/45", Status.FAIL),     # 60.95 A > 60 A
    (26, "30/3 NF", Status.PASS),     # 29.9 A
    (27, "30/3 NF", Status.FAIL),     # 31.05 A
])
def test_cec_ampere_rating(fla_a, text, status):
    f = one(check_disconnect(motor(fla_a=fla_a, disconnect_switch=switch(text)), CEC, LENIENT))
    assert f.status is status
    assert f.limit == pytest.approx(fla_a * 1.15)
    assert f.rule == "28-602"


def test_fuse_rating_is_shown_in_the_trail():
    f = one(check_disconnect(motor(fla_a=40, disconnect_switch=switch("60/3/45")), CEC, LENIENT))
    assert any("45 A fuses" in t for t in f.trail)


def test_cec_horsepower_rating_is_an_alternative():
    m = motor(fla_a=28, hp=10, disconnect_switch=switch("30A, 10HP"))  # 32.2 A > 30 A, but 10 hp >= 10 hp
    f = one(check_disconnect(m, CEC, LENIENT))
    assert f.status is Status.PASS and "hp" in f.message


@pytest.mark.parametrize("motor_hp, status", [(7.5, Status.PASS), (15, Status.FAIL), (None, Status.NEEDS_INFO)])
def test_horsepower_only_rating(motor_hp, status):
    record = {"fla_a": 20, "disconnect_switch": switch("10 HP")}
    if motor_hp is not None:
        record["hp"] = motor_hp
    assert one(check_disconnect(motor(**record), CEC, LENIENT)).status is status


@pytest.mark.parametrize("ocpd, status", [
    ({"rating_a": 50, "device": "breaker"}, Status.PASS),
    ({"rating_a": 20, "device": "inverse-time-breaker"}, Status.FAIL),   # 22 A x 115 % = 25.3 A > 20 A
    ({"rating_a": 40, "device": "time-delay-fuse"}, Status.NEEDS_INFO),  # switch rating of a fused starter unknown
    (None, Status.NEEDS_INFO),
])
def test_lockable_branch_breaker_as_disconnect(ocpd, status):
    record = {"fla_a": 22, "disconnect_switch": switch("LOCKABLE @ MCC")}
    if ocpd:
        record["ocpd"] = ocpd
    assert one(check_disconnect(motor(**record), CEC, LENIENT)).status is status


@pytest.mark.parametrize("text, words", [("INTEGRAL", "integral"), ("TOGGLE", "toggle"), ("PLUG", "plug")])
def test_unrated_kinds_are_needs_info_with_the_minimum(text, words):
    f = one(check_disconnect(motor(fla_a=4.6, disconnect_switch=switch(text)), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and words in f.message and "5.29 A" in f.message


def test_fuses_larger_than_the_switch_are_queried():
    f = one(check_disconnect(motor(fla_a=10, disconnect_switch=switch("30/3/45")), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "45 A fuses" in f.message


def test_no_current_is_needs_info():
    f = one(check_disconnect(motor(disconnect_switch=switch("30A NF")), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "cannot be computed" in f.message


def test_cec_uses_nameplate_when_given():
    # Nameplate 38 A x 115 % = 43.7 A; a 45 A rating passes under the CEC's nameplate-first basis.
    m = motor(fla_a=38, hp=30, voltage_v=460, phase=3, disconnect_switch=switch("45A NF"))
    f = one(check_disconnect(m, CEC, LENIENT))
    assert f.status is Status.PASS and f.limit == pytest.approx(43.7)


# ---- NEC 2023, 430.110(A) (table current, 430.6(A)(1)) -------------------------------------------------------------

def test_nec_uses_the_table_current():
    # NEC Table 430.250: 30 hp 460 V = 40 A (NEC 1999/2008 tables, paigewire / scribd); 40 A x 115 % = 46 A > 45 A.
    m = motor(fla_a=38, hp=30, voltage_v=460, phase=3, disconnect_switch=switch("45A NF"))
    f = one(check_disconnect(m, NEC, LENIENT))
    assert f.status is Status.FAIL and f.limit == pytest.approx(46.0) and f.rule == "430.110(A)"


@pytest.mark.parametrize("text, status", [
    ("30A NF 10HP", Status.PASS),       # listed unfused switch, hp >= motor hp: lower ampere rating allowed (Summit)
    ("30A FUSED 10HP", Status.FAIL),    # the exception covers unfused switches only
])
def test_nec_horsepower_exception_is_for_unfused_switches(text, status):
    m = motor(hp=10, voltage_v=230, phase=3, disconnect_switch=switch(text))
    f = one(check_disconnect(m, NEC, LENIENT))
    assert f.limit == pytest.approx(32.2)  # NEC Table 430.250: 10 hp 230 V = 28 A (paigewire, NEC 1999); x 115 %
    assert f.status is status


# ---- end to end ---------------------------------------------------------------------------------------------------

def test_disconnect_column_is_read(tmp_path):
    path = write_csv(tmp_path / "s.csv", [
        ["TAG", "HP", "VOLTS", "FLA", "DISCONNECT"],
        ["P-1", "25", "575/3/60", "27", "60/3/45"],
        ["P-2", "25", "575/3/60", "27", "30A NF"],
        ["P-3", "25", "575/3/60", "27", "by others"],
    ])
    review = review_schedule(path)
    got = {m.motor.tag: [f for f in m.findings if f.check == "disconnect"] for m in review.motors}
    assert got["P-1"][0].status is Status.PASS    # 31.05 A <= 60 A
    assert got["P-2"][0].status is Status.FAIL    # 31.05 A > 30 A
    assert got["P-3"][0].status is Status.NEEDS_INFO
    assert review.motors[0].motor.record["disconnect"] == "60/3/45"
