"""Quadrature rules against reference values.

Sources: Gauss-Legendre points and weights from numpy.polynomial.legendre.leggauss (reference
library); integral of x^a y^b over the unit triangle = a! b! / (a + b + 2)! (O. C. Zienkiewicz,
R. L. Taylor and J. Z. Zhu, The Finite Element Method: Its Basis and Fundamentals, 6th ed., 2005,
the area-coordinate integration formula; a standard result).
"""
from math import factorial

import numpy as np
import pytest

from planar.core.errors import InputError
from planar.core.quadrature import gauss_line, gauss_quad, gauss_triangle, rule_for


@pytest.mark.parametrize("n", range(1, 11))
def test_gauss_legendre_matches_numpy(n):
    rule = gauss_line(n)
    x, w = np.polynomial.legendre.leggauss(n)
    np.testing.assert_allclose(rule.points[:, 0], x, atol=1e-15)
    np.testing.assert_allclose(rule.weights, w, atol=1e-15)
    assert np.all(np.diff(rule.points[:, 0]) > 0)


@pytest.mark.parametrize("n", range(1, 11))
def test_gauss_legendre_exact_to_degree_2n_minus_1(n):
    """Closed form: the integral of x^k over [-1, 1] is 2 / (k + 1) for even k and 0 for odd k
    (common practice); an n-point Gauss rule is exact up to k = 2n - 1 and not for x^(2n)."""
    rule = gauss_line(n)
    x = rule.points[:, 0]
    k = np.arange(2 * n + 1)
    got = np.sum(rule.weights[None, :] * x[None, :] ** k[:, None], axis=1)
    exact = np.where(k % 2 == 0, 2.0 / (k + 1), 0.0)
    np.testing.assert_allclose(got[:-1], exact[:-1], rtol=0, atol=1e-14)
    assert abs(got[-1] - exact[-1]) > 1e-6
    assert rule.degree == 2 * n - 1


@pytest.mark.parametrize("n", range(1, 6))
def test_tensor_rule_exact_for_monomials(n):
    rule = gauss_quad(n)
    for a in range(2 * n):
        for b in range(2 * n):
            exact = (1 - (-1) ** (a + 1)) / (a + 1) * (1 - (-1) ** (b + 1)) / (b + 1)
            got = np.sum(rule.weights * rule.points[:, 0] ** a * rule.points[:, 1] ** b)
            assert got == pytest.approx(exact, abs=1e-14)


@pytest.mark.parametrize("degree", range(1, 9))
def test_triangle_rule_integrates_monomials(degree):
    rule = gauss_triangle(degree)
    assert rule.degree >= degree
    for a in range(degree + 1):
        for b in range(degree + 1 - a):
            exact = factorial(a) * factorial(b) / factorial(a + b + 2)
            got = np.sum(rule.weights * rule.points[:, 0] ** a * rule.points[:, 1] ** b)
            assert got == pytest.approx(exact, rel=1e-13, abs=1e-16)


@pytest.mark.parametrize("degree", range(1, 9))
def test_triangle_rules_symmetric_positive_inside(degree):
    rule = gauss_triangle(degree)
    x, y = rule.points[:, 0], rule.points[:, 1]
    assert np.all(rule.weights > 0)
    assert np.all((x > 0) & (y > 0) & (x + y < 1))
    # symmetric: the point set is invariant under swapping the barycentric coordinates
    bary = np.column_stack([1 - x - y, x, y])
    key = np.sort(np.round(bary, 12), axis=1)
    for perm in ([1, 0, 2], [2, 1, 0], [0, 2, 1]):
        k2 = np.sort(np.round(bary[:, perm], 12), axis=1)
        assert sorted(map(tuple, key)) == sorted(map(tuple, k2))


def test_bad_rules_are_refused():
    with pytest.raises(InputError, match="1 to 10 points"):
        gauss_line(0)
    with pytest.raises(InputError, match="degree 1 to 8"):
        gauss_triangle(9)
    with pytest.raises(InputError, match="1 to 5 points"):
        rule_for("quad", 6)
    with pytest.raises(InputError, match="unknown reference cell"):
        rule_for("hexagon", 2)
