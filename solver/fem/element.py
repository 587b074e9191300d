"""Reference triangle: P2 (6-node) and P1 (3-node) shape functions and quadrature rules.

Reference coordinates (xi, eta) on the unit triangle with corners (0,0), (1,0), (0,1); node
order as in Gmsh ``triangle6`` (corners, then mid-sides 0-1, 1-2, 2-0).
"""

from __future__ import annotations

import numpy as np

# Symmetric triangle rules (Strang and Fix 1973, An Analysis of the Finite Element Method,
# table 4.1, table number from memory; Dunavant 1985). Weights sum to 1/2; the tests check
# their exactness on monomials.
_A, _B = 0.445948490915965, 0.091576213509771
_WA, _WB = 0.223381589678011 / 2, 0.109951743655322 / 2

TRIANGLE_RULES: dict[int, tuple[np.ndarray, np.ndarray]] = {
    1: (np.array([[1 / 3, 1 / 3]]), np.array([0.5])),
    2: (np.array([[1 / 6, 1 / 6], [2 / 3, 1 / 6], [1 / 6, 2 / 3]]), np.full(3, 1 / 6)),
    4: (np.array([[_A, _A], [1 - 2 * _A, _A], [_A, 1 - 2 * _A],
                  [_B, _B], [1 - 2 * _B, _B], [_B, 1 - 2 * _B]]),
        np.array([_WA, _WA, _WA, _WB, _WB, _WB])),
}

# Gauss-Legendre on [0, 1] for edges.
_g, _w = np.polynomial.legendre.leggauss(3)
LINE_RULE = (0.5 * (_g + 1.0), 0.5 * _w)


def triangle_rule(degree: int) -> tuple[np.ndarray, np.ndarray]:
    """Points (nq, 2) and weights (nq,) exact for polynomials of the given degree."""
    for d in sorted(TRIANGLE_RULES):
        if d >= degree:
            return TRIANGLE_RULES[d]
    raise ValueError(f"no triangle rule of degree {degree}")


def p1(xi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """P1 values (nq, 3) and reference gradients (nq, 3, 2) at points xi (nq, 2)."""
    x, y = xi[:, 0], xi[:, 1]
    n = np.column_stack([1 - x - y, x, y])
    dn = np.broadcast_to(np.array([[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]]), (len(xi), 3, 2))
    return n, dn.copy()


def p2(xi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """P2 values (nq, 6) and reference gradients (nq, 6, 2) at points xi (nq, 2)."""
    x, y = xi[:, 0], xi[:, 1]
    l0, l1, l2 = 1 - x - y, x, y
    n = np.column_stack([l0 * (2 * l0 - 1), l1 * (2 * l1 - 1), l2 * (2 * l2 - 1),
                         4 * l0 * l1, 4 * l1 * l2, 4 * l2 * l0])
    # d l / d(xi, eta): l0 -> (-1, -1), l1 -> (1, 0), l2 -> (0, 1)
    dl = np.array([[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]])
    L = np.stack([l0, l1, l2], axis=1)  # (nq, 3)
    dn = np.empty((len(xi), 6, 2))
    for i in range(3):
        dn[:, i] = (4 * L[:, i] - 1)[:, None] * dl[i]
    for k, (i, j) in enumerate([(0, 1), (1, 2), (2, 0)]):
        dn[:, 3 + k] = 4 * (L[:, i][:, None] * dl[j] + L[:, j][:, None] * dl[i])
    return n, dn


def line3(s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Quadratic line values (nq, 3) and d/ds (nq, 3) on s in [0, 1]; nodes end, end, middle."""
    n = np.column_stack([(1 - s) * (1 - 2 * s), s * (2 * s - 1), 4 * s * (1 - s)])
    dn = np.column_stack([4 * s - 3, 4 * s - 1, 4 - 8 * s])
    return n, dn
