"""gmsh's linear mesh read into planar's numbers, checked, and made into a :class:`~planar.core.mesh.Mesh`.

``_generate`` meshes the curves, then the surfaces (a few pieces at a time on gmsh's own threads in
the fast way) and reads it all back; ``_all_quads`` splits a quad-dominant mesh into quadrilaterals
only; ``_tangled`` and ``_lost_point`` check the linear mesh (cells that overlap, turn inside out or
are badly distorted; a named point that no cell uses); ``_to_mesh`` numbers the nodes, adds the
quadratic nodes and the named sets; ``_write_msh`` writes the gmsh file. The notes on all of it are
in :mod:`planar.geometry.meshing`.
"""
from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from ..core.errors import GeometryError, InputError, MeshError
from ..core.layouts import gmsh_type
from ..core.mesh import Mesh
from ..core.parallel import threads
from ._build import _Built
from ._quadratic import curve_mid_points, curve_parameters, quadratic as _quadratic, side_keys, smooth, subdivide
from ._session import _Session, _stage


#: gmsh element type number -> (layout name, nodes per cell) of the linear mesh gmsh makes
_GMSH_CELLS = {2: ("T3", 3), 3: ("Q4", 4)}
#: node order of the mirror image of each linear layout (fixes clockwise cells)
_FLIP = {"T3": [0, 2, 1], "Q4": [0, 3, 2, 1]}
#: least accepted ratio of the smallest to the largest corner cross product of a quadrilateral (its
#: Jacobian's least / largest determinant): twice the least that planar.core.assembly.prepare accepts
DISTORTED = 2e-3


@dataclass
class _Linear:
    """The linear mesh as gmsh made it, in planar's node numbers."""

    xy: np.ndarray  # (n, 2) every node
    surf_cells: list[tuple[int, str, np.ndarray]]  # (surface, layout, connectivity)
    curve_segs: dict[int, np.ndarray]  # curve -> (m, 2) node numbers, in gmsh's order along it
    curve_params: dict[int, np.ndarray | None]  # curved curve -> (m, 2) curve parameters of the segments
    point_nodes: dict[int, np.ndarray]  # gmsh point -> node numbers
    ccw: bool = False  # every cell is counter-clockwise


def _generate(g, built: _Built, s: _Session, piecewise: bool) -> _Linear:
    """Mesh the curves, then the surfaces (one after another if ``piecewise``), and read it all."""
    g.model.mesh.generate(1)
    btags, bcoord, _ = g.model.mesh.getNodes(returnParametricCoord=False)
    btags = np.asarray(btags, dtype=np.int64)
    if btags.size == 0:
        raise GeometryError("gmsh produced no mesh; " + ("; ".join(s.errors()[-3:]) or "check the geometry and size"))
    xy = [np.asarray(bcoord, float).reshape(-1, 3)[:, :2]]
    n = btags.size
    lookup = np.full(int(btags.max()) + 1, -1, dtype=np.int64)
    lookup[btags] = np.arange(n)
    edge_lookup = lookup.copy()
    surf_region = {t: nm for nm, ts in built.regions.items() for t in ts}
    # the pieces are meshed in groups, one piece per thread of gmsh's own (each surface alone is
    # meshed the same way in any thread, so the mesh does not depend on the number of threads)
    nthr = threads() if piecewise else 1
    surfs = list(built.surfaces)
    groups = [surfs[i:i + nthr] for i in range(0, len(surfs), nthr)] if piecewise else [surfs]
    if piecewise:
        s.set("Mesh.MeshOnlyVisible", 1)
        s.set("General.NumThreads", nthr)
        s.set("Mesh.MaxNumThreads2D", nthr)
    surf_cells = []
    for grp in groups:
        if piecewise:
            g.model.setVisibility([(2, t) for t in built.surfaces], 0)
            g.model.setVisibility([(2, t) for t in grp], 1)
        g.model.mesh.generate(2)
        for surf in grp:
            itags, icoord, _ = g.model.mesh.getNodes(2, surf, includeBoundary=False, returnParametricCoord=False)
            itags = np.asarray(itags, dtype=np.int64)
            types, _, enodes = g.model.mesh.getElements(2, surf)
            if not len(types):
                raise GeometryError(
                    f"gmsh left part of the plate (surface {surf}, region {surf_region.get(surf)!r}) without "
                    "elements; " + ("; ".join(s.errors()[-3:]) or "try a smaller size")
                )
            top = max(int(itags.max()) if itags.size else 0, max(int(np.max(e)) for e in enodes))
            if top >= lookup.size:
                lookup = np.concatenate([lookup, np.full(top + 1 - lookup.size, -1, dtype=np.int64)])
            lookup[itags] = n + np.arange(itags.size)
            n += itags.size
            xy.append(np.asarray(icoord, float).reshape(-1, 3)[:, :2])
            for t, en in zip(types, enodes):
                if int(t) not in _GMSH_CELLS:
                    raise MeshError(f"gmsh made cells of type {int(t)}, which planar has no element for")
                lay, k = _GMSH_CELLS[int(t)]
                conn = lookup[np.asarray(en, dtype=np.int64).reshape(-1, k)]
                if conn.min() < 0:
                    raise MeshError(f"gmsh's mesh of surface {surf} refers to nodes it does not list")
                surf_cells.append((surf, lay, conn))
            lookup[itags] = -1  # gmsh may give these tags to the next piece's nodes
        if piecewise:
            g.model.mesh.clear([(2, t) for t in grp])
    curve_segs, curve_params = {}, {}
    for _, c in g.model.getEntities(1):
        types, _, enodes = g.model.mesh.getElements(1, c)
        for t, en in zip(types, enodes):
            if int(t) == 1:
                tg = np.asarray(en, dtype=np.int64).reshape(-1, 2)
                if tg.max() >= edge_lookup.size or edge_lookup[tg].min() < 0:
                    raise MeshError(f"gmsh changed the mesh of curve {c} while meshing the surfaces")
                curve_segs[c] = edge_lookup[tg]
                if g.model.getType(1, c) != "Line":
                    curve_params[c] = curve_parameters(g, c, tg)
    point_nodes = {}
    for tag in built.points.values():
        tags, _, _ = g.model.mesh.getNodes(0, tag, returnParametricCoord=False)
        point_nodes[tag] = edge_lookup[np.asarray(tags, dtype=np.int64)]
    return _Linear(np.vstack(xy), surf_cells, curve_segs, curve_params, point_nodes)


def _curve_mids(g, lin: _Linear) -> dict[int, tuple[np.ndarray, np.ndarray | None]]:
    """Points (and curve parameters) for the nodes of the segments of every curved curve."""
    out = {}
    for c, params in lin.curve_params.items():
        seg = lin.curve_segs[c]
        out[c] = curve_mid_points(g, c, params, lin.xy[seg[:, 0]], lin.xy[seg[:, 1]])
    return out


def _all_quads(g, lin: _Linear) -> _Linear:
    """Split the cells of a quad-dominant mesh (made at twice the size) into quadrilaterals only.

    Every Q4 becomes 4 and every T3 3 quadrilaterals (the side nodes of the curves on the true
    curves, :func:`~planar.geometry._quadratic.subdivide`); then the nodes off the curves are
    smoothed (:func:`~planar.geometry._quadratic.smooth`). This is gmsh's own full-quad way
    (recombine at twice the size, split, smooth), done here because gmsh's version leaves tangled
    triangles at times (see ``mesh``).
    """
    mids = _curve_mids(g, lin)
    blocks = [(surf, lay, _counter_clockwise(lay, conn, lin.xy)[0]) for surf, lay, conn in lin.surf_cells]
    xy, blocks, segs = subdivide(lin.xy, blocks, lin.curve_segs, {c: m[0] for c, m in mids.items()})
    params = {}
    for c, (_, um) in mids.items():
        p = lin.curve_params[c]
        params[c] = None if p is None or um is None else np.stack(
            [np.column_stack([p[:, 0], um]), np.column_stack([um, p[:, 1]])], axis=1).reshape(-1, 2)
    fixed = np.zeros(xy.shape[0], dtype=bool)
    for seg in segs.values():
        fixed[seg.ravel()] = True
    for ids in lin.point_nodes.values():
        fixed[ids] = True
    if blocks:
        conn = np.vstack([c for _, _, c in blocks])
        xy = smooth(xy, conn, fixed)
    return _Linear(xy, blocks, segs, params, lin.point_nodes)


def _tangled(built: _Built, lin: _Linear) -> tuple[np.ndarray, float] | None:
    """A place (x, y) and a length there where the linear cells overlap or turn inside out, or None
    for a valid mesh.

    With every cell counter-clockwise, a side between two cells is walked once each way, and the sides
    of one cell only are the segments of the plate's boundary curves (common practice for the
    validity of a mesh); quadrilaterals must be strictly convex and not badly distorted (``DISTORTED``).
    Cells are made counter-clockwise here.
    """
    xy = lin.xy
    n = np.int64(xy.shape[0])
    keys = []
    for i, (surf, lay, conn) in enumerate(lin.surf_cells):
        nc = conn.shape[1]
        x, y = xy[:, 0][conn], xy[:, 1][conn]
        ex, ey = np.roll(x, -1, axis=1) - x, np.roll(y, -1, axis=1) - y  # side from corner k to k + 1
        if nc == 3:  # one cross product: twice the signed area
            lo = hi = ex[:, 2] * ey[:, 0] - ey[:, 2] * ex[:, 0]
            neg = lo < 0
        else:
            fx, fy = np.roll(ex, 1, axis=1), np.roll(ey, 1, axis=1)  # side into corner k
            cross = fx * ey - fy * ex
            lo, hi = cross.min(axis=1), cross.max(axis=1)
            neg = cross.sum(axis=1) < 0  # four times the signed area
        if neg.any():  # clockwise: turned round, its corner cross products change sign
            conn = conn.copy()
            conn[neg] = conn[neg][:, _FLIP[lay]]
            lo, hi = np.where(neg, -hi, lo), np.where(neg, -lo, hi)
        lin.surf_cells[i] = (surf, lay, conn)
        # convex (a triangle: not flat), and for a quadrilateral the Jacobian (linear in s, t, so
        # extreme at the corners) not too uneven
        bad = ~(lo > 0) | (lo < DISTORTED * hi) if lay == "Q4" else ~(lo > 0)
        if bad.any():
            q = xy[conn[np.flatnonzero(bad)[0]]]
            return q.mean(axis=0), float(np.hypot(*(q[:, None] - q[None, :]).reshape(-1, 2).T).max())
        a = conn.astype(np.int64).ravel()
        b = np.roll(conn, -1, axis=1).astype(np.int64).ravel()
        keys.append(2 * (np.minimum(a, b) * n + np.maximum(a, b)) + (a < b))
    lin.ccw = True
    k = np.sort(np.concatenate(keys)) if keys else np.empty(0, np.int64)
    und = k >> 1
    twice = np.flatnonzero(k[1:] == k[:-1])  # a side walked twice the same way
    crowd = np.flatnonzero(und[2:] == und[:-2])  # a side of three cells or more
    if twice.size or crowd.size:
        key = und[twice[0]] if twice.size else und[crowd[0]]
        return _side_place(xy, key, n)
    first = np.ones(und.size, dtype=bool)
    first[1:] = und[1:] != und[:-1]
    last = np.ones(und.size, dtype=bool)
    last[:-1] = und[:-1] != und[1:]
    once = und[first & last]
    curves = sorted({c for cs in built.edges.values() for c in cs if c in lin.curve_segs})
    segs = np.vstack([lin.curve_segs[c] for c in curves]) if curves else np.empty((0, 2), np.int64)
    bnd = np.unique(side_keys(segs[:, 0], segs[:, 1], int(n)))
    if not np.array_equal(once, bnd):
        odd = np.setxor1d(once, bnd)[0]
        return _side_place(xy, odd, n)
    return None


def _lost_point(built: _Built, lin: _Linear) -> tuple[str, np.ndarray, float] | None:
    """The first named point whose node no cell uses (name, place, the distance to the nearest used
    node), or None."""
    used = np.zeros(lin.xy.shape[0], dtype=bool)
    for _, _, conn in lin.surf_cells:
        used[conn.ravel()] = True
    for nm, tag in built.points.items():
        ids = lin.point_nodes.get(tag, np.empty(0, np.int64))
        if ids.size and not used[ids].all():
            at = lin.xy[ids[0]]
            return nm, at, float(np.hypot(*(lin.xy[used] - at).T).min()) if used.any() else built.scale
    return None


def _side_place(xy: np.ndarray, key, n) -> tuple[np.ndarray, float]:
    q = xy[[key // n, key % n]]
    return q.mean(axis=0), float(np.hypot(*(q[1] - q[0])))


def _to_mesh(g, built: _Built, lin: _Linear, order: int, quad_layout: str) -> Mesh:
    xy = lin.xy
    blocks: dict[str, list[np.ndarray]] = {}
    counts: dict[str, int] = {}
    region_cells: dict[str, dict[str, list[np.ndarray]]] = {}
    surf_region = {t: nm for nm, ts in built.regions.items() for t in ts}
    for surf, lay, conn in lin.surf_cells:
        if not lin.ccw:
            conn, _ = _counter_clockwise(lay, conn, xy)
        start = counts.get(lay, 0)
        blocks.setdefault(lay, []).append(conn)
        counts[lay] = start + conn.shape[0]
        nm = surf_region.get(surf, "plate")
        if nm != "plate":
            region_cells.setdefault(nm, {}).setdefault(lay, []).append(np.arange(start, start + conn.shape[0]))
    cells = {lay: np.vstack(v) for lay, v in blocks.items()}
    # ---- drop nodes that no cell uses, number the rest 0..n-1
    used = np.zeros(xy.shape[0], dtype=bool)
    for c in cells.values():
        used[c.ravel()] = True
    new = np.cumsum(used) - 1
    node_sets: dict[str, np.ndarray] = {}
    for nm, tag in built.points.items():
        ids = lin.point_nodes.get(tag, np.empty(0, np.int64))
        if ids.size == 0:
            raise GeometryError(f"gmsh put no node at point {nm!r}")
        if not used[ids].all():
            raise GeometryError(f"point {nm!r} did not become a node of the mesh; move it onto the plate")
        node_sets[nm] = new[ids]
    cells = {k: new[v] for k, v in cells.items()}
    xy = xy[used]
    segs = {c: new[v] for c, v in lin.curve_segs.items()}
    edge_sets = {nm: np.vstack([segs[c] for c in curves if c in segs]) for nm, curves in built.edges.items()
                 if any(c in segs for c in curves)}
    if order == 2:
        n = xy.shape[0]
        keys, mids = [], []
        for c, (p, _) in _curve_mids(g, lin).items():
            seg = segs[c]
            keys.append(side_keys(seg[:, 0], seg[:, 1], n))
            mids.append(p)
        ck = np.concatenate(keys) if keys else np.empty(0, np.int64)
        cm = np.vstack(mids) if mids else np.empty((0, 2))
        xy, cells, uniq = _quadratic(xy, cells, ck, cm, quad_layout)
        rename = {"T3": "T6", "Q4": quad_layout}
        region_cells = {nm: {rename[l]: v for l, v in d.items()} for nm, d in region_cells.items()}
        for nm, seg in edge_sets.items():
            mid = n + np.searchsorted(uniq, side_keys(seg[:, 0], seg[:, 1], n))
            edge_sets[nm] = np.column_stack([seg, mid])
    regions = {nm: {lay: np.concatenate(ix) for lay, ix in d.items()} for nm, d in region_cells.items()}
    return Mesh(xy, cells, edge_sets=edge_sets, node_sets=node_sets, regions=regions)


def _counter_clockwise(lay: str, conn: np.ndarray, xy: np.ndarray) -> tuple[np.ndarray, int]:
    """Reorder clockwise cells (negative corner area) to counter-clockwise."""
    nc = 3 if lay[0] == "T" else 4
    p = xy[conn[:, :nc]]
    x, y = p[..., 0], p[..., 1]
    area2 = np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1)
    neg = area2 < 0
    nf = int(np.count_nonzero(neg))
    if nf:
        conn = conn.copy()
        conn[neg] = conn[neg][:, _FLIP[lay]]
    return conn, nf


def _write_msh(g, m: Mesh, path, s: _Session) -> None:
    """Write ``m`` as a gmsh 4.1 file with a physical group for every named edge, point and region.

    The mesh goes into discrete entities of the session's model (one per name), so the file holds
    exactly planar's nodes and cells, counter-clockwise, quadratic ones included.
    """
    path = os.fspath(path)
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise InputError(f"cannot write {path!r}: the folder {folder!r} does not exist")
    with _stage(f"write the mesh file {path!r}", s):
        g.model.mesh.clear()
        top = {d: max([t for _, t in g.model.getEntities(d)] + [0]) for d in (0, 1, 2)}
        node_tags = np.arange(1, m.n_nodes + 1, dtype=np.int64)
        coords = np.column_stack([m.nodes, np.zeros(m.n_nodes)]).ravel()
        names, ids = m.region_ids()
        for i, nm in enumerate(names):
            tag = top[2] + 1 + i
            g.model.addDiscreteEntity(2, tag)
            if i == 0:
                g.model.mesh.addNodes(2, tag, node_tags, coords)
            for lay, conn in m.cells.items():
                sel = conn[ids[lay] == i]
                if sel.size:
                    g.model.mesh.addElementsByType(tag, gmsh_type(lay), [], (sel.astype(np.int64) + 1).ravel())
            g.model.addPhysicalGroup(2, [tag], name=nm)
        for i, (nm, seg) in enumerate(sorted(m.edge_sets.items())):
            tag = top[1] + 1 + i
            g.model.addDiscreteEntity(1, tag)
            g.model.mesh.addElementsByType(tag, 1 if seg.shape[1] == 2 else 8, [], (seg.astype(np.int64) + 1).ravel())
            g.model.addPhysicalGroup(1, [tag], name=nm)
        points = [(nm, v) for nm, v in sorted(m.node_sets.items()) if nm not in m.edge_sets]
        for i, (nm, ids_) in enumerate(points):
            tag = top[0] + 1 + i
            g.model.addDiscreteEntity(0, tag)
            g.model.mesh.addElementsByType(tag, 15, [], (ids_.astype(np.int64) + 1).ravel())
            g.model.addPhysicalGroup(0, [tag], name=nm)
        s.set("Mesh.MshFileVersion", 4.1)
        s.set("Mesh.SaveAll", 0)
        s.set("Mesh.Binary", 0)
        g.write(path)
