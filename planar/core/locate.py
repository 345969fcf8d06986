"""Point location: which element holds a point, and its reference coordinates."""
from __future__ import annotations

import numpy as np
from scipy.spatial import cKDTree

from .errors import InputError, fmt_point
from .registry import element_type

__all__ = ["locate"]


def _inside(cell: str, xi: np.ndarray, tol: float = 1e-8) -> np.ndarray:
    if cell == "triangle":
        return (xi[:, 0] >= -tol) & (xi[:, 1] >= -tol) & (xi.sum(axis=1) <= 1 + tol)
    return (np.abs(xi[:, 0]) <= 1 + tol) & (np.abs(xi[:, 1]) <= 1 + tol)


def locate(mesh, points: np.ndarray, *, candidates: int = 12):
    """Find the element holding each point.

    Parameters
    ----------
    mesh : Mesh
    points : ndarray, shape (p, 2)
    candidates : int
        Nearest element centres tried per point.

    Returns
    -------
    layout : ndarray of str, shape (p,)
    cell : ndarray of int, shape (p,)
    xi : ndarray, shape (p, 2)
        Reference coordinates of each point in its element.

    Raises
    ------
    InputError
        A point outside the mesh (naming the first such point).
    """
    try:
        pts = np.asarray(points, dtype=float).reshape(-1, 2)
    except (TypeError, ValueError):
        raise InputError(f"points must be (x, y) pairs of numbers, shape (p, 2); got {points!r}"[:200]) from None
    if not np.all(np.isfinite(pts)):
        bad = pts[~np.all(np.isfinite(pts), axis=1)][0]
        raise InputError(f"point {fmt_point(bad)} is not a pair of finite numbers; pick points inside the plate")
    p = pts.shape[0]
    found = np.zeros(p, dtype=bool)
    out_layout = np.empty(p, dtype=object)
    out_cell = np.zeros(p, dtype=np.int64)
    out_xi = np.zeros((p, 2))
    for layout, conn in mesh.cells.items():
        et = element_type(layout)
        X = mesh.nodes[conn]  # (e, k, 2)
        cen = X[:, : et.corner_count()].mean(axis=1)
        tree = cKDTree(cen)
        k = min(candidates, conn.shape[0])
        _, cand = tree.query(pts, k=k)
        cand = cand.reshape(p, k)
        start = np.array([1 / 3, 1 / 3]) if et.cell == "triangle" else np.zeros(2)
        for j in range(k):  # a few candidates, each a vectorized Newton solve over all points
            todo = np.flatnonzero(~found)
            if todo.size == 0:
                break
            c = cand[todo, j]
            Xe = X[c]
            xi = np.tile(start, (todo.size, 1))
            for _ in range(25):
                N = et.shape(xi)
                dN = et.shape_derivatives(xi)
                x = np.einsum("pk,pki->pi", N, Xe)
                J = np.einsum("pki,pkj->pij", Xe, dN)
                r = pts[todo] - x
                det = J[:, 0, 0] * J[:, 1, 1] - J[:, 0, 1] * J[:, 1, 0]
                det = np.where(np.abs(det) < 1e-300, 1e-300, det)
                dx = np.stack([(J[:, 1, 1] * r[:, 0] - J[:, 0, 1] * r[:, 1]) / det,
                               (-J[:, 1, 0] * r[:, 0] + J[:, 0, 0] * r[:, 1]) / det], axis=-1)
                xi = np.clip(xi + dx, -3, 3)
                if np.max(np.abs(dx)) < 1e-13:
                    break
            ok = _inside(et.cell, xi)
            hit = todo[ok]
            found[hit] = True
            out_layout[hit] = layout
            out_cell[hit] = c[ok]
            out_xi[hit] = xi[ok]
    if not np.all(found):
        i = int(np.flatnonzero(~found)[0])
        raise InputError(f"point {fmt_point(pts[i])} lies outside the mesh; pick points inside the plate")
    return out_layout, out_cell, out_xi
