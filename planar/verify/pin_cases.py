"""Benchmarks of pins: a rigid disc bonded in a plate under remote tension (``rigid-inclusion``).

The disc is a pin rigidly tied to the hole's edge and held (both translations and its rotation);
the quarter plate of the Kirsch benchmark (:func:`planar.verify.recovery_cases.kirsch_mesh`) carries
the exact tractions of the closed-form field on its outer edges, so the finite plate stands for the
infinite one without a size effect.
"""
from __future__ import annotations

import numpy as np

from ..core.pins import Pin
from ..core.static import solve
from ._register import case, check
from .recovery_cases import BUILTIN, kirsch_mesh, kirsch_model

__all__ = ["RigidInclusion", "rigid_inclusion"]

GOODIER = ("J. N. Goodier, Concentration of stress around spherical and cylindrical inclusions and flaws, "
           "J. Appl. Mech. 1 (1933) 39-44; N. I. Muskhelishvili, Some Basic Problems of the Mathematical Theory "
           "of Elasticity, 1953, sec. 56 (potentials re-derived here; from memory)")


class RigidInclusion:
    """Exact field around a rigid circular disc bonded in an infinite plate under remote sigma_0 along x.

    Parameters
    ----------
    a : float
        Disc radius.
    sigma0 : float
        Remote uniaxial stress along x.
    kappa : float
        Kolosov's constant: ``3 - 4 nu`` in plane strain, ``(3 - nu) / (1 + nu)`` in plane stress.

    Notes
    -----
    With the complex potentials of Kolosov and Muskhelishvili, ``2 mu (u_x + i u_y) = kappa phi(z) -
    z conj(phi'(z)) - conj(psi(z))``, take ``phi = s z / 4 + A / z`` and ``psi = -s z / 2 + B / z + C / z^3``
    (the remote field plus the terms that decay). Zero displacement on ``|z| = a`` (the disc neither
    moves nor turns: the load is symmetric) gives, term by term in ``e^{i theta}``, ``e^{-i theta}`` and
    ``e^{3 i theta}``::

        A = -s a^2 / (2 kappa),   B = s a^2 (kappa - 1) / 4,   C = -s a^4 / (2 kappa)

    The stresses follow from ``sigma_xx + sigma_yy = 4 Re phi'`` and ``sigma_yy - sigma_xx + 2 i tau_xy =
    2 (conj(z) phi'' + psi')``. On the interface ``r = a``::

        sigma_rr = s (kappa + 1) / 4 + s (1 + 1 / kappa) / 2 cos 2 theta
        tau_rt   = -s (1 + 1 / kappa) / 2 sin 2 theta

    so the peak radial stress is ``s (kappa + 1)(kappa + 2) / (4 kappa)`` at theta = 0 (1.478 s in plane
    strain and 1.510 s in plane stress for nu = 0.3) and the peak interface shear ``s (1 + 1 / kappa) / 2``
    at 45 degrees. Far away the field tends to the remote tension.
    """

    def __init__(self, a: float = 1.0, sigma0: float = 1.0, kappa: float = 1.8):
        self.a, self.sigma0, self.kappa = float(a), float(sigma0), float(kappa)

    def stress(self, x, y):
        """Exact (sigma_xx, sigma_yy, tau_xy), shape (..., 3)."""
        s, a, k = self.sigma0, self.a, self.kappa
        A, B, C = -s * a * a / (2 * k), s * a * a * (k - 1) / 4, -s * a ** 4 / (2 * k)
        z = np.asarray(x, float) + 1j * np.asarray(y, float)
        dphi = s / 4 - A / z ** 2
        d = 2 * (np.conj(z) * 2 * A / z ** 3 + (-s / 2 - B / z ** 2 - 3 * C / z ** 4))
        total = 4 * dphi.real
        return np.stack([(total - d.real) / 2, (total + d.real) / 2, d.imag / 2], axis=-1)

    @property
    def peak_radial(self) -> float:
        k = self.kappa
        return self.sigma0 * (k + 1) * (k + 2) / (4 * k)

    @property
    def peak_shear(self) -> float:
        return self.sigma0 * (1 + 1 / self.kappa) / 2


def inclusion_model(element: str, n: int, analysis: str, nu: float = 0.3):
    """The quarter plate with its hole rigidly tied to a held pin, and the exact tractions outside."""
    kappa = 3 - 4 * nu if analysis == "plane strain" else (3 - nu) / (1 + nu)
    plate = RigidInclusion(kappa=kappa)
    mesh = kirsch_mesh(element, n)
    model = kirsch_model(mesh, plate=plate, element=element, nu=nu, analysis=analysis)
    # the rollers reach the hole edge too: the held pin implies them
    model.add_pin(Pin("hole", tie="rigid", hold="both", rotation="held", name="disc"))
    return model, plate


@case("rigid-inclusion", BUILTIN)
def rigid_inclusion(element: str):
    """Peak radial and shear stress on the interface of a bonded rigid disc, plane stress and plane strain."""
    from ..core.registry import element_type

    n = 64 if element_type(element).degree == 1 else 32
    recs = []
    for analysis in ("plane strain", "plane stress"):
        model, plate = inclusion_model(element, n, analysis)
        r = solve(model)["remote tension"]
        s = r.nodal_stress("spr")[0]
        i0 = r.mesh.nearest_node((plate.a, 0.0))
        i45 = r.mesh.nearest_node((plate.a / np.sqrt(2), plate.a / np.sqrt(2)))
        srr = float(s[i0, 0])  # at theta = 0 the radial stress is sigma_xx
        trt = float((s[i45, 1] - s[i45, 0]) / 2)  # at 45 degrees tau_rt = (sigma_yy - sigma_xx) / 2
        (disc,) = [x for x in r.support_reactions() if x.name == "disc"]
        note = (f"quarter plate, {n} x {n} cells, SPR at the interface nodes; kappa = {plate.kappa:.4g} (nu = 0.3); "
                f"equilibrium error {r.equilibrium_error():.1e}; the disc's reaction {disc.force[0]:.4g} (x)")
        recs.append(check("rigid-inclusion", element, f"{analysis}: peak radial stress on the interface / sigma_0",
                          plate.peak_radial, srr, 0.02, r.n_dofs, GOODIER, note=note))
        recs.append(check("rigid-inclusion", element, f"{analysis}: peak interface shear |tau_rt| / sigma_0 (45 deg)",
                          plate.peak_shear, abs(trt), 0.02, r.n_dofs, GOODIER, note=note))
    return recs
