"""Elastic strip load on a deep layer against the half-space stresses of Carothers (1920).

A uniform vertical load q on a strip of width 2b, drained linear elasticity, plane strain.
The closed form is for a half-space; the model is a half section 60b wide and 60b deep with a
rough rigid base and a smooth far side. Domain-size effect, measured by doubling both
dimensions (30b -> 60b -> 120b): the vertical stress changes by less than 0.1 % of q for
z <= 4b, the horizontal stress by 1.2 % of q at 60b (2.3 % at 30b, 0.6 % at 120b: it falls as
1/extent). Tolerances: 1 % of q on the vertical stress (discretisation and nodal averaging of
stresses), 2 % of q on the horizontal stress (the domain effect above plus the same).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import strip_load_stresses
from solver.fem.biot import BiotProblem, Fixity, Traction
from solver.geometry import strip_load_section
from solver.materials.elastic import ElasticMaterial

from . import Check
from ._plot import figure, save

NAME = "strip_load"
TITLE = "Elastic strip load on a deep layer"
SOURCE = ("Carothers (1920) Proc. R. Soc. A 97; closed form as in Poulos and Davis (1974) "
          "Elastic Solutions for Soil and Rock Mechanics, sec. 3.1")
Q = 100.0   # kPa
B = 1.0     # half-width of the strip, m
TOL_VERTICAL, TOL_HORIZONTAL = 0.01, 0.02  # of q


def solve(extent: float = 60.0, size_near: float = 0.1) -> dict:
    mesh = strip_load_section(extent * B, extent * B, B, size_near=size_near * B,
                              size_far=5.0 * B)
    soil = ElasticMaterial(10_000.0, 0.3, name="soil")
    problem = BiotProblem(mesh, {"soil": soil},
                          fixities=[Fixity("bottom", x=0.0, y=0.0), Fixity("left", x=0.0),
                                    Fixity("right", x=0.0)],
                          tractions=[Traction("load", vertical=Q)])
    state = problem.drained_state()
    sig = -problem.total_stress_at_nodes(state)   # compression positive, as the closed form
    out = {}
    z = np.linspace(0.25, 4.0, 16) * B
    for label, x0 in (("centre", 0.0), ("edge", B)):
        s = mesh.interpolate(sig, np.column_stack([np.full(z.shape, x0), -z]))
        sz, sx, _ = strip_load_stresses(np.full(z.shape, x0), z, B, Q)
        out[label] = dict(z=z, fe_z=s[:, 1], fe_x=s[:, 0], ex_z=sz, ex_x=sx)
    return out


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    r = solve(size_near=0.1 if quick else 0.05)
    checks = []
    for label in ("centre", "edge"):
        d = r[label]
        checks.append(Check(NAME, f"vertical stress under the {label}, 0.25b <= z <= 4b: "
                                  "max |error| / q",
                            float(np.abs(d["fe_z"] - d["ex_z"]).max() / Q), TOL_VERTICAL,
                            SOURCE))
        checks.append(Check(NAME, f"horizontal stress under the {label}, 0.25b <= z <= 4b: "
                                  "max |error| / q",
                            float(np.abs(d["fe_x"] - d["ex_x"]).max() / Q), TOL_HORIZONTAL,
                            SOURCE))
    if out_dir is not None:
        fig, axes = figure()
        zz = np.linspace(0.01, 4.0, 200) * B
        for ax, label, x0 in zip(axes, ("centre", "edge"), (0.0, B)):
            d = r[label]
            sz, sx, _ = strip_load_stresses(np.full(zz.shape, x0), zz, B, Q)
            ax.plot(sz / Q, zz / B, "C0", label="vertical, Carothers (1920)")
            ax.plot(sx / Q, zz / B, "C1", label="horizontal, Carothers (1920)")
            ax.plot(d["fe_z"] / Q, d["z"] / B, "o", color="C0", ms=3.5,
                    label="vertical, finite elements")
            ax.plot(d["fe_x"] / Q, d["z"] / B, "s", color="C1", ms=3.5,
                    label="horizontal, finite elements")
            ax.invert_yaxis()
            ax.set_xlabel("stress increase / strip load  (-)")
            ax.set_ylabel("depth / half-width of the strip  z/b  (-)")
            ax.set_title(f"under the strip {label}", fontsize=10)
            ax.grid(alpha=0.3)
            ax.legend(fontsize=8)
        save(fig, out_dir, NAME)
    return checks
