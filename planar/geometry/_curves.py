"""Boundary pieces (straight lines, circular arcs, full ellipses) and plane-geometry helpers.

Pure numpy, no gmsh. A *piece* is one named part of a shape's boundary; the geometry layer uses pieces
to check input before gmsh sees it, to build the gmsh curves, and to name the curves gmsh returns
(a final curve gets the name of the piece its sample points lie on).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

TWO_PI = 2.0 * math.pi


def _as_point(p, what: str = "point") -> np.ndarray:
    from ..core.errors import InputError

    try:
        a = np.asarray(p, dtype=float).reshape(-1)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a pair of numbers (x, y), got {p!r}") from None
    if a.shape != (2,) or not np.all(np.isfinite(a)):
        raise InputError(f"{what} must be a pair of finite numbers (x, y), got {p!r}")
    return a


def _rotate(v: np.ndarray, angle: float) -> np.ndarray:
    c, s = math.cos(angle), math.sin(angle)
    v = np.asarray(v, dtype=float)
    return np.stack([c * v[..., 0] - s * v[..., 1], s * v[..., 0] + c * v[..., 1]], axis=-1)


# --------------------------------------------------------------------------------------------- pieces
@dataclass(frozen=True)
class _Line:
    p0: tuple[float, float]
    p1: tuple[float, float]
    name: str | None = None

    @property
    def start(self) -> np.ndarray:
        return np.asarray(self.p0, float)

    @property
    def end(self) -> np.ndarray:
        return np.asarray(self.p1, float)

    @property
    def length(self) -> float:
        return float(np.hypot(*(self.end - self.start)))

    def sample(self, n: int) -> np.ndarray:
        t = np.linspace(0.0, 1.0, max(int(n), 2))[:, None]
        return self.start + t * (self.end - self.start)

    def distance(self, pts: np.ndarray) -> np.ndarray:
        return _segment_distance(pts, self.start[None], self.end[None])[:, 0]

    def reversed(self) -> "_Line":
        return _Line(self.p1, self.p0, self.name)

    def moved(self, d: np.ndarray) -> "_Line":
        return _Line(tuple(self.start + d), tuple(self.end + d), self.name)

    def mirrored(self, axis: int, at: float) -> "_Line":
        return _Line(_mirror_pt(self.p0, axis, at), _mirror_pt(self.p1, axis, at), self.name)

    def named(self, name):
        return replace(self, name=name)


@dataclass(frozen=True)
class _Arc:
    """Circular arc: centre, radius, start angle and signed sweep (radians, + counter-clockwise)."""

    centre: tuple[float, float]
    radius: float
    a0: float
    sweep: float
    name: str | None = None

    @property
    def start(self) -> np.ndarray:
        return np.asarray(self.centre) + self.radius * np.array([math.cos(self.a0), math.sin(self.a0)])

    @property
    def end(self) -> np.ndarray:
        a1 = self.a0 + self.sweep
        return np.asarray(self.centre) + self.radius * np.array([math.cos(a1), math.sin(a1)])

    @property
    def full(self) -> bool:
        return abs(abs(self.sweep) - TWO_PI) < 1e-12

    @property
    def length(self) -> float:
        return abs(self.sweep) * self.radius

    def sample(self, n: int) -> np.ndarray:
        a = self.a0 + self.sweep * np.linspace(0.0, 1.0, max(int(n), 2))
        return np.asarray(self.centre) + self.radius * np.column_stack([np.cos(a), np.sin(a)])

    def distance(self, pts: np.ndarray) -> np.ndarray:
        pts = np.asarray(pts, float)
        d = pts - np.asarray(self.centre)
        rho = np.hypot(d[:, 0], d[:, 1])
        on_circle = np.abs(rho - self.radius)
        if self.full:
            return on_circle
        ang = np.arctan2(d[:, 1], d[:, 0])
        t = np.mod((ang - self.a0) * math.copysign(1.0, self.sweep), TWO_PI)
        within = t <= abs(self.sweep) + 1e-12
        ends = np.minimum(np.hypot(*(pts - self.start).T), np.hypot(*(pts - self.end).T))
        return np.where(within, on_circle, ends)

    def reversed(self) -> "_Arc":
        return _Arc(self.centre, self.radius, self.a0 + self.sweep, -self.sweep, self.name)

    def moved(self, d: np.ndarray) -> "_Arc":
        return replace(self, centre=tuple(np.asarray(self.centre) + d))

    def mirrored(self, axis: int, at: float) -> "_Arc":
        # mirror about x = at (axis 0) maps angle a -> pi - a; about y = at maps a -> -a
        a0 = (math.pi - self.a0) if axis == 0 else -self.a0
        return _Arc(_mirror_pt(self.centre, axis, at), self.radius, a0, -self.sweep, self.name)

    def named(self, name):
        return replace(self, name=name)

    @staticmethod
    def through(p0, pm, p1, name=None) -> "_Arc":
        """The arc from ``p0`` through ``pm`` to ``p1``."""
        from ..core.errors import GeometryError

        p0, pm, p1 = (np.asarray(p, float) for p in (p0, pm, p1))
        ax, ay = p0
        bx, by = pm
        cx, cy = p1
        den = 2.0 * (ax * (by - cy) + bx * (cy - ay) + cx * (ay - by))
        scale = max(np.ptp(np.vstack([p0, pm, p1]), axis=0).max(), 1e-300)
        if abs(den) < 1e-12 * scale**2:
            raise GeometryError(
                f"the three points {tuple(map(float, p0))}, {tuple(map(float, pm))}, {tuple(map(float, p1))} lie on a straight line, "
                "so no arc passes through them; use a line or move the middle point"
            )
        ux = ((ax**2 + ay**2) * (by - cy) + (bx**2 + by**2) * (cy - ay) + (cx**2 + cy**2) * (ay - by)) / den
        uy = ((ax**2 + ay**2) * (cx - bx) + (bx**2 + by**2) * (ax - cx) + (cx**2 + cy**2) * (bx - ax)) / den
        c = np.array([ux, uy])
        r = float(np.hypot(*(p0 - c)))
        a_s = math.atan2(*(p0 - c)[::-1])
        a_m = math.atan2(*(pm - c)[::-1])
        a_e = math.atan2(*(p1 - c)[::-1])
        d_e = (a_e - a_s) % TWO_PI
        d_m = (a_m - a_s) % TWO_PI
        sweep = d_e if d_m < d_e else d_e - TWO_PI
        return _Arc((float(c[0]), float(c[1])), r, a_s, sweep, name)


@dataclass(frozen=True)
class _EllipseCurve:
    """Full ellipse: centre, semi-axes a (along the rotated x) and b, rotation angle in radians."""

    centre: tuple[float, float]
    a: float
    b: float
    angle: float
    name: str | None = None

    @property
    def length(self) -> float:  # Ramanujan's approximation (common practice)
        a, b = self.a, self.b
        h = ((a - b) / (a + b)) ** 2
        return math.pi * (a + b) * (1 + 3 * h / (10 + math.sqrt(4 - 3 * h)))

    def _local(self, pts):
        return _rotate(np.asarray(pts, float) - np.asarray(self.centre), -self.angle)

    def sample(self, n: int) -> np.ndarray:
        t = np.linspace(0.0, TWO_PI, max(int(n), 3))
        loc = np.column_stack([self.a * np.cos(t), self.b * np.sin(t)])
        return _rotate(loc, self.angle) + np.asarray(self.centre)

    def signed(self, pts) -> np.ndarray:
        """First-order signed distance F / |grad F| of F = (x/a)^2 + (y/b)^2 - 1 (negative inside)."""
        q = self._local(pts)
        f = (q[:, 0] / self.a) ** 2 + (q[:, 1] / self.b) ** 2 - 1.0
        g = 2.0 * np.hypot(q[:, 0] / self.a**2, q[:, 1] / self.b**2)
        with np.errstate(divide="ignore", invalid="ignore"):
            d = np.where(g > 0, f / np.where(g > 0, g, 1.0), -min(self.a, self.b))
        return d

    def distance(self, pts) -> np.ndarray:
        return np.abs(self.signed(pts))

    def moved(self, d):
        return replace(self, centre=tuple(np.asarray(self.centre) + d))

    def mirrored(self, axis: int, at: float):
        ang = (math.pi - self.angle) if axis == 0 else -self.angle
        return replace(self, centre=_mirror_pt(self.centre, axis, at), angle=ang)

    def named(self, name):
        return replace(self, name=name)


@dataclass(frozen=True)
class _AxisLine:
    """The infinite line x = at (axis 0) or y = at (axis 1): a symmetry cut."""

    axis: int
    at: float
    name: str | None = None

    def distance(self, pts) -> np.ndarray:
        return np.abs(np.asarray(pts, float)[:, self.axis] - self.at)


def _mirror_pt(p, axis: int, at: float) -> tuple[float, float]:
    p = list(map(float, p))
    p[axis] = 2.0 * at - p[axis]
    return (p[0], p[1])


# --------------------------------------------------------------------------------------------- helpers
def _segment_distance(pts: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Distances from points (P, 2) to segments a-b (E, 2) each: (P, E)."""
    pts = np.asarray(pts, float)
    ab = b - a
    L2 = np.einsum("ij,ij->i", ab, ab)
    L2 = np.where(L2 > 0, L2, 1.0)
    out = np.empty((pts.shape[0], a.shape[0]))
    step = max(1, 2_000_000 // max(a.shape[0], 1))
    for i in range(0, pts.shape[0], step):
        p = pts[i : i + step, None, :]
        t = np.clip(np.einsum("pej,ej->pe", p - a[None], ab) / L2, 0.0, 1.0)
        q = a[None] + t[..., None] * ab[None]
        out[i : i + step] = np.hypot(*(p - q).transpose(2, 0, 1))
    return out


def _points_in_polygon(pts: np.ndarray, poly: np.ndarray) -> np.ndarray:
    """Even-odd test of points (P, 2) against a closed polyline (V, 2) (last vertex not repeated)."""
    pts = np.asarray(pts, float)
    a = poly
    b = np.roll(poly, -1, axis=0)
    inside = np.zeros(pts.shape[0], dtype=bool)
    step = max(1, 2_000_000 // max(a.shape[0], 1))
    for i in range(0, pts.shape[0], step):
        x = pts[i : i + step, 0][:, None]
        y = pts[i : i + step, 1][:, None]
        cond = (a[None, :, 1] > y) != (b[None, :, 1] > y)
        with np.errstate(divide="ignore", invalid="ignore"):
            xc = a[None, :, 0] + (y - a[None, :, 1]) * (b[None, :, 0] - a[None, :, 0]) / (
                b[None, :, 1] - a[None, :, 1]
            )
        inside[i : i + step] = np.count_nonzero(cond & (x < xc), axis=1) % 2 == 1
    return inside


def _signed_area(poly: np.ndarray) -> float:
    x, y = poly[:, 0], poly[:, 1]
    return 0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))


def _self_intersections(poly: np.ndarray, tol: float, closed: bool = True) -> list[tuple[int, int]]:
    """Pairs (i, j) of non-adjacent segments of a polyline that touch or cross (within ``tol``)."""
    a = poly
    b = np.roll(poly, -1, axis=0) if closed else poly[1:]
    if not closed:
        a = poly[:-1]
    n = a.shape[0]
    if n < 4:
        return []
    i, j = np.triu_indices(n, k=2)
    if closed:
        keep = ~((i == 0) & (j == n - 1))
        i, j = i[keep], j[keep]
    hits: list[tuple[int, int]] = []
    step = 500_000
    for s in range(0, i.size, step):
        ii, jj = i[s : s + step], j[s : s + step]
        p, r = a[ii], b[ii] - a[ii]
        q, w = a[jj], b[jj] - a[jj]
        cross = lambda u, v: u[:, 0] * v[:, 1] - u[:, 1] * v[:, 0]  # noqa: E731
        den = cross(r, w)
        qp = q - p
        with np.errstate(divide="ignore", invalid="ignore"):
            t = cross(qp, w) / den
            u = cross(qp, r) / den
        proper = (np.abs(den) > 0) & (t >= 0) & (t <= 1) & (u >= 0) & (u <= 1)
        # touching or collinear overlap: end points closer than tol to the other segment
        near = np.zeros_like(proper)
        cand = ~proper
        if np.any(cand):
            idx = np.flatnonzero(cand)
            d = np.minimum.reduce(
                [
                    _pair_dist(a[ii[idx]], a[jj[idx]], b[jj[idx]]),
                    _pair_dist(b[ii[idx]], a[jj[idx]], b[jj[idx]]),
                    _pair_dist(a[jj[idx]], a[ii[idx]], b[ii[idx]]),
                    _pair_dist(b[jj[idx]], a[ii[idx]], b[ii[idx]]),
                ]
            )
            near[idx] = d < tol
        bad = np.flatnonzero(proper | near)
        hits.extend(zip(ii[bad].tolist(), jj[bad].tolist()))
        if len(hits) > 10:
            break
    return hits


def _pair_dist(p, a, b):
    ab = b - a
    L2 = np.einsum("ij,ij->i", ab, ab)
    t = np.clip(np.einsum("ij,ij->i", p - a, ab) / np.where(L2 > 0, L2, 1.0), 0, 1)
    q = a + t[:, None] * ab
    return np.hypot(*(p - q).T)


def _pieces_distance(pts: np.ndarray, pieces) -> np.ndarray:
    """Distance from each point to the nearest of ``pieces`` (lines batched)."""
    pts = np.asarray(pts, float)
    best = np.full(pts.shape[0], np.inf)
    lines = [p for p in pieces if isinstance(p, _Line)]
    if lines:
        a = np.array([p.p0 for p in lines], float)
        b = np.array([p.p1 for p in lines], float)
        best = np.minimum(best, _segment_distance(pts, a, b).min(axis=1))
    for p in pieces:
        if not isinstance(p, _Line):
            best = np.minimum(best, p.distance(pts))
    return best


def _polyline_of(pieces, spacing: float) -> np.ndarray:
    """Closed polyline through a chain of pieces (each piece sampled at about ``spacing``)."""
    out = []
    for p in pieces:
        if isinstance(p, _Line):
            out.append(p.start[None])
        else:
            n = int(min(max(math.ceil(p.length / spacing), 8), 2000)) + 1
            out.append(p.sample(n)[:-1])
    return np.vstack(out)
