"""Append-only files of a run: the CSV tables (probes, lines) and the binary history.

Each append is written through at once (a killed process loses nothing written); ``sync``
flushes it to disk before a checkpoint points to it. A running SHA-256 of everything appended
is kept, so a checkpoint records the length *and the checksum* of each file's committed
prefix at no extra reading; a resume (or a reader) hashes that prefix once and refuses a
file that changed.
"""

from __future__ import annotations

import csv
import hashlib
import io
import math
import os
from pathlib import Path
from typing import Sequence

import numpy as np

from .files import (_FLOAT_FORMAT, TEXT_COLUMNS, ResultsError, open_append, open_read,
                    os_problem, write_fd)


class _AppendFile:
    """Bytes appended to one file, with the length and the checksum of what was written."""

    def __init__(self, path: Path, fsync: bool):
        self.path = path
        self.fsync = fsync
        self.rows = 0
        self.nbytes = 0
        self._hash = hashlib.sha256()
        self._fd: int | None = None
        self._dirty = False

    @property
    def sha256(self) -> str:
        return self._hash.hexdigest()

    def state(self) -> dict:
        """What a checkpoint keeps of this file: bytes, rows (records) and the checksum."""
        return {"bytes": self.nbytes, "rows": self.rows, "sha256": self.sha256}

    def _append_bytes(self, data: bytes, rows: int) -> None:
        if self._fd is None:
            self._fd = open_append(self.path)
        try:
            write_fd(self._fd, data)
        except OSError as exc:
            raise os_problem(exc, self.path) from None
        self._dirty = True
        self._hash.update(data)
        self.nbytes += len(data)
        self.rows += rows

    def resume_at(self, kept: dict, prefix_hash) -> None:
        """Cut the file back to a checkpoint's prefix, whose checksum the caller checked
        (``prefix_hash``: the hashlib object of that prefix, continued from here)."""
        self.close()
        self._hash, self.nbytes, self.rows = prefix_hash, int(kept["bytes"]), int(kept["rows"])
        if self.nbytes == 0:               # nothing committed: the file starts again
            try:
                os.unlink(self.path)
            except FileNotFoundError:
                pass
            except OSError as exc:
                raise os_problem(exc, self.path) from None
            return
        self._fd = open_append(self.path)
        try:
            os.ftruncate(self._fd, int(kept["bytes"]))
            if self.fsync:
                os.fsync(self._fd)
        except OSError as exc:
            raise os_problem(exc, self.path) from None

    def sync(self) -> None:
        """Flush what was appended since the last sync to disk (data only, when asked)."""
        if self._fd is not None and self._dirty and self.fsync:
            try:
                getattr(os, "fdatasync", os.fsync)(self._fd)
            except OSError as exc:
                raise os_problem(exc, self.path) from None
        self._dirty = False

    def close(self) -> None:
        if self._fd is not None:
            os.close(self._fd)
            self._fd = None


class _Table(_AppendFile):
    """An append-only CSV file with fixed columns."""

    def __init__(self, path: Path, columns: Sequence[str], fsync: bool):
        super().__init__(path, fsync)
        self.columns = tuple(columns)

    def format_rows(self, rows: Sequence[dict]) -> bytes:
        known = set(self.columns)
        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        if self.nbytes == 0:
            w.writerow(self.columns)
        for i, row in enumerate(rows):
            extra = set(row) - known
            if extra:
                raise ResultsError(f"row {i} for {self.path.name} has unknown column(s) "
                                   f"{sorted(extra)}; the columns are {list(self.columns)}")
            w.writerow([_cell(row.get(c), c, self.path.name) for c in self.columns])
        return buf.getvalue().encode("utf-8")

    def append(self, rows: Sequence[dict]) -> None:
        if not rows:
            return
        data = self.format_rows(rows)  # all checks before the first byte is written
        self._append_bytes(data, len(rows))


class _Log(_AppendFile):
    """Fixed-length records of float64, appended in order (the full-precision history)."""

    def append(self, record: np.ndarray) -> None:
        a = np.ascontiguousarray(record, dtype="<f8")
        self._append_bytes(a.tobytes(), 1)


def read_log(path: Path, nbytes: int, rows: int) -> np.ndarray:
    """The first ``rows`` records of a history file as float64 ``(rows, record length)``."""
    if rows == 0:
        return np.zeros((0, 0))
    with open_read(path) as f:
        data = f.read(nbytes)
    if len(data) != nbytes or nbytes % (8 * rows):
        raise ResultsError(f"{path} does not hold {rows} whole records; start the run "
                           "afresh (--force).")
    return np.frombuffer(data, dtype="<f8").reshape(rows, -1)


def _cell(value, column: str, where: str) -> str:
    if value is None:
        return ""
    if column in TEXT_COLUMNS:
        return str(value)
    if isinstance(value, str):
        raise ResultsError(f"{where}: column {column!r} takes a number, got the text {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ResultsError(f"{where}: column {column!r} takes a number, got "
                           f"{type(value).__name__}") from None
    return "" if math.isnan(v) else format(v, _FLOAT_FORMAT)
