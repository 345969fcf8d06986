"""Cut a plate that is to get many elements into pieces, so that gmsh meshes it faster.

gmsh's 2D meshers take more time per element on a larger surface (measured with gmsh 4.15, frontal
Delaunay: about 8 us per triangle on a surface of 30 000 triangles, 18 us on one of 230 000; blossom
full-quad recombination grows faster still), and a surface meshes slower while other surfaces
hold their meshes in memory. So a large plate is cut by straight lines, parallel to its sides,
into pieces of a few ten thousand elements, which are meshed one after another (see
:mod:`planar.geometry.meshing`). The pieces share their nodes on the cuts, so the mesh is the same
conforming mesh; only its element edges follow the cuts.

A cut is placed near its ideal position (equal pieces) where it crosses every curve of the plate
(edges and region outlines) steeply, at 45 degrees or more, and passes no corner, named point or
turning point of a curve (where the curve runs along the cut) closer than three element sizes. If
no such place is found, the conditions are relaxed once (30 degrees, 1.5 sizes), and then the cut
is left out: a cut never makes small or flat elements. Everything is computed from the geometry
alone, so the same plate gives the same cuts.
"""
from __future__ import annotations

import math

import numpy as np

#: (minimum crossing angle in degrees, minimum clearance in element sizes), tried in this order
_TIERS = ((45.0, 3.0), (30.0, 1.5))
#: a cut may move by this fraction of the spacing of the cuts from its ideal position
_WINDOW = 0.3
_CANDIDATES = 61


def grid_counts(pieces: int, width: float, height: float) -> tuple[int, int]:
    """Pieces along x and y for about ``pieces`` near-square pieces of a width x height box."""
    if pieces <= 1 or width <= 0 or height <= 0:
        return 1, 1
    nx = min(max(1, round(math.sqrt(pieces * width / height))), pieces)
    ny = max(1, round(pieces / nx))
    if ny == 1:  # a long strip: cut across only
        nx = pieces
    return int(nx), int(ny)


def _sample_curves(g, curves: list[int], h: float) -> list[np.ndarray]:
    out = []
    for c in curves:
        lo, hi = g.model.getParametrizationBounds(1, c)
        length = float(g.model.occ.getMass(1, c))
        n = int(min(max(math.ceil(2.0 * length / h) + 1, 33), 4001))
        u = np.linspace(lo[0], hi[0], n)
        out.append(np.asarray(g.model.getValue(1, c, u.tolist()), float).reshape(-1, 3)[:, :2])
    return out


def _turning_values(samples: list[np.ndarray], axis: int) -> np.ndarray:
    """Coordinate ``axis`` at the samples where a curve turns back along that axis."""
    vals = []
    for p in samples:
        v = p[:, axis]
        d = np.diff(v)
        # steps of zero length (a sample pair placed symmetrically about the turning point, or a
        # piece that runs exactly along the cut) do not hide a turn: compare the nonzero steps
        nz = np.flatnonzero(d != 0)
        turn = nz[:-1][np.sign(d[nz[:-1]]) != np.sign(d[nz[1:]])]
        vals.append(v[turn + 1])
    return np.concatenate(vals) if vals else np.empty(0)


def _place(ideal: np.ndarray, spacing: float, axis: int, seg0: np.ndarray, seg1: np.ndarray,
           critical: np.ndarray, h: float) -> list[float]:
    """Positions of the cuts ``coordinate[axis] = c`` near each ideal position (some may be left out)."""
    crit = np.sort(critical)
    other = 1 - axis
    a0, a1 = seg0[:, axis], seg1[:, axis]
    da = np.abs(a1 - a0)
    db = np.abs(seg1[:, other] - seg0[:, other])
    seg_angle = np.degrees(np.arctan2(da, db))  # angle between a curve piece and the cut
    chosen = []
    for c0 in ideal:
        cand = c0 + spacing * _WINDOW * np.linspace(-1.0, 1.0, _CANDIDATES)
        # clearance from the critical coordinates
        k = np.searchsorted(crit, cand)
        left = np.abs(cand - crit[np.clip(k - 1, 0, crit.size - 1)]) if crit.size else np.full(cand.shape, np.inf)
        right = np.abs(crit[np.clip(k, 0, crit.size - 1)] - cand) if crit.size else np.full(cand.shape, np.inf)
        clear = np.minimum(left, right) / h
        # the least crossing angle with the curves
        s0 = a0[None, :] - cand[:, None]
        s1 = a1[None, :] - cand[:, None]
        cross = (s0 * s1 <= 0) & (da[None, :] > 0)
        angle = np.where(cross, seg_angle[None, :], 90.0).min(axis=1)
        crosses = cross.any(axis=1)
        order = np.argsort(np.abs(cand - c0), kind="stable")
        for min_angle, min_clear in _TIERS:
            ok = crosses & (angle >= min_angle) & (clear >= min_clear)
            good = order[ok[order]]
            if good.size:
                chosen.append(float(cand[good[0]]))
                break
    return chosen


def cut_lines(g, curves: list[int], points: np.ndarray, pieces: int, h: float,
              bbox: tuple[float, float, float, float]) -> list[tuple[float, float, float, float]]:
    """Straight cuts (x0, y0, x1, y1), reaching beyond ``bbox``, for about ``pieces`` pieces.

    Parameters
    ----------
    g : module
        gmsh, with the plate's surfaces synchronized into the model.
    curves : list of int
        Every curve of the plate: its edges and the outlines of its regions.
    points : ndarray, shape (p, 2)
        Corners and named points that a cut must keep clear of.
    pieces : int
        Wanted number of pieces.
    h : float
        Typical element size.
    bbox : (x0, y0, x1, y1)
        Bounding box of the plate.
    """
    x0, y0, x1, y1 = bbox
    w, ht = x1 - x0, y1 - y0
    nx, ny = grid_counts(pieces, w, ht)
    if nx * ny <= 1 or not curves:
        return []
    samples = _sample_curves(g, curves, h)
    seg0 = np.vstack([p[:-1] for p in samples])
    seg1 = np.vstack([p[1:] for p in samples])
    pts = np.asarray(points, float).reshape(-1, 2)
    pad = 0.01 * max(w, ht) + h
    lines = []
    xs: list[float] = []
    if nx > 1:
        crit = np.concatenate([pts[:, 0], _turning_values(samples, 0)])
        xs = _place(x0 + w * np.arange(1, nx) / nx, w / nx, 0, seg0, seg1, crit, h)
        lines += [(c, y0 - pad, c, y1 + pad) for c in xs]
    if ny > 1:
        # the cuts along x make corners where they cross the curves: keep clear of those too
        cross_y = []
        for c in xs:
            s0, s1 = seg0[:, 0] - c, seg1[:, 0] - c
            hit = (s0 * s1 <= 0) & (s0 != s1)
            t = s0[hit] / (s0[hit] - s1[hit])
            cross_y.append(seg0[hit, 1] + t * (seg1[hit, 1] - seg0[hit, 1]))
        crit = np.concatenate([pts[:, 1], _turning_values(samples, 1)] + cross_y)
        ys = _place(y0 + ht * np.arange(1, ny) / ny, ht / ny, 1, seg0, seg1, crit, h)
        lines += [(x0 - pad, c, x1 + pad, c) for c in ys]
    return lines
