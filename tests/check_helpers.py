"""Shared pieces of the check unit tests: the bundled rulesets, review options and small builders."""
from checker.rules.common import ReviewOptions
from checker.rules.ruleset import load_ruleset

CEC = load_ruleset("cec-2015")
NEC = load_ruleset("nec-2023")
LENIENT = ReviewOptions()
STRICT = ReviewOptions(strict=True)
CONT = {"service": "continuous"}


def one(findings):
    """The single result a check returned (a Finding or a NotRun)."""
    assert len(findings) == 1
    return findings[0]

