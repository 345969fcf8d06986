"""The arithmetic of the solve check: the probe vector, norms and products of a lower triangle,
Rayleigh quotients, and the condition estimate by inverse iteration run beside the factorization.

:mod:`planar.core.diagnose` (the check of the answer) and :mod:`planar.core._diagnosis` (the
diagnosis of causes) both work on these.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

__all__ = ["probe_vector", "solve_with_probe", "matrix_figures", "start_figures", "also_wait", "norm_inf", "matvec"]

EPS = float(np.finfo(float).eps)
#: largest system that gets a random inverse-iteration column with its load cases
PROBE_LIMIT = 100_000
#: seed of the inverse-iteration start vector (same estimate on every run)
SEED = 13


def _figures(err: float) -> float:
    return float(max(0.0, min(16.0, -np.log10(max(err, 1e-300)))))


def probe_vector(n: int) -> np.ndarray:
    """The inverse-iteration start vector: uniform in [-1, 1] from a fixed seed (reproducible)."""
    return np.random.default_rng(SEED).uniform(-1.0, 1.0, n)


def solve_with_probe(fac, rhs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Solve the load cases and one inverse-iteration step from :func:`probe_vector` together.

    The direct back ends take the probe as one more column of the same solve call; the iterative one
    solves it roughly (a few cycles), since a Rayleigh quotient needs only a direction.

    Above ``PROBE_LIMIT`` unknowns no probe is solved: with PARDISO one more column costs about as
    much as the load case itself (measured: +0.04 s, 1.2 % of meshing and solving, at 10^5 unknowns;
    +0.12 s, 3.2 %, at 2 x 10^5; +1 to 2 s at 10^6), and the estimate rests on the Rayleigh
    quotients of the load cases' own displacements (the conditioning as the loads see it), sharpened
    by inverse iteration when it is suspect.

    Returns
    -------
    sol : ndarray, shape (n, m + 1) or (n, m)
        The load cases' solutions, then ``K^-1 probe``.
    probe : ndarray, shape (n,), or None
    """
    n = rhs.shape[0]
    if n > PROBE_LIMIT:  # the column would cost about as much as a load case
        return np.asarray(fac.solve(rhs), dtype=float).reshape(n, -1), None
    probe = probe_vector(n)
    if hasattr(fac, "approximate"):
        u = np.asarray(fac.solve(rhs), dtype=float).reshape(n, -1)
        return np.column_stack([u, fac.approximate(probe)]), probe
    sol = np.asarray(fac.solve(np.column_stack([rhs.reshape(n, -1), probe])), dtype=float)
    return sol.reshape(n, -1), probe


def _inverse(fac, x: np.ndarray) -> np.ndarray:
    if hasattr(fac, "approximate"):
        return np.asarray(fac.approximate(x), dtype=float)
    return np.asarray(fac.solve(x), dtype=float).reshape(-1)


def _diagonal(L: sp.csc_matrix) -> np.ndarray:
    """Diagonal of a lower triangle in CSC form: the first entry of each column when sorted (no search)."""
    n = L.shape[0]
    # the diagonal is the smallest row of each column of a lower triangle: first when sorted
    if n and L.indptr[-1] > 0 and np.all(L.indptr[1:] > L.indptr[:-1]):
        first = L.indptr[:-1]
        if np.array_equal(L.indices[first], np.arange(n, dtype=L.indices.dtype)):
            return L.data[first]
    return L.diagonal()


def matrix_figures(lower: sp.spmatrix) -> tuple[np.ndarray, float]:
    """The diagonal of K and ``||K||_inf``, from its lower triangle."""
    L = _lower(lower)
    d = _diagonal(L)
    return d, norm_inf(L, d)


def start_figures(lower: sp.spmatrix, solver: str):
    """:func:`matrix_figures` in the background while a solver orders the matrix on one core.

    For the back ends that overlap their ordering (``solvers.OVERLAPS_ORDERING``) the figures are
    computed meanwhile on the idle core; returns a Future, or None for the other back ends.
    """
    from . import solvers
    from .parallel import background

    if solver not in solvers.OVERLAPS_ORDERING:
        return None
    return background(matrix_figures, lower)


def also_wait(after_ordering, figures):
    """``after_ordering`` that also waits for the figures started by :func:`start_figures`."""
    if figures is None:
        return after_ordering

    def wait() -> None:
        if after_ordering is not None:
            after_ordering()
        from concurrent.futures import wait as wait_for

        wait_for([figures])

    return wait


def _lower(lower) -> sp.csc_matrix:
    return lower if sp.isspmatrix_csc(lower) or isinstance(lower, sp.csc_array) else sp.csc_matrix(lower)


def norm_inf(lower: sp.spmatrix, diagonal: np.ndarray | None = None) -> float:
    """``||K||_inf`` (the largest absolute row sum, an upper bound of lambda_max) from K's lower triangle.

    Two sparse products of ``|L|`` with a vector of ones (row and column sums of the triangle).
    """
    L = _lower(lower)
    n = L.shape[0]
    if n == 0:
        return 0.0
    A = sp.csc_matrix((np.abs(L.data), L.indices, L.indptr), shape=L.shape)
    one = np.ones(n)
    d = np.abs(_diagonal(L) if diagonal is None else diagonal)
    return float(np.max(A @ one + A.T @ one - d))


def matvec(lower: sp.spmatrix, X: np.ndarray, diagonal: np.ndarray | None = None) -> np.ndarray:
    """``K @ X`` from K's lower triangle (as :meth:`ReducedSystem.matvec`, with the diagonal found cheaply)."""
    L = _lower(lower)
    d = _diagonal(L) if diagonal is None else diagonal
    Y = L @ X
    Y += L.T @ X
    Y -= d[:, None] * X if X.ndim == 2 else d * X
    return Y


def _rayleigh(V: np.ndarray, KV: np.ndarray) -> np.ndarray:
    num = np.einsum("ij,ij->j", V, KV)
    den = np.einsum("ij,ij->j", V, V)
    with np.errstate(invalid="ignore", divide="ignore"):
        q = np.where(den > 0, num / np.where(den > 0, den, 1.0), np.inf)
    return np.where(np.isfinite(q), q, np.inf)


def _backward_tol(fac, n: int) -> float:
    if getattr(fac, "name", "") == "amg":
        return 10.0 * float(getattr(fac, "rtol", 1e-10))
    return max(1e-12, 100.0 * np.sqrt(n) * EPS)
