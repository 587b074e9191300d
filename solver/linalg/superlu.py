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

    def __init__(self, A: sp.csr_matrix):
        super().__init__(A, "superlu")
        t0 = time.perf_counter()
        self._lu = _splu_default(A)
        self.factor_seconds = time.perf_counter() - t0
        self.factor_nnz = self._lu.L.nnz + self._lu.U.nnz
        self._solve = self._solve_superlu_default

    def _can_fall_back(self) -> bool:
        return False


class _SuperLUNDFactor(Factor):
    """SuperLU on P A P^T, nested dissection, natural columns, diagonal pivots only."""

    def __init__(self, A: sp.csr_matrix, ordering: Ordering | None, symmetric: bool = True):
        super().__init__(A, "superlu-nd")
        t0 = time.perf_counter()
        if ordering is None:
            ordering = Ordering.from_matrix(A)
        perm = _delay_weak_pivots(A, ordering.perm, self._rowmax)
        iperm = np.empty_like(perm)
        iperm[perm] = np.arange(perm.size)
        self._perm, self._iperm = perm, iperm
        try:
            Ap = (_permuted_symmetric_csc(A, perm, iperm) if symmetric
                  else A[perm][:, perm].tocsc())
            self._lu = spla.splu(Ap, **_SUPERLU_NO_PIVOT)
            self.factor_nnz = self._lu.L.nnz + self._lu.U.nnz
        except RuntimeError:                # exactly zero pivot column: pivot after all
            self._fall_back()
            self.fell_back = True
        self.factor_seconds = time.perf_counter() - t0

    def _solve(self, b: np.ndarray) -> np.ndarray:
        return self._lu.solve(b[self._perm])[self._iperm]


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

