"""Checks of single values given by the user: numbers, lengths, and numbers-or-functions.

One place for the rule "a number, finite, and positive where it must be", so that every layer
words the error the same way.
"""
from __future__ import annotations

import math
from typing import Any, Callable

import numpy as np

from .errors import InputError

__all__ = ["number", "number_or_function", "finite_vector", "thermal_expansion"]


def number(value: Any, what: str, *, positive: bool = False, nonnegative: bool = False,
           error: type[Exception] = InputError, kind: str = "number") -> float:
    """``value`` as a finite float, refused with ``error`` naming ``what`` otherwise.

    Parameters
    ----------
    value : Any
    what : str
        Name used in the message (e.g. ``"thickness"``).
    positive, nonnegative : bool
        Also require > 0 or >= 0.
    error : exception class
        A planar error class (InputError or a subclass such as MaterialError).
    kind : str
        Word for the quantity in the message ("number", "length", ...).

    Examples
    --------
    >>> number("2.5", "thickness", positive=True)
    2.5
    """
    if isinstance(value, bool):
        raise error(f"{what} must be a {kind}, got {value!r}")
    try:
        v = float(value)
    except (TypeError, ValueError, OverflowError):
        raise error(f"{what} must be a {kind}, got {value!r}") from None
    if not math.isfinite(v):
        raise error(f"{what} must be a {'positive ' if positive else ''}finite {kind}, got {value!r}")
    if positive and v <= 0:
        raise error(f"{what} must be a positive finite {kind}, got {value!r}")
    if nonnegative and v < 0:
        raise error(f"{what} must not be negative, got {value!r}")
    return v


def finite_vector(value: Any, size: int = 2) -> np.ndarray | None:
    """``value`` as a float array of ``size`` finite numbers, or None when it is not one (the caller says why).

    Examples
    --------
    >>> finite_vector((1, 2.5)), finite_vector("x"), finite_vector((1.0, float("nan"))), finite_vector((0, 0, 1), 3)
    (array([1. , 2.5]), None, None, array([0., 0., 1.]))
    """
    if isinstance(value, (str, bytes)):
        return None
    try:
        a = np.asarray(value, dtype=float).reshape(-1)
    except (TypeError, ValueError):
        return None
    return a if a.shape == (size,) and bool(np.all(np.isfinite(a))) else None


def number_or_function(value: Any, what: str) -> float | Callable | None:
    """A finite number, a function f(x, y) (checked when it is evaluated), or None."""
    if value is None or callable(value):
        return value
    try:
        f = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number or a function f(x, y), got {value!r}") from None
    if not math.isfinite(f):
        raise InputError(f"{what} = {value!r} is not a finite number")
    return f


def thermal_expansion(material: Any, region: str) -> np.ndarray:
    """The thermal strain per degree of a heated region's material; refused when it is zero.

    A temperature change on a material with no thermal expansion (alpha 0, the default) makes no strain,
    and its load case would solve to nothing, with no word.

    Examples
    --------
    >>> from planar.core.materials import Isotropic
    >>> thermal_expansion(Isotropic(E=70e3, nu=0.3, alpha=23e-6), "plate")
    array([2.3e-05, 2.3e-05, 2.3e-05, 0.0e+00])
    """
    e = np.asarray(material.thermal_strain(), dtype=float)
    if not np.any(e):
        raise InputError(
            f"temperature change on region {region!r}, whose material has no thermal expansion (alpha 0), so it "
            "makes no strain: give the material alpha (per degree, e.g. Isotropic(..., alpha=23e-6) for aluminium, "
            "12e-6 for steel), or heat only the regions that expand (TemperatureChange(dT, region=...))"
        )
    return e
