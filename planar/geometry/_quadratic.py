"""Quadratic cells (T6, Q8, Q9) from linear ones (T3, Q4), built with numpy.

gmsh's own ``setOrder(2)`` takes about as long as meshing (19 s for 10^6 triangles); here the
mid-side nodes are made in a few vectorized steps:

1. every cell side is a pair of corner nodes; sorting each pair and ``np.unique`` over the pairs
   give the unique sides, and one new node per side at its midpoint;
2. sides on a curve of the plate (its edges and the outlines of its regions) get their node on the
   true curve instead, at the curve's point equidistant from the side's two ends (where the
   chord's perpendicular bisector meets the curve: the middle of the arc to O(h^3), as gmsh places
   it), found by three Newton steps from the mean of the ends' curve parameters;
3. the Q9 centre node is placed by the transfinite (Coons) blend of the sides,
   ``x_c = (sum of the 4 mid-side nodes) / 2 - (sum of the 4 corners) / 4``, which is the bilinear
   centre for straight sides and follows curved ones;
4. cells with a curved side are checked: where the Jacobian determinant at the check points of the
   element (its nodes and its quadrature points) falls below 0.2 % of its largest value and the
   straight-sided cell would be better (a cell turned nearly or wholly inside out by a curved side
   long for the curve's radius, or a quadrilateral with a corner near 180 degrees), that side's
   node goes back to the chord's midpoint, with a warning that names the place.

Node order is planar's (and gmsh's and VTK's): corners, then the nodes of sides (0-1), (1-2), (2-0)
or (2-3), (3-0), then the Q9 centre.
"""
from __future__ import annotations

import warnings

import numpy as np

from ..core.elements import Q8, Q9, T6
from ..core.errors import MeshError, PlanarWarning, fmt_point

#: local corner pairs of the sides, in node order
SIDES = {"T3": np.array([[0, 1], [1, 2], [2, 0]]), "Q4": np.array([[0, 1], [1, 2], [2, 3], [3, 0]])}
#: least accepted ratio of the smallest to the largest Jacobian determinant of a curved cell: twice
#: the least that planar.core.assembly.prepare accepts (its check points are a subset of ours)
CURVED_LIMIT = 2e-3
#: Newton steps from the mean parameter to the curve point equidistant from a side's ends
_NEWTON_STEPS = 3


def side_keys(a: np.ndarray, b: np.ndarray, n: int) -> np.ndarray:
    """One int64 key per unordered node pair (a, b), nodes numbered below ``n``."""
    a = a.astype(np.int64)
    b = b.astype(np.int64)
    return np.minimum(a, b) * n + np.maximum(a, b)


def curve_mid_points(g, curve: int, seg_tags: np.ndarray, xy_of_tags) -> np.ndarray:
    """Points of ``curve`` equidistant from each segment's two end nodes, near its mean parameter.

    Parameters
    ----------
    g : module
        gmsh, with the curve meshed.
    seg_tags : ndarray, shape (m, 2)
        gmsh node tags of the segments (start, end), in the order gmsh made them along the curve.
    xy_of_tags : callable
        Coordinates (k, 2) of gmsh node tags (k,), for the sanity check.

    Returns
    -------
    ndarray, shape (m, 2)
    """
    tags, _, u = g.model.mesh.getNodes(1, curve, includeBoundary=True, returnParametricCoord=True)
    tags = np.asarray(tags, dtype=np.int64)
    u = np.asarray(u, float)
    if u.size != tags.size:  # no parameters (should not happen on a model curve): project instead
        return _closest(g, curve, 0.5 * (xy_of_tags(seg_tags[:, 0]) + xy_of_tags(seg_tags[:, 1])))
    lo, hi = (float(v[0]) for v in g.model.getParametrizationBounds(1, curve))
    period = hi - lo
    ends = g.model.getBoundary([(1, curve)], oriented=False)
    closed = len(ends) < 2 or abs(ends[0][1]) == abs(ends[-1][1])
    order = np.argsort(tags, kind="stable")
    st = tags[order]

    def par(t):
        return u[order[np.searchsorted(st, t)]]

    ua, ub = par(seg_tags[:, 0]), par(seg_tags[:, 1])
    if closed:
        # gmsh numbers the segments along the curve; the one that ends at the seam vertex has
        # that vertex at the start of the range
        ub = np.where(ub <= ua, ub + period, ub)
    a, b = xy_of_tags(seg_tags[:, 0]), xy_of_tags(seg_tags[:, 1])
    wrap = (lambda v: lo + np.mod(v - lo, period)) if closed else (lambda v: v)
    um = 0.5 * (ua + ub)
    # Newton's method for the point equidistant from both ends: (p(u) - (a + b) / 2) . (b - a) = 0
    chord = b - a
    for _ in range(_NEWTON_STEPS):
        p = np.asarray(g.model.getValue(1, curve, wrap(um).tolist()), float).reshape(-1, 3)[:, :2]
        dp = np.asarray(g.model.getDerivative(1, curve, wrap(um).tolist()), float).reshape(-1, 3)[:, :2]
        f = np.einsum("ij,ij->i", p - 0.5 * (a + b), chord)
        fp = np.einsum("ij,ij->i", dp, chord)
        step = np.divide(f, fp, out=np.zeros_like(f), where=np.abs(fp) > 0)
        um = np.clip(um - step, np.minimum(ua, ub), np.maximum(ua, ub))
    p = np.asarray(g.model.getValue(1, curve, wrap(um).tolist()), float).reshape(-1, 3)[:, :2]
    # a curve node is within half a chord of the chord's midpoint (the sagitta is far less)
    off = np.hypot(*(p - 0.5 * (a + b)).T) > 0.5 * np.hypot(*(b - a).T)
    if off.any():
        p[off] = _closest(g, curve, 0.5 * (a[off] + b[off]))
    return p


def _closest(g, curve: int, pts: np.ndarray) -> np.ndarray:
    flat = np.column_stack([pts, np.zeros(len(pts))]).ravel().tolist()
    q, _ = g.model.getClosestPoint(1, curve, flat)
    return np.asarray(q, float).reshape(-1, 3)[:, :2]


def _det_ratio(lay: str, X: np.ndarray) -> np.ndarray:
    """Least over largest Jacobian determinant of each cell (negative if it changes sign)."""
    et = {"T6": T6, "Q8": Q8, "Q9": Q9}[lay]
    pts = np.vstack([et.default_rule().points, et.ref_nodes])
    dN = et.shape_derivatives(pts)  # (q, k, 2)
    J = np.einsum("eki,qkj->eqij", X, dN)
    det = J[..., 0, 0] * J[..., 1, 1] - J[..., 0, 1] * J[..., 1, 0]
    big = np.max(np.abs(det), axis=1)
    return det.min(axis=1) / np.where(big > 0, big, 1.0)


def quadratic(xy: np.ndarray, blocks: dict[str, np.ndarray], curved_keys: np.ndarray,
              curved_xy: np.ndarray, quad_layout: str = "Q8"):
    """Add mid-side (and Q9 centre) nodes to linear, counter-clockwise cells.

    Parameters
    ----------
    xy : ndarray, shape (n, 2)
        Corner nodes.
    blocks : dict
        ``{"T3": (e, 3), "Q4": (e, 4)}`` corner connectivity, counter-clockwise.
    curved_keys : ndarray, shape (m,)
        :func:`side_keys` of the sides that lie on a curve, and ``curved_xy`` (m, 2) the points on
        the curve for their nodes.
    quad_layout : {"Q8", "Q9"}

    Returns
    -------
    nodes : ndarray, shape (n + sides [+ Q9 cells], 2)
    cells : dict
        ``{"T6": ..., "Q8" or "Q9": ...}``.
    side_key : ndarray
        Sorted keys of the unique sides; the node of side ``k`` is ``n + searchsorted(side_key, k)``.
    """
    n = xy.shape[0]
    lays = [lay for lay in ("T3", "Q4") if lay in blocks and blocks[lay].shape[0]]
    keys = [side_keys(blocks[l][:, SIDES[l][:, 0]], blocks[l][:, SIDES[l][:, 1]], n).ravel() for l in lays]
    allk = np.concatenate(keys) if keys else np.empty(0, np.int64)
    uniq, inv = np.unique(allk, return_inverse=True)
    inv = inv.reshape(-1)
    lo, hi = uniq // n, uniq % n
    mid = 0.5 * (xy[lo] + xy[hi])
    curved = np.zeros(uniq.size, dtype=bool)
    if curved_keys.size:
        pos = np.searchsorted(uniq, curved_keys)
        pos = np.minimum(pos, uniq.size - 1)
        hit = uniq[pos] == curved_keys
        if not hit.all():
            raise MeshError("a boundary segment of the mesh is no side of any cell; the mesh is broken")
        mid[pos] = curved_xy
        curved[pos] = True
    # per block: the side numbers of every cell
    side_of = {}
    start = 0
    for l, k in zip(lays, keys):
        side_of[l] = inv[start : start + k.size].reshape(blocks[l].shape[0], -1)
        start += k.size
    names = {"T3": "T6", "Q4": quad_layout}
    straightened = []
    for _ in range(4):  # straightening a side can only help its cells; a few rounds settle it
        moved = np.zeros(uniq.size, dtype=bool)
        for l in lays:
            s = side_of[l]
            has = curved[s].any(axis=1)
            if not has.any():
                continue
            ids = np.flatnonzero(has)
            X = _cell_coords(xy, mid, blocks[l][ids], s[ids], names[l])
            bad = _det_ratio(names[l], X) < CURVED_LIMIT
            if bad.any():  # only where the straight cell would be better
                b = ids[bad]
                straight = (0.5 * (xy[lo[s[b]]] + xy[hi[s[b]]])).reshape(-1, 2)
                Xs = _cell_coords(xy, straight, blocks[l][b], np.arange(s[b].size).reshape(s[b].shape), names[l])
                bad[bad] = _det_ratio(names[l], Xs) > _det_ratio(names[l], X[bad])
            if bad.any():
                fix = np.unique(s[ids[bad]].ravel())
                fix = fix[curved[fix]]
                moved[fix] = True
        if not moved.any():
            break
        f = np.flatnonzero(moved)
        straightened.append(f)
        mid[f] = 0.5 * (xy[lo[f]] + xy[hi[f]])
        curved[f] = False
    if straightened:
        f = np.concatenate(straightened)
        warnings.warn(
            f"{f.size} mid-side node(s) on curved edges (first at {fmt_point(mid[f[0]])}) were put on the "
            "straight chord, because the curved cell there would be (nearly) inside out (a side long for "
            "the curve's radius, or a cell with a very obtuse corner). Use a smaller size near that curve "
            "(Refine(...)) for a true curve",
            PlanarWarning, stacklevel=3,
        )
    nodes = [xy, mid]
    cells = {}
    nxt = n + uniq.size
    for l in lays:
        s = side_of[l]
        conn = np.hstack([blocks[l].astype(np.int64), n + s])
        if names[l] == "Q9":
            c = blocks[l]
            centre = 0.5 * mid[s].sum(axis=1) - 0.25 * xy[c].sum(axis=1)
            conn = np.hstack([conn, (nxt + np.arange(c.shape[0]))[:, None]])
            nodes.append(centre)
            nxt += c.shape[0]
        cells[names[l]] = conn
    return np.vstack(nodes), cells, uniq


def _cell_coords(xy, mid, corners, sides, lay):
    X = np.concatenate([xy[corners], mid[sides]], axis=1)
    if lay == "Q9":
        centre = 0.5 * mid[sides].sum(axis=1) - 0.25 * xy[corners].sum(axis=1)
        X = np.concatenate([X, centre[:, None, :]], axis=1)
    return X
