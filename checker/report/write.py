"""Writing the JSON and HTML report files of a review.

The motors, most of a large report, are written by one loop into both files at once, each
motor's JSON line and HTML block straight from its review (``motor_text.py``).
The rest of each file comes from its own writer (``json_report.iter_json``, the page template),
which leaves a marker where the motors go.
The files are the same, byte for byte, as those ``json_report.dumps`` and
``html_report.render_html`` make of the eager report (tests/test_fast_paths.py).
"""
from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path
from typing import Any

from checker.report.build import MOTORS_HERE, MOTORS_PER_PIECE, MotorDicts, WrittenApart
from checker.report.files import GatheredWriter, atomic_text_files, write_atomic_together
from checker.report.html_motors import Catalogue
from checker.report.html_report import appendix_ids, iter_html
from checker.report.json_report import OBJECT_SEPARATOR, iter_json
from checker.report.motor_text import MotorText


def write_reports(report: dict[str, Any], json_path: Path, html_path: Path) -> None:
    """Write ``report`` as JSON to ``json_path`` and as HTML to ``html_path``; both files are
    replaced together, or neither is."""
    motors = report.get("motors")
    if not isinstance(motors, MotorDicts) or not len(motors):
        write_atomic_together([(json_path, iter_json(report)), (html_path, iter_html(report))])
        return
    catalogue = Catalogue(appendix_ids(report))
    motors.apart = WrittenApart(catalogue)
    try:
        with atomic_text_files([json_path, html_path]) as (json_out, html_out):
            json_pieces, html_pieces = iter_json(report), iter_html(report)
            _copy_until_motors(json_pieces, json_out)
            _copy_until_motors(html_pieces, html_out)
            _write_motors(motors, catalogue, json_out, html_out)
            _copy_until_motors(json_pieces, json_out)  # the rest of each file
            _copy_until_motors(html_pieces, html_out)
    finally:
        motors.apart = None


def _copy_until_motors(pieces: Iterator[str], out: GatheredWriter) -> None:
    """Write pieces until the motors' marker (or the end)."""
    for piece in pieces:
        if piece == MOTORS_HERE:
            return
        out.write(piece)


def _write_motors(motors: MotorDicts, catalogue: Catalogue, json_out: GatheredWriter,
                  html_out: GatheredWriter) -> None:
    """Every motor's JSON line and HTML block, written as it is made."""
    writer = MotorText(motors.shared, catalogue)
    json_pieces: list[str] = []
    html_pieces: list[str] = []
    for index in range(len(motors)):
        json_text, html_text = writer.both(motors.review(index), index + 1)
        json_pieces.append(OBJECT_SEPARATOR + json_text if index else json_text)
        html_pieces.append(html_text)
        if len(html_pieces) == MOTORS_PER_PIECE:
            json_out.write("".join(json_pieces))
            html_out.write("".join(html_pieces))
            json_pieces, html_pieces = [], []
    json_out.write("".join(json_pieces))
    html_out.write("".join(html_pieces))
