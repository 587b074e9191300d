"""Mandel (1953): a poroelastic block squeezed between rigid, frictionless, impervious plates.

Quarter model x in [0, a], y in [0, b] (symmetry on x = 0 and y = 0); the top plate is a rigid
tie carrying half the total force; the face x = a is drained and free. Compared against the
closed form in the form of Abousleiman et al. (1996): the centre pressure through time
including its early rise above the initial value (Mandel-Cryer effect), the pressure along
the width at several times, the plate settlement through time, and its undrained (t = 0+) and
drained (t -> inf) limits.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import (MandelParameters, mandel_initial_pressure, mandel_pressure,
                             mandel_vertical_displacement)
from solver.fem.biot import BiotProblem, Fixity, RigidPlate, StepSolver
from solver.geometry import layered_rectangle
from solver.materials.elastic import ElasticMaterial
from solver.stepping import level_schedule

from . import Check
from ._plot import figure, save

NAME = "mandel"
TITLE = "Mandel's problem"
SOURCE = ("Mandel (1953) Geotechnique 3(7); closed form of Abousleiman, Cheng, Cui, Detournay, "
          "Roegiers and Ulm (1996) Geotechnique 46(2)")
A_HALF, B_HALF = 1.0, 1.0     # half-width a and half-height b, m
FORCE = 200.0                 # total force on the plate (whole width 2a), kN/m
E, NU, K = 10_000.0, 0.2, 1e-3
PROFILE_TIMES = (0.01, 0.1, 0.5, 1.0)   # c t / a^2


def solve(size: float, steps_per_level: int = 10) -> dict:
    mesh = layered_rectangle(A_HALF, [("block", B_HALF)], size, top=B_HALF)
    mat = ElasticMaterial(E, NU, permeability_x=K, name="block")
    problem = BiotProblem(mesh, {"block": mat},
                          fixities=[Fixity("left", x=0.0), Fixity("bottom", y=0.0)],
                          drained=["right"],
                          plates=[RigidPlate("top", force=FORCE / 2)])
    params = MandelParameters(mat.shear_modulus, NU, K)
    c = params.consolidation_coefficient
    t_scale = A_HALF ** 2 / c
    stops = np.array(PROFILE_TIMES) * t_scale
    times = level_schedule(2.0 * t_scale, 1e-4 * t_scale, growth=2.0,
                           steps_per_level=steps_per_level, stops=stops)
    times = np.concatenate([[0.0], times[1:]])
    centre = int(np.argmin(np.hypot(*mesh.points.T)))
    bottom = np.flatnonzero(np.abs(mesh.points[:, 1]) < 1e-9)
    bottom = bottom[np.argsort(mesh.points[bottom, 0])]
    top = mesh.edge_nodes("top")
    t_out, p_centre, settle, profiles = [], [], [], {}
    solver = StepSolver(problem)
    for state in solver.run(times):
        p = problem.disc.pressure_at_nodes(state.p)
        t_out.append(state.t)
        p_centre.append(p[centre])
        settle.append(-state.displacement()[top, 1].mean())
        hit = np.flatnonzero(np.isclose(state.t, stops, rtol=1e-9, atol=0))
        if hit.size:
            profiles[PROFILE_TIMES[hit[0]]] = p[bottom]
    drained = -problem.drained_state().displacement()[top, 1].mean()
    return dict(params=params, t=np.array(t_out), t_scale=t_scale, p_centre=np.array(p_centre),
                settle=np.array(settle), x=mesh.points[bottom, 0], profiles=profiles,
                settle_drained=drained, p0=mandel_initial_pressure(params, A_HALF, FORCE),
                factorizations=solver.n_factorizations)


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    # Measured: the time error (backward Euler) dominates the centre pressure, the mesh the
    # early profile near the drained face; both halve at the full level.
    r = solve(0.05 if quick else 0.025, steps_per_level=20 if quick else 40)
    prm, t, p0 = r["params"], r["t"], r["p0"]
    ex_centre = np.ravel(mandel_pressure(0.0, t, prm, A_HALF, FORCE))
    ex_settle = mandel_vertical_displacement(t, prm, A_HALF, B_HALF, FORCE)
    ex_undrained = float(mandel_vertical_displacement(0.0, prm, A_HALF, B_HALF, FORCE))
    ex_drained = float(mandel_vertical_displacement(1e9, prm, A_HALF, B_HALF, FORCE))
    later = t > 0
    checks = [
        Check(NAME, "centre pressure through time: max |p - p_exact| / p0",
              float(np.abs(r["p_centre"] - ex_centre)[later].max() / p0), 0.015, SOURCE),
        Check(NAME, "peak of the centre pressure (Mandel-Cryer rise): |peak - exact| / p0",
              abs(r["p_centre"].max() - ex_centre.max()) / p0, 0.015, SOURCE),
        Check(NAME, "plate settlement through time: max |w - w_exact| / w_exact",
              float((np.abs(r["settle"] - ex_settle) / ex_settle)[later].max()), 0.01, SOURCE),
        Check(NAME, "undrained plate settlement (t = 0+): relative error",
              abs(r["settle"][0] - ex_undrained) / ex_undrained, 0.01, SOURCE),
        Check(NAME, "drained plate settlement (t -> inf): relative error",
              abs(r["settle_drained"] - ex_drained) / ex_drained, 0.01, SOURCE),
    ]
    for T in PROFILE_TIMES:
        ex = mandel_pressure(r["x"], T * r["t_scale"], prm, A_HALF, FORCE)
        checks.append(Check(NAME, f"pressure along the width at ct/a^2 = {T}: "
                                  "max |p - p_exact| / p0",
                            float(np.abs(r["profiles"][T] - np.ravel(ex)).max() / p0), 0.015,
                            SOURCE))
    if out_dir is not None:
        plot(r, out_dir)
    return checks


def plot(r: dict, out_dir: Path):
    prm, p0 = r["params"], r["p0"]
    fig, axes = figure()
    tt = np.geomspace(1e-4, 2.0, 300) * r["t_scale"]
    every = max(1, (len(r["t"]) - 1) // 40)          # about 40 markers
    T = r["t"][1::every] / r["t_scale"]
    ax = axes[0]
    ax.semilogx(tt / r["t_scale"], np.ravel(mandel_pressure(0.0, tt, prm, A_HALF, FORCE)) / p0,
                "C0", label="centre pressure, Abousleiman et al. (1996)")
    ax.semilogx(T, r["p_centre"][1::every] / p0, "o", ms=3, color="C0",
                label="centre pressure, finite elements")
    w0 = float(mandel_vertical_displacement(0.0, prm, A_HALF, B_HALF, FORCE))
    ax.semilogx(tt / r["t_scale"], mandel_vertical_displacement(tt, prm, A_HALF, B_HALF, FORCE)
                / w0, "C1", label="plate settlement / undrained value, closed form")
    ax.semilogx(T, r["settle"][1::every] / w0, "s", ms=3, color="C1",
                label="plate settlement / undrained value, FE")
    ax.axhline(1.0, color="0.5", lw=0.8, ls=":")
    ax.set_xlabel("time factor  c t / a^2  (-)")
    ax.set_ylabel("normalised value (-)")
    ax.set_title("centre pressure rises above p0 before it falls", fontsize=10)
    ax.legend(fontsize=7.5)
    ax.grid(alpha=0.3, which="both")
    ax = axes[1]
    xx = np.linspace(0, A_HALF, 200)
    for T in PROFILE_TIMES:
        line, = ax.plot(xx / A_HALF, np.ravel(mandel_pressure(xx, T * r["t_scale"], prm, A_HALF,
                                                              FORCE)) / p0, label=f"ct/a^2 = {T}")
        ax.plot(r["x"] / A_HALF, r["profiles"][T] / p0, "o", ms=3, color=line.get_color())
    ax.set_xlabel("distance from the centre / half-width  x/a  (-)")
    ax.set_ylabel("excess pore pressure / initial value  p/p0  (-)")
    ax.set_title("pressure across the width: lines closed form, dots FE", fontsize=10)
    ax.legend(fontsize=8)
    ax.grid(alpha=0.3)
    return save(fig, out_dir, NAME)
