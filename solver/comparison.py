"""The FE run held against the hand method, probe by probe.

Rows (one dict per point probe) put the FE and hand values of the same quantity side by side,
with the ratio FE / hand and a hint where the ratio departs from 1 by more than
:data:`RATIO_TOLERANCE`:

- settlement at the end of the FE record, the hand settlement at that same time (immediate +
  consolidation so far + secondary so far) and the hand's ultimate value;
- t50 and t90 in their one meaning (:data:`solver.results.T50_T90`): days from the start of
  the first stage to 50 % / 90 % of the primary settlement; the FE primary settlement is its
  settlement at the end of the run over the run's average degree of consolidation then, and
  "not reached by the end of the run" is said when that degree is below 50 % / 90 %;
- the largest excess pore pressure at the probe (the hand value is the one-dimensional
  finite-difference solution at the probe depth; not applicable on a draining surface).

A ratio is given only where it means something: where either value is under
:data:`NEAR_ZERO` of the largest of that quantity at any probe, or the two signs differ, the
ratio is left out ("-") and ``notes`` says why. ``notes`` also says when the FE excess pore
pressure rises above the applied vertical stress increase (the Mandel-Cryer effect).

:func:`format_table` and :func:`compare_run_dir` give the text of ``poroplane compare DIR``;
:func:`add_comparison` is the step ``poroplane run`` takes at the end of a run
(``DIR/comparison.csv``, ``DIR/hand.json`` and the ``comparison`` section of
``summary.json``). The text of ``poroplane hand MODEL`` is :func:`solver.hand_output.hand_report`.
"""

from __future__ import annotations

import csv
import io
import json
import math
from pathlib import Path
from typing import Any, Mapping, Sequence

import numpy as np

from . import CAUTION
from .errors import InputError, PoroplaneError
from .hand_output import hand_json, hand_report
from .results import T50_T90, primary_settlement, primary_times

__all__ = [
    "RATIO_TOLERANCE",
    "NEAR_ZERO",
    "REASONS",
    "DEFINITIONS",
    "COLUMNS",
    "compare",
    "write_comparison_csv",
    "comparison_section",
    "format_table",
    "hand_report",
    "compare_run_dir",
    "add_comparison",
    "comparison_csv_text",
    "comparison_finisher",
    "comparison_outputs",
]

RATIO_TOLERANCE = 0.20
"""A ratio FE / hand outside [1 - tol, 1 + tol] gets a hint."""

NEAR_ZERO = 0.05
"""A value under this fraction of the largest of its quantity at any probe gives no ratio."""

REASONS = ("FE and hand differ mainly through 2D drainage (the FE section also drains "
           "sideways), lateral deformation (the hand method is one-dimensional under the "
           "probe), stress distribution (elastic half-space under the load against the layered "
           "FE section with its boundaries) and the stiffness of the layers (oedometer Cc/Cr/m_v "
           "against the FE elastic moduli).")
"""One line on the usual reasons the two answers differ."""

DEFINITIONS = (T50_T90 + " Ratios are FE / hand; '-' where a value is under "
               f"{NEAR_ZERO:.0%} of the largest of its kind at any probe or the signs differ "
               "(the notes say which).")

MANDEL_CRYER = ("the FE excess pore pressure ({fe:.3g} kPa) rises above the applied vertical "
                "stress increase here ({load:.3g} kPa): the known two-dimensional effect of "
                "Mandel (1953) and Cryer (1963) (the drained boundary shrinks first and squeezes "
                "the water inside), not an error")

COLUMNS = (
    "probe", "x_m", "y_m", "depth_m", "fe_final_time_days",
    "fe_final_settlement_m", "hand_final_settlement_m", "hand_ultimate_settlement_m",
    "settlement_ratio_fe_to_hand",
    "fe_t50_days", "hand_t50_days", "t50_ratio_fe_to_hand",
    "fe_t90_days", "hand_t90_days", "t90_ratio_fe_to_hand",
    "fe_max_excess_pore_pressure_kPa", "hand_max_excess_pore_pressure_kPa",
    "pore_pressure_ratio_fe_to_hand",
    "hints", "notes",
)
"""Columns of ``comparison.csv``, in order; every quantity names its unit (ratios: -)."""

_HINTS = {
    ("settlement", "high"): "FE settles more: lateral deformation (2D) or an FE stiffness softer "
                            "than the oedometer parameters",
    ("settlement", "low"): "FE settles less: an FE stiffness stiffer than the oedometer "
                           "parameters, or load carried by stiffer layers and the boundaries",
    ("t50", "low"): "FE faster: lateral drainage, or a larger immediate (undrained) part of "
                    "the FE settlement (its undrained stiffness comes from the drained moduli, "
                    "the hand method's from the E_u given)",
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


def _consolidation(summary: Mapping[str, Any] | None) -> tuple[float | None, float | None]:
    """(average degree of consolidation at the end, time of the largest excess pore water)
    of the run, from ``summary.json`` ``run``; (None, None) when not known."""
    run = (summary or {}).get("run") if isinstance(summary, Mapping) else None
    if not isinstance(run, Mapping):
        return None, None
    return (_num(run.get("average_degree_of_consolidation_at_end")),
            _num(run.get("largest_excess_pore_water_days")))


def _fe_values(arrays: Mapping[str, Any] | None, summary: Mapping[str, Any] | None,
               consolidation: tuple[float | None, float | None]) -> dict:
    """FE end time, final settlement, t50, t90 (with notes), largest excess pore pressure."""
    out = {"time": None, "final": None, "t50": None, "t90": None, "t50_note": None,
           "t90_note": None, "umax": None, "umax_note": None}
    if arrays is not None and "time_days" in arrays and "settlement_m" in arrays:
        t = np.asarray(arrays["time_days"], dtype=float)
        s = np.asarray(arrays["settlement_m"], dtype=float)
        ok = np.isfinite(t) & np.isfinite(s)
        order = np.argsort(t[ok], kind="stable")
        t, s = t[ok][order], s[ok][order]
        if t.size:
            out["time"], out["final"] = float(t[-1]), float(s[-1])
            times = primary_times(t, s, primary_settlement(t, s, *consolidation))
            for k in ("t50", "t90"):
                out[k], out[f"{k}_note"] = times[f"{k}_days"], times[f"{k}_note"]
        u = np.asarray(arrays.get("excess_pore_pressure_kPa", []), dtype=float)
        u = u[np.isfinite(u)]
        if u.size and np.all(np.abs(u) <= 1e-9):
            out["umax_note"] = "not applicable on a draining boundary"
        elif u.size:
            out["umax"] = float(u.max())
        return out
    if summary:
        out["time"] = _num(summary.get("final_time_days"))
        out["final"] = _num(summary.get("final_settlement_m"))
        out["t50"] = _num(summary.get("time_to_50_percent_settlement_days"))
        out["t90"] = _num(summary.get("time_to_90_percent_settlement_days"))
        out["t50_note"], out["t90_note"] = summary.get("t50_note"), summary.get("t90_note")
        out["umax"] = _num(summary.get("largest_excess_pore_pressure_kPa"))
        out["umax_note"] = summary.get("largest_excess_pore_pressure_note")
    return out


def _hint(quantity: str, ratio: float | None) -> str | None:
    if ratio is None or abs(ratio - 1.0) <= RATIO_TOLERANCE:
        return None
    return f"{quantity}: " + _HINTS[(quantity, "high" if ratio > 1.0 else "low")]


def _meaningful(quantity: str, fe: float | None, hand: float | None, largest: float,
                notes: list[str]) -> bool:
    """Whether FE / hand means something; if not, say why in ``notes``."""
    if fe is None or hand is None:
        return False
    if largest > 0.0 and (abs(fe) < NEAR_ZERO * largest or abs(hand) < NEAR_ZERO * largest):
        notes.append(f"{quantity}: near zero here (under {NEAR_ZERO:.0%} of the largest at any "
                     "probe), no ratio")
        return False
    if fe * hand < 0.0:
        notes.append(f"{quantity}: the signs differ (FE {fe:+.3g}, hand {hand:+.3g}), no ratio")
        return False
    return True


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
        ``summary.json`` as a dict (its ``probes`` section is used, and ``run`` for the
        average degree of consolidation at the end) or the ``probes`` section itself; used for
        probes missing from ``fe_probes``.

    Returns
    -------
    list of dict with the keys :data:`COLUMNS`; numbers are floats or None (not computed or
    meaningless), ``hints`` and ``notes`` "; "-joined strings.
    """
    summary = fe_summary or {}
    consolidation = _consolidation(summary)
    if isinstance(summary.get("probes"), Mapping):
        summary = summary["probes"]
    fe_probes = fe_probes or {}
    values = []
    for name, p in hand.probes.items():
        fe = _fe_values(fe_probes.get(name), summary.get(name), consolidation)
        t_end = fe["time"] if fe["time"] is not None else float(hand.end_days)
        th = np.asarray(p.time_days, dtype=float)
        sh = np.asarray(p.settlement_m, dtype=float)
        values.append((name, p, fe, t_end, float(np.interp(t_end, th, sh))))
    largest_s = max((abs(v) for _, _, fe, _, hs in values for v in (fe["final"], hs)
                     if v is not None), default=0.0)
    largest_u = max((abs(v) for _, p, fe, _, _ in values
                     for v in (fe["umax"], _num(p.max_excess_pore_pressure_kPa)) if v is not None),
                    default=0.0)
    rows = []
    for name, p, fe, t_end, hand_end in values:
        notes: list[str] = []
        hand_t = {"t50": _num(getattr(p, "t50_days", None)), "t90": _num(getattr(p, "t90_days", None))}
        hand_u = _num(p.max_excess_pore_pressure_kPa)
        s_ok = _meaningful("settlement", fe["final"], hand_end, largest_s, notes)
        row = {
            "probe": name, "x_m": float(p.x_m), "y_m": float(p.y_m), "depth_m": float(p.probe_depth_m),
            "fe_final_time_days": fe["time"],
            "fe_final_settlement_m": fe["final"], "hand_final_settlement_m": _num(hand_end),
            "hand_ultimate_settlement_m": _num(p.final_settlement_m),
            "settlement_ratio_fe_to_hand": _ratio(fe["final"], hand_end) if s_ok else None,
            "fe_max_excess_pore_pressure_kPa": fe["umax"],
            "hand_max_excess_pore_pressure_kPa": hand_u,
        }
        for k in ("t50", "t90"):
            row[f"fe_{k}_days"], row[f"hand_{k}_days"] = fe[k], hand_t[k]
            ratio = None
            if not s_ok and fe["final"] is not None:
                pass       # the settlement's own note says why
            elif fe[k] is None and fe[f"{k}_note"] and fe["final"] is not None:
                notes.append(f"{k} FE: {fe[f'{k}_note']}")
            elif hand_t[k] is None and getattr(p, f"{k}_note", None):
                notes.append(f"{k} hand: {getattr(p, f'{k}_note')}")
            else:
                ratio = _ratio(fe[k], hand_t[k])
            if hand_t[k] is not None and fe["time"] is not None and hand_t[k] > fe["time"] * (1 + 1e-9):
                notes.append(f"{k} hand: after the end of the FE run")
            row[f"{k}_ratio_fe_to_hand"] = ratio
        if fe["umax_note"] or (hand_u is None and fe["umax"] is not None and p.probe_depth_m <= 1e-9):
            notes.append("largest excess pore pressure: not applicable on a draining surface")
            row["fe_max_excess_pore_pressure_kPa"] = None
            row["pore_pressure_ratio_fe_to_hand"] = None
        else:
            u_ok = _meaningful("excess pore pressure", fe["umax"], hand_u, largest_u, notes)
            row["pore_pressure_ratio_fe_to_hand"] = _ratio(fe["umax"], hand_u) if u_ok else None
        load = _num(p.stress_at(p.probe_depth_m)[0]) if hasattr(p, "stress_at") else None
        if fe["umax"] is not None and load is not None and load > 0.0 and fe["umax"] > 1.01 * load:
            notes.append(MANDEL_CRYER.format(fe=fe["umax"], load=load))
        hints = [_hint("settlement", row["settlement_ratio_fe_to_hand"]),
                 _hint("t50", row["t50_ratio_fe_to_hand"]),
                 _hint("t90", row["t90_ratio_fe_to_hand"]),
                 _hint("pore pressure", row["pore_pressure_ratio_fe_to_hand"])]
        row["hints"] = "; ".join(h for h in hints if h)
        row["notes"] = "; ".join(notes)
        rows.append(row)
    return rows


def comparison_csv_text(rows: Sequence[Mapping[str, Any]]) -> str:
    """The rows as ``comparison.csv`` text (columns :data:`COLUMNS`; empty = not computed)."""
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
    return buf.getvalue()


def write_comparison_csv(rows: Sequence[Mapping[str, Any]], path: str | Path) -> Path:
    """Write the rows to ``path`` (columns :data:`COLUMNS`; empty cell = not computed)."""
    from .results.files import _atomic_write_bytes
    path = Path(path)
    _atomic_write_bytes(path, comparison_csv_text(rows).encode("utf-8"), fsync=False)
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
    """The comparison as a fixed-width text table, hints, notes, reasons and the caution."""
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
    for key, title in (("hints", f"Ratios beyond {RATIO_TOLERANCE:.0%}:"),
                       ("notes", "What '-' and some values mean:")):
        marked = [r for r in rows if r.get(key)]
        if marked:
            lines += ["", title]
            for r in marked:
                for h in str(r[key]).split("; "):
                    lines.append(f"  {r['probe']}: {h}")
    lines += ["", DEFINITIONS, REASONS, CAUTION]
    return "\n".join(lines)


# ============================================================================ run folders


def compare_run_dir(out_dir: str | Path) -> str:
    """The comparison table of a finished run folder (``poroplane compare DIR``).

    Reads ``DIR/model.toml`` (the copy of the model the run saved), ``DIR/probes.csv`` and,
    if present, ``DIR/summary.json``; recomputes the hand estimate; returns
    :func:`format_table` of :func:`compare`.
    """
    from .hand_section import estimate as hand_estimate
    from .model import load_model
    from .results import read_probes, read_summary
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
    summary = read_summary(out)
    return format_table(compare(hand, probes, summary))


def comparison_outputs(model, fe_probes: Mapping[str, Mapping[str, Any]],
                       summary: Mapping[str, Any] | None = None, mesh=None):
    """The comparison step at the end of a run: ``(rows, message, outputs)``.

    ``outputs`` is what the run folder gets: ``{"summary": {"comparison": section},
    "files": {"comparison.csv": text, "hand.json": the estimate (:func:`hand_json`)}}``. The
    hand method needs parameters the FE run does not (e.g. oedometer data); when it cannot
    be done the run is not affected: ``rows`` is None, ``message`` says why, the section is
    ``{"skipped": message}`` and no file is written. ``mesh``: the run's mesh, from which a
    mesh section's soil columns are read.
    """
    from .hand_section import estimate as hand_estimate
    rows, message, hand = None, None, None
    try:
        hand = hand_estimate(model, mesh=mesh)
        rows = compare(hand, fe_probes, summary)
    except PoroplaneError as exc:
        message = f"no comparison with the hand method: {exc}"
    section = comparison_section(rows) if rows is not None else {"skipped": message}
    files = {}
    if rows is not None:
        files["comparison.csv"] = comparison_csv_text(rows)
        files["hand.json"] = json.dumps(hand_json(hand), indent=2, default=_json_default)
    return rows, message, {"summary": {"comparison": section}, "files": files}


def comparison_finisher(model, mesh=None):
    """For :func:`solver.runner.run` (``finish=``): the comparison written into the run
    folder with its summary, before the run is marked complete."""
    def finish(result, summary):
        return comparison_outputs(model, result.probes, summary, mesh=mesh)[2]
    return finish


def add_comparison(model, fe_probes: Mapping[str, Mapping[str, Any]], out_dir: str | Path | None = None,
                   mesh=None) -> tuple[list[dict] | None, str | None]:
    """Hand estimate and rows; with ``out_dir`` (a folder that is not a finished run) also
    ``out_dir/comparison.csv``, ``out_dir/hand.json`` and the ``comparison`` section of
    ``out_dir/summary.json``. A run writes its own through :func:`comparison_finisher`.
    ``mesh``: the run's mesh, from which a mesh section's soil columns are read.

    Returns ``(rows, None)``, or ``(None, message)`` when the hand method cannot be done.
    """
    from .results import COMPLETE_NAME, ResultsError
    summary_path = Path(out_dir) / "summary.json" if out_dir is not None else None
    if out_dir is not None and (Path(out_dir) / COMPLETE_NAME).exists():
        raise ResultsError(f"the run in {out_dir} is finished and holds its own comparison "
                           "(written by the run); it is not rewritten. See it with "
                           f"'poroplane compare {out_dir}'.")
    summary = None
    if summary_path is not None and summary_path.exists():
        summary = json.loads(summary_path.read_text(encoding="utf-8"))
    rows, message, outputs = comparison_outputs(model, fe_probes, summary, mesh=mesh)
    if out_dir is not None:
        from .results.files import write_file_atomic
        out = Path(out_dir)
        for name, text in outputs["files"].items():
            write_file_atomic(out / name, text.encode("utf-8"))
        if summary is not None:
            summary.update(outputs["summary"])
            _write_json(summary_path, summary)
    return rows, message


def _write_json(path: Path, data) -> None:
    """Write ``data`` as JSON atomically (a new file renamed, never through a link)."""
    from .results.files import write_file_atomic
    write_file_atomic(path, json.dumps(data, indent=2, default=_json_default).encode("utf-8"))


def _json_default(obj):
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, np.generic):
        return obj.item()
    raise TypeError(f"not JSON serialisable: {type(obj).__name__}")
