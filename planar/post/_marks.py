"""Outlines, peak marks and the shape note of a result picture (helpers of :func:`planar.post.plots.plot_nodal_field`).

A result picture keeps marker, label and axes in one coordinate system and says which:

* ``on="undeformed"`` (the default): the contour is drawn on the part as made, the axes are the part's
  coordinates, and each peak's marker sits at the point its label states; the deformed shape is drawn
  over it as a dashed outline (displacements magnified).
* ``on="deformed"``: the contour is drawn on the deformed shape (coordinates x + s u), with the
  undeformed outline behind it; the marker sits where the peak is drawn and its label states both
  the point on the part and where it is drawn.

The maximum is marked, and for a signed field the minimum too (gids ``"peak-max"``, ``"peak-min"``,
their labels ``"peak-max-label"``, ``"peak-min-label"``); the outlines carry the gids
``"undeformed-outline"`` and ``"deformed-outline"``.
"""
from __future__ import annotations

from typing import Mapping

import numpy as np

from ._outline import DISTORTION, Outline, side_pairs

__all__ = ["distortion_at", "draw_outlines", "mark_extremes", "shape_note", "check_place", "PLACES"]

#: where the contour of a result picture is drawn
PLACES = ("undeformed", "deformed")


def distortion_at(nodes, u, cells: Mapping[str, np.ndarray], scale: float, etypes=None) -> float:
    """The largest relative change of length of an element side (or quadrilateral diagonal) drawn at ``scale``."""
    pairs = side_pairs(cells, etypes)
    if pairs.shape[0] == 0 or not scale:
        return 0.0
    nodes, u = np.asarray(nodes, float)[:, :2], np.asarray(u, float)[:, :2]
    a = nodes[pairs[:, 1]] - nodes[pairs[:, 0]]
    b = u[pairs[:, 1]] - u[pairs[:, 0]]
    la = np.hypot(a[:, 0], a[:, 1])
    ok = la > 0
    drawn = np.hypot(*(a[ok] + scale * b[ok]).T)
    return float(np.max(np.abs(drawn / la[ok] - 1.0))) if ok.any() else 0.0


def draw_outlines(ax, nodes, cells, displacement, scale: float, on: str, etypes=None) -> None:
    """The undeformed outline (solid on the part, or grey behind a deformed contour) and the deformed one."""
    from matplotlib.collections import LineCollection

    outline = Outline(nodes, cells, etypes)
    if not len(outline):
        return
    from ._outline import dashed_sides

    base = outline.polylines(nodes)
    moved = scale > 0 and displacement is not None
    if on == "undeformed":
        und = LineCollection(base, colors="0.1", linewidths=0.9, linestyles="solid", zorder=4)
    else:  # dashed: the pattern runs on along the outline (short sides would each start it afresh and look solid)
        und = dashed_sides(outline, nodes, (4, 2), linewidth=1.0, colors="0.55", zorder=0.5)
    und.set_gid("undeformed-outline")
    ax.add_collection(und)
    if moved:
        at = np.asarray(nodes, float)[:, :2] + scale * np.asarray(displacement, float)[:, :2]
        if on == "undeformed":
            dfm = dashed_sides(outline, at, (5, 2.5), linewidth=1.0, colors="0.05", zorder=4.5)
        else:
            dfm = LineCollection(base + scale * outline.polylines(displacement), colors="0.05", linewidths=0.8,
                                 linestyles="solid", zorder=4.5)
        dfm.set_gid("deformed-outline")
        ax.add_collection(dfm)


def _extreme(values, cell_values, cells, nodes, drawn, largest: bool):
    """(value, point on the part, drawn point) of the largest or smallest value among the drawn cells."""
    if values is not None:
        used = np.zeros(nodes.shape[0], dtype=bool)
        for conn in cells.values():
            used[np.asarray(conn).ravel()] = True
        v = np.asarray(values, float)
        w = np.where(used & np.isfinite(v), v if largest else -v, -np.inf)
        i = int(np.argmax(w))
        return float(v[i]), nodes[i], drawn[i]
    allv = np.concatenate([np.asarray(cell_values[k], float) for k in cells])
    j = int(np.nanargmax(allv) if largest else np.nanargmin(allv))
    k = j
    for conn in cells.values():
        if k < conn.shape[0]:
            return float(allv[j]), nodes[conn[k]].mean(axis=0), drawn[conn[k]].mean(axis=0)
        k -= conn.shape[0]
    raise AssertionError("cell index beyond the cells")  # pragma: no cover


def mark_extremes(ax, *, values, cell_values, cells, nodes, drawn, signed: bool, which: str | bool, unit: str,
                  length: str, box, on: str, fmt, fmt_point) -> None:
    """Mark the maximum (and for a signed field the minimum) with a marker and a label in one coordinate system."""
    if isinstance(which, str) and which not in ("max", "both"):
        from ..core.errors import InputError

        raise InputError(f"mark_peak must be True, False, 'max' or 'both', got {which!r}")
    x0, y0, x1, y1 = box
    kinds = ["max"] + (["min"] if signed and which is True or which == "both" else [])
    placed: list[np.ndarray] = []
    for kind in kinds:
        value, at, where = _extreme(values, cell_values, cells, nodes, drawn, kind == "max")
        if kind == "min" and placed and np.allclose(where, placed[0]):
            continue
        placed.append(np.asarray(where))
        unit_ = f" {unit}" if unit else ""
        len_ = f" {length}" if length else ""
        if on == "deformed" and not np.allclose(at, where):
            text = f"{kind} {fmt(value)}{unit_}\nat {fmt_point(at, nodes)}{len_} on the part,\ndrawn at " \
                   f"{fmt_point(where, nodes)}"
        else:
            text = f"{kind} {fmt(value)}{unit_}\nat {fmt_point(at, nodes)}{len_}"
        ring, = ax.plot([where[0]], [where[1]], marker="o" if kind == "max" else "s", ms=7, mfc="none",
                        mec="black", mew=1.6, zorder=5, ls="none")
        ring.set_gid(f"peak-{kind}")
        cross, = ax.plot([where[0]], [where[1]], marker="+" if kind == "max" else "x", ms=10 if kind == "max" else 7,
                         color="black", mew=1.0, zorder=5, ls="none")
        cross.set_gid(f"peak-{kind}-cross")
        # the label on the side away from the middle of the part (into the material beside a hole's edge
        # peak, inside the axes at an outer-edge peak); a minimum's label on the other vertical side
        cx, cy = 0.5 * (x0 + x1), 0.5 * (y0 + y1)
        fx = (where[0] - cx) / max(0.5 * (x1 - x0), 1e-300)
        fy = (where[1] - cy) / max(0.5 * (y1 - y0), 1e-300)
        dx = (1 if fx >= 0 else -1) * (-1 if abs(fx) > 0.6 else 1)
        dy = (1 if fy >= 0 else -1) * (-1 if abs(fy) > 0.6 else 1)
        if kind == "min" and len(placed) == 2 and np.hypot(*(placed[1] - placed[0])) < 0.2 * max(x1 - x0, y1 - y0):
            dy = -dy
        ann = ax.annotate(text, xy=(where[0], where[1]), xytext=(dx * 48, dy * 30), textcoords="offset points",
                          ha="center", va="center", fontsize=8.5, zorder=6,
                          bbox=dict(boxstyle="round,pad=0.3", fc="white", ec="0.3", alpha=0.92),
                          arrowprops=dict(arrowstyle="-", color="0.2", lw=0.9))
        ann.set_gid(f"peak-{kind}-label")


def shape_note(displacement, scale: float, on: str, length: str, distortion: float, fmt) -> str:
    """The line that says which coordinates the picture uses and how much the displacements are magnified."""
    len_ = f" {length}" if length else ""
    if displacement is None or scale <= 0:
        return "undeformed shape: axes, markers and labels in the part's coordinates"
    umax = float(np.max(np.hypot(displacement[:, 0], displacement[:, 1])))
    pct = 100.0 * distortion
    shape = (f"; drawn sides within {pct:.2g} % of their length)" if distortion <= DISTORTION + 1e-12 else
             f")\ndrawn sides distorted by up to {pct:.2g} % of their length: features look out of shape")
    factor = f"displacements x {scale:g} (magnified {scale:g} times; largest {fmt(umax)}{len_}{shape}"
    if on == "undeformed":
        return "contours on the undeformed part (axes, markers, labels in its coordinates); dashed: deformed outline\n" \
               + factor
    return f"contours on the deformed shape (axes, markers where drawn); grey dashed: undeformed outline\n{factor}"


def check_place(on: str) -> str:
    """``on`` as one of :data:`PLACES`, or a planar InputError naming them."""
    from ..core.errors import InputError

    if not isinstance(on, str) or on.strip().lower() not in PLACES:
        raise InputError(f"on= must be one of {PLACES}: 'undeformed' draws the contour on the part as made (axes and "
                         f"labels in its coordinates), 'deformed' on the magnified deformed shape; got {on!r}")
    return on.strip().lower()

