"""The linkage of rigid pieces: which motions the supports and pins leave free, and their wording.

:func:`planar.core.kinematics.rigid_body_check` splits the mesh into bodies joined by pins; this
module takes one connected group of them, finds the motions the supports leave free (as one rigid
body, then as a linkage of bodies with three motions each) and describes them in words: the free
rigid motions, the hinged leaves and mechanisms, and nodes that coincide without being joined.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .errors import fmt_point

# singular values of the (row-normalised) constraint matrices below this, relative, are free motions
_SV_TOL = 1e-8


def _split(lab: np.ndarray, count: int) -> list[np.ndarray]:
    """Indices of each label value 0..count-1."""
    order = np.argsort(lab, kind="stable")
    bounds = np.searchsorted(lab[order], np.arange(count + 1))
    return [order[bounds[i]:bounds[i + 1]] for i in range(count)]


@dataclass
class _Stats:
    centre: np.ndarray  # (nb, 2) mean of the body's nodes
    lo: np.ndarray  # (nb, 2)
    hi: np.ndarray  # (nb, 2)
    count: np.ndarray  # (nb,) nodes

    @property
    def size(self) -> np.ndarray:
        return np.maximum(np.max(self.hi - self.lo, axis=1), 1e-300)


def _body_stats(xy: np.ndarray, b: np.ndarray, nodes: np.ndarray, nb: int) -> _Stats:
    """Mean, bounding box and node count of each body from its (body, node) incidences."""
    p = xy[nodes]
    cnt = np.bincount(b, minlength=nb).astype(float)
    c = np.column_stack([np.bincount(b, p[:, 0], nb), np.bincount(b, p[:, 1], nb)]) / np.maximum(cnt, 1)[:, None]
    from scipy import ndimage

    idx = np.arange(nb)
    lo = np.column_stack([ndimage.minimum(p[:, k], b, idx) for k in range(2)]).reshape(nb, 2)
    hi = np.column_stack([ndimage.maximum(p[:, k], b, idx) for k in range(2)]).reshape(nb, 2)
    return _Stats(c, lo, hi, cnt)


def _support_matrix(xy_rows, d, centre, L) -> np.ndarray:
    """Rows (d_x, d_y, moment arm / L) of support rows on a rigid body about ``centre``."""
    p = xy_rows - centre
    return np.column_stack([d[:, 0], d[:, 1], (-d[:, 0] * p[:, 1] + d[:, 1] * p[:, 0]) / L])


def _null(A: np.ndarray, ncols: int) -> np.ndarray:
    """Orthonormal basis of the null space of A (rows of the result), by SVD."""
    if A.shape[0] == 0:
        return np.eye(ncols)
    _, s, vt = np.linalg.svd(A, full_matrices=A.shape[0] < ncols)  # only V is needed, in full
    s = np.r_[s, np.zeros(ncols - s.size)]
    return vt[s < _SV_TOL * max(1.0, s.max())]


def _group_check(mesh, stats: _Stats, bodies, rnode, rdir, rbody, pins, several: bool, joints,
                 max_dense: int):
    """Free motions of one connected group of bodies: (message or "", "rigid" | "hinge" | "both", held hinge nodes).

    Groups with more than ``max_dense`` bodies not proven held are only searched for hinged leaves.
    """
    xy = mesh.nodes
    w = stats.count[bodies]
    xc = (stats.centre[bodies] * w[:, None]).sum(axis=0) / max(w.sum(), 1.0)
    lo, hi = stats.lo[bodies].min(axis=0), stats.hi[bodies].max(axis=0)
    L = max(float(np.max(hi - lo)), 1e-300)
    # the group as one rigid body: the motions the supports leave free whatever the pins do
    A = _support_matrix(xy[rnode], rdir, xc, L) if rnode.size else np.zeros((0, 3))
    free = _null(A, 3)
    texts = []
    if free.shape[0]:
        texts.append(_describe_free(free, xc, L, several, xc))
    if bodies.size == 1:
        return ("; ".join(texts), "rigid", [])
    # the linkage: 3 motions per body (ux, uy, theta * L_b about the body's centre)
    loc = np.full(int(bodies.max()) + 1, -1, dtype=np.int64)
    loc[bodies] = np.arange(bodies.size)
    Lb = stats.size[bodies]
    cb = stats.centre[bodies]
    held = np.zeros(bodies.size, bool) if free.shape[0] else _held(xy, loc, cb, Lb, rnode, rdir, rbody, joints)
    rest = np.flatnonzero(~held)  # bodies the propagation could not prove held: the linkage decides
    kind = lambda: "hinge" if len(texts) == 1 else "both"  # noqa: E731
    if rest.size == 0:
        return ("; ".join(texts), "rigid", [] if texts else pins[0].tolist())
    leaves = _hinged_leaves(xy, bodies, loc, cb, Lb, rnode, rdir, rbody, pins)
    if rest.size > max_dense:
        if leaves:
            texts.append(leaves)
            return ("; ".join(texts), kind(), [])
        return ("; ".join(texts), "rigid" if texts else "unproven", [] if texts else pins[0].tolist())
    sub = np.full(bodies.size, -1, dtype=np.int64)  # column block of each body left, -1 for held ones
    sub[rest] = np.arange(rest.size)
    lr = np.full_like(loc, -1)
    lr[bodies] = sub
    S = _linkage_supports(xy, lr, cb[rest], Lb[rest], rnode, rdir, rbody, rest.size)
    P = _linkage_pins(xy, lr, cb, Lb, loc, pins, rest.size)
    N = _null(np.vstack([P, S]), 3 * rest.size)  # (r, 3 |rest|)
    if N.shape[0] > free.shape[0]:
        m = N.shape[0] - free.shape[0]  # motions of the linkage beyond those of the whole group
        if free.shape[0]:  # take out the free rigid motions of the whole group (every body is in rest)
            F = _group_motions(free, xc, L, cb, Lb)  # (f, 3 nbg)
            q, _ = np.linalg.qr(F.T)
            M = N.T - q @ (q.T @ N.T)
            u, s, _ = np.linalg.svd(M, full_matrices=False)
            N = u[:, :m].T
        full = np.zeros((N.shape[0], bodies.size, 3))
        full[:, rest] = N.reshape(N.shape[0], rest.size, 3)
        texts.append((leaves or _describe_mechanism(xy, full.reshape(N.shape[0], -1), bodies, loc, cb, Lb, pins, stats))
                     + (f" ({m} independent motions in all)" if m > 1 else ""))
        return ("; ".join(texts), kind(), [])
    if texts:
        return ("; ".join(texts), "rigid", [])
    return ("", "rigid", pins[0].tolist())


def _held(xy, loc, cb, Lb, rnode, rdir, rbody, joints) -> np.ndarray:
    """Bodies proven held, by propagation: own supports of rank 3, or with held joint nodes, rank 3.

    Sound, not complete: a body is marked held only when its own support rows and the rows of its
    joint nodes shared with held bodies (two each: the node cannot move) stop all three of its
    motions; the rank is read from the 3 x 3 normal matrix with a conservative margin (an eigenvalue
    ratio above 1e-10), so a doubtful body is left to the linkage matrix.
    """
    nbg = cb.shape[0]
    G0 = np.zeros((nbg, 3, 3))
    if rnode.size:
        lb = loc[rbody]
        r3 = _support_matrix(xy[rnode], rdir, cb[lb], Lb[lb])
        np.add.at(G0, lb, r3[:, :, None] * r3[:, None, :])
    jn, jb = joints
    jl = loc[jb]
    rel = (xy[jn] - cb[jl]) / Lb[jl][:, None]
    r1 = np.column_stack([np.ones(jn.size), np.zeros(jn.size), -rel[:, 1]])
    r2 = np.column_stack([np.zeros(jn.size), np.ones(jn.size), rel[:, 0]])
    Gj = r1[:, :, None] * r1[:, None, :] + r2[:, :, None] * r2[:, None, :]
    held = np.zeros(nbg, bool)
    nmax = int(jn.max()) + 1 if jn.size else 1
    while True:
        fixed_node = np.zeros(nmax, bool)
        fixed_node[jn[held[jl]]] = True
        use = fixed_node[jn] & ~held[jl]
        G = G0.copy()
        if np.any(use):
            np.add.at(G, jl[use], Gj[use])
        lam = np.linalg.eigvalsh(G)
        new = held | ((lam[:, 2] > 0) & (lam[:, 0] > 1e-10 * lam[:, 2]))
        if np.array_equal(new, held):
            return held
        held = new


def _linkage_supports(xy, loc, cb, Lb, rnode, rdir, rbody, nbg) -> np.ndarray:
    """Support rows of the linkage on the bodies with a column block (loc >= 0), at most three per
    body (compressed by QR where there are more); ``cb``, ``Lb`` are indexed by column block."""
    keep = loc[rbody] >= 0
    rnode, rdir, rbody = rnode[keep], rdir[keep], rbody[keep]
    if rnode.size == 0:
        return np.zeros((0, 3 * nbg))
    lb = loc[rbody]
    rows3 = _support_matrix(xy[rnode], rdir, cb[lb], Lb[lb])
    if rnode.size > 3 * nbg:
        parts, cols = [], []
        for b, idx in enumerate(_split(lb, nbg)):
            if idx.size:
                r = np.linalg.qr(rows3[idx], mode="r")
                parts.append(r)
                cols.append(np.full(r.shape[0], b))
        rows3 = np.vstack(parts)
        lb = np.concatenate(cols)
    S = np.zeros((rows3.shape[0], 3 * nbg))
    i = np.arange(rows3.shape[0])
    for k in range(3):
        S[i, 3 * lb + k] = rows3[:, k]
    return S


def _linkage_pins(xy, lr, cb, Lb, loc, pins, ncols) -> np.ndarray:
    """Two rows per pin: the two bodies move alike at the pin node (a held body does not move).

    ``lr`` gives each body's column block (-1 for held bodies), ``loc`` its place in ``cb``, ``Lb``.
    """
    pn, b1, b2 = pins
    c1, c2 = lr[b1], lr[b2]
    keep = (c1 >= 0) | (c2 >= 0)
    pn, b1, b2, c1, c2 = pn[keep], b1[keep], b2[keep], c1[keep], c2[keep]
    m = pn.size
    P = np.zeros((2 * m, 3 * ncols))
    for sign, b, c in ((1.0, b1, c1), (-1.0, b2, c2)):
        i = np.flatnonzero(c >= 0)
        bl, cc = loc[b[i]], c[i]
        rel = (xy[pn[i]] - cb[bl]) / Lb[bl][:, None]
        P[2 * i, 3 * cc] = sign
        P[2 * i, 3 * cc + 2] = -sign * rel[:, 1]
        P[2 * i + 1, 3 * cc + 1] = sign
        P[2 * i + 1, 3 * cc + 2] = sign * rel[:, 0]
    return P


def _group_motions(free, xc, L, cb, Lb) -> np.ndarray:
    """Rigid motions of the whole group (rows of ``free``: ux, uy, theta * L about xc) in body unknowns."""
    out = np.zeros((free.shape[0], cb.shape[0], 3))
    th = free[:, 2] / L
    out[:, :, 0] = free[:, :1] - th[:, None] * (cb[None, :, 1] - xc[1])
    out[:, :, 1] = free[:, 1:2] + th[:, None] * (cb[None, :, 0] - xc[0])
    out[:, :, 2] = th[:, None] * Lb[None, :]
    return out.reshape(free.shape[0], -1)


def _near(stats: _Stats, b: int) -> str:
    return f"the piece near {fmt_point(stats.centre[b])}"


def _describe_mechanism(xy, N, bodies, loc, cb, Lb, pins, stats) -> str:
    """Which pieces turn about which hinge nodes, and the fix."""
    pn, b1, b2 = pins
    words, nodes = [], []
    for v in N[:3]:
        v = v.reshape(-1, 3)
        theta = v[:, 2] / Lb
        scale = np.abs(v).sum(axis=1)
        S = max(scale.max(), 1e-300)
        moves = scale > 1e-6 * S
        rel = np.abs(theta[loc[b1]] - theta[loc[b2]]) * Lb.max()
        active = np.flatnonzero(rel > 1e-6 * S)
        for a in active[np.argsort(-rel[active])][:4]:
            p, i, j = int(pn[a]), int(b1[a]), int(b2[a])
            mi, mj = moves[loc[i]], moves[loc[j]]
            if mi != mj:
                mover = i if mi else j
                w = f"{_near(stats, mover)} can rotate about node {p} at {fmt_point(xy[p])}"
            else:
                w = (f"{_near(stats, i)} and {_near(stats, j)} can turn relative to each other about node {p} "
                     f"at {fmt_point(xy[p])}")
            if w not in words:
                words.append(w)
            nodes.append(p)
    nodes = sorted(set(nodes))
    listed = ", ".join(str(p) for p in nodes[:10]) + (" ..." if len(nodes) > 10 else "")
    return (f"pieces of the mesh are joined only through single nodes (hinges at node(s) {listed}) and the "
            f"supports do not stop them turning: {'; '.join(words)}; join the pieces along a shared edge "
            "(mesh the touching parts as one surface, or let their geometry overlap along a side instead of "
            "meeting at a point), or add a support on the turning piece that stops this rotation")


def _hinged_leaves(xy, bodies, loc, cb, Lb, rnode, rdir, rbody, pins) -> str:
    """For a linkage too large for a dense SVD: bodies pinned at one node whose supports let them turn."""
    pn, b1, b2 = pins
    ends = np.concatenate([b1, b2])
    at = np.concatenate([pn, pn])
    key = np.unique(ends * np.int64(xy.shape[0]) + at)
    eb, en = key // xy.shape[0], key % xy.shape[0]
    ub, first, cnt = np.unique(eb, return_index=True, return_counts=True)
    leaf = ub[cnt == 1]
    if leaf.size == 0:
        return ""
    hinge = np.full(int(bodies.max()) + 1, -1, dtype=np.int64)
    hinge[leaf] = en[first[cnt == 1]]
    onleaf = hinge[rbody] >= 0
    stops = np.zeros(int(bodies.max()) + 1, bool)
    if np.any(onleaf):
        h = hinge[rbody[onleaf]]
        arm = xy[rnode[onleaf]] - xy[h]
        d = rdir[onleaf]
        m = np.abs(-d[:, 0] * arm[:, 1] + d[:, 1] * arm[:, 0]) / Lb[loc[rbody[onleaf]]]
        np.logical_or.at(stops, rbody[onleaf], m > _SV_TOL)
    free = leaf[~stops[leaf]]
    if free.size == 0:
        return ""
    words = [f"the piece near {fmt_point(cb[loc[b]])} can rotate about node {int(hinge[b])} at "
             f"{fmt_point(xy[hinge[b]])}" for b in free[:5]]
    nodes = sorted(set(int(h) for h in hinge[free]))
    return (f"pieces of the mesh are joined only through single nodes (hinges at node(s) "
            f"{', '.join(map(str, nodes[:10]))}{' ...' if len(nodes) > 10 else ''}) and the supports do not "
            "stop them turning: "
            f"{'; '.join(words)}; join the pieces along a shared edge, or add a support on the turning piece "
            "that stops this rotation")


def _coincident_hint(mesh, members: np.ndarray, others: np.ndarray) -> str:
    """Advice when a free piece touches the rest of the mesh only through duplicate, unjoined nodes."""
    from scipy.spatial import cKDTree

    rest = np.flatnonzero(others)
    if rest.size == 0:
        return ""
    tol = 1e-9 * max(mesh.size(), 1e-300)
    d, _ = cKDTree(mesh.nodes[rest]).query(mesh.nodes[members], distance_upper_bound=tol)
    k = int(np.count_nonzero(np.isfinite(d)))
    if k == 0:
        return ""
    first = members[np.flatnonzero(np.isfinite(d))[0]]
    return (f" (its {k} node(s) at {fmt_point(mesh.nodes[first])} and elsewhere coincide with nodes of the "
            "rest of the mesh but are not joined to them: duplicate nodes; join them with "
            "mesh = mesh.merge_duplicate_nodes(), or support this piece if the gap is meant)")


def _describe_free(free, xc, L, several, centre) -> str:
    words = []
    if free.shape[0] == 3:
        words.append("translation x, translation y and rotation are all free (no support at all)")
    else:
        for v in free:
            a, b, c = v[0], v[1], v[2] / L
            if abs(v[2]) < 1e-6:
                t = np.array([a, b]) / np.hypot(a, b)
                if abs(t[0]) > 1 - 1e-6:
                    words.append("translation x is free: add a support that holds ux (Roller(..., fixed='x'), Fixed or Prescribed)")
                elif abs(t[1]) > 1 - 1e-6:
                    words.append("translation y is free: add a support that holds uy (Roller(..., fixed='y'), Fixed or Prescribed)")
                else:
                    words.append(f"translation along ({t[0]:.3g}, {t[1]:.3g}) is free: add a support that holds that direction")
            else:
                px, py = xc[0] - b / c, xc[1] + a / c
                px, py = (0.0 if abs(px) < 1e-9 * L else px), (0.0 if abs(py) < 1e-9 * L else py)
                words.append(
                    f"rotation about ({px:.6g}, {py:.6g}) is free: add a support away from that point "
                    "that holds the motion across the line joining them (e.g. a second roller)"
                )
    where = ""
    if several:
        where = f"a separate piece of the mesh near ({centre[0]:.6g}, {centre[1]:.6g}): "
    return where + ", ".join(words)
