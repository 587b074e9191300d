"""The benchmark behind ``poroplane bench``: a layered strip-load section, linear consolidation.

Prints figures; asserts nothing. ``overhead_ratio`` = total / (factorizations + steps x one
solve): what assembly, boundary handling and output add to the linear algebra.

The run comes first and its figures are handed out as soon as it ends (the CLI prints them, or
writes them as one JSON line, at once), then its factorizations are released, and only then are
other backends measured on the same matrix, each only where its estimated memory fits in what
the machine has free (:meth:`LinearBenchmark.compare`), so a large case cannot lose the figures
of its run to a later comparison.
"""

from __future__ import annotations

import resource
import tempfile
import time
from pathlib import Path
from typing import Iterator

import numpy as np

from . import linalg
from .errors import PoroplaneError
from .fem.biot import BiotProblem, Fixity, State, StepSolver, Traction
from .geometry import strip_load_section
from .linalg import memory
from .materials.elastic import ElasticMaterial

WIDTH, DEPTH, LOAD_HALF_WIDTH = 60.0, 30.0, 5.0
LAYERS = [("crust", 2.0), ("soft clay", 10.0), ("sand", 18.0)]
LOAD = 100.0          # kPa, vertical, on the loaded edge


def benchmark_mesh(n_elements: int):
    """The benchmark section with about ``n_elements`` triangles."""
    h = float(np.sqrt(4 * WIDTH * DEPTH / (np.sqrt(3) * n_elements)))
    return strip_load_section(WIDTH, DEPTH, LOAD_HALF_WIDTH, size_near=h, size_far=h,
                              layers=LAYERS)


def benchmark_materials() -> dict[str, ElasticMaterial]:
    return {"crust": ElasticMaterial(8000.0, 0.3, permeability_x=1e-3, name="crust"),
            "soft clay": ElasticMaterial(2000.0, 0.3, permeability_x=1e-4,
                                         permeability_y=5e-5, name="soft clay"),
            "sand": ElasticMaterial(40000.0, 0.3, permeability_x=1.0, name="sand")}


def benchmark_problem(n_elements: int):
    """(mesh, materials) of the benchmark section with about ``n_elements`` triangles."""
    return benchmark_mesh(n_elements), benchmark_materials()


def benchmark_biot(mesh, mats, load_history=None) -> BiotProblem:
    """The consolidation problem of the benchmark: base fixed, sides on rollers, top drained,
    a strip load on ``load``."""
    traction = (Traction("load", vertical=LOAD) if load_history is None
                else Traction("load", vertical=LOAD, history=load_history))
    return BiotProblem(mesh, mats,
                       fixities=[Fixity("bottom", x=0.0, y=0.0), Fixity("left", x=0.0),
                                 Fixity("right", x=0.0)],
                       drained=["top"], tractions=[traction])


def peak_memory_mb() -> float:
    """Peak resident memory of this process so far, MB (getrusage: KB on Linux)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024


def _best(f, repeats=3):
    best = np.inf
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = f()
        best = min(best, time.perf_counter() - t0)
    return best, out


def check_backend(name: str | None) -> None:
    """Raise the InputError of :func:`linalg.factor` (with how to install) for a backend that
    is not installed, before any meshing."""
    if name not in linalg.available_backends() and name is not None:
        linalg.factor(None, backend=name)


def assembly_figures(mesh, mats, reference: bool = True) -> dict:
    """Numeric assembly of the P2 elasticity stiffness into its prebuilt pattern (best of 3),
    and, when scikit-fem (a general-purpose vectorised assembler) is installed, the same
    stiffness assembled by it on the same mesh, for the ratio."""
    from .fem.assembly import Discretisation
    d = Discretisation(mesh)
    D = np.broadcast_to(mats["soft clay"].elasticity_matrix(), (mesh.n_elements, 4, 4))
    pattern_s, _ = _best(lambda: d.u_pattern, 1)
    assembly_s, K = _best(lambda: d.u_pattern.assemble(d.stiffness_blocks(D)))
    out = {"pattern_s": pattern_s, "assembly_s": assembly_s,
           "assembly_elements_per_s": mesh.n_elements / assembly_s}
    ref = _reference_assembly(mesh, mats["soft clay"]) if reference else None
    if ref is None:
        out["reference_assembler"] = "none installed (pip install scikit-fem to compare)"
    else:
        name, ref_s, K_ref = ref
        # Same operator, assembled independently: the traces agree to rounding.
        agree = abs(K_ref.diagonal().sum() / K.diagonal().sum() - 1.0)
        out.update(reference_assembler=name, reference_assembly_s=ref_s,
                   assembly_speedup=ref_s / assembly_s, reference_trace_difference=agree)
    return out


def _reference_assembly(mesh, mat):
    """scikit-fem's vector P2 elasticity stiffness on the same triangles (best of 3), or None."""
    try:
        import skfem
        from skfem.models.elasticity import lame_parameters, linear_elasticity
    except ImportError:
        return None
    m = skfem.MeshTri(np.ascontiguousarray(mesh.points.T),
                      np.ascontiguousarray(mesh.triangles[:, :3].T))
    basis = skfem.Basis(m, skfem.ElementVector(skfem.ElementTriP2()), intorder=2)
    lam, mu = lame_parameters(mat.youngs_modulus, mat.poisson_ratio)
    form = linear_elasticity(lam, mu)
    seconds, K = _best(lambda: form.assemble(basis))
    return f"scikit-fem {skfem.__version__}", seconds, K


class LinearBenchmark:
    """The linear consolidation run of the benchmark, then the backends compared.

    Parameters
    ----------
    n_elements : target number of triangles.
    steps : time steps (the first at t = 0, undrained; then one day each).
    backend : linear solver of the run (default: the fastest installed for the size).
    """

    def __init__(self, n_elements: int = 20_000, steps: int = 100, backend: str | None = None):
        check_backend(backend)          # also loads the optional backends once, untimed
        self.n_elements, self.steps, self.backend = n_elements, steps, backend
        self.mesh = self.mats = self.problem = self.solver = None
        self.mesh_s = None

    def make_mesh(self) -> float:
        """Mesh the section; returns the seconds taken (also ``mesh_s``)."""
        t0 = time.perf_counter()
        self.mesh, self.mats = benchmark_problem(self.n_elements)
        self.mesh_s = time.perf_counter() - t0
        return self.mesh_s

    def run(self, reference: bool = True) -> dict:
        """Assembly figures, then the consolidation run timed end to end (after meshing).
        The run's factorizations are released before this returns."""
        if self.mesh is None:
            self.make_mesh()
        mesh = self.mesh
        out = {"elements": mesh.n_elements, "mesh_s": self.mesh_s}
        out.update(assembly_figures(mesh, self.mats, reference=reference))
        t_run = time.perf_counter()
        problem = self.problem = benchmark_biot(mesh, self.mats)
        setup_s = time.perf_counter() - t_run
        solver = self.solver = StepSolver(problem, backend=self.backend)
        times = np.concatenate([[0.0], np.arange(1, self.steps) * 1.0])
        with tempfile.TemporaryDirectory() as tmp:
            import h5py
            with h5py.File(Path(tmp) / "bench.h5", "w") as h5:
                out_u = h5.create_dataset("u", (len(times), problem.disc.n_u), "f8")
                out_p = h5.create_dataset("p", (len(times), problem.disc.n_p), "f8")
                state = State(0.0, np.zeros(problem.disc.n_dofs), problem.disc.n_u)
                for i, t in enumerate(times):
                    state = solver.step(state, float(t))
                    out_u[i] = state.u
                    out_p[i] = state.p
                    h5.flush()
        total_s = time.perf_counter() - t_run
        solve_s = float(np.median(solver.solve_seconds))
        self.fill = solver._fill
        solver.release()
        out.update({
            "dofs": problem.disc.n_dofs,
            "unknowns_solved": problem.constraints(1.0).n_reduced,
            "backend": solver.backend,
            "setup_s": setup_s,
            "factorizations": solver.n_factorizations,
            "factor_s": solver.factor_seconds,
            "solve_s": solve_s,
            "steps": len(times),
            "total_s": total_s,
            "overhead_ratio": total_s / (solver.factor_seconds + len(times) * solve_s),
            "factor_values": self.fill,
            "estimated_factor_gb": solver.memory_estimate / 1e9,
            "peak_memory_mb": peak_memory_mb(),
        })
        return out

    def compare(self, backends: list[str] | None = None, repeats: int = 1) -> Iterator[dict]:
        """Factor the run's consolidating matrix (dt = 1 day) with each backend that fits,
        yielding one row per backend as it is measured (or skipped, with the reason)."""
        names = [b for b in linalg.available_backends() if b != self.solver.backend] \
            if backends is None else list(backends)
        A = self.problem.matrix(1.0)
        n = A.shape[0]
        order = self.problem.ordering(1.0)
        for name in names:
            row = {"backend": name}
            try:
                need = self._estimate(name, A)
            except PoroplaneError as exc:                   # PARDISO's analysis failed
                yield {**row, "status": "skipped", "reason": str(exc)}
                continue
            free = memory.available_bytes()
            row["estimated_gb"] = need / 1e9
            if need > 0.9 * free:
                yield {**row, "status": "skipped",
                       "reason": f"needs about {memory.gb(need)}, {memory.gb(free)} free"}
                continue
            measured = linalg.measure_backends(A, repeats=repeats, ordering=order,
                                               backends=[name])[0]
            measured.pop("ordering_s", None)
            held = measured.pop("held_bytes", 0)
            yield {**row, "status": "measured", **measured, "held_mb": max(held, 0) / 1e6,
                   "unknowns": n}

    def _estimate(self, name: str, A) -> float:
        n = A.shape[0]
        if name == "pardiso":
            from .linalg.pardiso import symbolic_bytes
            return symbolic_bytes(A)
        if name == self.solver.backend and self.fill:
            return memory.estimate_factor_bytes(n, name, fill=self.fill)
        if name == "superlu" and self.solver.backend == "superlu-nd" and self.fill:
            # COLAMD's fill against nested dissection's, measured (see memory.py)
            return memory.estimate_factor_bytes(
                n, name, fill=self.fill * memory.estimate_fill(n, "superlu")
                / memory.estimate_fill(n, "superlu-nd"))
        return memory.estimate_factor_bytes(n, name)


def run_benchmark(n_elements: int = 20_000, steps: int = 100,
                  backend: str | None = None, backends: list[str] | None = None) -> dict:
    """The run's figures and, under ``"backends"``, the comparison rows (scripting use; the CLI
    hands out the run's figures before comparing)."""
    bench = LinearBenchmark(n_elements, steps, backend)
    out = bench.run()
    out["backends"] = list(bench.compare(backends))
    return out


def parse_backends(text: str | None) -> list[str] | None:
    """``--backends``: None or "all" (every installed backend but the run's), "none", or a
    comma-separated list of names, each checked (an uninstalled one says how to install it)."""
    if text is None or text.strip().lower() == "all":
        return None
    if text.strip().lower() == "none":
        return []
    names = [t.strip() for t in text.split(",") if t.strip()]
    for name in names:
        check_backend(name)
    return names


def format_figures(figures: dict) -> list[str]:
    """One line per figure, name and value, for the terminal."""
    return [f"{k:28s} {v:.4g}" if isinstance(v, float) else f"{k:28s} {v}"
            for k, v in figures.items() if k != "backends"]


def format_comparison(row: dict) -> str:
    """One line of the backend comparison."""
    if row["status"] != "measured":
        return f"  {row['backend']:12s} skipped: {row['reason']}"
    return (f"  {row['backend']:12s} factor {row['factor_s']:8.3f} s   solve "
            f"{row['solve_s']:.4f} s   holds {row['held_mb']:8.0f} MB (estimated "
            f"{1e3 * row['estimated_gb']:.0f} MB peak)   residual {row['residual']:.1e}")
