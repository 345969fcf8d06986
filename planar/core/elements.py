"""Isoparametric element types T3, T6, Q4, Q8, Q9.

Each element type is a small class that answers the element contract (see :class:`ElementType`).
The built-in types are registered through the package's own ``planar.elements`` entry points, the
same path third-party plugins use.

Node order (the VTK/gmsh order): corners counter-clockwise, then the mid-side nodes of edges
(0-1), (1-2), (2-0) or (2-3), (3-0), then the centre node of Q9.
"""
from __future__ import annotations

from typing import Callable, ClassVar, Optional

import numpy as np

from .quadrature import Rule, rule_for

__all__ = ["ElementType", "T3", "T6", "Q4", "Q8", "Q9", "line_shape"]


class ElementType:
    """The contract every element type, built-in or plugin, fulfils.

    Class attributes
    ----------------
    name : str
        Registered name, e.g. ``"Q8"``.
    cell : {"triangle", "quad"}
        Reference cell.
    n_nodes : int
        Nodes per element.
    degree : int
        Polynomial degree of the complete displacement interpolation (1 or 2): sets the expected
        convergence rate and the size of recovery patches.
    ref_nodes : ndarray, shape (n_nodes, 2)
        Node positions on the reference cell.
    edges : ndarray, shape (n_edges, 2 or 3)
        Local node numbers of each edge, ordered (start, end[, middle]), counter-clockwise.
    reversed_order : ndarray, shape (n_nodes,)
        Permutation that turns a clockwise element into a counter-clockwise one.
    default_order : int
        Full-integration rule: points per direction (quad) or polynomial degree (triangle).
    meshio_type : str
        meshio cell type used for VTK and .msh I/O (``"triangle6"``, ``"quad9"``, ...).

    Optional hooks (``None`` when the element uses the standard displacement formulation):

    ``stiffness(coords, D, thickness, rule) -> (e, 2k, 2k)``
        Own element stiffness, e.g. with condensed internal unknowns.
    ``strain(coords, D, u_element, rule) -> (e, q, 3)``
        Own strain evaluation at the rule's points (stresses follow as D (strain - initial strain)).
    """

    name: ClassVar[str]
    cell: ClassVar[str]
    n_nodes: ClassVar[int]
    degree: ClassVar[int]
    ref_nodes: ClassVar[np.ndarray]
    edges: ClassVar[np.ndarray]
    reversed_order: ClassVar[np.ndarray]
    default_order: ClassVar[int]
    meshio_type: ClassVar[str]
    stiffness: ClassVar[Optional[Callable]] = None
    strain: ClassVar[Optional[Callable]] = None

    @classmethod
    def shape(cls, xi: np.ndarray) -> np.ndarray:
        """Shape functions N at reference points.

        Parameters
        ----------
        xi : ndarray, shape (q, 2)

        Returns
        -------
        ndarray, shape (q, n_nodes)
        """
        raise NotImplementedError

    @classmethod
    def shape_derivatives(cls, xi: np.ndarray) -> np.ndarray:
        """Derivatives dN/dxi, dN/deta at reference points.

        Returns
        -------
        ndarray, shape (q, n_nodes, 2)
        """
        raise NotImplementedError

    @classmethod
    def default_rule(cls) -> Rule:
        """The full-integration rule of this element type."""
        return rule_for(cls.cell, cls.default_order)

    @classmethod
    def corner_count(cls) -> int:
        return 3 if cls.cell == "triangle" else 4


class T3(ElementType):
    """3-node linear triangle (constant strain)."""

    name = "T3"
    cell = "triangle"
    n_nodes = 3
    degree = 1
    ref_nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    edges = np.array([[0, 1], [1, 2], [2, 0]])
    reversed_order = np.array([0, 2, 1])
    default_order = 1
    meshio_type = "triangle"

    @classmethod
    def shape(cls, xi):
        xi = np.atleast_2d(xi)
        r, s = xi[:, 0], xi[:, 1]
        return np.column_stack([1.0 - r - s, r, s])

    @classmethod
    def shape_derivatives(cls, xi):
        xi = np.atleast_2d(xi)
        d = np.array([[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]])
        return np.broadcast_to(d, (xi.shape[0], 3, 2)).copy()


class T6(ElementType):
    """6-node quadratic triangle (curved edges allowed)."""

    name = "T6"
    cell = "triangle"
    n_nodes = 6
    degree = 2
    ref_nodes = np.array(
        [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [0.5, 0.0], [0.5, 0.5], [0.0, 0.5]]
    )
    edges = np.array([[0, 1, 3], [1, 2, 4], [2, 0, 5]])
    reversed_order = np.array([0, 2, 1, 5, 4, 3])
    default_order = 2
    meshio_type = "triangle6"

    @classmethod
    def shape(cls, xi):
        xi = np.atleast_2d(xi)
        r, s = xi[:, 0], xi[:, 1]
        t = 1.0 - r - s
        return np.column_stack(
            [t * (2 * t - 1), r * (2 * r - 1), s * (2 * s - 1), 4 * r * t, 4 * r * s, 4 * s * t]
        )

    @classmethod
    def shape_derivatives(cls, xi):
        xi = np.atleast_2d(xi)
        r, s = xi[:, 0], xi[:, 1]
        t = 1.0 - r - s
        dr = np.column_stack(
            [-(4 * t - 1), 4 * r - 1, 0 * r, 4 * (t - r), 4 * s, -4 * s]
        )
        ds = np.column_stack(
            [-(4 * t - 1), 0 * r, 4 * s - 1, -4 * r, 4 * r, 4 * (t - s)]
        )
        return np.stack([dr, ds], axis=-1)


_Q4_SIGNS = np.array([[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]])


class Q4(ElementType):
    """4-node bilinear quadrilateral."""

    name = "Q4"
    cell = "quad"
    n_nodes = 4
    degree = 1
    ref_nodes = _Q4_SIGNS.copy()
    edges = np.array([[0, 1], [1, 2], [2, 3], [3, 0]])
    reversed_order = np.array([0, 3, 2, 1])
    default_order = 2
    meshio_type = "quad"

    @classmethod
    def shape(cls, xi):
        xi = np.atleast_2d(xi)
        a = 1.0 + xi[:, None, 0] * _Q4_SIGNS[None, :, 0]
        b = 1.0 + xi[:, None, 1] * _Q4_SIGNS[None, :, 1]
        return 0.25 * a * b

    @classmethod
    def shape_derivatives(cls, xi):
        xi = np.atleast_2d(xi)
        a = 1.0 + xi[:, None, 0] * _Q4_SIGNS[None, :, 0]
        b = 1.0 + xi[:, None, 1] * _Q4_SIGNS[None, :, 1]
        return 0.25 * np.stack([_Q4_SIGNS[None, :, 0] * b, a * _Q4_SIGNS[None, :, 1]], axis=-1)


_Q8_REF = np.array(
    [[-1, -1], [1, -1], [1, 1], [-1, 1], [0, -1], [1, 0], [0, 1], [-1, 0]], dtype=float
)


class Q8(ElementType):
    """8-node serendipity quadrilateral (curved edges allowed)."""

    name = "Q8"
    cell = "quad"
    n_nodes = 8
    degree = 2
    ref_nodes = _Q8_REF.copy()
    edges = np.array([[0, 1, 4], [1, 2, 5], [2, 3, 6], [3, 0, 7]])
    reversed_order = np.array([0, 3, 2, 1, 7, 6, 5, 4])
    default_order = 3
    meshio_type = "quad8"

    @classmethod
    def shape(cls, xi):
        xi = np.atleast_2d(xi)
        x, y = xi[:, 0:1], xi[:, 1:2]
        xc, yc = _Q8_REF[None, :4, 0], _Q8_REF[None, :4, 1]
        corner = 0.25 * (1 + x * xc) * (1 + y * yc) * (x * xc + y * yc - 1)
        mid = np.column_stack(
            [
                0.5 * (1 - x[:, 0] ** 2) * (1 - y[:, 0]),
                0.5 * (1 + x[:, 0]) * (1 - y[:, 0] ** 2),
                0.5 * (1 - x[:, 0] ** 2) * (1 + y[:, 0]),
                0.5 * (1 - x[:, 0]) * (1 - y[:, 0] ** 2),
            ]
        )
        return np.hstack([corner, mid])

    @classmethod
    def shape_derivatives(cls, xi):
        xi = np.atleast_2d(xi)
        x, y = xi[:, 0:1], xi[:, 1:2]
        xc, yc = _Q8_REF[None, :4, 0], _Q8_REF[None, :4, 1]
        dcx = 0.25 * xc * (1 + y * yc) * (2 * x * xc + y * yc)
        dcy = 0.25 * yc * (1 + x * xc) * (x * xc + 2 * y * yc)
        x, y = x[:, 0], y[:, 0]
        dmx = np.column_stack([-x * (1 - y), 0.5 * (1 - y * y), -x * (1 + y), -0.5 * (1 - y * y)])
        dmy = np.column_stack([-0.5 * (1 - x * x), -(1 + x) * y, 0.5 * (1 - x * x), -(1 - x) * y])
        return np.stack([np.hstack([dcx, dmx]), np.hstack([dcy, dmy])], axis=-1)


def _lagrange3(t):
    """1D quadratic Lagrange functions at nodes -1, 0, 1 and their derivatives."""
    n = np.column_stack([0.5 * t * (t - 1), 1 - t * t, 0.5 * t * (t + 1)])
    d = np.column_stack([t - 0.5, -2 * t, t + 0.5])
    return n, d


# (i, j) 1D node index (0: -1, 1: 0, 2: +1) in xi and eta for each Q9 node
_Q9_IJ = np.array([[0, 0], [2, 0], [2, 2], [0, 2], [1, 0], [2, 1], [1, 2], [0, 1], [1, 1]])


class Q9(ElementType):
    """9-node Lagrange quadrilateral (curved edges allowed)."""

    name = "Q9"
    cell = "quad"
    n_nodes = 9
    degree = 2
    ref_nodes = np.vstack([_Q8_REF, [[0.0, 0.0]]])
    edges = np.array([[0, 1, 4], [1, 2, 5], [2, 3, 6], [3, 0, 7]])
    reversed_order = np.array([0, 3, 2, 1, 7, 6, 5, 4, 8])
    default_order = 3
    meshio_type = "quad9"

    @classmethod
    def shape(cls, xi):
        xi = np.atleast_2d(xi)
        nx, _ = _lagrange3(xi[:, 0])
        ny, _ = _lagrange3(xi[:, 1])
        return nx[:, _Q9_IJ[:, 0]] * ny[:, _Q9_IJ[:, 1]]

    @classmethod
    def shape_derivatives(cls, xi):
        xi = np.atleast_2d(xi)
        nx, dx = _lagrange3(xi[:, 0])
        ny, dy = _lagrange3(xi[:, 1])
        i, j = _Q9_IJ[:, 0], _Q9_IJ[:, 1]
        return np.stack([dx[:, i] * ny[:, j], nx[:, i] * dy[:, j]], axis=-1)


def line_shape(n_nodes: int, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Shape functions of a 2- or 3-node edge, nodes ordered (start, end[, middle]).

    Parameters
    ----------
    n_nodes : {2, 3}
    t : ndarray, shape (q,)
        Points on [-1, 1].

    Returns
    -------
    N : ndarray, shape (q, n_nodes)
    dN : ndarray, shape (q, n_nodes)
    """
    t = np.asarray(t, dtype=float)
    if n_nodes == 2:
        return np.column_stack([0.5 * (1 - t), 0.5 * (1 + t)]), np.column_stack(
            [-0.5 + 0 * t, 0.5 + 0 * t]
        )
    n, d = _lagrange3(t)
    return n[:, [0, 2, 1]], d[:, [0, 2, 1]]
