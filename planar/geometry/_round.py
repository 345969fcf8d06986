"""Round shapes: circles, ellipses, slots and rounded rectangles."""
from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from ..core.errors import InputError
from ._curves import TWO_PI, _Arc, _as_point, _EllipseCurve, _Line, _rotate
from ._shape_base import Point, Shape, _check_name, _finite, _positive


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
