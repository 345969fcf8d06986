"""Fastened joints: plates as layers overlapping in the plane, joined by fasteners acting as shear springs.

A :class:`Joint` holds several layers, each a :class:`planar.Model` (its own mesh, material,
thickness, supports and loads per load case; cases are matched by name across the layers, and a case
missing in a layer means no load there). :class:`Fasteners` join two or more layers at points: between
each adjacent pair of the joined layers acts an in-plane shear spring of stiffness ``k = 1 / C``, with
``C`` the fastener's compliance (length / force) given as a number or by a published formula named in
:mod:`planar.core.fastener_flexibility`.

Each end of a fastener is tied to its layer in one of two ways:

* at a modelled hole (``holes=``: one edge name per fastener and layer): a free pin on the hole's
  edge, tied rigidly or by spreading (:class:`planar.core.pins.Pin`, solved by
  :mod:`planar.core._tying`); the fastener's spring acts on the pin's motion;
* where no hole is modelled: a spreading tie over the patch of nodes within ``d / 2`` of the point
  (the nearest node at least), weighted by each node's share of the area times thickness. The spring
  acts on the weighted mean motion of the patch and its force is spread back over the patch by the
  same weights (the translation part of the spreading tie). A force at one node of a 2D continuum
  has a displacement that grows without bound as the mesh is refined (the logarithmic singularity of
  the point force in a plate), so a spring tied to one node would get softer with every refinement;
  over a patch of the fastener's diameter the spring sees a mean motion that converges.

The springs add couplings to one stiffness matrix over every layer's unknowns (the layers' systems
side by side, the pin unknowns appended to each), factorized once for every load case; see
:func:`planar.core._joint_solve.solve_joint`. ``planar.solve(joint)`` returns ``{case: JointResult}``.

Examples
--------
>>> f = Fasteners([(10.0, 0.0), (30.0, 0.0)], layers=("skin", "strap"), diameter=4.8, flexibility=2e-5,
...               name="row A")
>>> f
Fasteners('row A', 2 points, layers=('skin', 'strap'), d=4.8, flexibility=2e-05, tie='spreading')
"""
from __future__ import annotations

import math
from typing import Any, Sequence

import numpy as np

from ._circle import fit_circle
from .errors import InputError, unknown_name
from .pins import TIES
from .values import number

__all__ = ["Fasteners", "Joint", "JointResult", "FastenerTable", "KINDS", "SHEARS"]

#: fastener kinds and shear modes passed to the flexibility formulas ("composite-bolt": bolted
#: graphite/epoxy, Huth's constants)
KINDS = ("bolt", "rivet", "composite-bolt")
SHEARS = ("single", "double")
#: the ties a fastener's end takes at a modelled hole (a bearing-contact pin is a Pin of one model)
FASTENER_TIES = ("spreading", "rigid")
#: a fastener may exceed its modelled hole's diameter by this fraction (an interference fit), no more
INTERFERENCE = 0.02


def _hole_size(ring: np.ndarray) -> float:
    """A modelled hole's diameter from its edge's nodes (k, 2): the circle through them by least squares
    (exact for nodes on a circle or an arc of one), or the edge's widest extent where that is larger
    (a slot), so a hole is never read smaller than it is."""
    extent = float(np.ptp(ring, axis=0).max())
    r = fit_circle(ring)[1]  # inf for fewer than three nodes or nodes on a line: the extent alone
    return max(extent, 2.0 * r) if math.isfinite(r) else extent


def _word(value, allowed, what) -> str:
    if not isinstance(value, str) or value.strip().lower() not in allowed:
        raise InputError(f"a fastener's {what} must be one of {allowed}, got {value!r}")
    return value.strip().lower()


class Fasteners:
    """A group of fasteners (a row, a pattern or named points) joining layers of a :class:`Joint`.

    Parameters
    ----------
    points : array_like (k, 2), str or list of str
        The fasteners' positions: coordinates, or names of node sets of the first joined layer's mesh
        (each node of a named set is one fastener).
    layers : sequence of str
        The joined layers in stacking order (two or more); a shear spring acts between each adjacent pair.
    diameter : float
        The fastener's shank diameter (length units); sets the patch of a tie where no hole is modelled
        and the bearing stress ``P / (d t)``.
    flexibility : float or str
        The compliance of each spring between adjacent joined layers (length / force), or the name of a
        published formula (:func:`planar.core.fastener_flexibility.fastener_compliance`, e.g.
        ``"huth"``), evaluated for each fastener from the joined layers' thicknesses and moduli. In
        double shear (three layers, the middle one between two outer ones) each of the two springs
        is one shear plane: the formula's fastener compliance times two; a number is each spring's
        compliance as given (``shear`` does not change it), so for a double-shear fastener whose whole
        compliance (slip per whole load) is ``C``, give ``2 C``. An orthotropic layer's
        modulus in a formula is the one along the layer's load direction (its own loads', else the
        joint's), with its fibre angle; the fastener table states it.
    kind : {"bolt", "rivet", "composite-bolt"}
    shear : {"single", "double"}
        Passed to the flexibility formula (``"composite-bolt"``: a bolt in graphite/epoxy plates, Huth's
        constants for it; the other formulas do not change with ``kind``).
    tie : {"spreading", "rigid"}
        How an end at a modelled hole is tied to the hole's edge (:class:`planar.core.pins.Pin`); an end
        with no hole is always a spreading tie over a patch of diameter ``d``. A bearing-contact tie
        (``"contact"``) is refused: the fastener's spring needs a tie that carries load both ways.
    holes : dict or sequence, optional
        Modelled holes: for each joined layer (a dict by layer name, or a sequence in the order of
        ``layers``) a list of ``k`` edge names, or None for a layer whose holes are not modelled.
    name : str
        The group's name in tables (a row of fasteners is usually one group).
    modulus : float, optional
        The fastener's Young's modulus (stress units), read by a flexibility formula (needed with one).
    """

    def __init__(self, points, layers: Sequence[str] = ("top", "bottom"), *, diameter: float,
                 flexibility: float | str, kind: str = "bolt", shear: str = "single",
                 tie: str = "spreading", holes=None, name: str = "fasteners", modulus: float | None = None):
        if isinstance(points, str):
            points = [points]
        self.names: list[str] | None = None
        if isinstance(points, (list, tuple)) and points and all(isinstance(p, str) for p in points):
            self.names = list(points)
            self._points = None
        else:
            try:
                xy = np.asarray(points, dtype=float)
            except (TypeError, ValueError):
                xy = np.zeros((0, 3))
            if xy.ndim == 1 and xy.size == 2:
                xy = xy.reshape(1, 2)
            if xy.ndim != 2 or xy.shape[1] != 2 or xy.shape[0] == 0 or not np.all(np.isfinite(xy)):
                raise InputError(f"fastener points must be (k, 2) finite coordinates or names of node sets, got "
                                 f"{points!r}")
            self._points = xy
        if isinstance(layers, str) or len(tuple(layers)) < 2:
            raise InputError(f"a fastener joins two or more layers, e.g. layers=('skin', 'strap'); got {layers!r}")
        self.layers = tuple(str(x) for x in layers)
        if len(set(self.layers)) != len(self.layers):
            raise InputError(f"a fastener joins each layer once; got layers={self.layers}")
        self.diameter = number(diameter, "a fastener's diameter", positive=True)
        if isinstance(flexibility, str):
            self.flexibility: float | str = flexibility.strip().lower()
            if modulus is None:
                raise InputError(f"fasteners {name!r}: flexibility={flexibility!r} is a formula, which needs the "
                                 "fastener's Young's modulus: give modulus= (e.g. 110e3 MPa for titanium), or give "
                                 "the compliance as a number")
        else:
            c = number(flexibility, "flexibility")
            if not c > 0:
                raise InputError(f"a fastener's flexibility (compliance, length/force) must be positive, got "
                                 f"{flexibility!r}; or name a formula such as 'huth'")
            self.flexibility = c
        self.modulus = None if modulus is None else number(modulus, "a fastener's modulus", positive=True)
        self.kind = _word(kind, KINDS, "kind")
        self.shear = _word(shear, SHEARS, "shear")
        if isinstance(tie, str) and tie.strip().lower() in TIES and tie.strip().lower() not in FASTENER_TIES:
            raise InputError(f"fasteners {name!r}: tie={tie!r} is not a fastener's tie; a fastener's end at a modelled "
                             "hole takes tie='spreading' or tie='rigid' (its shear spring pulls and pushes through "
                             "the tie, which a bearing contact cannot); for bearing contact of a pin in a hole use "
                             "planar.Pin(..., tie='contact') in one model")
        self.tie = _word(tie, FASTENER_TIES, "tie")
        self.name = str(name)
        self.holes = self._holes(holes)
        if isinstance(self.flexibility, str):  # a wrong formula name or shear mode is refused here, not at the solve
            if self.shear == "double" and len(self.layers) != 3:
                raise InputError(f"fasteners {self.name!r}: shear='double' joins three layers, the middle plate "
                                 f"listed second (outer, middle, outer); got {len(self.layers)} layers "
                                 f"{self.layers}; give shear='single' or the three layers")
            from .fastener_flexibility import fastener_compliance

            fastener_compliance(self.flexibility, diameter=1.0, t1=1.0, t2=1.0, E1=1.0, E2=1.0, Ef=1.0,
                                kind=self.kind, shear=self.shear)

    def _holes(self, holes) -> dict[str, list[str]]:
        if holes is None:
            return {}
        if isinstance(holes, dict):
            bad = [k for k in holes if k not in self.layers]
            if bad:
                raise InputError(f"holes= names layer {bad[0]!r}, which fasteners {self.name!r} do not join "
                                 f"(layers {self.layers})")
            items = dict(holes)
        else:
            holes = list(holes)
            if len(holes) != len(self.layers):
                raise InputError(f"holes= gives {len(holes)} entries for {len(self.layers)} layers; give one list "
                                 "of edge names (or None) per joined layer, or a dict by layer name")
            items = dict(zip(self.layers, holes))
        out = {}
        for layer, edges in items.items():
            if edges is None:
                continue
            edges = [edges] if isinstance(edges, str) else list(edges)
            if not all(isinstance(e, str) for e in edges):
                raise InputError(f"holes for layer {layer!r} must be edge names, got {edges!r}")
            if self._points is not None and len(edges) != self._points.shape[0]:
                raise InputError(f"holes for layer {layer!r}: {len(edges)} edge names for {self._points.shape[0]} "
                                 "fasteners; give one hole per fastener")
            out[layer] = edges
        return out

    def __repr__(self):
        k = f"{self._points.shape[0]} points" if self._points is not None else f"points {self.names!r}"
        return (f"Fasteners({self.name!r}, {k}, layers={self.layers}, d={self.diameter:g}, "
                f"flexibility={self.flexibility!r}, tie={self.tie!r})")

    def describe(self) -> str:
        return repr(self)

    def points(self, joint: "Joint | None" = None) -> np.ndarray:
        """The fasteners' coordinates (k, 2); named points are looked up in the joined layers' meshes."""
        if self._points is not None:
            return self._points
        if joint is None:
            raise InputError(f"fasteners {self.name!r} are given by named points; their coordinates need the joint")
        out = []
        for nm in self.names:
            for layer in self.layers:
                mesh = joint.layers[layer].mesh
                if nm in mesh.node_sets:
                    out.append(mesh.nodes[np.asarray(mesh.node_sets[nm], dtype=np.int64).ravel()])
                    break
            else:
                raise unknown_name("named point", nm, sorted(joint.layers[self.layers[0]].mesh.node_sets),
                                   f"fasteners {self.name!r} are placed at named node sets of the joined layers")
        return np.vstack(out)

    def compliance(self, *, t1: float, t2: float, E1: float, E2: float) -> float:
        """The compliance of one spring between two adjacent joined layers (the number given, or the formula's).

        In double shear the formula's ``t1`` is the middle plate and the spring is one of the two shear
        planes in parallel (``per="shear plane"``: twice the fastener's compliance); the caller passes
        the middle layer's thickness and modulus as ``t1``, ``E1``.
        """
        if not isinstance(self.flexibility, str):
            return float(self.flexibility)
        try:
            from .fastener_flexibility import fastener_compliance
        except ImportError:
            raise InputError(f"fasteners {self.name!r}: flexibility={self.flexibility!r} names a formula, but the "
                             "flexibility formulas (planar.core.fastener_flexibility) are not available in this "
                             "version; give the compliance as a number (length/force)") from None
        c = float(fastener_compliance(self.flexibility, diameter=self.diameter, t1=t1, t2=t2, E1=E1, E2=E2,
                                      Ef=self.modulus, kind=self.kind, shear=self.shear,
                                      per="shear plane" if self.shear == "double" else "fastener"))
        if not (np.isfinite(c) and c > 0):
            raise InputError(f"fasteners {self.name!r}: the {self.flexibility!r} formula gave compliance {c!r}; "
                             "check the thicknesses, moduli and diameter")
        return c


class Joint:
    """Several plates (layers) overlapping in the plane, joined by fasteners.

    Parameters
    ----------
    layers : dict of str to Model
        Each layer's model: mesh, material, thickness, supports and loads by load case. Load cases
        are matched by name across the layers; a case missing in a layer means no load there.

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(40.0, 10.0, 8, 2)
    >>> top = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
    >>> bottom = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
    >>> joint = Joint({"top": top, "bottom": bottom})
    >>> joint.add_fasteners(Fasteners([(20.0, 5.0)], layers=("top", "bottom"), diameter=4.0, flexibility=1e-5))
    Fasteners('fasteners', 1 points, layers=('top', 'bottom'), d=4, flexibility=1e-05, tie='spreading')
    """

    def __init__(self, layers: dict[str, Any]):
        from .model import Model

        if not isinstance(layers, dict) or not layers:
            raise InputError("a Joint takes a dict of layer name -> planar.Model, e.g. Joint({'skin': m1, 'strap': m2})")
        for k, v in layers.items():
            if not isinstance(k, str) or not isinstance(v, Model):
                raise InputError(f"a Joint's layers map names (str) to planar Models; got {k!r}: {type(v).__name__}")
        self.layers: dict[str, Model] = dict(layers)
        self.fasteners: list[Fasteners] = []
        stated = {m.unit_system.label for m in self.layers.values() if m.unit_system.stated}
        if len(stated) > 1:
            which = "; ".join(f"layer {k!r} in {m.unit_system.label!r}" for k, m in self.layers.items()
                              if m.unit_system.stated)
            raise InputError(f"the layers state different units ({which}); give every layer the same units= and "
                             "its numbers in them")

    @property
    def unit_system(self):
        """The layers' unit system (the first stated one)."""
        for m in self.layers.values():
            if m.unit_system.stated:
                return m.unit_system
        return next(iter(self.layers.values())).unit_system

    @property
    def cases(self) -> list[str]:
        """Every load case name of the layers, in order of first appearance."""
        return list(dict.fromkeys(c for m in self.layers.values() for c in m.cases))

    def add_fasteners(self, fasteners: Fasteners) -> Fasteners:
        """Add a group of fasteners; refuses unknown layers, holes and repeated group names."""
        if not isinstance(fasteners, Fasteners):
            raise InputError(f"add_fasteners takes planar.Fasteners(points, layers=..., diameter=...), got "
                             f"{fasteners!r}")
        for layer in fasteners.layers:
            if layer not in self.layers:
                raise unknown_name("layer", layer, list(self.layers), "fasteners join layers of the joint")
        for layer, edges in fasteners.holes.items():
            mesh = self.layers[layer].mesh
            for e in edges:
                if e not in mesh.edge_sets:
                    raise unknown_name("edge", e, mesh.edge_sets, f"a hole of fasteners {fasteners.name!r} in "
                                       f"layer {layer!r} is a named edge of that layer's mesh")
        if any(f.name == fasteners.name for f in self.fasteners):
            raise InputError(f"two groups of fasteners are named {fasteners.name!r}; give one of them name=...")
        pts = fasteners.points(self)
        for layer, edges in fasteners.holes.items():
            if len(edges) != pts.shape[0]:
                raise InputError(f"holes for layer {layer!r}: {len(edges)} edge names for {pts.shape[0]} fasteners")
            mesh = self.layers[layer].mesh
            for i, e in enumerate(edges):  # each fastener inside its own hole (holes listed out of order are refused)
                ring = mesh.nodes[np.unique(np.asarray(mesh.edge(e))[:, :2])][:, :2]
                lo, hi = ring.min(axis=0), ring.max(axis=0)
                tol = 1e-6 * max(float((hi - lo).max()), fasteners.diameter)
                if np.any(pts[i] < lo - tol) or np.any(pts[i] > hi + tol):
                    c = 0.5 * (lo + hi)
                    raise InputError(f"fasteners {fasteners.name!r}: fastener {i + 1} at ({pts[i, 0]:g}, {pts[i, 1]:g}) "
                                     f"is not inside its hole {e!r} of layer {layer!r} (centred near ({c[0]:.4g}, "
                                     f"{c[1]:.4g})); list the holes in the order of the points")
                size = _hole_size(ring)
                if fasteners.diameter > (1 + INTERFERENCE) * size:
                    raise InputError(f"fasteners {fasteners.name!r}: fastener {i + 1} has diameter "
                                     f"{fasteners.diameter:g}, larger than its hole {e!r} of layer {layer!r} "
                                     f"(diameter {size:.4g}); a fastener fits its hole (a clearance hole is larger "
                                     f"than its fastener, an interference-fit hole at most {100 * INTERFERENCE:g} % "
                                     "smaller): give diameter= the fastener's shank, or model the hole at its drilled "
                                     "size")
        self._refuse_overlaps(fasteners, pts)
        self.fasteners.append(fasteners)
        return fasteners

    def _refuse_overlaps(self, fasteners: Fasteners, pts: np.ndarray) -> None:
        """Refuse two fasteners between the same two adjacent layers whose holes overlap (centres closer than
        the mean of their diameters), in the new group or between it and an earlier one: a point given twice
        would put two springs in parallel there. One fastener given as two groups, one per shear plane (the
        pairs differ), is allowed."""
        from scipy.spatial import cKDTree

        def planes(f):
            return {frozenset(p) for p in zip(f.layers[:-1], f.layers[1:])}

        mine = planes(fasteners)
        d = fasteners.diameter
        found = None

        def first(i, k, gap, r):
            """The closest pair under ``r`` apart, the lowest numbers among pairs as close to round-off."""
            under = gap < r * (1 - 1e-12)
            if not under.any():
                return None
            i, k, gap, r = i[under], k[under], gap[under], np.broadcast_to(r, under.shape)[under]
            tie = gap <= gap.min() + 1e-9 * r
            j = np.lexsort((k[tie], i[tie]))[0]
            return int(i[tie][j]), int(k[tie][j])

        close = np.sort(cKDTree(pts).query_pairs(d, output_type="ndarray").reshape(-1, 2), axis=1)
        pair = first(close[:, 0], close[:, 1], np.hypot(*(pts[close[:, 0]] - pts[close[:, 1]]).T), d)
        if pair is not None:
            found = (fasteners, pair[0], pts[pair[0]], fasteners, pair[1], pts[pair[1]], mine, d)
        others = [f for f in self.fasteners if planes(f) & mine]
        if found is None and others:  # the earlier groups on a shared plane, all in one tree
            qs = [f.points(self) for f in others]
            Q = np.vstack(qs)
            group = np.repeat(np.arange(len(others)), [q.shape[0] for q in qs])
            local = np.concatenate([np.arange(q.shape[0]) for q in qs])
            r = 0.5 * (d + np.array([f.diameter for f in others]))[group]
            near = cKDTree(pts).sparse_distance_matrix(cKDTree(Q), float(r.max()), output_type="ndarray")
            j = near["j"].astype(np.int64)
            pair = first(near["i"].astype(np.int64), j, near["v"], r[j])
            if pair is not None:
                i, j = pair
                f = others[group[j]]
                found = (fasteners, i, pts[i], f, int(local[j]), Q[j], planes(f) & mine, float(r[j]))
        if found is None:
            return
        fa, i, pa, fb, k, pb, shared, r = found
        us = self.unit_system
        lu = f" {us.unit_of('length')}" if us.stated else ""
        gap = float(np.hypot(*(pa - pb)))
        order = list(self.layers).index  # the first shared pair in the joint's order of layers (a set has none)
        pair = min((sorted(p, key=order) for p in shared), key=lambda q: [order(x) for x in q])
        other = f"{k + 1}" if fb is fa else f"{fb.name!r} {k + 1}"
        raise InputError(f"fasteners {fa.name!r} {i + 1} at ({pa[0]:g}, {pa[1]:g}) and {other} at "
                         f"({pb[0]:g}, {pb[1]:g}) both join layers {pair[0]!r} and {pair[1]!r}, {gap:.4g}{lu} apart, "
                         f"less than their diameter {r:.4g}{lu}: their holes overlap (a point given twice puts two "
                         "springs in parallel there); remove the repeated point, or space the fasteners at least "
                         "a diameter apart (about 4 d is common practice)")

    #: read by :func:`planar.core.static.solve`, which hands a joint to :meth:`solve`
    is_joint = True

    def solve(self, cases=None, **options):
        """Solve the joint (as ``planar.solve(joint)``): ``{case: JointResult}``; see
        :func:`planar.core._joint_solve.solve_joint` for the options."""
        from ._joint_solve import solve_joint

        return solve_joint(self, cases, **options)

    def describe(self) -> dict[str, Any]:
        return {"layers": {k: m.describe() for k, m in self.layers.items()},
                "fasteners": [f.describe() for f in self.fasteners]}

    def __repr__(self):
        n = sum(f.points(self).shape[0] for f in self.fasteners)
        return f"Joint(layers={list(self.layers)}, {n} fasteners in {len(self.fasteners)} groups)"


from ._joint_tables import FastenerTable, JointResult  # noqa: E402  (the results, after the model classes)
