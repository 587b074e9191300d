"""What a resumable run keeps of itself: the fingerprint of what it solves, the layout of
one history record, and the checks of a checkpoint against the model before it is used.

The fingerprint is a digest per part of what decides the results: each top-level table of
the model as read (each material on its own; the title and the mesh file's path left out,
the mesh itself being a part), the linear solver and the program version. A resume with any
part changed is refused, naming the parts, so a run never mixes two models.
"""

from __future__ import annotations

import hashlib
import json
import math

import numpy as np

from . import __version__
from .results import ResultsError
from .simulation import PROBE_COLUMNS

LINE_VALUES = ("settlement_m", "horizontal_displacement_m", "excess_pore_pressure_kPa")
"""The line columns that change from one output time to the next (kept in the history)."""


def _digest(obj) -> str:
    text = json.dumps(obj, sort_keys=True, separators=(",", ":"), default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def run_fingerprint(sim, solver) -> dict[str, str]:
    """Part name -> SHA-256 of what decides the results of ``sim`` stepped by ``solver``."""
    from .model.write import model_to_dict
    d = model_to_dict(sim.model)
    d.pop("title", None)
    parts: dict[str, str] = {}
    for key, value in d.items():
        if key == "materials":
            for name, mat in value.items():
                parts[f"materials.{name}"] = _digest(mat)
        elif key == "section":
            sec = dict(value)
            sec.pop("mesh_file", None)      # where the mesh was read from; the mesh is a part
            parts[key] = _digest(sec)
        else:
            parts[key] = _digest(value)
    parts["the linear solver"] = _digest(getattr(solver, "backend", None))
    parts["the program version"] = _digest(__version__)
    return parts


# ------------------------------------------------------------------------ history records
def record_length(sim) -> int:
    """Floats in one history record: time, stage index, output flag, the probe values and
    the changing line values."""
    n_line = sum(len(xy) for _ln, xy, *_rest in sim.lines)
    return 3 + len(sim.probe_names) * len(PROBE_COLUMNS) + n_line * len(LINE_VALUES)


def history_record(sim, t: float, k: int, vals: dict, lines: dict | None) -> np.ndarray:
    """One record: ``[t, k, is_output, probes (n_probes x columns), lines]``; the line part
    is NaN at times that are not output times."""
    probe_part = np.array([vals[c] for c in PROBE_COLUMNS], dtype=float).T.ravel() \
        if len(sim.probe_names) else np.zeros(0)
    line_part = []
    for ln, xy, *_rest in sim.lines:
        if lines is None:
            line_part.append(np.full(len(xy) * len(LINE_VALUES), np.nan))
        else:
            a = lines[ln.name]
            line_part.append(np.column_stack([a[c] for c in LINE_VALUES]).ravel()
                             if len(xy) else np.zeros(0))
    return np.concatenate([[t, float(k), 0.0 if lines is None else 1.0], probe_part,
                           *line_part])


def split_record(sim, rec: np.ndarray):
    """(times, stage indices, output flags, probe values (nt, n_probes, columns), [per line
    (nt, points, values)]) of stacked history records."""
    nt = len(rec)
    npb, nc = len(sim.probe_names), len(PROBE_COLUMNS)
    if nt == 0:
        rec = np.zeros((0, record_length(sim)))
    t = rec[:, 0].copy()
    k = rec[:, 1].astype(int)
    output = rec[:, 2] > 0.5
    probes = rec[:, 3:3 + npb * nc].reshape(nt, npb, nc)
    lines, at = [], 3 + npb * nc
    for _ln, xy, *_rest in sim.lines:
        n = len(xy) * len(LINE_VALUES)
        lines.append(rec[:, at:at + n].reshape(nt, len(xy), len(LINE_VALUES)))
        at += n
    return t, k, output, probes, lines


# ---------------------------------------------------------------------- checkpoint checks
def check_resume_state(sim, solver, writer, step: int, t: float, arrays: dict,
                       info: dict) -> None:
    """Refuse a checkpoint that does not fit the model (a foreign or crafted file), before
    any of it is used. The fingerprint was checked by the writer already."""
    model, n_dofs = sim.model, sim.problem.disc.n_dofs
    n_st = len(model.stages)

    def bad(what: str):
        raise ResultsError(f"the checkpoint in {writer.dir} does not fit this model ({what}); "
                           "it was not written by this run. Fix: start the run afresh "
                           "(--force).")

    def whole(v, lo, hi, name):
        if isinstance(v, bool) or not isinstance(v, int) or not lo <= v <= hi:
            bad(f"{name} = {v!r} is not a whole number from {lo} to {hi}")
        return v

    def finite(v, name, allow_none=False):
        if v is None and allow_none:
            return v
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
            bad(f"{name} = {v!r} is not a finite number")
        return float(v)

    need = ("stage", "stage_step", "stage_starts", "step", "p_ref", "factorizations_before",
            "wall_seconds_before", "sessions")
    missing = [k for k in need if k not in info]
    if missing:
        bad(f"missing {', '.join(missing)}")
    stage = whole(info["stage"], 0, n_st, "stage")
    if whole(info["step"], 0, 10**9, "step") != step:
        bad("its step count disagrees with itself")
    whole(info["factorizations_before"], 0, 10**12, "factorizations_before")
    finite(info["wall_seconds_before"], "wall_seconds_before")
    whole(info["sessions"], 1, 10**6, "sessions")
    finite(info["p_ref"], "p_ref", allow_none=True)
    for key in ("w_peak", "w_now"):
        finite(info.get(key, 0.0), key)
    finite(info.get("t_peak"), "t_peak", allow_none=True)
    if not isinstance(info.get("until", {}), dict):
        bad("until is not a table")
    starts = info["stage_starts"]
    if not isinstance(starts, list) or len(starts) not in (stage, stage + 1) \
            or len(starts) > n_st:
        bad("the stage starts do not match the stage reached")
    starts = [finite(s, "stage start") for s in starts]
    if any(b < a for a, b in zip(starts, starts[1:])) or (starts and t < starts[-1]):
        bad("the times go backwards")
    finite(t, "time")
    if stage < n_st and len(starts) == stage + 1:
        n_times = len(sim.stage_times(starts[-1], model.stages[stage]))
        whole(info["stage_step"], 0, n_times, "stage_step")
    elif info["stage_step"] != 0:
        whole(info["stage_step"], 0, 0, "stage_step")
    lifts = sum(1 for k in range(len(starts)) if model.stages[k].kind == "lift")
    if "x" not in arrays or arrays["x"].shape != (n_dofs,):
        bad(f"the unknowns are not an array of {n_dofs}")
    if "n_placed" not in arrays or arrays["n_placed"].shape != () \
            or int(arrays["n_placed"]) != lifts:
        bad(f"it does not record the {lifts} lifts placed by then")
    for j in range(lifts):
        a = arrays.get(f"placed_at_{j}")
        if a is None or a.shape != (n_dofs,):
            bad(f"placed_at_{j} is missing or not an array of {n_dofs}")
    if hasattr(solver, "state_arrays"):
        for key, a in solver.state_arrays().items():
            got = arrays.get(key)
            if got is None or got.shape != np.shape(a):
                bad(f"the material state {key} is missing or has another shape")
    for key in ("x",) + tuple(f"placed_at_{j}" for j in range(lifts)):
        if not np.isfinite(arrays[key]).all():
            bad(f"{key} holds values that are not finite")
    rows, length = writer.history.rows, writer.history.nbytes
    if rows != step + 1 or length != rows * 8 * record_length(sim):
        bad(f"the history holds {rows} records of another length, not {step + 1}")
