"""SciPy SuperLU backends: ``"superlu-nd"`` (nested-dissection order, diagonal pivots, guarded)
and ``"superlu"`` (SuperLU's defaults)."""

from __future__ import annotations

import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .factor import Factor, _splu_default
from .ordering import Ordering

# A dof whose |diagonal| is below this fraction of its row's largest |entry| is "pressure-like"
# (e.g. the zero pressure block at the undrained instant, or dt*H tiny next to Q); an off-diagonal
# coupling above this fraction counts as a usable one for the guard in `_delay_weak_pivots`.
_WEAK_FRACTION = 1e-3

_SUPERLU_NO_PIVOT = dict(permc_spec="NATURAL", diag_pivot_thresh=0.0,
                         options=dict(SymmetricMode=True))


class _SuperLUFactor(Factor):
    """SuperLU defaults: COLAMD column ordering, partial pivoting."""

    def __init__(self, A: sp.csr_matrix, copy: bool = True):
        super().__init__(A, "superlu", copy)
        t0 = time.perf_counter()
        self._lu = _splu_default(A)
        self.factor_seconds = time.perf_counter() - t0
        self.factor_nnz = self._lu.nnz
        self._solve = self._solve_superlu_default

    def _can_fall_back(self) -> bool:
        return False


class _SuperLUNDFactor(Factor):
    """SuperLU on P A P^T, nested dissection, natural columns, diagonal pivots only."""

    def __init__(self, A: sp.csr_matrix, ordering: Ordering | None, symmetric: bool = True,
                 copy: bool = True, keep_plan: bool = False):
        super().__init__(A, "superlu-nd", copy)
        t0 = time.perf_counter()
        if ordering is None:
            ordering = Ordering.from_matrix(A)
        perm = _delay_weak_pivots(A, ordering.perm, self._rowmax)
        plan = (_PermutationPlan.get(ordering, A, perm, symmetric) if keep_plan
                else _PermutationPlan(A, perm, symmetric, numbers=A))
        self._perm, self._iperm = plan.perm, plan.iperm
        try:
            Ap = plan.apply(A)
            self._lu = spla.splu(Ap, **_SUPERLU_NO_PIVOT)
            del Ap
            self.factor_nnz = self._lu.nnz
        except RuntimeError:                # exactly zero pivot column: pivot after all
            self._fall_back()
            self.fell_back = True
        self.factor_seconds = time.perf_counter() - t0

    def _solve(self, b: np.ndarray) -> np.ndarray:
        return self._lu.solve(b[self._perm])[self._iperm]


class _PermutationPlan:
    """Where each entry of ``A`` goes in the CSC of ``P A P^T``, for one pattern and one
    permutation: the symbolic part of forming the permuted matrix, done once and reused by every
    matrix of that pattern (Newton iterations, step lengths) as a single gather ``A.data[src]``.

    The plan is built by forming the permuted matrix once from the entry numbers (as the direct
    formation below does), so the gathered matrix is the same, bit for bit.
    """

    _KEEP = 4                                           # plans kept per Ordering

    def __init__(self, A: sp.csr_matrix, perm: np.ndarray, symmetric: bool,
                 numbers: sp.csr_matrix | None = None):
        """``numbers``: pass ``A`` itself for a one-off (the permuted matrix is formed directly
        and :meth:`apply` returns it once, no plan kept)."""
        self.indptr_in, self.indices_in = A.indptr, A.indices
        self.perm, self.symmetric = perm, symmetric
        self.iperm = np.empty_like(perm)
        self.iperm[perm] = np.arange(perm.size)
        one_off = numbers is not None
        if not one_off:
            dtype = np.int32 if A.nnz < 2 ** 31 - 1 else np.int64
            numbers = sp.csr_matrix((np.arange(1, A.nnz + 1, dtype=dtype), A.indices,
                                     A.indptr), shape=A.shape)
        B = (_permuted_symmetric_csc(numbers, perm, self.iperm) if symmetric
             else numbers[perm][:, perm].tocsc())
        if one_off:
            self._once, self.src = B, None
        else:
            self._once = None
            self.src = B.data - 1
            self.indptr, self.indices = B.indptr, B.indices

    def matches(self, A: sp.csr_matrix, perm: np.ndarray, symmetric: bool) -> bool:
        return (symmetric == self.symmetric and A.indptr.size == self.indptr_in.size
                and A.indices.size == self.indices_in.size
                and (A.indices is self.indices_in or np.array_equal(A.indices, self.indices_in))
                and (A.indptr is self.indptr_in or np.array_equal(A.indptr, self.indptr_in))
                and (perm is self.perm or np.array_equal(perm, self.perm)))

    def apply(self, A: sp.csr_matrix) -> sp.csc_matrix:
        if self._once is not None:
            B, self._once = self._once, None
            return B
        B = sp.csc_matrix((A.data[self.src], self.indices, self.indptr), shape=A.shape)
        B.has_sorted_indices = True
        return B

    @classmethod
    def get(cls, ordering: Ordering, A: sp.csr_matrix, perm: np.ndarray,
            symmetric: bool) -> "_PermutationPlan":
        plans = ordering.__dict__.setdefault("_plans", [])
        for plan in plans:
            if plan.matches(A, perm, symmetric):
                return plan
        plan = cls(A, perm, symmetric)
        plans.insert(0, plan)
        del plans[cls._KEEP:]
        return plan


def _permuted_symmetric_csc(A: sp.csr_matrix, perm: np.ndarray, iperm: np.ndarray) -> sp.csc_matrix:
    """``P A P^T`` in CSC for symmetric ``A`` with one gather: the rows of ``A[perm]`` are the
    columns of ``(P A P^T)^T = P A P^T``, with their indices renumbered by ``iperm``."""
    rows = A[perm]                                      # CSR row gather, O(nnz)
    B = sp.csc_matrix((rows.data, iperm[rows.indices].astype(rows.indices.dtype), rows.indptr),
                      shape=A.shape)
    B.has_sorted_indices = False
    B.sort_indices()
    return B


def _delay_weak_pivots(A: sp.csr_matrix, perm: np.ndarray, rowmax: np.ndarray) -> np.ndarray:
    """Move each dof with a (near) zero diagonal that precedes all its strongly coupled
    neighbours to just after the last of them.

    Why: with diagonal pivots only, a dof eliminated before every dof it couples to meets its own
    diagonal as pivot; at the undrained instant that is exactly zero, for small dt it is tiny.
    Eliminated after all its coupled displacement dofs, its pivot is the Schur complement
    ``-(C + q^T K_s^-1 q)``, negative and bounded away from zero (Vanderbei 1995). Placing it
    after only the first coupled dof was measured to be unstable (backward error up to 1e-3
    at dt = 0); after the last one it was as accurate as the nested-dissection order, with 25%
    more fill on an adversarial pressure-first order. Orders from :class:`Ordering` with the
    u-before-p numbering rarely trigger this at all.
    """
    diag = np.abs(A.diagonal())
    weak = np.flatnonzero(diag <= _WEAK_FRACTION * rowmax)
    if weak.size == 0:
        return perm
    pos = np.empty_like(perm)
    pos[perm] = np.arange(perm.size)
    sub = A[weak].tocoo()                               # rows of the weak dofs only
    rows = weak[sub.row]
    strong = (sub.col != rows) & (np.abs(sub.data) > _WEAK_FRACTION * rowmax[rows])
    first = np.full(weak.size, perm.size)
    last = np.full(weak.size, -1)
    np.minimum.at(first, sub.row[strong], pos[sub.col[strong]])
    np.maximum.at(last, sub.row[strong], pos[sub.col[strong]])
    move = (last >= 0) & (first > pos[weak])            # no strong neighbour precedes it
    if not move.any():
        return perm
    key = 2 * pos                                       # even keys: everyone where they are
    key[weak[move]] = 2 * last[move] + 1                # odd: right after that neighbour
    return perm[np.argsort(key[perm], kind="stable")]

