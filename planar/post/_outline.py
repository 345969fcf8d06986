"""The part's outline and a magnification that keeps the drawn shape true (behind the model and result pictures).

* :class:`Outline`: the boundary sides of a mesh (element sides used by one cell), drawn along curved
  sides with the elements' shape functions, for the undeformed or any displaced node positions, with
  the outward normal of each side (away from its cell's centre).
* :func:`true_scale`: the largest displacement magnification that stretches or shortens no element
  side (nor a quadrilateral's diagonal) by more than a fraction of its length. A drawn hole, fillet or
  element then keeps its shape and size within that fraction: a rigid motion changes no length, and
  a magnified rotation stretches sides only to second order, so it is counted too.
"""
from __future__ import annotations

import math
from typing import Any, Mapping

import numpy as np

from ..core.validity import side_table
from ._subdivide import _etype_of

__all__ = ["Outline", "true_scale", "side_pairs", "dashed_sides", "outline_path", "DISTORTION"]

#: the largest relative change of length of any element side drawn at an automatic magnification
DISTORTION = 0.03


def _boundary_sides(n_nodes: int, cells: Mapping[str, np.ndarray], etypes=None):
    """The sides used by one cell only: (block index, cell, local edge, corner node pair sorted), in cell order.

    From the mesh's side table (:func:`planar.core.validity.side_table`), as the element checks read it.
    """
    if not cells:
        z = np.zeros(0, np.int64)
        return z, z, z, np.zeros((0, 2), np.int64)
    table = side_table(n_nodes, {k: np.asarray(v, np.int64) for k, v in cells.items()},
                       lambda layout: np.asarray(_etype_of(layout, etypes).edges)[:, :2])
    pair = table.key >> 1  # sorted; the orientation bit dropped
    alone = np.ones(pair.size, bool)
    alone[1:] &= pair[1:] != pair[:-1]
    alone[:-1] &= pair[:-1] != pair[1:]
    side = np.sort(table.order[alone])
    firsts = np.array([first for _, first, _ in table.blocks], np.int64)
    per = np.array([n for _, _, n in table.blocks], np.int64)
    block = np.searchsorted(firsts, side, side="right") - 1
    local = side - firsts[block]
    corners = np.sort(np.stack([table.a[side], table.b[side]], axis=1), axis=1)
    return block, local // per[block], local % per[block], corners


class Outline:
    """The boundary sides of a mesh, drawable for any node positions.

    Parameters
    ----------
    nodes : ndarray, shape (n, 2)
        Undeformed node coordinates.
    cells : mapping of str to ndarray
        Cell blocks by layout.
    etypes : mapping, optional
        Element types of layouts other than the built-in ones.
    samples : int
        Points per curved (quadratic or higher) side.

    Attributes
    ----------
    corners : ndarray, shape (s, 2)
        The corner nodes of each boundary side.
    normal : ndarray, shape (s, 2)
        Unit outward normal of each side (from its cell's centre towards the side).
    middle : ndarray, shape (s, 2)
        Middle of each side (mean of its two corners).
    """

    def __init__(self, nodes, cells: Mapping[str, np.ndarray], etypes=None, samples: int = 6):
        self.cells = {k: np.asarray(v) for k, v in cells.items() if np.asarray(v).size}
        self.etypes = etypes
        self.samples = int(samples)
        nodes = np.asarray(nodes, float)[:, :2]
        self.block, self.cell, self.edge, self.corners = _boundary_sides(nodes.shape[0], self.cells, etypes)
        layouts = list(self.cells)
        centre = np.zeros((self.corners.shape[0], 2))
        for b, layout in enumerate(layouts):
            sel = self.block == b
            if sel.any():
                conn = self.cells[layout]
                ncorner = _etype_of(layout, etypes).corner_count()
                centre[sel] = nodes[conn[self.cell[sel], :ncorner]].mean(axis=1)
        a, c = nodes[self.corners[:, 0]], nodes[self.corners[:, 1]]
        self.middle = 0.5 * (a + c)
        t = c - a
        n = np.stack([t[:, 1], -t[:, 0]], axis=1)
        n /= np.maximum(np.hypot(n[:, 0], n[:, 1]), 1e-300)[:, None]
        flip = np.einsum("ij,ij->i", n, self.middle - centre) < 0
        n[flip] *= -1.0
        self.normal = n
        ends = np.zeros((len(self), 2), np.int64)  # the node at each polyline's start and end (its sample order)
        for b, (layout, conn) in enumerate(self.cells.items()):
            sel = np.flatnonzero(self.block == b)
            if sel.size:
                ed = np.asarray(_etype_of(layout, etypes).edges)
                ends[sel] = conn[self.cell[sel][:, None], ed[self.edge[sel]][:, :2]]
        self.ends = ends
        self._nodes = nodes

    def __len__(self) -> int:
        return int(self.corners.shape[0])

    def polylines(self, positions) -> np.ndarray:
        """Each boundary side as a polyline of the node ``positions`` (n, 2): shape (s, samples, 2).

        The sides are mapped with the cells' shape functions, so a displaced curved side is drawn as the
        element sees it (positions = nodes + scale * u).
        """
        x = np.asarray(positions, float)[:, :2]
        out = np.zeros((len(self), self.samples, 2))
        t = np.linspace(0.0, 1.0, self.samples)
        for b, (layout, conn) in enumerate(self.cells.items()):
            sel = np.flatnonzero(self.block == b)
            if sel.size == 0:
                continue
            et = _etype_of(layout, self.etypes)
            ed = np.asarray(et.edges)
            ref = np.asarray(et.ref_nodes, float)
            p, q = ref[ed[:, 0]], ref[ed[:, 1]]
            xi = (p[:, None, :] * (1 - t)[None, :, None] + q[:, None, :] * t[None, :, None]).reshape(-1, 2)
            N = np.asarray(et.shape(xi)).reshape(ed.shape[0], self.samples, -1)   # (edges, m, k)
            out[sel] = np.einsum("smk,skd->smd", N[self.edge[sel]], x[conn[self.cell[sel]]])
        return out


    def chain(self):
        """The sides as closed loops, for a dash pattern that runs on along the outline.

        Returns ``(order, reverse, loop)``: the sides in drawing order, whether each side's polyline runs
        against its loop (the part on its left), and each ordered side's loop label; None when the
        boundary is not a set of simple loops (a node on more than two boundary sides). The loops are
        found by pointer jumping (the label of each side is the least side index on its loop, the rank
        its distance from that side), so no Python loop runs over the sides.
        """
        s = len(self)
        if s == 0:
            return None
        a, c = self.ends[:, 0], self.ends[:, 1]
        t = self._nodes[c] - self._nodes[a]
        rev = t[:, 1] * self.normal[:, 0] - t[:, 0] * self.normal[:, 1] < 0  # outward normal on the right: keep
        start, end = np.where(rev, c, a), np.where(rev, a, c)
        by_start = np.argsort(start, kind="stable")
        ss = start[by_start]
        if np.any(ss[1:] == ss[:-1]):
            return None
        pos = np.minimum(np.searchsorted(ss, end), s - 1)
        if np.any(ss[pos] != end):
            return None
        nxt = by_start[pos]
        steps = int(math.ceil(math.log2(max(s, 2)))) + 1
        lab, p = np.arange(s), nxt.copy()
        for _ in range(steps):  # pointer jumping: log2(s) rounds
            lab, p = np.minimum(lab, lab[p]), p[p]
        prev = np.empty(s, np.int64)
        prev[nxt] = np.arange(s)
        root = lab == np.arange(s)
        rank, q = np.where(root, 0, 1), np.where(root, np.arange(s), prev)
        for _ in range(steps):  # list ranking back to each loop's root
            rank, q = rank + rank[q], q[q]
        order = np.lexsort((rank, lab))
        return order, rev, lab[order]


def outline_path(outline: "Outline", positions):
    """The outline at ``positions`` as one closed matplotlib Path (a loop per boundary, holes included), or None.

    Filled, it covers the part once (a translucent fill of many cells shows their seams).
    """
    from matplotlib.path import Path

    chain = outline.chain()
    if chain is None:
        return None
    order, rev, loop = chain
    P = outline.polylines(positions)
    P = np.where(rev[:, None, None], P[:, ::-1], P)[order]
    verts, codes = [], []
    for grp in np.split(np.arange(order.size), np.flatnonzero(loop[1:] != loop[:-1]) + 1):
        pts = P[grp, :-1].reshape(-1, 2)
        verts += [pts, pts[:1]]
        codes += [np.r_[Path.MOVETO, np.full(len(pts) - 1, Path.LINETO)], [Path.CLOSEPOLY]]
    return Path(np.vstack(verts), np.concatenate(codes).astype(np.uint8))


def dashed_sides(outline: "Outline", positions, dashes, *, linewidth: float, **kwargs):
    """A LineCollection of the outline's sides at ``positions`` whose dash pattern runs on from side to side.

    Each side stays its own segment (one per boundary side, as :meth:`Outline.polylines`); at each draw
    every side's dash offset is set to the drawn length of its loop before it, so short sides (a
    refined hole) show the dashes instead of each starting the pattern afresh and looking solid.
    """
    from matplotlib import rcParams
    from matplotlib.collections import LineCollection

    segs = outline.polylines(positions)
    chain = outline.chain()
    if chain is not None:
        segs = np.where(chain[1][:, None, None], segs[:, ::-1], segs)
    dashes = tuple(float(d) for d in dashes)

    class _RunningDashes(LineCollection):
        def draw(self, renderer):
            if chain is not None and self.axes is not None and len(segs):
                order, _, loop = chain
                px = self.axes.transData.transform(segs.reshape(-1, 2)).reshape(segs.shape)
                seg_len = np.hypot(*np.diff(px, axis=1).transpose(2, 0, 1)).sum(axis=1)[order]
                before = np.cumsum(seg_len) - seg_len
                first = np.r_[True, loop[1:] != loop[:-1]]
                base = np.maximum.accumulate(np.where(first, np.arange(order.size), 0))
                off = np.empty(order.size)
                off[order] = (before - before[base]) / renderer.points_to_pixels(1.0)
                lw = linewidth if rcParams["lines.scale_dashes"] and linewidth > 0 else 1.0
                self.set_linestyle([(float(o) / lw, dashes) for o in off])
                self.stale = False
            super().draw(renderer)

    return _RunningDashes(list(segs), linewidths=linewidth, linestyles=[(0, dashes)], **kwargs)


def side_pairs(cells: Mapping[str, np.ndarray], etypes=None) -> np.ndarray:
    """Node pairs (p, 2) whose distance a drawing must keep: every cell side, and each quadrilateral's diagonals.

    A side shared by two cells is listed twice (it changes no largest or smallest stretch, and
    leaving it saves a sort of every side).
    """
    pairs = []
    for layout, conn in cells.items():
        conn = np.asarray(conn)
        if conn.size == 0:
            continue
        et = _etype_of(layout, etypes)
        ed = np.asarray(et.edges)
        pairs.append(np.stack([conn[:, ed[:, 0]], conn[:, ed[:, 1]]], axis=-1).reshape(-1, 2))
        if et.cell == "quad":
            pairs += [conn[:, [0, 2]], conn[:, [1, 3]]]
    return np.vstack(pairs).astype(np.int64) if pairs else np.zeros((0, 2), np.int64)


def _nice_down(x: float) -> float:
    """Round down to 1, 2 or 5 times a power of ten."""
    if not (x > 0 and math.isfinite(x)):
        return 0.0
    e = math.floor(math.log10(x))
    m = x / 10**e
    return (5 if m >= 5 else 2 if m >= 2 else 1) * 10.0**e


def true_scale(nodes, u, cells: Mapping[str, np.ndarray], *, distortion: float = DISTORTION,
               etypes: Any = None) -> float:
    """The largest magnification that changes no element side's (or quadrilateral diagonal's) length by
    more than ``distortion`` of it, rounded down to 1, 2 or 5 times a power of ten (inf when nothing strains).

    For a side a (undeformed) with end displacements differing by b, the drawn length is
    ``|a + s b|``; the bound is the first s > 0 where ``|a + s b| = (1 +/- distortion) |a|``, a root of
    ``|b|^2 s^2 + 2 (a.b) s + (1 - (1 +/- f)^2) |a|^2 = 0``.

    Examples
    --------
    >>> import numpy as np
    >>> nodes = np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]])
    >>> u = np.array([[0.0, 0.0], [0.01, 0.0], [0.01, 0.0], [0.0, 0.0]])   # a strain of 1e-3
    >>> true_scale(nodes, u, {"Q4": np.array([[0, 1, 2, 3]])})      # 3 % / 1e-3 = 30 (diagonals stretch less)
    20.0
    """
    nodes = np.asarray(nodes, float)[:, :2]
    u = np.asarray(u, float)[:, :2]
    pairs = side_pairs(cells, etypes)
    if pairs.shape[0] == 0:
        return math.inf
    a = nodes[pairs[:, 1]] - nodes[pairs[:, 0]]
    b = u[pairs[:, 1]] - u[pairs[:, 0]]
    aa = np.einsum("ij,ij->i", a, a)
    bb = np.einsum("ij,ij->i", b, b)
    ab = np.einsum("ij,ij->i", a, b)
    keep = (bb > 1e-30 * np.maximum(aa, 1e-300)) & (aa > 0)
    if not keep.any():
        return math.inf
    aa, bb, ab = aa[keep], bb[keep], ab[keep]
    f = float(distortion)
    up = (-ab + np.sqrt(ab**2 + bb * aa * ((1 + f) ** 2 - 1))) / bb           # stretched to (1 + f)
    disc = ab**2 - bb * aa * (1 - (1 - f) ** 2)
    lo = np.where((ab < 0) & (disc >= 0), (-ab - np.sqrt(np.maximum(disc, 0.0))) / bb, np.inf)  # shortened
    s = float(np.min(np.minimum(up, lo)))
    return _nice_down(s) if math.isfinite(s) else math.inf
