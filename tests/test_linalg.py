"""Sparse direct solves of the Biot step matrix (solver/linalg/).

The matrices are small synthetic P2/P1 plane-strain Biot steps (``synthetic_biot_matrix``), with
random moduli and permeabilities per element and a seeded random mesh jitter; the reference is
``scipy.sparse.linalg.spsolve`` (SuperLU with partial pivoting).
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from solver import linalg
from solver.errors import InputError, SolverError
from solver.linalg import Ordering, available_backends, factor, synthetic_biot_matrix
from solver.linalg import pardiso, superlu

BACKENDS = available_backends()


def rel_error(x, ref):
    return np.abs(x - ref).max() / np.abs(ref).max()


def rel_residual(A, x, b):
    return np.linalg.norm(A @ x - b) / np.linalg.norm(b)


@pytest.fixture(scope="module")
def drained():
    """A consolidation step with dt = 1 day: pressure block -(S M + dt H) negative definite."""
    return synthetic_biot_matrix(8, 7, dt=1.0, storage=1e-6, seed=1)


@pytest.fixture(scope="module")
def undrained():
    """The undrained instant: dt = 0, S = 0, the pressure block stored but exactly zero."""
    return synthetic_biot_matrix(8, 7, dt=0.0, storage=0.0, seed=2)


def pressure_first(system, ordering):
    """An adversarial order: every pressure dof before every displacement dof."""
    is_p = ordering.perm >= system.n_u
    return Ordering(ordering.perm[np.argsort(~is_p, kind="stable")])


# ---- the synthetic matrix has the structure the solver relies on ------------------------------

def test_synthetic_step_matrix_is_symmetric_quasi_definite(drained, undrained):
    for s in (drained, undrained):
        A = s.A.toarray()
        assert np.allclose(A, A.T, rtol=0, atol=1e-9 * np.abs(A).max())
        assert np.linalg.eigvalsh(A[:s.n_u, :s.n_u]).min() > 0      # K SPD after the supports
    n_u = drained.n_u
    assert np.linalg.eigvalsh(drained.A.toarray()[n_u:, n_u:]).max() < 0   # -(S M + dt H)
    assert np.count_nonzero(undrained.A[undrained.n_u:, undrained.n_u:].toarray()) == 0


# ---- orderings -------------------------------------------------------------------------------

def test_ordering_from_groups_is_a_permutation_with_u_before_p_in_each_node(drained):
    o = Ordering.from_groups(drained.group_of_dof, drained.node_adjacency)
    n = drained.A.shape[0]
    assert np.array_equal(np.sort(o.perm), np.arange(n))
    assert np.array_equal(o.perm[o.iperm], np.arange(n))
    group = drained.group_of_dof[o.perm]
    # the dofs of one node are consecutive and ascending (so u comes before p)
    starts = np.flatnonzero(np.r_[True, group[1:] != group[:-1]])
    assert starts.size == np.unique(group).size
    same = group[1:] == group[:-1]
    assert np.all(np.diff(o.perm)[same] > 0)


def test_ordering_from_matrix_is_a_permutation(undrained):
    o = Ordering.from_matrix(undrained.A)
    assert np.array_equal(np.sort(o.perm), np.arange(undrained.A.shape[0]))


def test_node_ordering_fills_as_little_as_the_dof_ordering_and_far_less_than_natural(drained):
    A = drained.A
    og = Ordering.from_groups(drained.group_of_dof, drained.node_adjacency)
    om = Ordering.from_matrix(A)
    nnz_g = factor(A, "superlu-nd", og).factor_nnz
    nnz_m = factor(A, "superlu-nd", om).factor_nnz
    nnz_natural = factor(A, "superlu-nd", Ordering(np.arange(A.shape[0]))).factor_nnz
    assert nnz_g < 1.3 * nnz_m
    assert nnz_g < 0.7 * nnz_natural


def test_ordering_rejects_bad_groups_and_bad_permutations(drained):
    with pytest.raises(InputError, match="group_adjacency has"):
        Ordering.from_groups(drained.group_of_dof + 10**6, drained.node_adjacency)
    with pytest.raises(InputError, match="not a permutation"):
        Ordering(np.array([0, 0, 1]))
    with pytest.raises(InputError, match="ordering has 3 dofs"):
        factor(drained.A, "superlu-nd", Ordering(np.arange(3)))


# ---- every backend solves both kinds of step -------------------------------------------------

@pytest.mark.parametrize("backend", BACKENDS)
@pytest.mark.parametrize("case", ["drained", "undrained"])
@pytest.mark.parametrize("with_groups", [True, False])
def test_backend_solves_consolidation_step_like_general_purpose_solver(backend, case,
                                                                       with_groups, request):
    s = request.getfixturevalue(case)
    b = np.random.default_rng(5).standard_normal(s.A.shape[0])
    ref = spla.spsolve(s.A.tocsc(), b)
    ordering = Ordering.from_groups(s.group_of_dof, s.node_adjacency) if with_groups else None
    f = factor(s.A, backend, ordering)
    x = f.solve(b)
    assert f.backend == backend
    assert f.factor_seconds > 0
    assert not f.fell_back                  # the guarded no-pivot order needs no pivoting
    assert rel_error(x, ref) < 1e-8
    assert rel_residual(s.A, x, b) < 1e-9
    assert f.backward_error < linalg.BACKWARD_ERROR_TOL


@pytest.mark.parametrize("backend", BACKENDS)
def test_undrained_saddle_point_without_stored_pressure_block(backend):
    s = synthetic_biot_matrix(6, dt=0.0, seed=3, keep_pattern=False)
    assert s.A[s.n_u:, s.n_u:].nnz == 0                     # not even explicit zeros
    b = np.random.default_rng(6).standard_normal(s.A.shape[0])
    x = factor(s.A, backend).solve(b)
    assert rel_error(x, spla.spsolve(s.A.tocsc(), b)) < 1e-8


@pytest.mark.parametrize("backend", BACKENDS)
def test_multiple_right_hand_sides_match_one_at_a_time(backend, drained):
    B = np.random.default_rng(7).standard_normal((drained.A.shape[0], 3))
    f = factor(drained.A, backend)
    X = f.solve(B)
    assert X.shape == B.shape
    for k in range(3):
        assert rel_error(X[:, k], f.solve(B[:, k])) < 1e-12
        assert rel_residual(drained.A, X[:, k], B[:, k]) < 1e-9


@pytest.mark.parametrize("backend", BACKENDS)
def test_factor_is_reused_for_many_steps(backend, drained):
    f = factor(drained.A, backend)
    rng = np.random.default_rng(8)
    for _ in range(3):
        b = rng.standard_normal(drained.A.shape[0])
        assert rel_residual(drained.A, f.solve(b), b) < 1e-9


# ---- the undrained guard and the fallback ----------------------------------------------------

def test_pressure_first_order_is_reordered_not_pivoted_at_undrained_instant(undrained):
    o = pressure_first(undrained, Ordering.from_groups(undrained.group_of_dof,
                                                       undrained.node_adjacency))
    b = np.random.default_rng(9).standard_normal(undrained.A.shape[0])
    f = factor(undrained.A, "superlu-nd", o)
    x = f.solve(b)
    assert not f.fell_back
    assert rel_error(x, spla.spsolve(undrained.A.tocsc(), b)) < 1e-8


def test_spoiled_no_pivot_factorization_falls_back_to_pivoting(monkeypatch):
    # Without the reordering guard, pressure first with a tiny dt gives pivots ~ dt*H: the
    # backward error check must catch it and refactor with partial pivoting.
    s = synthetic_biot_matrix(8, 7, dt=1e-9, seed=4)
    o = pressure_first(s, Ordering.from_groups(s.group_of_dof, s.node_adjacency))
    monkeypatch.setattr(superlu, "_delay_weak_pivots", lambda A, perm, rowmax: perm)
    b = np.random.default_rng(10).standard_normal(s.A.shape[0])
    f = factor(s.A, "superlu-nd", o)
    assert not f.fell_back
    x = f.solve(b)
    assert f.fell_back
    assert f.backward_error < linalg.BACKWARD_ERROR_TOL
    assert rel_error(x, spla.spsolve(s.A.tocsc(), b)) < 1e-8
    x2 = f.solve(2 * b)                                     # later solves use the new factors
    assert rel_error(x2, 2 * x) < 1e-12


def test_exactly_singular_no_pivot_factorization_falls_back(monkeypatch, undrained):
    real_splu = spla.splu

    def splu(A, permc_spec=None, **kw):
        if permc_spec == "NATURAL":
            raise RuntimeError("Factor is exactly singular")
        return real_splu(A, permc_spec=permc_spec, **kw)

    monkeypatch.setattr(superlu.spla, "splu", splu)
    f = factor(undrained.A, "superlu-nd")
    assert f.fell_back
    b = np.ones(undrained.A.shape[0])
    assert rel_residual(undrained.A, f.solve(b), b) < 1e-9


@pytest.mark.parametrize("backend", BACKENDS)
def test_pressure_dof_with_no_coupling_is_reported_singular(backend, undrained):
    A = undrained.A.tolil()
    k = undrained.A.shape[0] - 1                            # a pressure dof
    A[k, :] = 0.0
    A[:, k] = 0.0
    with pytest.raises(SolverError, match="singular"):
        factor(A.tocsr(), backend).solve(np.ones(A.shape[0]))


@pytest.mark.skipif("pardiso" not in BACKENDS, reason="pypardiso not installed")
def test_pardiso_inertia_is_one_positive_per_displacement_one_negative_per_pressure(undrained):
    # Sylvester's law of inertia for the quasi-definite matrix (Vanderbei 1995)
    f = factor(undrained.A, "pardiso")
    assert f.inertia == (undrained.n_u, undrained.n_p)


# ---- choosing backends and errors ------------------------------------------------------------

def test_backends_listed_and_default_is_available():
    assert {"superlu-nd", "superlu"} <= set(BACKENDS)
    assert linalg.default_backend() in BACKENDS


def test_unknown_backend_is_an_input_error_listing_the_available_ones(drained):
    with pytest.raises(InputError) as info:
        factor(drained.A, "cholmod")
    for name in BACKENDS:
        assert name in str(info.value)


def test_missing_pardiso_is_an_input_error_naming_the_fix(monkeypatch, drained):
    monkeypatch.setattr(pardiso, "_pardiso_entry", lambda: None)
    assert "pardiso" not in available_backends()
    assert linalg.default_backend() == "superlu-nd"
    with pytest.raises(InputError, match="pip install pypardiso"):
        factor(drained.A, "pardiso")


def test_bad_matrix_and_right_hand_side_are_input_errors(drained):
    with pytest.raises(InputError, match="square"):
        factor(np.eye(3))
    with pytest.raises(InputError, match="right-hand side"):
        factor(drained.A).solve(np.ones(5))


def test_measure_backends_reports_every_backend(drained):
    rows = linalg.measure_backends(drained.A, repeats=1)
    assert [r["backend"] for r in rows] == BACKENDS
    for r in rows:
        assert {"backend", "factor_s", "solve_s", "residual"} <= set(r)
        assert r["residual"] < 1e-9


@pytest.mark.parametrize("backend", BACKENDS)
def test_freed_factor_refuses_to_solve(backend, drained):
    f = factor(drained.A, backend)
    f.free()
    f.free()                                                # twice is harmless
    with pytest.raises(SolverError, match="freed"):
        f.solve(np.ones(drained.A.shape[0]))


def test_check_on_every_solve_records_each_backward_error(drained):
    f = factor(drained.A, "superlu-nd")
    f.check_every_solve = True
    rng = np.random.default_rng(11)
    errors = []
    for _ in range(2):
        f.solve(rng.standard_normal(drained.A.shape[0]))
        errors.append(f.backward_error)
    assert errors[0] != errors[1] and max(errors) < linalg.BACKWARD_ERROR_TOL
