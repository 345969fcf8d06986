"""Nodal stresses: region-wise averaging and superconvergent patch recovery (SPR).

Finite-element stresses are discontinuous between elements and least accurate at the nodes, which is
where the peaks of a part usually are (hole edges, notch roots, fillets). This module turns the
element stresses into one continuous nodal field per region:

``"average"``
    The Gauss-point stresses of each element are extrapolated to its nodes (a least-squares fit of
    the stresses' own polynomial degree) and averaged over the elements of the region that share the
    node.
``"spr"``
    Superconvergent patch recovery (O. C. Zienkiewicz and J. Z. Zhu, "The superconvergent patch
    recovery and a posteriori error estimates", Part 1: The recovery technique, Int. J. Numer.
    Methods Eng. 33, 1331-1364, 1992): around every vertex node, a complete polynomial of the
    element degree p is fitted by least squares to the stresses at the elements' superconvergent
    sampling points, and evaluated at the nodes.

Recovery never smooths across a change of material or thickness: every region is recovered on its
own, so a node on an interface has one value per region (``per_region=True``). Units are the
model's (stresses in the user's force per area, e.g. MPa).

Sampling points (the reduced Gauss rule of each element type)
-------------------------------------------------------------
====  ==================================  ======================
type  points                              fitted polynomial
====  ==================================  ======================
T3    1, the centroid                     complete linear
T6    3, the degree-2 rule                complete quadratic
Q4    1, the centre                       complete linear
Q8    2 x 2 Gauss                         complete quadratic
Q9    2 x 2 Gauss                         complete quadratic
====  ==================================  ======================

A plugin element uses the same rule for its degree (triangle rule of degree p, p x p on quads).

Patches
-------
- The patch of a vertex (corner) node is the set of elements of the region that share it. The
  polynomial is written in local coordinates centred at the vertex and scaled by the patch size,
  so the normal equations stay well conditioned at any mesh size.
- An interior vertex takes the value of its own patch; mid-side and centre nodes inside the region
  take the average of the polynomials of the interior vertex patches that contain them
  (Zienkiewicz and Zhu 1992, Part 1, section 4).
- Nodes on the region boundary (free edges, supports and interfaces alike), where the stress peaks
  of a part usually are, have no patch around them. By default (``boundary="enlarged"``) each is
  recovered from its own patch: the elements around it and their neighbours (grown by rings of
  elements until there are at least 1.5 times as many sampling points as terms), with the
  polynomial centred on the node, the points weighted by 1 / (d / d_max + 1/4)^2 so the nearest
  count most, and on quadrilateral regions the degree raised to p + 1 (a space that holds the
  element's own bilinear, serendipity or Lagrange polynomial). This is our choice, tested against
  the exact Kirsch field on mapped and gmsh meshes of all five element types, where it beat both
  averaging and ZZ's original rule at the hole. ``boundary="interior"`` gives the original rule:
  boundary nodes take the average of the interior vertex patches that contain them.
- A node that no interior patch reaches (a corner element of a strip one element thick, say) is
  recovered from its own enlarged patch too; when that patch has too few or badly placed points
  for the degree, the degree drops until the fit is determined.

A patch polynomial reproduces sampled values of its degree exactly, so recovery is exact for a
stress field of degree p sampled exactly (the consistency condition), at boundary nodes too.

All fits of one region are computed at once: patches are grouped by their number of sampling
points, and each group's normal equations are solved as one batched ``numpy.linalg.solve``.
"""
from __future__ import annotations

from concurrent.futures import Future
from dataclasses import dataclass
from typing import Any

import numpy as np
import scipy.sparse as sp

from ..core.assembly import CHUNK, element_strains
from ..core.parallel import background, map_chunks
from ..core.errors import InputError
from ..core.materials import sigma_zz
from ..core.quadrature import Rule, rule_for
from ..core.result import extrapolation_matrix, stress_measures
from ..core.result import as_result

__all__ = ["recover", "sampling_rule", "Samples", "stress_samples", "patch_recovery", "recovery_operator",
           "RecoveryOperator", "METHODS"]

#: recovery methods a user can ask for
METHODS = ("spr", "average")
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


def _has_initial_strain(g) -> bool:
    return g.mech_strain is not g.strain and not np.array_equal(g.mech_strain, g.strain)


def stress_samples(result) -> list[Samples]:
    """Stresses at the superconvergent sampling points of every block of a result.

    Parameters
    ----------
    result : Result

    Returns
    -------
    list of Samples
        One entry per element block, in the order of ``result.assembly.blocks``.

    Notes
    -----
    Strains come from the element's own ``strain`` hook when it has one, otherwise from B u_e; the
    stress is D eps. A block loaded by an initial strain (thermal load) is sampled at the stiffness
    rule's points, where the initial strain is known (``superconvergent=False``).
    """
    result = as_result(result, "stress_samples")
    nodes = result.mesh.nodes
    analysis = result.model.analysis
    blocks = result.assembly.blocks
    e0s = list(getattr(result, "_e0", None) or [None] * len(blocks))
    out = []
    for i, b in enumerate(blocks):
        e0 = e0s[i]
        if e0 is not None and np.any(e0):  # the Gauss fields tell whether it strains the plane
            g = result.gauss[i]
            if _has_initial_strain(g):
                out.append(Samples(b, g.x, np.concatenate([g.stress, g.szz[..., None]], axis=-1), False))
                continue
        rule = sampling_rule(b.etype)
        stiff = b.etype.default_rule() if b.rule_mode == "selective" else b.rule
        if stiff.points.shape == rule.points.shape and np.array_equal(stiff.points, rule.points):
            g = result.gauss[i]  # the stiffness rule samples there already (T3, T6): reuse its stresses
            out.append(Samples(b, g.x, np.concatenate([g.stress, g.szz[..., None]], axis=-1), True))
            continue
        x = b.geometry(nodes, rule)[0]
        strain = np.empty((b.n, rule.n_points, 3))

        def chunk(s: int, b=b, strain=strain, rule=rule):
            conn = b.conn[s : s + CHUNK]
            coords = nodes[conn]
            ue = result.u[conn].reshape(coords.shape[0], -1)
            strain[s : s + CHUNK] = element_strains(b.etype, coords, b.D, ue, rule)

        map_chunks(chunk, range(0, b.n, CHUNK))
        stress = np.einsum("ab,eqb->eqa", b.D, strain)
        if hasattr(b.material, "compliance3d"):
            szz = sigma_zz(b.material, analysis, stress)
        else:
            szz = np.zeros(stress.shape[:2])
        out.append(Samples(b, x, np.concatenate([stress, szz[..., None]], axis=-1), True))
    return out


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
    """
    A_ne = A_en.T.tocsr()
    done = np.zeros(nodes.size, dtype=bool)
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
        if done.all():
            break
    return parts, done


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
    """

    def __init__(self, n_nodes: int, n_samples: int, pieces: list[_Piece], valid: np.ndarray):
        self.n_nodes, self.n_samples = int(n_nodes), int(n_samples)
        self._pieces = pieces
        self.valid = valid
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
        own, done = _own_patches(nodes_xy[todo], todo, A_en, A_es, xs,
                                 p + 1 if enlarged and all_quads else p, p, weighted=enlarged)
        parts += [_Piece(tn, cols.astype(np.int32), W) for tn, cols, W in own]
        reached[todo] = np.where(done, 1.0, 0.0)
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
        Recovered nodal values; NaN at nodes that no element of the samples touches.

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


def _average_region(result, blocks: list[int]) -> np.ndarray:
    """Gauss values extrapolated to the nodes and averaged over the region's elements."""
    n = result.mesh.n_nodes
    acc = np.zeros((n, 4))
    cnt = np.zeros(n)
    for i in blocks:
        g = result.gauss[i]
        vals = np.concatenate([g.stress, g.szz[..., None]], axis=-1)
        Emat = extrapolation_matrix(g.block.etype, g.rule)
        nv = np.einsum("kq,eqc->ekc", Emat, vals)
        np.add.at(acc, g.block.conn.ravel(), nv.reshape(-1, 4))
        np.add.at(cnt, g.block.conn.ravel(), 1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = acc / cnt[:, None]
    out[cnt == 0] = np.nan
    return out


def _combine(per_region: dict[str, np.ndarray], n: int) -> np.ndarray:
    """One nodal field: at interface nodes, the region value with the largest von Mises stress."""
    arrays = list(per_region.values())
    if len(arrays) == 1:
        out = arrays[0].copy()
    else:
        stack = np.stack(arrays)  # (r, n, 4)
        vm = stress_measures(stack[..., :3], stack[..., 3])["von_mises"]
        vm = np.where(np.isnan(vm), -np.inf, vm)
        pick = np.argmax(vm, axis=0)
        out = stack[pick, np.arange(n)]
    out[np.isnan(out)] = 0.0
    return out


def _operator_key(ids, flags, degree, boundary) -> tuple:
    return ("spr", tuple(ids), tuple(flags), degree, boundary)


def _cached_operator(asm, ids: list[int], samples: list[Samples], degree, boundary) -> RecoveryOperator:
    """The region's recovery operator from the assembly's cache (waiting for one being built)."""
    cache = getattr(asm, "cache", None)
    if cache is None:
        return recovery_operator(asm.mesh, samples, degree=degree, boundary=boundary)
    key = _operator_key(ids, [s.superconvergent for s in samples], degree, boundary)
    op = cache.get(key)
    if isinstance(op, Future):
        try:
            op = op.result()
        except Exception:  # noqa: built again below, so that the error surfaces here
            op = None
    if op is None:
        op = recovery_operator(asm.mesh, samples, degree=degree, boundary=boundary)
    cache[key] = op
    return op


#: models with fewer unknowns build their recovery operators when first asked (it takes milliseconds)
PREPARE_ABOVE = 50_000


def prepare_recovery(asm, n_unknowns: int) -> list[Future]:
    """Start building the default SPR operators of every region in the background.

    Called by :func:`planar.solve` before a PARDISO factorization, whose ordering phase keeps one
    core only (the numeric phase waits for the builds, so they never compete with it); the
    operators depend on the mesh alone. The first nodal-stress request then finds them built.
    Blocks loaded by initial strains are sampled elsewhere (see :func:`stress_samples`), so their
    operator is built on request instead.

    Returns
    -------
    list of Future
        The builds started (none below ``PREPARE_ABOVE`` unknowns).
    """
    started: list[Future] = []
    if n_unknowns < PREPARE_ABOVE:
        return started
    regions: dict[str, list[int]] = {}
    for i, b in enumerate(asm.blocks):
        regions.setdefault(b.region, []).append(i)
    for ids in regions.values():
        key = _operator_key(ids, [True] * len(ids), None, "enlarged")
        if key in asm.cache:
            continue

        def build(ids=ids):
            blocks = [asm.blocks[i] for i in ids]
            points = [b.geometry(asm.mesh.nodes, sampling_rule(b.etype))[0] for b in blocks]
            return recovery_operator(asm.mesh, [Samples(b, x, np.zeros(0)) for b, x in zip(blocks, points)])

        asm.cache[key] = background(build)
        started.append(asm.cache[key])
    return started


def recover(result, method: str = "spr", per_region: bool = False, *, boundary: str = "enlarged",
            degree: int | None = None) -> np.ndarray | dict[str, np.ndarray]:
    """Nodal stresses of a result, recovered region by region.

    Parameters
    ----------
    result : Result
    method : {"spr", "average"}
        ``"spr"``: superconvergent patch recovery (the default for reported peaks);
        ``"average"``: Gauss values extrapolated to the nodes and averaged per region.
    per_region : bool, default False
        False: one (n_nodes, 4) array; at a node shared by regions of different material or
        thickness, the value of the region with the largest von Mises stress there (the critical
        side of the interface). True: a dict region name -> (n_nodes, 4) array with NaN at the
        nodes outside that region, so interface nodes keep one value per region.
    boundary : {"enlarged", "interior"}, keyword-only
        Boundary-node treatment of SPR (see :func:`patch_recovery`).
    degree : int, optional, keyword-only
        SPR polynomial degree (default: the element degree p).

    Returns
    -------
    ndarray, shape (n_nodes, 4), or dict of str to ndarray
        Columns (sigma_xx, sigma_yy, tau_xy, sigma_zz) in the model's stress unit. Nodes that belong
        to no element get zero (in the combined array).

    Raises
    ------
    InputError
        For an unknown method or boundary treatment.

    Examples
    --------
    >>> import planar
    >>> from planar.post.recovery import recover
    >>> mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
    >>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0)
    >>> _ = model.add_support(planar.Roller("left", fixed="x"))
    >>> _ = model.add_support(planar.Roller("corner_00", fixed="y"))
    >>> _ = model.add_load(planar.Traction("right", tx=50.0), case="pull")
    >>> s = recover(planar.solve(model)["pull"], "spr")
    >>> round(float(s[:, 0].max()), 9), s.shape
    (50.0, (85, 4))
    """
    result = as_result(result, "recover")
    if method not in METHODS:
        raise InputError(f"unknown stress recovery {method!r}; pick one of {', '.join(METHODS)}")
    if boundary not in _BOUNDARY:
        raise InputError(f"unknown boundary treatment {boundary!r}; pick one of {', '.join(_BOUNDARY)}")
    blocks = result.assembly.blocks
    regions: dict[str, list[int]] = {}
    for i, b in enumerate(blocks):
        regions.setdefault(b.region, []).append(i)
    out: dict[str, np.ndarray] = {}
    if method == "spr":
        samples = stress_samples(result)
        for name, ids in regions.items():
            mine = [samples[i] for i in ids]
            op = _cached_operator(result.assembly, ids, mine, degree, boundary)
            out[name] = patch_recovery(result.mesh, mine, operator=op)
    else:
        for name, ids in regions.items():
            out[name] = _average_region(result, ids)
    if per_region:
        return out
    return _combine(out, result.mesh.n_nodes)
