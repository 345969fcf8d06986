"""Engineering checks of a result: stress concentration factor, margin of safety, cuts through a part.

All values are in the model's own consistent units (for example N, mm, MPa); nothing is converted.

Every check is a linear-elastic, static figure: it does not replace the applicable design code or a
review by a qualified engineer (see :data:`CAUTION`).

Examples
--------
>>> import planar
>>> from planar.post.checks import kt, margin_of_safety, nominal_gross
>>> mesh = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")          # mm
>>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0)
>>> _ = model.add_support(planar.Roller("left", fixed="x"))
>>> _ = model.add_support(planar.Roller("corner_00", fixed="y"))
>>> _ = model.add_load(planar.Traction("right", tx=50.0), case="pull")   # 50 MPa = 2000 N
>>> r = planar.solve(model)["pull"]
>>> round(kt(r, nominal=nominal_gross(2000.0, width=20.0, thickness=2.0), field="sigma_xx").Kt, 6)
1.0
>>> round(margin_of_safety(r, allowable=250.0, factor_of_safety=1.5).margin, 4)
2.3333
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..core.compat import deprecated, renamed_keywords
from ..core.values import finite_vector, number
from ..core.errors import InputError, PlanarWarning, fmt_point, warn
from ..core.quadrature import gauss_line
from ..core.recovery import METHODS
from ..core.result import STRESS_FIELDS, as_result
from .scope import CAUTION

__all__ = [
    "CAUTION",
    "StressConcentration",
    "Margin",
    "PathStresses",
    "CutResultant",
    "nominal_gross",
    "nominal_net",
    "kt",
    "margin_of_safety",
    "path_stresses",
    "cut_resultant",
]

class _OldMethodName:
    """The attribute ``method`` of a check, kept for one release (it is ``recovery`` now)."""

    @property
    def method(self) -> str:
        deprecated(f"{type(self).__name__}.method is now .recovery; the old name works for one release",
                   stacklevel=3)
        return self.recovery


def _check_field(name: str, what: str = "") -> str:
    """``name`` if it is a stress field; with ``what`` (e.g. "a margin of safety"), one measured in the
    stress unit too, so an angle (``principal_angle``) is not set against an allowable or a nominal stress."""
    from ..core.fields import FIELD_TABLE, names as _field_names

    polar = _field_names(kind="polar")
    if name not in STRESS_FIELDS and name not in polar:
        raise InputError(f"unknown stress field {name!r}; pick one of {', '.join(STRESS_FIELDS)} or, about a "
                         f"centre=(x, y), {', '.join(polar)}")
    if what and FIELD_TABLE[name].unit != "stress":
        stresses = [n for n in STRESS_FIELDS + tuple(polar) if FIELD_TABLE[n].unit == "stress"]
        raise InputError(f"{what} needs a stress; {name!r} is measured in {FIELD_TABLE[name].unit}: pick one of "
                         f"{', '.join(stresses)}")
    return name


def _where(x: float, y: float) -> str:
    """A location for messages, with round-off below 1e-9 of its size shown as 0; a peak given as a
    number has no location ("a given value", never "(nan, nan)")."""
    if not (math.isfinite(x) and math.isfinite(y)):
        return "a given value"
    tol = 1e-9 * max(abs(x), abs(y), 1e-300)
    return f"({0.0 if abs(x) < tol else x:.6g}, {0.0 if abs(y) < tol else y:.6g})"


def _unit_suffixes(units: str) -> tuple[str, str]:
    """(" MPa", " mm") from a unit system's label for messages; ("", "") when not stated."""
    from ..core.units import unit_system

    s = unit_system(units or None)
    return (f" {s.stress}", f" {s.length}") if s.stated else ("", "")


def _at(x: float, y: float, length: str) -> str:
    where = _where(x, y)
    return where + length if where.startswith("(") else where


def _check_recovery(recovery: str) -> str:
    if recovery not in METHODS:
        raise InputError(f"unknown stress recovery {recovery!r}; pick one of {', '.join(METHODS)}")
    return recovery


def _positive(value, what: str) -> float:
    return number(value, what, positive=True)


def _point(p, what: str) -> np.ndarray:
    a = finite_vector(p)
    if a is None:
        raise InputError(f"{what} must be a point (x, y), got {p!r}")
    return a


# ---------------------------------------------------------------------------- nominal stresses
def nominal_gross(load: float, width: float, thickness: float) -> float:
    """Gross-section nominal stress P / (W t).

    Parameters
    ----------
    load : float
        Axial force P carried by the section.
    width : float
        Full width W of the section.
    thickness : float
        Plate thickness t.

    Returns
    -------
    float

    Examples
    --------
    >>> nominal_gross(12000.0, width=60.0, thickness=4.0)
    50.0
    """
    return float(load) / (_positive(width, "width") * _positive(thickness, "thickness"))


def nominal_net(load: float, width: float, hole_diameter: float, thickness: float) -> float:
    """Net-section nominal stress P / ((W - d) t) of a plate with a central hole.

    Parameters
    ----------
    load : float
        Axial force P.
    width : float
        Full width W.
    hole_diameter : float
        Hole diameter d (0 <= d < W).
    thickness : float
        Thickness t.

    Returns
    -------
    float

    Notes
    -----
    The net-section convention of stress-concentration charts (W. D. Pilkey and D. F. Pilkey,
    Peterson's Stress Concentration Factors, 3rd ed., 2008, chart 4.1); Kt_net = Kt_gross (1 - d/W).

    Examples
    --------
    >>> nominal_net(12000.0, width=60.0, hole_diameter=20.0, thickness=4.0)
    75.0
    """
    W = _positive(width, "width")
    d = float(hole_diameter)
    if not (math.isfinite(d) and 0 <= d < W):
        raise InputError(f"hole_diameter must be at least 0 and less than the width {W:g}, got {hole_diameter!r}")
    return float(load) / ((W - d) * _positive(thickness, "thickness"))


# ---------------------------------------------------------------------------- Kt and margins
@dataclass
class StressConcentration(_OldMethodName):
    """A stress concentration factor Kt = peak / nominal.

    Attributes
    ----------
    Kt : float
    peak : float
        Peak nodal value of ``field`` (stress unit of the model).
    nominal : float
        Nominal stress it is referred to.
    field : str
    recovery : str
        Stress recovery of the peak (``"spr"`` or ``"average"``).
    location : (float, float)
        Where the peak is.
    node : int
    caution : str
    """

    Kt: float
    peak: float
    nominal: float
    field: str
    recovery: str
    location: tuple[float, float]
    node: int
    caution: str = CAUTION
    #: where the peak was read (``"everywhere"`` or a zone's description)
    where: str = "everywhere"
    #: why the peak is not the part's own, when it sits next to an idealised support or load ("" otherwise)
    note: str = ""
    #: the model's unit system, by its label (``"N, mm, MPa"``; ``""`` when not stated)
    units: str = ""

    def summary(self) -> str:
        x, y = self.location
        zone = "" if self.where == "everywhere" else f" {self.where}"
        note = f" CAUTION: the peak sits {self.note}." if self.note else ""
        u, L = _unit_suffixes(self.units)
        said = "" if L else " Units not stated (consistent)."
        return (f"Kt = {self.Kt:.4g} ({self.field} peak{zone} {self.peak:.6g}{u} at {_at(x, y, L)} over nominal "
                f"{self.nominal:.6g}{u}, {self.recovery} recovery).{note}{said} {self.caution}")

    __str__ = summary


@renamed_keywords(method="recovery")
def kt(result, nominal: float, *, field: str = "von_mises", recovery: str = "spr",
       absolute: bool = False, where=None, centre=None) -> StressConcentration:
    """Stress concentration factor of a result.

    Parameters
    ----------
    result : Result
    nominal : float
        Nominal stress (non-zero): a given value, or one of :func:`nominal_gross` /
        :func:`nominal_net`.
    field : str, default "von_mises"
        Stress field whose peak is taken, e.g. ``"sigma_xx"``, ``"sigma_1"``, ``"von_mises"``.
    recovery : {"spr", "average"}
        Nodal recovery of the peak.
    absolute : bool
        Take the largest magnitude instead of the largest signed value (for compressive peaks).
    where : str or Zone, optional
        Read the peak of the feature under check only: an edge or region name, or a zone
        (:mod:`planar.core.zones`: ``OnEdge``, ``InRegion``, ``InCircle``, ``InBox``, ``Near``,
        ``Away``). Default everywhere; a peak next to an idealised support or load is noted.
    centre : (float, float), optional
        The centre of the polar fields (``sigma_theta``: the hoop stress about a hole's centre).

    Returns
    -------
    StressConcentration

    Raises
    ------
    InputError
        Unknown field or recovery, or a zero or non-finite nominal stress.
    """
    result = as_result(result, "kt")
    _check_field(field, "a stress concentration factor")
    _check_recovery(recovery)
    nom = number(nominal, "the nominal stress", kind="stress")
    if nom == 0:
        raise InputError(f"the nominal stress must be non-zero and finite, got {nominal!r}")
    ext = result.max(field, recovery=recovery, absolute=absolute, where=where, centre=centre)
    peak, loc, node = ext
    if nom < 0:
        warn(f"negative nominal stress {nom:.6g} in Kt (load case {result.case!r}, {field} peak {peak:.6g} at "
             f"{_where(*loc)}): a stress concentration factor is a ratio of tension figures, so a "
             f"compressive nominal gives Kt = {peak / nom:.4g}, with a misleading sign; give the nominal as "
             "a positive magnitude (and absolute=True for a compressive peak)",
             "negative-nominal", category=PlanarWarning, sink=result.warnings)
    return StressConcentration(peak / nom, peak, nom, field, recovery, loc, node, where=ext.where, note=ext.note,
                               units=result.units)


@dataclass
class Margin(_OldMethodName):
    """Margin of safety MS = allowable / (FS x peak) - 1.

    Attributes
    ----------
    margin : float
        Positive: the part holds with the factor of safety; negative: it does not.
    allowable : float
    factor_of_safety : float
    peak : float
        Peak applied stress (magnitude) in the model's stress unit.
    field, recovery : str
    location : (float, float)
    caution : str
    """

    margin: float
    allowable: float
    factor_of_safety: float
    peak: float
    field: str
    recovery: str
    location: tuple[float, float]
    caution: str = CAUTION
    #: where the peak was read (``"everywhere"``, a zone's description, or ``"given"``)
    where: str = "everywhere"
    #: why the peak is not the part's own, when it sits next to an idealised support or load ("" otherwise)
    note: str = ""
    #: the model's unit system, by its label (``"N, mm, MPa"``; ``""`` when not stated or for a given peak)
    units: str = ""

    @property
    def passed(self) -> bool:
        """True when the margin is zero or positive."""
        return self.margin >= 0.0

    def summary(self) -> str:
        x, y = self.location
        verdict = "holds" if self.passed else "DOES NOT hold"
        zone = "" if self.where in ("everywhere", "given") else f" {self.where}"
        note = f" CAUTION: the peak sits {self.note}." if self.note else ""
        u, L = _unit_suffixes(self.units)
        return (f"margin of safety {self.margin:+.4g} ({verdict}): allowable {self.allowable:.6g}{u} / "
                f"({self.factor_of_safety:g} x {self.field} peak{zone} {self.peak:.6g}{u} at {_at(x, y, L)}) - 1, "
                f"{self.recovery} recovery.{note}{'' if L else ' Units not stated (consistent).'} {self.caution}")

    __str__ = summary


@renamed_keywords(method="recovery")
def margin_of_safety(result_or_peak, allowable: float, factor_of_safety: float = 1.0, *,
                     field: str = "von_mises", recovery: str = "spr", where=None, centre=None) -> Margin:
    """Margin of safety of the peak stress against an allowable.

    Parameters
    ----------
    result_or_peak : Result or float
        A result (its peak of ``field`` is used, by magnitude) or a peak stress value.
    allowable : float
        Allowable stress (> 0), in the model's stress unit.
    factor_of_safety : float, default 1.0
        Factor applied to the peak (> 0).
    field : str
        Stress field of the peak (ignored for a given peak value).
    recovery : {"spr", "average"}
    where : str or Zone, optional
        Read the peak of the feature under check only (as in :func:`kt`); refused for a given peak.
    centre : (float, float), optional
        The centre of the polar fields (as in :func:`kt`).

    Returns
    -------
    Margin

    Notes
    -----
    MS = allowable / (FS sigma_peak) - 1 (common practice, e.g. E. F. Bruhn, Analysis and Design of
    Flight Vehicle Structures, 1973, section A1.5, from memory). A zero peak gives an infinite margin.

    Examples
    --------
    >>> round(margin_of_safety(200.0, allowable=276.0, factor_of_safety=1.15).margin, 6)
    0.2
    """
    allow = _positive(allowable, "allowable")
    fs = _positive(factor_of_safety, "factor_of_safety")
    sink = None
    if isinstance(result_or_peak, (int, float, np.floating, np.integer)):
        peak = abs(float(result_or_peak))
        if not math.isfinite(peak):
            raise InputError(f"the peak stress must be finite, got {result_or_peak!r}")
        if where is not None:
            raise InputError(f"where={where!r} limits the peak read from a result; a peak given as a number "
                             f"({result_or_peak!r}) has no place to read it: pass the Result, or leave where= out")
        loc, fname, meth = (float("nan"), float("nan")), "given", "given"
        said, note, units = "given", "", ""
    else:
        result_or_peak = as_result(result_or_peak, "margin_of_safety", also="give the peak stress as a number")
        _check_field(field, "a margin of safety")
        _check_recovery(recovery)
        ext = result_or_peak.max(field, recovery=recovery, absolute=True, where=where, centre=centre)
        peak, loc, _ = ext
        peak = abs(peak)
        said, note, units = ext.where, ext.note, result_or_peak.units
        fname, meth = field, recovery
        sink = result_or_peak.warnings
    if fs < 1.0:
        warn(f"factor of safety {fs:g} is below 1: it reduces the applied stress ({fs:g} x peak) instead of "
             "covering uncertainty, so the margin looks larger than the part has; use a factor of at least 1 "
             "(e.g. 1.5 on limit loads), or lower the allowable for a known knock-down instead",
             "factor-of-safety", category=PlanarWarning, sink=sink)
    ms = math.inf if peak == 0 else allow / (fs * peak) - 1.0
    return Margin(ms, allow, fs, peak, fname, meth, loc, where=said, note=note, units=units)


# ---------------------------------------------------------------------------- cuts and paths
def _check_path(result, a: np.ndarray, b: np.ndarray, n_check: int = 64) -> None:
    from ..core.locate import locate

    if np.allclose(a, b):
        raise InputError(f"the path starts and ends at the same point {fmt_point(a)}; give two different points")
    t = np.linspace(0.0, 1.0, n_check)
    pts = a + t[:, None] * (b - a)
    try:
        locate(result.mesh, pts)
    except InputError:
        for p in pts:  # find the first point outside, to say where the path leaves the plate
            try:
                locate(result.mesh, p[None, :])
            except InputError:
                raise InputError(
                    f"the path from {fmt_point(a)} to {fmt_point(b)} leaves the mesh near "
                    f"{fmt_point(p)}; a cut must run inside the plate (a cut through a hole needs "
                    "two paths, one on each side)"
                ) from None
        raise


@dataclass
class PathStresses(_OldMethodName):
    """Stresses along a straight path.

    Attributes
    ----------
    start, end : (float, float)
    distance : ndarray, shape (p,)
        Distance from ``start``.
    points : ndarray, shape (p, 2)
    values : dict of str to ndarray
        Field name -> values at the points.
    recovery : str
    notes : dict of str to str
        Field name -> why its largest magnitude along the path is not the part's own, when it sits
        next to an idealised support or concentrated load (fields without a note are not listed).
    """

    start: tuple[float, float]
    end: tuple[float, float]
    distance: np.ndarray
    points: np.ndarray
    values: dict[str, np.ndarray]
    recovery: str
    notes: dict[str, str] = field(default_factory=dict)
    #: the model's unit system, by its label (``"N, mm, MPa"``; ``""`` when not stated)
    units: str = ""

    def summary(self) -> str:
        from ..core.units import field_unit

        _, L = _unit_suffixes(self.units)
        lines = [f"path {self.start} -> {self.end}{L}, {self.distance.size} points, {self.recovery} recovery"]
        for k, v in self.values.items():
            i = int(np.argmax(np.abs(v)))
            x, y = self.points[i]
            u = f" {field_unit(k, self.units or None)}".rstrip()
            lines.append(f"  {k}: max |.| {abs(v[i]):.6g}{u} at distance {self.distance[i]:.6g}{L}, "
                         f"{_at(x, y, L)}; mean {v.mean():.6g}{u}")
            if self.notes.get(k):
                lines.append(f"    CAUTION: it sits {self.notes[k]}")
        return "\n".join(lines)

    __str__ = summary


def _path_notes(result, pts: np.ndarray, values: dict[str, np.ndarray], recovery: str) -> dict[str, str]:
    """Field -> note when its largest magnitude along a path sits next to an idealised support or load.

    A path point counts as next to one when its nearest node does (:func:`planar.core.zones.near_idealised`);
    the peak is noted when it exceeds the largest magnitude at the path's other points by more than
    :data:`planar.core.zones.DOMINANCE` (a path wholly next to idealisations, e.g. along a supported
    edge, is weighed against the nodes of the part away from them).
    """
    from scipy.spatial import cKDTree

    from ..core.zones import DOMINANCE, near_idealised

    mesh, model = result.mesh, getattr(result, "model", None)
    if model is None:
        return {}
    used = np.flatnonzero(mesh.used_nodes())
    _, k = cKDTree(mesh.nodes[used]).query(pts)
    near, why = near_idealised(mesh, model, used[k])
    if not near.any():
        return {}
    far = None
    if near.all():
        far = used[~near_idealised(mesh, model, used)[0]]
    notes = {}
    for name, v in values.items():
        a = np.abs(v)
        i = int(np.argmax(a))
        if not near[i]:
            continue
        away = a[~near] if far is None else np.abs(result.field(name, recovery=recovery)[far])
        if away.size and a[i] <= (1 + DOMINANCE) * away.max():
            continue  # as large a value away from every idealisation: the path's own level
        other = (f"; the largest magnitude {'along the path' if far is None else 'in the part'} away from "
                 f"supports and concentrated loads is {away.max():.6g}" if away.size else "")
        notes[name] = (f"next to {why[i]}: a peak there is made by the idealisation (how the part is held or "
                       f"loaded), not by the part{other}")
    return notes


@renamed_keywords(method="recovery")
def path_stresses(result, start, end, fields=("sigma_xx", "sigma_yy", "tau_xy", "von_mises"), *,
                  n_points: int = 101, recovery: str = "spr", centre=None) -> PathStresses:
    """Recovered stresses along the straight path from ``start`` to ``end``.

    Parameters
    ----------
    result : Result
    start, end : (x, y)
    fields : str or sequence of str
    n_points : int
    recovery : {"spr", "average"}
    centre : (float, float), optional
        The centre of the polar fields (``sigma_r``, ``sigma_theta``: radial and hoop stresses along a
        radial cut from a hole).

    Returns
    -------
    PathStresses
        Its summary says where the largest magnitude of each field lies along the path, and notes it
        when it sits next to an idealised support or concentrated load (``PathStresses.notes``).

    Raises
    ------
    InputError
        Unknown field or recovery, or a path that leaves the mesh.
    """
    result = as_result(result, "path_stresses")
    a, b = _point(start, "start"), _point(end, "end")
    names = [fields] if isinstance(fields, str) else list(fields)
    for f in names:
        _check_field(f)
    _check_recovery(recovery)
    if int(n_points) < 2:
        raise InputError(f"a path needs at least 2 points, got n_points={n_points!r}")
    _check_path(result, a, b)
    values = {}
    dist = pts = None
    for f in names:
        dist, pts, values[f] = result.along(a, b, f, n_points=int(n_points), recovery=recovery, centre=centre)
    return PathStresses(tuple(a.tolist()), tuple(b.tolist()), dist, pts, values, recovery,
                        _path_notes(result, pts, values, recovery), units=result.units)


@dataclass
class CutResultant(_OldMethodName):
    """Resultant of the stresses on a straight cut (force in the model's unit).

    Attributes
    ----------
    force : (float, float)
        Resultant (Fx, Fy) of the traction sigma . n over the cut times the thickness, with n the unit
        normal of the cut (the path direction turned clockwise). By statics it equals the total load
        applied to the part on the side the normal points to.
    normal_force : float
        Component along n.
    shear_force : float
        Component along the cut direction.
    moment : float
        Moment of the traction about the cut's midpoint (counter-clockwise positive).
    length : float
    normal : (float, float)
    applied : (float, float) or None
        The load it is compared with.
    relative_difference : float or None
        |force - applied| / |applied|.
    recovery : str
    n_points : int
    """

    force: tuple[float, float]
    normal_force: float
    shear_force: float
    moment: float
    length: float
    normal: tuple[float, float]
    applied: tuple[float, float] | None
    relative_difference: float | None
    recovery: str
    n_points: int
    caution: str = field(default=CAUTION, repr=False)
    #: the model's unit system, by its label (``"N, mm, MPa"``; ``""`` when not stated)
    units: str = ""

    def summary(self) -> str:
        from ..core.units import unit_system

        s_ = unit_system(self.units or None)
        L, F, M = (f" {s_.length}", f" {s_.force}", f" {s_.moment}") if s_.stated else ("", "", "")
        s = (f"cut of length {self.length:.6g}{L}: resultant ({self.force[0]:.6g}, {self.force[1]:.6g}){F}, "
             f"normal {self.normal_force:.6g}{F}, shear {self.shear_force:.6g}{F}, moment about the midpoint "
             f"{self.moment:.6g}{M} ({self.recovery} stresses, {self.n_points} points)")
        if self.applied is not None:
            s += (f"; applied ({self.applied[0]:.6g}, {self.applied[1]:.6g}){F}, relative difference "
                  f"{self.relative_difference:.3e}")
        return s

    __str__ = summary


def _thickness_at(result, pts: np.ndarray) -> np.ndarray:
    from ..core.locate import locate

    blk, cell, _ = locate(result.mesh, pts)
    lookup = {t: np.zeros(b.shape[0]) for t, b in result.mesh.cells.items()}
    for b in result.assembly.blocks:
        lookup[b.layout][b.cells] = b.thickness
    out = np.empty(pts.shape[0])
    for t, arr in lookup.items():
        sel = blk == t
        out[sel] = arr[cell[sel]]
    return out


@renamed_keywords(method="recovery")
def cut_resultant(result, start, end, *, applied=None, recovery: str = "spr", segments: int = 64,
                  order: int = 4) -> CutResultant:
    """Resultant force of the stresses on a straight cut, to check statics against the applied load.

    Parameters
    ----------
    result : Result
    start, end : (x, y)
        Ends of the cut; it must run inside the plate.
    applied : float or (float, float), optional
        The load the cut should carry: a vector (Fx, Fy), or a number compared with the normal force.
    recovery : {"spr", "average"}
        Stresses sampled with ``result.at`` from these nodal values.
    segments, order : int
        The cut is split into ``segments`` equal pieces with an ``order``-point Gauss-Legendre rule on
        each (composite rule; exact for piecewise polynomials of degree 2 order - 1 whose breaks fall
        on the pieces' ends, and converging for the rest).

    Returns
    -------
    CutResultant

    Notes
    -----
    F = integral over the cut of t(s) sigma(s) . n ds with n the unit normal (path direction turned
    clockwise) and t the local thickness. The free body of the part on the side the normal points to
    carries its applied loads and the traction -sigma . n from the other side, so F equals the loads
    applied to that part (common practice); for a cut across a bar in tension, with the normal along
    the pull, F is the pull.

    Raises
    ------
    InputError
        Bad points, a cut that leaves the mesh, unknown recovery.
    """
    result = as_result(result, "cut_resultant")
    a, b = _point(start, "start"), _point(end, "end")
    _check_recovery(recovery)
    if int(segments) < 1 or not 1 <= int(order) <= 10:
        raise InputError(f"need segments >= 1 and 1 <= order <= 10, got {segments!r}, {order!r}")
    _check_path(result, a, b)
    d = b - a
    L = float(np.hypot(*d))
    tdir = d / L
    n = np.array([tdir[1], -tdir[0]])
    rule = gauss_line(int(order))
    m = int(segments)
    u = ((np.arange(m)[:, None] + 0.5 * (rule.points[None, :, 0] + 1.0)) / m).ravel()
    w = np.tile(rule.weights / 2.0, m) / m * L
    pts = a + u[:, None] * d
    sxx = result.at(pts, "sigma_xx", recovery=recovery)
    syy = result.at(pts, "sigma_yy", recovery=recovery)
    txy = result.at(pts, "tau_xy", recovery=recovery)
    th = _thickness_at(result, pts)
    tx = sxx * n[0] + txy * n[1]
    ty = txy * n[0] + syy * n[1]
    Fx = float(np.sum(w * th * tx))
    Fy = float(np.sum(w * th * ty))
    mid = 0.5 * (a + b)
    r = pts - mid
    M = float(np.sum(w * th * (r[:, 0] * ty - r[:, 1] * tx)))
    app = rel = None
    if applied is not None:
        av = np.asarray(applied, dtype=float).reshape(-1)
        if av.size == 1:
            av = av[0] * n
        if av.shape != (2,) or not np.all(np.isfinite(av)):
            raise InputError(f"applied must be a force (Fx, Fy) or a number, got {applied!r}")
        scale = float(np.hypot(*av))
        diff = float(np.hypot(Fx - av[0], Fy - av[1]))
        rel = diff / scale if scale > 0 else diff
        app = (float(av[0]), float(av[1]))
    return CutResultant((Fx, Fy), float(Fx * n[0] + Fy * n[1]), float(Fx * tdir[0] + Fy * tdir[1]), M, L,
                        (float(n[0]), float(n[1])), app, rel, recovery, int(pts.shape[0]), units=result.units)
