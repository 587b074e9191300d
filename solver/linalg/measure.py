"""Timing the installed backends on one matrix (``poroplane bench``)."""

from __future__ import annotations

import time

import numpy as np
import scipy.sparse as sp

from .backends import available_backends, factor
from .memory import resident_bytes
from .ordering import Ordering


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
    ``ordering_s``, ``held_bytes`` (resident memory the factorization added, Linux).
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
            r0 = resident_bytes()
            f = factor(A, name, ordering=ordering)
            x = f.solve(b)                              # checked solve (may fall back)
            held = resident_bytes() - r0
            row["factor_s"] = min(row["factor_s"], f.factor_seconds)
            t0 = time.perf_counter()
            f._solve(b)                                 # the bare solve, without the check
            row["solve_s"] = min(row["solve_s"], time.perf_counter() - t0)
            row.update(residual=float(np.linalg.norm(A @ x - b) / np.linalg.norm(b)),
                       backward_error=f.backward_error, fell_back=f.fell_back,
                       factor_nnz=f.factor_nnz, held_bytes=held,
                       ordering_s=ordering_s if name == "superlu-nd" else 0.0)
            f.free()
            del f
        rows.append(row)
    return rows

