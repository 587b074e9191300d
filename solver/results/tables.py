"""Append-only CSV tables (probes, lines): each append flushed, cut back on resume."""

from __future__ import annotations

import csv
import io
import math
import os
from pathlib import Path
from typing import Sequence

from .files import _FLOAT_FORMAT, TEXT_COLUMNS, ResultsError

class _Table:
    """An append-only CSV file with fixed columns; each append is flushed (and fsynced)."""

    def __init__(self, path: Path, columns: Sequence[str], fsync: bool):
        self.path = path
        self.columns = tuple(columns)
        self.fsync = fsync
        self.rows = 0
        self.nbytes = path.stat().st_size if path.exists() else 0
        self._file = None

    def _open(self):
        if self._file is None:
            self._file = open(self.path, "ab")
        return self._file

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
        f = self._open()
        f.write(data)
        f.flush()
        if self.fsync:
            os.fsync(f.fileno())
        self.nbytes += len(data)
        self.rows += len(rows)

    def truncate(self, nbytes: int, rows: int) -> None:
        self.close()
        size = self.path.stat().st_size if self.path.exists() else 0
        if size < nbytes:
            raise ResultsError(f"{self.path} holds {size} bytes but the checkpoint expects "
                               f"{nbytes}; the file was cut short after the checkpoint, so the "
                               "run cannot resume. Start it afresh (resume=False).")
        if self.path.exists():
            with open(self.path, "r+b") as f:
                f.truncate(nbytes)
                f.flush()
                os.fsync(f.fileno())
        self.nbytes, self.rows = nbytes, rows

    def sync(self) -> None:
        if self._file is not None:
            self._file.flush()
            os.fsync(self._file.fileno())

    def close(self) -> None:
        if self._file is not None:
            self._file.close()
            self._file = None


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

