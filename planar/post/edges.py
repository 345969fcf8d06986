"""Stresses along a named edge: tangential, normal and shear in the edge's own frame, by arc length and angle.

The hoop stress round a hole, plotted against the angle, is what a stress engineer reads at a hole;
this module gives it for any named edge set of a mesh. The edge's segments are walked into ordered
chains (an edge set may be one open chain, several pieces, or a closed loop), the recovered nodal
stresses are read at the edge's nodes (and, if asked, between them with the edge's own shape
functions, so a curved quadratic side is followed), and turned into the edge's frame:

- ``sigma_t``: the normal stress along the edge (tangential; the hoop stress on a hole's edge);
- ``sigma_n``: the normal stress across the edge (zero on a free edge, minus the pressure under a
  pressure; common practice, equilibrium of the boundary);
- ``tau_nt``: the shear stress on the edge (zero on a free edge);
- ``von_mises``.

On a circular arc (a circle fitted to the edge's points, accepted when no point is off it by more
than 1e-4 of the radius) or when a centre is given, the angle theta about the centre comes too.

Examples
--------
>>> import planar
>>> from planar.post.edges import edge_stresses
>>> mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
>>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
>>> _ = model.add_support(planar.Roller("left", fixed="x"))
>>> _ = model.add_support(planar.Roller("corner_00", fixed="y"))
>>> _ = model.add_load(planar.Traction("right", tx=50.0), case="pull")
>>> es = edge_stresses(planar.solve(model)["pull"], "top")
>>> round(float(es.sigma_t.min()), 6), round(float(es.sigma_t.max()), 6), es.stress_unit
(50.0, 50.0, 'MPa')
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, NamedTuple, Sequence

import numpy as np

from ..core.elements import line_shape
from ..core.errors import InputError, MeshError, fmt_point
from ..core.fields import as_centre
from ..core.quadrature import gauss_line
from ..core.result import as_result, stress_measures
from ..core.units import length_unit, stress_unit
from ..core._circle import fit_circle  # re-exported: planar.post.edges.fit_circle
from .checks import _check_recovery

__all__ = ["EdgeStresses", "EdgePeak", "edge_stresses", "plot_edge_stresses", "EDGE_FIELDS", "fit_circle"]

#: the components an EdgeStresses holds, with their labels
EDGE_FIELDS = {"sigma_t": r"tangential $\sigma_t$", "sigma_n": r"normal $\sigma_n$",
               "tau_nt": r"shear $\tau_{nt}$", "von_mises": "von Mises"}
#: a circle fitted to an edge is accepted when no point is farther from it than this fraction of the radius
CIRCLE_TOLERANCE = 1e-4
#: an edge turning by more than this many degrees at a node is at a corner there: the node is listed once
#: for each side, in that side's frame (a hole of 12 straight element sides turns 30 degrees at a node)
CORNER_TURN = 40.0


class _EdgePeakTuple(NamedTuple):
    value: float
    s: float
    point: tuple[float, float]
    theta: float
    piece: int
    node: int


class EdgePeak(_EdgePeakTuple):
    """The largest value of a component along an edge (unpacks as its six numbers, as before).

    Attributes
    ----------
    value : float
    s : float
        Arc length from the start of its piece.
    point : (float, float)
    theta : float
        Angle about the centre in degrees (NaN when the edge has no centre).
    piece : int
    node : int
        Mesh node there (-1 between nodes).
    note : str
        Why the mesh does not resolve the peak, in short (the ``"coarse-peak"`` or ``"linear-peak"``
        judgement, the same as :meth:`planar.Result.max` makes); ``""`` when it does or was not judged.
    """

    def __new__(cls, value: float, s: float, point: tuple[float, float], theta: float, piece: int, node: int,
                note: str = ""):
        self = super().__new__(cls, value, s, point, theta, piece, node)
        self.note = note
        return self

    def __getnewargs__(self):
        return (*tuple(self), self.note)

    def __repr__(self) -> str:  # no NaN in printed text: an edge without a centre has no angle
        th = "no centre" if math.isnan(self.theta) else repr(self.theta)
        note = f", note={self.note!r}" if self.note else ""
        return (f"EdgePeak(value={self.value!r}, s={self.s!r}, point={self.point!r}, theta={th}, "
                f"piece={self.piece!r}, node={self.node!r}{note})")


@dataclass
class EdgeStresses:
    """Stresses along a named edge, in the edge's frame (:func:`edge_stresses`).

    Attributes
    ----------
    edge, case, recovery : str
    units : str
        The model's units text; ``stress_unit`` and ``length_unit`` are read from it.
    s : ndarray, shape (p,)
        Arc length from the start of each piece (it restarts at 0 on every piece).
    points : ndarray, shape (p, 2)
    piece : ndarray of int, shape (p,)
        Which piece (chain) each point is on; ``closed[k]`` tells whether piece k is a closed loop
        (which then ends at its first point again, at s = its perimeter).
    node : ndarray of int, shape (p,)
        The mesh node at each point, -1 between nodes.
    tangent, normal : ndarray, shape (p, 2)
        Unit tangent (the direction of increasing s) and unit outward normal (away from the
        material).
    sigma_t, sigma_n, tau_nt, von_mises : ndarray, shape (p,)
        tau_nt = t . sigma . n, so its sign follows the direction of s.
    centre : (float, float) or None
    radius : float or None
        Of the fitted circle (None when the edge is not a circular arc).
    theta : ndarray, shape (p,), or None
        Angle about the centre in degrees, counter-clockwise from +x, continuous along each piece
        (a closed loop from 0 to 360; an open arc across the +x direction from a negative angle, e.g. a
        half model's hole from -90 to 90).
    circle_residual : float or None
        Largest distance of a point from the fitted circle divided by its radius.
    warnings : list of PlanarWarning
        What was found doubtful about these stresses (e.g. a peak the mesh does not resolve).
    result : Result or None
        The load case read; :meth:`peak` judges its peak on it as :meth:`planar.Result.max` does.
    """

    edge: str
    case: str
    recovery: str
    units: str
    s: np.ndarray
    points: np.ndarray
    piece: np.ndarray
    node: np.ndarray
    tangent: np.ndarray
    normal: np.ndarray
    sigma_t: np.ndarray
    sigma_n: np.ndarray
    tau_nt: np.ndarray
    von_mises: np.ndarray
    closed: tuple[bool, ...]
    centre: tuple[float, float] | None = None
    radius: float | None = None
    theta: np.ndarray | None = None
    circle_residual: float | None = None
    warnings: list = field(default_factory=list)
    #: the load case read (to judge a peak the way :meth:`planar.Result.max` does); None: not judged
    result: Any = field(default=None, repr=False, compare=False)

    # ------------------------------------------------------------------ units
    @property
    def stress_unit(self) -> str:
        return stress_unit(self.units)

    @property
    def length_unit(self) -> str:
        return length_unit(self.units)

    @property
    def n_pieces(self) -> int:
        return len(self.closed)

    def __getitem__(self, name: str) -> np.ndarray:
        if name not in EDGE_FIELDS:
            from ..core.errors import unknown_name

            raise unknown_name("edge stress component", name, EDGE_FIELDS)
        return getattr(self, name)

    # ------------------------------------------------------------------ queries
    def peak(self, component: str = "sigma_t", *, absolute: bool = True) -> EdgePeak:
        """The largest value of a component along the edge (by magnitude unless ``absolute=False``).

        Parameters
        ----------
        component : {"sigma_t", "sigma_n", "tau_nt", "von_mises"}
        absolute : bool, default True
            The largest magnitude (the value keeps its sign) instead of the largest signed value.

        Returns
        -------
        EdgePeak
            Its ``note`` says, in short, when the mesh does not resolve the peak.

        Warns
        -----
        DiscretisationWarning
            ``"coarse-peak"`` or ``"linear-peak"``, as :meth:`planar.Result.max` would on the same
            node (kept in ``result.warnings`` and this object's ``warnings``; not told again when the
            load case already holds that warning for that node).

        Notes
        -----
        The peak is judged in the nodal field that is the component at the edge: on a circular edge
        the polar stress about its centre (``sigma_theta`` for ``sigma_t``, ``sigma_r`` for
        ``sigma_n``, ``tau_r_theta`` for ``tau_nt``); on another edge the tangential stress by the
        principal stress of its sign (on a free edge it is one, common practice), and von Mises as is.
        A normal or shear stress on an edge that is not an arc is not judged.
        """
        pk = self._find(component, absolute)
        return EdgePeak(*pk, note=self._judge(component, pk, stacklevel=2))

    def _find(self, component: str, absolute: bool) -> EdgePeak:
        v = self[component]
        i = int(np.argmax(np.abs(v) if absolute else v))
        th = float(self.theta[i]) if self.theta is not None else math.nan
        return EdgePeak(float(v[i]), float(self.s[i]), (float(self.points[i, 0]), float(self.points[i, 1])), th,
                        int(self.piece[i]), int(self.node[i]))

    def _judge(self, component: str, pk: EdgePeak, *, stacklevel: int = 2) -> str:
        """The short note of the peak-resolution checks of :meth:`planar.Result.max` on ``pk`` (warning once);
        ``stacklevel`` counted from the caller of this method (:func:`planar.post._edge_peak.judge`)."""
        from ._edge_peak import judge

        return judge(self, component, pk, stacklevel=stacklevel + 1)

    def as_dict(self) -> dict[str, Any]:
        """The edge stresses as plain numbers and lists (for JSON), units stated."""
        from .files import json_safe

        pieces = []
        for k in range(self.n_pieces):
            sel = self.piece == k
            row = {"closed": bool(self.closed[k]), "s": self.s[sel].tolist(), "x": self.points[sel, 0].tolist(),
                   "y": self.points[sel, 1].tolist(), "node": self.node[sel].tolist()}
            if self.theta is not None:
                row["theta"] = self.theta[sel].tolist()
            for c in EDGE_FIELDS:
                row[c] = self[c][sel].tolist()
            pieces.append(row)
        pk = self._find("sigma_t", True)
        return json_safe({
            "edge": self.edge, "case": self.case, "recovery": self.recovery,
            "units": {"length": self.length_unit, "stress": self.stress_unit, "angle": "deg", "model": self.units},
            "centre": None if self.centre is None else list(self.centre), "radius": self.radius,
            "circle_residual": self.circle_residual,
            "peak_sigma_t": {"value": pk.value, "s": pk.s, "point": list(pk.point),
                             "theta": None if self.theta is None else pk.theta},
            "pieces": pieces, "warnings": [w.as_dict() for w in self.warnings],
        })

    def table(self, *, max_rows: int | None = None) -> str:
        """A plain-text table: piece, s, x, y, theta (when known) and the four components, with units."""
        lu, su = self.length_unit, self.stress_unit

        def unit(u):
            return f" [{u}]" if u else ""

        head = ["piece", f"s{unit(lu)}", f"x{unit(lu)}", f"y{unit(lu)}"]
        cols = [self.piece, self.s, self.points[:, 0], self.points[:, 1]]
        if self.theta is not None:
            head.append("theta [deg]")
            cols.append(self.theta)
        for c in EDGE_FIELDS:
            head.append(f"{c}{unit(su)}")
            cols.append(self[c])
        rows = np.arange(self.s.size)
        if max_rows is not None and rows.size > max_rows:
            rows = np.unique(np.linspace(0, rows.size - 1, max(int(max_rows), 2)).round().astype(int))
        text = [[str(int(cols[0][i]))] + [f"{float(col[i]):.6g}" for col in cols[1:]] for i in rows]
        w = [max(len(h), *(len(r[j]) for r in text)) for j, h in enumerate(head)]
        lines = [f"stresses along edge {self.edge!r}, load case {self.case!r} ({self.recovery} recovery)"]
        if self.centre is not None:
            lines.append(f"centre {fmt_point(self.centre)}" + (f", radius {self.radius:.6g}" if self.radius else ""))
        lines.append("  ".join(h.rjust(k) for h, k in zip(head, w)))
        lines += ["  ".join(c.rjust(k) for c, k in zip(r, w)) for r in text]
        if not lu:  # the model gave no units= (a stated system always has a length unit)
            lines.append("units not stated (consistent)")
        return "\n".join(lines)

    __str__ = table

    def plot(self, fields: Sequence[str] | str = ("sigma_t", "sigma_n", "tau_nt", "von_mises"), *,
             against: str | None = None, path=None, title: str | None = None, ax=None, lines=None):
        """Plot the components along the edge (:func:`plot_edge_stresses`)."""
        return plot_edge_stresses(self, fields, against=against, path=path, title=title, ax=ax, lines=lines)


# ---------------------------------------------------------------------------- geometry
def _chains(seg: np.ndarray, edge: str) -> list[tuple[np.ndarray, np.ndarray, bool]]:
    """Order the segments of an edge set into chains.

    Returns a list of (segment ids in walking order, forward, closed): ``forward[j]`` is True when
    the walk runs through segment j from its start node to its end node.
    """
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components, depth_first_order

    a, b = seg[:, 0].astype(np.int64), seg[:, 1].astype(np.int64)
    ends, inv = np.unique(np.concatenate([a, b]), return_inverse=True)
    ia, ib = inv[: a.size], inv[a.size:]
    deg = np.bincount(np.concatenate([ia, ib]), minlength=ends.size)
    if np.any(deg > 2):
        k = int(ends[np.argmax(deg)])
        raise InputError(f"edge set {edge!r} branches: {int(deg.max())} of its segments meet at node {k}; an edge "
                         "to walk along must be a chain or a loop (name each branch as its own edge set)")
    g = coo_matrix((np.ones(a.size), (ia, ib)), shape=(ends.size, ends.size)).tocsr()
    n_comp, label = connected_components(g, directed=False)
    key = np.minimum(ia, ib) * ends.size + np.maximum(ia, ib)
    order = np.argsort(key)
    out = []
    for c in range(n_comp):  # one pass per piece (a handful), each walked by scipy
        members = np.flatnonzero(label == c)
        tips = members[deg[members] == 1]
        closed = tips.size == 0
        start = int(tips.min()) if not closed else int(members.min())
        walk = depth_first_order(g, start, directed=False, return_predecessors=False)
        pairs = np.column_stack([walk[:-1], walk[1:]])
        if closed:
            pairs = np.vstack([pairs, [walk[-1], walk[0]]])
        want = np.minimum(pairs[:, 0], pairs[:, 1]) * ends.size + np.maximum(pairs[:, 0], pairs[:, 1])
        pos = np.minimum(np.searchsorted(key[order], want), key.size - 1)
        if not np.array_equal(key[order][pos], want) or (closed and pairs.shape[0] < 3):
            raise InputError(f"edge set {edge!r} has a piece that is not a simple chain or loop of segments")
        segs = order[pos]
        out.append((segs, ia[segs] == pairs[:, 0], bool(closed)))
    return out


def _sample(coords: np.ndarray, xi: np.ndarray, values: np.ndarray):
    """Points, tangents (not normalised), values and arc lengths from the start at parameters xi of segments.

    coords: (m, nn, 2); values: (m, nn, c); xi: (m, k) parameters on [-1, 1] (start -1, end +1).
    """
    nn = coords.shape[1]
    N, dN = line_shape(nn, xi.ravel())
    m, k = xi.shape
    N, dN = N.reshape(m, k, nn), dN.reshape(m, k, nn)
    x = np.einsum("mka,mai->mki", N, coords)
    tang = np.einsum("mka,mai->mki", dN, coords)
    v = np.einsum("mka,mac->mkc", N, values)
    # arc length from xi = -1 to each xi: Gauss on [-1, xi]
    rule = gauss_line(5)
    t = -1.0 + (xi[..., None] + 1.0) * 0.5 * (rule.points[:, 0] + 1.0)  # (m, k, q)
    _, dq = line_shape(nn, t.ravel())
    dq = dq.reshape(m, k, -1, nn)
    jac = np.linalg.norm(np.einsum("mkqa,mai->mkqi", dq, coords), axis=-1)
    arc = np.einsum("mkq,q->mk", jac, rule.weights) * 0.5 * (xi + 1.0)
    return x, tang, v, arc


def _unit(v: np.ndarray) -> np.ndarray:
    n = np.linalg.norm(v, axis=-1, keepdims=True)
    return v / np.where(n > 0, n, 1.0)


def _orient(chains, seg, x, centre):
    """Turn each chain so theta grows about the centre (when known), else so the material is on its left;
    start a closed loop at theta nearest 0 (when known), else at its leftmost node."""
    out = []
    for segs, fwd, closed in chains:
        a = np.where(fwd, seg[segs, 0], seg[segs, 1])  # walking-from node of each segment
        b = np.where(fwd, seg[segs, 1], seg[segs, 0])
        if centre is not None:
            pa, pb = x[a] - centre, x[b] - centre
            swept = np.arctan2(pa[:, 0] * pb[:, 1] - pa[:, 1] * pb[:, 0], np.einsum("ij,ij->i", pa, pb)).sum()
            turn = swept < 0
        else:
            turn = np.count_nonzero(fwd) < 0.5 * fwd.size  # the cells' own sides run with the material on the left
        if turn:
            segs, fwd, a = segs[::-1], ~fwd[::-1], b[::-1]
        if closed:
            if centre is not None:
                d = x[a] - centre
                key = np.mod(np.degrees(np.arctan2(d[:, 1], d[:, 0])), 360.0)
                key = np.where(key > 360.0 - 1e-9, 0.0, key)
                first = int(np.argmin(key))
            else:
                first = int(np.lexsort((x[a, 1], x[a, 0]))[0])
            segs, fwd = np.roll(segs, -first), np.roll(fwd, -first)
        out.append((segs, fwd, closed))
    return out


def _corners(t: np.ndarray, closed: bool) -> tuple[np.ndarray, bool]:
    """Which junctions of a chain (segment j to j + 1; and the last to the first when closed) are corners:
    the walking tangent (m, k, 2) turns there by more than :data:`CORNER_TURN` degrees."""
    u = _unit(t)
    c = math.cos(math.radians(CORNER_TURN))
    inner = np.einsum("ij,ij->i", u[1:, 0], u[:-1, -1]) < c
    wrap = bool(closed and float(np.dot(u[0, 0], u[-1, -1])) < c)
    return inner, wrap


def _frame_average(v: np.ndarray, closed: bool, corners: tuple[np.ndarray, bool] | None = None) -> np.ndarray:
    """Unit vectors (m, k, 2) along a chain, averaged where two segments meet (not at a corner, where
    each side keeps its own frame: a bisector frame would mix the two sides' stresses)."""
    v = _unit(v)
    inner, wrap = corners if corners is not None else (np.zeros(max(v.shape[0] - 1, 0), bool), False)
    if v.shape[0] > 1:
        mean = _unit(v[1:, 0] + v[:-1, -1])
        smooth = ~inner
        v[1:, 0][smooth] = mean[smooth]
        v[:-1, -1][smooth] = mean[smooth]
    if closed and not wrap:
        mean = _unit(v[0, 0] + v[-1, -1])
        v[0, 0] = v[-1, -1] = mean
    return v


def edge_stresses(result, edge: str, *, centre=None, recovery: str = "spr",
                  points_per_segment: int | None = None) -> EdgeStresses:
    """Stresses along a named edge in the edge's frame, by arc length and (on an arc) by angle.

    Parameters
    ----------
    result : Result
    edge : str
        Name of an edge set of the mesh (a hole's edge, a fillet, a side).
    centre : (float, float), optional
        Centre for the angle theta. By default a circle is fitted to the edge's points and used
        when every point lies on it within 1e-4 of the radius (a hole or a fillet arc).
    recovery : {"spr", "average"}
        Nodal stress recovery (:meth:`planar.Result.nodal_stress`).
    points_per_segment : int, optional
        Sample each segment at this many equally spaced points of its parameter (at least 2),
        interpolating the nodal stresses and following a curved quadratic side with the edge's
        shape functions. By default: the segment's nodes (ends, and the middle of a quadratic side).

    Returns
    -------
    EdgeStresses
        ``s``, ``points``, ``sigma_t``, ``sigma_n``, ``tau_nt``, ``von_mises`` (and ``theta``,
        ``centre``, ``radius`` on an arc), in the model's units.

    Raises
    ------
    InputError
        An unknown recovery, a bad ``centre`` or ``points_per_segment``, an edge set that branches.
    NameNotFoundError
        An edge name the mesh does not have (the message lists those it has).

    Notes
    -----
    The pieces of an edge set are ordered one by one: with a centre, each runs counter-clockwise
    about it (theta growing) and a closed loop starts nearest theta = 0; otherwise each runs with
    the material on its left (an outer boundary counter-clockwise) and a closed loop starts at its
    leftmost node. Where two segments meet, the frame is the mean of theirs (at a sharp corner, the
    bisector's, where the edge's own frame is not defined: read corners with care). The normal points
    out of the material; sigma_n and tau_nt are the traction on the edge, t = sigma . n (Cauchy),
    so on a free edge both vanish and sigma_t is the only stress (common practice).
    """
    result = as_result(result, "edge_stresses")
    _check_recovery(recovery)
    if points_per_segment is not None and (isinstance(points_per_segment, bool) or not isinstance(
            points_per_segment, (int, np.integer)) or points_per_segment < 2):
        raise InputError(f"points_per_segment must be a whole number of at least 2 (or None for the nodes), "
                         f"got {points_per_segment!r}")
    given = None if centre is None else as_centre(centre, "the angle along an edge")
    eg = result.assembly._edge_geometry(str(edge))  # segments turned counter-clockwise about their cells
    seg = np.asarray(eg.nodes, dtype=np.int64)
    if seg.shape[0] == 0:
        raise InputError(f"edge set {edge!r} has no segments; name an edge with at least one side of a cell")
    x = result.mesh.nodes
    ids = np.unique(seg)
    # the centre and the circle
    radius = residual = None
    if given is not None:
        d = np.hypot(*(x[ids] - given).T)
        r = float(d.mean())
        residual = float(np.abs(d - r).max() / r) if r > 0 else math.inf
        radius = r if residual <= CIRCLE_TOLERANCE else None
        c = given
    else:
        c, r, res = fit_circle(x[ids])
        length = float(eg.length())
        c = c if (math.isfinite(r) and res <= CIRCLE_TOLERANCE and length >= 0.01 * r) else None
        if c is not None:  # round-off of the fit (1e-12 of the radius) dropped, so a centre at 0 reads 0
            q = 1e-12 * r
            c, radius, residual = np.round(c / q) * q + 0.0, r, res
    # the walk
    chains = _orient(_chains(seg[:, :2], str(edge)), seg, x, c)
    nn = seg.shape[1]
    node_xi = np.array([-1.0, 1.0, 0.0][:nn])
    xi0 = np.sort(node_xi) if points_per_segment is None else np.linspace(-1.0, 1.0, int(points_per_segment))
    col = np.array([int(np.flatnonzero(np.isclose(node_xi, t))[0]) if np.any(np.isclose(node_xi, t)) else -1
                    for t in xi0])
    s_xy, szz = result.nodal_stress(recovery)
    vals = np.column_stack([s_xy, szz])
    parts = {k: [] for k in ("s", "x", "t", "n", "v", "node", "piece")}
    for k, (segs, fwd, closed) in enumerate(chains):
        coords = x[seg[segs]]
        xi = np.where(fwd[:, None], xi0[None, :], -xi0[None, :])
        pts, tang, v, arc = _sample(coords, xi, vals[seg[segs]])
        full = _sample(coords, np.ones((segs.size, 1)), vals[seg[segs]])[3][:, 0]
        arc = np.where(fwd[:, None], arc, full[:, None] - arc)
        s = np.concatenate([[0.0], np.cumsum(full)[:-1]])[:, None] + arc
        walk = np.where(fwd[:, None, None], tang, -tang)
        corners = _corners(walk, closed)
        t = _frame_average(walk, closed, corners)
        n = _frame_average(np.stack([tang[..., 1], -tang[..., 0]], axis=-1), closed, corners)
        cidx = np.where(fwd[:, None], col[None, :], col[::-1][None, :])  # xi0 is symmetric about 0
        node = np.where(cidx >= 0, np.take_along_axis(seg[segs], np.maximum(cidx, 0), axis=1), -1)
        keep = np.ones(xi.shape, bool)
        keep[:-1, -1] = corners[0]  # a node shared by two segments once; at a corner once per side
        for key, arr in (("s", s), ("x", pts), ("t", t), ("n", n), ("v", v), ("node", node)):
            parts[key].append(arr[keep])
        parts["piece"].append(np.full(int(keep.sum()), k))
    s = np.concatenate(parts["s"])
    pts = np.concatenate(parts["x"])
    t, n = np.concatenate(parts["t"]), np.concatenate(parts["n"])
    v = np.concatenate(parts["v"])
    piece = np.concatenate(parts["piece"])
    sxx, syy, txy = v[:, 0], v[:, 1], v[:, 2]
    sig_t = t[:, 0] ** 2 * sxx + t[:, 1] ** 2 * syy + 2.0 * t[:, 0] * t[:, 1] * txy
    sig_n = n[:, 0] ** 2 * sxx + n[:, 1] ** 2 * syy + 2.0 * n[:, 0] * n[:, 1] * txy
    tau = t[:, 0] * n[:, 0] * sxx + t[:, 1] * n[:, 1] * syy + (t[:, 0] * n[:, 1] + t[:, 1] * n[:, 0]) * txy
    vm = stress_measures(v[:, :3], v[:, 3])["von_mises"]
    theta = None
    if c is not None:
        d = pts - c
        raw = np.degrees(np.arctan2(d[:, 1], d[:, 0]))
        theta = np.empty_like(raw)
        for k in range(len(chains)):
            sel = piece == k
            th = np.unwrap(raw[sel], period=360.0)
            first = float(np.mod(th[0], 360.0))
            first = 0.0 if first > 360.0 - 1e-9 else first
            theta[sel] = th - th[0] + first
            if theta[sel].max() > 360.0 + 1e-9:  # an open arc across +x (a half model's hole): -90 to 90
                theta[sel] -= 360.0
    es = EdgeStresses(str(edge), result.case, recovery, str(getattr(result, "units", "") or ""), s, pts, piece,
                      np.concatenate(parts["node"]), t, n, sig_t, sig_n, tau, vm,
                      tuple(cl for _, _, cl in chains),
                      None if c is None else (float(c[0]), float(c[1])), radius, theta, residual, result=result)
    if given is not None and len(chains) > 1:
        # a centre given for one hole of a row of holes that share a name: the other holes' angles are
        # about a point that is not theirs
        on = []
        for k in range(len(chains)):
            d = np.hypot(*(pts[piece == k] - given).T)
            on.append(bool(d.mean() > 0 and np.abs(d - d.mean()).max() <= CIRCLE_TOLERANCE * d.mean()))
        if any(on) and not all(on):
            from ..core.errors import PlanarWarning, warn

            off = [k for k, ok in enumerate(on) if not ok]
            where = ", ".join(f"piece {k} from {fmt_point(pts[np.flatnonzero(piece == k)[0]])}" for k in off)
            warn(f"edge-centre: edge {str(edge)!r} has {len(chains)} pieces and the centre {fmt_point(given)} is the "
                 f"centre of {sum(on)} of them; the angles of the others ({where}) are about that centre, not "
                 "round their own arcs. Name each hole's edge on its own, or read theta only where es.piece is a "
                 "piece about the centre", "edge-centre", category=PlanarWarning, sink=es.warnings)
    return es


# ---------------------------------------------------------------------------- figure
def plot_edge_stresses(es: EdgeStresses, fields: Sequence[str] | str = ("sigma_t", "sigma_n", "tau_nt", "von_mises"),
                       *, against: str | None = None, path=None, title: str | None = None, ax=None,
                       lines=None):
    """Plot stresses along an edge against the angle about its centre or the arc length.

    Parameters
    ----------
    es : EdgeStresses
    fields : str or sequence of str
        Components among ``sigma_t``, ``sigma_n``, ``tau_nt``, ``von_mises``.
    against : {"angle", "arc_length"}, optional
        Default: the angle when the edge has a centre, else the arc length.
    path : path, optional
        Write the figure as PNG (atomically).
    title : str, optional
    ax : matplotlib Axes, optional
        Draw into these axes instead of a new figure.
    lines : mapping of str to float, optional
        Reference levels drawn as labelled dashed lines (e.g. ``{"3 S (Kirsch)": 300.0}``).

    Returns
    -------
    matplotlib.figure.Figure
    """
    from .plots import _fmt, finish_line_plot

    if not isinstance(es, EdgeStresses):
        raise InputError(f"plot_edge_stresses needs the EdgeStresses of edge_stresses(), got {type(es).__name__}")
    names = [fields] if isinstance(fields, str) else list(fields)
    for f in names:
        es[f]  # an unknown component is refused with the list
    if against is None:
        against = "angle" if es.theta is not None else "arc_length"
    if against not in ("angle", "arc_length"):
        raise InputError(f"against must be 'angle' or 'arc_length', got {against!r}")
    if against == "angle" and es.theta is None:
        raise InputError(f"edge {es.edge!r} is not a circular arc, so it has no angle: give centre=(x, y) to "
                         "edge_stresses, or plot against='arc_length'")
    su, lu = es.stress_unit, es.length_unit
    if ax is None:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        fig = Figure(figsize=(7.0, 3.8), dpi=120, layout="constrained")
        FigureCanvasAgg(fig)
        ax = fig.add_subplot()
    else:
        fig = ax.figure
    colours = {"sigma_t": "#1f5f8b", "sigma_n": "#b5651d", "tau_nt": "#5a7d2a", "von_mises": "#7b4f9d"}
    xs = es.theta if against == "angle" else es.s
    styles = ("-", "--", ":", "-.")  # an edge of several pieces (a row of holes of one name): one style each
    for f in names:
        for k in range(es.n_pieces):
            sel = es.piece == k
            ax.plot(xs[sel], es[f][sel], color=colours[f], lw=1.6, ls=styles[k % len(styles)],
                    label=EDGE_FIELDS[f] if k == 0 else None)
    if es.n_pieces > 1:
        for k in range(es.n_pieces):
            first = es.points[np.flatnonzero(es.piece == k)[0]]
            ax.plot([], [], color="0.3", lw=1.2, ls=styles[k % len(styles)],
                    label=f"piece {k}, from {fmt_point(first)}" + (f" {lu}" if lu else ""))
    for j, (lab, level) in enumerate((lines or {}).items()):
        ax.axhline(float(level), color="0.35", lw=1.0, ls=("--", ":", "-.")[j % 3],
                   label=f"{lab} ({_fmt(float(level))}{' ' + su if su else ''})")
    if against == "angle":
        ax.set_xlabel(rf"angle $\theta$ about {fmt_point(es.centre)}, counter-clockwise from +x [deg]")
    else:
        ax.set_xlabel(f"arc length along edge {es.edge!r}" + (f" [{lu}]" if lu else ""))
    ax.set_ylabel("stress" + (f" [{su}]" if su else ""))
    ax.axhline(0.0, color="0.6", lw=0.6)
    return finish_line_plot(fig, ax, title or f"stresses along edge {es.edge!r}, load case {es.case!r} "
                            f"({es.recovery} recovery)", path)
