"""Choosing a backend: which are installed, which is fastest for a size, and ``factor``."""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from solver.errors import InputError

from . import pardiso
from .factor import Factor
from .ordering import Ordering
from .pardiso import _PardisoFactor
from .superlu import _SuperLUFactor, _SuperLUNDFactor


def available_backends() -> list[str]:
    """Names accepted by :func:`factor` on this machine, fastest first."""
    names = ["superlu-nd", "superlu"]
    if pardiso._pardiso_entry() is not None:
        names.insert(0, "pardiso")
    return names


# Below this many unknowns SuperLU on the nested-dissection order is as fast as PARDISO
# (measured at 99k: 1.1-1.5 s against 0.7-1.3 s) and PARDISO's threads only cost on a busy
# machine (example-sized runs were 4-10 times slower with it); above it PARDISO wins 2-4x.
PARDISO_FROM = 100_000


def default_backend(n: int | None = None) -> str:
    """The fastest installed backend by measurement for a matrix of ``n`` unknowns:
    ``"pardiso"`` when importable and the matrix is large, else ``"superlu-nd"`` (numbers in
    the docstring of :mod:`solver.linalg`; rerun with :func:`measure_backends`)."""
    if n is not None and n < PARDISO_FROM:
        return "superlu-nd"
    return "pardiso" if pardiso._pardiso_entry() is not None else "superlu-nd"



def factor(A, backend: str | None = None, ordering: Ordering | None = None,
           check: bool = True, symmetric: bool = True, copy: bool = True,
           keep_plan: bool = False) -> Factor:
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
    copy : keep a copy of ``A`` for the check (the caller may reuse its arrays); False when
        the matrix was made for this factorization alone (saves one matrix of memory).
    keep_plan : "superlu-nd": keep the permutation of this pattern on ``ordering`` for the
        next matrix with the same pattern (Newton iterations), at the cost of one int array
        of nnz entries.

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
                             fix="install the pardiso extra, pip install 'poroplane[pardiso]' "
                                 "(or pip install pypardiso; x86_64 only, about 1 GB of "
                                 "Intel MKL), or use 'superlu-nd'.")
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
        fac = _SuperLUNDFactor(A, ordering, symmetric, copy=copy,
                               keep_plan=keep_plan and ordering is not None)
    elif backend == "superlu":
        fac = _SuperLUFactor(A, copy=copy)
    else:
        fac = _PardisoFactor(A, copy=copy)
    if not check:
        fac._checked = True
        fac.release_matrix()
    return fac

