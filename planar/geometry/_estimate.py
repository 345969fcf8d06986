"""Element counts estimated before any meshing, and the refusal of jobs too large to finish.

Every mesher and mesh builder of planar asks :func:`refuse_beyond` before it meshes; a job
whose estimated element count exceeds ``max_elements`` (default ``MAX_ELEMENTS``, 2 million), or
whose meshing would need more than the memory available now (``MESH_BYTES_PER_ELEMENT`` bytes per
element), is refused with a :class:`~planar.core.errors.ResourceError` that gives the estimate and
the fix.

The estimate for gmsh meshes (:func:`estimate_elements`) integrates the element density
``1 / (c h^2)`` over the plate, where ``h`` is the element size at a place and ``c h^2`` the area of
one element of size h: ``c = sqrt(3) / 4`` (0.433) for the near-equilateral triangles of gmsh's
frontal Delaunay, ``c = 1`` for quadrilaterals (common practice for a priori element counts). With
the global size H alone the count is ``A / (c H^2)`` for the plate area A.

A :class:`~planar.geometry.meshing.Refine` asks for the size ``h0`` within ``w`` (its ``within``) of
its target, growing as ``h(d) = h0 + s (d - w)`` (``s = growth - 1``) up to H at
``D = w + (H - h0) / s``. Its elements beyond those of the global size are, integrated analytically:

* beside a curve, per side of it that lies in the plate (length L, net turning Theta towards that
  side, so that the band at distance d is ``L + Theta d`` long)::

      dN = (L I0 + max(Theta, 0) I1) / c
      I0 = int_0^D (1/h^2 - 1/H^2) dd = w / h0^2 + (1/h0 - 1/H) / s - D / H^2
      I1 = int_0^D d (1/h^2 - 1/H^2) dd
         = w^2 / (2 h0^2) + ((w - h0/s)(1/h0 - 1/H) + ln(H/h0) / s) / s - D^2 / (2 H^2)

  The leading term for a small h0 is ``L / (c s h0)``: a size a million times smaller than the part
  asks for about 10^8 elements per part length, refused at once.
* around a point, a disc of which the fraction f lies in the plate (1 inside, 1/2 on a straight
  edge)::

      dN = 2 pi f I1 / c     (leading term 2 pi f ln(H / h0) / (c s^2): only logarithmic in h0)

gmsh carries the sizes of a surface's boundary into it by interpolation
(``Mesh.MeshSizeExtendFromBoundary``), which planar's meshes use; two effects follow and are counted:

* beside a refined curve the size grows no faster than from the refined edge to a coarse edge
  across the plate: the slope s is taken as ``min(growth - 1, (H - h0) / W)`` with the plate's mean
  width ``W = 2 A / P`` (P its perimeter). A point's size is not carried along a boundary and grows
  as asked.
* a surface refined all round is filled at the refined size: the estimate is at least
  ``sum A_S / (c hb_S^2)`` over the surfaces S (the regions and the rest of the plate), with
  ``hb_S`` the length-weighted mean size along the boundary of S.

A circular edge of radius R gets sides of at most ``2 pi R / circle_elements`` (gmsh's sizes from
curvature), counted as a refinement of that edge. Overlapping refinements are added up (gmsh takes
the smallest size, so this can only count more): an estimate for refusing. Against gmsh's own
counts (34 meshes: holes, edges, points, regions, symmetry cuts, T3 and Q4, 10^2 to 10^5 elements;
tests/test_trust_bounds.py) it lies between 0.57 and 2.0 times the true count, except a point
refinement in a quadrilateral mesh, where gmsh's quad mesher refines less than asked (3.2 times at
160 elements). The estimate samples a few hundred points of the recipe's curves with numpy: a few
milliseconds (3 to 40 ms measured on a shared machine).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np
from scipy.spatial import cKDTree

from ..core.errors import ResourceError

#: element area over the size squared (the c of the density 1 / (c h^2)): an equilateral triangle of
#: side h, a square of side h
CELL_AREA = {"triangles": math.sqrt(3) / 4, "quads": 1.0}
#: c of the quadrilaterals where the size is graded: gmsh's quad-dominant mesh keeps more triangles
#: there, each split into 3 quadrilaterals of 0.58 h^2 (measured: 0.5-0.6 quadrilaterals per triangle
#: of the same refinement, against 0.43 for c = 1)
GRADED_QUAD_AREA = 0.8
#: the largest estimated element count accepted unless ``max_elements=`` says otherwise: 2 million
#: quadratic triangles are some 8 x 10^6 unknowns, more than a direct solve fits in the memory of a
#: 24 GB machine (4 x 10^6 T6 unknowns take about 10 GB); a larger mesh is meant, and asked for, or
#: it is a size typed wrong (a refinement a million times smaller than the part asks for about 4
#: million elements at a hole a tenth of the part across)
MAX_ELEMENTS = 2_000_000
#: peak memory per element while meshing: measured 1.0 kB per triangle and 1.3 kB per quadrilateral
#: for a mesh made in one piece (0.2-0.8 kB made in pieces, the fast way), rounded up; quadratic cells
#: (the default T6) have the element count of their linear mesh and 1.1 kB per triangle (0.5 kB the
#: fast way; 5.8 x 10^5 triangles of a 400 x 160 plate with a hole)
MESH_BYTES_PER_ELEMENT = 2_000
#: segments per curve sampled for the lengths and the sides of refined curves
_SEGMENTS = 128


def refuse_beyond(estimate: float, max_elements: int, what: str, fix: str,
                  bytes_per_element: float = MESH_BYTES_PER_ELEMENT) -> None:
    """Raise a ResourceError if ``estimate`` elements exceed ``max_elements`` or the memory at hand.

    Parameters
    ----------
    estimate : float
        Estimated element count.
    max_elements : int
        The largest count accepted.
    what : str
        The job, for the message (e.g. "a mesh of size 0.1 with 1 refinement").
    fix : str
        What to change, for the message (e.g. "use a larger size").
    bytes_per_element : float
        Peak memory per element of the job.
    """
    from ..core.solvers import available_memory

    if not math.isfinite(estimate):
        estimate = math.inf
    if estimate > max_elements:
        raise ResourceError(
            f"{what} would have about {estimate:.3g} elements, more than max_elements={max_elements:,}; "
            f"{fix}, or raise max_elements if the machine can take it"
        )
    need = estimate * bytes_per_element
    free = available_memory()
    if need > free:
        raise ResourceError(
            f"{what} would have about {estimate:.3g} elements, which need about {need / 2**30:.1f} GiB "
            f"to make ({bytes_per_element:g} bytes each) but {free / 2**30:.1f} GiB is available; {fix}"
        )


def band_integrals(h0: float, H: float, growth: float, within: float) -> tuple[float, float]:
    """``(I0, I1)`` of the module's notes: the excess density of a refinement, integrated over the
    distance d from its target (I0) and over d times it (I1)."""
    if not h0 < H:
        return 0.0, 0.0
    s = growth - 1.0
    w = within
    a = 1.0 / h0 - 1.0 / H
    D = w + (H - h0) / s
    i0 = w / h0**2 + a / s - D / H**2
    i1 = w * w / (2 * h0**2) + ((w - h0 / s) * a + math.log(H / h0) / s) / s - D * D / (2 * H**2)
    return max(i0, 0.0), max(i1, 0.0)


def _axis_samples(line, bbox, n: int) -> np.ndarray:
    x0, y0, x1, y1 = bbox
    t = np.linspace(0.0, 1.0, n + 1)
    if line.axis == 0:
        return np.column_stack([np.full(t.shape, line.at), y0 + t * (y1 - y0)])
    return np.column_stack([x0 + t * (x1 - x0), np.full(t.shape, line.at)])


def _samples(piece, bbox) -> np.ndarray:
    if hasattr(piece, "axis"):
        return _axis_samples(piece, bbox, _SEGMENTS)
    return np.asarray(piece.sample(_SEGMENTS + 1), float)


def _sides(pts: np.ndarray, sdf, keep, tol: float, scale: float) -> tuple[float, float, float, float]:
    """Length and net turning of a sampled curve on its left and its right side where that side
    lies in the plate (``sdf`` < 0) and ``keep(mid)`` holds."""
    seg = np.diff(pts, axis=0)
    ds = np.hypot(seg[:, 0], seg[:, 1])
    ok = ds > 0
    pts_a, seg, ds = pts[:-1][ok], seg[ok], ds[ok]
    if ds.size == 0:
        return 0.0, 0.0, 0.0, 0.0
    mid = pts_a + 0.5 * seg
    t = seg / ds[:, None]
    nl = np.column_stack([-t[:, 1], t[:, 0]])
    delta = np.clip(0.25 * ds, 20.0 * tol, 1e-3 * scale)[:, None]
    use = keep(mid)
    both = sdf(np.vstack([mid + delta * nl, mid - delta * nl])) < 0
    left, right = both[:mid.shape[0]] & use, both[mid.shape[0]:] & use
    ang = np.arctan2(t[:, 1], t[:, 0])
    if np.hypot(*(pts[-1] - pts[0])) <= 1e-9 * scale:  # closed: a turn between the last and the first
        v = np.angle(np.exp(1j * (np.roll(ang, -1) - ang)))
        turn = 0.5 * (v + np.roll(v, 1))
    else:
        v = np.angle(np.exp(1j * np.diff(ang)))
        turn = 0.5 * (np.pad(v, (0, 1)) + np.pad(v, (1, 0)))
    return (float(ds[left].sum()), float(-turn[left].sum()), float(ds[right].sum()), float(turn[right].sum()))


def _disc_fraction(sdf, at, h0: float, D: float, tol: float) -> float:
    """Fraction of the discs of radius h0 .. D about ``at`` that lies in the plate."""
    r = np.geomspace(max(h0, 10 * tol), max(D, h0, 10 * tol), 8)
    a = np.linspace(0.0, 2 * math.pi, 32, endpoint=False)
    p = np.asarray(at, float) + (r[:, None, None] * np.stack([np.cos(a), np.sin(a)], axis=-1)[None]).reshape(-1, 2)
    return float(np.mean(sdf(p) < 0))


@dataclass(frozen=True)
class _Curved:
    """The size gmsh keeps along a curved edge (``circle_elements`` sides per turn), counted as a
    refinement of its own that grows as gmsh carries it into the plate."""

    at: object  # the arc
    size: float
    growth: float
    within: float = 0.0


def _is_xy(at) -> bool:
    return isinstance(at, tuple) and len(at) == 2 and not isinstance(at[0], str)


def _target(plate, r) -> tuple[list[tuple[np.ndarray, object]], list[np.ndarray]]:
    """The curves (samples, which of their segments count) and points a refinement names.

    Names the plate's recipe does not have give nothing (the mesher names them in its error).
    """
    sdf, tol = plate._sdf, plate._tol()
    bbox = plate._bbox()
    if isinstance(r, _Curved):
        return [(_samples(r.at, bbox), lambda m: np.abs(sdf(m)) <= 100.0 * tol)], []
    if _is_xy(r.at):
        return [], [np.asarray(r.at, float)]
    names = [r.at] if isinstance(r.at, str) else list(r.at)
    pieces = plate._all_named_pieces()
    points = dict(plate._points)

    def on_boundary(m):
        return np.abs(sdf(m)) <= 100.0 * tol

    curves, pts = [], []
    for nm in names:
        mine = [p for p in pieces if p.name == nm]
        if mine:
            curves += [(_samples(p, bbox), on_boundary) for p in mine]
        elif nm in points:
            pts.append(np.asarray(points[nm], float))
        else:
            for rn, shape in plate._regions:
                if rn == nm:
                    curves += [(_samples(p, bbox), lambda m: sdf(m) <= 100.0 * tol) for p in shape._pieces("region")]
                    curves += [(_samples(p, bbox), lambda m, s=shape: on_boundary(m) & (s._sdf(m) < -tol))
                               for p in pieces]
    return curves, pts


def refinement_elements(plate, r, H: float, c: float, slope: float = math.inf) -> float:
    """Elements that the refinement ``r`` adds to a mesh of global size H: the band beside each of
    its curves (whose size grows by at most ``slope`` per unit distance) and the disc around each
    of its points (see the module's notes)."""
    h0 = r.size
    if not h0 < H:
        return 0.0
    s = r.growth - 1.0
    i0, i1 = band_integrals(h0, H, 1.0 + min(s, slope), r.within)
    p0, p1 = band_integrals(h0, H, r.growth, r.within)
    D = r.within + (H - h0) / s
    scale, tol, sdf = plate._scale(), plate._tol(), plate._sdf
    curves, pts = _target(plate, r)
    total = 0.0
    for samples, keep in curves:
        ll, tl, lr, tr = _sides(samples, sdf, keep, tol, scale)
        total += (ll * i0 + max(tl, 0.0) * i1 + lr * i0 + max(tr, 0.0) * i1) / c
    for at in pts:
        total += 2 * math.pi * _disc_fraction(sdf, at, h0, D, tol) * p1 / c
    return total


def _segments(pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    seg = np.diff(pts, axis=0)
    return pts[:-1] + 0.5 * seg, np.hypot(seg[:, 0], seg[:, 1])


def _size_at(plate, refine, H: float, xy: np.ndarray) -> np.ndarray:
    """The size field at the points ``xy``: the global size and every refinement's growth law."""
    h = np.full(xy.shape[0], float(H))
    # refinements of one size, growth and reach (the default one round each hole of a pattern) are one
    # search: their law rises with the distance, so the least over them is the law at the nearest target
    alike: dict[tuple[float, float, float], list[np.ndarray]] = {}
    for r in refine:
        if not r.size < H:
            continue
        curves, pts = _target(plate, r)
        tp = [q[None] for q in pts]
        for samples, keep in curves:
            mid, _ = _segments(samples)
            tp.append(samples[:-1][keep(mid)])
        tp = np.vstack(tp) if tp else np.empty((0, 2))
        if tp.shape[0]:
            alike.setdefault((float(r.size), float(r.growth), float(r.within)), []).append(tp)
    for (size, growth, within), tps in alike.items():
        d, _ = cKDTree(np.vstack(tps)).query(xy)
        h = np.minimum(h, size + (growth - 1.0) * np.maximum(d - within, 0.0))
    return h


def boundary_floor(plate, refine, H: float, c: float, area: float) -> float:
    """Elements of a mesh in which every surface (a region, the rest of the plate) is filled at the
    mean size along its boundary.

    gmsh carries the sizes of a surface's boundary into it (``Mesh.MeshSizeExtendFromBoundary``),
    so a surface refined all round is filled at the refined size, whatever the growth: a region
    named in a Refine, or a plate whose every edge is. The floor is ``sum A_S / (c hb_S^2)`` with
    ``hb_S`` the length-weighted mean size on the boundary of the surface S.
    """
    sdf, tol, bbox = plate._sdf, plate._tol(), plate._bbox()
    mids, lengths, owner = [], [], []
    regions = list(plate._regions)
    for p in plate._all_named_pieces():
        mid, ds = _segments(_samples(p, bbox))
        on = np.abs(sdf(mid)) <= 100.0 * tol
        mid, ds = mid[on], ds[on]
        o = np.full(mid.shape[0], -1)
        for k, (_, shape) in enumerate(regions):
            o[shape._sdf(mid) < -tol] = k
        mids.append(mid), lengths.append(ds), owner.append(o)
    for k, (_, shape) in enumerate(regions):
        for p in shape._pieces("region"):
            mid, ds = _segments(_samples(p, bbox))
            inside = sdf(mid) < -tol
            for o in (k, -1):  # a region's outline bounds it and the rest of the plate
                mids.append(mid[inside]), lengths.append(ds[inside]), owner.append(np.full(int(inside.sum()), o))
    mid, ds, own = np.vstack(mids), np.concatenate(lengths), np.concatenate(owner)
    h = _size_at(plate, refine, H, mid)
    areas = []
    for _, shape in regions:
        x0, y0, x1, y1 = shape.bounding_box()
        g = np.linspace(0.0, 1.0, 65)[:-1] + 1.0 / 128
        X, Y = np.meshgrid(x0 + g * (x1 - x0), y0 + g * (y1 - y0))
        q = np.column_stack([X.ravel(), Y.ravel()])
        areas.append(float(np.mean((shape._sdf(q) < 0) & (sdf(q) < 0))) * (x1 - x0) * (y1 - y0))
    areas.append(max(area - sum(areas), 0.0))
    total = 0.0
    for k, a in zip(list(range(len(regions))) + [-1], areas):
        sel = own == k
        if sel.any() and ds[sel].sum() > 0:
            hb = float(np.sum(ds[sel] * h[sel]) / ds[sel].sum())
            total += a / (c * hb * hb)
    return total


def _perimeter(plate) -> float:
    """Length of the plate's boundary, from the recipe's pieces sampled where they are boundary."""
    sdf, tol, bbox = plate._sdf, plate._tol(), plate._bbox()
    total = 0.0
    for p in plate._all_named_pieces():
        mid, ds = _segments(_samples(p, bbox))
        total += float(ds[np.abs(sdf(mid)) <= 100.0 * tol].sum())
    return total


def estimate(plate, size: float | None, refine=(), *, quads: bool = False, area: float,
             circle_elements: int = 12) -> tuple[float, list[float]]:
    """The estimated element count and each refinement's share of it (see :func:`estimate_elements`)."""
    refine = list(refine)
    c = CELL_AREA["quads" if quads else "triangles"]
    cg = GRADED_QUAD_AREA if quads else c
    H = plate._scale() if size is None else float(size)
    base = area / (c * H * H) if size is not None else 0.0
    curved = []
    if circle_elements:
        for p in plate._all_named_pieces():
            hc = 2 * math.pi * getattr(p, "radius", math.inf) / circle_elements
            if hc < H:
                curved.append(_Curved(p, hc, 2.0))
    if not refine and not curved:
        return base, []
    # gmsh carries the boundary's sizes into the plate by interpolation, so a size grows at most as
    # fast as from the refined edge to a coarse edge across the plate's mean width W = 2 A / P
    # (measured: a point's size, not carried along a boundary, grows as asked)
    width = 2.0 * area / max(_perimeter(plate), 1e-300)

    def part(r):
        return refinement_elements(plate, r, H, cg, slope=(H - r.size) / width if r.size < H else math.inf)

    curved = [replace(q, growth=1.0 + (H - q.size) / width) for q in curved]
    parts = [part(r) for r in refine]
    total = base + sum(parts) + sum(part(q) for q in curved)
    return max(total, boundary_floor(plate, refine + curved, H, cg, area)), parts


def estimate_elements(plate, size: float | None, refine=(), *, quads: bool = False,
                      area: float | None = None, circle_elements: int = 12) -> float:
    """Estimated element count of ``mesh(plate, size, refine=...)``, made before any meshing.

    Parameters
    ----------
    plate : Plate
    size : float or None
        Global element size; None counts the refinements over a global size of the plate's diagonal.
    refine : sequence of Refine
    quads : bool
        Quadrilaterals instead of triangles (``CELL_AREA``, ``GRADED_QUAD_AREA``).
    area : float, optional
        The plate's area, if known (else it is computed, exactly, by gmsh's CAD kernel).
    circle_elements : int
        As for :func:`~planar.geometry.mesh`: the size along a circular edge of radius R is at most
        ``2 pi R / circle_elements``, counted as a refinement of that edge.

    Returns
    -------
    float
        The larger of ``A / (c H^2)`` plus the elements each refinement (and each circular edge)
        adds, and the floor of the surfaces filled at their boundary sizes (see the module's notes).

    Examples
    --------
    >>> from planar.geometry import Plate, Circle, Refine
    >>> plate = Plate.rectangle(200.0, 80.0).cut(Circle((100.0, 40.0), 10.0, name="bolt_hole"))
    >>> f"{estimate_elements(plate, 6.0, [Refine('bolt_hole', size=1e-6)]):.2g}"
    '1.2e+09'
    """
    if area is None:
        area = plate.area()
    return estimate(plate, size, refine, quads=quads, area=area, circle_elements=circle_elements)[0]
