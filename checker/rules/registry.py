"""The one table that maps a check id (as used in rulesets) to its function.

``needs_columns`` lists groups of schedule columns (layout field ids); a check
runs on a table only when every group has at least one of its columns, so a
schedule without, say, an overcurrent column is summarised once ("could not
run: no overcurrent device column") instead of producing a needs-info
finding on every motor.
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from checker.model import Finding, Motor
from checker.rules.common import ReviewOptions
from checker.rules.conductors import check_conductor_ampacity
from checker.rules.current import check_motor_current
from checker.rules.overcurrent import check_branch_ocpd, check_ocpd_standard_rating
from checker.rules.ruleset import Ruleset

CheckFn = Callable[[Motor, Ruleset, ReviewOptions], list[Finding]]


@dataclass(frozen=True, slots=True)
class CheckEntry:
    function: CheckFn
    needs_columns: tuple[tuple[str, ...], ...]
    missing_reason: str = ""


CHECKS: dict[str, CheckEntry] = {
    "motor-current": CheckEntry(check_motor_current, ()),
    "conductor-ampacity": CheckEntry(check_conductor_ampacity, (("conductor",),),
                                     "the schedule has no branch-circuit conductor column"),
    "branch-ocpd": CheckEntry(check_branch_ocpd, (("ocpd",),),
                              "the schedule has no overcurrent device column"),
    "ocpd-standard-rating": CheckEntry(check_ocpd_standard_rating, (("ocpd",),),
                                       "the schedule has no overcurrent device column"),
}


def runnable(check_id: str, columns: set[str]) -> bool:
    """True when a table with these mapped columns carries what the check needs."""
    return all(any(c in columns for c in group) for group in CHECKS[check_id].needs_columns)
