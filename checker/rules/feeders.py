"""Several motors on one feeder: feeder conductor ampacity and feeder overcurrent device.

Group checks look at every motor that names the same source (``FED FROM``,
MCC or panel column, or the section heading above the rows) together with
the feeder the schedule lists for that source, if any. Each check is a pure
function ``check(motors, feeder, ruleset, options) -> list[Finding]``.

* ``feeder-ampacity`` (CEC 28-108, NEC 430.24): the feeder conductors carry at
  least the configured percentage (125 %) of the full-load current of the
  largest continuous-duty motor, plus the full-load currents of the other
  continuous-duty motors, plus each non-continuous-duty motor's current times
  its duty-cycle table percentage.
* ``feeder-ocpd`` (CEC 28-204, NEC 430.62(A)): the feeder device does not
  exceed the largest branch-device value the maximum-percentage table allows
  for any motor of the group (for the feeder's device type), plus the
  full-load currents of all the other motors. The branch value is either the
  calculated value (CEC) or that value raised to the next standard rating
  (NEC); the feeder result itself is never rounded up.

When a group has no feeder on the schedule, nothing is checked: the computed
minimum ampacity and maximum device go into the group summary
(:func:`group_summary`) for the reviewer's information instead of a
needs-info finding per group: a motor schedule is a complete submission
without a feeder schedule, and a needs-info per group would make every such
review needs-info for something it was never asked to show. A listed feeder
whose conductor or device cannot be read does give a needs-info finding.

Every percentage, table and rule number comes from the ruleset:
``[checks.feeder-ampacity]`` and ``[checks.feeder-ocpd]``, and for each motor's
branch value the ``[checks.branch-ocpd]`` arithmetic itself (so a feeder never
disagrees with the branch check about what a motor is permitted).
"""
from __future__ import annotations

from collections.abc import Callable, Mapping
from contextvars import ContextVar
from dataclasses import dataclass
from itertools import repeat
from typing import NamedTuple

from checker.ingest.feeders import FeederRow, group_key
from checker.ingest.normalize import FrozenValues
from checker.model import FeederReview, Finding, Motor, SourceRef, Status
from checker.rules.common import ReviewOptions, calc, conductor_label, num
from checker.rules.conductors import table_ampacity
from checker.rules.current import CurrentBasis, current_basis
from checker.rules.memo import ReadLog
from checker.rules.overcurrent import (
    DEVICE_NAMES,
    BranchLimits,
    branch_limits,
    device_columns,
    largest_not_above,
    standard_ratings,
)
from checker.rules.ruleset import Ruleset

AMPACITY_CHECK = "feeder-ampacity"
OCPD_CHECK = "feeder-ocpd"
BRANCH_CHECK = "branch-ocpd"  # its params choose the maximum-percentage table row of a motor

GroupCheckFn = Callable[[list[Motor], "dict | None", Ruleset, ReviewOptions], list[Finding]]

# Duty-cycle table columns: 30- and 60-minute ratings share one column.
_DUTY_COLUMNS = {"5-min": "5-min", "15-min": "15-min", "30-min": "30/60-min", "60-min": "30/60-min",
                 "continuous": "continuous"}
_OTHER_LOADS = ("Only the motors on this schedule that name this source are counted; any other load on the same "
                "feeder must be added to these figures.")
_MIXED_SUPPLY = ("The group mixes motors of different voltage or phase count; their currents are added as though all "
                 "loaded one phase conductor, which a per-phase load balance may lower.")


_LISTED_TERMS = 12  # a trail line names this many motors, then sums the rest


def _listing(items: list[tuple[str, float]]) -> str:
    """'36 A (P-1) + 40 A (P-2)', the tail summed once a group is long."""
    shown = " + ".join(f"{num(current)} A ({tag})" for tag, current in items[:_LISTED_TERMS])
    rest = items[_LISTED_TERMS:]
    if rest:
        shown += f" + {calc(sum(c for _, c in rest))} A ({len(rest)} more motors)"
    return shown


def _group_assumptions(motors: list[Motor]) -> tuple[str, ...]:
    """Assumptions that hold for the whole group, whichever check runs."""
    supplies = {(m.record.get("voltage_v"), m.record.get("phase")) for m in motors}
    supplies.discard((None, None))
    return (_OTHER_LOADS, _MIXED_SUPPLY) if len(supplies) > 1 else (_OTHER_LOADS,)


# --------------------------------------------------------------------------- motor currents

def motor_current(record: dict, ruleset: Ruleset, purpose: str) -> CurrentBasis:
    """The full-load current a feeder calculation uses for one motor.

    ``purpose`` ('conductor', 'duty_cycle' or 'ocpd', from the check's
    params) lets the ruleset's ``[checks.motor-current.params] basis`` choose
    between nameplate and table currents (checker/rules/current.py).
    """
    return current_basis(record, ruleset, purpose)


def _basis_word(basis: CurrentBasis) -> str:
    return {"nameplate": "nameplate FLA", "table": "table FLC"}.get(basis.basis, basis.basis)


# --------------------------------------------------------------------------- minimum ampacity

@dataclass(frozen=True, slots=True)
class GroupAmpacity:
    """Minimum feeder ampacity for a group of motors.

    ``minimum_a`` is None when some motor's contribution is unknown; then
    ``partial_a`` (the motors that could be counted) is a lower bound, because
    every further motor only adds to the sum.
    """

    minimum_a: float | None
    partial_a: float
    trail: tuple[str, ...]
    assumptions: tuple[str, ...]
    missing: tuple[str, ...]


def _duty_percent(record: dict, params: dict, ruleset: Ruleset, options: ReviewOptions):
    """(percent or None for continuous duty, assumption, problem) of one motor."""
    duty = record.get("duty")
    if duty is None:
        if options.strict:
            return None, None, "duty not stated (strict review assumes nothing)"
        return None, "duty not stated: continuous duty assumed", None
    if duty["service"] == "continuous":
        return None, None, None
    table = ruleset.table(params["duty_table"])
    rating = duty.get("rating")
    if rating is None:
        return None, None, f"{duty['service']} duty without its time rating, which {table.citation} needs"
    percent = table.get(duty["service"], _DUTY_COLUMNS[rating])
    if percent is None:
        return None, None, f"{table.citation} gives no percentage for {duty['service']} duty, {rating} rated"
    return percent, None, None


def minimum_ampacity(motors: list[Motor], ruleset: Ruleset, options: ReviewOptions) -> GroupAmpacity:
    """Minimum ampacity of conductors supplying several motors (CEC 28-108 / NEC 430.24 method).

    Parameters come from ``[checks.feeder-ampacity.params]``: ``largest_percent``
    (125 % in both codes), ``duty_table`` (CEC Table 27 / NEC Table 430.22(E))
    and ``current_purpose``.
    """
    params = ruleset.check(AMPACITY_CHECK).params
    purpose = params.get("current_purpose", "conductor")
    duty_purpose = params.get("duty_cycle_purpose", purpose)
    continuous: list[tuple[str, float, str]] = []
    other: list[tuple[str, float, float, str]] = []
    trail: list[str] = []
    assumptions: list[str] = []
    missing: list[str] = []
    duty_assumed: list[str] = []
    memo = _memo(ruleset, options)
    basis_of = memo.basis if memo is not None else (lambda record, why: motor_current(record, ruleset, why))
    for motor in motors:
        percent, assumed, problem = _duty_percent(motor.record, params, ruleset, options)
        if problem:
            missing.append(f"{motor.tag}: {problem}")
            continue
        # Duty-cycle percentages may apply to another current (NEC: the nameplate rating).
        basis = basis_of(motor.record, purpose if percent is None else duty_purpose)
        if basis.current_a is None:
            missing.append(f"{motor.tag}: {basis.problem}")
            continue
        if basis.basis == "table" and motor.record.get("fla_a") is None:
            assumptions.append(f"{motor.tag}: no nameplate FLA; {num(basis.current_a)} A table FLC used.")
        if assumed:
            duty_assumed.append(motor.tag)
        if percent is None:
            continuous.append((motor.tag, basis.current_a, _basis_word(basis)))
        else:
            other.append((motor.tag, basis.current_a, percent, _basis_word(basis)))
    if duty_assumed:
        assumptions.append(f"Duty not stated for {', '.join(duty_assumed)}: continuous duty assumed.")
    parts: list[float] = []
    if continuous:
        largest = max(continuous, key=lambda item: item[1])  # first of equal currents counts as largest
        pct = params["largest_percent"]
        value = largest[1] * pct / 100
        parts.append(value)
        trail.append(f"Largest continuous-duty motor {largest[0]}: {num(largest[1])} A ({largest[2]}) × {num(pct)} % "
                     f"= {calc(value)} A")
        rest = [item for item in continuous if item is not largest]
        if rest:
            subtotal = sum(item[1] for item in rest)
            parts.append(subtotal)
            listing = _listing([(i[0], i[1]) for i in rest])
            trail.append(f"Other continuous-duty motors at 100 %: {listing} = {calc(subtotal)} A")
    if other:
        table = ruleset.table(params["duty_table"])
        for tag, current_a, pct, word in other:
            value = current_a * pct / 100
            parts.append(value)
            trail.append(f"{tag}, non-continuous duty ({table.citation}): {num(current_a)} A ({word}) × {num(pct)} % "
                         f"= {calc(value)} A")
    partial = sum(parts)
    if parts:
        trail.append(f"Sum: {' + '.join(calc(p) for p in parts)} = {calc(partial)} A")
    complete = not missing and bool(parts)
    return GroupAmpacity(partial if complete else None, partial, tuple(trail), tuple(assumptions), tuple(missing))


def feeder_ampacity_a(conductor: dict, ruleset: Ruleset, column: str | None = None) -> tuple[float | None, str]:
    """Allowable ampacity of the feeder's phase conductors (all parallel sets) and a trail line.

    ``column`` defaults to ``[checks.feeder-ampacity.params] ampacity_column``.
    """
    params = ruleset.check(AMPACITY_CHECK).params
    return table_ampacity(conductor, ruleset, column or params["ampacity_column"], params)


def termination_columns(conductor: dict, feeder: dict, needed_a: float,
                        ruleset: Ruleset) -> list[tuple[str, str | None]]:
    """(ampacity column, assumption) readings, the favourable one first.

    Where the ruleset has a lower termination column for small circuits (NEC
    110.14(C)(1)(a): ``low_current_column`` up to ``low_current_max_a`` or
    conductors up to ``low_current_max_size``) the schedule rarely says whether
    the equipment is listed for the higher column, so both readings are kept.
    """
    params = ruleset.check(AMPACITY_CHECK).params
    column = params["ampacity_column"]
    small = params.get("low_current_column")
    if not small:
        return [(column, None)]
    material = conductor.get("material", "cu")
    table = ruleset.table(params["copper_table"] if material == "cu" else params["aluminum_table"])
    keys = list(table.rows)
    limit_size = params["low_current_max_size"]
    size_small = (conductor["size"] in keys and limit_size in keys
                  and keys.index(conductor["size"]) <= keys.index(limit_size))
    rating = (feeder.get("ocpd") or {}).get("rating_a")
    circuit_small = (rating if rating is not None else needed_a) <= params["low_current_max_a"]
    if not (size_small or circuit_small):
        return [(column, None)]
    note = (f"Feeder terminations taken as rated for the {column.replace('C', ' °C')} column; otherwise "
            f"{params['low_current_rule']} limits this feeder to the {small.replace('C', ' °C')} column.")
    return [(column, note), (small, None)]


def check_feeder_ampacity(motors: list[Motor], feeder: dict | None, ruleset: Ruleset,
                          options: ReviewOptions) -> list[Finding]:
    """The listed feeder's conductors carry the group's minimum ampacity.

    No feeder listed: no finding (the computed minimum is in the group summary).
    Some motor's current unknown: fail only when the conductor is already
    below the motors that could be counted, else needs-info.
    """
    if feeder is None or not motors:
        return []
    spec = ruleset.check(AMPACITY_CHECK)
    group = minimum_ampacity(motors, ruleset, options)
    assumptions = group.assumptions + _group_assumptions(motors)

    def finding(status, message, **kw):
        return Finding(AMPACITY_CHECK, spec.rule, status, message, unit="A", fields=("conductor",),
                       citation=spec.citation, assumptions=assumptions, **kw)

    name = feeder.get("name", "the feeder")
    trail = list(group.trail)
    if group.missing:
        trail.append("Not counted: " + "; ".join(group.missing))
    needed = group.minimum_a if group.minimum_a is not None else group.partial_a
    conductor = feeder.get("conductor")
    if conductor is None:
        what = f"at least {calc(needed)} A" if group.minimum_a is not None else "a minimum that cannot be computed"
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: no conductor could be read; it must carry {what}.",
                        limit=group.minimum_a, trail=tuple(trail))]
    if not conductor.get("material_stated", True):
        assumptions = assumptions + ("Feeder conductor material not stated: copper assumed.",)
    readings = [(column, note, *feeder_ampacity_a(conductor, ruleset, column))
                for column, note in termination_columns(conductor, feeder, needed, ruleset)]
    _, first_note, ampacity_a, line = readings[0]
    if ampacity_a is None:
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: {line}; confirm the conductor.", limit=group.minimum_a,
                        trail=tuple(trail))]
    trail.append(line)
    label = conductor_label(conductor)
    if group.minimum_a is None:
        if group.partial_a > 0 and ampacity_a < group.partial_a:
            trail.append(f"{num(ampacity_a)} A < {calc(group.partial_a)} A already needed by the motors counted")
            return [finding(Status.FAIL, f"Feeder {name}: {label} ({num(ampacity_a)} A) is below the "
                            f"{calc(group.partial_a)} A needed by the motors that could be counted, before the "
                            f"others are added; increase the conductor size.", limit=group.partial_a,
                            provided=ampacity_a, trail=tuple(trail))]
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: minimum ampacity cannot be completed ("
                        f"{len(group.missing)} motor(s) not counted); the motors counted need "
                        f"{calc(group.partial_a)} A "
                        f"and {label} carries {num(ampacity_a)} A.", provided=ampacity_a, trail=tuple(trail))]
    passed = ampacity_a >= group.minimum_a
    trail.append(f"{num(ampacity_a)} A {'≥' if passed else '<'} {calc(group.minimum_a)} A")
    if not passed:
        return [finding(Status.FAIL, f"Feeder {name}: {label} is rated {num(ampacity_a)} A, below the "
                        f"{calc(group.minimum_a)} A required for its motors; increase the conductor size.",
                        limit=group.minimum_a, provided=ampacity_a, trail=tuple(trail))]
    message = f"Feeder {name}: {label} ({num(ampacity_a)} A) carries the {calc(group.minimum_a)} A required."
    failing = [r for r in readings[1:] if r[2] is None or r[2] < group.minimum_a]
    if not failing:
        return [finding(Status.PASS, message, limit=group.minimum_a, provided=ampacity_a, trail=tuple(trail))]
    for _, _, other_a, other_line in failing:
        trail.append(f"Otherwise: {other_line}" + (f" < {calc(group.minimum_a)} A" if other_a is not None else ""))
    assumptions = assumptions + (first_note,)
    if options.strict:
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: {label} passes only if its terminations are rated for "
                        f"the higher column, which the schedule does not state.", limit=group.minimum_a,
                        provided=ampacity_a, trail=tuple(trail))]
    return [finding(Status.PASS, message + " It depends on an assumption (see assumptions).", limit=group.minimum_a,
                    provided=ampacity_a, trail=tuple(trail))]


# --------------------------------------------------------------------------- maximum feeder device

@dataclass(frozen=True, slots=True)
class DeviceLimit:
    """Maximum feeder device for one device type (one column of the maximum-percentage table).

    ``limit_a`` is the largest branch value plus the other motors' currents,
    not rounded; None when some motor is unknown, and then ``partial_a`` is a
    lower bound (every further motor only raises the limit). ``standard_a`` is
    the largest standard rating not above the (partial) limit.
    """

    column: str
    limit_a: float | None
    partial_a: float | None
    standard_a: float | None
    reference: str | None
    trail: tuple[str, ...]
    missing: tuple[str, ...]


class BranchValue(NamedTuple):  # a tuple: made once per motor per device column
    """One motor's contribution to the feeder device limit under one device column.

    ``current_a`` None: the motor's current is unknown. ``value_a`` None (with
    a current): its branch value is unknown, but its current still counts
    among "the other motors".
    """

    current_a: float | None
    value_a: float | None
    line: str
    assumptions: tuple[str, ...]
    problem: str | None
    row: str = ""  # the table row the percentage came from; the trail lists a row's motors together


_ABSENT = object()
_MAX_BY_OBJECT = 4096  # value-object look-ups kept (each holds its values)


class _LimitsMemo:
    """``branch_limits`` (per device column) and ``current_basis`` (per purpose) for one review's
    ruleset and options, computed once per distinct reading.

    Both are pure functions of the record fields they read, so a record that agrees, value for value,
    on every field read so far takes the same path and gets the same (frozen) result; a facility
    schedule of 100 000 motors has a few dozen such readings. A call that looks at the whole record
    ends the memo (every later call is computed directly).
    """

    def __init__(self, ruleset: Ruleset, options: ReviewOptions) -> None:
        self.ruleset, self.options = ruleset, options
        self.fields: tuple = ()  # fields read so far, but "ocpd" (its value is set by the column)
        self.found: dict = {}
        self.parts: dict = {}    # (column, number of the reading, fla missing) -> _parts(...)
        self.direct = False
        self.frozen = FrozenValues()
        self.readings: dict[tuple, int] = {}  # frozen values of the fields read -> a number for them
        self.by_object: dict[tuple, tuple] = {}  # the values' ids -> (the values, their number)
        self.tails: dict[int, tuple] = {}  # id(record) -> (record, fields, number of its reading)

    def _key(self, record: dict, kind: object) -> tuple:
        # A motor is looked up once per candidate device column: its values are frozen and numbered once.
        known = self.tails.get(id(record))
        if known is None or known[0] is not record or known[1] is not self.fields:
            values = tuple(map(record.get, self.fields, repeat(_ABSENT)))
            identities = tuple(map(id, values))  # rows with the same cell texts share the value objects
            seen = self.by_object.get(identities)
            if seen is not None:
                number = seen[1]
            else:
                frozen = self.frozen
                number = self.readings.setdefault(tuple([frozen(value) for value in values]), len(self.readings))
                if len(self.by_object) < _MAX_BY_OBJECT:
                    self.by_object[identities] = (values, number)  # the values held: their ids stay theirs
            self.tails[id(record)] = (record, self.fields, number)
        else:
            number = known[2]
        return kind, number

    def parts_of(self, record: dict, column: str, fla_missing: bool) -> tuple:
        """``_parts`` of the record's branch limits under ``column``, worked out once per reading."""
        fields = self.fields
        try:
            key = None if self.direct else (*self._key(record, column), fla_missing)
            hit = None if key is None else self.parts.get(key)
        except TypeError:  # an unhashable value: work it out directly
            key = hit = None
        if hit is not None:
            return hit
        found = _parts(self(record, column), column, fla_missing)
        if key is not None and not self.direct and self.fields is fields:  # keyed by the fields still read
            self.parts[key] = found
        return found

    def __call__(self, motor_record: dict, column: str) -> BranchLimits:
        if self.direct:
            return branch_limits(_with_device(motor_record, column), self.ruleset, self.options)
        try:
            key = self._key(motor_record, column)
            hit = self.found.get(key)
        except TypeError:  # an unhashable value: compute it directly
            key = hit = None
        if hit is not None:
            return hit
        log = ReadLog(_with_device(motor_record, column))
        result = branch_limits(log, self.ruleset, self.options)
        self._remember(log, log.read - {"ocpd"}, motor_record, column, key, result)  # "ocpd" is the column's
        return result

    def basis(self, record: dict, purpose: str) -> CurrentBasis:
        """``current_basis`` of the record for ``purpose``, worked out once per reading."""
        if self.direct:
            return current_basis(record, self.ruleset, purpose)
        kind = ("basis", purpose)  # never equal to a column name
        try:
            key = self._key(record, kind)
            hit = self.found.get(key)
        except TypeError:
            key = hit = None
        if hit is not None:
            return hit
        log = ReadLog(record)
        result = current_basis(log, self.ruleset, purpose)
        self._remember(log, log.read, record, kind, key, result)
        return result

    def _remember(self, log: ReadLog, read: set, record: dict, kind: object, key: tuple | None,
                  result: object) -> None:
        """Keep ``result`` under the record's reading (the fields every look-up reads grow by ``read``)."""
        if log.whole or log.written:
            self.direct = True
        if self.direct or key is None:
            return
        if not read <= set(self.fields):
            self.fields = tuple(sorted(set(self.fields) | read, key=str))
            self.found.clear()
            self.readings.clear()
            self.by_object.clear()
            self.parts.clear()
            key = self._key(record, kind)
        self.found[key] = result


def _with_device(record: dict, column: str) -> dict:
    """The motor's record with a device of the feeder's type in place of its own (rating immaterial)."""
    return {**record, "ocpd": {"rating_a": 1.0, "device": column}}


# The memo of the review_feeders call in progress (None outside one: computed directly).
_LIMITS_MEMO: ContextVar[_LimitsMemo | None] = ContextVar("feeder_branch_limits", default=None)


def _memo(ruleset: Ruleset, options: ReviewOptions) -> _LimitsMemo | None:
    memo = _LIMITS_MEMO.get()
    if memo is None or memo.ruleset is not ruleset:
        return None
    return memo if memo.options is options or memo.options == options else None


def _parts(limits: BranchLimits, column: str, fla_missing: bool) -> tuple:
    """What ``branch_value`` says for these limits, but the motor's tag: (current, value, problem,
    assumptions, table-FLC note, row uncertain, arithmetic after the tag, table row)."""
    current_a = limits.basis.current_a
    if current_a is None:
        return None, None, limits.problem or limits.basis.problem, (), None, False, "", ""
    assumptions = tuple(a for a in limits.assumptions if a not in limits.basis.assumptions)
    flc_note = (f": no nameplate FLA; {num(current_a)} A table FLC used."
                if limits.basis.basis == "table" and fla_missing else None)
    readings = [c for c in limits.candidates if c.column == column]
    if limits.problem or not readings:
        return (current_a, None, limits.problem or f"no {DEVICE_NAMES[column]} percentage for it", assumptions,
                flc_note, False, "", "")
    best = min(readings, key=lambda c: c.permitted_a)  # rows the schedule cannot tell apart: the stricter
    uncertain = len({c.permitted_a for c in readings}) > 1
    # Short: a group lists one term per motor per device type (the motor's own finding has the long form).
    permitted = f" ({num(best.permitted_a)} A permitted)" if best.permitted_a > best.limit_a + 1e-9 else ""
    line = f" {num(current_a)} A × {num(best.percent)} % = {calc(best.limit_a)} A{permitted}"
    return current_a, best.permitted_a, None, assumptions, flc_note, uncertain, line, best.row.replace("-", " ")


def branch_value(motor: Motor, column: str, ruleset: Ruleset, options: ReviewOptions,
                 memo: _LimitsMemo | None) -> BranchValue:
    """The largest branch device the motor is permitted for a device of ``column``'s type.

    Uses the branch-ocpd arithmetic itself (checker/rules/overcurrent.py
    ``branch_limits``) with the feeder's device type in place of the motor's
    own: the same table row, percentage, small-motor minimum and rounding
    (CEC: the calculated value; NEC: raised to the next standard rating). ``memo``: the review's
    (``_memo``), or None to work it out directly.
    """
    if BRANCH_CHECK not in ruleset.checks:
        return BranchValue(None, None, "", (), f"the ruleset has no {BRANCH_CHECK} check to size branch devices")
    fla_missing = motor.record.get("fla_a") is None
    if memo is None:
        parts = _parts(branch_limits(_with_device(motor.record, column), ruleset, options), column, fla_missing)
    else:  # a few dozen distinct readings in a facility schedule: worked out once each
        parts = memo.parts_of(motor.record, column, fla_missing)
    current_a, value_a, problem, assumptions, flc_note, uncertain, line, row = parts
    if current_a is None:
        return BranchValue(None, None, "", (), problem)
    if flc_note is not None:
        assumptions += (f"{motor.tag}{flc_note}",)
    if value_a is None:
        return BranchValue(current_a, None, "", assumptions, problem)
    if uncertain:
        assumptions += (f"{motor.tag}: the table row is not certain; the lower branch value is used.",)
    return BranchValue(current_a, value_a, f"{motor.tag}{line}", assumptions, None, row)


def maximum_device(motors: list[Motor], device: str | None, ruleset: Ruleset,
                   options: ReviewOptions) -> tuple[list[DeviceLimit], tuple[str, ...]]:
    """Maximum feeder device per candidate device type, and the assumptions made.

    The percentage column is the feeder device's type, as the CEC worked
    example does (an unstated breaker is reviewed as inverse-time; an
    unstated fuse or device gives one limit per possible column). The result
    is rounded down to ``[checks.feeder-ocpd.params] standard_ratings_table``
    (plus ``fuse_additional_ratings_table`` for fuses), never up.
    """
    params = ruleset.check(OCPD_CHECK).params
    columns, device_assumptions = device_columns(device)
    assumptions = dict.fromkeys(device_assumptions)  # in order, each once (a group may hold thousands)
    limits = []
    memo = _memo(ruleset, options)
    for column in columns:
        ratings = standard_ratings(ruleset, params, column)
        known: list[tuple[Motor, BranchValue]] = []    # with a branch value
        counted: list[tuple[Motor, BranchValue]] = []  # with a current (a branch value or not)
        problems: list[str] = []
        by_row: dict[str, list[str]] = {}  # each row's motors in one line, rows in order of first use
        for motor in motors:  # one pass: a group may hold thousands of motors
            value = branch_value(motor, column, ruleset, options, memo)
            if value.problem:
                problems.append(f"{motor.tag}: {value.problem}")
            if value.assumptions:
                assumptions.update(dict.fromkeys(value.assumptions))
            if value.current_a is not None:
                counted.append((motor, value))
                if value.value_a is not None:
                    known.append((motor, value))
                    by_row.setdefault(value.row, []).append(value.line)
        missing = tuple(problems)
        table = ruleset.table(ruleset.check(BRANCH_CHECK).params["max_percent_table"]) \
            if BRANCH_CHECK in ruleset.checks else None
        trail = [f"Branch values, {DEVICE_NAMES[column]} column"
                 + (f" of {table.citation}:" if table is not None else ":")]
        trail.extend(f"{row.capitalize()} row: {'; '.join(lines)}" for row, lines in by_row.items())
        if not known:
            limits.append(DeviceLimit(column, None, None, None, None, tuple(trail), missing))
            continue
        reference, ref_value = max(known, key=lambda item: item[1].value_a)  # ties: the first counts once
        others = [(m, v.current_a) for m, v in counted if m is not reference]
        total = ref_value.value_a + sum(c for _, c in others)
        listing = _listing([(m.tag, c) for m, c in others])
        trail.append(f"Largest branch value: {reference.tag}, {calc(ref_value.value_a)} A"
                     + (f"; plus the other motors' full-load currents {listing}" if others else "")
                     + f" = {calc(total)} A")
        name = ruleset.table(params["standard_ratings_table"]).citation
        standard = largest_not_above(total, ratings)
        if ratings and total > max(ratings):
            standard = None  # the encoded list ends below the limit: its last rating is not the answer
            trail.append(f"{calc(total)} A is above the largest rating encoded from {name} ({num(max(ratings))} A)")
        elif standard is not None:
            trail.append(f"Largest standard rating not above {calc(total)} A: {num(standard)} A ({name}; "
                         f"never rounded up)")
        limits.append(DeviceLimit(column, None if missing else total, total, standard, reference.tag,
                                  tuple(trail), missing))
    return limits, tuple(assumptions)


def check_feeder_ocpd(motors: list[Motor], feeder: dict | None, ruleset: Ruleset,
                      options: ReviewOptions) -> list[Finding]:
    """The listed feeder's device does not exceed the largest branch value plus the other motors' currents."""
    if feeder is None or not motors:
        return []
    spec = ruleset.check(OCPD_CHECK)
    name = feeder.get("name", "the feeder")
    ocpd = feeder.get("ocpd")
    device = ocpd.get("device") if ocpd else None

    def finding(status, message, **kw):
        return Finding(OCPD_CHECK, spec.rule, status, message, unit="A", fields=("ocpd",), citation=spec.citation,
                       **kw)

    if device == "instantaneous-trip-breaker":
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: an instantaneous-trip feeder device is outside the "
                        f"maximum-percentage method; show how the feeder is protected.")]
    limits, assumptions = maximum_device(motors, device, ruleset, options)
    assumptions = assumptions + _group_assumptions(motors)
    trail = [line for limit in limits for line in limit.trail]
    missing = sorted({m for limit in limits for m in limit.missing})
    if missing:
        trail.append("Not counted: " + "; ".join(missing))
    known = [lim for lim in limits if lim.limit_a is not None]
    partial = [lim.partial_a for lim in limits if lim.partial_a is not None]
    if ocpd is None:
        shown = ", ".join(f"{DEVICE_NAMES[l.column]} {calc(l.limit_a)} A" for l in known) or "cannot be computed"
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: no device rating could be read; the most permitted is "
                        f"{shown}.", limit=min((l.limit_a for l in known), default=None), trail=tuple(trail),
                        assumptions=assumptions)]
    rating_a = ocpd["rating_a"]
    kind = DEVICE_NAMES.get(device, "device")
    if len(known) == len(limits) and known:
        values = [lim.limit_a for lim in known]
        if all(rating_a <= v + 1e-9 for v in values):
            limit = min(values)
            trail.append(f"{num(rating_a)} A ≤ {calc(limit)} A")
            return [finding(Status.PASS, f"Feeder {name}: {num(rating_a)} A {kind} is within the {calc(limit)} A "
                            f"maximum.", limit=limit, provided=rating_a, trail=tuple(trail), assumptions=assumptions)]
        if all(rating_a > v + 1e-9 for v in values):
            limit = max(values)
            best = max(known, key=lambda lim: lim.limit_a)
            trail.append(f"{num(rating_a)} A > {calc(limit)} A")
            fix = f"use {num(best.standard_a)} A or less" if best.standard_a is not None else "reduce the rating"
            return [finding(Status.FAIL, f"Feeder {name}: {num(rating_a)} A {kind} exceeds the {calc(limit)} A "
                            f"maximum (largest branch value plus the other motors; never rounded up); {fix}.",
                            limit=limit, provided=rating_a, trail=tuple(trail), assumptions=assumptions)]
        trail.append(f"{num(rating_a)} A is within some device-type readings ({calc(min(values))}–"
                     f"{calc(max(values))} A) but not all")
        return [finding(Status.NEEDS_INFO, f"Feeder {name}: {num(rating_a)} A passes or fails depending on the "
                        f"device type, which the schedule does not state.", provided=rating_a, trail=tuple(trail),
                        assumptions=assumptions)]
    if partial and all(rating_a <= p + 1e-9 for p in partial):
        trail.append(f"{num(rating_a)} A ≤ {calc(min(partial))} A, which further motors can only raise")
        return [finding(Status.PASS, f"Feeder {name}: {num(rating_a)} A {kind} is within the {calc(min(partial))} A "
                        f"allowed by the motors that could be counted; the others only raise that limit.",
                        limit=min(partial), provided=rating_a, trail=tuple(trail), assumptions=assumptions)]
    return [finding(Status.NEEDS_INFO, f"Feeder {name}: the maximum device cannot be completed ({len(missing)} "
                    f"motor(s) not counted), and {num(rating_a)} A is above what the counted motors allow.",
                    provided=rating_a, trail=tuple(trail), assumptions=assumptions)]


# --------------------------------------------------------------------------- groups and their summaries

def group_summary(motors: list[Motor], device: str | None, ruleset: Ruleset, options: ReviewOptions) -> dict:
    """The group's computed minimum ampacity and maximum device, for information.

    Keys: ``min_ampacity_a`` (None if incomplete), ``ampacity_counted_a``,
    ``max_device`` (one entry per device type: ``device``, ``limit_a``,
    ``counted_a``, ``standard_a``, ``reference``), ``trail``, ``assumptions``,
    ``not_counted``. Only the parts whose check is in the ruleset are given.
    """
    out: dict = {}
    trail: list[str] = []
    assumptions: list[str] = []
    missing: list[str] = []
    if AMPACITY_CHECK in ruleset.checks:
        amp = minimum_ampacity(motors, ruleset, options)
        out["min_ampacity_a"] = amp.minimum_a
        out["ampacity_counted_a"] = amp.partial_a
        out["ampacity_rule"] = ruleset.check(AMPACITY_CHECK).rule
        trail.extend(amp.trail)
        assumptions.extend(amp.assumptions)
        missing.extend(amp.missing)
    if OCPD_CHECK in ruleset.checks and device != "instantaneous-trip-breaker":
        limits, extra = maximum_device(motors, device, ruleset, options)
        out["device_rule"] = ruleset.check(OCPD_CHECK).rule
        out["max_device"] = [{"device": lim.column, "limit_a": lim.limit_a, "counted_a": lim.partial_a,
                              "standard_a": lim.standard_a, "reference": lim.reference} for lim in limits]
        trail.extend(line for lim in limits for line in lim.trail)
        # each once, in order (a group may hold thousands of motors)
        assumptions[:] = dict.fromkeys([*assumptions, *extra])
        missing[:] = dict.fromkeys([*missing, *(m for lim in limits for m in lim.missing)])
    if out:
        assumptions.extend(_group_assumptions(motors))
    out["trail"] = trail
    out["assumptions"] = assumptions
    out["not_counted"] = missing
    return out


def group_motors(motors: list[Motor]) -> dict[str, tuple[str, list[Motor]]]:
    """Motors by the source they name: key -> (label as first written, motors in input order)."""
    groups: dict[str, tuple[str, list[Motor]]] = {}
    for motor in motors:
        text = motor.record.get("fed_from")
        if not text:
            continue
        key, label = group_key(str(text))
        if not key:
            continue
        groups.setdefault(key, (label, []))[1].append(motor)
    return groups


def _listed_labels(feeder: dict | None, ruleset: Ruleset) -> dict:
    """The listed feeder's conductor and device in words, for the report's group summary."""
    out: dict = {}
    conductor = (feeder or {}).get("conductor")
    if conductor is not None:
        text = conductor_label(conductor)
        if AMPACITY_CHECK in ruleset.checks:
            ampacity_a, _ = feeder_ampacity_a(conductor, ruleset)
            if ampacity_a is not None:
                text += f", {num(ampacity_a)} A"
        out["listed_conductor"] = text
    ocpd = (feeder or {}).get("ocpd")
    if ocpd is not None:
        out["listed_device"] = f"{num(ocpd['rating_a'])} A {DEVICE_NAMES.get(ocpd.get('device'), 'device')}"
    return out


def _feeder_review(label: str, members: list[Motor], row: FeederRow | None, ruleset: Ruleset,
                   options: ReviewOptions, checks: Mapping[str, GroupCheckFn]) -> FeederReview:
    feeder = row.record if row is not None else None
    device = ((feeder or {}).get("ocpd") or {}).get("device")
    notes: list[str] = []
    findings: list[Finding] = []
    computed: dict = {}
    if members:
        computed = group_summary(members, device, ruleset, options)
        computed.update(_listed_labels(feeder, ruleset))
        for check_id, function in checks.items():
            if check_id in ruleset.checks:
                findings.extend(function(members, feeder, ruleset, options))
    if row is None:
        notes.append("No feeder is listed for this source: the figures are for information and nothing was checked.")
    else:
        notes.extend(row.problems)
        if not members:
            notes.append("No motor on this schedule names this feeder's load as its source; nothing was checked.")
        if row.origin == "schedule heading":
            notes.append(f"Feeder data read from the heading row {row.source.label()} of the motor schedule.")
    sources: tuple[SourceRef, ...] = tuple(m.source for m in members)
    return FeederReview(
        group=label, motor_tags=tuple(m.tag for m in members), motor_sources=sources, feeder=feeder,
        feeder_source=row.source if row is not None else None,
        feeder_sources=dict(row.sources) if row is not None else {}, computed=computed,
        findings=tuple(findings), notes=tuple(notes))


def review_feeders(motors: list[Motor], feeder_rows: list[FeederRow], ruleset: Ruleset, options: ReviewOptions,
                   checks: Mapping[str, GroupCheckFn]) -> tuple[FeederReview, ...]:
    """One FeederReview per listed feeder, plus one per unlisted group of two or more motors.

    A feeder matches a group when its load (``to``) or, failing that, its name
    names the group's source. Groups come in the order their first motor
    appears; feeders that supply no motor on the schedule come last.
    """
    token = _LIMITS_MEMO.set(_LimitsMemo(ruleset, options))
    try:
        return _review_groups(motors, feeder_rows, ruleset, options, checks)
    finally:
        _LIMITS_MEMO.reset(token)


def _review_groups(motors: list[Motor], feeder_rows: list[FeederRow], ruleset: Ruleset, options: ReviewOptions,
                   checks: Mapping[str, GroupCheckFn]) -> tuple[FeederReview, ...]:
    groups = group_motors(motors)
    by_group: dict[str, list[FeederRow]] = {}
    unmatched: list[FeederRow] = []
    for row in feeder_rows:
        keys = [row.key] + [group_key(str(row.record[f]))[0] for f in ("name",) if row.record.get(f)]
        key = next((k for k in keys if k and k in groups), None)
        if key is None:
            unmatched.append(row)
        else:
            by_group.setdefault(key, []).append(row)
    reviews: list[FeederReview] = []
    for key, (label, members) in groups.items():
        rows = by_group.get(key, [])
        if not rows and len(members) < 2:
            continue  # one motor and no feeder: its branch checks say it all
        for row in rows or [None]:
            reviews.append(_feeder_review(label, members, row, ruleset, options, checks))
    for row in unmatched:
        reviews.append(_feeder_review(row.label or row.record.get("name", ""), [], row, ruleset, options, checks))
    return tuple(reviews)
