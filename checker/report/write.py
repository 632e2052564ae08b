"""Writing the JSON and HTML report files of a review.

The motors, most of a large report, are written by one loop into both files at once, each
motor's JSON line and HTML block straight from its review (``motor_text.py``).
The rest of each file comes from its own writer (``json_report.iter_json``, the page template),
which leaves a marker where the motors go.
The files are the same, byte for byte, as those ``json_report.dumps`` and
``html_report.render_html`` make of the eager report (tests/test_fast_paths.py).

On a machine with a second processor, a large review's motors can be written by a second
process (:class:`MotorParts`, started as soon as the motors are checked) while this one works
out the feeder groups, which the top of each report summarises; the parts are then copied
into place between the top and the rest of each file.
"""
from __future__ import annotations

import errno
import os
import shutil
import signal
import tempfile
import threading
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path
from typing import Any

from checker import model
from checker.report.build import FINDINGS_HERE, MOTORS_HERE, MOTORS_PER_PIECE, MotorDicts, WrittenApart
from checker.report.files import GatheredWriter, atomic_text_files, write_atomic_together
from checker.report.html_motors import Catalogue
from checker.report.json_report import OBJECT_SEPARATOR, iter_json
from checker.report.motor_text import MotorText

# A second process pays for itself from about this many motors (tests/bench: at 1 000 motors
# the feeder groups and the motors' text take some 0.05 s each; forking and copying cost ~0.01 s).
SECOND_PROCESS_FROM_MOTORS = 2_000


def write_reports(report: dict[str, Any], json_path: Path, html_path: Path,
                  parts: MotorParts | None = None) -> None:
    """Write ``report`` as JSON to ``json_path`` and as HTML to ``html_path``; both files are
    replaced together, or neither is. ``parts``: the motors' text, being written by a second
    process (:meth:`MotorParts.start`, given this report's motors and these paths)."""
    # The page template (and Jinja) are loaded only now: a second process is already writing the motors.
    from checker.report.html_report import appendix_ids, iter_html

    motors = report.get("motors")
    if not isinstance(motors, MotorDicts) or not len(motors):
        write_atomic_together([(json_path, iter_json(report)), (html_path, iter_html(report))])
        return
    catalogue = Catalogue(appendix_ids(report))
    # The second process writes the page's 'Findings in full' too, when it links the same rules.
    findings_apart = parts is not None and parts.appendix_ids == catalogue.appendix_ids
    motors.apart = WrittenApart(catalogue, findings_elsewhere=findings_apart)
    try:
        with atomic_text_files([json_path, html_path]) as (json_out, html_out):
            json_pieces, html_pieces = iter_json(report), iter_html(report)
            _copy_until_marker(json_pieces, json_out)
            _copy_until_marker(html_pieces, html_out)
            if parts is None:
                _write_motors(motors, MotorText(motors.shared, catalogue), json_out, html_out)
            else:
                if not findings_apart:  # the page's list of distinct findings, numbered as they were written
                    MotorText(motors.shared, catalogue).count(motors.review(i) for i in range(len(motors)))
                # The rest of each file is made while the second process may still be writing.
                json_pieces, html_pieces = iter(list(json_pieces)), iter(list(html_pieces))
                parts.copy_into(json_out, html_out)
            _copy_until_marker(json_pieces, json_out)  # the rest of the JSON
            if _copy_until_marker(html_pieces, html_out) is FINDINGS_HERE:
                parts.copy_findings_into(html_out)
                _copy_until_marker(html_pieces, html_out)  # the rest of the page
    finally:
        motors.apart = None
        if parts is not None:
            parts.discard()


def _copy_until_marker(pieces: Iterator[str], out: GatheredWriter) -> str | None:
    """Write pieces until a marker (the motors', or the findings in full's) and return it;
    None at the end."""
    for piece in pieces:
        if piece == MOTORS_HERE:
            return MOTORS_HERE
        if piece == FINDINGS_HERE:
            return FINDINGS_HERE
        out.write(piece)
    return None


class _Reviews:
    """What ``_write_motors`` reads of a :class:`MotorDicts`: its length and each review."""

    def __init__(self, reviews: Sequence[model.MotorReview]) -> None:
        self.reviews = reviews

    def __len__(self) -> int:
        return len(self.reviews)

    def review(self, index: int) -> model.MotorReview:
        return self.reviews[index]


def _write_motors(motors: MotorDicts | _Reviews, writer: MotorText, json_out: Any, html_out: Any,
                  between: Callable[[], None] | None = None) -> None:
    """Every motor's JSON line and HTML block, written as it is made; ``between`` is called
    after each piece written."""
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
            if between is not None:
                between()
    json_out.write("".join(json_pieces))
    html_out.write("".join(html_pieces))


def _processors() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # not offered on this platform
        return os.cpu_count() or 1


class MotorParts:
    """The motors' JSON lines and HTML blocks, and the page's 'Findings in full', written by a
    second process into part files beside the reports, to be copied into them by
    :func:`write_reports`.

    The second process is a fork: it reads the very reviews this process holds, writes with its
    own :class:`MotorText` (numbering distinct findings on first sight, as one process writing
    them all would) and leaves. It changes nothing this process sees; a failure there is raised
    here, as one line, when the parts are copied.
    """

    def __init__(self, pid: int, names: list[str], errors: int, appendix_ids: set[str]) -> None:
        self.pid, self.errors, self.appendix_ids = pid, errors, appendix_ids
        self.json_part, self.html_part, self.findings_part = names
        self.status: int | None = None
        self.remover: threading.Thread | None = None

    @classmethod
    def start(cls, reviews: Sequence[model.MotorReview], json_path: Path, html_path: Path,
              appendix_ids: set[str] = frozenset(), at_least: int | None = None) -> MotorParts | None:
        """Start writing ``reviews`` (the report's motors, in order) in a second process; None
        (write them in this one) for fewer than ``at_least`` motors (default
        ``SECOND_PROCESS_FROM_MOTORS``), one processor, or no fork. ``appendix_ids``: the
        checks the page's appendix describes (``html_report.appendix_ids`` of the report to
        come), for the rule links of the page's 'Findings in full', which it writes too."""
        at_least = SECOND_PROCESS_FROM_MOTORS if at_least is None else at_least
        if len(reviews) < max(at_least, 1) or not hasattr(os, "fork") or _processors() < 2:
            return None
        names = []
        try:
            for path in (Path(json_path), Path(html_path), Path(html_path)):
                path.parent.mkdir(parents=True, exist_ok=True)
                handle, name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
                os.close(handle)
                names.append(name)
            read_end, write_end = os.pipe()
        except OSError:
            for name in names:
                _remove(name)
            raise
        appendix_ids = {str(check) for check in appendix_ids}
        pid = os.fork()
        if pid == 0:  # the second process: write, say what went wrong if anything did, leave
            os.close(read_end)
            _write_parts_and_leave(reviews, names, appendix_ids, write_end)
        os.close(write_end)
        return cls(pid, names, read_end, appendix_ids)

    def wait(self) -> None:
        """Wait for the second process. If it failed: ``OSError`` (a part file could not be
        written), ``KeyboardInterrupt`` (it was stopped by a signal) or ``RuntimeError`` (a bug),
        with its one-line message."""
        if self.status is None:
            _, status = os.waitpid(self.pid, 0)
            self.status = os.waitstatus_to_exitcode(status)
            with os.fdopen(self.errors, "rb") as stream:
                message = stream.read(2000).decode("utf-8", "replace").strip()
            self.errors = -1
            if self.status < 0 or message == "interrupted":  # stopped from outside, as by a termination request
                raise KeyboardInterrupt
            if self.status != 0:
                kind, *said = message.split("\t")
                if kind == "os" and len(said) == 3:  # a part file could not be written: said as this process would
                    number, reason, filename = said
                    raise OSError(int(number) if number.isdigit() else 0, reason, filename or None)
                raise RuntimeError(message or f"the process writing the motors ended with status {self.status}")

    def copy_into(self, json_out: GatheredWriter, html_out: GatheredWriter) -> None:
        """Wait for the parts and copy the motors' into each report, after what was written so far."""
        self.wait()
        _append(self.json_part, json_out)
        _append(self.html_part, html_out)

    def copy_findings_into(self, html_out: GatheredWriter) -> None:
        """Copy the page's 'Findings in full' (after :meth:`copy_into`); the part files, all copied
        now, are removed by a thread while the rest of the reports is written and flushed."""
        self.wait()
        _append(self.findings_part, html_out)
        # Freeing a 50 MB file's blocks takes the file system 0.01-0.1 s (measured); it need not wait.
        self.remover = threading.Thread(target=self._remove_parts, name="motorcheck-part-removal")
        self.remover.start()

    def _remove_parts(self) -> None:
        for name in (self.json_part, self.html_part, self.findings_part):
            try:
                _remove(name)
            except OSError:  # left for discard() to try again, and to report
                pass

    def discard(self) -> None:
        """Stop the second process if it still runs, and remove the part files."""
        if self.remover is not None:
            self.remover.join()
        if self.status is None:
            try:
                os.kill(self.pid, signal.SIGKILL)
                os.waitpid(self.pid, 0)
            except (ProcessLookupError, ChildProcessError):
                pass
            self.status = -signal.SIGKILL
        if self.errors >= 0:
            os.close(self.errors)
            self.errors = -1
        for name in (self.json_part, self.html_part, self.findings_part):
            _remove(name)


def _append(name: str, out: GatheredWriter) -> None:
    """Copy the file ``name`` to the end of what ``out`` has written.

    The copy is made by the kernel where it can (``os.copy_file_range``: half the time of reading
    and writing it here, which matters for the 700 MB of a 100 000-motor review), else here.
    """
    out.flush()
    stream = out.stream
    stream.flush()  # the text written so far is in the file: the part follows it
    with open(name, "rb") as part:
        if not _copy_in_kernel(part.fileno(), stream.fileno()):
            shutil.copyfileobj(part, stream.buffer, 1 << 20)
            stream.buffer.flush()
    stream.seek(0, os.SEEK_END)  # the stream's idea of its position follows the copy


def _copy_in_kernel(source: int, target: int) -> bool:
    """Copy all of ``source`` to ``target`` at its position; False (nothing copied) if the kernel
    cannot."""
    copy = getattr(os, "copy_file_range", None)
    if copy is None:
        return False
    left = os.fstat(source).st_size
    copied = 0
    try:
        while left > 0:
            done = copy(source, target, min(left, 1 << 30))
            if done == 0:
                raise OSError(errno.EIO, "a part of the report ended early", "")
            left -= done
            copied += done
    except OSError:
        if copied:  # some of it is in the report already: this cannot be finished another way
            raise
        return False
    return True


def _remove(name: str) -> None:
    try:
        os.unlink(name)
    except FileNotFoundError:
        pass


def _write_parts_and_leave(reviews: Sequence[model.MotorReview], names: list[str], appendix_ids: set[str],
                           errors: int) -> None:
    """The second process's whole life: never returns into the caller's code."""
    code = 1
    parent = os.getppid()

    def stop_if_orphaned() -> None:  # the first process was killed outright: its parts are litter
        if os.getppid() != parent:
            for name in names:
                _remove(name)
            os._exit(1)

    try:
        signal.signal(signal.SIGINT, signal.SIG_IGN)  # the first process answers an interrupt and stops this one
        signal.signal(signal.SIGTERM, signal.SIG_DFL)
        catalogue = Catalogue(appendix_ids)
        writer = MotorText({}, catalogue)
        with open(names[0], "w", encoding="utf-8", newline="", buffering=1 << 20) as json_file, \
                open(names[1], "w", encoding="utf-8", newline="", buffering=1 << 20) as html_file:
            json_out, html_out = GatheredWriter(json_file), GatheredWriter(html_file)
            _write_motors(_Reviews(reviews), writer, json_out, html_out, stop_if_orphaned)
            json_out.flush()
            html_out.flush()
        with open(names[2], "w", encoding="utf-8", newline="") as findings_file:
            findings_file.write(catalogue.html())
        code = 0
    except BaseException as exc:  # noqa: BLE001 - said to the first process, which ends in one line
        try:
            if isinstance(exc, OSError):
                text = "\t".join(["os", str(exc.errno or 0), str(exc.strerror or exc), str(exc.filename or "")])
            elif isinstance(exc, KeyboardInterrupt):  # a termination request before its own handler was set
                text = "interrupted"
            else:
                text = f"writing the motors failed: {type(exc).__name__}: {str(exc)[:200]}"
            os.write(errors, text.encode("utf-8", "replace")[:2000])
        except BaseException:  # noqa: BLE001, S110 - the exit status still says it failed
            pass
    finally:
        os._exit(code)
