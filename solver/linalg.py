"""Sparse direct solves of the Biot matrix: order once per pattern, factor once per matrix.

The matrix of one backward-Euler step of the u-p (Biot) equations is symmetric quasi-definite::

    A = [[ K,   -Q          ],      K: (n_u, n_u) SPD once displacement conditions are applied
         [-Q^T, -(S M + dt H)]]     S M + dt H: (n_p, n_p) positive semidefinite

At the undrained instant (``dt = 0`` with ``S = 0``) the pressure block is exactly zero and ``A`` is
a saddle point. Because ``A`` is symmetric, a symmetric fill-reducing permutation ``P A P^T`` can be
factored with diagonal pivots only, which is what makes the default backend fast.

Backends (``available_backends()``):

``"superlu-nd"``
    SciPy SuperLU on ``P A P^T`` with ``P`` a METIS nested-dissection ordering (:class:`Ordering`),
    natural column order, no pivoting, symmetric mode. Guarded: a pressure-like dof whose diagonal
    is (near) zero and which the order puts before every dof it couples to is delayed until they
    are eliminated, and the first solve checks the backward error; if the factors turn out
    inaccurate (or SuperLU reports an exactly singular pivot) this ``Factor`` refactors once with
    SuperLU's default (COLAMD ordering, partial pivoting) and sets ``fell_back = True``. A matrix
    that is not symmetric also ends there, correctly solved but slowly.
``"superlu"``
    SciPy SuperLU with its defaults (COLAMD, partial pivoting): robust, several times slower.
``"pardiso"``
    Intel MKL PARDISO through the optional ``pypardiso`` package (x86_64 only), symmetric
    indefinite (``mtype = -2``), analysed and factored once, each solve phase 33 only.

Measured (synthetic P2/P1 plane-strain steps from :func:`synthetic_biot_matrix`, 2 cores, best
or typical of runs on a noisy machine; factor time excludes the reused Ordering):

    ========  ===========  ==========  =============  ===========  ==============
    dofs      superlu-nd   superlu     pardiso        solve (nd)   ordering
                                       (2 threads)                 groups / dofs
    ========  ===========  ==========  =============  ===========  ==============
    99 k      1.2-1.5 s    9.7 s       0.9-1.3 s      0.03 s       0.20 / 0.41 s
    360 k     9.3-11 s     81 s        3.3-8.7 s      0.14 s       0.95 / 2.1 s
    1.5 M     75 s         (not run)   18-28 s        0.7-0.9 s    5.2 / 11-14 s
    ========  ===========  ==========  =============  ===========  ==============

At 1.5 M dofs superlu-nd peaks at 12 GB (452 M nonzeros in L + U); PARDISO stores one
triangle (245 M). Backward errors of all these solves were below 2e-14.

Ordering requirement for the undrained instant: number each node's displacement dofs before its
pressure dof (block numbering ``[u; p]`` does this). :meth:`Ordering.from_groups` keeps ascending
dof index within a node, so a pressure dof follows the displacements of its own node.

References
----------
Vanderbei, R. J. (1995). Symmetric quasidefinite matrices. SIAM J. Optim. 5(1), 100-113.
Gill, P. E., Saunders, M. A., Shinnerl, J. R. (1996). On the stability of Cholesky factorization
for symmetric quasidefinite systems. SIAM J. Matrix Anal. Appl. 17(1), 35-46.
Higham, N. J. (2002). Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM, Thm 7.1
(normwise backward error of Rigal and Gaches).
Karypis, G., Kumar, V. (1998). A fast and high quality multilevel scheme for partitioning
irregular graphs. SIAM J. Sci. Comput. 20(1), 359-392 (METIS nested dissection).
"""

from __future__ import annotations

import ctypes
import functools
import time
import warnings
import weakref
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from solver.errors import InputError, SolverError

__all__ = [
    "BACKWARD_ERROR_TOL",
    "Factor",
    "Ordering",
    "SyntheticBiot",
    "available_backends",
    "default_backend",
    "factor",
    "measure_backends",
    "synthetic_biot_matrix",
]

#: Largest accepted backward error of a solve, measured on the symmetrically equilibrated system
#: ``S A S (S^-1 x) = S b`` with ``S = diag(1 / sqrt(max_j |a_ij|))`` (normwise, inf-norm: Higham
#: 2002, Thm 7.1). Equilibrating first matters: K (~1e4 kPa) and dt*H (~1e-5) differ by nine
#: orders, and the plain normwise error hides a ruined pressure block, while ``||r|| / ||b||``
#: depends on the scaling of ``b`` and fires on well-solved ill-conditioned systems. Measured on
#: synthetic P2/P1 Biot matrices: backward-stable solves give 1e-18 .. 6e-15; a no-pivot
#: factorization spoiled by a tiny pivot (pressure eliminated first, dt from 1e-5 down) gives
#: 6e-13 .. 7e-6, with a forward error about 1e3 times that. At 1e-12 the accepted solutions
#: are within about 1e-9 (relative) of a pivoted solve, and the limit sits 170 times above the
#: worst stable solve seen.
BACKWARD_ERROR_TOL = 1e-12

# A dof whose |diagonal| is below this fraction of its row's largest |entry| is "pressure-like"
# (e.g. the zero pressure block at the undrained instant, or dt*H tiny next to Q); an off-diagonal
# coupling above this fraction counts as a usable one for the guard in `_delay_weak_pivots`.
_WEAK_FRACTION = 1e-3

_SUPERLU_NO_PIVOT = dict(permc_spec="NATURAL", diag_pivot_thresh=0.0,
                         options=dict(SymmetricMode=True))


# ----------------------------------------------------------------------------------------------
# Ordering
# ----------------------------------------------------------------------------------------------

class Ordering:
    """A fill-reducing symmetric permutation, computed once per sparsity pattern.

    Parameters
    ----------
    perm : (n,) int array, new position -> old dof: the permuted matrix is ``A[perm][:, perm]``.
    kind : how it was made (``"groups"``, ``"matrix"`` or ``"given"``).
    seconds : wall time spent computing it.
    """

    def __init__(self, perm: np.ndarray, kind: str = "given", seconds: float = 0.0):
        perm = np.asarray(perm, dtype=np.int64)
        if perm.ndim != 1 or not _is_permutation(perm):
            raise InputError("ordering.perm is not a permutation of 0..n-1.", field="ordering.perm")
        self.perm = perm
        self.kind = kind
        self.seconds = float(seconds)

    @property
    def n(self) -> int:
        """Number of dofs."""
        return self.perm.size

    @functools.cached_property
    def iperm(self) -> np.ndarray:
        """(n,) old dof -> new position."""
        iperm = np.empty_like(self.perm)
        iperm[self.perm] = np.arange(self.perm.size)
        return iperm

    def __repr__(self) -> str:
        return f"Ordering(n={self.n}, kind={self.kind!r}, seconds={self.seconds:.3f})"

    @classmethod
    def from_groups(cls, group_of_dof: np.ndarray,
                    group_adjacency: sp.spmatrix | sp.sparray) -> "Ordering":
        """Nested dissection on the node graph, expanded to dofs.

        Parameters
        ----------
        group_of_dof : (n,) int, the node (group) of each dof.
        group_adjacency : (n_nodes, n_nodes) sparse, nonzero where two nodes share an element
            (values ignored; the pattern is symmetrised, the diagonal ignored).

        Returns
        -------
        Ordering whose ``perm`` lists nodes in nested-dissection order and, within a node, its
        dofs in ascending dof index. Nodes without dofs are dropped from the graph; each node is
        weighted by its number of dofs so separators balance dofs, not nodes.

        Notes
        -----
        For the undrained instant number each node's displacement dofs before its pressure dof
        (block numbering ``[u; p]`` does), so a pressure dof is eliminated after its own node's
        displacements. The node graph is several times smaller than the dof graph, so this is
        several times cheaper than :meth:`from_matrix` and orders about as well.
        """
        t0 = time.perf_counter()
        group_of_dof = np.asarray(group_of_dof)
        if group_of_dof.ndim != 1 or not np.issubdtype(group_of_dof.dtype, np.integer):
            raise InputError("group_of_dof must be a 1-D integer array (node id of each dof), "
                             f"got shape {group_of_dof.shape} dtype {group_of_dof.dtype}.",
                             field="group_of_dof")
        if not sp.issparse(group_adjacency) or group_adjacency.shape[0] != group_adjacency.shape[1]:
            raise InputError("group_adjacency must be a square sparse matrix (node-node graph).",
                             field="group_adjacency")
        n_groups = group_adjacency.shape[0]
        if group_of_dof.size and (group_of_dof.min() < 0 or group_of_dof.max() >= n_groups):
            raise InputError(f"group_of_dof holds node ids in [{group_of_dof.min()}, "
                             f"{group_of_dof.max()}] but group_adjacency has {n_groups} nodes.",
                             field="group_of_dof")
        counts = np.bincount(group_of_dof, minlength=n_groups)
        active = np.flatnonzero(counts)
        graph = _symmetric_graph(group_adjacency)
        if active.size < n_groups:                      # nodes whose dofs were all eliminated
            graph = graph[active][:, active]
        node_perm = _nested_dissection(graph, counts[active])    # new -> old (active index)
        rank = np.empty(n_groups, dtype=np.int64)
        rank[active[node_perm]] = np.arange(active.size)
        # Stable sort: within a node, dofs keep ascending dof index (u before p, see Notes).
        perm = np.argsort(rank[group_of_dof], kind="stable")
        return cls(perm, kind="groups", seconds=time.perf_counter() - t0)

    @classmethod
    def from_matrix(cls, A: sp.spmatrix | sp.sparray) -> "Ordering":
        """Nested dissection on the dof graph of ``A`` (the fallback when no node groups exist).

        Parameters
        ----------
        A : (n, n) sparse; only its pattern is used (symmetrised, diagonal ignored).
        """
        t0 = time.perf_counter()
        if not sp.issparse(A) or A.shape[0] != A.shape[1]:
            raise InputError("A must be a square sparse matrix.", field="A")
        perm = _nested_dissection(_symmetric_graph(A), None)
        return cls(perm, kind="matrix", seconds=time.perf_counter() - t0)


def _is_permutation(perm: np.ndarray) -> bool:
    seen = np.zeros(perm.size, dtype=bool)
    if perm.size and (perm.min() < 0 or perm.max() >= perm.size):
        return False
    seen[perm] = True
    return bool(seen.all())


def _symmetric_graph(pattern) -> sp.csr_matrix:
    """Pattern of ``P + P^T`` without the diagonal, as CSR with int64 indices (what METIS wants)."""
    coo = sp.coo_matrix(pattern)
    off = coo.row != coo.col                            # values ignored: explicit zeros count
    r, c = coo.row[off], coo.col[off]
    n = pattern.shape[0]
    # duplicates are summed into the int8 data; only the pattern is read, so overflow is harmless
    return sp.csr_matrix((np.ones(2 * r.size, dtype=np.int8),
                          (np.concatenate([r, c]), np.concatenate([c, r]))), shape=(n, n))


def _nested_dissection(graph: sp.csr_matrix, vweights: np.ndarray | None) -> np.ndarray:
    """METIS_NodeND through pymetis; returns perm (new position -> old vertex)."""
    import pymetis

    n = graph.shape[0]
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    xadj = graph.indptr.astype(np.int64)
    adjncy = graph.indices.astype(np.int64)
    kwargs = {}
    if vweights is not None and np.any(vweights != 1):
        kwargs["vweights"] = np.ascontiguousarray(vweights, dtype=np.int64)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)
        if hasattr(pymetis, "CSRAdjacency"):
            graph_arg = dict(adjacency=pymetis.CSRAdjacency(xadj, adjncy))
        else:                                           # pymetis < 2025.2
            graph_arg = dict(xadj=xadj, adjncy=adjncy)
        try:
            perm, _iperm = pymetis.nested_dissection(**graph_arg, **kwargs)
        except TypeError:                               # pymetis without vweights
            perm, _iperm = pymetis.nested_dissection(**graph_arg)
    # METIS: row i of the permuted matrix is row perm[i] of the original.
    return np.asarray(perm, dtype=np.int64)


# ----------------------------------------------------------------------------------------------
# Backends
# ----------------------------------------------------------------------------------------------

@functools.lru_cache(maxsize=1)
def _pardiso_entry():
    """The MKL ``pardiso`` C function from pypardiso's loaded ``mkl_rt``, or None if unavailable."""
    try:
        import pypardiso
        solver = pypardiso.PyPardisoSolver()        # finds and loads mkl_rt, sets argtypes
    except Exception:                               # ImportError, OSError: no MKL for this arch
        return None
    return solver._mkl_pardiso


def available_backends() -> list[str]:
    """Names accepted by :func:`factor` on this machine, fastest first."""
    names = ["superlu-nd", "superlu"]
    if _pardiso_entry() is not None:
        names.insert(0, "pardiso")
    return names


# Below this many unknowns SuperLU on the nested-dissection order is as fast as PARDISO
# (measured at 99k: 1.1-1.5 s against 0.7-1.3 s) and PARDISO's threads only cost on a busy
# machine (example-sized runs were 4-10 times slower with it); above it PARDISO wins 2-4x.
PARDISO_FROM = 100_000


def default_backend(n: int | None = None) -> str:
    """The fastest installed backend by measurement for a matrix of ``n`` unknowns:
    ``"pardiso"`` when importable and the matrix is large, else ``"superlu-nd"`` (numbers in
    this module's docstring; rerun with :func:`measure_backends`)."""
    if n is not None and n < PARDISO_FROM:
        return "superlu-nd"
    return "pardiso" if _pardiso_entry() is not None else "superlu-nd"


class Factor:
    """A factorization of ``A`` kept for many solves. Make one with :func:`factor`.

    Attributes
    ----------
    backend : the backend asked for.
    factor_seconds : wall time of ordering (if computed here) and factorization, including a
        fallback refactorization.
    fell_back : True if the no-pivot factorization was inaccurate or hit an exactly zero pivot,
        and this Factor refactored with SuperLU's pivoting default instead.
    backward_error : backward error of the last checked solve (see ``BACKWARD_ERROR_TOL``),
        None before the first solve.
    factor_nnz : nonzeros stored in the factors, a memory measure (L + U for SuperLU, the one
        triangle for PARDISO).
    check_every_solve : check the backward error of every solve rather than only the first
        (one matvec, measured 6-7% of a solve at 0.1-0.36 M dofs). Off by default: the check
        tests the factors, and the first solve already shows a spoiled factorization.
    """

    backend: str
    factor_seconds: float
    fell_back: bool
    backward_error: float | None
    factor_nnz: int | None

    def __init__(self, A: sp.csr_matrix, backend: str):
        # A copy: callers may assemble the next matrix into the same arrays (same pattern),
        # and the check and the fallback must see the matrix that was factored.
        self.A = A.copy()
        self.n = A.shape[0]
        self.backend = backend
        self.factor_seconds = 0.0
        self.fell_back = False
        self.backward_error = None
        self.factor_nnz = None
        self.check_every_solve = False
        self._checked = False
        self._freed = False

    def solve(self, b: np.ndarray) -> np.ndarray:
        """Solve ``A x = b``.

        Parameters
        ----------
        b : (n,) or (n, k) right-hand side(s).

        Returns
        -------
        x : same shape as ``b``.
        """
        b = np.asarray(b, dtype=np.float64)
        if b.ndim not in (1, 2) or b.shape[0] != self.n:
            raise InputError(f"right-hand side has shape {b.shape}; the matrix has {self.n} rows.",
                             field="b")
        if self._freed:
            raise SolverError("this Factor was freed; factor the matrix again.")
        x = self._solve(b)
        if not self._checked or self.check_every_solve:
            self._checked = True
            eta = self._backward_error(b, x)
            self.backward_error = eta
            if not eta <= BACKWARD_ERROR_TOL:           # also catches NaN
                x = self._recover(b, eta)
        return x

    @functools.cached_property
    def _rowmax(self) -> np.ndarray:
        """(n,) largest |entry| of each row."""
        if self.A.nnz == 0:
            return np.zeros(self.n)
        return abs(self.A).max(axis=1).toarray().ravel()

    @functools.cached_property
    def _equilibration(self) -> tuple[np.ndarray, float]:
        """``s`` with ``S A S`` of unit row maxima (about), and ``||S A S||_inf``."""
        rowmax = self._rowmax
        s = 1.0 / np.sqrt(np.where(rowmax > 0, rowmax, 1.0))
        a_norm = float(np.max(s * (abs(self.A) @ s))) if self.A.nnz else 0.0
        return s, a_norm

    def _backward_error(self, b: np.ndarray, x: np.ndarray) -> float:
        """Normwise backward error of the equilibrated system (inf-norm), worst column."""
        s, a_norm = self._equilibration
        if b.ndim == 2:
            s = s[:, None]
        r = np.abs(s * (b - self.A @ x)).max(axis=0)
        den = a_norm * np.abs(x / s).max(axis=0) + np.abs(s * b).max(axis=0)
        with np.errstate(invalid="ignore", divide="ignore"):
            eta = np.where(den > 0, r / np.where(den > 0, den, 1.0), 0.0)
        eta = np.where(np.isfinite(x).all(axis=0), eta, np.inf)
        return float(np.max(eta))

    def _recover(self, b: np.ndarray, eta: float) -> np.ndarray:
        """Refactor with pivoting once; if that is inaccurate too, the matrix is singular."""
        if self.fell_back or not self._can_fall_back():
            raise SolverError(
                f"The {self.backend} solve is inaccurate (backward error {eta:.1e} > "
                f"{BACKWARD_ERROR_TOL:.0e}): the matrix is singular or nearly so. Check that the "
                "displacement boundary conditions stop every rigid-body motion and that no "
                "pressure dof is left without coupling.")
        t0 = time.perf_counter()
        self._fall_back()
        self.factor_seconds += time.perf_counter() - t0
        self.fell_back = True
        x = self._solve(b)
        eta = self._backward_error(b, x)
        self.backward_error = eta
        if not eta <= BACKWARD_ERROR_TOL:
            return self._recover(b, eta)                # raises SolverError
        return x

    def _can_fall_back(self) -> bool:
        return True

    def _fall_back(self) -> None:
        self.free()                                     # drop the failed factors first
        self._lu = _splu_default(self.A)
        self._freed = False
        self.factor_nnz = self._lu.L.nnz + self._lu.U.nnz
        self._solve = self._solve_superlu_default

    def _solve_superlu_default(self, b: np.ndarray) -> np.ndarray:
        return self._lu.solve(b)

    def _solve(self, b: np.ndarray) -> np.ndarray:      # replaced by each backend
        raise NotImplementedError

    def free(self) -> None:
        """Release the factors' memory now rather than at garbage collection; no solves after."""
        self._lu = None
        self._freed = True

    def __repr__(self) -> str:
        return (f"Factor(backend={self.backend!r}, n={self.n}, factor_seconds="
                f"{self.factor_seconds:.3f}, fell_back={self.fell_back})")


def _splu_default(A: sp.csr_matrix):
    try:
        return spla.splu(A.tocsc())
    except RuntimeError as exc:                         # "Factor is exactly singular"
        raise SolverError(
            f"The matrix is singular ({exc}). Check that the displacement boundary conditions "
            "stop every rigid-body motion and that every pressure dof is coupled.") from exc


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


class _PardisoFactor(Factor):
    """MKL PARDISO, real symmetric indefinite: phase 11 + 22 once, phase 33 per solve.

    Extra attributes: ``inertia`` (positive, negative eigenvalue counts; (n_u, n_p) for a sound
    Biot matrix) and ``perturbed_pivots`` (nonzero: PARDISO perturbed tiny pivots and refined).
    """

    _MTYPE = -2

    def __init__(self, A: sp.csr_matrix):
        super().__init__(A, "pardiso")
        entry = _pardiso_entry()
        t0 = time.perf_counter()
        U = _upper_with_diagonal(A)
        if U.nnz >= 2 ** 31:
            raise InputError(f"the upper triangle has {U.nnz} nonzeros, more than the 32-bit "
                             "PARDISO interface takes.", field="A",
                             fix="use backend='superlu-nd'.")
        self._data = np.ascontiguousarray(U.data, dtype=np.float64)
        self._ia = np.ascontiguousarray(U.indptr, dtype=np.int32)
        self._ja = np.ascontiguousarray(U.indices, dtype=np.int32)
        self._pt = np.zeros(64, dtype=np.int64)
        iparm = np.zeros(64, dtype=np.int32)
        iparm[0] = 1            # iparm(1): we set the values below, no defaults
        iparm[1] = 2            # iparm(2): METIS nested dissection
        iparm[7] = 0            # iparm(8): automatic iterative refinement (2 steps if perturbed)
        iparm[9] = 8            # iparm(10): perturb pivots smaller than 1e-8 * ||A||
        iparm[10] = 1           # iparm(11): symmetric scaling  } recommended for saddle points
        iparm[12] = 1           # iparm(13): weighted matching  } (undrained instant)
        iparm[17] = -1          # iparm(18): report nonzeros in the factors
        iparm[20] = 1           # iparm(21): Bunch-Kaufman 1x1 and 2x2 pivots
        iparm[34] = 1           # iparm(35): zero-based ia/ja (no shifted copies)
        # No user permutation (iparm(5) = 0): PARDISO's own METIS on the compressed graph was
        # measured as fast or faster than ours (1.5 M dofs: 21-28 s vs 18-41 s, noisy machine),
        # its time included, so a given Ordering is not used here.
        self._perm = np.zeros(self.n, dtype=np.int32)
        self._iparm = iparm
        self._entry = entry
        # PARDISO keeps its factors outside Python: free them when this object goes.
        self._finalizer = weakref.finalize(self, _pardiso_release, entry, self._pt, self._iparm,
                                           self.n)
        dummy = np.zeros(self.n)                        # b and x are not read in 11 and 22
        self._call(11, dummy, dummy, 1)
        self._call(22, dummy, dummy, 1)
        self.factor_seconds = time.perf_counter() - t0
        self.factor_nnz = int(iparm[17])
        self.perturbed_pivots = int(iparm[13])
        self.inertia = (int(iparm[21]), int(iparm[22]))   # (positive, negative) eigenvalues

    def _call(self, phase: int, b: np.ndarray, x: np.ndarray, nrhs: int) -> None:
        err = _pardiso_call(self._entry, self._pt, phase, self.n, self._data, self._ia, self._ja,
                            self._perm, nrhs, self._iparm, b, x)
        if err != 0:
            if phase == 22 and err == -4:
                raise SolverError("PARDISO found a zero pivot (error -4): the matrix is singular. "
                                  "Check the displacement boundary conditions.")
            raise SolverError(f"PARDISO phase {phase} failed with error {err} "
                              "(-2: not enough memory, -4: zero pivot, -3: bad input).")

    def _solve(self, b: np.ndarray) -> np.ndarray:
        nrhs = 1 if b.ndim == 1 else b.shape[1]
        bf = np.asfortranarray(b)                       # PARDISO takes column-major (n, k)
        x = np.zeros_like(bf, order="F")
        self._call(33, bf, x, nrhs)
        return np.ascontiguousarray(x)

    def free(self) -> None:
        if self._finalizer.alive:
            self._finalizer()
        super().free()


def _upper_with_diagonal(A: sp.csr_matrix) -> sp.csr_matrix:
    """Upper triangle of ``A`` with every diagonal entry stored (PARDISO needs them, even zero)."""
    coo = A.tocoo()
    up = coo.row <= coo.col
    n = A.shape[0]
    d = np.arange(n)
    U = sp.csr_matrix((np.concatenate([coo.data[up], np.zeros(n)]),
                       (np.concatenate([coo.row[up], d]), np.concatenate([coo.col[up], d]))),
                      shape=A.shape)                    # duplicates summed; zeros kept
    U.sort_indices()
    return U


def _pardiso_call(entry, pt, phase, n, data, ia, ja, perm, nrhs, iparm, b, x) -> int:
    i32 = ctypes.c_int32
    p_i32 = ctypes.POINTER(i32)
    p_f64 = ctypes.POINTER(ctypes.c_double)
    err = i32(0)
    entry(pt.ctypes.data_as(ctypes.POINTER(ctypes.c_int64)),
          ctypes.byref(i32(1)), ctypes.byref(i32(1)),           # maxfct, mnum
          ctypes.byref(i32(_PardisoFactor._MTYPE)), ctypes.byref(i32(phase)),
          ctypes.byref(i32(n)), data.ctypes.data_as(p_f64),
          ia.ctypes.data_as(p_i32), ja.ctypes.data_as(p_i32), perm.ctypes.data_as(p_i32),
          ctypes.byref(i32(nrhs)), iparm.ctypes.data_as(p_i32), ctypes.byref(i32(0)),  # msglvl
          b.ctypes.data_as(p_f64), x.ctypes.data_as(p_f64), ctypes.byref(err))
    return err.value


def _pardiso_release(entry, pt, iparm, n) -> None:
    empty_i = np.zeros(1, dtype=np.int32)
    empty_f = np.zeros(1)
    _pardiso_call(entry, pt, -1, n, empty_f, empty_i, empty_i, empty_i, 1, iparm,
                  empty_f, empty_f)


def factor(A, backend: str | None = None, ordering: Ordering | None = None,
           check: bool = True, symmetric: bool = True) -> Factor:
    """Factor the symmetric (quasi-definite) matrix ``A`` for repeated solves.

    Parameters
    ----------
    A : (n, n) scipy sparse matrix, symmetric; converted to CSR float64 if needed.
    backend : one of :func:`available_backends`; None picks :func:`default_backend`.
    ordering : an :class:`Ordering` of the same n, computed once per sparsity pattern and reused
        by ``"superlu-nd"``; None: it computes :meth:`Ordering.from_matrix` here (its time is in
        ``factor_seconds``). ``"pardiso"`` orders internally and ``"superlu"`` uses COLAMD; both
        ignore it.
    symmetric : False for a matrix with a symmetric pattern but unsymmetric values (the
        Newton Jacobian with the Cam Clay tangent); "superlu-nd" then permutes it in full
        instead of reading its rows as columns, and "pardiso" is refused.
    check : check the backward error of the first solve and fall back to a pivoting
        factorization when it is poor. Newton iterations pass False: an inexact step only
        slows their convergence, which their own residual check watches.

    Returns
    -------
    Factor with ``solve(b)``.

    Raises
    ------
    InputError : unknown or uninstalled backend, wrong shapes.
    SolverError : the matrix is singular.
    """
    if backend is None:
        backend = default_backend()
    names = available_backends()
    if backend not in names:
        if backend == "pardiso":
            raise InputError("backend 'pardiso' is not available: pypardiso (Intel MKL) is not "
                             f"installed or cannot load. Available: {', '.join(names)}.",
                             field="backend",
                             fix="pip install pypardiso (x86_64 only), or use 'superlu-nd'.")
        raise InputError(f"unknown backend {backend!r}. Available: {', '.join(names)}.",
                         field="backend", fix=f"use one of {names}.")
    if not sp.issparse(A) or A.ndim != 2 or A.shape[0] != A.shape[1]:
        raise InputError(f"A must be a square scipy sparse matrix, got {type(A).__name__} "
                         f"of shape {getattr(A, 'shape', None)}.", field="A")
    A = sp.csr_matrix(A, dtype=np.float64)
    if ordering is not None and ordering.n != A.shape[0]:
        raise InputError(f"ordering has {ordering.n} dofs; the matrix has {A.shape[0]}.",
                         field="ordering", fix="compute the Ordering for this sparsity pattern.")
    if backend == "pardiso" and not symmetric:
        raise InputError("backend 'pardiso' is set up for symmetric matrices only",
                         field="backend", fix="use 'superlu-nd' or 'superlu'.")
    if backend == "superlu-nd":
        fac = _SuperLUNDFactor(A, ordering, symmetric)
    elif backend == "superlu":
        fac = _SuperLUFactor(A)
    else:
        fac = _PardisoFactor(A)
    fac._checked = not check
    return fac


# ----------------------------------------------------------------------------------------------
# Measuring
# ----------------------------------------------------------------------------------------------

def measure_backends(A, repeats: int = 3, ordering: Ordering | None = None,
                     backends: list[str] | None = None, seed: int = 0) -> list[dict]:
    """Time every available backend on ``A`` (best of ``repeats``), for the CLI bench.

    Parameters
    ----------
    A : (n, n) sparse symmetric matrix.
    repeats : factorizations (and solves) per backend; the minimum time is reported.
    ordering : reused by ``"superlu-nd"``; None: ``Ordering.from_matrix`` once, reported as
        ``ordering_s`` and excluded from ``factor_s``.
    backends : names to time (default: all available).
    seed : of the random right-hand side.

    Returns
    -------
    One dict per backend: ``backend``, ``factor_s``, ``solve_s``, ``residual`` (relative,
    ``||A x - b||_2 / ||b||_2``), ``backward_error``, ``fell_back``, ``factor_nnz``,
    ``ordering_s``.
    """
    A = sp.csr_matrix(A, dtype=np.float64)
    b = np.random.default_rng(seed).standard_normal(A.shape[0])
    ordering_s = 0.0
    if ordering is None:
        ordering = Ordering.from_matrix(A)
        ordering_s = ordering.seconds
    rows = []
    for name in backends or available_backends():
        row = dict(backend=name, factor_s=np.inf, solve_s=np.inf)
        for _ in range(max(1, repeats)):
            f = factor(A, name, ordering=ordering)
            x = f.solve(b)                              # checked solve (may fall back)
            row["factor_s"] = min(row["factor_s"], f.factor_seconds)
            t0 = time.perf_counter()
            f._solve(b)                                 # the bare solve, without the check
            row["solve_s"] = min(row["solve_s"], time.perf_counter() - t0)
            row.update(residual=float(np.linalg.norm(A @ x - b) / np.linalg.norm(b)),
                       backward_error=f.backward_error, fell_back=f.fell_back,
                       factor_nnz=f.factor_nnz,
                       ordering_s=ordering_s if name == "superlu-nd" else 0.0)
            f.free()
            del f
        rows.append(row)
    return rows


# ----------------------------------------------------------------------------------------------
# A synthetic Biot matrix for tests and benchmarks
# ----------------------------------------------------------------------------------------------

@dataclass
class SyntheticBiot:
    """A Biot step matrix on a structured P2/P1 triangle mesh (for tests and benchmarks only).

    Attributes
    ----------
    A : (n, n) CSR, ``[[K, -Q], [-Q^T, -(S M + dt H)]]``, dofs numbered ``[u; p]``.
    n_u, n_p : block sizes.
    group_of_dof : (n,) node of each dof.
    node_adjacency : (n_nodes, n_nodes) CSR node graph (nodes sharing an element).
    """

    A: sp.csr_matrix
    n_u: int
    n_p: int
    group_of_dof: np.ndarray
    node_adjacency: sp.csr_matrix


def synthetic_biot_matrix(nx: int, ny: int | None = None, dt: float = 1.0,
                          storage: float = 0.0, seed: int = 0, jitter: float = 0.2,
                          keep_pattern: bool = True) -> SyntheticBiot:
    """Assemble a plane-strain Biot step on a ``nx`` x ``ny`` grid of squares, two triangles each.

    Not a model of any site: a matrix with the structure, scaling and pattern of the real one.
    Six-node (P2) displacement, three-node (P1) pressure, width ``nx`` m, depth ``ny`` m;
    bottom fixed, sides on rollers, top drained (p = 0). Young's modulus (kPa) and permeability
    over unit weight of water (m/day / (kN/m3)) vary at random per element over one and two
    decades (about 5 MPa and 1e-5). Interior vertices are moved at random by up to ``jitter``
    times the spacing; ``jitter = 0`` gives centrally symmetric patches, on which the coupling
    of a vertex's pressure to its own displacements vanishes (up to rounding).

    Parameters
    ----------
    nx, ny : squares across and down (``ny`` defaults to ``nx``); about ``9 nx ny`` dofs.
    dt : time step (days); 0 with ``storage = 0`` gives the undrained saddle point.
    storage : storage coefficient S (1/kPa).
    seed : random seed.
    jitter : vertex displacement as a fraction of the spacing.
    keep_pattern : keep explicit zeros so the pattern is the same for every ``dt``.
    """
    ny = nx if ny is None else ny
    rng = np.random.default_rng(seed)
    mx, my = 2 * nx + 1, 2 * ny + 1                     # fine grid: every P2 node is on it
    fid = lambda I, J: J * mx + I                       # noqa: E731
    # vertex coordinates, jittered inside
    vx, vy = np.meshgrid(np.arange(nx + 1, dtype=float), np.arange(ny + 1, dtype=float),
                         indexing="ij")
    inner = (slice(1, nx), slice(1, ny))
    vx[inner] += jitter * rng.uniform(-0.5, 0.5, vx[inner].shape)
    vy[inner] += jitter * rng.uniform(-0.5, 0.5, vy[inner].shape)
    X = np.zeros((mx, my))
    Y = np.zeros((mx, my))
    X[::2, ::2], Y[::2, ::2] = vx, vy
    X[1::2, ::2], Y[1::2, ::2] = (vx[:-1] + vx[1:]) / 2, (vy[:-1] + vy[1:]) / 2
    X[::2, 1::2], Y[::2, 1::2] = (vx[:, :-1] + vx[:, 1:]) / 2, (vy[:, :-1] + vy[:, 1:]) / 2
    X[1::2, 1::2] = (vx[1:, :-1] + vx[:-1, 1:]) / 2     # midpoint of the diagonal b-c
    Y[1::2, 1::2] = (vy[1:, :-1] + vy[:-1, 1:]) / 2
    # triangles: (a, b, c) and (d, c, b) per square, then midpoints (01, 12, 20)
    i, j = np.meshgrid(np.arange(nx), np.arange(ny), indexing="ij")
    I, J = 2 * i.ravel(), 2 * j.ravel()
    t1 = [(I, J), (I + 2, J), (I, J + 2), (I + 1, J), (I + 1, J + 1), (I, J + 1)]
    t2 = [(I + 2, J + 2), (I, J + 2), (I + 2, J), (I + 1, J + 2), (I + 1, J + 1), (I + 2, J + 1)]
    gi = np.concatenate([np.stack([a for a, _ in t1], 1), np.stack([a for a, _ in t2], 1)])
    gj = np.concatenate([np.stack([b for _, b in t1], 1), np.stack([b for _, b in t2], 1)])
    nodes = fid(gi, gj)                                  # (ne, 6)
    xe = np.stack([X[gi, gj], Y[gi, gj]], -1)            # (ne, 6, 2)
    ne = nodes.shape[0]

    # reference P2/P1 on the unit triangle, 3-point rule (exact for the quadratic integrands)
    qp = np.array([[1 / 6, 1 / 6], [2 / 3, 1 / 6], [1 / 6, 2 / 3]])
    qw = np.full(3, 1 / 6)
    L = np.stack([1 - qp.sum(1), qp[:, 0], qp[:, 1]], 1)             # (nq, 3)
    dL = np.array([[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]])            # (3, 2)
    pairs = [(0, 1), (1, 2), (2, 0)]
    dN = np.zeros((3, 6, 2))                                         # (nq, 6, 2) d/dxi
    for k in range(3):
        dN[:, k] = (4 * L[:, k] - 1)[:, None] * dL[k]
    for m, (a, c) in enumerate(pairs):
        dN[:, 3 + m] = 4 * (L[:, a, None] * dL[c] + L[:, c, None] * dL[a])
    Jm = np.einsum("eka,kb->eab", xe[:, :3], dL)                     # (ne, 2, 2) dx_a/dxi_b
    det = Jm[:, 0, 0] * Jm[:, 1, 1] - Jm[:, 0, 1] * Jm[:, 1, 0]
    Jinv = np.linalg.inv(Jm)                                         # dxi_b/dx_a = Jinv[b, a]
    g = np.einsum("qkb,eba->eqka", dN, Jinv)                         # (ne, nq, 6, 2) d/dx
    gp = np.einsum("kb,eba->eka", dL, Jinv)                          # (ne, 3, 2) P1 grads
    wdet = qw[None, :] * det[:, None]                                # (ne, nq)

    B = np.zeros((ne, 3, 3, 12))                                     # (ne, nq, voigt, 12)
    B[..., 0, 0::2] = g[..., 0]
    B[..., 1, 1::2] = g[..., 1]
    B[..., 2, 0::2] = g[..., 1]
    B[..., 2, 1::2] = g[..., 0]
    E = 5000.0 * 10 ** rng.uniform(-0.5, 0.5, ne)
    nu = 0.3
    D0 = np.array([[1 - nu, nu, 0], [nu, 1 - nu, 0], [0, 0, (1 - 2 * nu) / 2]]) \
        / ((1 + nu) * (1 - 2 * nu))
    Ke = np.einsum("eq,eqsi,st,eqtj->eij", wdet, B, D0, B) * E[:, None, None]
    div = B[..., 0, :] + B[..., 1, :]                                # (ne, nq, 12) m^T B
    Qe = np.einsum("eq,eqi,qj->eij", wdet, div, L)                   # (ne, 12, 3), Biot alpha 1
    kw = 1e-4 / 9.81 * 10 ** rng.uniform(-1, 1, ne)
    He = np.einsum("e,eia,eja->eij", det / 2 * kw, gp, gp)           # area = det / 2
    Me = np.einsum("eq,qi,qj->eij", wdet, L, L)

    # dofs: u of free components in node order, then p at undrained-free vertices
    n_nodes = mx * my
    node_I, node_J = np.arange(n_nodes) % mx, np.arange(n_nodes) // mx
    free = np.ones((n_nodes, 2), dtype=bool)
    free[node_J == 0] = False                                        # bottom fixed
    free[(node_I == 0) | (node_I == mx - 1), 0] = False              # side rollers
    u_id = np.full(2 * n_nodes, -1)
    u_id[free.ravel()] = np.arange(free.sum())
    n_u = int(free.sum())
    is_vertex = (node_I % 2 == 0) & (node_J % 2 == 0)
    has_p = is_vertex & (node_J != my - 1)                           # top drained
    p_id = np.full(n_nodes, -1)
    p_id[has_p] = n_u + np.arange(has_p.sum())
    n_p = int(has_p.sum())
    n = n_u + n_p

    edof_u = u_id[(2 * nodes[:, :, None] + np.arange(2)).reshape(ne, 12)]   # (ne, 12)
    edof_p = p_id[nodes[:, :3]]                                              # (ne, 3)

    def scatter(rows, cols, vals):
        r = np.broadcast_to(rows[:, :, None], vals.shape).ravel()
        c = np.broadcast_to(cols[:, None, :], vals.shape).ravel()
        ok = (r >= 0) & (c >= 0)
        return r[ok], c[ok], vals.ravel()[ok]

    C = storage * Me + dt * He
    parts = [scatter(edof_u, edof_u, Ke), scatter(edof_u, edof_p, -Qe),
             scatter(edof_p, edof_u, -np.transpose(Qe, (0, 2, 1))), scatter(edof_p, edof_p, -C)]
    r, c, v = (np.concatenate(z) for z in zip(*parts))
    A = sp.csr_matrix((v, (r, c)), shape=(n, n))
    if not keep_pattern:
        A.eliminate_zeros()
    A.sort_indices()

    group = np.empty(n, dtype=np.int64)
    group[u_id[u_id >= 0]] = np.flatnonzero(u_id >= 0) // 2
    group[p_id[has_p]] = np.flatnonzero(has_p)
    nr = np.repeat(nodes, 6, axis=1).ravel()
    nc = np.tile(nodes, (1, 6)).ravel()
    adjacency = sp.csr_matrix((np.ones(nr.size, dtype=np.int8), (nr, nc)),
                              shape=(n_nodes, n_nodes))
    adjacency.data[:] = 1
    return SyntheticBiot(A=A, n_u=n_u, n_p=n_p, group_of_dof=group, node_adjacency=adjacency)
