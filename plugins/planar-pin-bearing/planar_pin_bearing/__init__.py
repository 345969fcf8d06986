"""pin-bearing: the load of a pin on the edge of its hole, as a planar load-kind plugin.

A pin pushing on a lug in the direction theta_F bears on the half of the hole that faces theta_F.
The load is taken, as is common practice for pin-loaded lugs, as a radial pressure distributed as a
cosine over that half:

    p(theta) = p0 cos(theta - theta_F)   for |theta - theta_F| < 90 deg,   0 elsewhere,

whose resultant is F = p0 R t pi / 2 in the direction theta_F on a true circle. The hole centre and
radius come from a least-squares circle fit of the edge nodes. On the discretized edge, p0 (and a
peak angle within a small fraction of a degree of theta_F) are solved for after integrating with
the same Gauss rule that gives the nodal forces, so the resultant of the nodal forces equals the
given force vector to rounding on any mesh.

Use it by name on a model::

    model.add_load("pin-bearing", case="pull", where="hole", force=12e3, angle=0.0)
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from planar.plugin import InputError, LoadKind

__all__ = ["PinBearing", "BearingFit", "fit_circle"]
__version__ = "0.1.0"


def _wrap(a):
    """Angles wrapped to [-pi, pi)."""
    return (np.asarray(a) + np.pi) % (2 * np.pi) - np.pi


def fit_circle(points) -> tuple[np.ndarray, float, float]:
    """Least-squares circle through points.

    Parameters
    ----------
    points : array_like, shape (m, 2)

    Returns
    -------
    centre : ndarray, shape (2,)
    radius : float
    deviation : float
        Largest distance of a point from the fitted circle.

    Raises
    ------
    InputError
        Fewer than three distinct points, or points on a straight line.

    Notes
    -----
    The algebraic fit x^2 + y^2 + a x + b y + c = 0 (I. Kasa, IEEE Trans. Instrum. Meas. 25, 1976)
    starts a few Gauss-Newton steps on the geometric distances |x_i - centre| - radius.

    Examples
    --------
    >>> t = np.linspace(0.0, np.pi, 7)
    >>> c, r, dev = fit_circle(np.column_stack([2 + 3 * np.cos(t), -1 + 3 * np.sin(t)]))
    >>> np.round(c, 12).tolist(), round(r, 12), dev < 1e-12
    ([2.0, -1.0], 3.0, True)
    """
    p = np.unique(np.asarray(points, dtype=float).reshape(-1, 2), axis=0)
    if p.shape[0] < 3:
        raise InputError(f"a circle fit needs at least three distinct nodes, the edge has {p.shape[0]}")
    mean = p.mean(axis=0)
    scale = float(np.max(np.abs(p - mean)))
    q = (p - mean) / scale
    A = np.column_stack([q[:, 0], q[:, 1], np.ones(q.shape[0])])
    if np.linalg.matrix_rank(A, tol=1e-10) < 3:
        raise InputError("the edge is a straight line, not a circular arc")
    abc = np.linalg.lstsq(A, -(q**2).sum(axis=1), rcond=None)[0]
    c = -0.5 * abc[:2]
    r = math.sqrt(max(c @ c - abc[2], 0.0))
    for _ in range(20):
        d = q - c
        dist = np.hypot(d[:, 0], d[:, 1])
        res = dist - r
        J = np.column_stack([-d / dist[:, None], -np.ones_like(dist)])
        step = np.linalg.lstsq(J, -res, rcond=None)[0]
        c, r = c + step[:2], r + step[2]
        if np.max(np.abs(step)) < 1e-15 * max(1.0, r):
            break
    dist = np.hypot(*(q - c).T)
    return mean + scale * c, float(scale * r), float(scale * np.max(np.abs(dist - r)))


@dataclass
class BearingFit:
    """What :meth:`PinBearing.bearing` found and applied.

    Attributes
    ----------
    centre : ndarray, shape (2,)
        Fitted hole centre.
    radius : float
        Fitted hole radius.
    deviation : float
        Largest distance of an edge node from the fitted circle.
    peak_pressure : float
        p0, the pressure at the peak angle (force per area).
    peak_angle : float
        Angle of the pressure peak in degrees: the force direction, shifted by the small amount
        that makes the discretized resultant point exactly along the force.
    forces : ndarray, shape (n_nodes, 2)
        Consistent nodal forces.
    resultant : ndarray, shape (2,)
        Their sum.
    """

    centre: np.ndarray
    radius: float
    deviation: float
    peak_pressure: float
    peak_angle: float
    forces: np.ndarray
    resultant: np.ndarray


class PinBearing(LoadKind):
    """Cosine bearing pressure of a pin on a hole edge, with a given resultant force.

    Parameters
    ----------
    where : str
        Name of the hole's edge set (the whole hole, or at least the half that the pin bears on).
    force : float
        Magnitude of the force the pin puts on the part (> 0).
    angle : float, optional
        Direction of the force, degrees counter-clockwise from the x axis.
    direction : (float, float), optional
        Direction of the force as a vector (its length does not matter). Give angle or direction.
    circle_tolerance : float, default 1e-3
        Largest accepted distance of an edge node from the fitted circle, relative to its radius.

    Raises
    ------
    InputError
        A force that is not positive and finite, a direction given twice or not at all, a zero
        direction vector; when the forces are formed: an edge that is not close to a circular arc,
        that bounds the material from inside (not a hole), or that does not cover the loaded half.

    Notes
    -----
    p(theta) = p0 cos(theta - theta_p) for |theta - theta_p| < 90 deg, acting radially outward from
    the hole centre on the material (common practice for pin-loaded lugs). On a true circle the
    resultant is p0 R t pi / 2 along theta_p, so p0 = 2 F / (pi R t). Here theta_p and p0 are solved
    so that the sum of the nodal forces, integrated with the edge's Gauss rule, equals F exactly.

    Examples
    --------
    >>> PinBearing("hole", 1000.0, angle=30.0)
    PinBearing('hole', force=1000.0, angle=30.0)
    """

    name = "pin-bearing"

    def __init__(self, where: str, force: float, *, angle: float | None = None, direction=None,
                 circle_tolerance: float = 1e-3):
        self.where = str(where)
        try:
            f = float(force)
        except (TypeError, ValueError):
            raise InputError(f"pin-bearing force must be a number, got {force!r}") from None
        if not math.isfinite(f) or f == 0.0:
            raise InputError(f"pin-bearing force must be a positive finite magnitude, got {force!r}"
                             + ("; a zero force gives no load, leave the load out" if f == 0.0 else ""))
        if f < 0:
            raise InputError(f"pin-bearing force must be a positive magnitude, got {force!r}; turn the "
                             "direction round instead (angle + 180)")
        self.force = f
        if (angle is None) == (direction is None):
            raise InputError("give the pin-bearing direction either as angle= (degrees from the x axis) "
                             "or as direction=(dx, dy), exactly one of them")
        if angle is not None:
            try:
                a = float(angle)
            except (TypeError, ValueError):
                raise InputError(f"pin-bearing angle must be a number of degrees, got {angle!r}") from None
            if not math.isfinite(a):
                raise InputError(f"pin-bearing angle must be finite, got {angle!r}")
            self.angle, self.direction = a, None
        else:
            d = np.asarray(direction, dtype=float).ravel()
            if d.shape != (2,) or not np.all(np.isfinite(d)) or np.hypot(*d) == 0:
                raise InputError(f"pin-bearing direction must be a non-zero vector (dx, dy), got {direction!r}")
            self.angle, self.direction = math.degrees(math.atan2(d[1], d[0])), (float(d[0]), float(d[1]))
        tol = float(circle_tolerance)
        if not (0 < tol < 1):
            raise InputError(f"circle_tolerance must lie between 0 and 1, got {circle_tolerance!r}")
        self.circle_tolerance = tol

    def __repr__(self):
        how = f"direction={self.direction!r}" if self.direction is not None else f"angle={self.angle!r}"
        return f"PinBearing({self.where!r}, force={self.force!r}, {how})"

    def describe(self):
        return repr(self)

    def describe_plain(self, units) -> str:
        """In plain words with units, for reports (``units``: the model's unit system)."""
        force = units.unit_of("force") if units is not None else ""
        return (f"pin bearing on edge '{self.where}': {self.force:.6g}{' ' + force if force else ''} at "
                f"{self.angle:.4g} deg from x, spread as a cosine pressure over the loaded half of the hole")

    def names_used(self):
        return [("edge", self.where)]

    # ------------------------------------------------------------------ forces
    def nodal_forces(self, ctx) -> np.ndarray:
        return self.bearing(ctx).forces

    def bearing(self, ctx) -> BearingFit:
        """Fit the hole, check it, and form the nodal forces with the exact resultant."""
        eg = ctx.edge(self.where)
        centre, radius, dev = self._circle(ctx, eg)
        self._check_hole(eg, centre)
        theta_f = math.radians(self.angle)
        self._check_coverage(eg, centre, theta_f)

        def forces(theta_p):
            def traction(x, normal):
                d = x - centre
                er = d / np.linalg.norm(d, axis=-1, keepdims=True)
                phi = _wrap(np.arctan2(d[..., 1], d[..., 0]) - theta_p)
                p = np.where(np.abs(phi) < 0.5 * np.pi, np.cos(phi), 0.0)
                return p[..., None] * er
            f = ctx.integrate_traction(self.where, traction)
            return f, f.sum(axis=0)

        def miss(theta_p):
            f, r = forces(theta_p)
            return float(_wrap(math.atan2(r[1], r[0]) - theta_f)), f, r

        # secant on the peak angle: the discretized resultant must point along the force
        t_prev = theta_f
        g_prev, f, res = miss(t_prev)
        best = (abs(g_prev), t_prev, f, res)
        t_cur = t_prev - g_prev
        for _ in range(40):
            if best[0] < 1e-15:
                break
            g_cur, f, res = miss(t_cur)
            if abs(g_cur) < best[0]:
                best = (abs(g_cur), t_cur, f, res)
            if g_cur == g_prev:
                break
            t_prev, t_cur, g_prev = t_cur, t_cur - g_cur * (t_cur - t_prev) / (g_cur - g_prev), g_cur
        err, t0, f, res = best
        if err > 1e-12 or abs(_wrap(t0 - theta_f)) > math.radians(5.0):
            raise InputError(
                f"pin-bearing on {self.where!r}: the edge is too coarse to carry a cosine pressure in the "
                f"direction {self.angle:g} deg (the peak had to move {math.degrees(_wrap(t0 - theta_f)):.3g} deg); "
                "refine the mesh around the hole"
            )
        magnitude = float(np.hypot(*res))
        scale = self.force / magnitude
        f = f * scale
        return BearingFit(centre, radius, dev, scale, math.degrees(t0), f, f.sum(axis=0))

    def _circle(self, ctx, eg):
        pts = ctx.mesh.nodes[np.unique(eg.nodes)]
        try:
            centre, radius, dev = fit_circle(pts)
        except InputError as exc:
            raise InputError(f"pin-bearing on {self.where!r}: {exc}; it needs the edge of a round hole") from None
        if dev > self.circle_tolerance * radius:
            raise InputError(
                f"pin-bearing on {self.where!r}: the edge is not close to a circular arc (its nodes lie up "
                f"to {dev:.3g} = {dev / radius:.2%} of the radius from the best-fit circle of radius "
                f"{radius:.6g} about ({centre[0]:.6g}, {centre[1]:.6g}); allowed {self.circle_tolerance:g}); "
                "it needs the edge of a round hole"
            )
        return centre, radius, dev

    def _check_hole(self, eg, centre):
        x, normal, _, _ = eg.gauss()
        d = centre - x
        inward = np.sum(normal * d, axis=-1) / np.linalg.norm(d, axis=-1)
        if np.mean(inward) <= 0:
            raise InputError(
                f"pin-bearing on {self.where!r}: the edge is a round outer boundary (the material lies inside "
                "the circle), not a hole; a pin bears on the edge of a hole"
            )

    def _check_coverage(self, eg, centre, theta_f):
        ang = np.arctan2(*(eg.coords[:, :2, :] - centre).transpose(2, 0, 1)[::-1])  # (m, 2)
        span = _wrap(ang[:, 1] - ang[:, 0])
        probe = theta_f + np.linspace(-0.5 * np.pi, 0.5 * np.pi, 361)[1:-1]
        rel = _wrap(probe[None, :] - ang[:, :1]) / np.where(span == 0, np.inf, span)[:, None]
        covered = np.any((rel >= -1e-9) & (rel <= 1 + 1e-9), axis=0)
        if not np.all(covered):
            gap = math.degrees(float(_wrap(probe[np.argmin(covered)])))
            raise InputError(
                f"pin-bearing on {self.where!r}: the edge does not cover the loaded half of the hole "
                f"({self.angle - 90:g} to {self.angle + 90:g} deg from the centre), e.g. not {gap:.1f} deg; "
                "give the edge of the whole hole"
            )
