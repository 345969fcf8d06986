"""Sparse linear solvers behind one small interface.

``factorize(K)`` returns an object whose ``solve(b)`` solves K x = b for one or several right-hand
sides, factorizing once. Back ends:

- ``"cholmod"``: sparse Cholesky from CHOLMOD as shipped in the cvxopt wheel (default);
- ``"superlu"``: scipy's SuperLU, always there, slower and hungrier on large models.
"""
from __future__ import annotations

import time
from typing import Protocol

import numpy as np
import scipy.sparse as sp

from .errors import InputError, SolverError

__all__ = ["Factorization", "factorize", "available_solvers"]


class Factorization(Protocol):
    name: str

    def solve(self, b: np.ndarray) -> np.ndarray: ...


def _have_cholmod() -> bool:
    try:
        import cvxopt.cholmod  # noqa: F401
    except Exception:
        return False
    return True


def available_solvers() -> list[str]:
    """Names of the back ends that can run here."""
    out = []
    if _have_cholmod():
        out.append("cholmod")
    out.append("superlu")
    return out


_SINGULAR = (
    "the stiffness matrix is singular or not positive definite: part of the model can move without "
    "straining (a mechanism, a region joined by a single node, or zero-energy modes from a reduced "
    "integration rule); check the supports and connectivity, or use the full integration rule"
)


class _Cholmod:
    name = "cholmod"

    def __init__(self, K: sp.spmatrix):
        import cvxopt
        import cvxopt.cholmod as cholmod

        L = sp.tril(K, format="coo")
        n = K.shape[0]
        A = cvxopt.spmatrix(
            cvxopt.matrix(L.data.astype(float)),
            cvxopt.matrix(L.row.astype(np.int64)),
            cvxopt.matrix(L.col.astype(np.int64)),
            (n, n),
        )
        cholmod.options["supernodal"] = 2
        cholmod.options["postorder"] = True
        try:
            F = cholmod.symbolic(A)
            cholmod.numeric(A, F)
        except ArithmeticError:
            raise SolverError(_SINGULAR) from None
        self._F = F
        self._cholmod = cholmod
        self._cvxopt = cvxopt
        self.n = n

    def solve(self, b):
        b = np.asarray(b, dtype=float)
        B = self._cvxopt.matrix(np.array(b.reshape(self.n, -1), dtype=float, order="F"))
        self._cholmod.solve(self._F, B)
        return np.array(B).reshape(b.shape)


class _SuperLU:
    name = "superlu"

    def __init__(self, K):
        import scipy.sparse.linalg as spla

        try:
            self._lu = spla.splu(sp.csc_matrix(K))
        except RuntimeError:
            raise SolverError(_SINGULAR) from None

    def solve(self, b):
        x = self._lu.solve(np.asarray(b, dtype=float))
        if not np.all(np.isfinite(x)):
            raise SolverError(_SINGULAR)
        return x


_BACKENDS = {"cholmod": _Cholmod, "superlu": _SuperLU}


def factorize(K: sp.spmatrix, method: str = "auto") -> Factorization:
    """Factorize a symmetric positive-definite stiffness matrix.

    Parameters
    ----------
    K : sparse matrix, shape (n, n)
    method : {"auto", "cholmod", "superlu"}
        ``"auto"`` takes CHOLMOD where it is installed, else SuperLU.

    Raises
    ------
    SolverError
        If the matrix is singular (a mechanism) or the back end is not installed.
    """
    if method == "auto":
        method = "cholmod" if _have_cholmod() else "superlu"
    if method not in _BACKENDS:
        raise InputError(f"unknown solver {method!r}; pick one of 'auto', {', '.join(map(repr, _BACKENDS))}")
    if method == "cholmod" and not _have_cholmod():
        raise SolverError("the 'cholmod' solver needs cvxopt: pip install cvxopt")
    if K.shape[0] == 0:
        raise SolverError("there are no free unknowns left: every displacement is prescribed")
    return _BACKENDS[method](K)
