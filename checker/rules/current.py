"""Which full-load current the calculations use.

Codes differ on this, so the choice is data: ``[checks.motor-current.params]
basis`` maps each purpose (``conductor``, ``ocpd``, ``disconnect``,
``overload``, ``duty_cycle``) to one of

* ``"nameplate-first"``: the nameplate current, else the motor current table
  (the CEC reading used by ``rulesets/cec-2015.toml``);
* ``"table"``: the motor current table even when a nameplate current is given,
  the nameplate only where the table has no value (the NEC reading, 430.6(A)(1));
* ``"nameplate"``: the nameplate current only (overloads under both codes).

Every finding says which current it used and why. The table look-up maps a
schedule (system) voltage to the table's motor-voltage column through the
ruleset's voltage bands and records that mapping in the trail. kW-rated motors
are never converted to horsepower here (no conversion table is encoded): the
table look-up reports that it needs the hp, and the nameplate is used where
the basis allows it.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, num
from checker.rules.ruleset import Ruleset, hp_key

CHECK_ID = "motor-current"
PURPOSES = ("conductor", "ocpd", "disconnect", "overload", "duty_cycle")
# How motorcheck behaved before rulesets named a basis; not a code value (see module docstring).
DEFAULT_BASIS = {"conductor": "nameplate-first", "ocpd": "nameplate-first", "disconnect": "nameplate-first",
                 "duty_cycle": "nameplate-first", "overload": "nameplate"}
PURPOSE_WORDS = {"conductor": "conductors", "ocpd": "short-circuit and ground-fault devices",
                 "disconnect": "disconnecting means", "overload": "overload protection",
                 "duty_cycle": "duty-cycle conductors"}


@dataclass(frozen=True, slots=True)
class CurrentBasis:
    """The current a motor's calculations start from.

    current_a is None when no usable current exists; ``problem`` then says
    what is missing. ``table_a`` / ``nameplate_a`` keep both currents when
    both are known, so a check can say what it did not use.
    """

    current_a: float | None
    basis: str  # 'nameplate' | 'table' | 'none'
    trail: tuple[str, ...]
    assumptions: tuple[str, ...]
    fields: tuple[str, ...]
    problem: str | None = None
    purpose: str = "conductor"
    table_a: float | None = None
    nameplate_a: float | None = None
    table_citation: str | None = None

    def label(self) -> str:
        return "nameplate FLA" if self.basis == "nameplate" else "table FLC"


@dataclass(frozen=True, slots=True)
class TableLookup:
    """Result of reading the motor current tables: a value with its trail, or a problem."""

    current_a: float | None
    trail: tuple[str, ...] = ()
    citation: str | None = None
    problem: str | None = None


def _voltage_band(voltage_v: float, bands: list[dict]) -> dict | None:
    for band in bands:
        if band["min_v"] <= voltage_v <= band["max_v"]:
            return band
    return None


def basis_mode(ruleset: Ruleset, purpose: str) -> str:
    """The ruleset's basis for ``purpose`` ('table', 'nameplate-first' or 'nameplate')."""
    if purpose not in PURPOSES:
        raise ValueError(f"unknown current purpose {purpose!r}; expected one of {', '.join(PURPOSES)}")
    return ruleset.check(CHECK_ID).params.get("basis", {}).get(purpose, DEFAULT_BASIS[purpose])


def lookup_table_current(record: dict, ruleset: Ruleset) -> TableLookup:
    """Full-load current from the motor current tables by hp, phase and voltage (nameplate ignored)."""
    params = ruleset.check(CHECK_ID).params
    hp, voltage_v, phase = record.get("hp"), record.get("voltage_v"), record.get("phase")
    if record.get("current_type") == "dc" or record.get("motor_type") == "dc":
        return TableLookup(None, problem="the motor current tables used here cover AC motors only")
    if record.get("motor_type") == "synchronous":
        return TableLookup(None, problem="synchronous-motor currents depend on the power factor, which the schedule "
                                         "does not give")
    if hp is None and record.get("kw") is not None:
        return TableLookup(None, problem=(f"the motor is rated {num(record['kw'])} kW and the tables are by horsepower; "
                                          f"no kW-to-hp conversion is applied, so give the hp"))
    missing = [name for name, value in (("hp", hp), ("voltage", voltage_v), ("phase", phase)) if value is None]
    if missing:
        return TableLookup(None, problem=f"no {', '.join(missing)} for a table look-up")
    table = ruleset.table(params["three_phase_table"] if phase == 3 else params["single_phase_table"])
    band = _voltage_band(voltage_v, params["voltage_columns"])
    if band is None or band["column"] not in (table.columns or ()):
        return TableLookup(None, citation=table.citation,
                           problem=f"{table.citation} has no column for {num(voltage_v)} V")
    column = band["column"]
    value = table.get(hp_key(hp), column)
    if value is None:
        return TableLookup(None, citation=table.citation,
                           problem=f"{table.citation} lists no {num(hp)} hp motor at {column} V")
    trail = [voltage_mapping_line(voltage_v, band, params.get("voltage_rule"))]
    trail.append(f"{table.citation}: {num(hp)} hp, {'three' if phase == 3 else 'single'}-phase, "
                 f"{column} V column = {num(value)} A")
    return TableLookup(float(value), tuple(line for line in trail if line), table.citation)


def voltage_mapping_line(voltage_v: float, band: dict, rule: str | None) -> str:
    """Trail line for a schedule voltage read in a differently labelled column (480 V -> 460 V)."""
    column = band["column"]
    try:
        if float(column) == float(voltage_v):
            return ""
    except ValueError:
        pass
    where = f" ({rule})" if rule else ""
    return (f"Schedule voltage {num(voltage_v)} V taken as a {column} V motor rating: {column} V column, which serves "
            f"{num(band['min_v'])}-{num(band['max_v'])} V systems{where}")


def table_current(record: dict, ruleset: Ruleset) -> CurrentBasis:
    """Full-load current from the motor current tables, as a :class:`CurrentBasis` (nameplate ignored)."""
    found = lookup_table_current(record, ruleset)
    fields = ("hp", "voltage_v", "phase")
    if found.current_a is None:
        return CurrentBasis(None, "none", (), (), fields, found.problem, table_citation=found.citation)
    assumption = f"No nameplate FLA on the schedule: {num(found.current_a)} A from {found.citation} used instead."
    return CurrentBasis(found.current_a, "table", found.trail, (assumption,), fields,
                        table_a=found.current_a, table_citation=found.citation)


def current_basis(record: dict, ruleset: Ruleset, purpose: str = "conductor") -> CurrentBasis:
    """The current ``purpose`` starts from under this ruleset (see the module docstring).

    Parameters
    ----------
    record : the motor record (schemas/motor.schema.json).
    ruleset : the loaded ruleset; ``[checks.motor-current.params] basis`` decides.
    purpose : 'conductor', 'ocpd', 'disconnect', 'overload' or 'duty_cycle'.
    """
    mode = basis_mode(ruleset, purpose)
    params = ruleset.check(CHECK_ID).params
    fla = record.get("fla_a")
    nameplate = None if fla is None else float(fla)
    if mode == "nameplate":
        rule = params.get("overload_basis_rule") if purpose == "overload" else None
        if nameplate is None:
            where = f" ({rule})" if rule else ""
            return CurrentBasis(None, "none", (), (), ("fla_a",),
                                f"{PURPOSE_WORDS[purpose]} is sized from the motor nameplate current{where}, which the "
                                f"schedule does not give", purpose=purpose)
        cite = f" ({rule})" if rule else ""
        return CurrentBasis(nameplate, "nameplate", (f"Nameplate FLA = {num(nameplate)} A{cite}",), (), ("fla_a",),
                            purpose=purpose, nameplate_a=nameplate)
    if mode == "nameplate-first":
        if nameplate is not None:
            return CurrentBasis(nameplate, "nameplate", (f"Nameplate FLA = {num(nameplate)} A",), (), ("fla_a",),
                                purpose=purpose, nameplate_a=nameplate)
        found = table_current(record, ruleset)
        if found.current_a is None:
            return CurrentBasis(None, "none", (), (), found.fields, f"no nameplate FLA and {found.problem}",
                                purpose=purpose, table_citation=found.table_citation)
        return CurrentBasis(found.current_a, "table", found.trail, found.assumptions, found.fields, purpose=purpose,
                            table_a=found.current_a, table_citation=found.table_citation)
    return _table_basis(record, ruleset, purpose, nameplate)


def _table_basis(record: dict, ruleset: Ruleset, purpose: str, nameplate: float | None) -> CurrentBasis:
    """The 'table' mode: table value whenever it exists, nameplate (with an assumption) otherwise."""
    rule = ruleset.check(CHECK_ID).params.get("basis_rule")
    cite = f" ({rule})" if rule else ""
    found = lookup_table_current(record, ruleset)
    fields = ("hp", "voltage_v", "phase")
    if found.current_a is not None:
        trail = list(found.trail)
        trail.append(f"Table current used for {PURPOSE_WORDS[purpose]}{cite}"
                     + (f"; nameplate {num(nameplate)} A not used for this purpose" if nameplate is not None else ""))
        return CurrentBasis(found.current_a, "table", tuple(trail), (), fields + ("fla_a",), purpose=purpose,
                            table_a=found.current_a, nameplate_a=nameplate, table_citation=found.citation)
    if nameplate is None:
        return CurrentBasis(None, "none", (), (), fields + ("fla_a",), f"no nameplate FLA and {found.problem}",
                            purpose=purpose, table_citation=found.citation)
    assumption = (f"Table current not available ({found.problem}): nameplate FLA {num(nameplate)} A used for "
                  f"{PURPOSE_WORDS[purpose]} instead{cite}.")
    return CurrentBasis(nameplate, "nameplate", (f"Nameplate FLA = {num(nameplate)} A",), (assumption,),
                        ("fla_a",) + fields, purpose=purpose, nameplate_a=nameplate, table_citation=found.citation)


def synchronous_unity_pf_a(record: dict, ruleset: Ruleset) -> tuple[float | None, str]:
    """Unity-power-factor table current of a synchronous motor (None when not tabulated), with a trail line."""
    params = ruleset.check(CHECK_ID).params
    name = params.get("synchronous_table")
    hp, voltage_v = record.get("hp"), record.get("voltage_v")
    if not name or hp is None or voltage_v is None or record.get("phase") == 1:
        return None, ""
    table = ruleset.table(name)
    band = _voltage_band(voltage_v, params["voltage_columns"])
    if band is None:
        return None, ""
    value = table.get(hp_key(hp), band["column"])
    if value is None:
        return None, ""
    return float(value), (f"{table.citation}: {num(hp)} hp synchronous, {band['column']} V column, unity power factor "
                          f"= {num(value)} A (higher at lower power factor)")


def check_motor_current(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Report which full-load current the other checks start from, and flag a schedule current that is
    lower than the table current where the ruleset sizes conductors and devices from the table."""
    spec = ruleset.check(CHECK_ID)
    basis = current_basis(motor.record, ruleset, "conductor")
    if basis.current_a is None:
        return [Finding(CHECK_ID, spec.rule, Status.NEEDS_INFO,
                        f"Full-load current cannot be established: {basis.problem}.",
                        unit="A", fields=("fla_a",) + basis.fields, citation=spec.citation)]
    source = "the nameplate" if basis.basis == "nameplate" else "the motor full-load current table"
    message = f"Full-load current {num(basis.current_a)} A from {source}."
    uses = _purpose_summary(ruleset, basis)
    if uses:
        message += " " + uses
    findings = [Finding(CHECK_ID, spec.rule, Status.PASS, message, provided=basis.current_a, unit="A",
                        trail=basis.trail, assumptions=basis.assumptions, fields=basis.fields,
                        citation=spec.citation)]
    flag = _nameplate_below_table(motor.record, ruleset, basis)
    if flag is not None:
        findings.append(flag)
    return findings


def _purpose_summary(ruleset: Ruleset, basis: CurrentBasis) -> str:
    """One sentence naming which purposes use the table and which the nameplate (only when they differ)."""
    modes = {p: basis_mode(ruleset, p) for p in ("conductor", "ocpd", "disconnect", "overload")}
    if len(set(modes.values())) == 1:
        return ""
    table_uses = [PURPOSE_WORDS[p] for p, m in modes.items() if m == "table"]
    if basis.basis != "table" or not table_uses:
        return ""
    text = f"Used for {', '.join(table_uses)}"
    if modes["overload"] == "nameplate":
        text += ("; overload protection uses the nameplate current"
                 + (f" ({num(basis.nameplate_a)} A)." if basis.nameplate_a is not None else ", which the schedule does not give."))
    else:
        text += "."
    return text


def _nameplate_below_table(record: dict, ruleset: Ruleset, basis: CurrentBasis) -> Finding | None:
    """NEEDS_INFO when the schedule's current is lower than the table current the code requires."""
    if basis_mode(ruleset, "conductor") != "table":
        return None
    spec = ruleset.check(CHECK_ID)
    rule = spec.params.get("basis_rule", spec.rule)
    nameplate = basis.nameplate_a
    if nameplate is None:
        return None
    table_a, line = basis.table_a, ""
    if record.get("motor_type") == "synchronous":
        table_a, line = synchronous_unity_pf_a(record, ruleset)
    if table_a is None or nameplate >= table_a:
        return None
    trail = tuple(t for t in (line,) if t) + basis.trail + (f"Schedule FLA {num(nameplate)} A < table {num(table_a)} A",)
    if record.get("motor_type") == "synchronous":
        message = (f"Schedule FLA {num(nameplate)} A is below even the unity-power-factor table current "
                   f"{num(table_a)} A; confirm the nameplate current and the power factor, and that conductors and "
                   f"devices were not sized from the lower value.")
    else:
        message = (f"Schedule FLA {num(nameplate)} A (nameplate) is below the table current {num(table_a)} A. "
                   f"Conductors, short-circuit devices and disconnects must be sized from {num(table_a)} A ({rule}), "
                   f"as this review does; confirm the design did not use {num(nameplate)} A.")
    return Finding(CHECK_ID, rule, Status.NEEDS_INFO, message, limit=table_a, provided=nameplate, unit="A",
                   trail=trail, fields=("fla_a", "hp", "voltage_v", "phase"), citation=spec.citation)
