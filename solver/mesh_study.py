"""Mesh sensitivity: the same model on one uniformly refined mesh, compared probe by probe."""

from __future__ import annotations

import numpy as np

from .mesh import refine

# A change below this fraction of the value is taken as mesh-independent enough for design
# review (common practice; tighten it for final design).
SETTLEMENT_LIMIT = 0.05
PRESSURE_LIMIT = 0.05


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


def mesh_study(model, sim, result, backend=None) -> str:
    """Solve on the refined mesh and return a table with a plain verdict line."""
    from .runner import run
    from .simulation import Simulation
    fine_sim = Simulation(model, mesh=refine(sim.mesh), backend=backend)
    fine = run(fine_sim)
    rows = compare(result, fine)
    lines = [f"Mesh study: {sim.mesh.n_elements} -> {fine_sim.mesh.n_elements} triangles "
             "(every triangle split in four)",
             f"  {'probe':20s} {'settlement (m)':>16s} {'refined':>10s} {'change':>8s}"
             f" {'max excess p (kPa)':>20s} {'refined':>10s} {'change':>8s}"]
    for r in rows:
        lines.append(f"  {r['probe']:20s} {r['settlement_m']:16.4f} {r['settlement_refined_m']:10.4f}"
                     f" {r['settlement_change']:8.1%} {r['max_excess_pore_pressure_kPa']:20.2f}"
                     f" {r['max_excess_pore_pressure_refined_kPa']:10.2f} {r['pressure_change']:8.1%}")
    worst_s = max((r["settlement_change"] for r in rows), default=0.0)
    worst_p = max((r["pressure_change"] for r in rows), default=0.0)
    if worst_s <= SETTLEMENT_LIMIT and worst_p <= PRESSURE_LIMIT:
        verdict = (f"Verdict: the mesh is fine enough: settlements change by at most "
                   f"{worst_s:.1%} and excess pore pressures by {worst_p:.1%} on refinement "
                   f"(limit {SETTLEMENT_LIMIT:.0%}).")
    else:
        verdict = (f"Verdict: REFINE THE MESH: settlements change by up to {worst_s:.1%} and "
                   f"excess pore pressures by up to {worst_p:.1%} on refinement (limit "
                   f"{SETTLEMENT_LIMIT:.0%}); use a smaller section.mesh_size.")
    lines.append(verdict)
    return "\n".join(lines)
