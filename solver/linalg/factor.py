"""The ``Factor`` interface shared by the backends: solves, the backward-error check and the
fallback to a pivoting factorization."""

from __future__ import annotations

import functools
import time

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from solver.errors import InputError, SolverError

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
    factor_nnz : values stored in the factors, a memory measure (L + U for SuperLU, supernode
        padding included; the one triangle for PARDISO).
    memory_bytes : memory the factors hold (see :mod:`solver.linalg.memory`).
    check_every_solve : check the backward error of every solve rather than only the first
        (one matvec, measured 6-7% of a solve at 0.1-0.36 M dofs). Off by default: the check
        tests the factors, and the first solve already shows a spoiled factorization.
    """

    backend: str
    factor_seconds: float
    fell_back: bool
    backward_error: float | None
    factor_nnz: int | None

    def __init__(self, A: sp.csr_matrix, backend: str, copy: bool = True):
        # A copy: callers may assemble the next matrix into the same arrays (same pattern),
        # and the check and the fallback must see the matrix that was factored. Callers that
        # hand over a matrix made for this factorization pass copy=False. The matrix is
        # dropped once the first solve has been checked (or at once without a check).
        self.A = A.copy() if copy else A
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
        if self.A is not None and (not self._checked or self.check_every_solve):
            self._checked = True
            eta = self._backward_error(b, x)
            self.backward_error = eta
            if not eta <= BACKWARD_ERROR_TOL:           # also catches NaN
                x = self._recover(b, eta)
            if not self.check_every_solve:
                self.release_matrix()
        return x

    def release_matrix(self) -> None:
        """Drop the copy of the matrix kept for the accuracy check and the fallback (both done
        by the first solve): a factorization kept for many solves then holds its factors only."""
        self.A = None
        self.__dict__.pop("_rowmax", None)
        self.__dict__.pop("_equilibration", None)

    @property
    def memory_bytes(self) -> int:
        """Bytes held by the factors (estimated from their size, see ``memory.py``)."""
        from .memory import factor_bytes
        return factor_bytes(self.backend if not self.fell_back else "superlu",
                            self.factor_nnz or 0)

    @functools.cached_property
    def _rowmax(self) -> np.ndarray:
        """(n,) largest |entry| of each row."""
        return _row_max_abs(self.A)

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
        self.factor_nnz = self._lu.nnz
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


def _row_max_abs(A: sp.csr_matrix) -> np.ndarray:
    """(n,) largest |entry| of each row of a CSR matrix (0 for an empty row)."""
    out = np.zeros(A.shape[0])
    counts = np.diff(A.indptr)
    rows = np.flatnonzero(counts)
    if rows.size:
        out[rows] = np.maximum.reduceat(np.abs(A.data[:A.indptr[-1]]), A.indptr[rows])
    return out


def _splu_default(A: sp.csr_matrix):
    try:
        return spla.splu(A.tocsc())
    except RuntimeError as exc:                         # "Factor is exactly singular"
        raise SolverError(
            f"The matrix is singular ({exc}). Check that the displacement boundary conditions "
            "stop every rigid-body motion and that every pressure dof is coupled.") from exc

