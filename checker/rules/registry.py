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
from checker.rules.bonding import check_bonding
from checker.rules.common import ReviewOptions
from checker.rules.conductors import check_conductor_ampacity
from checker.rules.current import check_motor_current
from checker.rules.disconnect import check_disconnect
from checker.rules.drive import check_drive_input
from checker.rules.feeders import GroupCheckFn, check_feeder_ampacity, check_feeder_ocpd
from checker.rules.overcurrent import check_branch_ocpd, check_ocpd_standard_rating
from checker.rules.overload import check_overload
from checker.rules.packaged import check_packaged_mca_mocp
from checker.rules.plausibility import check_record_plausibility
from checker.rules.ruleset import Ruleset
from checker.rules.voltage_drop import check_voltage_drop

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
    # Runs on every table; a row without an output or a voltage simply gets no finding.
    "record-plausibility": CheckEntry(check_record_plausibility, ()),
    "overload": CheckEntry(check_overload, (("overload",),), "the schedule has no overload (O/L, heater) column"),
    "disconnect": CheckEntry(check_disconnect, (("disconnect",),), "the schedule has no disconnect column"),
    "bonding": CheckEntry(check_bonding, (("conductor",),),
                          "the schedule has no branch-circuit conductor column (the bond is read from it or beside it)"),
    "voltage-drop": CheckEntry(check_voltage_drop, (("length",), ("conductor",), ("voltage", "voltage_phase")),
                               "the schedule has no run-length column (or no conductor or voltage column)"),
    "packaged-mca-mocp": CheckEntry(check_packaged_mca_mocp, (("mca", "mocp"),),
                                    "the schedule has no MCA or maximum-overcurrent (MOCP, max fuse) column"),
    "drive-input": CheckEntry(check_drive_input, (("starting",), ("conductor",)),
                              "the schedule has no starter column (drive-fed motors cannot be told apart) "
                              "or no conductor column"),
}


# Group checks see every motor fed from one source together with that source's feeder
# (checker/rules/feeders.py); they run once per group after the per-motor checks.
GROUP_CHECKS: dict[str, GroupCheckFn] = {
    "feeder-ampacity": check_feeder_ampacity,
    "feeder-ocpd": check_feeder_ocpd,
}


def runnable(check_id: str, columns: set[str]) -> bool:
    """True when a table with these mapped columns carries what the check needs."""
    return all(any(c in columns for c in group) for group in CHECKS[check_id].needs_columns)
