"""Differential settlement and angular distortion through time, checked against limits.

Which limits fit: the angular distortion limits of buildings (Bjerrum 1963) apply to pairs of
probes on a structure, i.e. neighbouring footing bases and the probes a user names as a
structure; along the ground surface (an embankment, the ground beside it) the differential
settlement of neighbouring probes and the change of gradient from one pair to the next are
reported, checked against limits the user gives (:func:`surface_pairs`,
:func:`gradient_change`).

Settlement histories are arrays of shape (nt,) per probe, or (nt, n_points) along a line
of probes, at increasing times (days); settlement in m, positive downward. Angular
distortion is the differential settlement over the distance between two points (-).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver import CAUTION
from solver.errors import InputError

__all__ = [
    "BJERRUM_1963_LIMITS",
    "DEFAULT_DISTORTION_LIMITS",
    "differential_settlement",
    "angular_distortion",
    "distortion_along_line",
    "first_exceedance_time",
    "LimitCheck",
    "DifferentialHistory",
    "check_distortion_limits",
    "differential_between_probes",
    "SurfacePair",
    "surface_pairs",
    "gradient_change",
]

BJERRUM_1963_LIMITS: dict[str, float] = {
    "danger to machinery sensitive to settlement": 1.0 / 750.0,
    "danger to frames with diagonals": 1.0 / 600.0,
    "safe limit for buildings where cracking is not permissible": 1.0 / 500.0,
    "first cracking of panel walls": 1.0 / 300.0,
    "tilt of tall rigid buildings may become visible": 1.0 / 250.0,
    "structural damage of general buildings": 1.0 / 150.0,
}
"""Limiting angular distortions after Bjerrum (1963), *Allowable settlement of structures*,
Proc. European Conf. Soil Mech. Found. Eng., Wiesbaden (values and wording from memory;
to be checked against the paper)."""

DEFAULT_DISTORTION_LIMITS: dict[str, float] = {
    key: BJERRUM_1963_LIMITS[key]
    for key in ("safe limit for buildings where cracking is not permissible", "first cracking of panel walls",
                "structural damage of general buildings")
}
"""The three limits checked unless the user gives their own: 1/500, 1/300, 1/150
(Bjerrum 1963; from memory)."""


def _times(times: ArrayLike) -> NDArray[np.float64]:
    t = np.asarray(times, dtype=float).ravel()
    if t.size == 0 or np.any(~np.isfinite(t)) or np.any(np.diff(t) <= 0.0):
        raise InputError("times must be finite and strictly increasing", field="times_days",
                         fix="give output times in increasing order, days")
    return t


def differential_settlement(settlement_a: ArrayLike, settlement_b: ArrayLike) -> NDArray[np.float64]:
    """Differential settlement ``s_a - s_b`` (m), broadcast shape."""
    return np.asarray(settlement_a, dtype=float) - np.asarray(settlement_b, dtype=float)


def angular_distortion(settlement_a: ArrayLike, settlement_b: ArrayLike,
                       distance: float) -> NDArray[np.float64]:
    """Angular distortion ``|s_a - s_b| / L`` (-) of two points ``distance`` L (m) apart.

    (Skempton & MacDonald 1956, *The allowable settlements of buildings*, Proc. ICE 5;
    Bjerrum 1963.) Any rigid-body tilt is included; remove it first where the structure
    tilts as a whole.
    """
    distance = float(distance)
    if not (np.isfinite(distance) and distance > 0.0):
        raise InputError(f"distance between the probes must be > 0 m, got {distance!r}", field="distance",
                         fix="give the horizontal distance between the two probes")
    return np.abs(differential_settlement(settlement_a, settlement_b)) / distance


def distortion_along_line(positions: ArrayLike, settlements: ArrayLike) -> NDArray[np.float64]:
    """Angular distortion between neighbouring probes on a line (-).

    Parameters
    ----------
    positions : array_like, (np,)
        Strictly increasing distances along the line (m).
    settlements : array_like, (nt, np)
        Settlement history of each probe (m).

    Returns
    -------
    ndarray, (nt, np - 1)
        ``|s_{i+1} - s_i| / (x_{i+1} - x_i)``.
    """
    x = np.asarray(positions, dtype=float).ravel()
    s = np.atleast_2d(np.asarray(settlements, dtype=float))
    if x.size < 2 or np.any(np.diff(x) <= 0.0):
        raise InputError("probe positions must be at least two, strictly increasing", field="positions",
                         fix="order the probes along the line")
    if s.shape[-1] != x.size:
        raise InputError(f"settlements have {s.shape[-1]} columns for {x.size} probes", field="settlements",
                         fix="give settlements as (n_times, n_probes)")
    return np.abs(np.diff(s, axis=-1)) / np.diff(x)


def first_exceedance_time(times: ArrayLike, values: ArrayLike, limit: float) -> NDArray[np.float64]:
    """First time (days) at which ``values`` exceeds ``limit``, interpolated linearly.

    Between the last output time at or below the limit and the first above it the history
    is taken as linear (common practice for output at discrete times). A history already
    above the limit at the first time gives that time; one never above gives NaN.

    Parameters
    ----------
    times : array_like, (nt,)
        Strictly increasing times (days).
    values : array_like, (nt, ...)
        Histories, one per trailing index.
    limit : float

    Returns
    -------
    ndarray, shape ``values.shape[1:]`` (a 0-d array for one history)
    """
    t = _times(times)
    v = np.asarray(values, dtype=float)
    if v.shape[0] != t.size:
        raise InputError(f"values have {v.shape[0]} rows for {t.size} times", field="values",
                         fix="give one row per output time")
    above = v > limit
    ever = above.any(axis=0)
    i = np.argmax(above, axis=0)                   # first index above (0 if never)
    i0 = np.maximum(i - 1, 0)
    v1 = np.take_along_axis(v, i[None, ...], axis=0)[0]
    v0 = np.take_along_axis(v, i0[None, ...], axis=0)[0]
    t1, t0 = t[i], t[i0]
    with np.errstate(divide="ignore", invalid="ignore"):
        frac = np.where(v1 > v0, (limit - v0) / (v1 - v0), 0.0)
    te = np.where(i == 0, t[0], t0 + np.clip(frac, 0.0, 1.0) * (t1 - t0))
    return np.where(ever, te, np.nan)


@dataclass(frozen=True)
class LimitCheck:
    """One limit against a distortion history.

    ``first_exceeded_days`` is None when the limit is never exceeded in the history.
    """

    description: str
    limit: float
    first_exceeded_days: float | None
    max_distortion: float

    @property
    def exceeded(self) -> bool:
        """True if the limit is exceeded at some time."""
        return self.first_exceeded_days is not None


def check_distortion_limits(times: ArrayLike, distortion: ArrayLike,
                            limits: Mapping[str, float] | None = None) -> list[LimitCheck]:
    """Check a distortion history against limits; report the first exceedance of each.

    Parameters
    ----------
    times : array_like, (nt,)
        Strictly increasing times (days).
    distortion : array_like, (nt,) or (nt, n_pairs)
        Angular distortion; with several pairs the largest at each time is used.
    limits : mapping of description -> limit, optional
        Defaults to :data:`DEFAULT_DISTORTION_LIMITS` (Bjerrum 1963; from memory).

    Returns
    -------
    list of LimitCheck, in the order of ``limits``.
    """
    t = _times(times)
    d = np.asarray(distortion, dtype=float)
    d = d.reshape(d.shape[0], -1).max(axis=1) if d.ndim > 1 else d
    limits = DEFAULT_DISTORTION_LIMITS if limits is None else limits
    checks = []
    for name, lim in limits.items():
        lim = float(lim)
        if not (np.isfinite(lim) and lim > 0.0):
            raise InputError(f"limit '{name}' must be > 0, got {lim!r}", field=f"limits.{name}")
        te = float(first_exceedance_time(t, d, lim))
        checks.append(LimitCheck(name, lim, None if np.isnan(te) else te, float(d.max())))
    return checks


@dataclass(frozen=True)
class DifferentialHistory:
    """Differential settlement between two probes through time."""

    times_days: NDArray[np.float64]
    differential_settlement_m: NDArray[np.float64]
    angular_distortion: NDArray[np.float64]
    checks: list[LimitCheck]
    caution: str = field(default=CAUTION)


def differential_between_probes(times: ArrayLike, settlement_a: ArrayLike, settlement_b: ArrayLike,
                                distance: float, limits: Mapping[str, float] | None = None
                                ) -> DifferentialHistory:
    """Differential settlement (m), angular distortion (-) and limit checks of two probes.

    ``settlement_a``, ``settlement_b``: histories (nt,) at ``times`` (days, increasing);
    ``distance``: horizontal distance between the probes (m).
    """
    t = _times(times)
    sa = np.asarray(settlement_a, dtype=float).ravel()
    sb = np.asarray(settlement_b, dtype=float).ravel()
    if sa.size != t.size or sb.size != t.size:
        raise InputError(f"settlement histories have {sa.size} and {sb.size} values for {t.size} times",
                         field="settlement", fix="give one settlement per output time")
    dist = angular_distortion(sa, sb, distance)
    return DifferentialHistory(t, differential_settlement(sa, sb), dist,
                               check_distortion_limits(t, dist, limits))


@dataclass(frozen=True)
class SurfacePair:
    """Two neighbouring surface probes ``a`` (smaller x) and ``b``, ``distance_m`` apart.

    ``kind``: "ground" (differential settlement and change of gradient, user limits) or
    "structure" (angular distortion, building limits); ``structure``: the structure's name
    ("footings" for neighbouring footing bases), None for ground pairs.
    """
    a: str
    b: str
    distance_m: float
    kind: str
    structure: str | None = None


def surface_pairs(points, structures: Mapping[str, list[str]] | None = None) -> list[SurfacePair]:
    """The pairs of neighbouring surface probes, each with the limits that fit it.

    ``points``: (name, x in m, on a footing base) of the surface probes, any order;
    ``structures``: structure name -> its probe names. Ground pairs: every two neighbours by
    x. Structure pairs: neighbouring footing bases (the probes between them left out; the
    footings of one building, common practice) and the neighbouring probes of each named
    structure. Probes at the same x make no pair.
    """
    pts = sorted(points, key=lambda p: float(p[1]))
    x = {str(n): float(xx) for n, xx, _ in pts}

    def chain(names: list[str], kind: str, structure: str | None) -> list[SurfacePair]:
        names = sorted(names, key=lambda n: x[n])
        return [SurfacePair(a, b, x[b] - x[a], kind, structure)
                for a, b in zip(names, names[1:]) if x[b] - x[a] > 1e-9]

    out = chain([str(n) for n, _, _ in pts], "ground", None)
    out += chain([str(n) for n, _, f in pts if f], "structure", "footings")
    for name, probes in (structures or {}).items():
        out += chain([p for p in probes if p in x], "structure", str(name))
    return out


def gradient_change(settlement_a: ArrayLike, settlement_b: ArrayLike, settlement_c: ArrayLike,
                    x_a: float, x_b: float, x_c: float) -> NDArray[np.float64]:
    """Change of the surface gradient at b: the slope of b-c minus that of a-b (-), slopes
    ``(s_right - s_left) / distance`` (settlement positive downward), broadcast shape."""
    sa, sb, sc = (np.asarray(v, dtype=float) for v in (settlement_a, settlement_b, settlement_c))
    if not (x_a < x_b < x_c):
        raise InputError("the three probes must lie at increasing x", field="x",
                         fix="order the probes along the surface")
    return (sc - sb) / (x_c - x_b) - (sb - sa) / (x_b - x_a)
