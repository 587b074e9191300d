"""Newton iterations on the coupled system for materials whose stiffness follows the state.

Residuals (R = right side - left side of the backward-Euler step, as in ``biot.py``):

    R_u = f(t) - int B^T (sigma' - sigma'_0) dV + Q p                     (force balance)
    R_p = Q^T (u - u_n) + S M (p - p_n) + dt H(e_n) p                      (fluid mass)

with sigma' from each region's material over all its quadrature points, given the strain
increment B (u - u_n) since the last converged step. The Jacobian is the coupled matrix with
the consistent tangent in place of D: [[K_t, -Q], [-Q^T, -(S M + dt H)]]. It is not symmetric
(the Modified Cam Clay tangent is not), so it is factored with pivoting. Permeability follows
the void ratio at the start of each step (Taylor 1948), lagged by one step.

Convergence needs both residuals small against the size of the terms that make them up
(``tol``, relative; 1e-6 of the load leaves the settlement wrong by about as much, far below
what the soil parameters can tell). A step that does not converge in ``max_iter`` iterations, or whose
material update fails, is cut in two and retried, down to ``max_cuts`` halvings; then the run
stops with a SolverError and everything finished before is kept.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import SolverError
from .biot import BiotProblem, State


@dataclass
class StepRecord:
    """What one converged (sub)step took: time, iterations and the residual history."""
    t: float
    iterations: int
    residuals: list[float] = field(default_factory=list)


class NewtonStepSolver:
    """Steps a BiotProblem whose regions carry materials with state.

    Parameters
    ----------
    problem : the BiotProblem (its Q, S M, constraints, loads and placed elements are used;
        its linear stiffness is not).
    materials : region name -> material with ``update(state, d_eps)``; regions with an
        ``ElasticMaterial`` are integrated incrementally too.
    states : region name -> initial material state (CamClayState, or an (npts, 4) stress array
        for elastic regions), points ordered (element of the region, quad point).
    stress0 : (ne, nq, 4) initial effective stress, tension positive, kPa (the reference the
        internal force is measured from; zero in elements placed later).
    """

    def __init__(self, problem: BiotProblem, materials: dict, states: dict,
                 stress0: np.ndarray, backend: str | None = None, tol: float = 1e-6,
                 max_iter: int = 15, max_cuts: int = 8):
        self.problem = problem
        self.materials = materials
        self.states = states
        self.stress0 = stress0
        # The Jacobian is nearly but not exactly symmetric: SuperLU on the nested-dissection
        # order without pivoting (measured: twice as fast as SuperLU's default here), without
        # the linear accuracy check, since the Newton residual check watches the result.
        # PARDISO's symmetric mode would be wrong for it.
        self.backend = backend if backend not in (None, "pardiso") else "superlu-nd"
        self.tol, self.max_iter, self.max_cuts = tol, max_iter, max_cuts
        d = problem.disc
        mesh = problem.mesh
        self.nq = d.detJ.shape[1]
        self.idx = {r: np.flatnonzero(mesh.region == mesh.region_id(r))
                    for r in mesh.region_names}
        self.stress = stress0.copy()          # committed effective stress (ne, nq, 4)
        self.f_prev = np.zeros(d.n_dofs)      # external force of the last converged step
        self.plate_prev = np.zeros(problem.n_plate_unknowns)
        self.records: list[StepRecord] = []
        self.factor_seconds = 0.0
        self.n_factorizations = 0
        self._Qe = d.coupling_blocks(problem._per_element("biot_coefficient"))
        self._SMe = d.mass_blocks(problem._per_element("storage"))
        # CSR slots of the element displacement-displacement entries: the tangent stiffness,
        # the only part of the Jacobian that changes between iterations, is summed into these
        # alone; the coupling and flow part is summed once per step.
        self._uu_slot = d.pattern.slot.reshape(-1, 15, 15)[:, :12, :12].ravel()
        from .. import linalg
        n = problem.constraints(1.0).n_reduced
        self.memory_estimate = linalg.estimate_factor_bytes(n, self.backend)
        linalg.check_fits(n, self.backend, needed=self.memory_estimate,
                          what="one factorization of the Newton matrix")

    # ------------------------------------------------------------ pieces
    def _permeability(self) -> tuple[np.ndarray, np.ndarray]:
        """Per-element (kx, ky) / gamma_w from the committed state (element mean)."""
        pb = self.problem
        kx = pb._per_element("permeability_x").astype(float)
        ky = pb._per_element("permeability_y").astype(float)
        for r, mat in self.materials.items():
            if hasattr(mat, "permeability") and callable(mat.permeability):
                ex, ey = mat.permeability(self.states[r])
                kx[self.idx[r]] = ex.reshape(-1, self.nq).mean(axis=1)
                ky[self.idx[r]] = ey.reshape(-1, self.nq).mean(axis=1)
        return kx / pb.gamma_w, ky / pb.gamma_w

    def _update(self, d_eps: np.ndarray):
        """Stress (ne, nq, 4), tangent (ne, nq, 4, 4) and trial states for a strain increment."""
        ne = self.problem.mesh.n_elements
        stress = np.zeros((ne, self.nq, 4))
        tangent = np.zeros((ne, self.nq, 4, 4))
        trial = {}
        for r, mat in self.materials.items():
            e = self.idx[r]
            de = d_eps[e].reshape(-1, 4)
            st = self.states[r]
            if isinstance(st, np.ndarray):                     # linear elastic region
                inc, D, _ = mat.update(None, de)
                s_new = st + inc
                tangent[e] = D if D.ndim == 2 else D.reshape(len(e), self.nq, 4, 4)
                trial[r] = s_new
            else:
                s_new, T, trial[r] = mat.update(st, de)
                tangent[e] = T.reshape(len(e), self.nq, 4, 4)
            stress[e] = s_new.reshape(len(e), self.nq, 4)
        return stress, tangent, trial

    # -------------------------------------------------------------- step
    def step(self, state: State, t_new: float) -> State:
        """Advance to t_new, cutting the step when Newton does not converge."""
        f_new, plate_new = self.problem.external_force(t_new, placed=False)
        return self._advance(state, t_new, f_new, plate_new, depth=0)

    def _advance(self, state, t_new, f_new, plate_new, depth):
        try:
            return self._newton(state, t_new, f_new, plate_new)
        except SolverError as exc:
            if depth >= self.max_cuts:
                raise SolverError(f"the step to t = {t_new:.6g} days did not converge after "
                                  f"{self.max_cuts} step cuts ({exc}); the results of all "
                                  "finished steps are kept") from None
        # Cut: half the time and half the load change, twice.
        t_mid = 0.5 * (state.t + t_new)
        f_mid = 0.5 * (self.f_prev + f_new)
        p_mid = 0.5 * (self.plate_prev + plate_new)
        mid = self._advance(state, t_mid, f_mid, p_mid, depth + 1)
        return self._advance(mid, t_new, f_new, plate_new, depth + 1)

    def _newton(self, state: State, t_new: float, f_ext: np.ndarray, plate: np.ndarray):
        from .. import linalg
        pb, d = self.problem, self.problem.disc
        dt = t_new - state.t
        c = pb.constraints(dt)
        on = pb.active.astype(float)
        kx, ky = self._permeability()
        He = d.flow_blocks(kx * on, ky * on)
        x = state.x.copy()
        fixed = c.red < 0
        x[fixed] = c.x_fixed[fixed]
        u_n, p_n = state.u, state.p
        n_u = d.n_u
        SMe, Qe = self._SMe * on[:, None, None], self._Qe * on[:, None, None]
        fixed_part = None                           # coupling and flow part of the Jacobian
        history = []
        for it in range(self.max_iter + 1):
            u, p = x[:n_u], x[n_u:]
            d_eps = d.strain(u - u_n) * on[:, None, None]   # elements not yet placed: none
            stress, tangent, trial = self._update(d_eps)
            F_int = d.stress_to_nodal_forces(stress - self.stress0, active=pb.active)
            pe = p[d.p_dofs - n_u]                                  # (ne, 3)
            Qp = np.bincount(d.u_dofs.ravel(), weights=np.einsum("eij,ej->ei", Qe, pe).ravel(),
                             minlength=n_u)
            due = (u - u_n)[d.u_dofs]
            pde = (p - p_n)[d.p_dofs - n_u]
            QTdu = np.einsum("eij,ei->ej", Qe, due)
            SMdp = np.einsum("eij,ej->ei", SMe, pde)
            Hp = dt * np.einsum("eij,ej->ei", He, pe)
            pd = (d.p_dofs - n_u).ravel()
            R = np.zeros(d.n_dofs)
            R[:n_u] = f_ext[:n_u] - F_int + Qp
            if pb.follows_submergence:    # fill sinking below the water level
                R[:n_u] += pb.submergence_force(t_new, u)
            R[n_u:] = np.bincount(pd, weights=(QTdu + SMdp + Hp).ravel(), minlength=d.n_p)
            r = c.restrict(R)
            # Plate unknowns: the plate force minus what the tied nodes already carry.
            r[c.plate_dof] += plate
            free = ~fixed
            ru = np.abs(r[c.red[:n_u][free[:n_u]]]).max(initial=0.0)
            rp = np.abs(r[c.red[n_u:][free[n_u:]]]).max(initial=0.0) if free[n_u:].any() else 0.0
            th = pb.plate_theta >= 0
            if th.any():      # moment residuals of tilting plates, as forces at their edges
                ru = max(ru, (np.abs(r[c.plate_dof[pb.plate_theta[th]]])
                              / pb.plate_lever[th]).max())
            ref_u = max(np.abs(f_ext[:n_u]).max(initial=0.0), np.abs(F_int).max(initial=0.0),
                        np.abs(Qp).max(initial=0.0), np.abs(plate).max(initial=0.0), 1e-12)
            # Scale of the flow terms from their magnitudes (they cancel at the solution).
            ref_p = max(np.einsum("eij,ei->ej", np.abs(Qe), np.abs(due)).max(initial=0.0),
                        np.abs(SMdp).max(initial=0.0), np.abs(Hp).max(initial=0.0), 1e-30)
            history.append(max(ru / ref_u, rp / ref_p if ref_p > 1e-30 else rp))
            if ru <= self.tol * ref_u and (rp <= self.tol * ref_p or rp < 1e-14):
                self.records.append(StepRecord(t_new, it, history))
                for reg, st in trial.items():
                    self.states[reg] = st
                self.stress = stress
                self.f_prev, self.plate_prev = f_ext, plate
                return State(t_new, x, n_u)
            if it == self.max_iter or not np.isfinite(history[-1]):
                raise SolverError(f"Newton did not converge in {self.max_iter} iterations "
                                  f"(relative residual {history[-1]:.2e})")
            if fixed_part is None:
                blocks = np.zeros((pb.mesh.n_elements, 15, 15))
                blocks[:, :12, 12:] = -Qe
                blocks[:, 12:, :12] = -Qe.transpose(0, 2, 1)
                blocks[:, 12:, 12:] = -(SMe + dt * He)
                fixed_part = d.pattern.assemble(blocks).data
                del blocks
            # Each CSR entry gets contributions from one block kind only, so the sum of the
            # two parts equals assembling the whole element matrices at once.
            Ke = d.stiffness_blocks(tangent * on[:, None, None, None])
            data = np.bincount(self._uu_slot, weights=Ke.ravel(), minlength=fixed_part.size)
            data += fixed_part
            order = pb.ordering(dt) if self.backend == "superlu-nd" else None
            fac = linalg.factor(c.reduce(data), backend=self.backend, ordering=order,
                                check=False, symmetric=False, copy=False, keep_plan=True)
            self.factor_seconds += fac.factor_seconds
            self.n_factorizations += 1
            dy = fac.solve(r)
            fac.free()                              # before the next one is made
            del fac
            x += c.apply(dy)

    # --------------------------------------------------------- checkpoint
    def state_arrays(self) -> dict[str, np.ndarray]:
        out = {"newton_stress": self.stress, "newton_f_prev": self.f_prev,
               "newton_plate_prev": self.plate_prev}
        for r, st in self.states.items():
            if isinstance(st, np.ndarray):
                out[f"newton_{r}_stress"] = st
            else:
                out[f"newton_{r}_stress"] = st.stress
                out[f"newton_{r}_pc"] = st.pc
                out[f"newton_{r}_e"] = st.void_ratio
                out[f"newton_{r}_eref"] = st.void_ratio_ref
        return out

    def restore(self, arrays: dict) -> None:
        self.stress = arrays["newton_stress"]
        self.f_prev = arrays["newton_f_prev"]
        self.plate_prev = arrays["newton_plate_prev"]
        for r, st in list(self.states.items()):
            if isinstance(st, np.ndarray):
                self.states[r] = arrays[f"newton_{r}_stress"]
            else:
                self.states[r] = type(st)(arrays[f"newton_{r}_stress"], arrays[f"newton_{r}_pc"],
                                          arrays[f"newton_{r}_e"], arrays[f"newton_{r}_eref"])

    def iteration_counts(self) -> np.ndarray:
        return np.array([r.iterations for r in self.records])
