"""The element sizes that :func:`planar.geometry.meshing.mesh` hands to gmsh.

A :class:`~planar.geometry.meshing.Refine` becomes a threshold field on the distance to its edges,
points or region outlines (``_refine_field``); a place where a mesh came out tangled gets a small
size around it for the next try (``_spot_field``); a ``size_function(x, y)`` is evaluated once,
vectorized, on a quadtree over the plate (``_size_quadtree``, cells no larger than 1.5 times the
local size, with the element count it asks for) and handed to gmsh as a background view
(``_size_function_field``).
"""
from __future__ import annotations

import math

import numpy as np

from ..core.errors import InputError, ResourceError, unknown_name
from ._build import _Built


def _refine_field(g, built: _Built, r, hmax: float, k: float = 1.0) -> int:
    """Threshold field of ``r`` (a :class:`~planar.geometry.meshing.Refine`), its sizes times ``k`` (the
    growth law keeps its distances)."""
    F = g.model.mesh.field
    if isinstance(r.at, tuple) and len(r.at) == 2 and not isinstance(r.at[0], str):
        x0, y0 = r.at
        dist = F.add("MathEval")
        F.setString(dist, "F", f"Sqrt((x-({x0!r}))^2+(y-({y0!r}))^2)")
    else:
        names = [r.at] if isinstance(r.at, str) else list(r.at)
        curves: list[int] = []
        points: list[int] = []
        for nm in names:
            if nm in built.edges:
                curves += built.edges[nm]
            elif nm in built.points:
                points.append(built.points[nm])
            elif nm in built.regions:
                bnd = g.model.getBoundary([(2, t) for t in built.regions[nm]], combined=True, oriented=False)
                curves += [abs(t) for d, t in bnd if d == 1]
            else:
                valid = list(built.edges) + list(built.points) + list(built.regions)
                raise unknown_name("edge, point or region", nm, valid, "Refine(at=...) names where to refine")
        dist = F.add("Distance")
        if curves:
            longest = max(g.model.occ.getMass(1, c) for c in curves)
            F.setNumbers(dist, "CurvesList", sorted(set(curves)))
            F.setNumber(dist, "Sampling", int(min(max(20, math.ceil(2.0 * longest / r.size)), 20000)))
        if points:
            F.setNumbers(dist, "PointsList", sorted(set(points)))
    th = F.add("Threshold")
    F.setNumber(th, "InField", dist)
    F.setNumber(th, "SizeMin", k * r.size)
    F.setNumber(th, "SizeMax", k * max(hmax, r.size))
    F.setNumber(th, "DistMin", r.within)
    F.setNumber(th, "DistMax", r.within + max(hmax - r.size, 0.0) / (r.growth - 1.0) + 1e-12 * built.scale)
    return th


def _spot_field(g, at: np.ndarray, size: float, hmax: float, growth: float = 1.3) -> int:
    """Size ``size`` within one size of the point ``at``, growing by ``growth`` up to ``hmax``."""
    F = g.model.mesh.field
    dist = F.add("MathEval")
    F.setString(dist, "F", f"Sqrt((x-({float(at[0])!r}))^2+(y-({float(at[1])!r}))^2)")
    th = F.add("Threshold")
    F.setNumber(th, "InField", dist)
    F.setNumber(th, "SizeMin", size)
    F.setNumber(th, "SizeMax", max(hmax, size))
    F.setNumber(th, "DistMin", 3.0 * size)
    F.setNumber(th, "DistMax", 3.0 * size + max(hmax - size, 0.0) / (growth - 1.0))
    return th


def _eval_size(fn, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    try:
        v = fn(x, y)
        v = np.broadcast_to(np.asarray(v, dtype=float), x.shape)
    except Exception as exc:
        raise InputError(
            f"size_function(x, y) failed for numpy arrays ({type(exc).__name__}: {exc}); it must accept "
            "arrays x, y and return an array of element sizes of the same shape"
        ) from None
    bad = ~(np.isfinite(v) & (v > 0))
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise InputError(
            f"size_function returned {float(v.flat[i]):g} at ({x.flat[i]:g}, {y.flat[i]:g}); sizes must be positive "
            "and finite everywhere over the plate's bounding box"
        )
    return v


def _size_quadtree(fn, bbox, hmax: float, ratio: float = 1.5, max_cells: int = 1_000_000):
    """Leaves (x0, y0, side) of a quadtree with sides <= ratio * local size, and h at their corners."""
    x0, y0, x1, y1 = bbox
    w, hgt = x1 - x0, y1 - y0
    side = max(w, hgt) / 8.0
    nx, ny = max(1, math.ceil(w / side)), max(1, math.ceil(hgt / side))
    I, J = np.meshgrid(np.arange(nx), np.arange(ny), indexing="ij")
    cx = x0 + side * I.ravel().astype(float)
    cy = y0 + side * J.ravel().astype(float)
    cs = np.full(cx.shape, side)
    leaves = []
    offs = np.array([[0, 0], [1, 0], [1, 1], [0, 1], [0.5, 0.5]])
    total = 0
    for _ in range(40):
        px = cx[:, None] + cs[:, None] * offs[None, :, 0]
        py = cy[:, None] + cs[:, None] * offs[None, :, 1]
        hv = np.minimum(_eval_size(fn, px, py), hmax)
        split = cs > ratio * hv.min(axis=1)
        if total + 4 * np.count_nonzero(split) > max_cells:
            split[:] = False
        keep = ~split
        leaves.append((cx[keep], cy[keep], cs[keep], hv[keep, :4]))
        total += int(np.count_nonzero(keep))
        if not split.any():
            break
        sx, sy, ss = cx[split], cy[split], cs[split] / 2
        cx = np.concatenate([sx, sx + ss, sx, sx + ss])
        cy = np.concatenate([sy, sy, sy + ss, sy + ss])
        cs = np.concatenate([ss, ss, ss, ss])
    X = np.concatenate([l[0] for l in leaves])
    Y = np.concatenate([l[1] for l in leaves])
    Sd = np.concatenate([l[2] for l in leaves])
    H = np.vstack([l[3] for l in leaves])
    return X, Y, Sd, H


def _size_quadtree_for(fn, area: float, bbox, h: float | None, quads: bool, max_elements: int):
    """Quadtree of the size function over the plate's box and the element count it asks for."""
    x0, y0, x1, y1 = bbox
    scale = max(x1 - x0, y1 - y0)
    hmax = h if h is not None else scale
    pad = 1e-3 * scale
    X, Y, Sd, H = _size_quadtree(fn, (x0 - pad, y0 - pad, x1 + pad, y1 + pad), hmax)
    # element-count estimate: integral of 1 / (area of one element) over the plate
    frac = area / max((x1 - x0 + 2 * pad) * (y1 - y0 + 2 * pad), 1e-300)
    hm = H.mean(axis=1)
    est = frac * float(np.sum(Sd * Sd / ((1.0 if quads else math.sqrt(3) / 4) * hm * hm)))
    if est > max_elements:
        raise ResourceError(
            f"the size function asks for about {est:.3g} elements, more than max_elements={max_elements}; "
            "use larger sizes or raise max_elements"
        )
    return X, Y, Sd, H, est


def _size_function_field(g, quadtree, scale: float = 1.0) -> int:
    X, Y, Sd, H, _ = quadtree
    xs = np.column_stack([X, X + Sd, X + Sd, X])
    ys = np.column_stack([Y, Y, Y + Sd, Y + Sd])
    tri = np.array([[0, 1, 2], [0, 2, 3]])
    n = X.size
    data = np.empty((2, n, 12))
    for k in range(2):
        data[k, :, 0:3] = xs[:, tri[k]]
        data[k, :, 3:6] = ys[:, tri[k]]
        data[k, :, 6:9] = 0.0
        data[k, :, 9:12] = H[:, tri[k]]
    data[..., 9:12] *= scale
    view = g.view.add("planar size function")
    g.view.addListData(view, "ST", 2 * n, np.ascontiguousarray(data.reshape(-1)))
    F = g.model.mesh.field
    f = F.add("PostView")
    F.setNumber(f, "ViewTag", view)
    return f
