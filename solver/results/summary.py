"""Per-probe summaries of a record: final settlement, t50, t90, largest excess pressure."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

def time_to_fraction(t: np.ndarray, s: np.ndarray, final: float | None, fraction: float):
    """First time the settlement reaches ``fraction`` of ``final``, linearly interpolated."""
    if final is None or not math.isfinite(final) or final == 0.0:
        return None
    r = s / final
    hit = np.flatnonzero(r >= fraction)
    if hit.size == 0:
        return None
    i = int(hit[0])
    if i == 0:
        return float(t[0])
    t0, t1, r0, r1 = t[i - 1], t[i], r[i - 1], r[i]
    return float(t0 + (fraction - r0) / (r1 - r0) * (t1 - t0))


def probe_summary(probes: dict[str, dict[str, np.ndarray]]) -> dict[str, dict[str, Any]]:
    """Per probe: final settlement, times to 50 % and 90 % of it, largest excess pore pressure.

    Times are on the run's clock (days from its time zero), linearly interpolated between
    output times; None when never reached (or the final settlement is zero). The fractions
    refer to the final settlement of the record, so the record should run long enough to be
    near its end value. Rows without a settlement (or pore pressure) are skipped.

    Returns
    -------
    probe -> {"final_time_days", "final_settlement_m", "time_to_50_percent_settlement_days",
    "time_to_90_percent_settlement_days", "largest_excess_pore_pressure_kPa",
    "time_of_largest_excess_pore_pressure_days", "stage_of_largest_excess_pore_pressure"}
    """
    out = {}
    for name, cols in probes.items():
        t = np.asarray(cols["time_days"], float)
        order = np.argsort(t, kind="stable")
        t = t[order]
        s = np.asarray(cols.get("settlement_m", np.full(t.shape, np.nan)), float)[order]
        u = np.asarray(cols.get("excess_pore_pressure_kPa", np.full(t.shape, np.nan)),
                       float)[order]
        stages = np.asarray(cols.get("stage", np.full(t.shape, "", dtype=object)))[order]
        ok = np.isfinite(t) & np.isfinite(s)
        ts, ss = t[ok], s[ok]
        final = float(ss[-1]) if ss.size else math.nan
        res: dict[str, Any] = {
            "final_time_days": float(ts[-1]) if ts.size else None,
            "final_settlement_m": final if math.isfinite(final) else None,
            "time_to_50_percent_settlement_days": time_to_fraction(ts, ss, final, 0.5),
            "time_to_90_percent_settlement_days": time_to_fraction(ts, ss, final, 0.9),
            "largest_excess_pore_pressure_kPa": None,
            "time_of_largest_excess_pore_pressure_days": None,
            "stage_of_largest_excess_pore_pressure": None,
        }
        okp = np.isfinite(u) & np.isfinite(t)
        if okp.any():
            i = int(np.flatnonzero(okp)[np.argmax(u[okp])])
            res["largest_excess_pore_pressure_kPa"] = float(u[i])
            res["time_of_largest_excess_pore_pressure_days"] = float(t[i])
            res["stage_of_largest_excess_pore_pressure"] = str(stages[i])
        out[name] = res
    return out
