"""Where a peak is read: zones of a part, and the idealised supports and loads a peak may sit next to.

A stress check reads the peak of the feature under check (a fillet, a hole, a notch), not the
peak of the whole plate: a clamped bolt hole or a point force makes a peak of its own that belongs
to how the part was idealised, not to the part. Every function that takes a peak (``Result.max``,
``Kt``, margins, envelopes, hot spots, the report) takes ``where=``, one of the zones below or a
name:

- ``OnEdge("fillet")``: the nodes of a named edge;
- ``InRegion("web")``: the nodes of a named region's cells;
- ``InCircle((x, y), r)`` and ``InBox((x0, y0), (x1, y1))``: a window;
- ``Near("bolt_centre", r)``: the neighbourhood of a named point (or coordinates);
- ``Outside((x, y), r)``: everywhere except within ``r`` of a point (a named point or coordinates): the
  peak read clear of a singular point, e.g. where an interface between regions meets a free edge;
- ``Away(d)``: everywhere except within ``d`` of the idealised supports and concentrated loads
  (``Away()``: except within the size of each, after St Venant's principle);
- ``a & b``: both.

A name alone (``where="fillet"``) is the edge or region of that name.

Idealised supports are every support except symmetry planes (which are exact) and rollers that
slide along a straight edge (symmetry lines in effect); concentrated loads
are point forces (and any load kind whose :meth:`~planar.core.loads.LoadKind.concentrated_nodes`
names nodes). A node is *next to* one of them when it lies within ``NEAR_ELEMENTS`` local element
sizes of its nodes. A peak next to one is flagged with the reason (:func:`idealised_reason`).

Examples
--------
>>> import planar
>>> mesh = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")
>>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0)
>>> model.add_support(planar.Fixed("left"))
Fixed('left')
>>> model.add_load(planar.Traction("right", ty=-1.0), case="tip")
Traction('right', tx=None, ty=-1)
>>> r = planar.solve(model)["tip"]
>>> peak = r.max("von_mises")
>>> peak.note.startswith("next to the clamp on edge 'left'")
True
>>> away = r.max("von_mises", where=Away(20.0))
>>> away.location[0] >= 20.0, away.note
(True, '')
"""
from __future__ import annotations

from typing import Any

import numpy as np

from .errors import InputError, NameNotFoundError, choices, fmt_point, unknown_name
from .kinematics import _corner_count
from .values import finite_vector

__all__ = ["Zone", "OnEdge", "InRegion", "InCircle", "InBox", "Near", "Outside", "Away", "as_zone", "idealisations",
           "idealised_reason", "near_idealised", "node_sizes", "plain_name", "NEAR_ELEMENTS", "DOMINANCE"]

#: a node within this many local element sizes of an idealised support's or concentrated load's nodes
#: is "next to" it: a singular or idealisation-made peak sits at those nodes or in the ring of
#: elements around them, whatever the mesh size (common practice: read stresses a few elements away
#: from a point of support or load, St Venant's principle)
NEAR_ELEMENTS = 2.0
#: a peak next to an idealisation is flagged when it exceeds the largest value away from every
#: idealisation by more than this fraction (a uniform field whose maximum happens to be at a
#: support is not an idealisation's peak)
DOMINANCE = 0.01


def _xy(p, what: str) -> np.ndarray:
    a = finite_vector(p)
    if a is None:
        raise InputError(f"{what} must be a point (x, y) of finite numbers, got {p!r}")
    return a


def _length(v, what: str) -> float:
    try:
        x = float(v)
    except (TypeError, ValueError):
        x = float("nan")
    if isinstance(v, bool) or not np.isfinite(x) or x <= 0:
        raise InputError(f"{what} must be a positive length, got {v!r}")
    return x


def _parts(result) -> tuple[Any, Any]:
    """(mesh, model) of a Result (or of a model, or of a mesh alone: model None)."""
    model = getattr(result, "model", None)
    mesh = getattr(result, "mesh", None)
    if mesh is None and hasattr(result, "nodes"):
        mesh = result
    if mesh is None:
        raise InputError(f"a zone is read on a result, a model or a mesh, got {type(result).__name__}")
    return mesh, model


class Zone:
    """Where a peak is read: a set of nodes of the mesh. Combine zones with ``&``."""

    def mask(self, result) -> np.ndarray:
        """Boolean mask over the mesh nodes (True inside the zone) for a Result (or Model, or Mesh)."""
        raise NotImplementedError

    def describe(self) -> str:
        """A short phrase for tables and messages (e.g. ``"on edge 'fillet'"``)."""
        raise NotImplementedError

    def __and__(self, other: "Zone") -> "Zone":
        if not isinstance(other, Zone):
            return NotImplemented
        return _Both(self, other)

    def __str__(self) -> str:
        return self.describe()


class _Both(Zone):
    def __init__(self, a: Zone, b: Zone):
        self.a, self.b = a, b

    def mask(self, result) -> np.ndarray:
        return self.a.mask(result) & self.b.mask(result)

    def describe(self) -> str:
        return f"{self.a.describe()} and {self.b.describe()}"

    def __repr__(self) -> str:
        return f"{self.a!r} & {self.b!r}"


class _Named(Zone):
    """A zone given by the name of an edge or region of the mesh."""

    _what = "a name"

    def __init__(self, name: str):
        if not isinstance(name, str) or not name:
            raise InputError(f"{type(self).__name__} needs the name of {self._what}, got {name!r}")
        self.name = name

    def __repr__(self) -> str:
        return f"{type(self).__name__}({self.name!r})"


class OnEdge(_Named):
    """The nodes of a named edge (a hole, a fillet, a notch root)."""

    _what = "an edge"

    def mask(self, result) -> np.ndarray:
        mesh, _ = _parts(result)
        m = np.zeros(mesh.n_nodes, dtype=bool)
        m[np.asarray(mesh.edge(self.name)).ravel()] = True
        return m

    def describe(self) -> str:
        return f"on edge {self.name!r}"


class InRegion(_Named):
    """The nodes of the cells of a named region (``"plate"``: the cells in no named region)."""

    _what = "a region"

    def mask(self, result) -> np.ndarray:
        mesh, _ = _parts(result)
        m = np.zeros(mesh.n_nodes, dtype=bool)
        for layout, cells in mesh.region_cells(self.name).items():
            m[mesh.cells[layout][np.asarray(cells)].ravel()] = True
        return m

    def describe(self) -> str:
        return f"in region {self.name!r}"


class InCircle(Zone):
    """The nodes within ``radius`` of ``centre`` (a round window)."""

    def __init__(self, centre, radius: float):
        self.centre = _xy(centre, "the window's centre")
        self.radius = _length(radius, "the window's radius")

    def mask(self, result) -> np.ndarray:
        mesh, _ = _parts(result)
        d = mesh.nodes - self.centre
        return d[:, 0] ** 2 + d[:, 1] ** 2 <= self.radius ** 2 * (1 + 1e-12)

    def describe(self) -> str:
        return f"within {self.radius:g} of {fmt_point(self.centre)}"

    def __repr__(self) -> str:
        return f"InCircle({fmt_point(self.centre)}, {self.radius:g})"


class InBox(Zone):
    """The nodes inside the box from ``lower_left`` (x0, y0) to ``upper_right`` (x1, y1), edges included."""

    def __init__(self, lower_left, upper_right):
        self.lo = _xy(lower_left, "the box's lower-left corner")
        self.hi = _xy(upper_right, "the box's upper-right corner")
        if np.any(self.hi <= self.lo):
            raise InputError(f"the box's upper-right corner {fmt_point(self.hi)} must lie above and right of its "
                             f"lower-left corner {fmt_point(self.lo)}")

    def mask(self, result) -> np.ndarray:
        mesh, _ = _parts(result)
        x, y = mesh.nodes[:, 0], mesh.nodes[:, 1]
        tol = 1e-12 * max(mesh.size(), 1e-300)
        return (x >= self.lo[0] - tol) & (x <= self.hi[0] + tol) & (y >= self.lo[1] - tol) & (y <= self.hi[1] + tol)

    def describe(self) -> str:
        return f"in the box {fmt_point(self.lo)} to {fmt_point(self.hi)}"

    def __repr__(self) -> str:
        return f"InBox({fmt_point(self.lo)}, {fmt_point(self.hi)})"


class Near(Zone):
    """The nodes within ``radius`` of a named point (its node, or the centroid of its nodes) or of (x, y)."""

    def __init__(self, point, radius: float):
        if isinstance(point, str):
            if not point:
                raise InputError("Near needs a point name or coordinates (x, y), got ''")
            self.point: str | np.ndarray = point
        else:
            self.point = _xy(point, "the point")
        self.radius = _length(radius, "the radius around the point")

    def centre(self, mesh) -> np.ndarray:
        if isinstance(self.point, str):
            if self.point not in mesh.node_sets:
                raise unknown_name("point", self.point, mesh.names()["points"] + mesh.names()["edges"])
            return mesh.nodes[np.asarray(mesh.node_sets[self.point])].mean(axis=0)
        return self.point

    def mask(self, result) -> np.ndarray:
        mesh, _ = _parts(result)
        d = mesh.nodes - self.centre(mesh)
        return d[:, 0] ** 2 + d[:, 1] ** 2 <= self.radius ** 2 * (1 + 1e-12)

    def describe(self) -> str:
        p = repr(self.point) if isinstance(self.point, str) else fmt_point(self.point)
        return f"within {self.radius:g} of {p}"

    def __repr__(self) -> str:
        p = repr(self.point) if isinstance(self.point, str) else fmt_point(self.point)
        return f"Near({p}, {self.radius:g})"


class Outside(Near):
    """Everywhere except within ``radius`` of a point: the complement of :class:`Near`.

    Reads a peak clear of one point that makes a peak of its own, not of the part: where an interface
    between regions meets a free edge, a sharp re-entrant corner (their stress is singular, it grows
    without limit as the mesh is refined), or any point a check must leave out. Combine with ``&`` to
    leave out several points, or to read only one edge or region clear of the point.

    Parameters
    ----------
    point : str or (float, float)
        A named point of the mesh (its node, or the centroid of its nodes) or coordinates (x, y).
    radius : float
        Leave out the nodes within this distance of the point (common practice: a few element sizes,
        St Venant's principle; the point's own field fades within a few of them).

    Raises
    ------
    InputError
        Coordinates that are not two finite numbers, a radius that is not a positive length.
    NameNotFoundError
        On use, a point name the mesh does not have.

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(10.0, 2.0, 10, 2, "Q4")
    >>> zone = Outside((0.0, 0.0), 1.5)
    >>> zone
    Outside((0, 0), 1.5)
    >>> zone.describe()
    'farther than 1.5 from (0, 0)'
    >>> int(zone.mask(m).sum()), m.n_nodes
    (29, 33)
    """

    def __init__(self, point: str | tuple[float, float], radius: float):
        super().__init__(point, radius)

    def mask(self, result) -> np.ndarray:
        return ~super().mask(result)

    def describe(self) -> str:
        p = repr(self.point) if isinstance(self.point, str) else fmt_point(self.point)
        return f"farther than {self.radius:g} from {p}"

    def __repr__(self) -> str:
        return "Outside" + super().__repr__()[len("Near"):]


class Away(Zone):
    """Everywhere except near the idealised supports and concentrated loads.

    Parameters
    ----------
    distance : float, optional
        Leave out the nodes within this distance of a support's or concentrated load's nodes (to leave
        out any other point, e.g. a singular one, use :class:`Outside`). Default:
        each idealisation's own size, the larger side of the bounding box of its nodes (a clamped edge
        disturbs the stress over about its own length, St Venant's principle; common practice), and
        for a single node (a point support or point force, whose singular field has no length of its
        own) ``NEAR_ELEMENTS`` local element sizes. Give a distance when you know the part better.
    supports, loads : bool
        Which idealisations to keep away from (both by default). Symmetry planes are exact, not
        idealisations, and never count.
    """

    def __init__(self, distance: float | None = None, *, supports: bool = True, loads: bool = True):
        self.distance = None if distance is None else _length(distance, "the distance from supports and loads")
        self.supports, self.loads = bool(supports), bool(loads)
        if not (self.supports or self.loads):
            raise InputError("Away needs supports=True, loads=True or both: keep away from what?")

    def mask(self, result) -> np.ndarray:
        mesh, model = _parts(result)
        if model is None:
            raise InputError("Away(...) is read on a result or a model (it needs the supports and loads)")
        near, _ = near_idealised(mesh, model, np.arange(mesh.n_nodes),
                                 distance="size" if self.distance is None else self.distance,
                                 supports=self.supports, loads=self.loads)
        return ~near

    def describe(self) -> str:
        what = " and ".join(w for w, on in (("supports", self.supports), ("concentrated loads", self.loads)) if on)
        if self.distance is None:
            return f"away from {what} (beyond the size of each)"
        return f"at least {self.distance:g} from {what}"

    def __repr__(self) -> str:
        extra = "".join(f", {k}=False" for k, on in (("supports", self.supports), ("loads", self.loads)) if not on)
        return f"Away({'' if self.distance is None else format(self.distance, 'g')}{extra})"


def as_zone(where, mesh=None) -> Zone | None:
    """A zone from what a user gave: None (everywhere), a Zone, or the name of an edge or region.

    Raises
    ------
    NameNotFoundError
        A name that is neither an edge nor a region of the mesh (the message lists both), or a named
        point without a radius.
    """
    if where is None or isinstance(where, Zone):
        return where
    if isinstance(where, str):
        if mesh is None:
            return OnEdge(where)
        if where in mesh.edge_sets:
            return OnEdge(where)
        if where in mesh.region_names():
            return InRegion(where)
        if where in mesh.node_sets:
            raise NameNotFoundError(f"{where!r} is a named point: give the neighbourhood to search, e.g. "
                                    f"where=planar.Near({where!r}, radius)")
        names = mesh.names()
        raise NameNotFoundError(f"no edge or region named {where!r}; edges: {choices(names['edges'])}; regions: "
                                f"{choices(names['regions'])} (or give a zone: OnEdge, InRegion, InCircle, InBox, "
                                "Near, Outside, Away)")
    raise InputError(f"where= takes the name of an edge or region, or a zone (OnEdge, InRegion, InCircle, InBox, "
                     f"Near, Outside, Away), got {type(where).__name__}")


# ---------------------------------------------------------------------------- idealisations
#: plain words for the supports and loads a note names (a class not listed: its name in lower case)
_WORDS = {"Fixed": "clamp", "Roller": "roller", "Symmetry": "symmetry line", "Prescribed": "prescribed motion",
          "PointForce": "point force"}


def plain_name(thing, mesh=None) -> str:
    """A support, pin or load in a few plain words for notes and tables (``"clamp on edge 'left'"``), no code."""
    if type(thing).__name__ == "Pin":
        return f"pin '{thing.name}' ({thing.tie} tie)"
    word = _WORDS.get(type(thing).__name__) or (getattr(thing, "name", "") or type(thing).__name__).lower()
    where = getattr(thing, "where", None)
    if isinstance(where, str):
        kind = "edge" if mesh is not None and where in mesh.edge_sets else "point"
        return f"{word} {'on' if kind == 'edge' else 'at'} {kind} '{where}'"
    if where is not None:
        return f"{word} at {fmt_point(where)}"
    return word


def idealisations(mesh, model, *, supports: bool = True, loads: bool = True) -> list[tuple[str, np.ndarray]]:
    """The idealised supports and concentrated loads of a model: (description, node ids) pairs.

    Symmetry planes are exact and not listed. Concentrated loads are listed once, from every load case.
    """
    out: list[tuple[str, np.ndarray]] = []
    if supports:
        for s in getattr(model, "supports", ()):
            test = getattr(s, "is_idealised", None)
            if not (test(mesh) if test is not None else getattr(s, "idealised", True)):
                continue
            try:
                nodes = np.asarray(s.nodes(mesh), dtype=np.int64).ravel()
            except Exception:  # noqa: BLE001 - a support that cannot name its nodes is not flagged
                continue
            if nodes.size:
                out.append((f"the {plain_name(s, mesh)}", nodes))
        fastened = getattr(model, "joint_pins", None) or {}  # a joint layer's hole pins: its fasteners load them
        for p in getattr(model, "pins", ()):  # a pin's tie is an idealisation of the fit of the pin in its hole
            if getattr(p, "tie", None) == "contact":  # bearing contact: the hole bears only where it touches
                continue
            free = getattr(p, "tie", None) == "spreading" and not np.any(getattr(p, "held", True))
            if free and p.name not in fastened and not any(
                    getattr(load, "pin", None) == p.name and np.any(load.vector())
                    for items in getattr(model, "cases", {}).values() for load in items if hasattr(load, "vector")):
                continue  # a free spreading pin that no case or fastener loads exerts nothing: it reads the hole's motion
            out.append((f"the {plain_name(p, mesh)}", np.asarray(mesh.nodes_of(p.edge), dtype=np.int64).ravel()))
    if loads:
        seen = set()
        for case, items in getattr(model, "cases", {}).items():
            for load in items:
                get = getattr(load, "concentrated_nodes", None)
                nodes = np.asarray(get(mesh) if get is not None else [], dtype=np.int64).ravel()
                key = repr(load)
                if nodes.size and key not in seen:
                    seen.add(key)
                    out.append((f"the {plain_name(load, mesh)}", nodes))
    return out


def node_sizes(mesh) -> np.ndarray:
    """The local element size at every node: the largest square root of the area of the cells at it.

    Cached on the mesh. Cell areas from the corner polygon (the first three or four nodes).
    """
    cached = getattr(mesh, "_planar_node_sizes", None)
    if cached is not None and cached.shape[0] == mesh.n_nodes:
        return cached
    h = np.zeros(mesh.n_nodes)
    for layout, conn in mesh.cells.items():
        conn = np.asarray(conn)
        k = _corner_count(layout, conn.shape[1])  # from the element type, so a plugin's layout counts too
        p = mesh.nodes[conn[:, :k]]
        x, y = p[..., 0], p[..., 1]
        area = 0.5 * np.abs(np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1))
        size = np.sqrt(area)
        np.maximum.at(h, conn.ravel(), np.repeat(size, conn.shape[1]))
    try:
        object.__setattr__(mesh, "_planar_node_sizes", h)
    except (AttributeError, TypeError):
        pass
    return h


def near_idealised(mesh, model, nodes, *, distance: float | str | None = None, supports: bool = True,
                   loads: bool = True) -> tuple[np.ndarray, list[str]]:
    """Which of ``nodes`` lie next to an idealised support or concentrated load, and which one.

    ``distance``: None, within ``NEAR_ELEMENTS`` local element sizes of the node (where a peak made
    by the idealisation sits); a number, within that distance; ``"size"``, within each
    idealisation's own size (see :class:`Away`).

    Returns
    -------
    near : ndarray of bool, shape (len(nodes),)
    reasons : list of str
        For each node, the description of the nearest idealisation it is next to (``""`` if none).
    """
    return _near(mesh, _idealised_trees(mesh, model, supports=supports, loads=loads), nodes, distance)


def _idealised_trees(mesh, model, *, supports: bool = True, loads: bool = True,
                     found: list[tuple[str, np.ndarray]] | None = None) -> list[tuple[str, Any, float]]:
    """(description, search tree of its nodes, its own size) of each idealisation, for :func:`_near`.

    Built once by a caller that asks about many batches of nodes (:func:`idealised_reason` keeps them
    on the result's assembly, :func:`_prepared`). ``found``: the idealisations, when already listed.
    """
    from scipy.spatial import cKDTree

    out = []
    if found is None:
        found = idealisations(mesh, model, supports=supports, loads=loads)
    for why, ids in found:
        own = mesh.nodes[np.unique(ids)]
        x, y = own[:, 0], own[:, 1]
        out.append((why, cKDTree(own), max(float(x.max() - x.min()), float(y.max() - y.min()))))
    return out


def _near_index(mesh, trees, nodes, distance) -> np.ndarray:
    """For each of ``nodes``: the index in ``trees`` of the idealisation that comes nearest relative to
    its limit, when the node lies within that limit; -1 when it lies next to none (see :func:`_near`)."""
    nodes = np.asarray(nodes, dtype=np.int64).ravel()
    if not trees or nodes.size == 0:
        return np.full(nodes.size, -1, dtype=np.int64)
    pts = mesh.nodes[nodes]
    local = NEAR_ELEMENTS * node_sizes(mesh)[nodes]
    best = np.full(nodes.size, np.inf)  # distance over its limit, to the idealisation that comes nearest
    which = np.full(nodes.size, -1, dtype=np.int64)
    for k, (_, tree, size) in enumerate(trees):
        d, _ = tree.query(pts)
        if distance is None:
            limit = local
        elif isinstance(distance, str):
            limit = np.maximum(size, local)
        else:
            limit = np.full(nodes.size, float(distance))
        ratio = d / np.maximum(limit, 1e-300)
        better = ratio < best
        best[better], which[better] = ratio[better], k
    return np.where(best <= 1 + 1e-9, which, -1)


def _near(mesh, trees, nodes, distance) -> tuple[np.ndarray, list[str]]:
    """:func:`near_idealised` on idealisations prepared by :func:`_idealised_trees`."""
    which = _near_index(mesh, trees, nodes, distance)
    words = np.array([why for why, _, _ in trees] + [""], dtype=object)  # index -1: none near
    return which >= 0, words[which].tolist()


class _Idealised:
    """The idealisations of a model on a mesh, prepared once for the many peak queries of a result.

    Holds the search trees (:func:`_idealised_trees`) and, node by node as they are asked about, which
    idealisation each node lies next to (within ``NEAR_ELEMENTS`` local element sizes, and within each
    idealisation's own size): a node is measured once, however many fields and zones ask about it.
    """

    def __init__(self, mesh, trees: list[tuple[str, Any, float]]):
        self.mesh, self.trees = mesh, trees
        self.words = [why for why, _, _ in trees]
        self._which: dict[Any, np.ndarray] = {}
        self._used: np.ndarray | None = None
        self._around: dict[bytes, np.ndarray] = {}

    def used(self) -> np.ndarray:
        """The nodes of cells (:meth:`Mesh.used_nodes`), found once."""
        if self._used is None:
            self._used = self.mesh.used_nodes()
        return self._used

    def around(self, ids: np.ndarray) -> np.ndarray:
        """The nodes within a zone's own size of the zone's nodes ``ids`` (its extent, or its largest local
        element size when larger), for :func:`idealised_reason`; kept for the last few zones asked about."""
        key = np.asarray(ids, dtype=np.int64).tobytes()
        got = self._around.get(key)
        if got is None:
            from scipy.spatial import cKDTree

            pz = self.mesh.nodes[ids]
            reach = max(float(np.ptp(pz[:, 0])), float(np.ptp(pz[:, 1])), float(node_sizes(self.mesh)[ids].max()))
            d, _ = cKDTree(pz).query(self.mesh.nodes, distance_upper_bound=reach * (1 + 1e-9))
            got = np.isfinite(d)
            if len(self._around) >= _KEEP:
                self._around.pop(next(iter(self._around)))
            self._around[key] = got
        return got

    def which(self, nodes, distance: str | None) -> np.ndarray:
        """:func:`_near_index` for ``distance`` None or ``"size"``, from what was measured before."""
        nodes = np.asarray(nodes, dtype=np.int64).ravel()
        known = self._which.get(distance)
        if known is None:
            known = self._which[distance] = np.full(self.mesh.n_nodes, -2, dtype=np.int64)  # -2: not measured
        new = nodes[known[nodes] == -2]
        if new.size:
            known[new] = _near_index(self.mesh, self.trees, new, distance)
        return known[nodes]

    def near(self, nodes, distance: str | None) -> np.ndarray:
        """Which of ``nodes`` lie next to an idealisation (see :func:`near_idealised`)."""
        return self.which(nodes, distance) >= 0


#: how many prepared sets of idealisations a result's assembly keeps (one per state of the model)
_KEEP = 4


def _model_key(mesh, model) -> tuple:
    """What :func:`idealisations` reads of ``model``, in a form quick to compare: each support, pin and
    load (kind, identity and repr), the pins a joint layer loads, and the mesh's node count."""
    def each(items):
        return tuple((type(o).__name__, id(o), repr(o)) for o in items)

    cases = getattr(model, "cases", {}) or {}
    return (mesh.n_nodes, each(getattr(model, "supports", ())), each(getattr(model, "pins", ())),
            tuple(sorted(map(str, getattr(model, "joint_pins", None) or {}))),
            tuple((str(case), each(items)) for case, items in cases.items()))


def _prepared(result, mesh, model) -> _Idealised:
    """The :class:`_Idealised` of ``model`` on ``mesh``, kept on the result's assembly (or the mesh).

    Kept under what the model's supports, pins and loads are (:func:`_model_key`), so one added to the
    model after the solve is seen as before; the trees and the nodes measured are reused otherwise.
    """
    key = _model_key(mesh, model)
    owner = getattr(result, "assembly", None)
    if owner is None or getattr(owner, "mesh", mesh) is not mesh:
        owner = mesh
    memo = getattr(owner, "_planar_idealised", None)
    if memo is None:
        memo = {}
        try:
            object.__setattr__(owner, "_planar_idealised", memo)
        except (AttributeError, TypeError):  # an owner that keeps no attribute: prepared each time
            pass
    got = memo.get(key)
    if got is None:
        got = _Idealised(mesh, _idealised_trees(mesh, model))
        if len(memo) >= _KEEP:
            memo.pop(next(iter(memo)))
        memo[key] = got
    return got


def _top_away(v: np.ndarray, ok: np.ndarray, prep: _Idealised) -> float:
    """The largest of ``v`` over ``ok`` away from every idealisation (beyond each one's own size, what
    ``where=Away()`` reads): NaN when every such node lies next to one (or holds no finite value and
    one holds NaN). The largest values are taken a growing batch at a time (partitioned, not sorted),
    so only the few next to an idealisation are measured; those measured before to lie next to one are
    passed over."""
    known = prep._which.get("size")
    rest = np.flatnonzero(ok if known is None else ok & (known < 0))
    vals = -v[rest]  # NaN sorts last, as in a sort
    k = 256
    while True:
        chunk = rest if k >= rest.size else rest[np.argpartition(vals, k - 1)[:k]]
        far = chunk[~prep.near(chunk, "size")]
        if far.size:
            fv = v[far]
            fin = fv[~np.isnan(fv)]
            return float(fin.max()) if fin.size else float("nan")
        if k >= rest.size:
            return float("nan")
        k *= 4


def idealised_reason(result, node: int, values: np.ndarray, mask: np.ndarray | None = None, *,
                     absolute: bool = False, sign_of_values: float = 1.0) -> str:
    """Why a peak at ``node`` is not the part's own, or ``""``.

    The peak is flagged when ``node`` lies next to an idealised support or concentrated load and its
    value exceeds the largest value of ``values`` (within ``mask``; when the zone lies wholly next to
    idealisations, in the part within the zone's own size of it, or else in the whole part) away from
    every idealisation by more than ``DOMINANCE``: the peak is then made by the idealisation (a
    clamped hole, a point force).
    ``values`` are read largest-first; for a smallest value pass the negated field and
    ``sign_of_values=-1`` (the message then quotes values with their own sign).
    """
    mesh, model = getattr(result, "mesh", None), getattr(result, "model", None)
    if mesh is None or model is None:
        return ""
    prep = _prepared(result, mesh, model)  # trees and the nodes measured, kept once per assembly
    k_node = int(prep.which([node], None)[0])
    if k_node < 0:
        return ""
    why = prep.words[k_node]
    v = np.abs(values) if absolute else np.asarray(values, dtype=float)
    peak = float(v[node])
    used = np.isfinite(v) & prep.used()
    zone = used if mask is None else np.isfinite(v) & mask
    top = float("nan")
    # within the zone; when the zone lies wholly next to idealisations (e.g. the supported edge itself,
    # a clamped hole), against the part around it (within the zone's own size), so a uniform field is not
    # flagged on its own support while a clamped hole's peak, higher than the field round it, is, even
    # when the part peaks higher elsewhere; failing that, against the rest of the part
    steps = [zone]
    if not np.array_equal(zone, used):
        ids = np.flatnonzero(zone)
        if ids.size:
            steps.append(used & np.isfinite(v) & prep.around(ids))
        steps.append(used)
    for k_step, ok in enumerate(steps):
        # the candidates that could beat the peak less DOMINANCE: only they need the distance test
        cand = np.flatnonzero(ok & (v >= peak - DOMINANCE * abs(peak)))
        if not np.all(prep.near(cand, None)):
            return ""  # as large a value away from every idealisation: the field's own level
        top = _top_away(v, ok, prep)  # the largest value away from every idealisation (what where=Away() reads)
        if np.isfinite(top):
            break
        if k_step == 1 and len(steps) == 3 and not np.all(prep.near(np.flatnonzero(ok), None)):
            break  # the part round a wholly held zone reads less than its peak: the idealisation's peak
    sign = -1.0 if sign_of_values < 0 else 1.0
    other = (f"; the {'largest' if sign > 0 else 'smallest'} value away from supports and concentrated loads is "
             f"{sign * top:.6g} (where=Away())" if np.isfinite(top) else "")
    return (f"next to {why}: a peak there is made by the idealisation (how the part is held or loaded), "
            f"not by the part{other}; read the feature under check with where= (e.g. where=Away() or the "
            "feature's edge)")
