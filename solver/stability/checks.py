"""Stability through construction on a run folder: the factor of safety at stored times
(by default the end of every stage), written to ``RUN_DIR/stability.json``.

At each time: the slip circle of least factor of safety by Bishop's simplified method (Bishop
1955, searched over a grid of centres and tangent elevations and refined), Spencer's method
(Spencer 1967) on that circle, and optionally a non-circular surface by Spencer's method.
Where Spencer's two equations have no common root (circles with a steep entry), that is
reported and Bishop's value stands.

Results inform design: they need review by a qualified engineer; local codes and licensed
practice govern.
"""

from __future__ import annotations

import json
import time as _time
from pathlib import Path

import numpy as np

from solver import CAUTION
from solver.errors import InputError, PoroplaneError
from solver.model import Model, Stability, model_from_toml
from solver.results import COMPLETE_NAME, SUMMARY_NAME, amend_run, read_fields
from solver.results.files import _atomic_write_bytes, _to_json

from .from_run import RunGround, slope_soil
from .search import CriticalSurface, SearchBox, default_box, search_circles, search_noncircular, spencer_on

__all__ = ["STABILITY_NAME", "REQUIRED_NOTE", "stability_checks", "stability_command",
           "format_checks", "read_stability"]

STABILITY_NAME = "stability.json"
REQUIRED_NOTE = ("1.3 during construction is common practice for some authorities; local codes "
                 "govern")


def _surface_json(cs: CriticalSurface) -> dict:
    s = cs.slices
    left, right = s.x[0] - s.width[0] / 2, s.x[-1] + s.width[-1] / 2
    out = {"x_left_m": float(left), "x_right_m": float(right),
           "slices": {"x_m": s.x, "base_y_m": s.y, "width_m": s.width, "top_y_m": s.top,
                      "pore_pressure_kPa": s.u, "strength_kPa": s.c, "tan_phi": s.tan_phi,
                      "weight_kN_per_m": s.weight}}
    if cs.circle is not None:
        out["circle"] = {"x_c_m": cs.circle[0], "y_c_m": cs.circle[1], "radius_m": cs.circle[2]}
    if cs.points is not None:
        out["points_m"] = cs.points
    return out


def _box(soil, base: float, st: Stability, half: bool) -> SearchBox:
    lowest = st.lowest_tangent if st.lowest_tangent is not None else base
    box = default_box(soil, lowest, min_depth=st.min_depth)
    limits = tuple(st.x_limits) if st.x_limits else None
    if half and limits is None:
        # the mirror image gives the same slip: search the +x side only
        lo = max(box.centre_x[0], 0.0)
        return SearchBox((lo, box.centre_x[1]), box.centre_y, box.tangent_y, box.min_depth,
                         None, box.grid)
    return SearchBox(box.centre_x, box.centre_y, box.tangent_y, box.min_depth, limits, box.grid)


def stability_checks(model: Model, ground: RunGround, times: list[float] | None = None
                     ) -> list[dict]:
    """The checks (one per time and method) as plain dicts, in time order."""
    st = model.stability or Stability()
    half = model.section.half or model.analysis == "axisymmetric"
    steps = ([ground.step_at(t) for t in times] if times else
             [ground.step_at(t) for t in st.times] if st.times else ground.stage_ends())
    out = []
    for k in steps:
        t0 = _time.perf_counter()
        soil, base, info = slope_soil(ground, k)
        circle = search_circles(soil, _box(soil, base, st, half))
        seconds = _time.perf_counter() - t0
        common = {"time_days": float(ground.times[k]), "stage": ground.stages[k],
                  "required_factor_of_safety": st.required_factor_of_safety}
        found = [(circle, None)]
        try:
            found.append((spencer_on(circle), None))
        except PoroplaneError as exc:
            found.append((None, f"Spencer's method found no factor of safety on the critical "
                                f"circle ({exc.args[0] if exc.args else exc}); Bishop's value "
                                "stands"))
        if st.noncircular:
            try:
                found.append((search_noncircular(soil, circle, _box(soil, base, st, half)), None))
            except PoroplaneError as exc:
                found.append((None, f"no non-circular surface: {exc}"))
        for cs, note in found:
            row = dict(common)
            if cs is None:
                row.update({"method": "Spencer", "factor_of_safety": None, "note": note})
            else:
                F = float(cs.factor_of_safety)
                row.update({"method": cs.method + (" (circle)" if cs.method == "Spencer" and
                                                   cs.circle is not None else ""),
                            "factor_of_safety": F,
                            "below_required": bool(F < st.required_factor_of_safety),
                            "theta_deg": cs.theta_deg, "surface": _surface_json(cs)})
            if cs is circle:
                row.update({"search_seconds": seconds, "surfaces_tried": circle.surfaces_tried,
                            **info})
            out.append(row)
    return out


def minimum_per_stage(checks: list[dict]) -> dict[str, dict]:
    """Stage -> the least factor of safety over its checks and methods."""
    out: dict[str, dict] = {}
    for c in checks:
        F = c.get("factor_of_safety")
        if F is None:
            continue
        best = out.get(c["stage"])
        if best is None or F < best["factor_of_safety"]:
            out[c["stage"]] = {"factor_of_safety": F, "time_days": c["time_days"],
                               "method": c["method"]}
    return out


def format_checks(checks: list[dict], required: float) -> str:
    rows = [("time (days)", "stage", "method", "F", "")]
    for c in checks:
        F = c.get("factor_of_safety")
        flag = "" if F is None else ("BELOW REQUIRED" if F < required else "")
        rows.append((f"{c['time_days']:,.1f}", c["stage"], c["method"],
                     "-" if F is None else f"{F:.3f}", flag if F is not None else c.get("note", "")))
    widths = [max(len(r[i]) for r in rows) for i in range(4)]
    lines = ["Factor of safety against a slip (limit equilibrium by slices)"]
    lines += ["  " + "  ".join(v.ljust(w) for v, w in zip(r[:4], widths)) + "  " + r[4]
              for r in rows]
    lines.append(f"  required: {required:g} ({REQUIRED_NOTE})")
    return "\n".join(lines)


def _model_of(run_dir: Path) -> Model:
    path = run_dir / "model.toml"
    if not path.exists():
        raise InputError(f"{path} is missing", field="RUN_DIR",
                         fix="give a folder written by 'poroplane run'.")
    return model_from_toml(path.read_text(encoding="utf-8"), source=str(path))


def read_stability(run_dir: str | Path) -> dict | None:
    p = Path(run_dir) / STABILITY_NAME
    return json.loads(p.read_text(encoding="utf-8")) if p.exists() else None


def stability_command(run_dir: str | Path, times: list[float] | None = None
                      ) -> tuple[list[dict], list[str]]:
    """Compute the checks of a run folder, write stability.json and the minimum per stage in
    summary.json; returns (checks, warnings)."""
    run_dir = Path(run_dir)
    model = _model_of(run_dir)
    if model.stability is None:
        model.stability = Stability()
    fs = read_fields(run_dir, names=["total_pore_pressure_kPa", "effective_stress_kPa"])
    checks = stability_checks(model, RunGround.from_fields(model, fs), times)
    req = model.stability.required_factor_of_safety
    least: dict[float, dict] = {}
    for c in checks:
        if c.get("below_required") and (c["time_days"] not in least or c["factor_of_safety"]
                                        < least[c["time_days"]]["factor_of_safety"]):
            least[c["time_days"]] = c
    warnings = [f"the factor of safety {c['factor_of_safety']:.3f} ({c['method']}) at "
                f"t = {c['time_days']:g} days ({c['stage']}) is below the required {req:g} "
                f"({REQUIRED_NOTE})" for c in least.values()]
    doc = {"checks": checks, "required_factor_of_safety": req, "required_note": REQUIRED_NOTE,
           "minimum_per_stage": minimum_per_stage(checks), "warnings": warnings,
           "caution": CAUTION}
    section = {"minimum_per_stage": doc["minimum_per_stage"],
               "required_factor_of_safety": req, "note": REQUIRED_NOTE}
    if (run_dir / COMPLETE_NAME).exists():    # a finished run: added under its lock, checked
        amend_run(run_dir, {STABILITY_NAME: _to_json(doc, indent=1)},
                  {"stability": section} if (run_dir / SUMMARY_NAME).exists() else None)
        return checks, warnings
    _atomic_write_bytes(run_dir / STABILITY_NAME, _to_json(doc, indent=1).encode("utf-8"))
    summary_path = run_dir / SUMMARY_NAME
    if summary_path.exists():
        summary = json.loads(summary_path.read_text(encoding="utf-8"))
        summary["stability"] = section
        _atomic_write_bytes(summary_path, _to_json(summary).encode("utf-8"))
    return checks, warnings
