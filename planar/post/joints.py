"""Figures of a fastened joint: the layers' outlines and an arrow at each fastener scaled by its load.

Examples
--------
>>> import planar
>>> m = planar.rectangle_mesh(40.0, 10.0, 8, 2)
>>> a = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
>>> b = planar.Model(planar.rectangle_mesh(40.0, 10.0, 8, 2, origin=(20.0, 0.0)),
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

import os

import numpy as np

from ..core.errors import InputError
from ..core.joints import JointResult
from .plots import _new_figure, save_figure

__all__ = ["plot_joint"]

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


def plot_joint(result: JointResult, *, path: str | os.PathLike | None = None, scale: float | None = None,
               title: str | None = None, width: float = 8.0):
    """The layers' outlines and an arrow at each fastener for each joined pair, scaled by its shear load.

    Parameters
    ----------
    result : JointResult
        One load case of ``planar.solve(joint)``.
    path : str or path, optional
        Also write the figure to this PNG file.
    scale : float, optional
        Length of the arrow of unit load (length per force); default: the largest load drawn a tenth
        of the joint's extent long.
    title : str, optional
    width : float
        Figure width in inches.

    Returns
    -------
    matplotlib.figure.Figure
        The arrows show the force each fastener exerts on the second layer of its pair; the legend
        gives the layers, the largest load and the units.
    """
    if not isinstance(result, JointResult):
        raise InputError(f"plot_joint takes one load case of a solved joint, planar.solve(joint)['case'], got "
                         f"{type(result).__name__}")
    from matplotlib.collections import LineCollection

    us = result.unit_system
    L_u = f" [{us.length}]" if us.stated else ""
    F_u = f" {us.force}" if us.stated else ""
    segs = {name: _boundary(r.mesh) for name, r in result.layers.items()}
    allxy = np.vstack([s.reshape(-1, 2) for s in segs.values()])
    lo, hi = allxy.min(axis=0), allxy.max(axis=0)
    span = max(float((hi - lo).max()), 1e-300)
    fig = _new_figure(max(float((hi - lo)[0]) / max(float((hi - lo)[1]), 1e-300 * span), 0.2), width)
    ax = fig.add_subplot(1, 1, 1)
    for i, (name, s) in enumerate(segs.items()):
        ax.add_collection(LineCollection(s, colors=_COLOURS[i % len(_COLOURS)], linewidths=1.0 + 0.6 * i,
                                         alpha=0.8, label=f"layer {name}"))
    tab = result.fasteners
    P = np.array([p["point"] for p in tab.pairs]).reshape(-1, 2)
    V = tab.shear
    vmax = float(tab.magnitude.max(initial=0.0))
    if scale is None:
        scale = 0.1 * span / vmax if vmax > 0 else 1.0
    pairs = sorted({p["layers"] for p in tab.pairs})
    for k, pr in enumerate(pairs):
        sel = np.array([p["layers"] == pr for p in tab.pairs])
        ax.quiver(P[sel, 0], P[sel, 1], V[sel, 0] * scale, V[sel, 1] * scale, angles="xy", scale_units="xy",
                  scale=1.0, color=("k", "#d62728", "#2ca02c")[k % 3], width=0.004,
                  label=f"load on {pr[1]} from {pr[0]} (largest {float(tab.magnitude[sel].max()):.4g}{F_u})")
    ax.plot(P[:, 0], P[:, 1], "o", ms=3, color="k")
    pad = 0.08 * span
    ax.set_xlim(lo[0] - pad, hi[0] + pad)
    ax.set_ylim(lo[1] - pad, hi[1] + pad)
    ax.set_aspect("equal")
    ax.set_xlabel(f"x{L_u}")
    ax.set_ylabel(f"y{L_u}")
    ax.set_title(title or f"Fastener loads, load case {result.case!r} ({us.label}); arrow of "
                          f"{vmax:.4g}{F_u} = {vmax * scale:.3g}{' ' + us.length if us.stated else ''}")
    ax.legend(loc="best", fontsize="small")
    if path is not None:
        save_figure(fig, path)
    return fig
