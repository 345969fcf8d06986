"""Straight-sided shapes: polygons and rectangles, with their side names."""
from __future__ import annotations

import math
from typing import Sequence

import numpy as np

from ..core.errors import GeometryError, InputError
from ._curves import _as_point, _Line, _rotate, _self_intersections, _signed_area
from ._shape_base import Shape, _check_name, _finite, _fmt, _positive


def _resolve_names(n: int, name, names, what: str) -> list[str | None]:
    if names is not None:
        names = list(names)
        if len(names) != n:
            raise InputError(f"{what} has {n} sides but {len(names)} names were given")
        for s in names:
            _check_name(s, f"{what} side name")
        if name is not None:
            raise InputError("give either name= (one name for the whole boundary) or names=, not both")
        return names
    if name is not None:
        return [name] * n
    return [None] * n


class Polygon(Shape):
    """A closed polygon given by its corners, in either direction.

    Parameters
    ----------
    points : array_like, shape (n, 2)
        The corners, n >= 3; the closing side from the last corner to the first is implied.
    name : str, optional
        One name for the whole boundary.
    names : sequence of str, optional
        A name for each side i (from corner i to corner i+1). Default as a plate outline:
        ``"edge_1"``, ``"edge_2"``, ...

    Raises
    ------
    GeometryError
        If the polygon crosses or touches itself, repeats a corner, or has no area.

    Examples
    --------
    >>> Polygon([(0, 0), (4, 0), (4, 3)]).area
    6.0
    """

    def __init__(self, points, *, name: str | None = None, names: Sequence[str] | None = None):
        try:
            pts = np.asarray(points, dtype=float)
        except (TypeError, ValueError):
            raise InputError("polygon points must be an (n, 2) array of numbers") from None
        if pts.ndim != 2 or pts.shape[1] != 2 or pts.shape[0] < 3:
            raise InputError(f"a polygon needs at least 3 corners as an (n, 2) array, got shape {pts.shape}")
        if not np.all(np.isfinite(pts)):
            raise InputError("polygon corners must be finite numbers")
        if np.allclose(pts[0], pts[-1]) and pts.shape[0] > 3:
            pts = pts[:-1]  # closed input: drop the repeated first corner
        self.points = pts
        self.name = _check_name(name)
        self.names = None if names is None else tuple(names)
        self._side_names = _resolve_names(pts.shape[0], self.name, names, "polygon")
        _check_polygon(pts, "polygon")

    def __repr__(self):
        return f"Polygon({self.points.tolist()!r}, name={self.name!r})"

    def __eq__(self, other):
        return isinstance(other, Polygon) and np.array_equal(self.points, other.points) and \
            self._side_names == other._side_names

    __hash__ = None

    def _default_side(self, i: int) -> str:
        return f"edge_{i + 1}"

    def _pieces(self, default=None):
        p = self.points
        n = p.shape[0]
        names = [s or default or self._default_side(i) for i, s in enumerate(self._side_names)]
        pieces = [_Line(tuple(p[i]), tuple(p[(i + 1) % n]), names[i]) for i in range(n)]
        if _signed_area(p) < 0:
            pieces = [q.reversed() for q in reversed(pieces)]
        return tuple(pieces)

    @property
    def area(self) -> float:
        return abs(_signed_area(self.points))

    def bounding_box(self):
        lo, hi = self.points.min(axis=0), self.points.max(axis=0)
        return float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])

    def _min_feature(self):
        e = np.roll(self.points, -1, axis=0) - self.points
        return float(np.hypot(*e.T).min())

    def _spacing(self):
        return self._scale()  # a polygon samples exactly at its corners

    def _moved(self, d):
        out = Polygon.__new__(type(self))
        out.__dict__.update(self.__dict__)
        out.points = self.points + d
        return out


class Rectangle(Polygon):
    """An axis-parallel (or turned) rectangle.

    Parameters
    ----------
    width, height : float
    corner : (x, y), optional
        Lower-left corner (before rotation). Default (0, 0) unless ``centre`` is given.
    centre : (x, y), optional
        Centre instead of the corner.
    angle : float, default 0
        Counter-clockwise rotation in degrees about the lower-left corner or the centre.
    name : str, optional
        One name for all four sides.
    names : 4 str, optional
        Names of the sides bottom, right, top, left; default ``("bottom", "right", "top", "left")``
        when the rectangle is the plate outline.

    Examples
    --------
    >>> Rectangle(200.0, 80.0).bounding_box()
    (0.0, 0.0, 200.0, 80.0)
    >>> Rectangle(20.0, 10.0, centre=(0.0, 0.0)).bounding_box()
    (-10.0, -5.0, 10.0, 5.0)
    """

    _SIDES = ("bottom", "right", "top", "left")

    def __init__(self, width: float, height: float, *, corner=None, centre=None, angle: float = 0.0,
                 name: str | None = None, names: Sequence[str] | None = None):
        w = _positive(width, "rectangle width")
        h = _positive(height, "rectangle height")
        t = math.radians(_finite(angle, "rectangle angle"))
        if corner is not None and centre is not None:
            raise InputError("give the rectangle's corner or its centre, not both")
        local = np.array([[0, 0], [w, 0], [w, h], [0, h]], float)
        if centre is not None:
            origin = _as_point(centre, "rectangle centre")
            local = local - np.array([w / 2, h / 2])
        else:
            origin = _as_point((0.0, 0.0) if corner is None else corner, "rectangle corner")
        self.width, self.height, self.angle = w, h, math.degrees(t)
        super().__init__(_rotate(local, t) + origin, name=name, names=names)

    def __repr__(self):
        return f"Rectangle({self.width}, {self.height}, corner={_fmt(self.points[0])}, name={self.name!r})"

    def _default_side(self, i: int) -> str:
        return self._SIDES[i]


def _check_polygon(pts: np.ndarray, what: str) -> None:
    e = np.roll(pts, -1, axis=0) - pts
    L = np.hypot(*e.T)
    scale = float(np.ptp(pts, axis=0).max())
    if scale == 0 or L.min() <= 1e-12 * scale:
        i = int(np.argmin(L))
        raise GeometryError(
            f"{what} repeats a corner at {_fmt(pts[i])} (sides {i + 1} and {i + 2} meet with zero length); "
            "remove the duplicate point"
        )
    hits = _self_intersections(pts, 1e-9 * scale)
    if hits:
        i, j = hits[0]
        raise GeometryError(
            f"{what} crosses itself: side {i + 1} (from {_fmt(pts[i])}) and side {j + 1} "
            f"(from {_fmt(pts[j])}) intersect; list the corners in order around the boundary"
        )
    if abs(_signed_area(pts)) <= 1e-12 * scale**2:
        raise GeometryError(f"{what} has no area: all its corners lie on one line")
