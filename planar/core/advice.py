"""Checks that run after a solve and say when the discretisation or the inputs cannot be trusted.

:func:`advise` runs once per :func:`planar.solve` call, over every load case it solved, and raises
each concern once as a :class:`~planar.core.errors.DiscretisationWarning` with a short code, while
every :class:`~planar.core.result.Result` it concerns keeps it in ``result.warnings``. The checks
cost a few numpy passes over the cells of the linear blocks (none per element in Python), and
nothing at all for a one-region model in quadratic elements beyond one strain estimate per case.

Codes
-----
``"locking"``
    Linear elements that lock volumetrically in a nearly incompressible plane-strain material:
    T3 with any rule (unless the mesh is crossed, see :func:`singular_vertex_share`), Q4 with two or
    more points per direction, also with planar's ``"selective"`` rule, which reduces only the shear
    terms. Nearly incompressible: bulk-to-shear ratio 1 / (1 - 2 nu) >= 25, nu >= 0.48 for an
    isotropic material. Plane stress never locks (the thickness is free).
``"slender"``
    A slender part (length / depth > 5) in bending, meshed with too few linear elements through its
    depth: fewer than 6 T3, 4 Q4 (full rule), or 2 elements free of shear locking.
``"units"``
    Displacements above 5 % of the part's size, mechanical strains above 2e-2 in one cell in a
    hundred, a modulus beyond any solid in the declared units, or (units not declared) a modulus of
    1e9 or more on a part 10 or more long that strains less than 1e-6 anywhere: the typical cause is
    mixed units (E in Pa with lengths in mm, E in GPa with stresses in MPa).
``"contrast"``
    Neighbouring regions whose membrane stiffness E t differs by more than 1e6.

:mod:`planar.post.checks` adds ``"factor-of-safety"`` (a factor below 1 in a margin of safety) and
``"negative-nominal"`` (a compressive nominal stress in a Kt) to the result it checks.

Element types say what they are free of with a class attribute ``free_of_locking``, a tuple with
``"volumetric"`` and/or ``"shear"`` (the incompatible-mode Q4i declares both). Without it, elements
of degree 2 or more count as free of both, and linear ones as free of neither unless their rule has
one point (reduced integration; its zero-energy modes are another check's concern).
"""
from __future__ import annotations

import re
import warnings as _warnings

import numpy as np

from .assembly import CHUNK, element_strains
from .errors import DiscretisationWarning, PlanarWarning, fmt_point

__all__ = ["advise", "free_of_locking", "bulk_shear_ratio", "singular_vertex_share", "LOCKING_RATIO",
           "CROSSED_SHARE", "SLENDER_RATIO", "MIN_THROUGH_DEPTH", "DISPLACEMENT_FRACTION", "STRAIN_LIMIT",
           "STRAIN_SAMPLE", "STRAIN_QUANTILE", "TINY_STRAIN", "CONTRAST_LIMIT", "MODULUS_LIMIT"]

#: bulk-to-shear ratio (v.Dv / w.Dw with v = (1, 1, 0), w = (1, -1, 0); 1 / (1 - 2 nu) for an
#: isotropic plane-strain material) at and above which linear elements lock: nu >= 0.48. Measured
#: on Cook's membrane (plane strain, 32 x 32 mesh, against a 48 x 48 Q9 reference): the shortfall
#: added by locking is 1 % (Q4) and 5 % (T3) at nu = 0.45, 3 % and 12 % at nu = 0.48, 6 % and 20 %
#: at nu = 0.49, and 30 % and 55 % at 0.499; the ratio grows without bound as nu -> 1/2
#: (T. J. R. Hughes, The Finite Element Method, 1987, ch. 4, nearly incompressible elasticity).
LOCKING_RATIO = 25.0
#: share of triangles with a corner at a singular vertex above which a T3 block counts as a crossed
#: ("union jack") mesh that does not lock: measured on Cook's membrane at nu = 0.4999 (32 x 32, plane
#: strain), the alternating-diagonal pattern gives 98 % of the reference, one diagonal direction 31 %
CROSSED_SHARE = 0.9
#: length / depth beyond which a part is taken as slender, i.e. it carries load by bending
#: (common practice: beam theory holds within a few per cent above about 5)
SLENDER_RATIO = 5.0
#: fewest elements through the depth of a slender part in bending. A T3 has constant strain, so the
#: linear bending stress through the depth is a staircase: on a cantilever (L/h = 10 and 50, square
#: cells) T3 gives 62 / 78 / 87 / 94 % of the tip deflection with 2 / 3 / 4 / 6 elements through the
#: depth; a fully integrated Q4 locks in parasitic shear: 89 / 95 / 97 / 99 %; an element free of
#: shear locking is right with one element (91 %) but one element through the depth leaves no
#: bending stress to recover at the faces (0 % of the peak), hence 2.
MIN_THROUGH_DEPTH = {"T3": 6, "linear": 4, "shear-free": 2}
#: largest displacement, as a fraction of the part's size, that small-displacement theory covers
#: (common practice: geometric nonlinearity is felt beyond a few per cent)
DISPLACEMENT_FRACTION = 0.05
#: largest mechanical strain of a linear-elastic structural answer: no structural metal stays elastic
#: beyond about 1e-2 (yield over modulus: maraging steel 2000 / 200e3 MPa = 1e-2, Ti-6Al-4V 880 /
#: 114e3 = 7.7e-3, 7075-T6 aluminium 500 / 71e3 = 7e-3; from memory), so twice that is "far beyond";
#: a unit mix-up is off by a factor of 1e3 or 1e6
STRAIN_LIMIT = 2e-2
#: stiffness (E t) contrast between neighbouring regions that signals a modelling issue: the soft
#: region then takes less than a millionth of the strain energy it would in a balanced model and the
#: stiff one is practically rigid; the solve's own conditioning check refuses far larger contrasts
CONTRAST_LIMIT = 1e6
#: a largest strain below one microstrain (the resolution of a strain gauge; common practice) with a
#: modulus of 1e9 or more and a part 10 or more long, in a model without declared units, looks like
#: E in Pa with lengths in mm
TINY_STRAIN = 1e-6
#: largest Young's modulus of any solid (diamond, about 1.05e6 MPa; from memory) with margin, per
#: declared stress unit
MODULUS_LIMIT = {"MPa": 1.2e6, "N/mm2": 1.2e6, "N/mm^2": 1.2e6, "GPa": 1.2e3, "kPa": 1.2e9, "Pa": 1.2e12,
                 "psi": 1.75e8, "ksi": 1.75e5}


def free_of_locking(etype, rule=None, rule_mode: str = "full") -> set[str]:
    """The kinds of locking an element type with a given stiffness rule is free of.

    Parameters
    ----------
    etype : element type class
    rule : Rule, optional
        The stiffness rule used.
    rule_mode : {"full", "reduced", "selective", "custom"}

    Returns
    -------
    set of str
        A subset of ``{"volumetric", "shear"}``.
    """
    declared = getattr(etype, "free_of_locking", None)
    if declared is not None:
        return set(declared)
    if int(getattr(etype, "degree", 1)) >= 2:
        return {"volumetric", "shear"}
    if getattr(etype, "stiffness", None) is None and rule is not None and rule.n_points == 1 \
            and etype.cell == "quad":
        return {"volumetric", "shear"}  # one-point quadrilateral: no constraint to lock on
    if rule_mode == "selective" and getattr(etype, "stiffness", None) is None:
        return {"shear"}  # planar's selective rule reduces the shear terms only
    return set()


# ---------------------------------------------------------------------------------------------
def advise(results: dict, *, stacklevel: int = 3) -> list[PlanarWarning]:
    """Run the trust checks over the results of one solve; warn once, keep in every result concerned.

    Parameters
    ----------
    results : dict of str to Result
        The load cases of one solve (sharing one assembly).
    stacklevel : int
        Passed to :func:`warnings.warn` so the warning points at the user's call.

    Returns
    -------
    list of PlanarWarning
        The warnings raised (each also in the ``warnings`` list of the results it concerns).
    """
    if not results:
        return []
    res = list(results.values())
    asm = res[0].assembly
    found: list[tuple[str, str, list]] = []  # (code, message, results concerned)
    found += [(c, m, res) for c, m in _locking(asm)]
    found += [(c, m, res) for c, m in _contrast(asm)]
    found += _slender(asm, res)
    found += _units(asm, res)
    out = []
    for code, msg, concerned in found:
        w = DiscretisationWarning(msg, code)
        _warnings.warn(w, stacklevel=stacklevel)
        for r in concerned:
            if not any(o.code == w.code and o.message == w.message for o in r.warnings):
                r.warnings.append(w)
        out.append(w)
    return out


# --------------------------------------------------------------------------------------- locking
def bulk_shear_ratio(D: np.ndarray) -> float:
    """v.D v / w.D w with v = (1, 1, 0), w = (1, -1, 0): 1 / (1 - 2 nu) for an isotropic material in
    plane strain, (1 + nu) / (1 - nu) <= 3 in plane stress."""
    D = np.asarray(D, dtype=float)
    vol = D[0, 0] + D[1, 1] + D[0, 1] + D[1, 0]
    dev = D[0, 0] + D[1, 1] - D[0, 1] - D[1, 0]
    return float(vol / dev) if dev > 0 else float("inf")


def singular_vertex_share(nodes: np.ndarray, conn: np.ndarray) -> float:
    """Share of the triangles (3-node cells) away from the boundary with a corner at a singular vertex.

    A singular vertex is an interior node with four cells whose edges lie on two straight lines
    (L. R. Scott and M. Vogelius, Norm estimates for a maximal right inverse of the divergence
    operator, Math. Modelling Numer. Anal. 19, 1985): the volume constraints of the cells around it
    are linearly dependent, which is what keeps crossed ("union jack", criss-cross) triangle meshes
    from locking. Four unit edge vectors add up to zero exactly when they form two straight lines.
    """
    n = nodes.shape[0]
    c = conn[:, :3]
    xs = [nodes[c[:, j]] for j in range(3)]
    sx = np.zeros(n); sy = np.zeros(n)
    for j in range(3):
        e = np.concatenate([xs[(j + 1) % 3] - xs[j], xs[j - 1] - xs[j]])
        e = e / np.maximum(np.hypot(e[:, 0], e[:, 1]), 1e-300)[:, None]
        idx = np.concatenate([c[:, j], c[:, j]])
        sx += np.bincount(idx, e[:, 0], minlength=n)
        sy += np.bincount(idx, e[:, 1], minlength=n)
    gx = np.zeros(n); gy = np.zeros(n)  # open fans (boundary nodes): next - previous corners
    for j in range(3):
        d = xs[(j + 1) % 3] - xs[j - 1]
        gx += np.bincount(c[:, j], d[:, 0], minlength=n)
        gy += np.bincount(c[:, j], d[:, 1], minlength=n)
    scale = float(np.abs(nodes).max()) if n else 1.0
    boundary = np.abs(gx) + np.abs(gy) > 1e-10 * scale
    valence = np.bincount(c.ravel(), minlength=n)
    singular = (valence == 4) & ~boundary & (np.hypot(sx, sy) < 1e-8)
    inner = ~boundary[c].any(axis=1)  # the share is taken over cells away from the boundary
    if not inner.any():
        return 0.0
    return float(np.count_nonzero(singular[c[inner]].any(axis=1)) / np.count_nonzero(inner))


def _nu_of(material) -> str:
    nu = getattr(material, "nu", None)
    return f"nu = {float(nu):g}" if nu is not None else "a nearly incompressible material"


def _locking(asm) -> list[tuple[str, str]]:
    if asm.analysis != "plane strain":
        return []  # in plane stress the thickness changes freely: nothing to lock
    hits: dict[tuple[str, str], list] = {}
    for b in asm.blocks:
        if "volumetric" in free_of_locking(b.etype, b.rule, b.rule_mode):
            continue
        ratio = bulk_shear_ratio(b.D)
        if ratio >= LOCKING_RATIO * (1 - 1e-9):  # nu = 0.48 itself, to round-off
            if b.etype.n_nodes == 3 and b.etype.cell == "triangle" and \
                    singular_vertex_share(asm.mesh.nodes, b.conn) >= CROSSED_SHARE:
                continue  # crossed ("union jack") triangles: their volume constraints are dependent
            hits.setdefault((b.region, b.etype.name), []).append((b, ratio))
    out = []
    for (region, name), bl in hits.items():
        b, ratio = bl[0]
        n = sum(x.n for x, _ in bl)
        centre = np.concatenate([asm.mesh.nodes[x.conn[:, 0]] for x, _ in bl]).mean(axis=0)
        mode = f" ('{b.rule_mode}' rule: planar's selective rule reduces the shear terms, not the volumetric ones)" \
            if b.rule_mode == "selective" else ""
        out.append(("locking",
                    f"volumetric locking: region {region!r} (around {fmt_point(centre)}) has {n} linear {name} "
                    f"elements{mode} in plane strain with {_nu_of(b.material)} (bulk-to-shear ratio "
                    f"{ratio:.3g} >= {LOCKING_RATIO:g}, i.e. nu >= 0.48); such elements cannot deform at nearly "
                    "constant volume, so displacements and stresses come out too small (measured on Cook's "
                    "membrane: 3-20 % at nu = 0.48-0.49, 30-55 % at 0.499); use quadratic elements (order=2: "
                    "T6, Q8, Q9)" + (", or on Q4 cells the incompatible-mode Q4i of the planar-incompatible-quad "
                                     "plugin (elements={'Q4': 'Q4i'})" if b.etype.cell == "quad" else "")))
    return out


# -------------------------------------------------------------------------------------- contrast
def _contrast(asm) -> list[tuple[str, str]]:
    regions = sorted({b.region for b in asm.blocks})
    if len(regions) < 2:
        return []
    stiff = {}
    for b in asm.blocks:
        s = 0.5 * float(b.D[0, 0] + b.D[1, 1]) * float(b.thickness)
        stiff[b.region] = max(stiff.get(b.region, 0.0), s)
    vals = np.array([stiff[r] for r in regions])
    if vals.max() <= CONTRAST_LIMIT * vals.min():
        return []  # no pair can exceed the limit: no need to find the neighbours
    n = asm.mesh.n_nodes
    idx = {r: i for i, r in enumerate(regions)}
    owner = np.zeros((len(regions), n), dtype=bool)
    for b in asm.blocks:
        owner[idx[b.region], b.conn.ravel()] = True
    shared = owner.astype(np.float32) @ owner.T.astype(np.float32)  # nodes in common, per pair
    out = []
    ratio_all = np.maximum(vals[:, None], vals[None, :]) / np.minimum(vals[:, None], vals[None, :])
    for i, j in np.argwhere(np.triu((shared > 0) & (ratio_all > CONTRAST_LIMIT), 1)):  # flagged pairs only
        hi, lo = (i, j) if vals[i] >= vals[j] else (j, i)
        ratio = vals[hi] / vals[lo]
        where = np.flatnonzero(owner[i] & owner[j])
        out.append(("contrast",
                    f"extreme stiffness contrast: region {regions[hi]!r} is {ratio:.3g} times stiffer (E t, "
                    f"modulus times thickness) than its neighbour {regions[lo]!r}, which it meets at "
                    f"{where.size} node(s) near {fmt_point(asm.mesh.nodes[where].mean(axis=0))}; beyond "
                    f"{CONTRAST_LIMIT:.0e} the stiff region is practically rigid and the soft one's answer "
                    "rests on the last digits of the stiffness sums; check the units and values of the "
                    "materials and thicknesses, or model the stiff part as a support or the soft one apart"))
    return out


# --------------------------------------------------------------------------------------- slender
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
            need = MIN_THROUGH_DEPTH["shear-free"]
        elif b.etype.cell == "triangle":
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
                        f"{L[z]:.4g} long and {h[z]:.3g} deep (length/depth {L[z] / h[z]:.0f}) around "
                        f"{_point(cx[z], cy[z], L[z])}, meshed with about {h[z] / across:.1f} {kinds} elements "
                        f"through its depth (cells about {along:.3g} long and {across:.3g} deep), carries bending in "
                        f"load case(s) {names}; "
                        f"these elements need at least {need} through the depth there ({_WHY[need]}), so "
                        "deflections and bending stresses come out too small; "
                        f"mesh the part with at least {need} elements of side at most {h[z] / need:.3g} through "
                        "its depth (refine it), or use quadratic elements (order=2)", cases))
    return out


_WHY = {6: "a constant-strain T3 makes the linear bending stress a staircase, worse with elongated cells",
        4: "a fully integrated Q4 locks in parasitic shear, the more so the more elongated its cells",
        2: "with one element through the depth no bending stress is left to recover at the faces"}


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
        hit = mask[c[:, 0]]
        for j in range(1, c.shape[1]):
            hit |= mask[c[:, j]]
        out[c[hit].ravel()] = True
    return out


def _zones(nodes, conns, area, thin, tree):
    """Connected zones of thin cells with their shape; [(labels per block, shape, member per block)]."""
    if not any(t.any() for t in thin):
        return []
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    n = nodes.shape[0]
    rows, cols = [], []
    for c, t in zip(conns, thin):
        ct = c[t]
        rows.append(np.repeat(ct[:, :1], ct.shape[1], axis=1).ravel())
        cols.append(ct.ravel())
    r = np.concatenate(rows); cc = np.concatenate(cols)
    G = coo_matrix((np.ones(r.size, np.int8), (r, cc)), shape=(n, n))
    _, lab = connected_components(G, directed=False)
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
    |a| + |b| h / 2 of the zone, and that strain is at least 1e-3 of the largest in the model. A
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
        straight_hit = (bmax > 0.1 * tmax) & (bmax > 1e-3 * gmax)
        curved_hit = (np.minimum(tr_pos, tr_neg) > 0.1 * tr_max) & (tr_max > 1e-3 * gmax)
        out.append(np.where(curved, curved_hit, straight_hit) & slender)
    return out


# ----------------------------------------------------------------------------------------- units
#: cells sampled per solve for the strain level (a strided sample, spread over the whole mesh)
STRAIN_SAMPLE = 20000
#: the strain level is this quantile of the sampled cells' strains: a unit mix-up scales the whole
#: field, while a point force or a re-entrant corner makes a few cells' strains as large as one likes
STRAIN_QUANTILE = 0.99


def _strain_scale(r) -> float:
    """Largest sampled mechanical strain of a result (cached on it)."""
    cached = getattr(r, "_advice_strain", None)
    if cached is None:
        cached = _strain_level(r)[1]
        r._advice_strain = cached
    return cached


def _strain_level(r) -> tuple[float, float, np.ndarray]:
    """(quantile, largest, where the largest is) of |strain| over a strided sample of the cells.

    Each sampled cell's strain is the constant strain of its first three corners (exact for T3, the
    mean over that corner triangle otherwise), less the cell's mean initial strain; its size is the
    largest principal value. About 2 ms whatever the mesh size.
    """
    nodes, u = r.mesh.nodes, r.u
    blocks = r.assembly.blocks
    total = sum(b.n for b in blocks)
    stride = max(1, total // STRAIN_SAMPLE)
    e0s = getattr(r, "_e0", None) or [None] * len(blocks)
    mags, cents = [], []
    for b, e0 in zip(blocks, e0s):
        sel = np.arange(0, b.n, stride)
        c = b.conn[sel]
        p0, p1, p2 = nodes[c[:, 0]], nodes[c[:, 1]], nodes[c[:, 2]]
        q0 = u[c[:, 0]]
        x1, x2 = p1 - p0, p2 - p0
        u1, u2 = u[c[:, 1]] - q0, u[c[:, 2]] - q0
        det = x1[:, 0] * x2[:, 1] - x1[:, 1] * x2[:, 0]
        # displacement gradient G = [u1 u2] [x1 x2]^-1, times det
        gxx = u1[:, 0] * x2[:, 1] - u2[:, 0] * x1[:, 1]
        gxy = u2[:, 0] * x1[:, 0] - u1[:, 0] * x2[:, 0]
        gyx = u1[:, 1] * x2[:, 1] - u2[:, 1] * x1[:, 1]
        gyy = u2[:, 1] * x1[:, 0] - u1[:, 1] * x2[:, 0]
        with np.errstate(invalid="ignore", divide="ignore"):
            inv = 1.0 / det
            exx, eyy, exy = gxx * inv, gyy * inv, 0.5 * (gxy + gyx) * inv
        if e0 is not None:
            m0 = e0[sel].mean(axis=1)
            exx, eyy, exy = exx - m0[:, 0], eyy - m0[:, 1], exy - 0.5 * m0[:, 3]
        mag = np.abs(0.5 * (exx + eyy)) + np.hypot(0.5 * (exx - eyy), exy)
        mag[~np.isfinite(mag)] = 0.0
        mags.append(mag)
        cents.append((p0 + p1 + p2) / 3.0)
    mag = np.concatenate(mags) if mags else np.zeros(0)
    if mag.size == 0:
        return 0.0, 0.0, np.zeros(2)
    i = int(np.argmax(mag))
    q = float(np.quantile(mag, STRAIN_QUANTILE))
    return q, float(mag[i]), np.concatenate(cents)[i]


def _stress_unit(units: str) -> str | None:
    for tok in re.split(r"[,;\s]+", str(units)):
        t = tok.strip("()[]")
        if t in MODULUS_LIMIT:
            return t
    return None


def _units(asm, res) -> list[tuple[str, str, list]]:
    out = []
    x, y = asm.mesh.nodes[:, 0], asm.mesh.nodes[:, 1]  # column reductions: far faster than axis=0
    size = float(max(x.max() - x.min(), y.max() - y.min(), 1e-300))
    unit = _stress_unit(asm.model.units)
    if unit is not None:
        lim = MODULUS_LIMIT[unit]
        seen = set()
        for b in asm.blocks:
            E = getattr(b.material, "E", None)
            E = float(E) if E is not None else float(np.max(np.abs(b.D)))
            if E > lim and b.region not in seen:
                seen.add(b.region)
                out.append(("units",
                            f"units: region {b.region!r} has a modulus of {E:.4g} {unit}, beyond any solid (diamond "
                            f"is about {lim / 1.15:.3g} {unit}); it looks given in other units (e.g. E in Pa in an "
                            f"N, mm, MPa model), which makes every displacement and strain far too small; give "
                            f"E in {unit} (aluminium about 70e3 MPa, steel about 210e3 MPa)", res))
    small = []
    big_u, big_e = [], []
    for r in res:
        disp2 = np.einsum("ij,ij->i", r.u, r.u)
        k = int(np.argmax(disp2)) if disp2.size else 0
        if disp2.size and disp2[k] > (DISPLACEMENT_FRACTION * size) ** 2:
            big_u.append((r, float(np.sqrt(disp2[k])), asm.mesh.nodes[k]))
        q, e, where = _strain_level(r)
        r._advice_strain = e
        if q > STRAIN_LIMIT:
            big_e.append((r, q, e, where))
        if 0 < e < TINY_STRAIN:
            small.append((r, e))
    if unit is None and small and size >= 10.0:  # no declared units: lengths of 10 and more look like mm
        moduli = [float(getattr(b.material, "E", 0.0) or 0.0) for b in asm.blocks]
        E = max(moduli, default=0.0)
        if E >= 1e9 and len(small) == len(res):
            r, e = max(small, key=lambda t: t[1])
            out.append(("units",
                        f"units: E = {E:.4g} looks given in Pa while the part, {size:.4g} long, looks measured in "
                        f"mm, and the largest strain is only {e:.2g} (load case {r.case!r}), below one microstrain, "
                        "the resolution of a strain gauge; with lengths in mm give E in MPa (aluminium about "
                        "70e3, steel about 210e3) and loads in N, or use N, m, Pa throughout (and say so with "
                        "units='N, mm, MPa' on the Model)", res))
    if big_u:
        r, d, p = max(big_u, key=lambda t: t[1])
        names = ", ".join(repr(x[0].case) for x in big_u)
        out.append(("units",
                    f"displacements comparable to the part: {d:.4g} at {fmt_point(p)} in load case {r.case!r} is "
                    f"{100 * d / size:.3g} % of the part's size {size:.4g} (limit {100 * DISPLACEMENT_FRACTION:g} %; "
                    f"load case(s) {names}); small-displacement theory no longer holds and the answer is not "
                    "physical; the usual cause is mixed units (e.g. E in MPa or GPa with loads in N and lengths "
                    "in m, or E in GPa with stresses in MPa): check that E, the loads and the lengths use one "
                    "consistent set (N, mm, MPa or N, m, Pa)", [x[0] for x in big_u]))
    if big_e:
        r, q, e, p = max(big_e, key=lambda t: t[1])
        names = ", ".join(repr(x[0].case) for x in big_e)
        out.append(("units",
                    f"strains far beyond elastic: in load case {r.case!r} one cell in a hundred strains more than "
                    f"{q:.3g} (up to {e:.3g} near {fmt_point(p)}; limit {STRAIN_LIMIT:g}, twice what any structural "
                    f"metal reaches elastically; load case(s) {names}); "
                    "the usual cause is mixed units (e.g. E in GPa with stresses in MPa, or E in MPa with "
                    "loads in Pa): check that E, the loads and the lengths use one consistent set", [x[0] for x in big_e]))
    return out
