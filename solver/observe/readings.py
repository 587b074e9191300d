"""Instrument readings from a CSV file: one reading a row.

The header names the columns: ``instrument,time_days,value`` (days since the start of the
model's time) or ``instrument,date,value`` (ISO dates, ``2026-03-14``, counted from the model's
``start_date``). Blank lines and lines starting with ``#`` are skipped. The value is what the
instrument reads (settlement in m positive downward; pore pressure in kPa as read; horizontal
displacement in m). Every reading is checked where it is read: the message names the file,
the line and the fix.
"""

from __future__ import annotations

import csv
import datetime as _dt
from dataclasses import dataclass
from math import isfinite
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from solver.errors import InputError

__all__ = ["Readings", "read_readings", "parse_readings", "day_of"]

MAX_READINGS = 1_000_000
"""More rows than this in one file is not a site record (a bound against runaway input)."""


@dataclass
class Readings:
    """Readings of one instrument, in time order."""

    instrument: str
    time_days: NDArray[np.float64]
    value: NDArray[np.float64]
    lines: NDArray[np.int64]          # the line of the file each reading came from


def day_of(date: _dt.date, start_date: _dt.date) -> float:
    """Days from the model's start date to ``date``."""
    return float((date - start_date).days)


def read_readings(path: str | Path, installed: dict[str, float | None],
                  start_date: _dt.date | None = None) -> dict[str, Readings]:
    """Read a readings file. ``installed`` maps each instrument name to its installation day
    (None: from the start)."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except (OSError, UnicodeDecodeError) as err:
        raise InputError(f"cannot read the readings file ({err.__class__.__name__}: {err})",
                         source=str(path), fix="give a UTF-8 CSV file with instrument,time_days,value "
                         "or instrument,date,value") from None
    return parse_readings(text, installed, start_date, source=str(path))


def parse_readings(text: str, installed: dict[str, float | None], start_date: _dt.date | None = None,
                   source: str = "readings") -> dict[str, Readings]:
    rows = [(n, r) for n, r in enumerate(csv.reader(text.splitlines()), start=1)
            if r and any(c.strip() for c in r) and not r[0].lstrip().startswith("#")]
    if not rows:
        raise InputError("the readings file holds no readings", source=source,
                         fix="add a header instrument,time_days,value and one reading a row")
    if len(rows) > MAX_READINGS + 1:
        raise InputError(f"the readings file has {len(rows) - 1} rows, more than {MAX_READINGS}",
                         source=source, fix="split the record or thin it")
    line, header = rows[0]
    header = [h.strip().lower() for h in header]
    if header not in (["instrument", "time_days", "value"], ["instrument", "date", "value"]):
        raise InputError(f"line {line}: the header must be instrument,time_days,value or "
                         f"instrument,date,value, not {','.join(header)}", source=source,
                         fix="put the header on the first line")
    by_date = header[1] == "date"
    if by_date and start_date is None:
        raise InputError(f"line {line}: readings carry dates but the model has no start_date",
                         source=source, fix="add start_date = 2026-01-15 (the day of time 0) at the "
                         "top of the model file, or give time_days instead of dates")
    found: dict[str, list[tuple[float, float, int]]] = {}
    for line, row in rows[1:]:
        if len(row) != 3:
            raise InputError(f"line {line}: a reading has three fields (instrument, "
                             f"{header[1]}, value), this one has {len(row)}", source=source,
                             fix="write one reading a row, e.g. SP1,2026-03-14,0.125" if by_date
                             else "write one reading a row, e.g. SP1,42,0.125")
        name, when, value = (c.strip() for c in row)
        if name not in installed:
            known = ", ".join(sorted(installed)) or "none"
            raise InputError(f"line {line}: unknown instrument {name!r}", source=source,
                             fix=f"use one of the model's [[instruments]] names ({known})")
        if by_date:
            try:
                day = day_of(_dt.date.fromisoformat(when), start_date)
            except ValueError:
                raise InputError(f"line {line}: {when!r} is not an ISO date", source=source,
                                 fix="write dates as YYYY-MM-DD, e.g. 2026-03-14") from None
            if day < 0:
                raise InputError(f"line {line}: the date {when} is before the model's start_date "
                                 f"{start_date.isoformat()}", source=source,
                                 fix="check the date or the model's start_date")
        else:
            day = _number(when, line, source, "time_days")
            if day < 0:
                raise InputError(f"line {line}: time_days {when} is before the start (time 0)",
                                 source=source, fix="give days counted from the start of the model's time")
        val = _number(value, line, source, "value")
        inst = installed[name]
        if inst is not None and day < inst:
            raise InputError(f"line {line}: instrument {name!r} is read on day {day:g}, before it "
                             f"was installed (day {inst:g})", source=source,
                             fix="check the reading's time or the instrument's installed field")
        readings = found.setdefault(name, [])
        if readings and day <= readings[-1][0]:
            raise InputError(f"line {line}: the readings of {name!r} go back in time (day {day:g} "
                             f"after day {readings[-1][0]:g} on line {readings[-1][2]})", source=source,
                             fix="list each instrument's readings in time order, one per time")
        readings.append((day, val, line))
    return {name: Readings(name, np.array([r[0] for r in rs]), np.array([r[1] for r in rs]),
                           np.array([r[2] for r in rs], dtype=np.int64))
            for name, rs in found.items()}


def _number(text: str, line: int, source: str, what: str) -> float:
    try:
        x = float(text)
    except ValueError:
        x = float("nan")
    if not isfinite(x):
        raise InputError(f"line {line}: {what} {text!r} is not a number", source=source,
                         fix=f"give {what} as a plain number (m for settlement, kPa for pore pressure)"
                         if what == "value" else f"give {what} as a plain number of days")
    return x
