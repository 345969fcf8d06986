"""The ``"sharp-corner"`` check: a stress peak read at a sharp re-entrant corner of the boundary.

Where two straight (or curved) sides of a part meet at an angle of material above 180 degrees with no
radius between them, the linear-elastic stress is singular: it grows as r^(lambda - 1) towards the
corner, lambda < 1 (M. L. Williams, "Stress singularities resulting from various boundary conditions
in angular corners of plates in extension", J. Appl. Mech. 19, 1952: lambda = 0.544 for 270 degrees).
A peak read there is set by the mesh, not by the part: it doubles for every few halvings of the
element size and has no converged value, so it must not be compared with an allowable as if it were
one (a real part has a radius there, or is judged by a method that allows for the singularity).

A boundary node is taken as a sharp re-entrant corner when the angle of material between the
tangents of its two boundary sides (taken through the mid-side node of a quadratic side, so a
curved side counts with its own tangent, not its chord) exceeds 180 degrees by at least
:data:`SHARP_KINK`, and each of its two boundary neighbours turns by less than a third of that: a
true corner has straight or smooth sides on either hand, while a coarsely meshed fillet or hole
turns by about as much at every node along it.
"""
from __future__ import annotations

import math

import numpy as np

from .errors import InputError, fmt_point, warn
from .fields import FIELD_TABLE
from .units import stress_unit

__all__ = ["SHARP_KINK", "sharp_corner_at", "sharp_corner_near", "sharp_corner_peak"]

#: turn of the boundary (degrees beyond 180 of material) from which a corner counts as sharp; a 90
#: degree fillet spanned by one quadratic side turns by about 5 degrees at its ends
SHARP_KINK = 15.0


def _turn(asm, node: int) -> tuple[float, tuple[int, int]] | None:
    """The angle of material (degrees) between the tangents of the boundary sides at ``node`` and its two
    neighbours along the boundary, or None when the node is inside the mesh (or no corner of a cell)."""
    nodes = asm.mesh.nodes
    p = nodes[node]
    prev, nxt = [], []
    mids: dict[int, int] = {}
    for b in asm.blocks:
        k = b.etype.corner_count()
        c = b.conn[:, :k]
        hit = np.flatnonzero(c.ravel() == node)
        if hit.size == 0:
            continue
        rows, j = hit // k, hit % k
        pv, nx = c[rows, (j - 1) % k], c[rows, (j + 1) % k]
        prev.append(pv)
        nxt.append(nx)
        edges = np.asarray(b.etype.edges)
        if edges.shape[1] > 2:  # the mid-side node of each side from the node to a neighbour
            for r, jj, a, z in zip(rows, j, pv, nx):
                for row in edges:
                    if {int(row[0]), int(row[1])} == {int(jj), int((jj + 1) % k)}:
                        mids[int(z)] = int(b.conn[r, row[2]])
                    elif {int(row[0]), int(row[1])} == {int(jj), int((jj - 1) % k)}:
                        mids[int(a)] = int(b.conn[r, row[2]])
    if not prev:
        return None
    prev, nxt = np.concatenate(prev), np.concatenate(nxt)
    first = np.setdiff1d(nxt, prev)   # the boundary side the fan of cells starts from (counter-clockwise)
    last = np.setdiff1d(prev, nxt)    # and the one it ends at
    if first.size != 1 or last.size != 1:
        return None

    def tangent(e: int) -> np.ndarray:
        m = mids.get(e)
        return nodes[e] - p if m is None else -3.0 * p + 4.0 * nodes[m] - nodes[e]

    a, q = tangent(int(first[0])), tangent(int(last[0]))
    ang = math.atan2(a[0] * q[1] - a[1] * q[0], float(a @ q)) % (2.0 * math.pi)
    return math.degrees(ang), (int(first[0]), int(last[0]))


def sharp_corner_at(result, node: int) -> float | None:
    """The angle of material (degrees) at ``node`` when it is a sharp re-entrant corner, else None.

    Parameters
    ----------
    result : Result
    node : int

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(20.0, 4.0, 10, 2, "Q8")
    >>> model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=10.0), case="pull")
    >>> sharp_corner_at(planar.solve(model)["pull"], 0) is None   # a convex corner of a strap
    True
    """
    got = sharp_corner_near(result, node)
    return None if got is None or got[1] != int(node) else got[0]


def sharp_corner_near(result, node: int) -> tuple[float, int] | None:
    """(angle of material in degrees, corner node) of a sharp re-entrant corner at ``node`` or at a
    corner of a cell that ``node`` belongs to (a recovered peak may sit one node off the corner); None
    when there is none.
    """
    asm = getattr(result, "assembly", None)
    if asm is None:
        return None
    node = int(node)
    if _sharp(asm, node) is not None:
        return _sharp(asm, node), node
    near = []
    for b in asm.blocks:
        rows = np.flatnonzero((b.conn == node).any(axis=1))
        if rows.size:
            near.append(b.conn[rows, :b.etype.corner_count()].ravel())
    for c in np.unique(np.concatenate(near)) if near else ():
        angle = _sharp(asm, int(c)) if int(c) != node else None
        if angle is not None:
            return angle, int(c)
    return None


def _sharp(asm, node: int) -> float | None:
    got = _turn(asm, node)
    if got is None:
        return None
    angle, ends = got
    kink = angle - 180.0
    if kink < SHARP_KINK:
        return None
    for e in ends:
        other = _turn(asm, e)
        if other is not None and abs(other[0] - 180.0) >= kink / 3.0:
            return None  # the boundary turns as much next door: a coarsely meshed curve, not a corner
    return angle


def sharp_corner_peak(result, node: int, field: str, values: np.ndarray, *, stacklevel: int = 2) -> None:
    """Warn ``"sharp-corner"`` when a stress peak sits at a sharp re-entrant corner (see the module).

    Parameters
    ----------
    result : Result
    node : int
        The peak node.
    field : str
        The field's name; fields that are not stresses never warn.
    values : ndarray, shape (n,)
        The nodal field the peak was taken from.
    stacklevel : int, default 2
        As for :func:`warnings.warn`, counted from the caller of this function.
    """
    info = FIELD_TABLE.get(field)
    if info is None or info.unit != "stress":
        return None
    got = sharp_corner_near(result, node)
    if got is None:
        return None
    angle, corner = got
    node = int(node)
    value = float(np.asarray(values).reshape(-1)[node])
    try:
        unit = stress_unit(str(getattr(result, "units", "") or "")) or "(model stress units)"
    except InputError:  # units text of no known system
        unit = "(model stress units)"
    warn(f"sharp-corner: the peak {field} of {value:.4g} {unit} at {fmt_point(result.mesh.nodes[node])} (node "
         f"{node}) sits {'at' if corner == node else 'next to'} a sharp re-entrant corner at "
         f"{fmt_point(result.mesh.nodes[corner])} ({angle:.0f} degrees of material, no radius): the elastic "
         "stress there is singular (M. L. Williams, J. Appl. Mech., 1952) and grows without bound as the mesh "
         "is refined, so this value is set by the mesh, not by the part. Model the corner's real radius "
         "(Plate.fillet), or read the feature under check with where= away from the corner",
         "sharp-corner", sink=result.warnings, stacklevel=stacklevel + 1)
    return None
