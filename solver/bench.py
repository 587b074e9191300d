"""The benchmark behind ``poroplane bench``: a layered strip-load section, linear consolidation.

Prints figures; asserts nothing. ``overhead_ratio`` = total / (factorizations + steps x one
solve): what assembly, boundary handling and output add to the linear algebra.
"""

from __future__ import annotations

import resource
import tempfile
import time
from pathlib import Path

import numpy as np

from . import linalg
from .fem.biot import BiotProblem, Fixity, State, StepSolver, Traction
from .geometry import strip_load_section
from .materials.elastic import ElasticMaterial

WIDTH, DEPTH, LOAD_HALF_WIDTH = 60.0, 30.0, 5.0
LAYERS = [("crust", 2.0), ("soft clay", 10.0), ("sand", 18.0)]


def benchmark_problem(n_elements: int) -> BiotProblem:
    """The benchmark section with about ``n_elements`` triangles."""
    h = float(np.sqrt(4 * WIDTH * DEPTH / (np.sqrt(3) * n_elements)))
    mesh = strip_load_section(WIDTH, DEPTH, LOAD_HALF_WIDTH, size_near=h, size_far=h,
                              layers=LAYERS)
    mats = {"crust": ElasticMaterial(8000.0, 0.3, permeability_x=1e-3, name="crust"),
            "soft clay": ElasticMaterial(2000.0, 0.3, permeability_x=1e-4,
                                         permeability_y=5e-5, name="soft clay"),
            "sand": ElasticMaterial(40000.0, 0.3, permeability_x=1.0, name="sand")}
    return mesh, mats


def _best(f, repeats=3):
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = f()
        best = min(best, time.perf_counter() - t0)
    return best, out


def run_benchmark(n_elements: int = 20_000, steps: int = 100,
                  backend: str | None = None) -> dict:
    if backend is not None and backend not in linalg.available_backends():
        linalg.factor(None, backend=backend)  # raises the clear message
    t0 = time.perf_counter()
    mesh, mats = benchmark_problem(n_elements)
    mesh_s = time.perf_counter() - t0

    # P2 elasticity stiffness alone: element blocks plus the sum into CSR.
    from .fem.assembly import Discretisation
    d = Discretisation(mesh)
    D = np.broadcast_to(mats["soft clay"].elasticity_matrix(), (mesh.n_elements, 4, 4))
    pattern_s, _ = _best(lambda: d.u_pattern, 1)
    assembly_s, K = _best(lambda: d.u_pattern.assemble(d.stiffness_blocks(D)))

    # The consolidation run, timed end to end after meshing.
    t_run = time.perf_counter()
    problem = BiotProblem(mesh, mats,
                          fixities=[Fixity("bottom", x=0.0, y=0.0), Fixity("left", x=0.0),
                                    Fixity("right", x=0.0)],
                          drained=["top"], tractions=[Traction("load", vertical=100.0)])
    setup_s = time.perf_counter() - t_run
    solver = StepSolver(problem, backend=backend)
    backend = solver.backend
    times = np.concatenate([[0.0], np.arange(1, steps) * 1.0])
    solve_times = []
    with tempfile.TemporaryDirectory() as tmp:
        import h5py
        with h5py.File(Path(tmp) / "bench.h5", "w") as h5:
            out_u = h5.create_dataset("u", (len(times), problem.disc.n_u), "f8")
            out_p = h5.create_dataset("p", (len(times), problem.disc.n_p), "f8")
            state = State(0.0, np.zeros(problem.disc.n_dofs), problem.disc.n_u)
            for i, t in enumerate(times):
                fac = solver.factor_for(t - state.t)
                b = problem.right_hand_side(state.x, t, t - state.t)
                s0 = time.perf_counter()
                y = fac.solve(b)
                solve_times.append(time.perf_counter() - s0)
                state = State(t, problem.expand(y, t - state.t), problem.disc.n_u)
                out_u[i] = state.u
                out_p[i] = state.p
                h5.flush()
    total_s = time.perf_counter() - t_run
    solve_s = float(np.median(solve_times))
    A = problem.matrix(1.0)
    backends = linalg.measure_backends(A, repeats=1)
    return {
        "elements": mesh.n_elements,
        "dofs": problem.disc.n_dofs,
        "backend": backend,
        "mesh_s": mesh_s,
        "pattern_s": pattern_s,
        "assembly_s": assembly_s,
        "assembly_elements_per_s": mesh.n_elements / assembly_s,
        "setup_s": setup_s,
        "factorizations": solver.n_factorizations,
        "factor_s": solver.factor_seconds,
        "solve_s": solve_s,
        "steps": len(times),
        "total_s": total_s,
        "overhead_ratio": total_s / (solver.factor_seconds + len(times) * solve_s),
        "peak_memory_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
        "backends": backends,
    }
