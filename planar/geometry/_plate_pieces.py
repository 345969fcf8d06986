"""Helpers of the plate recipe: sampling of boundary pieces, scales, unions' names, fillet corners, and the
shapes' distance functions as the plate's checks use them."""
from __future__ import annotations

import math

import numpy as np

from ..core.errors import GeometryError
from ._curves import _Arc, _as_point, _Line
from .shapes import Outline, Polygon, Shape, _fmt


def _sdf_slack(shape: Shape) -> float:
    """How many times the distance to ``shape`` its distance function may read low, away from it: 1 for a
    circle, slot, rounded rectangle, and a shape of straight and circular sides (their distance is
    exact); ``2 a / b`` for an ellipse (its first-order distance F / |grad F| reads down to b / 2a of the
    distance outside it); NaN for any other shape (not known: always measured)."""
    from ._round import Circle, Ellipse, RoundedRectangle, Slot

    kind = type(shape)
    if kind._sdf in (Circle._sdf, Slot._sdf, RoundedRectangle._sdf):
        return 1.0
    if kind._sdf is Ellipse._sdf and isinstance(shape, Ellipse):
        return 2.0 * max(shape.a, shape.b) / min(shape.a, shape.b)
    if kind._sdf is Shape._sdf and all(isinstance(p, (_Line, _Arc)) for p in shape._pieces()):
        return 1.0
    return float("nan")


def _circles_sdf(table: np.ndarray):
    """The least of the distance functions of the circles ``table`` (k, 3: x, y, radius) at points, each
    value as :meth:`Circle._sdf` gives it. Each point is measured against its nearest few circles (found
    by a search tree of the centres); against every circle only where a circle beyond those few could
    still read less, a block of points at a time to bound the memory."""
    from scipy.spatial import cKDTree

    cx, cy, r = table[:, 0], table[:, 1], table[:, 2]
    tree, few, rmax = cKDTree(table[:, :2]), min(8, len(r)), float(r.max())
    span = float(np.ptp(table[:, :2], axis=0).max() + rmax)

    def every(pts: np.ndarray) -> np.ndarray:
        out = np.empty(pts.shape[0])
        step = max(1, 2_000_000 // len(r))
        for i in range(0, pts.shape[0], step):
            p = pts[i:i + step]
            out[i:i + step] = (np.hypot(p[:, 0, None] - cx, p[:, 1, None] - cy) - r).min(axis=1)
        return out

    def least(pts: np.ndarray) -> np.ndarray:
        if pts.shape[0] == 0 or few == len(r):
            return every(pts)
        d, k = tree.query(pts, k=few)
        out = (np.hypot(pts[:, 0, None] - cx[k], pts[:, 1, None] - cy[k]) - r[k]).min(axis=1)
        # a circle beyond the few nearest lies at least d[:, -1] away, so reads at least d[:, -1] - rmax
        doubt = ~(d[:, -1] - rmax > out + 1e-9 * (span + np.abs(pts).max(axis=1)))
        if doubt.any():
            out[doubt] = every(pts[doubt])
        return out

    return least


def _csg_steps(ops) -> list:
    """The plate's operations for its distance function: (kind, whether a hole, the shape's distance
    function), with each run of two or more round holes one after another made one step
    (:func:`_circles_sdf`), so a pattern of many holes is one array operation, not one per hole."""
    from ._round import Circle

    steps: list = []
    run: list = []

    def close():
        if len(run) == 1:
            steps.append(("hole", True, run[0]._sdf))
        elif run:
            steps.append(("hole", True, _circles_sdf(np.array([[*c.centre, c.radius] for c in run], float))))
        run.clear()

    for op in ops:
        if op.kind == "hole" and type(op.shape) is Circle:
            run.append(op.shape)
            continue
        close()
        steps.append((op.kind, op.kind == "hole", op.shape._sdf))
    close()
    return steps


def _samples_of(pieces, per_piece: int | None = None) -> np.ndarray:
    out = []
    for p in pieces:
        if per_piece is not None:
            out.append(p.sample(per_piece))
        elif isinstance(p, _Line):
            out.append(p.sample(9))
        else:
            out.append(p.sample(max(16, int(math.ceil(p.length / max(_piece_scale(p), 1e-300) * 64)))))
    return np.vstack(out)


def _piece_scale(p) -> float:
    if isinstance(p, _Arc):
        return p.radius
    return max(getattr(p, "a", 1.0), getattr(p, "b", 1.0))


def _named_as_union(shape: Shape, name: str) -> tuple:
    """Pieces of an added shape: its own side names if it has them, else ``name``."""
    if isinstance(shape, Polygon) and shape.names is not None:
        return tuple(shape._pieces())
    if isinstance(shape, Outline) and any(s.name for s in shape._segs):
        return tuple(p.named(p.name if not p.name.startswith("edge_") else name) for p in shape._pieces())
    return tuple(shape._pieces(name))


def _is_point_like(c) -> bool:
    try:
        a = np.asarray(c, dtype=float)
    except (TypeError, ValueError):
        return False
    return a.shape == (2,)


def _is_name_pair(c) -> bool:
    return isinstance(c, tuple) and len(c) == 2 and all(isinstance(x, str) for x in c)


def _fillet_corner(pieces: list, corner, r: float, name: str, tol: float) -> list:
    n = len(pieces)
    idx = None
    if _is_name_pair(corner):
        a, b = corner
        for i in range(n):
            prev, cur = pieces[i - 1], pieces[i]
            if {prev.name, cur.name} == {a, b} and isinstance(prev, _Line) and isinstance(cur, _Line):
                idx = i
                break
        if idx is None:
            raise GeometryError(
                f"no corner where the straight sides {a!r} and {b!r} meet; sides of the outline: "
                f"{sorted({p.name for p in pieces})}"
            )
    else:
        c = _as_point(corner, "fillet corner")
        for i in range(n):
            if np.hypot(*(pieces[i].start - c)) <= tol:
                idx = i
                break
        if idx is None:
            raise GeometryError(f"the outline has no corner at ({c[0]:g}, {c[1]:g}); give a corner point exactly")
    l1, l2 = pieces[idx - 1], pieces[idx]
    if not (isinstance(l1, _Line) and isinstance(l2, _Line)):
        raise GeometryError("a fillet rounds a corner between two straight sides; this corner touches an arc")
    v = l2.start
    u1 = (l1.start - v) / l1.length
    u2 = (l2.end - v) / l2.length
    cosang = float(np.clip(np.dot(u1, u2), -1.0, 1.0))
    theta = math.acos(cosang)
    if theta > math.pi - 1e-9:
        raise GeometryError(f"the sides meet in a straight line at {_fmt(v)}; there is no corner to round")
    d = r / math.tan(theta / 2)
    if d >= l1.length - tol or d >= l2.length - tol:
        raise GeometryError(
            f"a fillet of radius {r:g} at {_fmt(v)} needs {d:g} of each side, but the sides are "
            f"{l1.length:g} and {l2.length:g} long; use a smaller radius"
        )
    t1 = v + d * u1
    t2 = v + d * u2
    bis = (u1 + u2) / np.hypot(*(u1 + u2))
    centre = v + (r / math.sin(theta / 2)) * bis
    mid = centre - r * bis
    arc = _Arc.through(t1, mid, t2, name)
    new = [_Line(l1.p0, tuple(t1), l1.name), arc, _Line(tuple(t2), l2.p1, l2.name)]
    if idx == 0:
        return [new[2]] + pieces[1:-1] + [new[0], new[1]]
    return pieces[: idx - 1] + new + pieces[idx + 1 :]
