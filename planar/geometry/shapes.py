"""Closed plane shapes: plate outlines, cut-outs and regions.

Every shape is immutable, checked when it is made, and knows its boundary as named *pieces*
(straight lines and circular arcs, or a full ellipse). Lengths are in the user's unit, angles in
degrees, counter-clockwise positive.

Examples
--------
>>> from planar.geometry import Circle, Slot, Polygon, Outline
>>> hole = Circle((50.0, 20.0), 5.0, name="bolt_hole")
>>> round(hole.area, 4)
78.5398
>>> Slot((0.0, 0.0), length=30.0, width=10.0).area > 0
True
>>> bracket = (Outline((0.0, 0.0)).line_to((60.0, 0.0))
...            .arc_to((80.0, 20.0), centre=(60.0, 20.0)).line_to((80.0, 40.0))
...            .line_to((0.0, 40.0)).close())
>>> round(bracket.area, 3)
3114.159

The base class and each family live in their own modules (``_shape_base``, ``_round``,
``_polygons``, ``_outline``); every name is importable from here as before.
"""
from __future__ import annotations

from ._outline import Outline
from ._polygons import Polygon, Rectangle, _check_polygon, _resolve_names  # noqa: F401
from ._round import Circle, Ellipse, RoundedRectangle, Slot
from ._shape_base import (Point, Shape, _check_name, _finite, _fmt, _occ_from_pieces,  # noqa: F401
                          _pieces_area, _positive)

__all__ = ["Shape", "Circle", "Ellipse", "Slot", "RoundedRectangle", "Rectangle", "Polygon", "Outline"]
