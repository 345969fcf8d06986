"""Cutting cells into small linear triangles for drawing (the subdivision behind :mod:`planar.post.plots`).

Each element is cut into small triangles whose corners are mapped with the element's own shape
functions, for the geometry and the field alike, so curved edges stay curved and fields vary
smoothly inside an element; one batched ``einsum`` per element block.
"""
from __future__ import annotations

from typing import Any, Mapping

import numpy as np

from ..core.errors import InputError, MeshError
from ..core.layouts import layouts

__all__ = ["subdivide"]

#: cap on the number of plotted small triangles (keeps big meshes drawable)
_MAX_TRIANGLES = 1_500_000


# ---------------------------------------------------------------------------------------- subdivision
def _tri_lattice(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Reference points and small triangles of an n-fold subdivided reference triangle."""
    idx = -np.ones((n + 1, n + 1), dtype=np.int64)
    pts = []
    for i in range(n + 1):
        for j in range(n + 1 - i):
            idx[i, j] = len(pts)
            pts.append((i / n, j / n))
    tris = []
    for i in range(n):
        for j in range(n - i):
            tris.append((idx[i, j], idx[i + 1, j], idx[i, j + 1]))
            if i + j < n - 1:
                tris.append((idx[i + 1, j], idx[i + 1, j + 1], idx[i, j + 1]))
    return np.array(pts, dtype=float), np.array(tris, dtype=np.int64)


def _quad_lattice(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Reference points and small triangles of an n x n subdivided reference square [-1, 1]^2."""
    t = np.linspace(-1.0, 1.0, n + 1)
    X, Y = np.meshgrid(t, t, indexing="ij")
    pts = np.column_stack([X.ravel(), Y.ravel()])
    i, j = np.meshgrid(np.arange(n), np.arange(n), indexing="ij")
    a = (i * (n + 1) + j).ravel()
    b, c, d = a + (n + 1), a + (n + 2), a + 1
    tris = np.vstack([np.column_stack([a, b, c]), np.column_stack([a, c, d])])
    return pts, tris


def _lattice(etype, n: int):
    return _tri_lattice(n) if etype.cell == "triangle" else _quad_lattice(n)


def _etype_of(layout: str, etypes: Mapping[str, Any] | None = None):
    if etypes and layout in etypes:
        return etypes[layout]
    known = layouts()  # the layout's own element type fixes the geometry
    if layout in known:
        return known[layout].etype
    raise MeshError(f"cannot draw cells of layout {layout!r}; drawable layouts: {', '.join(known)}")


def _auto_subdivisions(cells: Mapping[str, np.ndarray], etypes=None) -> dict[str, int]:
    """Subdivisions per layout: 4 for quadratic cells, 2 for Q4, 1 for T3; fewer for huge meshes."""
    out = {}
    for layout, conn in cells.items():
        et = _etype_of(layout, etypes)
        out[layout] = 4 if et.degree >= 2 else (2 if et.cell == "quad" else 1)
    while True:
        total = 0
        for layout, conn in cells.items():
            et = _etype_of(layout, etypes)
            n = out[layout]
            total += conn.shape[0] * (n * n if et.cell == "triangle" else 2 * n * n)
        if total <= _MAX_TRIANGLES or all(v == 1 for v in out.values()):
            return out
        out = {k: max(1, v - 1) for k, v in out.items()}


def subdivide(nodes: np.ndarray, cells: Mapping[str, np.ndarray], values: np.ndarray | None = None, *,
              subdivisions: int | Mapping[str, int] | None = None, etypes: Mapping[str, Any] | None = None,
              cell_values: Mapping[str, np.ndarray] | None = None):
    """Cut every cell into small linear triangles mapped with the cell's shape functions.

    Parameters
    ----------
    nodes : ndarray, shape (n, 2)
        Node coordinates (undeformed or deformed).
    cells : mapping of str to ndarray of shape (e, k)
        Cell blocks by layout name (``"T3"``, ``"T6"``, ``"Q4"``, ``"Q8"``, ``"Q9"``).
    values : ndarray, shape (n,), optional
        A nodal field, interpolated with the same shape functions.
    subdivisions : int or mapping, optional
        Subdivisions per cell side; default 4 for quadratic cells, 2 for Q4 and 1 for T3.
    etypes : mapping of str to element type, optional
        Element types of layouts other than the standard five.
    cell_values : mapping of str to ndarray of shape (e,), optional
        A constant value per cell instead of a nodal field.

    Returns
    -------
    points : ndarray, shape (p, 2)
    triangles : ndarray, shape (t, 3)
    point_values : ndarray, shape (p,) or None
    triangle_values : ndarray, shape (t,) or None
        Only when ``cell_values`` is given.

    Notes
    -----
    For the reference points xi_j of the lattice and shape functions N_a, the points are
    x_ej = sum_a N_a(xi_j) x_{e a} and the values v_ej = sum_a N_a(xi_j) v_{e a}, evaluated as one
    ``einsum`` per block (isoparametric mapping, e.g. Zienkiewicz, Taylor and Zhu, The Finite
    Element Method: Its Basis and Fundamentals, 7th ed., 2013, ch. 5).
    """
    nodes = np.asarray(nodes, dtype=float)
    if isinstance(subdivisions, int):
        subdiv = {k: max(1, int(subdivisions)) for k in cells}
    else:
        subdiv = _auto_subdivisions(cells, etypes)
        subdiv.update(dict(subdivisions or {}))
    P, T, V, TV = [], [], [], []
    offset = 0
    for layout, conn in cells.items():
        conn = np.asarray(conn)
        if conn.size == 0:
            continue
        et = _etype_of(layout, etypes)
        ref, tri = _lattice(et, subdiv[layout])
        N = np.asarray(et.shape(ref))                       # (p, k)
        x = np.einsum("pk,ekd->epd", N, nodes[conn])        # (e, p, 2)
        e, p = x.shape[:2]
        P.append(x.reshape(-1, 2))
        T.append((tri[None, :, :] + (offset + p * np.arange(e))[:, None, None]).reshape(-1, 3))
        if values is not None:
            V.append(np.einsum("pk,ek->ep", N, np.asarray(values, float)[conn]).ravel())
        if cell_values is not None:
            TV.append(np.repeat(np.asarray(cell_values[layout], float), tri.shape[0]))
        offset += e * p
    if not P:
        raise MeshError("there are no cells to draw")
    return (np.vstack(P), np.vstack(T), np.concatenate(V) if values is not None else None,
            np.concatenate(TV) if cell_values is not None else None)


def _cells_in_window(nodes, cells, cell_values, window):
    """The cells with a node inside the box (x0, y0, x1, y1), and their cell values."""
    try:
        x0, y0, x1, y1 = (float(v) for v in window)
    except (TypeError, ValueError):
        raise InputError(f"window must be (x0, y0, x1, y1), got {window!r}") from None
    if not (x1 > x0 and y1 > y0):
        raise InputError(f"window must have x1 > x0 and y1 > y0, got {window!r}")
    inside = (nodes[:, 0] >= x0) & (nodes[:, 0] <= x1) & (nodes[:, 1] >= y0) & (nodes[:, 1] <= y1)
    out, cv = {}, ({} if cell_values is not None else None)
    for layout, conn in cells.items():
        keep = inside[conn].any(axis=1)
        if keep.any():
            out[layout] = conn[keep]
            if cv is not None:
                cv[layout] = np.asarray(cell_values[layout])[keep]
    if not out:
        raise InputError(f"no part of the plate lies in the window (x0, y0, x1, y1) = ({x0:g}, {y0:g}, {x1:g}, {y1:g})")
    return out, cv


def _outline_segments(nodes: np.ndarray, cells: Mapping[str, np.ndarray], etypes=None,
                      samples: int = 6) -> np.ndarray:
    """Element sides as polylines along the (curved) edges, each shared side once: (s, m, 2)."""
    segs, keys = [], []
    t = np.linspace(0.0, 1.0, samples)
    for layout, conn in cells.items():
        conn = np.asarray(conn)
        if conn.size == 0:
            continue
        et = _etype_of(layout, etypes)
        m = samples if et.degree >= 2 else 2
        tt = t if m == samples else np.array([0.0, 1.0])
        ed = np.asarray(et.edges)
        ref = np.asarray(et.ref_nodes, float)
        a, b = ref[ed[:, 0]], ref[ed[:, 1]]
        xi = (a[:, None, :] * (1 - tt)[None, :, None] + b[:, None, :] * tt[None, :, None]).reshape(-1, 2)
        N = np.asarray(et.shape(xi))
        x = np.einsum("pk,ekd->epd", N, nodes[conn]).reshape(conn.shape[0], ed.shape[0], m, 2)
        if m != samples:  # straight sides: resample so all polylines have the same length
            x = x[:, :, :1, :] + (x[:, :, 1:, :] - x[:, :, :1, :]) * t[None, None, :, None]
        segs.append(x.reshape(-1, samples, 2))
        k = np.sort(np.stack([conn[:, ed[:, 0]], conn[:, ed[:, 1]]], axis=-1), axis=-1)
        keys.append(k.reshape(-1, 2))
    segs, keys = np.vstack(segs), np.vstack(keys)
    _, first = np.unique(keys, axis=0, return_index=True)
    return segs[np.sort(first)]
