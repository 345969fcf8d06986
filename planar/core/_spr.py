"""The superconvergent patch recovery (SPR) operator: patches, fits and their linear map.

The method, its sources and our choices for boundary nodes are described in
:mod:`planar.core.recovery`, which applies this operator to a result's stresses. Everything here
depends on the mesh and the sampling points alone, never on the values recovered.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.sparse as sp

from .errors import InputError
from .parallel import map_chunks
from .quadrature import Rule, rule_for

__all__ = ["sampling_rule", "Samples", "patch_recovery", "recovery_operator", "RecoveryOperator"]

#: boundary-node treatments of SPR
_BOUNDARY = ("enlarged", "interior")
#: smallest accepted ratio of the least to the largest eigenvalue of a patch's normal matrix
_CONDITION = 1e-10


def sampling_rule(etype) -> Rule:
    """The superconvergent sampling points of an element type.

    Parameters
    ----------
    etype : element type class

    Returns
    -------
    Rule
        The reduced Gauss rule: ``degree`` x ``degree`` points on quadrilaterals, the triangle rule of
        total degree ``degree`` on triangles (T3: 1 point, T6: 3 points, Q4: 1 point, Q8 and Q9: 2 x 2).
    """
    p = max(1, int(etype.degree))
    if etype.cell == "quad":
        return rule_for("quad", p)
    return rule_for("triangle", p)


@dataclass
class Samples:
    """Stresses at the sampling points of one element block.

    Attributes
    ----------
    block : Block
        The element block (one element type, one region).
    x : ndarray, shape (e, q, 2)
        Sampling point coordinates.
    stress : ndarray, shape (e, q, 4)
        (sigma_xx, sigma_yy, tau_xy, sigma_zz) there.
    superconvergent : bool
        False when the stiffness rule's points had to be used instead (initial strains such as a
        temperature change are known at those points only).
    """

    block: Any
    x: np.ndarray
    stress: np.ndarray
    superconvergent: bool = True



# ---------------------------------------------------------------------------- polynomials
def _exponents(degree: int) -> list[tuple[int, int]]:
    return [(d - j, j) for d in range(degree + 1) for j in range(d + 1)]


def _n_terms(degree: int) -> int:
    return (degree + 1) * (degree + 2) // 2


def _basis(X: np.ndarray, degree: int) -> np.ndarray:
    """Complete polynomial basis of ``degree`` at points X (..., 2) -> (..., n_terms)."""
    x, y = X[..., 0], X[..., 1]
    xp, yp = [np.ones_like(x)], [np.ones_like(y)]
    for _ in range(degree):  # powers by multiplication (pow is far slower)
        xp.append(xp[-1] * x)
        yp.append(yp[-1] * y)
    out = np.empty(X.shape[:-1] + (_n_terms(degree),))
    for k, (i, j) in enumerate(_exponents(degree)):  # a handful of terms, each a whole-array product
        out[..., k] = xp[i] if j == 0 else (yp[j] if i == 0 else xp[i] * yp[j])
    return out


_FIT_CHUNK = 4096  # patches per batch: small enough for the arrays to stay in cache


def _fit_batch(xs: np.ndarray, centres: np.ndarray, idx: np.ndarray, degree: int, weighted: bool = False):
    """Least-squares fit operators of one batch of patches with the same number of points.

    Parameters
    ----------
    xs : (S, 2) sample coordinates
    centres : (n_p, 2) patch centres; idx : (n_p, m) sample numbers of each patch
    weighted : weight each point by 1 / (d / scale + 1/4)^2 (d its distance from the centre)

    Returns
    -------
    G : (n_p, n_terms, m)
        The coefficients of a patch's polynomial are ``G @ values[idx]`` (zero where not ``ok``):
        G = (P^T W P)^-1 P^T W, with P the basis at the points in coordinates centred on the patch
        centre and divided by ``scale``.
    scale : (n_p,); ok : (n_p,) bool (False: too few or badly placed points for the degree)
    """
    nt = _n_terms(degree)
    n_p, m = idx.shape
    if m < nt:
        return np.zeros((n_p, nt, m)), np.ones(n_p), np.zeros(n_p, dtype=bool)
    X = xs[idx] - centres[:, None, :]
    r2 = X[..., 0] * X[..., 0] + X[..., 1] * X[..., 1]  # (n_p, m)
    scale = np.sqrt(np.max(r2, axis=1))
    scale = np.where(scale > 0, scale, 1.0)
    P = _basis(X / scale[:, None, None], degree)  # (n_p, m, nt)
    if weighted:
        d = np.sqrt(r2) / scale[:, None]
        Pw = P / (d + 0.25)[..., None] ** 2
    else:
        Pw = P
    PwT = Pw.transpose(0, 2, 1)
    A = PwT @ P  # batched normal equations (n_p, nt, nt)
    ev = np.linalg.eigvalsh(A)
    ok = ev[:, 0] > _CONDITION * np.maximum(ev[:, -1], 1e-300)
    A[~ok] = np.eye(nt)
    G = np.linalg.solve(A, PwT)
    G[~ok] = 0.0
    return G, scale, ok


def _fit(xs: np.ndarray, centres: np.ndarray, idx: np.ndarray, degree: int, weighted: bool = False):
    """Fit operators of one group of patches (see :func:`_fit_batch`), in cache-sized batches."""
    n_p = idx.shape[0]
    if n_p <= _FIT_CHUNK:
        return _fit_batch(xs, centres, idx, degree, weighted)
    parts = map_chunks(lambda a: _fit_batch(xs, centres[a : a + _FIT_CHUNK], idx[a : a + _FIT_CHUNK],
                                            degree, weighted), range(0, n_p, _FIT_CHUNK))
    return tuple(np.concatenate([p[i] for p in parts]) for i in range(3))


def _rows_by_length(M: sp.csr_matrix):
    """Yield (rows, column-index array (n_r, m)) for the rows of a CSR pattern grouped by length."""
    M.sort_indices()
    lengths = np.diff(M.indptr)
    for m in np.unique(lengths):
        if m == 0:
            continue
        rows = np.flatnonzero(lengths == m)
        cols = M.indices[M.indptr[rows][:, None] + np.arange(m)[None, :]]
        yield rows, cols


def _pattern(M) -> sp.csr_matrix:
    M = sp.csr_matrix(M)
    M.sum_duplicates()
    M.data = np.ones_like(M.data, dtype=np.int32)
    return M


def _incidence(rows: np.ndarray, cols: np.ndarray, shape) -> sp.csr_matrix:
    return _pattern(sp.coo_matrix((np.ones(rows.size, dtype=np.int32), (rows, cols)), shape=shape))


# ---------------------------------------------------------------------------- the operator
def _own_patches(centres, nodes, A_en, A_es, xs, degree: int, floor: int, *, weighted: bool,
                 max_rings: int = 4):
    """Fits centred on given nodes over their elements and neighbours, one value per node.

    The patch of a node starts as its elements and their neighbours and grows by a ring of elements
    while it has fewer than 1.5 times the points a polynomial of ``degree`` needs. At the last ring
    the degree drops (to ``floor`` and then down to 0) until the fit is determined.

    Returns
    -------
    parts : list of (node (k,), samples (k, m), weights (k, m))
        A node's value is the weighted sum of its samples (the polynomial is centred on the node,
        so its value there is its constant term).
    done : (n,) bool, False where no fit was possible
    fitted : (n,) int, the degree of each node's fit (-1 where none)
    """
    A_ne = A_en.T.tocsr()
    done = np.zeros(nodes.size, dtype=bool)
    fitted = np.full(nodes.size, -1)
    parts = []
    ring = _pattern(A_ne[nodes])
    need = 3 * _n_terms(degree) // 2
    for k in range(max_rings):
        ring = _pattern(_pattern(ring @ A_en) @ A_ne)
        last = k == max_rings - 1
        for rows, idx in _rows_by_length(_pattern(ring @ A_es)):
            for deg in range(degree, -1, -1):
                if deg == degree and idx.shape[1] < need and not last:
                    break  # grow this patch first
                if floor < deg < degree or (deg == degree and idx.shape[1] < need):
                    continue
                sel = ~done[rows]
                if not sel.any():
                    break
                r = rows[sel]
                G, _, ok_ = _fit(xs, centres[r], idx[sel], deg, weighted)
                parts.append((nodes[r[ok_]], idx[sel][ok_], G[ok_, 0, :]))
                done[r[ok_]] = True
                fitted[r[ok_]] = deg
        if done.all():
            break
    return parts, done, fitted


def _vertex_targets(samples: list[Samples], n: int) -> sp.csr_matrix:
    """Vertex -> nodes its patch polynomial is evaluated at: itself, the mid-side nodes of the edges
    that end at it, and the interior nodes of its elements (Zienkiewicz and Zhu 1992, Part 1: a
    mid-side value is the mean of the patches of the edge's two end vertices)."""
    rows, cols = [np.arange(n)], [np.arange(n)]
    for smp in samples:
        et = smp.block.etype
        conn = np.asarray(smp.block.conn, dtype=np.int64)
        ed = np.asarray(et.edges)
        if ed.shape[1] > 2:  # (start, end, middle, ...)
            e = conn[:, ed]  # (e, n_edges, 3+)
            for end in (0, 1):
                for m in range(2, ed.shape[1]):
                    rows.append(e[:, :, end].ravel()); cols.append(e[:, :, m].ravel())
        kc = et.corner_count()
        on_edges = set(np.unique(ed).tolist())
        inner = [k for k in range(et.n_nodes) if k not in on_edges]
        for k in inner:  # e.g. the Q9 centre: from the patches of all its corners
            for c in range(kc):
                rows.append(conn[:, c]); cols.append(conn[:, k])
    r, c = np.concatenate(rows), np.concatenate(cols)
    return _incidence(r, c, (n, n))


@dataclass
class _Piece:
    """One batch of the operator: values at nodes ``node`` from the samples ``samples``.

    With ``fit`` (b, nt, m): b patch polynomials ``fit @ values[samples]``, evaluated at their
    target nodes as ``terms`` (k, nt) times the coefficients of patch ``patch`` (k,). Without:
    ``terms`` (k, m) are the weights of each node's own samples ``samples`` (k, m).
    """

    node: np.ndarray
    samples: np.ndarray
    terms: np.ndarray
    fit: np.ndarray | None = None
    patch: np.ndarray | None = None

    def values(self, v: np.ndarray) -> np.ndarray:
        if self.fit is None:
            return np.einsum("km,kmc->kc", self.terms, v[self.samples])
        coef = self.fit @ v[self.samples]  # (b, nt, c)
        return np.einsum("kt,ktc->kc", self.terms, coef[self.patch])


class RecoveryOperator:
    """Patch recovery of one region as a linear map from sampled to nodal values.

    Everything SPR does to sampled values (fits over the patches, evaluation at the nodes,
    averaging) is linear in the values and depends on the mesh alone, so it is built once per
    mesh and region and applied to every load case, combination and field. It keeps each patch's
    fit operator (P^T W P)^-1 P^T W and its polynomial terms at the target nodes, so applying it
    is two small batched products per patch.

    Attributes
    ----------
    n_nodes, n_samples : int
    valid : ndarray of bool, shape (n_nodes,)
        False at nodes outside the region or without a determined fit (their value is NaN).
    short : ndarray of bool, shape (n_nodes,)
        True at nodes whose own patch could only determine a polynomial of lower degree than the
        elements' (its sampling points lie on a line: a strip of linear quadrilaterals one element
        thick, whose centres cannot tell how the stress varies across it); :func:`planar.core.recovery.recover`
        takes the elements' own extrapolated stresses there.
    """

    def __init__(self, n_nodes: int, n_samples: int, pieces: list[_Piece], valid: np.ndarray,
                 short: np.ndarray | None = None):
        self.n_nodes, self.n_samples = int(n_nodes), int(n_samples)
        self._pieces = pieces
        self.valid = valid
        self.short = np.zeros(self.n_nodes, dtype=bool) if short is None else short
        self._node = np.concatenate([pc.node for pc in pieces]) if pieces else np.zeros(0, np.int64)

    def apply(self, values: np.ndarray) -> np.ndarray:
        """Nodal values (n_nodes, c) from sampled values (n_samples, c)."""
        values = np.asarray(values, dtype=float)
        c = values.shape[1]
        out = np.zeros((self.n_nodes, c))
        if self._pieces:
            v = np.concatenate(map_chunks(lambda i: self._pieces[i].values(values), range(len(self._pieces))))
            for j in range(c):
                out[:, j] = np.bincount(self._node, weights=v[:, j], minlength=self.n_nodes)
        out[~self.valid] = np.nan
        return out


def _target_ranges(starts: np.ndarray, r: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Positions start[r_i]..start[r_i + 1] for every i, and the i of each position."""
    cnt = starts[r + 1] - starts[r]
    loc = np.repeat(np.arange(r.size), cnt)
    off = np.cumsum(cnt) - cnt
    return np.repeat(starts[r] - off, cnt) + np.arange(int(cnt.sum())), loc


def recovery_operator(mesh, samples: list[Samples], *, degree: int | None = None,
                      boundary: str = "enlarged") -> RecoveryOperator:
    """The SPR map of one region's sampling points (only ``block`` and ``x`` of the samples are used).

    See :func:`patch_recovery` for the parameters and the method.
    """
    if boundary not in _BOUNDARY:
        raise InputError(f"unknown boundary treatment {boundary!r}; pick one of {', '.join(_BOUNDARY)}")
    if not samples:
        raise InputError("patch recovery needs at least one block of samples")
    n = mesh.n_nodes
    p = int(degree if degree is not None else max(s.block.etype.degree for s in samples))
    if p < 0:
        raise InputError(f"the recovery polynomial degree must be >= 0, got {p}")
    xs = np.concatenate([s.x.reshape(-1, 2) for s in samples])
    # element numbering over the region's blocks; incidence element-node, element-corner, element-sample
    er, ec, cr, cc, sr, sc, edges = [], [], [], [], [], [], []
    e0 = s0 = 0
    for smp in samples:
        b = smp.block
        conn = np.asarray(b.conn, dtype=np.int64)
        e, k = conn.shape
        q = smp.x.shape[1]
        ids = e0 + np.arange(e)
        er.append(np.repeat(ids, k)); ec.append(conn.ravel())
        kc = b.etype.corner_count()
        cr.append(np.repeat(ids, kc)); cc.append(conn[:, :kc].ravel())
        sr.append(np.repeat(ids, q)); sc.append(s0 + np.arange(e * q))
        ed = np.asarray(b.etype.edges)
        edges.append(conn[:, ed].reshape(-1, ed.shape[1]))
        e0 += e
        s0 += e * q
    E, S = e0, s0
    A_en = _incidence(np.concatenate(er), np.concatenate(ec), (E, n))
    C_ne = _incidence(np.concatenate(cc), np.concatenate(cr), (n, E))
    A_es = _incidence(np.concatenate(sr), np.concatenate(sc), (E, S))
    in_region = np.zeros(n, dtype=bool)
    in_region[np.concatenate(ec)] = True
    is_vertex = np.zeros(n, dtype=bool)
    is_vertex[np.concatenate(cc)] = True
    # region boundary: edges used by one element of the region only (free edges and interfaces)
    width = max(ed.shape[1] for ed in edges)
    seg = np.vstack([np.pad(ed, ((0, 0), (0, width - ed.shape[1])), constant_values=-1) for ed in edges])
    key = np.minimum(seg[:, 0], seg[:, 1]) * n + np.maximum(seg[:, 0], seg[:, 1])
    _, inv, cnt = np.unique(key, return_inverse=True, return_counts=True)
    bseg = seg[cnt[inv] == 1]
    on_boundary = np.zeros(n, dtype=bool)
    on_boundary[bseg[bseg >= 0]] = True
    interior_vertex = is_vertex & ~on_boundary

    nodes_xy = mesh.nodes
    own_patch = in_region & on_boundary if boundary == "enlarged" else np.zeros(n, dtype=bool)
    parts: list[_Piece] = []
    reached = np.zeros(n)  # patches whose polynomial is averaged at each node
    # 1. interior vertex patches, evaluated at their vertex and at the other nodes of their elements
    iv = np.flatnonzero(interior_vertex)
    if iv.size:
        patch_samples = _pattern(C_ne[iv] @ A_es)
        targets = _pattern(_vertex_targets(samples, n)[iv]).tocoo()  # sorted by patch
        pr, node = targets.row, targets.col
        keep = (node == iv[pr]) | ~(interior_vertex | own_patch)[node]
        pr, node = pr[keep], node[keep]
        starts = np.searchsorted(pr, np.arange(iv.size + 1))
        for rows, idx in _rows_by_length(patch_samples):

            def batch(a: int, rows=rows, idx=idx):
                r, ix = rows[a : a + _FIT_CHUNK], idx[a : a + _FIT_CHUNK]
                G, scale, ok = _fit_batch(xs, nodes_xy[iv[r]], ix, p)
                at, loc = _target_ranges(starts, r)
                good = ok[loc]
                at, loc = at[good], loc[good]
                tn = node[at]
                X = (nodes_xy[tn] - nodes_xy[iv[r[loc]]]) / scale[loc, None]
                P = _basis(X, p)  # (k, nt): patch polynomial's terms at its target nodes
                return _Piece(tn, ix.astype(np.int32), P, G, loc.astype(np.int32))

            parts += map_chunks(batch, range(0, rows.size, _FIT_CHUNK))
        if parts:
            reached += np.bincount(np.concatenate([pc.node for pc in parts]), minlength=n)
            inv_reached = 1.0 / np.maximum(reached, 1.0)
            for pc in parts:  # a node's value: the mean of the patch polynomials that reach it
                pc.terms *= inv_reached[pc.node][:, None]
    # 2. own patches: boundary nodes ("enlarged") and nodes no interior patch reached
    todo = np.flatnonzero(own_patch | (in_region & (reached == 0)))
    if todo.size:
        enlarged = boundary == "enlarged"
        all_quads = all(smp.block.etype.cell == "quad" for smp in samples)
        own, done, fitted = _own_patches(nodes_xy[todo], todo, A_en, A_es, xs,
                                         p + 1 if enlarged and all_quads else p, p, weighted=enlarged)
        parts += [_Piece(tn, cols.astype(np.int32), W) for tn, cols, W in own]
        reached[todo] = np.where(done, 1.0, 0.0)
        short = np.zeros(n, dtype=bool)  # below the elements' own degree (not a higher one asked for)
        own_p = min(p, max(int(smp.block.etype.degree) for smp in samples))
        short[todo[done & (fitted < own_p)]] = True
        return RecoveryOperator(n, S, parts, in_region & (reached > 0), short)
    return RecoveryOperator(n, S, parts, in_region & (reached > 0))


def patch_recovery(mesh, samples: list[Samples], *, degree: int | None = None,
                   boundary: str = "enlarged", operator: RecoveryOperator | None = None) -> np.ndarray:
    """Superconvergent patch recovery of sampled values over one region.

    Parameters
    ----------
    mesh : Mesh
        The mesh the blocks' connectivity refers to.
    samples : list of Samples
        Sampled values of the blocks of ONE region (any number of element types). ``stress`` may have
        any number of components c in its last axis.
    degree : int, optional
        Degree of the fitted complete polynomial; default the largest element degree of the blocks.
    boundary : {"enlarged", "interior"}
        How nodes on the region boundary are recovered: each from its own patch enlarged by the
        neighbouring elements (``"enlarged"``, the default; see the module notes), or from the
        polynomials of the interior vertex patches that contain them (``"interior"``, Zienkiewicz
        and Zhu 1992).
    operator : RecoveryOperator, optional
        The map built by :func:`recovery_operator` for the same samples' points, degree and
        boundary treatment (built here when not given).

    Returns
    -------
    ndarray, shape (n_nodes, c)
        Recovered nodal values; NaN at nodes that no element of the samples touches. At the nodes the
        operator marks ``short`` (their own patch could only fit a lower degree than the elements':
        a strip of Q4 one element thick, whose centres lie on one line) the value is that lower fit;
        :func:`planar.core.recovery.recover` (what results use) puts the elements' extrapolated Gauss
        stresses there instead, as this function has the sampled values only.

    Notes
    -----
    For each patch the coefficients a of sigma*(x) = P(x) a solve the normal equations
    (sum_k P^T(x_k) P(x_k)) a = sum_k P^T(x_k) sigma_h(x_k) over its sampling points x_k
    (Zienkiewicz and Zhu 1992, Part 1, eqs. 7-9). Sampled values that are a polynomial of degree
    ``degree`` are reproduced exactly at every node (the consistency condition).
    """
    if operator is None:
        operator = recovery_operator(mesh, samples, degree=degree, boundary=boundary)
    if not samples:
        raise InputError("patch recovery needs at least one block of samples")
    c = samples[0].stress.shape[-1]
    vs = np.concatenate([s.stress.reshape(-1, c) for s in samples])
    if vs.shape[0] != operator.n_samples:
        raise InputError(f"the recovery operator is for {operator.n_samples} sampling points, the samples "
                         f"have {vs.shape[0]}; build it from the same blocks and points")
    return operator.apply(vs)
