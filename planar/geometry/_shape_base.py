"""The base of every closed shape: :class:`Shape`, the checks of its inputs, and its pieces' area and OCC build."""
from __future__ import annotations

import math

import numpy as np

from ..core.values import number
from ..core.errors import InputError
from ._curves import _Arc, _as_point, _EllipseCurve, _Line, _pieces_distance, _points_in_polygon, _polyline_of

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
        pieces = self._pieces()
        extra = []  # the exact extremes of curved pieces (a sampled circle's box is short by its chord sag)
        for p in pieces:
            if isinstance(p, _Arc):
                ang = p.a0 + np.linspace(0.0, p.sweep, 2)
                quad = 0.5 * math.pi * np.arange(math.floor(min(ang) / (0.5 * math.pi)),
                                                 math.ceil(max(ang) / (0.5 * math.pi)) + 1)
                quad = quad[(quad >= min(ang)) & (quad <= max(ang))]
                extra.append(np.asarray(p.centre) + p.radius * np.column_stack([np.cos(quad), np.sin(quad)]))
            elif isinstance(p, _EllipseCurve):
                c, s = math.cos(p.angle), math.sin(p.angle)
                hx, hy = math.hypot(p.a * c, p.b * s), math.hypot(p.a * s, p.b * c)
                extra.append(np.asarray(p.centre) + np.array([[-hx, -hy], [hx, hy]]))
        pts = np.vstack([_polyline_of(pieces, self._spacing())] + extra)
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
