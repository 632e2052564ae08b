"""Packaged equipment rated by its nameplate MCA and maximum overcurrent device.

Equipment such as rooftop units, condensing units and packaged pumps is
marked with a minimum circuit ampacity (MCA) and a maximum overcurrent
protective device rating (MOCP, "max fuse", "max fuse or HACR breaker").
The branch conductors must carry at least the MCA (the conductor-ampacity
column the ruleset's conductor check uses, all parallel sets) and the device
must not exceed the marked maximum; a marking that names fuses only is not
met by a breaker. Rows without MCA or MOCP are not packaged equipment and get
no finding. For rows with an MCA the motor-level conductor check defers to
this one. Citations: ``[checks.packaged-mca-mocp]``.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, conductor_label, num
from checker.rules.conductors import work_out
from checker.rules.ruleset import Ruleset

CHECK_ID = "packaged-mca-mocp"

_FUSES = ("time-delay-fuse", "non-time-delay-fuse", "fuse")
_BREAKERS = ("breaker", "inverse-time-breaker", "instantaneous-trip-breaker")
_ORDER = {Status.PASS: 0, Status.NEEDS_INFO: 1, Status.FAIL: 2}
_ALLOWS_TEXT = {"fuse": "fuses only", "fuse-or-breaker": "fuses or breakers", "breaker": "a breaker",
                "unstated": "a device of either kind"}


@dataclass(frozen=True, slots=True)
class Carry:
    """Whether a conductor carries a required current, read the way the conductor-ampacity check reads it."""

    status: Status
    ampacity_a: float | None
    trail: tuple[str, ...]
    assumptions: tuple[str, ...]
    problem: str | None = None  # why it cannot be decided, or why the conductor cannot be used


def conductor_carries(record: dict, conductor: dict, ruleset: Ruleset, minimum_a: float,
                      options: ReviewOptions) -> Carry:
    """Compare the conductor's ampacity with ``minimum_a`` under every reading of the installation
    (termination column, ambient, conductors per raceway) that ``conductors.work_out`` produces.

    The first reading is the favourable one a lenient review assumes; when another reading fails,
    a lenient review passes with the assumption stated and a strict review asks for the information.
    """
    readings = work_out(record, conductor, ruleset, minimum_a)
    first = readings[0]
    assumptions = [] if conductor.get("material_stated", True) else ["Conductor material not stated: copper assumed."]
    if first.not_permitted is not None:
        return Carry(Status.FAIL, None, first.trail, tuple(assumptions), first.not_permitted)
    if first.problem is not None or first.ampacity_a is None:
        return Carry(Status.NEEDS_INFO, None, first.trail, tuple(assumptions),
                     first.problem or "the conductor ampacity cannot be found")
    passed = first.ampacity_a >= minimum_a
    trail = list(first.trail) + [f"{calc(first.ampacity_a)} A {'≥' if passed else '<'} {calc(minimum_a)} A"]
    if not passed:
        return Carry(Status.FAIL, first.ampacity_a, tuple(trail), tuple(assumptions))
    failing = [r for r in readings[1:] if r.ampacity_a is None or r.ampacity_a < minimum_a]
    if not failing:
        return Carry(Status.PASS, first.ampacity_a, tuple(trail), tuple(assumptions))
    for other in failing:
        value = "cannot be used" if other.ampacity_a is None else f"{calc(other.ampacity_a)} A"
        trail.append(f"Otherwise: {value} ({'; '.join(other.trail[-2:]) if other.trail else other.problem})")
    if first.assumption:
        assumptions.append(first.assumption)
    status = Status.NEEDS_INFO if options.strict else Status.PASS
    return Carry(status, first.ampacity_a, tuple(trail), tuple(assumptions),
                 f"it passes only on something the schedule does not state: {first.assumption}" if options.strict
                 else None)


def _mca_part(record: dict, ruleset: Ruleset, options: ReviewOptions) -> tuple[Status, str, list[str], list[str]]:
    mca_a = record["mca_a"]
    trail = [f"Marked MCA = {num(mca_a)} A (replaces 125 % of motor full-load current for this equipment)"]
    conductor = record.get("conductor")
    if conductor is None:
        return Status.NEEDS_INFO, f"no conductor is given; it must carry at least {num(mca_a)} A", trail, []
    carry = conductor_carries(record, conductor, ruleset, mca_a, options)
    trail += list(carry.trail)
    label = conductor_label(conductor)
    if carry.ampacity_a is None or carry.status is Status.NEEDS_INFO:
        return carry.status, f"{label}: {carry.problem}", trail, list(carry.assumptions)
    shown = calc(carry.ampacity_a)
    if carry.status is Status.PASS:
        return Status.PASS, f"{label} ({shown} A) carries the {num(mca_a)} A MCA", trail, list(carry.assumptions)
    return Status.FAIL, f"{label} ({shown} A) is below the {num(mca_a)} A MCA", trail, list(carry.assumptions)


def _mocp_part(record: dict) -> tuple[Status, str, list[str], list[str]]:
    mocp = record["mocp"]
    allows, max_a = mocp["allows"], mocp["rating_a"]
    trail = [f"Marked maximum {num(max_a)} A, {_ALLOWS_TEXT[allows]}"]
    ocpd = record.get("ocpd")
    if ocpd is None:
        return Status.NEEDS_INFO, f"no device is given; it must be {num(max_a)} A or less ({_ALLOWS_TEXT[allows]})", \
            trail, []
    rating_a, device = ocpd["rating_a"], ocpd.get("device")
    trail.append(f"Device {num(rating_a)} A{' ' + device.replace('-', ' ') if device else ', type not stated'}")
    assumptions = []
    if rating_a > max_a:
        return Status.FAIL, f"{num(rating_a)} A exceeds the marked {num(max_a)} A maximum (no rounding up)", trail, []
    if allows == "fuse" and device in _BREAKERS:
        return Status.FAIL, (f"the equipment is marked for fuses only (max fuse {num(max_a)} A) but is served by a "
                             f"breaker"), trail, []
    if allows == "fuse" and device is None:
        return Status.NEEDS_INFO, (f"the equipment is marked for fuses only; the {num(rating_a)} A device's type "
                                   f"is not stated"), trail, []
    if allows == "breaker" and device in _FUSES:
        return Status.NEEDS_INFO, ("the marking names a breaker but a fuse is shown; confirm the equipment's "
                                   "listing allows fuses"), trail, []
    if mocp.get("hacr") and device in _BREAKERS:
        assumptions.append("The marking names HACR-type breakers: the breaker must be of that type.")
    return Status.PASS, f"{num(rating_a)} A is within the marked {num(max_a)} A maximum", trail, assumptions


def check_packaged_mca_mocp(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Conductor ampacity >= marked MCA and device <= marked maximum (fuse-only markings need fuses)."""
    spec = ruleset.check(CHECK_ID)
    record = motor.record
    parts = []
    if record.get("mca_a") is not None:
        parts.append(_mca_part(record, ruleset, options))
    if record.get("mocp") is not None:
        parts.append(_mocp_part(record))
    if not parts:
        return []
    status = max((p[0] for p in parts), key=_ORDER.__getitem__)
    message = "; ".join(p[1] for p in parts)
    message = message[0].upper() + message[1:] + "."
    trail = tuple(line for p in parts for line in p[2])
    assumptions = tuple(a for p in parts for a in p[3])
    limit = record.get("mca_a")
    return [Finding(CHECK_ID, spec.rule, status, message, limit=limit, unit="A", trail=trail,
                    assumptions=assumptions, fields=("mca_a", "mocp", "conductor", "ocpd"), citation=spec.citation)]
