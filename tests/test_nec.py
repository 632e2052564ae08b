"""NEC 2023 ruleset and the NEC behaviour of the existing checks.

Worked examples reproduce published answers; each names its source beside the
assertion (addresses are in rulesets/nec-2023.toml verified_by and
shared/reference/code-values.md). Values are typed here, never read back from
the ruleset, so a wrong ruleset value fails a test.
"""
from __future__ import annotations

import json

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.cli import main
from checker.model import Motor, SourceRef, Status
from checker.rules.conductors import check_conductor_ampacity
from checker.rules.current import check_motor_current, current_basis
from checker.rules.overcurrent import branch_limits, check_branch_ocpd, check_ocpd_standard_rating
from checker.rules.ruleset import hp_key
from tests.check_helpers import CEC, CONT, LENIENT, NEC, STRICT

RANK = {Status.PASS: 0, Status.NEEDS_INFO: 1, Status.FAIL: 2}


def motor(**record):
    record.setdefault("tag", "N-1")
    return Motor(tag=record["tag"], record=record, source=SourceRef("t.xlsx", 5, sheet="S"))


def cu(size, sets=1, insulation=None, material="cu", per_set=None):
    c = {"sets": sets, "size": size, "material": material, "material_stated": True}
    if insulation:
        c["insulation"] = insulation
    if per_set:
        c["conductors_per_set"] = per_set
    return c


def dev(rating_a, device="inverse-time-breaker"):
    return {"rating_a": rating_a, "device": device} if device else {"rating_a": rating_a}


def one(findings, check=None):
    found = [f for f in findings if check is None or f.check == check]
    assert len(found) == 1, findings
    return found[0]


# ---- the ruleset ------------------------------------------------------------------------------------

def test_nec_ruleset_identity_and_tables():
    assert (NEC.id, NEC.edition, NEC.country) == ("nec-2023", "2023", "US")
    assert {"motor-current", "conductor-ampacity", "branch-ocpd", "ocpd-standard-rating"} <= set(NEC.checks)
    assert {"table_310_16_cu", "table_310_16_al", "table_310_15_b_1_1", "table_310_15_c_1", "table_430_248",
            "table_430_250", "table_430_22_e", "table_430_52_c_1", "table_240_6_a", "table_240_6_a_fuses",
            "table_240_4_d"} <= set(NEC.tables)


def test_every_published_mark_names_an_address():
    for table in NEC.tables.values():
        assert table.citation.startswith("NFPA 70-2023"), table.name
        if "published source" in {table.verification, *table.row_verification.values()}:
            assert "http" in table.verified_by, table.name
    for spec in NEC.checks.values():
        if spec.verification == "published source":
            assert "http" in spec.verified_by, spec.id


def test_values_known_only_from_older_tables_stay_from_memory():
    # Only pre-2011 tables show 700-1000 kcmil publicly (code-values.md item 1).
    assert NEC.table("table_310_16_cu").row_verification["1000"] == "from memory"
    assert NEC.table("table_310_16_al").row_verification["700"] == "from memory"
    assert NEC.table("table_430_22_e").row_verification == {"varying": "from memory"}


def test_branch_params_name_existing_rows_and_columns():
    params = NEC.check("branch-ocpd").params
    table = NEC.table(params["max_percent_table"])
    for rows in params["type_rows"].values():
        assert set(rows) <= set(table.rows)
    for entry in params["will_not_start"]:
        assert entry["column"] in table.columns
        assert entry.get("row", "squirrel-cage") in table.rows


@pytest.mark.parametrize("table, row, column, expected, source", [
    ("table_430_248", "1", "115", 16, "EC&M Motor Calculations Part 2, 2019 (NEC 2017)"),
    ("table_430_248", "5", "230", 28, "electricianmath.com motor overcurrent protection"),
    ("table_430_250", "20", "460", 27, "EC&M Stumped by the Code, motor feeder (NEC 2011-2017)"),
    ("table_430_250", "10", "460", 14, "EC&M Stumped by the Code, motor feeder (NEC 2011-2017)"),
    ("table_310_16_cu", "8", "75C", 50, "EC&M Stumped by the Code: 8 AWG rated 50 A at 75 C"),
    ("table_310_16_cu", "12", "60C", 20, "EC&M Motor Calculations Part 2: 12 AWG rated 20 A at 60 C"),
    ("table_310_16_cu", "10", "75C", 35, "electricianmath.com: #10 THW for a 35 A minimum"),
    ("table_430_52_c_1", "single-phase", "inverse-time-breaker", 250, "EC&M 2019 and electricianmath.com"),
    ("table_430_52_c_1", "design-b-energy-efficient", "instantaneous-trip-breaker", 1100,
     "NFPA community forum quoting NEC 2017 Table 430.52"),
    ("table_430_52_c_1", "wound-rotor", "non-time-delay-fuse", 150, "NEC 2011 Table 430.52 (buildmyowncabin)"),
    ("table_240_4_d", "12", "al", 15, "Alan Wire, 240.4(D) (NEC 2008+)"),
    ("table_240_4_d", "10", "cu", 30, "Alan Wire, 240.4(D) (NEC 2008+)"),
    ("table_310_15_b_1_1", "46-50", "90C", 0.82, "Stallcup, 120 F in the 90 C column (NEC 2020+)"),
    ("table_310_15_c_1", "4-6", "factor", 0.80, "Mike Holt Code Q&A: 4 current-carrying conductors, 80 % (NEC 2011)"),
])
def test_published_spot_values(table, row, column, expected, source):
    assert NEC.table(table).get(row, column) == pytest.approx(expected), source


def test_standard_ratings_include_the_published_lists():
    # EC&M Code Q&A (NEC 2017): standard ratings 15 ... 6000 A; additional fuse ratings 1, 3, 6, 10, 601 A.
    assert {15, 40, 70, 80, 110, 600, 6000} <= set(NEC.table("table_240_6_a").values)
    assert set(NEC.table("table_240_6_a_fuses").values) == {1, 3, 6, 10, 601}


# ---- item 9: full-load current basis ----------------------------------------------------------------

def test_table_current_is_used_even_with_a_nameplate():
    # NEC 430.6(A)(1): conductors and short-circuit devices from the table; 20 hp 460 V = 27 A (EC&M).
    basis = current_basis({"hp": 20, "voltage_v": 460, "phase": 3, "fla_a": 25}, NEC, "conductor")
    assert basis.basis == "table" and basis.current_a == 27 and basis.nameplate_a == 25


def test_overload_basis_is_the_nameplate_and_needs_it():
    record = {"hp": 20, "voltage_v": 460, "phase": 3, "fla_a": 25}
    assert current_basis(record, NEC, "overload").current_a == 25  # 430.6(A)(2)
    missing = current_basis({"hp": 20, "voltage_v": 460, "phase": 3}, NEC, "overload")
    assert missing.current_a is None and "430.6(A)(2)" in missing.problem


def test_cec_stays_nameplate_first():
    assert current_basis({"hp": 30, "voltage_v": 575, "phase": 3, "fla_a": 30}, CEC, "conductor").current_a == 30
    assert current_basis({"hp": 30, "voltage_v": 575, "phase": 3}, CEC, "ocpd").current_a == 32  # CEC Table 44


def test_unknown_purpose_is_a_programming_error():
    with pytest.raises(ValueError, match="purpose"):
        current_basis({"fla_a": 5}, NEC, "feeder")


def test_nameplate_below_table_is_flagged_and_the_480_v_mapping_is_recorded():
    findings = check_motor_current(motor(hp=20, voltage_v=480, phase=3, fla_a=25), NEC, LENIENT)
    basis, flag = findings
    assert basis.status is Status.PASS and basis.provided == 27
    assert any("480 V" in t and "460 V column" in t for t in basis.trail)
    assert flag.status is Status.NEEDS_INFO and flag.rule == "430.6(A)(1)"
    assert flag.limit == 27 and flag.provided == 25 and "27 A" in flag.message


def test_nameplate_above_table_is_not_flagged():
    findings = check_motor_current(motor(hp=20, voltage_v=460, phase=3, fla_a=28), NEC, LENIENT)
    assert [f.status for f in findings] == [Status.PASS]


def test_cec_never_flags_nameplate_below_table():
    assert len(check_motor_current(motor(hp=30, voltage_v=575, phase=3, fla_a=30), CEC, LENIENT)) == 1


@pytest.mark.parametrize("voltage_v, hp, phase, expected_a, column", [
    (208, 10, 3, 30.8, "208"),   # NEC 1999/2008 Table 430.250, 208 V column
    (200, 10, 3, 32.2, "200"),
    (240, 10, 3, 28, "230"),     # 220-240 V systems use the 230 V column (table heading, NEC 1999)
    (600, 7.5, 3, 9, "575"),     # 550-600 V -> 575 V column
    (120, 1, 1, 16, "115"),      # 110-120 V -> 115 V column; 1 hp = 16 A (EC&M 2019)
])
def test_system_voltage_maps_to_motor_column(voltage_v, hp, phase, expected_a, column):
    f = check_motor_current(motor(hp=hp, voltage_v=voltage_v, phase=phase), NEC, LENIENT)[0]
    assert f.provided == pytest.approx(expected_a)
    assert any(f"{column} V column" in t for t in f.trail)


def test_kw_only_motor_is_not_converted():
    f = one(check_motor_current(motor(kw=7.5, voltage_v=460, phase=3), NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "kW" in f.message and "hp" in f.message
    with_nameplate = check_motor_current(motor(kw=7.5, voltage_v=460, phase=3, fla_a=13), NEC, LENIENT)[0]
    assert with_nameplate.provided == 13 and any("kW" in a for a in with_nameplate.assumptions)


def test_synchronous_nameplate_below_unity_pf_table_is_flagged():
    # NEC 1999 Table 430-150: 100 hp synchronous, unity power factor, 460 V = 101 A.
    findings = check_motor_current(motor(hp=100, voltage_v=460, phase=3, motor_type="synchronous", fla_a=95),
                                   NEC, LENIENT)
    assert findings[0].provided == 95 and findings[0].assumptions
    assert findings[1].status is Status.NEEDS_INFO and findings[1].limit == 101


# ---- published worked examples ----------------------------------------------------------------------

def test_ecm_motor_calculations_part_2_one_hp_115_v():
    # EC&M 'Motor Calculations Part 2' (Aug. 2019, NEC 2017): 1 hp 115 V single-phase, FLC 16 A (Table 430.248);
    # conductor 16 A x 1.25 = 20 A, 12 AWG rated 20 A at 60 C; inverse-time breaker 16 A x 2.50 = 40 A.
    m = {"hp": 1, "voltage_v": 115, "phase": 1, "duty": CONT}
    conductor = one(check_conductor_ampacity(motor(**m, conductor=cu("12")), NEC, STRICT))
    assert conductor.status is Status.PASS and conductor.limit == pytest.approx(20.0)
    assert not any("75 °C" in a for a in conductor.assumptions)  # passes even on 60 C terminations
    breaker = one(check_branch_ocpd(motor(**m, ocpd=dev(40)), NEC, STRICT))
    assert breaker.status is Status.PASS and breaker.limit == pytest.approx(40.0)
    # 40 A is itself a standard rating, so the next-higher permission adds nothing: 45 A needs the
    # will-not-start justification (up to 400 % = 64 A).
    above = one(check_branch_ocpd(motor(**m, ocpd=dev(45)), NEC, STRICT))
    assert above.status is Status.NEEDS_INFO and "will not start" in above.message


def test_ecm_motor_feeder_example_branch_devices_round_up():
    # EC&M 'Stumped by the Code' motor feeder example (NEC 2011-2017): 20 hp 460 V, 27 A x 2.50 = 67.5 A, next size
    # up = 70 A; 10 hp 460 V, 14 A x 2.50 = 35 A.
    twenty = one(check_branch_ocpd(motor(hp=20, voltage_v=460, phase=3, motor_type="squirrel-cage",
                                         ocpd=dev(70)), NEC, LENIENT))
    assert twenty.status is Status.PASS and twenty.limit == 70
    assert any("67.5 A" in t and "70 A" in t for t in twenty.trail)
    ten = one(check_branch_ocpd(motor(hp=10, voltage_v=460, phase=3, ocpd=dev(35)), NEC, LENIENT))
    assert ten.status is Status.PASS and ten.limit == 35
    # The same example's limits, as the feeder check would read them: the largest branch device permitted.
    limits = branch_limits({"hp": 20, "voltage_v": 460, "phase": 3, "ocpd": dev(70)}, NEC, LENIENT)
    assert max(c.permitted_a for c in limits.candidates) == 70


def test_ecm_feeder_example_branch_conductor_needs_75_c_terminals():
    # Same example states 'inverse time breakers with 75 C terminals': 27 A x 1.25 = 33.75 A; #10 Cu is 35 A at 75 C
    # but 30 A at 60 C (Table 310.16), so #10 passes only with 75 C terminations (110.14(C)(1)(a)).
    m = motor(hp=20, voltage_v=460, phase=3, duty=CONT, conductor=cu("10"), ocpd=dev(70))
    lenient = one(check_conductor_ampacity(m, NEC, LENIENT))
    assert lenient.status is Status.PASS and lenient.provided == 35
    assert any("75 °C" in a for a in lenient.assumptions)
    assert one(check_conductor_ampacity(m, NEC, STRICT)).status is Status.NEEDS_INFO
    assert one(check_conductor_ampacity(motor(hp=20, voltage_v=460, phase=3, duty=CONT, conductor=cu("8"),
                                              ocpd=dev(70)), NEC, STRICT)).status is Status.PASS  # 40 A at 60 C


def test_electricianmath_five_hp_single_phase():
    # electricianmath.com: 5 hp 230 V single-phase, FLC 28 A (Table 430.248); conductor at least 35 A (#10 THW at
    # 75 C); inverse-time breaker not more than 250 % = 70 A.
    m = {"hp": 5, "voltage_v": 230, "phase": 1, "duty": CONT, "conductor": cu("10", insulation="THW")}
    conductor = one(check_conductor_ampacity(motor(**m), NEC, LENIENT))
    assert conductor.status is Status.PASS and conductor.limit == pytest.approx(35.0) and conductor.provided == 35
    breaker = one(check_branch_ocpd(motor(**m, ocpd=dev(70)), NEC, LENIENT))
    assert breaker.status is Status.PASS and breaker.limit == 70
    # 240.4(D) would cap #10 Cu at 30 A; the finding says why 70 A is still allowed (240.4(G)).
    assert "240.4(D)" in breaker.message and "240.4(G)" in breaker.message


# ---- item 10: 430.52 tiers --------------------------------------------------------------------------

@pytest.mark.parametrize("device, rating_a, status", [
    # 20 hp 460 V, 27 A (Table 430.250). Non-time-delay fuse 300 % = 81 A -> 90 A; 400 % = 108 A.
    ("non-time-delay-fuse", 90, Status.PASS),
    ("non-time-delay-fuse", 100, Status.NEEDS_INFO),
    ("non-time-delay-fuse", 110, Status.FAIL),
    # Time-delay fuse 175 % = 47.25 A -> 50 A; 225 % = 60.75 A.
    ("time-delay-fuse", 50, Status.PASS),
    ("time-delay-fuse", 60, Status.NEEDS_INFO),
    ("time-delay-fuse", 70, Status.FAIL),
    # Inverse-time breaker 250 % = 67.5 A -> 70 A; 400 % (FLC <= 100 A) = 108 A.
    ("inverse-time-breaker", 100, Status.NEEDS_INFO),
    ("inverse-time-breaker", 110, Status.FAIL),
])
def test_three_tiers_for_a_27_a_motor(device, rating_a, status):
    f = one(check_branch_ocpd(motor(hp=20, voltage_v=460, phase=3, motor_type="squirrel-cage",
                                    ocpd=dev(rating_a, device)), NEC, LENIENT))
    assert f.status is status, f.message


def test_breaker_ceiling_drops_to_300_percent_above_100_a():
    # 150 hp 460 V = 180 A: 250 % = 450 A (standard); will-not-start ceiling 300 % = 540 A for FLC > 100 A.
    base = {"hp": 150, "voltage_v": 460, "phase": 3, "motor_type": "squirrel-cage"}
    assert one(check_branch_ocpd(motor(**base, ocpd=dev(450)), NEC, LENIENT)).status is Status.PASS
    justify = one(check_branch_ocpd(motor(**base, ocpd=dev(500)), NEC, LENIENT))
    assert justify.status is Status.NEEDS_INFO
    assert one(check_branch_ocpd(motor(**base, ocpd=dev(600)), NEC, LENIENT)).status is Status.FAIL


def test_small_motor_fuse_rounds_to_an_additional_fuse_rating():
    # 1/2 hp 460 V three-phase = 1.1 A; time-delay fuse 175 % = 1.925 A -> next higher fuse rating 3 A
    # (additional standard fuse ratings 1, 3, 6, 10 A, EC&M Code Q&A NEC 2017).
    f = one(check_branch_ocpd(motor(hp=0.5, voltage_v=460, phase=3, ocpd=dev(3, "time-delay-fuse")), NEC, LENIENT))
    assert f.status is Status.PASS and f.limit == 3


@pytest.mark.parametrize("setting_a, status", [
    (200, Status.PASS),        # <= 800 % x 27 A = 216 A for either design
    (250, Status.NEEDS_INFO),  # passes for Design B energy-efficient (1100 % = 297 A), needs justification otherwise
    (400, Status.NEEDS_INFO),  # > 1300 % = 351 A (fail) unless Design B energy-efficient (1700 % = 459 A)
    (500, Status.FAIL),        # above 1700 %
])
def test_instantaneous_trip_settings(setting_a, status):
    f = one(check_branch_ocpd(motor(hp=20, voltage_v=460, phase=3, motor_type="squirrel-cage",
                                    ocpd=dev(setting_a, "instantaneous-trip-breaker")), NEC, LENIENT))
    assert f.status is status, f.message
    assert any("instantaneous-trip setting" in a for a in f.assumptions)


def test_instantaneous_trip_stays_unchecked_under_the_cec():
    f = one(check_branch_ocpd(motor(fla_a=27, phase=3, ocpd=dev(200, "instantaneous-trip-breaker")), CEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "28-210" in f.message


def test_drive_fed_motor_device_comes_from_the_drive():
    f = one(check_branch_ocpd(motor(hp=20, voltage_v=460, phase=3, starting="vfd", ocpd=dev(70)), NEC, LENIENT))
    assert f.status is Status.NEEDS_INFO and "drive" in f.message


def test_nec_needs_no_starting_method_even_when_strict():
    f = one(check_branch_ocpd(motor(hp=20, voltage_v=460, phase=3, motor_type="squirrel-cage", ocpd=dev(70)),
                              NEC, STRICT))
    assert f.status is Status.PASS


def test_additional_fuse_rating_is_standard_for_fuses_only():
    assert one(check_ocpd_standard_rating(motor(ocpd=dev(601, "non-time-delay-fuse")), NEC, LENIENT)).status \
        is Status.PASS
    assert one(check_ocpd_standard_rating(motor(ocpd=dev(601)), NEC, LENIENT)).status is Status.NEEDS_INFO


# ---- properties -------------------------------------------------------------------------------------

DEVICES = (None, "fuse", "breaker", "time-delay-fuse", "non-time-delay-fuse", "inverse-time-breaker",
           "instantaneous-trip-breaker")
HP_3PH = [float(k) for k in NEC.table("table_430_250").rows if NEC.table("table_430_250").get(k, "460")]


@settings(max_examples=150, deadline=None)
@given(hp=st.sampled_from(HP_3PH), device=st.sampled_from(DEVICES), motor_type=st.sampled_from(
    [None, "squirrel-cage", "wound-rotor", "synchronous"]), small=st.integers(1, 700), extra=st.integers(1, 700),
    phase=st.sampled_from([1, 3, None]))
def test_larger_nec_device_never_does_better(hp, device, motor_type, small, extra, phase):
    """A larger device never passes where a smaller one failed (status never improves with rating)."""
    record = {"hp": hp if phase != 1 else 1, "voltage_v": 460 if phase != 1 else 230, "phase": phase,
                  "motor_type": motor_type}
    if phase is None:
        record.update(hp=1, voltage_v=230)
    low = one(check_branch_ocpd(motor(**record, ocpd=dev(small, device)), NEC, LENIENT))
    high = one(check_branch_ocpd(motor(**record, ocpd=dev(small + extra, device)), NEC, LENIENT))
    assert RANK[high.status] >= RANK[low.status]


SIZES_CU = list(NEC.table("table_310_16_cu").rows)


@settings(max_examples=150, deadline=None)
@given(i=st.integers(0, len(SIZES_CU) - 2), step=st.integers(1, 6), fla=st.floats(1, 600),
       ambient=st.one_of(st.none(), st.integers(-10, 80)), per_set=st.one_of(st.none(), st.integers(2, 45)),
       insulation=st.sampled_from([None, "THHN", "THWN", "TW", "XHHW-2", "MC"]), sets=st.integers(1, 4),
       rating=st.one_of(st.none(), st.integers(15, 1200)), strict=st.booleans(), code=st.sampled_from([NEC, CEC]))
def test_bigger_conductor_never_fails_where_a_smaller_passed(i, step, fla, ambient, per_set, insulation, sets,
                                                               rating, strict, code):
    j = min(i + step, len(SIZES_CU) - 1)
    options = STRICT if strict else LENIENT
    common = {"fla_a": fla, "duty": CONT, "ambient_c": ambient, "phase": 3}
    if rating:
        common["ocpd"] = dev(rating)
    small = one(check_conductor_ampacity(motor(**common, conductor=cu(SIZES_CU[i], sets, insulation, per_set=per_set)),
                                         code, options))
    big = one(check_conductor_ampacity(motor(**common, conductor=cu(SIZES_CU[j], sets, insulation, per_set=per_set)),
                                       code, options))
    if small.status is Status.PASS:
        assert big.status is Status.PASS, (small.trail, big.trail)
    if small.provided is not None and big.provided is not None:
        assert big.provided >= small.provided - 1e-9


def test_hp_keys_of_nec_tables_are_hp_key_text():
    for name in ("table_430_248", "table_430_250", "table_430_250_synchronous"):
        for key in NEC.table(name).rows:
            assert hp_key(float(key)) == key


# ---- code selection from the command line -----------------------------------------------------------

def test_codes_lists_both_rulesets(capsys):
    assert main(["codes"]) == 0
    out = capsys.readouterr().out
    assert "cec-2015" in out and "nec-2023" in out


def test_review_with_code_nec(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    from pathlib import Path
    demo = Path(__file__).resolve().parents[1] / "fixtures" / "demo" / "northfield-pump-station.csv"
    out = tmp_path / "r.json"
    code = main(["review", str(demo), "--code", "nec-2023", "--json", str(out), "--html", str(tmp_path / "r.html"),
                 "--quiet"])
    assert code in (0, 1)
    report = json.loads(out.read_text(encoding="utf-8"))
    assert report["code"] == "nec-2023"
    rules = {f["rule"] for m in report["motors"] for f in m["findings"] if f["check"] == "branch-ocpd"}
    assert rules == {"430.52(C)(1)"}
