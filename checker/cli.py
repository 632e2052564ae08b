"""The command line: a thin face over ``checker.review``.

Heavy modules (openpyxl, jsonschema, jinja2) are imported only inside the
sub-commands, so ``motorcheck --help`` starts fast.

Exit codes: 0 no fail, 1 at least one fail, 2 the input or arguments could
not be used (one line on stderr), 3 an internal error (a bug; one line too).
"""
from __future__ import annotations

import argparse
import gc
import os
import signal
import sys
from pathlib import Path

from checker import __version__

EXIT_OK, EXIT_FAIL, EXIT_UNUSABLE, EXIT_BUG = 0, 1, 2, 3

# What a review built, held here by run() (the process leaves without freeing it; see run()).
_HELD_UNTIL_EXIT: list | None = None


class _Parser(argparse.ArgumentParser):
    """argparse, but an argument error is one line and exit code 2."""

    def error(self, message: str):
        self.exit(EXIT_UNUSABLE, f"motorcheck: error: {message} (see motorcheck --help)\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="motorcheck", description=(
        "Recalculate every row of a submitted motor schedule against the code's motor rules and report "
        "pass / fail / needs-info findings with the governing rule, the arithmetic and the cell they came from."))
    parser.add_argument("--version", action="version", version=f"motorcheck {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    review = sub.add_parser("review", help="review a schedule (xlsx, CSV or PDF) and write HTML and JSON reports",
                            description="Review a submitted motor schedule and write reports.")
    review.add_argument("schedule", type=Path, metavar="SCHEDULE",
                        help="the schedule as submitted (.xlsx, .csv or a PDF drawing)")
    review.add_argument("--code", default=None, metavar="RULESET",
                        help="ruleset to review against: a name from 'motorcheck codes' or a ruleset file (default: "
                             "[project] code in ./motorcheck.toml, else cec-2015)")
    review.add_argument("--amendments", type=Path, default=None, metavar="PATH",
                        help="local amendments file that extends the ruleset (default: [project] amendments in "
                             "./motorcheck.toml)")
    review.add_argument("--json", type=Path, metavar="PATH", help="JSON report path (default reports/<stem>.json)")
    review.add_argument("--html", type=Path, metavar="PATH", help="HTML report path (default reports/<stem>.html)")
    review.add_argument("--csv", type=Path, metavar="PATH",
                        help="also write the findings as CSV, one row per finding (formula-safe for spreadsheets)")
    review.add_argument("--sheet", metavar="NAME", help="read only this worksheet (default: find the schedule)")
    review.add_argument("--strict", action=argparse.BooleanOptionalAction, default=None,
                        help="make unstated duty, motor type or starting method needs-info instead of assuming "
                             "(default: strict when ./motorcheck.toml says assumptions = false)")
    review.add_argument("--quiet", action="store_true", help="print only the counts line and report paths")
    sub.add_parser("codes", help="list the rulesets with edition and how many values are verified",
                   description="List the available rulesets.")
    return parser


def _cmd_review(args) -> int:
    from checker.progress import Progress
    from checker.report.build import review_to_dict
    from checker.report.files import write_atomic
    from checker.report.text_summary import summary_text
    from checker.report.write import MotorParts, write_reports
    from checker.review import review_schedule
    from checker.rules.common import ReviewOptions

    if not args.schedule.exists():
        raise _Unusable(f"{args.schedule} does not exist")
    if args.schedule.is_dir():
        raise _Unusable(f"{args.schedule} is a folder; give the schedule file")
    from checker.config import effective_settings, load_config

    code, amendments, strict = effective_settings(load_config(), args.code, args.amendments, args.strict)
    # A large review makes millions of small objects that form no cycles; the collector's default
    # thresholds would re-scan them hundreds of times (a third of the run at 10 000 motors).
    gc.set_threshold(100_000, 50, 100)
    stem = args.schedule.stem
    json_path = args.json or Path("reports") / f"{stem}.json"
    html_path = args.html or Path("reports") / f"{stem}.html"
    _refuse_overwriting_input(args.schedule, [json_path, html_path] + ([args.csv] if args.csv else []))
    parts: list[MotorParts] = []

    def write_motors_meanwhile(motors, ruleset) -> None:  # a large review: motors written while feeders are worked out
        started = MotorParts.start(motors, json_path, html_path, {spec.id for spec in ruleset.checks.values()})
        if started is not None:
            parts.append(started)

    try:
        with Progress() as progress:  # on stderr, only for a terminal and only after a second
            review = review_schedule(args.schedule, code=code, sheet=args.sheet,
                                     options=ReviewOptions(strict=strict), amendments=amendments, progress=progress,
                                     motors_checked=write_motors_meanwhile)
            progress.stage("building the report")
            report = review_to_dict(review, __version__, lazy=True)  # motors built as they are written
            progress.stage("writing the reports")
            write_reports(report, json_path, html_path, parts[0] if parts else None)
            if args.csv:
                from checker.report.csv_report import render_csv
                write_atomic(args.csv, render_csv(report))
    finally:
        for started in parts:
            started.discard()
    if _HELD_UNTIL_EXIT is not None:  # not freed object by object when this function returns
        _HELD_UNTIL_EXIT.append((review, report))
    text = summary_text(report, max_lines=0 if args.quiet else 40)
    print(text)
    print(f"Reports: {html_path}  {json_path}" + (f"  {args.csv}" if args.csv else ""))
    return EXIT_FAIL if report["summary"]["findings"]["fail"] else EXIT_OK


def _cmd_codes(args) -> int:
    from checker.rules.ruleset import available_rulesets, load_ruleset

    for name in available_rulesets():
        ruleset = load_ruleset(name)
        counts = ruleset.verification_counts()
        total = sum(counts.values())
        print(f"{ruleset.id:<14} {ruleset.title} (edition {ruleset.edition})")
        print(f"{'':<14} values: {total}; published source {counts.get('published source', 0)}, "
              f"common practice {counts.get('common practice', 0)}, from memory {counts.get('from memory', 0)}")
    return EXIT_OK


class _Unusable(Exception):
    pass


def _refuse_overwriting_input(schedule: Path, outputs: list[Path]) -> None:
    """The submitted file is never written: refuse a report path that is the schedule itself."""
    source = schedule.resolve()
    for output in outputs:
        if output.resolve() == source or (output.exists() and output.samefile(schedule)):
            raise _Unusable(f"the report path {output} is the schedule being reviewed; choose another path")


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_UNUSABLE
    try:
        if args.command == "review":
            return _cmd_review(args)
        return _cmd_codes(args)
    except KeyboardInterrupt:
        print("motorcheck: interrupted; no report was replaced", file=sys.stderr)
        return EXIT_UNUSABLE
    except Exception as exc:  # noqa: BLE001 - every failure ends in one line, never a traceback
        return _report_error(exc)


def run() -> None:
    """The command's entry point: :func:`main`, then leave at once.

    A large review holds millions of small objects; freeing them one by one, when the review
    command returns or at interpreter exit, only costs time (0.02-0.1 s per 10 000 motors) once the
    reports are written and closed, so the review is held until the process leaves. Output streams
    are flushed first. Code calling :func:`main` itself is unaffected.

    A termination request (SIGTERM, as from a CI time limit or a process manager) is answered
    like Ctrl-C: temporary files and a second process are cleaned up, no report is replaced,
    one line is said and the exit status is 2.
    """
    global _HELD_UNTIL_EXIT
    signal.signal(signal.SIGTERM, _interrupt)
    _HELD_UNTIL_EXIT = []
    code = main()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # a closed or broken pipe: nothing more can be said there
            pass
    os._exit(code)


def _interrupt(signum, frame) -> None:
    raise KeyboardInterrupt


def _report_error(exc: Exception) -> int:
    from checker.config import ConfigError
    from checker.ingest.readers import InputError
    from checker.rules.ruleset import RulesetError

    if isinstance(exc, (InputError, RulesetError, ConfigError, _Unusable)):
        print(f"motorcheck: error: {exc}", file=sys.stderr)
        return EXIT_UNUSABLE
    if isinstance(exc, OSError):
        print(f"motorcheck: error: {exc.strerror or exc} ({exc.filename or ''})", file=sys.stderr)
        return EXIT_UNUSABLE
    print(f"motorcheck: internal error ({type(exc).__name__}: {str(exc)[:200]}); please report it with the input file",
          file=sys.stderr)
    return EXIT_BUG
