"""Load combinations and envelopes by linear superposition: no new solve.

A linear static answer is linear in its loads, so the result of a combination of load cases, for
example ``1.0 x dead + 1.5 x wind``, is the same combination of the cases' own results. This module
combines results that are already solved and stored:

- displacements, support reactions and applied nodal forces;
- the Gauss-point strains, mechanical strains (total minus initial, e.g. thermal, strain),
  stresses (sigma_xx, sigma_yy, tau_xy) and the out-of-plane stress sigma_zz, and the initial
  strains themselves.

Derived measures (von Mises, Tresca, principal stresses) are *not* linear in the loads; a combined
result computes them from its combined stress, exactly as a direct solve of the combined loads
would. The combined result is a real :class:`planar.core.result.Result` (a subclass), so
``field``, ``max``, ``at``, ``along``, stress recovery, checks and :func:`planar.write_vtu` work on
it unchanged.

An :class:`Envelope` is the largest and smallest value of one nodal field over several cases and
combinations, with the case that governs at each node. It is written as VTK (:meth:`Envelope.write_vtu`)
and drawn as a PNG (:meth:`Envelope.plot`).

Units are those of the model (for example N, mm, MPa); factors are pure numbers.

Examples
--------
>>> import numpy as np
>>> import planar
>>> from planar.post.combine import combine, envelope
>>> mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")           # mm
>>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
>>> _ = model.add_support(planar.Fixed("left"))
>>> _ = model.add_load(planar.Traction("right", tx=10.0), case="pull")    # MPa
>>> _ = model.add_load(planar.Traction("right", ty=-1.0), case="shear")   # MPa
>>> cases = planar.solve(model)
>>> ultimate = combine(cases, {"pull": 1.0, "shear": 1.5}, name="ultimate")
>>> bool(np.allclose(ultimate.u, cases["pull"].u + 1.5 * cases["shear"].u, rtol=1e-14, atol=0))
True
>>> env = envelope({**cases, "ultimate": ultimate}, "von_mises")
>>> env.names[env.governs_max[env.peak()[2]]]
'ultimate'
"""
from __future__ import annotations

import math
import os
import warnings
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import Mapping, NamedTuple, Sequence

import numpy as np

from ..core.compat import callable_module, deprecated, renamed_keywords
from ..core.values import number
from ..core.errors import InputError, unknown_name
from ..core.result import FIELDS, GaussField, Result, as_results

__all__ = ["CombinedResult", "Combination", "combine", "combinations", "Envelope", "EnvelopePeak", "envelope",
           "write_envelope_vtu", "plot_envelope"]


# ---------------------------------------------------------------------------- checks
def _factor(name: str, value) -> float:
    return number(value, f"the factor of {name!r}")


def combination_text(name, factors: Mapping[str, float]) -> str:
    """``"name = 1.35 x dead + 1.5 x wind"``; a negative factor reads ``- 1 x wind``."""
    return f"{name} = " + " + ".join(f"{float(f):g} x {c}" for c, f in factors.items()).replace("+ -", "- ")


def _same_analysis(a: Result, b: Result) -> bool:
    """True when two results come from one model on one mesh, so that superposition holds."""
    if a.assembly is b.assembly:
        return True
    if a.model is not b.model:
        return False
    ma, mb = a.mesh, b.mesh
    if ma.nodes.shape != mb.nodes.shape or not np.array_equal(ma.nodes, mb.nodes):
        return False
    if list(ma.cells) != list(mb.cells):
        return False
    if not all(np.array_equal(ma.cells[k], mb.cells[k]) for k in ma.cells):
        return False
    ba, bb = a.assembly.blocks, b.assembly.blocks
    return len(ba) == len(bb) and all(
        x.layout == y.layout and x.region == y.region and x.etype is y.etype and np.array_equal(x.D, y.D)
        and x.thickness == y.thickness and x.rule.n_points == y.rule.n_points for x, y in zip(ba, bb))


def _check_compatible(parts: Sequence[tuple[str, Result]], what: str) -> None:
    first_name, first = parts[0]
    for name, r in parts[1:]:
        if not _same_analysis(first, r):
            raise InputError(
                f"{what}: the results {first_name!r} and {name!r} come from different models or meshes, "
                "so their superposition has no meaning; put every load case in one Model, solve it once "
                "(planar.solve(model) returns all its cases) and combine those results"
            )


def _prescribed_nonzero(result: Result) -> bool:
    """Whether the model's supports, or its pins' ``move=``, prescribe any non-zero displacement."""
    from ..core.static import constrain

    pins = getattr(result.model, "pins", None) or []
    if any(np.any(np.asarray(getattr(p, "values", 0.0)) != 0.0) for p in pins):
        return True  # a pin's prescribed motion is part of every load case too
    try:
        cons = constrain(result.mesh, result.model.supports)
    except Exception:  # pragma: no cover - the model was solved, so its supports are sound
        return False
    return bool(cons.values.size and np.any(cons.values != 0.0))


# ---------------------------------------------------------------------------- combined result
class CombinedResult(Result):
    """The result of a load combination, by superposition of solved results.

    Parameters
    ----------
    name : str
        Name of the combination; it is the result's ``case``.
    parts : sequence of (float, Result)
        Factors and the results they multiply, all from one model and mesh.

    Attributes
    ----------
    factors : dict of str to float
        Case (or combination) name -> factor.
    parts : list of (float, Result)
    u, reactions, applied : ndarray, shape (n, 2)
        sum_i f_i u_i, sum_i f_i R_i, sum_i f_i F_i.

    Notes
    -----
    Linear superposition (common practice; e.g. S. P. Timoshenko and J. N. Goodier, Theory of
    Elasticity, 3rd ed., 1970, section 6): for K u_i = F_i, K (sum f_i u_i) = sum f_i F_i. Strains,
    stresses, sigma_zz and initial strains are combined at the Gauss points with the same factors;
    von Mises, Tresca and principal values are computed afterwards from the combined stress. A
    prescribed displacement (a support's, or a pin's ``move=``) is part of every case, so in a combination it counts with the sum of
    the factors (a warning says so when that sum is not 1 and the prescribed value is not zero).
    Results with bearing contact (a pin with ``tie="contact"``) are refused: the contact arc
    depends on the load, so they do not superpose; a load case with the combined loads, solved anew,
    is the answer (the choice to refuse, not to re-solve silently: the user sees which loads act).
    """

    def __init__(self, name: str, parts: Sequence[tuple[float, Result]]):
        parts = [(float(f), r) for f, r in parts]
        if not parts:
            raise InputError("a combination needs at least one result with a factor")
        from ..core.contact import refuse_superposition

        refuse_superposition([r for _, r in parts], f"combination {name!r}")  # contact is not linear
        f = np.array([p[0] for p in parts])
        first = parts[0][1]
        u = np.einsum("i,ink->nk", f, np.stack([r.u for _, r in parts]))
        R = np.einsum("i,ink->nk", f, np.stack([r.reactions for _, r in parts]))
        F = np.einsum("i,ink->nk", f, np.stack([r.applied for _, r in parts]))
        e0 = []
        e0s = [(fi, r.initial_strains) for fi, r in parts]
        for k in range(len(first.assembly.blocks)):
            arrays = [(fi, ek[k]) for fi, ek in e0s if ek[k] is not None]
            e0.append(None if not arrays else sum(fi * a for fi, a in arrays))
        solvers = sorted({r.solver for _, r in parts if r.solver})
        super().__init__(first.assembly, str(name), u, R, F, e0,
                         solver="superposition" + (f" of {', '.join(solvers)} solutions" if solvers else ""),
                         timer=None, solver_info={"combination": True})
        self.parts = parts
        from ..core.reactions import combine_pins

        combine_pins(self, parts)  # the pins' forces and figures superpose too
        self.factors: dict[str, float] = {}
        for fi, r in parts:
            self.factors[r.case] = self.factors.get(r.case, 0.0) + fi

    @cached_property
    def gauss(self) -> list[GaussField]:
        """Gauss-point strains and stresses: the factored sum of the parts' own (no recomputation)."""
        f = np.array([p[0] for p in self.parts])
        fields = [r.gauss for _, r in self.parts]
        out = []
        for k, g0 in enumerate(fields[0]):
            gs = [fl[k] for fl in fields]

            def comb(attr):
                return np.einsum("i,i...->...", f, np.stack([getattr(g, attr) for g in gs]))

            strain = comb("strain")
            if all(g.mech_strain is g.strain for g in gs):
                mech = strain  # no initial strain anywhere: keep them one array, like a solve does
            else:
                mech = comb("mech_strain")
            out.append(GaussField(g0.block, g0.rule, g0.x, g0.dvol, strain, mech, comb("stress"), comb("szz")))
        return out

    def describe(self) -> str:
        """The combination as text, e.g. ``"ultimate = 1.0 x pull + 1.5 x shear"``."""
        return combination_text(self.case, self.factors)

    def __repr__(self) -> str:
        return f"CombinedResult({self.describe()!r})"


def combine(results: Mapping[str, Result], factors: Mapping[str, float], *,
            name: str = "combination") -> CombinedResult:
    """Combine solved load cases with factors, by linear superposition.

    Parameters
    ----------
    results : mapping of str to Result
        Solved cases (and, if wanted, earlier combinations) by name, e.g. ``planar.solve(model)``.
    factors : mapping of str to float
        Name -> factor, e.g. ``{"dead": 1.0, "wind": 1.5}``. Negative factors are allowed.
    name : str, keyword-only
        Name of the combination (the result's ``case``).

    Returns
    -------
    CombinedResult
        Behaves like any Result: ``field``, ``max``, ``at``, ``along``, recovery, checks, VTK.

    Raises
    ------
    NameNotFoundError
        A factor names a case that ``results`` does not have (the message lists the valid names).
    InputError
        No factors, a factor that is not a finite number, or results from different models or
        meshes.

    Warns
    -----
    UserWarning
        When the supports prescribe a non-zero displacement and the factors do not add up to 1:
        the prescribed displacement, part of every case, is then scaled by their sum.

    Examples
    --------
    >>> import planar
    >>> mesh = planar.rectangle_mesh(50.0, 10.0, 5, 1, "Q4")
    >>> model = planar.Model(mesh, planar.Isotropic(200e3, 0.3), thickness=1.0)
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=1.0), case="A")
    >>> _ = model.add_load(planar.Traction("right", tx=2.0), case="B")
    >>> c = combine(planar.solve(model), {"A": 1.0, "B": -0.5}, name="A - B/2")
    >>> float(abs(c.u).max())
    0.0
    """
    results = as_results(results, "combine")
    if not isinstance(factors, Mapping) or not factors:
        raise InputError(f"combination {name!r} needs factors as a mapping of case name -> factor, "
                         f"e.g. {{'dead': 1.0, 'wind': 1.5}}; got {factors!r}")
    parts = []
    for case, value in factors.items():
        if case not in results:
            raise unknown_name("load case", case, results.keys(), f"Check the factors of combination {name!r}")
        r = results[case]
        if not isinstance(r, Result):
            raise InputError(f"results[{case!r}] is a {type(r).__name__}, not a planar Result")
        parts.append((_factor(case, value), r))
    _check_compatible([(c, r) for c, (_, r) in zip(factors, parts)], f"combination {name!r}")
    total = sum(f for f, _ in parts)
    if abs(total - 1.0) > 1e-12 and _prescribed_nonzero(parts[0][1]):
        warnings.warn(
            f"combination {name!r}: the supports (or a pin's move=) prescribe a non-zero displacement, which is "
            f"part of every load case, so the combination applies it {total:g} times; make the factors add up to 1, or "
            "put the prescribed displacement in a model of its own", UserWarning, stacklevel=2)
    return CombinedResult(name, parts)


@dataclass(frozen=True)
class Combination:
    """A named load combination: case (or earlier combination) name -> factor.

    Parameters
    ----------
    name : str
    factors : mapping of str to float

    Examples
    --------
    >>> Combination("ultimate", {"dead": 1.35, "wind": 1.5}).describe()
    'ultimate = 1.35 x dead + 1.5 x wind'
    """

    name: str
    factors: Mapping[str, float]

    def apply(self, results: Mapping[str, Result]) -> CombinedResult:
        """The combined result from solved cases (see :func:`combine`)."""
        return combine(results, self.factors, name=self.name)

    def describe(self) -> str:
        return combination_text(self.name, {c: _factor(c, f) for c, f in self.factors.items()})


def combinations(results: Mapping[str, Result],
                 definitions: Mapping[str, Mapping[str, float]] | Sequence[Combination]) -> dict[str, CombinedResult]:
    """Several named combinations at once; a later one may use an earlier one by name.

    Parameters
    ----------
    results : mapping of str to Result
        Solved load cases.
    definitions : mapping of str to mapping, or sequence of Combination
        Combination name -> {case name: factor}, in order.

    Returns
    -------
    dict of str to CombinedResult
        In the order given.

    Raises
    ------
    InputError
        A combination named like a load case (the names would be ambiguous), and the errors of
        :func:`combine`.

    Examples
    --------
    >>> import planar
    >>> mesh = planar.rectangle_mesh(50.0, 10.0, 5, 1, "Q4")
    >>> model = planar.Model(mesh, planar.Isotropic(200e3, 0.3))
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=1.0), case="A")
    >>> _ = model.add_load(planar.Traction("right", ty=1.0), case="B")
    >>> combos = combinations(planar.solve(model), {"AB": {"A": 1, "B": 1}, "2AB": {"AB": 2.0}})
    >>> list(combos)
    ['AB', '2AB']
    """
    results = as_results(results, "combinations")
    if isinstance(definitions, Mapping):
        items = [Combination(str(k), v) for k, v in definitions.items()]
    else:
        items = list(definitions)
        for c in items:
            if not isinstance(c, Combination):
                raise InputError(f"combinations() takes Combination items or a mapping, got {type(c).__name__}")
    known: dict[str, Result] = dict(results)
    out: dict[str, CombinedResult] = {}
    for c in items:
        if c.name in results:
            raise InputError(f"combination {c.name!r} has the name of a load case; give it a name of its own")
        if c.name in out:
            raise InputError(f"combination {c.name!r} is defined twice")
        out[c.name] = known[c.name] = c.apply(known)
    return out


# ---------------------------------------------------------------------------- envelope
class _EnvelopePeakTuple(NamedTuple):
    value: float
    location: tuple[float, float]
    node: int
    case: str


class EnvelopePeak(_EnvelopePeakTuple):
    """The largest or smallest value of an envelope (unpacks as ``value, location, node, case``).

    Attributes
    ----------
    value : float
    location : (float, float)
    node : int
    case : str
        The case or combination that gives it.
    where : str
        Where it was looked for (``"everywhere"`` or the zone's description, e.g. ``"on edge 'fillet'"``).
    note : str
        Why the value is not the part's own when it sits next to an idealised support or concentrated
        load (:func:`planar.core.zones.idealised_reason`); ``""`` otherwise.
    """

    def __new__(cls, value: float, location: tuple[float, float], node: int, case: str,
                where: str = "everywhere", note: str = ""):
        self = super().__new__(cls, value, location, node, case)
        self.where = where
        self.note = note
        return self

    def __getnewargs__(self):
        return (self.value, self.location, self.node, self.case, self.where, self.note)


@dataclass
class Envelope:
    """Largest and smallest value of a nodal field over cases and combinations.

    Attributes
    ----------
    field : str
        The nodal field (any name of :meth:`planar.Result.field`).
    recovery : str
        Stress recovery used for stress fields (``"average"`` or ``"spr"``).
    names : list of str
        The cases and combinations, in order; the governing indices point into this list.
    max, min : ndarray, shape (n,)
        Envelope values at the nodes (NaN at nodes that belong to no element).
    governs_max, governs_min : ndarray of int, shape (n,)
        Index into ``names`` of the case giving the max / min at each node (-1 at unused nodes; the
        first case in ``names`` wins a tie).
    nodes : ndarray, shape (n, 2)
    cells : dict of str to ndarray
    units : str
    where : str
        Where the peaks are read (``"everywhere"`` or the zone's description); ``max`` and ``min`` keep
        every node, the zone limits :meth:`peak` and :meth:`lowest` only.
    zone : ndarray of bool or None
        The zone's nodes (None: every node of an element).
    notes : (str, str)
        Why the peak and the lowest value are not the part's own, when they sit next to an idealised
        support or concentrated load (:func:`planar.core.zones.idealised_reason`), or ``""``.
    """

    field: str
    recovery: str
    names: list[str]
    max: np.ndarray
    min: np.ndarray
    governs_max: np.ndarray
    governs_min: np.ndarray
    nodes: np.ndarray
    cells: dict
    units: str
    _etypes: dict | None = None
    where: str = "everywhere"
    zone: np.ndarray | None = None
    notes: tuple[str, str] = ("", "")

    def governing(self, node: int) -> tuple[str, str]:
        """Names of the cases that give the max and the min at one node."""
        i, j = int(self.governs_max[node]), int(self.governs_min[node])
        if i < 0:
            raise InputError(f"node {node} belongs to no element, so it has no envelope value")
        return self.names[i], self.names[j]

    @property
    def method(self) -> str:
        """The old name of :attr:`recovery`, kept for one release."""
        deprecated("Envelope.method is now .recovery; the old name works for one release")
        return self.recovery

    def _at(self, v: np.ndarray, i: int, governs: np.ndarray, note: str) -> EnvelopePeak:
        return EnvelopePeak(float(v[i]), (float(self.nodes[i, 0]), float(self.nodes[i, 1])), i,
                            self.names[governs[i]], self.where, note)

    def _in_zone(self, v: np.ndarray) -> np.ndarray:
        return v if self.zone is None else np.where(self.zone, v, np.nan)

    def peak(self) -> EnvelopePeak:
        """Largest value of the envelope in its zone: (value, (x, y), node, governing case).

        Its ``where`` says where it was looked for and its ``note`` why it is not the part's own
        when it sits next to an idealised support or concentrated load.
        """
        return self._at(self.max, int(np.nanargmax(self._in_zone(self.max))), self.governs_max, self.notes[0])

    def lowest(self) -> EnvelopePeak:
        """Smallest value of the envelope in its zone: (value, (x, y), node, governing case), as :meth:`peak`."""
        return self._at(self.min, int(np.nanargmin(self._in_zone(self.min))), self.governs_min, self.notes[1])

    def counts(self) -> dict[str, tuple[int, int]]:
        """Number of nodes each case governs: name -> (for the max, for the min)."""
        cm = np.bincount(self.governs_max[self.governs_max >= 0], minlength=len(self.names))
        cn = np.bincount(self.governs_min[self.governs_min >= 0], minlength=len(self.names))
        return {n: (int(a), int(b)) for n, a, b in zip(self.names, cm, cn)}

    def summary(self) -> str:
        hi, lo = self.peak(), self.lowest()
        (vmax, pmax, _, cmax), (vmin, pmin, _, cmin) = hi, lo
        zone = "" if self.where == "everywhere" else f" {self.where}"
        from ..core.units import field_unit, unit_system

        system = unit_system(self.units)
        u, L = (f" {field_unit(self.field, system)}".rstrip(), f" {system.length}".rstrip())
        s = (f"envelope of {self.field}{zone} over {len(self.names)} cases: max {vmax:.6g}{u} at "
             f"({pmax[0]:.6g}, {pmax[1]:.6g}){L} from {cmax!r}; min {vmin:.6g}{u} at ({pmin[0]:.6g}, "
             f"{pmin[1]:.6g}){L} from {cmin!r}" + ("" if system.stated else "; units not stated"))
        for what, e in (("max", hi), ("min", lo)):
            if e.note:
                s += f". CAUTION: the {what} sits {e.note}"
        return s

    __str__ = summary

    def write_vtu(self, path: str | os.PathLike) -> Path:
        """Write the envelope as VTK (see :func:`write_envelope_vtu`)."""
        return write_envelope_vtu(path, self)

    def plot(self, path: str | os.PathLike | None = None, **kw):
        """Draw the envelope as PNG (see :func:`plot_envelope`)."""
        return plot_envelope(self, path, **kw)


@renamed_keywords(method="recovery")
def envelope(results: Mapping[str, Result], field: str = "von_mises", *, recovery: str = "spr",
             where=None) -> Envelope:
    """Envelope (max and min at every node) of a nodal field over cases and combinations.

    Parameters
    ----------
    results : mapping of str to Result
        Cases and combinations by name (all from one model and mesh), e.g.
        ``{**planar.solve(model), **combinations(...)}``.
    field : str, default "von_mises"
        Any nodal field of :meth:`planar.Result.field`. Derived fields (von Mises, principal
        stresses) are taken from each case's own stress, never combined.
    recovery : {"spr", "average"}
        Nodal stress recovery.
    where : str or Zone, optional
        Read the envelope's peaks (:meth:`Envelope.peak`, :meth:`Envelope.lowest`) only here: the name
        of an edge or region, or a zone of :mod:`planar.core.zones` (``OnEdge``, ``InRegion``,
        ``InCircle``, ``InBox``, ``Near``, ``Away``). The envelope keeps its values at every node.
        Default everywhere; a peak next to an idealised support or concentrated load carries a note.

    Returns
    -------
    Envelope

    Raises
    ------
    InputError
        No results, an unknown field, results from different models or meshes, or an empty zone.
    NameNotFoundError
        ``where`` names no edge or region of the mesh (the message lists them).

    Notes
    -----
    max_i v_i(x) and min_i v_i(x) over the cases i at each node x, with argmax / argmin naming the
    governing case (common practice in design by load combinations).
    An envelope does not superpose: each case keeps its own field, so cases solved with bearing
    contact are enveloped like any other (a combination of them is refused by :func:`combine`).
    """
    results = as_results(results, "envelope")
    if not results:
        raise InputError("envelope() needs a mapping of name -> Result with at least one entry")
    if field not in FIELDS:
        raise InputError(f"unknown field {field!r}; pick one of {', '.join(FIELDS)}")
    names = [str(k) for k in results]
    items = list(results.values())
    for n, r in zip(names, items):
        if not isinstance(r, Result):
            raise InputError(f"results[{n!r}] is a {type(r).__name__}, not a planar Result")
    first = items[0]
    for n, r in zip(names[1:], items[1:]):
        if r.mesh.nodes.shape != first.mesh.nodes.shape or not np.array_equal(r.mesh.nodes, first.mesh.nodes):
            raise InputError(
                f"envelope: {names[0]!r} and {n!r} are on different meshes; an envelope compares cases "
                "node by node, so solve them on one mesh (one model with several load cases)")
    _check_compatible(list(zip(names, items)), "envelope")
    # read in one region, its own side of an interface (as Result.max reads it)
    V = np.stack([r._own_side(r.field(field, recovery=recovery), field, recovery, None, where)
                  for r in items])  # (m, n)
    used = first.mesh.used_nodes()
    gmax = np.where(used, np.argmax(V, axis=0), -1)
    gmin = np.where(used, np.argmin(V, axis=0), -1)
    vmax = np.where(used, V.max(axis=0), np.nan)
    vmin = np.where(used, V.min(axis=0), np.nan)
    etypes = {b.layout: b.etype for b in first.assembly.blocks}
    zone, said = first.zone_mask(where)  # only nodes of elements; an empty zone is refused
    from ..core.zones import idealised_reason

    i = int(np.nanargmax(np.where(zone, vmax, np.nan)))
    j = int(np.nanargmin(np.where(zone, vmin, np.nan)))
    from ..core.fields import FIELD_TABLE

    info = FIELD_TABLE.get(field)
    # the smallest of a measure that is never negative (von Mises, displacement) is no peak: no note
    notes = (idealised_reason(first, i, vmax, zone),
             idealised_reason(first, j, -vmin, zone, sign_of_values=-1.0) if info is None or info.signed else "")
    return Envelope(field, recovery, names, vmax, vmin, gmax.astype(np.int64), gmin.astype(np.int64),
                    first.mesh.nodes, dict(first.mesh.cells), first.units, etypes,
                    said, None if where is None else zone, notes)


# ---------------------------------------------------------------------------- output
def write_envelope_vtu(path: str | os.PathLike, env: Envelope, *, compression: str | None = None) -> Path:
    """Write an envelope as a VTK unstructured-grid file (.vtu), atomically.

    Point data: ``<field>_max``, ``<field>_min`` (float), ``<field>_max_case``,
    ``<field>_min_case`` (int32 index of the governing case, -1 at unused nodes). Field data: one
    entry per case, its name -> [index], so a viewer can label the index; the same table is
    ``env.names``.

    Parameters
    ----------
    path : str or path-like
        Target ``.vtu`` file.
    env : Envelope
    compression : {None, "zlib", "lzma"}

    Returns
    -------
    Path
    """
    from .vtk import CELL_TYPES, vtu_target, write_grid

    path = vtu_target(path, compression)
    n = env.nodes.shape[0]
    pts = np.column_stack([env.nodes, np.zeros(n)])
    etypes = env._etypes or {}
    cells = [(getattr(etypes.get(t), "meshio_type", None) or CELL_TYPES.get(t, t), np.asarray(c, np.int64))
             for t, c in env.cells.items()]
    f = env.field
    pdata = {f"{f}_max": env.max.astype(float), f"{f}_min": env.min.astype(float),
             f"{f}_max_case": env.governs_max.astype(np.int32), f"{f}_min_case": env.governs_min.astype(np.int32)}
    write_grid(path, pts, cells, pdata, {}, {name: i for i, name in enumerate(env.names)}, compression,
               units=env.units)  # the cases' unit system, read back by planar show
    return path


def plot_envelope(env: Envelope, path: str | os.PathLike | None = None, *, title: str | None = None,
                  width: float = 9.0):
    """Draw an envelope: max, min and the governing case of the max, as three panels.

    Parameters
    ----------
    env : Envelope
    path : path, optional
        Write the figure as PNG (atomically).
    title : str, optional
    width : float
        Figure width in inches.

    Returns
    -------
    matplotlib.figure.Figure

    Notes
    -----
    Colour maps: viridis for the max, cividis for the min (perceptually uniform), and a discrete
    viridis palette, one colour per case, for the governing case at each node.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from .plots import field_label, field_unit, length_unit, plot_nodal_field, save_figure

    x0, y0 = np.nanmin(env.nodes, axis=0)
    x1, y1 = np.nanmax(env.nodes, axis=0)
    aspect = (x1 - x0) / max(y1 - y0, 1e-12)
    panel_h = float(np.clip(width / max(aspect, 0.3) * 0.85, 1.6, 4.5))
    fig = Figure(figsize=(width, 3 * panel_h + 1.2), dpi=120, layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(3, 1)
    unit = field_unit(env.field, env.units)
    length = length_unit(env.units)
    common = dict(field=env.field, unit=unit, length=length, etypes=env._etypes, scale=None)
    zone_note = None
    if env.where != "everywhere":  # the marked peak is the whole part's; say the zone's beside it
        hi = env.peak()
        zone_note = (f"peak {env.where}: {hi.value:.4g}{' ' + unit if unit else ''} at ({hi.location[0]:.4g}, "
                     f"{hi.location[1]:.4g}){' ' + length if length else ''} from {hi.case!r}" + (" (next to an idealised support or load)"
                                                                   if hi.note else ""))
    plot_nodal_field(env.nodes, env.cells, np.nan_to_num(env.max, nan=np.nanmin(env.max)), cmap="viridis",
                     title=f"max of {field_label(env.field)} over {len(env.names)} cases", ax=axes[0],
                     note=zone_note, mark_peak="max", **common)
    plot_nodal_field(env.nodes, env.cells, np.nan_to_num(env.min, nan=np.nanmax(env.min)), cmap="cividis",
                     title=f"min of {field_label(env.field)}", ax=axes[1], mark_peak=False, **common)
    ax = axes[2]
    used = env.governs_max >= 0
    k = len(env.names)
    from matplotlib import colormaps

    palette = colormaps["viridis"].resampled(max(k, 2))
    colours = [palette(i / max(k - 1, 1)) for i in range(k)]
    size = float(np.clip(6e3 / max(int(used.sum()), 1), 0.5, 30.0))  # dots that fill the part, not blot it
    for i, name in enumerate(env.names):
        sel = used & (env.governs_max == i)
        if np.any(sel):
            ax.scatter(env.nodes[sel, 0], env.nodes[sel, 1], s=size, color=colours[i], label=name,
                       rasterized=True, linewidths=0)
    ax.set_aspect("equal")
    ax.set_title(f"case giving the max of {field_label(env.field)}", fontsize=11, loc="left")
    ax.set_xlabel(f"x [{length}]" if length else "x")
    ax.set_ylabel(f"y [{length}]" if length else "y")
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=8, markerscale=max(1.0, 4.0 / math.sqrt(size)),
              frameon=False)
    for s in ("top", "right"):
        ax.spines[s].set_visible(False)
    if title:
        fig.suptitle(title)
    if path is not None:
        save_figure(fig, path)
    return fig


# ``from planar.post import combine`` is this module, and calling it calls combine() (one name, one meaning)
callable_module(__name__, combine)
