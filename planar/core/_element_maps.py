"""The element maps: Jacobians, shape values, strain matrices and strains of a batch of elements.

Everything here works on arrays of element coordinates (m, k, 2) at once, chunk by chunk; nothing
loops over elements. :mod:`planar.core.assembly` builds stiffness and loads on these.
"""
from __future__ import annotations

import numpy as np

from .quadrature import Rule
from .registry import check_plugin_array, plugin_call

__all__ = ["strain_matrix", "strains", "jacobian", "jacobian_det", "shape_values", "element_strains", "CHUNK"]

#: default chunk of elements per batched evaluation
CHUNK = 4096


def jacobian(etype, coords: np.ndarray, points: np.ndarray):
    """Jacobian data of a batch of elements at reference points.

    Parameters
    ----------
    coords : ndarray, shape (e, k, 2)
    points : ndarray, shape (q, 2)

    Returns
    -------
    detJ : ndarray, shape (e, q)
    dNdx : ndarray, shape (e, q, k, 2)
        Shape-function derivatives in x, y.
    """
    with plugin_call("element", etype, "shape_derivatives"):
        dN = etype.shape_derivatives(points)  # (q, k, 2)
    dN = check_plugin_array("element", etype, "shape_derivatives", dN, (points.shape[0], etype.n_nodes, 2))
    det, (a, b, c, d) = _jac(coords, dN)
    # dN/dx = (J11 dN/dxi - J10 dN/deta) / det, dN/dy = (-J01 dN/dxi + J00 dN/deta) / det
    with np.errstate(divide="ignore", invalid="ignore"):
        inv_det = 1.0 / det
    dxi, deta = dN[None, :, :, 0], dN[None, :, :, 1]
    dNdx = np.empty((coords.shape[0], points.shape[0], dN.shape[1], 2))
    dNdx[..., 0] = (d * inv_det)[..., None] * dxi - (c * inv_det)[..., None] * deta
    dNdx[..., 1] = (a * inv_det)[..., None] * deta - (b * inv_det)[..., None] * dxi
    return det, dNdx


def _jac(coords: np.ndarray, dN: np.ndarray):
    """det J (e, q) and the entries (dx/dxi, dx/deta, dy/dxi, dy/deta), each (e, q), by GEMMs."""
    x = np.ascontiguousarray(coords[..., 0])
    y = np.ascontiguousarray(coords[..., 1])
    a = x @ dN[:, :, 0].T  # dx/dxi
    b = x @ dN[:, :, 1].T  # dx/deta
    c = y @ dN[:, :, 0].T  # dy/dxi
    d = y @ dN[:, :, 1].T  # dy/deta
    return a * d - b * c, (a, b, c, d)


def element_strains(etype, coords: np.ndarray, D: np.ndarray, u_element: np.ndarray, rule: Rule,
                    dNdx: np.ndarray | None = None) -> np.ndarray:
    """Strains (e, q, 3) of a batch of elements at a rule's points.

    From the element's own ``strain`` hook when it has one (checked like any plugin output),
    otherwise from the shape-function derivatives (``dNdx`` if the caller has them already).
    """
    own = getattr(etype, "strain", None)
    if own is not None:
        with plugin_call("element", etype, "strain"):
            eps = own(coords, D, u_element, rule)
        return check_plugin_array("element", etype, "strain", eps, (coords.shape[0], rule.n_points, 3))
    if dNdx is None:
        _, dNdx = jacobian(etype, coords, rule.points)
    return strains(dNdx, u_element)


def shape_values(etype, points: np.ndarray) -> np.ndarray:
    """Shape functions N (q, k) of an element type at reference points, checked like any plugin output."""
    with plugin_call("element", etype, "shape"):
        N = etype.shape(points)
    return check_plugin_array("element", etype, "shape", N, (points.shape[0], etype.n_nodes))


def jacobian_det(etype, coords: np.ndarray, points: np.ndarray) -> np.ndarray:
    """det J (e, q) of a batch of elements at reference points (no derivatives)."""
    with plugin_call("element", etype, "shape_derivatives"):
        dN = etype.shape_derivatives(points)
    dN = check_plugin_array("element", etype, "shape_derivatives", dN, (points.shape[0], etype.n_nodes, 2))
    return _jac(coords, dN)[0]


def strains(dNdx: np.ndarray, u_element: np.ndarray) -> np.ndarray:
    """Strains (eps_xx, eps_yy, gamma_xy) at the points from element displacements, without B.

    Parameters
    ----------
    dNdx : ndarray, shape (e, q, k, 2)
    u_element : ndarray, shape (e, 2k)
        (u_1, v_1, u_2, v_2, ...) per element.

    Returns
    -------
    ndarray, shape (e, q, 3)
    """
    ux = u_element[:, None, 0::2]  # (e, 1, k)
    uy = u_element[:, None, 1::2]
    nx, ny = dNdx[..., 0], dNdx[..., 1]
    out = np.empty(dNdx.shape[:2] + (3,))
    out[..., 0] = np.sum(nx * ux, axis=-1)
    out[..., 1] = np.sum(ny * uy, axis=-1)
    out[..., 2] = np.sum(ny * ux, axis=-1) + np.sum(nx * uy, axis=-1)
    return out


def strain_matrix(dNdx: np.ndarray) -> np.ndarray:
    """Strain-displacement matrices B from shape-function derivatives.

    Parameters
    ----------
    dNdx : ndarray, shape (e, q, k, 2)

    Returns
    -------
    ndarray, shape (e, q, 3, 2k)
        Rows (eps_xx, eps_yy, gamma_xy); columns (u_1, v_1, u_2, v_2, ...).
    """
    e, q, k, _ = dNdx.shape
    B = np.zeros((e, q, 3, 2 * k))
    B[:, :, 0, 0::2] = dNdx[..., 0]
    B[:, :, 1, 1::2] = dNdx[..., 1]
    B[:, :, 2, 0::2] = dNdx[..., 1]
    B[:, :, 2, 1::2] = dNdx[..., 0]
    return B
