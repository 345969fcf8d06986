"""Graphs of a mesh for peak searches: node adjacency through cells, named edges walked into chains.

The private helpers of :mod:`planar.post.hotspots`: sparse adjacency (scipy.sparse), the largest
neighbour value of every node in one pass, and the 1D maxima of an ordered chain (a plateau gives its
middle node).
"""
from __future__ import annotations

from typing import Sequence

import numpy as np

__all__ = ["edge_chains", "cell_graph", "mesh_graph", "neighbour_max", "chain_maxima"]


def pairs_graph(n: int, a: np.ndarray, b: np.ndarray):
    from scipy.sparse import coo_matrix

    a = np.asarray(a, dtype=np.int64).ravel()
    b = np.asarray(b, dtype=np.int64).ravel()
    keep = a != b
    a, b = a[keep], b[keep]
    g = coo_matrix((np.ones(2 * a.size, dtype=np.int8), (np.concatenate([a, b]), np.concatenate([b, a]))),
                   shape=(n, n)).tocsr()
    g.sum_duplicates()
    g.data[:] = 1
    return g


def cell_graph(n: int, blocks: Sequence[np.ndarray]):
    """Node adjacency through shared cells (every pair of nodes of a cell)."""
    rows, cols = [], []
    for conn in blocks:
        conn = np.asarray(conn, dtype=np.int64)
        if conn.size == 0:
            continue
        k = conn.shape[1]
        rows.append(np.repeat(conn, k, axis=1).ravel())
        cols.append(np.tile(conn, (1, k)).ravel())
    if not rows:
        return pairs_graph(n, np.zeros(0), np.zeros(0))
    return pairs_graph(n, np.concatenate(rows), np.concatenate(cols))


def rises_to(g, v: np.ndarray, start: int, floor: float, top: float, stop: np.ndarray) -> tuple[bool, int]:
    """Whether the nodes reachable from ``start`` without going below ``floor`` include one above ``top``
    or one of ``stop`` (a mask); else, how many they are.

    A breadth-first search over the sparse graph, a level at a time (each level vectorized), that ends
    at the first such node: the same answer as the connected component of the nodes at or above
    ``floor`` that holds ``start``, without building that subgraph (which costs a pass over the
    whole mesh for each peak).

    Returns
    -------
    (bool, int)
        True and the nodes seen so far when such a node is reached; False and the size of the
        component otherwise.
    """
    if stop[start]:
        return True, 1
    indptr, indices = g.indptr, g.indices
    seen = np.zeros(g.shape[0], dtype=bool)
    seen[start] = True
    frontier = np.array([start], dtype=np.int64)
    count = 1
    while frontier.size:
        first, lens = indptr[frontier], indptr[frontier + 1] - indptr[frontier]
        total = int(lens.sum())
        if total == 0:
            break
        at = np.repeat(first - np.cumsum(lens) + lens, lens) + np.arange(total)
        nb = indices[at]
        nb = np.unique(nb[~seen[nb]])
        nb = nb[v[nb] >= floor]
        if nb.size == 0:
            break
        seen[nb] = True
        count += nb.size
        if (v[nb] > top).any() or stop[nb].any():
            return True, count
        frontier = nb
    return False, count


def mesh_graph(mesh):
    g = getattr(mesh, "_planarcell_graph", None)
    if g is None or g.shape[0] != mesh.n_nodes:
        g = cell_graph(mesh.n_nodes, list(mesh.cells.values()))
        try:
            object.__setattr__(mesh, "_planarcell_graph", g)
        except (AttributeError, TypeError):
            pass
    return g


def neighbour_max(g, v: np.ndarray) -> np.ndarray:
    """For every row of the sparse graph, the largest value among its neighbours (-inf for none)."""
    out = np.full(g.shape[0], -np.inf)
    counts = np.diff(g.indptr)
    rows = np.flatnonzero(counts > 0)
    if rows.size:
        vals = v[g.indices]
        out[rows] = np.maximum.reduceat(vals, g.indptr[rows])
    return out


def edge_chains(mesh, name: str) -> list[tuple[np.ndarray, bool]]:
    """The named edge walked into ordered chains of nodes (mid-side nodes in place): [(nodes, closed)].

    A chain with a branch (three segments at a node) is returned in depth-first order with
    ``closed=None``: it has no single walking order.
    """
    from scipy.sparse.csgraph import connected_components, depth_first_order

    seg = np.asarray(mesh.edge(name), dtype=np.int64)
    if seg.size == 0:
        return []
    if seg.shape[1] >= 3:
        a = np.concatenate([seg[:, 0], seg[:, 2]])
        b = np.concatenate([seg[:, 2], seg[:, 1]])
    else:
        a, b = seg[:, 0], seg[:, 1]
    ids, inv = np.unique(np.concatenate([a, b]), return_inverse=True)
    la, lb = inv[:a.size], inv[a.size:]
    g = pairs_graph(ids.size, la, lb)
    deg = np.diff(g.indptr)
    ncomp, lab = connected_components(g, directed=False)
    out = []
    for c in range(ncomp):  # one pass per connected piece of the edge (a few), not per node
        members = np.flatnonzero(lab == c)
        branched = bool(np.any(deg[members] > 2))
        ends = members[deg[members] == 1]
        start = int(ends[0]) if ends.size else int(members[0])
        order = depth_first_order(g, start, directed=False, return_predecessors=False)
        out.append((ids[order], None if branched else not ends.size))
    return out


def chain_maxima(order: np.ndarray, closed, v: np.ndarray, tol: float, g_local=None) -> np.ndarray:
    """Nodes of 1D maxima along an ordered chain; a plateau (a run of equal values) gives its middle node."""
    c = v[order]
    if closed is None:  # branched: a node at least as high as its neighbours along the edge
        return order[c >= neighbour_max(g_local, c) - tol] if g_local is not None else order[[int(np.argmax(c))]]
    if closed:
        k = int(np.argmin(c))  # start at the lowest node: no plateau of maxima wraps round the start
        order, c = np.roll(order, -k), np.roll(c, -k)
    brk = np.abs(np.diff(c)) > tol
    start = np.flatnonzero(np.concatenate([[True], brk]))
    end = np.concatenate([start[1:], [c.size]]) - 1
    rv = c[start]
    left = np.concatenate([[-np.inf], rv[:-1]])
    right = np.concatenate([rv[1:], [-np.inf]])
    if closed and rv.size > 1:
        left[0], right[-1] = rv[-1], rv[0]
    is_max = (rv >= left) & (rv >= right)
    return order[(start + end)[is_max] // 2]
