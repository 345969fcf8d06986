"""Fastener flexibility: the shear compliance of a fastener joining two plates, by published formula.

A fastener loaded in shear lets the two plates it joins slide relative to each other by
``delta = C * P``: the fastener shears and bends, and it and the plates bear on each other at the
hole. ``C`` (length per force) is the *compliance* of the joint at that fastener; its stiffness is
``1 / C``. Three published empirical or semi-analytical formulas are given by name, plus the user's
own number:

``"huth"``
    H. Huth, Influence of fastener flexibility on the prediction of load transfer and fatigue life
    for multiple-row joints, ASTM STP 927 (1986): bolted and riveted metallic joints and bolted
    graphite/epoxy joints, in single and double shear.
``"swift"``
    T. Swift (Douglas Aircraft), 1971: aluminium plates with aluminium rivets or steel fasteners, single
    shear.
``"tate-rosenfeld"``
    M. B. Tate and S. J. Rosenfeld, Preliminary investigation of the loads carried by individual bolts
    in bolted joints, NACA TN 1051 (1946): the fastener as a beam in shear and bending, bearing of the
    fastener and of the plates, single shear.

The formulas are stated here as recalled (from memory) from the sources and the handbooks that quote
them; each function's docstring gives its expression, source, range and shear convention. All inputs
are in the model's consistent units (e.g. mm and MPa give mm/N; in and psi give in/lbf).

Double shear (``shear="double"``, only for ``"huth"``): ``t1`` is the middle plate, ``t2`` each of the
two outer plates, and ``C`` relates the middle plate's slip relative to the outer pair to the
fastener's whole load (both shear planes). A model that joins the middle plate to each outer plate by
its own spring (one per shear plane, the two in parallel) gives each spring ``2 C``:
``fastener_compliance(..., per="shear plane")`` returns that.

Examples
--------
>>> c = fastener_compliance("huth", diameter=5.0, t1=2.0, t2=2.0, E1=72e3, E2=72e3, Ef=110e3)
>>> round(c * 1e6, 2)  # mm/N, aluminium strips and a titanium bolt
30.02
>>> FORMULAS
('huth', 'swift', 'tate-rosenfeld', 'user')
"""
from __future__ import annotations

import math

from .errors import InputError, unknown_name
from .values import number

__all__ = ["FORMULAS", "HUTH_CONSTANTS", "fastener_compliance", "huth", "swift", "tate_rosenfeld", "SOURCES"]

#: the flexibility formulas by name ("user": the compliance given as a number)
FORMULAS = ("huth", "swift", "tate-rosenfeld", "user")

#: Huth's exponent a and factor b by joint type (from memory of ASTM STP 927, 1986)
HUTH_CONSTANTS = {
    "bolt": (2.0 / 3.0, 3.0),        # bolted metallic
    "rivet": (2.0 / 5.0, 2.2),       # riveted metallic
    "composite-bolt": (2.0 / 3.0, 4.2),  # bolted graphite/epoxy
}

#: the sources, for reports and benchmark records
SOURCES = {
    "huth": ("H. Huth, Influence of fastener flexibility on the prediction of load transfer and fatigue life "
             "for multiple-row joints, ASTM STP 927, 1986 (formula and constants from memory)"),
    "swift": "T. Swift, fastener flexibility of the Douglas Aircraft Company, 1971 (formula from memory)",
    "tate-rosenfeld": ("M. B. Tate and S. J. Rosenfeld, Preliminary investigation of the loads carried by "
                       "individual bolts in bolted joints, NACA TN 1051, 1946 (formula from memory)"),
    "user": "a compliance given by the user",
}

_SHEARS = {"single": 1, "double": 2}
_PER = ("fastener", "shear plane")


def _shear(shear: str) -> int:
    key = str(shear).strip().lower()
    if key not in _SHEARS:
        raise unknown_name("shear", shear, _SHEARS, "single: two plates; double: a middle plate between two outer ones")
    return _SHEARS[key]


def huth(*, diameter: float, t1: float, t2: float, E1: float, E2: float, Ef: float, kind: str = "bolt",
         shear: str = "single") -> float:
    """Huth's compliance (ASTM STP 927, 1986; from memory).

    ``C = ((t1 + t2) / (2 d))^a (b / n) (1/(t1 E1) + 1/(n t2 E2) + 1/(2 t1 Ef) + 1/(2 n t2 Ef))``

    with ``n = 1`` in single shear and ``2`` in double shear, and by joint type (``kind``): bolted
    metallic ``a = 2/3, b = 3.0``; riveted metallic ``a = 2/5, b = 2.2``; bolted graphite/epoxy
    (``"composite-bolt"``) ``a = 2/3, b = 4.2``.

    Single shear: ``t1, E1`` and ``t2, E2`` are the two plates (the formula is symmetric in them only
    in single shear). Double shear: ``t1, E1`` is the middle plate and ``t2, E2`` each of the two outer
    plates (together ``n t2``), and ``C`` is per the fastener's whole load. This reading is the one
    that makes the plate terms consistent (the middle plate bears the whole load over ``t1``, the two
    outer plates over ``2 t2``; the bracket then equals that of a half model, the middle plate's half
    ``t1 / 2`` against one outer plate carrying half the load); the convention is recalled, not quoted. Range: fitted by Huth to
    his tests of aircraft-proportioned joints (thicknesses of the order of the diameter), loaded below
    the fastener's yield; the exact span of ``t / d`` tested is not recalled here, so far from
    ``t / d`` near 1 treat it as extrapolation.

    Parameters
    ----------
    diameter, t1, t2 : float
        Fastener diameter and plate thicknesses (length).
    E1, E2, Ef : float
        Young's moduli of the plates and the fastener (stress).
    kind : {"bolt", "rivet", "composite-bolt"}
    shear : {"single", "double"}

    Returns
    -------
    float
        Compliance, length per force.
    """
    d, t1, t2, E1, E2, Ef = _inputs(diameter, t1, t2, E1, E2, Ef)
    key = str(kind).strip().lower()
    if key not in HUTH_CONSTANTS:
        raise unknown_name("fastener kind for Huth's formula", kind, HUTH_CONSTANTS)
    a, b = HUTH_CONSTANTS[key]
    n = _shear(shear)
    return ((t1 + t2) / (2 * d)) ** a * (b / n) * (
        1 / (t1 * E1) + 1 / (n * t2 * E2) + 1 / (2 * t1 * Ef) + 1 / (2 * n * t2 * Ef))


def swift(*, diameter: float, t1: float, t2: float, E1: float, E2: float, Ef: float, kind: str = "bolt",
          shear: str = "single") -> float:
    """Swift's compliance (Douglas Aircraft, 1971; from memory).

    ``C = 5 / (d Ef) + 0.8 (1/(t1 E1) + 1/(t2 E2))``

    Single shear only (two plates); the same expression serves rivets and bolts (``kind`` is
    accepted and does not change it). Range: aluminium-alloy sheet joined by aluminium rivets or
    steel fasteners, thin sheet (``t`` at most about ``d``; from memory); outside that it is
    extrapolation.

    Parameters
    ----------
    diameter, t1, t2, E1, E2, Ef, kind, shear
        As :func:`huth`.

    Returns
    -------
    float
        Compliance, length per force.
    """
    d, t1, t2, E1, E2, Ef = _inputs(diameter, t1, t2, E1, E2, Ef)
    _single_only("swift", shear)
    return 5.0 / (d * Ef) + 0.8 * (1 / (t1 * E1) + 1 / (t2 * E2))


def tate_rosenfeld(*, diameter: float, t1: float, t2: float, E1: float, E2: float, Ef: float, kind: str = "bolt",
                   shear: str = "single", nu_f: float = 0.3) -> float:
    """Tate and Rosenfeld's compliance (NACA TN 1051, 1946; as recalled, from memory).

    ``C = 1/(t1 Ef) + 1/(t2 Ef)                                  bearing of the fastener``
    ``  + 1/(t1 E1) + 1/(t2 E2)                                  bearing of the plates``
    ``  + 32 (1 + nu_f)(t1 + t2) / (9 pi Ef d^2)                  shear of the fastener``
    ``  + 8 (t1^3 + 5 t1^2 t2 + 5 t1 t2^2 + t2^3) / (5 pi Ef d^4)   bending of the fastener``

    The fastener is a round beam across the two plates, each plate bearing on it as a uniform load
    over its thickness. Single shear only. Range: the derivation is elastic and holds for any
    thicknesses while the fastener stays a beam (``t / d`` not much above 1); the tests it was
    checked against were bolted aluminium-alloy joints (from memory).

    Parameters
    ----------
    diameter, t1, t2, E1, E2, Ef, kind, shear
        As :func:`huth` (``kind`` does not change the expression).
    nu_f : float
        Poisson's ratio of the fastener (default 0.3, metals).

    Returns
    -------
    float
        Compliance, length per force.
    """
    d, t1, t2, E1, E2, Ef = _inputs(diameter, t1, t2, E1, E2, Ef)
    _single_only("tate-rosenfeld", shear)
    nu = number(nu_f, "the fastener's Poisson's ratio nu_f")
    if not -1.0 < nu < 0.5:
        raise InputError(f"the fastener's Poisson's ratio nu_f must lie in (-1, 0.5), got {nu_f!r}")
    bearing = 1 / (t1 * Ef) + 1 / (t2 * Ef) + 1 / (t1 * E1) + 1 / (t2 * E2)
    shear_term = 32 * (1 + nu) * (t1 + t2) / (9 * math.pi * Ef * d ** 2)
    bending = 8 * (t1 ** 3 + 5 * t1 ** 2 * t2 + 5 * t1 * t2 ** 2 + t2 ** 3) / (5 * math.pi * Ef * d ** 4)
    return bearing + shear_term + bending


def fastener_compliance(formula: str | float, *, diameter: float | None = None, t1: float | None = None,
                        t2: float | None = None, E1: float | None = None, E2: float | None = None,
                        Ef: float | None = None, kind: str = "bolt", shear: str = "single",
                        per: str = "fastener", nu_f: float = 0.3) -> float:
    """The shear compliance of one fastener by a named formula, or the user's number.

    Parameters
    ----------
    formula : {"huth", "swift", "tate-rosenfeld", "user"} or float
        A name from :data:`FORMULAS`, or the compliance itself (length per force; ``"user"`` is not
        needed then). A number is the compliance per the fastener's whole load.
    diameter, t1, t2, E1, E2, Ef : float
        Fastener diameter, plate thicknesses, plate and fastener Young's moduli, in the model's
        consistent units. Required by the named formulas; not read for a number.
    kind : {"bolt", "rivet", "composite-bolt"}
        The joint type (Huth's constants).
    shear : {"single", "double"}
        Double shear: ``t1`` the middle plate, ``t2`` each outer plate (see the module notes).
    per : {"fastener", "shear plane"}
        ``"fastener"``: slip per the fastener's whole load; ``"shear plane"``: the compliance of each
        of the ``n`` springs (one per shear plane, in parallel) that together make the fastener,
        ``n C``.
    nu_f : float
        Poisson's ratio of the fastener (Tate and Rosenfeld only).

    Returns
    -------
    float
        Compliance, length per force.

    Raises
    ------
    NameNotFoundError
        An unknown formula name (the message lists :data:`FORMULAS`).
    InputError
        A missing, non-positive or non-finite input; double shear with a single-shear formula.
    """
    n = _shear(shear)
    key_per = str(per).strip().lower()
    if key_per not in _PER:
        raise unknown_name("compliance basis 'per'", per, _PER)
    factor = n if key_per == "shear plane" else 1
    if not isinstance(formula, str):
        return factor * number(formula, "the fastener compliance (length per force)", positive=True)
    key = formula.strip().lower().replace("_", "-").replace(" ", "-")
    if key == "user":
        raise InputError("formula 'user': give the compliance itself as a number (length per force) in place "
                         "of the name")
    if key not in _FUNCS:
        raise unknown_name("fastener flexibility formula", formula, FORMULAS,
                           "Or give the compliance as a number (length per force)")
    args = dict(diameter=diameter, t1=t1, t2=t2, E1=E1, E2=E2, Ef=Ef)
    missing = [k for k, v in args.items() if v is None]
    if missing:
        raise InputError(f"the {formula!r} fastener flexibility needs {', '.join(missing)}: give "
                         "diameter, t1, t2, E1, E2 and Ef")
    extra = {"nu_f": nu_f} if key == "tate-rosenfeld" else {}
    return factor * _FUNCS[key](**args, kind=kind, shear=shear, **extra)


_FUNCS = {"huth": huth, "swift": swift, "tate-rosenfeld": tate_rosenfeld}


def _inputs(d, t1, t2, E1, E2, Ef) -> tuple[float, ...]:
    names = ("fastener diameter", "thickness t1", "thickness t2", "Young's modulus E1", "Young's modulus E2",
             "the fastener's Young's modulus Ef")
    return tuple(number(v, w, positive=True) for v, w in zip((d, t1, t2, E1, E2, Ef), names))


def _single_only(name: str, shear: str) -> None:
    if _shear(shear) != 1:
        raise InputError(f"the {name!r} fastener flexibility is a single-shear formula; for double shear use "
                         "'huth' (shear='double') or give the compliance as a number")
