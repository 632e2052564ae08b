"""Motor overload protection: the largest overload setting a motor may have.

The limit is a percentage of the motor's NAMEPLATE full-load current (never a
table value): a higher percentage for motors marked with a service factor of
at least a threshold value (or, where the ruleset says so, a rated
temperature rise of at most a threshold), a lower one for all other motors.
Some codes allow a further step when the first setting will not start the
motor; a setting in that band needs the submission's justification. Rule
numbers, percentages and thresholds all come from ``[checks.overload]``.
"""
from __future__ import annotations

from dataclasses import dataclass

from checker.model import Finding, Motor, NotRun, Status
from checker.rules.common import ReviewOptions, calc, num
from checker.rules.disconnect import motor_current
from checker.rules.ruleset import Ruleset

CHECK_ID = "overload"

_NO_SETTING = {
    "no-setting": "the overload column gives a trip class or relay type but no current setting",
    "drive": "the overload protection is provided by the drive, whose motor-current setting is not given",
    "soft-starter": "the overload protection is provided by the soft starter, whose setting is not given",
}


@dataclass(frozen=True, slots=True)
class Reading:
    """One way the motor's marking can be read, with its limits as percentages of nameplate current."""

    percent: float
    relief_percent: float | None
    rule: str
    why: str


def readings(record: dict, params: dict) -> tuple[list[Reading], list[str]]:
    """Percentages that may apply to this motor, and what they assume.

    Two readings mean the schedule does not say whether the motor qualifies
    for the higher percentage; the caller passes only when every reading
    passes and fails only when every reading fails (lenient and strict
    reviews alike: nothing is assumed).
    """
    sf_min = params["service_factor_min"]
    rise_max = params.get("temperature_rise_max_c")
    high = Reading(params["high_percent"], params.get("relief_high_percent"), params["high_rule"], "")
    low = Reading(params["low_percent"], params.get("relief_low_percent"), params["low_rule"], "")
    sf, rise = record.get("service_factor"), record.get("temp_rise_c")
    assumptions: list[str] = []
    if sf is not None and sf >= sf_min:
        return [Reading(high.percent, high.relief_percent, high.rule,
                        f"service factor {num(sf)} ≥ {num(sf_min)}")], assumptions
    if rise_max is not None and rise is not None and rise <= rise_max:
        assumptions.append(f"{params['high_rule']} read as service factor ≥ {num(sf_min)} OR temperature rise "
                           f"≤ {num(rise_max)} °C (the usual reading; one published view requires both).")
        return [Reading(high.percent, high.relief_percent, high.rule,
                        f"temperature rise {num(rise)} °C ≤ {num(rise_max)} °C")], assumptions
    rise_known_out = rise_max is None or rise is not None
    if sf is not None and rise_known_out:
        why = f"service factor {num(sf)} < {num(sf_min)}"
        if rise_max is not None:
            why += f" and temperature rise {num(rise)} °C > {num(rise_max)} °C"
        return [Reading(low.percent, low.relief_percent, low.rule, why)], assumptions
    missing = "service factor" if rise_known_out else ("service factor or temperature rise" if sf is None
                                                       else "temperature rise")
    qualify = f"service factor ≥ {num(sf_min)}" + (f" or temperature rise ≤ {num(rise_max)} °C" if rise_max else "")
    return [Reading(low.percent, low.relief_percent, low.rule, f"{missing} not stated: other motors"),
            Reading(high.percent, high.relief_percent, high.rule, f"{missing} not stated: if the nameplate shows "
                    f"{qualify}")], assumptions


def _setting_a(setting: dict, fla_a: float) -> tuple[float | None, float | None, str | None]:
    """(lowest, highest) current the overload can be set to, and a trail line for percentages."""
    kind = setting["kind"]
    if kind in ("setting", "heater"):
        return setting["setting_a"], setting["setting_a"], None
    if kind == "range":
        return setting["range_min_a"], setting["range_max_a"], None
    if kind == "percent":
        value = fla_a * setting["percent"] / 100
        return value, value, f"Setting {num(setting['percent'])} % of {num(fla_a)} A = {calc(value)} A"
    return None, None, None


def _maximum_detail(record: dict, ruleset: Ruleset, params: dict) -> str:
    """This motor's maximum overload setting, for a check that could not run, or why it is unknown."""
    fla_a = motor_current(record, ruleset, params.get("current_purpose", "overload")).current_a
    if fla_a is None:
        return "the maximum needs the nameplate current, which the schedule does not give"
    if (record.get("duty") or {}).get("service", "continuous") != "continuous":
        return "non-continuous duty: review the overload protection by hand"
    found, _ = readings(record, params)
    return f"setting must not exceed {calc(min(fla_a * r.percent / 100 for r in found))} A"


def check_overload(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """The overload setting must not exceed the ruleset's percentage of nameplate full-load current."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    fields = ("overload_setting", "fla_a", "service_factor", "temp_rise_c")

    def finding(status, message, rule=spec.rule, **kw):
        return Finding(CHECK_ID, rule, status, message, unit="A", fields=fields, citation=spec.citation, **kw)

    setting = record.get("overload_setting")
    if setting is None and (record.get("mca_a") is not None or record.get("mocp") is not None):
        return []  # packaged equipment protects its own motors; its marking is checked by packaged-mca-mocp
    # Schedules rarely carry overload settings (they are set in the field from the nameplate): without a
    # setting in amperes the check cannot run; it is summarised once, with this motor's maximum as detail.
    if setting is None or setting["kind"] in _NO_SETTING or setting["kind"] == "integral":
        reason = ("no overload setting in amperes on the schedule" if setting is None
                  else _NO_SETTING.get(setting["kind"], "thermal protector integral with the motor (its marking "
                                                        "governs)"))
        return [NotRun(CHECK_ID, reason, _maximum_detail(record, ruleset, params))]
    basis = motor_current(record, ruleset, params.get("current_purpose", "overload"))
    fla_a = basis.current_a
    if fla_a is None:
        return [finding(Status.NEEDS_INFO, f"The overload limit cannot be computed: {basis.problem}.")]
    duty_assumed = []
    if record.get("duty") is None:
        if options.strict:
            return [finding(Status.NEEDS_INFO, "The overload rule depends on the duty, which is not stated (strict "
                            "review assumes nothing).")]
        duty_assumed.append("Duty not stated: reviewed as a continuous-duty motor.")
    duty = (record.get("duty") or {}).get("service", "continuous")
    if duty != "continuous":
        rule = params.get("non_continuous_rule")
        where = f" (see {rule})" if rule else " (not encoded in this ruleset)"
        return [finding(Status.NEEDS_INFO, f"{duty.capitalize()}-duty motor: the overload rule for motors that do not "
                        f"run continuously differs{where}; review the overload protection by hand.")]
    found, assumptions = readings(record, params)
    trail = list(basis.trail)
    assumptions = list(basis.assumptions) + duty_assumed + assumptions
    for r in found:
        trail.append(f"{r.why}: {num(r.percent)} % ({r.rule}) → {num(fla_a)} A × {num(r.percent)} % = "
                     f"{calc(fla_a * r.percent / 100)} A maximum")
    limits = [fla_a * r.percent / 100 for r in found]
    limit = min(limits)
    low_a, high_a, line = _setting_a(setting, fla_a)
    if low_a is None:
        return [NotRun(CHECK_ID, "no overload setting in amperes on the schedule",
                       f"setting must not exceed {calc(limit)} A")]
    if line:
        trail.append(line)
    rule = found[0].rule if len(found) == 1 else spec.rule

    def ruled(status, message, **kw):
        return finding(status, message, rule=rule, **kw)

    return [_verdict(ruled, found, fla_a, low_a, high_a, setting, trail, assumptions, params)]


def _verdict(finding, found, fla_a, low_a, high_a, setting, trail, assumptions, params) -> Finding:
    """Compare the setting (or the dial range low_a..high_a) with every reading."""
    shown = f"{num(low_a)}–{num(high_a)} A dial range" if high_a != low_a else f"{calc(high_a)} A setting"
    if setting["kind"] == "heater":
        shown = f"{num(high_a)} A heater"
    statuses = []
    for r in found:
        limit = fla_a * r.percent / 100
        relief = fla_a * r.relief_percent / 100 if r.relief_percent else None
        if high_a <= limit:
            statuses.append("pass")
        elif low_a <= limit:
            statuses.append("range")
        elif relief is not None and high_a <= relief:
            statuses.append("relief")
        else:
            statuses.append("fail")
    limit = min(fla_a * r.percent / 100 for r in found)
    top = max(fla_a * r.percent / 100 for r in found)
    note = ""
    if low_a < fla_a:
        note = f" Note: {num(low_a)} A is below the {num(fla_a)} A nameplate current; the motor may trip at full load."
    kw = {"limit": limit, "provided": high_a, "trail": tuple(trail), "assumptions": tuple(assumptions)}
    if all(s == "pass" for s in statuses):
        trail.append(f"{num(high_a)} A ≤ {calc(limit)} A")
        return finding(Status.PASS, f"{shown.capitalize()} is within the {calc(limit)} A maximum.{note}", **kw)
    if all(s == "fail" for s in statuses):
        relief = [r.relief_percent for r in found if r.relief_percent]
        cap = max(fla_a * p / 100 for p in relief) if relief else top
        trail.append(f"{num(low_a)} A > {calc(cap)} A")
        extra = f" and above the {calc(cap)} A allowed where the motor will not start" if relief else ""
        return finding(Status.FAIL, f"{shown.capitalize()} exceeds the {calc(top)} A maximum{extra}; "
                       f"set or size it at {calc(top)} A or less.", **kw)
    if all(s == "relief" for s in statuses):
        relief_rule = params.get("relief_rule", "")
        caps = [fla_a * r.relief_percent / 100 for r in found]
        trail.append(f"{calc(top)} A < {num(high_a)} A ≤ {calc(min(caps))} A ({relief_rule})")
        return finding(Status.NEEDS_INFO, f"{shown.capitalize()} is above the {calc(top)} A maximum but within the "
                       f"{calc(min(caps))} A permitted by {relief_rule} only where the lower setting will not start "
                       f"the motor or carry its load; the submission must show that.", **kw)
    if "range" in statuses and all(s in ("pass", "range") for s in statuses):
        trail.append(f"dial range {num(low_a)}–{num(high_a)} A includes settings above {calc(limit)} A")
        return finding(Status.NEEDS_INFO, f"The relay can be set above the limit; confirm it is set at no more than "
                       f"{calc(limit)} A.", **kw)
    trail.append(f"{num(high_a)} A is within some readings ({calc(limit)}–{calc(top)} A) but not all")
    return finding(Status.NEEDS_INFO, f"{shown.capitalize()} passes or fails depending on the motor's marking "
                   f"({found[-1].why.split(': ')[0]}); confirm from the nameplate.", **kw)
