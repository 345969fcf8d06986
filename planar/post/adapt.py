"""Adaptive mesh refinement driven by the Zienkiewicz-Zhu error estimate.

Each cycle solves the model, estimates the error of every element (:mod:`planar.post.estimate`),
turns the indicators into a new element-size field and remeshes the part with it, until the
estimated global error is under a target or the next mesh would exceed a budget of unknowns.

It works for any part: the caller gives ``build(mesh) -> Model`` and either a ``remesh(size_function)
-> Mesh`` callable or a plate geometry (remeshed with gmsh through :func:`planar.geometry.mesh`).
Lengths and sizes are in the model's length unit.

Examples
--------
>>> from planar.post.adapt import SizeField
>>> import numpy as np
>>> f = SizeField(np.array([[0.0, 0.0], [10.0, 0.0]]), np.array([0.5, 2.0]))
>>> [round(float(v), 3) for v in f(np.array([0.0, 10.0]), np.array([0.0, 0.0]))]
[0.5, 2.0]
"""
from __future__ import annotations

import math
import time
import warnings
from dataclasses import dataclass, field
from typing import Callable

import numpy as np
from scipy.spatial import cKDTree

from ..core.compat import callable_module, deprecated, renamed_keywords
from ..core.errors import InputError
from ..core.progress import Progress
from ..core.result import as_result
from .estimate import ErrorEstimate, estimate_error

__all__ = ["SizeField", "Cycle", "AdaptiveRun", "size_field", "element_sizes", "adapt", "remesher"]


class SizeField:
    """Element size h(x, y) interpolated from sizes wanted at a cloud of points (element centres).

    Parameters
    ----------
    points : ndarray, shape (m, 2)
        Where the sizes are given.
    sizes : ndarray, shape (m,)
        Wanted element sizes there (> 0).
    neighbours : int
        Points used per evaluation.
    grading : float
        Largest growth of the size per unit distance (a size h_i at point i allows at most
        h_i + grading * distance elsewhere), so sizes change smoothly and the mesher makes good elements.

    Notes
    -----
    h(x) = min( exp(sum w_i ln h_i / sum w_i), min_i (h_i + grading |x - x_i|) ) over the nearest
    points, with inverse-distance weights w_i = 1 / (|x - x_i|^2 + eps). The call is vectorized and
    accepts scalars or arrays of any (equal) shape.
    """

    def __init__(self, points: np.ndarray, sizes: np.ndarray, *, neighbours: int = 8, grading: float = 0.3):
        pts = np.asarray(points, dtype=float).reshape(-1, 2)
        h = np.asarray(sizes, dtype=float).reshape(-1)
        if pts.shape[0] != h.shape[0] or h.size == 0:
            raise InputError(f"a size field needs one size per point, got {pts.shape[0]} points and {h.size} sizes")
        if not np.all(np.isfinite(h) & (h > 0)):
            raise InputError("element sizes must be positive and finite")
        self.points, self.sizes = pts, h
        self.grading = float(grading)
        self.k = int(min(max(1, neighbours), h.size))
        self._tree = cKDTree(pts)
        self._logh = np.log(h)
        self._eps = (1e-6 * float(np.min(h))) ** 2

    def __call__(self, x, y):
        x = np.asarray(x, dtype=float)
        y = np.asarray(y, dtype=float)
        shape = np.broadcast(x, y).shape
        q = np.column_stack([np.broadcast_to(x, shape).ravel(), np.broadcast_to(y, shape).ravel()])
        d, i = self._tree.query(q, k=self.k)
        d = d.reshape(q.shape[0], self.k)
        i = i.reshape(q.shape[0], self.k)
        w = 1.0 / (d * d + self._eps)
        idw = np.exp(np.sum(w * self._logh[i], axis=1) / np.sum(w, axis=1))
        cap = np.min(self.sizes[i] + self.grading * d, axis=1)
        out = np.minimum(idw, cap).reshape(shape)
        return out if shape else float(out)

    @property
    def smallest(self) -> float:
        return float(self.sizes.min())


def element_sizes(estimate: ErrorEstimate, mesh) -> dict[str, np.ndarray]:
    """Current element sizes (side of the equilateral triangle or square of the same area)."""
    out = {}
    for t, area in estimate.areas.items():
        tri = t in ("T3", "T6") or (t not in ("Q4", "Q8", "Q9") and mesh.cells[t].shape[1] in (3, 6))
        out[t] = np.sqrt(area * (4.0 / math.sqrt(3.0) if tri else 1.0))
    return out


def size_field(result, estimate: ErrorEstimate, target: float, *, degree: int | None = None,
               refine_limit: float = 4.0, coarsen_limit: float = 2.0, h_min: float | None = None,
               h_max: float | None = None, grading: float = 0.3) -> SizeField:
    """New element sizes that spread the error evenly and meet a target relative error.

    Parameters
    ----------
    result : Result
    estimate : ErrorEstimate
        The estimate of ``result``.
    target : float
        Target relative energy-norm error (e.g. 0.01 for 1 %).
    degree : int, optional
        Convergence rate p of the elements (default: the estimate's element degree).
    refine_limit, coarsen_limit : float
        The new size lies within [h / refine_limit, coarsen_limit h] of the current one.
    h_min, h_max : float, optional
        Absolute bounds of the new sizes.
    grading : float
        See :class:`SizeField`.

    Returns
    -------
    SizeField

    Notes
    -----
    The permissible error of one element, when the target error is shared evenly by the n elements,
    is e_bar = target sqrt((||u_h||^2 + eta^2) / n); with eta_e ~ h^p, the new size is
    h_new = h (e_bar / eta_e)^(1/p) (O. C. Zienkiewicz and J. Z. Zhu, Int. J. Numer. Methods Eng. 24,
    1987, eqs. 31-33).
    """
    result = as_result(result, "size_field")
    if not (0 < float(target) < 1):
        raise InputError(f"the target relative error must lie between 0 and 1 (e.g. 0.01 for 1 %), got {target!r}")
    p = int(degree if degree is not None else estimate.degree)
    if p < 1:
        raise InputError(f"the convergence rate p must be at least 1, got {p}")
    mesh = result.mesh
    n = max(estimate.n_elements, 1)
    ebar = float(target) * math.sqrt(estimate.norm**2 + estimate.eta**2) / math.sqrt(n)
    hs = element_sizes(estimate, mesh)
    pts, new = [], []
    for t, eta in estimate.indicators.items():
        h = hs[t]
        ratio = np.where(eta > 0, ebar / np.maximum(eta, 1e-300), coarsen_limit**p)
        hn = h * ratio ** (1.0 / p)
        hn = np.clip(hn, h / float(refine_limit), h * float(coarsen_limit))
        if h_min is not None:
            hn = np.maximum(hn, float(h_min))
        if h_max is not None:
            hn = np.minimum(hn, float(h_max))
        conn = mesh.cells[t]
        pts.append(mesh.nodes[conn].mean(axis=1))
        new.append(hn)
    return SizeField(np.vstack(pts), np.concatenate(new), grading=grading)


@dataclass
class Cycle:
    """One cycle of an adaptive run.

    Attributes
    ----------
    index : int
    dofs : int
        Unknowns of the mesh (two per node).
    n_elements : int
    error : float
        Estimated relative energy-norm error.
    peak : float
        Peak of the tracked field (recovered nodal value).
    location : (float, float)
    seconds : float
        Time of the cycle (mesh, solve, estimate).
    mesh : Mesh
    result : Result or None
        Kept for the final cycle (and all cycles with ``keep_results=True``).
    estimate : ErrorEstimate or None
    """

    index: int
    dofs: int
    n_elements: int
    error: float
    peak: float
    location: tuple[float, float]
    seconds: float
    mesh: object = field(repr=False, default=None)
    result: object = field(repr=False, default=None)
    estimate: object = field(repr=False, default=None)

    def line(self, field_name: str) -> str:
        x, y = self.location
        return (f"cycle {self.index}: {self.dofs:,} unknowns, {self.n_elements:,} elements, estimated error "
                f"{100 * self.error:.3g} %, peak {field_name} {self.peak:.6g} at ({x:.4g}, {y:.4g}) "
                f"[{self.seconds:.1f} s]")


@dataclass
class AdaptiveRun:
    """History of an adaptive refinement.

    Attributes
    ----------
    cycles : list of Cycle
    converged : bool
        True when the estimated error reached the target.
    reason : str
        Why the run stopped.
    target : float
    max_dofs : int
    field : str
    recovery : str
    """

    cycles: list[Cycle]
    converged: bool
    reason: str
    target: float
    max_dofs: int
    field: str
    recovery: str

    @property
    def method(self) -> str:
        """The old name of :attr:`recovery`, kept for one release."""
        deprecated("AdaptiveRun.method is now .recovery; the old name works for one release")
        return self.recovery

    @property
    def final(self) -> Cycle:
        """The last solved cycle."""
        return self.cycles[-1]

    @property
    def result(self):
        return self.final.result

    def table(self) -> str:
        lines = [c.line(self.field) for c in self.cycles]
        lines.append(f"stopped: {self.reason}")
        return "\n".join(lines)

    __str__ = table

    def convergence(self, *, unit: str = ""):
        """Grid convergence study of the peak over the last three (or more) cycles."""
        from .convergence import grid_convergence

        cyc = self.cycles[-3:] if len(self.cycles) >= 3 else self.cycles
        return grid_convergence([c.peak for c in cyc], dofs=[c.dofs for c in cyc],
                                name=f"peak {self.field}", unit=unit)


def remesher(geometry, **mesh_options) -> Callable:
    """A ``remesh(size_function) -> Mesh`` callable for a plate geometry, meshed by gmsh.

    Parameters
    ----------
    geometry : planar.geometry.Plate or Shape
    **mesh_options
        Options of :func:`planar.geometry.mesh` (``size``, ``element``, ``refine``, ``seed`` ...;
        the element is mesh()'s default, T6, unless given). ``size`` sets the first mesh; later
        meshes follow the size function (never coarser than ``size`` where it was given).
    """
    from ..geometry import mesh as gmesh  # post -> geometry is allowed for remeshing

    opts = dict(mesh_options)

    def remesh(size_function=None):
        if size_function is None:
            return gmesh(geometry, **opts)
        o = dict(opts)
        o.pop("refine", None)
        return gmesh(geometry, **o, size_function=size_function)

    return remesh


@renamed_keywords(method="recovery")
def adapt(build: Callable, remesh: Callable, *, target: float = 0.01, max_dofs: int = 100_000,
          max_cycles: int = 8, field: str = "von_mises", recovery: str = "spr", case: str | None = None,
          mesh=None, refine_limit: float = 4.0, coarsen_limit: float = 2.0, grading: float = 0.3,
          verbose: bool | None = None, keep_results: bool = False) -> AdaptiveRun:
    """Refine the mesh of a part until the estimated error meets a target or a budget.

    Parameters
    ----------
    build : callable
        ``build(mesh) -> Model`` (materials, supports and loads on a mesh of the part).
    remesh : callable
        ``remesh(size_function) -> Mesh``; called with None for the first mesh (unless ``mesh`` is
        given), then with a :class:`SizeField` ``h(x, y)``. See :func:`remesher` for a plate geometry.
    target : float
        Target estimated relative energy-norm error (0.01 = 1 %).
    max_dofs : int
        Budget of unknowns: a mesh with more is not solved and the run stops.
    max_cycles : int
        Most cycles (meshes solved).
    field : str
        Stress field whose peak is tracked and reported.
    recovery : {"spr", "average"}
        Recovery for the estimate and the peak.
    case : str, optional
        Load case (default: the model's first).
    mesh : Mesh, optional
        First mesh (instead of ``remesh(None)``).
    refine_limit, coarsen_limit, grading : float
        See :func:`size_field`.
    verbose : bool, optional
        Print one line per cycle on stderr; default: when stderr is a terminal.
    keep_results : bool
        Keep every cycle's result and estimate (only the last one's otherwise).

    Returns
    -------
    AdaptiveRun

    Raises
    ------
    InputError
        Bad target or budget, or a first mesh already above the budget.
    """
    from ..core.static import solve

    if not (0 < float(target) < 1):
        raise InputError(f"target must lie between 0 and 1 (a relative error, e.g. 0.01), got {target!r}")
    if int(max_dofs) < 8 or int(max_cycles) < 1:
        raise InputError(f"need max_dofs >= 8 and max_cycles >= 1, got {max_dofs!r}, {max_cycles!r}")
    say = Progress(verbose, clock=False)
    cycles: list[Cycle] = []
    m = mesh if mesh is not None else remesh(None)
    converged, reason = False, f"reached {max_cycles} cycles"
    for k in range(int(max_cycles)):
        t0 = time.perf_counter()
        if m.n_dofs > int(max_dofs):
            if not cycles:
                raise InputError(f"the first mesh has {m.n_dofs} unknowns, more than max_dofs={max_dofs}; "
                                 "start from a coarser mesh or raise the budget")
            reason = f"the next mesh has {m.n_dofs:,} unknowns, over the budget of {int(max_dofs):,}"
            break
        model = build(m)
        c = case if case is not None else next(iter(model.cases), None)
        r = solve(model, [c] if c is not None else None)[c]
        est = estimate_error(r, recovery=recovery)
        with warnings.catch_warnings(record=True) as heard:  # a coarse cycle's peak is meant to be coarse:
            warnings.simplefilter("always")  # only the last cycle's doubts about its peak are told
            peak, loc, _ = r.max(field, recovery=recovery)
        cyc = Cycle(k, r.n_dofs, est.n_elements, est.relative, peak, loc, time.perf_counter() - t0, m, r, est)
        if cycles and not keep_results:
            cycles[-1].result = cycles[-1].estimate = None
        cycles.append(cyc)
        if say:
            say(cyc.line(field))
        if est.relative <= float(target):
            converged, reason = True, f"estimated error {100 * est.relative:.3g} % <= target {100 * float(target):.3g} %"
            break
        if k == int(max_cycles) - 1:
            break
        sf = size_field(r, est, target, refine_limit=refine_limit, coarsen_limit=coarsen_limit, grading=grading)
        m = remesh(sf)
    for w in heard if cycles else []:
        warnings.warn_explicit(w.message, w.category, w.filename, w.lineno)
    run = AdaptiveRun(cycles, converged, reason, float(target), int(max_dofs), field, recovery)
    if say:
        say(f"stopped: {reason}")
    return run


# ``from planar.post import adapt`` is this module, and calling it calls adapt() (one name, one meaning)
callable_module(__name__, adapt)
