"""The classic discrete spring-and-bar model of a row of fasteners joining two plates.

The reference of the ``lap-joint`` benchmark: each plate is a chain of bars between the fasteners
(axial stiffness ``k = E t w / pitch``), each fastener a shear spring of compliance ``C`` between the
two plates at its station, as in M. B. Tate and S. J. Rosenfeld, Preliminary investigation of the loads
carried by individual bolts in bolted joints, NACA TN 1051, 1946.

Layout: fasteners ``1 .. n`` along the row. The load ``P`` enters the *bottom* plate beyond fastener
``n`` and leaves the *top* plate before fastener ``1`` (a single lap: top held at its far end, bottom
pulled at its far end). Between fasteners ``i`` and ``i + 1`` the top plate carries the load of the
fasteners beyond, ``T_i = F_{i+1} + ... + F_n``, and the bottom plate the load of those before,
``B_i = F_1 + ... + F_i``. The slip at fastener ``i`` is ``s_i = C_i F_i``, and the stretch of the two
plates between stations ``i`` and ``i + 1`` gives the compatibility

    ``C_{i+1} F_{i+1} - C_i F_i = B_i / kb_i - T_i / kt_i``,     ``i = 1 .. n - 1``,

which with ``F_1 + ... + F_n = P`` is an exact ``n x n`` linear system. The plate segments outside the
row carry the whole load or none and do not change the shares.

Examples
--------
>>> lap_joint_loads([1.0, 1.0], [1.0], [0.5])  # the hand-solved case: F1 / F2 = (C + 1/kt) / (C + 1/kb)
array([0.4, 0.6])
"""
from __future__ import annotations

import numpy as np

from ..core.errors import InputError

__all__ = ["lap_joint_loads", "bar_stiffness", "plate_loads", "TATE_ROSENFELD"]

TATE_ROSENFELD = ("M. B. Tate and S. J. Rosenfeld, Preliminary investigation of the loads carried by individual "
                  "bolts in bolted joints, NACA TN 1051, 1946 (the discrete spring-and-bar model)")


def bar_stiffness(E, t, w, pitch) -> np.ndarray:
    """Axial stiffness ``E t w / pitch`` of plate segments (force per length), broadcast over arrays."""
    arrs = [np.asarray(v, dtype=float) for v in (E, t, w, pitch)]
    if not all(np.all(np.isfinite(a)) and np.all(a > 0) for a in arrs):
        raise InputError("bar_stiffness: E, t, w and pitch must be positive finite numbers")
    E, t, w, p = arrs
    return E * t * w / p


def lap_joint_loads(compliance, k_top, k_bottom, load: float = 1.0) -> np.ndarray:
    """Each fastener's load in a row joining two plates (the exact discrete model).

    Parameters
    ----------
    compliance : array_like, shape (n,) or float
        Each fastener's shear compliance (length per force); a number for all.
    k_top, k_bottom : array_like, shape (n - 1,) or float
        Axial stiffness of each plate between consecutive fasteners (force per length).
    load : float
        The load carried through the joint.

    Returns
    -------
    numpy.ndarray, shape (n,)
        The fastener loads ``F_1 .. F_n``, adding up to ``load``; fastener 1 is at the top plate's loaded
        end, fastener n at the bottom plate's.
    """
    C = np.atleast_1d(np.asarray(compliance, dtype=float))
    n = C.size
    kt = np.broadcast_to(np.asarray(k_top, dtype=float), (max(n - 1, 0),))
    kb = np.broadcast_to(np.asarray(k_bottom, dtype=float), (max(n - 1, 0),))
    for name, a in (("compliance", C), ("k_top", kt), ("k_bottom", kb)):
        if not (np.all(np.isfinite(a)) and np.all(a > 0)):
            raise InputError(f"lap_joint_loads: {name} must be positive finite numbers")
    if n == 0:
        raise InputError("lap_joint_loads: give at least one fastener")
    i = np.arange(n - 1)[:, None]
    j = np.arange(n)[None, :]
    before = (j <= i).astype(float)  # B_i = sum_{j <= i} F_j
    A = np.zeros((n, n))
    # row i:  C_i F_i - C_{i+1} F_{i+1} + B_i / kb_i - T_i / kt_i = 0
    A[:-1] = before / kb[:, None] - (1.0 - before) / kt[:, None]
    A[i[:, 0], i[:, 0]] += C[:-1]
    A[i[:, 0], i[:, 0] + 1] -= C[1:]
    A[-1] = 1.0
    rhs = np.zeros(n)
    rhs[-1] = float(load)
    return np.linalg.solve(A, rhs)


def plate_loads(fastener_loads) -> tuple[np.ndarray, np.ndarray]:
    """(top, bottom) plate loads between consecutive fasteners, each shape (n - 1,)."""
    F = np.asarray(fastener_loads, dtype=float)
    before = np.cumsum(F)[:-1]
    return F.sum() - before, before
