"""The multigrid preconditioner of the iterative back end (``solver="amg"``).

Two steps, each a published method:

- **p-multigrid** (E. M. Rønquist and A. T. Patera, Spectral element multigrid I: formulation and
  numerical results, J. Sci. Comput. 2, 1987; K. J. Fidkowski, T. A. Oliver, J. Lu and D. L.
  Darmofal, p-Multigrid solution of high-order discontinuous Galerkin discretizations of the
  compressible Navier-Stokes equations, J. Comput. Phys. 207, 2005; from memory): on a mesh of
  quadratic (or higher) elements the first coarse space is the linear element on the same mesh,
  whose unknowns are the corner nodes'. The prolongation is the linear shape functions (of the
  reference cell's vertices) evaluated at each element node: a corner node keeps its value, a
  mid-side node takes the mean of its edge's two corners, a quadrilateral's centre the mean of the
  four. The coarse operator is the Galerkin product P^T K P. The fine level is smoothed by one
  forward Gauss-Seidel sweep before and one backward sweep after the coarse correction, so the
  cycle is symmetric, as CG needs.
- **smoothed aggregation** (P. Vaněk, J. Mandel and M. Brezina, Algebraic multigrid by smoothed
  aggregation for second and fourth order elliptic problems, Computing 56, 1996; pyamg's
  implementation) on the linear problem, with the rigid-body modes (two translations, the in-plane
  rotation) as near-null space. Every node keeps its two unknowns together: a prescribed unknown
  of the coarse space is an identity row, so its matrix is one of 2 x 2 node blocks, and the
  smoother, symmetric block Gauss-Seidel, takes each level's own block size (2 on the nodal level;
  the number of near-null modes on the aggregate levels), which always divides the level.

On linear elements the p-step is an injection and is skipped: smoothed aggregation works on the
nodal matrix directly (the free unknowns embedded among the prescribed identity rows). Without a
description of the unknowns (a bare matrix), the hierarchy is built on the matrix as given, with a
point-wise smoother that fits any size.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

__all__ = ["NodalSpace", "Couplings", "nodal_space", "hierarchy", "Cycle", "coarse_size", "one_blas_thread"]


@dataclass
class NodalSpace:
    """The coarse nodal space that the multigrid hierarchy starts from.

    Attributes
    ----------
    P : scipy.sparse.csr_matrix, shape (n, m)
        Prolongation from the coarse space (two unknowns per corner node, then the extra unknowns,
        padded to an even count) to the system's unknowns.
    modes : ndarray, shape (m, 3)
        Rigid-body modes over the coarse space.
    fixed : ndarray of bool, shape (m,)
        Coarse unknowns that no system unknown reaches (prescribed): identity rows.
    injection : bool
        True when P only places the system's unknowns among the coarse ones (linear elements): no
        smoothing is needed on the system's own level.
    """

    P: sp.csr_matrix
    modes: np.ndarray
    fixed: np.ndarray
    injection: bool


@dataclass
class Couplings:
    """Near-null modes and the couplings to aggregate by, for a matrix taken as given (a fastened joint).

    A fastener's spring couples every node of its patch in each layer to every other (through the
    patches' mean motions): counted as strong couplings, those entries shape the aggregates around
    each fastener and slow CG (17 to 25 steps for a doubler with 1,000 fasteners at 10^6 unknowns).
    The finest level is therefore aggregated by ``graph`` (the layers' own matrices, lower triangle),
    the springs staying in the matrix that is smoothed and coarsened.

    Attributes
    ----------
    modes : ndarray, shape (n, k)
        Near-null modes of the system's unknowns.
    graph : scipy.sparse matrix, shape (n, n)
        Lower triangle of the matrix whose couplings decide the first aggregation.
    injection : bool
        Always True (no nodal level of its own), read by the solver's description.
    """

    modes: np.ndarray
    graph: sp.spmatrix
    injection: bool = True


def _vertices(cell: str) -> np.ndarray:
    if cell == "triangle":
        return np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    return np.array([[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]])


def _linear_shape(cell: str, xi: np.ndarray) -> np.ndarray:
    """The linear (triangle) or bilinear (quadrilateral) shape functions of the vertices at ``xi``."""
    r, s = xi[:, 0], xi[:, 1]
    if cell == "triangle":
        return np.column_stack([1.0 - r - s, r, s])
    return 0.25 * np.column_stack([(1 - r) * (1 - s), (1 + r) * (1 - s), (1 + r) * (1 + s), (1 - r) * (1 + s)])


def _layout(etype) -> tuple[np.ndarray, np.ndarray] | None:
    """(local corner nodes in vertex order, weights (n_nodes, n_vertices)) of an element type, or None
    when some vertex of its cell holds no node (every node is then kept as a coarse node)."""
    cell = getattr(etype, "cell", None)
    ref = np.asarray(getattr(etype, "ref_nodes", np.zeros((0, 2))), dtype=float)
    if cell not in ("triangle", "quad") or ref.ndim != 2 or ref.shape[1] != 2:
        return None
    V = _vertices(cell)
    d = np.abs(ref[:, None, :] - V[None, :, :]).max(axis=-1)  # (k, v)
    corner = np.argmin(d, axis=0)
    if np.any(d[corner, np.arange(V.shape[0])] > 1e-9):
        return None
    W = _linear_shape(cell, ref)
    W[np.abs(W) < 1e-14] = 0.0
    return corner, W


def _node_prolongation(blocks, n_nodes: int) -> tuple[sp.csr_matrix, np.ndarray]:
    """Scalar prolongation (n_nodes, n_corners) from the corner nodes, and the corner nodes."""
    is_corner = np.zeros(n_nodes, dtype=bool)
    layouts = []
    for b in blocks:
        lay = _layout(b.etype)
        layouts.append(lay)
        conn = b.conn
        if lay is None:
            is_corner[np.unique(conn)] = True
        else:
            is_corner[conn[:, lay[0]].ravel()] = True
    corners = np.flatnonzero(is_corner)
    cidx = np.full(n_nodes, -1, dtype=np.int64)
    cidx[corners] = np.arange(corners.size)
    rows, cols, vals = [corners], [np.arange(corners.size)], [np.ones(corners.size)]
    done = is_corner.copy()
    for b, lay in zip(blocks, layouts):
        if lay is None:
            continue
        corner, W = lay
        conn = np.asarray(b.conn)
        for j in range(conn.shape[1]):  # a few local nodes; each node once, from the first element that holds it
            if j in corner:
                continue
            nodes = conn[:, j]
            new = ~done[nodes]
            if not new.any():
                continue
            el = np.flatnonzero(new)
            nodes = nodes[el]
            uniq, first = np.unique(nodes, return_index=True)
            el = el[first]
            done[uniq] = True
            w = W[j]
            for v in np.flatnonzero(w):
                rows.append(uniq)
                cols.append(cidx[conn[el, corner[v]]])
                vals.append(np.full(uniq.size, w[v]))
    r, c, v = (np.concatenate(x) for x in (rows, cols, vals))
    return sp.csr_matrix((v, (r, c)), shape=(n_nodes, corners.size)), corners


def _rotation_matrix(rotation, n_nodes: int) -> sp.csr_matrix | None:
    """Block-diagonal T (2n, 2n), u_global = T u_local, or None without rotated nodes."""
    if rotation is None or len(rotation.nodes) == 0:
        return None
    diag = np.tile(np.eye(2), (n_nodes, 1, 1))
    diag[rotation.nodes] = rotation.R
    return sp.bsr_matrix((diag, np.arange(n_nodes), np.arange(n_nodes + 1)),
                         shape=(2 * n_nodes, 2 * n_nodes)).tocsr()


def nodal_space(blocks, n_nodes: int, unknowns: np.ndarray, modes_all: np.ndarray, rotation=None,
                extra_modes: np.ndarray | None = None) -> NodalSpace:
    """The coarse nodal space of a system whose unknowns are ``unknowns`` (global unknowns 2 node +
    component, in the rotated bases where ``rotation`` is set), followed by ``len(extra_modes)``
    unknowns of their own (pins), which the coarse space keeps as they are.

    Parameters
    ----------
    blocks : sequence
        Cell blocks with ``etype`` (an element type) and ``conn`` (cells, node numbers).
    n_nodes : int
    unknowns : ndarray of int, shape (n_free,)
    modes_all : ndarray, shape (2 n_nodes, 3)
        Rigid-body modes of every global unknown (local bases).
    rotation : Rotation, optional
    extra_modes : ndarray, shape (n_extra, 3), optional
    """
    Pn, corners = _node_prolongation(blocks, n_nodes)
    injection = corners.size == n_nodes or Pn.nnz == corners.size
    P2 = sp.kron(Pn, sp.identity(2, format="csr"), format="csr")  # (2n, 2c), node blocks kept together
    T = _rotation_matrix(rotation, n_nodes)
    cdofs = (2 * corners[:, None] + np.arange(2)).ravel()
    if T is not None and not injection:
        P2 = (T.T @ P2 @ T[cdofs][:, cdofs]).tocsr()
        P2.data[np.abs(P2.data) < 1e-15] = 0.0
        P2.eliminate_zeros()
    P = P2[np.asarray(unknowns, dtype=np.int64)]
    # a prescribed corner unknown stays out of the free rows' weights (its correction is nil)
    is_free = np.zeros(2 * n_nodes, dtype=bool)
    is_free[unknowns] = True
    fixed = ~is_free[cdofs]
    if fixed.any():
        keep = sp.diags((~fixed).astype(float))
        P = (P @ keep).tocsr()
        P.eliminate_zeros()
    B = np.asarray(modes_all, dtype=float)[cdofs]
    n_extra = 0 if extra_modes is None else len(extra_modes)
    if n_extra:
        pad = n_extra % 2
        E = sp.identity(n_extra, format="csr")
        P = sp.block_diag([P, E], format="csr")
        B = np.vstack([B, np.asarray(extra_modes, dtype=float)])
        fixed = np.concatenate([fixed, np.zeros(n_extra, dtype=bool)])
        if pad:
            P = sp.hstack([P, sp.csr_matrix((P.shape[0], 1))], format="csr")
            B = np.vstack([B, np.zeros((1, B.shape[1]))])
            fixed = np.concatenate([fixed, [True]])
    return NodalSpace(P.tocsr(), np.ascontiguousarray(B), fixed, bool(injection))


def hierarchy(A: sp.csr_matrix, space: NodalSpace | None, B: np.ndarray | None):
    """A pyamg multilevel solver whose V-cycle preconditions ``A`` (see the module notes).

    Parameters
    ----------
    A : csr_matrix
        The full symmetric matrix of the system.
    space : NodalSpace or None
        The nodal space; None for a bare matrix.
    B : ndarray, shape (n or m, k), optional
        The near-null modes: of the system's unknowns (bare matrix) or of the coarse space; only the
        first k columns of ``space.modes`` are used when given as the coarse space's.
    """
    import pyamg
    from pyamg.multilevel import MultilevelSolver
    from pyamg.relaxation.smoothing import change_smoothers

    # the rigid-body modes are the exact near-null space: no relaxation sweeps to improve them (pyamg's
    # default, 24 sweeps of the finest level, 1.7 s of a 7.3 s set-up for Q4 at 10^6 unknowns)
    sa_kw = dict(strength="symmetric", smooth="jacobi", max_coarse=1000, coarse_solver="splu", improve_candidates=None)
    if space is None or isinstance(space, Couplings):
        if space is not None:  # the first aggregation by the given couplings, the coarser ones by their own
            from pyamg.strength import symmetric_strength_of_connection

            G = sp.csr_matrix(space.graph)
            G = (G + sp.tril(G, -1).T).tocsr()
            sa_kw["strength"] = [("predefined", {"C": symmetric_strength_of_connection(G, 0.0)}), "symmetric"]
            del G
            B = space.modes if B is None else B
        ml = pyamg.smoothed_aggregation_solver(A, B=None if B is None else np.array(B, dtype=float, order="C"),
                                               **sa_kw)
        change_smoothers(ml, ("gauss_seidel", {"sweep": "symmetric"}), ("gauss_seidel", {"sweep": "symmetric"}))
        return Cycle(ml.levels, ml.coarse_solver)
    P = space.P
    Ac = _placed(A, P) if space.injection else (P.T @ (A @ P)).tocsr()
    if space.fixed.any():  # prescribed coarse unknowns: identity rows, scaled like the matrix
        d = Ac.diagonal()
        scale = float(np.mean(d[~space.fixed])) if (~space.fixed).any() else 1.0
        Ac = (Ac + sp.diags(np.where(space.fixed, scale, 0.0))).tocsr()
    Ac.sort_indices()
    Bc = np.array(space.modes[:, : (3 if B is None else B.shape[1])], dtype=float, order="C")
    # block Gauss-Seidel with each level's own block size, a symmetric sweep before and after the
    # coarse correction (one forward sweep before and one backward after took 25 % more CG steps and
    # no less time, T6 at 10^6 unknowns)
    pre = post = ("block_gauss_seidel", {"sweep": "symmetric"})
    sa = pyamg.smoothed_aggregation_solver(Ac.tobsr(blocksize=(2, 2)), B=Bc, **sa_kw)
    del Ac
    change_smoothers(sa, pre, post)
    if space.injection:
        return Cycle(sa.levels, sa.coarse_solver, P)
    top = MultilevelSolver.Level()
    top.A = A
    top.P = P
    top.R = P.T.tocsr()
    ml = MultilevelSolver([top] + sa.levels, coarse_solver="splu")
    k = len(sa.levels) - 1
    change_smoothers(ml, [("gauss_seidel", {"sweep": "forward"})] + [pre] * k,
                     [("gauss_seidel", {"sweep": "backward"})] + [post] * k)
    return Cycle(ml.levels, sa.coarse_solver)


def _placed(A: sp.csr_matrix, P: sp.csr_matrix) -> sp.csr_matrix:
    """``P^T A P`` for a P that only places each row's unknown at a column of its own, in order (one
    entry 1 per row, columns increasing): A's entries renumbered, without a sparse product."""
    P = P.tocsr()
    if P.nnz != P.shape[0] or not np.all(P.data == 1.0) or np.any(np.diff(P.indices) <= 0):
        return (P.T @ (A @ P)).tocsr()
    A = A.tocsr()
    where = P.indices.astype(np.int64)
    m = P.shape[1]
    lengths = np.zeros(m, dtype=np.int64)
    lengths[where] = np.diff(A.indptr)
    indptr = np.concatenate([[0], np.cumsum(lengths)])
    it = np.int32 if max(m, A.nnz) < 2**31 - 1 else np.int64
    return sp.csr_matrix((A.data.copy(), where[A.indices].astype(it), indptr.astype(it)), shape=(m, m))


class Cycle:
    """One V-cycle over pyamg's levels as a preconditioner: pre-smoothing, residual, restriction,
    the coarser levels, prolongation, post-smoothing; the coarsest level solved directly.

    (pyamg's own preconditioner computes the fine residual and its norm twice more per cycle, for
    its stopping test: two more products with the finest matrix, which CG does not need.)

    With ``P`` (linear elements: the system's unknowns placed among the nodal ones) the cycle runs
    on the nodal matrix: ``P M^-1 P^T``.
    """

    def __init__(self, levels, coarse_solver, P: sp.csr_matrix | None = None):
        self.levels = levels
        self._coarse = coarse_solver
        self._P = P
        self._R = None if P is None else P.T.tocsr()

    def _vcycle(self, b: np.ndarray) -> np.ndarray:
        levels = self.levels
        xs, bs = [], []
        for lvl in levels[:-1]:
            x = np.zeros_like(b)
            lvl.presmoother(lvl.A, x, b)
            xs.append(x)
            bs.append(b)
            b = lvl.R @ (b - lvl.A @ x)
        xc = np.asarray(self._coarse(levels[-1].A, b), dtype=float).reshape(-1)
        for lvl, x, bb in zip(levels[-2::-1], xs[::-1], bs[::-1]):
            x += lvl.P @ xc
            lvl.postsmoother(lvl.A, x, bb)
            xc = x
        return xc

    def apply(self, r: np.ndarray) -> np.ndarray:
        """The preconditioned residual M^-1 r."""
        r = np.asarray(r, dtype=float).reshape(-1)
        if self._P is None:
            return self._vcycle(r)
        return self._P @ self._vcycle(self._R @ r)

    def aspreconditioner(self, cycle: str = "V"):
        """M^-1 as a scipy LinearOperator (V-cycles only)."""
        from scipy.sparse.linalg import LinearOperator

        n = self.levels[0].A.shape[0] if self._P is None else self._P.shape[0]
        return LinearOperator((n, n), matvec=self.apply, dtype=float)


def coarse_size(blocks) -> int | None:
    """The nodal space's unknowns estimated from cell blocks before any node is counted (for the memory
    estimate), or None when a block is of linear elements (the nodal space is then every node's).

    Two per corner node: a triangle mesh has about half as many vertices as cells, a quadrilateral
    mesh about as many (Euler's formula).

    Parameters
    ----------
    blocks : iterable of (element type or None, n_cells)

    Examples
    --------
    >>> from planar.core.elements import T6, Q8, T3
    >>> coarse_size([(T6, 1000)]), coarse_size([(Q8, 1000)]), coarse_size([(T3, 1000)])
    (1000, 2000, None)
    """
    blocks = list(blocks)
    if any(t is None or int(getattr(t, "degree", 1)) < 2 or _layout(t) is None for t, _ in blocks):
        return None
    return int(sum(2 * int(k) * (0.5 if t.cell == "triangle" else 1.0) for t, k in blocks))


_BLAS: list = []


def _blas_controls() -> list:
    """(get, set) thread-count functions of every OpenBLAS loaded in this process, found once (Linux:
    the libraries mapped in /proc/self/maps; elsewhere none)."""
    if _BLAS:
        return _BLAS[0]
    import ctypes

    import scipy.linalg  # noqa: F401  (maps scipy's own OpenBLAS, which the set-up also calls)

    found = []
    try:
        with open("/proc/self/maps") as fh:
            paths = sorted({ln.split()[-1] for ln in fh if "openblas" in ln.lower() and ".so" in ln})
    except OSError:
        paths = []
    names = (("scipy_openblas_get_num_threads64_", "scipy_openblas_set_num_threads64_"),
             ("scipy_openblas_get_num_threads", "scipy_openblas_set_num_threads"),
             ("openblas_get_num_threads64_", "openblas_set_num_threads64_"),
             ("openblas_get_num_threads", "openblas_set_num_threads"))
    for path in paths:
        try:
            lib = ctypes.CDLL(path)
        except OSError:
            continue
        for g, s in names:
            get, put = getattr(lib, g, None), getattr(lib, s, None)
            if get is not None and put is not None:
                get.restype, get.argtypes = ctypes.c_int, []
                put.restype, put.argtypes = None, [ctypes.c_int]
                found.append((get, put))
                break
    _BLAS.append(found)
    return found


class one_blas_thread:
    """Run the block with OpenBLAS on one thread, then restore its thread count.

    The multigrid set-up and CG call BLAS only on vectors (dot products, norms, the small dense
    products of the set-up's eigenvalue estimates), where OpenBLAS's threads cost more to wake than
    they save, and far more on a machine whose cores are busy: the set-up at 3 x 10^5
    unknowns took 6.1 s with the default threads and 1.7 s with one (Q4, two shared cores).
    """

    def __enter__(self):
        self._saved = []
        for get, put in _blas_controls():
            try:
                self._saved.append((put, int(get())))
                put(1)
            except Exception:  # a library that refuses: leave it as it is
                pass
        return self

    def __exit__(self, *exc):
        for put, n in self._saved:
            put(n)
        return False
