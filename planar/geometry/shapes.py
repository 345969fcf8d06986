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
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Sequence

import numpy as np

from ..core.values import number
from ..core.errors import GeometryError, InputError
from ._curves import (
    TWO_PI,
    _Arc,
    _as_point,
    _EllipseCurve,
    _Line,
    _pieces_distance,
    _points_in_polygon,
    _polyline_of,
    _rotate,
    _self_intersections,
    _signed_area,
)

__all__ = ["Shape", "Circle", "Ellipse", "Slot", "RoundedRectangle", "Rectangle", "Polygon", "Outline"]

Point = tuple[float, float]


def _positive(value, what: str) -> float:
    return number(value, what, positive=True, kind="length")


def _finite(value, what: str) -> float:
    return number(value, what)


def _fmt(p) -> str:
    """A point for messages: (x, y) with 6 significant digits."""
    return "(" + ", ".join(f"{float(v):.6g}" for v in np.asarray(p).reshape(-1)) + ")"


def _check_name(name, what="name") -> str | None:
    if name is None:
        return None
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"{what} must be a non-empty string, got {name!r}")
    return name


class Shape:
    """Base of all closed shapes (a plate outline, a cut-out, or a region).

    Subclasses provide the boundary pieces, a signed distance (negative inside), the bounding box,
    the reference point used by :meth:`at`, and the gmsh surface.
    """

    name: str | None = None

    # ---------------------------------------------------------------- public
    @property
    def area(self) -> float:
        """Exact area of the shape (Green's theorem over its lines and arcs)."""
        return _pieces_area(self._pieces())

    def at(self, centre) -> "Shape":
        """A copy moved so that its reference point (its centre) lies at ``centre`` (x, y)."""
        c = _as_point(centre, "centre")
        return self._moved(c - np.asarray(self._anchor()))

    def bounding_box(self) -> tuple[float, float, float, float]:
        """(xmin, ymin, xmax, ymax) of the shape."""
        pts = _polyline_of(self._pieces(), self._spacing())
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        return float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])

    # ---------------------------------------------------------------- private protocol
    def _pieces(self, default: str | None = None) -> tuple:  # pragma: no cover - abstract
        raise NotImplementedError

    def _anchor(self) -> np.ndarray:
        x0, y0, x1, y1 = self.bounding_box()
        return np.array([(x0 + x1) / 2, (y0 + y1) / 2])

    def _moved(self, d: np.ndarray) -> "Shape":  # pragma: no cover - abstract
        raise NotImplementedError

    def _scale(self) -> float:
        x0, y0, x1, y1 = self.bounding_box()
        return float(math.hypot(x1 - x0, y1 - y0))

    def _spacing(self) -> float:
        return self._min_feature() / 16.0

    def _min_feature(self) -> float:
        return self._scale()

    def _sdf(self, pts: np.ndarray) -> np.ndarray:
        """Signed distance to the boundary, negative inside (exact magnitude for lines and arcs)."""
        pts = np.atleast_2d(np.asarray(pts, float))
        pieces = self._pieces()
        d = _pieces_distance(pts, pieces)
        inside = _points_in_polygon(pts, _polyline_of(pieces, self._spacing()))
        return np.where(inside, -d, d)

    def _samples(self) -> np.ndarray:
        """Points on the boundary, spaced finely enough for containment and overlap checks."""
        out = []
        spacing = self._min_feature() / 16.0
        for p in self._pieces():
            n = int(min(max(math.ceil(p.length / spacing), 8), 2000)) + 1
            out.append(p.sample(n)[:-1])
        return np.vstack(out)

    def _interior_points(self, n: int = 32) -> np.ndarray:
        """A grid of points strictly inside the shape (for overlap tests of areas)."""
        x0, y0, x1, y1 = self.bounding_box()
        gx, gy = np.meshgrid(np.linspace(x0, x1, n + 2)[1:-1], np.linspace(y0, y1, n + 2)[1:-1])
        pts = np.column_stack([gx.ravel(), gy.ravel()])
        inside = pts[self._sdf(pts) < 0]
        return np.vstack([inside, self._anchor()[None]]) if inside.size else self._anchor()[None]

    def _occ(self, occ) -> int:
        """Build the gmsh (OpenCASCADE) plane surface; return its tag."""
        return _occ_from_pieces(occ, self._pieces())


# ------------------------------------------------------------------------------------------ round
@dataclass(frozen=True)
class Circle(Shape):
    """A circle (a round hole, a boss, a disc-shaped plate).

    Parameters
    ----------
    centre : (x, y)
    radius : float
    name : str, optional
        Name of its boundary edge (default: given by the plate, e.g. ``"hole_1"``).

    Examples
    --------
    >>> Circle((0.0, 0.0), 2.0).area == 4.0 * math.pi
    True
    """

    centre: Point
    radius: float
    name: str | None = field(default=None, kw_only=True)

    def __post_init__(self):
        object.__setattr__(self, "centre", tuple(map(float, _as_point(self.centre, "circle centre"))))
        object.__setattr__(self, "radius", _positive(self.radius, "circle radius"))
        object.__setattr__(self, "name", _check_name(self.name))

    @property
    def area(self) -> float:
        return math.pi * self.radius**2

    def _pieces(self, default=None):
        return (_Arc(self.centre, self.radius, 0.0, TWO_PI, self.name or default or "edge"),)

    def _anchor(self):
        return np.asarray(self.centre)

    def _moved(self, d):
        return replace(self, centre=tuple(np.asarray(self.centre) + d))

    def _scale(self):
        return 2.0 * self.radius

    def _sdf(self, pts):
        pts = np.atleast_2d(np.asarray(pts, float))
        return np.hypot(*(pts - np.asarray(self.centre)).T) - self.radius

    def _occ(self, occ):
        return occ.addDisk(self.centre[0], self.centre[1], 0.0, self.radius, self.radius)


@dataclass(frozen=True)
class Ellipse(Shape):
    """An ellipse with semi-axes ``a`` (along the shape's x axis) and ``b``, turned by ``angle``.

    Parameters
    ----------
    centre : (x, y)
    a, b : float
        Semi-axes before rotation: ``a`` along x, ``b`` along y.
    angle : float, default 0
        Counter-clockwise rotation in degrees.
    name : str, optional

    Examples
    --------
    >>> round(Ellipse((0.0, 0.0), 3.0, 1.0, angle=30.0).area, 6) == round(3.0 * math.pi, 6)
    True
    """

    centre: Point
    a: float
    b: float
    angle: float = field(default=0.0, kw_only=True)
    name: str | None = field(default=None, kw_only=True)

    def __post_init__(self):
        object.__setattr__(self, "centre", tuple(map(float, _as_point(self.centre, "ellipse centre"))))
        object.__setattr__(self, "a", _positive(self.a, "ellipse semi-axis a"))
        object.__setattr__(self, "b", _positive(self.b, "ellipse semi-axis b"))
        object.__setattr__(self, "angle", _finite(self.angle, "ellipse angle"))
        object.__setattr__(self, "name", _check_name(self.name))

    @property
    def area(self) -> float:
        return math.pi * self.a * self.b

    def _curve(self, name=None):
        return _EllipseCurve(self.centre, self.a, self.b, math.radians(self.angle), name)

    def _pieces(self, default=None):
        return (self._curve(self.name or default or "edge"),)

    def _anchor(self):
        return np.asarray(self.centre)

    def _moved(self, d):
        return replace(self, centre=tuple(np.asarray(self.centre) + d))

    def bounding_box(self):
        t = math.radians(self.angle)
        hx = math.hypot(self.a * math.cos(t), self.b * math.sin(t))
        hy = math.hypot(self.a * math.sin(t), self.b * math.cos(t))
        cx, cy = self.centre
        return cx - hx, cy - hy, cx + hx, cy + hy

    def _min_feature(self):
        return 2.0 * min(self.a, self.b)

    def _spacing(self):
        # the flat ends of a slender ellipse need fine sampling
        return min(self.a, self.b) ** 2 / max(self.a, self.b) / 4.0

    def _sdf(self, pts):
        return self._curve().signed(np.atleast_2d(np.asarray(pts, float)))

    def _samples(self):
        n = int(min(max(math.ceil(self._curve().length / self._spacing()), 64), 4000))
        return self._curve().sample(n + 1)[:-1]

    def _occ(self, occ):
        t = math.radians(self.angle)
        a, b = self.a, self.b
        if a < b:  # gmsh wants the major radius first, along xAxis
            a, b, t = b, a, t + math.pi / 2
        return occ.addDisk(self.centre[0], self.centre[1], 0.0, a, b,
                           zAxis=[0.0, 0.0, 1.0], xAxis=[math.cos(t), math.sin(t), 0.0])


@dataclass(frozen=True)
class Slot(Shape):
    """An obround slot: two half circles joined by straight sides.

    Parameters
    ----------
    centre : (x, y)
    length : float
        Overall length, tip to tip, along the slot's axis.
    width : float
        Width (the diameter of the round ends); must be less than ``length``.
    angle : float, default 0
        Direction of the slot's axis, degrees counter-clockwise from x.
    name : str, optional

    Examples
    --------
    >>> s = Slot((0.0, 0.0), length=30.0, width=10.0)
    >>> round(s.area, 4) == round(20.0 * 10.0 + math.pi * 25.0, 4)
    True
    """

    centre: Point
    length: float
    width: float
    angle: float = field(default=0.0, kw_only=True)
    name: str | None = field(default=None, kw_only=True)

    def __post_init__(self):
        object.__setattr__(self, "centre", tuple(map(float, _as_point(self.centre, "slot centre"))))
        object.__setattr__(self, "length", _positive(self.length, "slot length"))
        object.__setattr__(self, "width", _positive(self.width, "slot width"))
        object.__setattr__(self, "angle", _finite(self.angle, "slot angle"))
        object.__setattr__(self, "name", _check_name(self.name))
        if not self.length > self.width:
            raise InputError(
                f"slot length ({self.length}) must exceed its width ({self.width}); "
                "for equal values use a Circle"
            )

    def _axis(self):
        t = math.radians(self.angle)
        u = np.array([math.cos(t), math.sin(t)])
        half = (self.length - self.width) / 2
        c = np.asarray(self.centre)
        return c - half * u, c + half * u, t

    def _pieces(self, default=None):
        p, q, t = self._axis()
        r = self.width / 2
        n = np.array([-math.sin(t), math.cos(t)])
        nm = self.name or default or "edge"
        return (
            _Line(tuple(p - r * n), tuple(q - r * n), nm),
            _Arc(tuple(q), r, t - math.pi / 2, math.pi, nm),
            _Line(tuple(q + r * n), tuple(p + r * n), nm),
            _Arc(tuple(p), r, t + math.pi / 2, math.pi, nm),
        )

    def _anchor(self):
        return np.asarray(self.centre)

    def _moved(self, d):
        return replace(self, centre=tuple(np.asarray(self.centre) + d))

    def _min_feature(self):
        return self.width

    def _sdf(self, pts):
        pts = np.atleast_2d(np.asarray(pts, float))
        p, q, _ = self._axis()
        from ._curves import _segment_distance

        return _segment_distance(pts, p[None], q[None])[:, 0] - self.width / 2


@dataclass(frozen=True)
class RoundedRectangle(Shape):
    """A rectangle with all four corners rounded to ``radius``.

    Parameters
    ----------
    centre : (x, y)
    width, height : float
        Overall sizes along the shape's x and y before rotation.
    radius : float
        Corner radius, at most half the smaller side.
    angle : float, default 0
        Counter-clockwise rotation in degrees.
    name : str, optional

    Examples
    --------
    >>> r = RoundedRectangle((0.0, 0.0), 40.0, 20.0, 5.0)
    >>> round(r.area, 6) == round(40.0 * 20.0 - (4.0 - math.pi) * 25.0, 6)
    True
    """

    centre: Point
    width: float
    height: float
    radius: float
    angle: float = field(default=0.0, kw_only=True)
    name: str | None = field(default=None, kw_only=True)

    def __post_init__(self):
        object.__setattr__(self, "centre", tuple(map(float, _as_point(self.centre, "rounded rectangle centre"))))
        object.__setattr__(self, "width", _positive(self.width, "rounded rectangle width"))
        object.__setattr__(self, "height", _positive(self.height, "rounded rectangle height"))
        object.__setattr__(self, "radius", _positive(self.radius, "corner radius"))
        object.__setattr__(self, "angle", _finite(self.angle, "rounded rectangle angle"))
        object.__setattr__(self, "name", _check_name(self.name))
        if self.radius > min(self.width, self.height) / 2 * (1 + 1e-12):
            raise InputError(
                f"corner radius {self.radius} exceeds half the smaller side "
                f"({min(self.width, self.height) / 2}); make it smaller or use a Slot"
            )

    def _pieces(self, default=None):
        w, h, r = self.width / 2, self.height / 2, self.radius
        t = math.radians(self.angle)
        c = np.asarray(self.centre)
        nm = self.name or default or "edge"

        def g(p):
            return tuple(_rotate(np.asarray(p, float), t) + c)

        out = []
        corners = [((w - r), (-h + r), -math.pi / 2), ((w - r), (h - r), 0.0),
                   ((-w + r), (h - r), math.pi / 2), ((-w + r), (-h + r), math.pi)]
        # walk counter-clockwise: bottom side, bottom-right corner, right side, ...
        for k, (cx, cy, a) in enumerate(corners):
            prev = corners[k - 1]
            start = np.array([prev[0], prev[1]]) + r * np.array([math.cos(prev[2] + math.pi / 2),
                                                               math.sin(prev[2] + math.pi / 2)])
            end = np.array([cx, cy]) + r * np.array([math.cos(a), math.sin(a)])
            if np.hypot(*(end - start)) > 1e-12 * max(w, h):
                out.append(_Line(g(start), g(end), nm))
            out.append(_Arc(g((cx, cy)), r, a + t, math.pi / 2, nm))
        return tuple(out)

    def _anchor(self):
        return np.asarray(self.centre)

    def _moved(self, d):
        return replace(self, centre=tuple(np.asarray(self.centre) + d))

    def _min_feature(self):
        return min(self.width, self.height)

    def _sdf(self, pts):
        pts = np.atleast_2d(np.asarray(pts, float))
        q = np.abs(_rotate(pts - np.asarray(self.centre), -math.radians(self.angle)))
        q = q - np.array([self.width / 2 - self.radius, self.height / 2 - self.radius])
        outside = np.hypot(*np.maximum(q, 0.0).T)
        return outside + np.minimum(np.maximum(q[:, 0], q[:, 1]), 0.0) - self.radius


# ------------------------------------------------------------------------------------------ straight
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


# ------------------------------------------------------------------------------------------ outline
class Outline(Shape):
    """A closed boundary of straight lines and circular arcs, drawn like a pen path.

    Start at a point, add pieces with :meth:`line_to` and :meth:`arc_to`, and finish with
    :meth:`close`. Every method returns a new outline. Pieces without a name are called
    ``"edge_1"``, ``"edge_2"``, ... in drawing order when the outline is the plate outline.

    Parameters
    ----------
    start : (x, y)
        The first point.
    name : str, optional
        One name for every piece that has no name of its own.

    Examples
    --------
    >>> lug = (Outline((0.0, 0.0)).line_to((40.0, 0.0), name="base")
    ...        .line_to((40.0, 30.0)).arc_to((0.0, 30.0), centre=(20.0, 30.0)).close())
    >>> round(lug.area, 4) == round(40.0 * 30.0 + math.pi * 20.0**2 / 2, 4)
    True
    """

    def __init__(self, start, *, name: str | None = None):
        self._start = tuple(_as_point(start, "outline start"))
        self._segs: tuple = ()
        self._closed = False
        self.name = _check_name(name)

    # ------------------------------------------------------------------ drawing
    def _copy_with(self, seg, closed=False) -> "Outline":
        if self._closed:
            raise GeometryError("this outline is already closed; start a new Outline to draw more")
        out = Outline.__new__(Outline)
        out._start, out.name = self._start, self.name
        out._segs = self._segs + (seg,)
        out._closed = closed
        return out

    @property
    def _pen(self) -> np.ndarray:
        return self._segs[-1].end if self._segs else np.asarray(self._start)

    def line_to(self, point, *, name: str | None = None) -> "Outline":
        """Add a straight line from the current point to ``point``."""
        p = _as_point(point, "line end")
        if np.hypot(*(p - self._pen)) == 0:
            raise GeometryError(f"a line from {_fmt(self._pen)} to itself has no length; remove it")
        return self._copy_with(_Line(tuple(self._pen), tuple(p), _check_name(name)))

    def arc_to(self, point, *, centre=None, through=None, radius: float | None = None,
               clockwise: bool = False, name: str | None = None) -> "Outline":
        """Add a circular arc from the current point to ``point``.

        Give exactly one of ``centre`` (the arc turns counter-clockwise about it unless
        ``clockwise``), ``through`` (a third point on the arc), or ``radius`` (the shorter arc of
        that radius, turning counter-clockwise unless ``clockwise``).
        """
        p1 = _as_point(point, "arc end")
        p0 = self._pen
        given = [x is not None for x in (centre, through, radius)]
        if sum(given) != 1:
            raise InputError("arc_to needs exactly one of centre=, through= or radius=")
        chord = float(np.hypot(*(p1 - p0)))
        if chord == 0:
            raise GeometryError("an arc must end at a point other than its start; use a Circle for a full circle")
        if through is not None:
            arc = _Arc.through(p0, _as_point(through, "arc point"), p1, _check_name(name))
        elif centre is not None:
            c = _as_point(centre, "arc centre")
            r0, r1 = np.hypot(*(p0 - c)), np.hypot(*(p1 - c))
            if abs(r0 - r1) > 1e-7 * max(r0, r1):
                raise GeometryError(
                    f"the arc's start {_fmt(p0)} and end {_fmt(p1)} are at different distances "
                    f"({r0:g} and {r1:g}) from the centre {_fmt(c)}; move the centre or the end point"
                )
            a0 = math.atan2(p0[1] - c[1], p0[0] - c[0])
            a1 = math.atan2(p1[1] - c[1], p1[0] - c[0])
            sweep = (a1 - a0) % TWO_PI
            if clockwise:
                sweep -= TWO_PI
            arc = _Arc(tuple(c), float(r0), a0, sweep, _check_name(name))
        else:
            r = _positive(radius, "arc radius")
            if chord > 2 * r * (1 + 1e-12):
                raise GeometryError(
                    f"an arc of radius {r:g} cannot span the distance {chord:g} from {_fmt(p0)} to {_fmt(p1)}; "
                    f"use a radius of at least {chord / 2:g}"
                )
            m = (p0 + p1) / 2
            u = (p1 - p0) / chord
            left = np.array([-u[1], u[0]])
            off = math.sqrt(max(r * r - chord * chord / 4, 0.0))
            c = m + (-off if clockwise else off) * left
            a0 = math.atan2(p0[1] - c[1], p0[0] - c[0])
            sweep = 2 * math.asin(min(chord / (2 * r), 1.0)) * (-1 if clockwise else 1)
            arc = _Arc(tuple(c), r, a0, sweep, _check_name(name))
        return self._copy_with(arc)

    def close(self, *, name: str | None = None) -> "Outline":
        """Close the outline with a straight line back to the start (if not already there)."""
        if self._closed:
            raise GeometryError("this outline is already closed")
        if not self._segs:
            raise GeometryError("an outline needs at least two pieces before it can be closed")
        gap = float(np.hypot(*(self._pen - np.asarray(self._start))))
        scale = max(self._scale_raw(), 1e-300)
        if gap > 1e-9 * scale:
            out = self._copy_with(_Line(tuple(self._pen), self._start, _check_name(name)), closed=True)
        else:
            out = Outline.__new__(Outline)
            out._start, out.name, out._segs, out._closed = self._start, self.name, self._segs, True
        if len(out._segs) < 2 or (len(out._segs) == 2 and all(isinstance(s, _Line) for s in out._segs)):
            raise GeometryError("an outline needs at least three straight sides, or arcs, to enclose an area")
        out._check()
        return out

    @classmethod
    def _from_pieces(cls, pieces) -> "Outline":
        out = Outline.__new__(Outline)
        out._start = tuple(pieces[0].start)
        out._segs = tuple(pieces)
        out._closed = True
        out.name = None
        return out

    # ------------------------------------------------------------------ checks and protocol
    def _scale_raw(self) -> float:
        pts = np.vstack([np.asarray(self._start)[None]] + [s.sample(9) for s in self._segs])
        return float(np.ptp(pts, axis=0).max())

    def _require_closed(self):
        if not self._closed:
            raise GeometryError("the outline is not closed; finish it with .close()")

    def _check(self):
        pieces = self._segs
        scale = self._scale_raw()
        for s in pieces:
            if isinstance(s, _Arc) and s.length <= 1e-12 * scale:
                raise GeometryError("the outline has an arc of zero length; remove it")
        poly = _polyline_of(pieces, scale / 256)
        hits = _self_intersections(poly, 1e-9 * scale)
        if hits:
            i, _ = hits[0]
            raise GeometryError(
                f"the outline crosses or touches itself near {_fmt(poly[i])}; "
                "check the order of its points and the direction of its arcs (clockwise=)"
            )
        if abs(_signed_area(poly)) <= 1e-12 * scale**2:
            raise GeometryError("the outline encloses no area")

    def _pieces(self, default=None):
        self._require_closed()
        segs = [s.named(s.name or self.name or default or f"edge_{i + 1}") for i, s in enumerate(self._segs)]
        poly = _polyline_of(segs, self._scale_raw() / 256)
        if _signed_area(poly) < 0:
            segs = [s.reversed() for s in reversed(segs)]
        # snap the chain: every piece starts exactly where the previous ended
        return tuple(segs)

    def _spacing(self):
        return self._min_feature() / 16.0

    def _min_feature(self):
        self._require_closed()
        return min(s.length for s in self._segs)

    def _moved(self, d):
        self._require_closed()
        out = Outline._from_pieces([s.moved(d) for s in self._segs])
        out.name = self.name
        return out

    def __repr__(self):
        state = "closed" if self._closed else "open"
        return f"Outline(start={self._start}, {len(self._segs)} pieces, {state})"


# ------------------------------------------------------------------------------------------ helpers
def _pieces_area(pieces) -> float:
    """Area enclosed by a closed chain of pieces: 1/2 * contour integral of (x dy - y dx)."""
    total = 0.0
    for p in pieces:
        if isinstance(p, _Line):
            (x0, y0), (x1, y1) = p.p0, p.p1
            total += x0 * y1 - x1 * y0
        elif isinstance(p, _Arc):
            cx, cy = p.centre
            r, a0, a1 = p.radius, p.a0, p.a0 + p.sweep
            total += r * cx * (math.sin(a1) - math.sin(a0)) - r * cy * (math.cos(a1) - math.cos(a0)) + r * r * p.sweep
        elif isinstance(p, _EllipseCurve):
            return math.pi * p.a * p.b
    return float(abs(0.5 * total))


def _occ_from_pieces(occ, pieces) -> int:
    """Plane surface bounded by a closed chain of lines and arcs (arcs split to <= 90 degrees)."""
    if len(pieces) == 1 and isinstance(pieces[0], _Arc) and pieces[0].full:
        p = pieces[0]
        return occ.addDisk(p.centre[0], p.centre[1], 0.0, p.radius, p.radius)
    first = occ.addPoint(*pieces[0].start, 0.0)
    cur = first
    curves = []
    for k, p in enumerate(pieces):
        last = k == len(pieces) - 1
        nxt = first if last else occ.addPoint(*p.end, 0.0)
        if isinstance(p, _Line):
            curves.append(occ.addLine(cur, nxt))
        else:
            nsub = max(1, math.ceil(abs(p.sweep) / (math.pi / 2) - 1e-9))
            centre = occ.addPoint(p.centre[0], p.centre[1], 0.0)
            a = cur
            for j in range(1, nsub + 1):
                if j == nsub:
                    b = nxt
                else:
                    ang = p.a0 + p.sweep * j / nsub
                    b = occ.addPoint(p.centre[0] + p.radius * math.cos(ang),
                                     p.centre[1] + p.radius * math.sin(ang), 0.0)
                curves.append(occ.addCircleArc(a, centre, b))
                a = b
            occ.remove([(0, centre)])
        cur = nxt
    loop = occ.addCurveLoop(curves)
    return occ.addPlaneSurface([loop])
