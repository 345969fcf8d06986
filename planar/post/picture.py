"""A picture of the model: outline, named edges, supports, pins, fasteners and loads as symbols.

:func:`plot_model` draws what the solver is given, before any result, so a checker can see how the
part is held and loaded. Every symbol is a matplotlib artist tagged with ``set_gid``:
``"outline"``, ``"edge-name:NAME"``, ``"support:KIND:WHERE"`` (``fixed``, ``roller``,
``roller-ground``, ``symmetry``, ``prescribed``), ``"pin:NAME"``, ``"pin-tie:NAME"``,
``"fastener"``, ``"load:KIND:WHERE"`` (``traction``, ``pressure``, ``point-force``, ``pin-load``,
``body-force``, ``gravity``, ``temperature-change``, or a plugin's name), ``"load-value:KIND:WHERE"``
(the magnitude written beside it), ``"units"`` (the units line) and ``"notes"``; a joint's layers add
``":LAYER"`` to ``"outline"`` and ``"part"`` and are named by ``"layer-name:LAYER"``. So a test or a
report can read which symbols are drawn. The symbols:

* fixed edge or point: short hatching strokes on the outside of the edge;
* roller: small open circles beside the edge and a ground line along the sliding direction;
* symmetry line: a dash-dot line along the edge with small double ticks across it;
* prescribed displacement: an arrow along the prescribed motion with a bar at its tail;
* pin: an open circle with a cross at its reference point, and the tie drawn as spokes to its edge
  (solid for a rigid tie, dashed for a spreading tie);
* fastener: a filled dot;
* traction and pressure: arrows along the edge, their lengths in proportion to the magnitude;
* point force and pin load: a large arrow;
* body force and gravity: an arrow with "g" (or "b") in a corner of the picture;
* temperature change: a note in the picture.

Units come from the model's unit system (:mod:`planar.core.units`).
"""
from __future__ import annotations

import math
import os
from typing import Any, Iterable, Sequence

import numpy as np

from ..core.errors import InputError, unknown_name
from ..core.units import unit_system
from ..core.values import finite_vector
from ._outline import Outline

__all__ = ["plot_model", "SYMBOLS"]

#: the symbol kinds and their legend text
#: tints of named regions in the model picture
_REGION_COLOURS = ("#d9a441", "#6aa7c9", "#8fbf6a", "#c98fbf", "#c9a27a")

SYMBOLS = {
    "fixed": "fixed (both displacements held)",
    "roller": "roller (held normal, slides along the line)",
    "symmetry": "symmetry line (normal displacement held)",
    "prescribed": "prescribed displacement",
    "pin": "pin (reference point, tie to its edge)",
    "fastener": "fastener",
    "traction": "traction",
    "pressure": "pressure",
    "point-force": "point force",
    "pin-load": "pin load",
    "body-force": "body force",
    "gravity": "gravity",
    "temperature-change": "temperature change",
}

_INK = "#1b1b1b"
_SUPPORT = "#2f4f6f"
_LOAD = "#b3261e"
_PIN = "#6a3d9a"


def _num(v: float) -> str:
    """Four figures, without an exponent for the sizes a drawing labels (15000 N, not 1.5e+04 N)."""
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    out = f"{v:.4g}"
    if "e" in out and 1e-3 <= abs(v) < 1e9:
        out = format(v, ".0f") if abs(v) >= 1e4 else format(v, ".6f").rstrip("0").rstrip(".")
    return out


def _with(v: float, unit: str) -> str:
    return f"{_num(v)} {unit}".rstrip()


def _bounds(models) -> tuple[np.ndarray, np.ndarray]:
    """The box (lower, upper corners) of the nodes used by the models' cells."""
    xy = []
    for m in models:
        used = m.mesh.used_nodes()
        xy.append(m.mesh.nodes[used] if used.any() else m.mesh.nodes)
    xy = np.vstack(xy)
    return xy.min(axis=0), xy.max(axis=0)


class _Scene:
    """What every symbol needs: the axes, the outline, sizes and the legend entries collected."""

    def __init__(self, model, ax, *, bounds=None, legend=None, notes=None, layer: str | None = None):
        self.model, self.mesh, self.ax, self.layer = model, model.mesh, ax, layer
        self.lo, self.hi = bounds if bounds is not None else _bounds([model])
        self.size = float(max(np.max(self.hi - self.lo), 1e-300))
        self.units = unit_system(getattr(model, "unit_system", None) or getattr(model, "units", None))
        self.outline = Outline(model.mesh.nodes, model.mesh.cells)
        self.legend: dict[str, Any] = {} if legend is None else legend
        self.layer_index = 0
        self.notes: list[str] = [] if notes is None else notes

    def unit(self, quantity: str) -> str:
        return self.units.unit_of(quantity)

    def edge_points(self, name: str, spacing: float | None = None):
        """Points spread along a named edge (about ``spacing`` apart) with the outward normal at each."""
        seg = self.mesh.edge(name)
        a, b = self.mesh.nodes[seg[:, 0]], self.mesh.nodes[seg[:, 1]]
        mid = 0.5 * (a + b)
        # outward normals of the edge's sides, from the outline (the sides used by one cell)
        key = np.sort(seg[:, :2], axis=1)
        ok = self.outline.corners
        normal = np.zeros_like(mid)
        if len(self.outline):
            big = int(max(self.mesh.n_nodes, 1))
            code_o = ok[:, 0].astype(np.int64) * big + ok[:, 1]
            order = np.argsort(code_o)
            code = key[:, 0].astype(np.int64) * big + key[:, 1]
            pos = np.clip(np.searchsorted(code_o[order], code), 0, len(order) - 1)
            hit = code_o[order][pos] == code
            normal[hit] = self.outline.normal[order[pos[hit]]]
            miss = ~hit
        else:
            miss = np.ones(mid.shape[0], bool)
        if miss.any():  # an inner edge: the normal turned from the side, pointing away from the part's centre
            t = b[miss] - a[miss]
            n = np.stack([t[:, 1], -t[:, 0]], axis=1) / np.maximum(np.hypot(t[:, 0], t[:, 1]), 1e-300)[:, None]
            c = 0.5 * (self.lo + self.hi)
            n[np.einsum("ij,ij->i", n, mid[miss] - c) < 0] *= -1
            normal[miss] = n
        # evenly spaced by arc length along the sides in their stored order (a chain for a meshed edge)
        length = np.hypot(*(b - a).T)
        total = float(length.sum())
        h = spacing or self.size / 18.0
        n = max(1, int(round(total / h)))
        at = (np.arange(n) + 0.5) * total / n
        ends = np.cumsum(length)
        k = np.clip(np.searchsorted(ends, at), 0, len(length) - 1)
        frac = np.clip((at - (ends[k] - length[k])) / np.maximum(length[k], 1e-300), 0.0, 1.0)
        pts = a[k] + (b[k] - a[k]) * frac[:, None]
        return pts, normal[k], (a, b)

    def add_legend(self, kind: str, handle, text: str | None = None) -> None:
        if kind not in self.legend:
            handle.set_label(text or SYMBOLS.get(kind, kind))
            self.legend[kind] = handle


# ------------------------------------------------------------------------------------------- the drawing
def _draw_outline(sc: _Scene) -> None:
    from matplotlib.collections import LineCollection, PolyCollection

    from ._subdivide import subdivide

    from ._outline import outline_path

    suffix = f":{sc.layer}" if sc.layer else ""
    # one filled path of the outline, holes open: a translucent layer's cells would show their seams, and
    # an opaque part drawn cell by cell costs a polygon per drawn triangle (seconds on a fine mesh)
    path = outline_path(sc.outline, sc.mesh.nodes)
    if path is not None:
        from matplotlib.patches import PathPatch

        fill = PathPatch(path, facecolor="#c9d3dd" if sc.layer else "#eceff2", edgecolor="none",
                         alpha=0.45 if sc.layer else 1.0, zorder=0)
    else:
        pts, tris, _, _ = subdivide(sc.mesh.nodes, {k: v for k, v in sc.mesh.cells.items() if np.asarray(v).size},
                                    subdivisions=2)
        fill = PolyCollection(pts[tris], facecolors="#eceff2" if not sc.layer else "#c9d3dd", edgecolors="none",
                              zorder=0, alpha=1.0 if not sc.layer else 0.45, antialiaseds=False)
    fill.set_gid("part" + suffix)
    if path is not None:
        sc.ax.add_patch(fill)
    else:
        sc.ax.add_collection(fill)
    if sc.layer and sc.layer_index % 2:  # dashed, the pattern running on along the outline (and round its holes)
        from ._outline import dashed_sides

        lines = dashed_sides(sc.outline, sc.mesh.nodes, (6, 2), linewidth=1.1, colors=_INK, zorder=2)
    else:
        lines = LineCollection(sc.outline.polylines(sc.mesh.nodes), colors=_INK, linewidths=1.1, zorder=2,
                               linestyles="solid")
    lines.set_gid("outline" + suffix)
    sc.ax.add_collection(lines)


def _draw_regions(sc: _Scene) -> None:
    """Each named region tinted and outlined, with its material and thickness in the legend."""
    from matplotlib.collections import LineCollection, PolyCollection
    from matplotlib.colors import to_rgb
    from matplotlib.patches import Patch

    from ._outline import Outline
    from ._subdivide import subdivide
    from .inputs import describe_material

    for i, (name, blocks) in enumerate(sorted(getattr(sc.mesh, "regions", {}).items())):
        cells = {k: np.asarray(sc.mesh.cells[k])[np.asarray(v, np.int64)] for k, v in blocks.items()
                 if np.asarray(v).size}
        if not cells:
            continue
        colour = _REGION_COLOURS[i % len(_REGION_COLOURS)]
        pts, tris, _, _ = subdivide(sc.mesh.nodes, cells, subdivisions=2)
        tint = 0.35 * np.asarray(to_rgb(colour)) + 0.65 * np.asarray(to_rgb("#eceff2"))  # opaque: no seams
        fill = PolyCollection(pts[tris], facecolors=[tint], edgecolors="none", zorder=0.5, antialiaseds=False)
        fill.set_gid(f"region:{name}")
        sc.ax.add_collection(fill)
        rim = LineCollection(Outline(sc.mesh.nodes, cells).polylines(sc.mesh.nodes), colors=colour, linewidths=0.9,
                             zorder=1.5)
        rim.set_gid(f"region-outline:{name}")
        sc.ax.add_collection(rim)
        sec = sc.model.section(name)
        sc.add_legend(f"region:{name}", Patch(facecolor=tint, edgecolor=colour),
                      f"region '{name}': thickness {_with(float(sec.thickness), sc.unit('length'))}; "
                      f"{describe_material(sec.material, sc.units)}")


def _draw_edge_names(sc: _Scene) -> None:
    for name in sorted(sc.mesh.edge_sets):
        pts, nrm, _ = sc.edge_points(name, spacing=sc.size / 4.0)
        if pts.shape[0] == 0:
            continue
        k = pts.shape[0] // 2
        p = pts[k] - nrm[k] * 0.04 * sc.size        # just inside the part, clear of the symbols outside
        t = sc.ax.text(p[0], p[1], name, fontsize=7.5, color="0.25", ha="center", va="center", style="italic",
                       zorder=7, bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.75))
        t.set_gid(f"edge-name:{name}")
    for name in sorted(set(sc.mesh.node_sets) - set(sc.mesh.edge_sets)):
        ids = np.asarray(sc.mesh.node_sets[name])
        if ids.size != 1:
            continue
        p = sc.mesh.nodes[int(ids[0])]
        t = sc.ax.annotate(name, xy=(p[0], p[1]), xytext=(5, 5), textcoords="offset points", fontsize=7.5,
                           color="0.25", style="italic", zorder=7)
        t.set_gid(f"point-name:{name}")


def _where_points(sc: _Scene, where):
    """(points, outward normals) of a support's place: an edge's spread points, or one node."""
    if isinstance(where, str) and where in sc.mesh.edge_sets:
        pts, nrm, _ = sc.edge_points(where)
        return pts, nrm
    if isinstance(where, str):
        ids = sc.mesh.nodes_of(where)
        p = sc.mesh.nodes[np.asarray(ids)]
    else:
        p = np.asarray(where, float).reshape(1, 2)
    c = 0.5 * (sc.lo + sc.hi)
    n = p - c
    n /= np.maximum(np.hypot(n[:, 0], n[:, 1]), 1e-300)[:, None]
    return p, n


def _draw_supports(sc: _Scene) -> None:
    from matplotlib.collections import LineCollection
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch

    from ..core.supports import Fixed, Prescribed, Roller, Symmetry, _direction, _edge_normal

    ax, L = sc.ax, sc.size
    for s in getattr(sc.model, "supports", []):
        where = s.where
        tag = where if isinstance(where, str) else f"({_num(where[0])}, {_num(where[1])})"
        pts, nrm = _where_points(sc, where)
        if isinstance(s, Symmetry):
            seg = sc.mesh.edge(where)
            a, b = sc.mesh.nodes[seg[:, 0]], sc.mesh.nodes[seg[:, 1]]
            lc = LineCollection(np.stack([a, b], axis=1), colors="#2a7f62", linewidths=1.6, linestyles="dashdot",
                                zorder=3)
            lc.set_gid(f"support:symmetry:{tag}")
            ax.add_collection(lc)
            t = np.stack([-nrm[:, 1], nrm[:, 0]], axis=1)
            h = 0.012 * L
            ticks = np.concatenate([np.stack([p0 + nrm * h - t * 0.3 * h, p0 - nrm * h - t * 0.3 * h], 1)
                                    for p0 in (pts - t * 0.4 * h, pts + t * 0.4 * h)])
            tk = LineCollection(ticks, colors="#2a7f62", linewidths=1.0, zorder=3)
            tk.set_gid(f"support:symmetry-ticks:{tag}")
            ax.add_collection(tk)
            sc.add_legend("symmetry", Line2D([], [], color="#2a7f62", ls="-.", lw=1.6))
        elif isinstance(s, Roller):
            if isinstance(s.fixed, str) and s.fixed.lower() == "normal":
                d = _edge_normal(sc.mesh, where, "roller")
            else:
                d = _direction(s.fixed)
            side = np.sign(np.einsum("ij,j->i", nrm, d))
            side[side == 0] = 1.0
            off = d[None, :] * side[:, None]            # the held direction, pointing out of the part
            r = 0.011 * L
            centres = pts + off * r * 1.15
            ln, = ax.plot(centres[:, 0], centres[:, 1], ls="none", marker="o", ms=5.5, mfc="white", mec=_SUPPORT,
                          mew=1.2, zorder=4)
            ln.set_gid(f"support:roller:{tag}")
            slide = np.array([-d[1], d[0]])
            base = pts + off * r * 2.4
            g = LineCollection(np.stack([base - slide * 1.6 * r, base + slide * 1.6 * r], axis=1), colors=_SUPPORT,
                               linewidths=1.4, zorder=4)
            g.set_gid(f"support:roller-ground:{tag}")
            ax.add_collection(g)
            sc.add_legend("roller", Line2D([], [], ls="-", marker="o", ms=5.5, mfc="white", mec=_SUPPORT,
                                           color=_SUPPORT, lw=1.4))
        elif isinstance(s, Fixed):
            h = 0.022 * L
            t = np.stack([-nrm[:, 1], nrm[:, 0]], axis=1)
            starts = np.concatenate([pts + t * k * h * 0.5 for k in (-1, 0, 1)])
            ns = np.concatenate([nrm] * 3)
            ts = np.concatenate([t] * 3)
            strokes = np.stack([starts, starts + ns * h + ts * 0.6 * h], axis=1)
            if isinstance(where, str) and where in sc.mesh.edge_sets:
                seg = sc.mesh.edge(where)
                edge = np.stack([sc.mesh.nodes[seg[:, 0]], sc.mesh.nodes[seg[:, 1]]], axis=1)
                strokes = np.concatenate([strokes, edge])
            lc = LineCollection(strokes, colors=_SUPPORT, linewidths=1.2, zorder=3)
            lc.set_gid(f"support:fixed:{tag}")
            ax.add_collection(lc)
            sc.add_legend("fixed", Patch(facecolor="white", edgecolor=_SUPPORT, hatch="////", lw=1.0))
        elif isinstance(s, Prescribed):
            vals = []
            for comp, e in (("ux", (1.0, 0.0)), ("uy", (0.0, 1.0))):
                v = getattr(s, comp)
                if v is None:
                    continue
                sign = 1.0 if callable(v) or float(v) >= 0 else -1.0
                vals.append((comp, v, np.array(e) * sign))
            for comp, v, e in vals:
                p0, n0 = pts[len(pts) // 2], nrm[len(pts) // 2]
                en = float(e @ n0)
                # outside the part, the label beyond the arrow: an arrow drawn into the part hid under its label
                if en > 0.5:     # moved outwards: from the edge out
                    tail, head = p0, p0 + e * 0.09 * L
                elif en < -0.5:  # moved inwards: from outside onto the edge
                    tail, head = p0 - e * 0.09 * L, p0
                else:            # along the edge: beside it, outside
                    tail, head = p0 + n0 * 0.04 * L - e * 0.045 * L, p0 + n0 * 0.04 * L + e * 0.045 * L
                ann = ax.annotate("", xy=(head[0], head[1]), xytext=(tail[0], tail[1]), zorder=6,
                                  arrowprops=dict(arrowstyle="]->,widthA=0.6,lengthA=0", color="#8a5a00", lw=1.6))
                ann.set_gid(f"support:prescribed:{tag}")
                txt = f"{comp} = {'f(x, y)' if callable(v) else _with(float(v), sc.unit('length'))}"
                far = head if float(head @ n0) >= float(tail @ n0) else tail
                up = n0 * 0.015 * L  # the text starts beyond the arrow, on the side the edge faces
                tt = ax.text(far[0] + up[0], far[1] + up[1], txt, fontsize=7.5, color="#8a5a00",
                             ha="left" if n0[0] > 0.5 else "right" if n0[0] < -0.5 else "center",
                             va="bottom" if n0[1] > 0.5 else "top" if n0[1] < -0.5 else "center", zorder=7,
                             bbox=dict(boxstyle="round,pad=0.1", fc="white", ec="none", alpha=0.8))
                tt.set_gid(f"support:prescribed-value:{tag}")
            sc.add_legend("prescribed", Line2D([], [], color="#8a5a00", lw=1.6, marker="|", ms=9))
        else:  # a support of a kind this picture does not know: its place, named
            ln, = ax.plot(pts[:, 0], pts[:, 1], ls="none", marker="D", ms=5, color=_SUPPORT, zorder=4)
            ln.set_gid(f"support:{type(s).__name__.lower()}:{tag}")
            sc.add_legend(type(s).__name__, Line2D([], [], ls="none", marker="D", color=_SUPPORT),
                          f"support ({type(s).__name__})")


def _draw_pins(sc: _Scene) -> None:
    from matplotlib.collections import LineCollection
    from matplotlib.lines import Line2D

    ax = sc.ax
    pins = list(getattr(sc.model, "pins", []))

    def what(pin) -> str:
        held = {None: "free", "both": "held", "x": "held in x", "y": "held in y"}.get(
            pin.hold if isinstance(pin.hold, (str, type(None))) else "", "held along a direction")
        return f"{pin.tie} tie, {held}, rotation {pin.rotation}"

    kinds = sorted({what(p) for p in pins})
    short = len(pins) > 1 and len(kinds) <= 3  # several pins close together: names beside them, kinds in the legend
    for pin in pins:
        c = np.asarray(pin.point(sc.mesh), float)
        ids = np.unique(sc.mesh.edge(pin.edge)[:, :2])
        ends = sc.mesh.nodes[ids]
        keep = ends[:: max(1, ids.size // 16)]
        spokes = LineCollection(np.stack([np.broadcast_to(c, keep.shape), keep], axis=1), colors=_PIN,
                                linewidths=0.7, linestyles="solid" if pin.tie == "rigid" else "dashed", alpha=0.8,
                                zorder=4)
        spokes.set_gid(f"pin-tie:{pin.name}")
        ax.add_collection(spokes)
        ring, = ax.plot([c[0]], [c[1]], ls="none", marker="o", ms=13, mfc="white", mec=_PIN, mew=1.6, zorder=5)
        ring.set_gid(f"pin:{pin.name}")
        cross, = ax.plot([c[0]], [c[1]], ls="none", marker="x", ms=8, mec=_PIN, mew=1.6, zorder=6)
        cross.set_gid(f"pin-cross:{pin.name}")
        reach = float(np.max(np.hypot(*(ends - c).T))) if ends.size else 0.0
        spot = np.clip(c + np.array([reach + 0.015 * sc.size, -reach]), sc.lo, sc.hi - [0.2 * sc.size, 0.0])
        t = ax.text(spot[0], spot[1], f"pin {pin.name}" + ("" if short else f"\n{what(pin)}"), fontsize=7,
                    color=_PIN, zorder=7, ha="left", va="top",
                    bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.8))
        t.set_gid(f"pin-label:{pin.name}")
        sc.add_legend("pin", Line2D([], [], ls="none", marker="$\\bigotimes$", ms=11, color=_PIN),
                      SYMBOLS["pin"] + (f"; pins: {'; '.join(kinds)}" if short else ""))


def _fastener_points(model, given) -> np.ndarray:
    pts: list = []
    sources = [given] if given is not None else []
    sources.append(getattr(model, "fasteners", None))
    for src in sources:
        for f in (src or []):
            if callable(getattr(f, "points", None)):   # a group of fasteners of a joint
                pts.extend(np.asarray(f.points(model), dtype=float).reshape(-1, 2))
                continue
            p = f
            for attr in ("at", "point", "xy", "centre"):
                if hasattr(f, attr):
                    p = getattr(f, attr)
                    break
            xy = finite_vector(p)
            if xy is None:
                raise InputError(f"a fastener is drawn at a point (x, y) of finite numbers, got {f!r}")
            pts.append(xy)
    return np.array(pts).reshape(-1, 2)


def _draw_fasteners(sc: _Scene, given, owner) -> None:
    from matplotlib.lines import Line2D

    pts = _fastener_points(owner, given)
    if pts.size:
        ln, = sc.ax.plot(pts[:, 0], pts[:, 1], ls="none", marker="o", ms=6, color=_INK, zorder=6)
        ln.set_gid("fastener")
        sc.add_legend("fastener", Line2D([], [], ls="none", marker="o", ms=6, color=_INK),
                      f"fastener ({pts.shape[0]})")


_CASE_COLOURS = ("#b3261e", "#1f5f8b", "#5a7d2a", "#8a5a00", "#6a3d9a", "#00838f")


def _cases(model, case) -> list[str]:
    names = list(getattr(model, "cases", {}))
    if case is None:
        return names
    wanted = [case] if isinstance(case, str) else list(case)
    for c in wanted:
        if c not in names:
            raise unknown_name("load case", c, names)
    return wanted


def _draw_loads(sc: _Scene, cases: Sequence[str]) -> None:
    from matplotlib.lines import Line2D

    from ..core.loads import BodyForce, Gravity, PointForce, Pressure, TemperatureChange, Traction
    from ..core.pins import PinLoad

    ax, L = sc.ax, sc.size
    stress, force = sc.unit("stress"), sc.unit("force")
    several = len(cases) > 1
    # distributed loads first: their arrows share one scale (the largest magnitude drawn 9 % of the part)
    distributed = []
    for ci, case in enumerate(cases):
        for load in sc.model.cases.get(case, []):
            if isinstance(load, (Traction, Pressure)) and load.where in sc.mesh.edge_sets:
                pts, nrm, _ = sc.edge_points(load.where)
                if isinstance(load, Traction):
                    vec = np.asarray(load.traction(pts, nrm), float)
                else:
                    from ..core.loads import _evaluate

                    vec = -_evaluate("pressure", load.p, pts)[:, None] * nrm
                distributed.append((ci, case, load, pts, nrm, vec))
    big = max((float(np.max(np.hypot(v[:, 0], v[:, 1]))) for *_, v in distributed if v.size), default=0.0)
    corner = 0
    labels_on: dict = {}  # labels already on an edge: a later one moves along the edge, clear of them
    for ci, case, load, pts, nrm, vec in distributed:
        colour = _CASE_COLOURS[ci % len(_CASE_COLOURS)]
        mag = np.hypot(vec[:, 0], vec[:, 1])
        if big <= 0 or not np.any(mag > 0):
            continue
        d = vec / big * 0.09 * L
        inward = np.einsum("ij,ij->i", vec, nrm) < 0         # compression: the head on the edge
        tail = np.where(inward[:, None], pts - d, pts)
        q = ax.quiver(tail[:, 0], tail[:, 1], d[:, 0], d[:, 1], angles="xy", scale_units="xy", scale=1.0,
                      color=colour, width=0.004, headwidth=3.5, headlength=4.5, zorder=6)
        kind = load.name
        q.set_gid(f"load:{kind}:{load.where}")
        k = int(np.argmax(mag)) if np.ptp(mag) > 1e-9 * mag.max() else len(mag) // 2
        value = "f(x, y), largest " if any(callable(getattr(load, a, None)) for a in ("tx", "ty", "normal",
                                                                                     "tangential", "p")) else ""
        if isinstance(load, Pressure):
            text = f"p = {value}{_with(float(load.p) if not callable(load.p) else float(mag[k]), stress)}"
        else:
            text = f"{value}{_with(float(mag[k]), stress)}"
        if float(np.hypot(*d[k])) < 0.02 * L:  # drawn in proportion too short to see: say its direction
            u = vec[k] / mag[k]
            text += " along " + ("+x" if u[0] > 0.9999 else "-x" if u[0] < -0.9999 else "+y" if u[1] > 0.9999 else
                                 "-y" if u[1] < -0.9999 else f"({u[0]:.3g}, {u[1]:.3g})") + " (too short to draw)"
        far = tail[k] + d[k] * (0.0 if inward[k] else 1.0) + nrm[k] * 0.05 * L
        n_before = labels_on.get(load.where, 0)
        labels_on[load.where] = n_before + 1
        if n_before:  # between two arrows, half a spacing on for each label before it
            gap = float(np.hypot(*(pts[min(k + 1, len(pts) - 1)] - pts[max(k - 1, 0)]))) / 2 if len(pts) > 1 else 0.0
            far = far + np.array([-nrm[k][1], nrm[k][0]]) * (gap or 0.06 * L) * (n_before - 0.5)
        t = ax.text(far[0], far[1], (f"{case}: " if several else "") + text, fontsize=7.5, color=colour,
                    ha="center", va="center", zorder=7,
                    bbox=dict(boxstyle="round,pad=0.12", fc="white", ec="none", alpha=0.8))
        t.set_gid(f"load-value:{kind}:{load.where}")
        sc.add_legend(kind, Line2D([], [], color=colour, lw=1.4, marker=">", ms=5),
                      f"{SYMBOLS[kind]} (arrow length in proportion)")
    for ci, case in enumerate(cases):
        colour = _CASE_COLOURS[ci % len(_CASE_COLOURS)]
        prefix = f"{case}: " if several else ""
        for load in sc.model.cases.get(case, []):
            if isinstance(load, (Traction, Pressure)):
                if load.where not in sc.mesh.edge_sets:
                    sc.notes.append(f"{prefix}{load.name} on {load.where!r}, not an edge of the mesh")
                continue
            if isinstance(load, (PointForce, PinLoad)):
                if isinstance(load, PinLoad):
                    pins = {p.name: p for p in getattr(sc.model, "pins", [])}
                    if load.pin not in pins:
                        raise unknown_name("pin", load.pin, pins)
                    p0, where = pins[load.pin].point(sc.mesh), load.pin
                elif isinstance(load.where, str):
                    p0, where = sc.mesh.nodes[int(np.asarray(sc.mesh.nodes_of(load.where)).ravel()[0])], load.where
                else:
                    p0 = np.asarray(load.where, float)
                    where = f"({_num(p0[0])}, {_num(p0[1])})"
                f = np.array([float(load.fx), float(load.fy)])
                fm = float(np.hypot(*f))
                if fm > 0:
                    tail = p0 - f / fm * 0.16 * L
                    ann = ax.annotate("", xy=(p0[0], p0[1]), xytext=(tail[0], tail[1]), zorder=7,
                                      arrowprops=dict(arrowstyle="-|>,head_length=0.8,head_width=0.45", color=colour,
                                                      lw=2.6, shrinkA=0, shrinkB=0))
                    ann.set_gid(f"load:{load.name}:{where}")
                    t = ax.text(tail[0], tail[1], f"{prefix}{_with(fm, force)}", fontsize=8, color=colour,
                                ha="center", va="center", zorder=7,
                                bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.85))
                    t.set_gid(f"load-value:{load.name}:{where}")
                    sc.add_legend(load.name, Line2D([], [], color=colour, lw=2.6, marker=">", ms=8))
                m = float(getattr(load, "moment", 0.0) or 0.0)
                if m:
                    t = ax.annotate(f"{prefix}M = {_with(m, sc.unit('moment'))} (counter-clockwise +)",
                                    xy=(p0[0], p0[1]), xytext=(10, 12), textcoords="offset points", fontsize=7.5,
                                    color=colour, zorder=7)
                    t.set_gid(f"load:moment:{where}")
                continue
            if isinstance(load, (Gravity, BodyForce)):
                if isinstance(load, Gravity):
                    d = load.direction or (load.gx, load.gy)
                    letter, what = "g", ("gravity, standard g" if load.direction else
                                         f"gravity {_with(float(np.hypot(load.gx, load.gy)), sc.unit('acceleration'))}")
                else:
                    fv = ("" if not sc.units.stated else f"{sc.unit('force')}/{sc.unit('length')}^3")
                    from ..core.loads import _evaluate

                    xy = sc.mesh.nodes[sc.mesh.used_nodes()]   # a function drawn by its mean over the nodes
                    d = (float(np.mean(_evaluate("bx", load.bx, xy))), float(np.mean(_evaluate("by", load.by, xy))))
                    letter = "b"
                    what = "body force " + ("f(x, y)" if callable(load.bx) or callable(load.by) else
                                            _with(float(np.hypot(*d)), fv))
                d = np.asarray(d, float)
                dn = d / max(float(np.hypot(*d)), 1e-300)
                x0, y0 = 0.94 - 0.1 * corner, 0.9
                ann = ax.annotate("", xy=(x0 + 0.045 * dn[0], y0 + 0.045 * dn[1] * 1.0),
                                  xytext=(x0 - 0.045 * dn[0], y0 - 0.045 * dn[1]), xycoords="axes fraction",
                                  textcoords="axes fraction", zorder=7,
                                  arrowprops=dict(arrowstyle="-|>", color=colour, lw=2.0))
                ann.set_gid(f"load:{load.name}:{getattr(load, 'region', None) or 'all'}")
                t = ax.text(x0 + 0.03, y0 + 0.03, letter, transform=ax.transAxes, fontsize=11, style="italic",
                            color=colour, zorder=7)
                t.set_gid(f"load-letter:{load.name}")
                corner += 1
                sc.add_legend(load.name, Line2D([], [], color=colour, lw=2.0, marker=">", ms=6),
                              f"{prefix}{what}")
                continue
            if isinstance(load, TemperatureChange):
                dT = load.dT
                val = ("per node, " + f"{_num(float(np.min(dT)))} to {_num(float(np.max(dT)))}"
                       if isinstance(dT, np.ndarray) else "f(x, y)" if callable(dT) else _num(float(dT)))
                sc.notes.append(f"{prefix}temperature change dT = {val} "
                                f"({'region ' + repr(load.region) if load.region else 'whole part'})")
                sc.add_legend(load.name, Line2D([], [], ls="none", marker="$\\Delta T$", ms=14, color=colour))
                continue
            sc.notes.append(f"{prefix}{load.describe()}")


def plot_model(model, path: str | os.PathLike | None = None, *, case: str | Sequence[str] | None = None, ax=None,
               fasteners: Iterable | None = None, title: str | None = None, names: bool = True):
    """A picture of the model: outline, named edges, supports, pins, fasteners and loads as symbols.

    Parameters
    ----------
    model : Model or Joint
        A model, or a fastened joint (:class:`planar.Joint`): its layers drawn over one another, each
        with its supports and loads, and its fasteners as dots.
    path : path, optional
        Also write the picture as PNG (atomically).
    case : str or sequence of str, optional
        The load cases whose loads are drawn (default every case, one colour per case).
    ax : matplotlib Axes, optional
        Draw into these axes; otherwise a new Agg figure is made.
    fasteners : iterable of (x, y), optional
        Fastener positions drawn as dots (added to a joint's own fasteners).
    title : str, optional
        Default: "Model: supports and loads" and the cases drawn.
    names : bool
        Write the names of the edges and points.

    Returns
    -------
    matplotlib.figure.Figure
        Every symbol's artist carries a gid (see the module's description).

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q4")
    >>> model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=40.0), case="pull")
    >>> fig = plot_model(model)
    >>> sorted(a.get_gid() for a in fig.axes[0].get_children() if str(a.get_gid()).startswith(("support", "load:")))
    ['load:traction:right', 'support:fixed:left']
    """
    from .plots import figure_and_axes, save_figure

    layers = getattr(model, "layers", None)
    if isinstance(layers, dict) and layers and hasattr(model, "fasteners"):   # a fastened joint: its layers
        models = [(str(k), m) for k, m in layers.items()]
    elif hasattr(model, "mesh") and hasattr(model, "supports"):
        models = [(None, model)]
    else:
        raise InputError(f"plot_model draws a planar Model or a Joint of layers, got {type(model).__name__}")
    cases = _cases(model, case)
    lo, hi = _bounds([m for _, m in models])
    aspect = float((hi[0] - lo[0]) / max(hi[1] - lo[1], 1e-12 * max(hi[0] - lo[0], 1.0)))
    own = ax is None
    fig, ax = figure_and_axes(ax, aspect)
    legend: dict[str, Any] = {}
    notes: list[str] = []
    named_at: dict = {}
    for i, (layer, m) in enumerate(models):
        sc = _Scene(m, ax, bounds=(lo, hi), legend=legend, notes=notes, layer=layer)
        sc.layer_index = i
        _draw_outline(sc)
        if layer is None:
            _draw_regions(sc)
        if names and layer is None:
            _draw_edge_names(sc)
        elif names:  # the layers overlap: each is named at the top left of its own extent
            a, b = _bounds([m])
            key = (round(float(a[0]), 9), round(float(b[1]), 9))
            above = named_at.get(key, 0)  # layers of one extent (the straps of a double shear) one above the other
            named_at[key] = above + 1
            t = ax.annotate(f" layer {layer}", xy=(a[0], b[1]), xytext=(0, 10 * above), textcoords="offset points",
                            fontsize=8, color=_INK, ha="left", va="bottom", zorder=7, style="italic")
            t.set_gid(f"layer-name:{layer}")
        _draw_supports(sc)
        _draw_pins(sc)
        _draw_loads(sc, [c for c in cases if c in m.cases])
    _draw_fasteners(sc, fasteners, model)
    length = sc.unit("length")
    pad = 0.14 * sc.size
    ax.set_xlim(sc.lo[0] - pad, sc.hi[0] + pad)
    ax.set_ylim(sc.lo[1] - pad, sc.hi[1] + pad)
    ax.set_aspect("equal")
    ax.set_xlabel(f"x [{length}]" if length else "x")
    ax.set_ylabel(f"y [{length}]" if length else "y")
    for s in ("top", "right"):
        ax.spines[s].set_visible(False)
    lines = [f"units: {sc.units.label}" if sc.units.stated else "units not stated (consistent)"]
    if cases:
        lines.append("loads of " + ", ".join(f"'{c}'" for c in cases))
    lines += sc.notes
    if sc.notes:
        t = ax.text(0.01, 0.01, "\n".join(sc.notes), transform=ax.transAxes, fontsize=7.5, color="0.2",
                    ha="left", va="bottom", zorder=8, bbox=dict(boxstyle="round,pad=0.3", fc="white", ec="0.6"))
        t.set_gid("notes")
    heading = title or "Model: supports and loads"
    if own:  # the heading above the figure, the units and cases under it (both kept in the layout)
        fig.suptitle(heading, fontsize=11, x=0.02, ha="left")
        info = ax.set_title("\n".join(lines[:2]), fontsize=8.5, color="0.25", loc="left")
    else:
        info = ax.set_title("\n".join([heading] + lines[:2]), fontsize=8.5, loc="left")
    info.set_gid("units")
    if sc.legend:
        ncols = 2 if len(sc.legend) > 3 else 1
        leg = fig.legend(handles=list(sc.legend.values()), loc="outside lower left", fontsize=7.5, frameon=False,
                         ncols=ncols)
        leg.set_gid("legend")
        if own:  # room for the legend's rows below the picture
            w, h = fig.get_size_inches()
            fig.set_size_inches(w, h + 0.19 * math.ceil(len(sc.legend) / ncols) + 0.2)
    if path is not None:
        save_figure(fig, path)
    return fig
