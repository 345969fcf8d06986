"""The ``"locking"`` check: linear elements that lock in a nearly incompressible plane-strain material.

See :mod:`planar.core.advice` for the codes; :func:`free_of_locking` also serves the ``"slender"`` check.
"""
from __future__ import annotations

import numpy as np

from .errors import fmt_point

__all__ = ["free_of_locking", "bulk_shear_ratio", "singular_vertex_share", "LOCKING_RATIO", "CROSSED_SHARE"]

#: bulk-to-shear ratio (v.Dv / w.Dw with v = (1, 1, 0), w = (1, -1, 0); 1 / (1 - 2 nu) for an
#: isotropic plane-strain material) at and above which linear elements lock: nu >= 0.48. Measured
#: on Cook's membrane (plane strain, 32 x 32 mesh, against a 48 x 48 Q9 reference): the shortfall
#: added by locking is 1 % (Q4) and 5 % (T3) at nu = 0.45, 3 % and 12 % at nu = 0.48, 6 % and 20 %
#: at nu = 0.49, and 30 % and 55 % at 0.499; the ratio grows without bound as nu -> 1/2
#: (T. J. R. Hughes, The Finite Element Method, 1987, ch. 4, nearly incompressible elasticity).
LOCKING_RATIO = 25.0
#: share of triangles with a corner at a singular vertex above which a T3 block counts as a crossed
#: ("union jack") mesh that does not lock: measured on Cook's membrane at nu = 0.4999 (32 x 32, plane
#: strain), the alternating-diagonal pattern gives 98 % of the reference, one diagonal direction 31 %
CROSSED_SHARE = 0.9


def free_of_locking(etype, rule=None, rule_mode: str = "full") -> set[str]:
    """The kinds of locking an element type with a given stiffness rule is free of.

    Parameters
    ----------
    etype : element type class
    rule : Rule, optional
        The stiffness rule used.
    rule_mode : {"full", "reduced", "selective", "custom"}

    Returns
    -------
    set of str
        A subset of ``{"volumetric", "shear"}``.
    """
    declared = getattr(etype, "free_of_locking", None)
    if declared is not None:
        return set(declared)
    if int(getattr(etype, "degree", 1)) >= 2:
        return {"volumetric", "shear"}
    if getattr(etype, "stiffness", None) is None and rule is not None and rule.n_points == 1 \
            and etype.cell == "quad":
        return {"volumetric", "shear"}  # one-point quadrilateral: no constraint to lock on
    if rule_mode == "selective" and getattr(etype, "stiffness", None) is None:
        return {"shear"}  # planar's selective rule reduces the shear terms only
    return set()


def bulk_shear_ratio(D: np.ndarray) -> float:
    """v.D v / w.D w with v = (1, 1, 0), w = (1, -1, 0): 1 / (1 - 2 nu) for an isotropic material in
    plane strain, (1 + nu) / (1 - nu) <= 3 in plane stress."""
    D = np.asarray(D, dtype=float)
    vol = D[0, 0] + D[1, 1] + D[0, 1] + D[1, 0]
    dev = D[0, 0] + D[1, 1] - D[0, 1] - D[1, 0]
    return float(vol / dev) if dev > 0 else float("inf")


def singular_vertex_share(nodes: np.ndarray, conn: np.ndarray) -> float:
    """Share of the triangles (3-node cells) away from the boundary with a corner at a singular vertex.

    A singular vertex is an interior node with four cells whose edges lie on two straight lines
    (L. R. Scott and M. Vogelius, Norm estimates for a maximal right inverse of the divergence
    operator, Math. Modelling Numer. Anal. 19, 1985): the volume constraints of the cells around it
    are linearly dependent, which is what keeps crossed ("union jack", criss-cross) triangle meshes
    from locking. Four unit edge vectors add up to zero exactly when they form two straight lines.
    """
    n = nodes.shape[0]
    c = conn[:, :3]
    xs = [nodes[c[:, j]] for j in range(3)]
    sx = np.zeros(n); sy = np.zeros(n)
    for j in range(3):
        e = np.concatenate([xs[(j + 1) % 3] - xs[j], xs[j - 1] - xs[j]])
        e = e / np.maximum(np.hypot(e[:, 0], e[:, 1]), 1e-300)[:, None]
        idx = np.concatenate([c[:, j], c[:, j]])
        sx += np.bincount(idx, e[:, 0], minlength=n)
        sy += np.bincount(idx, e[:, 1], minlength=n)
    gx = np.zeros(n); gy = np.zeros(n)  # open fans (boundary nodes): next - previous corners
    for j in range(3):
        d = xs[(j + 1) % 3] - xs[j - 1]
        gx += np.bincount(c[:, j], d[:, 0], minlength=n)
        gy += np.bincount(c[:, j], d[:, 1], minlength=n)
    scale = float(np.abs(nodes).max()) if n else 1.0
    boundary = np.abs(gx) + np.abs(gy) > 1e-10 * scale
    valence = np.bincount(c.ravel(), minlength=n)
    singular = (valence == 4) & ~boundary & (np.hypot(sx, sy) < 1e-8)
    inner = ~boundary[c].any(axis=1)  # the share is taken over cells away from the boundary
    if not inner.any():
        return 0.0
    return float(np.count_nonzero(singular[c[inner]].any(axis=1)) / np.count_nonzero(inner))


def _nu_of(material) -> str:
    nu = getattr(material, "nu", None)
    return f"nu = {float(nu):g}" if nu is not None else "a nearly incompressible material"


def _locking(asm) -> list[tuple[str, str]]:
    if asm.analysis != "plane strain":
        return []  # in plane stress the thickness changes freely: nothing to lock
    hits: dict[tuple[str, str], list] = {}
    for b in asm.blocks:
        if "volumetric" in free_of_locking(b.etype, b.rule, b.rule_mode):
            continue
        ratio = bulk_shear_ratio(b.D)
        if ratio >= LOCKING_RATIO * (1 - 1e-9):  # nu = 0.48 itself, to round-off
            if b.etype.n_nodes == 3 and b.etype.cell == "triangle" and \
                    singular_vertex_share(asm.mesh.nodes, b.conn) >= CROSSED_SHARE:
                continue  # crossed ("union jack") triangles: their volume constraints are dependent
            hits.setdefault((b.region, b.etype.name), []).append((b, ratio))
    out = []
    for (region, name), bl in hits.items():
        b, ratio = bl[0]
        n = sum(x.n for x, _ in bl)
        centre = np.concatenate([asm.mesh.nodes[x.conn[:, 0]] for x, _ in bl]).mean(axis=0)
        mode = f" ('{b.rule_mode}' rule: planar's selective rule reduces the shear terms, not the volumetric ones)" \
            if b.rule_mode == "selective" else ""
        out.append(("locking",
                    f"volumetric locking: region {region!r} (around {fmt_point(centre)}) has {n} linear {name} "
                    f"elements{mode} in plane strain with {_nu_of(b.material)} (bulk-to-shear ratio "
                    f"{ratio:.3g} >= {LOCKING_RATIO:g}, i.e. nu >= 0.48); such elements cannot deform at nearly "
                    "constant volume, so displacements and stresses come out too small (measured on Cook's "
                    "membrane: 3-20 % at nu = 0.48-0.49, 30-55 % at 0.499); use quadratic elements (order=2: "
                    "T6, Q8, Q9)" + (", or on Q4 cells the incompatible-mode QM6 of the planar-incompatible-quad "
                                     "plugin (elements={'Q4': 'QM6'})" if b.etype.cell == "quad" else "")))
    return out
