"""Turn a :class:`~planar.geometry.plate.Plate` recipe into a gmsh OpenCASCADE model with names.

Booleans are done by OpenCASCADE. Afterwards every boundary curve is named geometrically: a few
points along the curve are compared with the named pieces of the recipe, and the curve takes the
name of the first piece (symmetry cuts, then later operations, then the outline) that all its
points lie on, within ``REL_TOL`` (1e-6) times the plate's size. Regions come from the fragment
map (which piece of the plate came from which region shape); named points are embedded vertices.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable

import numpy as np

from ..core.errors import GeometryError, InputError
from ._curves import _Line, _segment_distance
from ._session import _Session, _stage
from ._split import cut_lines
from ._tolerance import REL_TOL

# The plate (planar.geometry.plate) calls this module to build itself, so this module reads the
# plate only through its methods and never imports it: the annotations below name the class only.

#: fractions of a curve's parameter range where it is sampled for naming
_SAMPLE_AT = np.array([0.11, 0.3, 0.5, 0.7, 0.89])


@dataclass
class _Built:
    edges: dict[str, list[int]]
    points: dict[str, int]
    regions: dict[str, list[int]]  # including "plate" when some surface is in no named region
    surfaces: list[int]
    area: float
    scale: float
    bbox: tuple[float, float, float, float]
    region_order: list[str] = field(default_factory=list)
    cuts: int = 0  # straight cuts that split the plate into pieces for faster meshing


def build_geometry(plate: Plate, verbose: bool = False) -> _Built:
    """Build ``plate`` in a throw-away gmsh session and return its names and area."""
    with _Session(verbose) as s:
        return _build(plate, s)


def _mass(occ, dimtags) -> float:
    return float(sum(occ.getMass(d, t) for d, t in dimtags if d == 2))


def _hole_run(ops: list) -> list:
    """The holes at the head of ``ops``, up to the first operation of another kind."""
    run = []
    for op in ops:
        if op.kind != "hole":
            break
        run.append(op)
    return run


def _cut_holes(occ, S: list, run: list) -> list | None:
    """Cut the holes ``run`` from the plate ``S`` at once; None (``S`` left as it was) when the plate
    does not come out whole with exactly the holes' area removed, so that each hole is then cut and
    judged on its own and the one at fault named. The plate's own checks found them inside it and
    apart, so this is the rule."""
    T = [(2, op.shape._occ(occ)) for op in run]
    a_before, a_tools = _mass(occ, S), _mass(occ, T)
    out, _ = occ.cut(S, T, removeObject=False, removeTool=False)
    out = [d for d in out if d[0] == 2]
    if out and len(out) == len(S) and abs(a_before - a_tools - _mass(occ, out)) <= 1e-9 * max(a_before, 1e-300):
        occ.remove(S + T, recursive=True)
        return out
    occ.remove(out + T, recursive=True)
    return None


def _build(plate: Plate, session: _Session,
           pieces: Callable[[float, tuple[float, float, float, float]], tuple[int, float]] | None = None) -> _Built:
    """Build the plate in ``session``'s model.

    ``pieces(area, bbox) -> (n, h)``, if given, asks for the plate to be cut into about n pieces
    for elements of size h (see :mod:`planar.geometry._split`); the cuts join the plate like region
    outlines, so every name is kept.
    """
    g = session.gmsh
    occ = g.model.occ
    scale = plate._scale()
    tol = REL_TOL * scale
    with _stage("build the plate outline", session, "check the outline's points and arcs"):
        S = [(2, plate._base._occ(occ))]
    ops, alone = list(plate._ops), 0  # alone: how many operations to apply one by one
    while ops:
        run = _hole_run(ops) if not alone else []
        if len(run) > 1:  # many holes one after another (a fastener pattern): one cut, not one per hole
            with _stage(f"apply {run[0].label} to {run[-1].label}", session):
                done = _cut_holes(occ, S, run)
            if done is not None:
                S, ops = done, ops[len(run):]
                continue
            alone = len(run)  # each judged on its own, to name the one at fault
        op = ops.pop(0)
        alone = max(0, alone - 1)
        with _stage(f"apply {op.label}", session):
            T = [(2, op.shape._occ(occ))]
            n0 = len(S)
            if op.kind == "union":
                S, _ = occ.fuse(S, T)
                S = [d for d in S if d[0] == 2]
                if len(S) > n0:
                    raise GeometryError(f"{op.label} does not overlap the plate along an edge; move it so that it overlaps")
                continue
            a_before = _mass(occ, S)
            a_tool = _mass(occ, T)
            S, _ = occ.cut(S, T)
            S = [d for d in S if d[0] == 2]
            if not S:
                raise GeometryError(f"{op.label} removes the whole plate")
            if len(S) > n0:
                raise GeometryError(f"{op.label} cuts the plate into {len(S)} separate pieces; make it smaller")
            if op.kind == "hole":
                a_after = _mass(occ, S)
                if abs(a_before - a_tool - a_after) > 1e-9 * max(a_before, 1e-300):
                    raise GeometryError(
                        f"{op.label} is not wholly inside the plate or overlaps another cut-out "
                        f"(it removes {a_before - a_after:g} instead of its area {a_tool:g}); move it"
                    )
    x0, y0, x1, y1 = plate._bbox()
    big = 2.0 * scale
    for (axis, at, sign), line in zip(plate._keep, plate._symmetry):
        with _stage(f"cut the plate along {line.name}", session):
            if axis == 0:
                xa, xb = (at, x1 + big) if sign > 0 else (x0 - big, at)
                ya, yb = y0 - big, y1 + big
            else:
                xa, xb = x0 - big, x1 + big
                ya, yb = (at, y1 + big) if sign > 0 else (y0 - big, at)
            box = occ.addRectangle(xa, ya, 0.0, xb - xa, yb - ya)
            S, _ = occ.intersect(S, [(2, box)])
            S = [d for d in S if d[0] == 2]
            if not S:
                raise GeometryError(f"the symmetry cut {line.name} at {at:g} leaves nothing of the plate; check its centre")
    regions_in: list[tuple[str, list]] = []
    for name, shape in plate._regions:
        with _stage(f"make region {name!r}", session):
            T = [(2, shape._occ(occ))]
            cp = occ.copy(S)
            inter, _ = occ.intersect(T, cp)
            inter = [d for d in inter if d[0] == 2]
            if not inter or _mass(occ, inter) <= (tol * tol):
                if inter:
                    occ.remove(inter, recursive=True)
                raise GeometryError(f"region {name!r} does not overlap the (cut) plate; move its shape onto the plate")
            regions_in.append((name, inter))
    cut_in: list[tuple[int, int]] = []
    if pieces is not None:
        with _stage("cut the plate into pieces for meshing", session):
            cut_in = _cuts(g, S, regions_in, plate, pieces)
    point_in: list[tuple[str, tuple[int, int]]] = []
    for name, (px, py) in plate._points:
        point_in.append((name, (0, occ.addPoint(px, py, 0.0))))
    region_of: dict[int, str] = {}
    point_tag: dict[str, int] = {}
    if regions_in or point_in or cut_in:
        tools = [dt for _, dts in regions_in for dt in dts] + [dt for _, dt in point_in] + cut_in
        with _stage("join the regions and points to the plate", session):
            _, omap = occ.fragment(S, tools)
        k = len(S)
        plate_surfs = {t for i in range(len(S)) for d, t in omap[i] if d == 2}
        for name, dts in regions_in:
            for _ in dts:
                for d, t in omap[k]:
                    if d == 2:
                        region_of[t] = name
                k += 1
        for name, _ in point_in:
            tags = [t for d, t in omap[k] if d == 0]
            k += 1
            if tags:
                point_tag[name] = tags[0]
        stray = [t for t in region_of if t not in plate_surfs]
        if stray:  # cannot happen (regions were clipped to the plate); be safe
            occ.remove([(2, t) for t in stray], recursive=True)
            for t in stray:
                region_of.pop(t)
        cut_pieces = sorted({t for i in range(k, len(omap)) for d, t in omap[i] if d == 1})
    with _stage("synchronize the model", session):
        occ.synchronize()
    if cut_in:
        # the parts of the cuts outside the plate or in its holes bound no surface: remove them
        with _stage("cut the plate into pieces for meshing", session):
            loose = [(1, c) for c in cut_pieces if not len(g.model.getAdjacencies(1, c)[0])]
            if loose:
                occ.remove(loose, recursive=True)
                occ.synchronize()
    surfaces = sorted(t for _, t in g.model.getEntities(2))
    if not surfaces:
        raise GeometryError("nothing of the plate is left after the cut-outs")
    # ---- named points must be vertices of the plate (on its edge, or embedded inside it)
    on_plate = {abs(t) for _, t in g.model.getBoundary([(2, s) for s in surfaces], combined=False,
                                                       oriented=False, recursive=True)}
    for s in surfaces:
        on_plate.update(t for d, t in g.model.mesh.getEmbedded(2, s) if d == 0)
    for name, (px, py) in plate._points:
        t = point_tag.get(name)
        if t is None or t not in on_plate:
            why = " (it is on the side removed by the symmetry cut)" if plate._keep else ""
            raise GeometryError(f"point {name!r} at ({px:g}, {py:g}) is not on the plate{why}; move it onto the plate")
    # ---- name the boundary curves
    bnd = g.model.getBoundary([(2, s) for s in surfaces], combined=True, oriented=False)
    curves = sorted({abs(t) for d, t in bnd if d == 1})
    edges = _name_curves(g, curves, plate._all_named_pieces(), tol)
    clash = set(edges) & set(point_tag)
    if clash:
        raise InputError(f"the name(s) {sorted(clash)} are used for both an edge and a point; rename one")
    regions: dict[str, list[int]] = {}
    order = []
    for name, _ in plate._regions:
        if name not in order:
            order.append(name)
    for s in surfaces:
        nm = region_of.get(s, "plate")
        regions.setdefault(nm, []).append(s)
    area = _mass(occ, [(2, s) for s in surfaces])
    return _Built(edges, point_tag, regions, surfaces, area, scale, (x0, y0, x1, y1),
                  [n for n in order if n in regions], len(cut_in))


def _cuts(g, S: list, regions_in: list, plate: Plate, pieces) -> list[tuple[int, int]]:
    """Add the straight cuts that split the plate into pieces; return them as (1, tag)."""
    occ = g.model.occ
    area = _mass(occ, S)
    boxes = np.array([occ.getBoundingBox(d, t) for d, t in S])
    bbox = (float(boxes[:, 0].min()), float(boxes[:, 1].min()), float(boxes[:, 3].max()), float(boxes[:, 4].max()))
    n, h = pieces(area, bbox)
    if n <= 1:
        return []
    occ.synchronize()
    shapes = list(S) + [dt for _, dts in regions_in for dt in dts]
    curves = sorted({abs(t) for d, t in g.model.getBoundary(shapes, combined=False, oriented=False) if d == 1})
    corners = sorted({abs(t) for d, t in g.model.getBoundary(shapes, combined=False, oriented=False,
                                                            recursive=True) if d == 0})
    pts = [np.asarray(g.model.getValue(0, t, []), float)[:2] for t in corners]
    pts += [np.asarray(p, float) for _, p in plate._points]
    lines = cut_lines(g, curves, np.array(pts).reshape(-1, 2), n, h, bbox)
    out = []
    for xa, ya, xb, yb in lines:
        a, b = occ.addPoint(xa, ya, 0.0), occ.addPoint(xb, yb, 0.0)
        out.append((1, occ.addLine(a, b)))
    return out


def _name_curves(g, curves: list[int], pieces: list, tol: float) -> dict[str, list[int]]:
    """Name each boundary curve after the first piece that all its sample points lie on."""
    if not curves:
        return {}
    pts = []
    for c in curves:
        lo, hi = g.model.getParametrizationBounds(1, c)
        u = lo[0] + (hi[0] - lo[0]) * _SAMPLE_AT
        pts.append(np.asarray(g.model.getValue(1, c, u.tolist()), float).reshape(-1, 3)[:, :2])
    P = np.vstack(pts)  # (curves * k, 2)
    k = _SAMPLE_AT.size
    D = np.empty((P.shape[0], len(pieces)))
    line_idx = [i for i, p in enumerate(pieces) if isinstance(p, _Line)]
    if line_idx:
        a = np.array([pieces[i].p0 for i in line_idx], float)
        b = np.array([pieces[i].p1 for i in line_idx], float)
        D[:, line_idx] = _segment_distance(P, a, b)
    for i, p in enumerate(pieces):
        if not isinstance(p, _Line):
            D[:, i] = p.distance(P)
    near = (D <= tol).reshape(len(curves), k, len(pieces))
    all_on = near.all(axis=1)
    most = near.sum(axis=1)
    out: dict[str, list[int]] = {}
    for ci, c in enumerate(curves):
        hit = np.flatnonzero(all_on[ci])
        if hit.size:
            j = int(hit[0])
        elif most[ci].max() > 0:
            j = int(np.argmax(most[ci]))  # first piece with the most points on it
        else:
            out.setdefault("unnamed", []).append(c)
            continue
        out.setdefault(pieces[j].name, []).append(c)
    return out
