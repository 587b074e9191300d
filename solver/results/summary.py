"""Per-probe summaries of a record: final settlement, t50, t90, largest excess pressure."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..hand.terzaghi import first_time_reaching

def time_to_fraction(t: np.ndarray, s: np.ndarray, final: float | None, fraction: float):
    """First time the settlement reaches ``fraction`` of ``final``: between the two output
    times that bracket it, a monotone cubic in log time
    (:func:`solver.hand.terzaghi.first_time_reaching`); None if never (or ``final`` is 0)."""
    if final is None or not math.isfinite(final) or final == 0.0:
        return None
    hit = first_time_reaching(np.asarray(t, float), np.asarray(s, float) / final, fraction)
    return None if not math.isfinite(hit) else float(hit)


T50_T90 = ("t50, t90: days from the start of the first stage until the settlement reaches 50 % "
           "/ 90 % of its primary value, the immediate plus the primary consolidation "
           "settlement under the final load (secondary compression left out). Finite elements: "
           "the primary value is the settlement at the end of the run plus what the excess "
           "pore water still in the soil then will give, at the settlement per unit of water "
           "drained since its largest volume (exact for one-dimensional consolidation; the "
           "settlement at the end once consolidation is over); 'not reached by the end of the "
           "run' when the settlement has not got there. Hand method: its own primary "
           "settlement.")
"""The one meaning of t50 and t90 (hand, comparison, summary.json, plots, report)."""

NOT_REACHED = "not reached by the end of the run"


def primary_settlement(t: np.ndarray, s: np.ndarray, degree_at_end: float | None,
                       peak_time: float | None) -> float | None:
    """The primary settlement of a FE record (m), see :data:`T50_T90`.

    ``degree_at_end`` = 1 - W_end / W_peak of the run (W the excess pore water), ``peak_time``
    when W was largest: the water still in the soil, W_end = W_peak (1 - U) ... gives
    ``(1 - U) / U`` times the settlement since the peak. None when the record is empty.
    """
    if t.size == 0:
        return None
    final = float(s[-1])
    if degree_at_end is None or peak_time is None or not 0.0 < degree_at_end < 1.0:
        return final
    since = final - float(np.interp(peak_time, t, s))
    return final + max(since, 0.0) * (1.0 - degree_at_end) / degree_at_end


def primary_times(t: np.ndarray, s: np.ndarray, primary: float | None) -> dict[str, Any]:
    """t50 and t90 of a settlement record (see :data:`T50_T90`) with the reason when missing.

    ``primary``: the primary settlement (m) the fractions refer to. Returns ``{"t50_days",
    "t90_days", "t50_note", "t90_note"}`` (a note is None when the time is given).
    """
    out: dict[str, Any] = {}
    for f in (50, 90):
        value, note = None, None
        if primary is None or not math.isfinite(primary) or primary <= 0.0:
            note = "no primary settlement to measure it against (none, or a heave)"
        else:
            value = time_to_fraction(t, s, primary, f / 100.0)
            if value is None:
                reached = float(s[-1]) / primary if s.size else 0.0
                note = f"{NOT_REACHED} ({reached:.0%} of the primary settlement by then)"
        out[f"t{f}_days"], out[f"t{f}_note"] = value, note
    return out


def residual_settlement(t: np.ndarray, s: np.ndarray, day: float) -> dict[str, Any]:
    """The settlement on ``day`` (linear between the recorded times) and what is still to come
    after it to the end of the record (m); None when the record does not reach that day."""
    out: dict[str, Any] = {"residual_after_days": day, "settlement_at_residual_start_m": None,
                           "residual_settlement_m": None}
    if t.size and t[0] <= day <= t[-1] * (1 + 1e-12):
        at = float(np.interp(day, t, s))
        out["settlement_at_residual_start_m"] = at
        out["residual_settlement_m"] = float(s[-1]) - at
    return out


def probe_summary(probes: dict[str, dict[str, np.ndarray]], degree_at_end: float | None = None,
                  peak_time: float | None = None, residual_after: float | None = None
                  ) -> dict[str, dict[str, Any]]:
    """Per probe: final settlement, t50 and t90 (:data:`T50_T90`), largest excess pore pressure,
    and, given ``residual_after`` (a day, e.g. of paving), the settlement then and the residual
    settlement after it (final minus the settlement on that day).

    Times are on the run's clock (days from its time zero), linearly interpolated between
    output times. ``degree_at_end``, ``peak_time``: the run's average degree of consolidation
    at its end and the time of its largest excess pore water (``summary.json`` ``run``), from
    which :func:`primary_settlement` follows. A probe whose excess pore pressure is zero throughout sits on a
    draining boundary: its largest excess pore pressure is not applicable (None, with a note).
    Rows without a settlement (or pore pressure) are skipped.

    Returns
    -------
    probe -> {"final_time_days", "final_settlement_m", "primary_settlement_m",
    "time_to_50_percent_settlement_days", "time_to_90_percent_settlement_days", "t50_note",
    "t90_note", "largest_excess_pore_pressure_kPa", "largest_excess_pore_pressure_note",
    "time_of_largest_excess_pore_pressure_days", "stage_of_largest_excess_pore_pressure"}, and
    with ``residual_after`` also "residual_after_days", "settlement_at_residual_start_m" and
    "residual_settlement_m" (None when the record ends before that day).
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
        primary = primary_settlement(ts, ss, degree_at_end, peak_time)
        times = primary_times(ts, ss, primary)
        res: dict[str, Any] = {
            "final_time_days": float(ts[-1]) if ts.size else None,
            "final_settlement_m": final if math.isfinite(final) else None,
            "primary_settlement_m": primary,
            "time_to_50_percent_settlement_days": times["t50_days"],
            "time_to_90_percent_settlement_days": times["t90_days"],
            "t50_note": times["t50_note"],
            "t90_note": times["t90_note"],
            "largest_excess_pore_pressure_kPa": None,
            "largest_excess_pore_pressure_note": None,
            "time_of_largest_excess_pore_pressure_days": None,
            "stage_of_largest_excess_pore_pressure": None,
        }
        okp = np.isfinite(u) & np.isfinite(t)
        if okp.any() and np.all(np.abs(u[okp]) <= 1e-9):
            res["largest_excess_pore_pressure_note"] = ("not applicable: the probe is on a "
                                                        "draining boundary (u = 0 there)")
        elif okp.any():
            i = int(np.flatnonzero(okp)[np.argmax(u[okp])])
            res["largest_excess_pore_pressure_kPa"] = float(u[i])
            res["time_of_largest_excess_pore_pressure_days"] = float(t[i])
            res["stage_of_largest_excess_pore_pressure"] = str(stages[i])
        if residual_after is not None:
            res.update(residual_settlement(ts, ss, float(residual_after)))
        out[name] = res
    return out


def residual_table(summary: dict[str, dict[str, Any]]) -> str | None:
    """The residual settlement of a :func:`probe_summary` as text lines (None without one)."""
    day = next((p.get("residual_after_days") for p in summary.values()
                if p.get("residual_after_days") is not None), None)
    if day is None:
        return None

    def mm(v):
        return "-" if v is None else f"{1000 * v:,.1f}"
    lines = [f"settlement after day {day:g} (output.residual_after), mm:",
             f"  {'probe':16s} {'at the end':>12s} {f'on day {day:g}':>12s} {'residual':>12s}"]
    for name, p in summary.items():
        lines.append(f"  {name:16s} {mm(p.get('final_settlement_m')):>12s} "
                     f"{mm(p.get('settlement_at_residual_start_m')):>12s} "
                     f"{mm(p.get('residual_settlement_m')):>12s}")
    return "\n".join(lines)
