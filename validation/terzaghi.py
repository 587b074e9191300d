"""Terzaghi (1925) one-dimensional consolidation: a column under a suddenly applied load.

Single drainage (top drained, base impermeable) and double drainage (top and base drained).
Compared: the isochrones u(z)/q at Tv = 0.05, 0.2, 0.5, 1.0 and the average degree of
consolidation U(Tv) from the surface settlement, against the series solution.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import terzaghi_average_degree, terzaghi_excess_pressure
from solver.fem.biot import BiotProblem, Fixity, StepSolver, Traction
from solver.geometry import column
from solver.materials.elastic import ElasticMaterial
from solver.stepping import level_schedule

from . import Check
from ._plot import figure, save

NAME = "terzaghi"
TITLE = "Terzaghi one-dimensional consolidation"
SOURCE = "Terzaghi (1925) Erdbaumechanik auf bodenphysikalischer Grundlage; series solution"
TIME_FACTORS = (0.05, 0.2, 0.5, 1.0)
LOAD = 100.0  # kPa
HEIGHT = 10.0  # m


def solve(drainage: str, n_elements: int, growth: float = 1.3, steps_per_level: int = 10,
          analysis: str = "plane strain", x0: float = 0.0) -> dict:
    """Solve the column; return depths, FE and exact isochrones and U at TIME_FACTORS.

    ``analysis`` and ``x0`` (the column's inner radius in axisymmetry) let the same column be
    solved in either analysis type: one-dimensional consolidation is the same in both.
    """
    mesh = column(HEIGHT, n_elements, x0=x0)
    soil = ElasticMaterial.from_constrained_modulus(2000.0, 0.3, permeability_x=1e-4,
                                                    name="soil")
    drained = ["top"] if drainage == "single" else ["top", "bottom"]
    problem = BiotProblem(mesh, {"soil": soil}, analysis=analysis,
                          fixities=[Fixity("bottom", x=0.0, y=0.0), Fixity("left", x=0.0),
                                    Fixity("right", x=0.0)],
                          drained=drained, tractions=[Traction("top", vertical=LOAD)])
    path = HEIGHT if drainage == "single" else HEIGHT / 2
    cv = soil.consolidation_coefficient()
    t_of = np.array(TIME_FACTORS) * path ** 2 / cv
    # Short steps at first (the boundary layer at the drained face), growing in levels.
    # Backward Euler is first order in time: the step growth sets the time error.
    times = level_schedule(t_of[-1], 5e-5 * path ** 2 / cv, growth=growth,
                           steps_per_level=steps_per_level, stops=t_of)
    times = np.concatenate([[0.0], times[1:]])
    left = np.flatnonzero(np.abs(mesh.points[:, 0] - x0) < 1e-9)
    left = left[np.argsort(-mesh.points[left, 1])]
    depth = -mesh.points[left, 1]
    top = mesh.edge_nodes("top")
    settle_final = LOAD * HEIGHT / soil.constrained_modulus
    out = {"depth": depth, "fe": [], "exact": [], "U_fe": [], "U_exact": []}
    solver = StepSolver(problem)
    for state in solver.run(times):
        hit = np.flatnonzero(np.isclose(state.t, t_of, rtol=1e-9, atol=0))
        if not hit.size:
            continue
        Tv = TIME_FACTORS[hit[0]]
        p = problem.disc.pressure_at_nodes(state.p)[left]
        z = depth if drainage == "single" else np.minimum(depth, HEIGHT - depth)
        out["fe"].append(p / LOAD)
        out["exact"].append(terzaghi_excess_pressure(z, path, Tv))
        out["U_fe"].append(-state.displacement()[top, 1].mean() / settle_final)
        out["U_exact"].append(terzaghi_average_degree(Tv))
    out["factorizations"] = solver.n_factorizations
    return out


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    n = 20 if quick else 40
    checks = []
    results = {}
    for drainage in ("single", "double"):
        r = solve(drainage, n, growth=1.3 if quick else 1.15,
                  steps_per_level=10 if quick else 20)
        results[drainage] = r
        for k, Tv in enumerate(TIME_FACTORS):
            checks.append(Check(NAME, f"{drainage} drainage isochrone at Tv={Tv}: "
                                      "max |u - u_exact| / q",
                                float(np.abs(r["fe"][k] - r["exact"][k]).max()), 0.01, SOURCE))
        for k, Tv in enumerate(TIME_FACTORS):
            checks.append(Check(NAME, f"{drainage} drainage U(Tv={Tv}): |U - U_exact|",
                                float(abs(r["U_fe"][k] - r["U_exact"][k])), 0.005, SOURCE))
    if out_dir is not None:
        plot(results, out_dir)
    return checks


def plot(results: dict, out_dir: Path) -> Path | None:
    fig, axes = figure()
    zf = np.linspace(0, HEIGHT, 200)
    for ax, (drainage, r) in zip(axes, results.items()):
        path = HEIGHT if drainage == "single" else HEIGHT / 2
        z = zf if drainage == "single" else np.minimum(zf, HEIGHT - zf)
        for k, Tv in enumerate(TIME_FACTORS):
            exact = terzaghi_excess_pressure(z, path, Tv)
            line, = ax.plot(exact, zf, lw=1.2, label=f"Tv = {Tv}")
            ax.plot(r["fe"][k], r["depth"], "o", ms=3.5, color=line.get_color())
        ax.invert_yaxis()
        ax.set_xlim(0, 1.05)
        ax.set_xlabel("excess pore pressure / applied load  u/q  (-)")
        ax.set_ylabel("depth below the loaded surface  (m)")
        ax.set_title(f"{drainage} drainage: lines Terzaghi (1925), dots finite elements",
                     fontsize=10)
        ax.grid(alpha=0.3)
        ax.legend(fontsize=8, loc="lower right")
    return save(fig, out_dir, NAME)
