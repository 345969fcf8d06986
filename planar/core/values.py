"""Checks of single values given by the user: numbers, lengths, and numbers-or-functions.

One place for the rule "a number, finite, and positive where it must be", so that every layer
words the error the same way.
"""
from __future__ import annotations

import math
from typing import Any, Callable

from .errors import InputError

__all__ = ["number", "number_or_function"]


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
