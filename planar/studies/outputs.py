"""What a sweep takes from each point's result: peak, value at a point, Kt, margin of safety."""
from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any, Mapping

import numpy as np

from ..core.values import number
from ..core.errors import InputError, unknown_name
from ..core.recovery import METHODS as _METHODS  # the one list of stress recoveries

# ============================================================================ outputs
class Output:
    """Base of the outputs a sweep takes from each point's result.

    A subclass (or any top-level function ``f(result, values) -> float``) computes one number from
    the result of a point; ``values`` holds the point's parameters and the extra numbers its function
    reported. Outputs are sent to the workers, so they must be picklable (module-level classes and
    functions are).
    """

    case: str | None = None

    def __call__(self, result, values: Mapping[str, Any]) -> float:  # pragma: no cover - abstract
        raise NotImplementedError

    def describe(self) -> str:
        return repr(self)


class _ZonedRepr:
    """The dataclass repr, leaving out ``where`` when it is None (so the spec of an output without a
    zone reads, and is stored, as it did before outputs took ``where``)."""

    def __repr__(self) -> str:
        from dataclasses import fields

        items = [f"{f.name}={getattr(self, f.name)!r}" for f in fields(self)
                 if f.repr and not (f.name == "where" and getattr(self, "where", None) is None)]
        return f"{type(self).__name__}({', '.join(items)})"


class NotedValue(float):
    """A number read from a peak, with where the peak was looked for and its note (a plain float otherwise).

    ``note`` says why the peak is not the part's own when it sits next to an idealised support or
    concentrated load (:func:`planar.core.zones.idealised_reason`); a sweep records it with the
    point (``record["notes"]``).
    """

    def __new__(cls, value: float, where: str = "everywhere", note: str = ""):
        self = super().__new__(cls, value)
        self.where = where
        self.note = note
        return self

    def __reduce__(self):
        return (NotedValue, (float(self), self.where, self.note))


def _check_where(where) -> None:
    """A zone or the name of an edge or region (checked against the mesh when the output is read)."""
    from ..core.zones import as_zone

    as_zone(where)


def _number(v, what: str, values: Mapping[str, Any] | None = None) -> float:
    """A number given directly, or by the name of a parameter or reported value."""
    if isinstance(v, str) and values is not None:
        if v not in values:
            raise unknown_name(f"value for {what}", v, values.keys(),
                               "Name a parameter of the point, or a number the function returned")
        v = values[v]
    if isinstance(v, str):
        raise InputError(f"{what} must be a number or the name of a parameter, got {v!r}")
    return number(v, what)


def _check_stress_args(fld: str, method: str) -> None:
    from ..core.result import FIELDS

    if fld not in FIELDS:
        raise InputError(f"unknown field {fld!r}; pick one of {', '.join(FIELDS)}")
    if method not in _METHODS:
        raise InputError(f"unknown stress recovery {method!r}; pick one of {', '.join(_METHODS)}")


@dataclass(frozen=True, repr=False)
class Peak(_ZonedRepr, Output):
    """Largest (or smallest, or largest magnitude) nodal value of a field.

    Parameters
    ----------
    field : str, default "von_mises"
        Any nodal field of :meth:`planar.Result.field`.
    method : {"spr", "average"}
        Nodal stress recovery.
    kind : {"max", "min", "absmax"}
        ``"absmax"`` gives the signed value of largest magnitude.
    case : str, optional
        Load case, when the point's result has several.
    where : str or Zone, optional
        Read the peak only here (:meth:`planar.Result.max`): the name of an edge or region, or a zone
        (``OnEdge``, ``InRegion``, ``InCircle``, ``InBox``, ``Near``, ``Away``). Default everywhere.
        The value is a :class:`NotedValue`; a peak next to an idealised support or concentrated load
        is noted in the point's record.
    """

    field: str = "von_mises"
    method: str = "spr"
    kind: str = "max"
    case: str | None = None
    where: Any = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        if self.kind not in ("max", "min", "absmax"):
            raise InputError(f"Peak kind must be 'max', 'min' or 'absmax', got {self.kind!r}")
        _check_where(self.where)

    def __call__(self, result, values):
        if self.kind == "min":
            e = result.min(self.field, recovery=self.method, where=self.where)
        else:
            e = result.max(self.field, recovery=self.method, absolute=self.kind == "absmax", where=self.where)
        return NotedValue(e.value, e.where, e.note)


@dataclass(frozen=True)
class ValueAt(Output):
    """A field's value at a point of the plate (e.g. a displacement, ``field="ux"``).

    Parameters
    ----------
    point : (float, float)
        In the model's length unit; it must lie inside the mesh.
    field : str
    method : {"spr", "average"}
    case : str, optional
    """

    point: tuple[float, float]
    field: str = "displacement"
    method: str = "spr"
    case: str | None = None

    def __post_init__(self):
        p = tuple(float(c) for c in np.asarray(self.point, dtype=float).reshape(-1))
        if len(p) != 2 or not all(math.isfinite(c) for c in p):
            raise InputError(f"ValueAt needs a point (x, y), got {self.point!r}")
        object.__setattr__(self, "point", p)
        _check_stress_args(self.field, self.method)

    def __call__(self, result, values):
        return float(result.at(self.point, self.field, recovery=self.method))


@dataclass(frozen=True, repr=False)
class ConcentrationFactor(_ZonedRepr, Output):
    """Stress concentration factor Kt = peak / nominal (:func:`planar.post.checks.kt`).

    Parameters
    ----------
    nominal : float or str
        Nominal stress, or the name of a parameter or of a value the function returned.
    field : str, default "von_mises"
    method : {"spr", "average"}
    absolute : bool
        Largest magnitude instead of the largest signed value.
    case : str, optional
    where : str or Zone, optional
        Read the peak only here, as in :class:`Peak`.
    """

    nominal: float | str
    field: str = "von_mises"
    method: str = "spr"
    absolute: bool = False
    case: str | None = None
    where: Any = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        if not isinstance(self.nominal, str):
            _number(self.nominal, "the nominal stress")
        _check_where(self.where)

    def __call__(self, result, values):
        from ..post.checks import kt

        nom = _number(self.nominal, "the nominal stress", values)
        c = kt(result, nom, field=self.field, recovery=self.method, absolute=self.absolute, where=self.where)
        return NotedValue(c.Kt, c.where, c.note)


@dataclass(frozen=True, repr=False)
class SafetyMargin(_ZonedRepr, Output):
    """Margin of safety allowable / (FS x peak) - 1 (:func:`planar.post.checks.margin_of_safety`).

    Parameters
    ----------
    allowable : float or str
        Allowable stress, or the name of a parameter or reported value.
    factor_of_safety : float or str, default 1.0
    field : str, default "von_mises"
    method : {"spr", "average"}
    case : str, optional
    where : str or Zone, optional
        Read the peak only here, as in :class:`Peak`.
    """

    allowable: float | str
    factor_of_safety: float | str = 1.0
    field: str = "von_mises"
    method: str = "spr"
    case: str | None = None
    where: Any = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        _check_where(self.where)

    def __call__(self, result, values):
        from ..post.checks import margin_of_safety

        m = margin_of_safety(result, _number(self.allowable, "the allowable", values),
                             _number(self.factor_of_safety, "the factor of safety", values),
                             field=self.field, recovery=self.method, where=self.where)
        return NotedValue(m.margin, m.where, m.note)


_OUTPUT_FORMS = ("max:FIELD", "min:FIELD", "absmax:FIELD", "at:X,Y:FIELD", "kt:FIELD:NOMINAL",
                 "margin:FIELD:ALLOWABLE[:FS]")
# "on NAME" and "in CASE": a name runs to the next clause, the "@" of the recovery or the end, so it may hold
# spaces and any letter ("in pull ✓", "on pull end"); a name holding " on ", " in " or "@" is quoted
_NAME = r"""(?:'([^']*)'|"([^"]*)"|(.+?))(?=\s+on\s|\s+in\s|@|$)"""
_ZONE_WORDS = re.compile(r"\s+on\s+" + _NAME)
_CASE_WORDS = re.compile(r"\s+in\s+" + _NAME)


def _clauses(words: re.Pattern, s: str) -> list[str]:
    """The names of every ``on NAME`` (or ``in CASE``) clause of ``s``, unquoted."""
    return [next((g for g in m if g), "") for m in words.findall(s)]


def parse_output(text: str) -> Output:
    """An output from its short text form (used by ``planar sweep --output``).

    Forms: ``max:FIELD``, ``min:FIELD``, ``absmax:FIELD``, ``at:X,Y:FIELD``, ``kt:FIELD:NOMINAL``,
    ``margin:FIELD:ALLOWABLE[:FS]``, each optionally ending in ``@average`` or ``@spr`` (the stress
    recovery, default spr). NOMINAL, ALLOWABLE and FS are numbers or names of parameters or of values
    the function returns. A peak, Kt or margin read on one feature adds ``on NAME``, the name of an
    edge or region (``max:von_mises on fillet``, ``kt:sigma_xx:nominal on bolt_hole@average``); a
    result with several load cases is read in one named by ``in CASE`` (``max:von_mises on hole in pull``).
    A name runs to the next clause, the ``@`` or the end, so it may hold spaces (``in pull ✓``,
    ``on pull end``); quote one that holds `` on ``, `` in `` or ``@`` (``in 'lift @ 2g'``).

    Examples
    --------
    >>> parse_output("kt:sigma_xx:nominal@average")
    ConcentrationFactor(nominal='nominal', field='sigma_xx', method='average', absolute=False, case=None)
    >>> parse_output("max:von_mises on fillet")
    Peak(field='von_mises', method='spr', kind='max', case=None, where='fillet')
    >>> parse_output("at:10,2.5:uy")
    ValueAt(point=(10.0, 2.5), field='uy', method='spr', case=None)
    >>> parse_output("max:von_mises on hole in pull")
    Peak(field='von_mises', method='spr', kind='max', case='pull', where='hole')
    >>> parse_output("kt:sigma_xx:100 on pull end in 'lift @ 2g'@average").case
    'lift @ 2g'
    """
    s = str(text).strip()
    zones = _clauses(_ZONE_WORDS, s)
    where = zones[0] if len(zones) == 1 else None
    if len(zones) > 1:
        raise InputError(f"output {text!r} names {len(zones)} zones ({', '.join(zones)}); give one: ... on NAME")
    s = _ZONE_WORDS.sub("", s).strip()
    cases = _clauses(_CASE_WORDS, s)  # "... in CASE": the load case of a result with several
    if len(cases) > 1:
        raise InputError(f"output {text!r} names {len(cases)} load cases ({', '.join(cases)}); give one: ... in CASE")
    case = cases[0] if cases else None
    s = _CASE_WORDS.sub("", s).strip()
    method = "spr"
    if "@" in s:
        s, method = s.rsplit("@", 1)
    parts = s.split(":")
    kind = parts[0].lower()

    def num_or_name(v):
        try:
            return float(v)
        except ValueError:
            return v

    try:
        if kind in ("max", "min", "absmax") and len(parts) == 2:
            return Peak(parts[1], method=method, kind=kind, case=case, where=where)
        if kind == "at" and len(parts) == 3:
            if where is not None:
                raise InputError(f"output {text!r}: a value at a point takes no zone; drop 'on {where}'")
            xy = [float(c) for c in parts[1].split(",")]
            return ValueAt(tuple(xy), parts[2], method=method, case=case)
        if kind == "kt" and len(parts) == 3:
            return ConcentrationFactor(num_or_name(parts[2]), parts[1], method=method, case=case, where=where)
        if kind == "margin" and len(parts) in (3, 4):
            fs = num_or_name(parts[3]) if len(parts) == 4 else 1.0
            return SafetyMargin(num_or_name(parts[2]), fs, parts[1], method=method, case=case, where=where)
    except InputError:
        raise
    except ValueError:  # coordinates that are not numbers
        pass
    raise InputError(f"cannot read the output {text!r}; write it as one of {', '.join(_OUTPUT_FORMS)} "
                     "(optionally ending in @average or @spr; a peak, kt or margin on one edge or region adds "
                     "'on NAME')")


def _describe_output(o) -> str:
    if isinstance(o, Output):
        return o.describe()
    return f"{getattr(o, '__module__', '?')}:{getattr(o, '__qualname__', repr(o))}"


def _check_outputs(outputs) -> dict[str, Any]:
    if outputs is None:
        return {}
    if isinstance(outputs, (list, tuple)):
        outputs = {str(o) if isinstance(o, str) else f"output_{i + 1}": o for i, o in enumerate(outputs)}
    if not isinstance(outputs, Mapping):
        raise InputError(f"outputs must map names to outputs (Peak(...), ValueAt(...), 'max:von_mises', ...), "
                         f"got {type(outputs).__name__}")
    out = {}
    for name, o in outputs.items():
        if isinstance(o, str):
            o = parse_output(o)
        if not (isinstance(o, Output) or callable(o)):
            raise InputError(f"output {name!r} must be an Output, a callable f(result, values) or a text "
                             f"form such as 'max:von_mises', got {o!r}")
        out[str(name)] = o
    return out


@dataclass(frozen=True)
class _DefaultPeak(Output):
    """Peak von Mises (SPR) when the user names no output; nothing when the function gives numbers."""

    case: str | None = None

    def __call__(self, result, values):
        return Peak("von_mises")(result, values)

    def describe(self) -> str:
        return "Peak(field='von_mises', method='spr', kind='max', case=None)"
