"""Reference element: properties every Lagrange element and quadrature rule must have."""

import numpy as np
import pytest
from math import factorial

from solver.fem import element

NODES = np.array([[0, 0], [1, 0], [0, 1], [0.5, 0], [0.5, 0.5], [0, 0.5]], float)


def test_p2_shape_functions_are_one_at_their_node_and_zero_at_the_others():
    N, _ = element.p2(NODES)
    np.testing.assert_allclose(N, np.eye(6), atol=1e-14)


def test_shape_functions_sum_to_one_and_their_gradients_to_zero():
    xi = np.random.default_rng(1).random((20, 2)) * 0.5
    for f in (element.p1, element.p2):
        N, dN = f(xi)
        np.testing.assert_allclose(N.sum(axis=1), 1.0, atol=1e-14)
        np.testing.assert_allclose(dN.sum(axis=1), 0.0, atol=1e-13)


def test_p2_gradients_match_finite_differences():
    xi = np.array([[0.2, 0.3], [0.6, 0.1]])
    _, dN = element.p2(xi)
    h = 1e-6
    for k in range(2):
        e = np.zeros(2)
        e[k] = h
        fd = (element.p2(xi + e)[0] - element.p2(xi - e)[0]) / (2 * h)
        np.testing.assert_allclose(dN[..., k], fd, atol=1e-8)


@pytest.mark.parametrize("degree", [1, 2, 4])
def test_triangle_rules_integrate_monomials_exactly(degree):
    # int over the unit triangle of x^a y^b = a! b! / (a + b + 2)!  (standard result)
    x, w = element.triangle_rule(degree)
    for a in range(degree + 1):
        for b in range(degree + 1 - a):
            exact = factorial(a) * factorial(b) / factorial(a + b + 2)
            assert abs((w * x[:, 0] ** a * x[:, 1] ** b).sum() - exact) < 1e-14


def test_line_rule_integrates_quintic_exactly():
    s, w = element.LINE_RULE
    for k in range(6):
        assert abs((w * s ** k).sum() - 1 / (k + 1)) < 1e-14
