"""The benchmark registry: records, the check that makes them, and the ``@case`` decorator.

The case modules (``core_cases``, ``geometry_cases``, ``recovery_cases``) import from here, and the
package imports them, so imports point one way only.
"""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Callable, Iterable

__all__ = ["Record", "check", "case", "ELEMENT_CASES"]


@dataclass
class Record:
    """One checked quantity of one benchmark case."""

    case: str
    element: str
    quantity: str
    reference: float
    computed: float
    rel_error: float
    tolerance: float
    dofs: int
    source: str
    passed: bool
    note: str = ""
    #: a lower-bound check (``check(..., at_least=True)``): passes when computed >= reference - tolerance
    bound: bool = False

    def to_json(self) -> dict:
        d = asdict(self)
        for k in ("reference", "computed", "rel_error", "tolerance"):
            v = d[k]
            d[k] = None if v is None or (isinstance(v, float) and not math.isfinite(v)) else float(v)
        d["dofs"] = int(d["dofs"])
        d["passed"] = bool(d["passed"])
        return d


def check(case: str, element: str, quantity: str, reference: float, computed: float, tolerance: float,
          dofs: int, source: str, *, relative_to: float | None = None, at_least: bool = False,
          note: str = "") -> Record:
    """Build a record; rel_error = |computed - reference| / |relative_to or reference|.

    With ``at_least``, the check passes when computed >= reference - tolerance (an observed rate
    or order that must reach a floor); rel_error is then the shortfall (0 when met).
    """
    if at_least:
        rel = max(0.0, (reference - computed) / abs(reference)) if reference else 0.0
        ok = computed >= reference - tolerance
    else:
        den = abs(relative_to if relative_to is not None else reference)
        rel = abs(computed - reference) / den if den > 0 else abs(computed - reference)
        ok = rel <= tolerance
    ok = bool(ok and math.isfinite(computed))
    return Record(case, element, quantity, float(reference), float(computed), float(rel), float(tolerance),
                  int(dofs), source, ok, note, bool(at_least))


@dataclass
class _Case:
    name: str
    func: Callable[[str], list[Record]]
    elements: tuple[str, ...]
    any_element: bool
    slow: bool
    #: run by ``planar verify`` with no case named; False for a case whose reference is still in doubt (run it
    #: by name: ``planar verify --case NAME``)
    default: bool = True


_CASES: dict[str, _Case] = {}

#: cases that `planar verify --element NAME` runs for any registered element
ELEMENT_CASES = ("patch-test", "energy-rate", "cantilever-tip", "cook-membrane")


def case(name: str, elements: Iterable[str], *, any_element: bool = False, slow: bool = False,
         default: bool = True):
    """Register a benchmark case ``func(element) -> list[Record]``.

    ``default=False`` keeps a case out of the full run (its published reference is in doubt) while
    ``planar verify --case NAME`` still runs it.
    """

    def deco(func):
        _CASES[name] = _Case(name, func, tuple(elements), any_element, slow, default)
        return func

    return deco
