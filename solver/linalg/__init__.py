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

Modules: ``ordering`` (nested dissection), ``factor`` (the ``Factor`` interface, accuracy check
and fallback), ``superlu`` and ``pardiso`` (the backends), ``backends`` (which are installed,
the default, ``factor``), ``memory`` (what a factorization needs and holds, refusal when it
cannot fit), ``cache`` (factorizations kept under a memory budget), ``measure`` (timing
backends), ``synthetic`` (a test matrix).

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

from .backends import PARDISO_FROM, available_backends, default_backend, factor
from .cache import FactorCache
from .factor import BACKWARD_ERROR_TOL, Factor
from .measure import measure_backends
from .memory import available_bytes, check_fits, estimate_factor_bytes
from .ordering import Ordering
from .synthetic import SyntheticBiot, synthetic_biot_matrix

__all__ = [
    "BACKWARD_ERROR_TOL",
    "Factor",
    "FactorCache",
    "Ordering",
    "PARDISO_FROM",
    "SyntheticBiot",
    "available_backends",
    "available_bytes",
    "check_fits",
    "default_backend",
    "estimate_factor_bytes",
    "factor",
    "measure_backends",
    "synthetic_biot_matrix",
]
