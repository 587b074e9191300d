"""The FE run held against the hand method, probe by probe.

Rows (one dict per point probe) put the FE and hand values of the same quantity side by side,
with the ratio FE / hand and a hint where the ratio departs from 1 by more than
:data:`RATIO_TOLERANCE`:

- settlement at the end of the FE record, the hand settlement at that same time (immediate +
  consolidation so far + secondary so far) and the hand's ultimate value;
- t50 and t90, measured the same way on both curves: the time each settlement curve takes to
  reach 50 % / 90 % of its own value at the end of the FE record, on the run's clock (days
  from the start of the first stage), linear between output times. This is the definition of
  the FE summary (:func:`solver.results.probe_summary`); the hand report's own t50/t90 refer
  to the consolidation settlement alone;
- the largest excess pore pressure at the probe (the hand value is the one-dimensional
  finite-difference solution at the probe depth; none on a drained surface).

:func:`hand_report` is the text of ``poroplane hand MODEL``; :func:`format_table` and
:func:`compare_run_dir` that of ``poroplane compare DIR``; :func:`add_comparison` is the step
``poroplane run`` takes at the end of a run (``DIR/comparison.csv`` and the ``comparison``
section of ``summary.json``).
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
from pathlib import Path
from typing import Any, Mapping, Sequence

import numpy as np

from . import CAUTION
from .errors import InputError, PoroplaneError
from .results import time_to_fraction

__all__ = [
    "RATIO_TOLERANCE",
    "REASONS",
    "COLUMNS",
    "compare",
    "write_comparison_csv",
    "comparison_section",
    "format_table",
    "hand_report",
    "compare_run_dir",
    "add_comparison",
]

RATIO_TOLERANCE = 0.20
"""A ratio FE / hand outside [1 - tol, 1 + tol] gets a hint."""

REASONS = ("FE and hand differ mainly through 2D drainage (the FE section also drains "
           "sideways), lateral deformation (the hand method is one-dimensional under the "
           "probe), stress distribution (elastic half-space under the load against the layered "
           "FE section with its boundaries) and the stiffness of the layers (oedometer Cc/Cr/m_v "
           "against the FE elastic moduli).")
"""One line on the usual reasons the two answers differ."""

DEFINITIONS = ("t50, t90: time for each settlement curve to reach 50 % / 90 % of its own value "
               "at the end of the FE record (days from the start of the first stage); ratios "
               "are FE / hand.")

COLUMNS = (
    "probe", "x_m", "y_m", "depth_m", "fe_final_time_days",
    "fe_final_settlement_m", "hand_final_settlement_m", "hand_ultimate_settlement_m",
    "settlement_ratio_fe_to_hand",
    "fe_t50_days", "hand_t50_days", "t50_ratio_fe_to_hand",
    "fe_t90_days", "hand_t90_days", "t90_ratio_fe_to_hand",
    "fe_max_excess_pore_pressure_kPa", "hand_max_excess_pore_pressure_kPa",
    "pore_pressure_ratio_fe_to_hand",
    "hints",
)
"""Columns of ``comparison.csv``, in order; every quantity names its unit (ratios: -)."""

_HINTS = {
    ("settlement", "high"): "FE settles more: lateral deformation (2D) or an FE stiffness softer "
                            "than the oedometer parameters",
    ("settlement", "low"): "FE settles less: an FE stiffness stiffer than the oedometer "
                           "parameters, or load carried by stiffer layers and the boundaries",
    ("t50", "low"): "FE faster: lateral drainage",
    ("t50", "high"): "FE slower: longer drainage paths in the FE section (closed sides, an "
                     "undrained footing base) or a lower FE c_v",
    ("t90", "low"): "FE faster: lateral drainage",
    ("t90", "high"): "FE slower: longer drainage paths in the FE section (closed sides, an "
                     "undrained footing base) or a lower FE c_v",
    ("pore pressure", "low"): "FE lower excess pore pressure: undrained 2D response to a load of "
                              "finite width (Skempton 1954 A and B) and lateral drainage",
    ("pore pressure", "high"): "FE higher excess pore pressure: stress concentration under the "
                               "load or the Mandel-Cryer effect (Mandel 1953; Cryer 1963)",
}


# ============================================================================ helpers


def _num(v: Any) -> float | None:
    """A finite float or None (JSON and CSV friendly)."""
    if v is None:
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def _ratio(fe: float | None, hand: float | None) -> float | None:
    if fe is None or hand is None or hand == 0.0:
        return None
    return fe / hand




def _fe_values(arrays: Mapping[str, Any] | None, summary: Mapping[str, Any] | None) -> dict:
    """FE end time, final settlement, t50, t90, largest excess pore pressure of one probe."""
    out = {"time": None, "final": None, "t50": None, "t90": None, "umax": None}
    if arrays is not None and "time_days" in arrays and "settlement_m" in arrays:
        t = np.asarray(arrays["time_days"], dtype=float)
        s = np.asarray(arrays["settlement_m"], dtype=float)
        ok = np.isfinite(t) & np.isfinite(s)
        order = np.argsort(t[ok], kind="stable")
        t, s = t[ok][order], s[ok][order]
        if t.size:
            out["time"], out["final"] = float(t[-1]), float(s[-1])
            out["t50"] = time_to_fraction(t, s, s[-1], 0.5)
            out["t90"] = time_to_fraction(t, s, s[-1], 0.9)
        u = np.asarray(arrays.get("excess_pore_pressure_kPa", []), dtype=float)
        u = u[np.isfinite(u)]
        if u.size:
            out["umax"] = float(u.max())
        return out
    if summary:
        out["time"] = _num(summary.get("final_time_days"))
        out["final"] = _num(summary.get("final_settlement_m"))
        out["t50"] = _num(summary.get("time_to_50_percent_settlement_days"))
        out["t90"] = _num(summary.get("time_to_90_percent_settlement_days"))
        out["umax"] = _num(summary.get("largest_excess_pore_pressure_kPa"))
    return out


def _hint(quantity: str, ratio: float | None) -> str | None:
    if ratio is None or abs(ratio - 1.0) <= RATIO_TOLERANCE:
        return None
    return f"{quantity}: " + _HINTS[(quantity, "high" if ratio > 1.0 else "low")]


# ============================================================================ rows


def compare(hand, fe_probes: Mapping[str, Mapping[str, Any]] | None,
            fe_summary: Mapping[str, Any] | None = None) -> list[dict]:
    """One row per probe of the hand estimate: FE and hand values, ratios FE / hand, hints.

    Parameters
    ----------
    hand : solver.hand.estimate.HandEstimate
    fe_probes : dict
        ``probe -> column -> array`` as in ``RunResult.probes`` or
        :func:`solver.results.read_probes` (``time_days``, ``settlement_m``,
        ``excess_pore_pressure_kPa``); None to use the summary alone.
    fe_summary : dict, optional
        ``summary.json`` as a dict (its ``probes`` section is used) or that section itself;
        used for probes missing from ``fe_probes``.

    Returns
    -------
    list of dict with the keys :data:`COLUMNS`; numbers are floats or None (not computed),
    ``hints`` a "; "-joined string (empty when every ratio lies within
    :data:`RATIO_TOLERANCE`).
    """
    summary = fe_summary or {}
    if isinstance(summary.get("probes"), Mapping):
        summary = summary["probes"]
    fe_probes = fe_probes or {}
    rows = []
    for name, p in hand.probes.items():
        fe = _fe_values(fe_probes.get(name), summary.get(name))
        t_end = fe["time"] if fe["time"] is not None else float(hand.end_days)
        th = np.asarray(p.time_days, dtype=float)
        sh = np.asarray(p.settlement_m, dtype=float)
        keep = th <= t_end * (1.0 + 1e-9)
        hand_end = float(np.interp(t_end, th, sh))
        th_c = np.unique(np.append(th[keep], t_end))
        sh_c = np.interp(th_c, th, sh)
        hand_t50 = time_to_fraction(th_c, sh_c, hand_end, 0.5)
        hand_t90 = time_to_fraction(th_c, sh_c, hand_end, 0.9)
        hand_u = _num(p.max_excess_pore_pressure_kPa)
        row = {
            "probe": name, "x_m": float(p.x_m), "y_m": float(p.y_m), "depth_m": float(p.probe_depth_m),
            "fe_final_time_days": fe["time"],
            "fe_final_settlement_m": fe["final"], "hand_final_settlement_m": _num(hand_end),
            "hand_ultimate_settlement_m": _num(p.final_settlement_m),
            "settlement_ratio_fe_to_hand": _ratio(fe["final"], _num(hand_end)),
            "fe_t50_days": fe["t50"], "hand_t50_days": hand_t50,
            "t50_ratio_fe_to_hand": _ratio(fe["t50"], hand_t50),
            "fe_t90_days": fe["t90"], "hand_t90_days": hand_t90,
            "t90_ratio_fe_to_hand": _ratio(fe["t90"], hand_t90),
            "fe_max_excess_pore_pressure_kPa": fe["umax"],
            "hand_max_excess_pore_pressure_kPa": hand_u,
            "pore_pressure_ratio_fe_to_hand": _ratio(fe["umax"], hand_u),
        }
        hints = [_hint("settlement", row["settlement_ratio_fe_to_hand"]),
                 _hint("t50", row["t50_ratio_fe_to_hand"]),
                 _hint("t90", row["t90_ratio_fe_to_hand"]),
                 _hint("pore pressure", row["pore_pressure_ratio_fe_to_hand"])]
        row["hints"] = "; ".join(h for h in hints if h)
        rows.append(row)
    return rows


def write_comparison_csv(rows: Sequence[Mapping[str, Any]], path: str | Path) -> Path:
    """Write the rows to ``path`` (columns :data:`COLUMNS`; empty cell = not computed)."""
    path = Path(path)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(COLUMNS)
    for r in rows:
        cells = []
        for c in COLUMNS:
            v = r.get(c)
            if v is None:
                cells.append("")
            elif isinstance(v, float):
                cells.append(format(v, ".6g"))
            else:
                cells.append(str(v))
        w.writerow(cells)
    tmp = path.with_name(path.name + ".tmp")
    tmp.write_text(buf.getvalue(), encoding="utf-8")
    os.replace(tmp, path)
    return path


def comparison_section(rows: Sequence[Mapping[str, Any]]) -> dict:
    """The ``comparison`` section of ``summary.json``: per probe the row (without the name),
    the definitions, the usual reasons for differences, the tolerance and the caution."""
    return {
        "definitions": DEFINITIONS,
        "reasons": REASONS,
        "ratio_tolerance": RATIO_TOLERANCE,
        "probes": {r["probe"]: {k: r.get(k) for k in COLUMNS if k != "probe"} for r in rows},
        "caution": CAUTION,
    }


# ============================================================================ text


def _f(v: float | None, fmt: str) -> str:
    return "-" if v is None else format(v, fmt)


def format_table(rows: Sequence[Mapping[str, Any]]) -> str:
    """The comparison as a fixed-width text table, hints, reasons and the caution."""
    head = ("probe", "settlement FE", "hand", "FE/hand", "t50 FE", "hand", "FE/hand",
            "t90 FE", "hand", "FE/hand", "u max FE", "hand", "FE/hand")
    units = ("", "m", "m", "-", "days", "days", "-", "days", "days", "-", "kPa", "kPa", "-")
    table = [head, units]
    for r in rows:
        table.append((
            str(r["probe"]),
            _f(r["fe_final_settlement_m"], ".4f"), _f(r["hand_final_settlement_m"], ".4f"),
            _f(r["settlement_ratio_fe_to_hand"], ".2f"),
            _f(r["fe_t50_days"], ".4g"), _f(r["hand_t50_days"], ".4g"), _f(r["t50_ratio_fe_to_hand"], ".2f"),
            _f(r["fe_t90_days"], ".4g"), _f(r["hand_t90_days"], ".4g"), _f(r["t90_ratio_fe_to_hand"], ".2f"),
            _f(r["fe_max_excess_pore_pressure_kPa"], ".4g"), _f(r["hand_max_excess_pore_pressure_kPa"], ".4g"),
            _f(r["pore_pressure_ratio_fe_to_hand"], ".2f")))
    widths = [max(len(row[i]) for row in table) for i in range(len(head))]
    lines = ["FE run against the hand method (settlement at the end of the FE record)"]
    for row in table:
        lines.append("  ".join(v.ljust(w) if i == 0 else v.rjust(w)
                               for i, (v, w) in enumerate(zip(row, widths))).rstrip())
    hinted = [r for r in rows if r.get("hints")]
    if hinted:
        lines.append("")
        lines.append(f"Ratios beyond {RATIO_TOLERANCE:.0%}:")
        for r in hinted:
            for h in str(r["hints"]).split("; "):
                lines.append(f"  {r['probe']}: {h}")
    lines += ["", DEFINITIONS, REASONS, CAUTION]
    return "\n".join(lines)


def _days(t: float) -> str:
    if not math.isfinite(t):
        return "not reached"
    return f"{t:,.0f} days ({t / 365.25:.2g} years)" if t >= 365.25 else f"{t:,.3g} days"


def hand_report(hand) -> str:
    """The text ``poroplane hand MODEL`` prints: per probe the final settlement split into
    immediate, consolidation and secondary, t50 and t90, the stress increase used at one depth
    in each layer, the notes; the differential settlements; the caution line."""
    lines = [f"Hand estimate: {hand.title} ({hand.analysis})",
             f"stages end at {_days(hand.end_days)}; settlement positive downward"]
    for p in hand.probes.values():
        where = {"in the fill": "in the fill: the estimate is for the ground below it",
                 "footing base": f"footing base {p.probe_depth_m:g} m deep: settlement of the "
                                 "soil below it"}.get(p.where, p.where)
        if p.where == "inside the ground":
            where = f"{p.probe_depth_m:g} m deep: settlement of the soil below it"
        lines += ["", f"probe {p.name} (x = {p.x_m:g} m, y = {p.y_m:g} m; {where})"]
        lines.append(f"  final settlement   {p.final_settlement_m:8.4f} m = immediate "
                     f"{p.immediate_settlement_m:.4f} + consolidation {p.consolidation_settlement_m:.4f} "
                     f"+ secondary {p.secondary_settlement_m:.4f} (to {hand.end_days:,.0f} days)")
        if p.layer_settlement_m:
            lines.append("  consolidation by layer: " + ", ".join(
                f"{k} {v:.4f} m" for k, v in p.layer_settlement_m.items()))
        lines.append(f"  t50 {_days(p.t50_days)}, t90 {_days(p.t90_days)} (of the consolidation "
                     f"settlement); end of primary t95 {_days(p.end_of_primary_days)}")
        u = p.max_excess_pore_pressure_kPa
        lines.append("  largest excess pore pressure at the probe: " +
                     (f"{u:.4g} kPa" if math.isfinite(u) else "- (drained surface)"))
        if p.depth_m.size:
            lines.append("  stress increase used     depth m   half-space kPa   2:1 kPa   sigma'_v0 kPa   layer")
            names = p.sublayer_layer
            for name in dict.fromkeys(names):
                idx = [i for i, n in enumerate(names) if n == name]
                i = idx[len(idx) // 2]
                lines.append(f"  {'':22s} {p.depth_m[i]:7.2f}   {p.stress_increase_kPa[i]:14.4g}   "
                             f"{p.stress_increase_2to1_kPa[i]:7.4g}   {p.initial_effective_stress_kPa[i]:13.4g}"
                             f"   {name}")
        for n in p.notes:
            lines.append(f"  note: {n}")
    if hand.differential:
        lines += ["", "Differential settlement of neighbouring probes on the surface or footing bases "
                      "(limits: Bjerrum 1963, from memory)"]
        for d in hand.differential:
            worst = d.max_angular_distortion
            ratio = f"1/{1 / worst:,.0f}" if worst > 0 else "0"
            lines.append(f"  {d.probe_a} - {d.probe_b} ({d.distance_m:g} m): final "
                         f"{d.final_differential_settlement_m:+.4f} m, largest angular distortion "
                         f"{worst:.3g} ({ratio})")
            for c in d.checks:
                state = (f"exceeded from {_days(c.first_exceeded_days)}" if c.exceeded
                         else "not exceeded")
                lines.append(f"    1/{1 / c.limit:,.0f} {c.description}: {state}")
    if hand.notes:
        lines += ["", "Notes"]
        lines += [f"  - {n}" for n in hand.notes]
    lines += ["", hand.caution]
    return "\n".join(lines)


# ============================================================================ run folders


def compare_run_dir(out_dir: str | Path) -> str:
    """The comparison table of a finished run folder (``poroplane compare DIR``).

    Reads ``DIR/model.toml`` (the copy of the model the run saved), ``DIR/probes.csv`` and,
    if present, ``DIR/summary.json``; recomputes the hand estimate; returns
    :func:`format_table` of :func:`compare`.
    """
    from .hand.estimate import hand_estimate
    from .model import load_model
    from .results import read_probes
    out = Path(out_dir)
    model_path = out / "model.toml"
    if not model_path.exists():
        raise InputError("the run folder has no model.toml (the copy of the model a run saves)",
                         source=str(out), fix="give the folder a run wrote, or run the model again.")
    if not (out / "probes.csv").exists():
        raise InputError("the run folder has no probes.csv", source=str(out),
                         fix="give the folder a run wrote (it needs point probes).")
    model = load_model(model_path)
    hand = hand_estimate(model)
    probes = read_probes(out)
    summary = None
    if (out / "summary.json").exists():
        summary = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    return format_table(compare(hand, probes, summary))


def add_comparison(model, fe_probes: Mapping[str, Mapping[str, Any]], out_dir: str | Path | None = None
                   ) -> tuple[list[dict] | None, str | None]:
    """The comparison step at the end of a run: hand estimate, rows, and (with ``out_dir``)
    ``out_dir/comparison.csv`` and the ``comparison`` section added to ``out_dir/summary.json``.

    The hand method needs parameters the FE run does not (e.g. oedometer data); when it cannot
    be done the run is not affected: returns ``(None, message)`` and records
    ``{"skipped": message}`` as the summary's ``comparison``. Otherwise ``(rows, None)``.
    """
    from .hand.estimate import hand_estimate
    rows, message = None, None
    summary_path = Path(out_dir) / "summary.json" if out_dir is not None else None
    summary = None
    if summary_path is not None and summary_path.exists():
        summary = json.loads(summary_path.read_text(encoding="utf-8"))
    try:
        hand = hand_estimate(model)
        rows = compare(hand, fe_probes, summary)
    except PoroplaneError as exc:
        message = f"no comparison with the hand method: {exc}"
    if out_dir is not None:
        out = Path(out_dir)
        if rows is not None:
            write_comparison_csv(rows, out / "comparison.csv")
        if summary is not None:
            summary["comparison"] = comparison_section(rows) if rows is not None else {"skipped": message}
            tmp = summary_path.with_name(summary_path.name + ".tmp")
            tmp.write_text(json.dumps(summary, indent=2, default=_json_default), encoding="utf-8")
            os.replace(tmp, summary_path)
    return rows, message


def _json_default(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, np.generic):
        return obj.item()
    raise TypeError(f"not JSON serialisable: {type(obj).__name__}")
