"""The plate: an outline with cut-outs, added parts, regions, named points and symmetry cuts.

A :class:`Plate` is an immutable recipe. Every method checks its input at once (in plain numpy, so
a mistake is reported on the line that made it) and returns a new plate. The recipe is turned into a
gmsh (OpenCASCADE) model only when it is meshed, or when :meth:`Plate.names` or :meth:`Plate.area`
ask for the exact result.

Names
-----
Every boundary piece has a name. Unless the user names it:

- the sides of a rectangular outline are ``"bottom"``, ``"right"``, ``"top"``, ``"left"``; the sides
  of a polygon or outline are ``"edge_1"``, ``"edge_2"``, ... in the order they were given;
- cut-outs are ``"hole_1"``, ``"hole_2"``, ... (counting every hole, named or not, in order); added
  parts ``"union_k"``, removed parts ``"cutout_k"``, notches ``"notch_k"``, fillets ``"fillet_k"``;
- symmetry cuts are ``"symmetry_x"`` (the line x = x0, whose normal is x) and ``"symmetry_y"``.

Several pieces may share a name on purpose (for example a row of rivet holes): they form one set.
The part of the plate outside every named region is the region ``"plate"``.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Iterable, Sequence

import numpy as np

from ..core.errors import GeometryError, InputError, unknown_name
from ._curves import _as_point, _AxisLine, _Line, _pieces_distance
from ._tolerance import REL_TOL
from ._plate_pieces import (_csg_steps, _fillet_corner, _is_name_pair, _is_point_like,  # noqa: F401
                            _named_as_union, _piece_scale, _samples_of, _sdf_slack)
from .shapes import Outline, Polygon, Rectangle, Shape, _check_name, _positive

__all__ = ["Plate"]


@dataclass(frozen=True)
class _Op:
    kind: str  # "union", "difference", "hole", "notch"
    shape: Shape
    pieces: tuple
    label: str


class Plate:
    """A flat plate: an outline, then cut-outs, added parts, regions and named points.

    Parameters
    ----------
    outline : Shape
        The outer boundary: a :class:`Rectangle`, :class:`Polygon`, :class:`Outline`, or any
        closed shape (a :class:`Circle` gives a round plate whose edge is called ``"edge"``).

    Examples
    --------
    >>> from planar.geometry import Plate, Circle
    >>> plate = Plate.rectangle(200.0, 80.0)          # lower-left corner at (0, 0)
    >>> plate = plate.cut(Circle((100.0, 40.0), 10.0, name="bolt_hole"))
    >>> plate = plate.with_region(Circle((100.0, 40.0), 18.0), name="boss")
    >>> plate = plate.add_point("load_point", (200.0, 40.0))
    >>> sorted(plate.names()["edges"])
    ['bolt_hole', 'bottom', 'left', 'right', 'top']
    >>> plate.names()["regions"]
    ['boss', 'plate']
    """

    def __init__(self, outline: Shape):
        if not isinstance(outline, Shape):
            raise InputError(
                f"a plate is made from a shape (Rectangle, Polygon, Outline, Circle, ...), got {type(outline).__name__}"
            )
        self._base = outline
        self._base_pieces = tuple(outline._pieces())
        self._ops: tuple[_Op, ...] = ()
        self._regions: tuple[tuple[str, Shape], ...] = ()
        self._points: tuple[tuple[str, tuple[float, float]], ...] = ()
        self._symmetry: tuple[_AxisLine, ...] = ()
        self._keep: tuple[tuple[int, float, int], ...] = ()  # (axis, at, +1/-1)
        self._fillets = 0

    # ------------------------------------------------------------------ constructors
    @classmethod
    def rectangle(cls, width: float, height: float, *, corner=(0.0, 0.0), centre=None,
                  names: Sequence[str] = ("bottom", "right", "top", "left")) -> "Plate":
        """A rectangular plate, lower-left corner at ``corner`` (default the origin) or centred on ``centre``.

        Parameters
        ----------
        width, height : float
        corner : (x, y), default (0, 0)
        centre : (x, y), optional
            Place the rectangle by its centre instead.
        names : 4 str
            Names of the bottom, right, top and left sides.

        Examples
        --------
        >>> Plate.rectangle(100.0, 50.0).names()["edges"]
        ['bottom', 'left', 'right', 'top']
        """
        if centre is not None:
            return cls(Rectangle(width, height, centre=centre, names=names))
        return cls(Rectangle(width, height, corner=corner, names=names))

    @classmethod
    def polygon(cls, points, *, names: Sequence[str] | None = None) -> "Plate":
        """A plate bounded by a polygon; sides default to ``"edge_1"``, ``"edge_2"``, ...

        Examples
        --------
        >>> Plate.polygon([(0, 0), (60, 0), (60, 20), (20, 20), (20, 50), (0, 50)]).area()
        1800.0
        """
        return cls(Polygon(points, names=names))

    def __getstate__(self) -> dict:
        # the kept look-ups of the distance function and of the holes are remade on demand; the first holds
        # closures, which do not pickle (a plate sent to a worker process)
        return {k: v for k, v in self.__dict__.items() if k not in ("_csg_kept", "_holes_kept")}

    def _copy(self, **changes) -> "Plate":
        out = Plate.__new__(Plate)
        out.__dict__.update(self.__dict__)
        for k, v in changes.items():
            setattr(out, k, v)
        return out

    # ------------------------------------------------------------------ Python-side geometry
    def _outer_shapes(self):
        return [self._base] + [op.shape for op in self._ops if op.kind == "union"]

    def _scale(self) -> float:
        boxes = np.array([s.bounding_box() for s in self._outer_shapes()])
        w = boxes[:, 2].max() - boxes[:, 0].min()
        h = boxes[:, 3].max() - boxes[:, 1].min()
        return float(math.hypot(w, h))

    def _bbox(self) -> tuple[float, float, float, float]:
        boxes = np.array([s.bounding_box() for s in self._outer_shapes()])
        return float(boxes[:, 0].min()), float(boxes[:, 1].min()), float(boxes[:, 2].max()), float(boxes[:, 3].max())

    def _tol(self) -> float:
        return REL_TOL * self._scale()

    def _sdf(self, pts, *, holes: bool = True, symmetry: bool = True) -> np.ndarray:
        """Signed distance-like value of the plate (negative inside), by constructive solid geometry."""
        pts = np.atleast_2d(np.asarray(pts, float))
        s = self._base._sdf(pts)
        kept = self.__dict__.get("_csg_kept")
        if kept is None or kept[0] is not self._ops:  # the operations, runs of round holes as one array
            kept = self.__dict__["_csg_kept"] = (self._ops, _csg_steps(self._ops))
        for kind, hole, step in kept[1]:
            if kind == "union":
                s = np.minimum(s, step(pts))
            elif holes or not hole:
                s = np.maximum(s, -step(pts))
        if symmetry:
            for axis, at, sign in self._keep:
                s = np.maximum(s, sign * (at - pts[:, axis]))
        return s

    def _all_named_pieces(self):
        """Pieces in the order used to name final curves: symmetry cuts, later operations, outline."""
        out = list(self._symmetry)
        for op in reversed(self._ops):
            out.extend(op.pieces)
        out.extend(self._base_pieces)
        return out

    def _piece_names(self) -> set[str]:
        return {p.name for p in self._all_named_pieces()}

    def _overlaps(self, shape: Shape) -> bool:
        """Whether ``shape`` and the plate share some area (tested on interior points of both)."""
        tol = self._tol()
        if np.any(self._sdf(shape._interior_points(), symmetry=False) < -tol):
            return True
        if np.any(self._sdf(shape._samples(), symmetry=False) < -tol):
            return True
        pts = np.vstack([self._base._interior_points(), _samples_of(self._base_pieces)])
        return bool(np.any(shape._sdf(pts) < -tol))

    def _count(self, kind: str) -> int:
        return sum(1 for op in self._ops if op.kind == kind)

    # ------------------------------------------------------------------ cut-outs
    def cut(self, *holes: Shape, at: Iterable | None = None) -> "Plate":
        """Cut holes that lie wholly inside the plate.

        Parameters
        ----------
        *holes : Shape
            Circles, ellipses, slots, rounded rectangles, polygons or outlines. Unnamed holes are
            called ``"hole_1"``, ``"hole_2"``, ... in order.
        at : sequence of (x, y), optional
            Place a copy of each hole with its centre at each of these points (a hole pattern).
            Copies of a named hole share its name and form one edge set.

        Raises
        ------
        GeometryError
            If a hole lies outside the plate, crosses or touches its edge, or overlaps or touches
            another hole.

        Examples
        --------
        >>> from planar.geometry import Circle
        >>> p = Plate.rectangle(100.0, 40.0).cut(Circle((0, 0), 3.0, name="rivet"),
        ...                                      at=[(20, 20), (50, 20), (80, 20)])
        >>> p.names()["edges"]
        ['bottom', 'left', 'right', 'rivet', 'top']
        """
        shapes: list[Shape] = []
        for h in holes:
            if isinstance(h, (list, tuple)):
                shapes.extend(h)
            else:
                shapes.append(h)
        if not shapes:
            raise InputError("cut() needs at least one hole shape")
        if at is not None:
            centres = [_as_point(c, "hole centre") for c in at]
            if not centres:
                raise InputError("at= must list at least one centre")
            shapes = [s.at(c) for s in shapes for c in centres]
        plate = self
        for shape in shapes:
            plate = plate._cut_one(shape)
        return plate

    def _check_own_name(self, name: str, kind: str, label: str, base_pieces=None) -> None:
        """Refuse a name already given to an edge of another kind (a side of the outline, a hole, a notch, a
        fillet): edges of one name form one edge set, supported and loaded together. Edges of one kind
        may share a name (a hole pattern, both fillets of a part, opposite notches)."""
        taken = {p.name for op in self._ops if op.kind != kind for p in op.pieces}
        base = self._base_pieces if base_pieces is None else base_pieces
        taken |= {p.name for p in base if kind != "fillet" or isinstance(p, _Line)}
        if name in taken:
            raise GeometryError(
                f"{label}: the name {name!r} is already an edge of the plate (of its outline, or a cut-out of "
                f"another kind), and edges of one name are supported and loaded together; give the {kind} a "
                "name of its own"
            )

    def _hole_table(self) -> tuple[list, np.ndarray]:
        """(the hole operations in order, an (n, 5) array of their bounding boxes and how far each one's
        distance function may read below the distance to it, :func:`_sdf_slack`), kept with the plate's
        operations so a pattern of many holes is not scanned again for every new one."""
        kept = self.__dict__.get("_holes_kept")
        if kept is not None and kept[0] is self._ops:
            return kept[1], kept[2]
        holes = [op for op in self._ops if op.kind == "hole"]
        table = np.array([[*op.shape.bounding_box(), _sdf_slack(op.shape)] for op in holes]).reshape(-1, 5)
        self.__dict__["_holes_kept"] = (self._ops, holes, table)
        return holes, table

    def _cut_one(self, shape: Shape) -> "Plate":
        if not isinstance(shape, Shape):
            raise InputError(f"a hole must be a shape (Circle, Ellipse, Slot, ...), got {type(shape).__name__}")
        all_holes, table = self._hole_table()
        k = len(all_holes) + 1
        name = shape.name or f"hole_{k}"
        label = f"hole {name!r}" + (f" (hole {k})" if shape.name else "")
        self._check_own_name(name, "hole", label)
        tol = self._tol()
        pts = shape._samples()
        outer = self._sdf(pts, holes=False, symmetry=False)
        # only the holes that come near this one can overlap or touch it, or be near enough to make it
        # sampled finely: those whose bounding boxes lie farther apart than either distance function can
        # read low (one batched test on the boxes) are left out; the others are measured one by one
        box = shape.bounding_box()
        slack = _sdf_slack(shape)
        feat = shape._min_feature()
        gap_box = np.hypot(np.maximum(0.0, np.maximum(table[:, 0] - box[2], box[0] - table[:, 2])),
                           np.maximum(0.0, np.maximum(table[:, 1] - box[3], box[1] - table[:, 3])))
        reach = 2.0 * np.maximum(np.maximum(table[:, 4] * max(tol, 0.1 * feat), slack * tol), 0.01 * feat) + tol
        holes = [all_holes[i] for i in np.flatnonzero(~(gap_box > reach))]  # NaN (a slack not known): measured
        closest = [float(op.shape._sdf(pts).min()) for op in holes]  # each hole's least value on this one's edge
        gap = min([-float(outer.max())] + closest)
        if 0.0 < gap < 0.1 * feat:
            # a hole close to the edge or to another hole: sample it finely enough (the sag between
            # samples below the tolerance) to tell a thin ligament from a hole that touches at a point
            pts = np.vstack([p.sample(int(min(max(math.ceil(p.length / math.sqrt(8.0 * tol * feat)), 64),
                                                  200_000)) + 1)[:-1] for p in shape._pieces(name)])
            outer = self._sdf(pts, holes=False, symmetry=False)
            closest = [float(op.shape._sdf(pts).min()) for op in holes]
        inside = outer < -tol
        if not inside.all():
            if not inside.any() and not np.any(shape._sdf(_samples_of(self._base_pieces)) < 0):
                where = "lies outside the plate"
            else:
                bad = pts[np.argmax(outer)]
                where = f"crosses or touches the plate's edge (near ({bad[0]:.6g}, {bad[1]:.6g}))"
            raise GeometryError(
                f"{label} {where}; a hole must lie wholly inside the plate. Move it or make it smaller, "
                "use Plate.notch() for an edge notch, or Plate.difference() to cut the edge away"
            )
        for op, least in zip(holes, closest):
            if least < tol or np.any(shape._sdf(op.shape._samples()) < tol):
                raise GeometryError(
                    f"{label} overlaps or touches {op.label}; move them apart, or make one cut-out of the "
                    "combined shape (an Outline) instead"
                )
        op = _Op("hole", shape, tuple(shape._pieces(name)), label)
        out = self._copy(_ops=self._ops + (op,))
        out.__dict__["_holes_kept"] = (out._ops, all_holes + [op], np.vstack([table, [*box, slack]]))
        return out

    def difference(self, shape: Shape, *, name: str | None = None) -> "Plate":
        """Remove ``shape`` from the plate; unlike :meth:`cut` it may cross the plate's edge.

        The new boundary pieces are named ``name`` (or the shape's name, default ``"cutout_k"``).

        Examples
        --------
        >>> p = Plate.rectangle(100.0, 50.0).difference(Rectangle(30.0, 20.0, corner=(70.0, 30.0)),
        ...                                             name="step")
        >>> p.area()
        4400.0
        """
        self._check_shape(shape, "difference")
        nm = _check_name(name) or shape.name or f"cutout_{self._count('difference') + 1}"
        if not self._overlaps(shape):
            raise GeometryError(f"the shape removed as {nm!r} does not overlap the plate, so it removes nothing")
        op = _Op("difference", shape, tuple(shape._pieces(nm)), f"cut-out {nm!r}")
        return self._copy(_ops=self._ops + (op,))

    def union(self, shape: Shape, *, name: str | None = None) -> "Plate":
        """Add ``shape`` to the plate (it must overlap or touch the plate along an edge).

        Its boundary pieces keep their own names, else ``name``, else ``"union_k"``.

        Examples
        --------
        >>> from planar.geometry import Circle
        >>> lug = Plate.rectangle(60.0, 40.0).union(Circle((60.0, 20.0), 20.0), name="lug_edge")
        >>> round(lug.area(), 6) == round(60.0 * 40.0 + math.pi * 400.0 / 2, 6)
        True
        """
        self._check_shape(shape, "union")
        nm = _check_name(name) or shape.name or f"union_{self._count('union') + 1}"
        tol = self._tol()
        if not np.any(self._sdf(shape._samples(), symmetry=False) <= tol) and \
                not np.any(shape._sdf(_samples_of(self._base_pieces)) <= tol):
            raise GeometryError(f"the shape added as {nm!r} does not touch the plate; move it so that it overlaps")
        pieces = tuple(shape._pieces(nm)) if shape.name or name else _named_as_union(shape, nm)
        op = _Op("union", shape, pieces, f"added part {nm!r}")
        return self._copy(_ops=self._ops + (op,))

    def __or__(self, shape: Shape) -> "Plate":
        return self.union(shape)

    def __sub__(self, shape: Shape) -> "Plate":
        return self.difference(shape)

    @staticmethod
    def _check_shape(shape, what):
        if not isinstance(shape, Shape):
            raise InputError(f"{what}() needs a shape (Rectangle, Circle, Polygon, ...), got {type(shape).__name__}")

    # ------------------------------------------------------------------ notches and fillets
    def _straight_edge(self, edge: str, at):
        lines = [p for p in self._base_pieces if isinstance(p, _Line)]
        cands = [p for p in lines if p.name == edge]
        if not cands:
            raise unknown_name("straight outline edge", edge, {p.name for p in lines},
                               "a notch is cut into a straight side of the outline")
        tol = self._tol()
        for p in cands:
            a, b = p.start, p.end
            t = (b - a) / p.length
            if np.ndim(at) == 0:
                v = float(at)
                axis = 0 if abs(t[0]) >= abs(t[1]) else 1
                s = (v - a[axis]) / t[axis]
                o = a + s * t
            else:
                q = _as_point(at, "notch position")
                s = float(np.dot(q - a, t))
                o = a + s * t
                if np.hypot(*(q - o)) > tol:
                    continue
            if -tol <= s <= p.length + tol:
                return p, o, t, s
        raise GeometryError(f"the notch position at={at!r} is not on the edge {edge!r}; give a position along it")

    def notch(self, edge: str, *, at, depth: float, radius: float, kind: str = "U",
              angle: float = 60.0, name: str | None = None) -> "Plate":
        """Cut an edge notch into a straight side of the outline.

        Parameters
        ----------
        edge : str
            Name of a straight side of the outline (e.g. ``"top"``).
        at : float or (x, y)
            Where the notch's centre line meets the edge: the x coordinate on a mostly horizontal
            side, the y coordinate on a mostly vertical one, or a point on the side.
        depth : float
            From the edge to the bottom of the notch root.
        radius : float
            Root radius.
        kind : {"U", "V"}
            U: parallel flanks 2*radius apart ending in a half circle (depth >= radius).
            V: flanks at the included ``angle`` tangent to the root circle.
        angle : float, default 60
            Included (opening) angle of a V notch in degrees, 0 < angle < 180.
        name : str, optional
            Name of the notch boundary (default ``"notch_k"``).

        Examples
        --------
        >>> p = Plate.rectangle(100.0, 40.0).notch("top", at=50.0, depth=10.0, radius=2.0, kind="V")
        >>> "notch_1" in p.names()["edges"]
        True
        """
        depth = _positive(depth, "notch depth")
        r = _positive(radius, "notch root radius")
        if kind not in ("U", "V"):
            raise InputError(f"unknown notch kind {kind!r}; pick one of 'U', 'V'")
        nm = _check_name(name) or f"notch_{self._count('notch') + 1}"
        self._check_own_name(nm, "notch", f"notch {nm!r}")
        line, o, t, s = self._straight_edge(edge, at)
        n_in = np.array([-t[1], t[0]])  # the outline runs counter-clockwise: the plate is on the left
        if kind == "U":
            if depth < r * (1 - 1e-12):
                raise GeometryError(f"a U notch's depth ({depth:g}) must be at least its root radius ({r:g})")
            half_open = r
            qc = depth - r
            tr = np.array([r, qc])  # tangent point of the right flank, local (s along t, q inward)
            ext = np.array([r, -0.5 * depth - r])
        else:
            try:
                ang = float(angle)
            except (TypeError, ValueError):
                raise InputError(f"a V notch's included angle must be a number of degrees, got {angle!r}") from None
            if not (0.0 < ang < 180.0):
                raise InputError(f"a V notch's included angle must lie between 0 and 180 degrees, got {angle!r}")
            a = math.radians(ang) / 2
            if depth <= r * (1 - math.sin(a)) * (1 + 1e-9):
                raise GeometryError(
                    f"a V notch of depth {depth:g} is too shallow for root radius {r:g} at {ang:g} degrees; "
                    "make it deeper or the radius smaller"
                )
            qc = depth - r
            tr = np.array([r * math.cos(a), qc + r * math.sin(a)])
            h = 0.5 * depth + r
            lam = (tr[1] + h) / math.cos(a)
            ext = tr + lam * np.array([math.sin(a), -math.cos(a)])
            half_open = tr[0] + tr[1] * math.tan(a)
        tol = self._tol()
        if s - half_open < tol or s + half_open > line.length - tol:
            raise GeometryError(
                f"the notch {nm!r} ({2 * half_open:g} wide at the edge) does not fit on the edge {edge!r} "
                f"at {at!r}; move it or make it narrower"
            )

        def g(loc):
            return tuple(o + loc[0] * t + loc[1] * n_in)

        bottom = g((0.0, depth))
        if not self._sdf(np.array([bottom]), symmetry=False)[0] < -tol:
            raise GeometryError(f"the notch {nm!r} of depth {depth:g} reaches through the plate; make it shallower")
        tl = tr * np.array([-1.0, 1.0])
        el = ext * np.array([-1.0, 1.0])
        cutter = (
            Outline(g(ext), name=nm)
            .line_to(g(tr))
            .arc_to(g(tl), through=bottom)
            .line_to(g(el))
            .close()
        )
        op = _Op("notch", cutter, tuple(cutter._pieces(nm)), f"notch {nm!r}")
        return self._copy(_ops=self._ops + (op,))

    def fillet(self, corner, *, radius: float, name: str | None = None) -> "Plate":
        """Round corners of the outline (between two straight sides) with ``radius``.

        Parameters
        ----------
        corner : (x, y), (str, str), a list of these, or "all"
            The corner point, or the names of the two sides that meet there (e.g.
            ``("bottom", "left")``), or every corner between straight sides.
        radius : float
        name : str, optional
            Name of the rounded edge (default ``"fillet_k"``, one per corner).

        Raises
        ------
        GeometryError
            If there is no such corner or the radius does not fit on its sides.

        Examples
        --------
        >>> p = Plate.rectangle(100.0, 50.0).fillet(("top", "right"), radius=10.0, name="round")
        >>> round(p.area(), 6) == round(5000.0 - (1 - math.pi / 4) * 100.0, 6)
        True
        """
        r = _positive(radius, "fillet radius")
        pieces = list(self._base_pieces)
        if isinstance(corner, str):
            if corner != "all":
                raise InputError(f"corner must be a point, a pair of side names, or 'all', got {corner!r}")
            targets = [tuple(p.start) for i, p in enumerate(pieces)
                       if isinstance(p, _Line) and isinstance(pieces[i - 1], _Line)]
        elif _is_point_like(corner) or _is_name_pair(corner):
            targets = [corner]
        else:
            targets = list(corner)
        count = self._fillets
        tol = self._tol()
        for c in targets:
            count += 1
            nm = _check_name(name) or f"fillet_{count}"
            self._check_own_name(nm, "fillet", f"fillet {nm!r}", pieces)
            pieces = _fillet_corner(pieces, c, r, nm, tol)
        base = Outline._from_pieces(pieces)
        return self._copy(_base=base, _base_pieces=tuple(pieces), _fillets=count)

    # ------------------------------------------------------------------ regions and points
    def with_region(self, shape: Shape, *, name: str) -> "Plate":
        """Mark the part of the plate inside ``shape`` as a region with its own thickness or material.

        The region shares nodes with the rest of the plate (a conformal mesh); the part of the
        shape outside the plate, or in a hole, is ignored. Where regions overlap, the later one wins.

        Parameters
        ----------
        shape : Shape
        name : str
            Region name (not ``"plate"``, which is the rest of the plate).

        Examples
        --------
        >>> from planar.geometry import Circle
        >>> p = Plate.rectangle(200.0, 80.0).cut(Circle((100, 40), 10)).with_region(Circle((100, 40), 18), name="boss")
        >>> p.names()["regions"]
        ['boss', 'plate']
        """
        self._check_shape(shape, "with_region")
        nm = _check_name(name, "region name")
        if nm is None:
            raise InputError("a region needs a name")
        if nm == "plate":
            raise InputError("'plate' is the name of the rest of the plate; give the region another name")
        if not self._overlaps(shape):
            raise GeometryError(f"region {nm!r} does not overlap the plate; move its shape onto the plate")
        return self._copy(_regions=self._regions + ((nm, shape),))

    def add_point(self, name: str, point) -> "Plate":
        """Name a point inside or on the edge of the plate; the mesh gets a node there.

        Use it for point forces and single-point supports (``Mesh.node_sets[name]``).

        Examples
        --------
        >>> Plate.rectangle(10.0, 10.0).add_point("load", (10.0, 5.0)).names()["points"]
        ['load']
        """
        nm = _check_name(name, "point name")
        if nm is None:
            raise InputError("a point needs a name")
        p = _as_point(point, f"point {nm!r}")
        if self._sdf(p[None], symmetry=False)[0] > self._tol():
            raise GeometryError(
                f"point {nm!r} at ({p[0]:g}, {p[1]:g}) lies outside the plate or in a hole; "
                "named points must be inside the plate or on its edge"
            )
        if nm in self._piece_names():
            raise InputError(f"{nm!r} already names an edge; give the point another name")
        return self._copy(_points=self._points + ((nm, (float(p[0]), float(p[1]))),))

    # ------------------------------------------------------------------ symmetry
    def _default_centre(self):
        x0, y0, x1, y1 = self._bbox()
        return ((x0 + x1) / 2, (y0 + y1) / 2)

    def half(self, normal: str = "x", *, centre=None, keep: str = "positive", check: bool = True) -> "Plate":
        """Half model of a part symmetric about the line through ``centre`` with normal ``normal``.

        ``normal="x"`` cuts along x = x0 and keeps x >= x0 (``keep="positive"``) or x <= x0
        (``"negative"``); the cut edge is ``"symmetry_x"``. ``normal="y"`` cuts along y = y0 and names
        the edge ``"symmetry_y"``. The cut is made after all other operations.

        Parameters
        ----------
        normal : {"x", "y"}
        centre : (x, y), optional
            A point on the cut line; default the centre of the outline's bounding box.
        keep : {"positive", "negative"}
        check : bool, default True
            Refuse a part that is not mirror symmetric about the cut (outline, cut-outs, regions).

        Examples
        --------
        >>> from planar.geometry import Circle
        >>> p = Plate.rectangle(200.0, 80.0).cut(Circle((100, 40), 10.0)).half("x")
        >>> p.names()["edges"]
        ['bottom', 'hole_1', 'right', 'symmetry_x', 'top']
        """
        if normal not in ("x", "y"):
            raise InputError(f"normal must be 'x' or 'y', got {normal!r}")
        if keep not in ("positive", "negative"):
            raise InputError(f"keep must be 'positive' or 'negative', got {keep!r}")
        axis = 0 if normal == "x" else 1
        c = _as_point(self._default_centre() if centre is None else centre, "symmetry centre")
        if any(k[0] == axis for k in self._keep):
            raise GeometryError(f"the plate is already cut along the symmetry line with normal {normal!r}")
        at = float(c[axis])
        if check:
            self._check_symmetry(axis, at)
        sign = 1 if keep == "positive" else -1
        return self._copy(
            _symmetry=self._symmetry + (_AxisLine(axis, at, f"symmetry_{normal}"),),
            _keep=self._keep + ((axis, at, sign),),
        )

    def quarter(self, centre=None, *, keep: tuple[str, str] = ("positive", "positive"),
                check: bool = True) -> "Plate":
        """Quarter model of a part with two symmetry lines through ``centre``.

        Keeps x >= x0 and y >= y0 by default; the cut edges are ``"symmetry_x"`` (on x = x0) and
        ``"symmetry_y"`` (on y = y0).

        Examples
        --------
        >>> from planar.geometry import Circle
        >>> q = Plate.rectangle(200.0, 80.0, centre=(0.0, 0.0)).cut(Circle((0, 0), 10.0)).quarter()
        >>> q.names()["edges"]
        ['hole_1', 'right', 'symmetry_x', 'symmetry_y', 'top']
        """
        c = self._default_centre() if centre is None else centre
        return self.half("x", centre=c, keep=keep[0], check=check).half("y", centre=c, keep=keep[1], check=check)

    def _check_symmetry(self, axis: int, at: float) -> None:
        groups = [("the outline", self._base_pieces)]
        groups += [(op.label, op.pieces) for op in self._ops]
        groups += [(f"region {n!r}", s._pieces("region")) for n, s in self._regions]
        every = [p for _, ps in groups for p in ps]
        tol = 10 * self._tol()
        for label, pieces in groups:
            pts = _samples_of(pieces, per_piece=9)
            mirrored = pts.copy()
            mirrored[:, axis] = 2 * at - mirrored[:, axis]
            d = _pieces_distance(mirrored, every)
            if np.any(d > tol):
                i = int(np.argmax(d))
                line = ("x" if axis == 0 else "y") + f" = {at:g}"
                raise GeometryError(
                    f"the part is not symmetric about {line}: the mirror image of {label} near "
                    f"({pts[i, 0]:.6g}, {pts[i, 1]:.6g}) is not on the part; give the right centre, "
                    "model the whole part, or pass check=False if you know better"
                )

    # ------------------------------------------------------------------ exact answers (gmsh)
    def names(self) -> dict[str, list[str]]:
        """Names the meshed plate will have: ``{"edges": [...], "points": [...], "regions": [...]}``.

        Builds the exact geometry (with gmsh, without meshing), so pieces removed by a cut-out or a
        symmetry cut are not listed.
        """
        from ._build import build_geometry

        b = build_geometry(self)
        return {"edges": sorted(b.edges), "points": sorted(b.points), "regions": sorted(b.regions)}

    def area(self) -> float:
        """Exact area of the plate (from the CAD kernel), holes removed."""
        from ._build import build_geometry

        return build_geometry(self).area

    def bounding_box(self) -> tuple[float, float, float, float]:
        """(xmin, ymin, xmax, ymax) of the outline and added parts (before symmetry cuts)."""
        return self._bbox()

    def __repr__(self) -> str:
        kinds = {}
        for op in self._ops:
            kinds[op.kind] = kinds.get(op.kind, 0) + 1
        parts = [f"{v} {k}{'s' if v > 1 else ''}" for k, v in kinds.items()]
        if self._regions:
            parts.append(f"regions {[n for n, _ in self._regions]}")
        if self._points:
            parts.append(f"points {[n for n, _ in self._points]}")
        if self._symmetry:
            parts.append("cut at " + ", ".join(s.name for s in self._symmetry))
        return f"Plate({type(self._base).__name__}{'; ' if parts else ''}{'; '.join(parts)})"
