"""Modified Cam Clay, drained triaxial compression of a normally consolidated point.

From isotropic p'_0 = 100 kPa on the normal compression line, the axial strain is raised to
50 % at constant radial effective stress. Compared: the stress path slope dq/dp' = 3; the
stress point on the growing ellipse; the volume change, which follows the normal compression
and unloading lines through p'_c and p'; and the end of the path, which approaches the
critical state q = M p' at p'_cs = 3 p'_0 / (3 - M).

Tolerances: the slope, the ellipse and the volume change hold at every converged step (the
driver meets the radial stress to 1e-10 of the stress, the return mapping lands on the
ellipse to round-off, and the exponential update makes the volume exact), so their tolerances
are round-off (1e-5 on the slope, from differences of nearly equal stresses; 1e-9 of
p'_c^2 on f; 1e-12 on eps_v). The critical state is reached only asymptotically: at 50 %
axial strain the path is within 0.3 % of it, so 0.5 % is asked.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import (critical_state_void_ratio, drained_triaxial_critical_state,
                                void_ratio_on_line, volumetric_strain_on_ellipse,
                                yield_function)
from solver.materials import driver

from . import Check
from ._camclay import E0, KAPPA, LAMBDA, M, ROSCOE_BURLAND, WOOD, clay, isotropic_state
from ._plot import COMPUTED, figure, log_axis, save

NAME = "camclay_drained"
TITLE = "Modified Cam Clay: drained triaxial compression to the critical state"
P0 = 100.0            # kPa, normally consolidated
AXIAL_STRAIN = 0.5
TOL_SLOPE, TOL_ELLIPSE, TOL_VOLUME, TOL_CRITICAL = 1e-5, 1e-9, 1e-12, 5e-3


def solve(steps: int) -> dict:
    mat = clay()
    h = driver.drained_triaxial(mat, isotropic_state(mat, P0, P0), AXIAL_STRAIN, steps=steps)
    p, q, pc = h.p[:, 0], h.q[:, 0], h.pc[:, 0]
    return dict(p=p, q=q, pc=pc, ev=h.volumetric_strain[:, 0], ea=h.axial_strain[:, 0],
                e=h.void_ratio[:, 0], iterations=int(h.iterations.max()))


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    r = solve(100 if quick else 400)
    p, q, pc = r["p"], r["q"], r["pc"]
    cs = drained_triaxial_critical_state(P0, M)
    checks = [
        # Constant radial stress: dq = 3 dp' (Wood 1990, ch. 4, from memory).
        Check(NAME, "stress path slope dq/dp' = 3 at constant radial stress: "
                    "max |slope / 3 - 1|",
              float(np.abs(np.diff(q) / np.diff(p) / 3.0 - 1.0).max()), TOL_SLOPE,
              f"{WOOD}, ch. 4 (from memory)"),
        # Associated flow keeps a yielding point on f = q^2/M^2 + p'(p' - p'_c) = 0.
        Check(NAME, "stress point on the yield ellipse: max |f| / max(p'_c)^2",
              float(np.abs(yield_function(p, q, pc, M)).max() / pc.max() ** 2), TOL_ELLIPSE,
              ROSCOE_BURLAND),
        # eps_v (1 + e0) = (lambda - kappa) ln(p'_c/p'_0) + kappa ln(p'/p'_0).
        Check(NAME, "volumetric strain from the compression lines through p'_c and p': "
                    "max |eps_v - eps_v,lines|",
              float(np.abs(r["ev"] - volumetric_strain_on_ellipse(
                  p, pc, P0, P0, LAMBDA, KAPPA, E0)).max()), TOL_VOLUME,
              f"{WOOD}, ch. 4 (from memory)"),
        # The path ends at the critical state, q = M p', p'_cs = 3 p'_0 / (3 - M).
        Check(NAME, f"stress ratio at {AXIAL_STRAIN * 100:g} % axial strain: |q / (M p') - 1|",
              float(abs(q[-1] / (M * p[-1]) - 1.0)), TOL_CRITICAL,
              f"{WOOD}, ch. 7 (from memory)"),
        Check(NAME, f"p' at {AXIAL_STRAIN * 100:g} % axial strain against "
                    "p'_cs = 3 p'_0 / (3 - M): |p' / p'_cs - 1|",
              float(abs(p[-1] / cs.p - 1.0)), TOL_CRITICAL, f"{WOOD}, ch. 7 (from memory)"),
    ]
    if out_dir is not None:
        plot(r, out_dir)
    return checks


def plot(r: dict, out_dir: Path) -> Path | None:
    fig, (ax1, ax2) = figure()
    cs = drained_triaxial_critical_state(P0, M)
    k = max(1, len(r["p"]) // 40)                 # about 40 markers
    for pc, style, label in ((P0, ":", f"initial yield ellipse, p'_c = {P0:g} kPa"),
                             (r["pc"][-1], "--", f"final ellipse, p'_c = {r['pc'][-1]:.0f} kPa")):
        pe = np.linspace(0.0, pc, 200)
        ax1.plot(pe, M * np.sqrt(np.maximum(pe * (pc - pe), 0.0)), color="0.45", ls=style,
                 lw=1.0, label=label)
    pl = np.linspace(0.0, 1.15 * cs.p, 2)
    ax1.plot(pl, M * pl, "C3", lw=1.2, label="critical state line q = M p'")
    ax1.plot([P0, cs.p], [0.0, cs.q], "C0", lw=1.2,
             label="drained path dq/dp' = 3 to p'_cs = 3 p'_0 / (3 - M)")
    ax1.plot([cs.p], [cs.q], "*", ms=11, color="C3", label="critical state, closed form")
    ax1.plot(r["p"][::k], r["q"][::k], **COMPUTED)
    ax1.set_xlim(0.0, 1.15 * cs.p)
    ax1.set_ylim(0.0, 1.15 * cs.q)
    ax1.set_xlabel("mean effective stress p' (kPa)")
    ax1.set_ylabel("deviator stress q (kPa)")
    ax1.set_title("stress path: lines closed form, markers computed", fontsize=10)
    pf = np.geomspace(0.8 * P0, 1.2 * cs.p, 100)
    ax2.plot(pf, void_ratio_on_line(pf, P0, E0, LAMBDA), "C0", lw=1.2,
             label="isotropic normal compression line")
    ax2.plot(pf, critical_state_void_ratio(pf, P0, E0, LAMBDA, KAPPA), "C3", lw=1.2,
             label="critical state line, (lambda - kappa) ln 2 below it")
    ax2.plot([cs.p], [critical_state_void_ratio(cs.p, P0, E0, LAMBDA, KAPPA)], "*", ms=11,
             color="C3", label="critical state, closed form")
    ax2.plot(r["p"][::k], r["e"][::k], **COMPUTED)
    log_axis(ax2, [80, 100, 120, 150, 200], "mean effective stress p' (kPa, logarithmic scale)")
    ax2.set_ylabel("void ratio e (-)")
    ax2.set_title("compression plane: the path ends on the critical state line", fontsize=10)
    ax1.legend(fontsize=8, loc="upper left")
    ax2.legend(fontsize=8)
    for ax in (ax1, ax2):
        ax.grid(alpha=0.3)
    return save(fig, out_dir, NAME)
