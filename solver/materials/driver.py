"""Material-point driver: laboratory paths on a material alone, no finite elements.

Any material with ``update(state, strain_increment) -> (stress, tangent, new_state)`` returning
the updated stress and a (npts, 4, 4) tangent (e.g. ``CamClayMaterial``) can be driven along:

- drained isotropic compression and unloading (mean effective stress controlled),
- drained triaxial compression (axial strain controlled, radial effective stress constant),
- undrained triaxial compression (constant volume, axial strain controlled),
- one-dimensional (oedometer) compression (lateral strains zero; vertical stress or strain
  controlled),

or any mixed path with ``run_mixed``: in each step some components of the strain increment are
prescribed and the other components of the stress at the end of the step are targets, found by
Newton's method with the material tangent (quadratic with a consistent tangent).

Components are the package's [xx, yy, zz, xy], tension positive, engineering shear. For the
triaxial and oedometer paths they are read as axisymmetric [rr, zz, theta-theta, rz] with y = z
the AXIAL (vertical) direction: index 1 axial, indices 0 and 2 radial. Histories are reported in
soil-mechanics terms (compression positive) as well. Many points can be driven at once (each
along its own version of the same kind of path); arrays are (step, point, ...), step 0 being
the initial state.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import SolverError

AXIAL = 1           # index of the axial (vertical) component
RADIAL = (0, 2)     # radial and hoop components
_M = np.array([1.0, 1.0, 1.0, 0.0])


@dataclass
class PointHistory:
    """What happened at each point, step by step; arrays (nsteps + 1, npts, ...).

    Attributes
    ----------
    strain : (n+1, npts, 4) accumulated strain, tension positive, engineering shear.
    stress : (n+1, npts, 4) effective stress, tension positive, kPa.
    pc : (n+1, npts) p'_c, kPa (NaN if the material has none).
    void_ratio : (n+1, npts) void ratio (NaN if the material has none).
    iterations : (n,) Newton iterations of the mixed control per step (0: strain controlled).
    excess_pore_pressure : (n+1, npts) for undrained paths (total radial stress constant),
        compression positive, kPa; else None.
    final_state : the material state after the last step.
    """

    strain: np.ndarray
    stress: np.ndarray
    pc: np.ndarray
    void_ratio: np.ndarray
    iterations: np.ndarray
    final_state: object
    excess_pore_pressure: np.ndarray | None = None

    @property
    def p(self) -> np.ndarray:
        """Mean effective stress p' (n+1, npts), compression positive, kPa."""
        return -(self.stress[..., 0] + self.stress[..., 1] + self.stress[..., 2]) / 3.0

    @property
    def q(self) -> np.ndarray:
        """Deviator stress q = sqrt(3/2 s:s) (n+1, npts), kPa."""
        s = self.stress + self.p[..., None] * _M
        return np.sqrt(1.5 * (s[..., 0] ** 2 + s[..., 1] ** 2 + s[..., 2] ** 2
                              + 2 * s[..., 3] ** 2))

    @property
    def volumetric_strain(self) -> np.ndarray:
        """eps_v (n+1, npts), compression positive."""
        return -(self.strain[..., 0] + self.strain[..., 1] + self.strain[..., 2])

    @property
    def deviatoric_strain(self) -> np.ndarray:
        """eps_q = sqrt(2/3 e:e) (n+1, npts); 2/3 (eps_a - eps_r) in triaxial."""
        e = self.strain.copy()
        e[..., :3] += self.volumetric_strain[..., None] / 3.0
        e[..., 3] *= 0.5
        return np.sqrt(2.0 / 3.0 * (e[..., 0] ** 2 + e[..., 1] ** 2 + e[..., 2] ** 2
                                    + 2 * e[..., 3] ** 2))

    @property
    def axial_strain(self) -> np.ndarray:
        """eps_a = -eps_zz (n+1, npts), compression positive."""
        return -self.strain[..., AXIAL]

    @property
    def axial_stress(self) -> np.ndarray:
        """sigma'_a (n+1, npts), compression positive, kPa."""
        return -self.stress[..., AXIAL]

    @property
    def radial_stress(self) -> np.ndarray:
        """sigma'_r (n+1, npts), compression positive, kPa."""
        return -self.stress[..., RADIAL[0]]


def _get(state, name, n):
    v = getattr(state, name, None)
    return np.full(n, np.nan) if v is None else np.asarray(v, dtype=float).copy()


def run_mixed(material, state, strain_increments, stress_targets=None,
              strain_controlled=(True, True, True, True), tol: float = 1e-10,
              max_iter: int = 30) -> PointHistory:
    """Drive points along a mixed strain/stress path.

    Parameters
    ----------
    material : has ``update(state, strain_increment)``.
    state : initial material state with ``npts`` points (``state.stress`` (npts, 4)).
    strain_increments : (nsteps, 4) or (nsteps, npts, 4), tension positive; only the
        strain-controlled components are used.
    stress_targets : (nsteps, 4) or (nsteps, npts, 4) effective stress at the end of each step,
        tension positive, kPa; only the other components are used. None if all strains are
        controlled.
    strain_controlled : (4,) bool, which components have a prescribed strain increment.
    tol : convergence of the stress-controlled components, relative to max(|stress|, 1 kPa).
    max_iter : Newton iterations per step before giving up (SolverError).

    Returns
    -------
    PointHistory
    """
    ctrl = np.asarray(strain_controlled, dtype=bool)
    free = np.flatnonzero(~ctrl)
    npts = state.stress.shape[0]
    de_all = np.asarray(strain_increments, dtype=float)
    if de_all.ndim == 2:
        de_all = np.broadcast_to(de_all[:, None, :], (de_all.shape[0], npts, 4))
    nsteps = de_all.shape[0]
    if free.size:
        if stress_targets is None:
            raise ValueError("stress_targets are needed for stress-controlled components")
        tg_all = np.asarray(stress_targets, dtype=float)
        if tg_all.ndim == 2:
            tg_all = np.broadcast_to(tg_all[:, None, :], (nsteps, npts, 4))
        if tg_all.shape != (nsteps, npts, 4):
            raise ValueError(f"stress_targets shape {tg_all.shape} != {(nsteps, npts, 4)}")

    strain = np.zeros((nsteps + 1, npts, 4))
    stress = np.zeros((nsteps + 1, npts, 4))
    pc = np.zeros((nsteps + 1, npts))
    e = np.zeros((nsteps + 1, npts))
    iters = np.zeros(nsteps, dtype=int)
    stress[0] = state.stress
    pc[0] = _get(state, "pc", npts)
    e[0] = _get(state, "void_ratio", npts)
    ff = np.ix_(np.arange(npts), free, free) if free.size else None
    for k in range(nsteps):
        de = np.zeros((npts, 4))
        de[:, ctrl] = de_all[k][:, ctrl]
        if free.size:
            target = tg_all[k][:, free]
            scale = np.maximum(np.abs(tg_all[k]).max(axis=1), 1.0)
            # First iterate: zero strain in the stress-controlled components.
            sig, D, new = material.update(state, de)
            active = np.ones(npts, dtype=bool)
            for it in range(max_iter + 1):
                r = sig[:, free] - target
                active &= ~(np.abs(r).max(axis=1) <= tol * scale)
                if not active.any():
                    break
                if it == max_iter:
                    raise SolverError(f"material-point driver: step {k + 1} did not converge "
                                      f"at {int(active.sum())} point(s) in {max_iter} "
                                      "iterations")
                Dff = D[ff]
                dx = np.linalg.solve(Dff[active], -r[active][..., None])[..., 0]
                de[np.ix_(np.flatnonzero(active), free)] += dx
                sig, D, new = material.update(state, de)
            iters[k] = it
        else:
            sig, D, new = material.update(state, de)
        state = new
        strain[k + 1] = strain[k] + de
        stress[k + 1] = sig
        pc[k + 1] = _get(state, "pc", npts)
        e[k + 1] = _get(state, "void_ratio", npts)
    return PointHistory(strain, stress, pc, e, iters, state)


def _steps(total: float, steps: int) -> np.ndarray:
    if steps < 1:
        raise ValueError("steps must be at least 1")
    return np.full(steps, total / steps)


def isotropic(material, state, mean_stress) -> PointHistory:
    """Drained isotropic compression / unloading through the mean effective stresses given.

    ``mean_stress`` (nsteps,) or (nsteps, npts): p' at the end of each step, compression
    positive, kPa (up for loading, down for unloading, in any order). Shear strain is held at
    zero.
    """
    pt = np.asarray(mean_stress, dtype=float)
    npts = state.stress.shape[0]
    if pt.ndim == 1:
        pt = np.broadcast_to(pt[:, None], (pt.size, npts))
    targets = -pt[..., None] * _M                      # (nsteps, npts, 4)
    de = np.zeros((pt.shape[0], 4))
    return run_mixed(material, state, de, targets, (False, False, False, True))


def drained_triaxial(material, state, axial_strain: float, steps: int = 200) -> PointHistory:
    """Drained triaxial compression: axial strain controlled, radial effective stress constant.

    ``axial_strain`` total, compression positive, in ``steps`` equal increments. The radial
    (and hoop) stresses stay at their initial values; the rz shear strain stays zero.
    """
    npts = state.stress.shape[0]
    de = np.zeros((steps, 4))
    de[:, AXIAL] = -_steps(axial_strain, steps)
    targets = np.broadcast_to(np.asarray(state.stress, float)[None], (steps, npts, 4))
    return run_mixed(material, state, de, targets, (False, True, False, True))


def undrained_triaxial(material, state, axial_strain: float, steps: int = 200) -> PointHistory:
    """Undrained (constant volume) triaxial compression, axial strain controlled.

    Strain increments [d/2, -d, d/2, 0] with d = axial_strain / steps (compression positive
    axial strain): no volume change, the condition of an undrained test with incompressible
    constituents. ``excess_pore_pressure`` assumes the total radial stress is held constant:
    u = sigma'_r0 - sigma'_r (compression positive).
    """
    d = _steps(axial_strain, steps)
    de = np.zeros((steps, 4))
    de[:, AXIAL] = -d
    de[:, RADIAL[0]] = de[:, RADIAL[1]] = d / 2
    h = run_mixed(material, state, de)
    h.excess_pore_pressure = h.radial_stress[0][None] - h.radial_stress
    return h


def oedometer(material, state, vertical_stress=None, axial_strain: float | None = None,
              steps: int = 100) -> PointHistory:
    """One-dimensional compression: only the axial (yy) strain is non-zero.

    Give either ``vertical_stress`` (nsteps,) or (nsteps, npts), sigma'_v at the end of each
    step (compression positive, kPa; loading or unloading), or ``axial_strain`` (compression
    positive, total) reached in ``steps`` equal increments.
    """
    if (vertical_stress is None) == (axial_strain is None):
        raise ValueError("give exactly one of vertical_stress and axial_strain")
    npts = state.stress.shape[0]
    if axial_strain is not None:
        de = np.zeros((steps, 4))
        de[:, AXIAL] = -_steps(axial_strain, steps)
        return run_mixed(material, state, de)
    sv = np.asarray(vertical_stress, dtype=float)
    if sv.ndim == 1:
        sv = np.broadcast_to(sv[:, None], (sv.size, npts))
    targets = np.zeros((sv.shape[0], npts, 4))
    targets[..., AXIAL] = -sv
    de = np.zeros((sv.shape[0], 4))
    return run_mixed(material, state, de, targets, (True, False, True, True))
