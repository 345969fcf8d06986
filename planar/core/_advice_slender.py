"""The ``"slender"`` check: a slender part in bending with too few linear elements through its depth."""
from __future__ import annotations

import numpy as np

from ._advice_locking import free_of_locking
from ._advice_units import _strain_scale
from ._conformity import _pieces
from .assembly import CHUNK, element_strains
from .errors import fmt_point

__all__ = ["SLENDER_RATIO", "MIN_THROUGH_DEPTH"]

#: length / depth beyond which a part is taken as slender enough to carry load by bending (common
#: practice: a member under about 2 is a deep beam, carrying load by direct strut action). Measured
#: here, with too few linear elements through the depth of a bent part of length / depth 2.5 to 5:
#: 4 T3 read the tip deflection 13 % and the bending stress 16 % low, one Q4 34-42 %; the limit was 5,
#: under which such parts passed silently
SLENDER_RATIO = 2.0
#: fewest elements through the depth of a slender part in bending. A T3 has constant strain, so the
#: linear bending stress through the depth is a staircase: on a cantilever (L/h = 10 and 50, square
#: cells) T3 gives 62 / 78 / 87 / 94 % of the tip deflection with 2 / 3 / 4 / 6 elements through the
#: depth; a fully integrated Q4 locks in parasitic shear: 89 / 95 / 97 / 99 %; an element free of
#: shear locking (incompatible modes) bends right with one element through the depth (a cantilever
#: L/h = 20: tip deflection 100 %, recovered root stress 97.5 % of beam theory's 6 P L / (t h^2)),
#: so it needs no more than one and is not checked here.
MIN_THROUGH_DEPTH = {"T3": 6, "linear": 4, "shear-free": 1}


def _corners(b) -> np.ndarray:
    return b.conn[:, : b.etype.corner_count()]


def _slender(asm, res) -> list[tuple[str, str, list]]:
    by_region: dict[str, list] = {}
    for b in asm.blocks:
        if b.etype.cell not in ("triangle", "quad"):
            continue
        free = free_of_locking(b.etype, b.rule, b.rule_mode)
        if int(getattr(b.etype, "degree", 1)) >= 2 and getattr(b.etype, "free_of_locking", None) is None:
            continue  # quadratic displacements carry bending with one element through the depth
        if "shear" in free:
            continue  # bends right with one element through the depth
        if b.etype.cell == "triangle":
            need = MIN_THROUGH_DEPTH["T3"]
        else:
            need = MIN_THROUGH_DEPTH["linear"]
        by_region.setdefault(b.region, []).append((b, need))
    out = []
    for region, bl in by_region.items():
        out += _slender_region(asm, res, region, bl)
    return out


def _slender_region(asm, res, region, bl) -> list[tuple[str, str, list]]:
    nodes = asm.mesh.nodes
    n = nodes.shape[0]
    need = max(k for _, k in bl)
    layers = (need + 1) // 2  # a strip n elements deep has nodes floor(n / 2) steps from its faces
    conns = [_corners(b) for b, _ in bl]
    # boundary nodes of the region: around an interior node the cells close a fan, so the sums of
    # (next corner - previous corner) over its cells telescope to zero; at a boundary node the fan is
    # open and the sum is the gap between its two boundary neighbours (only additions: cheap)
    size = float(np.abs(nodes).max()) if n else 1.0
    area, idx, gx, gy = [], [], [], []
    for c in conns:
        m = c.shape[1]
        xs = [nodes[c[:, j]] for j in range(m)]
        a = np.zeros(c.shape[0])
        for j in range(m):
            d = xs[(j + 1) % m] - xs[j - 1]
            idx.append(c[:, j]); gx.append(d[:, 0]); gy.append(d[:, 1])
            a += xs[j][:, 0] * xs[(j + 1) % m][:, 1] - xs[(j + 1) % m][:, 0] * xs[j][:, 1]
        area.append(0.5 * np.abs(a))
    idx = np.concatenate(idx)
    gap = np.abs(np.bincount(idx, np.concatenate(gx), minlength=n)) + \
        np.abs(np.bincount(idx, np.concatenate(gy), minlength=n))
    del idx, gx, gy
    bnd = gap > 1e-10 * size  # an open fan's gap is a boundary edge's length at least
    # deep nodes: at least `layers` steps (through cells) from the boundary
    near = bnd.copy()
    for _ in range(layers - 1):
        near = _grow(near, conns)
    deep = ~near  # nodes outside the region's cells never enter the tests below
    # cells within layers - 1 steps of a deep node are carried by a deep enough section
    ok = deep
    for _ in range(layers - 1):
        ok = _grow(ok, conns)
    thin = [~_touches(ok, c) for c in conns]
    out = []
    edges = None
    tree = None
    if any(t.any() for t in thin):  # boundary points only: a small tree, built only when needed
        edges = _boundary_edges(nodes, conns, bnd)
        tree = _boundary_tree(nodes, edges)
    zones = _zones(nodes, conns, area, thin, tree)
    # the whole region, for elongated cells that leave enough layers but too few element sizes
    whole = [np.ones(c.shape[0], dtype=bool) for c in conns]
    thin_area = sum(float(a[t].sum()) for a, t in zip(area, thin))
    total_area = sum(float(a.sum()) for a in area)
    prone = [k for (b, k) in bl if k > MIN_THROUGH_DEPTH["shear-free"]]
    if prone and thin_area < 0.5 * total_area:  # else the thin zones are the region and speak for it
        edges = edges if edges is not None else _boundary_edges(nodes, conns, bnd)
        P = float(np.hypot(*(nodes[edges[0]] - nodes[edges[1]]).T).sum())
        h = 0.5 * (0.5 * P - np.sqrt(max(P * P / 4.0 - 4.0 * total_area, 0.0)))
        L = total_area / max(h, 1e-300)
        cells = sum(c.shape[0] for c in conns)
        side = np.sqrt(sum(float(a.sum()) * (2.0 if c.shape[1] == 3 else 1.0) for a, c in zip(area, conns)) / cells)
        if L > SLENDER_RATIO * h and h < max(prone) * side:  # elongated cells lock in shear
            tree = tree if tree is not None else _boundary_tree(nodes, edges)
            reg = _zone_shape(nodes, conns, area, whole, [np.zeros(c.shape[0], np.int64) for c in conns], 1, tree)
            if reg is not None and reg[1][0] < max(prone) * reg[3][0]:
                zones.append(([np.zeros(c.shape[0], np.int64) for c in conns], reg, whole))
    for labels, shape, member in zones:
        A, h, L, s, cx, cy, tx, ty = shape[:8]
        slender = (L > SLENDER_RATIO * h)
        if not np.any(slender):
            continue
        bend_cases = _bending(asm, res, bl, conns, labels, member, shape, slender)
        for z in np.flatnonzero(slender):
            cases = [r for r, hit in zip(res, bend_cases) if hit[z]]
            if not cases:
                continue
            names = ", ".join(repr(r.case) for r in cases)
            kinds = "/".join(sorted({b.etype.name for b, _ in bl}))
            across, along = _cell_extent(nodes, conns, member, labels, z, tx[z], ty[z])
            out.append(("slender",
                        f"slender part with too few elements through its depth: region {region!r}, a part about "
                        f"{L[z]:.4g} long and {h[z]:.3g} deep (length/depth {L[z] / h[z]:.1f}) around "
                        f"{_point(cx[z], cy[z], L[z])}, meshed with about {h[z] / across:.1f} {kinds} elements "
                        f"through its depth (cells about {along:.3g} long and {across:.3g} deep), carries bending in "
                        f"load case(s) {names}; "
                        f"these elements need at least {need} through the depth there ({_WHY[need]}), so "
                        "deflections and bending stresses come out too small; "
                        f"mesh the part with at least {need} elements of side at most {h[z] / need:.3g} through "
                        "its depth (refine it), or use quadratic elements (order=2)", cases))
    return out


_WHY = {6: "a constant-strain T3 makes the linear bending stress a staircase, worse with elongated cells",
        4: "a fully integrated Q4 locks in parasitic shear, the more so the more elongated its cells"}


def _point(x: float, y: float, scale: float) -> str:
    """A point for messages, with round-off below 1e-9 of ``scale`` shown as 0."""
    tol = 1e-9 * abs(scale)
    return fmt_point((0.0 if abs(x) < tol else x, 0.0 if abs(y) < tol else y))


def _cell_extent(nodes, conns, member, labels, z, tx, ty) -> tuple[float, float]:
    """Mean extent of the cells of zone ``z`` across and along the zone's axis (tx, ty)."""
    acc = np.zeros(2); cnt = 0
    for c, m, lab in zip(conns, member, labels):
        sel = m & (lab == z)
        if not sel.any():
            continue
        xy = nodes[c[sel]]
        along = xy[..., 0] * tx + xy[..., 1] * ty
        across = -xy[..., 0] * ty + xy[..., 1] * tx
        acc += [np.ptp(across, axis=1).sum(), np.ptp(along, axis=1).sum()]
        cnt += int(sel.sum())
    acc = acc / max(cnt, 1)
    return max(float(acc[0]), 1e-300), float(acc[1])


def _boundary_edges(nodes, conns, bnd) -> tuple[np.ndarray, np.ndarray]:
    """Boundary edges (start nodes, end nodes) of a region: edges between boundary nodes that one
    of its cells only uses (only those are sorted: work in proportion to the boundary)."""
    n64 = np.int64(nodes.shape[0])
    a_l, b_l = [], []
    for c in conns:
        m = c.shape[1]
        for j in range(m):
            i, k = c[:, j], c[:, (j + 1) % m]
            sel = np.flatnonzero(bnd[i] & bnd[k])
            a_l.append(i[sel].astype(np.int64)); b_l.append(k[sel].astype(np.int64))
    a = np.concatenate(a_l); b = np.concatenate(b_l)
    key = np.minimum(a, b) * n64 + np.maximum(a, b)
    order = np.argsort(key, kind="stable")
    ks = key[order]
    single = np.ones(ks.size, dtype=bool)
    dup = ks[1:] == ks[:-1]
    single[1:] &= ~dup
    single[:-1] &= ~dup
    keep = order[single]
    return a[keep], b[keep]


def _boundary_tree(nodes, edges, per_edge: int = 8):
    """A k-d tree of points along the boundary edges (``per_edge`` per edge): distances to it are
    distances to the boundary within 1/16 of an edge's length, even for elongated cells."""
    from scipy.spatial import cKDTree

    p, q = nodes[edges[0]], nodes[edges[1]]
    t = np.arange(per_edge) / per_edge
    pts = (p[:, None, :] + t[None, :, None] * (q - p)[:, None, :]).reshape(-1, 2)
    return cKDTree(pts if pts.size else np.zeros((1, 2)) + np.inf)


def _touches(mask: np.ndarray, c: np.ndarray) -> np.ndarray:
    """Cells (rows of ``c``) with a node in ``mask``."""
    hit = mask[c[:, 0]]
    for j in range(1, c.shape[1]):
        hit |= mask[c[:, j]]
    return hit


def _grow(mask: np.ndarray, conns) -> np.ndarray:
    """Nodes of every cell that touches a node in ``mask``."""
    out = mask.copy()
    for c in conns:
        out[c[_touches(mask, c)].ravel()] = True
    return out


def _zones(nodes, conns, area, thin, tree):
    """Connected zones of thin cells with their shape; [(labels per block, shape, member per block)]."""
    if not any(t.any() for t in thin):
        return []
    lab = _pieces(nodes.shape[0], {k: c[t] for k, (c, t) in enumerate(zip(conns, thin))})
    labels = [np.where(t, lab[c[:, 0]], -1) for c, t in zip(conns, thin)]
    present = np.unique(np.concatenate([l[l >= 0] for l in labels]))
    remap = np.full(lab.max() + 1, -1, np.int64)
    remap[present] = np.arange(present.size)
    labels = [np.where(l >= 0, remap[np.maximum(l, 0)], -1) for l in labels]
    shape = _zone_shape(nodes, conns, area, thin, labels, present.size, tree)
    return [(labels, shape, thin)] if shape is not None else []


def _zone_shape(nodes, conns, area, member, labels, nz, tree):
    """Shape of each zone of cells: area, depth, length, mean element side, centre and axis.

    Returns ``(A, h, L, s, cx, cy, tx, ty, h_cov)``: h is twice the largest distance from a cell
    centre or node of the zone to the region's boundary nodes (``tree``; the depth of a strip, or of
    a ligament); L the smaller of A / h (the length of a strip, straight or curved) and
    sqrt(12 lambda_max / A) (the extent along the zone's principal axis (tx, ty), from the second
    moments of its cells: a compact or perforated zone is not taken as long); s the side of a
    square of the mean cell area (of two triangles); h_cov = sqrt(12 lambda_min / A), the spread
    across the axis (far above h for a curved zone).
    """
    A = np.zeros(nz); cnt = np.zeros(nz); side2 = np.zeros(nz); dmax = np.zeros(nz)
    m1 = np.zeros((2, nz)); m2 = np.zeros((3, nz))
    ref = nodes[conns[0][0, 0]] if conns and conns[0].size else np.zeros(2)
    for c, a, m, lab in zip(conns, area, member, labels):
        if not m.any():
            continue
        cm, am, lm = c[m], a[m], lab[m]
        A += np.bincount(lm, am, minlength=nz)
        cnt += np.bincount(lm, minlength=nz)
        side2 += np.bincount(lm, am * (2.0 if c.shape[1] == 3 else 1.0), minlength=nz)
        cen = nodes[cm].mean(axis=1)
        d, _ = tree.query(cen)  # a centre sees the middle of an odd number of layers,
        dn, _ = tree.query(nodes[cm].reshape(-1, 2))  # a node the middle of an even number
        np.maximum.at(dmax, lm, np.maximum(d, dn.reshape(cm.shape).max(axis=1)))
        x, y = cen[:, 0] - ref[0], cen[:, 1] - ref[1]
        m1[0] += np.bincount(lm, am * x, minlength=nz); m1[1] += np.bincount(lm, am * y, minlength=nz)
        m2[0] += np.bincount(lm, am * x * x, minlength=nz)
        m2[1] += np.bincount(lm, am * y * y, minlength=nz)
        m2[2] += np.bincount(lm, am * x * y, minlength=nz)
    if cnt.sum() == 0:
        return None
    Ap = np.maximum(A, 1e-300)
    mx, my = m1[0] / Ap, m1[1] / Ap
    Sxx = m2[0] - Ap * mx * mx; Syy = m2[1] - Ap * my * my; Sxy = m2[2] - Ap * mx * my
    th = 0.5 * np.arctan2(2 * Sxy, Sxx - Syy)
    rad = np.hypot((Sxx - Syy) / 2, Sxy)
    lmax = np.maximum((Sxx + Syy) / 2 + rad, 0.0); lmin = np.maximum((Sxx + Syy) / 2 - rad, 0.0)
    h = np.maximum(2.0 * dmax, 1e-300)
    L = np.minimum(A / h, np.sqrt(12.0 * lmax / Ap))
    s = np.sqrt(side2 / np.maximum(cnt, 1))
    return A, h, L, s, mx + ref[0], my + ref[1], np.cos(th), np.sin(th), np.sqrt(12.0 * lmin / Ap)


def _bending(asm, res, bl, conns, labels, member, shape, slender) -> list[np.ndarray]:
    """Per result, whether each slender zone carries a significant bending strain.

    Along the zone's long axis t (from the second moments of its cells) the zone is cut into pieces
    about one depth long; in each piece the axial strain e_tt at the Gauss points is fitted as
    a + b eta (eta across the zone). Bending counts when |b| h / 2 exceeds 10 % of the largest
    |a| + |b| h / 2 of the zone, and that strain is at least 1e-3 of the largest in the model, in two
    pieces or more (the one piece of a short zone): a strip in tension held at one end shows a gradient
    at the clamp only. A
    curved zone (its cells' spread across t over twice its depth) uses the sign test instead:
    tension and compression side by side, each above 10 % of the zone's largest strain.
    """
    A, h, L, s, cx, cy, tx, ty, h_cov = shape
    nz = A.size
    nodes = asm.mesh.nodes
    curved = h_cov > 2 * h
    nb = np.clip(np.round(L / h), 1, 64).astype(np.int64)
    off = np.concatenate([[0], np.cumsum(nb)])
    out = []
    for r in res:
        sums = np.zeros((6, off[-1]))
        tr_pos = np.zeros(nz); tr_neg = np.zeros(nz); tr_max = np.zeros(nz)
        xi_lo = np.full(nz, np.inf); xi_hi = np.full(nz, -np.inf)
        pts = []
        for (b, _), c, m, lab in zip(bl, conns, member, labels):
            sel = np.flatnonzero(m & (lab >= 0) & slender[np.maximum(lab, 0)])
            if sel.size == 0:
                continue
            rule = b.etype.default_rule()
            xg = np.empty((sel.size, rule.n_points, 2)); eps = np.empty((sel.size, rule.n_points, 3))
            for s0 in range(0, sel.size, CHUNK):
                cc = b.conn[sel[s0:s0 + CHUNK]]
                coords = nodes[cc]
                N = b.etype.shape(rule.points)
                xg[s0:s0 + CHUNK] = np.einsum("qk,ekd->eqd", N, coords)
                eps[s0:s0 + CHUNK] = element_strains(b.etype, coords, b.D, r.u[cc].reshape(cc.shape[0], -1), rule)
            bi = next(i for i, x in enumerate(asm.blocks) if x is b)
            e0 = r._e0[bi] if getattr(r, "_e0", None) else None
            if e0 is not None and e0.shape[1] == rule.n_points:
                eps = eps - e0[sel][..., [0, 1, 3]]
            pts.append((lab[sel], xg, eps))
        for l, xg, eps in pts:
            ll = np.repeat(l, xg.shape[1])
            x = xg.reshape(-1, 2); e = eps.reshape(-1, 3)
            xi = (x[:, 0] - cx[ll]) * tx[ll] + (x[:, 1] - cy[ll]) * ty[ll]
            np.minimum.at(xi_lo, ll, xi); np.maximum.at(xi_hi, ll, xi)
            tr = e[:, 0] + e[:, 1]
            np.maximum.at(tr_pos, ll, tr); np.maximum.at(tr_neg, ll, -tr)
            np.maximum.at(tr_max, ll, np.abs(e).max(axis=1))
        for l, xg, eps in pts:
            ll = np.repeat(l, xg.shape[1])
            x = xg.reshape(-1, 2); e = eps.reshape(-1, 3)
            ett = e[:, 0] * tx[ll] ** 2 + e[:, 1] * ty[ll] ** 2 + e[:, 2] * tx[ll] * ty[ll]
            xi = (x[:, 0] - cx[ll]) * tx[ll] + (x[:, 1] - cy[ll]) * ty[ll]
            eta = -(x[:, 0] - cx[ll]) * ty[ll] + (x[:, 1] - cy[ll]) * tx[ll]
            span = np.maximum(xi_hi[ll] - xi_lo[ll], 1e-300)
            k = off[ll] + np.minimum((nb[ll] * (xi - xi_lo[ll]) / span).astype(np.int64), nb[ll] - 1)
            for row, v in enumerate((np.ones_like(eta), eta, eta * eta, ett, eta * ett)):
                sums[row] += np.bincount(k, v, minlength=off[-1])
        gmax = _strain_scale(r)
        S1, Se, See, St, Set = sums[:5]
        with np.errstate(invalid="ignore", divide="ignore"):
            var = See - Se * Se / np.maximum(S1, 1)
            slope = np.where(var > 0, (Set - Se * St / np.maximum(S1, 1)) / var, 0.0)
            mean = np.where(S1 > 0, St / np.maximum(S1, 1), 0.0)
        zone_of_bin = np.repeat(np.arange(nz), nb)
        bend = np.abs(slope) * h[zone_of_bin] / 2
        both = bend + np.abs(mean)
        bmax = np.zeros(nz); tmax = np.zeros(nz)
        np.maximum.at(bmax, zone_of_bin, bend)
        np.maximum.at(tmax, zone_of_bin, both)
        # bending along the zone, not in one piece only: a held end's Poisson restraint of a strip in tension
        # reads as a gradient across it in the piece at the clamp (with one-way triangle diagonals)
        bent = (bend > 0.1 * tmax[zone_of_bin]) & (bend > 1e-3 * gmax)
        pieces = np.bincount(zone_of_bin, bent.astype(np.int64), minlength=nz)
        straight_hit = (bmax > 0.1 * tmax) & (bmax > 1e-3 * gmax) & (pieces >= np.minimum(nb, 2))
        curved_hit = (np.minimum(tr_pos, tr_neg) > 0.1 * tr_max) & (tr_max > 1e-3 * gmax)
        out.append(np.where(curved, curved_hit, straight_hit) & slender)
    return out
