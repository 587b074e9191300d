"""Memory of factorizations: what one holds, what one will need, what the machine has free.

Measured on the benchmark section (P2/P1 plane strain, ``solver/bench.py``), one process per
factorization, resident memory read from ``/proc/self/statm`` before and after and the peak
from ``getrusage``:

    ========  ==========  ====================  ====================  ===================
    unknowns  superlu-nd  superlu-nd bytes per  pardiso peak          superlu (COLAMD)
              L+U values  value: held / peak    (phase 11 estimate)   L+U values
    ========  ==========  ====================  ====================  ===================
    23 k      3.7 M       14.4 / 17.5           76 MB (38 MB)         8.9 M (2.4x nd)
    92 k      18.9 M      12.6 / 15.1           216 MB (165 MB)       50.8 M (2.7x nd)
    363 k     91.1 M      10.7 / 13.7           812 MB (700 MB)       (not run)
    ========  ==========  ====================  ====================  ===================

The nested-dissection fill of these 2-D meshes grows as ``n log2 n (0.645 log2 n + 1.7)``
values (least squares through the three sizes above, within 1.5%; the synthetic 1.5 M matrix
of :mod:`solver.linalg` gives 452 M, the formula 456 M). It is what :func:`estimate_factor_bytes`
uses before any factorization exists; afterwards the fill of the factorization just made is
known exactly (``Factor.factor_nnz``) and PARDISO reports its own need after its symbolic
phase (:func:`solver.linalg.pardiso.symbolic_bytes`).
"""

from __future__ import annotations

import math
import os

from solver.errors import TooLargeError

#: Peak bytes per stored factor value during a factorization (values, indices, the permuted
#: copy of the matrix and SuperLU's growing work arrays; upper end of the measurements above).
PEAK_BYTES_PER_VALUE = {"superlu-nd": 15.0, "superlu": 13.0, "pardiso": 20.0}
#: Bytes per stored value once the factorization is done (what a cached one holds).
HELD_BYTES_PER_VALUE = {"superlu-nd": 12.0, "superlu": 12.0, "pardiso": 18.0}
#: Margin on the size model of the fill (the model is fitted to one section; wider or more
#: irregular sections fill somewhat more).
FILL_MARGIN = 1.2


def available_bytes() -> int:
    """Memory the machine can give this process now: ``MemAvailable`` of ``/proc/meminfo``
    (Linux), else the physical memory (os.sysconf), in bytes."""
    try:
        with open("/proc/meminfo") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    try:
        return int(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return 2 ** 62                                  # unknown: do not refuse


def resident_bytes() -> int:
    """Resident memory of this process now (Linux ``/proc/self/statm``; 0 elsewhere)."""
    try:
        with open("/proc/self/statm") as fh:
            return int(fh.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")
    except (OSError, ValueError, AttributeError):
        return 0


def nd_fill(n: int) -> float:
    """Values in L + U of "superlu-nd" for ``n`` unknowns of a P2/P1 section (size model)."""
    if n < 2:
        return float(n)
    lg = math.log2(n)
    return n * lg * (0.645 * lg + 1.7)


def estimate_fill(n: int, backend: str) -> float:
    """Values the factors of ``backend`` will store for ``n`` unknowns (size model, with
    :data:`FILL_MARGIN`)."""
    fill = nd_fill(n) * FILL_MARGIN
    if backend == "superlu":                    # COLAMD: 2.4x at 23 k, 2.7x at 92 k, growing
        fill *= 2.7 * max(1.0, n / 92_000) ** 0.09
    elif backend == "pardiso":                  # one triangle: 0.55-0.57 of L + U measured
        fill *= 0.57
    return fill


def estimate_factor_bytes(n: int, backend: str, fill: float | None = None) -> float:
    """Peak bytes of one factorization of ``n`` unknowns by ``backend``: from the fill when
    it is known (the factorization just made of the same pattern), else from the size model."""
    if fill is None:
        fill = estimate_fill(n, backend)
    return fill * PEAK_BYTES_PER_VALUE.get(backend, 15.0)


def factor_bytes(backend: str, factor_nnz: int) -> int:
    """Bytes a finished factorization with ``factor_nnz`` stored values holds."""
    return int(factor_nnz * HELD_BYTES_PER_VALUE.get(backend, 12.0))


def gb(nbytes: float) -> str:
    return f"{nbytes / 1e9:.1f} GB"


def check_fits(n: int, backend: str, needed: float | None = None, budget: float | None = None,
               what: str = "the factorization") -> None:
    """Raise :class:`TooLargeError` naming the size and the options when one factorization of
    ``n`` unknowns by ``backend`` needs more than ``budget`` bytes (default: what the machine
    has available now)."""
    if needed is None:
        needed = estimate_factor_bytes(n, backend)
    if budget is None:
        budget = available_bytes()
    if needed <= budget:
        return
    fraction = budget / needed
    # Unknowns grow as the elements: bisect the size model for the largest n that fits.
    lo, hi = 0.0, float(n)
    for _ in range(40):
        mid = 0.5 * (lo + hi)
        if estimate_factor_bytes(int(mid), backend) <= budget:
            lo = mid
        else:
            hi = mid
    fits = max(lo / n, 0.0)
    options = [f"use a coarser mesh (about {100 * fits:.0f}% of the elements: a larger element "
               "size)"]
    if backend != "pardiso":
        options.append("install the pardiso extra (pip install 'poroplane[pardiso]', x86_64 "
                       "only; about two thirds of the memory at this size)")
    if backend == "superlu":
        options.append("use the 'superlu-nd' backend (about a third of the fill)")
    options.append("close other programs to free memory")
    raise TooLargeError(
        f"{what[0].upper() + what[1:]} of {n:,} unknowns with {backend} needs about "
        f"{gb(needed)}, more than the {gb(budget)} of memory available "
        f"({100 * fraction:.0f}% of the need)", fix="; or ".join(options) + ".")

