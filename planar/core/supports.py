"""Supports (essential conditions): fixed, roller, prescribed displacement, symmetry.

Each support names an edge or point set of the mesh (or gives a point (x, y), held at the nearest
node: see :meth:`Support.snap`) and turns into constraint rows
``(node, direction, value)``: the displacement of ``node`` along the unit ``direction`` equals
``value``. Directions along x or y constrain one unknown; any other direction (an inclined roller or
symmetry line) is handled by a local rotation of that node's unknowns.
"""
from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Callable, Union

import numpy as np

from .values import finite_vector, number_or_function
from .errors import DiscretisationWarning, InputError, SupportError, fmt_point

__all__ = ["Support", "Fixed", "Roller", "Prescribed", "Symmetry", "Constraints"]

Value = Union[float, Callable[[np.ndarray, np.ndarray], np.ndarray]]


def _direction(d) -> np.ndarray:
    if isinstance(d, str):
        key = d.strip().lower()
        if key in ("x", "ux"):
            return np.array([1.0, 0.0])
        if key in ("y", "uy"):
            return np.array([0.0, 1.0])
        raise InputError(f"unknown direction {d!r}; pick 'x', 'y', 'normal' or give a vector (dx, dy)")
    v = finite_vector(d)
    if v is None or np.hypot(*v) == 0:
        raise InputError(f"a direction must be a non-zero vector (dx, dy), got {d!r}")
    return v / np.hypot(*v)


@dataclass
class Constraints:
    """Constraint rows from all supports: node (c,), direction (c, 2), value (c,), label (c,)."""

    node: np.ndarray
    direction: np.ndarray
    value: np.ndarray
    label: np.ndarray


#: a point given by coordinates is held at the nearest node when that node is at most this fraction of
#: the local node spacing (the distance from it to its closest neighbour in the cells it belongs to) away
SNAP_LIMIT = 0.5
#: distances below this fraction of the mesh size are round-off: snapped without a warning
SNAP_ROUNDOFF = 1e-9


def _where(where) -> str | tuple[float, float]:
    """A support's place: a name, or coordinates (x, y) as for a point force."""
    if isinstance(where, str):
        return where
    xy = finite_vector(where)
    if xy is None:
        raise InputError(f"a support acts on a named edge or point or at coordinates (x, y) of finite numbers, "
                         f"got {where!r}")
    return (float(xy[0]), float(xy[1]))


def _node_spacing(mesh, node: int) -> float:
    """The distance from ``node`` to its closest other node among the cells that contain it."""
    near = []
    for block in mesh.cells.values():
        rows = np.flatnonzero((block == node).any(axis=1))
        if rows.size:
            near.append(block[rows].ravel())
    others = np.setdiff1d(np.concatenate(near), [node]) if near else np.zeros(0, np.int64)
    if others.size == 0:
        return 0.0
    return float(np.hypot(*(mesh.nodes[others] - mesh.nodes[node]).T).min())


class Support:
    """Base of the supports. ``where`` names an edge or point set, or is a point (x, y)."""

    where: str | tuple[float, float]
    #: an idealisation of how the part is held (True), so a peak next to it is flagged
    #: (:mod:`planar.core.zones`); a symmetry plane is exact (False)
    idealised = True
    #: (node, its coordinates, distance from the point given) once a support at coordinates is placed
    snapped: tuple[int, tuple[float, float], float] | None = None

    def rows(self, mesh) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        raise NotImplementedError

    def snap(self, mesh, *, sink: list | None = None, quiet: bool = False) -> int:
        """The node that holds a support given at coordinates: the nearest node of the mesh.

        A distance above round-off (1e-9 of the mesh size) draws a ``"support-snapped"``
        :class:`~planar.core.errors.DiscretisationWarning` stating it (raised unless ``quiet``, kept in
        ``sink`` when given), and the distance is kept in :meth:`describe`.

        Raises
        ------
        SupportError
            When the nearest node is farther than half the local node spacing (the distance from that
            node to its closest neighbour in its cells): the point is then not at a node of this mesh.
        """
        xy = np.asarray(self.where, dtype=float)
        i = mesh.nearest_node(xy)
        at = mesh.nodes[i]
        d = float(np.hypot(*(at - xy)))
        h = _node_spacing(mesh, i)
        if d > SNAP_LIMIT * h:
            raise SupportError(
                f"{self!r}: no node near {fmt_point(xy)}; the nearest is node {i} at {fmt_point(at)}, {d:.6g} away, "
                f"more than half the node spacing there ({h:.6g}); a support at coordinates is held at the nearest "
                "node only within that distance: add a named point to the geometry there, refine the mesh, or give "
                "the coordinates of a node"
            )
        self.snapped = (int(i), (float(at[0]), float(at[1])), d)
        if d > SNAP_ROUNDOFF * max(mesh.size(), 1e-300):
            w = DiscretisationWarning(f"{self!r} is held at the nearest node {i} at {fmt_point(at)}, {d:.6g} from "
                                      "the point given", "support-snapped")
            if sink is not None and not any(o.code == w.code and o.message == w.message for o in sink):
                sink.append(w)
            if not quiet:
                warnings.warn(w, stacklevel=3)
        return int(i)

    def nodes(self, mesh) -> np.ndarray:
        """Node numbers held: the named set's, or the one node nearest to the coordinates."""
        if isinstance(self.where, str):
            return mesh.nodes_of(self.where)
        return np.array([self.snap(mesh, quiet=True)], dtype=np.int64)

    def is_idealised(self, mesh) -> bool:
        """True when this support idealises how the part is held, so a peak next to it is not the part's own
        (:mod:`planar.core.zones`). Symmetry planes, and rollers sliding along a straight edge, are not."""
        return bool(self.idealised)

    def describe(self) -> str:
        if self.snapped is not None:
            i, at, d = self.snapped
            return f"{self!r} at node {i} {fmt_point(at)}, {d:.3g} from the point given"
        return repr(self)


def _eval(v, nodes_xy, name="a prescribed displacement"):
    if callable(v):
        from .loads import call_function

        return call_function(name, v, nodes_xy[:, 0], nodes_xy[:, 1]).copy()
    out = np.full(nodes_xy.shape[0], float(v))
    if not np.all(np.isfinite(out)):
        raise InputError(f"{name} evaluates to NaN or infinite values")
    return out


class Fixed(Support):
    """Both displacement components zero on a named edge or point (a clamp).

    Parameters
    ----------
    where : str or (x, y)
        Edge or point name, or coordinates held at the nearest node (see :meth:`Support.snap`).

    Examples
    --------
    >>> Fixed("left"), Fixed((0.0, 10.0))
    (Fixed('left'), Fixed((0.0, 10.0)))
    """

    def __init__(self, where: str | tuple[float, float]):
        self.where = _where(where)

    def __repr__(self):
        return f"Fixed({self.where!r})"

    def rows(self, mesh):
        ids = self.nodes(mesh)
        n = ids.size
        d = np.vstack([np.tile([1.0, 0.0], (n, 1)), np.tile([0.0, 1.0], (n, 1))])
        return np.concatenate([ids, ids]), d, np.zeros(2 * n)


class Roller(Support):
    """One displacement component zero: the edge may slide along the other.

    Parameters
    ----------
    where : str or (x, y)
        Edge or point name, or coordinates held at the nearest node (see :meth:`Support.snap`).
    fixed : {"x", "y", "normal"} or (dx, dy)
        The direction in which the support holds: ``"x"`` stops ux, ``"y"`` stops uy, ``"normal"``
        stops the motion normal to a straight edge, a vector stops the motion along it.
    """

    def __init__(self, where: str | tuple[float, float], fixed="normal"):
        self.where = _where(where)
        if not (isinstance(fixed, str) and fixed.lower() == "normal"):
            _direction(fixed)  # refuses anything that is not 'x', 'y', 'normal' or a vector
        elif not isinstance(self.where, str):
            raise InputError(f"a roller at the point {fmt_point(self.where)} has no edge to be normal to: give "
                             "fixed='x', 'y' or a vector (dx, dy)")
        self.fixed = fixed if isinstance(fixed, str) else tuple(float(c) for c in fixed)

    def __repr__(self):
        return f"Roller({self.where!r}, fixed={self.fixed!r})"

    def is_idealised(self, mesh) -> bool:
        """A roller holding a straight named edge along its normal is a symmetry line in effect: it restrains no
        contraction along the edge and makes no peak of its own, so it is not flagged; any other roller is."""
        if not self.idealised:
            return False
        if not isinstance(self.where, str) or self.where not in mesh.edge_sets:
            return True
        try:
            n = _edge_normal(mesh, self.where, "roller")
            d = n if isinstance(self.fixed, str) and self.fixed.lower() == "normal" else _direction(self.fixed)
        except InputError:
            return True
        return abs(abs(float(np.dot(n, d))) - 1.0) >= 1e-9

    def rows(self, mesh):
        ids = self.nodes(mesh)
        if isinstance(self.fixed, str) and self.fixed.lower() == "normal":
            d = _edge_normal(mesh, self.where, "roller")
        else:
            d = _direction(self.fixed)
        return ids, np.tile(d, (ids.size, 1)), np.zeros(ids.size)


class Symmetry(Roller):
    """Symmetry line: the displacement normal to a straight named edge is zero."""

    idealised = False  # exact for a symmetric part under symmetric loads

    def __init__(self, where: str):
        super().__init__(where, "normal")

    def __repr__(self):
        return f"Symmetry({self.where!r})"


class Prescribed(Support):
    """Prescribed displacement components on a named edge or point.

    Parameters
    ----------
    where : str or (x, y)
        Edge or point name, or coordinates held at the nearest node (see :meth:`Support.snap`).
    ux, uy : float or callable f(x, y), optional
        A component left as None is free.
    """

    def __init__(self, where: str | tuple[float, float], ux: Value | None = None, uy: Value | None = None):
        self.where = _where(where)
        self.ux = number_or_function(ux, "ux")
        self.uy = number_or_function(uy, "uy")
        if self.ux is None and self.uy is None:
            raise InputError(f"a prescribed displacement on {where!r} needs ux, uy or both")

    def __repr__(self):
        return f"Prescribed({self.where!r}, ux={self.ux!r}, uy={self.uy!r})"

    def rows(self, mesh):
        ids = self.nodes(mesh)
        xy = mesh.nodes[ids]
        nodes, dirs, vals = [], [], []
        if self.ux is not None:
            nodes.append(ids); dirs.append(np.tile([1.0, 0.0], (ids.size, 1)))
            vals.append(_eval(self.ux, xy, f"prescribed ux on {self.where!r}"))
        if self.uy is not None:
            nodes.append(ids); dirs.append(np.tile([0.0, 1.0], (ids.size, 1)))
            vals.append(_eval(self.uy, xy, f"prescribed uy on {self.where!r}"))
        return np.concatenate(nodes), np.vstack(dirs), np.concatenate(vals)


def _edge_normal(mesh, name: str, what: str) -> np.ndarray:
    """Unit normal of a straight named edge; refuses a curved one."""
    if name not in mesh.edge_sets:
        pts = mesh.nodes[mesh.nodes_of(name)]
    else:
        pts = mesh.nodes[np.unique(mesh.edge_sets[name])]
    if pts.shape[0] < 2:
        raise InputError(
            f"a {what} with fixed='normal' needs an edge with a direction; {name!r} is a single "
            "point: give fixed='x', 'y' or a vector"
        )
    c = pts - pts.mean(axis=0)
    _, s, vt = np.linalg.svd(c, full_matrices=False)
    tangent = vt[0]
    dev = np.abs(c @ vt[1]).max() if vt.shape[0] > 1 else 0.0
    scale = max(np.abs(c).max(), 1e-300)
    if dev > 1e-6 * scale:
        raise InputError(
            f"a {what} normal to {name!r} needs a straight edge, but it bends (off line by {dev:g}); "
            "use Roller with a fixed direction or split the edge"
        )
    n = np.array([tangent[1], -tangent[0]])
    for k in range(2):  # snap to an axis when aligned to round-off (1e-12 rad), sign made positive
        if abs(n[1 - k]) < 1e-12:
            n = np.eye(2)[k]
    if n[np.argmax(np.abs(n))] < 0:
        n = -n
    return n


def gather(mesh, supports: list[Support]) -> Constraints:
    """All constraint rows of the supports, with duplicates merged and conflicts refused."""
    nodes, dirs, vals, labels = [], [], [], []
    for i, s in enumerate(supports):
        n, d, v = s.rows(mesh)
        nodes.append(np.asarray(n, dtype=np.int64)); dirs.append(np.asarray(d, float))
        vals.append(np.asarray(v, float)); labels.append(np.full(len(n), i))
    if not nodes:
        return Constraints(np.zeros(0, np.int64), np.zeros((0, 2)), np.zeros(0), np.zeros(0, np.int64))
    return Constraints(np.concatenate(nodes), np.vstack(dirs), np.concatenate(vals), np.concatenate(labels))


def note_snapped(mesh, supports: list[Support], sink: list) -> None:
    """Keep in ``sink`` (a result's warnings) the "support-snapped" warnings of supports at coordinates.

    They were raised when the supports were added to the model; this keeps them with the results.
    """
    for s in supports:
        if not isinstance(s.where, str):
            s.snap(mesh, sink=sink, quiet=True)
