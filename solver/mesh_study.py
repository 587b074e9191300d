"""Mesh sensitivity: the same model on a uniformly refined mesh, compared everywhere.

The refined mesh splits every triangle in four (:func:`solver.mesh.refine`), which keeps the
nodes of the coarse mesh as its first nodes, so the two solutions are compared node by node
with no interpolation beyond the coarse mesh's own:

- the excess pore pressure field at every output time the two runs share: the largest change
  over the nodes, relative to the load applied at that time (the largest surface pressure of
  the embankment, footings and loads placed so far; :func:`applied_pressure`);
- the settlement along every line at every output time: the largest change over the line's
  points, relative to the largest settlement on that line in the refined run;
- each probe's final settlement and largest excess pore pressure, as before.

The report names where and when each largest change is; the verdict asks all of them to be
within the limits below.
"""

from __future__ import annotations

import tempfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .mesh import refine

# A change below this fraction of the value (of the applied load for the excess pore
# pressure) is taken as mesh-independent enough for design review (common practice; tighten
# it for final design).
SETTLEMENT_LIMIT = 0.05
PRESSURE_LIMIT = 0.05

_TIME_TOL = 1e-6   # days: output times of the two runs that match


def compare(coarse, fine) -> list[dict]:
    """Per probe: final settlement and largest excess pore pressure on both meshes."""
    rows = []
    for name, h in coarse.probes.items():
        f = fine.probes[name]
        s0, s1 = h["settlement_m"][-1], f["settlement_m"][-1]
        p0, p1 = np.abs(h["excess_pore_pressure_kPa"]).max(), \
            np.abs(f["excess_pore_pressure_kPa"]).max()
        rows.append({"probe": name, "settlement_m": s0, "settlement_refined_m": s1,
                     "settlement_change": abs(s1 - s0) / max(abs(s1), 1e-12),
                     "max_excess_pore_pressure_kPa": p0,
                     "max_excess_pore_pressure_refined_kPa": p1,
                     "pressure_change": abs(p1 - p0) / max(abs(p1), 1e-9)})
    return rows


def _stage_starts(result) -> list[float]:
    """Start time of each stage that ran, days (from the run's step records)."""
    starts, last, prev_t = [], None, 0.0
    for t, st in zip(result.time_days, result.stage):
        if st != last:
            starts.append(prev_t)
            last = st
        prev_t = float(t)
    return starts


def applied_pressure(model, t: float, stage_starts: list[float]) -> float:
    """The largest vertical pressure applied on the ground at time t, kPa.

    The embankment: fill unit weight times the height placed (a lift's weight ramps on over
    its stage, and off over a stage that removes it); footings (load, or force over the base area) and surface loads at their load
    factor at t (ramped over each load stage). 0 when nothing is applied yet.
    """
    sec = model.section
    emb = sec.embankment if sec.kind == "embankment" else None
    height = 0.0
    factor: dict[str, float] = {}
    for st, t0 in zip(model.stages, stage_starts):
        if t < t0:
            break
        frac = 1.0 if st.duration <= 0 else min(max((t - t0) / st.duration, 0.0), 1.0)
        if st.kind == "lift" and emb is not None and st.lift is not None:
            top = sum(emb.lifts[:st.lift])
            below = sum(emb.lifts[:st.lift - 1])
            height = max(height, below + frac * (top - below))
        elif st.kind == "remove" and emb is not None and st.lift is not None:
            # the top lift comes off over its stage
            top = sum(emb.lifts[:st.lift])
            below = sum(emb.lifts[:st.lift - 1])
            height = min(height, below + (1.0 - frac) * (top - below))
        elif st.kind == "load":
            for name in st.loads:
                f0 = factor.get(name, 0.0)
                factor[name] = f0 + frac * (st.factor - f0)
    out = 0.0
    if emb is not None and height > 0:
        out = model.materials[emb.material].unit_weight * height
    axi = model.analysis == "axisymmetric"
    for ft in sec.footings:
        area = np.pi * (ft.width / 2) ** 2 if axi else ft.width
        q = ft.load if ft.load is not None else (ft.force or 0.0) / area
        out = max(out, abs(q) * factor.get(ft.name, 0.0))
    for ld in model.loads:
        out = max(out, abs(ld.pressure) * factor.get(ld.name, 0.0))
    return float(out)


@dataclass
class FieldChange:
    """The largest change of a quantity at one output time, and where it is."""
    time_days: float
    stage: str
    change: float          # kPa or m
    scale: float           # the load (kPa) or the line's largest settlement (m)
    x: float
    y: float
    line: str = ""

    @property
    def relative(self) -> float:
        return self.change / self.scale if self.scale > 0 else 0.0


def pressure_changes(model, coarse_fields, fine_fields, stage_starts) -> list[FieldChange]:
    """Largest |p_refined - p| over the coarse mesh's nodes at each shared output time."""
    pts = coarse_fields.points
    n = len(pts)
    pc = coarse_fields.fields["excess_pore_pressure_kPa"]
    pf = fine_fields.fields["excess_pore_pressure_kPa"][:, :n]
    out = []
    for i, t in enumerate(coarse_fields.times):
        j = np.flatnonzero(np.abs(fine_fields.times - t) <= _TIME_TOL)
        if not j.size:
            continue
        d = np.abs(pf[j[0]] - pc[i])
        d[~np.isfinite(d)] = 0.0
        k = int(np.argmax(d))
        load = applied_pressure(model, float(t), stage_starts)
        if load <= 0:
            load = float(np.nanmax(np.abs(pf[j[0]]))) if pf.size else 0.0
        out.append(FieldChange(float(t), coarse_fields.stages[i], float(d[k]), load,
                               float(pts[k, 0]), float(pts[k, 1])))
    return out


def settlement_changes(coarse, fine) -> list[FieldChange]:
    """Per line and shared output time: the largest settlement change along the line."""
    out = []
    for name, profiles in coarse.lines.items():
        fine_profiles = fine.lines.get(name, [])
        scale = max([float(np.nanmax(np.abs(a["settlement_m"]))) for _, _, a in fine_profiles]
                    + [0.0])
        for t, stage, a in profiles:
            match = [b for tf, _, b in fine_profiles if abs(tf - t) <= _TIME_TOL]
            if not match:
                continue
            d = np.abs(match[0]["settlement_m"] - a["settlement_m"])
            d[~np.isfinite(d)] = 0.0
            k = int(np.argmax(d))
            out.append(FieldChange(float(t), stage, float(d[k]), scale,
                                   float(a["x_m"][k]), float(a["y_m"][k]), line=name))
    return out


@dataclass
class MeshStudy:
    """The comparison of a run with the same model on the refined mesh."""
    coarse_elements: int
    fine_elements: int
    probes: list[dict]
    pressure: list[FieldChange]
    settlement: list[FieldChange]
    notes: list[str] = field(default_factory=list)

    def worst(self, rows: list[FieldChange]) -> FieldChange | None:
        return max(rows, key=lambda r: r.relative) if rows else None

    @property
    def fine_enough(self) -> bool:
        worst_p = self.worst(self.pressure)
        worst_s = self.worst(self.settlement)
        return (all(r["settlement_change"] <= SETTLEMENT_LIMIT
                    and r["pressure_change"] <= PRESSURE_LIMIT for r in self.probes)
                and (worst_p is None or worst_p.relative <= PRESSURE_LIMIT)
                and (worst_s is None or worst_s.relative <= SETTLEMENT_LIMIT))

    def format(self) -> str:
        lines = [f"Mesh study: {self.coarse_elements} -> {self.fine_elements} triangles "
                 "(every triangle split in four)"]
        if self.probes:
            lines.append(f"  {'probe':20s} {'settlement (m)':>16s} {'refined':>10s} "
                         f"{'change':>8s} {'max excess p (kPa)':>20s} {'refined':>10s} "
                         f"{'change':>8s}")
        for r in self.probes:
            lines.append(f"  {r['probe']:20s} {r['settlement_m']:16.4f} "
                         f"{r['settlement_refined_m']:10.4f} {r['settlement_change']:8.1%} "
                         f"{r['max_excess_pore_pressure_kPa']:20.2f} "
                         f"{r['max_excess_pore_pressure_refined_kPa']:10.2f} "
                         f"{r['pressure_change']:8.1%}")
        if self.pressure:
            lines.append("  Excess pore pressure field: largest change on refinement at each "
                         "output time")
            lines.append(f"  {'time (days)':>12s} {'stage':16s} {'load (kPa)':>11s} "
                         f"{'change (kPa)':>13s} {'of load':>8s}   where (x, y in m)")
            for r in self.pressure:
                lines.append(f"  {r.time_days:12,.1f} {r.stage[:16]:16s} {r.scale:11.2f} "
                             f"{r.change:13.2f} {r.relative:8.1%}   ({r.x:.2f}, {r.y:.2f})")
        by_time: dict[float, FieldChange] = {}
        for r in self.settlement:
            if r.time_days not in by_time or r.relative > by_time[r.time_days].relative:
                by_time[r.time_days] = r
        if by_time:
            lines.append("  Settlement along the lines: largest change on refinement at each "
                         "output time (of the line's largest settlement)")
            lines.append(f"  {'time (days)':>12s} {'stage':16s} {'line':18s} "
                         f"{'change (m)':>11s} {'of line':>8s}   where (x, y in m)")
            for r in by_time.values():
                lines.append(f"  {r.time_days:12,.1f} {r.stage[:16]:16s} {r.line[:18]:18s} "
                             f"{r.change:11.4f} {r.relative:8.1%}   ({r.x:.2f}, {r.y:.2f})")
        wp, ws = self.worst(self.pressure), self.worst(self.settlement)
        if wp is not None:
            lines.append(f"  Largest change of the excess pore pressure: {wp.change:.2f} kPa, "
                         f"{wp.relative:.1%} of the load, at x = {wp.x:.2f} m, y = {wp.y:.2f} m "
                         f"at {wp.time_days:,.1f} days ({wp.stage}).")
        if ws is not None:
            lines.append(f"  Largest change of settlement along a line: {ws.change:.4f} m, "
                         f"{ws.relative:.1%} of its largest settlement, on '{ws.line}' at "
                         f"x = {ws.x:.2f} m, y = {ws.y:.2f} m at {ws.time_days:,.1f} days "
                         f"({ws.stage}).")
        lines += [f"  Note: {n}" for n in self.notes]
        lines.append(self.verdict())
        return "\n".join(lines)

    def verdict(self) -> str:
        worst_s = max([r["settlement_change"] for r in self.probes]
                      + [r.relative for r in self.settlement] + [0.0])
        worst_p = max([r.relative for r in self.pressure] + [0.0])
        worst_pp = max([r["pressure_change"] for r in self.probes] + [0.0])
        text = (f"settlements change by {'at most' if self.fine_enough else 'up to'} "
                f"{worst_s:.1%}, the excess pore pressure field by {worst_p:.1%} of the load "
                f"and the probes' largest excess pore pressures by {worst_pp:.1%} on "
                f"refinement (limits {SETTLEMENT_LIMIT:.0%} and {PRESSURE_LIMIT:.0%})")
        if self.fine_enough:
            return f"Verdict: the mesh is fine enough: {text}."
        return (f"Verdict: REFINE THE MESH: {text}; use a smaller section.mesh_size, a layer's "
                "mesh_size where the change is largest, or a finer section.grading "
                "(boundary_size, element_budget).")


def study(model, sim, result, backend=None) -> MeshStudy:
    """Solve ``model`` on the refined mesh of ``sim`` and compare it with ``result``.

    ``result``: the run of ``sim``; its run folder (``result.out_dir``) holds the coarse
    fields, else the coarse run is repeated (on the same mesh) in a temporary folder for them.
    """
    from .results import read_fields
    from .runner import run
    from .simulation import Simulation
    names = ["excess_pore_pressure_kPa"]
    fine_sim = Simulation(model, mesh=refine(sim.mesh), backend=backend)
    with tempfile.TemporaryDirectory(prefix="poroplane-mesh-study-") as tmp:
        if result.out_dir is None:     # a Simulation runs once: set the same mesh up again
            result = run(Simulation(model, mesh=sim.mesh, backend=backend), Path(tmp) / "coarse")
        fine = run(fine_sim, Path(tmp) / "refined")
        coarse_fields = read_fields(result.out_dir, names)
        fine_fields = read_fields(Path(tmp) / "refined", names)
    notes = []
    shared = sum(np.any(np.abs(fine_fields.times - t) <= _TIME_TOL) for t in coarse_fields.times)
    if shared < len(coarse_fields.times):
        notes.append(f"{len(coarse_fields.times) - shared} output time(s) of the run have no "
                     "match on the refined mesh (a stage ended by until_degree a step apart); "
                     "they are left out.")
    return MeshStudy(sim.mesh.n_elements, fine_sim.mesh.n_elements, compare(result, fine),
                     pressure_changes(model, coarse_fields, fine_fields, _stage_starts(result)),
                     settlement_changes(result, fine), notes)


def mesh_study(model, sim, result, backend=None) -> str:
    """Solve on the refined mesh and return the tables with a plain verdict line."""
    return study(model, sim, result, backend).format()
