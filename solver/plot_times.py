"""The times at which a run's profiles and pictures are drawn: the default choice, and the
times a user asks for (``plot --times``, ``report --times``).

- :func:`default_profile_times`: the ends of the stages and the time of the largest excess
  pore pressure, with the last output; near-duplicates merged (``MERGE_RATIO``), at most
  ``MAX_PROFILES`` kept.
- :func:`parse_times`: what a user types, ``60``, ``"2 years"``, ``"60 days, 2 years"``
  (a bare number is in days; units as in a model file) -> days.
- :func:`match_times`: each requested time to the output the run stored for it, saying which
  (a time outside the run is refused).

Imports nothing of the solver but the units and the errors.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from .errors import InputError

__all__ = ["MERGE_RATIO", "MAX_PROFILES", "default_profile_times", "parse_times",
           "TimeMatch", "match_times", "describe_matches"]

MERGE_RATIO = 1.05
"""Two output times closer than this ratio (5 %) draw as one curve: the one that matters more
(the largest excess pore pressure, then a stage end) is kept (common practice of legibility)."""
MAX_PROFILES = 8


def default_profile_times(times: Sequence[float], stage_ends: Sequence[float] = (),
                          peak: int | None = None, extra: Sequence[float] = (),
                          max_n: int = MAX_PROFILES) -> list[int]:
    """Indices into ``times`` (output times, days) of the profiles drawn by default.

    Every stage end (the output nearest it), the output ``peak`` (largest excess pore
    pressure) and the last output, then the outputs asked for in the model (``extra``),
    then the others; times within ``MERGE_RATIO`` of a kept one are merged into it, and at
    most ``max_n`` are kept, dropping the least important, the most crowded first (on a
    logarithmic clock); the peak and the last output always stay.
    """
    t = np.asarray(times, float)
    if t.size == 0:
        return []
    rank = np.full(t.size, 3)          # 0 peak, 1 stage end or last, 2 asked for, 3 other
    for e in extra:
        rank[int(np.argmin(np.abs(t - float(e))))] = 2
    for e in stage_ends:
        rank[int(np.argmin(np.abs(t - float(e))))] = 1
    rank[t.size - 1] = 1
    if peak is not None and 0 <= peak < t.size:
        rank[peak] = 0
    order = sorted(range(t.size), key=lambda i: (rank[i], t[i]))
    kept: list[int] = []
    for i in order:                               # the more important first: merge into them
        if all(not _near(t[i], t[j]) for j in kept):
            kept.append(i)
    while len(kept) > max_n:
        free = [i for i in kept if rank[i] > 0 and i != t.size - 1]
        if not free:
            break
        kept.remove(max(free, key=lambda i: (rank[i], _crowding(t, kept, i))))
    return sorted(kept, key=lambda i: t[i])


def _near(a: float, b: float) -> bool:
    lo, hi = min(a, b), max(a, b)
    return hi <= lo * MERGE_RATIO if lo > 0 else hi <= 0.0


def _crowding(t: np.ndarray, kept: list[int], i: int) -> float:
    """How close output i lies to its nearest kept neighbour, on a log clock (larger: more
    crowded)."""
    others = [t[j] for j in kept if j != i]
    if not others:
        return 0.0
    lt = math.log(max(t[i], 1e-6))
    return -min(abs(lt - math.log(max(o, 1e-6))) for o in others)


def parse_times(values: Sequence[str | float] | None, field: str = "--times") -> list[float]:
    """Times a user typed, in days: bare numbers are days, strings may carry units
    ("2 years", "6 months"); commas separate several in one argument."""
    from .units import to_value
    out: list[float] = []
    for v in values or []:
        parts = [p for p in str(v).split(",") if p.strip()] if isinstance(v, str) else [v]
        for p in parts:
            text = p.strip() if isinstance(p, str) else p
            try:
                text = float(text)
            except (TypeError, ValueError):
                pass
            out.append(to_value(text, "time", field=field, example='"2 years"'))
    return out


@dataclass(frozen=True)
class TimeMatch:
    """A requested time (days), the stored output drawn for it, and whether they agree."""
    requested: float
    stored: float
    exact: bool


def match_times(requested: Sequence[float], stored: Sequence[float], end: float,
                field: str = "--times") -> list[TimeMatch]:
    """The stored output (days) drawn for each requested time: the same time when the run
    stored it, else the nearest. A time before the start or after the end of the run
    (``end``, days) is refused (InputError naming ``field``)."""
    s = np.asarray(stored, float)
    if s.size == 0:
        raise InputError("the run stored no outputs to draw", field=field,
                         fix="rerun it; fields are written at every stage end.")
    out = []
    for t in requested:
        if not (0.0 <= t <= end * (1 + 1e-9) + 1e-9):
            raise InputError(f"{_days(t)} is outside the run, which covers 0 to {_days(end)}",
                             field=field, fix=f"give times from 0 to {end:,.6g} days.")
        i = int(np.argmin(np.abs(s - t)))
        exact = abs(s[i] - t) <= 1e-6 * max(1.0, abs(t))
        out.append(TimeMatch(float(t), float(s[i]), bool(exact)))
    return out


def _days(t: float) -> str:
    return f"{t:,.6g} days" + (f" ({t / 365.25:.3g} years)" if abs(t) >= 730 else "")


def describe_matches(matches: Sequence[TimeMatch], how_to_store: str) -> list[str]:
    """One line per requested time saying which stored output it became."""
    lines, seen = [], {}
    for m in matches:
        if m.exact:
            line = f"{_days(m.requested)}: stored, drawn as it is"
        else:
            line = (f"{_days(m.requested)}: not stored; drawn at {_days(m.stored)}, the "
                    f"nearest stored output ({how_to_store})")
        if m.stored in seen:
            line += f"; the same output as {_days(seen[m.stored])}, drawn once"
        seen.setdefault(m.stored, m.requested)
        lines.append(line)
    return lines


def stored_output_times(run_dir) -> tuple[np.ndarray, float]:
    """(the output times the run folder holds fields for, the end of its record), days."""
    from pathlib import Path

    from .results import read_fields, read_probes
    d = Path(run_dir)
    times = read_fields(d, []).times if (d / "fields" / "mesh.h5").exists() else np.zeros(0)
    end = 0.0
    for cols in read_probes(d).values():
        t = np.asarray(cols["time_days"], float)
        end = max(end, float(t.max(initial=0.0)))
    if times.size:
        end = max(end, float(times.max()))
    return times, end


def resolve_run_times(run_dir, values, field: str = "--times") -> tuple[list[float], list[str]]:
    """What ``plot --times`` and ``report --times`` draw: the stored output for each time
    asked (parsed by :func:`parse_times`) and one line per time saying which it became."""
    requested = parse_times(values, field)
    stored, end = stored_output_times(run_dir)
    matches = match_times(requested, stored, end, field)
    how = ("to have it exactly, run again with --times or list it in [output] times")
    return (sorted({m.stored for m in matches}), describe_matches(matches, how))
