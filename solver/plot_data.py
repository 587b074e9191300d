"""What the plots read from a run folder: probe histories, line profiles, the summary, the
model copy, the stages on the run's clock and the hand method's curves.

    run = load_run("runs/embankment")       # RunData; hand=False leaves the hand method out

Read from the files a run writes (:mod:`solver.results`): ``probes.csv`` (every step),
``lines.csv`` (output times), ``summary.json`` and the copy of the model (``model.toml``),
which names the stages, the line kinds and the layers. Where the hand method is available
(:mod:`solver.hand.estimate`, read from the same model) its settlement histories are kept
beside the finite-element ones.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .results.files import INITIAL_STAGE

__all__ = ["StageSpan", "RunData", "load_run", "hand_curves", "surface_probes"]


# ====================================================================== the run's data
@dataclass
class StageSpan:
    """One stage on the run's clock: ``start_days`` to ``end_days``."""
    number: int
    name: str
    kind: str | None
    start_days: float
    end_days: float


@dataclass
class RunData:
    """What the plots read from a run folder (all optional parts may be empty or None)."""
    dir: Path
    probes: dict[str, dict[str, np.ndarray]]
    lines: dict[str, list[dict[str, Any]]]
    summary: dict
    model: Any = None                    # solver.model.Model, when model.toml is there
    model_note: str = ""
    stages: list[StageSpan] = field(default_factory=list)
    hand: dict[str, dict[str, np.ndarray]] = field(default_factory=dict)
    hand_note: str = ""
    hand_estimate: Any = None            # solver.hand.estimate.HandEstimate, when computed

    @property
    def title(self) -> str:
        if self.model is not None:
            return self.model.title
        return (self.summary.get("run") or {}).get("title", self.dir.name)

    def line_kind(self, name: str) -> str:
        """"vertical", "surface" or "line": from the model, else from the line's shape."""
        if self.model is not None:
            for ln in self.model.lines:
                if ln.name == name and ln.kind in ("vertical", "surface"):
                    return ln.kind
        prof = (self.lines.get(name) or [None])[0]
        if prof is not None and len(prof["x_m"]) > 1:
            x, y = prof["x_m"], prof["y_m"]
            if np.ptp(x) < 1e-9 * max(1.0, np.ptp(y)):
                return "vertical"
            if np.ptp(y) < 1e-9 * max(1.0, np.ptp(x)) and abs(y[0]) < 1e-9:
                return "surface"
        return "line"

    def lines_of(self, kind: str) -> list[tuple[str, list[dict[str, Any]]]]:
        """The lines of one kind (:meth:`line_kind`) that hold profiles: [(name, profiles)]."""
        return [(n, profs) for n, profs in self.lines.items()
                if profs and self.line_kind(n) == kind]


def _stage_spans(probes: dict, model) -> list[StageSpan]:
    """Stage start and end times from the stage column of probes.csv (model order first)."""
    ends: dict[str, float] = {}
    order: list[str] = []
    for cols in probes.values():
        for t, s in zip(cols["time_days"], cols["stage"]):
            s = str(s)
            if s == INITIAL_STAGE:               # the state at t = 0, before any stage
                continue
            if s not in ends:
                order.append(s)
                ends[s] = float(t)
            else:
                ends[s] = max(ends[s], float(t))
        break                                    # every probe has the same rows
    kinds = {}
    if model is not None:
        names = [st.name for st in model.stages]
        kinds = {st.name: st.kind for st in model.stages}
        order = [n for n in names if n in ends] + [n for n in order if n not in names]
    spans, start = [], 0.0
    for i, name in enumerate(order):
        spans.append(StageSpan(i + 1, name, kinds.get(name), start, ends[name]))
        start = ends[name]
    return spans


def load_run(run_dir: str | Path, hand: bool = True) -> RunData:
    """Read a run folder for plotting; the model copy and the hand method when available."""
    from .results import (read_lines, read_probes, read_summary, read_text_file,
                          verify_run_folder)
    d = Path(run_dir)
    if not (d / "probes.csv").exists():
        from .results import ResultsError
        raise ResultsError(f"{d} holds no run results (probes.csv is missing); "
                           f"make one with 'poroplane run MODEL -o {d}'")
    verify_run_folder(d)             # a damaged file is named before anything is drawn
    probes = read_probes(d)
    lines = read_lines(d) if (d / "lines.csv").exists() else {}
    summary = read_summary(d) or {}
    model, note = None, ""
    if read_text_file(d, "model.toml") is not None:      # checked against the run record
        try:
            from .model import load_model
            model = load_model(d / "model.toml")
        except Exception as exc:        # a model copy that no longer loads: plot without it
            note = f"the model copy could not be read ({exc})"
    else:
        note = "no model copy (model.toml) in the run folder"
    data = RunData(d, probes, lines, summary, model, note, _stage_spans(probes, model))
    if hand:
        data.hand, data.hand_note, data.hand_estimate = _hand(model)
    return data


def _as_dict(obj) -> dict:
    if obj is None:
        return {}
    if isinstance(obj, dict):
        return obj
    if hasattr(obj, "__dataclass_fields__"):
        return {k: getattr(obj, k) for k in obj.__dataclass_fields__}
    return {k: getattr(obj, k) for k in dir(obj) if not k.startswith("_")}


def _curve(rec: dict) -> dict[str, np.ndarray] | None:
    """Time history of one probe from a hand-method record of any reasonable shape."""
    rec = _as_dict(rec)
    t = next((rec[k] for k in ("time_days", "times_days", "history_days", "t_days", "times")
              if k in rec and rec[k] is not None), None)
    s = next((rec[k] for k in ("settlement_m", "settlement_history_m", "primary_settlement_m")
              if k in rec and rec[k] is not None and np.ndim(rec[k]) == 1), None)
    if t is None or s is None:
        return None
    t, s = np.asarray(t, float).ravel(), np.asarray(s, float).ravel()
    if t.size != s.size or t.size < 2:
        return None
    out = {"time_days": t, "settlement_m": s}
    for key in ("final_settlement_m", "total_settlement_m", "ultimate_settlement_m"):
        v = rec.get(key)
        if v is not None and np.ndim(v) == 0 and math.isfinite(float(v)):
            out["final_settlement_m"] = np.asarray(float(v))
            break
    v = rec.get("primary_settlement_m")
    if v is not None and np.ndim(v) == 0 and math.isfinite(float(v)):
        out["primary_settlement_m"] = np.asarray(float(v))
    for key in ("consolidation_degree", "average_degree"):
        v = rec.get(key)
        if v is not None and np.ndim(v) == 1 and np.size(v) == t.size:
            out["consolidation_degree"] = np.asarray(v, float)
            break
    u = rec.get("excess_pore_pressure_kPa")
    if u is not None and np.ndim(u) == 1 and np.size(u) == t.size:
        out["excess_pore_pressure_kPa"] = np.asarray(u, float)
    return out


def _hand(model):
    """(curves per probe, note, estimate object or None)."""
    if model is None:
        return {}, "hand method not drawn: the model copy is not available", None
    try:
        from .hand_section import estimate as hand_estimate
    except ImportError:
        return {}, "hand method not drawn: solver.hand.estimate is not installed", None
    try:
        est = hand_estimate(model)
    except Exception as exc:     # the hand method needs inputs the FE run does not
        return {}, f"hand method not drawn: it could not be computed ({exc})", None
    d = _as_dict(est)
    recs = d.get("probes", d)
    if isinstance(recs, (list, tuple)):
        recs = {getattr(r, "name", None) or _as_dict(r).get("probe") or _as_dict(r).get("name"): r
                for r in recs}
    out = {}
    for name, rec in _as_dict(recs).items():
        c = _curve(rec)
        if c is not None and name is not None:
            out[str(name)] = c
    if not out:
        return {}, "hand method not drawn: its estimate holds no settlement histories", est
    return out, "", est


def hand_curves(model) -> tuple[dict[str, dict[str, np.ndarray]], str]:
    """Settlement histories of the hand method per probe, and a note on what happened.

    Uses :func:`solver.hand.estimate.hand_estimate` (optional). Returns ``({}, reason)``
    when it is not installed, fails, or gives no time histories.
    """
    curves, note, _ = _hand(model)
    return curves, note


def surface_probes(run: RunData) -> list[tuple[str, float]]:
    """Probes on the original ground surface (y = 0) or on a footing base, by increasing x:
    [(name, x m)]."""
    bases = []
    if run.model is not None:
        bases = [(f.center - f.width / 2, f.center + f.width / 2, -f.embedment)
                 for f in (run.model.section.footings or [])]
    got = []
    for n, c in run.probes.items():
        if not len(c["y_m"]):
            continue
        x, y = float(c["x_m"][0]), float(c["y_m"][0])
        if abs(y) < 1e-9 or any(lo - 1e-9 <= x <= hi + 1e-9 and abs(y - yb) < 1e-9
                                for lo, hi, yb in bases):
            got.append((n, x))
    return sorted(got, key=lambda p: p[1])
