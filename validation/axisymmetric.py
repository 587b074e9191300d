"""Axisymmetric checks: a thick-walled cylinder (Lame) and a consolidating column.

1. A thick-walled cylinder a <= r <= b under internal pressure, drained elasticity, with the
   axial displacement held at both ends (plane strain along the axis): radial displacement and
   stresses against Lame's solution.
2. The Terzaghi column of ``terzaghi.py`` solved in axisymmetric mode, as an annulus r in
   [1, 1.5] m with rollers on both cylinders: one-dimensional consolidation must not depend on
   the analysis type, which checks the radius weighting of the coupling and flow terms.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import lame_cylinder
from solver.fem.biot import BiotProblem, Fixity, Traction
from solver.geometry import layered_rectangle
from solver.materials.elastic import ElasticMaterial

from . import Check, terzaghi
from ._plot import figure, save

NAME = "axisymmetric"
TITLE = "Axisymmetric: thick-walled cylinder and consolidating column"
SOURCE_LAME = ("Lame (1852) Lecons sur la theorie mathematique de l'elasticite; Timoshenko and "
               "Goodier (1970) Theory of Elasticity (section number from memory)")
A, B_OUT, P_IN = 1.0, 2.0, 100.0
E, NU = 10_000.0, 0.3


def cylinder(size: float) -> dict:
    mesh = layered_rectangle(B_OUT - A, [("soil", 0.5)], size, x0=A)
    problem = BiotProblem(mesh, {"soil": ElasticMaterial(E, NU, name="soil")},
                          analysis="axisymmetric",
                          fixities=[Fixity("top", y=0.0), Fixity("bottom", y=0.0)],
                          tractions=[Traction("left", normal=P_IN)])
    state = problem.drained_state()
    return dict(mesh=mesh, problem=problem, state=state)


def cylinder_errors(size: float) -> dict:
    r = cylinder(size)
    mesh, pb, st = r["mesh"], r["problem"], r["state"]
    rad = mesh.points[:, 0]
    ur = st.displacement()[:, 0]
    ex = lame_cylinder(rad, A, B_OUT, P_IN, 0.0, E, NU)
    sig = pb.effective_stress_at_nodes(st)
    scale_u = np.abs(ex.u_r).max()
    return dict(
        r=rad, ur=ur, ex=ex, sig=sig,
        u_err=float(np.abs(ur - ex.u_r).max() / scale_u),
        srr_err=float(np.abs(sig[:, 0] - ex.sigma_rr).max() / P_IN),
        stt_err=float(np.abs(sig[:, 2] - ex.sigma_tt).max() / P_IN))


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    c = cylinder_errors(0.1 if quick else 0.05)
    checks = [
        Check(NAME, "cylinder radial displacement: max |error| / max |u_r|", c["u_err"], 0.005,
              SOURCE_LAME),
        Check(NAME, "cylinder radial stress: max |error| / p", c["srr_err"], 0.02, SOURCE_LAME),
        Check(NAME, "cylinder hoop stress: max |error| / p", c["stt_err"], 0.02, SOURCE_LAME),
    ]
    col = terzaghi.solve("single", 20 if quick else 40, analysis="axisymmetric", x0=1.0)
    for k, Tv in enumerate(terzaghi.TIME_FACTORS):
        checks.append(Check(NAME, f"axisymmetric column U(Tv={Tv}): |U - U_exact|",
                            float(abs(col["U_fe"][k] - col["U_exact"][k])), 0.005,
                            terzaghi.SOURCE))
        checks.append(Check(NAME, f"axisymmetric column isochrone at Tv={Tv}: "
                                  "max |u - u_exact| / q",
                            float(np.abs(col["fe"][k] - col["exact"][k]).max()), 0.01,
                            terzaghi.SOURCE))
    if out_dir is not None:
        fig, axes = figure()
        rr = np.linspace(A, B_OUT, 200)
        ex = lame_cylinder(rr, A, B_OUT, P_IN, 0.0, E, NU)
        o = np.argsort(c["r"])
        ax = axes[0]
        ax.plot(rr, ex.u_r * 1e3, "C0", label="Lame (1852)")
        ax.plot(c["r"][o], c["ur"][o] * 1e3, "o", ms=3, color="C0", label="finite elements")
        ax.set_xlabel("radius r (m)")
        ax.set_ylabel("radial displacement u_r (mm)")
        ax.set_title(f"thick cylinder, internal pressure {P_IN:g} kPa", fontsize=10)
        ax.legend(fontsize=8)
        ax.grid(alpha=0.3)
        ax = axes[1]
        ax.plot(rr, ex.sigma_rr, "C1", label="radial stress, Lame")
        ax.plot(rr, ex.sigma_tt, "C2", label="hoop stress, Lame")
        ax.plot(c["r"][o], c["sig"][o, 0], "s", ms=3, color="C1", label="radial, FE")
        ax.plot(c["r"][o], c["sig"][o, 2], "^", ms=3, color="C2", label="hoop, FE")
        ax.set_xlabel("radius r (m)")
        ax.set_ylabel("stress, tension positive (kPa)")
        ax.legend(fontsize=8)
        ax.grid(alpha=0.3)
        save(fig, out_dir, NAME)
    return checks
