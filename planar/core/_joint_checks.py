"""The checks of a fastened joint's solve: layers still free to move as rigid bodies (refused before the
solve), and the likely cause of a joint matrix too ill-conditioned to solve (for its message). Used by
:func:`planar.core._joint_solve.solve_joint`."""
from __future__ import annotations

import numpy as np

from ._tying import held_rows
from .errors import SupportError

__all__ = ["STIFF_SPRING"]


def _motion_check(joint, layers, springs) -> None:
    """Refuse a joint whose layers can still move as rigid bodies (the layers as bodies, the springs as ties).

    Each layer of one piece is a rigid body with three motions; its supports and held pins are rows
    on them, and each spring two rows tying the two layers' translations at its point (a spring of
    any stiffness stores energy in a relative translation). Layers of several pieces are left to the
    solve (a singular matrix is refused there).
    """
    from .kinematics import cell_pieces
    from ._linkage import _describe_free, _null, _support_matrix

    if any(cell_pieces(L.mesh).count != 1 for L in layers):
        return
    allxy = np.vstack([L.mesh.nodes[L.mesh.used_nodes()] for L in layers])
    xc = allxy.mean(axis=0)
    Lc = max(float(np.ptp(allxy, axis=0).max()), 1e-300)
    nb = len(layers)
    blocks = []
    for b, L in enumerate(layers):
        rows = L.cons.rows
        parts = [_support_matrix(L.mesh.nodes[rows.node], rows.direction, xc, Lc)]
        parts += [held_rows(d, xc, Lc) for d in (L.tie.data if L.tie is not None else [])]
        r = np.vstack(parts)
        if r.shape[0] > 3:
            r = np.linalg.qr(r, mode="r")
        full = np.zeros((r.shape[0], 3 * nb))
        full[:, 3 * b:3 * b + 3] = r
        blocks.append(full)
    for a, b, pts in springs:
        ex = np.tile(np.eye(2), (pts.shape[0], 1))
        r = _support_matrix(np.repeat(pts, 2, axis=0), ex, xc, Lc)
        if r.shape[0] > 3:
            r = np.linalg.qr(r, mode="r")
        full = np.zeros((r.shape[0], 3 * nb))
        full[:, 3 * a:3 * a + 3] = r
        full[:, 3 * b:3 * b + 3] = -r
        blocks.append(full)
    N = _null(np.vstack(blocks), 3 * nb)
    if N.shape[0]:
        motion = np.abs(N).reshape(N.shape[0], nb, 3).max(axis=(0, 2))
        moving = [layers[i].name for i in np.flatnonzero(motion > 1e-6 * motion.max())]
        k = int(np.argmax(motion))
        raise SupportError(f"the joint can still move, so it has no unique answer: layer(s) {', '.join(map(repr, moving))} "
                           f"move without straining ({_describe_free(N[:1, 3 * k:3 * k + 3], xc, Lc, False, xc)}); "
                           "add supports, or fasteners at two or more points between the layers")


#: a fastener spring stiffer than this many times the layers' typical diagonal stiffness is named as the
#: likely cause of a singular joint matrix (the motion check has already refused free layers)
STIFF_SPRING = 1e6


def _stiff_springs(springs: list[dict], kv: np.ndarray, plates, joint) -> str:
    """The likely cause of a joint matrix too ill-conditioned to solve, for the message: the stiffest spring
    against the layers' median diagonal stiffness when over :data:`STIFF_SPRING` times it, else free layers."""
    d = np.abs(plates.diagonal())
    typical = float(np.median(d[d > 0])) if np.any(d > 0) else 0.0
    if kv.size and typical > 0 and float(kv.max()) > STIFF_SPRING * typical:
        i = int(np.argmax(kv)) // 2
        for sd in springs:
            k = sd["points"].shape[0]
            if i < k:
                break
            i -= k
        us = joint.unit_system
        cu = f" {us.unit_of('length')}/{us.unit_of('force')}" if us.stated else ""
        name = joint.fasteners[sd["group"]].name
        return (f"the fasteners {name!r} between layers {sd['a']!r} and {sd['b']!r} have compliance "
                f"{sd['compliance'][i]:.3g}{cu}, a spring {float(kv.max()) / typical:.2g} times stiffer than the "
                "layers' elements, too stiff for the solve: give the fastener's real compliance (a number in "
                "length per force, or flexibility='huth'); one a thousandth of Huth's already acts as rigid")
    return ("a layer or a piece of one may be free to move: check its supports and that each layer is joined at "
            "two or more points")
