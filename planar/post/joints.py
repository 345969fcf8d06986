"""Figures of a fastened joint: the layers' outlines and an arrow at each fastener scaled by its load.

Examples
--------
>>> import planar
>>> m = planar.rectangle_mesh(40.0, 10.0, 40, 10)
>>> a = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
>>> b = planar.Model(planar.rectangle_mesh(40.0, 10.0, 40, 10, origin=(20.0, 0.0)),
...                  planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
>>> _ = a.add_support(planar.Fixed("left"))
>>> _ = b.add_load(planar.Traction("right", tx=50.0), case="pull")
>>> joint = planar.Joint({"skin": a, "strap": b})
>>> _ = joint.add_fasteners(planar.Fasteners([(25.0, 5.0), (35.0, 5.0)], layers=("skin", "strap"),
...                                         diameter=4.0, flexibility=2e-5))
>>> fig = plot_joint(planar.solve(joint)["pull"])
>>> fig.axes[0].get_xlabel()
'x [mm]'
"""
from __future__ import annotations

import math
import os

import numpy as np

from ..core.errors import InputError
from ..core.joints import JointResult
from .plots import save_figure

__all__ = ["plot_joint"]

#: dash patterns of the layers after the first (in line widths: dashed, dash-dot, dotted)
_DASHES = {1: (3.7, 1.6), 2: (6.4, 1.6, 1.0, 1.6), 3: (1.0, 1.65)}

_COLOURS = ("#1f77b4", "#ff7f0e", "#2ca02c", "#9467bd", "#8c564b", "#e377c2", "#7f7f7f", "#17becf")


def _boundary(mesh) -> np.ndarray:
    """The mesh's outline as straight segments between corner nodes (s, 2, 2): sides of one cell only."""
    from ..core.registry import element_type

    sides = []
    for layout, conn in mesh.cells.items():
        et = element_type(layout)
        nv = 3 if et.cell == "triangle" else 4
        c = np.asarray(conn)[:, :nv]
        sides.append(np.stack([c, np.roll(c, -1, axis=1)], axis=2).reshape(-1, 2))
    s = np.vstack(sides)
    key = np.sort(s, axis=1)
    _, inv, cnt = np.unique(key, axis=0, return_inverse=True, return_counts=True)
    once = s[cnt[inv.ravel()] == 1]
    return mesh.nodes[once]


def _seg_distance(a0, a1, b0, b1) -> np.ndarray:
    """The distance between the segments a0-a1 and b0-b1 (each (p, 2)), zero where they cross."""
    def to_seg(p, q0, q1):
        d = q1 - q0
        t = np.clip(np.einsum("ij,ij->i", p - q0, d) / np.maximum(np.einsum("ij,ij->i", d, d), 1e-300), 0.0, 1.0)
        return np.hypot(*(q0 + t[:, None] * d - p).T)

    def side(p, q, r):
        return np.sign((q[:, 0] - p[:, 0]) * (r[:, 1] - p[:, 1]) - (q[:, 1] - p[:, 1]) * (r[:, 0] - p[:, 0]))

    cross = (side(a0, a1, b0) * side(a0, a1, b1) < 0) & (side(b0, b1, a0) * side(b0, b1, a1) < 0)
    dist = np.minimum.reduce([to_seg(a0, b0, b1), to_seg(a1, b0, b1), to_seg(b0, a0, a1), to_seg(b1, a0, a1)])
    return np.where(cross, 0.0, dist)


def _apart(P: np.ndarray, V: np.ndarray, s_max: float, span: float) -> float:
    """The largest arrow scale up to ``s_max`` at which no two arrows (from P along s V) come closer than
    a fifth of their fasteners' distance (an arrow drawn over its neighbour hides which load is whose)."""
    from scipy.spatial import cKDTree

    if P.shape[0] < 2:
        return s_max
    mag = np.hypot(*V.T)
    # two arrows within discs of radius s |V| about their points keep 0.2 of their distance while
    # s (|Vi| + |Vj|) <= 0.8 gap: pairs further apart than 2.5 of the longest arrow never come close
    pairs = cKDTree(P).query_pairs(2.5 * s_max * float(mag.max()) + 1e-9 * span, output_type="ndarray")
    if not pairs.size:
        return s_max
    i, j = pairs[:, 0], pairs[:, 1]
    gap = np.hypot(*(P[i] - P[j]).T)
    both = mag[i] + mag[j]
    keep = (gap > 1e-9 * span) & (both > 0)  # two fasteners at one point: nothing to keep apart
    i, j, gap = i[keep], j[keep], gap[keep]
    safe = 0.8 * gap / both[keep]  # below this scale the pair is clear by the discs alone

    def clear(s):
        k = safe < s
        a, b = i[k], j[k]
        return bool(np.all(_seg_distance(P[a], P[a] + s * V[a], P[b], P[b] + s * V[b]) >= 0.2 * gap[k]))

    if not safe.size or clear(s_max):
        return s_max
    lo, hi = min(float(safe.min()), s_max), s_max  # the arrows only grow with the scale: bisect (to 0.1 %)
    while hi > 1.001 * lo:
        mid = math.sqrt(lo * hi)
        lo, hi = (mid, hi) if clear(mid) else (lo, mid)
    return lo


def _figure(aspect: float, width: float, entries: int = 2):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    # room for the title and the legend below (two columns, about 0.2 in a row)
    h = float(np.clip(0.8 * width / max(aspect, 0.2) + 2.0 + 0.2 * math.ceil(entries / 2), 3.5, 12.0))
    fig = Figure(figsize=(width, h), dpi=120, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def plot_joint(result: JointResult, *, path: str | os.PathLike | None = None, scale: float | None = None,
               title: str | None = None, width: float = 8.0):
    """The layers' outlines and an arrow at each fastener scaled by its bearing load.

    Parameters
    ----------
    result : JointResult
        One load case of ``planar.solve(joint)``.
    path : str or path, optional
        Also write the figure to this PNG file.
    scale : float, optional
        Length of the arrow of unit load (length per force); default: the largest load drawn a tenth
        of the joint's extent long, or shorter so that no two arrows come closer than a fifth of their
        fasteners' distance (in a row loaded along it, the largest arrow 0.8 of the pitch).
    title : str, optional
    width : float
        Figure width in inches.

    Returns
    -------
    matplotlib.figure.Figure
        One arrow per fastener: its largest bearing load on a joined layer (the force it exerts on
        that layer; the middle layer of a double-shear stack, either plate of a single-shear pair),
        coloured as that layer's outline; the legend gives the layers, the largest load and the units.
    """
    if not isinstance(result, JointResult):
        raise InputError(f"plot_joint takes one load case of a solved joint, planar.solve(joint)['case'], got "
                         f"{type(result).__name__}")
    from matplotlib.collections import LineCollection

    from ..core.values import number

    width = number(width, "plot_joint's width (inches)", positive=True)
    if scale is not None:  # a negative scale would turn every arrow round: the loads drawn the wrong way
        scale = number(scale, "plot_joint's scale (arrow length per unit load)", positive=True)
    us = result.unit_system
    L_u = f" [{us.length}]" if us.stated else ""
    F_u = f" {us.force}" if us.stated else ""
    segs = {name: _boundary(r.mesh) for name, r in result.layers.items()}
    allxy = np.vstack([s.reshape(-1, 2) for s in segs.values()])
    lo, hi = allxy.min(axis=0), allxy.max(axis=0)
    span = max(float((hi - lo).max()), 1e-300)
    entries = len(segs) + len({h["layer"] for h in result.fasteners.holes})  # at most: one arrow entry per layer
    fig = _figure(float((hi - lo)[0]) / max(float((hi - lo)[1]), 1e-3 * span), width, entries)
    ax = fig.add_subplot(1, 1, 1)
    from ._outline import Outline, dashed_sides

    for i, (name, s) in enumerate(segs.items()):
        style = dict(colors=_COLOURS[i % len(_COLOURS)], alpha=0.9, label=f"layer {name}")
        if i % 4 == 0:
            ax.add_collection(LineCollection(s, linewidths=1.2, linestyles="solid", **style))
        else:  # the dashes run on along the outline (a side of a refined hole is shorter than a dash)
            m = result.layers[name].mesh
            ax.add_collection(dashed_sides(Outline(m.nodes, m.cells), m.nodes, _DASHES[i % 4], linewidth=1.2,
                                           **style))
    tab = result.fasteners
    colour = {name: _COLOURS[i % len(_COLOURS)] for i, name in enumerate(segs)}
    best: dict = {}
    for h in tab.holes:  # each fastener's largest bearing load: on the middle layer of a double-shear stack
        key = (h["group"], h["index"])
        if key not in best or h["bearing"] > best[key]["bearing"]:
            best[key] = h
    chosen = list(best.values())
    P = np.array([h["point"] for h in chosen]).reshape(-1, 2)
    V = np.array([h["load"] for h in chosen]).reshape(-1, 2)
    mags = np.hypot(*V.T) if V.size else np.zeros(0)
    vmax = float(mags.max(initial=0.0))
    if scale is None:  # the largest arrow a tenth of the joint, and no two arrows touching
        scale = _apart(P, V, 0.1 * span / vmax, span) if vmax > 0 else 1.0
    layers_drawn = np.array([h["layer"] for h in chosen])
    for name in segs:
        sel = layers_drawn == name
        if sel.any():
            ax.quiver(P[sel, 0], P[sel, 1], V[sel, 0] * scale, V[sel, 1] * scale, angles="xy", scale_units="xy",
                      scale=1.0, color=colour[name], edgecolor="k", linewidth=0.5, width=0.005,
                      label=f"bearing load on {name} (largest {float(mags[sel].max()):.4g}{F_u})")
    if P.size:
        ax.plot(P[:, 0], P[:, 1], "o", ms=3, color="k")
    pad = 0.08 * span
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(lo[1] - pad, hi[1] + pad)
    ax.set_aspect("equal")
    ax.set_xlabel(f"x{L_u}")
    ax.set_ylabel(f"y{L_u}")
    ax.set_title(title or f"Fastener bearing loads, load case {result.case!r} ({us.label})\narrow of "
                          f"{vmax:.4g}{F_u} drawn {vmax * scale:.3g}{' ' + us.length if us.stated else ''} long",
                 fontsize="medium")
    # below the axes and the x label, in the figure (a legend anchored to a short axes overlapped the label)
    fig.legend(*ax.get_legend_handles_labels(), loc="outside lower center", ncols=2, fontsize="small", frameon=False)
    if path is not None:
        save_figure(fig, path)
    return fig
