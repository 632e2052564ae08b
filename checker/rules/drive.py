"""Conductors supplying a motor drive (VFD / VSD / AFD).

The conductors feeding a drive must carry a percentage of the drive's RATED
INPUT current (not the motor's current); where the drive has a bypass that
runs the motor across the line, they must also carry the motor-circuit
percentage of the motor's full-load current, and the motor circuit must meet
the across-the-line checks. Rows whose starting method is not a drive get no
finding. Percentages and rule numbers: ``[checks.drive-input]``.
"""
from __future__ import annotations

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, conductor_label, num
from checker.rules.disconnect import motor_current
from checker.rules.packaged import conductor_carries
from checker.rules.ruleset import Ruleset

CHECK_ID = "drive-input"


def check_drive_input(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Drive supply conductors >= input percentage of the drive's rated input current (and, with a bypass,
    >= the motor percentage of full-load current)."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    if record.get("starting") != "vfd":
        return []
    fields = ("drive_input_a", "drive_bypass", "conductor", "starting", "fla_a")
    bypass = bool(record.get("drive_bypass"))
    rule = params["bypass_rule"] if bypass else spec.rule

    def finding(status, message, **kw):
        return Finding(CHECK_ID, rule, status, message, unit="A", fields=fields, citation=spec.citation, **kw)

    assumptions = []
    if bypass:
        assumptions.append("Drive with bypass: the motor also runs across the line, so its branch device, overload "
                           "and conductors must also meet the full-voltage (across-the-line) checks.")
    input_a = record.get("drive_input_a")
    percent = params["input_percent"]
    trail = []
    limits = []
    if input_a is not None:
        limits.append(input_a * percent / 100)
        trail.append(f"Drive rated input {num(input_a)} A × {num(percent)} % = {calc(limits[-1])} A ({spec.rule})")
    if bypass:
        basis = motor_current(record, ruleset, params.get("current_purpose", "conductor"))
        motor_percent = params["bypass_motor_percent"]
        if basis.current_a is not None:
            limits.append(basis.current_a * motor_percent / 100)
            trail += list(basis.trail)
            trail.append(f"Bypass: {num(basis.current_a)} A ({basis.label()}) × {num(motor_percent)} % = "
                         f"{calc(limits[-1])} A ({params['bypass_rule']})")
            assumptions += list(basis.assumptions)
    if input_a is None:
        known = f" (with the bypass, at least {calc(limits[0])} A in any case)" if limits else ""
        return [finding(Status.NEEDS_INFO, f"Drive-fed motor: the drive's rated input current is not given; its "
                        f"supply conductors must carry {num(percent)} % of it{known}.", trail=tuple(trail),
                        assumptions=tuple(assumptions))]
    limit = max(limits)
    conductor = record.get("conductor")
    kw = {"limit": limit, "assumptions": tuple(assumptions)}
    if conductor is None:
        return [finding(Status.NEEDS_INFO, f"No conductor is given; the drive's supply conductors must carry at least "
                        f"{calc(limit)} A.", trail=tuple(trail), **kw)]
    carry = conductor_carries(record, conductor, ruleset, limit, options)
    trail += list(carry.trail)
    kw["assumptions"] = tuple(assumptions) + carry.assumptions
    label = conductor_label(conductor)
    if carry.ampacity_a is None or carry.status is Status.NEEDS_INFO:
        return [finding(carry.status, f"{label}: {carry.problem}.", trail=tuple(trail), **kw)]
    if carry.status is Status.PASS:
        return [finding(Status.PASS, f"{label} ({calc(carry.ampacity_a)} A) carries the {calc(limit)} A the drive "
                        f"input requires.", provided=carry.ampacity_a, trail=tuple(trail), **kw)]
    return [finding(Status.FAIL, f"{label} ({calc(carry.ampacity_a)} A) is below the {calc(limit)} A the drive input "
                    f"requires; increase the conductor size.", provided=carry.ampacity_a, trail=tuple(trail), **kw)]
