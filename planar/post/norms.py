"""Error norms against exact solutions, integrated with a higher-order Gauss rule."""
from __future__ import annotations

from typing import Callable

import numpy as np

from ..core.assembly import CHUNK, shape_values
from ..core.quadrature import rule_for
from ..core.result import as_result
from ..core.stress import stress_at

__all__ = ["energy_norm_error", "stress_error_rule"]


def stress_error_rule(etype):
    """A rule two orders above the element's full rule, for integrating errors."""
    if etype.cell == "quad":
        n = int(round(np.sqrt(etype.default_rule().n_points)))
        return rule_for("quad", min(n + 2, 5))
    return rule_for("triangle", min(etype.default_rule().degree + 4, 8))


def energy_norm_error(result, exact_stress: Callable[[np.ndarray, np.ndarray], np.ndarray]) -> tuple[float, float]:
    """Energy norm of the error of the finite-element stresses, and of the exact solution.

    Parameters
    ----------
    result : Result
    exact_stress : callable
        ``exact_stress(x, y) -> (..., 3)`` exact (sigma_xx, sigma_yy, tau_xy).

    Returns
    -------
    error : float
        sqrt( integral (s - s_h)^T D^-1 (s - s_h) dV ).
    norm : float
        sqrt( integral s^T D^-1 s dV ) of the exact field.
    """
    result = as_result(result, "energy_norm_error")
    err2 = 0.0
    nrm2 = 0.0
    nodes = result.mesh.nodes
    for b in result.assembly.blocks:
        rule = stress_error_rule(b.etype)
        N = shape_values(b.etype, rule.points)
        Dinv = np.linalg.inv(b.D)
        at = stress_at(b, nodes, result.u, rule, dvol=True)
        for s in range(0, b.n, CHUNK):  # summed chunk by chunk, in order
            x = np.einsum("qk,eki->eqi", N, nodes[b.conn[s : s + CHUNK]])
            se = np.asarray(exact_stress(x[..., 0], x[..., 1]), dtype=float)
            sh, w = at.stress[s : s + CHUNK], at.dvol[s : s + CHUNK]
            d = se - sh
            err2 += float(np.einsum("eqa,ab,eqb,eq->", d, Dinv, d, w))
            nrm2 += float(np.einsum("eqa,ab,eqb,eq->", se, Dinv, se, w))
    return float(np.sqrt(err2)), float(np.sqrt(nrm2))
