"""The least-squares circle through points, for the core's modules (a hole's centre and size)."""
from __future__ import annotations

import math

import numpy as np

__all__ = ["fit_circle"]


def fit_circle(points) -> tuple[np.ndarray, float, float]:
    """Least-squares circle through points (I. Kasa, IEEE Trans. Instrum. Meas. 25, 1976).

    The points are centred and scaled before the fit (well conditioned far from the origin).

    Parameters
    ----------
    points : array_like, shape (k, 2)

    Returns
    -------
    centre : ndarray, shape (2,)
    radius : float
        ``inf`` when the points lie on a line (or are fewer than three).
    residual : float
        Largest | distance from the centre - radius | / radius.

    Examples
    --------
    >>> t = np.linspace(0.0, 1.0, 7)
    >>> c, r, res = fit_circle(np.column_stack([2.0 + 3.0 * np.cos(t), -1.0 + 3.0 * np.sin(t)]))
    >>> np.round(c, 9).tolist(), round(r, 9), res < 1e-12
    ([2.0, -1.0], 3.0, True)
    """
    p = np.asarray(points, dtype=float)
    mid = p.mean(axis=0)
    scale = float(np.abs(p - mid).max()) or 1.0
    q = (p - mid) / scale
    A = np.column_stack([q, np.ones(len(q))])
    b = -(q * q).sum(axis=1)
    sol, _, rank, _ = np.linalg.lstsq(A, b, rcond=1e-10)
    c = -0.5 * sol[:2]
    r2 = float(c @ c - sol[2])
    if len(p) < 3 or rank < 3 or not (np.all(np.isfinite(sol)) and r2 > 0):  # rank 2: the points are on a line
        return mid, math.inf, math.inf
    r = math.sqrt(r2)
    res = float(np.abs(np.hypot(*(q - c).T) - r).max() / r)
    return mid + scale * c, scale * r, res
