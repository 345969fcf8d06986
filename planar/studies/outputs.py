"""What a sweep takes from each point's result: peak, value at a point, Kt, margin of safety."""
from __future__ import annotations

import math
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


@dataclass(frozen=True)
class Peak(Output):
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
    """

    field: str = "von_mises"
    method: str = "spr"
    kind: str = "max"
    case: str | None = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        if self.kind not in ("max", "min", "absmax"):
            raise InputError(f"Peak kind must be 'max', 'min' or 'absmax', got {self.kind!r}")

    def __call__(self, result, values):
        if self.kind == "min":
            return result.min(self.field, recovery=self.method)[0]
        return result.max(self.field, recovery=self.method, absolute=self.kind == "absmax")[0]


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


@dataclass(frozen=True)
class ConcentrationFactor(Output):
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
    """

    nominal: float | str
    field: str = "von_mises"
    method: str = "spr"
    absolute: bool = False
    case: str | None = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        if not isinstance(self.nominal, str):
            _number(self.nominal, "the nominal stress")

    def __call__(self, result, values):
        from ..post.checks import kt

        nom = _number(self.nominal, "the nominal stress", values)
        return kt(result, nom, field=self.field, recovery=self.method, absolute=self.absolute).Kt


@dataclass(frozen=True)
class SafetyMargin(Output):
    """Margin of safety allowable / (FS x peak) - 1 (:func:`planar.post.checks.margin_of_safety`).

    Parameters
    ----------
    allowable : float or str
        Allowable stress, or the name of a parameter or reported value.
    factor_of_safety : float or str, default 1.0
    field : str, default "von_mises"
    method : {"spr", "average"}
    case : str, optional
    """

    allowable: float | str
    factor_of_safety: float | str = 1.0
    field: str = "von_mises"
    method: str = "spr"
    case: str | None = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)

    def __call__(self, result, values):
        from ..post.checks import margin_of_safety

        return margin_of_safety(result, _number(self.allowable, "the allowable", values),
                                _number(self.factor_of_safety, "the factor of safety", values),
                                field=self.field, recovery=self.method).margin


_OUTPUT_FORMS = ("max:FIELD", "min:FIELD", "absmax:FIELD", "at:X,Y:FIELD", "kt:FIELD:NOMINAL",
                 "margin:FIELD:ALLOWABLE[:FS]")


def parse_output(text: str) -> Output:
    """An output from its short text form (used by ``planar sweep --output``).

    Forms: ``max:FIELD``, ``min:FIELD``, ``absmax:FIELD``, ``at:X,Y:FIELD``, ``kt:FIELD:NOMINAL``,
    ``margin:FIELD:ALLOWABLE[:FS]``, each optionally ending in ``@average`` or ``@spr`` (the stress
    recovery, default spr). NOMINAL, ALLOWABLE and FS are numbers or names of parameters or of values
    the function returns.

    Examples
    --------
    >>> parse_output("kt:sigma_xx:nominal@average")
    ConcentrationFactor(nominal='nominal', field='sigma_xx', method='average', absolute=False, case=None)
    >>> parse_output("at:10,2.5:uy")
    ValueAt(point=(10.0, 2.5), field='uy', method='spr', case=None)
    """
    s = str(text).strip()
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
            return Peak(parts[1], method=method, kind=kind)
        if kind == "at" and len(parts) == 3:
            xy = [float(c) for c in parts[1].split(",")]
            return ValueAt(tuple(xy), parts[2], method=method)
        if kind == "kt" and len(parts) == 3:
            return ConcentrationFactor(num_or_name(parts[2]), parts[1], method=method)
        if kind == "margin" and len(parts) in (3, 4):
            fs = num_or_name(parts[3]) if len(parts) == 4 else 1.0
            return SafetyMargin(num_or_name(parts[2]), fs, parts[1], method=method)
    except InputError:
        raise
    except ValueError:  # coordinates that are not numbers
        pass
    raise InputError(f"cannot read the output {text!r}; write it as one of {', '.join(_OUTPUT_FORMS)} "
                     "(optionally ending in @average or @spr)")


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
