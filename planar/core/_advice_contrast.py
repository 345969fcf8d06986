"""The ``"contrast"`` check: neighbouring regions whose membrane stiffness E t differs by more than 1e6."""
from __future__ import annotations

import numpy as np

from .errors import fmt_point

__all__ = ["CONTRAST_LIMIT"]

#: stiffness (E t) contrast between neighbouring regions that signals a modelling issue: the soft
#: region then takes less than a millionth of the strain energy it would in a balanced model and the
#: stiff one is practically rigid; the solve's own conditioning check refuses far larger contrasts
CONTRAST_LIMIT = 1e6


def _contrast(asm) -> list[tuple[str, str]]:
    regions = sorted({b.region for b in asm.blocks})
    if len(regions) < 2:
        return []
    stiff = {}
    for b in asm.blocks:
        s = 0.5 * float(b.D[0, 0] + b.D[1, 1]) * float(b.thickness)
        stiff[b.region] = max(stiff.get(b.region, 0.0), s)
    vals = np.array([stiff[r] for r in regions])
    if vals.max() <= CONTRAST_LIMIT * vals.min():
        return []  # no pair can exceed the limit: no need to find the neighbours
    n = asm.mesh.n_nodes
    idx = {r: i for i, r in enumerate(regions)}
    owner = np.zeros((len(regions), n), dtype=bool)
    for b in asm.blocks:
        owner[idx[b.region], b.conn.ravel()] = True
    shared = owner.astype(np.float32) @ owner.T.astype(np.float32)  # nodes in common, per pair
    out = []
    ratio_all = np.maximum(vals[:, None], vals[None, :]) / np.minimum(vals[:, None], vals[None, :])
    for i, j in np.argwhere(np.triu((shared > 0) & (ratio_all > CONTRAST_LIMIT), 1)):  # flagged pairs only
        hi, lo = (i, j) if vals[i] >= vals[j] else (j, i)
        ratio = vals[hi] / vals[lo]
        where = np.flatnonzero(owner[i] & owner[j])
        out.append(("contrast",
                    f"extreme stiffness contrast: region {regions[hi]!r} is {ratio:.3g} times stiffer (E t, "
                    f"modulus times thickness) than its neighbour {regions[lo]!r}, which it meets at "
                    f"{where.size} node(s) near {fmt_point(asm.mesh.nodes[where].mean(axis=0))}; beyond "
                    f"{CONTRAST_LIMIT:.0e} the stiff region is practically rigid and the soft one's answer "
                    "rests on the last digits of the stiffness sums; check the units and values of the "
                    "materials and thicknesses, or model the stiff part as a support or the soft one apart"))
    return out
