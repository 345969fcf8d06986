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
import textwrap
import time
import warnings
from typing import Iterable

from ..core.errors import DiscretisationWarning, PlanarError, unknown_name

__all__ = ["Record", "case", "cases", "run", "records_to_json", "format_table", "ELEMENT_CASES"]


from ._register import _CASES, ELEMENT_CASES, Record, _Case, case, check  # noqa: F401


def _load_cases() -> None:
    from . import core_cases  # noqa: F401
    for mod in ("geometry_cases", "recovery_cases", "edge_cases", "pin_cases", "hotspot_cases", "lug_cases",
                "contact_cases", "joint_cases"):
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
    names = list(case_names) if case_names is not None else [n for n, c in allc.items() if c.default]
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


def _num(v: float, spec: str = ".6g") -> str:
    return format(v, spec) if math.isfinite(v) else "-"


def _cells(r: Record) -> tuple[str, str, str]:
    """(reference, error, tolerance) as printed: a lower bound reads ">= 1.9" with its shortfall."""
    if r.bound:
        short = r.reference - r.computed
        err = "met" if math.isfinite(short) and short <= 0 else f"short {_num(short, '.3g')}"
        return f">= {_num(r.reference)}", err, (f"slack {r.tolerance:.2g}" if r.tolerance > 0 else "-")
    return _num(r.reference), _num(r.rel_error, ".2e"), _num(r.tolerance, ".1e")


def format_table(records: list[Record], *, width: int = 120) -> str:
    """A plain-text table within ``width`` columns: case, element, quantity, reference, computed,
    rel. error, tolerance, ok and a footnote number; the sources follow the table as numbered
    footnotes (each source once). A lower-bound check prints its reference as ``>= value`` and its
    error as "met" or the shortfall.
    """
    notes: dict[str, int] = {}
    head = ("case", "element", "quantity", "reference", "computed", "rel. error", "tolerance", "ok", "src")
    rows = []
    for r in records:
        ref, err, tol = _cells(r)
        src = f"[{notes.setdefault(r.source, len(notes) + 1)}]" if r.source.strip(" -") else ""
        rows.append((r.case, r.element, r.quantity, ref, _num(r.computed), err, tol,
                     "yes" if r.passed else "NO", src))
    widths = [max([len(head[i])] + [len(row[i]) for row in rows]) for i in range(len(head))]
    q = 2
    widths[q] = max(16, width - (sum(widths) - widths[q]) - 2 * (len(head) - 1))
    sep = "  "

    def line(cells) -> str:
        return sep.join(str(c).ljust(w) for c, w in zip(cells, widths)).rstrip()

    out = [line(head), "-" * min(width, sum(widths) + len(sep) * (len(head) - 1))]
    for row in rows:
        parts = textwrap.wrap(row[q], widths[q]) or [""]
        out.append(line(row[:q] + (parts[0],) + row[q + 1:]))
        out.extend(line(("",) * q + (p,) + ("",) * (len(head) - q - 1)) for p in parts[1:])
    if notes:
        out.append("")
        out.append("sources:")
        for src, n in notes.items():
            tag = f"[{n}] "
            out.extend(textwrap.wrap(src or "-", width, initial_indent=tag, subsequent_indent=" " * len(tag)))
    return "\n".join(out)
