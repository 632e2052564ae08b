"""Motor disconnecting means: ampere rating (or horsepower rating) large enough.

The disconnect's ampere rating must be at least a percentage of the motor's
full-load current, or its horsepower rating at least the motor's. Which
full-load current (nameplate first, or the table value) is the ruleset's
choice through ``current_purpose``; the percentage and rule numbers come from
``[checks.disconnect]``. A fused disconnect's fuse rating is shown in the
trail; the branch-circuit device check works from the separate overcurrent
column.
"""
from __future__ import annotations

from checker.model import Finding, Motor, Status
from checker.rules.common import ReviewOptions, calc, num
from checker.rules.current import CurrentBasis, current_basis
from checker.rules.ruleset import Ruleset

CHECK_ID = "disconnect"

_BREAKERS = ("breaker", "inverse-time-breaker")
_MEANS_NEEDS = {
    "integral": "The disconnect is integral with the equipment: confirm it is rated for the motor load "
                "(the schedule does not give its rating)",
    "general-use-switch": "The disconnect is a general-use (toggle) switch, which serves only small motors; "
                          "its ampere rating must be shown",
    "plug": "The disconnect is an attachment plug and receptacle: confirm the plug's ampere or horsepower rating",
}


def motor_current(record: dict, ruleset: Ruleset, purpose: str) -> CurrentBasis:
    """The full-load current a check starts from: the ruleset maps ``purpose`` to the nameplate or the table
    (``[checks.motor-current.params] basis``). A purpose the motor-current module does not know falls back to
    the conductor basis rather than stopping the review."""
    try:
        return current_basis(record, ruleset, purpose=purpose)
    except ValueError:
        return current_basis(record, ruleset)


def check_disconnect(motor: Motor, ruleset: Ruleset, options: ReviewOptions) -> list[Finding]:
    """Ampere rating at least the ruleset percentage of full-load current, or horsepower rating >= motor hp."""
    spec = ruleset.check(CHECK_ID)
    params = spec.params
    record = motor.record
    basis = motor_current(record, ruleset, params.get("current_purpose", "disconnect"))
    fields = ("disconnect_switch", "hp", "ocpd") + basis.fields

    def finding(status, message, **kw):
        return Finding(CHECK_ID, spec.rule, status, message, unit="A", fields=fields, citation=spec.citation, **kw)

    switch = record.get("disconnect_switch")
    percent = params["min_percent"]
    trail = list(basis.trail)
    assumptions = list(basis.assumptions)
    limit = None
    if basis.current_a is not None:
        limit = basis.current_a * percent / 100
        trail.append(f"{num(basis.current_a)} A ({basis.label()}) × {num(percent)} % = {calc(limit)} A minimum rating")
    kw = {"limit": limit, "trail": tuple(trail), "assumptions": tuple(assumptions)}
    need = f" it must be rated at least {calc(limit)} A" if limit is not None else ""
    if switch is None:
        return [finding(Status.NEEDS_INFO, f"No disconnect rating could be read from the schedule;{need or ' '}"
                        f"{'' if need else 'its rating cannot be checked'}.", **kw)]
    means = switch["means"]
    if means in _MEANS_NEEDS:
        return [finding(Status.NEEDS_INFO, f"{_MEANS_NEEDS[means]}{';' + need if need else ''}.", **kw)]
    rating_a, what = switch.get("rating_a"), "switch"
    if means == "branch-device":
        ocpd = record.get("ocpd") or {}
        if ocpd.get("device") not in _BREAKERS or "rating_a" not in ocpd:
            return [finding(Status.NEEDS_INFO, "The disconnect is the branch device at the source (lockable "
                            "breaker or combination starter), whose switching rating the schedule does not "
                            f"show;{need or ' its rating cannot be checked'}.", **kw)]
        rating_a, what = ocpd["rating_a"], "branch circuit breaker used as the disconnect"
        trail.append(f"Disconnect is the {num(rating_a)} A branch breaker (lockable at the source)")
    if switch.get("fuse_a") is not None:
        trail.append(f"Fused switch with {num(switch['fuse_a'])} A fuses")
    return [_rating_verdict(finding, record, params, basis, rating_a, what, switch, limit, trail, assumptions)]


def _rating_verdict(finding, record, params, basis, rating_a, what, switch, limit, trail, assumptions) -> Finding:
    hp_rating, motor_hp = switch.get("hp"), record.get("hp")
    hp_ok = params.get("hp_rating_alternative", False) and hp_rating is not None and motor_hp is not None \
        and hp_rating >= motor_hp
    if hp_ok and params.get("hp_alternative_unfused_only") and switch.get("fused") is not False:
        if switch.get("fused"):  # the horsepower alternative covers unfused switches only
            hp_ok = False
            trail.append(f"The {num(hp_rating)} hp rating does not replace the ampere rating of a fused switch")
        else:
            assumptions = list(assumptions) + [("Switch taken as unfused (the horsepower alternative applies only "
                                               "to unfused motor-circuit switches).")]
    kw = {"limit": limit, "provided": rating_a, "assumptions": tuple(assumptions)}
    fuse_a = switch.get("fuse_a")
    if fuse_a is not None and rating_a is not None and fuse_a > rating_a:
        trail.append(f"{num(fuse_a)} A fuses > {num(rating_a)} A switch")
        return finding(Status.NEEDS_INFO, f"The {num(rating_a)} A switch is shown with {num(fuse_a)} A fuses, larger "
                       f"than the switch can hold; confirm both ratings.", trail=tuple(trail), **kw)
    if hp_ok:
        trail.append(f"Horsepower rating {num(hp_rating)} hp ≥ motor {num(motor_hp)} hp")
        return finding(Status.PASS, f"The disconnect's {num(hp_rating)} hp rating covers the {num(motor_hp)} hp motor.",
                       trail=tuple(trail), **kw)
    if rating_a is None:
        if hp_rating is not None:
            why = ("the motor's horsepower is not given" if motor_hp is None
                   else f"{num(hp_rating)} hp is below the motor's {num(motor_hp)} hp")
            status = Status.NEEDS_INFO if motor_hp is None else Status.FAIL
            return finding(status, f"The disconnect is rated {num(hp_rating)} hp: {why}.", trail=tuple(trail), **kw)
        return finding(Status.NEEDS_INFO, "The disconnect's ampere rating is not given"
                       f"{'; it must be at least ' + calc(limit) + ' A' if limit is not None else ''}.",
                       trail=tuple(trail), **kw)
    if limit is None:
        return finding(Status.NEEDS_INFO, f"{num(rating_a)} A {what}: the minimum rating cannot be computed: "
                       f"{basis.problem}.", trail=tuple(trail), **kw)
    passed = rating_a >= limit
    trail.append(f"{num(rating_a)} A {'≥' if passed else '<'} {calc(limit)} A")
    if passed:
        return finding(Status.PASS, f"{num(rating_a)} A {what} is at least the {calc(limit)} A required.",
                       trail=tuple(trail), **kw)
    hp_note = ""
    if hp_rating is not None and motor_hp is not None:
        hp_note = f"; its {num(hp_rating)} hp rating is also below the motor's {num(motor_hp)} hp"
    return finding(Status.FAIL, f"{num(rating_a)} A {what} is below the {calc(limit)} A required{hp_note}; use a "
                   f"larger disconnect.", trail=tuple(trail), **kw)
