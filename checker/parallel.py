"""Work done in a forked copy of this process, so that a large review uses a second core.

Only where the operating system can fork (Linux, macOS): the copy starts with everything this
process has built, so nothing is sent to it, and it hands back a small result through a pipe.
Elsewhere, and when ``MOTORCHECK_JOBS=1``, everything runs in this one process.
"""
from __future__ import annotations

import gc
import os
import pickle
import traceback
from collections.abc import Callable
from typing import Any

JOBS_ENV = "MOTORCHECK_JOBS"


class ForkedError(RuntimeError):
    """The forked copy failed; the message is its one-line account."""


def available_jobs() -> int:
    """Processes a review may use: ``MOTORCHECK_JOBS`` if set, else the CPUs this process may run
    on (at most 2: a second process halves the longest stages; more would mostly cost memory).
    1 where the system cannot fork."""
    if not hasattr(os, "fork"):
        return 1
    given = os.environ.get(JOBS_ENV, "").strip()
    if given:
        try:
            return max(1, int(given))
        except ValueError:
            return 1
    try:
        cpus = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        cpus = os.cpu_count() or 1
    return max(1, min(cpus, 2))


class Forked:
    """``function()`` running in a forked copy of this process; :meth:`result` waits for it."""

    def __init__(self, function: Callable[[], Any]) -> None:
        read_end, write_end = os.pipe()
        pid = os.fork()
        if pid == 0:  # the copy: run, report, and leave without running this process's exit handlers
            os.close(read_end)
            code = 0
            try:
                gc.freeze()  # what the copy inherited is never scanned (scanning would copy its pages)
                payload = pickle.dumps(("ok", function()), protocol=pickle.HIGHEST_PROTOCOL)
            except BaseException as exc:  # noqa: BLE001 - every failure is reported to the parent
                last = traceback.extract_tb(exc.__traceback__)[-1:] or [None]
                where = f" ({last[0].filename.rsplit('/', 1)[-1]}:{last[0].lineno})" if last[0] else ""
                payload = pickle.dumps(("error", f"{type(exc).__name__}: {exc}{where}"))
                code = 1
            try:
                with os.fdopen(write_end, "wb") as pipe:
                    pipe.write(payload)
            finally:
                os._exit(code)
        os.close(write_end)
        self._pid, self._read_end = pid, read_end
        self._done = False
        self._value: Any = None

    def result(self) -> Any:
        """The function's return value; raises :class:`ForkedError` if it raised or the copy died."""
        if not self._done:
            with os.fdopen(self._read_end, "rb") as pipe:
                payload = pipe.read()
            _, status = os.waitpid(self._pid, 0)
            self._done = True
            try:
                kind, value = pickle.loads(payload)
            except Exception:  # noqa: BLE001 - nothing readable came back: the copy died
                kind, value = "error", f"the second process ended without a result (status {status})"
            if kind != "ok":
                self._value = ForkedError(str(value))
            else:
                self._value = value
        if isinstance(self._value, ForkedError):
            raise self._value
        return self._value
