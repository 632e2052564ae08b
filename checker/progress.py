"""A one-line progress indicator on stderr for long reviews.

Shown only when stderr is a terminal and only once the run has taken longer
than ``DELAY_S`` (a permit schedule finishes before anything appears); it is
rewritten in place with a carriage return at most ``UPDATES_PER_S`` times a
second and erased when the run ends, so the terminal is left as without it.
Pipes, files and CI logs never see it.

``Progress.step`` is cheap enough to call once per motor: it only compares
the clock with the time of the next allowed redraw.
"""
from __future__ import annotations

import sys
import time
from typing import Self, TextIO

__all__ = ["DELAY_S", "Progress"]

DELAY_S = 1.0
UPDATES_PER_S = 8


class Progress:
    """Stage names and counts on one stderr line (a no-op unless ``stream`` is a terminal).

    Parameters
    ----------
    stream : where to write (default ``sys.stderr``).
    enabled : force on or off; default: on when ``stream`` is a terminal.
    delay_s : nothing is drawn before this many seconds have passed.
    """

    def __init__(self, stream: TextIO | None = None, enabled: bool | None = None, delay_s: float = DELAY_S) -> None:
        self.stream = stream if stream is not None else sys.stderr
        if enabled is None:
            isatty = getattr(self.stream, "isatty", None)
            enabled = bool(isatty and isatty())
        self.enabled = enabled
        self.start = time.monotonic()
        self.next_draw = self.start + delay_s
        self.stage_text = ""
        self.width = 0

    def stage(self, text: str) -> None:
        """Start a stage ('reading schedule.xlsx', 'writing HTML report')."""
        self.stage_text = text
        self._maybe_draw(text)

    def step(self, done: int, total: int) -> None:
        """Progress within the current stage (e.g. motors checked so far)."""
        if not self.enabled or time.monotonic() < self.next_draw:
            return
        percent = 100 * done // total if total else 100
        self._maybe_draw(f"{self.stage_text} {done:,}/{total:,} ({percent} %)")

    def close(self) -> None:
        """Erase the line (if one was drawn)."""
        if self.enabled and self.width:
            self._write("\r" + " " * self.width + "\r")
            self.width = 0

    def __enter__(self) -> Self:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def _maybe_draw(self, text: str) -> None:
        now = time.monotonic()
        if not self.enabled or now < self.next_draw:
            return
        self.next_draw = now + 1 / UPDATES_PER_S
        line = f"motorcheck: {text}  {now - self.start:.0f} s"[:100]
        self._write("\r" + line.ljust(self.width))
        self.width = max(self.width, len(line))

    def _write(self, text: str) -> None:
        try:
            self.stream.write(text)
            self.stream.flush()
        except (OSError, ValueError):  # a closed or broken terminal must not stop the review
            self.enabled = False
