"""Isoparametric element types T3, T6, Q4, Q8, Q9.

Each element type is a small class that answers the element contract (see :class:`ElementType`).
The built-in types are registered through the package's own ``planar.elements`` entry points, the
same path third-party plugins use.

Node order (the VTK/gmsh order): corners counter-clockwise, then the mid-side nodes of edges
(0-1), (1-2), (2-0) or (2-3), (3-0), then the centre node of Q9.
"""
from __future__ import annotations

import warnings
from typing import Callable, ClassVar, Optional

import numpy as np

from .quadrature import Rule, rule_for

__all__ = ["ElementType", "T3", "T6", "Q4", "Q8", "Q9", "line_shape", "mirrored_order", "full_rule_degree"]


class _OldRuleWord:
    """``default_order``, the old name of the rule: points per side on a quad, degree on a triangle."""

    def __get__(self, obj, owner) -> int:
        warnings.warn(f"element type {owner.__name__}: default_order is deprecated, read rule_degree (the degree "
                      "its full rule integrates exactly) or default_rule()", DeprecationWarning, stacklevel=2)
        d = int(owner.rule_degree)
        return (d + 2) // 2 if owner.cell == "quad" else d


def mirrored_order(cell: str, ref_nodes) -> np.ndarray | None:
    """The node permutation that turns a clockwise element counter-clockwise, read from the layout.

    The reference cell is mirrored about its diagonal through node 0 (xi <-> eta); node ``i`` of the
    turned element is the node that sits at the mirror image of node ``i``'s position. The mirror
    keeps node 0, reverses the corners and maps the shape-function space of every symmetric layout
    onto itself, so x'(xi, eta) = x(eta, xi) and det J changes sign.

    Parameters
    ----------
    cell : {"triangle", "quad"}
    ref_nodes : array_like, shape (k, 2)

    Returns
    -------
    ndarray of int, shape (k,), or None
        None when some node's mirror image is not a node (an unsymmetric layout, which must then
        declare ``reversed_order`` itself).

    Examples
    --------
    >>> mirrored_order("quad", Q8.ref_nodes).tolist()
    [0, 3, 2, 1, 7, 6, 5, 4]
    """
    ref = np.asarray(ref_nodes, dtype=float)
    if ref.ndim != 2 or ref.shape[1] != 2 or ref.shape[0] == 0:
        return None
    image = ref[:, ::-1]  # (xi, eta) -> (eta, xi): the diagonal through (0, 0) and through (-1, -1)
    dist = np.abs(image[:, None, :] - ref[None, :, :]).max(axis=-1)  # (k, k)
    perm = np.argmin(dist, axis=1)
    if np.any(dist[np.arange(ref.shape[0]), perm] > 1e-9) or np.unique(perm).size != perm.size:
        return None
    return perm


def full_rule_degree(cell: str, degree: int) -> int:
    """Degree of exactness of the full-integration rule of an element of polynomial ``degree``.

    B^T D B det J of an undistorted element is a polynomial of total degree 2 (degree - 1) on a
    straight-sided triangle, and of degree 2 degree in each of xi and eta on a parallelogram; the
    full rule integrates it exactly (common practice: O. C. Zienkiewicz, R. L. Taylor and J. Z. Zhu,
    The Finite Element Method: Its Basis and Fundamentals, 6th ed., 2005, sec. 6.9).

    Examples
    --------
    >>> [full_rule_degree("triangle", p) for p in (1, 2)], [full_rule_degree("quad", p) for p in (1, 2)]
    ([1, 2], [3, 5])
    """
    if cell == "quad":
        return 2 * int(degree) + 1
    return max(1, 2 * (int(degree) - 1))


class ElementType:
    """The contract every element type, built-in or plugin, fulfils.

    A subclass declares what only it can know; the rest is derived from it when the class is made
    (an explicit value is accepted and checked at discovery).

    Declared class attributes
    -------------------------
    name : str
        Registered name, e.g. ``"Q8"`` (the entry-point name).
    cell : {"triangle", "quad"}
        Reference cell: (0, 0), (1, 0), (0, 1), or [-1, 1]^2.
    degree : int
        Polynomial degree of the complete displacement interpolation (1 or more, e.g. 3 for a
        cubic triangle): sets the expected convergence rate, the size of recovery patches and the
        default rule.
    ref_nodes : ndarray, shape (n_nodes, 2)
        Node positions on the reference cell.
    edges : ndarray, shape (n_edges, 2 or 3)
        Local node numbers of each edge, ordered (start, end[, middle]), counter-clockwise.
    meshio_type : str
        meshio cell type used for VTK and .msh I/O (``"triangle6"``, ``"quad9"``, ...).

    Derived class attributes (declare one only to override it)
    ----------------------------------------------------------
    n_nodes : int
        Nodes per element: ``len(ref_nodes)``.
    reversed_order : ndarray, shape (n_nodes,)
        Permutation that turns a clockwise element into a counter-clockwise one: the mirror of the
        layout about the diagonal through node 0 (:func:`mirrored_order`). An unsymmetric layout
        declares it.
    rule_degree : int
        The full-integration rule, as its degree of exactness: polynomials up to this degree (total
        degree on a triangle, degree in each of xi and eta on a quadrilateral, as
        :attr:`planar.core.quadrature.Rule.degree`) are integrated exactly. Derived from ``degree``
        (:func:`full_rule_degree`): 1 for T3, 2 for T6, 3 (2 x 2 points) for Q4, 5 (3 x 3) for Q8
        and Q9. ``default_order`` (points per side on a quad, degree on a triangle) is its
        deprecated former spelling.
    corner_count() : int
        3 on a triangle, 4 on a quadrilateral.

    Optional layout attributes (files and figures read them; :mod:`planar.core.layouts`):

    ``vtk_type`` : int
        VTK cell type number; default VTK's number for ``meshio_type``, else VTK's Lagrange cell
        (69 on a triangle, 70 on a quadrilateral).
    ``vtk_order`` : array of int, shape (n_nodes,)
        The local node numbers in VTK's order; default the element's own order.
    ``layout`` : str
        The layout whose nodes the element uses, for a formulation on another element's layout;
        default its own name.

    Optional hooks (``None`` when the element uses the standard displacement formulation):

    ``stiffness(coords, D, thickness, rule) -> (e, 2k, 2k)``
        Own element stiffness, e.g. with condensed internal unknowns.
    ``strain(coords, D, u_element, rule) -> (e, q, 3)``
        Own strain evaluation at the rule's points (stresses follow as D (strain - initial strain)).

    Examples
    --------
    >>> class Linear(ElementType):
    ...     name, cell, degree, meshio_type = "linear", "triangle", 1, "triangle"
    ...     ref_nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    ...     edges = np.array([[0, 1], [1, 2], [2, 0]])
    >>> Linear.n_nodes, Linear.reversed_order.tolist(), Linear.rule_degree, Linear.corner_count()
    (3, [0, 2, 1], 1, 3)
    """

    name: ClassVar[str]
    cell: ClassVar[str]
    degree: ClassVar[int]
    ref_nodes: ClassVar[np.ndarray]
    edges: ClassVar[np.ndarray]
    meshio_type: ClassVar[str]
    n_nodes: ClassVar[int]
    reversed_order: ClassVar[Optional[np.ndarray]]
    rule_degree: ClassVar[int]
    default_order = _OldRuleWord()
    stiffness: ClassVar[Optional[Callable]] = None
    strain: ClassVar[Optional[Callable]] = None

    def __init_subclass__(cls, **kwargs) -> None:
        super().__init_subclass__(**kwargs)
        own = cls.__dict__
        layout_changed = "ref_nodes" in own or "cell" in own
        ref = getattr(cls, "ref_nodes", None)
        cell = getattr(cls, "cell", None)
        if ref is not None and "n_nodes" not in own and (layout_changed or not hasattr(cls, "n_nodes")):
            try:
                cls.n_nodes = int(np.shape(ref)[0])
            except (IndexError, TypeError):
                pass  # discovery reports the bad ref_nodes
        if ref is not None and "reversed_order" not in own and (layout_changed or getattr(cls, "reversed_order", None) is None):
            cls.reversed_order = mirrored_order(cell, ref)
        if "default_order" in own and "rule_degree" not in own:
            warnings.warn(f"element type {own.get('name', cls.__name__)!r}: default_order is deprecated; declare "
                          "rule_degree, the degree its full rule integrates exactly (2 default_order - 1 on a "
                          "quadrilateral, default_order on a triangle), or leave it out to have it derived from "
                          "degree", DeprecationWarning, stacklevel=2)
            try:
                n = int(own["default_order"])
                cls.rule_degree = 2 * n - 1 if cell == "quad" else n
            except (TypeError, ValueError):
                pass  # discovery reports the missing rule
        elif "rule_degree" not in own and ("degree" in own or "cell" in own or not hasattr(cls, "rule_degree")):
            if cell in ("triangle", "quad") and isinstance(getattr(cls, "degree", None), (int, np.integer)):
                cls.rule_degree = full_rule_degree(cell, cls.degree)

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
        """The full-integration rule of this element type: the rule exact to :attr:`rule_degree`."""
        d = int(cls.rule_degree)
        return rule_for("quad", (d + 2) // 2) if cls.cell == "quad" else rule_for(cls.cell, d)

    @classmethod
    def corner_count(cls) -> int:
        """Corner nodes (listed first): 3 on a triangle, 4 on a quadrilateral."""
        return 3 if cls.cell == "triangle" else 4


class T3(ElementType):
    """3-node linear triangle (constant strain)."""

    name = "T3"
    cell = "triangle"
    degree = 1
    ref_nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    edges = np.array([[0, 1], [1, 2], [2, 0]])
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
    degree = 2
    ref_nodes = np.array(
        [[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [0.5, 0.0], [0.5, 0.5], [0.0, 0.5]]
    )
    edges = np.array([[0, 1, 3], [1, 2, 4], [2, 0, 5]])
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
    degree = 1
    ref_nodes = _Q4_SIGNS.copy()
    edges = np.array([[0, 1], [1, 2], [2, 3], [3, 0]])
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
    degree = 2
    ref_nodes = _Q8_REF.copy()
    edges = np.array([[0, 1, 4], [1, 2, 5], [2, 3, 6], [3, 0, 7]])
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
    degree = 2
    ref_nodes = np.vstack([_Q8_REF, [[0.0, 0.0]]])
    edges = np.array([[0, 1, 4], [1, 2, 5], [2, 3, 6], [3, 0, 7]])
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
