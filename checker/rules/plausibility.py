"""Do a motor row's horsepower (or kW), voltage and full-load current belong to one motor?

Not a code rule: a consistency check of the schedule's own numbers. Every limit
in a review is computed from them, so a kW value in the hp column, a wrong
voltage or a slipped decimal point makes every other finding on the row
meaningless; this check says so as a needs-info finding instead of letting the
other checks compute confidently from nonsense.

Physics gives a floor: at rated output a motor's input power is at least its
output power (efficiency and power factor are at most 1), so its line current
is at least

    I_min = P_out / V             single-phase and DC
    I_min = P_out / (sqrt(3) V)   three-phase

The ruleset (``[checks.record-plausibility]``) sets the watts per horsepower,
the accepted range of FLA / I_min and the largest I_min accepted for one
motor; this module holds no number of its own.
"""
from __future__ import annotations

import math

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, num
from checker.rules.ruleset import Ruleset

CHECK_ID = "record-plausibility"


def least_current_a(output_w: float, voltage_v: float, phase: int) -> float:
    """Line current [A] of a motor delivering ``output_w`` at 100 % efficiency and unity power factor.

    ``phase`` 3 uses P / (sqrt(3) V) (balanced three-phase power); anything else P / V.
    """
    return output_w / (voltage_v * (math.sqrt(3) if phase == 3 else 1.0))


def _output(record: dict, watts_per_hp: float) -> tuple[float, str, str] | None:
    """(output [W], how the schedule states it, record field) from hp, else kW; None when neither."""
    hp, kw = record.get("hp"), record.get("kw")
    if isinstance(hp, (int, float)) and hp > 0:
        return hp * watts_per_hp, f"{num(hp)} hp", "hp"
    if isinstance(kw, (int, float)) and kw > 0:
        return kw * 1000.0, f"{num(kw)} kW", "kw"
    return None


def _voltages(record: dict) -> list[float]:
    """The rated voltage and any alternatives of a dual-voltage nameplate, positive ones only."""
    found = [record.get("voltage_v"), *(record.get("voltage_alternatives_v") or [])]
    return [float(v) for v in found if isinstance(v, (int, float)) and v > 0]


def _phase(record: dict) -> int | None:
    if record.get("current_type") == "dc":
        return 1
    phase = record.get("phase")
    return phase if phase in (1, 3) else None


def _phase_text(phase: int | None, record: dict) -> str:
    if record.get("current_type") == "dc":
        return "DC"
    return {1: "single-phase", 3: "three-phase"}.get(phase, "phase not stated, taken as three-phase")


def check_record_plausibility(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Needs-info when the row's output, voltage and FLA cannot belong to one motor; pass when they can.

    No finding when the row lacks an output or a voltage: the checks that need
    them already say so.
    """
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    output = _output(record, float(params["watts_per_hp"]))
    voltages = _voltages(record)
    if output is None or not voltages:
        return []
    output_w, power_text, power_field = output
    phase = _phase(record)
    phase_text = _phase_text(phase, record)
    fields = (power_field, "voltage_v", "phase")
    # Unknown phase: the three-phase formula gives the smaller floor, so the check errs toward passing.
    floors = {v: least_current_a(output_w, v, phase or 3) for v in voltages}
    trail = [f"Output {power_text} = {calc(output_w)} W"
             + (f" ({num(float(params['watts_per_hp']))} W per hp)" if power_field == "hp" else "")]
    trail += [f"Least current at {num(v)} V, {phase_text}: {calc(output_w)} W / "
              f"({'sqrt(3) x ' if (phase or 3) == 3 else ''}{num(v)} V) = {calc(i)} A" for v, i in floors.items()]
    best_v = min(floors, key=floors.get)
    max_least = float(params["max_ideal_current_a"])
    if floors[best_v] > max_least:
        return [Finding(CHECK_ID, spec.rule, Status.NEEDS_INFO,
                        f"A {power_text} motor at {num(best_v)} V ({phase_text}) would draw at least "
                        f"{calc(floors[best_v])} A even at 100 % efficiency and power factor, more than the "
                        f"{num(max_least)} A this review accepts for one motor; check the output and the voltage.",
                        limit=max_least, provided=floors[best_v], unit="A", trail=tuple(trail), fields=fields,
                        citation=spec.citation)]
    fla = record.get("fla_a")
    if not isinstance(fla, (int, float)) or fla <= 0:
        return [Finding(CHECK_ID, spec.rule, Status.PASS,
                        f"{power_text} at {num(best_v)} V is a plausible motor (least current "
                        f"{calc(floors[best_v])} A); no FLA to compare.",
                        unit="A", trail=tuple(trail), fields=fields, citation=spec.citation)]
    low, high = float(params["min_current_ratio"]), float(params["max_current_ratio"])
    ratios = {v: fla / i for v, i in floors.items()}
    fitting = [v for v, r in ratios.items() if low <= r <= high]
    trail += [f"FLA {num(fla)} A / {calc(floors[v])} A = {ratios[v]:.2f} (accepted {num(low)} to {num(high)})"
              for v in floors]
    fields = ("fla_a", *fields)
    if fitting:
        v = fitting[0]
        return [Finding(CHECK_ID, spec.rule, Status.PASS,
                        f"FLA {num(fla)} A fits {power_text} at {num(v)} V: {ratios[v]:.2f} times the least "
                        f"possible current.", provided=fla, unit="A", trail=tuple(trail), fields=fields,
                        citation=spec.citation)]
    v = min(ratios, key=lambda volts: min(abs(ratios[volts] - low), abs(ratios[volts] - high)))
    side = "below" if ratios[v] < low else "above"
    return [Finding(CHECK_ID, spec.rule, Status.NEEDS_INFO,
                    f"FLA {num(fla)} A is {ratios[v]:.2f} times the least current a {power_text} motor can draw at "
                    f"{num(v)} V ({phase_text}), {calc(floors[v])} A; {side} the accepted {num(low)} to {num(high)} "
                    f"times. Check the FLA, output, voltage and phase.",
                    provided=fla, unit="A", trail=tuple(trail), fields=fields, citation=spec.citation)]
