"""A pin-loaded lug: a strip with a pin hole near its end, square-ended or round-ended.

The lug lies along y with the hole centre at ``centre`` (default the origin), its end above the
hole (the direction the pin pulls the lug) and its base below, where it is held:

* ``"hole"``: the pin hole (diameter ``hole_diameter``);
* ``"end"``: the lug's end beyond the hole (a straight side for a square end, a half circle of
  radius W / 2 for a round end);
* ``"sides"``: the two long sides;
* ``"base"``: the straight side at distance ``length`` below the hole centre.

The edge distance ``e`` is measured from the hole centre to the end, along the lug (the ``e/W`` of
lug charts and of common practice, where the width is sometimes called H and the edge distance h).
A round end of radius W / 2 is centred ``e - W / 2`` beyond the hole centre, so ``e = W / 2`` gives the usual concentric round lug.

Examples
--------
>>> from planar.geometry.lugs import lug
>>> plate = lug(width=40.0, hole_diameter=16.0, edge_distance=40.0)
>>> sorted(plate.names()["edges"])
['base', 'end', 'hole', 'sides']
>>> round(plate.area(), 3) == round(40.0 * (40.0 + 88.0) - math.pi * 8.0**2, 3)  # length 2 W + D / 2 = 88
True
"""
from __future__ import annotations

import math

from ..core.errors import InputError
from ..core.values import number
from ._curves import _as_point
from ._round import Circle
from ._outline import Outline
from .plate import Plate

__all__ = ["lug", "LUG_ENDS", "LUG_EDGES"]

#: the shapes of a lug's end
LUG_ENDS = ("square", "round")
#: the named edges of a lug (:func:`lug`)
LUG_EDGES = ("hole", "end", "sides", "base")


def _length(value, what: str) -> float:
    return number(value, f"a lug's {what}", positive=True, kind="length")


def lug(width: float, hole_diameter: float, edge_distance: float, *, length: float | None = None,
        end: str = "square", centre=(0.0, 0.0)) -> Plate:
    """A lug: a strip of ``width`` with a pin hole ``edge_distance`` from its end.

    Parameters
    ----------
    width : float
        Width W of the lug across the hole.
    hole_diameter : float
        Diameter D of the pin hole (0 < D < W).
    edge_distance : float
        Distance e from the hole centre to the lug's end (e > D / 2; e >= W / 2 for a round end).
    length : float, optional
        Distance from the hole centre to the base, where the lug is held. Default ``2 W + D / 2``,
        far enough for the base to see a uniform stress (Saint-Venant; common practice).
    end : {"square", "round"}
        A square end (the lug charts' specimens) or a half circle of radius W / 2.
    centre : (x, y)
        The hole centre.

    Returns
    -------
    Plate
        With the edges ``"hole"``, ``"end"``, ``"sides"`` and ``"base"``. The plate has no thickness:
        give it to the model (``planar.Model(..., thickness=t)``).

    Raises
    ------
    InputError
        A dimension that is not a positive number, a hole as wide as the lug or reaching its end or
        base, a round end shorter than half the width, or an unknown end.
    """
    W = _length(width, "width")
    D = _length(hole_diameter, "hole_diameter")
    e = _length(edge_distance, "edge_distance")
    if D >= W:
        raise InputError(f"a lug's hole_diameter {D:g} must be less than its width {W:g}")
    if e <= D / 2:
        raise InputError(f"a lug's edge_distance {e:g} (hole centre to end) must exceed the hole radius {D / 2:g}")
    L = 2 * W + D / 2 if length is None else _length(length, "length")
    if L <= D / 2:
        raise InputError(f"a lug's length {L:g} (hole centre to base) must exceed the hole radius {D / 2:g}")
    if not isinstance(end, str) or end.strip().lower() not in LUG_ENDS:
        raise InputError(f"a lug's end must be one of {LUG_ENDS}, got {end!r}")
    end = end.strip().lower()
    cx, cy = (float(v) for v in _as_point(centre, "a lug's centre"))
    h = W / 2
    out = Outline((cx - h, cy - L), name="base").line_to((cx + h, cy - L), name="base")
    if end == "square":
        out = (out.line_to((cx + h, cy + e), name="sides").line_to((cx - h, cy + e), name="end"))
    else:
        if e < h:
            raise InputError(f"a round-ended lug's edge_distance {e:g} must be at least half its width {h:g} "
                             "(its end is a half circle of radius W / 2); use end='square'")
        top = cy + e - h  # the end's centre: on the hole centre for e = W / 2
        out = (out.line_to((cx + h, top), name="sides")
               .arc_to((cx - h, top), centre=(cx, top), name="end"))
    out = out.close(name="sides")
    return Plate(out).cut(Circle((cx, cy), D / 2, name="hole"))
