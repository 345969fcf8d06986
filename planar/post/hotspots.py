"""Hot spots: the local peaks of a field, one per feature, ranked, with Kt, margin and a flag.

A stress check reads the peak of each feature (a hole, a fillet, a notch), not only the peak of
the whole plate, which often sits at a clamp or under a point force. :func:`hot_spots` finds the
local maxima of a nodal field along each named edge and inside each region, keeps one per feature
peak, ranks them, and gives each its feature name, location, value, Kt (with a nominal stress),
margin of safety (with an allowable) and a flag when it sits next to an idealised support or
concentrated load (:mod:`planar.core.zones`).

How the peaks are found
-----------------------
- Along each named edge: the edge's segments are walked into ordered chains (open or closed);
  a node, or the middle of a run of equal values (a plateau), is a 1D maximum when both its
  neighbours along the chain are lower.
- Inside each region: a node whose value is at least that of every neighbour through the
  region's cells (one sparse product, no loop over nodes). A boundary node is read on its edge:
  a peak at a hole belongs to the hole.

What is noise and what is a peak (the rule, :data:`PROMINENCE`, :data:`FLOOR`, :data:`MERGE_ELEMENTS`)
-------------------------------------------------------------------------------------------------------
A maximum is a *feature peak* when, to reach a higher value (or a peak already kept) through the
material, one must first descend by at least ``delta = max(PROMINENCE x range, FLOOR x max|v|)``:
its topographic prominence, measured through the whole part (not only along its edge), is at least
``delta``. So the foot of a hole's stress ridge where it meets the plate's outer edge is not a spot
(values rise all the way from it to the hole), while a second hole, a fillet or a clamp corner is
(the field drops to the nominal level between them). Bumps of recovered stresses rise by a few
per cent of the range at most on a sound mesh (the size of the discretisation error); a real
stress raiser rises by its Kt - 1 times the nominal level. Maxima closer than
:data:`MERGE_ELEMENTS` local element sizes are one peak (the shoulders of one peak resolved by a few
elements; a recovery patch spans about two), and on one connected piece of one feature, maxima
within :data:`TWIN` of a higher one (the two ends of a hole's diameter under tension) are one spot
listed with both locations.

Flagged spots
-------------
A spot next to an idealised support or concentrated load (within
:data:`planar.core.zones.NEAR_ELEMENTS` local element sizes of its nodes) is flagged, with the
reason: a local peak there is made or shaped by how the part is held or loaded. The reason quotes,
as :meth:`planar.Result.max` does, the largest value of its feature away from every idealisation
when the spot exceeds it by more than :data:`planar.core.zones.DOMINANCE`.
:attr:`HotSpots.governing` is the highest spot that is not flagged.

Examples
--------
>>> import planar
>>> from planar.post.hotspots import hot_spots
>>> mesh = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")
>>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
>>> _ = model.add_support(planar.Fixed("left"))
>>> _ = model.add_load(planar.Traction("right", ty=-1.0), case="tip")
>>> hs = hot_spots(planar.solve(model)["tip"], allowable=250.0)
>>> hs.spots[0].flagged, hs.governing is None or not hs.governing.flagged
(True, True)
"""
from __future__ import annotations

import math
import os
import warnings
from dataclasses import dataclass, field as _field
from typing import Any, Sequence

import numpy as np

from ..core.errors import InputError, fmt_point, unknown_name
from ..core.fields import FIELD_TABLE
from ..core.result import POLAR_FIELDS, STRESS_FIELDS, as_result
from ..core.values import number
from ._peaks import cell_graph, chain_maxima, edge_chains, mesh_graph, neighbour_max, rises_to

__all__ = ["HotSpot", "HotSpots", "hot_spots", "plot_hot_spots", "hot_spot_section", "PROMINENCE", "FLOOR",
           "MERGE_ELEMENTS", "TWIN"]

#: a maximum must rise by at least this fraction of the field's range above the saddle to a higher one
PROMINENCE = 0.05
#: ... and by at least this fraction of the field's largest magnitude (a uniform field has no peak)
FLOOR = 1e-3
#: maxima closer than this many local element sizes are one peak
MERGE_ELEMENTS = 3.0
#: on one connected piece of one feature, a maximum within this fraction of a higher one is the same spot
TWIN = 0.01


# ---------------------------------------------------------------------------------------- results
@dataclass(frozen=True)
class HotSpot:
    """One local peak of a field.

    Attributes
    ----------
    rank : int
        1 for the highest value.
    feature : str
        The edge or region it belongs to (an edge for a boundary node).
    kind : {"edge", "region"}
    location : (float, float)
    node : int
    value : float
        The field's value there (model units).
    Kt : float or None
        ``value / nominal`` when a nominal stress was given.
    margin : float or None
        ``allowable / (factor_of_safety x value) - 1`` when an allowable was given
        (:func:`planar.post.checks.margin_of_safety`).
    flagged : bool
        True when the peak is made by an idealised support or concentrated load next to it.
    reason : str
        Why it is flagged (``""`` otherwise).
    next_to : str
        The idealisation it is flagged for, short (``"the clamp on edge 'left'"``).
    also : tuple of (float, float)
        Other locations of the same peak on the same feature (within :data:`TWIN`).
    """

    rank: int
    feature: str
    kind: str
    location: tuple[float, float]
    node: int
    value: float
    Kt: float | None = None
    margin: float | None = None
    flagged: bool = False
    reason: str = ""
    next_to: str = ""
    also: tuple = ()
    #: set when the mesh does not resolve this peak (the ``"coarse-peak"`` warning, short)
    mesh_note: str = ""
    #: the code of the singular point the spot sits at (``"sharp-corner"``, ``"interface-edge"``): its
    #: elastic stress is unbounded, so its value is set by the mesh
    singular: str = ""

    def as_dict(self) -> dict[str, Any]:
        return {"rank": self.rank, "feature": self.feature, "kind": self.kind,
                "x": self.location[0], "y": self.location[1], "node": self.node, "value": self.value,
                "kt": self.Kt, "margin_of_safety": self.margin, "flagged": self.flagged,
                "next_to": self.next_to, "reason": self.reason, "also": [list(p) for p in self.also],
                "mesh_note": self.mesh_note, "singular": self.singular}


def _g(v: float | None, spec: str = ".4g") -> str:
    return "-" if v is None or not math.isfinite(v) else format(v, spec)


@dataclass
class HotSpots:
    """The hot spots of one field of one result, ranked (see :func:`hot_spots`).

    Attributes
    ----------
    spots : list of HotSpot
    field, recovery, case : str
    unit, length : str
        Units of the field and of lengths, from the model's units.
    nominal, allowable, factor_of_safety : float or None
    where : str
        Where the spots were kept (``"everywhere"`` or a zone's description).
    threshold : float
        The prominence a peak needed (field units).
    rule : str
        The noise rule, one sentence.
    """

    spots: list[HotSpot]
    field: str
    recovery: str
    case: str
    unit: str = ""
    length: str = ""
    nominal: float | None = None
    allowable: float | None = None
    factor_of_safety: float = 1.0
    where: str = "everywhere"
    threshold: float = 0.0
    rule: str = ""
    result: Any = _field(default=None, repr=False, compare=False)
    #: the centre of a polar field's axes (None for other fields)
    centre: tuple[float, float] | None = None

    def __len__(self) -> int:
        return len(self.spots)

    def __iter__(self):
        return iter(self.spots)

    def __getitem__(self, k):
        return self.spots[k]

    @property
    def governing(self) -> HotSpot | None:
        """The highest spot not next to an idealisation (None if every spot is flagged or none was found)."""
        return next((s for s in self.spots if not s.flagged), None)

    def table(self) -> str:
        """The spots as a plain-text table, with the units of the model."""
        u = f" [{self.unit}]" if self.unit else ""
        lu = f" [{self.length}]" if self.length else ""
        head = ["#", "feature", "x" + lu, "y" + lu, f"{self.field}{u}"]
        if self.nominal is not None:
            head.append("Kt")
        if self.allowable is not None:
            head.append("margin")
        head.append("remark")
        rows = []
        for s in self.spots:
            row = [str(s.rank), f"{s.feature} ({s.kind})", f"{s.location[0]:.4g}", f"{s.location[1]:.4g}",
                   f"{s.value:.5g}"]
            if self.nominal is not None:
                row.append(_g(s.Kt))
            if self.allowable is not None:
                row.append(_g(s.margin, "+.3f"))
            remark = f"FLAGGED: next to {s.next_to}" if s.flagged else ""
            if s.also:
                remark = "; ".join(filter(None, [remark, "also at " + ", ".join(fmt_point(p) for p in s.also)]))
            if not s.flagged and s is self.governing:
                remark = "; ".join(filter(None, ["governing", remark]))
            if s.mesh_note:
                remark = "; ".join(filter(None, [remark, "COARSE MESH: refine (coarse-peak)"]))
            if s.singular:
                remark = "; ".join(filter(None, [remark, f"SINGULAR: value set by the mesh ({s.singular})"]))
            row.append(remark)
            rows.append(row)
        title = f"hot spots of {self.field} ({self.recovery} recovery), load case {self.case!r}" + \
                ("" if self.centre is None else f", about {fmt_point(self.centre)}") + \
                ("" if self.where == "everywhere" else f", {self.where}")
        if not rows:
            return f"{title}: none ({self.rule})" + ("" if self.length else "; units not stated (consistent)")
        w = [max(len(head[k]), *(len(r[k]) for r in rows)) for k in range(len(head))]
        right = {0, 2, 3, 4} | ({5, 6} & set(range(len(head) - 1)))

        def line(cells):
            return "  ".join(c.rjust(w[k]) if k in right else c.ljust(w[k]) for k, c in enumerate(cells)).rstrip()

        out = [title, line(head), "  ".join("-" * x for x in w)] + [line(r) for r in rows]
        notes = []
        if self.nominal is not None:
            notes.append(f"Kt = value / nominal {self.nominal:.6g}{u}")
        if self.allowable is not None:
            notes.append(f"margin = allowable {self.allowable:.6g}{u} / ({self.factor_of_safety:g} x value) - 1")
        notes.append(self.rule)
        if not self.length:  # the model gave no units= (a stated system always has a length unit)
            notes.append("units not stated (consistent)")
        if any(s.flagged for s in self.spots):
            notes.append("a flagged spot is made by how the part is held or loaded; check the feature's own spot"
                         if self.governing is not None else
                         "every spot is made by how the part is held or loaded: read the feature under check "
                         "a distance away, e.g. result.max(field, where=Away(d))")
        out += ["", *notes]
        return "\n".join(out)

    __str__ = table

    def as_dict(self) -> dict[str, Any]:
        """JSON-ready summary (NaN and infinities become None)."""
        from .files import json_safe

        gov = self.governing
        return json_safe({"field": self.field, "recovery": self.recovery, "case": self.case, "unit": self.unit,
                          "length_unit": self.length, "where": self.where, "nominal": self.nominal,
                          "allowable": self.allowable, "factor_of_safety": self.factor_of_safety,
                          "threshold": self.threshold, "rule": self.rule,
                          **({} if self.centre is None else {"centre": list(self.centre)}),
                          "governing": None if gov is None else gov.rank,
                          "spots": [s.as_dict() for s in self.spots]})

    def section(self, *, figure: bytes | str | os.PathLike | None = None):
        """:func:`hot_spot_section` of these spots (a report Section)."""
        return hot_spot_section(self, figure=figure)

    def plot(self, path: str | os.PathLike | None = None, **kwargs):
        """:func:`plot_hot_spots` of these spots."""
        return plot_hot_spots(self, path, **kwargs)



def _held_edges(model) -> set[str]:
    """Names of edges that carry a support or a load (not features under check)."""
    out: set[str] = set()
    for s in getattr(model, "supports", ()):
        w = getattr(s, "where", None)
        if isinstance(w, str):
            out.add(w)
    for items in getattr(model, "cases", {}).values():
        for load in items:
            try:
                used = load.names_used()
            except Exception:  # noqa: BLE001 - a load that names nothing holds no edge
                used = ()
            out.update(n for kind, n in used if kind == "edge")
    return out


def _names(given, available: Sequence[str], what: str) -> list[str]:
    if given is None:
        return sorted(available)
    if isinstance(given, str):
        given = [given]
    names = list(given)
    for n in names:
        if n not in available:
            raise unknown_name(what, n, available)
    return names


# ---------------------------------------------------------------------------------------- the search
def hot_spots(result, field: str = "von_mises", *, recovery: str = "spr", nominal: float | None = None,
              allowable: float | None = None, factor_of_safety: float = 1.0, where=None,
              edges: Sequence[str] | str | None = None, regions: Sequence[str] | str | None = None,
              top: int | None = None, absolute: bool = False, prominence: float = PROMINENCE,
              merge: float = MERGE_ELEMENTS, centre=None) -> HotSpots:
    """The local peaks of a field along each named edge and inside each region, ranked.

    Parameters
    ----------
    result : Result
    field : str, default "von_mises"
        Any nodal field of :meth:`planar.Result.field`.
    recovery : {"spr", "average"}
        Nodal stress recovery.
    nominal : float, optional
        Nominal stress (> 0): each spot gets ``Kt = value / nominal``.
    allowable : float, optional
        Allowable stress (> 0): each spot gets its margin of safety
        (:func:`planar.post.checks.margin_of_safety`, with ``factor_of_safety``).
    factor_of_safety : float, default 1.0
    where : str or Zone, optional
        Keep only the spots inside this zone (an edge or region name, or a zone of
        :mod:`planar.core.zones`); the peaks are found on the whole part first, so a zone's border
        makes no false peak.
    edges, regions : sequence of str, optional
        The named edges and regions to search (default all; ``[]`` for none).
    top : int, optional
        Keep the ``top`` highest spots.
    absolute : bool
        Peaks of the magnitude (for compressive peaks of a signed field).
    prominence : float, default :data:`PROMINENCE`
        Fraction of the field's range a peak must rise above the saddle to a higher one.
    merge : float, default :data:`MERGE_ELEMENTS`
        Maxima closer than this many local element sizes are one peak.
    centre : (float, float), optional
        The centre of the polar fields (``sigma_r``, ``sigma_theta``, ``tau_r_theta``), e.g. a hole's.

    Returns
    -------
    HotSpots

    Raises
    ------
    InputError
        Unknown field or recovery, a nominal, allowable or factor of safety not positive, an
        allowable or nominal for a field that is not a stress, ``top`` not a positive whole number.
    NameNotFoundError
        An edge or region name the mesh does not have (the message lists them).
    """
    from scipy.sparse.csgraph import connected_components

    from ..core._advice_corner import sharp_corner_peak
    from ..core._advice_peak import coarse_peak
    from ..core._advice_interface import interface_edge_peak
    from ..core.zones import _idealised_trees, _near, idealised_reason, node_sizes
    from .checks import _check_recovery, margin_of_safety
    from ..core.units import field_unit, length_unit

    result = as_result(result, "hot_spots")
    _check_recovery(recovery)
    nom = None if nominal is None else number(nominal, "the nominal stress", positive=True)
    allow = None if allowable is None else number(allowable, "the allowable", positive=True)
    fs = number(factor_of_safety, "the factor of safety", positive=True)
    if (allow is not None or nom is not None) and (field not in STRESS_FIELDS + POLAR_FIELDS
                                                     or FIELD_TABLE[field].unit != "stress"):
        measures = [n for n in STRESS_FIELDS + POLAR_FIELDS if FIELD_TABLE[n].unit == "stress"]
        raise InputError(f"a margin of safety or a Kt compares a stress with the allowable or the nominal stress; "
                         f"{field!r} is not a stress (pick one of {', '.join(measures)}) or leave allowable and "
                         "nominal out")
    if top is not None and (isinstance(top, bool) or not isinstance(top, (int, np.integer)) or top < 1):
        raise InputError(f"top must be a positive whole number of spots, got {top!r}")
    frac = number(prominence, "prominence", nonnegative=True)
    merge = number(merge, "merge", nonnegative=True)
    mesh, model = result.mesh, result.model
    edge_names = _names(edges, list(mesh.edge_sets), "edge")
    region_names = _names(regions, mesh.region_names(), "region")
    keep_mask, said = result.zone_mask(where) if where is not None else (None, "everywhere")

    raw = np.asarray(result.field(field, recovery=recovery, centre=centre), dtype=float)
    used = mesh.used_nodes() & np.isfinite(raw)
    v = np.where(used, np.abs(raw) if absolute else raw, -np.inf)
    units = getattr(result, "units", None)
    unit, length = field_unit(field, units), length_unit(units)
    n = mesh.n_nodes
    top_v = float(v[used].max()) if used.any() else 0.0
    low_v = float(v[used].min()) if used.any() else 0.0
    scale = max(abs(top_v), abs(low_v), 1e-300)
    tol = 1e-9 * scale
    delta = max(frac * (top_v - low_v), FLOOR * scale)
    uname = f" {unit}" if unit else ""
    rule = (f"peaks rising less than {delta:.3g}{uname} above the saddle to a higher one "
            f"(the larger of {100 * frac:g} % of the field's range and {100 * FLOOR:g} % of its largest value) "
            f"are noise; maxima within {merge:g} element sizes are one peak")

    # -- candidates: (node, feature, kind, piece, preference) -----------------------------------
    held = _held_edges(model)
    cand_node, cand_feat, cand_kind, cand_piece, cand_pref = [], [], [], [], []
    on_edge = np.zeros(n, dtype=bool)
    piece_id = 0
    for name in edge_names:
        for order, closed in edge_chains(mesh, name):
            on_edge[order] = True
            g_local = None
            if closed is None:
                g_local = mesh_graph(mesh)[order][:, order]
            nodes = chain_maxima(order, closed, v, tol, g_local)
            nodes = nodes[used[nodes]]
            cand_node.append(nodes)
            cand_feat += [name] * nodes.size
            cand_kind += ["edge"] * nodes.size
            cand_piece.append(np.full(nodes.size, piece_id))
            cand_pref.append(np.full(nodes.size, 1 if name in held else 0))
            piece_id += 1
    graph = mesh_graph(mesh)
    for name in region_names:
        blocks = [mesh.cells[lay][np.asarray(c, dtype=np.int64)] for lay, c in mesh.region_cells(name).items()]
        gr = graph if len(region_names) == 1 and name == "plate" and not mesh.regions else cell_graph(n, blocks)
        inside = np.zeros(n, dtype=bool)
        for b in blocks:
            inside[b.ravel()] = True
        nodes = np.flatnonzero(inside & used & ~on_edge & (v >= neighbour_max(gr, v) - tol))
        ncomp, lab = connected_components(gr, directed=False)
        cand_node.append(nodes)
        cand_feat += [name] * nodes.size
        cand_kind += ["region"] * nodes.size
        cand_piece.append(piece_id + lab[nodes])
        cand_pref.append(np.full(nodes.size, 2))
        piece_id += ncomp
    nodes = np.concatenate(cand_node) if cand_node else np.zeros(0, dtype=np.int64)
    piece = np.concatenate(cand_piece) if cand_piece else np.zeros(0, dtype=np.int64)
    pref = np.concatenate(cand_pref) if cand_pref else np.zeros(0, dtype=np.int64)
    feats, kinds = np.asarray(cand_feat, dtype=object), np.asarray(cand_kind, dtype=object)
    # a peak cannot rise delta above the part's lowest value unless it is at least that high
    ok = v[nodes] >= low_v + delta - tol
    nodes, piece, pref, feats, kinds = nodes[ok], piece[ok], pref[ok], feats[ok], kinds[ok]
    order = np.lexsort((pref, -v[nodes]))  # highest first; a free edge before a held one before a region

    # -- prominence through the whole part, merging, twins -----------------------------------
    _, part = connected_components(graph, directed=False)
    part_size = np.bincount(part)
    h = node_sizes(mesh)
    kept: list[int] = []          # candidate indices kept
    kept_mask = np.zeros(n, dtype=bool)  # their nodes
    twins: dict[int, list[int]] = {}
    for c in order:  # one pass per candidate maximum (a few dozen), each a vectorized sparse search
        i = int(nodes[c])
        if kept:
            k_nodes = nodes[kept]
            d = np.hypot(*(mesh.nodes[k_nodes] - mesh.nodes[i]).T)
            near = d <= merge * np.maximum(h[k_nodes], h[i]) * (1 + 1e-9)
            if near.any():
                continue
        # a kept (higher) spot, or a higher node, reachable without descending delta: the same peak or
        # not a peak; the component of the part above v[i] - delta searched from i only as far as needed
        higher, size = rises_to(graph, v, i, v[i] - delta, v[i] + tol, kept_mask)
        if higher or size >= part_size[part[i]]:
            continue
        twin_of = None
        for k in kept:
            if piece[k] == piece[c] and v[i] >= v[nodes[k]] - TWIN * abs(v[nodes[k]]):
                twin_of = k
                break
        if twin_of is not None:
            twins.setdefault(twin_of, []).append(i)
            continue
        kept.append(int(c))
        kept_mask[i] = True

    # -- zone, rank, Kt, margin, flag ----------------------------------------------------------
    if keep_mask is not None:
        kept = [k for k in kept if keep_mask[nodes[k]]]
    if top is not None:
        kept = kept[:int(top)]
    trees = _idealised_trees(mesh, result.model) if kept else []  # once for all the spots
    near, why = _near(mesh, trees, nodes[kept], None) if kept else (np.zeros(0, bool), [])
    spots: list[HotSpot] = []
    for r, k in enumerate(kept):  # one pass per spot
        i = int(nodes[k])
        value = float(raw[i])
        kt_ = None if nom is None else value / nom
        ms = None
        if allow is not None:
            with warnings.catch_warnings():
                if r > 0:  # the factor-of-safety warning once, not once per spot
                    warnings.simplefilter("ignore")
                ms = margin_of_safety(value, allow, fs).margin
        sharp_corner_peak(result, i, field, raw, stacklevel=3)  # a singular spot: its value is the mesh's
        interface_edge_peak(result, i, field, raw, stacklevel=3)  # and where an interface meets the edge
        reason = next_to = ""
        if near[r]:
            mask = _feature_mask(mesh, str(feats[k]), str(kinds[k]), i)
            reason = idealised_reason(result, i, v, mask)
            if not reason and np.all(_near(mesh, trees, np.flatnonzero(mask), None)[0]):
                # the feature is itself held or loaded (a clamped bolt hole, a tied pin hole): it has no
                # value of its own away from the idealisation to set against, so its peak is the
                # idealisation's, whatever the rest of the part does
                reason = (f"next to {why[r]}: the whole {kinds[k]} {feats[k]!r} is held or loaded there, so its "
                          "peak is made by the idealisation (how the part is held or loaded), not by the part")
            elif not reason:
                # a local peak beside a point force or a clamp that its feature exceeds elsewhere is still
                # the idealisation's bump (the field rises to it because of the load or support), not a
                # stress raiser of the part; unflagged it could become the governing spot
                reason = (f"next to {why[r]}: a local peak there is shaped by the idealisation (how the part is "
                          "held or loaded), not by the part; read the feature under check with where= (e.g. "
                          "where=Away() or the feature's edge)")
            next_to = why[r] if reason else ""
        also = tuple(_at(mesh, j) for j in twins.get(k, []))
        # a spot made by an idealisation is not refined away; the others: is the mesh fine enough there?
        mesh_note = "" if reason else coarse_peak(result, i, field, raw, centre=centre, stacklevel=3)
        spots.append(HotSpot(r + 1, str(feats[k]), str(kinds[k]), _at(mesh, i), i, value, kt_, ms, bool(reason),
                             reason, next_to, also, mesh_note, _singular(result, i, field)))
    return HotSpots(spots, field, recovery, result.case, unit, length, nom, allow, fs, said, float(delta), rule,
                    result, None if centre is None else tuple(float(c) for c in centre))


#: the singular points a spot may sit at, in words
_SINGULAR = {"sharp-corner": "a sharp re-entrant corner with no radius",
             "interface-edge": "where an interface between regions of different stiffness meets a free edge"}


def _singular(result, node: int, field: str) -> str:
    """The code of the singular point at ``node`` (a sharp re-entrant corner, an interface meeting a free
    edge), or "" (and "" for a field that is not a stress)."""
    from ..core._advice_corner import sharp_corner_near
    from ..core._advice_interface import interface_edge_near
    from ..core._advice_node import is_stress

    if not is_stress(field):
        return ""
    if sharp_corner_near(result, node) is not None:
        return "sharp-corner"
    if interface_edge_near(result, node) is not None:
        return "interface-edge"
    return ""


def _at(mesh, i: int) -> tuple[float, float]:
    """Coordinates of node ``i``, round-off below 1e-9 of the part's size shown as 0."""
    tol = 1e-9 * mesh.size()
    x, y = (float(c) for c in mesh.nodes[i])
    return (0.0 if abs(x) < tol else x, 0.0 if abs(y) < tol else y)


def _feature_mask(mesh, name: str, kind: str, node: int) -> np.ndarray:
    """The nodes of the connected piece of the feature that holds ``node``."""
    m = np.zeros(mesh.n_nodes, dtype=bool)
    if kind == "edge":
        for order, _ in edge_chains(mesh, name):
            if np.any(order == node):
                m[order] = True
        return m
    for lay, c in mesh.region_cells(name).items():
        m[mesh.cells[lay][np.asarray(c, dtype=np.int64)].ravel()] = True
    return m


# ---------------------------------------------------------------------------------------- figure
def plot_hot_spots(result_or_spots, path: str | os.PathLike | None = None, *, window=None, title: str | None = None,
                   mesh_lines: bool = False, levels: int | None = None, ax=None, **kwargs):
    """The field with numbered markers at its hot spots and a legend of number, feature and value.

    Parameters
    ----------
    result_or_spots : Result or HotSpots
        A result (its hot spots are found with ``kwargs``, see :func:`hot_spots`) or found spots.
    path : path, optional
        Write the figure as PNG.
    window : (x0, y0, x1, y1), optional
        Show only this box (spots outside it are still listed in the legend).
    title : str, optional
    mesh_lines, levels, ax
        As for :func:`planar.post.plots.plot_field`.
    **kwargs
        Passed to :func:`hot_spots` when a result is given.

    Returns
    -------
    matplotlib.figure.Figure

    Notes
    -----
    Drawn on the undeformed shape so the markers sit at the spots' coordinates. A flagged spot
    (next to an idealised support or concentrated load) is a grey square, a feature's spot a white
    circle; the governing spot's number is in bold.
    """
    from matplotlib.lines import Line2D

    from .plots import field_label, plot_field, save_figure

    if isinstance(result_or_spots, HotSpots):
        if kwargs:
            raise InputError(f"the spots are already found; {', '.join(sorted(kwargs))} apply to hot_spots(result, ...)")
        hs = result_or_spots
        if hs.result is None:
            raise InputError("these hot spots carry no result to draw; give the result instead")
    else:
        hs = hot_spots(result_or_spots, **kwargs)
    result = hs.result
    if title is None:
        title = f"hot spots of {field_label(hs.field)}, load case '{hs.case}'"
    fig = plot_field(result, hs.field, recovery=hs.recovery, scale=None, mark_peak=False, mesh_lines=mesh_lines,
                     levels=levels, title=title, window=window, ax=ax, centre=hs.centre)
    axes = ax if ax is not None else fig.axes[0]
    gov = hs.governing
    handles = []
    u = f" {hs.unit}" if hs.unit else ""
    for s in hs.spots:
        x, y = s.location
        bold = s is gov
        style = dict(marker="s", ms=13, mfc="0.8", mec="0.1", mew=1.2, ls="none") if s.flagged else \
            dict(marker="o", ms=14, mfc="white", mec="black", mew=1.4 if not bold else 2.2, ls="none")
        axes.plot([x], [y], zorder=7, **style)
        axes.text(x, y, str(s.rank), ha="center", va="center", fontsize=7.5, zorder=8,
                  fontweight="bold" if bold else "normal")
        for p in s.also:
            axes.plot([p[0]], [p[1]], zorder=7, **style)
            axes.text(p[0], p[1], str(s.rank), ha="center", va="center", fontsize=7.5, zorder=8)
        extra = []
        if s.Kt is not None:
            extra.append(f"Kt {s.Kt:.3g}")
        if s.margin is not None:
            extra.append(f"MS {s.margin:+.2f}")
        label = f"{s.rank}: {s.feature}, {s.value:.4g}{u}" + (f" ({', '.join(extra)})" if extra else "")
        if s.flagged:
            label += f"; next to {s.next_to} (idealisation)"
        elif bold:
            label += "; governing"
        handles.append(Line2D([], [], label=label, **style))
    if handles and ax is None:
        w, h = fig.get_size_inches()
        fig.set_size_inches(w, h + 0.45 + 0.17 * len(handles))  # room for the legend below
        fig.legend(handles=handles, loc="outside lower left", fontsize=7.5, frameon=False, ncols=1, markerscale=0.6,
                   title=f"hot spots ({len(handles)}): number, feature, value", title_fontsize=8,
                   alignment="left")
    elif handles:
        axes.legend(handles=handles, loc="best", fontsize=7, title="hot spots", title_fontsize=7.5)
    else:
        axes.text(0.5, 0.5, "no hot spot: the field has no local peak", transform=axes.transAxes,
                  ha="center", va="center", fontsize=9, bbox=dict(fc="white", ec="0.3"))
    if path is not None:
        save_figure(fig, path)
    return fig


# ---------------------------------------------------------------------------------------- report
def hot_spot_section(hs: HotSpots, *, figure: bytes | str | os.PathLike | None = None):
    """A report section ("Hot spots") with the table of spots, and the figure when given."""
    from ._blocks import Figure, Notice, Paragraph, Section, Table

    u = f" [{hs.unit}]" if hs.unit else ""
    lu = f" [{hs.length}]" if hs.length else ""
    head = ["#", "feature", f"location{lu}", f"{hs.field}{u}", "Kt", "margin of safety", "remark"]
    gov = hs.governing
    rows = []
    for s in hs.spots:
        remark = f"next to {s.next_to}: made by the idealisation" if s.flagged else \
            ("governing" if s is gov else "")
        if s.singular:
            remark = "; ".join(filter(None, [remark, f"singular point ({s.singular}): its value is set by the mesh"]))
        rows.append([str(s.rank), f"{s.feature} ({s.kind})", fmt_point(s.location), f"{s.value:.5g}",
                     _g(s.Kt), _g(s.margin, "+.3f"), remark])
    caption = (f"Local peaks of {hs.field} ({hs.recovery} recovery) along the named edges and inside the regions, "
               f"load case '{hs.case}'" + ("" if hs.where == "everywhere" else f", {hs.where}") + f". {hs.rule[:1].upper()}{hs.rule[1:]}.")
    if hs.nominal is not None:
        caption += f" Kt = value / {hs.nominal:.6g}{u}."
    if hs.allowable is not None:
        caption += (f" Margin = {hs.allowable:.6g}{u} / ({hs.factor_of_safety:g} x value) - 1.")
    blocks: list = [Table(head, rows, caption=caption, numeric=[0, 3, 4, 5]) if rows else
                    Paragraph(f"No hot spot: the field has no local peak ({hs.rule}).")]
    flagged = [s for s in hs.spots if s.flagged]
    if flagged:
        blocks.append(Notice([f"Spot {s.rank} ({s.feature}) sits {s.reason}." for s in flagged], kind="caution"))
    coarse = [s for s in hs.spots if s.mesh_note]
    if coarse:
        blocks.append(Notice([f"Spot {s.rank} ({s.feature}): {s.mesh_note}." for s in coarse], kind="caution"))
    singular = [s for s in hs.spots if s.singular]
    if singular:
        blocks.append(Notice([f"Spot {s.rank} ({s.feature}) sits at a singular point ({s.singular}: "
                              f"{_SINGULAR.get(s.singular, s.singular)}): the elastic stress there has no finite "
                              "value, so the figure is the mesh's and grows as it is refined; see the warnings "
                              "for where to read the stress instead." for s in singular], kind="caution"))
    if figure is not None:
        blocks.append(Figure(figure, "Hot spots: numbered markers; grey squares are flagged spots."))
    return Section("Hot spots", blocks)
