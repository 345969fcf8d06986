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

from ._advice_node import angles, cells_at, clear_distance, fan, node_memo, peak_doc, point_source, warn_if_found
from .errors import fmt_point

__all__ = ["SHARP_KINK", "sharp_corner_at", "sharp_corner_near", "sharp_corner_peak"]

#: turn of the boundary (degrees beyond 180 of material) from which a corner counts as sharp; a 90
#: degree fillet spanned by one quadratic side turns by about 5 degrees at its ends
SHARP_KINK = 15.0


def _turn(asm, node: int) -> tuple[float, tuple[int, int]] | None:
    """The angle of material (degrees) between the tangents of the boundary sides at ``node`` and its two
    neighbours along the boundary, or None when the node is inside the mesh (or no corner of a cell)."""
    f = fan(asm, node)
    if not f.size:
        return None
    first, last = f.ends()  # the boundary side the fan of cells starts from (counter-clockwise), and its end
    if first.size != 1 or last.size != 1:
        return None
    a = f.t_next[np.flatnonzero(f.nxt == first[0])[:1]]
    q = f.t_prev[np.flatnonzero(f.prv == last[0])[:1]]
    return math.degrees(float(angles(a, q)[0])), (int(first[0]), int(last[0]))


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
    return node_memo(asm, "_planar_sharp_corners", node, lambda: _sharp_near(asm, int(node)))


def _sharp_near(asm, node: int) -> tuple[float, int] | None:
    angle = _sharp(asm, node)
    if angle is not None:
        return angle, node
    near = [asm.blocks[i].conn[rows, :asm.blocks[i].etype.corner_count()].ravel() for i, rows in cells_at(asm, node)]
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


@peak_doc
def sharp_corner_peak(result, node: int, field: str, values: np.ndarray, *, stacklevel: int = 2) -> None:
    """Warn ``"sharp-corner"`` when a stress peak sits at a sharp re-entrant corner (see the module).

    {peak check parameters}
    """
    def words(got, node: int) -> str:
        angle, corner = got
        return (f"sits {'at' if corner == node else 'next to'} a sharp re-entrant corner at "
                f"{fmt_point(result.mesh.nodes[corner])} ({angle:.0f} degrees of material, no radius): the elastic "
                "stress there is singular (M. L. Williams, J. Appl. Mech., 1952) and grows without bound as the mesh "
                "is refined, so this value is set by the mesh, not by the part. Model the corner's real radius "
                f"(Plate.fillet), or read the feature under check away from the corner: "
                f"where=planar.Outside({point_source(result.mesh.nodes[corner])}, {clear_distance(result, corner):.3g})")

    return warn_if_found(result, node, field, values, "sharp-corner", sharp_corner_near, words, stacklevel + 1)

