"""The lug check: net-section tension, bearing and shear-out stresses, and the peak hoop stress on the hole.

A lug of width W, hole diameter D, thickness t and edge distance e (hole centre to the lug's end,
:func:`planar.geometry.lugs.lug`) carries a pin load P along its axis. The nominal stresses of
common practice (E. F. Bruhn, Analysis and Design of Flight Vehicle Structures, 1973, sec. D1, from
memory; the same in most stress manuals) are:

* net-section tension ``P / ((W - D) t)`` (also the nominal of the lug charts' Kt_n);
* bearing ``P / (D t)`` (the pin's projected area);
* shear-out ``P / (2 (e - D / 2) t)`` (two shear planes from the hole to the end, the simple form).

The peak the part sees is the hoop stress on the hole, read from a solved model along the hole's
edge (:func:`planar.post.edges.edge_stresses`); its ratio to the net-section stress is the
net-section stress concentration factor Kt_n of the lug charts, and :func:`kt_pin_loaded_lug`
gives the chart's value for a close-fitting pin to compare with.

Examples
--------
>>> from planar.post.lugs import bearing_stress, net_section_stress, shear_out_stress
>>> net_section_stress(20e3, width=50.0, hole_diameter=20.0, thickness=8.0)
83.33333333333333
>>> bearing_stress(20e3, hole_diameter=20.0, thickness=8.0)
125.0
>>> shear_out_stress(20e3, edge_distance=40.0, hole_diameter=20.0, thickness=8.0)
41.666666666666664
>>> round(kt_pin_loaded_lug(0.5), 3)
2.507
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from ..core.errors import InputError
from ..core.result import as_result
from ..core.units import force_unit, length_unit, stress_unit
from ..core.values import number
from .checks import StressConcentration, _positive, kt, nominal_net
from .edges import EdgeStresses, edge_stresses
from .scope import CAUTION

__all__ = ["net_section_stress", "bearing_stress", "shear_out_stress", "kt_pin_loaded_lug", "LugCheck",
           "lug_check", "LUG_CHART_SOURCE", "LUG_CHART_FORMULA", "LUG_CHART_RANGE", "LUG_CHART_CONDITIONS",
           "LUG_NOMINALS_SOURCE"]

#: where the nominal stresses come from
LUG_NOMINALS_SOURCE = ("E. F. Bruhn, Analysis and Design of Flight Vehicle Structures, 1973, sec. D1 (lugs), "
                       "common practice; from memory")
#: the lug chart's curve, as printed beside the figures that use it
LUG_CHART_FORMULA = "Ktn = 12.882 - 52.714 (d/W) + 89.762 (d/W)^2 - 51.667 (d/W)^3"
#: the range of d/W the curve covers
LUG_CHART_RANGE = (0.15, 0.75)
#: where it comes from
LUG_CHART_SOURCE = ("W. D. Pilkey and D. F. Pilkey, Peterson's Stress Concentration Factors, 3rd ed., Wiley, 2008, "
                    "chapter 5, the pin-loaded lug chart (after M. M. Frocht and H. N. Hill, J. Appl. Mech. 7 (1940) "
                    "A5-A9, photoelastic); curve for e/W = 1, coefficients from memory")
#: the conditions of the chart's tests
LUG_CHART_CONDITIONS = ("square-ended lug, close-fitting pin (no stated clearance), end distance e/W = 1 (hole "
                        "centre to end over width), Kt_n = peak hoop stress on the hole / (P / ((W - d) t))")


def _load(value) -> float:
    v = number(value, "the lug load", kind="force")
    if v == 0:
        raise InputError(f"the lug load must be non-zero and finite, got {value!r}")
    return abs(v)


def net_section_stress(load: float, width: float, hole_diameter: float, thickness: float) -> float:
    """Net-section tension stress of a lug, ``P / ((W - D) t)`` (common practice; :data:`LUG_NOMINALS_SOURCE`).

    Parameters
    ----------
    load : float
        Pin load P along the lug.
    width, hole_diameter, thickness : float
        W, D (0 < D < W) and t.

    Returns
    -------
    float
    """
    return nominal_net(load, width, hole_diameter, thickness)


def bearing_stress(load: float, hole_diameter: float, thickness: float) -> float:
    """Bearing stress of a pin on its hole, ``P / (D t)`` (the projected area; :data:`LUG_NOMINALS_SOURCE`).

    Parameters
    ----------
    load : float
        Pin load P.
    hole_diameter, thickness : float
        D and t.

    Returns
    -------
    float
    """
    return float(load) / (_positive(hole_diameter, "hole_diameter") * _positive(thickness, "thickness"))


def shear_out_stress(load: float, edge_distance: float, hole_diameter: float, thickness: float) -> float:
    """Shear-out stress of a lug, ``P / (2 (e - D / 2) t)`` (two planes from the hole to the end; simple form).

    Parameters
    ----------
    load : float
        Pin load P toward the lug's end.
    edge_distance, hole_diameter, thickness : float
        e (hole centre to end, e > D / 2), D and t.

    Returns
    -------
    float
    """
    e = _positive(edge_distance, "edge_distance")
    D = _positive(hole_diameter, "hole_diameter")
    if e <= D / 2:
        raise InputError(f"edge_distance {e:g} must exceed the hole radius {D / 2:g}")
    return float(load) / (2 * (e - D / 2) * _positive(thickness, "thickness"))


def kt_pin_loaded_lug(d_over_w):
    """Net-section Kt of a square-ended lug on a close-fitting pin, read from the lug chart's curve.

    Parameters
    ----------
    d_over_w : float or array_like
        Hole diameter over lug width, within :data:`LUG_CHART_RANGE` (0.15 to 0.75).

    Returns
    -------
    float or ndarray
        Kt_n = peak hoop stress on the hole / (P / ((W - d) t)).

    Raises
    ------
    InputError
        A ratio outside the chart's range or not finite.

    Notes
    -----
    :data:`LUG_CHART_FORMULA`, under :data:`LUG_CHART_CONDITIONS` (:data:`LUG_CHART_SOURCE`). The
    curve comes from photoelastic tests with real pins: read it to about +/- 5 % (the chart's
    scatter and reading), and expect a frictionless rigid pin with no clearance to read lower than
    it (the tests' pins had a fit and friction the chart does not state).
    """
    r = np.asarray(d_over_w, dtype=float)
    lo, hi = LUG_CHART_RANGE
    if not np.all(np.isfinite(r)) or np.any(r < lo) or np.any(r > hi):
        raise InputError(f"the lug chart covers d/W from {lo:g} to {hi:g}, got {d_over_w!r}")
    k = 12.882 - 52.714 * r + 89.762 * r**2 - 51.667 * r**3
    return float(k) if np.ndim(d_over_w) == 0 else k


def _plain(v: float) -> str:
    """Four figures without an exponent for the sizes a stress table shows (16000 psi, not 1.6e+04)."""
    out = format(v, ".4g")
    if "e" in out and 1e-3 <= abs(v) < 1e9:
        out = format(v, ".0f") if abs(v) >= 1e4 else format(v, ".6f").rstrip("0").rstrip(".")
    return out


def _ms(allowable: float | None, stress: float, fs: float) -> float | None:
    if allowable is None:
        return None
    return math.inf if stress == 0 else _positive(allowable, "an allowable") / (fs * abs(stress)) - 1.0


@dataclass
class LugCheck:
    """A lug's nominal stresses, its peak hoop stress on the hole and the margins (:func:`lug_check`).

    Attributes
    ----------
    load, width, hole_diameter, thickness : float
    edge_distance : float or None
    net_section, bearing : float
        ``P / ((W - D) t)`` and ``P / (D t)``.
    shear_out : float or None
        ``P / (2 (e - D / 2) t)`` when the edge distance is given.
    peak_hoop : float
        Largest hoop (tangential) stress on the hole.
    peak_angle : float
        Where it is, degrees about the hole centre, counter-clockwise from +x (NaN when the edge is
        not a circular arc; the table then gives the point).
    peak_point : (float, float)
    kt_net, kt_bearing : float
        The peak over the net-section and over the bearing stress.
    concentration : StressConcentration
        The largest principal stress on the hole over the net-section stress (:func:`planar.post.kt`
        with ``where=edge``), with its note when the peak sits at an idealised tie or load.
    margins : dict of str to float
        Margins of safety ``allowable / (FS x stress) - 1`` for the allowables given: ``"net_section"``,
        ``"bearing"``, ``"shear_out"``, ``"peak"``.
    edge : EdgeStresses
        The stresses along the hole's edge.
    units : str
    case : str
    """

    load: float
    width: float
    hole_diameter: float
    thickness: float
    edge_distance: float | None
    net_section: float
    bearing: float
    shear_out: float | None
    peak_hoop: float
    peak_angle: float
    peak_point: tuple[float, float]
    kt_net: float
    kt_bearing: float
    concentration: StressConcentration
    edge: EdgeStresses
    units: str = ""
    case: str = ""
    factor_of_safety: float = 1.0
    margins: dict = field(default_factory=dict)
    caution: str = CAUTION
    #: set when the pin pushes the lug towards its base, or pulls it off its axis (see :func:`lug_check`)
    direction_note: str = ""
    #: set when the load given is not the load the result passes to the hole (see :func:`lug_check`)
    load_note: str = ""
    #: set when the mesh does not resolve the peak hoop stress (the ``"coarse-peak"`` or ``"linear-peak"``
    #: warning, short)
    mesh_note: str = ""
    #: set when the thickness or hole diameter given is not the model's at the hole (see :func:`lug_check`)
    size_note: str = ""

    @property
    def stress_unit(self) -> str:
        return stress_unit(self.units)

    def rows(self) -> list[tuple[str, str, float, str]]:
        """(quantity, formula, value, unit) for each figure of the check."""
        su = self.stress_unit
        out = [("net-section tension", "P / ((W - D) t)", self.net_section, su),
               ("bearing", "P / (D t)", self.bearing, su)]
        if self.shear_out is not None:
            out.append(("shear-out", "P / (2 (e - D/2) t)", self.shear_out, su))
        lu = length_unit(self.units)
        at = (f"at {self.peak_angle:.1f} deg" if math.isfinite(self.peak_angle) else
              f"at ({self.peak_point[0]:.4g}, {self.peak_point[1]:.4g})" + (f" {lu}" if lu else ""))
        out += [("peak hoop stress on the hole", at, self.peak_hoop, su),
                ("Kt on the net section", "peak / net-section", self.kt_net, "-"),
                ("Kt on bearing", "peak / bearing", self.kt_bearing, "-")]
        return out

    def table(self) -> str:
        """A plain-text table of the check, units stated, margins where allowables were given."""
        rows = self.rows()
        w0 = max(len(r[0]) for r in rows)
        w1 = max(len(r[1]) for r in rows)
        lu, fu = length_unit(self.units), force_unit(self.units)
        head = (f"lug check, load case {self.case!r}: P = {self.load:.6g}{' ' + fu if fu else ''}, W = {self.width:g}, "
                f"D = {self.hole_diameter:g}, t = {self.thickness:g}"
                + (f", e = {self.edge_distance:g}" if self.edge_distance is not None else "")
                + (f" {lu}" if lu else ""))
        lines = [head]
        keys = {"net-section tension": "net_section", "bearing": "bearing", "shear-out": "shear_out",
                "peak hoop stress on the hole": "peak"}
        for name, formula, value, unit in rows:
            ms = self.margins.get(keys.get(name, ""))
            tail = "" if ms is None else f"  MS = {ms:+.3f}" + ("" if ms >= 0 else "  (DOES NOT hold)")
            lines.append(f"  {name:<{w0}}  {formula:<{w1}}  {_plain(value):>10} {unit}{tail}")
        if self.margins:
            lines.append(f"  margins: allowable / ({self.factor_of_safety:g} x stress) - 1")
        lines += [f"  CAUTION: {c}." for c in self.cautions()]
        return "\n".join(lines)

    __str__ = table

    def cautions(self, peak: bool = True) -> list[str]:
        """The check's cautions, in words: sizes that are not the model's, a load that is not the hole's or
        is off the lug's axis, where the peak sits (``peak``), a mesh that does not resolve it."""
        notes = [self.size_note, self.load_note, self.direction_note,
                 f"the peak sits {self.concentration.note}" if peak and self.concentration.note else "",
                 self.mesh_note]
        return [n for n in notes if n]

    def as_dict(self) -> dict[str, Any]:
        """The check as plain numbers (for JSON), units stated."""
        from .files import json_safe

        return json_safe({
            "case": self.case, "units": {"model": self.units, "stress": self.stress_unit,
                                         "length": length_unit(self.units), "force": force_unit(self.units),
                                         "angle": "deg"},
            "load": self.load, "width": self.width, "hole_diameter": self.hole_diameter,
            "thickness": self.thickness, "edge_distance": self.edge_distance,
            "net_section": self.net_section, "bearing": self.bearing, "shear_out": self.shear_out,
            "peak_hoop": self.peak_hoop, "peak_angle": self.peak_angle, "peak_point": list(self.peak_point),
            "kt_net": self.kt_net, "kt_bearing": self.kt_bearing, "margins": dict(self.margins),
            "factor_of_safety": self.factor_of_safety, "note": self.concentration.note,
            "direction_note": self.direction_note, "load_note": self.load_note, "mesh_note": self.mesh_note,
            "size_note": self.size_note,
        })


def lug_check(result, load: float, width: float, hole_diameter: float, thickness: float, *,
              edge_distance: float | None = None, edge: str = "hole", recovery: str = "spr",
              tension_allowable: float | None = None, bearing_allowable: float | None = None,
              shear_allowable: float | None = None, peak_allowable: float | None = None,
              factor_of_safety: float = 1.0) -> LugCheck:
    """Check a solved lug: nominal stresses, the peak hoop stress on its hole, Kt and margins.

    Parameters
    ----------
    result : Result
        The solved lug (one load case).
    load : float
        The pin load P along the lug (its magnitude is used): the whole lug's, on a model cut by a
        symmetry line through the hole.
    width, hole_diameter, thickness : float
        W, D and t, in the model's length unit (the whole lug's).
    edge_distance : float, optional
        e, hole centre to the lug's end; gives the shear-out stress.
    edge : str, default "hole"
        The hole's named edge.
    recovery : {"spr", "average"}
    tension_allowable, bearing_allowable, shear_allowable, peak_allowable : float, optional
        Allowables (stress unit of the model) for the net-section, bearing, shear-out and peak
        stresses; each one given adds its margin of safety.
    factor_of_safety : float, default 1.0

    Returns
    -------
    LugCheck

    Raises
    ------
    InputError
        A dimension or load that is not a positive number, a hole as wide as the lug.
    NameNotFoundError
        An edge name the mesh does not have.

    Notes
    -----
    The nominal stresses are those of a lug loaded along its axis. When the pin pushes the lug
    towards its base, the net-section tension and shear-out get no margin; when its load is more
    than :data:`OFF_AXIS_DEG` off the axis (a transverse or oblique load), the table says so with
    the load's axial and transverse components (``direction_note``). The direction is the pin's
    load (its force on the part when it is held and not loaded), taken along the symmetry line
    of a half model whose line runs through the hole. When the load on the hole in the result
    (the pin's force, or the loads on the hole's nodes; twice that on a half model) differs from
    P, and from its component along the lug's axis, by more than :data:`LOAD_TOLERANCE`, the
    table says so (``load_note``): the nominal stresses are of P while the peak and Kt are of
    the result. When the thickness of the elements on the hole, the diameter of a circular hole in
    the mesh, or the lug's width across the hole (a lug with an ``"end"`` edge, not cut by a symmetry
    line) differs from t, D or W by more than :data:`SIZE_TOLERANCE`, the table says so too
    (``size_note``).
    """
    result = as_result(result, "lug_check")
    if shear_allowable is not None and edge_distance is None:
        raise InputError("a shear-out allowable needs the edge_distance (hole centre to the lug's end)")
    P = _load(load)
    W = _positive(width, "width")
    D = _positive(hole_diameter, "hole_diameter")
    t = _positive(thickness, "thickness")
    fs = _positive(factor_of_safety, "factor_of_safety")
    net = net_section_stress(P, W, D, t)
    brg = bearing_stress(P, D, t)
    so = None if edge_distance is None else shear_out_stress(P, edge_distance, D, t)
    es = edge_stresses(result, edge, recovery=recovery)
    pk = es._find("sigma_t", absolute=False)  # judged below, unless the peak is an idealisation's
    conc = kt(result, net, field="sigma_1", recovery=recovery, where=edge)
    mesh_note = _resolution(result, pk, es, recovery) if not conc.note else ""
    toward_base = _pushes_toward_base(result, edge)
    if toward_base:  # no net-section tension, no shear-out: their margins would mislead
        tension_allowable = shear_allowable = None
    notes = ["the pin pushes the lug towards its base (a compression lug): the net-section tension and shear-out "
             "figures do not apply and get no margin; check bearing and the net section in compression"] \
        if toward_base else []
    off = None if toward_base else _off_axis(result, edge)
    if off is not None and off[0] > OFF_AXIS_DEG:
        fu = force_unit(result.units)
        notes.append(f"the pin's load is {off[0]:.1f} deg off the lug's axis (axial {_plain(off[1])}, transverse "
                     f"{_plain(abs(off[2]))}{' ' + fu if fu else ''}): the net-section and shear-out figures take the "
                     "whole load as axial, and a transverse or oblique load has lug strengths of its own; check "
                     "the transverse component and the oblique interaction separately (common practice: M. A. Melcon and "
                     "F. M. Hoblit, 1953, as in Bruhn sec. D1; from memory)")
    margins = {k: v for k, v in (("net_section", _ms(tension_allowable, net, fs)),
                                 ("bearing", _ms(bearing_allowable, brg, fs)),
                                 ("shear_out", None if so is None else _ms(shear_allowable, so, fs)),
                                 ("peak", _ms(peak_allowable, pk.value, fs))) if v is not None}
    return LugCheck(P, W, D, t, None if edge_distance is None else float(edge_distance), net, brg, so,
                    pk.value, pk.theta, pk.point, pk.value / net, pk.value / brg, conc, es,
                    units=result.units, case=result.case, factor_of_safety=fs, margins=margins,
                    direction_note="; ".join(notes), load_note=_load_mismatch(result, edge, P),
                    mesh_note=mesh_note, size_note=_size_mismatch(result, edge, D, t, W))


#: the share by which the thickness or hole diameter given may differ from the model's before the check says so
SIZE_TOLERANCE = 0.02


def _width(result, edge: str) -> float | None:
    """The lug's width across its hole's centre, square to its axis (:func:`_load_and_axis`), from the mesh's outline.

    None without an axis, or on a model cut by a symmetry line through the hole (its width is not the whole lug's).
    """
    mesh = result.mesh
    got = _load_and_axis(result, edge)
    if got is None or _symmetry_normals(result, np.unique(mesh.edge(edge))):
        return None
    centre = _hole_load(result, edge)[2]
    axis = got[1]
    across = np.array([-axis[1], axis[0]])
    segs = np.concatenate([np.asarray(mesh.edge(n))[:, :2] for n in mesh.edge_sets if n != edge])
    x = mesh.nodes[segs] - centre  # (k, 2 ends, 2)
    a, s = x @ axis, x @ across
    hit = (a[:, 0] * a[:, 1] <= 0) & (a[:, 0] != a[:, 1])
    if not hit.any():
        return None
    f = a[hit, 0] / (a[hit, 0] - a[hit, 1])
    where = s[hit, 0] + f * (s[hit, 1] - s[hit, 0])
    return float(where.max() - where.min())


def _size_mismatch(result, edge: str, D: float, t: float, W: float | None = None) -> str:
    """A caution when ``t`` is not the thickness of the elements on the hole, ``D`` not the hole's diameter, or
    ``W`` not the lug's width across the hole (a lug with an ``"end"`` edge, not cut by symmetry).

    The nominal stresses are of the D and t given; the peak (and so Kt) is of the model: a t or D not the
    model's (a length unit mixed up, a pin's diameter for the hole's) makes Kt wrong by their ratio. The
    diameter is compared only where the edge is a circular arc (a circle fitted through its nodes, I. Kasa,
    1976); a D that differs on purpose (a bushed hole checked on the lug's bore) is said, not refused.
    """
    from ..core._circle import fit_circle

    mesh = result.mesh
    if edge not in mesh.edge_sets:
        return ""
    hole = np.unique(mesh.edge(edge))
    lu = length_unit(result.units)
    unit = f" {lu}" if lu else ""
    out = []
    blocks = getattr(getattr(result, "assembly", None), "blocks", None) or []
    ts = sorted({float(b.thickness) for b in blocks if np.isin(np.asarray(b.conn), hole).any()})
    if ts and all(abs(t - tm) > SIZE_TOLERANCE * tm for tm in ts):
        have = f"{_plain(ts[0])} to {_plain(ts[-1])}" if len(ts) > 1 else _plain(ts[0])
        out.append(f"the thickness given, t = {_plain(t)}{unit}, is not the model's at the hole ({have}{unit})")
    if hole.size >= 3:
        _, r, res = fit_circle(mesh.nodes[hole])
        if np.isfinite(r) and res < 0.01 and abs(D - 2 * r) > SIZE_TOLERANCE * 2 * r:
            out.append(f"the hole diameter given, D = {_plain(D)}{unit}, is not the diameter of the edge {edge!r} "
                       f"in the mesh ({_plain(2 * r)}{unit})")
    wm = None if W is None else _width(result, edge)
    if wm is not None and abs(W - wm) > SIZE_TOLERANCE * wm:
        out.append(f"the width given, W = {_plain(W)}{unit}, is not the lug's across the hole in the mesh "
                   f"({_plain(wm)}{unit})")
    if not out:
        return ""
    return ("; ".join(out) + ": the nominal stresses are of the W, t and D given, but the peak and Kt are of the model; "
            "give the model's")


def _resolution(result, pk, es: EdgeStresses, recovery: str) -> str:
    """The short note of the ``"coarse-peak"`` or ``"linear-peak"`` check on the peak hoop stress (``""`` when
    resolved): the edge peak's own judgement (:meth:`EdgeStresses.peak`)."""
    return es._judge("sigma_t", pk, stacklevel=3)


def _hole_load(result, edge: str) -> tuple[np.ndarray, np.ndarray, np.ndarray] | None:
    """(force on the hole, the direction it pulls, the hole's centre), or None when nothing ties or loads the hole.

    The force is the force of the pin tied to the edge on the part, else the loads on the hole's nodes (a
    prescribed bearing load). The direction is the pin's own load when it is loaded (a held pin's reaction
    across a symmetry line is not the direction it pulls), else the force. Where the hole meets a symmetry
    line (a half model), both are taken along that line: the mirror half carries the opposite of the
    component across it (mirror symmetry, common practice).
    """
    mesh = result.mesh
    if edge not in mesh.edge_sets:
        return None
    hole = np.unique(mesh.edge(edge))
    force = pull = centre = None
    for st in getattr(result, "pin_states", None) or []:
        if st.get("edge") == edge:
            load = np.asarray(st.get("load", (0.0, 0.0)), dtype=float)[:2]
            force = np.asarray(st["force"], dtype=float)
            pull = load if np.hypot(*load) > 0 else force
            centre = np.asarray(st["point"], dtype=float)
    if force is None:  # a prescribed bearing load: the loads on the hole's nodes
        force = pull = np.asarray(result.applied, dtype=float)[hole].sum(axis=0)
        if not np.hypot(*force) > 0:
            return None
        centre = mesh.nodes[hole].mean(axis=0)
    for n in _symmetry_normals(result, hole):
        force, pull = force - (force @ n) * n, pull - (pull @ n) * n
    return force, pull, centre


def _symmetry_normals(result, hole: np.ndarray) -> list[np.ndarray]:
    """The unit normals of the symmetry lines (:class:`planar.Symmetry` supports) that meet the hole's nodes."""
    mesh = result.mesh
    model = getattr(getattr(result, "assembly", None), "model", None)
    return [np.asarray(sup.rows(mesh)[1][0], dtype=float) for sup in getattr(model, "supports", None) or []
            if type(sup).__name__ == "Symmetry" and isinstance(sup.where, str) and sup.where in mesh.edge_sets
            and np.intersect1d(np.unique(mesh.edge(sup.where)), hole).size]


#: the share by which the load given may differ from the load on the hole before the check says so
LOAD_TOLERANCE = 0.01


def _load_mismatch(result, edge: str, P: float) -> str:
    """A caution when the load on the hole in the result is not the load P the check is given, else "".

    On a model cut by symmetry lines through the hole, the whole lug carries 2 (or 4) times the load on
    the model's part of the hole (its component along the lines; mirror symmetry, common practice), and
    P, W and D are the whole lug's.
    """
    got = _hole_load(result, edge)
    if got is None:  # nothing ties or loads the hole: no figure to compare with
        return ""
    cuts = len(_symmetry_normals(result, np.unique(result.mesh.edge(edge))))
    on_model = float(np.hypot(*got[0]))
    whole = on_model * 2 ** cuts
    axis = _load_and_axis(result, edge)
    along = None if axis is None else abs(float(got[0] @ axis[1])) * 2 ** cuts  # P "along the lug" is fine too
    if abs(whole - P) <= LOAD_TOLERANCE * P or (along is not None and abs(along - P) <= LOAD_TOLERANCE * P):
        return ""
    fu = force_unit(result.units)
    unit = f" {fu}" if fu else ""

    def fig(v):
        return _plain(v) if v > 1e-9 * P else "0"

    part = ("" if not cuts else
            f", {2 ** cuts} times the {fig(on_model)}{unit} on this {'half' if cuts == 1 else 'quarter'} model")
    if along is not None and abs(along - whole) > LOAD_TOLERANCE * whole:
        part += f"; {fig(along)}{unit} along the lug's axis"
    return (f"the load given, P = {_plain(P)}{unit}, is not the load on the hole in this result ({fig(whole)}{unit}"
            f"{part}): the nominal stresses are of P, but the peak and Kt are of the result; give the load the pin "
            "passes to the hole" + (", with the whole lug's W and D" if cuts else ""))


def _load_and_axis(result, edge: str) -> tuple[np.ndarray, np.ndarray] | None:
    """The direction the load on the hole pulls (:func:`_hole_load`) and the lug's axis (unit vector from the
    hole's centre to the edge ``"end"`` of :func:`planar.geometry.lugs.lug`), or None without either."""
    got = _hole_load(result, edge)
    if got is None or "end" not in result.mesh.edge_sets:
        return None
    _, pull, centre = got
    axis = result.mesh.nodes[np.unique(result.mesh.edge("end"))].mean(axis=0) - centre
    for n in _symmetry_normals(result, np.unique(result.mesh.edge(edge))):  # along the line, as the load
        axis = axis - (axis @ n) * n
    if not np.hypot(*pull) > 0 or not np.hypot(*axis) > 0:
        return None
    return pull, axis / np.hypot(*axis)


def _pushes_toward_base(result, edge: str) -> bool:
    """Whether the load on the hole pushes the lug away from its end (see :func:`_load_and_axis`)."""
    got = _load_and_axis(result, edge)
    if got is None:
        return False
    force, axis = got
    return float(force @ axis) < -0.5 * float(np.hypot(*force))


#: a pin load further than this from the lug's axis (degrees) gets the oblique-load caution
OFF_AXIS_DEG = 1.0


def _off_axis(result, edge: str) -> tuple[float, float, float] | None:
    """(angle from the axis in degrees, axial component, transverse component) of the pin's load, or None."""
    got = _load_and_axis(result, edge)
    if got is None:
        return None
    force, axis = got
    along = float(force @ axis)
    across = float(axis[0] * force[1] - axis[1] * force[0])
    tiny = 1e-9 * float(np.hypot(*force))  # round-off of a component prints as 0
    along, across = (0.0 if abs(v) < tiny else v for v in (along, across))
    return math.degrees(math.atan2(abs(across), along)), along, across
