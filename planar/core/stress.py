"""Stresses at a rule's points, stress measures and nodal averaging: written once, used everywhere.

The one place that turns displacements into strains and stresses at the points of a quadrature rule
(:func:`stress_at`: Gauss-point fields of a result, SPR sampling points, the error estimate and the
error norms all call it), the derived measures (:func:`stress_measures`), and the extrapolation of
point values to the nodes averaged over the elements that share a node (:func:`nodal_average`).
Units are the model's (e.g. N, mm, MPa).
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Iterable

import numpy as np

from .assembly import CHUNK, element_strains, jacobian
from .materials import sigma_zz
from .parallel import map_chunks

__all__ = ["stress_measures", "extrapolation_matrix", "RuleStress", "stress_at", "nodal_average",
           "has_initial_strain", "stress_rule"]


def stress_measures(s: np.ndarray, szz: np.ndarray | None = None) -> dict[str, np.ndarray]:
    """Derived stress measures from (sigma_xx, sigma_yy, tau_xy) and sigma_zz.

    Parameters
    ----------
    s : ndarray, shape (..., 3)
    szz : ndarray, shape (...), optional
        Out-of-plane stress (zero in plane stress).

    Returns
    -------
    dict
        ``sigma_xx``, ``sigma_yy``, ``tau_xy``, ``sigma_zz``, ``von_mises``, ``tresca``, ``sigma_1``,
        ``sigma_2`` (in-plane principal stresses, sigma_1 >= sigma_2) and ``principal_angle``
        (angle of sigma_1 from the x axis, degrees).

    Notes
    -----
    von Mises: sqrt(((sxx - syy)^2 + (syy - szz)^2 + (szz - sxx)^2) / 2 + 3 txy^2); Tresca: the
    largest difference of the three principal stresses (common practice).
    """
    s = np.asarray(s, dtype=float)
    sxx, syy, txy = s[..., 0], s[..., 1], s[..., 2]
    szz = np.zeros_like(sxx) if szz is None else np.asarray(szz, dtype=float)
    c = 0.5 * (sxx + syy)
    r = np.hypot(0.5 * (sxx - syy), txy)
    s1, s2 = c + r, c - r
    # scaled by the largest component so that the squares cannot overflow for huge stresses
    m = np.maximum(np.maximum(np.abs(sxx), np.abs(syy)), np.maximum(np.abs(szz), np.abs(txy)))
    with np.errstate(invalid="ignore", divide="ignore"):
        a, b, z, t = (np.where(m > 0, v / m, 0.0) for v in (sxx, syy, szz, txy))
    vm = m * np.sqrt(np.maximum(0.5 * ((a - b) ** 2 + (b - z) ** 2 + (z - a) ** 2) + 3 * t**2, 0.0))
    tr = np.maximum(np.maximum(np.abs(s1 - s2), np.abs(s1 - szz)), np.abs(s2 - szz))
    ang = np.degrees(0.5 * np.arctan2(2 * txy, sxx - syy))
    return {"sigma_xx": sxx, "sigma_yy": syy, "tau_xy": txy, "sigma_zz": szz, "von_mises": vm,
            "tresca": tr, "sigma_1": s1, "sigma_2": s2, "principal_angle": ang}


def _poly_basis(cell: str, xi: np.ndarray, deg: int) -> np.ndarray:
    x, y = xi[:, 0], xi[:, 1]
    if cell == "triangle":
        cols = [x**a * y**b for a in range(deg + 1) for b in range(deg + 1 - a)]
    else:
        cols = [x**a * y**b for a in range(deg + 1) for b in range(deg + 1)]
    return np.column_stack(cols)


def extrapolation_matrix(etype, rule) -> np.ndarray:
    """Matrix E (k, q) taking Gauss-point values to the element's nodes by a least-squares fit.

    The fit uses the complete polynomial of the stresses' own degree (p - 1 on triangles, p per
    direction on quadrilaterals), capped by what the rule's points can determine.
    """
    q = rule.n_points
    if etype.cell == "triangle":
        deg = max(etype.degree - 1, 0)
        while deg > 0 and (deg + 1) * (deg + 2) // 2 > q:
            deg -= 1
    else:
        deg = etype.degree
        while deg > 0 and (deg + 1) ** 2 > q:
            deg -= 1
    Pg = _poly_basis(etype.cell, rule.points, deg)
    while deg > 0 and np.linalg.matrix_rank(Pg) < Pg.shape[1]:
        deg -= 1
        Pg = _poly_basis(etype.cell, rule.points, deg)
    Pn = _poly_basis(etype.cell, etype.ref_nodes, deg)
    return Pn @ np.linalg.pinv(Pg)


def stress_rule(block):
    """The rule a block's Gauss-point stresses are reported at: its stiffness rule (the element
    type's full rule where the stiffness is integrated selectively)."""
    return block.etype.default_rule() if block.rule_mode == "selective" else block.rule


@dataclass
class RuleStress:
    """Strains and stresses of one element block at the points of a rule.

    Attributes
    ----------
    strain : ndarray, shape (e, q, 3)
        Total strain (eps_xx, eps_yy, gamma_xy).
    mech_strain : ndarray, shape (e, q, 3)
        Strain minus the initial strain (the same array as ``strain`` when there is none).
    stress : ndarray, shape (e, q, 3)
        (sigma_xx, sigma_yy, tau_xy) = D ``mech_strain``.
    szz : ndarray, shape (e, q), or None
        Out-of-plane stress (zeros for a material without a 3D compliance; None when not asked for).
    dvol : ndarray, shape (e, q), or None
        Weight times det J times thickness (None when not asked for).
    """

    strain: np.ndarray
    mech_strain: np.ndarray
    stress: np.ndarray
    szz: np.ndarray | None = None
    dvol: np.ndarray | None = None


def stress_at(block, nodes: np.ndarray, u: np.ndarray, rule, *, analysis: str | None = None,
              initial_strain: np.ndarray | None = None, initial_zz: np.ndarray | float = 0.0,
              dvol: bool = False) -> RuleStress:
    """Strain and stress of an element block at a rule's points, batched over element chunks.

    Parameters
    ----------
    block : Block
        One element block (its type, connectivity, D matrix, material and thickness are used).
    nodes : ndarray, shape (n, 2)
    u : ndarray, shape (n, 2)
        Nodal displacements.
    rule : Rule
        The points (reference coordinates) to evaluate at.
    analysis : str, optional, keyword-only
        ``"plane stress"`` or ``"plane strain"``: also compute sigma_zz (skipped when None).
    initial_strain : ndarray, shape (e, q, 3), optional, keyword-only
        The effective in-plane initial strain (e.g. thermal), subtracted before D is applied.
    initial_zz : ndarray or float, keyword-only
        Out-of-plane initial strain, for sigma_zz.
    dvol : bool, keyword-only
        Also return the volume weights w det J t.

    Returns
    -------
    RuleStress

    Notes
    -----
    Strains come from the element's own ``strain`` hook when it has one, otherwise from the
    shape-function derivatives; sigma = D (eps - eps0) (common practice). Every chunk writes its
    own slice, so the figures are the same on any thread count.
    """
    q = rule.n_points
    strain = np.empty((block.n, q, 3))
    dv = np.empty((block.n, q)) if dvol else None

    def chunk(s: int) -> None:
        conn = block.conn[s : s + CHUNK]
        coords = nodes[conn]
        ue = u[conn].reshape(coords.shape[0], -1)
        if dv is None:
            strain[s : s + CHUNK] = element_strains(block.etype, coords, block.D, ue, rule)
        else:
            det, dNdx = jacobian(block.etype, coords, rule.points)
            strain[s : s + CHUNK] = element_strains(block.etype, coords, block.D, ue, rule, dNdx)
            dv[s : s + CHUNK] = det * rule.weights[None, :] * block.thickness

    map_chunks(chunk, range(0, block.n, CHUNK))
    mech = strain if initial_strain is None else strain - initial_strain
    stress = np.einsum("ab,eqb->eqa", block.D, mech)
    szz = None
    if analysis is not None:
        if hasattr(block.material, "compliance3d"):
            szz = sigma_zz(block.material, analysis, stress, initial_zz)
        else:
            szz = np.zeros(stress.shape[:2])
    return RuleStress(strain, mech, stress, szz, dv)


def has_initial_strain(g) -> bool:
    """Whether a block's Gauss-point field (``strain``, ``mech_strain``) carries an initial strain."""
    return g.mech_strain is not g.strain and not np.array_equal(g.mech_strain, g.strain)


def nodal_average(n_nodes: int, fields: Iterable[tuple], *, empty: float = np.nan) -> np.ndarray:
    """Point values extrapolated to each element's nodes and averaged over the elements at a node.

    Parameters
    ----------
    n_nodes : int
    fields : iterable of (etype, rule, conn, values)
        Per block: the element type, the rule the values are at, the connectivity (e, k) and the
        values (e, q, c) (the same c for all blocks).
    empty : float, keyword-only
        The value at nodes that no element touches.

    Returns
    -------
    ndarray, shape (n_nodes, c)

    Notes
    -----
    Each element's values go to its nodes by the least-squares fit of :func:`extrapolation_matrix`;
    a node takes the mean over the elements that share it (common practice).
    """
    ids, parts = [], []
    for etype, rule, conn, vals in fields:
        E = extrapolation_matrix(etype, rule)  # (k, q)
        ids.append(np.asarray(conn).ravel())
        parts.append(np.einsum("kq,eqc->ekc", E, vals).reshape(-1, vals.shape[-1]))
    acc = None
    cnt = np.zeros(n_nodes)
    if ids:  # one bincount per component over all blocks: the sums of np.add.at, in the same order
        idx, nv = np.concatenate(ids), np.concatenate(parts)
        acc = np.column_stack([np.bincount(idx, nv[:, j], minlength=n_nodes) for j in range(nv.shape[1])])
        cnt = np.bincount(idx, minlength=n_nodes).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        out = acc / cnt[:, None]
    out[cnt == 0] = empty
    return out
