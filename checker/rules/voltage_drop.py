"""Voltage drop of a motor branch circuit, when the schedule gives its length.

Vd = k × I × R × L with R the conductor's DC resistance per length at 75 °C
(from the ruleset's resistance table, divided by the parallel sets), L the
one-way length, k = √3 for three-phase and 2 for single-phase or DC circuits
(the line-to-line drop of a balanced three-phase circuit is √3 times the drop
in one conductor; a two-wire circuit has two conductors in series). Only
resistance is used: this equals the in-phase drop at unity power factor and
leaves out the conductors' reactance. The current is the motor's full-load
current (or the ruleset's percentage of the device rating when the motor's
current is unknown). Limits and rule numbers: ``[checks.voltage-drop]``.
"""
from __future__ import annotations

import math

from checker.model import Finding, Motor, Status
from checker.rules.bonding import area_cmil
from checker.rules.common import ReviewOptions, calc, conductor_label, num
from checker.rules.disconnect import motor_current
from checker.rules.ruleset import Ruleset

CHECK_ID = "voltage-drop"
M_PER_KFT = 304.8  # 1000 ft = 304.8 m exactly (international foot)
THREE_PHASE_K = math.sqrt(3)
TWO_WIRE_K = 2.0


def drop_v(k: float, current_a: float, ohm_per_kft: float, length_m: float, sets: int = 1) -> float:
    """Voltage drop [V] of a circuit: k × I × (R per kft / sets) × one-way length in kft."""
    return k * current_a * (ohm_per_kft / sets) * (length_m / M_PER_KFT)


def _current(record: dict, ruleset: Ruleset, params: dict):
    """(current [A], trail lines, assumptions, problem)."""
    basis = motor_current(record, ruleset, params.get("current_purpose", "conductor"))
    if basis.current_a is not None:
        return basis.current_a, list(basis.trail), list(basis.assumptions), None
    if record.get("mca_a") is not None:  # packaged equipment: its marked MCA bounds the running current from above
        mca_a = record["mca_a"]
        return mca_a, [f"No motor current: the marked MCA {num(mca_a)} A is used"], \
            ["Packaged equipment: the marked minimum circuit ampacity is used as the current (an upper bound)."], None
    percent = params.get("device_fallback_percent")
    ocpd = record.get("ocpd")
    if percent and ocpd:
        current_a = ocpd["rating_a"] * percent / 100
        line = (f"No motor current: {num(percent)} % of the {num(ocpd['rating_a'])} A device = {calc(current_a)} A "
                f"({params.get('device_fallback_rule', 'demand load')})")
        return current_a, [line], [], None
    return None, [], [], basis.problem


def _k_readings(record: dict) -> list[tuple[float, str]]:
    """Circuit factor(s): √3 three-phase, 2 single-phase or DC; both when the phase is unknown."""
    if record.get("current_type") == "dc":
        return [(TWO_WIRE_K, "DC, 2 × I × R × L")]
    phase = record.get("phase")
    if phase == 3:
        return [(THREE_PHASE_K, "three-phase, √3 × I × R × L")]
    if phase == 1:
        return [(TWO_WIRE_K, "single-phase, 2 × I × R × L")]
    return [(THREE_PHASE_K, "three-phase, √3 × I × R × L"), (TWO_WIRE_K, "single-phase, 2 × I × R × L")]


def check_voltage_drop(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Branch-circuit voltage drop (resistance only, 75 °C) within the ruleset's branch percentage."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    length_m = record.get("length_m")
    if length_m is None:  # the check applies to the runs whose length the schedule gives
        return []
    fields = ("length_m", "conductor", "voltage_v", "phase", "fla_a")

    def finding(status, message, **kw):
        return Finding(CHECK_ID, spec.rule, status, message, unit="%", fields=fields, citation=spec.citation, **kw)

    conductor, voltage_v = record.get("conductor"), record.get("voltage_v")
    if conductor is None or voltage_v is None:
        missing = "conductor" if conductor is None else "voltage"
        return [finding(Status.NEEDS_INFO, f"The run is {num(round(length_m, 2))} m but the {missing} is not given, "
                        f"so the voltage drop cannot be computed.")]
    current_a, trail, assumptions, problem = _current(record, ruleset, params)
    if current_a is None:
        return [finding(Status.NEEDS_INFO, f"The voltage drop cannot be computed: {problem}.")]
    table = ruleset.table(params["resistance_table"])
    material = conductor.get("material", "cu")
    ohm_per_kft = table.get(conductor["size"], material)
    label = conductor_label(conductor)
    if ohm_per_kft is None:
        return [finding(Status.NEEDS_INFO, f"{label}: no resistance in {table.citation}; compute the drop by hand.",
                        trail=tuple(trail))]
    if not conductor.get("material_stated", True):
        assumptions.append("Conductor material not stated: copper assumed.")
    sets = conductor.get("sets", 1)
    limit = params["branch_max_percent"]
    trail.append(f"R = {num(ohm_per_kft)} Ω/1000 ft at 75 °C ({table.citation}, {conductor_label({**conductor, 'sets': 1})})"
                 + (f" ÷ {sets} sets" if sets > 1 else ""))
    trail.append(f"L = {num(round(length_m, 2))} m = {num(round(length_m / M_PER_KFT, 4))} × 1000 ft (one way)")
    results = []
    for k, how in _k_readings(record):
        vd = drop_v(k, current_a, ohm_per_kft, length_m, sets)
        pct = vd / voltage_v * 100
        results.append(pct)
        trail.append(f"{how}: {k:.3f} × {calc(current_a)} A × {num(ohm_per_kft / sets)} Ω/kft × "
                     f"{num(round(length_m / M_PER_KFT, 4))} kft = {vd:.2f} V = {pct:.2f} % of {num(voltage_v)} V")
    assumptions.extend(_standing_assumptions(conductor, ruleset, params, len(results) > 1))
    kw = {"limit": float(limit), "provided": round(max(results), 3), "trail": tuple(trail),
              "assumptions": tuple(assumptions)}
    total = params.get("total_max_percent")
    if all(p <= limit for p in results):
        rest = f"; {num(total)} % overall leaves {num(round(total - max(results), 2))} % for the feeder" if total else ""
        return [finding(Status.PASS, f"Branch voltage drop {max(results):.2f} % is within {num(limit)} %{rest}.", **kw)]
    if all(p > limit for p in results):
        if params.get("enforceable", True):
            return [finding(Status.FAIL, f"Branch voltage drop {min(results):.2f} % exceeds {num(limit)} %; increase the "
                            f"conductor size or shorten the run.", **kw)]
        return [finding(Status.NEEDS_INFO, f"Branch voltage drop {min(results):.2f} % exceeds the {num(limit)} % the "
                        f"code recommends (an informational note, not a requirement unless the specification or "
                        f"authority adopts it); confirm it is acceptable.", **kw)]
    return [finding(Status.NEEDS_INFO, f"Branch voltage drop is {min(results):.2f} % (three-phase) or "
                    f"{max(results):.2f} % (single-phase) against {num(limit)} %; the schedule does not give the "
                    f"phase.", **kw)]


def _standing_assumptions(conductor: dict, ruleset: Ruleset, params: dict, phase_unknown: bool) -> list[str]:
    out = [("Resistance only (unity power factor, reactance ignored), at 75 °C, stranded uncoated conductors; "
           "the length is the one-way route length.")]
    threshold = params.get("reactance_note_from_size")
    if threshold:
        area = ruleset.table(params["area_table"])
        size_cmil, threshold_cmil = area_cmil(area, conductor["size"]), area_cmil(area, threshold)
        if size_cmil is not None and threshold_cmil is not None and size_cmil >= threshold_cmil:
            out.append("For conductors this large reactance is comparable with resistance: at a motor's lagging "
                       "power factor the true drop can exceed the figure shown; check with an impedance method.")
    if phase_unknown:
        out.append("Phase not stated: both the three-phase and the single-phase formula were evaluated.")
    return out
