"""Branch-circuit short-circuit and ground-fault device for a single motor.

The device rating must not exceed the maximum-percentage table's value (by
motor type, starting method where the table has such rows, and device type)
times the full-load current. What happens above that value is data
(``[checks.branch-ocpd.params]``):

* ``rounding = "not-above"`` (the CEC, and the default): the computed value is
  the ceiling; the largest standard rating at or below it is the most that
  passes (a ``minimum_rating_a`` may be permitted for small motors).
* ``rounding = "next-higher"`` (NEC 430.52(C)(1)(a)): where the computed value
  is not a standard rating, the next higher standard rating is permitted.
* ``will_not_start``: higher ceilings the code allows only where the motor will
  not start on the table value (NEC 430.52(C)(1)(b) and (C)(3)). A device
  between the permitted value and that ceiling is needs-info: the submission
  must justify it. Above the ceiling it fails.

Instantaneous-trip breakers are checked when the table has a column for them
(the schedule's value is then read as the trip setting); otherwise the
finding names the rule that governs them. Where the ruleset has a
small-conductor limit table (NEC 240.4(D)), the finding states that motor
branch circuits are exempt from it (240.4(G)) when the device exceeds it.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, num, size_label
from checker.rules.current import CurrentBasis, current_basis
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
_ITB = "instantaneous-trip-breaker"
# What a reviewer would have to ask to choose between two table rows.
_ROW_QUESTIONS = {"single-phase": "phase",
                  "design-b-energy-efficient": "motor design (Design B energy-efficient or premium efficiency, or not)"}


@dataclass(frozen=True, slots=True)
class Candidate:
    """One reading of the schedule (table row + device column) and what it permits.

    ``limit_a`` is percent x current; ``permitted_a`` what passes without
    justification (after the ruleset's rounding and minimum); ``ceiling_a``
    the most permitted where the motor will not start (None if the code has
    no such relief for this device).
    """

    row: str
    column: str
    percent: float
    limit_a: float
    permitted_a: float = 0.0
    permitted_note: str = ""
    ceiling_a: float | None = None
    ceiling_percent: float | None = None
    ceiling_rule: str | None = None
    row_label: str = ""  # how the trail names the row(s): rows with identical numbers are shown once

    def label(self) -> str:
        return (self.row_label or self.row).replace("-", " ")

    def verdict(self, rating_a: float) -> str:
        """'pass', 'justify' (only if the motor will not start) or 'fail'."""
        if rating_a <= self.permitted_a + 1e-9:
            return "pass"
        if self.ceiling_a is not None and rating_a <= self.ceiling_a + 1e-9:
            return "justify"
        return "fail"


@dataclass(frozen=True, slots=True)
class BranchLimits:
    """Everything the branch-device check works out before it looks at the schedule's device.

    Public so that feeder checks can take "the largest branch device permitted"
    (``max(c.permitted_a for c in candidates)``) from the same arithmetic.
    """

    basis: CurrentBasis
    candidates: tuple[Candidate, ...]
    trail: tuple[str, ...]
    assumptions: tuple[str, ...]
    problem: str | None = None


def device_columns(device: str | None) -> tuple[tuple[str, ...], tuple[str, ...]]:
    """Table columns the written device could be, and the assumption that implies."""
    if device in _ALL_COLUMNS or device == _ITB:
        return (device,), ()
    if device == "breaker":
        return ("inverse-time-breaker",), ("Breaker type not stated: reviewed as an inverse-time breaker.",)
    if device == "fuse":
        return _FUSE_COLUMNS, ()
    return _ALL_COLUMNS, ()


def standard_ratings(ruleset: Ruleset, params: dict, column: str) -> tuple[float, ...]:
    """Standard ratings for a device column: the main list, plus the additional fuse ratings for fuses."""
    ratings = set(ruleset.table(params["standard_ratings_table"]).values or ())
    extra = params.get("fuse_additional_ratings_table")
    if extra and column in _FUSE_COLUMNS + ("fuse",):
        ratings |= set(ruleset.table(extra).values or ())
    return tuple(sorted(ratings))


def next_higher_standard(value_a: float, ratings: tuple[float, ...]) -> float | None:
    """``value_a`` itself when it is a standard rating, else the next higher one (None above the list)."""
    return min((r for r in ratings if r >= value_a - 1e-9), default=None)


def amps(value_a: float) -> str:
    """A rating as text: whole amperes without decimals (70 -> '70'), computed values with them."""
    return num(value_a) if abs(value_a - round(value_a)) < 1e-9 else calc(value_a)


def largest_not_above(value_a: float, ratings: tuple[float, ...]) -> float | None:
    return max((r for r in ratings if r <= value_a + 1e-9), default=None)


def table_rows(record: dict, current_a: float, params: dict, options: ReviewOptions):
    """Rows of the maximum-percentage table the motor could fall in.

    Returns (rows, assumptions, problem). Several rows mean the schedule does
    not say enough to choose; the caller passes only if every reading passes.
    Tables with starting-method rows (``starting_rows``) and tables by motor
    kind only (``type_rows``) are both handled.
    """
    if "starting_rows" not in params:
        return _type_rows(record, params, options)
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


def _type_rows(record: dict, params: dict, options: ReviewOptions):
    """Rows by motor kind only (no starting-method rows), e.g. NEC Table 430.52(C)(1)."""
    rows = params["type_rows"]
    starting = record.get("starting")
    if starting in params.get("starting_without_row", ()):
        return (), (), (f"{starting} starting: the device limit comes from the controller or drive marking and "
                        f"instructions, not the maximum-percentage table; the schedule must state it")
    if record.get("current_type") == "dc" or record.get("motor_type") == "dc":
        return tuple(rows["dc"]), (), None
    assumptions: list[str] = []
    family = record.get("motor_type")
    if family is None:
        if options.strict and record.get("phase") != 1:
            return (), (), "motor type is not stated (strict review assumes nothing)"
        family = "squirrel-cage"
        if record.get("phase") != 1:
            assumptions.append("Motor type not stated: reviewed as a squirrel-cage induction motor.")
    phase = record.get("phase")
    if phase == 1:
        return tuple(rows["single-phase"]), tuple(assumptions), None
    polyphase = tuple(rows[family])
    if phase is None:
        return tuple(rows["single-phase"]) + polyphase, tuple(assumptions), None
    return polyphase, tuple(assumptions), None


def will_not_start(params: dict, row: str, column: str, current_a: float,
                   rating_a: float | None) -> tuple[float, str] | None:
    """(percent, rule) of the first ``will_not_start`` entry matching this reading, or None."""
    for entry in params.get("will_not_start", ()):
        if entry["column"] != column or entry.get("row", row) != row:
            continue
        if "max_current_a" in entry and current_a > entry["max_current_a"]:
            continue
        if "min_rating_a" in entry and (rating_a is None or rating_a < entry["min_rating_a"]):
            continue
        return entry["percent"], entry.get("rule", params.get("will_not_start_rule", ""))
    return None


def _candidate(row: str, column: str, percent: float, current_a: float, params: dict, ruleset: Ruleset,
               rating_a: float | None) -> Candidate:
    limit_a = current_a * percent / 100
    minimum_a = params.get("minimum_rating_a", 0)
    permitted, note = max(limit_a, minimum_a), ""
    if limit_a < minimum_a:
        note = f" (below {num(minimum_a)} A: a {num(minimum_a)} A device is permitted)"
    elif params.get("rounding", "not-above") == "next-higher" and column != _ITB:
        higher = next_higher_standard(limit_a, standard_ratings(ruleset, params, column))
        if higher is not None and higher > limit_a + 1e-9:
            permitted = higher
            note = f"; not a standard rating, so the next higher standard rating {num(higher)} A is permitted " \
                   f"({params.get('rounding_rule', 'rounding rule')})"
    relief = will_not_start(params, row, column, current_a, rating_a)
    ceiling_a = ceiling_percent = rule = None
    if relief is not None:
        ceiling_percent, rule = relief
        ceiling_a = current_a * ceiling_percent / 100
    return Candidate(row, column, percent, limit_a, permitted, note, ceiling_a, ceiling_percent, rule)


def branch_limits(record: dict, ruleset: Ruleset, options: ReviewOptions) -> BranchLimits:
    """The branch device limits for every reading of the schedule (see :class:`BranchLimits`)."""
    params = ruleset.check(CHECK_ID).params
    basis = current_basis(record, ruleset, "ocpd")
    if basis.current_a is None:
        return BranchLimits(basis, (), (), (), basis.problem)
    ocpd = record.get("ocpd")
    device = ocpd.get("device") if ocpd else None
    rating_a = ocpd.get("rating_a") if ocpd else None
    rows, assumptions, problem = table_rows(record, basis.current_a, params, options)
    if problem:
        return BranchLimits(basis, (), basis.trail, basis.assumptions + assumptions, problem)
    columns, device_assumptions = device_columns(device)
    table = ruleset.table(params["max_percent_table"])
    candidates: list[Candidate] = []
    for row in rows:
        for column in columns:
            percent = table.get(row, column)
            if percent is None:
                continue
            new = _candidate(row, column, percent, basis.current_a, params, ruleset, rating_a)
            same = next((i for i, c in enumerate(candidates) if (c.column, c.percent, c.ceiling_percent)
                         == (new.column, new.percent, new.ceiling_percent)), None)
            if same is None:
                candidates.append(new)
            else:  # another row with the same numbers: one reading, named by both rows
                old = candidates[same]
                candidates[same] = replace(old, row_label=f"{old.row_label or old.row} or {row}")
    trail = list(basis.trail)
    for c in candidates:
        line = (f"{table.citation}, {c.label()} row{'s' if c.row_label else ''}, {DEVICE_NAMES[c.column]}: "
                f"{num(basis.current_a)} A × {num(c.percent)} % = {calc(c.limit_a)} A{c.permitted_note}")
        if params.get("rounding", "not-above") == "not-above":
            largest = largest_not_above(max(c.limit_a, params.get("minimum_rating_a", 0)),
                                        standard_ratings(ruleset, params, c.column))
            if largest is not None:
                line += f"; largest standard rating not above it: {num(largest)} A"
        if c.ceiling_a is not None:
            line += (f"; where the motor will not start, up to {num(c.ceiling_percent)} % = {calc(c.ceiling_a)} A "
                     f"({c.ceiling_rule})")
        trail.append(line)
    if not candidates:
        problem = f"{table.citation} gives no percentage for this motor and device"
    return BranchLimits(basis, tuple(candidates), tuple(trail), basis.assumptions + assumptions + device_assumptions,
                        problem)


def small_conductor_note(record: dict, params: dict, ruleset: Ruleset, rating_a: float) -> str | None:
    """Why a device above the small-conductor limit is still acceptable on a motor branch circuit."""
    name = params.get("small_conductor_table")
    conductor = record.get("conductor")
    if not name or conductor is None:
        return None
    table = ruleset.table(name)
    limit = table.get(conductor["size"], conductor.get("material", "cu"))
    if limit is None or rating_a <= limit:
        return None
    material = "Cu" if conductor.get("material", "cu") == "cu" else "Al"
    return (f"{params.get('small_conductor_rule', table.citation)} would limit {size_label(conductor['size'])} "
            f"{material} to {num(limit)} A, but {params.get('motor_circuit_rule', 'the motor-circuit rule')} sends "
            f"motor branch-circuit conductors to Article 430: the {num(rating_a)} A device is judged by the motor "
            f"table, and the motor overload device protects the conductors against overload")


def check_branch_ocpd(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """The branch device rating against the table percentage, the rounding rule and the will-not-start relief."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    ocpd = record.get("ocpd")
    device = ocpd.get("device") if ocpd else None
    table = ruleset.table(params["max_percent_table"])

    def finding(status, message, fields_extra=(), **kw):
        return Finding(CHECK_ID, spec.rule, status, message, unit="A",
                       fields=("ocpd", "starting", "motor_type") + fields_extra, citation=spec.citation, **kw)

    if device == _ITB and _ITB not in (table.columns or ()):
        basis = current_basis(record, ruleset, "ocpd")
        if basis.current_a is None:
            return [finding(Status.NEEDS_INFO, f"Maximum device rating cannot be computed: {basis.problem}.",
                            basis.fields)]
        other = params.get("instantaneous_trip_rule")
        where = f"Rule {other}" if other else "a rule outside the maximum-percentage table"
        return [finding(Status.NEEDS_INFO, f"Instantaneous-trip breaker: its setting is limited by {where}, which this "
                        f"review does not check; show the trip setting and the combination controller listing.",
                        basis.fields)]
    limits = branch_limits(record, ruleset, options)
    fields_extra = limits.basis.fields
    if limits.basis.current_a is None:
        return [finding(Status.NEEDS_INFO, f"Maximum device rating cannot be computed: {limits.problem}.",
                        fields_extra)]
    if limits.problem:
        return [finding(Status.NEEDS_INFO, f"Maximum device rating cannot be computed: {limits.problem}.",
                        fields_extra, trail=limits.trail if limits.candidates else (),
                        assumptions=limits.assumptions)]
    candidates = limits.candidates
    trail = list(limits.trail)
    assumptions = list(limits.assumptions)
    if device == _ITB:
        rule = params.get("instantaneous_trip_rule", "")
        assumptions.append(f"The value on the schedule is read as the instantaneous-trip setting; confirm the setting "
                           f"and that the breaker is adjustable and part of a listed combination motor controller "
                           f"({rule}).")
    permitted = [c.permitted_a for c in candidates]
    if ocpd is None:
        return [finding(Status.NEEDS_INFO, f"No overcurrent device rating could be read from the schedule; the most "
                        f"permitted is {calc(min(permitted))} A.", fields_extra, limit=min(permitted),
                        trail=tuple(trail), assumptions=tuple(assumptions))]
    rating_a = ocpd["rating_a"]
    kind = DEVICE_NAMES.get(device, "device")
    verdicts = [c.verdict(rating_a) for c in candidates]
    note = small_conductor_note(record, params, ruleset, rating_a)
    if note:
        trail.append(note)
    suffix = f" ({note})." if note else ""
    if all(v == "pass" for v in verdicts):
        limit = min(permitted)
        shown = amps(limit) if params.get("rounding") == "next-higher" else calc(limit)
        trail.append(f"{num(rating_a)} A ≤ {shown} A")
        message = f"{num(rating_a)} A {kind} is within the {shown} A maximum."
        if any(c.permitted_a > c.limit_a + 1e-9 and c.permitted_note.startswith(";") for c in candidates):
            message = (f"{num(rating_a)} A {kind} is within the {shown} A permitted (the next higher standard "
                       f"rating above the computed value).")
        if len(candidates) > 1:
            message += " It passes whichever device type or row applies."
        if suffix:
            message = message[:-1] + suffix
        return [finding(Status.PASS, message, fields_extra, limit=limit, provided=rating_a, trail=tuple(trail),
                        assumptions=tuple(assumptions))]
    if all(v == "fail" for v in verdicts):
        return [_fail(finding, fields_extra, candidates, rating_a, kind, ruleset, params, trail, assumptions)]
    if all(v == "justify" for v in verdicts):
        limit = max(permitted)
        ceiling = min(c.ceiling_a for c in candidates)
        rules = sorted({c.ceiling_rule for c in candidates if c.ceiling_rule})
        trail.append(f"{amps(limit)} A < {num(rating_a)} A ≤ {calc(ceiling)} A")
        message = (f"{num(rating_a)} A {kind} is above the {amps(limit)} A the table permits but within the "
                   f"{calc(ceiling)} A allowed where the motor will not start on the lower rating "
                   f"({', '.join(rules)}); the submission must justify it (starting current, trip curve or a failed "
                   f"start).")
        return [finding(Status.NEEDS_INFO, message, fields_extra, limit=limit, provided=rating_a, trail=tuple(trail),
                        assumptions=tuple(assumptions))]
    trail.append(f"{num(rating_a)} A: " + ", ".join(
        f"{c.label()} / {DEVICE_NAMES[c.column]} {v}" for c, v in zip(candidates, verdicts)))
    outcomes = "passes or fails" if "pass" in verdicts and "fail" in verdicts else (
        "passes or needs the will-not-start justification" if "pass" in verdicts
        else "needs the will-not-start justification or fails")
    return [finding(Status.NEEDS_INFO, f"{num(rating_a)} A {outcomes} depending on the "
                    f"{_unknown(candidates, verdicts)}, which the schedule does not state.", fields_extra,
                    provided=rating_a, trail=tuple(trail), assumptions=tuple(assumptions))]


def _unknown(candidates: tuple[Candidate, ...], verdicts: list[str]) -> str:
    """Name what the schedule would have to say to pick one reading (only what changes the verdict)."""
    by_reading = {(c.row, c.column): v for c, v in zip(candidates, verdicts)}
    rows = sorted({c.row for c in candidates})
    columns = sorted({c.column for c in candidates})
    parts = []
    if any(len({by_reading[(r, col)] for col in columns if (r, col) in by_reading}) > 1 for r in rows):
        parts.append("device type (time-delay fuse, non-time-delay fuse or inverse-time breaker)")
    if any(len({by_reading[(r, col)] for r in rows if (r, col) in by_reading}) > 1 for col in columns):
        asked = sorted({_ROW_QUESTIONS.get(r) for r in rows} - {None})
        parts.append(" and ".join(asked) if asked else "motor type")
    return " and ".join(parts) or "device type and motor type"


def _fail(finding, fields_extra, candidates, rating_a, kind, ruleset, params, trail, assumptions) -> Finding:
    permitted = max(c.permitted_a for c in candidates)
    ceilings = [c.ceiling_a for c in candidates if c.ceiling_a is not None]
    column = candidates[0].column if len({c.column for c in candidates}) == 1 else "fuse"
    if not ceilings:
        largest = largest_not_above(permitted, standard_ratings(ruleset, params, column))
        trail.append(f"{num(rating_a)} A > {calc(permitted)} A")
        fix = f"use {num(largest)} A or less" if largest is not None else f"use a device of {calc(permitted)} A or less"
        how = " (no rounding up)" if params.get("rounding", "not-above") == "not-above" else ""
        return finding(Status.FAIL, f"{num(rating_a)} A {kind} exceeds the {calc(permitted)} A maximum{how}; {fix}.",
                       fields_extra, limit=permitted, provided=rating_a, trail=tuple(trail),
                       assumptions=tuple(assumptions))
    ceiling = max(ceilings)
    rules = sorted({c.ceiling_rule for c in candidates if c.ceiling_rule})
    trail.append(f"{num(rating_a)} A > {calc(ceiling)} A")
    return finding(Status.FAIL, f"{num(rating_a)} A {kind} exceeds both the {amps(permitted)} A the table permits and "
                   f"the {calc(ceiling)} A allowed even where the motor will not start ({', '.join(rules)}); use "
                   f"{num(permitted)} A or less, or justify up to {calc(ceiling)} A.", fields_extra, limit=ceiling,
                   provided=rating_a, trail=tuple(trail), assumptions=tuple(assumptions))


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
    device = ocpd.get("device") or ""
    ratings = standard_ratings(ruleset, spec.params, device)
    if rating_a in ratings:
        extra = "" if rating_a in (table.values or ()) else " (an additional fuse rating)"
        return [finding(Status.PASS, f"{num(rating_a)} A is a standard rating ({table.citation}){extra}.",
                        provided=rating_a)]
    return [finding(Status.NEEDS_INFO, f"{num(rating_a)} A is not a standard rating in {table.citation}; confirm the "
                    f"device (typing error, adjustable trip or special fuse?).", provided=rating_a,
                    trail=(f"{num(rating_a)} A not in {table.citation}",))]
