"""Branch-circuit conductor ampacity for a single motor, with ambient and conductor-count corrections.

Minimum ampacity is a percentage of the full-load current: the continuous
duty percentage, or the duty-cycle table percentage for non-continuous duty.
The conductor's ampacity is read from the termination column the ruleset
names (``ampacity_column``, 75 degC under both codes), per parallel set.

Corrections are part of this check rather than a separate one: a conductor
has one allowable ampacity, and a separate "uncorrected" verdict beside a
"corrected" one would show a pass and a fail for the same wire. They apply
only when the schedule carries what they need:

* ``ambient_c`` -> the ambient table (by the insulation's temperature column);
* ``current_carrying_conductors``, or the parser's ``conductors_per_set``
  (a three-conductor set alone is not "more than three") -> the adjustment table.

A corrected ampacity starts from the insulation's own temperature column and
is then limited to the termination column (the usual way to use 90 degC wire:
common practice in both codes). Where the ruleset has a small-circuit
termination rule (NEC 110.14(C)(1)(a): the 60 degC column unless the equipment
is rated 75 degC) or the schedule leaves the raceway of parallel sets open,
every reading is worked out: the favourable one is assumed and said so when
the answer depends on it, or the finding is needs-info in a strict review.
Rule numbers, percentages and tables all come from ``[checks.conductor-ampacity]``.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, conductor_label, num
from checker.rules.current import current_basis
from checker.rules.ruleset import Ruleset, Table

CHECK_ID = "conductor-ampacity"

# Table 27 / Table 430.22(E) print 30- and 60-minute ratings in one column.
_DUTY_COLUMNS = {"5-min": "5-min", "15-min": "15-min", "30-min": "30/60-min", "60-min": "30/60-min",
                 "continuous": "continuous"}
_RACEWAY_COUNT_RE = re.compile(r"^\(\s*(\d+)\s*\)")


@dataclass(frozen=True, slots=True)
class DutyFactor:
    percent: float | None
    rule: str
    trail: str
    assumptions: tuple[str, ...] = ()
    problem: str | None = None
    continuous: bool = True


def duty_factor(record: dict, ruleset: Ruleset, options: ReviewOptions) -> DutyFactor:
    """The percentage of full-load current the conductors must carry, by duty."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    duty = record.get("duty")
    if duty is None:
        if options.strict:
            return DutyFactor(None, spec.rule, "", problem="duty is not stated (strict review assumes nothing)")
        return DutyFactor(params["continuous_percent"], spec.rule, f"continuous duty: {num(params['continuous_percent'])} %",
                          ("Duty not stated on the schedule: reviewed as continuous duty.",))
    if duty["service"] == "continuous":
        return DutyFactor(params["continuous_percent"], spec.rule, f"continuous duty: {num(params['continuous_percent'])} %")
    table = ruleset.table(params["duty_table"])
    rule = params["non_continuous_rule"]
    rating = duty.get("rating")
    if rating is None:
        return DutyFactor(None, rule, "", problem=f"{duty['service']} duty is stated without its time rating "
                          f"(5, 15, 30/60 min or continuous), which {table.citation} needs", continuous=False)
    percent = table.get(duty["service"], _DUTY_COLUMNS[rating])
    if percent is None:
        return DutyFactor(None, rule, "", problem=f"{table.citation} gives no percentage for {duty['service']} duty "
                          f"with a {rating} rating; confirm the duty", continuous=False)
    return DutyFactor(percent, rule, f"{duty['service']} duty, {rating} rated: {num(percent)} % ({table.citation})",
                      continuous=False)


# ---- band tables (ambient and conductor-count) -------------------------------------------------------------

def _bands(table: Table, base: float | None) -> list[tuple[str, float, float, bool]]:
    """(row key, low, high, low is exclusive) per row, in file order. See the nec-2023.toml header."""
    out = []
    previous_high = -math.inf if base is None else base
    for key in table.rows:
        if key.startswith("-"):
            low, high, exclusive = -math.inf, float(key[1:]), False
        elif "-" in key:
            low_text, high_text = key.split("-", 1)
            low, high, exclusive = float(low_text), (float(high_text) if high_text else math.inf), False
        else:
            low, high, exclusive = previous_high, float(key), True
        out.append((key, low, high, exclusive))
        previous_high = high
    return out


def band_row(table: Table, value: float, base: float | None = None) -> tuple[str | None, str]:
    """The row of a band table that covers ``value``.

    Returns (row key, 'row'), (None, 'below') when the value needs no factor
    (below the first band: not more than three conductors, or an ambient at or
    below the base where the table lists no cooler rows), or (None, 'above').
    A value between two bands takes the next higher band.
    """
    bands = _bands(table, base)
    _, low, _, exclusive = bands[0]
    if value < low or (exclusive and value <= low):
        return None, "below"
    for key, _, high, _ in bands:
        if value <= high:
            return key, "row"
    return None, "above"


# ---- one reading of the installation -----------------------------------------------------------------------

@dataclass(frozen=True, slots=True)
class Reading:
    """The ampacity under one reading of the schedule (termination column, conductors per raceway)."""

    ampacity_a: float | None
    trail: tuple[str, ...]
    assumption: str | None = None  # what this reading takes for granted that the schedule does not say
    problem: str | None = None  # cannot be computed (needs-info)
    not_permitted: str | None = None  # the conductor cannot be used at all under this reading (fail)
    corrected: bool = False  # ambient or conductor-count factors were applied
    taken: tuple[str, ...] = ()  # assumptions inside the arithmetic itself (e.g. an unknown insulation rating)


@dataclass(frozen=True, slots=True)
class Conditions:
    """Installation conditions from the record that change a conductor's ampacity."""

    ambient_c: float | None
    conductors: int | None  # current-carrying conductors sharing the raceway or cable
    conductors_line: str = ""


def _column_label(column: str) -> str:
    return column.replace("C", " °C")


def _column_rating(column: str) -> float | None:
    try:
        return float(column.rstrip("C"))
    except ValueError:
        return None


def conductor_ampacity_a(conductor: dict, ruleset: Ruleset) -> tuple[float | None, str]:
    """Allowable ampacity of the phase conductors (all parallel sets) in the termination column, uncorrected,
    and a trail line. Returns (None, reason) when the size is not listed for that material."""
    params = ruleset.check(CHECK_ID).params
    return table_ampacity(conductor, ruleset, params["ampacity_column"])


def _ampacity_table(conductor: dict, ruleset: Ruleset, params: dict | None = None) -> Table:
    params = params or ruleset.check(CHECK_ID).params
    return ruleset.table(params["copper_table"] if conductor.get("material", "cu") == "cu" else params["aluminum_table"])


def table_ampacity(conductor: dict, ruleset: Ruleset, column: str,
                   params: dict | None = None) -> tuple[float | None, str]:
    """Tabulated ampacity of all parallel sets in one column, and its trail line.

    ``params`` names the copper and aluminium tables (default: this check's); feeder checks pass theirs.
    Returns (None, reason) when the size has no value in that column.
    """
    table = _ampacity_table(conductor, ruleset, params)
    per_set = table.get(conductor["size"], column)
    label = conductor_label({**conductor, "sets": 1})
    if per_set is None:
        return None, f"{label} is not a size listed in the {_column_label(column)} column of {table.citation}"
    sets = conductor.get("sets", 1)
    line = f"{label}, {_column_label(column)} column of {table.citation} = {num(per_set)} A"
    if sets > 1:
        line += f"; {sets} parallel sets × {num(per_set)} A = {num(per_set * sets)} A"
    return float(per_set * sets), line


def insulation_column(conductor: dict, ruleset: Ruleset) -> tuple[str | None, str]:
    """The ampacity-table column of the conductor's insulation rating, or (None, why not)."""
    params = ruleset.check(CHECK_ID).params
    insulation = conductor.get("insulation")
    name = params.get("insulation_table")
    if not insulation:
        return None, "insulation type not stated"
    if not name:
        return None, "no insulation table in the ruleset"
    ratings = ruleset.table(name)
    rating = ratings.get(insulation, (ratings.columns or ("",))[0])
    if rating is None:
        return None, f"{insulation} is not in {ratings.citation}"
    column = f"{num(rating)}C"
    if column not in (_ampacity_table(conductor, ruleset).columns or ()):
        return None, f"the ampacity table has no {num(rating)} °C column"
    return column, f"{insulation} is rated {num(rating)} °C ({ratings.citation})"


def corrected_reading(conductor: dict, ruleset: Ruleset, termination: str, conditions: Conditions) -> Reading:
    """Ampacity of all parallel sets with ambient and conductor-count factors, limited to ``termination``."""
    table = _ampacity_table(conductor, ruleset)
    size = conductor["size"]
    label = conductor_label({**conductor, "sets": 1})
    limit = table.get(size, termination)
    if limit is None:
        return Reading(None, (), problem=f"{label} is not a size listed in {table.citation}")
    trail: list[str] = []
    taken: tuple[str, ...] = ()
    column, why = insulation_column(conductor, ruleset)
    if column is None:
        column = termination
        note = f"Insulation rating unknown ({why}): corrections applied to the {_column_label(termination)} column."
        taken = (note,)
    else:
        trail.append(why)
    base = table.get(size, column)
    if base is None:
        return Reading(None, tuple(trail), problem=f"{label} has no {_column_label(column)} value in {table.citation}",
                       taken=taken)
    factors: list[float] = []
    if conditions.ambient_c is not None:
        factor, line, stop = _ambient_factor(ruleset, conditions.ambient_c, column)
        if stop is not None:
            return Reading(None, tuple(trail + [line] if line else trail), corrected=True, taken=taken, **stop)
        trail.append(line)
        factors.append(factor)
    if conditions.conductors is not None:
        factor, line = _count_factor(ruleset, conditions.conductors, conditions.conductors_line)
        trail.append(line)
        factors.append(factor)
    corrected = base
    for f in factors:
        corrected *= f
    steps = " × ".join([f"{num(base)} A"] + [num(f) for f in factors])
    per_set = min(corrected, float(limit))
    line = f"{label} in the {_column_label(column)} column: {steps} = {calc(corrected)} A"
    if column != termination:
        line += (f"; not more than the {_column_label(termination)} termination value {num(limit)} A "
                 f"→ {calc(per_set)} A")
    trail.append(line)
    sets = conductor.get("sets", 1)
    if sets > 1:
        trail.append(f"{sets} parallel sets × {calc(per_set)} A = {calc(per_set * sets)} A")
    return Reading(per_set * sets, tuple(trail), corrected=True, taken=taken)


def _ambient_factor(ruleset: Ruleset, ambient_c: float, column: str):
    """(factor, trail line, None) or (None, line, Reading keyword args that stop the reading)."""
    params = ruleset.check(CHECK_ID).params
    table = ruleset.table(params["ambient_table"])
    rule = params["ambient_rule"]
    key, where = band_row(table, ambient_c, params["base_ambient_c"])
    if where == "below":
        return 1.0, (f"Ambient {num(ambient_c)} °C is not above the {num(params['base_ambient_c'])} °C base of the "
                     f"ampacity tables: factor 1 ({rule})"), None
    if where == "above":
        return None, "", {"problem": f"the ambient {num(ambient_c)} °C is above every row of {table.citation}"}
    factor = table.get(key, column)
    if factor is None:
        return None, "", {"not_permitted": (f"{_column_label(column)} insulation has no correction factor at "
                                            f"{num(ambient_c)} °C ambient ({table.citation}, {key} row): it cannot "
                                            f"be used there")}
    return factor, (f"Ambient {num(ambient_c)} °C: {table.citation}, {key} row, {_column_label(column)} column = "
                    f"{num(factor)} ({rule})"), None


def _count_factor(ruleset: Ruleset, conductors: int, source: str) -> tuple[float, str]:
    params = ruleset.check(CHECK_ID).params
    table = ruleset.table(params["adjustment_table"])
    key, where = band_row(table, conductors)
    lead = f"{conductors} current-carrying conductors in the raceway or cable" + (f" ({source})" if source else "")
    if where == "below":
        return 1.0, f"{lead}: not more than three, no adjustment ({params['adjustment_rule']})"
    if where == "above":  # the last band is open-ended in both codes; keep the smallest factor
        key = list(table.rows)[-1]
    factor = table.get(key, (table.columns or ("",))[0])
    return float(factor), f"{lead}: {table.citation}, {key} row = {num(factor)} ({params['adjustment_rule']})"


# ---- which readings to work out ------------------------------------------------------------------------------

def count_options(record: dict, conductor: dict) -> list[tuple[int | None, str, str | None]]:
    """(conductors per raceway, where that number came from, assumption) readings, favourable first."""
    stated = record.get("current_carrying_conductors")
    if stated is not None:
        return [(int(stated), "schedule", None)]
    per_set = conductor.get("conductors_per_set")
    if per_set is None:
        return [(None, "", None)]
    sets = conductor.get("sets", 1)
    note = f"{per_set} per set from the conductor cell"
    phase = record.get("phase")
    if phase is not None and per_set > (3 if phase == 3 else 2):
        note += ", all counted as current-carrying"
    if sets == 1:
        return [(per_set, note, None)]
    match = _RACEWAY_COUNT_RE.match(conductor.get("raceway", ""))
    if match and int(match.group(1)) == sets:
        return [(per_set, f"{note}; one set in each of {sets} raceways", None)]
    return [(per_set, f"{note}; one set per raceway",
             f"The {sets} parallel sets are taken to run in separate raceways (the schedule does not say)."),
            (per_set * sets, f"{note}; all {sets} sets in one raceway", None)]


def termination_options(record: dict, conductor: dict, ruleset: Ruleset,
                        minimum_a: float) -> list[tuple[str, str | None]]:
    """(termination column, assumption) readings, favourable first."""
    params = ruleset.check(CHECK_ID).params
    column = params["ampacity_column"]
    small = params.get("low_current_column")
    if not small:
        return [(column, None)]
    table = _ampacity_table(conductor, ruleset)
    keys = list(table.rows)
    limit_size = params["low_current_max_size"]
    size_small = (conductor["size"] in keys and limit_size in keys
                  and keys.index(conductor["size"]) <= keys.index(limit_size))
    ocpd = record.get("ocpd") or {}
    rating = ocpd.get("rating_a")
    circuit_small = (rating is not None and rating <= params["low_current_max_a"]) or (
        rating is None and minimum_a <= params["low_current_max_a"])
    if not (size_small or circuit_small):
        return [(column, None)]
    assumption = (f"Terminations taken as rated {_column_label(column)} (equipment listed for it, or a Design B, C "
                  f"or D motor); otherwise {params['low_current_rule']} limits this circuit to the "
                  f"{_column_label(small)} column.")
    return [(column, assumption), (small, None)]


def _uncorrected_reading(conductor: dict, ruleset: Ruleset, termination: str) -> Reading:
    """Table ampacity in the termination column, or in the insulation's column when that is lower
    (a 60 degC conductor never carries its 75 degC ampacity)."""
    column, why = insulation_column(conductor, ruleset)
    lower = (column is not None and (_column_rating(column) or 0) < (_column_rating(termination) or 0))
    value, line = table_ampacity(conductor, ruleset, column if lower else termination)
    if value is None:
        return Reading(None, (), problem=f"{line}; confirm the conductor size and material")
    return Reading(value, (why + f": its {_column_label(column)} column is used", line) if lower else (line,))


def work_out(record: dict, conductor: dict, ruleset: Ruleset, minimum_a: float) -> list[Reading]:
    """Every reading of the schedule, favourable first (readings[0] is the one a lenient review assumes)."""
    params = ruleset.check(CHECK_ID).params
    ambient = record.get("ambient_c")
    counts = count_options(record, conductor)
    has_tables = "ambient_table" in params or "adjustment_table" in params
    readings = []
    for column, column_assumption in termination_options(record, conductor, ruleset, minimum_a):
        for count, source, count_assumption in counts:
            correct = has_tables and (
                (ambient is not None and "ambient_table" in params)
                or (count is not None and count > 3 and "adjustment_table" in params))
            if not correct:
                reading = _uncorrected_reading(conductor, ruleset, column)
            else:
                conditions = Conditions(ambient if "ambient_table" in params else None,
                                        count if "adjustment_table" in params else None, source)
                reading = corrected_reading(conductor, ruleset, column, conditions)
            assumptions = [a for a in (column_assumption, count_assumption) if a]
            readings.append(Reading(reading.ampacity_a, reading.trail, " ".join(assumptions) or None,
                                    reading.problem, reading.not_permitted, reading.corrected, reading.taken))
    return readings


# ---- the check -----------------------------------------------------------------------------------------------

def check_conductor_ampacity(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Conductor ampacity (termination column, corrected where the schedule says how, all sets) must be at
    least the duty percentage of the full-load current."""
    spec = ruleset.check(CHECK_ID)
    record = motor.record
    if record.get("mca_a") is not None and "packaged-mca-mocp" in ruleset.checks:
        return []  # packaged equipment: its marked MCA replaces 125 % of FLC (checker/rules/packaged.py says so)
    factor = duty_factor(record, ruleset, options)
    basis = current_basis(record, ruleset, "conductor" if factor.continuous else "duty_cycle")
    fields = ("conductor", "duty", "ambient_c", "current_carrying_conductors") + basis.fields

    def finding(status, message, **kw):
        return Finding(CHECK_ID, factor.rule, status, message, unit="A", fields=fields,
                       citation=spec.citation, **kw)

    if basis.current_a is None:
        return [finding(Status.NEEDS_INFO, f"Minimum conductor ampacity cannot be computed: {basis.problem}.")]
    if factor.percent is None:
        return [finding(Status.NEEDS_INFO, f"Minimum conductor ampacity cannot be computed: {factor.problem}.")]
    min_ampacity_a = basis.current_a * factor.percent / 100
    trail = list(basis.trail)
    trail.append(f"{factor.trail}: {num(basis.current_a)} A × {num(factor.percent)} % = {calc(min_ampacity_a)} A minimum")
    assumptions = list(basis.assumptions) + list(factor.assumptions)
    conductor = record.get("conductor")
    if conductor is None:
        return [finding(Status.NEEDS_INFO, f"No branch-circuit conductor could be read from the schedule; it must carry at least "
                        f"{calc(min_ampacity_a)} A.", limit=min_ampacity_a, trail=tuple(trail),
                        assumptions=tuple(assumptions))]
    if not conductor.get("material_stated", True):
        assumptions.append("Conductor material not stated: copper assumed.")
    readings = work_out(record, conductor, ruleset, min_ampacity_a)
    first = readings[0]
    assumptions.extend(first.taken)
    corrected = first.corrected
    insulation = conductor.get("insulation")
    if insulation and not corrected and len(first.trail) == 1:
        trail.append(f"Insulation {insulation}: ampacity taken from the {_column_label(spec.params['ampacity_column'])} "
                     f"column ({spec.params['ampacity_rule']}) whatever the insulation rating")
    if first.problem is not None or first.ampacity_a is None and first.not_permitted is None:
        return [finding(Status.NEEDS_INFO, f"{_capital(first.problem)}.", limit=min_ampacity_a,
                        trail=tuple(trail + list(first.trail)), assumptions=tuple(assumptions))]
    if first.not_permitted is not None:
        return [finding(Status.FAIL, f"{_capital(first.not_permitted)}; use a conductor rated for the ambient.",
                        limit=min_ampacity_a, trail=tuple(trail + list(first.trail)), assumptions=tuple(assumptions))]
    trail.extend(first.trail)
    ampacity_a = first.ampacity_a
    passed = ampacity_a >= min_ampacity_a
    shown = calc(ampacity_a) if corrected else num(ampacity_a)
    trail.append(f"{shown} A {'≥' if passed else '<'} {calc(min_ampacity_a)} A")
    label = conductor_label(conductor)
    if not passed:
        message = (f"{label} is rated {shown} A{' after correction' if corrected else ''}, below the "
                   f"{calc(min_ampacity_a)} A required; increase the conductor size.")
        return [finding(Status.FAIL, message, limit=min_ampacity_a, provided=ampacity_a, trail=tuple(trail),
                        assumptions=tuple(assumptions))]
    failing = [r for r in readings[1:] if r.ampacity_a is None or r.ampacity_a < min_ampacity_a]
    message = f"{label} ({shown} A{' corrected' if corrected else ''}) carries the {calc(min_ampacity_a)} A required."
    if not failing:
        return [finding(Status.PASS, message, limit=min_ampacity_a, provided=ampacity_a, trail=tuple(trail),
                        assumptions=tuple(assumptions))]
    for other in failing:
        value = "cannot be used" if other.ampacity_a is None else f"{calc(other.ampacity_a)} A"
        trail.append(f"Otherwise: {value} ({'; '.join(other.trail[-2:]) if other.trail else other.problem})")
    if first.assumption:
        assumptions.append(first.assumption)
    if options.strict:
        return [finding(Status.NEEDS_INFO, f"{label} passes only on something the schedule does not state: "
                        f"{first.assumption}", limit=min_ampacity_a,
                        provided=ampacity_a, trail=tuple(trail), assumptions=tuple(assumptions))]
    return [finding(Status.PASS, message + " It depends on an assumption (see assumptions).", limit=min_ampacity_a,
                    provided=ampacity_a, trail=tuple(trail), assumptions=tuple(assumptions))]


def _capital(text: str | None) -> str:
    text = text or "the conductor ampacity cannot be computed"
    return text[0].upper() + text[1:]
