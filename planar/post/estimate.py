"""A posteriori error estimate in the energy norm (Zienkiewicz-Zhu), element by element.

The recovered stresses sigma* (see :mod:`planar.core.recovery`) are far more accurate than the raw
finite-element stresses sigma_h, so their difference measures the error of sigma_h (O. C. Zienkiewicz
and J. Z. Zhu, "A simple error estimator and adaptive procedure for practical engineering analysis",
Int. J. Numer. Methods Eng. 24, 1987; with SPR: "The superconvergent patch recovery and a posteriori
error estimates", Part 2: Error estimates and adaptivity, Int. J. Numer. Methods Eng. 33, 1992).

Units: the indicators are square roots of energies, i.e. sqrt(force x length) in the model's units.
"""
from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable

import numpy as np

from ..core.assembly import shape_values
from ..core.errors import InputError
from ..core.recovery import METHODS, recover
from ..core.result import as_result
from ..core.stress import has_initial_strain, stress_at
from .norms import energy_norm_error, stress_error_rule

__all__ = ["ErrorEstimate", "estimate_error", "effectivity"]


@dataclass
class ErrorEstimate:
    """Element error indicators and the global estimate of one result.

    Attributes
    ----------
    indicators : dict of str to ndarray
        Error indicator eta_e of every cell, per mesh cell block (layout), in the block's cell order.
    areas : dict of str to ndarray
        Area of every cell (same layout as ``indicators``), in the model's length unit squared.
    eta : float
        Global estimated error sqrt(sum eta_e^2) in the energy norm.
    norm : float
        Energy norm of the finite-element solution, ||u_h|| = sqrt(integral sigma_h^T D^-1 sigma_h dV).
    recovery : str
        The recovery the estimate used.
    degree : int
        Largest element degree p (sets the convergence rate used by adaptivity).
    """

    indicators: dict[str, np.ndarray]
    areas: dict[str, np.ndarray]
    eta: float
    norm: float
    recovery: str
    degree: int
    n_dofs: int = 0
    _result: object = field(default=None, repr=False)

    @property
    def relative(self) -> float:
        """Relative global error eta / sqrt(||u_h||^2 + eta^2) (Zienkiewicz and Zhu 1987, eq. 30)."""
        den = math.sqrt(self.norm**2 + self.eta**2)
        return self.eta / den if den > 0 else 0.0

    @property
    def n_elements(self) -> int:
        return int(sum(v.size for v in self.indicators.values()))

    def relative_indicators(self) -> dict[str, np.ndarray]:
        """Indicators over the permissible error of an element when the error is spread evenly.

        eta_e / (eta_total_allowed / sqrt(n_elements)) with the allowed total taken as the current
        sqrt(||u_h||^2 + eta^2); values well above the mean mark the elements to refine.
        """
        den = math.sqrt(self.norm**2 + self.eta**2) / math.sqrt(max(self.n_elements, 1))
        return {k: v / den if den > 0 else v * 0 for k, v in self.indicators.items()}

    def cell_fields(self) -> dict[str, dict[str, np.ndarray]]:
        """Cell data for :func:`planar.post.vtk.write_vtu`: ``error_indicator`` and ``relative_error_indicator``."""
        return {"error_indicator": self.indicators, "relative_error_indicator": self.relative_indicators()}

    def write_vtu(self, path: str | os.PathLike, *, recovery: str | None = None) -> Path:
        """Write the result with the indicators as cell data (VTK .vtu, written atomically)."""
        from .vtk import write_vtu

        if self._result is None:
            raise InputError("this estimate holds no result to write; use planar.post.vtk.write_vtu")
        return write_vtu(path, self._result, recovery=recovery or self.recovery, cell_fields=self.cell_fields())

    def summary(self) -> str:
        return (f"estimated energy-norm error {self.eta:.4g} of {self.norm:.4g} "
                f"({100 * self.relative:.3g} % relative), {self.n_elements} elements, "
                f"{self.recovery.upper() if self.recovery == 'spr' else self.recovery} recovery")

    def __str__(self) -> str:
        return self.summary()


def estimate_error(result, *, recovery: str = "spr") -> ErrorEstimate:
    """Zienkiewicz-Zhu error indicators of a result.

    Parameters
    ----------
    result : Result
    recovery : {"spr", "average"}
        Recovered stress sigma* used as the reference.

    Returns
    -------
    ErrorEstimate

    Notes
    -----
    eta_e^2 = integral over the element of (sigma* - sigma_h)^T D^-1 (sigma* - sigma_h) dV, with
    sigma* interpolated from the region's recovered nodal values by the element's shape functions,
    integrated with a rule two orders above the element's (the stiffness rule where an initial strain
    acts); eta^2 = sum eta_e^2 and ||u_h||^2 = integral sigma_h^T D^-1 sigma_h dV (Zienkiewicz and
    Zhu 1987, eqs. 21-30; 1992, Part 2). Nodes on region interfaces use each region's own values.

    Examples
    --------
    >>> import planar
    >>> from planar.post.estimate import estimate_error
    >>> mesh = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")
    >>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33))
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", ty=-1.0), case="tip")
    >>> est = estimate_error(planar.solve(model)["tip"])
    >>> 0 < est.relative < 0.05
    True
    """
    result = as_result(result, "estimate_error")
    if recovery not in METHODS:
        raise InputError(f"unknown stress recovery {recovery!r}; pick one of {', '.join(METHODS)}")
    star = recover(result, recovery, per_region=True)
    mesh = result.mesh
    ind = {t: np.zeros(b.shape[0]) for t, b in mesh.cells.items()}
    areas = {t: np.zeros(b.shape[0]) for t, b in mesh.cells.items()}
    eta2 = 0.0
    norm2 = 0.0
    for b, g in zip(result.assembly.blocks, result.gauss):
        Dinv = np.linalg.inv(b.D)
        if has_initial_strain(g):
            sh, dvol, rule = g.stress, g.dvol, g.rule
            N = shape_values(b.etype, rule.points)
        else:
            rule = stress_error_rule(b.etype)
            at = stress_at(b, mesh.nodes, result.u, rule, dvol=True)
            sh, dvol, N = at.stress, at.dvol, shape_values(b.etype, rule.points)
        nodal = star[b.region][:, :3]
        ss = np.einsum("qk,ekc->eqc", N, nodal[b.conn])
        d = ss - sh
        e2 = np.einsum("eqa,ab,eqb,eq->e", d, Dinv, d, dvol)
        ind[b.layout][b.cells] = np.sqrt(np.maximum(e2, 0.0))
        areas[b.layout][b.cells] = dvol.sum(axis=1) / b.thickness
        eta2 += float(e2.sum())
        norm2 += float(np.einsum("eqa,ab,eqb,eq->", sh, Dinv, sh, dvol))
    p = max(int(b.etype.degree) for b in result.assembly.blocks)
    return ErrorEstimate(ind, areas, math.sqrt(eta2), math.sqrt(max(norm2, 0.0)), recovery, p,
                         result.n_dofs, result)


def effectivity(result, exact_stress: Callable[[np.ndarray, np.ndarray], np.ndarray], *,
                recovery: str = "spr", estimate: ErrorEstimate | None = None) -> float:
    """Effectivity index: estimated over true energy-norm error, for a problem with an exact solution.

    Parameters
    ----------
    result : Result
    exact_stress : callable
        ``exact_stress(x, y) -> (..., 3)`` the exact (sigma_xx, sigma_yy, tau_xy).
    recovery : {"spr", "average"}
    estimate : ErrorEstimate, optional
        A ready estimate of ``result`` (computed when not given).

    Returns
    -------
    float
        theta = eta / ||e||; an asymptotically exact estimator has theta -> 1 under refinement
        (Zienkiewicz and Zhu 1992, Part 2, eq. 11).
    """
    result = as_result(result, "effectivity")
    est = estimate if estimate is not None else estimate_error(result, recovery=recovery)
    true, _ = energy_norm_error(result, exact_stress)
    if true <= 0:
        raise InputError("the finite-element solution is exact (zero true error): the effectivity is undefined")
    return est.eta / true
