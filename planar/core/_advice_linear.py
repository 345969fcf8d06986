"""The ``"linear-peak"`` check: a stress peak read by linear elements at a stress raiser.

A linear element (T3, Q4, or any element type of degree 1) has a constant (T3) or nearly constant
strain, so where the stress climbs steeply to a peak at a hole, fillet, notch or re-entrant corner
the recovered peak falls short of the true one. Measured on Kirsch's plate with a hole in remote
tension (G. Kirsch 1898; exact field in S. P. Timoshenko and J. N. Goodier, Theory of Elasticity,
1970, art. 35: peak 3 S), quarter plate 5 radii wide, SPR recovery, elements of size ``h`` at the
hole growing by 1.2 away from it (the first column is checked by ``tests/test_linear_peak.py``)::

    size at the hole / radius    0.6    0.4    0.25   0.15   0.1    0.04
    T3, sigma_xx peak          -26 %   -7 %   -5 %  -0.6 %  +1 %  +0.4 %
    Q4, sigma_xx peak          -15 %  -12 %   -4 %   -1 %  +0.3 % -0.2 %
    T6, sigma_xx peak           -6 %   +3 %  -0.3 % +0.1 %  +0.1 % +0.0 %
    fall across one T3 (vM)     32 %   42 %   31 %   26 %   22 %   11 %

On the fillet (radius 5) of an L bracket 100 x 100 with legs 20 wide, clamped at its foot and pulled
sideways at its head, the peak von Mises stress of T3 with elements of 4, 2 and 0.5 at the fillet is
38, 30 and 4.5 % below the converged one (T6 at 0.5; T6 at 4 is 18 % low), with falls of 46, 39 and
21 % across the peak node's cells.

Hence the rule, made only of what a peak query has at hand (the node, its cells and the field):
a peak is taken as one at a stress raiser, where linear elements under-read it, when all of

- the node lies on a concave stretch of the boundary: it, or one of its two neighbours along the
  boundary, is a boundary node whose cells' angles add up to more than 180 degrees (a hole, a fillet,
  a notch root or a re-entrant corner; the neighbour counts where a symmetry cut meets a hole, as the
  peak node is then a corner of the cut model). A straight edge (exactly 180 degrees) and a convex
  corner are not raisers, so the clamped corner of a cantilever in bending, a point load or a
  support on a straight edge never warn here;
- the peak is at least :data:`CONCENTRATION` (1.5) times the median of ``|field|`` over the used
  nodes. The under-read is a share of the peak's excess over the field around it; below 1.5 the
  excess is a third of the peak or less (a mild raiser, Kt < 1.5), and a part in uniform or gently
  varying stress has a ratio near 1. The median, unlike the mean, is not lifted by the peak itself
  nor by a singular point;
- the field falls by :data:`STEEP_FALL` (20 %) or more of the peak from the peak node to the lowest
  node of the cells around it: the elements there are coarse for the gradient. On Kirsch's hole the
  T3 peak is within 1 % where the fall is under 20 %, and up to 31 % low above it (table above); the
  fillet above is 4 % low at a fall of 21 %: a linear mesh refined enough to read the peak is not
  warned about.

The rule misses a peak whose field does not fall across the node's cells: a ligament between two
holes crossed by one or two linear elements is stressed almost evenly across, and its peak read 22 %
low (T3, ligament 2 wide between holes of radius 10, elements of 2) with a fall of 6 %. Such peaks
are judged by ``"coarse-peak"`` (:mod:`planar.core._advice_peak`), which for linear cells sets the
cells' stresses at their own stress points against the recovered field and counts the elements
across a ligament; where this rule holds that check leaves the peak to it (one warning per peak).

The cost is that of a comparison over the corner connectivity of the blocks (to find the node's
cells, about 1 ms at 10^6 unknowns of T3), and one median over the nodes only when the node sits
in linear cells on a concave boundary with a steep fall (about 10 ms in all at 10^6 unknowns).
:func:`has_linear` tells in microseconds whether there is any linear block at all.
"""
from __future__ import annotations

import math

import numpy as np

from ._advice_node import fan, peak_doc, warn_if_found

__all__ = ["CONCENTRATION", "STEEP_FALL", "LINEAR_UNDER_READ", "is_linear", "has_linear", "linear_peak",
           "raiser_at"]

#: a peak at least this many times the median of |field| over the part counts as a concentration
CONCENTRATION = 1.5
#: a fall of the field across the peak node's cells, as a share of the peak, that linear elements
#: do not resolve (Kirsch's hole: T3 peak within 1 % below it, up to 31 % low above it)
STEEP_FALL = 0.20
#: how far linear elements typically under-read a peak at a stress raiser, in the message
LINEAR_UNDER_READ = "5-30 %"
#: angle sum above 180 degrees (in radians) that makes a boundary node concave; a straight edge is
#: 180 degrees to rounding (1e-15), a circle of 100 000 sides turns 6e-5 per node
_CONCAVE_TOL = 1e-7


def is_linear(etype) -> bool:
    """True for an element type of degree 1 (T3, Q4, or a plugin's linear element)."""
    try:
        return int(getattr(etype, "degree", 1)) <= 1
    except (TypeError, ValueError):
        return False


def has_linear(result) -> bool:
    """True when some element block of ``result`` is linear (T3, Q4, any degree-1 type).

    The cheap test a caller makes before :func:`linear_peak`: a loop over the blocks, no array work.

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(10.0, 2.0, 4, 1, "Q8")
    >>> model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=1.0), case="pull")
    >>> has_linear(planar.solve(model)["pull"])
    False
    """
    asm = getattr(result, "assembly", None)
    return asm is not None and any(is_linear(b.etype) for b in asm.blocks)


def _fan(asm, node: int):
    """The cells around ``node`` (as a corner): their linear element names, the sum of their angles
    at the node, the node's neighbours along the boundary (none inside) and the nodes of those cells."""
    f = fan(asm, node)
    names = [str(getattr(asm.blocks[i].etype, "name", asm.blocks[i].layout)) for i in np.unique(f.block)
             if is_linear(asm.blocks[i].etype)]
    if not f.size:
        return names, 0.0, np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64)
    nodes = asm.mesh.nodes
    p = nodes[node]
    a, q = nodes[f.nxt] - p, nodes[f.prv] - p  # cells counter-clockwise: from the next corner to the previous one
    ang = np.arctan2(a[:, 0] * q[:, 1] - a[:, 1] * q[:, 0], (a * q).sum(axis=1))
    # round an inner node every neighbour is once a next and once a previous corner; the ones left
    # over are its neighbours along the boundary
    return names, float(ang.sum()), np.setxor1d(f.prv, f.nxt), f.around


def _concave(asm, node: int, angle: float, ends: np.ndarray) -> float | None:
    """The angle of material (degrees) at the concave boundary node at or next to ``node``, or None.

    A boundary node is concave when the angles of its cells add up to more than 180 degrees. Its
    boundary neighbours count too: where a symmetry cut meets a hole, the peak node is a corner of
    the cut model (90 degrees and a little) whose neighbour along the hole is concave.
    """
    if ends.size == 0:
        return None
    if angle > math.pi + _CONCAVE_TOL:
        return math.degrees(angle)
    for e in ends[:2]:
        _, a, far, _ = _fan(asm, int(e))
        if far.size and a > math.pi + _CONCAVE_TOL:
            return math.degrees(a)
    return None


def raiser_at(result, node: int, values: np.ndarray) -> dict | None:
    """Why the peak of ``values`` at ``node`` counts as one at a stress raiser read by linear elements.

    Parameters
    ----------
    result : Result
    node : int
        The peak node.
    values : ndarray, shape (n,)
        The nodal field whose peak it is.

    Returns
    -------
    dict or None
        ``{"elements": [...], "angle": degrees, "ratio": peak / median, "fall": share}`` when every
        test of the module's rule holds, else None.
    """
    asm = getattr(result, "assembly", None)
    if asm is None or not has_linear(result):
        return None
    v = np.asarray(values, dtype=float).reshape(-1)
    node = int(node)
    if not (0 <= node < v.size) or not math.isfinite(v[node]) or v[node] == 0.0:
        return None
    names, angle, ends, around = _fan(asm, node)
    if not names:
        return None
    angle = _concave(asm, node, angle, ends)
    if angle is None:
        return None
    s = math.copysign(1.0, v[node])
    peak = abs(v[node])
    near = s * v[around]
    near = near[np.isfinite(near)]
    fall = (peak - float(near.min())) / peak if near.size else 0.0
    if fall < STEEP_FALL:
        return None
    used = asm.mesh.used_nodes()
    level = np.abs(v[used & np.isfinite(v)])
    med = float(np.median(level)) if level.size else 0.0
    ratio = peak / med if med > 0.0 else math.inf
    if ratio < CONCENTRATION:
        return None
    return {"elements": sorted(set(names)), "angle": float(angle), "ratio": float(ratio), "fall": float(fall)}


def linear_words(why: dict, node: int) -> str:
    """The ``"linear-peak"`` warning's words after the peak's name, from ``why`` (:func:`raiser_at`)."""
    return (f"is read by linear elements ({' and '.join(why['elements'])}) at a stress raiser: a concave edge (a "
            f"hole, fillet, notch root or re-entrant corner; {why['angle']:.0f} degrees of material round the "
            f"node) where the field is {why['ratio']:.3g} times its median over the part and falls by "
            f"{100.0 * why['fall']:.0f} % across one element. Linear elements under-read such peaks, typically "
            f"by {LINEAR_UNDER_READ} (common practice; on Kirsch's hole in tension, G. Kirsch 1898, T3 with 12 "
            "element sides round the hole reads the peak 26 % low, Q4 15 %, T6 6 %). Mesh with quadratic "
            "elements (element=\"T6\" or \"Q8\" in planar.geometry.mesh) or much finer elements there, and "
            "confirm the peak with a convergence study (planar.post.convergence_study)")


@peak_doc
def linear_peak(result, node: int, field: str, values: np.ndarray, *, stacklevel: int = 2) -> None:
    """Warn ``"linear-peak"`` when a stress peak read by linear elements sits at a stress raiser.

    The peak ``values[node]`` of the stress field ``field`` is taken as one at a stress raiser when
    the node is a corner of linear cells (T3, Q4, any element type of degree 1) on a concave stretch
    of the boundary (a hole, fillet, notch root or re-entrant corner), the peak is at least
    :data:`CONCENTRATION` times the median of ``|values|`` over the used nodes, and the field falls
    by :data:`STEEP_FALL` of the peak or more across the cells around the node (see the module's
    notes for the reasons and the figures). The warning, a
    :class:`~planar.core.errors.DiscretisationWarning`, is kept in ``result.warnings``.

    Parameters
    ----------
    {peak parameters}
    stacklevel : int, default 2
        As for :func:`warnings.warn`, counted from the caller of ``linear_peak``: 2 points the
        warning at the code that called the caller (e.g. the user's ``result.max(...)`` line); add
        one for every wrapper (decorator) in between.

    Notes
    -----
    Nothing at all is done without a linear block (:func:`has_linear`, a loop over the blocks, some
    10 microseconds). With one, the cost is a comparison over the corner connectivity of the blocks
    (to find the node's cells: about 1 ms at 10^6 unknowns of T3), and, only at a concave boundary
    node in linear cells with a steep fall, one median over the nodes (about 10 ms in all).

    Examples
    --------
    >>> import warnings
    >>> import planar
    >>> m = planar.rectangle_mesh(20.0, 4.0, 10, 2, "T3")
    >>> model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=10.0), case="pull")
    >>> r = planar.solve(model)["pull"]
    >>> v = r.field("von_mises")
    >>> linear_peak(r, int(v.argmax()), "von_mises", v)  # a straight strap: no stress raiser
    >>> [w.code for w in r.warnings if w.code == "linear-peak"]
    []
    """
    return warn_if_found(result, node, field, values, "linear-peak", lambda r, n: raiser_at(r, n, values),
                         linear_words, stacklevel + 1)
