"""Conformity between the cells of a mesh: hanging nodes, mismatched sides, slits and slivers.

In a conforming mesh every cell side is shared by two cells with the same nodes, or lies on the
boundary. Sides used by one cell only ("open" sides) are the boundary: an open side with a node of
another open side inside it (a hanging node, a T-junction), a side shared by two cells with
different mid-side nodes (a quadratic block beside a linear one, or two quadratic cells with their
own mid-side nodes), and distinct nodes at the same point on open sides of one piece of the mesh
(partly duplicated nodes along an interface, which open a slit) are refused, naming the nodes, the
cells and the fix. So are an open side's node inside the cell across another open side (cells laid
over each other, e.g. a hanging node moved into its neighbour), and a hole of at most
``SLIVER_SIDES`` sides whose area is below ``SLIVER_AREA`` times the square of its mean side (a
gap a few per cent of a side wide where cells should meet; a real hole or slot has more sides or
more area). A node within ``ON_SIDE_TOL`` of a side's length from it counts as on it; nodes within
the mesh's duplicate tolerance (1e-9 of its size, as :meth:`Mesh.merge_duplicate_nodes`) as one point.
Distinct nodes at one point where the pieces they belong to are not otherwise joined are left to
the support check, which names a free piece and the merge. A slit meant by the user (a crack) is declared on the mesh
(``Mesh(..., slits=[edge set names])``, or ``Mesh.read(path, merge_duplicates=False)``).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import ElementError, MeshError, fmt_point

__all__ = ["check_conforming", "side_table", "SideTable", "ON_SIDE_TOL", "SLIVER_SIDES", "SLIVER_AREA"]

#: a node within this fraction of a side's length of the side counts as lying on it
ON_SIDE_TOL = 1e-6


@dataclass
class SideTable:
    """Every cell side of a mesh, sorted by its pair of end nodes.

    Attributes
    ----------
    a, b : ndarray, shape (s,)
        End nodes of each side, in the cell's (counter-clockwise) order.
    mid : ndarray, shape (s,)
        Middle node, -1 for a straight-sided (linear) side.
    order : ndarray, shape (s,)
        Sides sorted by their unordered end-node pair.
    key : ndarray, shape (s,)
        Sorted keys: ``2 * (min * n + max) + (a < b)``.
    blocks : list of (layout, first side, sides per cell)
    edges : dict
        Local sides (start, end[, middle]) of each layout.
    """

    a: np.ndarray
    b: np.ndarray
    mid: np.ndarray
    order: np.ndarray
    key: np.ndarray
    blocks: list
    edges: dict

    def owner(self, side: int) -> str:
        """'LAYOUT cell ID' of a side (by its index into a, b, mid)."""
        for layout, first, per in reversed(self.blocks):
            if side >= first:
                return f"{layout} cell {(side - first) // per}"
        raise IndexError(side)


def side_table(n_nodes: int, cells: dict, edges_of) -> SideTable:
    """Build the :class:`SideTable` of oriented cells (``edges_of(layout)`` gives the local sides)."""
    n = np.int64(n_nodes)
    a_l, b_l, m_l, blocks, first, eds = [], [], [], [], 0, {}
    for layout, conn in cells.items():
        ed = np.asarray(edges_of(layout))
        eds[layout] = ed
        a_l.append(conn[:, ed[:, 0]].astype(np.int64).ravel())
        b_l.append(conn[:, ed[:, 1]].astype(np.int64).ravel())
        if ed.shape[1] > 2:
            m_l.append(conn[:, ed[:, 2]].astype(np.int64).ravel())
        else:
            m_l.append(np.full(conn.shape[0] * ed.shape[0], -1, dtype=np.int64))
        blocks.append((layout, first, ed.shape[0]))
        first += conn.shape[0] * ed.shape[0]
    a, b, mid = np.concatenate(a_l), np.concatenate(b_l), np.concatenate(m_l)
    k = 2 * (np.minimum(a, b) * n + np.maximum(a, b)) + (a < b)
    s = k.size
    bits = max(1, int(s - 1).bit_length())
    if s and int(k.max()).bit_length() + bits <= 62:  # sort one packed array: far faster than argsort
        packed = np.sort((k << bits) | np.arange(s, dtype=np.int64))
        order = packed & ((1 << bits) - 1)
        key = packed >> bits
    else:
        order = np.argsort(k)
        key = k[order]
    return SideTable(a, b, mid, order, key, blocks, eds)


def _pieces(n_nodes: int, cells: dict) -> np.ndarray:
    """Piece number of every node (nodes joined through cells are in one piece)."""
    import scipy.sparse as sp
    from scipy.sparse.csgraph import connected_components

    r, c = [], []
    for conn in cells.values():
        for j in range(1, conn.shape[1]):
            r.append(conn[:, 0]); c.append(conn[:, j])
    r, c = np.concatenate(r), np.concatenate(c)
    G = sp.coo_matrix((np.ones(r.size, dtype=np.int8), (r, c)), shape=(n_nodes, n_nodes)).tocsr()
    return connected_components(G, directed=False)[1]


def _cells_of(cells: dict, node: int, limit: int = 3) -> list[str]:
    out = []
    for layout, conn in cells.items():
        out += [f"{layout} cell {int(i)}" for i in np.flatnonzero(np.any(conn == node, axis=1))[:limit]]
    return out[:limit]


def _on_side(P, A, B, M):
    """Distance from points P (m, 2) to sides A-B (straight, M NaN) or A-M-B (quadratic), and the
    parameter (0..1 from A to B) of the nearest point."""
    d = B - A
    L2 = np.maximum(np.sum(d * d, axis=1), 1e-300)
    t = np.clip(np.sum((P - A) * d, axis=1) / L2, 0.0, 1.0)
    X = A + t[:, None] * d
    curved = np.isfinite(M[:, 0])
    if np.any(curved):
        i = np.flatnonzero(curved)
        a, b, m, p = A[i], B[i], M[i], P[i]
        u = 2.0 * t[i] - 1.0  # xi on [-1, 1]; x(u) = a N0 + b N1 + m N2
        for _ in range(8):
            n0, n1, n2 = 0.5 * u * (u - 1), 0.5 * u * (u + 1), 1 - u * u
            d0, d1, d2 = u - 0.5, u + 0.5, -2 * u
            x = a * n0[:, None] + b * n1[:, None] + m * n2[:, None]
            dx = a * d0[:, None] + b * d1[:, None] + m * d2[:, None]
            ddx = a + b - 2 * m
            f = np.sum((x - p) * dx, axis=1)
            df = np.sum(dx * dx, axis=1) + np.sum((x - p) * ddx, axis=1)
            u = np.clip(u - f / np.where(np.abs(df) > 1e-300, df, 1e-300), -1.0, 1.0)
        n0, n1, n2 = 0.5 * u * (u - 1), 0.5 * u * (u + 1), 1 - u * u
        X[i] = a * n0[:, None] + b * n1[:, None] + m * n2[:, None]
        t[i] = 0.5 * (u + 1.0)
    return np.hypot(*(X - P).T), t


def _inside_owner(table: SideTable, cells: dict, nodes: np.ndarray, side: np.ndarray, P: np.ndarray,
                  pid: np.ndarray, tol: np.ndarray) -> np.ndarray:
    """Whether points P (m, 2) lie inside the cell that owns each side (by the polygon of its corner
    and mid-side nodes), farther than ``tol`` from its outline, and are not nodes of that cell."""
    out = np.zeros(side.size, dtype=bool)
    for layout, first, per in table.blocks:
        sel = np.flatnonzero((side >= first) & (side < first + cells[layout].shape[0] * per))
        if sel.size == 0:
            continue
        conn = cells[layout][(side[sel] - first) // per]
        ed = table.edges[layout]
        ring = ed[:, [0, 2]].ravel() if ed.shape[1] > 2 else ed[:, 0]
        poly = nodes[conn[:, ring]]  # (c, r, 2), the outline in order
        p = P[sel][:, None, :]
        a, b = poly, np.roll(poly, -1, axis=1)
        cross_ = ((a[..., 1] > p[..., 1]) != (b[..., 1] > p[..., 1])) & (
            p[..., 0] < a[..., 0] + (p[..., 1] - a[..., 1]) * (b[..., 0] - a[..., 0]) /
            np.where(b[..., 1] != a[..., 1], b[..., 1] - a[..., 1], 1.0))
        inside = (np.count_nonzero(cross_, axis=1) % 2) == 1
        d = b - a
        w = np.clip(np.sum((p - a) * d, axis=2) / np.maximum(np.sum(d * d, axis=2), 1e-300), 0.0, 1.0)
        gap = np.hypot(*np.moveaxis(a + w[..., None] * d - p, -1, 0)).min(axis=1)
        member = np.any(conn == pid[sel][:, None], axis=1)
        out[sel] = inside & (gap > tol[sel]) & ~member
    return out


#: a hole bounded by at most this many cell sides ...
SLIVER_SIDES = 6
#: ... whose area is below this fraction of the square of its mean side is a gap, not a hole
SLIVER_AREA = 0.02


def _check_slivers(mesh, nodes, table, cells, op, A_id, B_id, M_id, L, declared, every) -> None:
    """Refuse holes of at most ``SLIVER_SIDES`` open sides with almost no area (gaps between cells).

    Open sides are oriented with their cell on the left, so the outline of a hole runs clockwise
    (negative area) and the outer boundary counter-clockwise; only holes are looked at.
    """
    S = op.size
    # next open side along the outline of the void on the right: where several open sides leave
    # the end node, the one with the least counter-clockwise turn from the reversed incoming side
    srt = np.argsort(A_id, kind="stable")
    lo = np.searchsorted(A_id[srt], B_id, side="left")
    hi = np.searchsorted(A_id[srt], B_id, side="right")
    count = hi - lo
    nxt = np.where(count == 1, srt[np.minimum(lo, S - 1)], -1)
    many = np.flatnonzero(count > 1)
    if many.size:
        reps = count[many]
        inc = np.repeat(many, reps)
        out = srt[np.repeat(lo[many], reps) + (np.arange(reps.sum()) - np.repeat(np.cumsum(reps) - reps, reps))]
        back = nodes[A_id[inc]] - nodes[B_id[inc]]
        fwd = nodes[B_id[out]] - nodes[A_id[out]]
        turn = np.mod(np.arctan2(fwd[:, 1], fwd[:, 0]) - np.arctan2(back[:, 1], back[:, 0]), 2 * np.pi)
        turn = np.where(turn <= 0, 2 * np.pi, turn)
        best = np.lexsort((turn, inc))
        first = np.r_[True, inc[best][1:] != inc[best][:-1]]
        nxt[inc[best][first]] = out[best][first]
    pos = np.arange(S)
    chain = [pos]
    for k in range(1, SLIVER_SIDES):
        pos = np.where(pos >= 0, nxt[np.maximum(pos, 0)], -1)
        chain.append(pos)
        closed = (pos >= 0) & (nxt[np.maximum(pos, 0)] == np.arange(S)) & (k + 1 >= 2)
        closed &= np.arange(S) == np.minimum.reduce([c for c in chain])  # once per loop, from its least side
        if not closed.any():
            continue
        idx = np.column_stack([c[closed] for c in chain])  # (l, k + 1) sides of each loop, in order
        ring = [A_id[idx]]
        pts = []
        for j in range(idx.shape[1]):
            pts.append(nodes[A_id[idx[:, j]]])
            m = M_id[idx[:, j]]
            pts.append(np.where((m >= 0)[:, None], nodes[np.maximum(m, 0)], 0.5 * (nodes[A_id[idx[:, j]]] + nodes[B_id[idx[:, j]]])))
        poly = np.stack(pts, axis=1)
        x, y = poly[..., 0], poly[..., 1]
        area = 0.5 * np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1)
        mean = L[idx].mean(axis=1)
        thin = (area < 0) & (-area < SLIVER_AREA * mean ** 2)
        if not every:
            thin &= ~np.any(declared[ring[0]], axis=1)
        if thin.any():
            i = int(np.flatnonzero(thin)[0])
            ids = A_id[idx[i]].tolist()
            width = -2.0 * area[i] / max(L[idx[i]].sum() / 2.0, 1e-300)
            where = ", ".join(f"{a} {fmt_point(nodes[a])}" for a in ids)
            owners = ", ".join(table.owner(int(op[j])) for j in idx[i][:3])
            raise MeshError(
                f"the mesh does not conform: cells that should meet leave a thin gap between them (about "
                f"{width:.3g} wide, a hole of {len(ids)} cell sides through nodes {where}; cells {owners}), "
                "e.g. a hanging node moved off its neighbour's side or nodes of two meshes that do not "
                "match. Remesh conformingly, or join the nodes; if the gap is a slit you mean, declare it: "
                "Mesh(..., slits=['name of an edge set along its faces'])"
            )


def check_conforming(mesh, cells: dict, table: SideTable, slits=()) -> None:
    """Refuse a non-conforming mesh (see the module notes).

    Parameters
    ----------
    mesh : Mesh
        Its nodes, size and edge sets.
    cells : dict
        Cell blocks, turned counter-clockwise.
    table : SideTable
        The cells' sides (:func:`side_table`); cells that overlap were refused before.
    slits : bool or sequence of str
        Declared slits: True (every line of coincident nodes is meant) or names of edge sets along
        the faces of cracks meant by the user.

    Raises
    ------
    MeshError
        For unmatched mid-side nodes, hanging nodes and slits opened by duplicated nodes, naming the
        nodes, their coordinates, the cells and the fix.
    """
    nodes = mesh.nodes
    key, order = table.key, table.order
    und = key >> 1
    same = und[1:] == und[:-1]
    # ---- shared sides must share their middle node too
    if same.any():
        i = np.flatnonzero(same)
        s1, s2 = order[i], order[i + 1]
        bad = table.mid[s1] != table.mid[s2]
        if bad.any():
            j = int(np.flatnonzero(bad)[0])
            s1, s2 = int(s1[j]), int(s2[j])
            a, b = int(table.a[s1]), int(table.b[s1])
            m1, m2 = int(table.mid[s1]), int(table.mid[s2])
            c1, c2 = table.owner(s1), table.owner(s2)
            count = int(np.count_nonzero(bad))
            head = (f"the mesh does not conform: {count} cell side(s) are shared by two cells that do not share "
                    f"their mid-side nodes; first, {c1} and {c2} meet along the side from node {a} "
                    f"{fmt_point(nodes[a])} to node {b} {fmt_point(nodes[b])}, ")
            if (m1 < 0) != (m2 < 0):
                quad, m = (c1, m1) if m1 >= 0 else (c2, m2)
                lin = c2 if m1 >= 0 else c1
                raise MeshError(
                    head + f"where {quad} has mid-side node {m} {fmt_point(nodes[m])} and the linear {lin} "
                    "has none (a quadratic block beside a linear one): the displacement is not continuous "
                    "there. Use the same element order on both sides (all quadratic or all linear), or "
                    "remesh conformingly"
                )
            fix = ("they lie at the same point: join them with mesh = mesh.merge_duplicate_nodes() (or "
                   "Mesh.read(path, merge_duplicates=True))"
                   if np.hypot(*(nodes[m1] - nodes[m2])) <= mesh._tolerance(None) else
                   "remesh so that neighbouring cells share one node in the middle of each side")
            raise MeshError(head + f"with different mid-side nodes {m1} {fmt_point(nodes[m1])} and {m2} "
                            f"{fmt_point(nodes[m2])}; {fix}")
    # ---- open sides: used by one cell only
    lone = np.ones(key.size, dtype=bool)
    lone[1:] &= ~same
    lone[:-1] &= ~same
    op = order[lone]
    if op.size < 2:
        return
    A_id, B_id, M_id = table.a[op], table.b[op], table.mid[op]
    declared = np.zeros(mesh.n_nodes, dtype=bool)
    every = slits is True
    if not every:
        for name in slits or ():
            declared[np.asarray(mesh.edge_sets[name]).ravel()] = True
    ids = np.concatenate([A_id, B_id, M_id[M_id >= 0]])
    P = np.unique(ids)
    from scipy.spatial import cKDTree

    tree = cKDTree(nodes[P])
    dup = mesh._tolerance(None)
    pairs = tree.query_pairs(dup, output_type="ndarray")  # distinct nodes at one point
    if pairs.size:  # search among one node per point (a mesh of unjoined cells has many copies)
        import scipy.sparse as sp
        from scipy.sparse.csgraph import connected_components

        G = sp.coo_matrix((np.ones(pairs.shape[0], dtype=np.int8), (pairs[:, 0], pairs[:, 1])),
                          shape=(P.size, P.size))
        _, first = np.unique(connected_components(G, directed=False)[1], return_index=True)
        R = P[first]
        rtree = cKDTree(nodes[R])
    else:
        R, rtree = P, tree
    # ---- hanging nodes: an open side's node inside another open side
    A, B = nodes[A_id], nodes[B_id]
    M = np.where((M_id >= 0)[:, None], nodes[np.maximum(M_id, 0)], np.nan)
    L = np.hypot(*(B - A).T)
    C = 0.5 * (A + B)
    sag = np.where(M_id >= 0, np.hypot(*(np.nan_to_num(M) - C).T), 0.0)
    reach = 0.5 * L * (1 + 1e-6) + 2.0 * sag + dup
    kq = min(8, R.size)
    found_s, found_p = [], []
    todo = np.arange(op.size)
    while todo.size:  # the nearest open-side nodes to each side's centre, more where 8 are not enough
        d, j = rtree.query(C[todo], k=kq)
        d, j = d.reshape(todo.size, -1), j.reshape(todo.size, -1)
        near = d <= reach[todo, None]
        full = near[:, -1] & (kq < R.size)
        r, cidx = np.nonzero(near & ~full[:, None])
        found_s.append(todo[r])
        found_p.append(R[j[r, cidx]])
        todo = todo[full]
        kq = min(4 * kq, R.size)
    sid = np.concatenate(found_s).astype(np.int64)
    pid = np.concatenate(found_p).astype(np.int64)
    own = (pid == A_id[sid]) | (pid == B_id[sid]) | (pid == M_id[sid])
    sid, pid = sid[~own], pid[~own]
    if sid.size:
        Pp = nodes[pid]
        dist, t = _on_side(Pp, A[sid], B[sid], M[sid])
        at_node = (np.hypot(*(Pp - A[sid]).T) <= dup) | (np.hypot(*(Pp - B[sid]).T) <= dup)
        at_mid = (M_id[sid] >= 0) & (np.hypot(*(Pp - np.nan_to_num(M[sid])).T) <= dup)
        hang = (dist <= ON_SIDE_TOL * L[sid]) & ~at_node & ~at_mid
        if not every:
            hang &= ~declared[pid] & ~(declared[A_id[sid]] & declared[B_id[sid]])
        def place(k0: int):
            """Side, node, the side's owner cell and the node's own cells of candidate k0."""
            s, p = int(sid[k0]), int(pid[k0])
            return s, p, table.owner(int(op[s])), ", ".join(_cells_of(cells, p, 2))

        if hang.any():
            h = np.flatnonzero(hang)
            s, p, owner, near = place(h[0])
            a, b = int(A_id[s]), int(B_id[s])
            raise MeshError(
                f"the mesh does not conform: {np.unique(pid[h]).size} node(s) lie inside a side of a "
                f"neighbouring cell without belonging to it (hanging nodes, T-junctions); first, node {p} "
                f"{fmt_point(nodes[p])} (of {near}) lies on the side of {owner} from node {a} "
                f"{fmt_point(nodes[a])} to node {b} {fmt_point(nodes[b])}, so the cells there are not "
                "joined. Remesh conformingly (split that cell so that the node is one of its corners, or "
                "refine both sides alike); if it is a crack with non-matching faces, declare it: "
                "Mesh(..., slits=['name of an edge set along its faces'])"
            )
        # a boundary node inside the cell across the side: cells that overlap there (e.g. a hanging
        # node moved off the side into its neighbour)
        off = ~hang & ~at_node & ~at_mid & (t > 0) & (t < 1)
        if off.any():
            k = np.flatnonzero(off)
            into = _inside_owner(table, cells, nodes, op[sid[k]], Pp[k], pid[k], ON_SIDE_TOL * L[sid[k]])
            if into.any():
                s, p, owner, near = place(k[np.flatnonzero(into)[0]])
                raise ElementError(
                    f"cells overlap: node {p} {fmt_point(nodes[p])} (of {near}) lies inside {owner}, which it "
                    f"does not belong to, near that cell's side from node {int(A_id[s])} "
                    f"{fmt_point(nodes[int(A_id[s])])} to node {int(B_id[s])} {fmt_point(nodes[int(B_id[s])])}; "
                    "the cells there overlap instead of being joined (a hanging node moved off the side, or "
                    "meshes of two parts laid over each other). Remesh conformingly"
                )
    # ---- a hole of a few sides that encloses almost no area: a gap where cells should meet
    _check_slivers(mesh, nodes, table, cells, op, A_id, B_id, M_id, L, declared, every)
    # ---- distinct nodes at one point on open sides of one piece: a slit
    if pairs.size == 0 or every:
        return
    p, q = P[pairs[:, 0]], P[pairs[:, 1]]
    keep = ~declared[p] & ~declared[q]
    p, q = p[keep], q[keep]
    if p.size == 0:
        return
    piece = _pieces(mesh.n_nodes, cells)
    one = piece[p] == piece[q]
    if not one.any():
        return  # separate pieces: the support check names a piece left free, with this hint
    p, q = p[one], q[one]
    i0 = int(np.argmin(p))
    a, b = int(min(p[i0], q[i0])), int(max(p[i0], q[i0]))
    ca, cb = ", ".join(_cells_of(cells, a, 2)), ", ".join(_cells_of(cells, b, 2))
    raise MeshError(
        f"the mesh has {p.size} pair(s) of distinct nodes at the same point where cells of one piece meet "
        f"(a partly duplicated interface: the cells are not joined there, which opens a slit); first, "
        f"nodes {a} (of {ca}) and {b} (of {cb}) at {fmt_point(nodes[a])}. Join them with "
        "mesh = mesh.merge_duplicate_nodes() (or Mesh.read(path, merge_duplicates=True)); if the slit is a "
        "crack you mean, declare it: Mesh(..., slits=['name of an edge set along its faces']), or "
        "Mesh.read(path, merge_duplicates=False)"
    )
