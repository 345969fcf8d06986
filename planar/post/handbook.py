"""Handbook stress concentration factors, each formula written once with its source.

Units: the factors are ratios; the arguments are ratios of lengths.

Examples
--------
>>> round(kt_hole_in_strip(0.4), 4)
2.2357
>>> kt_hole_in_strip([0.0, 0.5]).round(4).tolist()
[3.0, 2.1588]
"""
from __future__ import annotations

import numpy as np

from ..core.errors import InputError

__all__ = ["kt_hole_in_strip", "HOLE_IN_STRIP_SOURCE", "HOLE_IN_STRIP_FORMULA"]

#: the fit, as printed beside the figures that use it
HOLE_IN_STRIP_FORMULA = "Ktn = 3.00 - 3.13 (d/W) + 3.66 (d/W)^2 - 1.53 (d/W)^3"
#: where it comes from
HOLE_IN_STRIP_SOURCE = ("W. D. Pilkey and D. F. Pilkey, Peterson's Stress Concentration Factors, 3rd ed., Wiley, "
                        "2008, chart 4.1 (after R. C. J. Howland 1930); coefficients from memory")


def kt_hole_in_strip(d_over_w):
    """Net-section Kt of a central circular hole in a finite-width strip in uniaxial tension.

    Parameters
    ----------
    d_over_w : float or array_like
        Hole diameter over strip width, 0 <= d/W < 1.

    Returns
    -------
    float or ndarray
        Kt referred to the net-section stress P / ((W - d) t) (:func:`planar.post.checks.nominal_net`);
        an array for an array argument.

    Raises
    ------
    InputError
        A ratio outside [0, 1) or not finite.

    Notes
    -----
    Ktn = 3.00 - 3.13 (d/W) + 3.66 (d/W)^2 - 1.53 (d/W)^3 (:data:`HOLE_IN_STRIP_SOURCE`).
    """
    r = np.asarray(d_over_w, dtype=float)
    if not np.all(np.isfinite(r)) or np.any(r < 0) or np.any(r >= 1):
        raise InputError(f"d/W must be at least 0 and less than 1, got {d_over_w!r}")
    k = 3.00 - 3.13 * r + 3.66 * r**2 - 1.53 * r**3
    return float(k) if np.ndim(d_over_w) == 0 else k
