"""Checking that a function was given one load case's result (or the dict :func:`planar.solve` returns).

:class:`CaseResult` is the base of :class:`planar.core.result.Result` (and so of combinations): the
modules that take a result and sit below the Result class (stress recovery) check their input here,
with the same wording and fix as every other taker.
"""
from __future__ import annotations

from typing import Any

from .errors import InputError

__all__ = ["CaseResult", "as_result", "as_results"]


class CaseResult:
    """Base of one load case's result (:class:`planar.core.result.Result`); holds nothing itself."""

    __slots__ = ()


def as_result(obj: Any, where: str, *, also: str = "") -> "CaseResult":
    """``obj`` if it is one load case's :class:`Result`, else an InputError saying what to pass.

    The one check used by every function that takes a result (checks, plots, VTK output, reports,
    error estimates, combinations), so that the dict :func:`planar.solve` returns, a Model or
    anything else gets the same fix.

    Parameters
    ----------
    obj : Any
        What the user passed.
    where : str
        The function's name for the message (e.g. ``"kt"``).
    also : str, optional
        Another accepted input, added to the message (e.g. ``"give the peak stress as a number"``).

    Returns
    -------
    Result

    Raises
    ------
    InputError
        Naming what was given and the fix, e.g. ``results['pull']`` with the case names of a dict.
    """
    if isinstance(obj, CaseResult):
        return obj
    try:
        _refuse(obj, where)
    except InputError as exc:
        raise InputError(f"{exc}{'; or ' + also if also else ''}") from None
    return obj  # pragma: no cover - _refuse always raises


def _refuse(obj: Any, where: str) -> None:
    from collections.abc import Mapping

    fix = "pass one load case's result"
    if isinstance(obj, Mapping):
        names = [str(k) for k in obj]
        if names and all(isinstance(v, CaseResult) for v in obj.values()):
            raise InputError(
                f"{where} takes one load case's Result, but got the dict of results that solve() returns "
                f"(cases {', '.join(map(repr, names))}); {fix}: results[{names[0]!r}]"
            )
        raise InputError(f"{where} takes one load case's Result, got a {type(obj).__name__} with keys "
                         f"{names[:5]}; {fix}, e.g. planar.solve(model)['case name']")
    if type(obj).__name__ == "Model" and hasattr(obj, "cases") and hasattr(obj, "mesh"):
        cases = list(getattr(obj, "cases", {}) or {})
        first = repr(cases[0]) if cases else "'case name'"
        raise InputError(f"{where} takes one load case's Result, got the Model itself; solve it first and "
                         f"{fix}: planar.solve(model)[{first}]")
    if hasattr(obj, "layers") and hasattr(obj, "fasteners") and isinstance(getattr(obj, "layers"), Mapping):
        names = list(obj.layers)
        first = repr(names[0]) if names else "'layer'"
        raise InputError(f"{where} takes one load case's Result, got a joint's result, which holds one Result per "
                         f"layer ({', '.join(map(repr, names))}); pass a layer, e.g. result.layers[{first}]"
                         + (" (with joints=result for the fastener tables)" if where == "stress_check_report" else ""))
    raise InputError(f"{where} takes one load case's Result (from planar.solve(model)['case name']), got "
                     f"{type(obj).__name__}")


def as_results(obj: Any, where: str) -> "dict[str, CaseResult]":
    """``obj`` as a dict of name -> :class:`Result` (what :func:`planar.solve` returns), else an InputError.

    Parameters
    ----------
    obj : Any
        What the user passed.
    where : str
        The function's name for the message (e.g. ``"envelope"``).

    Raises
    ------
    InputError
        One Result, a Model, or a mapping holding something else, with the fix.
    """
    from collections.abc import Mapping

    if isinstance(obj, Mapping):
        for k, v in obj.items():
            layers = getattr(v, "layers", None)
            if not isinstance(v, CaseResult) and hasattr(v, "fasteners") and isinstance(layers, Mapping):
                first = repr(next(iter(layers), "layer"))
                raise InputError(f"{where}: results[{k!r}] is a joint's result, which holds one Result per layer "
                                 f"({', '.join(map(repr, layers))}); give {where} one layer's results at a time, e.g. "
                                 f"{{case: r.layers[{first}] for case, r in results.items()}}")
            if not isinstance(v, CaseResult):
                raise InputError(f"{where}: results[{k!r}] is a {type(v).__name__}, not a planar Result; "
                                 "pass the dict planar.solve(model) returns (name -> Result)")
        return dict(obj)
    if isinstance(obj, CaseResult):
        raise InputError(f"{where} takes the dict of results that solve() returns (name -> Result), got one "
                         f"Result (load case {obj.case!r}); pass planar.solve(model), or {{{obj.case!r}: result}}")
    if type(obj).__name__ == "Model" and hasattr(obj, "cases") and hasattr(obj, "mesh"):
        raise InputError(f"{where} takes the dict of results that solve() returns, got the Model itself; solve it "
                         "first: planar.solve(model)")
    raise InputError(f"{where} takes the dict of results that solve() returns (name -> Result), got "
                     f"{type(obj).__name__}")
