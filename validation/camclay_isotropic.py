"""Modified Cam Clay, drained isotropic compression, unloading and reloading at one point.

A normally consolidated point at p' = 100 kPa is loaded to 400 kPa along the normal
compression line, unloaded to 50 kPa, reloaded to 400 kPa and loaded on to 800 kPa, each
branch in a few large steps and in many small ones. Compared: the void ratio against the
normal compression line e = N - lambda ln p' and the unloading-reloading line
e = e_k - kappa ln p', and p'_c, which stays at the largest past p' while the point is inside
the ellipse. The update integrates d p' / p' exponentially, so both lines hold exactly over
steps of any size: the tolerances are round-off (1e-10 in e, and relative in p'_c).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import void_ratio_on_line
from solver.materials import driver

from . import Check
from ._camclay import E0, KAPPA, LAMBDA, ROSCOE_BURLAND, WOOD, clay, isotropic_state
from ._plot import figure, log_axis, save

NAME = "camclay_isotropic"
TITLE = "Modified Cam Clay: isotropic compression, unloading and reloading"
P0, P_UNLOAD, P_LOW, P_END = 100.0, 400.0, 50.0, 800.0     # kPa
TOL_E = 1e-10         # void ratio, exact lines up to round-off
TOL_PC = 1e-10        # relative, p'_c kept while inside the ellipse
SRC_NCL = f"{WOOD}, ch. 4 (from memory): normal compression line e = N - lambda ln p'"
SRC_URL = f"{WOOD}, ch. 4 (from memory): unloading-reloading line e = e_k - kappa ln p'"
SRC_PC = f"{ROSCOE_BURLAND}: hardening with plastic volume change only"


def solve(steps: int) -> dict:
    """The path with ``steps`` equal steps a branch; closed forms at the computed p'."""
    mat = clay()
    path = np.concatenate([np.linspace(P0, P_UNLOAD, steps + 1)[1:],       # NCL
                           np.linspace(P_UNLOAD, P_LOW, steps + 1)[1:],    # unload
                           np.linspace(P_LOW, P_UNLOAD, steps + 1)[1:],    # reload, elastic
                           np.linspace(P_UNLOAD, P_END, steps + 1)[1:]])   # NCL again
    h = driver.isotropic(mat, isotropic_state(mat, P0, P0), path)
    p, e, pc = h.p[:, 0], h.void_ratio[:, 0], h.pc[:, 0]
    n = steps
    ncl1, swell, ncl2 = slice(0, n + 1), slice(n, 3 * n + 1), slice(3 * n, 4 * n + 1)
    # N through the start (on the NCL); e_k through the turning point p' = 400 kPa on it.
    e_turn = float(void_ratio_on_line(P_UNLOAD, P0, E0, LAMBDA))
    return dict(p=p, e=e, pc=pc, ncl1=ncl1, swell=swell, ncl2=ncl2, e_turn=e_turn,
                e_ncl=void_ratio_on_line(p, P0, E0, LAMBDA),
                e_url=void_ratio_on_line(p, P_UNLOAD, e_turn, KAPPA))


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    checks = []
    results = {}
    for steps in (3, 30 if quick else 300):
        r = solve(steps)
        results[steps] = r
        where = f"{steps} steps a branch"
        e, e_ncl, e_url = r["e"], r["e_ncl"], r["e_url"]
        for label, part in (("first loading", r["ncl1"]), ("past p'_c", r["ncl2"])):
            checks.append(Check(NAME, f"normal compression line, {label}, {where}: "
                                      "max |e - e_NCL|",
                                float(np.abs(e[part] - e_ncl[part]).max()), TOL_E, SRC_NCL))
        sw = r["swell"]
        checks.append(Check(NAME, f"unloading-reloading line, {where}: max |e - e_URL|",
                            float(np.abs(e[sw] - e_url[sw]).max()), TOL_E, SRC_URL))
        checks.append(Check(NAME, f"p'_c kept at {P_UNLOAD:g} kPa inside the ellipse, "
                                  f"{where}: max |p'_c / {P_UNLOAD:g} - 1|",
                            float(np.abs(r["pc"][sw] / P_UNLOAD - 1).max()), TOL_PC, SRC_PC))
    if out_dir is not None:
        plot(results, out_dir)
    return checks


def plot(results: dict, out_dir: Path) -> Path | None:
    fig, (ax1, ax2) = figure()
    coarse, fine = sorted(results)
    r = results[fine]
    pf = np.geomspace(P_LOW * 0.8, P_END * 1.25, 200)
    ax1.plot(pf, void_ratio_on_line(pf, P0, E0, LAMBDA), "C0", lw=1.2,
             label="normal compression line, slope lambda")
    pu = np.geomspace(P_LOW * 0.8, P_UNLOAD, 100)
    ax1.plot(pu, void_ratio_on_line(pu, P_UNLOAD, r["e_turn"], KAPPA), "C1", lw=1.2,
             label="unloading-reloading line, slope kappa")
    # p'_c closed form: the largest p' so far along the path (100 -> 400 -> 50 -> 400 -> 800).
    pl = np.geomspace(P0, P_END, 100)
    ax2.plot(pl, pl, "C0", lw=1.2, label="p'_c = p' on the normal compression line")
    ax2.plot([P_LOW, P_UNLOAD], [P_UNLOAD, P_UNLOAD], "C1", lw=1.2,
             label="p'_c = largest past p' inside the ellipse")
    every = max(1, fine // 15)         # about 15 markers a branch
    for steps, k, style in ((fine, every, dict(marker="o", ms=3.5, color="0.2", mfc="none")),
                            (coarse, 1, dict(marker="s", ms=7.0, color="C3", mfc="none"))):
        rr = results[steps]
        for ax, y in ((ax1, rr["e"]), (ax2, rr["pc"])):
            ax.plot(rr["p"][::k], y[::k], ls="none", label=f"computed, {steps} steps a branch",
                    **style)
    for ax in (ax1, ax2):
        log_axis(ax, [50, 100, 200, 400, 800], "mean effective stress p' (kPa, logarithmic scale)")
        ax.grid(alpha=0.3)
        ax.legend(fontsize=8)
    ax1.set_ylabel("void ratio e (-)")
    ax2.set_ylabel("preconsolidation p'_c (kPa)")
    ax1.set_title("e - ln p': lines Wood (1990), markers computed", fontsize=10)
    ax2.set_title("size of the yield ellipse p'_c: lines closed form, markers computed",
                  fontsize=10)
    return save(fig, out_dir, NAME)
