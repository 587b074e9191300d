"""Forecasts from settlement readings: Asaoka's method and the hyperbolic method.

- Asaoka (1978): readings at a constant interval ``dt`` follow ``s_k = b0 + b1 s_(k-1)`` once the
  first term of the consolidation series dominates; the final settlement is ``b0 / (1 - b1)``
  and ``b1 = exp(-lambda dt)``. For vertical flow ``lambda = pi**2 c_v / (4 H_dr**2)`` (the first
  term of Terzaghi's 1925 series), for radial flow to drains ``lambda = 8 c_h / (mu d_e**2)``
  (Barron 1948; Hansbo 1981).
- Hyperbolic method (Tan 1971; Sridharan, Murthy and Prakash 1987; from memory):
  ``(t - t0) / (s - s0) = a + b (t - t0)`` is a straight line after the load is constant, and
  the final settlement is ``s0 + 1 / b``. It is empirical: the slope of the line depends on the
  part of the record used, so the part used is always reported.

Units: days, m (settlement positive downward), m2/day.
"""

from __future__ import annotations

from dataclasses import dataclass
from math import log, pi

import numpy as np
from numpy.typing import ArrayLike, NDArray

from solver.errors import InputError

__all__ = ["AsaokaFit", "asaoka", "HyperbolicFit", "hyperbolic", "resample"]

Array = NDArray[np.float64]


def resample(t: ArrayLike, s: ArrayLike, interval: float, start: float | None = None,
             end: float | None = None) -> tuple[Array, Array]:
    """Readings interpolated linearly to a constant interval (days), within the record."""
    t, s = np.asarray(t, float), np.asarray(s, float)
    if t.size < 2 or np.any(np.diff(t) <= 0):
        raise InputError("readings must have at least two distinct times in increasing order",
                         field="readings", fix="sort the readings by time")
    if not interval > 0:
        raise InputError("the interval must be positive", field="interval", fix="e.g. 7 days")
    a = t[0] if start is None else max(start, t[0])
    b = t[-1] if end is None else min(end, t[-1])
    n = int(np.floor((b - a) / interval + 1e-9)) + 1
    grid = a + interval * np.arange(n)
    return grid, np.interp(grid, t, s)


@dataclass(frozen=True)
class AsaokaFit:
    """The result of Asaoka's construction on a record."""

    final_settlement_m: float
    beta0: float
    beta1: float
    interval_days: float
    rate_per_day: float           # lambda = -ln(beta1) / dt
    times_used_days: Array        # the resampled readings the line was fitted to
    settlements_used_m: Array
    r_squared: float
    coefficient_of_consolidation: float | None = None   # c_v or c_h (m2/day), when asked
    flow: str | None = None       # "vertical" or "radial"

    def settlement(self, t: ArrayLike) -> Array:
        """The forecast ``s(t) = s_f - (s_f - s_last) exp(-lambda (t - t_last))`` beyond the record."""
        t = np.asarray(t, float)
        s_last, t_last = self.settlements_used_m[-1], self.times_used_days[-1]
        return self.final_settlement_m - (self.final_settlement_m - s_last) * np.exp(
            -self.rate_per_day * (t - t_last))

    def time_to_fraction(self, fraction: float, t0: float = 0.0, s0: float = 0.0) -> float:
        """Time (days) at which the forecast reaches ``s0 + fraction (s_f - s0)``."""
        target = s0 + fraction * (self.final_settlement_m - s0)
        s_last, t_last = self.settlements_used_m[-1], self.times_used_days[-1]
        if target <= s_last:
            # already reached within the record: interpolate the readings used
            return float(np.interp(target, self.settlements_used_m, self.times_used_days))
        return float(t_last + log((self.final_settlement_m - s_last) / (self.final_settlement_m - target))
                     / self.rate_per_day)


def asaoka(t: ArrayLike, s: ArrayLike, interval: float, start: float | None = None,
           end: float | None = None, drainage_length: float | None = None,
           cell_diameter: float | None = None, cell_factor: float | None = None) -> AsaokaFit:
    """Asaoka's (1978) construction on readings ``s(t)`` taken under a constant load.

    ``start``/``end`` choose the part of the record (the later part, once the load is constant
    and the first series term dominates). Give ``drainage_length`` (m) for c_v from vertical
    flow, or ``cell_diameter`` and ``cell_factor`` (d_e, mu) for c_h from radial flow.
    """
    ti, si = resample(t, s, interval, start, end)
    if ti.size < 4:
        raise InputError(f"Asaoka's method needs at least four readings {interval:g} days apart in "
                         f"the part used; this part has {ti.size}", field="readings",
                         fix="use a longer part of the record or a shorter interval")
    x, y = si[:-1], si[1:]
    # Both s_(k-1) and s_k carry the same reading error, so the line is fitted by orthogonal
    # (total) least squares, which has no attenuation bias in the slope when the errors of the
    # two variables have equal variance (Golub and Van Loan 1980).
    xm, ym = x.mean(), y.mean()
    _, _, vt = np.linalg.svd(np.column_stack([x - xm, y - ym]), full_matrices=False)
    nx, ny = vt[-1]
    if ny == 0:
        raise InputError("Asaoka's line is vertical: the readings do not change", field="readings",
                         fix="use a part of the record in which the settlement grows")
    b1 = -nx / ny
    b0 = ym - b1 * xm
    resid = y - (b0 + b1 * x)
    ss = np.sum((y - y.mean()) ** 2)
    r2 = 1.0 - np.sum(resid ** 2) / ss if ss > 0 else 0.0
    if not 0.0 < b1 < 1.0 - 1e-6:        # b1 -> 1: a straight line, no final value in sight
        raise InputError(f"the readings do not settle towards a final value (Asaoka's slope "
                         f"beta1 = {b1:.3f}, which must lie between 0 and 1)", field="readings",
                         fix="use the part of the record after the last load change")
    rate = -log(b1) / interval
    coef, flow = None, None
    if drainage_length is not None:
        coef, flow = 4.0 * drainage_length ** 2 * rate / pi ** 2, "vertical"
    elif cell_diameter is not None and cell_factor is not None:
        coef, flow = cell_factor * cell_diameter ** 2 * rate / 8.0, "radial"
    return AsaokaFit(float(b0 / (1.0 - b1)), float(b0), float(b1), float(interval), float(rate),
                     ti, si, float(r2), coef, flow)


@dataclass(frozen=True)
class HyperbolicFit:
    """The hyperbolic fit ``(t - t0)/(s - s0) = a + b (t - t0)`` on a part of the record."""

    final_settlement_m: float
    a: float
    b: float
    t0_days: float
    s0_m: float
    times_used_days: Array
    r_squared: float

    def settlement(self, t: ArrayLike) -> Array:
        dt = np.maximum(np.asarray(t, float) - self.t0_days, 0.0)
        return self.s0_m + dt / (self.a + self.b * dt)


def hyperbolic(t: ArrayLike, s: ArrayLike, t0: float, start: float | None = None,
               end: float | None = None) -> HyperbolicFit:
    """The hyperbolic method on readings after ``t0``, the end of loading (Tan 1971, from memory)."""
    t, s = np.asarray(t, float), np.asarray(s, float)
    s0 = float(np.interp(t0, t, s))
    keep = (t > t0) & (t >= (t0 if start is None else start)) & (t <= (np.inf if end is None else end))
    dt, ds = t[keep] - t0, s[keep] - s0
    keep2 = ds > 0
    dt, ds = dt[keep2], ds[keep2]
    if dt.size < 3:
        raise InputError("the hyperbolic method needs at least three readings after the end of "
                         "loading that have settled further", field="readings",
                         fix="use a longer record after the last load change")
    y = dt / ds
    A = np.column_stack([np.ones_like(dt), dt])
    (a, b), *_ = np.linalg.lstsq(A, y, rcond=None)
    resid = y - (a + b * dt)
    ss = np.sum((y - y.mean()) ** 2)
    r2 = 1.0 - np.sum(resid ** 2) / ss if ss > 0 else 0.0
    if not b > 0:
        raise InputError("the readings do not follow a hyperbola towards a final value",
                         field="readings", fix="use the part of the record after the last load change")
    return HyperbolicFit(float(s0 + 1.0 / b), float(a), float(b), float(t0), s0, t[keep][keep2], float(r2))
