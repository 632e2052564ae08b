"""The motors' part of the reports written by a second process (report/write.py ``MotorParts``).

What is checked: the files are the same, byte for byte, as the one-process path and the eager
renderings (``json_report.dumps``, ``html_report.render_html``); a failure in the second
process ends in one line (exit 2 for a file problem, 3 for a bug) with no report replaced and
no part file left; the command line uses it only from its threshold up.
All schedules here are invented (the demo, the test fixtures and the benchmark generator).
"""
from __future__ import annotations

import os
import sys
from pathlib import Path

import fixture_builders as fb
import pytest

from checker import cli
from checker.report import write
from checker.report.build import review_to_dict
from checker.report.html_report import render_html
from checker.report.json_report import dumps
from checker.report.motor_text import MotorText
from checker.review import review_schedule

pytestmark = pytest.mark.skipif(not hasattr(os, "fork"), reason="the second process is a fork (not on this platform)")

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "fixtures" / "demo"


@pytest.fixture(autouse=True)
def two_processors(monkeypatch):
    """As on the benchmark machine, whatever runs the tests."""
    monkeypatch.setattr(write, "_processors", lambda: 2)


def _review_with_parts(schedule: Path, tmp_path: Path, appendix: bool = True):
    """``appendix`` False: the second process is not told the appendix's checks, so its
    'Findings in full' cannot be used and this process makes its own."""
    started = []

    def start(motors, ruleset):
        ids = {spec.id for spec in ruleset.checks.values()} if appendix else set()
        started.append(write.MotorParts.start(motors, tmp_path / "r.json", tmp_path / "r.html", ids, at_least=1))

    review = review_schedule(schedule, motors_checked=start)
    assert len(started) == 1 and (started[0] is not None) == bool(review.motors)
    return review, started[0]


def _assert_files_equal_the_renderings(schedule: Path, tmp_path: Path, appendix: bool = True) -> None:
    review, parts = _review_with_parts(schedule, tmp_path, appendix)
    write.write_reports(review_to_dict(review, "t", lazy=True), tmp_path / "r.json", tmp_path / "r.html", parts)
    eager = review_to_dict(review, "t")
    assert (tmp_path / "r.json").read_bytes() == dumps(eager).encode("utf-8")
    assert (tmp_path / "r.html").read_bytes() == render_html(eager).encode("utf-8")
    assert sorted(p.name for p in tmp_path.iterdir() if p.name.startswith(".")) == []  # no .tmp or .part file


def test_parts_give_the_same_files(schedule, tmp_path):
    _assert_files_equal_the_renderings(schedule, tmp_path)


def test_parts_give_the_same_files_when_this_process_lists_the_findings_itself(schedule, tmp_path, monkeypatch):
    counted = []
    real_count = MotorText.count

    def count(self, reviews):
        counted.append(True)
        return real_count(self, reviews)

    monkeypatch.setattr(MotorText, "count", count)
    _assert_files_equal_the_renderings(schedule, tmp_path, appendix=False)
    assert counted == [True]
    _assert_files_equal_the_renderings(schedule, tmp_path, appendix=True)
    assert counted == [True]  # told the appendix's checks: the second process's list is used


def test_parts_give_the_same_files_for_pdf_and_hostile_cells(more_schedules, tmp_path):
    _assert_files_equal_the_renderings(more_schedules, tmp_path)


def test_counting_numbers_findings_as_writing_does(schedule):
    """The page's list of distinct findings, made without writing the motors, is the written one."""
    from checker.report.html_motors import Catalogue

    review = review_schedule(schedule)
    written, counted = Catalogue(set()), Catalogue(set())
    writer = MotorText({}, written)
    for index, motor_review in enumerate(review.motors, start=1):
        writer.both(motor_review, index)
    MotorText({}, counted).count(review.motors)
    assert counted.counts == written.counts and counted.heads == written.heads
    assert counted.html() == written.html()
    assert sum(counted.counts) == sum(len(r.findings) + len(r.motor.input_findings) for r in review.motors)


def _cli(schedule: Path, tmp_path: Path, name: str, capsys) -> tuple[int, bytes, bytes, str]:
    code = cli.main(["review", str(schedule), "--json", str(tmp_path / f"{name}.json"),
                     "--html", str(tmp_path / f"{name}.html"), "--quiet"])
    err = capsys.readouterr().err
    json_bytes = (tmp_path / f"{name}.json").read_bytes() if (tmp_path / f"{name}.json").exists() else b""
    html_bytes = (tmp_path / f"{name}.html").read_bytes() if (tmp_path / f"{name}.html").exists() else b""
    return code, json_bytes, html_bytes, err


def test_command_line_gives_the_same_reports_with_and_without(tmp_path, capsys, monkeypatch):
    schedule = fb.bench_schedule_csv(tmp_path, 300)
    used = []
    real_start = write.MotorParts.start.__func__

    def counting_start(cls, *args, **kwargs):
        parts = real_start(cls, *args, **kwargs)
        used.append(parts is not None)
        return parts

    monkeypatch.setattr(write.MotorParts, "start", classmethod(counting_start))
    one = _cli(schedule, tmp_path, "one", capsys)  # 300 motors: below the threshold
    monkeypatch.setattr(write, "SECOND_PROCESS_FROM_MOTORS", 1)
    two = _cli(schedule, tmp_path, "two", capsys)
    assert used == [False, True]
    assert one[0] == two[0] and one[0] in (0, 1)
    assert one[1] == two[1] and one[2] == two[2] and len(one[1]) > 100_000


def _failing_run(tmp_path, capsys, monkeypatch, error: Exception) -> tuple[int, str]:
    """A review whose second process fails while writing a motor (the fork inherits the patch)."""
    real_both = MotorText.both

    def failing_both(self, review, index):
        if index == 3:
            raise error
        return real_both(self, review, index)

    monkeypatch.setattr(MotorText, "both", failing_both)
    monkeypatch.setattr(write, "SECOND_PROCESS_FROM_MOTORS", 1)
    (tmp_path / "out.json").write_text("old json")
    (tmp_path / "out.html").write_text("old html")
    code = cli.main(["review", str(DEMO / "northfield-pump-station.csv"), "--json", str(tmp_path / "out.json"),
                     "--html", str(tmp_path / "out.html"), "--quiet"])
    err = capsys.readouterr().err
    assert (tmp_path / "out.json").read_text() == "old json" and (tmp_path / "out.html").read_text() == "old html"
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []
    assert err.count("\n") == 1 and "Traceback" not in err
    return code, err


def test_a_file_problem_in_the_second_process_is_one_line_and_exit_2(tmp_path, capsys, monkeypatch):
    code, err = _failing_run(tmp_path, capsys, monkeypatch, OSError(28, "No space left on device", "/x/r.json.part"))
    assert code == cli.EXIT_UNUSABLE
    assert err == "motorcheck: error: No space left on device (/x/r.json.part)\n"


def test_a_bug_in_the_second_process_is_one_line_and_exit_3(tmp_path, capsys, monkeypatch):
    code, err = _failing_run(tmp_path, capsys, monkeypatch, ZeroDivisionError("division by zero"))
    assert code == cli.EXIT_BUG
    assert err.startswith("motorcheck: internal error (RuntimeError: writing the motors failed: ZeroDivisionError")


@pytest.fixture
def stalled_parts(tmp_path, monkeypatch):
    """A second process that hangs on its first motor, writing into ``tmp_path``."""
    def slow_both(self, review, index):
        import time
        time.sleep(60)

    monkeypatch.setattr(MotorText, "both", slow_both)
    review = review_schedule(DEMO / "northfield-pump-station.csv")
    return write.MotorParts.start(review.motors, tmp_path / "r.json", tmp_path / "r.html", at_least=1)


def test_discard_stops_a_running_second_process_and_removes_its_parts(stalled_parts):
    parts = stalled_parts
    assert parts is not None and Path(parts.json_part).exists()
    parts.discard()
    assert not Path(parts.json_part).exists() and not Path(parts.html_part).exists()
    with pytest.raises(ChildProcessError):
        os.waitpid(parts.pid, os.WNOHANG)  # stopped and reaped


def test_no_second_process_for_a_small_review_or_one_processor(tmp_path, monkeypatch):
    review = review_schedule(DEMO / "northfield-pump-station.csv")
    assert len(review.motors) < write.SECOND_PROCESS_FROM_MOTORS
    assert write.MotorParts.start(review.motors, tmp_path / "r.json", tmp_path / "r.html") is None
    monkeypatch.setattr(write, "_processors", lambda: 1)
    assert write.MotorParts.start(review.motors, tmp_path / "r.json", tmp_path / "r.html", at_least=1) is None
    assert list(tmp_path.iterdir()) == []


@pytest.mark.parametrize("kernel_copy", ["missing", "refused"])
def test_parts_are_copied_the_same_without_the_kernels_copy(kernel_copy, tmp_path, monkeypatch):
    """Where os.copy_file_range is missing or refuses (another file system, an old kernel), the
    parts are copied by reading and writing them, with the same files as the result."""
    if kernel_copy == "missing":
        monkeypatch.delattr(os, "copy_file_range", raising=False)
    else:
        def refuse(*args, **kwargs):
            raise OSError(18, "Invalid cross-device link")

        monkeypatch.setattr(os, "copy_file_range", refuse, raising=False)
    _assert_files_equal_the_renderings(DEMO / "northfield-pump-station.xlsx", tmp_path)


# --------------------------------------------------------------------------- stopped from outside

def _children(pid: int) -> list[int]:
    try:
        return [int(p) for p in Path(f"/proc/{pid}/task/{pid}/children").read_text().split()]
    except OSError:
        return []


def _gone(pid: int, seconds: float = 15.0) -> bool:
    import time

    end = time.monotonic() + seconds
    while time.monotonic() < end:
        try:
            if Path(f"/proc/{pid}/stat").read_text().split(") ")[1].startswith("Z"):
                return True  # ended, not yet reaped by whoever adopted it
        except (OSError, IndexError):
            return True
        time.sleep(0.05)
    return False


def _start_review_with_a_second_process(tmp_path: Path):
    """A review running as a command, stopped while its second process writes; None if it ended first."""
    import subprocess
    import time

    schedule = fb.bench_schedule_csv(tmp_path, 6000)
    out = tmp_path / "out"
    out.mkdir()
    (out / "r.json").write_text("old json")
    (out / "r.html").write_text("old html")
    proc = subprocess.Popen([sys.executable, "-m", "checker", "review", str(schedule), "--json", str(out / "r.json"),
                             "--html", str(out / "r.html"), "--quiet"], cwd=ROOT, stdout=subprocess.DEVNULL,
                            stderr=subprocess.PIPE, text=True)
    end = time.monotonic() + 60
    while time.monotonic() < end and proc.poll() is None:
        children = _children(proc.pid)
        if children:
            return proc, children[0], out
        time.sleep(0.005)
    proc.communicate()
    return None


linux_only = pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="watches processes through /proc")


@pytest.fixture
def running_review(tmp_path):
    """(command process, its second process, output folder) of a review caught while both run."""
    started = _start_review_with_a_second_process(tmp_path)
    if started is None:
        pytest.skip("the review ended before its second process could be seen")
    return started


@linux_only
def test_a_termination_request_cleans_up_and_says_one_line(running_review):
    import signal

    proc, child, out = running_review
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == cli.EXIT_UNUSABLE
    assert err == "motorcheck: interrupted; no report was replaced\n"
    assert _gone(child)
    assert sorted(p.name for p in out.iterdir()) == ["r.html", "r.json"]  # no .tmp or .part file
    assert (out / "r.json").read_text() == "old json" and (out / "r.html").read_text() == "old html"


@linux_only
def test_the_second_process_stops_and_removes_its_parts_when_the_first_is_killed(running_review):
    import signal

    proc, child, out = running_review
    proc.send_signal(signal.SIGKILL)
    proc.communicate(timeout=60)
    assert _gone(child)
    assert not [p.name for p in out.iterdir() if p.name.endswith(".part")]
    assert (out / "r.json").read_text() == "old json" and (out / "r.html").read_text() == "old html"


def test_a_second_process_stopped_from_outside_reads_as_an_interrupt(stalled_parts, tmp_path):
    import signal

    parts = stalled_parts
    os.kill(parts.pid, signal.SIGTERM)
    with pytest.raises(KeyboardInterrupt):
        parts.wait()
    parts.discard()
    assert list(tmp_path.iterdir()) == []
