"""Branch-circuit overcurrent device for a single motor.

The device rating must not exceed the maximum-percentage table's value
(by motor type, starting method and device type) times the full-load
current. Under the CEC there is no rounding up: the largest standard rating
at or below the computed value is the most that passes. Table names, the
percentages, the reduced-voltage current split and the small-motor minimum
all come from ``[checks.branch-ocpd]`` in the ruleset.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, num
from checker.rules.current import current_basis
from checker.rules.ruleset import Ruleset

CHECK_ID = "branch-ocpd"
STANDARD_CHECK_ID = "ocpd-standard-rating"

DEVICE_NAMES = {
    "time-delay-fuse": "time-delay fuse",
    "non-time-delay-fuse": "non-time-delay fuse",
    "inverse-time-breaker": "inverse-time breaker",
    "instantaneous-trip-breaker": "instantaneous-trip breaker",
    "fuse": "fuse",
    "breaker": "breaker",
}
_FUSE_COLUMNS = ("time-delay-fuse", "non-time-delay-fuse")
_ALL_COLUMNS = ("time-delay-fuse", "non-time-delay-fuse", "inverse-time-breaker")


@dataclass(frozen=True, slots=True)
class Candidate:
    """One reading of the schedule (table row + device column) and its limit."""

    row: str
    column: str
    percent: float
    limit_a: float


def device_columns(device: str | None) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Table columns the written device could be, and the assumption that implies."""
    if device in _ALL_COLUMNS:
        return (device,), ()
    if device == "breaker":
        return ("inverse-time-breaker",), ("Breaker type not stated: reviewed as an inverse-time breaker.",)
    if device == "fuse":
        return _FUSE_COLUMNS, ()
    return _ALL_COLUMNS, ()


def table_rows(record: dict, current_a: float, params: dict, options: ReviewOptions):
    """Rows of the maximum-percentage table the motor could fall in.

    Returns (rows, assumptions, problem). Several rows mean the schedule does
    not say enough to choose; the caller passes only if every reading passes.
    """
    if record.get("current_type") == "dc" or record.get("motor_type") == "dc":
        return ("dc",), (), None
    if record.get("motor_type") == "wound-rotor":
        return ("wound-rotor",), (), None
    assumptions: list[str] = []
    family = record.get("motor_type")
    if family is None:
        if options.strict:
            return (), (), "motor type is not stated (strict review assumes nothing)"
        family = "squirrel-cage"
        assumptions.append("Motor type not stated: reviewed as a squirrel-cage induction motor.")
    if family == "synchronous":
        family = params["synchronous_uses"]
    starting = record.get("starting")
    if starting is None:
        if options.strict:
            return (), (), "starting method is not stated (strict review assumes nothing)"
        starting = "full-voltage"
        assumptions.append("Starting method not stated: reviewed as full-voltage starting.")
    group = params["starting_rows"].get(starting)
    if group is None:
        return (), tuple(assumptions), (f"the maximum-percentage table has no row for {starting} starting; "
                                        f"the device limit comes from the controller or drive marking, which the "
                                        f"schedule must state")
    if group == "full-voltage":
        polyphase = f"{family}-full-voltage"
    else:
        size = "small" if current_a <= params["reduced_voltage_split_a"] else "large"
        polyphase = f"{family}-reduced-voltage-{size}"
    phase = record.get("phase")
    if phase == 1:
        return ("single-phase",), tuple(assumptions), None
    if phase is None:
        return ("single-phase", polyphase), tuple(assumptions), None
    return (polyphase,), tuple(assumptions), None


def check_branch_ocpd(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """The branch device rating must not exceed table percentage × full-load current (no rounding up)."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    basis = current_basis(record, ruleset)
    fields = ("ocpd", "starting", "motor_type") + basis.fields

    def finding(status, message, **kw):
        return Finding(CHECK_ID, spec.rule, status, message, unit="A", fields=fields, citation=spec.citation, **kw)

    if basis.current_a is None:
        return [finding(Status.NEEDS_INFO, f"Maximum device rating cannot be computed: {basis.problem}.")]
    ocpd = record.get("ocpd")
    device = ocpd.get("device") if ocpd else None
    if device == "instantaneous-trip-breaker":
        other = params.get("instantaneous_trip_rule")
        where = f"Rule {other}" if other else "a rule outside the maximum-percentage table"
        return [finding(Status.NEEDS_INFO, f"Instantaneous-trip breaker: its setting is limited by {where}, which this "
                        f"review does not check; show the trip setting and the combination controller listing.")]
    rows, assumptions, problem = table_rows(record, basis.current_a, params, options)
    if problem:
        return [finding(Status.NEEDS_INFO, f"Maximum device rating cannot be computed: {problem}.",
                        assumptions=basis.assumptions + assumptions)]
    columns, device_assumptions = device_columns(device)
    table = ruleset.table(params["max_percent_table"])
    candidates = []
    for row in rows:
        for column in columns:
            percent = table.get(row, column)
            if percent is not None:
                candidates.append(Candidate(row, column, percent, basis.current_a * percent / 100))
    if not candidates:
        return [finding(Status.NEEDS_INFO, f"{table.citation} gives no percentage for this motor and device.")]
    minimum_a = params["minimum_rating_a"]
    ratings = ruleset.table(params["standard_ratings_table"]).values or ()
    trail = list(basis.trail)
    for c in candidates:
        allowed = max(c.limit_a, minimum_a)
        largest = max((r for r in ratings if r <= allowed), default=None)
        line = (f"{table.citation}, {c.row.replace('-', ' ')} row, {DEVICE_NAMES[c.column]}: "
                f"{num(basis.current_a)} A × {num(c.percent)} % = {calc(c.limit_a)} A")
        if c.limit_a < minimum_a:
            line += f" (below {num(minimum_a)} A: a {num(minimum_a)} A device is permitted)"
        if largest is not None:
            line += f"; largest standard rating not above it: {num(largest)} A"
        trail.append(line)
    all_assumptions = basis.assumptions + assumptions + device_assumptions
    limits = [max(c.limit_a, minimum_a) for c in candidates]
    if ocpd is None:
        return [finding(Status.NEEDS_INFO, f"No overcurrent device rating could be read from the schedule; the most "
                        f"permitted is "
                        f"{calc(min(limits))} A.", limit=min(limits), trail=tuple(trail), assumptions=all_assumptions)]
    rating_a = ocpd["rating_a"]
    kind = DEVICE_NAMES.get(device, "device")
    if all(rating_a <= limit for limit in limits):
        limit = min(limits)
        trail.append(f"{num(rating_a)} A ≤ {calc(limit)} A")
        message = f"{num(rating_a)} A {kind} is within the {calc(limit)} A maximum."
        if len(candidates) > 1:
            message += " It passes whichever device type or row applies."
        return [finding(Status.PASS, message, limit=limit, provided=rating_a, trail=tuple(trail),
                        assumptions=all_assumptions)]
    if all(rating_a > limit for limit in limits):
        limit = max(limits)
        largest = max((r for r in ratings if r <= limit), default=None)
        trail.append(f"{num(rating_a)} A > {calc(limit)} A")
        fix = f"use {num(largest)} A or less" if largest is not None else f"use a device of {calc(limit)} A or less"
        return [finding(Status.FAIL, f"{num(rating_a)} A {kind} exceeds the {calc(limit)} A maximum (no rounding up); "
                        f"{fix}.", limit=limit, provided=rating_a, trail=tuple(trail), assumptions=all_assumptions)]
    unknown = "device type (time-delay fuse, non-time-delay fuse or inverse-time breaker)" if len(columns) > 1 \
        else "phase"
    trail.append(f"{num(rating_a)} A is within some readings ({calc(min(limits))}–{calc(max(limits))} A) but not all")
    return [finding(Status.NEEDS_INFO, f"{num(rating_a)} A passes or fails depending on the {unknown}, "
                    f"which the schedule does not state.", provided=rating_a, trail=tuple(trail),
                    assumptions=all_assumptions)]


def check_ocpd_standard_rating(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Flag a device rating that is not one of the standard ratings (a typo or a special device)."""
    spec = ruleset.check(STANDARD_CHECK_ID)
    ocpd = motor.record.get("ocpd")
    table = ruleset.table(spec.params["standard_ratings_table"])

    def finding(status, message, **kw):
        return Finding(STANDARD_CHECK_ID, spec.rule, status, message, unit="A", fields=("ocpd",),
                       citation=spec.citation, **kw)

    if ocpd is None:  # nothing to compare; branch-ocpd already asks for the device
        return []
    rating_a = ocpd["rating_a"]
    if rating_a in (table.values or ()):
        return [finding(Status.PASS, f"{num(rating_a)} A is a standard rating ({table.citation}).", provided=rating_a)]
    return [finding(Status.NEEDS_INFO, f"{num(rating_a)} A is not a standard rating in {table.citation}; confirm the "
                    f"device (typing error, adjustable trip or special fuse?).", provided=rating_a,
                    trail=(f"{num(rating_a)} A not in {table.citation}",))]
