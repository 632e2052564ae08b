"""Branch-circuit conductor ampacity for a single motor.

Minimum ampacity is a percentage of the full-load current: the continuous
duty percentage, or the duty-cycle table percentage for non-continuous duty.
The conductor's ampacity is read from the ampacity column the ruleset names
(the 75 degC column under the CEC even for 90 degC insulation), per parallel
set. Rule numbers, percentages and tables all come from
``[checks.conductor-ampacity]`` in the ruleset.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, conductor_label, num
from checker.rules.current import current_basis
from checker.rules.ruleset import Ruleset

CHECK_ID = "conductor-ampacity"

# Table 27 prints 30- and 60-minute ratings in one column.
_DUTY_COLUMNS = {"5-min": "5-min", "15-min": "15-min", "30-min": "30/60-min", "60-min": "30/60-min",
                 "continuous": "continuous"}


@dataclass(frozen=True, slots=True)
class DutyFactor:
    percent: float | None
    rule: str
    trail: str
    assumptions: tuple[str, ...] = ()
    problem: str | None = None


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
                          f"(5, 15, 30/60 min or continuous), which {table.citation} needs")
    percent = table.get(duty["service"], _DUTY_COLUMNS[rating])
    if percent is None:
        return DutyFactor(None, rule, "", problem=f"{table.citation} gives no percentage for {duty['service']} duty "
                          f"with a {rating} rating; confirm the duty")
    return DutyFactor(percent, rule, f"{duty['service']} duty, {rating} rated: {num(percent)} % ({table.citation})")


def conductor_ampacity_a(conductor: dict, ruleset: Ruleset) -> tuple[float | None, str]:
    """Allowable ampacity of the phase conductors (all parallel sets) and a trail line.

    Returns (None, reason) when the size is not listed for that material.
    """
    params = ruleset.check(CHECK_ID).params
    material = conductor.get("material", "cu")
    table = ruleset.table(params["copper_table"] if material == "cu" else params["aluminum_table"])
    column = params["ampacity_column"]
    per_set = table.get(conductor["size"], column)
    label = conductor_label({**conductor, "sets": 1})
    if per_set is None:
        return None, f"{label} is not a size listed in {table.citation}"
    sets = conductor.get("sets", 1)
    line = f"{label}, {column.replace('C', ' °C')} column of {table.citation} = {num(per_set)} A"
    if sets > 1:
        line += f"; {sets} parallel sets × {num(per_set)} A = {num(per_set * sets)} A"
    return float(per_set * sets), line


def check_conductor_ampacity(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Conductor ampacity (75 degC column, all sets) must be at least the duty percentage of FLC."""
    spec = ruleset.check(CHECK_ID)
    record = motor.record
    basis = current_basis(record, ruleset)
    factor = duty_factor(record, ruleset, options)
    fields = ("conductor", "duty") + basis.fields

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
    insulation = conductor.get("insulation")
    if insulation:
        trail.append(f"Insulation {insulation}: ampacity taken from the {spec.params['ampacity_column'].replace('C', ' °C')} "
                     f"column ({spec.params['ampacity_rule']}) whatever the insulation rating")
    ampacity_a, line = conductor_ampacity_a(conductor, ruleset)
    if ampacity_a is None:
        return [finding(Status.NEEDS_INFO, f"{line}; confirm the conductor size and material.", limit=min_ampacity_a,
                        trail=tuple(trail), assumptions=tuple(assumptions))]
    passed = ampacity_a >= min_ampacity_a
    trail.append(line)
    trail.append(f"{num(ampacity_a)} A {'≥' if passed else '<'} {calc(min_ampacity_a)} A")
    label = conductor_label(conductor)
    if passed:
        message = f"{label} ({num(ampacity_a)} A) carries the {calc(min_ampacity_a)} A required."
    else:
        message = (f"{label} is rated {num(ampacity_a)} A, below the {calc(min_ampacity_a)} A required; "
                   f"increase the conductor size.")
    return [finding(Status.PASS if passed else Status.FAIL, message, limit=min_ampacity_a, provided=ampacity_a,
                    trail=tuple(trail), assumptions=tuple(assumptions))]
