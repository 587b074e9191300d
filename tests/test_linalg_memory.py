"""Memory of factorizations: the cache under a budget, the estimate, the refusal up front.

No timing here (speed is measured by ``poroplane bench``). The matrices are the small synthetic
P2/P1 Biot steps of ``synthetic_biot_matrix`` and the benchmark section; the reference solve is
``scipy.sparse.linalg.spsolve`` (SuperLU with partial pivoting).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse.linalg as spla

from solver.bench import benchmark_biot, benchmark_problem
from solver.errors import SolverError, TooLargeError
from solver.fem.biot import State, StepSolver
from solver.linalg import FactorCache, Ordering, factor, memory, synthetic_biot_matrix


@pytest.fixture(scope="module")
def step():
    s = synthetic_biot_matrix(10, 9, dt=1.0, seed=3)
    return s, Ordering.from_groups(s.group_of_dof, s.node_adjacency)


def test_cache_releases_the_useless_first_then_the_least_recently_used(step):
    s, o = step
    facs = {k: factor(s.A, "superlu-nd", o) for k in "abc"}
    one = facs["a"].memory_bytes
    assert one > 0
    cache = FactorCache(budget=3.5 * one)
    for k, f in facs.items():
        cache.put(k, f)
    cache.get("a")                                  # a is now the most recently used
    cache.make_room(one)                            # 3 held + 1 new > 3.5: b (oldest) goes
    assert cache.keys() == ["c", "a"]
    with pytest.raises(SolverError, match="freed"):
        facs["b"].solve(np.ones(s.A.shape[0]))      # released means freed, not just forgotten
    cache.make_room(one, useless=lambda k: k == "a")
    assert cache.keys() == ["c"]
    cache.make_room(3 * one)                        # nothing kept can make room for this
    assert len(cache) == 0 and cache.n_released == 3


def test_step_solver_releases_the_undrained_instant_once_solved():
    mesh, mats = benchmark_problem(300)
    pb = benchmark_biot(mesh, mats)
    solver = StepSolver(pb, backend="superlu-nd")
    state = State(0.0, np.zeros(pb.disc.n_dofs), pb.disc.n_u)
    state = solver.step(state, 0.0)
    assert len(solver.cache) == 0                   # the dt = 0 factorization is gone
    for t in (1.0, 2.0, 3.0):
        state = solver.step(state, t)
    assert solver.cache.keys() == [(pb.version, 1.0)]
    assert solver.n_factorizations == 2             # dt = 1 factored once, reused
    solver.release()
    assert len(solver.cache) == 0


def test_step_solver_refuses_a_problem_larger_than_its_budget_naming_size_and_options():
    mesh, mats = benchmark_problem(300)
    pb = benchmark_biot(mesh, mats)
    n = pb.constraints(1.0).n_reduced
    with pytest.raises(TooLargeError) as info:
        StepSolver(pb, backend="superlu-nd", memory_budget=1e5)
    text = str(info.value)
    assert f"{n:,} unknowns" in text and "superlu-nd" in text
    assert "coarser mesh" in text and "pip install 'poroplane[pardiso]'" in text


def test_refusal_message_gives_sizes_in_gb_and_a_mesh_fraction_that_fits():
    need = memory.estimate_factor_bytes(1_440_000, "superlu-nd")
    with pytest.raises(TooLargeError) as info:
        memory.check_fits(1_440_000, "superlu-nd", budget=need / 2)
    text = str(info.value)
    assert f"{need / 1e9:.1f} GB" in text and f"{need / 2e9:.1f} GB" in text
    # the fraction of elements offered fits the budget by the same size model
    pct = int(text.split("about ")[2].split("%")[0])
    assert memory.estimate_factor_bytes(int(1_440_000 * pct / 100), "superlu-nd") <= need / 2
    memory.check_fits(1000, "superlu-nd", budget=need)      # a small one passes silently


def test_pardiso_refusal_does_not_offer_pardiso():
    with pytest.raises(TooLargeError) as info:
        memory.check_fits(1_000_000, "pardiso", budget=1e6)
    assert "pardiso extra" not in str(info.value)


@pytest.mark.parametrize("nx", [12, 30])
def test_size_model_bounds_the_measured_fill_within_a_margin(nx):
    # The size model is fitted on the benchmark section; on the synthetic square section it
    # must still bound the factor it stands for (the refusal must not let a run be killed),
    # without refusing runs that fit by much more than its margin.
    s = synthetic_biot_matrix(nx, dt=1.0)
    f = factor(s.A, "superlu-nd", Ordering.from_groups(s.group_of_dof, s.node_adjacency))
    ratio = memory.estimate_fill(s.A.shape[0], "superlu-nd") / f.factor_nnz
    assert 1.0 <= ratio <= 1.5 * memory.FILL_MARGIN


def test_kept_permutation_plan_gives_the_same_factors_bit_for_bit(step):
    s, o = step
    b = np.random.default_rng(2).standard_normal(s.A.shape[0])
    direct = factor(s.A, "superlu-nd", o).solve(b)
    for _ in range(2):                              # built once, then reused
        planned = factor(s.A, "superlu-nd", o, keep_plan=True, symmetric=False).solve(b)
        assert np.array_equal(planned, factor(s.A, "superlu-nd", o, symmetric=False).solve(b))
    assert len(o._plans) == 1
    assert np.abs(direct - spla.spsolve(s.A.tocsc(), b)).max() < 1e-8 * np.abs(direct).max()


def test_factor_drops_its_matrix_copy_after_the_checked_solve(step):
    s, o = step
    f = factor(s.A, "superlu-nd", o)
    assert f.A is not None
    f.solve(np.ones(s.A.shape[0]))
    assert f.A is None and f.backward_error is not None
    assert factor(s.A, "superlu-nd", o, check=False).A is None
