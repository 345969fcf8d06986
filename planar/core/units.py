"""Unit systems: the consistent sets of units a model may state, checked by name.

planar converts nothing: every number is in the user's units. What it needs is to know *which*
consistent system they are, so that every label says it (plots, colour bars, reports, result
files) and the few checks that need a physical scale (a modulus beyond any solid, the standard
gravity) can use it. A model states its system by name (``Model(..., units="N, mm, MPa")``);
an unknown name is refused with the list of those planar knows. Leaving it out means "not stated":
the numbers are still taken as consistent, and outputs say "units not stated (consistent)".

A system is consistent when force = stress x length^2 and force = mass x length / time^2, with
time in seconds; each system here is so, with its mass unit chosen to make it so: the tonne in
N, mm, MPa (1 N = 1e3 kg x 1e-3 m/s^2), the kilotonne in kN, mm, GPa (1 kN = 1e6 kg x 1e-3 m/s^2;
1 kN/mm^2 = 1e9 Pa = 1 GPa), lbf s^2/in in lbf, in, psi (1 lbf = 175.1268 kg x 0.0254 m/s^2).

=============  =====  ======  ======  ==================  =================  ==============
name           force  length  stress  mass                density            g [length/s^2]
=============  =====  ======  ======  ==================  =================  ==============
N-mm-MPa       N      mm      MPa     t (tonne)           t/mm^3             9806.65
N-m-Pa         N      m       Pa      kg                  kg/m^3             9.80665
kN-mm-GPa      kN     mm      GPa     kt (kilotonne)      kt/mm^3            9806.65
kN-m-kPa       kN     m       kPa     t (tonne)           t/m^3              9.80665
MN-m-MPa       MN     m       MPa     kt (kilotonne)      kt/m^3             9.80665
lbf-in-psi     lbf    in      psi     lbf s^2/in          lbf s^2/in^4       386.0886
kip-in-ksi     kip    in      ksi     kip s^2/in          kip s^2/in^4       386.0886
lbf-ft-psf     lbf    ft      psf     slug (lbf s^2/ft)   slug/ft^3          32.17405
kip-ft-ksf     kip    ft      ksf     kip s^2/ft          kip s^2/ft^4       32.17405
=============  =====  ======  ======  ==================  =================  ==============

Spellings are compared after dropping case, brackets, ``^`` and the separators (commas,
semicolons, spaces, hyphens between units), in any order: ``"N, mm, MPa"``, ``"n; mm; mpa"`` and
``"N-mm-MPa"`` name the same system; ``"N, mm, N/mm^2"`` and ``"t, mm, s"`` too. Nothing else is
guessed.

Examples
--------
>>> s = unit_system("N; mm; MPa")
>>> s.name, s.label, s.stress, s.density, s.g
('N-mm-MPa', 'N, mm, MPa', 'MPa', 't/mm^3', 9806.65)
>>> unit_system("lbf, in, psi").unit_of("moment")
'lbf in'
>>> unit_system(None).describe()
'units not stated (consistent)'
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass, field as _field
from typing import Union

from .compat import renamed_keywords
from .errors import InputError

__all__ = ["UnitSystem", "unit_system", "systems", "NOT_STATED", "QUANTITIES", "stress_unit", "length_unit",
           "force_unit", "field_unit", "bare_unit", "figure_units", "KNOWN_UNITS", "unit_direction",
           "standard_gravity", "gravity_vector"]

#: the quantities whose unit a system names (:meth:`UnitSystem.unit_of`)
QUANTITIES = ("force", "length", "stress", "mass", "time", "density", "moment", "force per length",
              "acceleration", "displacement", "pressure", "energy")


@dataclass(frozen=True)
class UnitSystem:
    """A consistent system of units, or the system "not stated".

    Attributes
    ----------
    name : str
        Canonical name, e.g. ``"N-mm-MPa"`` (``"not stated"`` for no stated units).
    force, length, stress, mass, time : str
        Unit names (``""`` when not stated); time is always seconds.
    density, moment, force_per_length : str
        Units of derived quantities.
    g : float or None
        Standard gravity (9.80665 m/s^2, exact by definition) in length units per s^2.
    to_mpa : float or None
        The stress unit in MPa (psi: 6.894757e-3), for checks that need a physical scale.
    newtons, metres, kilograms : float or None
        The force, length and mass units in N, m and kg.
    aliases : tuple of str
        Other accepted spellings.
    note : str
        A few words on where the system is used.
    """

    name: str
    force: str
    length: str
    stress: str
    mass: str
    density: str
    moment: str
    force_per_length: str
    g: float | None
    to_mpa: float | None
    newtons: float | None
    metres: float | None
    kilograms: float | None
    aliases: tuple[str, ...] = ()
    note: str = ""
    time: str = _field(default="s")

    @property
    def stated(self) -> bool:
        """True for a named system, False for "not stated"."""
        return bool(self.stress)

    @property
    def label(self) -> str:
        """The model's ``units`` text: ``"force, length, stress"`` (``"consistent units"`` when not stated)."""
        return f"{self.force}, {self.length}, {self.stress}" if self.stated else "consistent units"

    def unit_of(self, quantity: str) -> str:
        """The unit of a quantity (``""`` when not stated).

        Parameters
        ----------
        quantity : str
            One of :data:`QUANTITIES`.
        """
        if quantity not in QUANTITIES:
            raise InputError(f"unknown quantity {quantity!r}; pick one of: {', '.join(QUANTITIES)}")
        if not self.stated:
            return ""
        return {"moment": self.moment, "energy": self.moment, "force per length": self.force_per_length,
                "acceleration": f"{self.length}/{self.time}^2", "displacement": self.length,
                "pressure": self.stress}.get(quantity) or getattr(self, quantity)

    def describe(self) -> str:
        """One line for reports: the units, mass, density and g, or "units not stated (consistent)"."""
        if not self.stated:
            return "units not stated (consistent)"
        return (f"{self.label} ({self.name}: mass {self.mass}, density {self.density}, "
                f"standard gravity {self.g:.7g} {self.length}/s^2)")

    def as_dict(self) -> dict:
        """The system for a summary file (JSON): its name and units."""
        out = {"name": self.name, "stated": self.stated}
        if self.stated:
            out.update({q.replace(" ", "_"): self.unit_of(q) for q in ("force", "length", "stress", "mass", "time",
                                                                       "density", "moment", "force per length")})
            out["g"] = self.g
        return out

    def __str__(self) -> str:
        return self.label


def _system(name, force, length, stress, mass, density, g, to_mpa, newtons, metres, kilograms, aliases, note,
            moment=None, per_length=None) -> UnitSystem:
    return UnitSystem(name, force, length, stress, mass, density, moment or f"{force} {length}",
                      per_length or f"{force}/{length}", g, to_mpa, newtons, metres, kilograms, tuple(aliases), note)


#: "not stated": consistent units of the user's choice, unnamed (the default of a Model)
NOT_STATED = UnitSystem("not stated", "", "", "", "", "", "", "", None, None, None, None, None,
                        ("consistent units", "consistent", "units not stated", "none"),
                        "consistent units of the user's own, not named")

# Factors are exact consequences of the definitions: 1 lbf = 0.45359237 kg x 9.80665 m/s^2 =
# 4.4482216152605 N, 1 in = 0.0254 m, 1 ft = 0.3048 m, g = 9.80665 m/s^2 (the standard gravity).
_SYSTEMS = (
    _system("N-mm-MPa", "N", "mm", "MPa", "t", "t/mm^3", 9806.65, 1.0, 1.0, 1e-3, 1e3,
            ("N, mm, MPa", "N, mm, N/mm^2", "N, mm, s", "t, mm, s", "N, mm, MPa, t, s"),
            "SI with millimetres: machine parts and plates"),
    _system("N-m-Pa", "N", "m", "Pa", "kg", "kg/m^3", 9.80665, 1e-6, 1.0, 1.0, 1.0,
            ("N, m, Pa", "SI", "SI base", "N, m, s", "kg, m, s", "N, m, Pa, kg, s"),
            "SI base units"),
    _system("kN-mm-GPa", "kN", "mm", "GPa", "kt", "kt/mm^3", 9806.65, 1e3, 1e3, 1e-3, 1e6,
            ("kN, mm, GPa", "kN, mm, kN/mm^2"),
            "SI with kilonewtons and millimetres (moduli in GPa)"),
    _system("kN-m-kPa", "kN", "m", "kPa", "t", "t/m^3", 9.80665, 1e-3, 1e3, 1.0, 1e3,
            ("kN, m, kPa", "kN, m, kN/m^2", "kN, m, s", "t, m, s"),
            "SI with kilonewtons and metres: civil and structural work"),
    _system("MN-m-MPa", "MN", "m", "MPa", "kt", "kt/m^3", 9.80665, 1.0, 1e6, 1.0, 1e6,
            ("MN, m, MPa", "MN, m, MN/m^2"),
            "SI with meganewtons and metres: large structures, stresses in MPa"),
    _system("lbf-in-psi", "lbf", "in", "psi", "lbf s^2/in", "lbf s^2/in^4", 386.08858267716533,
            6.894757293168361e-3, 4.4482216152605, 0.0254, 175.12683524647636,
            ("lbf, in, psi", "lb, in, psi", "lbf, inch, psi", "lbf, in, s", "lb, in, s"),
            "US customary in inches", moment="lbf in"),
    _system("kip-in-ksi", "kip", "in", "ksi", "kip s^2/in", "kip s^2/in^4", 386.08858267716533,
            6.894757293168361, 4448.2216152605, 0.0254, 175126.83524647637,
            ("kip, in, ksi", "kips, in, ksi", "kip, inch, ksi", "kip, in, s"),
            "US customary in kips and inches", moment="kip in"),
    _system("lbf-ft-psf", "lbf", "ft", "psf", "slug", "slug/ft^3", 32.17404855643044,
            4.788025898033584e-5, 4.4482216152605, 0.3048, 14.593902937206362,
            ("lbf, ft, psf", "lb, ft, psf", "lbf, ft, s", "slug, ft, s"),
            "US customary in feet", moment="lbf ft"),
    _system("kip-ft-ksf", "kip", "ft", "ksf", "kip s^2/ft", "kip s^2/ft^4", 32.17404855643044,
            4.788025898033584e-2, 4448.2216152605, 0.3048, 14593.902937206363,
            ("kip, ft, ksf", "kips, ft, ksf"),
            "US customary in kips and feet: structural work", moment="kip ft"),
)

_SPLIT = re.compile(r"[\s,;]+|(?<=[a-z0-9])-(?=[a-z])")


def _key(text: str) -> frozenset:
    """A spelling reduced to the set of its unit words (case, brackets, ``^`` and separators dropped)."""
    t = str(text).strip().casefold().replace("²", "2").replace("³", "3").replace("^", "").replace("·", " ")
    t = re.sub(r"[()\[\]]", " ", t)
    return frozenset(w for w in _SPLIT.split(t) if w)


def _table() -> dict[frozenset, UnitSystem]:
    table: dict[frozenset, UnitSystem] = {}
    for s in (NOT_STATED,) + _SYSTEMS:
        for spelling in (s.name,) + s.aliases:
            k = _key(spelling)
            if k in table and table[k] is not s:  # pragma: no cover - a fault in the table above
                raise AssertionError(f"unit spelling {spelling!r} names both {table[k].name} and {s.name}")
            table[k] = s
    return table


_TABLE = _table()


def systems() -> tuple[UnitSystem, ...]:
    """The named consistent systems planar knows, in the order they are listed."""
    return _SYSTEMS


def _listing() -> str:
    rows = "; ".join(f"{s.name} (also {', '.join(repr(a) for a in s.aliases)})" for s in _SYSTEMS)
    return (f"planar knows these consistent systems (force-length-stress, with time in s): {rows}. Case, "
            "order and the separators (commas, semicolons, spaces, hyphens) do not matter. To state no "
            "units, leave units= out (or give 'consistent units'): the numbers are then still taken as "
            "consistent and outputs say 'units not stated'")


def unit_system(value: Union[str, UnitSystem, None] = None) -> UnitSystem:
    """The unit system a name or spelling stands for.

    Parameters
    ----------
    value : str, UnitSystem or None
        A system's name or an accepted spelling (``"N, mm, MPa"``, ``"kip-in-ksi"``, ...), a
        :class:`UnitSystem` (returned as it is), or None / ``""`` / ``"consistent units"`` for
        units not stated.

    Returns
    -------
    UnitSystem

    Raises
    ------
    InputError
        An unknown spelling (``"pounds and furlongs"``), with the list of known systems.

    Examples
    --------
    >>> unit_system("kN-m-kPa").mass
    't'
    >>> unit_system("pounds and furlongs")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    planar.core.errors.InputError: unknown unit system 'pounds and furlongs'; planar knows ...
    """
    if isinstance(value, UnitSystem):
        return value
    if value is None:
        return NOT_STATED
    if not isinstance(value, str):
        raise InputError(f"units must be a text naming a unit system (e.g. 'N, mm, MPa'), got "
                         f"{type(value).__name__} {value!r}; " + _listing())
    k = _key(value)
    if not k:
        return NOT_STATED
    found = _TABLE.get(k)
    if found is None:
        raise InputError(f"unknown unit system {value!r}; " + _listing())
    return found


# ---------------------------------------------------------------------------------------- labels
#: every unit name of the known systems, and other spellings of their stress units: what a bare
#: unit (a plot's label given by hand, ``planar show --units MPa``) may be
KNOWN_UNITS = tuple(dict.fromkeys(
    [u for s in _SYSTEMS for u in (s.stress, s.length, s.force, s.moment, s.force_per_length, s.density)]
    + ["N/mm^2", "N/mm2", "kN/mm^2", "kN/m^2", "deg", "rad"]))


def bare_unit(text: str) -> str:
    """Check a single unit given by hand (a label): one of :data:`KNOWN_UNITS`, in its own spelling.

    Raises
    ------
    InputError
        Neither a known unit nor a system, with both lists.

    Examples
    --------
    >>> bare_unit("mpa")
    'MPa'
    """
    t = str(text).strip()
    for u in KNOWN_UNITS:
        if t == u:
            return u
    for u in KNOWN_UNITS:
        if t.casefold().replace(" ", "") == u.casefold().replace(" ", ""):
            return u
    simple = dict.fromkeys(u for s in _SYSTEMS for u in (s.stress, s.length, s.force))
    raise InputError(f"unknown unit {text!r}: give a unit system (e.g. 'N, mm, MPa') or one unit of a known "
                     f"system ({', '.join(simple)}, or a derived one such as N/mm^2, N mm, t/mm^3); " + _listing())


def stress_unit(units) -> str:
    """The stress unit of a system or its spelling (``"N, mm, MPa"`` -> ``"MPa"``; ``""`` when not stated).

    Examples
    --------
    >>> stress_unit("N, mm, MPa"), stress_unit("lbf; in; psi"), stress_unit("consistent units")
    ('MPa', 'psi', '')
    """
    return unit_system(units or None).stress


def length_unit(units) -> str:
    """The length unit of a system or its spelling, else ``""``.

    Examples
    --------
    >>> length_unit("N, mm, MPa")
    'mm'
    """
    return unit_system(units or None).length


def force_unit(units) -> str:
    """The force unit of a system or its spelling, else ``""``.

    Examples
    --------
    >>> force_unit("N, mm, MPa")
    'N'
    """
    return unit_system(units or None).force


@renamed_keywords(name="field")
def field_unit(field: str, units) -> str:
    """Unit of a named field in a system (or its spelling); strains are dimensionless.

    Examples
    --------
    >>> field_unit("sigma_xx", "kip, in, ksi"), field_unit("ux", "N-m-Pa"), field_unit("eps_xx", "N-m-Pa")
    ('ksi', 'm', '')
    """
    from .fields import FIELD_TABLE

    system = unit_system(units or None)
    base = field[8:] if field.startswith("element_") else field
    info = FIELD_TABLE.get(base)
    if info is None:
        return system.stress if field.startswith("element_") else ""
    if info.unit == "stress":
        return system.stress
    if info.unit == "length":
        return system.length
    return info.unit if info.unit == "deg" else ""


def figure_units(field: str, given=None, stored=None) -> tuple[str, str, UnitSystem | None]:
    """The field's unit, the length unit and the system of a figure.

    Parameters
    ----------
    field : str
        The field drawn.
    given : str or UnitSystem, optional
        Units asked for: a system (or its spelling), which wins over ``stored``, or one bare unit
        for the field (checked by :func:`bare_unit`), lengths then from ``stored``.
    stored : UnitSystem, optional
        The system the data states (a result's, a file's).

    Returns
    -------
    (str, str, UnitSystem or None)

    Examples
    --------
    >>> figure_units("sigma_xx", None, unit_system("N, mm, MPa"))[:2]
    ('MPa', 'mm')
    >>> figure_units("sigma_xx", "kip, in, ksi", unit_system("N, mm, MPa"))[:2]
    ('ksi', 'in')
    >>> figure_units("sigma_xx", "N/mm^2", unit_system("N, mm, MPa"))[:2]
    ('N/mm^2', 'mm')
    """
    if given is not None and str(given).strip():
        try:
            system = unit_system(given)
        except InputError:
            return bare_unit(given), stored.length if stored is not None else "", stored
        return field_unit(field, system), system.length, system
    if stored is None:
        return "", "", None
    return field_unit(field, stored), stored.length, stored


# ---------------------------------------------------------------------------------------- gravity
def unit_direction(direction, what: str = "direction") -> tuple[float, float]:
    """A direction (dx, dy) scaled to length one; refused unless two finite numbers, not both zero."""
    import math

    try:
        dx, dy = (float(v) for v in direction)
    except (TypeError, ValueError):
        dx = dy = math.nan
    n = math.hypot(dx, dy)
    if not (math.isfinite(n) and n > 0.0):
        raise InputError(f"{what} must be two finite numbers, not both zero, e.g. (0, -1); got {direction!r}")
    return dx / n, dy / n


def standard_gravity(direction, units) -> tuple[float, float]:
    """The standard acceleration of gravity (9.80665 m/s^2) along a direction, in a system's units.

    Raises
    ------
    InputError
        When the system is not stated (no g to take), with the fix.

    Examples
    --------
    >>> standard_gravity((0, -1), unit_system("N, mm, MPa"))
    (0.0, -9806.65)
    """
    system = unit_system(units)
    if not system.stated:
        raise InputError(
            "gravity: direction= takes the standard g of the model's unit system, and this model states no "
            "units; name them, e.g. Model(..., units='N, mm, MPa') (g = 9806.65 mm/s^2; planar.core.units "
            "lists the systems), or give the vector yourself, e.g. Gravity(gy=-9806.65) in N, mm, MPa")
    dx, dy = unit_direction(direction)
    return system.g * dx + 0.0, system.g * dy + 0.0


#: the standard g per s^2 in each length unit of the named systems (and in cm): a vector given in another
#: system's length unit may be one of these
_G_BY_LENGTH = {s.length: s.g for s in systems() if s.g}
_G_BY_LENGTH["cm"] = 100.0 * _G_BY_LENGTH["m"]


def gravity_vector(gx: float, gy: float, direction, units) -> tuple[float, float]:
    """The acceleration of gravity (gx, gy), or the standard g along ``direction`` when one is given.

    A vector that is the standard g of another length unit than the model's is refused.

    ``Gravity(gy=-9.81)`` in an N, mm, MPa model is g in m/s^2 where mm/s^2 is meant: the weight comes
    out a thousand times too small, and nothing else would show it. Only a model that states its units
    is checked, and only a vector within 1 % of one standard g (9.80665 m/s^2) in m, mm, cm, in or ft
    per s^2 that is not the model's own.
    """
    if direction is not None:
        return standard_gravity(direction, units)
    system = unit_system(units)
    g = math.hypot(float(gx), float(gy))
    if not system.stated or not system.g or abs(g / system.g - 1.0) <= 0.01:
        return float(gx), float(gy)
    for length, g_there in _G_BY_LENGTH.items():
        if abs(g / g_there - 1.0) <= 0.01:
            raise InputError(
                f"gravity: |g| = {g:.6g} is the standard g in {length}/s^2, but the model's units are "
                f"{system.label}, where it is {system.g:.7g} {system.length}/s^2; give Gravity(direction=(0, -1)) "
                f"for the standard g in the model's units, or the vector in {system.length}/s^2"
            )
    return float(gx), float(gy)
