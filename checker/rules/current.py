"""Which full-load current the calculations use.

The CEC works from the motor's nameplate full-load current; where the
schedule gives no nameplate current the motor full-load current tables
(three-phase and single-phase) are used instead, and every finding says so.
Both tables and the rule that governs them are named in the ruleset
(``[checks.motor-current]``), never here.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, num
from checker.rules.ruleset import Ruleset, hp_key

CHECK_ID = "motor-current"


@dataclass(frozen=True, slots=True)
class CurrentBasis:
    """The current a motor's calculations start from.

    current_a is None when neither a nameplate current nor a usable table
    look-up exists; ``problem`` then says what is missing.
    """

    current_a: float | None
    basis: str  # 'nameplate' | 'table' | 'none'
    trail: tuple[str, ...]
    assumptions: tuple[str, ...]
    fields: tuple[str, ...]
    problem: str | None = None

    def label(self) -> str:
        return "nameplate FLA" if self.basis == "nameplate" else "table FLC"


def _voltage_column(voltage_v: float, bands: list[dict]) -> str | None:
    for band in bands:
        if band["min_v"] <= voltage_v <= band["max_v"]:
            return band["column"]
    return None


def table_current(record: dict, ruleset: Ruleset) -> CurrentBasis:
    """Full-load current from the motor current tables by hp, phase and voltage."""
    params = ruleset.check(CHECK_ID).params
    fields = ("hp", "voltage_v", "phase")
    hp, voltage_v, phase = record.get("hp"), record.get("voltage_v"), record.get("phase")
    missing = [name for name, value in (("hp", hp), ("voltage", voltage_v), ("phase", phase)) if value is None]
    if record.get("current_type") == "dc":
        return CurrentBasis(None, "none", (), (), fields, "the tables used here cover AC motors only; give the DC motor's nameplate current")
    if record.get("motor_type") == "synchronous":
        return CurrentBasis(None, "none", (), (), fields + ("motor_type",),
                            "synchronous-motor currents depend on power factor; give the nameplate FLA")
    if missing:
        return CurrentBasis(None, "none", (), (), fields, f"no nameplate FLA and no {', '.join(missing)} for a table look-up")
    table = ruleset.table(params["three_phase_table"] if phase == 3 else params["single_phase_table"])
    column = _voltage_column(voltage_v, params["voltage_columns"])
    if column is None or column not in (table.columns or ()):
        return CurrentBasis(None, "none", (), (), fields,
                            f"{table.citation} has no column for {num(voltage_v)} V; give the nameplate FLA")
    value = table.get(hp_key(hp), column)
    if value is None:
        return CurrentBasis(None, "none", (), (), fields,
                            f"{table.citation} lists no {num(hp)} hp motor at {column} V; give the nameplate FLA")
    trail = ((f"{table.citation}: {num(hp)} hp, {'three' if phase == 3 else 'single'}-phase, "
              f"{column} V column = {num(value)} A"),)
    assumption = f"No nameplate FLA on the schedule: {num(value)} A from {table.citation} used instead."
    return CurrentBasis(float(value), "table", trail, (assumption,), fields)


def current_basis(record: dict, ruleset: Ruleset) -> CurrentBasis:
    """Nameplate FLA when given, otherwise the table value."""
    fla = record.get("fla_a")
    if fla is not None:
        return CurrentBasis(float(fla), "nameplate", (f"Nameplate FLA = {num(fla)} A",), (), ("fla_a",))
    return table_current(record, ruleset)


def check_motor_current(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Report which full-load current the other checks start from (or that none can be found)."""
    spec = ruleset.check(CHECK_ID)
    basis = current_basis(motor.record, ruleset)
    if basis.current_a is None:
        return [Finding(CHECK_ID, spec.rule, Status.NEEDS_INFO,
                        f"Full-load current cannot be established: {basis.problem}.",
                        unit="A", fields=("fla_a",) + basis.fields, citation=spec.citation)]
    source = "the nameplate" if basis.basis == "nameplate" else "the motor full-load current table"
    message = f"Full-load current {num(basis.current_a)} A from {source}."
    return [Finding(CHECK_ID, spec.rule, Status.PASS, message, provided=basis.current_a, unit="A",
                    trail=basis.trail, assumptions=basis.assumptions, fields=basis.fields, citation=spec.citation)]
