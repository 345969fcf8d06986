"""Mesh a plate with gmsh and hand back a :class:`planar.core.mesh.Mesh`.

Sizes: the element size is the smallest of the global ``size``, every :class:`Refine` (a size at
named edges or points that grows linearly with distance, ``h(d) = size + (growth - 1) * d``, the
size reached by elements that grow by the factor ``growth`` from one to the next), and a
``size_function(x, y)``. The size function is evaluated once, vectorized, on a quadtree of points
over the plate (cells no larger than 1.5 times the local size) and handed to gmsh as a background
view, so a function given as numpy code costs little even for meshes of 10^5 elements and more.

Quadrilaterals: gmsh meshes the plate at twice the size with triangles recombined into
quadrilaterals where it can (its simple recombination, which leaves some triangles); then every Q4 is
split into 4 and every T3 into 3 quadrilaterals, with the new nodes of the curves on the true curves,
and the nodes off the curves are smoothed (:mod:`planar.geometry._quadratic`). The result has
quadrilaterals only. This is what gmsh's own full-quad recombination does inside, but that one fails
on a curve of a single segment ("1D mesh cannot be divided by 2", e.g. the short straight sides of a
slot) and, like its blossom recombination, at times leaves triangles that overlap their neighbours
(near a named point close to an edge, or at the curved end of a small slot).

Before any meshing the element count is estimated from the plate's area, the global size, every
refinement with its growth and the curved edges (:mod:`planar.geometry._estimate`, a few ms), and a
job beyond ``max_elements`` (default 2 million) or beyond the memory at hand is refused with the
estimate and the fix; a refinement at a point off the plate is a GeometryError.

Every mesh is checked before it is handed back: with the cells counter-clockwise, every side between
two cells is walked once each way, the sides of one cell only are the segments of the boundary,
quadrilaterals are strictly convex and not badly distorted, and every named point is a node of some
cell. Where that fails (the split of a sliver triangle between curves that come much closer than the
element size can turn a cell inside out; gmsh at times leaves out a named point close to a curve on
a coarse mesh), the plate is meshed again with elements 3 times smaller there, up to ``RETRIES``
times, and then a GeometryError names the place.

Speed: gmsh makes the linear mesh (T3 or Q4); quadratic cells get their mid-side nodes from numpy
(:mod:`planar.geometry._quadratic`, on the true curves), which is some 20 times faster than gmsh's
``setOrder(2)``. A mesh estimated at more than ``FAST_ABOVE`` elements (100 000 triangles or
50 000 quadrilaterals, where the fast way starts to save a second) is made the fast way unless
``fast=False``: the plate is cut by straight lines into pieces of about ``PIECE_ELEMENTS``
elements (:mod:`planar.geometry._split`), meshed a few at a time (one piece per core, on gmsh's
own threads), and triangles skip gmsh's Laplace smoothing. Measured on a 400 x 160 plate with a hole (one core of a 2-core machine):
10^6 unknowns of T6 in about 2 s instead of 10 s, 3.7 * 10^6 in 7 s instead of 47 s; the least
angle of the triangles stays above 30 degrees (31-32 against 36 with smoothing in one piece;
frontal Delaunay makes near-equilateral triangles, mean least angle 59 degrees either way).
Quadrilaterals keep gmsh's smoothing (of the mesh at twice the size) and get planar's own after
the split: the same plate with 1.1 * 10^6 unknowns of Q8 takes 2.6 s (3.7 s with gmsh's full-quad
recombination), worst corners 51 / 132 degrees (51 / 134 before). ``algorithm="delaunay"`` meshes
triangles about a third faster still, with least angles above 30 degrees too but a mean least
angle of 47 degrees. Each piece is meshed by one thread alone, so the mesh does not depend on the
number of threads; gmsh's multi-threaded meshing of one surface is not used: its result changes
from run to run, and the same input must give the same mesh. Two pieces at a time on two cores
took the 10^6-unknown T6 mesh from about 2.4 s to 1.5 s.

Here: :func:`mesh`, its argument checks, the estimate and the retries. The size fields and the
quadtree of the size function are in :mod:`planar.geometry._sizes`; gmsh's mesh is made, read,
checked and turned into a :class:`~planar.core.mesh.Mesh` in :mod:`planar.geometry._generate`.
"""
from __future__ import annotations

import math
import os
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from ..core.compat import deprecated
from ..core.values import number
from ..core.errors import GeometryError, InputError, fmt_point
from ..core.mesh import Mesh
from ..core.progress import step
from ._build import _build
from ._estimate import CELL_AREA, MAX_ELEMENTS, MESH_BYTES_PER_ELEMENT, estimate as _estimate, estimate_elements, refuse_beyond  # noqa: F401
# the gmsh generation and checks, and the size fields: mesh() calls them by these names (tests replace
# _tangled and _lost_point here); re-exported for the code and tests that import them from this module
from ._generate import (DISTORTED, _FLIP, _GMSH_CELLS, _Linear, _all_quads, _counter_clockwise,  # noqa: F401
                        _curve_mids, _generate, _lost_point, _side_place, _tangled, _to_mesh, _write_msh)
from ._session import _Session, _stage
from ._sizes import (_eval_size, _refine_field, _size_function_field, _size_quadtree,  # noqa: F401
                     _size_quadtree_for, _spot_field)
from .plate import Plate
from .shapes import Shape

__all__ = ["Refine", "mesh", "element_options", "estimate_elements"]

_ALGORITHMS = {"frontal-delaunay": 6, "delaunay": 5, "adaptive": 1, "frontal-quads": 8}
#: with fast=None, meshes estimated to have more elements than this are made the fast way
FAST_ABOVE = {"triangles": 100_000, "quads": 50_000}
#: elements per piece when the plate is cut into pieces (fast way)
PIECE_ELEMENTS = {"triangles": 30_000, "quads": 10_000}
#: times a mesh with overlapping, inside-out or distorted cells is made again, smaller near the bad place
RETRIES = 3
#: largest accepted circle_elements (element sides per full turn of a curved edge)
MAX_CIRCLE_ELEMENTS = 100_000
#: the cells of mesh() when neither element= nor the old order=/quads=/quadratic= choose: quadratic
#: triangles, since linear ones read peaks at stress raisers low (Kirsch's hole with 12 element sides
#: round it: T3 26 % low, T6 6 %; see :mod:`planar.core._advice_linear`)
DEFAULT_ELEMENT = "T6"


@dataclass(frozen=True)
class Refine:
    """Local refinement: element size ``size`` at the named edges, points or regions ``at``.

    The size grows with the distance d from them as ``size + (growth - 1) * (d - within)`` until
    it reaches the global size.

    Parameters
    ----------
    at : str, sequence of str, or (x, y)
        Names of edges, points or regions (a region means its boundary), or a point given by its
        coordinates.
    size : float
        Element size at the entities.
    growth : float, default 1.3
        Ratio of the sizes of neighbouring elements away from the entities (> 1).
    within : float, default 0
        Keep ``size`` up to this distance before it starts to grow.

    Examples
    --------
    >>> Refine("bolt_hole", size=0.5, growth=1.2)
    Refine(at='bolt_hole', size=0.5, growth=1.2, within=0.0)
    """

    at: object
    size: float
    growth: float = 1.3
    within: float = 0.0

    def __post_init__(self):
        at = self.at
        if isinstance(at, str):
            pass
        elif _is_xy(at):
            at = (float(at[0]), float(at[1]))
        elif isinstance(at, (list, tuple)) and at and all(isinstance(a, str) for a in at):
            at = tuple(at)
        else:
            raise InputError(f"Refine(at=...) takes a name, a list of names, or a point (x, y); got {at!r}")
        object.__setattr__(self, "at", at)
        object.__setattr__(self, "size", _size(self.size, "Refine size"))
        g = _number(self.growth, "Refine growth")
        if not g > 1.0:
            raise InputError(f"Refine growth must be greater than 1 (e.g. 1.2), got {self.growth!r}")
        object.__setattr__(self, "growth", g)
        w = _number(self.within, "Refine within")
        if w < 0:
            raise InputError(f"Refine within must not be negative, got {self.within!r}")
        object.__setattr__(self, "within", w)


def _is_xy(a) -> bool:
    if isinstance(a, (str, bytes)) or not isinstance(a, (tuple, list, np.ndarray)) or len(a) != 2:
        return False
    return all(isinstance(v, (int, float, np.floating, np.integer)) and not isinstance(v, bool) for v in a)


def _number(v, what) -> float:
    return number(v, what)


def _size(v, what) -> float:
    try:
        x = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{what} must be a number (an element side length), got {v!r}") from None
    if not (math.isfinite(x) and x > 0):
        raise InputError(
            f"{what} must be a positive element side length in the plate's length unit, got {v!r}"
        )
    return x


def _whole(v, what: str, lo: int, hi: int, meaning: str) -> int:
    """``v`` as an int in [lo, hi] (whole numbers given as floats too), else an InputError."""
    ok = isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_))
    x = float(v) if ok else math.nan
    if not (ok and math.isfinite(x) and x == math.floor(x) and lo <= x <= hi):
        raise InputError(f"{what} must be a whole number from {lo} to {hi} ({meaning}), got {v!r}")
    return int(v)


def element_options(element: str) -> dict:
    """The :func:`mesh` keywords that give cells of one element layout.

    Parameters
    ----------
    element : {"T3", "T6", "Q4", "Q8", "Q9"}

    Returns
    -------
    dict
        ``order``, ``quads`` and, for Q8/Q9, ``quadratic``.

    Examples
    --------
    >>> element_options("Q9")
    {'order': 2, 'quads': True, 'quadratic': 'Q9'}
    """
    table = {"T3": (1, False), "T6": (2, False), "Q4": (1, True), "Q8": (2, True), "Q9": (2, True)}
    if element not in table:
        raise InputError(f"unknown element layout {element!r}; pick one of {', '.join(table)}")
    order, quads = table[element]
    out = {"order": order, "quads": quads}
    if element in ("Q8", "Q9"):
        out["quadratic"] = element
    return out


def _element_choice(element, order, quads, quadratic) -> tuple[int, bool, str]:
    """(order, quads, quadratic) from ``element=``, or from the old keywords with a DeprecationWarning."""
    old = {k: v for k, v in (("order", order), ("quads", quads), ("quadratic", quadratic)) if v is not None}
    if element is not None:
        if old:
            raise InputError(f"mesh() got element={element!r} and {', '.join(f'{k}=' for k in old)}; give element= "
                             "only (the others are its old spelling)")
        if not isinstance(element, str):
            raise InputError(f"element must be an element name such as 'T6', got {element!r}")
        o = element_options(element)
        return o["order"], o["quads"], o.get("quadratic", "Q8")
    if not old:  # the default: quadratic triangles (linear ones under-read peaks at stress raisers)
        o = element_options(DEFAULT_ELEMENT)
        return o["order"], o["quads"], o.get("quadratic", "Q8")
    deprecated("mesh(): order=, quads= and quadratic= are now one keyword, element= ('T3', 'T6', 'Q4', 'Q8' "
               "or 'Q9'); the old keywords work for one release", stacklevel=4)
    # the old keywords keep their old meaning: order 1 unless given (quads=True alone is Q4)
    return (1 if order is None else order, False if quads is None else quads,
            "Q8" if quadratic is None else quadratic)


def mesh(
    geometry: Plate | Shape,
    size: float | None = None,
    *,
    element: str | None = None,
    order: int | None = None,
    quads: bool | None = None,
    quadratic: str | None = None,
    refine: Sequence[Refine] | Refine = (),
    size_function: Callable[[np.ndarray, np.ndarray], np.ndarray] | None = None,
    algorithm: str | None = None,
    circle_elements: int = 12,
    seed: int | None = None,
    max_elements: int = MAX_ELEMENTS,
    save_msh: str | os.PathLike | None = None,
    verbose: bool = False,
    fast: bool | None = None,
) -> Mesh:
    """Mesh a plate with triangles or quadrilaterals, linear or quadratic.

    Parameters
    ----------
    geometry : Plate or Shape
        The plate (a bare shape is taken as a plate outline).
    size : float, optional
        Global element size (side length). Required unless ``size_function`` is given.
    element : {"T3", "T6", "Q4", "Q8", "Q9"}, default "T6"
        The cells: linear or quadratic triangles or quadrilaterals. The default is quadratic
        triangles (``DEFAULT_ELEMENT``): linear elements read stress peaks at holes, fillets and
        notches low (Kirsch's hole with 12 element sides round it: T3 26 % low, T6 6 %), and a peak
        they read there draws a ``"linear-peak"`` warning; ask for ``"T3"`` or ``"Q4"`` by name for
        stiffness-only or very large models. Quadratic cells have their
        mid-side nodes on the true curves (at the mean curve parameter of the side's ends; a Q9
        centre node by the blend of its sides). Quadrilaterals: gmsh's quad-dominant mesh at twice
        the size, every cell split into quadrilaterals and smoothed (see the module's notes).
    order, quads, quadratic
        The old way to choose the cells (``order=2, quads=True, quadratic="Q9"`` is ``element="Q9"``);
        they work for one release with a DeprecationWarning, with their old defaults (``order=1``:
        ``quads=True`` alone is Q4).
    refine : Refine or sequence of Refine
        Local sizes at named edges, points or regions.
    size_function : callable, optional
        ``h(x, y)`` for numpy arrays x, y (same shape), returning the element size at each point.
        Used by adaptive remeshing. Must be vectorized (it is called a few times with large arrays).
    algorithm : {"frontal-delaunay", "delaunay", "adaptive", "frontal-quads"}, optional
        gmsh's 2D algorithm; default "frontal-delaunay" for triangles, "frontal-quads" for quads.
    circle_elements : int, default 12
        At least this many element sides per full turn of a curved edge, 0 to ``MAX_CIRCLE_ELEMENTS``
        (100 000; 0 turns it off).
    seed : int, optional
        Seed of gmsh's random numbers, 0 to 2**31 - 1; the same input and seed give the same mesh.
    max_elements : int, default ``MAX_ELEMENTS`` (2_000_000)
        Refuse a job whose estimated element count is larger (it would exhaust memory or time); a
        whole number from 1 to 10**12. The estimate (:func:`estimate_elements`: the global size, every
        refinement with its growth, and the size function) is made before any meshing, in about a
        millisecond; a job whose meshing would need more than the memory available now
        (``MESH_BYTES_PER_ELEMENT``, 2 kB per element) is refused too, whatever ``max_elements``.
    save_msh : path, optional
        Also write the mesh (gmsh format 4.1: the returned nodes and cells) with a physical group for
        every named edge, point and region (including ``"plate"``); :meth:`Mesh.read` reads it back
        with the same names.
    verbose : bool, default False
        Let gmsh print its progress.
    fast : bool, optional
        Mesh the fast way: cut the plate into pieces of about ``PIECE_ELEMENTS`` elements, meshed
        one per core at a time (the cuts show as straight lines of element edges), and skip gmsh's
        smoothing of triangles. Default (None): the fast way when the estimated number of elements
        exceeds ``FAST_ABOVE`` (100 000 triangles, 50 000 quadrilaterals). The result is the same for
        the same input either way.

    Returns
    -------
    Mesh
        Nodes (n, 2); cells by layout name with corners counter-clockwise then mid-side nodes (gmsh
        and VTK order); ``edge_sets`` for every named boundary piece ((m, 2) or (m, 3): start, end,
        middle); ``node_sets`` for named points; ``regions`` for named regions (the rest is
        ``"plate"``). Unused nodes are removed and nodes numbered 0..n-1.

    Raises
    ------
    InputError
        Bad sizes or options (the message names the argument, its value and the valid range).
    NameNotFoundError
        A refinement names something the plate does not have (the message lists what exists).
    GeometryError
        A refinement at a point outside the plate (or in a hole). The geometry cannot be built or
        meshed, or its mesh has overlapping, inside-out or distorted
        cells or leaves out a named point, also after meshing smaller there (the message names the
        place).
    ResourceError
        The estimated element count exceeds ``max_elements`` or the memory at hand (the message
        gives the estimate and the refinement that asks for the most).

    Examples
    --------
    >>> from planar.geometry import Plate, Circle, Refine, mesh
    >>> plate = Plate.rectangle(200.0, 80.0).cut(Circle((100.0, 40.0), 10.0, name="bolt_hole"))
    >>> m = mesh(plate, size=8.0, element="T6", refine=[Refine("bolt_hole", size=2.0)])
    >>> sorted(m.cells), sorted(m.edge_sets)
    (['T6'], ['bolt_hole', 'bottom', 'left', 'right', 'top'])
    """
    plate = geometry if isinstance(geometry, Plate) else Plate(geometry) if isinstance(geometry, Shape) else None
    if plate is None:
        raise InputError(f"mesh() needs a Plate or a Shape, got {type(geometry).__name__}")
    if size is None and size_function is None:
        raise InputError("give a mesh size (size=...) or a size function (size_function=...)")
    h = None if size is None else _size(size, "mesh size")
    order, quads, quadratic = _element_choice(element, order, quads, quadratic)
    if order not in (1, 2) or isinstance(order, bool):
        raise InputError(f"order must be 1 (linear) or 2 (quadratic), got {order!r}")
    if quadratic not in ("Q8", "Q9"):
        raise InputError(f"quadratic must be 'Q8' or 'Q9', got {quadratic!r}")
    if isinstance(refine, Refine):
        refine = [refine]
    refine = list(refine)
    for r in refine:
        if not isinstance(r, Refine):
            raise InputError(f"refine= takes Refine(...) items, got {type(r).__name__}")
    if size_function is not None and not callable(size_function):
        raise InputError("size_function must be a callable h(x, y)")
    if algorithm is None:
        algorithm = "frontal-quads" if quads else "frontal-delaunay"
    if algorithm not in _ALGORITHMS:
        raise InputError(f"unknown algorithm {algorithm!r}; pick one of {', '.join(sorted(_ALGORITHMS))}")
    circle_elements = _whole(circle_elements, "circle_elements", 0, MAX_CIRCLE_ELEMENTS,
                             "element sides per full turn of a curved edge, 0 to turn it off")
    if seed is not None:
        seed = _whole(seed, "seed", 0, 2**31 - 1, "the seed of gmsh's random numbers, or None")
    max_elements = _whole(max_elements, "max_elements", 1, 10**12, "the largest element count to accept")

    if fast is not None and not isinstance(fast, bool):
        raise InputError(f"fast must be True, False or None (automatic), got {fast!r}")
    _check_targets(plate, refine)
    plan = _Plan(h, quads, size_function, max_elements, fast, plate, tuple(refine), circle_elements)

    with _Session(verbose) as s:
        g = s.gmsh
        built = _build(plate, s, pieces=plan.pieces)
        hmax = h if h is not None else built.scale
        # quadrilaterals: gmsh meshes at twice the size, then every cell is split (see _all_quads)
        k = 2.0 if quads else 1.0
        fields = []
        with _stage("set up the mesh sizes", s):
            for r in refine:
                fields.append(_refine_field(g, built, r, hmax, k))
            if size_function is not None:
                fields.append(_size_function_field(g, plan.quadtree, k))
            if fields:
                fmin = g.model.mesh.field.add("Min")
                g.model.mesh.field.setNumbers(fmin, "FieldsList", fields)
                g.model.mesh.field.setAsBackgroundMesh(fmin)
        s.set("Mesh.MeshSizeMax", k * hmax)
        s.set("Mesh.MeshSizeMin", 0.0)
        s.set("Mesh.MeshSizeFromPoints", 0)
        s.set("Mesh.MeshSizeFromCurvature", math.ceil(circle_elements / k))
        s.set("Mesh.MeshSizeExtendFromBoundary", 1)
        s.set("Mesh.Algorithm", _ALGORITHMS[algorithm])
        s.set("Mesh.RecombineAll", 1 if quads else 0)
        if quads:
            # simple recombination, quads and triangles (split into quadrilaterals afterwards); gmsh's
            # full-quad (2, 3) and blossom (1) recombinations make tangled cells at times, near a named
            # point close to an edge or a small curved end (leftover triangles that overlap their
            # neighbours), and full-quad fails on curves of one segment ("1D mesh cannot be divided
            # by 2"); the simple one (0) made no such cell in 800 random plates
            s.set("Mesh.RecombinationAlgorithm", 0)
        s.set("Mesh.ElementOrder", 1)
        s.set("Mesh.Renumber", 0)  # node tags of the edges stay put while the pieces are meshed
        if plan.fast and not quads:
            s.set("Mesh.Smoothing", 0)
        if seed is not None:
            s.set("Mesh.RandomSeed", seed)
        piecewise = plan.fast and len(built.surfaces) > 1
        with _stage("mesh the plate", s, "try another size or algorithm, or check for very thin parts"), \
                step("meshing", int(plan.estimate * (4 if order == 2 else 1)), about=True):  # on a terminal
            for attempt in range(1 + RETRIES):
                lin = _generate(g, built, s, piecewise=piecewise)
                if quads:
                    lin = _all_quads(g, lin)
                bad = _tangled(built, lin)
                lost = _lost_point(built, lin) if bad is None else None
                if bad is None and lost is None:
                    break
                if attempt == RETRIES:
                    if lost is not None:
                        raise GeometryError(
                            f"gmsh left the named point {lost[0]!r} at {fmt_point(lost[1])} out of the mesh, also "
                            f"with {RETRIES} smaller sizes there; try a smaller size near it "
                            f"(Refine({lost[0]!r}, size=...)) or another size"
                        )
                    raise GeometryError(
                        f"the mesh has overlapping, inside-out or badly distorted cells near {fmt_point(bad[0])}, "
                        f"also with {RETRIES} smaller sizes there (a sliver between curves that come very close, "
                        "or a named point very near an edge?); try a smaller size near that place "
                        "(Refine((x, y), size=...)), another size or seed, or move the point or curve"
                    )
                # a cell that the split of a sliver triangle turned inside out (curved sides much
                # closer than the element size), or a named point that gmsh failed to put into the
                # mesh of a coarse surface: mesh again, with elements 3 times smaller there
                g.model.mesh.clear()
                place, length = bad if bad is not None else (lost[1], lost[2])
                fields.append(_spot_field(g, place, k * length / 3.0, k * hmax))
                fmin = g.model.mesh.field.add("Min")
                g.model.mesh.field.setNumbers(fmin, "FieldsList", fields)
                g.model.mesh.field.setAsBackgroundMesh(fmin)
        with _stage("make the quadratic cells" if order == 2 else "read the mesh back", s):
            out = _to_mesh(g, built, lin, order, quadratic)
        if save_msh is not None:
            _write_msh(g, out, save_msh, s)
        return out


@dataclass
class _Plan:
    """Element-count estimate and refusal, the fast way or not, and the pieces (asked for by ``_build``)."""

    h: float | None
    quads: bool
    size_function: Callable | None
    max_elements: int
    fast: bool | None
    plate: Plate | None = None
    refine: Sequence[Refine] = ()
    circle_elements: int = 12
    quadtree: tuple | None = None
    estimate: float = 0.0

    def pieces(self, area: float, bbox: tuple[float, float, float, float]) -> tuple[int, float]:
        cell_area = CELL_AREA["quads" if self.quads else "triangles"]
        est = area / (cell_area * self.h * self.h) if self.h is not None else 0.0
        extra = _refusal(self, area, est, cell_area)
        if self.size_function is not None:
            self.quadtree = _size_quadtree_for(self.size_function, area, bbox, self.h, self.quads,
                                               self.max_elements)
            refuse_beyond(self.quadtree[-1] + extra, self.max_elements, "the mesh of the size function",
                          "use larger sizes")
            est = max(self.quadtree[-1], est)
        # the fast way and its pieces follow the global size (and size function) alone
        self.estimate = est
        kind = "quads" if self.quads else "triangles"
        if self.fast is None:
            self.fast = est > FAST_ABOVE[kind]
        n = math.ceil(est / PIECE_ELEMENTS[kind]) if self.fast else 1
        return n, math.sqrt(area / (cell_area * max(est, 1.0)))


def _refusal(plan: _Plan, area: float, est: float, cell_area: float) -> float:
    """Refuse a mesh whose estimated count (global size, refinements and curved edges, see
    :mod:`planar.geometry._estimate`) is beyond ``max_elements`` or the memory; the count beyond ``est``."""
    total, parts = _estimate(plan.plate, plan.h, plan.refine, quads=plan.quads, area=area,
                             circle_elements=plan.circle_elements)
    total = max(total, est)
    extra = total - est
    what = f"a mesh of size {plan.h:g}" if plan.h is not None else "a mesh"
    if parts:
        what += f" with {len(parts)} refinement{'s' if len(parts) > 1 else ''} (adding about {extra:.3g})"
    fix = "use a larger size"
    if parts and extra > est and max(parts) >= 0.5 * extra:
        i = int(np.argmax(parts))
        r = plan.refine[i]
        fix = (f"give Refine({r.at!r}, size={r.size:g}) a larger size (it adds about {parts[i]:.3g} elements; "
               "the count falls about in proportion to the size at an edge), a larger growth or a smaller within")
    elif extra > est:
        fix = (f"use a smaller circle_elements (now {plan.circle_elements}; a circular edge of radius R gets "
               "sides of 2 pi R / circle_elements) or larger sizes")
    refuse_beyond(total, plan.max_elements, what, fix)
    return extra


def _check_targets(plate: Plate, refine: Sequence[Refine]) -> None:
    """A refinement at a point outside the plate (or in a hole, or on the side a symmetry cut removes)
    is a GeometryError naming the point and the plate's extent."""
    tol = plate._tol()
    for r in refine:
        if not (isinstance(r.at, tuple) and len(r.at) == 2 and not isinstance(r.at[0], str)):
            continue
        p = np.array([r.at], float)
        if plate._sdf(p)[0] <= tol:
            continue
        x0, y0, x1, y1 = plate._bbox()
        if plate._sdf(p, holes=False, symmetry=False)[0] > tol:
            where = "outside the plate"
        elif plate._sdf(p, symmetry=False)[0] > tol:
            where = "in a hole or cut-out of the plate"
        else:
            where = "on the side of the plate that the symmetry cut removes"
        raise GeometryError(
            f"Refine at {fmt_point(r.at)} (size {r.size:g}) is {where}, not on the part; the plate "
            f"spans x {x0:g} to {x1:g}, y {y0:g} to {y1:g}. Give a point inside the plate or on its edge; to "
            "refine along a hole or an edge, name it (e.g. Refine('bolt_hole', size=...))"
        )
