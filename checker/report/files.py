"""Writing report files so that a reader never sees half a file."""
from __future__ import annotations

import os
import stat
import tempfile
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import TextIO

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


# Pieces are gathered and written about this many characters at a time: a page template gives
# hundreds of thousands of small pieces, and each write to a text stream has its own cost.
_GATHER_CHARS = 1 << 18


class GatheredWriter:
    """A text stream's ``write``, gathering small pieces into large writes."""

    __slots__ = ("_pending", "_size", "stream")

    def __init__(self, stream: TextIO) -> None:
        self.stream = stream
        self._pending: list[str] = []
        self._size = 0

    def write(self, piece: str) -> None:
        self._pending.append(piece)
        self._size += len(piece)
        if self._size >= _GATHER_CHARS:
            self.flush()

    def flush(self) -> None:
        if self._pending:
            self.stream.write("".join(self._pending))
            self._pending, self._size = [], 0


@contextmanager
def atomic_text_files(paths: list[Path]) -> Iterator[list[GatheredWriter]]:
    """Writers for several UTF-8 files that appear, all together, only if the block completes.

    Each file is written to a temporary file beside it, flushed to disk and renamed over its
    path (``os.replace`` is atomic on one file system) once every file is complete. On an error
    none is replaced and the temporary files are removed. Parent directories are created; an
    existing file keeps its mode.
    """
    opened = []
    try:
        for path in paths:
            path = Path(path)
            path.parent.mkdir(parents=True, exist_ok=True)
            try:
                mode = stat.S_IMODE(path.stat().st_mode)
            except FileNotFoundError:
                mode = NEW_FILE_MODE
            handle, temp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
            stream = os.fdopen(handle, "w", encoding="utf-8", newline="", buffering=1 << 20)
            opened.append((path, mode, temp_name, stream, GatheredWriter(stream)))
        yield [writer for *_, writer in opened]
        for _, _, _, stream, writer in opened:
            writer.flush()
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


def write_atomic_together(targets: list[tuple[Path, Iterable[str]]]) -> None:
    """Write several files from their pieces, one file after the other (see
    :func:`atomic_text_files`: all files are replaced together or none is)."""
    with atomic_text_files([path for path, _ in targets]) as writers:
        for writer, (_, chunks) in zip(writers, targets):
            for chunk in chunks:
                writer.write(chunk)


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
