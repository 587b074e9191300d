"""Time-step schedules: geometric growth in levels, so step lengths repeat and factorizations
are reused."""

from __future__ import annotations

from typing import Sequence

import numpy as np


def level_schedule(t_end: float, first_step: float, growth: float = 2.0,
                   steps_per_level: int = 5, stops: Sequence[float] = (),
                   t_start: float = 0.0) -> np.ndarray:
    """Times from ``t_start`` to ``t_end`` (days), steps growing geometrically in levels.

    ``steps_per_level`` steps of one length, then the length grows by ``growth``; every time in
    ``stops`` is hit exactly (the step before it is shortened). Repeated lengths share one
    matrix factorization in linear problems. The returned array starts at ``t_start``.

    Examples
    --------
    >>> level_schedule(10.0, 1.0, growth=2.0, steps_per_level=2)
    array([ 0.,  1.,  2.,  4.,  6., 10.])
    """
    if t_end <= t_start:
        return np.array([t_start])
    if first_step <= 0 or growth < 1 or steps_per_level < 1:
        raise ValueError("first_step > 0, growth >= 1 and steps_per_level >= 1 are required")
    stops = np.unique(np.append(np.asarray(stops, float), t_end))
    stops = stops[(stops > t_start) & (stops <= t_end)]
    times = [t_start]
    t, dt, n = t_start, first_step, 0
    for s in stops:
        while t < s - 1e-12 * max(1.0, abs(s)):
            # Land exactly on the stop; avoid leaving a sliver shorter than a tenth of a step.
            if t + 1.1 * dt >= s:
                t = s
            else:
                t = t + dt
            times.append(t)
            n += 1
            if n == steps_per_level:
                dt, n = dt * growth, 0
    return np.array(times)
