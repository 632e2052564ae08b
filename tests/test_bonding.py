"""Bonding / equipment grounding conductor (CEC 2015 Rule 10-814 with Table 16, NEC 250.122).

Table values are typed here with their sources, never read back from the ruleset
to decide what the ruleset should say.
"""
import pytest

from checker.ingest import values
from checker.model import Motor, NotRun, SourceRef, Status
from checker.review import review_schedule
from checker.rules.bonding import check_bonding, smallest_size_covering
from checker.rules.common import ReviewOptions
from tests.check_helpers import CEC, CONT, LENIENT, NEC, one
from tests.fixture_builders import write_csv


def motor(**record):
    record.setdefault("tag", "M-1")
    record.setdefault("duty", CONT)
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.csv", 5))


def cond(size, bond=None, material="cu", sets=1, **kw):
    c = {"sets": sets, "conductors_per_set": 3, "size": size, "material": material, "material_stated": True, **kw}
    if bond:
        c["bond_size"] = bond
    return c


def cb(rating_a, device="breaker"):
    return {"rating_a": rating_a, "device": device}


# ---- tables ---------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("rating_a, material, size", [
    # NEC Table 250.122 (Bruns Engineering full table; Mike Holt newsletter for copper to 1200 A)
    (15, "cu", "14"), (20, "cu", "12"), (30, "cu", "10"), (60, "cu", "10"), (100, "cu", "8"), (200, "cu", "6"),
    (300, "cu", "4"), (400, "cu", "3"), (800, "cu", "1/0"), (1200, "cu", "3/0"), (2000, "cu", "250"),
    (6000, "cu", "800"),
    (15, "al", "12"), (60, "al", "8"), (400, "al", "1"), (2500, "al", "600"), (3000, "al", "600"),
    (4000, "al", "750"),   # current table; the old Table 250-95 said 800 kcmil (project notes, disagreement 3)
    (6000, "al", "1250"),
])
def test_nec_table_250_122(rating_a, material, size):
    table, area = NEC.table("table_250_122"), NEC.table("table_ch9_8_area")
    assert smallest_size_covering(table, area, material, rating_a) == size


@pytest.mark.parametrize("ampacity_a, material, size", [
    # CEC 2015 Table 16 by conductor ampacity: FROM MEMORY (project notes item 15, low-medium confidence)
    (20, "cu", "14"), (30, "cu", "12"), (35, "cu", "10"), (60, "cu", "10"), (115, "cu", "6"), (200, "cu", "6"),
    (255, "cu", "4"), (120, "al", "4"), (20, "al", "12"),
])
def test_cec_table_16_as_remembered(ampacity_a, material, size):
    table, area = CEC.table("table_16"), CEC.table("conductor_area")
    assert smallest_size_covering(table, area, material, ampacity_a) == size


def test_beyond_the_table_is_none():
    assert smallest_size_covering(NEC.table("table_250_122"), NEC.table("table_ch9_8_area"), "cu", 7000) is None


# ---- NEC 2023, 250.122 ------------------------------------------------------------------------------------------------

def test_nec_pass_at_the_table_size():
    # Table 430.250 25 hp 460 V = 34 A x 125 % = 42.5 A -> #8 (50 A at 75 C) is the minimum: no increase.
    m = motor(hp=25, voltage_v=460, phase=3, conductor=cond("8", bond="10"), ocpd=cb(60))
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is Status.PASS and f.limit == 10380  # 60 A -> #10 Cu (Table 250.122)
    assert any("not upsized" in t for t in f.trail)


def test_nec_fail_below_the_table_size():
    m = motor(hp=50, voltage_v=460, phase=3, conductor=cond("4", bond="10"), ocpd=cb(150))
    # 150 A -> #6 Cu (Table 250.122, 200 A row); #10 is smaller.
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is Status.FAIL and "#6 Cu" in f.message


@pytest.mark.parametrize("phase_size, bond, status, required", [
    # 100 hp 460 V: Table 430.250 124 A x 125 % = 155 A -> 2/0 Cu (175 A at 75 C) is the smallest size.
    # 300 A device -> #4 Cu (Table 250.122). 250.122(B): 250 kcmil / 2/0 = 250,000 / 133,100 = 1.878;
    # 41,740 cmil x 1.878 = 78,400 cmil -> #1 (83,690 cmil). Areas: NEC Chapter 9 Table 8.
    ("2/0", "4", Status.PASS, "#4"),
    ("250", "4", Status.FAIL, "#1"),
    ("250", "1", Status.PASS, "#1"),
])
def test_nec_proportional_increase_for_upsized_conductors(phase_size, bond, status, required):
    m = motor(hp=100, voltage_v=460, phase=3, conductor=cond(phase_size, bond=bond), ocpd=cb(300))
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is status and f"{required} Cu" in f.message
    if phase_size == "250":
        assert f.limit == pytest.approx(41740 * 250000 / 133100)
        assert any("250.122(B)" in t for t in f.trail)


def test_nec_never_larger_than_the_phase_conductors():
    # 10 hp 460 V: 14 A x 125 % = 17.5 A -> #14 is the minimum; #10 installed (upsized); 30 A device -> #10 Cu.
    # Proportional: 10,380 x 10,380 / 4,110 = 26,215 cmil (#6), but the EGC need not exceed the #10 phase
    # conductors (250.122(A), Mike Holt newsletter).
    m = motor(hp=10, voltage_v=460, phase=3, conductor=cond("10", bond="10"), ocpd=cb(30))
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is Status.PASS and f.limit == 10380
    assert any("Capped" in t for t in f.trail)


def test_nec_instantaneous_trip_breaker_is_left_to_the_reviewer():
    m = motor(hp=10, voltage_v=460, phase=3, conductor=cond("12", bond="12"), ocpd=cb(50, "instantaneous-trip-breaker"))
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "250.122(D)(2)" in f.message


def test_nec_without_device_is_needs_info():
    f = one(check_bonding(motor(hp=10, voltage_v=460, phase=3, conductor=cond("12", bond="12")), NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "device" in f.message


def test_parallel_sets_skip_the_proportional_increase_with_a_note():
    m = motor(hp=300, voltage_v=460, phase=3, conductor=cond("250", bond="2", sets=2), ocpd=cb(800))
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is Status.FAIL and "1/0" in f.message  # 800 A -> 1/0 Cu (Table 250.122)
    assert any("Parallel" in a for a in f.assumptions)


# ---- CEC 2015, Rule 10-814 and Table 16 (entered with conductor ampacity) ---------------------------------------------

@pytest.mark.parametrize("size, material, bond, status", [
    ("3/0", "cu", "6", Status.PASS),     # 200 A (Table 2, 75 C) -> #6 Cu
    ("3/0", "cu", "8", Status.FAIL),
    ("250", "cu", "6", Status.FAIL),     # 255 A -> #4 Cu: upsizing shows through the ampacity index
    ("1/0", "al", "4", Status.PASS),     # 120 A (Table 4, 75 C) -> #4 Al
])
def test_cec_table_16_by_ampacity(size, material, bond, status):
    m = motor(fla_a=99, conductor=cond(size, bond=bond, material=material, bond_material=material),
              ocpd=cb(200))
    f = one(check_bonding(m, CEC, LENIENT))
    assert f.status is status and f.rule == "10-814"


def test_cec_device_rating_does_not_change_the_bond():
    # Entered with conductor ampacity (2015 Table 16, from memory): a larger breaker does not raise the bond.
    for rating in (60, 400):
        f = one(check_bonding(motor(fla_a=40, conductor=cond("8", bond="10"), ocpd=cb(rating)), CEC, LENIENT))
        assert f.status is Status.PASS  # #8 Cu 50 A -> #10 Cu


def test_missing_bond_names_the_minimum():
    f = one(check_bonding(motor(fla_a=27, conductor=cond("8", insulation="TECK90")), CEC, LENIENT))
    assert isinstance(f, NotRun) and "#10 Cu" in f.detail and "cable" in f.reason


def test_bond_material_defaults_to_the_phase_material_with_a_note():
    c = cond("1/0", bond="6", material="al")
    f = one(check_bonding(motor(fla_a=99, conductor=c, ocpd=cb(200)), CEC, LENIENT))
    assert f.status is Status.FAIL and "#4 Al" in f.message  # 120 A Al -> #4 Al; #6 Al is smaller
    assert any("Bond material" in a for a in f.assumptions)


def test_no_conductor_is_needs_info():
    assert one(check_bonding(motor(fla_a=10), CEC, LENIENT)).status is Status.NEEDS_INFO


# ---- parsing the bond from the schedule --------------------------------------------------------------------------

@pytest.mark.parametrize("text, bond", [("3 #4 RW90 CU + #8 BOND", "8"), ("3#10, 1#10G", "10"), ("3-#2 & 1-#6 GND", "6")])
def test_bond_in_the_conductor_cell(text, bond):
    assert values.parse_conductor(text).value["bond_size"] == bond


def test_separate_bond_column_end_to_end(tmp_path):
    path = write_csv(tmp_path / "s.csv", [
        ["TAG", "HP", "VOLTS", "FLA", "CONDUCTORS", "BOND", "OCPD"],
        ["P-1", "25", "575/3/60", "27", "3#8 CU", "#10", "60A CB"],
        ["P-2", "25", "575/3/60", "27", "3#8 CU", "#12", "60A CB"],
    ])
    got = {m.motor.tag: next(f for f in m.findings if f.check == "bonding") for m in review_schedule(path).motors}
    assert got["P-1"].status is Status.PASS and got["P-2"].status is Status.FAIL  # #8 Cu 50 A -> #10 Cu


# ---- which 'smallest size' when the terminations are not stated (NEC 110.14(C)) ----------------------------------------

@pytest.mark.parametrize("bond, options, status", [
    ("8", LENIENT, Status.PASS),
    ("10", LENIENT, Status.PASS),        # passes only if #6 is the smallest size (60 C terminations): stated
    ("10", ReviewOptions(strict=True), Status.NEEDS_INFO),
])
def test_termination_reading_decides_whether_conductors_are_upsized(bond, options, status):
    # 25 hp 460 V: Table 430.250 34 A x 125 % = 42.5 A. Table 310.16: #8 is 50 A at 75 C but 40 A at 60 C, #6 is
    # 55 A at 60 C. With 75 C terminations #8 is the smallest size and the installed #6 is upsized
    # (10,380 x 26,240 / 16,510 = 16,497 cmil -> #8 EGC); with 60 C terminations #6 is the smallest (#10 EGC).
    m = motor(hp=25, voltage_v=460, phase=3, conductor=cond("6", bond=bond), ocpd=cb(60))
    f = one(check_bonding(m, NEC, options))
    assert f.status is status
    if bond == "10" and status is Status.PASS:
        assert any("#6" in a for a in f.assumptions)


def test_cautious_reading_is_not_used_when_the_conductor_itself_needs_75c():
    # Table 430.250 75 hp 575 V = 77 A x 125 % = 96.25 A. #2 Cu is 115 A at 75 C but
    # 95 A at 60 C, so the installed #2 only works with 75 C terminations; then #3 (100 A) is the smallest size
    # and #2 is upsized: 26,240 x 66,360 / 52,620 = 33,092 cmil -> #4 EGC (175 A device -> #6 by Table 250.122).
    m = motor(hp=75, voltage_v=575, phase=3, conductor=cond("2", bond="6"), ocpd=cb(175))
    f = one(check_bonding(m, NEC, LENIENT))
    assert f.status is Status.FAIL and "#4 Cu" in f.message
