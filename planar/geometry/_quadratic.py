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

The same side nodes make an all-quadrilateral mesh of a quad-dominant one (:func:`subdivide`: a Q4
into 4, a T3 into 3 quadrilaterals through the side nodes and a centre node), which
:func:`smooth` then smooths (Laplace, with every move that would spoil a cell taken back, and a
pattern search for the nodes of the worst cells).
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


def curve_parameters(g, curve: int, seg_tags: np.ndarray) -> np.ndarray | None:
    """Curve parameters (m, 2) of the ends of each segment, or None if gmsh has none.

    Parameters
    ----------
    g : module
        gmsh, with the curve meshed.
    seg_tags : ndarray, shape (m, 2)
        gmsh node tags of the segments (start, end), in the order gmsh made them along the curve.

    Returns
    -------
    ndarray, shape (m, 2), or None
        (u_start, u_end); on a closed curve the end of the segment that crosses the seam is
        moved by one period, so that the segment's parameters are the interval between them.
    """
    tags, _, u = g.model.mesh.getNodes(1, curve, includeBoundary=True, returnParametricCoord=True)
    tags = np.asarray(tags, dtype=np.int64)
    u = np.asarray(u, float)
    if u.size != tags.size:  # no parameters (should not happen on a model curve)
        return None
    order = np.argsort(tags, kind="stable")
    st = tags[order]

    def par(t):
        return u[order[np.searchsorted(st, t)]]

    ua, ub = par(seg_tags[:, 0]), par(seg_tags[:, 1])
    lo, hi, closed = _range(g, curve)
    if closed:
        # gmsh numbers the segments along the curve; the one that ends at the seam vertex has
        # that vertex at the start of the range
        ub = np.where(ub <= ua, ub + (hi - lo), ub)
    return np.column_stack([ua, ub])


def _range(g, curve: int) -> tuple[float, float, bool]:
    lo, hi = (float(v[0]) for v in g.model.getParametrizationBounds(1, curve))
    ends = g.model.getBoundary([(1, curve)], oriented=False)
    closed = len(ends) < 2 or abs(ends[0][1]) == abs(ends[-1][1])
    return lo, hi, closed


def curve_mid_points(g, curve: int, params: np.ndarray | None, a: np.ndarray, b: np.ndarray):
    """Points of ``curve`` equidistant from each segment's two ends ``a``, ``b`` (m, 2).

    Parameters
    ----------
    g : module
        gmsh, with the model's curves.
    params : ndarray, shape (m, 2), or None
        The segments' curve parameters (:func:`curve_parameters`); None projects the chords'
        midpoints onto the curve instead.
    a, b : ndarray, shape (m, 2)
        Coordinates of the segments' ends.

    Returns
    -------
    points : ndarray, shape (m, 2)
    u : ndarray, shape (m,), or None
        Their curve parameters (between the ends' parameters), None if ``params`` is None.
    """
    if params is None:
        return _closest(g, curve, 0.5 * (a + b)), None
    ua, ub = params[:, 0], params[:, 1]
    lo, hi, closed = _range(g, curve)
    period = hi - lo
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
    return p, um


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


# ---------------------------------------------------------------------------------- all quadrilaterals
#: local node order of the quadrilaterals a Q4 (corners 0-3, side nodes 4-7, centre 8) and a T3
#: (corners 0-2, side nodes 3-5, centre 6) are split into; all counter-clockwise like their cell
_SPLIT = {"Q4": np.array([[0, 4, 8, 7], [4, 1, 5, 8], [8, 5, 2, 6], [7, 8, 6, 3]]),
          "T3": np.array([[0, 3, 6, 5], [1, 4, 6, 3], [2, 5, 6, 4]])}


def subdivide(xy: np.ndarray, blocks: list, curve_segs: dict, curve_mid: dict):
    """Split every Q4 into 4 and every T3 into 3 quadrilaterals (an all-quadrilateral mesh).

    Every side gets a node (at its midpoint, or on the true curve for the segments of a curve), every
    cell one at its centre: the transfinite blend of its sides, ``sum(side nodes) / 2 - sum(corners) / 4``
    for a Q4 and ``(4 sum(side nodes) - sum(corners)) / 9`` for a T3 (the centroid for straight sides).
    The mesh stays conforming, as both cells at a side share its node.

    Parameters
    ----------
    xy : ndarray, shape (n, 2)
    blocks : list of (tag, layout, connectivity)
        Counter-clockwise "T3" (e, 3) and "Q4" (e, 4) cells; the tag (a surface) is passed through.
    curve_segs : dict
        Curve -> (m, 2) node numbers of its segments, in order along the curve.
    curve_mid : dict
        Curve -> (m, 2) points for the nodes of its segments (curves not listed are straight).

    Returns
    -------
    xy : ndarray, shape (n + sides + cells, 2)
    blocks : list of (tag, "Q4", connectivity)
    curve_segs : dict
        Each segment (a, b) replaced by (a, m), (m, b).
    """
    n = xy.shape[0]
    keys = [side_keys(c[:, SIDES[lay][:, 0]], c[:, SIDES[lay][:, 1]], n) for _, lay, c in blocks]
    allk = np.concatenate([k.ravel() for k in keys]) if keys else np.empty(0, np.int64)
    uniq, inv = np.unique(allk, return_inverse=True)
    inv = inv.reshape(-1)
    mid = 0.5 * (xy[uniq // n] + xy[uniq % n])
    seg_node = {}
    for c, seg in curve_segs.items():
        k = side_keys(seg[:, 0], seg[:, 1], n)
        pos = np.minimum(np.searchsorted(uniq, k), max(uniq.size - 1, 0))
        if uniq.size == 0 or not np.array_equal(uniq[pos], k):
            raise MeshError("a boundary segment of the mesh is no side of any cell; the mesh is broken")
        if c in curve_mid:
            mid[pos] = curve_mid[c]
        seg_node[c] = n + pos
    nodes, out = [xy, mid], []
    nxt, start = n + uniq.size, 0
    for (tag, lay, c), k in zip(blocks, keys):
        side = inv[start : start + k.size].reshape(k.shape)
        start += k.size
        sm, cm = mid[side].sum(axis=1), xy[c].sum(axis=1)
        centre = 0.5 * sm - 0.25 * cm if lay == "Q4" else (4.0 * sm - cm) / 9.0
        local = np.hstack([c.astype(np.int64), n + side, (nxt + np.arange(c.shape[0]))[:, None]])
        nxt += c.shape[0]
        nodes.append(centre)
        out.append((tag, "Q4", local[:, _SPLIT[lay]].reshape(-1, 4)))
    segs = {c: np.stack([np.column_stack([seg[:, 0], seg_node[c]]), np.column_stack([seg_node[c], seg[:, 1]])],
                        axis=1).reshape(-1, 2) for c, seg in curve_segs.items()}
    return np.vstack(nodes), out, segs


def corner_quality(xy: np.ndarray, conn: np.ndarray) -> np.ndarray:
    """Least sine of the corner angles of each counter-clockwise cell (negative: a reflex corner or
    a cell turned inside out; 1 for a rectangle)."""
    return _quality_of(xy[conn])


def smooth(xy: np.ndarray, conn: np.ndarray, fixed: np.ndarray, iterations: int = 4,
           floor: float = 0.6) -> np.ndarray:
    """Laplace smoothing of the free nodes of a quadrilateral mesh that never spoils a cell.

    Each step moves every free node to the mean of its neighbours along the cells' sides; then the
    moves at cells whose least corner sine (:func:`corner_quality`) falls below both its value
    before the step and ``floor`` (0.6: corners between 37 and 143 degrees) are taken back, until no
    such cell is left. So the worst cell never gets worse and no cell turns inside out.

    Parameters
    ----------
    xy : ndarray, shape (n, 2)
    conn : ndarray, shape (e, 4)
        Counter-clockwise quadrilaterals.
    fixed : ndarray of bool, shape (n,)
        Nodes that stay (on curves, named points).
    """
    from scipy import sparse

    n = xy.shape[0]
    a = conn.ravel()
    b = np.roll(conn, -1, axis=1).ravel()
    A = sparse.coo_matrix((np.ones(2 * a.size), (np.concatenate([a, b]), np.concatenate([b, a]))), shape=(n, n)).tocsr()
    A.data[:] = 1.0  # each side once, whether one cell or two have it
    deg = np.asarray(A.sum(axis=1)).ravel()
    free = ~fixed & (deg > 0)
    if not free.any():
        return xy
    q = corner_quality(xy, conn)
    for _ in range(iterations):
        new = xy.copy()
        new[free] = (A @ xy)[free] / deg[free, None]
        for _ in range(50):
            qn = corner_quality(new, conn)
            worse = qn < np.minimum(q, floor)
            if not worse.any():
                break
            back = np.unique(conn[worse].ravel())
            new[back] = xy[back]
        else:
            break  # cannot happen (taking every move back restores the cells); be safe
        xy, q = new, qn
    return _improve_worst(xy, conn, free, q)


#: cells with a least corner sine below this (corners under 12 or over 168 degrees) get their free
#: nodes moved one by one to the best nearby place (:func:`_improve_worst`)
WORST = 0.2
_DIRECTIONS = np.array([[np.cos(a), np.sin(a)] for a in np.arange(8) * np.pi / 4])


def _improve_worst(xy, conn, free, q, sweeps: int = 4, most: int = 20_000):
    """Move each free node of the worst cells (``q < WORST``) to where the least corner sine of its
    cells is largest, by a pattern search (8 directions, steps of 30 % down to 1 % of the node's mean
    distance to its cells' other nodes). This turns the few non-convex cells that a split sliver
    triangle can give into convex ones, and improves the worst corners; no cell gets worse than the
    worst cell at that node."""
    bad = q < WORST
    if not bad.any():
        return xy
    xy = xy.copy()
    flat = conn.ravel()
    order = np.argsort(flat, kind="stable")
    start = np.searchsorted(flat[order], np.arange(xy.shape[0] + 1))
    visits = 0
    for _ in range(sweeps):
        nodes = np.unique(conn[bad].ravel())
        nodes = nodes[free[nodes]]
        moved = False
        for v in nodes:
            visits += 1
            if visits > most:
                return xy
            cs = order[start[v] : start[v + 1]] // 4
            c = conn[cs]
            X = xy[c]
            at = c == v
            best = corner_quality(xy, c).min()
            h = np.hypot(*(X[~at] - xy[v]).T).mean()
            p = xy[v].copy()
            for step in (0.3, 0.1, 0.03, 0.01):
                for _ in range(3):
                    cand = p + step * h * _DIRECTIONS  # (8, 2)
                    Xc = np.broadcast_to(X, (8,) + X.shape).copy()
                    Xc[:, at] = cand[:, None, :]
                    qc = _quality_of(Xc.reshape(-1, 4, 2)).reshape(8, -1).min(axis=1)
                    j = int(np.argmax(qc))
                    if qc[j] <= best:
                        break
                    best, p = qc[j], cand[j]
                    moved = True
            xy[v] = p
        if not moved:
            break
        bad = corner_quality(xy, conn) < WORST
        if not bad.any():
            break
    return xy


def _quality_of(p: np.ndarray) -> np.ndarray:
    e = np.roll(p, -1, axis=1) - p
    f = np.roll(e, 1, axis=1)
    cross = f[..., 0] * e[..., 1] - f[..., 1] * e[..., 0]
    lf, le = np.hypot(f[..., 0], f[..., 1]), np.hypot(e[..., 0], e[..., 1])
    return np.min(cross / np.maximum(lf * le, 1e-300), axis=1)
