"""Intel MKL PARDISO through the optional ``pypardiso`` package (x86_64 only), called directly
through ctypes: symmetric indefinite, analysed and factored once, one solve phase per solve."""

from __future__ import annotations

import ctypes
import functools
import time
import weakref

import numpy as np
import scipy.sparse as sp

from solver.errors import InputError, SolverError

from .factor import Factor

@functools.lru_cache(maxsize=1)
def _pardiso_entry():
    """The MKL ``pardiso`` C function from pypardiso's loaded ``mkl_rt``, or None if unavailable."""
    try:
        import pypardiso
        solver = pypardiso.PyPardisoSolver()        # finds and loads mkl_rt, sets argtypes
    except Exception:                               # ImportError, OSError: no MKL for this arch
        return None
    return solver._mkl_pardiso


class _PardisoFactor(Factor):
    """MKL PARDISO, real symmetric indefinite: phase 11 + 22 once, phase 33 per solve.

    Extra attributes: ``inertia`` (positive, negative eigenvalue counts; (n_u, n_p) for a sound
    Biot matrix) and ``perturbed_pivots`` (nonzero: PARDISO perturbed tiny pivots and refined).
    """

    _MTYPE = -2

    def __init__(self, A: sp.csr_matrix, copy: bool = True, numeric: bool = True):
        super().__init__(A, "pardiso", copy)
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
        # iparm(15..17): peak memory of the analysis, permanent memory, memory of the
        # numerical factorization and solves, in KB (reported by phase 11).
        self.memory_kb = (int(iparm[14]), int(iparm[15]), int(iparm[16]))
        if not numeric:
            return
        self._call(22, dummy, dummy, 1)
        self.factor_seconds = time.perf_counter() - t0
        self.factor_nnz = int(iparm[17])
        self.perturbed_pivots = int(iparm[13])
        self.inertia = (int(iparm[21]), int(iparm[22]))   # (positive, negative) eigenvalues

    @classmethod
    def analyse(cls, A: sp.csr_matrix) -> tuple[int, int, int]:
        """Phase 11 alone (ordering, symbolic factorization): ``memory_kb`` of ``A``."""
        f = cls(sp.csr_matrix(A, dtype=np.float64), copy=False, numeric=False)
        kb = f.memory_kb
        f.free()
        return kb

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


def symbolic_bytes(A: sp.spmatrix) -> int:
    """Peak bytes PARDISO reports for factoring ``A`` after its symbolic phase alone (phase 11:
    ordering and symbolic factorization, no values factored), the exact need of that backend.

    PARDISO's own count (iparm(15) peak of the analysis, iparm(16) + iparm(17) permanent and
    numerical memory, in KB; Intel MKL reference, from memory) plus its copy of the triangle.
    """
    kb = _PardisoFactor.analyse(A)
    U_nnz = (sp.triu(A).nnz + A.shape[0]) if A.nnz else A.shape[0]
    return int(max(kb[0], kb[1] + kb[2]) * 1024 + 12 * U_nnz)
