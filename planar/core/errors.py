"""The one exception hierarchy of planar.

Every error a user can cause is a :class:`PlanarError`; its message says what is wrong and how to fix
it, and lists the valid choices where there are some. The command line prints these in one or two
lines without a traceback.
"""
from __future__ import annotations

from typing import Iterable

__all__ = [
    "PlanarError",
    "InputError",
    "MeshError",
    "ElementError",
    "MaterialError",
    "NameNotFoundError",
    "SupportError",
    "SolverError",
    "PluginError",
    "GeometryError",
    "ResourceError",
    "OutputError",
    "PlanarWarning",
    "DiscretisationWarning",
    "warn",
    "fmt_point",
]


class PlanarError(Exception):
    """Base class of every error planar raises on purpose."""


class InputError(PlanarError, ValueError):
    """A value given by the user is out of range or of the wrong kind."""


class MeshError(PlanarError):
    """A mesh is empty, malformed, or cannot be read."""


class ElementError(MeshError):
    """Elements are inverted, degenerate or too distorted to integrate."""


class MaterialError(InputError):
    """Material constants that do not describe a stable elastic solid."""


class NameNotFoundError(PlanarError, KeyError):
    """A name (edge, point, region, element type, load kind, load case) that does not exist."""

    def __str__(self) -> str:  # KeyError would quote the message
        return str(self.args[0]) if self.args else ""


class SupportError(PlanarError):
    """Supports that leave the model free to move, or that contradict each other."""


class SolverError(PlanarError):
    """A linear solve that failed or did not converge."""


class PluginError(PlanarError):
    """A plugin that cannot be loaded or declares something invalid."""


class GeometryError(PlanarError):
    """A plate geometry that cannot be built or meshed."""


class ResourceError(PlanarError):
    """A job too large for the memory or time at hand."""


class OutputError(PlanarError):
    """A result file that cannot be written (a missing folder, no permission, a full disk)."""


class PlanarWarning(UserWarning):
    """Something planar accepted but the user should look at (e.g. coincident nodes in a mesh file).

    Attributes
    ----------
    code : str
        A short, stable code for the kind of concern (e.g. ``"locking"``), for filtering and for
        summaries and reports; ``"general"`` when none was given.
    """

    code = "general"

    def __init__(self, message: str = "", code: str | None = None):
        super().__init__(message)
        if code is not None:
            self.code = str(code)

    @property
    def message(self) -> str:
        return str(self.args[0]) if self.args else ""

    def as_dict(self) -> dict:
        """``{"code": ..., "message": ...}`` for summaries and reports."""
        return {"code": self.code, "message": self.message}


class DiscretisationWarning(PlanarWarning):
    """A result planar computed but whose discretisation or inputs make it doubtful."""


def warn(message: str, code: str, *, category: type = DiscretisationWarning, sink: list | None = None,
         stacklevel: int = 2, once: bool = False) -> PlanarWarning:
    """Raise a planar warning through :mod:`warnings` and keep it in ``sink`` (e.g. ``Result.warnings``).

    Python's default filter prints a given warning once per place in the code; ``sink`` keeps every
    one, so summaries and reports can carry them. With ``once``, a warning ``sink`` already holds (the
    same code and message) is not raised again, wherever it is asked from: the one kept is returned.
    """
    import warnings

    w = category(message, code)
    held = None if sink is None else next((o for o in sink if o.code == w.code and o.message == w.message), None)
    if held is not None and once:
        return held
    if sink is not None and held is None:
        sink.append(w)
    warnings.warn(w, stacklevel=stacklevel + 1)
    return w


def fmt_point(p) -> str:
    """A point for messages: ``(x, y)`` with 6 significant digits (no numpy scalar reprs)."""
    import numpy as np

    return "(" + ", ".join(f"{float(v):.6g}" for v in np.asarray(p, dtype=float).reshape(-1)) + ")"


def choices(names: Iterable[str]) -> str:
    """Format a list of valid names for an error message."""
    names = sorted(str(n) for n in names)
    if not names:
        return "(none defined)"
    return ", ".join(repr(n) for n in names)


def unknown_name(what: str, name: str, valid: Iterable[str], hint: str = "") -> NameNotFoundError:
    """Build the standard "unknown X" error listing what exists."""
    msg = f"unknown {what} {name!r}; pick one of: {choices(valid)}"
    if hint:
        msg += f". {hint}"
    return NameNotFoundError(msg)
