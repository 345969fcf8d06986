"""QM6: the 4-node quadrilateral with incompatible (bubble) modes, as a planar element plugin.

The name is the authors' own label for the element as modified by Taylor, Beresford and Wilson
(1976); the earlier registered name ``Q4i`` still works for one release, with a DeprecationWarning.

The displacement of the bilinear quadrilateral Q4 is enriched by four internal modes

    u = sum_a N_a u_a + a_1 (1 - xi^2) + a_2 (1 - eta^2)      (and the same for v with a_3, a_4)

which let an element bend without the spurious shear strain that locks Q4 (E. L. Wilson,
R. L. Taylor, W. P. Doherty and J. Ghaboussi, Incompatible displacement models, in Numerical and
Computer Methods in Structural Mechanics, Academic Press, 1973). The internal unknowns are
condensed out element by element, so the element has the node layout of Q4 and fits any mesh of
4-node quadrilaterals.

The derivatives of the internal modes are taken with the Jacobian at the element centre and scaled
by detJ0 / detJ (R. L. Taylor, P. J. Beresford and E. L. Wilson, A non-conforming element for stress
analysis, Int. J. Numer. Methods Eng. 10, 1976), so that the integral of their strains over every
element is zero and the element passes the patch test on distorted meshes.

Register it in a model for the mesh's Q4 layout::

    model = planar.Model(mesh, material, thickness, elements={"Q4": "QM6"})
"""
from __future__ import annotations

import numpy as np

from planar.plugin import Q4, ElementError, gauss_quad, jacobian, strain_matrix

__all__ = ["IncompatibleQuad", "element_matrices", "internal_modes"]
__version__ = "0.1.0"

_CENTRE = np.zeros((1, 2))


def _mode_derivatives(xi: np.ndarray) -> np.ndarray:
    """Reference derivatives of the modes P1 = 1 - xi^2, P2 = 1 - eta^2, shape (q, 2, 2)."""
    xi = np.atleast_2d(xi)
    d = np.zeros((xi.shape[0], 2, 2))
    d[:, 0, 0] = -2.0 * xi[:, 0]
    d[:, 1, 1] = -2.0 * xi[:, 1]
    return d


def _centre_jacobian(coords: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """det J0 (e,) and J0^-1 (e, 2, 2) at the element centre, J_ij = dx_i / dxi_j."""
    dN0 = Q4.shape_derivatives(_CENTRE)[0]  # (4, 2)
    J0 = np.einsum("eki,kj->eij", coords, dN0)
    det0 = J0[:, 0, 0] * J0[:, 1, 1] - J0[:, 0, 1] * J0[:, 1, 0]
    inv0 = np.stack([np.stack([J0[:, 1, 1], -J0[:, 0, 1]], -1),
                     np.stack([-J0[:, 1, 0], J0[:, 0, 0]], -1)], -2) / det0[:, None, None]
    return det0, inv0


def strain_matrices(coords: np.ndarray, points: np.ndarray, *, centre_jacobian: bool = True):
    """Strain-displacement matrices of the nodal and of the internal unknowns at reference points.

    Parameters
    ----------
    coords : ndarray, shape (e, 4, 2)
    points : ndarray, shape (q, 2)
    centre_jacobian : bool, default True
        Take the internal-mode derivatives with the centre Jacobian scaled by detJ0 / detJ (Taylor,
        Beresford and Wilson, 1976). False gives the original 1973 element, which fails the patch
        test on distorted meshes (kept for the tests that show why the correction is needed).

    Returns
    -------
    det : ndarray, shape (e, q)
    Bu : ndarray, shape (e, q, 3, 8)
        Columns (u1, v1, ..., u4, v4).
    Ba : ndarray, shape (e, q, 3, 4)
        Columns (a1, a3, a2, a4): the x and y amplitudes of mode 1, then of mode 2.

    Notes
    -----
    dP/dx = dP/dxi J0^-1 detJ0 / detJ, so integral Ba detJ dxi deta = detJ0 J0^-T integral dP/dxi = 0
    (Taylor, Beresford and Wilson, 1976, eq. for the modified incompatible modes).
    """
    det, dNdx = jacobian(Q4, coords, points)
    dP = _mode_derivatives(points)  # (q, 2, 2)
    if centre_jacobian:
        det0, inv0 = _centre_jacobian(coords)
        dPdx = np.einsum("qmj,eji->eqmi", dP, inv0) * (det0[:, None] / det)[:, :, None, None]
    else:
        dN = Q4.shape_derivatives(points)
        J = np.einsum("eki,qkj->eqij", coords, dN)
        dPdx = np.einsum("qmj,eqji->eqmi", dP, np.linalg.inv(J))
    return det, strain_matrix(dNdx), strain_matrix(dPdx)


def _check_rule(rule) -> None:
    ref = gauss_quad(2)
    if rule.cell != "quad" or rule.n_points != ref.n_points or not np.allclose(rule.points, ref.points):
        raise ElementError(
            f"element QM6 is formulated with the 2 x 2 Gauss rule (its internal modes are condensed "
            f"and recovered with it), not a {rule.n_points}-point rule; remove the quadrature "
            "setting for 'QM6' from the model"
        )


def element_matrices(coords: np.ndarray, D: np.ndarray, thickness: float, rule=None, *,
                     centre_jacobian: bool = True):
    """Blocks of the element stiffness before condensation.

    Returns
    -------
    Kuu : ndarray, shape (e, 8, 8)
    Kua : ndarray, shape (e, 8, 4)
    Kaa : ndarray, shape (e, 4, 4)

    Notes
    -----
    K = integral [Bu Ba]^T D [Bu Ba] t detJ dxi deta, integrated with the 2 x 2 Gauss rule.
    """
    rule = rule or gauss_quad(2)
    coords = np.asarray(coords, dtype=float)
    det, Bu, Ba = strain_matrices(coords, rule.points, centre_jacobian=centre_jacobian)
    w = det * rule.weights[None, :] * thickness  # (e, q)
    DBu = np.einsum("ab,eqbj->eqaj", D, Bu)
    DBa = np.einsum("ab,eqbj->eqaj", D, Ba)
    Kuu = np.einsum("eqai,eqaj,eq->eij", Bu, DBu, w)
    Kua = np.einsum("eqai,eqaj,eq->eij", Bu, DBa, w)
    Kaa = np.einsum("eqai,eqaj,eq->eij", Ba, DBa, w)
    return Kuu, Kua, Kaa


def internal_modes(coords: np.ndarray, D: np.ndarray, u_element: np.ndarray, *,
                   centre_jacobian: bool = True) -> np.ndarray:
    """Amplitudes of the internal modes, alpha = -Kaa^-1 Kau u, shape (e, 4).

    The thickness cancels, so it is not needed.
    """
    _, Kua, Kaa = element_matrices(coords, D, 1.0, centre_jacobian=centre_jacobian)
    rhs = np.einsum("eij,ei->ej", Kua, np.asarray(u_element, dtype=float))
    return -np.linalg.solve(Kaa, rhs[..., None])[..., 0]


class IncompatibleQuad(Q4):
    """QM6: 4-node quadrilateral with four condensed incompatible modes (Wilson et al. 1973,
    modified by Taylor, Beresford and Wilson 1976). Node layout, edges, rule and VTK cell type of Q4,
    all inherited: the plugin declares only its name and its two hooks."""

    name = "QM6"
    #: its former registered name, still answered for one release (with a DeprecationWarning)
    deprecated_names = ("Q4i",)
    #: the incompatible modes let the element bend without parasitic shear and deform at nearly
    #: constant volume: a plane-strain cantilever at nu = 0.4999 (20 x 4 cells) gives 98 % of the
    #: quadratic-element answer, against 5 % for Q4 (planar's trust checks read this; see
    #: planar.core.advice)
    free_of_locking = ("volumetric", "shear")

    @classmethod
    def stiffness(cls, coords, D, thickness, rule):
        """Condensed element stiffness K = Kuu - Kua Kaa^-1 Kau, shape (e, 8, 8).

        Raises
        ------
        ElementError
            For any rule other than 2 x 2 Gauss.
        """
        _check_rule(rule)
        Kuu, Kua, Kaa = element_matrices(coords, D, thickness, rule)
        K = Kuu - np.matmul(Kua, np.linalg.solve(Kaa, Kua.transpose(0, 2, 1)))
        return 0.5 * (K + K.transpose(0, 2, 1))

    @classmethod
    def strain(cls, coords, D, u_element, rule):
        """Strains (eps_xx, eps_yy, gamma_xy) at the rule's points, internal modes included, (e, q, 3).

        The mode amplitudes are recovered with the 2 x 2 rule of the stiffness; the strains may be
        evaluated at the points of any rule (e.g. a finer one for error norms).
        """
        coords = np.asarray(coords, dtype=float)
        u_element = np.asarray(u_element, dtype=float)
        alpha = internal_modes(coords, D, u_element)
        _, Bu, Ba = strain_matrices(coords, rule.points)
        return np.einsum("eqaj,ej->eqa", Bu, u_element) + np.einsum("eqaj,ej->eqa", Ba, alpha)
