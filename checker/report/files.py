"""Writing report files so that a reader never sees half a file."""
from __future__ import annotations

import os
import stat
import tempfile
from collections.abc import Iterable
from pathlib import Path

# Mode for a new report file: readable by others like any document (the temp file starts at 0600).
NEW_FILE_MODE = 0o644


def write_atomic(path: Path, text: str) -> None:
    """Write ``text`` (UTF-8, newlines as given) to ``path`` all at once.

    The text goes to a temporary file in the same directory, is flushed to
    disk, then renamed over ``path`` (``os.replace`` is atomic on one file
    system). Parent directories are created. An existing file keeps its mode.
    On any error the temporary file is removed and the ``OSError`` is raised
    for the caller to turn into a one-line message.
    """
    write_atomic_chunks(path, (text,))


def write_atomic_chunks(path: Path, chunks: Iterable[str]) -> None:
    """:func:`write_atomic` for text given in pieces, written as they come (a 100 000-motor
    report is never held whole in memory). ``path`` changes only once every piece is written."""
    write_atomic_together([(path, chunks)])


_DONE = object()
_GATHER_CHARS = 1 << 18


def write_atomic_together(targets: list[tuple[Path, Iterable[str]]]) -> None:
    """Write several files from their pieces, taking one piece of each in turn.

    Turn by turn, producers that read the same sequence (the report's motors, built one at a
    time) stay a few items apart, so each item is built once and dropped soon. Every file is
    written to a temporary file first and renamed over its path only when all are complete;
    on an error none is replaced and the temporary files are removed.
    """
    opened = []
    try:
        for path, chunks in targets:
            path = Path(path)
            path.parent.mkdir(parents=True, exist_ok=True)
            try:
                mode = stat.S_IMODE(path.stat().st_mode)
            except FileNotFoundError:
                mode = NEW_FILE_MODE
            handle, temp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
            stream = os.fdopen(handle, "w", encoding="utf-8", newline="", buffering=1 << 20)
            opened.append((path, mode, temp_name, stream, iter(chunks)))
        # Pieces are gathered and written some 256 KiB at a time: a page template gives hundreds of
        # thousands of small pieces, and each write to a text stream has its own cost.
        pending: list[list[str]] = [[] for _ in opened]
        sizes = [0] * len(opened)
        active = list(range(len(opened)))
        while active:
            for number in list(active):
                chunk = next(opened[number][4], _DONE)
                if chunk is _DONE:
                    active.remove(number)
                    opened[number][3].write("".join(pending[number]))
                    pending[number] = []
                    continue
                pending[number].append(chunk)
                sizes[number] += len(chunk)
                if sizes[number] >= _GATHER_CHARS:
                    opened[number][3].write("".join(pending[number]))
                    pending[number], sizes[number] = [], 0
        for _, _, _, stream, _ in opened:
            stream.flush()
            os.fsync(stream.fileno())
            stream.close()
        for path, mode, temp_name, _, _ in opened:
            os.chmod(temp_name, mode)
            os.replace(temp_name, path)
    except BaseException:
        for _, _, temp_name, stream, _ in opened:
            stream.close()
            try:
                os.unlink(temp_name)
            except FileNotFoundError:
                pass
        raise
    for directory in dict.fromkeys(path.parent for path, *_ in opened):
        _sync_directory(directory)


def _sync_directory(directory: Path) -> None:
    """Flush the rename itself to disk where the platform allows it (not on Windows)."""
    if not hasattr(os, "O_DIRECTORY"):
        return
    try:
        fd = os.open(directory, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
