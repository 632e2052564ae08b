"""Writing the JSON and HTML report files of a review.

The motors, most of a large report, are written by one loop into both files at once: each
motor's report dict is built once, turned into its JSON line and its HTML block, and dropped.
The rest of each file comes from its own writer (``json_report.iter_json``, the page template),
which leaves a marker where the motors go.

On a machine that can fork, a schedule of at least ``MIN_MOTORS_TO_SPLIT`` motors has the later
share of its motors written by a forked copy of this process into temporary files while this
process writes the rest; their text is then copied in where it belongs. The files are the same,
byte for byte, either way (tests/test_write.py).
"""
from __future__ import annotations

import os
import tempfile
from collections.abc import Iterator
from pathlib import Path
from typing import Any

from checker.parallel import Forked
from checker.report.build import MOTORS_HERE, MOTORS_PER_PIECE, MotorDicts, WrittenApart
from checker.report.files import GatheredWriter, atomic_text_files, write_atomic_together
from checker.report.html_motors import Catalogue, motor_block
from checker.report.html_report import appendix_ids, iter_html
from checker.report.json_report import _encode, iter_json

# Fewer motors than this are written by one process: a fork and its files would cost more than they save.
MIN_MOTORS_TO_SPLIT = 2_000
# Per cent of the motors this process writes when another writes the rest: this one also writes
# everything around the motors and copies the other's text in.
OWN_SHARE_PERCENT = 40
_JSON_SEPARATOR = ",\n    "  # between two motors' lines (json_report writes lists of objects so)
_READ_CHARS = 1 << 20


def write_reports(report: dict[str, Any], json_path: Path, html_path: Path, jobs: int = 1) -> None:
    """Write ``report`` as JSON to ``json_path`` and as HTML to ``html_path``; both files are
    replaced together, or neither is.

    ``jobs`` of 2 or more lets a large schedule's motors be shared with a second process.
    """
    motors = report.get("motors")
    if not isinstance(motors, MotorDicts) or not len(motors):
        write_atomic_together([(json_path, iter_json(report)), (html_path, iter_html(report))])
        return
    split = jobs >= 2 and len(motors) >= MIN_MOTORS_TO_SPLIT and hasattr(os, "fork")
    # Written apart, the later motors need their findings' numbers before they are written.
    catalogue = Catalogue.counted_for(motors, appendix_ids(report)) if split else Catalogue(appendix_ids(report))
    motors.apart = WrittenApart(catalogue)
    temp_paths: list[str] = []
    try:
        with atomic_text_files([json_path, html_path]) as (json_out, html_out):
            own_end = len(motors)
            worker = None
            if split:
                own_end = len(motors) * OWN_SHARE_PERCENT // 100
                parts = (_temp_beside(Path(json_path), temp_paths), _temp_beside(Path(html_path), temp_paths))
                worker = Forked(lambda: _write_motors(motors, own_end, len(motors), catalogue, *parts))
            json_pieces, html_pieces = iter_json(report), iter_html(report)
            _copy_until_motors(json_pieces, json_out)
            _copy_until_motors(html_pieces, html_out)
            _write_motor_range(motors, 0, own_end, catalogue, json_out, html_out)
            if worker is not None:
                worker.result()  # raises ForkedError if the other process failed
                json_out.write(_JSON_SEPARATOR if own_end else "")
                _copy_file(parts[0], json_out)
                _copy_file(parts[1], html_out)
            _copy_until_motors(json_pieces, json_out)
            _copy_until_motors(html_pieces, html_out)
    finally:
        motors.apart = None
        for name in temp_paths:
            try:
                os.unlink(name)
            except FileNotFoundError:
                pass


def _copy_until_motors(pieces: Iterator[str], out: GatheredWriter) -> None:
    """Write pieces until the motors' marker (or the end)."""
    for piece in pieces:
        if piece == MOTORS_HERE:
            return
        out.write(piece)


def _write_motor_range(motors: MotorDicts, start: int, end: int, catalogue: Catalogue, json_out, html_out) -> None:
    """Motors ``start`` to ``end`` (exclusive): JSON lines and HTML blocks, each dict built once."""
    json_pieces: list[str] = []
    html_pieces: list[str] = []
    for index in range(start, end):
        item = motors.motor_dict(index)
        json_pieces.append(_encode(item) if index == start else _JSON_SEPARATOR + _encode(item))
        html_pieces.append(motor_block(item, index + 1, catalogue))
        if len(html_pieces) == MOTORS_PER_PIECE:
            json_out.write("".join(json_pieces))
            html_out.write("".join(html_pieces))
            json_pieces, html_pieces = [], []
    json_out.write("".join(json_pieces))
    html_out.write("".join(html_pieces))


def _write_motors(motors: MotorDicts, start: int, end: int, catalogue: Catalogue, json_part: str,
                  html_part: str) -> int:
    """(In the second process.) Motors ``start`` to ``end`` written to the two temporary files."""
    with open(json_part, "w", encoding="utf-8", newline="") as json_stream, \
            open(html_part, "w", encoding="utf-8", newline="") as html_stream:
        json_out, html_out = GatheredWriter(json_stream), GatheredWriter(html_stream)
        _write_motor_range(motors, start, end, catalogue, json_out, html_out)
        json_out.flush()
        html_out.flush()
    return end - start


def _temp_beside(path: Path, temp_paths: list[str]) -> str:
    path.parent.mkdir(parents=True, exist_ok=True)
    handle, name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part.tmp", dir=path.parent)
    os.close(handle)
    temp_paths.append(name)
    return name


def _copy_file(name: str, out: GatheredWriter) -> None:
    with open(name, encoding="utf-8", newline="") as stream:
        while piece := stream.read(_READ_CHARS):
            out.write(piece)
