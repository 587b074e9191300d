"""Mesh refinement study: the observed order of convergence of the displacement.

The thick-walled cylinder of ``axisymmetric.py`` (smooth closed form, Lame 1852) on a sequence
of uniformly refined meshes. Quadratic (P2) displacement elements converge in the L2 norm of
the displacement error at order h^3 (Ciarlet 1978, The Finite Element Method for Elliptic
Problems, theorem 3.2.5 (number from memory), for smooth solutions). The rate is fitted by numpy.polyfit of
log(error) against log(h) and must lie within 0.3 of 3.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import lame_cylinder

from . import Check
from ._plot import figure, save
from .axisymmetric import A, B_OUT, E, NU, P_IN, cylinder

NAME = "convergence"
TITLE = "Mesh refinement: observed convergence order"
SOURCE = ("Ciarlet (1978) The Finite Element Method for Elliptic Problems (theorem number "
          "from memory: 3.2.5) (order "
          "k+1 = 3 in L2 for P2); exact field from Lame (1852)")


def l2_error(size: float) -> tuple[float, float]:
    """(h, relative L2 error of u_r) on a mesh of the given target size."""
    r = cylinder(size)
    pb, st = r["problem"], r["state"]
    d = pb.disc
    ue = st.u[d.u_dofs].reshape(-1, 6, 2)[..., 0]           # (ne, 6) nodal u_r
    uq = np.einsum("qa,ea->eq", d.N2, ue)
    ex = lame_cylinder(d.xq[..., 0], A, B_OUT, P_IN, 0.0, E, NU).u_r
    err = np.sqrt((d.dV * (uq - ex) ** 2).sum() / (d.dV * ex ** 2).sum())
    return r["mesh"].h, float(err)


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    sizes = [0.25, 0.125, 0.0625] if quick else [0.25, 0.125, 0.0625, 0.03125]
    hs, errs = np.array([l2_error(s) for s in sizes]).T
    rate = float(np.polyfit(np.log(hs), np.log(errs), 1)[0])
    checks = [Check(NAME, f"observed L2 order of u_r over h = {hs.max():.3g}..{hs.min():.3g} m: "
                          f"|rate - 3| (rate {rate:.2f})", abs(rate - 3.0), 0.3, SOURCE),
              Check(NAME, "L2 relative error of u_r on the finest mesh", float(errs[-1]), 1e-4,
                    SOURCE)]
    if out_dir is not None:
        fig, axes = figure(ncols=1, width=5.5, height=4.4)
        ax = axes
        ax.loglog(hs, errs, "o-", label=f"finite elements, fitted rate {rate:.2f}")
        ax.loglog(hs, errs[0] * (hs / hs[0]) ** 3, "k--", lw=1, label="slope 3 (theory)")
        ax.set_xlabel("element size h (m)")
        ax.set_ylabel("relative L2 error of radial displacement")
        ax.set_title("thick cylinder, refinement study", fontsize=10)
        ax.grid(alpha=0.3, which="both")
        ax.legend(fontsize=8)
        save(fig, out_dir, NAME)
    return checks
