"""Modified Cam Clay, undrained triaxial compression at three overconsolidation ratios.

Points at p'_c0 = 100 kPa with isotropic overconsolidation ratios R0 = 1, 1.5 and 2 are
sheared at constant volume to 15 % axial strain (at constant total radial stress). Compared:
the elastic part of each path, p' = p'_0 until the ellipse is reached (isotropic elasticity
changes no volume under pure shear); the path on the yield surface,
p' / p'_0 = [R0 M^2 / (M^2 + eta^2)]^Lambda; and the critical state it approaches,
p'_f = p'_0 (R0 / 2)^Lambda with undrained strength c_u = M p'_f / 2, and for R0 = 1 the
excess pore pressure there.

Tolerances: at constant volume the exponential update keeps kappa ln p' + (lambda - kappa)
ln p'_c exactly and the return mapping lands on the ellipse, so the path holds to round-off
(1e-12 relative on the elastic part; 1e-9 on the yield path, round-off gathered over the
steps). The critical state is approached asymptotically: at 15 % axial strain the stresses
are within 1e-6 of it, so 1e-5 is asked.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from solver.analytic import undrained_critical_state, undrained_mean_stress
from solver.materials import driver

from . import Check
from ._camclay import KAPPA, LAMBDA, M, WOOD, clay, isotropic_state
from ._plot import figure, save

NAME = "camclay_undrained"
TITLE = "Modified Cam Clay: undrained triaxial compression, three overconsolidation ratios"
PC0 = 100.0                 # kPa
OCRS = (1.0, 1.5, 2.0)      # isotropic, R0 = p'_c0 / p'_0
AXIAL_STRAIN = 0.15
END = f"{AXIAL_STRAIN * 100:g} % axial strain"
TOL_ELASTIC, TOL_PATH, TOL_CRITICAL = 1e-12, 1e-9, 1e-5
SRC_PATH = f"{WOOD}, ch. 6 and 7 (from memory): constant volume on the ellipse"
SRC_CS = f"{WOOD}, ch. 7 (from memory): undrained critical state and strength"


def solve(steps: int) -> dict:
    """All three ratios at once (one driver call, a point each)."""
    mat = clay()
    p0 = PC0 / np.array(OCRS)
    h = driver.undrained_triaxial(mat, isotropic_state(mat, p0, PC0), AXIAL_STRAIN,
                                  steps=steps)
    return dict(p0=p0, p=h.p, q=h.q, u=h.excess_pore_pressure, ea=h.axial_strain)


def run(quick: bool = True, out_dir: Path | None = None) -> list[Check]:
    r = solve(150 if quick else 600)
    checks = []
    for j, ocr in enumerate(OCRS):
        p0, p, q = r["p0"][j], r["p"][:, j], r["q"][:, j]
        eta = q / p
        # First yield where the vertical elastic path p' = p'_0 meets the ellipse.
        q_yield = M * np.sqrt(p0 * (PC0 - p0))
        elastic = q < q_yield * (1 - 1e-9)
        if elastic.sum() > 1:                # R0 = 1 yields at once
            checks.append(Check(NAME, f"R0 = {ocr:g}: elastic part at constant p': "
                                      "max |p' / p'_0 - 1|",
                                float(np.abs(p[elastic] / p0 - 1).max()), TOL_ELASTIC,
                                f"{WOOD}, ch. 3 (from memory): isotropic elasticity"))
        plastic = ~elastic
        closed = undrained_mean_stress(eta[plastic], p0, ocr, M, LAMBDA, KAPPA)
        checks.append(Check(NAME, f"R0 = {ocr:g}: yield path against "
                                  "p'_0 [R0 M^2 / (M^2 + eta^2)]^Lambda: max |p' / p'_path - 1|",
                            float(np.abs(p[plastic] / closed - 1).max()), TOL_PATH, SRC_PATH))
        cs = undrained_critical_state(p0, ocr, M, LAMBDA, KAPPA)
        checks.append(Check(NAME, f"R0 = {ocr:g}: p' at {END} against "
                                  "p'_f = p'_0 (R0 / 2)^Lambda: |p' / p'_f - 1|",
                            float(abs(p[-1] / cs.p - 1)), TOL_CRITICAL, SRC_CS))
        checks.append(Check(NAME, f"R0 = {ocr:g}: strength q / 2 at {END} against "
                                  "c_u = M p'_f / 2: |q / q_f - 1|",
                            float(abs(q[-1] / cs.q - 1)), TOL_CRITICAL, SRC_CS))
        if ocr == 1.0:
            # Total stress path of the test: p = p'_0 + q / 3, so u_f = p'_0 + q_f / 3 - p'_f.
            u_f = p0 + cs.q / 3 - cs.p
            checks.append(Check(NAME, f"R0 = 1: excess pore pressure at {END} against "
                                      "u_f = p'_0 + q_f / 3 - p'_f: |u / u_f - 1|",
                                float(abs(r["u"][-1, j] / u_f - 1)), TOL_CRITICAL, SRC_CS))
    if out_dir is not None:
        plot(r, out_dir)
    return checks


def closed_path(p0: float, ocr: float, n: int = 300):
    """The closed-form path: (eta, p', q, u) up to the critical state, compression positive.

    Elastic at p' = p'_0 up to the ellipse (eta_y^2 = M^2 (R0 - 1)), then on the yield surface
    at constant volume; u = p'_0 + q / 3 - p' at constant total radial stress.
    """
    eta_y = M * np.sqrt(ocr - 1.0)
    eta_el = np.linspace(0.0, min(eta_y, M), n // 3)
    eta_pl = np.linspace(min(eta_y, M), M, n)
    p = np.concatenate([np.full(eta_el.shape, p0),
                        undrained_mean_stress(eta_pl, p0, ocr, M, LAMBDA, KAPPA)])
    eta = np.concatenate([eta_el, eta_pl])
    q = eta * p
    return eta, p, q, p0 + q / 3 - p


def plot(r: dict, out_dir: Path) -> Path | None:
    fig, (ax1, ax2) = figure()
    k = max(1, len(r["ea"]) // 40)
    pl = np.array([0.0, 1.05 * PC0])
    ax1.plot(pl, M * pl, color="C3", lw=1.2, label="critical state line q = M p'")
    for j, ocr in enumerate(OCRS):
        p0, colour = r["p0"][j], f"C{j}"
        eta, p, q, u = closed_path(p0, ocr)
        ax1.plot(p, q, color=colour, lw=1.2,
                 label=f"closed form, R0 = {ocr:g} (p'_0 = {p0:.1f} kPa)")
        ax1.plot(r["p"][::k, j], r["q"][::k, j], "o", ms=3.5, color=colour, mfc="none")
        ax2.plot(eta, u, color=colour, lw=1.2, label=f"closed form, R0 = {ocr:g}")
        ax2.plot(r["q"][::k, j] / r["p"][::k, j], r["u"][::k, j], "o", ms=3.5, color=colour,
                 mfc="none")
    ax1.plot([], [], "o", ms=3.5, color="0.3", mfc="none", label="computed")
    ax2.plot([], [], "o", ms=3.5, color="0.3", mfc="none", label="computed")
    pe = np.linspace(0.0, PC0, 200)
    ax1.plot(pe, M * np.sqrt(pe * (PC0 - pe)), color="0.45", ls=":", lw=1.0,
             label=f"initial yield ellipse, p'_c = {PC0:g} kPa")
    ax1.set_xlim(0.0, 1.05 * PC0)
    ax1.set_ylim(0.0, 0.75 * M * PC0)
    ax1.set_xlabel("mean effective stress p' (kPa)")
    ax1.set_ylabel("deviator stress q (kPa)")
    ax1.set_title("effective stress paths: lines Wood (1990), markers computed", fontsize=10)
    ax2.axhline(0.0, color="0.4", lw=0.8)
    ax2.set_xlabel("stress ratio eta = q / p' (-)")
    ax2.set_ylabel("excess pore pressure u (kPa, compression positive)")
    ax2.set_title("pore pressure at constant total radial stress", fontsize=10)
    ax1.legend(fontsize=8, loc="upper left")
    ax2.legend(fontsize=8, loc="upper left")
    for ax in (ax1, ax2):
        ax.grid(alpha=0.3)
    return save(fig, out_dir, NAME)
