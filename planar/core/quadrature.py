"""Gauss quadrature rules on the reference line, square and triangle.

Reference cells
---------------
- line: xi in [-1, 1]
- quad: (xi, eta) in [-1, 1]^2
- triangle: (xi, eta) with xi >= 0, eta >= 0, xi + eta <= 1 (area 1/2)

Every rule is returned as ``(points, weights)`` with points of shape (q, d) (d = 1 or 2) and weights of
shape (q,). Triangle weights sum to the reference area 1/2.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from .errors import InputError

__all__ = ["Rule", "gauss_line", "gauss_quad", "gauss_triangle", "rule_for", "TRIANGLE_DEGREES"]


@dataclass(frozen=True)
class Rule:
    """A quadrature rule on a reference cell.

    Attributes
    ----------
    points : ndarray, shape (q, d)
        Points in reference coordinates.
    weights : ndarray, shape (q,)
        Weights; they sum to the measure of the reference cell.
    degree : int
        Highest total polynomial degree integrated exactly.
    cell : str
        ``"line"``, ``"quad"`` or ``"triangle"``.
    """

    points: np.ndarray
    weights: np.ndarray
    degree: int
    cell: str

    @property
    def n_points(self) -> int:
        return int(self.weights.shape[0])


@lru_cache(maxsize=None)
def gauss_line(n: int) -> Rule:
    """Gauss-Legendre rule with ``n`` points on [-1, 1], exact to degree 2n - 1.

    Parameters
    ----------
    n : int
        Number of points, 1 to 10.

    Returns
    -------
    Rule
        Points of shape (n, 1) in increasing order and weights of shape (n,) summing to 2.

    Raises
    ------
    InputError
        If ``n`` is not an integer from 1 to 10.

    Notes
    -----
    Points and weights come from :func:`numpy.polynomial.legendre.leggauss` (the roots of the
    Legendre polynomial P_n and the weights 2 / ((1 - x^2) P_n'(x)^2), Abramowitz and Stegun,
    Handbook of Mathematical Functions, 1964, eq. 25.4.29).

    Examples
    --------
    >>> rule = gauss_line(2)
    >>> rule.points[:, 0] ** 2 * 3
    array([1., 1.])
    >>> float(rule.weights.sum())
    2.0
    """
    if not isinstance(n, (int, np.integer)) or not 1 <= n <= 10:
        raise InputError(f"Gauss-Legendre rule needs 1 to 10 points (an integer), got {n!r}")
    x, w = np.polynomial.legendre.leggauss(int(n))
    pts = np.ascontiguousarray(x, dtype=float).reshape(-1, 1)
    w = np.ascontiguousarray(w, dtype=float)
    pts.setflags(write=False)
    w.setflags(write=False)
    return Rule(pts, w, 2 * n - 1, "line")


@lru_cache(maxsize=None)
def gauss_quad(n: int) -> Rule:
    """Tensor-product Gauss-Legendre rule with ``n`` x ``n`` points on [-1, 1]^2.

    Exact for every monomial xi^a eta^b with a, b <= 2n - 1.
    """
    line = gauss_line(n)
    x = line.points[:, 0]
    xi, eta = np.meshgrid(x, x, indexing="xy")
    wx, wy = np.meshgrid(line.weights, line.weights, indexing="xy")
    pts = np.column_stack([xi.ravel(), eta.ravel()])
    w = (wx * wy).ravel()
    pts.setflags(write=False)
    w.setflags(write=False)
    return Rule(pts, w, 2 * n - 1, "quad")


# Symmetric triangle rules in barycentric orbits (D. A. Dunavant, "High degree efficient symmetrical
# Gaussian quadrature rules for the triangle", Int. J. Numer. Methods Eng. 21, 1985, tables of
# degrees 1-8; values from memory and polished to machine precision below by Newton iteration on the
# moment equations, so their exactness is proven at import rather than trusted).
# Orbit kinds: ("c", w) centroid; ("a", a, w) the three points (a, a, 1-2a); ("abc", a, b, w) the six
# permutations of (a, b, 1-a-b). Weights are fractions of the triangle area.
_ORBITS: dict[int, list[tuple]] = {
    1: [("c", 1.0)],
    2: [("a", 1.0 / 6.0, 1.0 / 3.0)],
    4: [("a", 0.445948490915965, 0.223381589678011), ("a", 0.091576213509771, 0.109951743655322)],
    5: [
        ("c", 0.225),
        ("a", 0.470142064105115, 0.132394152788506),
        ("a", 0.101286507323456, 0.125939180544827),
    ],
    6: [
        ("a", 0.249286745170910, 0.116786275726379),
        ("a", 0.063089014491502, 0.050844906370207),
        ("abc", 0.053145049844817, 0.310352451033784, 0.082851075618374),
    ],
    8: [
        ("c", 0.144315607677787),
        ("a", 0.459292588292723, 0.095091634267285),
        ("a", 0.170569307751760, 0.103217370534718),
        ("a", 0.050547228317031, 0.032458497623198),
        ("abc", 0.008394777409958, 0.263112829634638, 0.027230314174435),
    ],
}
TRIANGLE_DEGREES = tuple(sorted(_ORBITS))


def _expand(orbits, params):
    """Barycentric points and weights from orbit parameters (flat list)."""
    pts, ws, k = [], [], 0
    for orb in orbits:
        kind = orb[0]
        if kind == "c":
            w = params[k]; k += 1
            pts.append((1 / 3, 1 / 3)); ws.append(w)
        elif kind == "a":
            a, w = params[k], params[k + 1]; k += 2
            c = 1 - 2 * a
            for p in ((a, a), (a, c), (c, a)):
                pts.append(p); ws.append(w)
        else:
            a, b, w = params[k], params[k + 1], params[k + 2]; k += 3
            c = 1 - a - b
            for p in ((a, b), (b, a), (a, c), (c, a), (b, c), (c, b)):
                pts.append(p); ws.append(w)
    return np.array(pts, dtype=float), np.array(ws, dtype=float)


def _exact_monomial(a: int, b: int) -> float:
    """Integral of xi^a eta^b over the unit reference triangle: a! b! / (a + b + 2)!."""
    from math import factorial

    return factorial(a) * factorial(b) / factorial(a + b + 2)


def _polish(orbits, degree):
    params = []
    for orb in orbits:
        params.extend(orb[1:])
    params = np.array(params, dtype=float)
    mons = [(a, b) for a in range(degree + 1) for b in range(degree + 1 - a)]
    exact = np.array([_exact_monomial(a, b) for a, b in mons])

    def residual(p):
        pts, w = _expand(orbits, p)
        w = 0.5 * w
        return np.array([np.sum(w * pts[:, 0] ** a * pts[:, 1] ** b) for a, b in mons]) - exact

    for _ in range(20):
        r = residual(params)
        if np.max(np.abs(r)) < 1e-17:
            break
        jac = np.empty((len(mons), params.size))
        h = 1e-7
        for j in range(params.size):
            dp = np.zeros_like(params); dp[j] = h
            jac[:, j] = (residual(params + dp) - residual(params - dp)) / (2 * h)
        step = np.linalg.lstsq(jac, -r, rcond=None)[0]
        params = params + step
        if np.max(np.abs(step)) < 1e-16:
            break
    return params


@lru_cache(maxsize=None)
def gauss_triangle(degree: int) -> Rule:
    """Symmetric Gauss rule on the reference triangle exact to at least ``degree``.

    Parameters
    ----------
    degree : int
        Required polynomial degree, 1 to 8. The smallest tabulated symmetric rule of at least this
        degree is returned (degrees 1, 2, 4, 5, 6, 8 with 1, 3, 6, 7, 12, 16 points, all weights
        positive and all points inside).

    Notes
    -----
    Orbits after Dunavant (Int. J. Numer. Methods Eng. 21, 1985); their exactness is checked against
    the closed form a! b! / (a + b + 2)! for the monomials xi^a eta^b.
    """
    if not isinstance(degree, (int, np.integer)) or not 1 <= degree <= TRIANGLE_DEGREES[-1]:
        raise InputError(
            f"triangle rules exist for degree 1 to {TRIANGLE_DEGREES[-1]}, got {degree!r}"
        )
    d = min(k for k in TRIANGLE_DEGREES if k >= degree)
    params = _polish(_ORBITS[d], d)
    bary, w = _expand(_ORBITS[d], params)
    pts = np.ascontiguousarray(bary)
    w = 0.5 * w
    pts.setflags(write=False)
    w.setflags(write=False)
    return Rule(pts, w, d, "triangle")


def rule_for(cell: str, order: int) -> Rule:
    """A rule for a reference cell.

    Parameters
    ----------
    cell : {"line", "quad", "triangle"}
    order : int
        Points per direction for line and quad; polynomial degree for triangle.
    """
    if cell == "line":
        return gauss_line(order)
    if cell == "quad":
        if not 1 <= order <= 5:
            raise InputError(f"quad rules have 1 to 5 points per direction, got {order!r}")
        return gauss_quad(order)
    if cell == "triangle":
        return gauss_triangle(order)
    raise InputError(f"unknown reference cell {cell!r}; pick one of 'line', 'quad', 'triangle'")
