"""Time rate of one layer (Terzaghi 1925, Olson 1977) and the time a sampled curve reaches a
level.

Units: days, m, cv m2/day. See :mod:`solver.hand.rate` for a stack of unlike layers.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq

from solver.analytic import olson_ramp_average_degree, terzaghi_average_degree, terzaghi_time_factor
from solver.errors import InputError

__all__ = [
    "drainage_length",
    "degree_of_consolidation",
    "ramp_degree_of_consolidation",
    "time_for_degree",
    "first_time_reaching",
]


def drainage_length(thickness: float, drained_top: bool = True, drained_bottom: bool = False) -> float:
    """Longest drainage path (m): the thickness for one drained face, half for two.

    (Terzaghi 1925, *Erdbaumechanik*.) Raises :class:`InputError` if neither face drains.
    """
    if not (np.isfinite(thickness) and thickness > 0.0):
        raise InputError(f"layer thickness must be > 0 m, got {thickness!r}", field="thickness")
    if drained_top and drained_bottom:
        return 0.5 * float(thickness)
    if drained_top or drained_bottom:
        return float(thickness)
    raise InputError("a layer with neither face drained never consolidates", field="drained_top",
                     fix="drain the top, the bottom or both")


def _check_rate(cv: float, h_dr: float) -> tuple[float, float]:
    cv = float(cv)
    h_dr = float(h_dr)
    if not (np.isfinite(cv) and cv > 0.0):
        raise InputError(f"coefficient of consolidation must be > 0 m2/day, got {cv!r}", field="cv")
    if not (np.isfinite(h_dr) and h_dr > 0.0):
        raise InputError(f"drainage length must be > 0 m, got {h_dr!r}", field="drainage_length")
    return cv, h_dr


def degree_of_consolidation(t: ArrayLike, cv: float, drainage_length: float) -> NDArray[np.float64]:
    """Average degree of consolidation U(t) of one layer under a sudden load (-).

    ``Tv = cv t / H_dr^2`` into Terzaghi's (1925) ``U(Tv)`` (:func:`solver.analytic.terzaghi_average_degree`).
    ``t`` in days (>= 0, any shape), ``cv`` m2/day, ``drainage_length`` m.
    """
    cv, h = _check_rate(cv, drainage_length)
    return np.asarray(terzaghi_average_degree(cv * np.asarray(t, dtype=float) / h**2), dtype=float)


def ramp_degree_of_consolidation(t: ArrayLike, cv: float, drainage_length: float,
                                 construction_days: float) -> NDArray[np.float64]:
    """U(t) of one layer under a load ramped linearly over ``construction_days`` (-).

    Olson (1977), *Consolidation under time dependent loading*, J. Geotech. Eng. Div.
    ASCE 103 (:func:`solver.analytic.olson_ramp_average_degree`); U relative to the
    settlement under the full load.
    """
    cv, h = _check_rate(cv, drainage_length)
    if not (np.isfinite(construction_days) and construction_days >= 0.0):
        raise InputError("construction time must be >= 0 days", field="construction_days")
    tv = cv * np.asarray(t, dtype=float) / h**2
    return np.asarray(olson_ramp_average_degree(tv, cv * construction_days / h**2), dtype=float)


def time_for_degree(degree: ArrayLike, cv: float, drainage_length: float) -> NDArray[np.float64]:
    """Time (days) for one layer to reach average degree ``degree`` under a sudden load.

    ``t = Tv(U) H_dr^2 / cv`` with Terzaghi's (1925) ``Tv(U)`` (0.197 at 50 %, 0.848 at
    90 %). Used also for the end of primary ``t_p`` before secondary compression, commonly
    ``t95`` (common practice).
    """
    cv, h = _check_rate(cv, drainage_length)
    return np.asarray(terzaghi_time_factor(degree), dtype=float) * h**2 / cv


def first_time_reaching(times: ArrayLike, values: ArrayLike, level: float) -> float:
    """First time at which ``values`` reaches ``level``; NaN if never.

    Between the two samples that bracket the first crossing the curve is interpolated by a
    monotone cubic in log time (Fritsch & Carlson 1980, *Monotone piecewise cubic
    interpolation*, SIAM J. Numer. Anal. 17), which follows a consolidation curve sampled a
    few times per decade to about 0.1 % in time; linear from t = 0 to the first time.
    """
    t = np.asarray(times, dtype=float)
    u = np.asarray(values, dtype=float)
    idx = np.flatnonzero(u >= level)
    if idx.size == 0:
        return float("nan")
    i = int(idx[0])
    if i == 0:
        return float(t[0])
    t0, t1, u0, u1 = t[i - 1], t[i], u[i - 1], u[i]
    linear = float(t0 + (level - u0) * (t1 - t0) / (u1 - u0))
    lo, hi = max(i - 3, 0), min(i + 3, t.size)
    lt = np.log(np.where(t[lo:hi] > 0.0, t[lo:hi], np.nan))
    keep = np.isfinite(lt) & np.concatenate([[True], np.diff(lt) > 1e-12])
    if t0 <= 0.0 or np.count_nonzero(keep) < 3:
        return linear
    curve = PchipInterpolator(lt[keep], u[lo:hi][keep])
    a, b = np.log(t0), np.log(t1)
    if not curve(a) < level <= curve(b):
        return linear
    return float(np.exp(brentq(lambda x: float(curve(x)) - level, a, b, xtol=1e-12)))
