"""The published benchmark suite, as a user command (``planar verify``) and for plugin tests.

Each case builds a model, solves it and compares a quantity with a published or closed-form
reference, returning :class:`Record` rows. A plugin author runs the same checks on a new element::

    from planar.verify import run
    records = run(element="QM6")
    assert all(r.passed for r in records)
"""
from __future__ import annotations

import json
import math
import time
import warnings
from dataclasses import asdict, dataclass
from typing import Callable, Iterable

from ..core.errors import DiscretisationWarning, InputError, PlanarError, unknown_name

__all__ = ["Record", "case", "cases", "run", "records_to_json", "format_table", "ELEMENT_CASES"]


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
                  int(dofs), source, ok, note)


@dataclass
class _Case:
    name: str
    func: Callable[[str], list[Record]]
    elements: tuple[str, ...]
    any_element: bool
    slow: bool


_CASES: dict[str, _Case] = {}

#: cases that `planar verify --element NAME` runs for any registered element
ELEMENT_CASES = ("patch-test", "energy-rate", "cantilever-tip", "cook-membrane")


def case(name: str, elements: Iterable[str], *, any_element: bool = False, slow: bool = False):
    """Register a benchmark case ``func(element) -> list[Record]``."""

    def deco(func):
        _CASES[name] = _Case(name, func, tuple(elements), any_element, slow)
        return func

    return deco


def _load_cases() -> None:
    from . import core_cases  # noqa: F401
    for mod in ("geometry_cases", "recovery_cases"):
        try:
            __import__(f"{__name__}.{mod}")
        except ModuleNotFoundError as exc:
            if exc.name != f"{__name__}.{mod}":
                raise


def cases() -> dict[str, _Case]:
    """All registered cases by name."""
    _load_cases()
    return dict(_CASES)


def run(*, element: str | None = None, case_names: Iterable[str] | None = None, progress=None) -> list[Record]:
    """Run benchmark cases and return their records.

    Parameters
    ----------
    element : str, optional
        Run the element cases (patch test, energy rate, cantilever, Cook) for this registered
        element only, built-in or plugin.
    case_names : iterable of str, optional
        Restrict to these cases.
    progress : callable, optional
        Called with a line of text as each case finishes.
    """
    allc = cases()
    names = list(case_names) if case_names is not None else list(allc)
    for n in names:
        if n not in allc:
            raise unknown_name("benchmark case", n, allc)
    if element is not None:
        from ..core.registry import element_type

        element_type(element)  # a clear error for unknown names
        names = [n for n in names if n in ELEMENT_CASES and (allc[n].any_element or element in allc[n].elements)]
    records: list[Record] = []
    for n in names:
        c = allc[n]
        els = [element] if element is not None else list(c.elements)
        for el in els:
            t0 = time.perf_counter()
            try:
                # benchmarks are posed in normalised units (Cook: E = 1) and some on meshes coarse by
                # design (MacNeal-Harder: one element through the depth): their own tolerances judge them
                with warnings.catch_warnings():
                    warnings.filterwarnings("ignore", category=DiscretisationWarning,
                                            message="(displacements comparable|strains far beyond|slender part)")
                    recs = c.func(el)
            except PlanarError as exc:
                recs = [Record(n, el, f"error: {exc}", float("nan"), float("nan"), float("inf"), 0.0, 0,
                               "-", False)]
            records.extend(recs)
            if progress is not None:
                ok = all(r.passed for r in recs)
                progress(f"{n:<20s} {el:<6s} {'pass' if ok else 'FAIL'}  ({time.perf_counter() - t0:.1f} s)")
    return records


def records_to_json(records: list[Record]) -> str:
    return json.dumps([r.to_json() for r in records], indent=1)


def format_table(records: list[Record]) -> str:
    """A plain-text table: case, element, quantity, reference, computed, rel. error, tolerance, source."""
    head = ("case", "element", "quantity", "reference", "computed", "rel. error", "tolerance", "ok", "source")
    rows = [head]
    for r in records:
        rows.append((r.case, r.element, r.quantity, f"{r.reference:.6g}", f"{r.computed:.6g}",
                     f"{r.rel_error:.2e}", f"{r.tolerance:.1e}", "yes" if r.passed else "NO", r.source))
    widths = [max(len(str(row[i])) for row in rows) for i in range(len(head) - 1)]
    lines = []
    for row in rows:
        lines.append("  ".join(str(c).ljust(w) for c, w in zip(row[:-1], widths)) + "  " + row[-1])
        if row is head:
            lines.append("-" * (sum(widths) + 2 * len(widths) + 6))
    return "\n".join(lines)
