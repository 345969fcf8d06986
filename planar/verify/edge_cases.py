"""Benchmark cases of stresses read along named edges.

``hole-edge-hoop``: the tangential (hoop) stress along the edge of a circular hole in a large plate
under remote uniaxial tension S, by angle, against Kirsch's exact sigma_tt / S = 1 - 2 cos 2 theta
(G. Kirsch, Die Theorie der Elastizitaet und die Beduerfnisse der Festigkeitslehre, Zeitschrift des
VDI 42, 1898; exact field in S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed.,
1970, art. 35, eqs. 61 at r = a). The plate is the quarter Kirsch plate of
:mod:`planar.verify.recovery_cases`, loaded by the exact Kirsch traction on its outer edges, so
the finite plate adds no modelling error.
"""
from __future__ import annotations

import numpy as np

from ..core.static import solve
from ..post.edges import edge_stresses
from ._register import case, check
from .recovery_cases import KirschPlate, kirsch_mesh, kirsch_model

HOOP = ("G. Kirsch 1898; exact field in S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., "
        "1970, art. 35: sigma_tt(a, theta) / S = 1 - 2 cos 2 theta")
#: cells along the quarter hole edge (and from the hole to the outer edge) of the mapped mesh
_CELLS = 32
_TOLERANCE = 0.005  # of the peak 3 S, at every angle


def hoop_on_edge(element: str, n: int = _CELLS):
    """The hoop stress on the hole edge of the mapped quarter Kirsch plate (S = 1, hole radius 1).

    Returns
    -------
    EdgeStresses, Result
    """
    mesh = kirsch_mesh(element, n)
    result = solve(kirsch_model(mesh))["remote tension"]
    return edge_stresses(result, "hole"), result


@case("hole-edge-hoop", ("T6", "Q8", "Q9"))
def hole_edge_hoop(element: str):
    """Hoop stress along the hole edge, by angle, within 0.5 % of the peak 3 S at every angle."""
    plate = KirschPlate()
    es, r = hoop_on_edge(element)
    if es.theta is None:  # the edge must be found to be an arc; a failure, not a crash
        return [check("hole-edge-hoop", element, "the hole edge recognised as a circular arc", 1.0, 0.0, 0.0,
                      r.n_dofs, HOOP)]
    theta = np.radians(es.theta)
    exact = plate.sigma0 * (1.0 - 2.0 * np.cos(2.0 * theta))
    err = (es.sigma_t - exact) / plate.peak
    i = int(np.argmax(np.abs(err)))
    pk = es.peak("sigma_t")
    note = (f"mapped quarter plate, {_CELLS} x {_CELLS} cells, {r.n_dofs} unknowns; {es.s.size} nodes on the hole "
            f"edge from theta = {es.theta[0]:.0f} to {es.theta[-1]:.0f} deg (fitted centre {es.centre}, radius "
            f"{es.radius:.9g}); worst angle {es.theta[i]:.2f} deg, error {100 * err[i]:+.4f} % of 3 S; largest "
            f"|sigma_n| {np.abs(es.sigma_n).max():.2e} S and |tau_nt| {np.abs(es.tau_nt).max():.2e} S on the free "
            f"edge; SPR recovery")
    return [
        check("hole-edge-hoop", element, f"sigma_t / S on the hole edge at the worst of {es.s.size} angles "
              f"(theta = {es.theta[i]:.1f} deg), error relative to the peak 3 S", float(exact[i]),
              float(es.sigma_t[i]), _TOLERANCE, r.n_dofs, HOOP, relative_to=plate.peak, note=note),
        check("hole-edge-hoop", element, f"peak sigma_t / S on the hole edge (theta = {pk.theta:.1f} deg)",
              plate.peak, pk.value, _TOLERANCE, r.n_dofs, HOOP, note=note),
    ]
