"""The MKL PARDISO back end of :func:`planar.core.solvers.factorize`, called through ctypes.

Real symmetric positive-definite mode on the upper triangle (the CSC arrays of the lower triangle
read as CSR), zero-based. The MKL runtime is the one the ``planar[fast]`` extra installs (pypardiso's
mkl wheel), found once without a directory search. Besides solves, the factorization can return the
Schur complement on a few hundred marked unknowns (eliminated last), optionally with pairs of
unknowns turned to given directions first (an edge node's normal and tangential motion); the
bearing-contact set (:mod:`planar.core.contact`) works on that complement.
"""
from __future__ import annotations

import os
from typing import Callable

import numpy as np
import scipy.sparse as sp

from ._singular import _SINGULAR, _numerical
from .errors import ResourceError, SolverError

_EPS = float(np.finfo(float).eps)

_MKL = None


_MKL_PATH: list = []


def _mkl_path() -> str | None:
    """Where the MKL runtime (from the pypardiso extra's mkl wheel) is, found once."""
    if _MKL_PATH:
        return _MKL_PATH[0]
    import importlib.metadata as md
    import ctypes.util

    import glob
    import sys

    path = os.environ.get("PYPARDISO_MKL_RT")
    if path is None:  # where pip puts the mkl wheel's libraries (a plain listing, no tree search)
        found = sorted(glob.glob(os.path.join(sys.prefix, "lib", "libmkl_rt.so*")), key=len)
        path = found[0] if found else None
    if path is None:
        try:
            for f in md.distribution("mkl").files or []:
                if "mkl_rt" in f.name:
                    path = str(f.locate())
                    break
        except md.PackageNotFoundError:
            path = None
    if path is None:
        path = ctypes.util.find_library("mkl_rt")
    _MKL_PATH.append(path)
    return path


def _mkl_library():
    """The MKL runtime that the pypardiso extra installs (found once, without a directory search)."""
    global _MKL
    if _MKL is not None:
        return _MKL
    import ctypes

    path = _mkl_path()
    if path is None:
        raise SolverError("the 'pardiso' solver needs Intel MKL: pip install 'planar[fast]'")
    lib = ctypes.CDLL(path)
    fn = lib.pardiso
    i32 = ctypes.POINTER(ctypes.c_int32)
    fn.argtypes = [ctypes.POINTER(ctypes.c_int64), i32, i32, i32, i32, i32, ctypes.c_void_p, i32, i32, i32,
                   i32, i32, i32, ctypes.c_void_p, ctypes.c_void_p, i32]
    fn.restype = None
    _MKL = fn
    return fn


class _Pardiso:
    """MKL PARDISO, real symmetric positive definite (mtype 2), on the upper triangle, zero-based."""

    name = "pardiso"

    def __init__(self, lower, *, after_ordering: Callable[[], None] | None = None,
                 schur: np.ndarray | None = None, schur_basis: tuple | None = None, **_):
        import ctypes

        self._fn = _mkl_library()
        L = sp.csc_matrix(lower)
        n = L.shape[0]
        marked = np.zeros(0, np.int64) if schur is None else np.unique(np.asarray(schur, dtype=np.int64))
        use_schur = 0 < marked.size <= n // 2 and marked[0] >= 0 and marked[-1] < n
        self._basis = _pair_basis(schur_basis, n) if use_schur and schur_basis is not None else None
        if self._basis is not None:  # factorize T^T K T: the pairs' unknowns turned to their directions
            L = _turned_lower(L, *self._basis)
        # the CSC arrays of the lower triangle are the CSR arrays of the upper triangle
        self._ia = np.ascontiguousarray(L.indptr, dtype=np.int32)
        self._ja = np.ascontiguousarray(L.indices, dtype=np.int32)
        self._a = np.ascontiguousarray(L.data, dtype=np.float64)
        self.n = n
        self._pt = np.zeros(64, dtype=np.int64)
        self._iparm = np.zeros(64, dtype=np.int32)
        ip = self._iparm
        ip[0] = 1    # use the values below
        ip[1] = 2    # nested-dissection ordering (METIS)
        ip[9] = 8    # pivot perturbation 1e-8
        ip[17] = -1  # report the non-zeros of the factor
        ip[34] = 1   # zero-based indices
        self._c = ctypes
        self._perm = None
        self.schur_unknowns: np.ndarray | None = None
        self.schur: np.ndarray | None = None
        self._schur_chol = None
        if use_schur:
            self._perm = np.zeros(n, dtype=np.int32)
            self._perm[marked] = 1  # these unknowns are eliminated last; their Schur complement is returned
            ip[35] = 2  # Schur complement into x at the numeric phase, the whole factor kept for ordinary solves
        self._call(11, np.zeros((n, 1)))  # ordering and symbolic factorization
        if after_ordering is not None:
            after_ordering()
        x = self._call(22, np.zeros((n, 1)), rows=max(n, marked.size ** 2))  # numeric factorization
        if self._perm is not None:
            ns = marked.size
            S = np.array(x[:ns * ns, 0].reshape(ns, ns))
            if not np.all(np.isfinite(S)):
                raise _numerical(_SINGULAR)
            self.schur_unknowns, self.schur = marked, (S + S.T) / 2
        del x
        self.info = {"factor_nonzeros": int(ip[17])}
        if self.schur is not None:
            self.info["schur_unknowns"] = int(marked.size)

    def _call(self, phase: int, b: np.ndarray, rows: int | None = None) -> np.ndarray:
        c = self._c
        i32 = c.POINTER(c.c_int32)
        b = np.asfortranarray(b, dtype=np.float64)
        x = np.zeros_like(b, order="F") if rows is None else np.zeros((rows, b.shape[1]), order="F")
        perm = None if self._perm is None else self._perm.ctypes.data_as(i32)
        err = c.c_int32(0)
        one = c.c_int32(1)
        self._fn(self._pt.ctypes.data_as(c.POINTER(c.c_int64)), c.byref(one), c.byref(one),
                 c.byref(c.c_int32(2)), c.byref(c.c_int32(phase)), c.byref(c.c_int32(self.n)),
                 self._a.ctypes.data, self._ia.ctypes.data_as(i32), self._ja.ctypes.data_as(i32),
                 perm, c.byref(c.c_int32(b.shape[1])), self._iparm.ctypes.data_as(i32),
                 c.byref(c.c_int32(0)), b.ctypes.data, x.ctypes.data, c.byref(err))
        if err.value != 0:
            if err.value in (-4, -7):
                raise _numerical(f"{_SINGULAR} (PARDISO error {err.value})")
            if err.value == -2:
                raise ResourceError("PARDISO ran out of memory; use solver='amg' or a coarser mesh")
            raise SolverError(f"PARDISO failed with error {err.value}")
        return x

    def forward(self, b):
        """The forward half of the solve, ``Z = L^-1 P b`` (phase 331), so that ``b^T K^-1 b = Z^T Z``."""
        Z = self._call(331, self._turn(np.asarray(b, dtype=float).reshape(self.n, -1), True))
        if self.schur is not None:  # the forward half stops at the Schur block: finish it with S = R^T R
            from scipy.linalg import solve_triangular

            from ._multigrid import one_blas_thread

            with one_blas_thread():
                Z[self.schur_unknowns] = solve_triangular(self._schur_factor()[0], Z[self.schur_unknowns], trans="T",
                                                          lower=False, check_finite=False)
        if not np.all(np.isfinite(Z)):
            raise _numerical(_SINGULAR)
        return Z

    def gram_of(self, Z):
        """``Z^T Z`` by MKL's own ``dsyrk`` (numpy's BLAS threads, started right after PARDISO's, fight MKL's
        for the cores and were measured up to 50 times slower on two cores)."""
        import ctypes

        Z = np.ascontiguousarray(Z, dtype=float)
        m = Z.shape[1]
        W = np.zeros((m, m))
        if Z.shape[0] and m:
            c = ctypes
            fn = c.CDLL(_mkl_path()).cblas_dsyrk
            fn.argtypes = [c.c_int, c.c_int, c.c_int, c.c_int, c.c_int, c.c_double, c.c_void_p, c.c_int,
                           c.c_double, c.c_void_p, c.c_int]
            fn.restype = None
            fn(101, 121, 112, m, Z.shape[0], 1.0, Z.ctypes.data, m, 0.0, W.ctypes.data, m)  # row-major, upper, A^T A
            W = np.triu(W) + np.triu(W, 1).T
        return W

    def gram(self, b):
        """``b^T K^-1 b`` by the forward substitution only, over the non-zero rows of ``Z``."""
        Z = self.forward(b)
        return self.gram_of(Z[np.flatnonzero(np.any(Z != 0.0, axis=1))])

    def _schur_factor(self):
        """The Cholesky factor (upper) of the Schur complement, computed once."""
        if self._schur_chol is None:
            from scipy.linalg import cho_factor

            from ._multigrid import one_blas_thread

            try:
                with one_blas_thread():  # a few hundred unknowns: OpenBLAS's threads cost more than they save
                    self._schur_chol = cho_factor(self.schur, lower=False, check_finite=False)
            except np.linalg.LinAlgError:
                raise _numerical(_SINGULAR) from None
        return self._schur_chol

    def schur_gram(self, Bs: np.ndarray) -> np.ndarray:
        """``Bs S^-1 Bs^T`` for rows ``Bs`` (dense, k x ns) over the Schur unknowns, in the order of
        :attr:`schur_unknowns`: ``B K^-1 B^T`` for a ``B`` that touches no other unknown, without any
        solve with the sparse factor (``[K^-1]_ss = S^-1``)."""
        from scipy.linalg import solve_triangular

        from ._multigrid import one_blas_thread

        R = self._schur_factor()[0]
        with one_blas_thread():
            Y = solve_triangular(R, np.asarray(Bs, dtype=float).T, trans="T", lower=False, check_finite=False)
            W = Y.T @ Y
        return (W + W.T) / 2

    def schur_part(self, b: np.ndarray) -> np.ndarray:
        """The Schur unknowns' values of ``K^-1 b`` (ns x k): the forward half of the solve (phase 331), which
        stops at the Schur block and leaves there the condensed right-hand side, then the dense Schur solve."""
        from scipy.linalg import cho_solve

        from ._multigrid import one_blas_thread

        y = self._call(331, self._turn(np.asarray(b, dtype=float).reshape(self.n, -1), True))[self.schur_unknowns]
        with one_blas_thread():
            x = cho_solve(self._schur_factor(), y, check_finite=False)
        if not np.all(np.isfinite(x)):
            raise _numerical(_SINGULAR)
        return x

    def _turn(self, v: np.ndarray, transpose: bool) -> np.ndarray:
        """``T^T v`` (``transpose``) or ``T v``, T the rotation of the pairs of unknowns (identity without them)."""
        if self._basis is None:
            return v
        a, b, c, s = self._basis
        out = np.array(v, dtype=float, order="F")
        va, vb = v[a], v[b]
        sg = s[:, None] if transpose else -s[:, None]
        out[a] = c[:, None] * va + sg * vb
        out[b] = -sg * va + c[:, None] * vb
        return out

    def schur_rows(self, B: sp.spmatrix) -> np.ndarray | None:
        """Rows ``B`` (sparse, k x n) in the Schur unknowns (dense, k x ns, ``B T`` over them), or None where
        they touch an unknown outside them (entries of ``B T`` at round-off of ``B``'s largest taken as zero)."""
        if self.schur is None:
            return None
        Bt = sp.csr_matrix(B, dtype=float)
        if self._basis is not None:
            Bt = sp.csr_matrix(Bt @ _turn_matrix(self.n, *self._basis))
        tol = 8 * _EPS * float(np.abs(Bt.data).max(initial=0.0))
        Bt.data[np.abs(Bt.data) <= tol] = 0.0
        Bt.eliminate_zeros()
        u = self.schur_unknowns
        pos = np.searchsorted(u, Bt.indices)
        if pos.size and (pos.max() >= u.size or np.any(u[np.minimum(pos, u.size - 1)] != Bt.indices)):
            return None
        return sp.csr_matrix((Bt.data, pos, Bt.indptr), shape=(Bt.shape[0], u.size)).toarray()

    def solve(self, b):
        b = np.asarray(b, dtype=float)
        x = self._turn(self._call(33, self._turn(b.reshape(self.n, -1), True)), False)  # T x' = K^-1 b
        if not np.all(np.isfinite(x)):
            raise _numerical(_SINGULAR)
        return np.ascontiguousarray(x).reshape(b.shape)

    def __del__(self):
        try:
            if self._pt.any():
                self._call(-1, np.zeros((self.n, 1)))
        except Exception:
            pass


def _pair_basis(basis, n: int):
    """``(a, b, c, s)`` from ``(pairs, directions)``: unknown pairs ``(a_i, b_i)`` turned so that ``a_i`` carries
    the component along the unit direction ``(c_i, s_i)``, ``b_i`` the one across; None when not usable."""
    pairs, dirs = basis
    pairs = np.asarray(pairs, dtype=np.int64).reshape(-1, 2)
    dirs = np.asarray(dirs, dtype=float).reshape(-1, 2)
    if pairs.shape[0] == 0 or dirs.shape != pairs.shape:
        return None
    flat = pairs.ravel()
    norm = np.hypot(dirs[:, 0], dirs[:, 1])
    if flat.min() < 0 or flat.max() >= n or np.unique(flat).size != flat.size or not np.all(norm > 0) \
            or not np.all(np.isfinite(norm)):
        return None
    return pairs[:, 0], pairs[:, 1], dirs[:, 0] / norm, dirs[:, 1] / norm


def _turn_matrix(n: int, a, b, c, s) -> sp.csr_matrix:
    """T (n x n): the identity but for each pair ``(a_i, b_i)``, turned by ``(c_i, s_i)``
    (``u_a = c u'_a - s u'_b``, ``u_b = s u'_a + c u'_b``)."""
    return sp.csr_matrix((np.r_[c - 1.0, -s, s, c - 1.0], (np.r_[a, a, b, b], np.r_[a, b, a, b])),
                         shape=(n, n)) + sp.identity(n, format="csr")


def _turned_lower(L: sp.csc_matrix, a, b, c, s) -> sp.csc_matrix:
    """The lower triangle of ``T^T K T`` from that of K, T turning each pair ``(a_i, b_i)`` by ``(c_i, s_i)``
    (``u_a = c u'_a - s u'_b``, ``u_b = s u'_a + c u'_b``): only the entries in the pairs' rows and columns
    change, so only those are taken out, turned and put back (into a copy of the values where the pattern
    holds them, as it does when each pair's two unknowns couple alike; else by a sparse sum)."""
    n = L.shape[0]
    inR = np.zeros(n, dtype=bool)
    inR[a] = inR[b] = True
    cols = np.flatnonzero(inR)
    starts, ends = L.indptr[cols], L.indptr[cols + 1]
    in_cols = np.repeat(ends - np.cumsum(ends - starts), ends - starts) + np.arange(int((ends - starts).sum()))
    idx = np.union1d(np.flatnonzero(inR[L.indices]), in_cols)  # the entries in a pair's row or column
    r = L.indices[idx].astype(np.int64)
    col = np.searchsorted(L.indptr, idx, side="right") - 1
    Lt = sp.csc_matrix((L.data[idx], (r, col)), shape=(n, n))
    Kt = Lt + Lt.T - sp.diags(Lt.diagonal())
    T = _turn_matrix(n, a, b, c, s)
    D = sp.tril(T.T @ Kt @ T - Kt).tocoo()
    key = r * n + col  # sorted, since idx is
    dkey = D.row.astype(np.int64) * n + D.col
    pos = np.searchsorted(key, dkey)
    if pos.size and (pos.max() >= key.size or np.any(key[np.minimum(pos, key.size - 1)] != dkey)):
        out = (L + D.tocsc()).tocsc()
        out.sort_indices()
        return out
    data = np.array(L.data, dtype=float)
    np.add.at(data, idx[pos], D.data)
    return sp.csc_matrix((data, L.indices, L.indptr), shape=(n, n))
