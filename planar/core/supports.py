"""Supports (essential conditions): fixed, roller, prescribed displacement, symmetry.

Each support names an edge or point set of the mesh and turns into constraint rows
``(node, direction, value)``: the displacement of ``node`` along the unit ``direction`` equals
``value``. Directions along x or y constrain one unknown; any other direction (an inclined roller or
symmetry line) is handled by a local rotation of that node's unknowns.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Union

import numpy as np

from .values import number_or_function
from .errors import InputError

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
    try:
        v = np.asarray(d, dtype=float).reshape(-1)
    except (TypeError, ValueError):
        v = np.zeros(0)
    if v.shape != (2,) or not np.all(np.isfinite(v)) or np.hypot(*v) == 0:
        raise InputError(f"a direction must be a non-zero vector (dx, dy), got {d!r}")
    return v / np.hypot(*v)


@dataclass
class Constraints:
    """Constraint rows from all supports: node (c,), direction (c, 2), value (c,), label (c,)."""

    node: np.ndarray
    direction: np.ndarray
    value: np.ndarray
    label: np.ndarray


class Support:
    """Base of the supports. ``where`` names an edge or point set."""

    where: str

    def rows(self, mesh) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        raise NotImplementedError

    def describe(self) -> str:
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
    """Both displacement components zero on a named edge or point (a clamp)."""

    def __init__(self, where: str):
        self.where = str(where)

    def __repr__(self):
        return f"Fixed({self.where!r})"

    def rows(self, mesh):
        ids = mesh.nodes_of(self.where)
        n = ids.size
        d = np.vstack([np.tile([1.0, 0.0], (n, 1)), np.tile([0.0, 1.0], (n, 1))])
        return np.concatenate([ids, ids]), d, np.zeros(2 * n)


class Roller(Support):
    """One displacement component zero: the edge may slide along the other.

    Parameters
    ----------
    where : str
        Edge or point name.
    fixed : {"x", "y", "normal"} or (dx, dy)
        The direction in which the support holds: ``"x"`` stops ux, ``"y"`` stops uy, ``"normal"``
        stops the motion normal to a straight edge, a vector stops the motion along it.
    """

    def __init__(self, where: str, fixed="normal"):
        self.where = str(where)
        if not (isinstance(fixed, str) and fixed.lower() == "normal"):
            _direction(fixed)  # refuses anything that is not 'x', 'y', 'normal' or a vector
        self.fixed = fixed if isinstance(fixed, str) else tuple(float(c) for c in fixed)

    def __repr__(self):
        return f"Roller({self.where!r}, fixed={self.fixed!r})"

    def rows(self, mesh):
        ids = mesh.nodes_of(self.where)
        if isinstance(self.fixed, str) and self.fixed.lower() == "normal":
            d = _edge_normal(mesh, self.where, "roller")
        else:
            d = _direction(self.fixed)
        return ids, np.tile(d, (ids.size, 1)), np.zeros(ids.size)


class Symmetry(Roller):
    """Symmetry line: the displacement normal to a straight named edge is zero."""

    def __init__(self, where: str):
        super().__init__(where, "normal")

    def __repr__(self):
        return f"Symmetry({self.where!r})"


class Prescribed(Support):
    """Prescribed displacement components on a named edge or point.

    Parameters
    ----------
    where : str
    ux, uy : float or callable f(x, y), optional
        A component left as None is free.
    """

    def __init__(self, where: str, ux: Value | None = None, uy: Value | None = None):
        self.where = str(where)
        self.ux = number_or_function(ux, "ux")
        self.uy = number_or_function(uy, "uy")
        if self.ux is None and self.uy is None:
            raise InputError(f"a prescribed displacement on {where!r} needs ux, uy or both")

    def __repr__(self):
        return f"Prescribed({self.where!r}, ux={self.ux!r}, uy={self.uy!r})"

    def rows(self, mesh):
        ids = mesh.nodes_of(self.where)
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
