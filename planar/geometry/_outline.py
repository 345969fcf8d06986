"""Outlines drawn as a path of lines and arcs."""
from __future__ import annotations

import math

import numpy as np

from ..core.errors import GeometryError, InputError
from ._curves import TWO_PI, _Arc, _as_point, _Line, _polyline_of, _self_intersections, _signed_area
from ._shape_base import Shape, _check_name, _fmt, _positive


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
