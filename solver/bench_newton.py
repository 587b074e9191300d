"""``poroplane bench --material cam-clay``: the benchmark section with its soft clay layer in
Modified Cam Clay, stepped by Newton, against the linear step of the same section.

Not a model of any site: lightly overconsolidated clay (OCR 1.3) under the strip load of the
linear benchmark, ramped on over the first half of the steps, so that the clay yields and the
tangent changes from iteration to iteration. Prints figures; asserts nothing.

Figures: Newton iterations per step (median, largest), the time of one iteration (residual,
tangent, factorization and solve; the total over the iterations) against the factorization
alone, one linear step (right-hand side and solve with a kept factorization) and the assembly
of the linear step's matrix; ``iteration_aim_ratio`` = iteration / (factorization + 1.5 x
linear assembly), the aim being at most 1.
"""

from __future__ import annotations

import time

import numpy as np

from .bench import benchmark_biot, benchmark_problem, check_backend, peak_memory_mb
from .fem.biot import State, StepSolver
from .fem.newton import NewtonStepSolver
from .materials.camclay import CamClayMaterial
from .materials.elastic import GAMMA_W

#: Invented soft clay for the benchmark (typical magnitudes; common practice).
CLAY = dict(lambda_=0.25, kappa=0.05, e0=1.6, M=1.0, poisson_ratio=0.25,
            permeability_x=1e-4, permeability_y=5e-5, unit_weight=17.0, name="soft clay")
OCR = 1.3
#: Submerged unit weight of every layer for the geostatic stress, kN/m3 (water table at the
#: surface; one value keeps the benchmark simple).
SUBMERGED_UNIT_WEIGHT = 17.0 - GAMMA_W


def newton_problem(n_elements: int, steps: int):
    """(mesh, BiotProblem, materials, states, stress0, ramp_days) of the benchmark."""
    mesh, mats = benchmark_problem(n_elements)
    ramp_days = max(1.0, steps / 2)

    def ramp(t, ramp_days=ramp_days):
        return min(max(t / ramp_days, 0.0), 1.0)
    pb = benchmark_biot(mesh, mats, load_history=ramp)
    d = pb.disc
    ne, nq = d.detJ.shape
    clay = CamClayMaterial(**CLAY)
    sv = SUBMERGED_UNIT_WEIGHT * np.maximum(-d.xq[..., 1], 0.0)       # sigma'_v, y up from 0
    materials, states = {}, {}
    stress0 = np.zeros((ne, nq, 4))
    for r in mesh.region_names:
        e = np.flatnonzero(mesh.region == mesh.region_id(r))
        if r == "soft clay":
            k0 = clay.k0_normally_consolidated()
        else:
            nu = mats[r].poisson_ratio
            k0 = nu / (1 - nu)                                      # elastic, laterally confined
        s0 = np.zeros((len(e) * nq, 4))
        s0[:, 0] = s0[:, 2] = -k0 * sv[e].ravel()
        s0[:, 1] = -sv[e].ravel()
        if r == "soft clay":
            state = clay.initial_state(s0, clay.preconsolidation_from_ocr(s0, OCR),
                                       min_mean_stress=1.0)
            s0 = state.stress
            materials[r], states[r] = clay, state
        else:
            materials[r], states[r] = mats[r], s0.copy()
        stress0[e] = s0.reshape(len(e), nq, 4)
    return mesh, pb, materials, states, stress0, ramp_days


def run_newton_benchmark(n_elements: int = 20_000, steps: int = 10,
                         backend: str | None = None) -> dict:
    check_backend(backend)
    t0 = time.perf_counter()
    mesh, pb, materials, states, stress0, ramp_days = newton_problem(n_elements, steps)
    mesh_s = time.perf_counter() - t0

    solver = NewtonStepSolver(pb, materials, states, stress0, backend=backend)
    state = State(0.0, np.zeros(pb.disc.n_dofs), pb.disc.n_u)
    t_run = time.perf_counter()
    for t in np.arange(1, steps + 1) * 1.0:
        state = solver.step(state, float(t))
    newton_s = time.perf_counter() - t_run
    its = solver.iteration_counts()
    n_it = max(solver.n_factorizations, 1)

    # The linear step of the same section: assembly of its matrix, and one step (right-hand
    # side, solve, expansion) with its factorization kept.
    assembly_s = np.inf
    for _ in range(3):
        a0 = time.perf_counter()
        pb._assemble()
        assembly_s = min(assembly_s, time.perf_counter() - a0)
    linear = StepSolver(pb, backend=backend)
    st = State(0.0, np.zeros(pb.disc.n_dofs), pb.disc.n_u)
    st = linear.step(st, 1.0)                            # dt = 1 day: factored here
    steps_s = []
    for t in (2.0, 3.0, 4.0):
        s0 = time.perf_counter()
        st = linear.step(st, t)
        steps_s.append(time.perf_counter() - s0)
    linear_step_s = float(np.median(steps_s))
    linear.release()

    iteration_s = newton_s / n_it
    factor_each = solver.factor_seconds / n_it
    return {
        "material": "modified cam clay (soft clay layer)",
        "elements": mesh.n_elements,
        "dofs": pb.disc.n_dofs,
        "backend": solver.backend,
        "mesh_s": mesh_s,
        "steps": steps,
        "load_ramp_days": ramp_days,
        "substeps": int(its.size),
        "newton_iterations_median": float(np.median(its)) if its.size else 0.0,
        "newton_iterations_max": int(its.max()) if its.size else 0,
        "newton_iterations": solver.n_factorizations,
        "newton_s": newton_s,
        "iteration_s": iteration_s,
        "factor_s_per_iteration": factor_each,
        "linear_step_s": linear_step_s,
        "linear_assembly_s": assembly_s,
        "iteration_over_linear_step": iteration_s / linear_step_s,
        "iteration_aim_ratio": iteration_s / (factor_each + 1.5 * assembly_s),
        "peak_memory_mb": peak_memory_mb(),
    }
