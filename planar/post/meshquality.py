"""Mesh quality figures: aspect ratio, Jacobian ratio and corner angles of every element, at once.

Measures (each computed for a whole element block with array operations):

- aspect ratio: on a triangle, the longest side over the inscribed circle's diameter times
  sqrt(3) (``L_max P / (4 sqrt(3) A)``, P the perimeter, A the area), 1 for an equilateral
  triangle (P. J. Frey and P.-L. George, Mesh Generation, 2000, the triangle quality measure
  alpha h_max / rho); on a quadrilateral, the longest side over the shortest, 1 for a square
  (common practice). Read from the corner nodes.
- Jacobian ratio: the smallest over the largest determinant of the Jacobian at the element's
  own nodes and its full rule's points, 1 for an undistorted straight-sided element; zero or
  negative for a folded one (which the solve refuses). Curved sides of quadratic elements lower it.
- corner angles: the smallest and largest interior angle of the corners' polygon, in degrees
  (60 / 60 for an equilateral triangle, 90 / 90 for a rectangle).

Examples
--------
>>> import planar
>>> q = mesh_quality(planar.rectangle_mesh(40.0, 10.0, 4, 1, "Q4"))
>>> round(q.worst_aspect, 6), round(q.min_jacobian_ratio, 6), round(q.min_angle, 6), round(q.max_angle, 6)
(1.0, 1.0, 90.0, 90.0)
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..core.registry import element_type

__all__ = ["MeshQuality", "mesh_quality"]


@dataclass
class MeshQuality:
    """Quality figures of a mesh, worst first (see the module notes).

    Attributes
    ----------
    aspect, jacobian_ratio, min_angles, max_angles : dict of str to ndarray
        Per element block (layout name): each element's figure.
    worst_aspect : float
    worst_aspect_at : (str, int, (float, float))
        Block, element number in the block, and the element's centre.
    min_jacobian_ratio : float
    min_jacobian_at : (str, int, (float, float))
    min_angle, max_angle : float
        Degrees.
    min_angle_at, max_angle_at : (str, int, (float, float))
    counts : dict of str to int
        Elements beyond the usual limits: aspect ratio over 5, Jacobian ratio under 0.5, an angle
        under 20 or over 160 degrees (limits of common practice).
    """

    aspect: dict = field(default_factory=dict)
    jacobian_ratio: dict = field(default_factory=dict)
    min_angles: dict = field(default_factory=dict)
    max_angles: dict = field(default_factory=dict)
    centres: dict = field(default_factory=dict, repr=False)
    worst_aspect: float = float("nan")
    worst_aspect_at: tuple = ()
    min_jacobian_ratio: float = float("nan")
    min_jacobian_at: tuple = ()
    min_angle: float = float("nan")
    min_angle_at: tuple = ()
    max_angle: float = float("nan")
    max_angle_at: tuple = ()
    counts: dict = field(default_factory=dict)

    def rows(self, length: str = "") -> list[tuple[str, str]]:
        """Label/value rows for a report (``length``: the unit of the element centres)."""
        lu = f" {length}" if length else ""

        def at(where):
            if not where:
                return ""
            b, i, (x, y) = where
            return f" (element {i} of the {b} block, centre ({x:.4g}, {y:.4g}){lu})"

        total = sum(a.size for a in self.aspect.values())
        return [
            ("worst aspect ratio", f"{self.worst_aspect:.3g}{at(self.worst_aspect_at)}; "
                                   f"{self.counts.get('aspect', 0)} of {total} elements over {ASPECT_LIMIT:g}"),
            ("smallest Jacobian ratio", f"{self.min_jacobian_ratio:.3g}{at(self.min_jacobian_at)}; "
                                        f"{self.counts.get('jacobian', 0)} elements under {JACOBIAN_LIMIT:g}"),
            ("smallest corner angle", f"{self.min_angle:.1f} deg{at(self.min_angle_at)}; "
                                      f"{self.counts.get('small angle', 0)} elements under {ANGLE_LIMITS[0]:g} deg"),
            ("largest corner angle", f"{self.max_angle:.1f} deg{at(self.max_angle_at)}; "
                                     f"{self.counts.get('large angle', 0)} elements over {ANGLE_LIMITS[1]:g} deg"),
        ]


#: the usual limits counted in :attr:`MeshQuality.counts` (common practice)
ASPECT_LIMIT = 5.0
JACOBIAN_LIMIT = 0.5
ANGLE_LIMITS = (20.0, 160.0)


def _angles(P: np.ndarray) -> np.ndarray:
    """Interior angles (e, c) in degrees of the polygons P (e, c, 2), corners counter-clockwise."""
    prev = np.roll(P, 1, axis=1) - P
    nxt = np.roll(P, -1, axis=1) - P
    cos = (prev * nxt).sum(-1) / np.maximum(np.linalg.norm(prev, axis=-1) * np.linalg.norm(nxt, axis=-1), 1e-300)
    return np.degrees(np.arccos(np.clip(cos, -1.0, 1.0)))


def _aspect(P: np.ndarray) -> np.ndarray:
    sides = np.linalg.norm(np.roll(P, -1, axis=1) - P, axis=-1)  # (e, c)
    if P.shape[1] == 3:
        d1, d2 = P[:, 1] - P[:, 0], P[:, 2] - P[:, 0]
        area = 0.5 * np.abs(d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0])
        return sides.max(1) * sides.sum(1) / np.maximum(4.0 * np.sqrt(3.0) * area, 1e-300)
    return sides.max(1) / np.maximum(sides.min(1), 1e-300)


def _jacobian_ratio(etype, X: np.ndarray) -> np.ndarray:
    pts = np.vstack([np.asarray(etype.ref_nodes, float), np.asarray(etype.default_rule().points, float)])
    dN = np.asarray(etype.shape_derivatives(pts), float)  # (q, k, 2)
    J = np.einsum("eka,qkb->eqab", X, dN)
    det = J[..., 0, 0] * J[..., 1, 1] - J[..., 0, 1] * J[..., 1, 0]  # (e, q)
    big = np.abs(det).max(1)
    return det.min(1) / np.maximum(big, 1e-300)


def mesh_quality(mesh) -> MeshQuality:
    """Aspect ratio, Jacobian ratio and corner angles of every element of a mesh (see the module notes)."""
    q = MeshQuality()
    worst = {"aspect": (-np.inf, ()), "jac": (np.inf, ()), "amin": (np.inf, ()), "amax": (-np.inf, ())}
    counts = {"aspect": 0, "jacobian": 0, "small angle": 0, "large angle": 0}
    for layout, conn in mesh.cells.items():
        if conn.shape[0] == 0:
            continue
        et = element_type(layout)
        X = mesh.nodes[conn]  # (e, k, 2)
        P = X[:, :et.corner_count()]
        ang = _angles(P)
        a, jr = _aspect(P), _jacobian_ratio(et, X)
        amin, amax = ang.min(1), ang.max(1)
        centre = P.mean(1)
        q.aspect[layout], q.jacobian_ratio[layout] = a, jr
        q.min_angles[layout], q.max_angles[layout], q.centres[layout] = amin, amax, centre
        counts["aspect"] += int(np.count_nonzero(a > ASPECT_LIMIT))
        counts["jacobian"] += int(np.count_nonzero(jr < JACOBIAN_LIMIT))
        counts["small angle"] += int(np.count_nonzero(amin < ANGLE_LIMITS[0]))
        counts["large angle"] += int(np.count_nonzero(amax > ANGLE_LIMITS[1]))
        for key, arr, pick, better in (("aspect", a, np.argmax, np.greater), ("jac", jr, np.argmin, np.less),
                                       ("amin", amin, np.argmin, np.less), ("amax", amax, np.argmax, np.greater)):
            i = int(pick(arr))
            if better(arr[i], worst[key][0]):
                worst[key] = (float(arr[i]), (layout, i, (float(centre[i, 0]), float(centre[i, 1]))))
    q.worst_aspect, q.worst_aspect_at = worst["aspect"]
    q.min_jacobian_ratio, q.min_jacobian_at = worst["jac"]
    q.min_angle, q.min_angle_at = worst["amin"]
    q.max_angle, q.max_angle_at = worst["amax"]
    q.counts = counts
    return q
