"""Bonding (equipment grounding) conductor of a motor branch circuit.

The minimum size comes from the ruleset's bonding table, entered either with
the branch overcurrent device rating (``index_by = "device-rating"``) or with
the allowable ampacity of the phase conductors (``"conductor-ampacity"``).
Where the ruleset asks for it, the size grows in proportion to the
circular-mil area of phase conductors that are larger than the smallest size
with enough ampacity (upsized, e.g. for voltage drop). The bond need not be
larger than the phase conductors where ``cap_at_phase_conductor`` is true.

Bonding tables are stored by conductor size: each row holds, per material,
the largest device rating (or ampacity) for which that size is the table's
minimum. That keeps every cell a number while losing nothing.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, NotRun, Status
from checker.rules.common import MATERIAL_NAMES, ReviewOptions, num, size_label
from checker.rules.conductors import check_conductor_ampacity, conductor_ampacity_a, work_out
from checker.rules.ruleset import Ruleset, Table

CHECK_ID = "bonding"
AMPACITY_CHECK = "conductor-ampacity"
_CABLE_WORDS = ("TECK", "ACWU", "AC90", "MC", "TC", "NMD", "NMWU")


def sizes_by_area(area: Table) -> list[str]:
    """Conductor sizes of the area table, smallest first."""
    return sorted(area.rows, key=lambda size: area.get(size, "cmil") or 0.0)


def area_cmil(area: Table, size: str) -> float | None:
    return area.get(size, "cmil")


def smallest_size_covering(table: Table, area: Table, material: str, amount: float) -> str | None:
    """Smallest size whose row covers ``amount`` (a device rating or an ampacity) for the material."""
    for size in sizes_by_area(area):
        cover = table.get(size, material)
        if cover is not None and cover >= amount:
            return size
    return None


def smallest_size_with_area(area: Table, sizes: list[str], needed_cmil: float) -> str | None:
    """Smallest of ``sizes`` whose area is at least ``needed_cmil``."""
    for size in sorted(sizes, key=lambda s: area.get(s, "cmil") or 0.0):
        if (area.get(size, "cmil") or 0.0) >= needed_cmil:
            return size
    return None


def _label(size: str, material: str) -> str:
    return f"{size_label(size)} {MATERIAL_NAMES[material]}"


def _index_value(record: dict, conductor: dict, ruleset: Ruleset, params: dict):
    """(amount to enter the table with, trail line, problem)."""
    if params["index_by"] == "device-rating":
        ocpd = record.get("ocpd")
        if ocpd is None:
            return None, "", "the branch overcurrent device rating, which the table is entered with, is not given"
        if ocpd.get("device") == "instantaneous-trip-breaker":
            rule = params.get("instantaneous_trip_rule", "the code")
            return None, "", (f"the device is an instantaneous-trip breaker, for which {rule} sizes the bond from the "
                              f"largest time-delay fuse the motor could have; review by hand")
        return ocpd["rating_a"], f"Branch device {num(ocpd['rating_a'])} A", None
    ampacity_a, line = conductor_ampacity_a(conductor, ruleset)
    if ampacity_a is None:
        return None, "", line
    return ampacity_a, f"Phase conductor ampacity: {line}", None


@dataclass(frozen=True, slots=True)
class MinimumSizes:
    """Smallest phase size with enough ampacity, read two ways.

    ``favourable`` reads every candidate size the way a lenient conductor check
    does (its first reading, e.g. 75 degC terminations); ``cautious`` asks that
    every reading carry the current (e.g. 60 degC terminations as well).
    ``cautious_consistent`` is True when the installed conductor itself carries
    the current under every reading, so that the cautious reading is a possible
    description of the installation.
    """

    favourable: str | None
    cautious: str | None
    cautious_consistent: bool
    lines: dict[str, str]
    problem: str | None = None


def minimum_phase_sizes(motor: Motor, ruleset: Ruleset, options: ReviewOptions, material: str) -> MinimumSizes:
    """The smallest phase sizes with enough ampacity (see :class:`MinimumSizes`).

    The required ampacity is the conductor-ampacity check's minimum (or the
    marked MCA of packaged equipment); each candidate size is read the way the
    conductor-ampacity check reads the installed one (termination column,
    ambient and conductor-count corrections where the schedule gives them), so
    a size increase that those corrections force is not counted as upsizing.
    """
    record = motor.record
    if record.get("mca_a") is not None:
        required_a, source = record["mca_a"], "marked MCA"
    else:
        limits = [f.limit for f in check_conductor_ampacity(motor, ruleset, options) if f.limit is not None]
        if not limits:
            return MinimumSizes(None, None, False, {}, "the minimum conductor ampacity cannot be computed")
        required_a, source = max(limits), "minimum conductor ampacity"
    params = ruleset.check(AMPACITY_CHECK).params
    table = ruleset.table(params["copper_table"] if material == "cu" else params["aluminum_table"])
    area = ruleset.table(ruleset.check(CHECK_ID).params["area_table"])
    conductor = {**record["conductor"], "sets": 1}

    def carried(size: str) -> tuple[float | None, float | None, bool]:
        readings = work_out(record, {**conductor, "size": size}, ruleset, required_a)
        amps = [r.ampacity_a for r in readings]
        worst = None if any(a is None for a in amps) else min(amps)
        return amps[0], worst, readings[0].corrected

    found: dict[str, str] = {}
    lines: dict[str, str] = {}
    for size in sizes_by_area(area):
        if size not in table.rows:
            continue
        first, worst, corrected = carried(size)
        for key, value in (("favourable", first), ("cautious", worst)):
            if key not in found and value is not None and value >= required_a:
                found[key] = size
                how = " after the same corrections" if corrected else ""
                lines[key] = (f"Smallest {MATERIAL_NAMES[material]} size for the {num(round(required_a, 2))} A "
                              f"{source}: {size_label(size)} ({num(round(value, 2))} A{how}, {table.citation})")
        if len(found) == 2:
            break
    if "favourable" not in found:
        return MinimumSizes(None, None, False, {}, f"no single {MATERIAL_NAMES[material]} conductor in the table "
                            f"carries {num(required_a)} A")
    installed_worst = carried(conductor["size"])[1] if conductor["size"] in table.rows else None
    consistent = installed_worst is not None and installed_worst >= required_a
    return MinimumSizes(found["favourable"], found.get("cautious"), consistent, lines)


@dataclass(frozen=True, slots=True)
class Requirement:
    """One reading of the minimum bond: its size and area, the trail behind it and what it assumes."""

    size: str
    cmil: float
    trail: tuple[str, ...] = ()
    assumption: str | None = None
    condition: str | None = None  # the same, short, for a message


def check_bonding(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """The bond must be at least the table size (increased in proportion for upsized phase conductors)."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    fields = ("conductor", "ocpd")

    def finding(status, message, **kw):
        return Finding(CHECK_ID, spec.rule, status, message, unit="cmil", fields=fields, citation=spec.citation, **kw)

    conductor = record.get("conductor")
    if conductor is None:
        return [finding(Status.NEEDS_INFO, "No branch-circuit conductor could be read, so the bonding conductor "
                        "cannot be checked.")]
    table = ruleset.table(params["bond_table"])
    area = ruleset.table(params["area_table"])
    phase_material = conductor.get("material", "cu")
    material = conductor.get("bond_material", phase_material)
    assumptions: list[str] = []
    if conductor.get("bond_size") and "bond_material" not in conductor:
        assumptions.append(f"Bond material not stated: taken as the phase conductors' ({MATERIAL_NAMES[material]}).")
    amount, line, problem = _index_value(record, conductor, ruleset, params)
    if problem:
        return [finding(Status.NEEDS_INFO, f"The minimum bond cannot be found: {problem}.",
                        assumptions=tuple(assumptions))]
    trail = [line]
    base = smallest_size_covering(table, area, material, amount)
    if base is None:
        return [finding(Status.NEEDS_INFO, f"{num(amount)} A is beyond {table.citation}; size the bond by hand.",
                        trail=tuple(trail), assumptions=tuple(assumptions))]
    trail.append(f"{table.citation}: {num(amount)} A → {_label(base, material)} minimum")
    readings = [Requirement(base, area_cmil(area, base))]
    if params.get("proportional_increase"):
        readings = _proportional(motor, ruleset, options, conductor, area, material, base, params, assumptions)
    if params.get("cap_at_phase_conductor") and material == phase_material and conductor.get("sets", 1) == 1:
        phase_cmil = area_cmil(area, conductor["size"])
        cap = f"capped at the phase conductor size {size_label(conductor['size'])} ({params.get('cap_rule', spec.rule)})"
        readings = [Requirement(conductor["size"], phase_cmil, r.trail + (cap[0].upper() + cap[1:],), r.assumption)
                    if phase_cmil is not None and r.cmil > phase_cmil else r for r in readings]
    return [_verdict(finding, conductor, area, material, readings, trail, assumptions, options)]


def _verdict(finding, conductor, area, material, readings, trail, assumptions, options) -> Finding | NotRun:
    """Compare the bond with every reading of the requirement (readings[0] is the one favourable to the
    submission); a lenient review passes when it passes, stating what that reading assumes."""
    first = readings[0]
    trail = trail + list(first.trail)
    for other in readings[1:]:
        trail.append("Otherwise: " + "; ".join(other.trail[-1:]))
    bond = conductor.get("bond_size")
    kw = {"limit": first.cmil, "trail": tuple(trail), "assumptions": tuple(assumptions)}
    if not bond:
        cable = any(w in (conductor.get("insulation") or "").upper() for w in _CABLE_WORDS)
        alt = [r for r in readings[1:] if r.size != first.size]
        more = f" ({first.condition}; otherwise {_label(alt[0].size, material)})" if alt and first.condition else ""
        # A cable's own bond or a metal raceway may serve, so an unstated bond is not itself a deficiency.
        reason = ("the cable's own bonding conductor is not written on the schedule" if cable
                  else "no bonding conductor shown on the schedule")
        return NotRun(CHECK_ID, reason, f"bond must be at least {_label(first.size, material)}{more}")
    bond_cmil = area_cmil(area, bond)
    if bond_cmil is None:
        return finding(Status.NEEDS_INFO, f"Bond size {size_label(bond)} is not in {area.citation}; confirm it.", **kw)
    passes = [bond_cmil >= r.cmil for r in readings]
    trail.append(f"Bond {_label(bond, material)} = {num(bond_cmil)} cmil {'≥' if passes[0] else '<'} "
                 f"{num(round(first.cmil))} cmil ({_label(first.size, material)})")
    kw.update(trail=tuple(trail), provided=bond_cmil)
    if all(passes):
        return finding(Status.PASS, f"{_label(bond, material)} bond is at least the {_label(first.size, material)} "
                       f"required.", **kw)
    if not any(passes):
        return finding(Status.FAIL, f"{_label(bond, material)} bond is smaller than the {_label(first.size, material)} "
                       f"required; increase it.", **kw)
    other = next(r for r, ok in zip(readings, passes) if not ok)
    kw["assumptions"] = tuple(assumptions) + ((first.assumption,) if first.assumption else ())
    if options.strict:
        return finding(Status.NEEDS_INFO, f"{_label(bond, material)} bond is enough only {first.condition}; "
                       f"otherwise {_label(other.size, material)} is required.", **kw)
    return finding(Status.PASS, f"{_label(bond, material)} bond is at least the {_label(first.size, material)} "
                   f"required {first.condition} (otherwise {_label(other.size, material)}; see assumptions).", **kw)


def _proportional(motor, ruleset, options, conductor, area, material, base, params, assumptions) -> list[Requirement]:
    """The table size increased in proportion to upsized phase conductors (one set only), under each reading
    of the smallest phase size; the reading favourable to the submission first."""
    base_cmil = area_cmil(area, base)
    rule = params.get("proportional_rule", "")
    if conductor.get("sets", 1) > 1:
        assumptions.append(f"Parallel sets: the proportional increase of {rule} is not evaluated; each raceway's "
                           f"bond is sized from the device rating.")
        return [Requirement(base, base_cmil)]
    minimum = minimum_phase_sizes(motor, ruleset, options, conductor.get("material", "cu"))
    if minimum.problem:
        assumptions.append(f"The proportional increase of {rule} could not be evaluated: {minimum.problem}.")
        return [Requirement(base, base_cmil)]
    readings = [_increase(conductor, area, material, base, minimum.favourable, minimum.lines["favourable"], rule)]
    if minimum.cautious_consistent and minimum.cautious and minimum.cautious != minimum.favourable:
        cautious = _increase(conductor, area, material, base, minimum.cautious, minimum.lines["cautious"], rule)
        note = (f"The smallest phase size with enough ampacity is taken as {size_label(minimum.cautious)}, what "
                f"every reading of the terminations and corrections needs; with the most favourable reading it is "
                f"{size_label(minimum.favourable)} and the phase conductors count as upsized ({rule}).")
        condition = f"if {size_label(minimum.cautious)} is the smallest adequate phase size"
        readings = [Requirement(cautious.size, cautious.cmil, cautious.trail, note, condition), readings[0]]
    return readings


def _increase(conductor, area, material, base, minimum, line, rule) -> Requirement:
    base_cmil = area_cmil(area, base)
    actual_cmil, min_cmil = area_cmil(area, conductor["size"]), area_cmil(area, minimum)
    if actual_cmil is None or min_cmil is None or actual_cmil <= min_cmil:
        return Requirement(base, base_cmil, (line, (f"Phase conductors {size_label(conductor['size'])} are not "
                                                   f"upsized: no increase ({rule})")))
    ratio = actual_cmil / min_cmil
    needed = base_cmil * ratio
    size = smallest_size_with_area(area, list(area.rows), needed) or base
    return Requirement(size, max(needed, base_cmil), (
        line, (f"{rule}: phase conductors upsized {size_label(minimum)} → {size_label(conductor['size'])}, "
              f"{num(actual_cmil)} / {num(min_cmil)} cmil = ×{ratio:.3f}; {num(base_cmil)} × {ratio:.3f} = "
              f"{num(round(needed))} cmil → {_label(size, material)}")))
