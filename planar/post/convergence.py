"""Convergence studies: a quantity on three or more meshes, Richardson extrapolation and the GCI.

The quantity (a peak stress, a displacement, a Kt) computed on successively finer meshes gives its
observed order of convergence p, an extrapolated mesh-independent value and Roache's grid
convergence index, a band around the finest-mesh value that should hold the exact one (P. J. Roache,
Verification and Validation in Computational Science and Engineering, Hermosa, 1998; the procedure
for non-integer refinement ratios after I. B. Celik, U. Ghia, P. J. Roache, C. J. Freitas, H. Coleman
and P. E. Raad, "Procedure for estimation and reporting of uncertainty due to discretization in CFD
applications", J. Fluids Eng. 130, 078001, 2008).

Meshes are ranked by a representative element size h; from unknown counts N of 2D meshes,
h ~ N^(-1/2), so the refinement ratio of two meshes is r = (N_fine / N_coarse)^(1/2), an integer or
not. Units: the quantity keeps the model's unit (give it as ``unit`` for the table and the plot).

Examples
--------
>>> from planar.post.convergence import grid_convergence
>>> g = grid_convergence([3.0 + 0.4 * h**2 for h in (1.0, 0.5, 0.25)], sizes=[1.0, 0.5, 0.25])
>>> round(g.order, 10), round(g.extrapolated, 10), g.kind
(2.0, 3.0, 'monotonic')
>>> g.asymptotic, round(100 * g.gci, 4)
(True, 1.0331)

A study judges itself: an observed order outside the plausible band, a non-monotone series or an
asymptotic ratio far from 1 means the meshes are not in the asymptotic range, and no GCI is claimed
(``gci`` is None, ``verdict`` says why, a ``DiscretisationWarning`` with code ``"not-asymptotic"``
is raised).

The bands (P. J. Roache 1998, ch. 5: the GCI and Richardson's extrapolation hold only in the
asymptotic range, where the observed order is the formal one and GCI_32 = r^p GCI_21):

- observed order in [0.5, q + 1] for elements of polynomial degree q. Above q + 1: no stress,
  recovered stress or local quantity of degree-q elements converges faster (q + 1 is the
  superconvergent rate of recovered stresses and of displacements in L2); an order of 7 is an
  accident of three nearly equal values. Below 0.5: the strongest singularity of 2D elasticity, a
  crack (displacements ~ r^(1/2)), limits energy-norm convergence to h^(1/2); slower observed rates
  are pre-asymptotic (or the quantity is unbounded, such as a peak at a re-entrant corner).
- asymptotic ratio GCI_32 / (r21^p GCI_21) in [0.9, 1.1] (Roache: "approximately 1").
"""
from __future__ import annotations

import math
import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Sequence

import numpy as np

from ..core.compat import renamed_keywords
from ..core.errors import InputError, warn
from .files import atomic_path

__all__ = ["GridConvergence", "grid_convergence", "convergence_study", "FS_THREE_GRIDS", "ORDER_FLOOR",
           "RATIO_BAND", "DEFAULT_DEGREE", "MIN_RATIO"]

#: Roache's factor of safety for a study of three or more grids with an observed order
FS_THREE_GRIDS = 1.25
#: lowest plausible observed order: a crack's r^(1/2) singularity gives h^(1/2) in the energy norm
ORDER_FLOOR = 0.5
#: band of the asymptotic ratio GCI_32 / (r21^p GCI_21) taken as "approximately 1" (Roache 1998)
RATIO_BAND = (0.9, 1.1)
#: element degree assumed when a study is given numbers only (quadratic, the meshing default)
DEFAULT_DEGREE = 2
#: least refinement ratio between meshes for a GCI (Celik et al., J. Fluids Eng. 130, 2008: "desirable
#: that r be greater than 1.3"; from memory)
MIN_RATIO = 1.3


@dataclass
class GridConvergence:
    """Result of a grid convergence study (meshes ordered finest first).

    Attributes
    ----------
    values : ndarray, shape (m,)
        The quantity on each mesh, finest first.
    sizes : ndarray, shape (m,)
        Representative element sizes (relative), finest first.
    dofs : ndarray or None
        Unknowns of each mesh, when known.
    order : float
        Observed order p from the three finest meshes (NaN when it cannot be found).
    extrapolated : float
        Richardson extrapolation f_ext = (r21^p f1 - f2) / (r21^p - 1) (NaN when p is unknown).
    gci_fine : float
        GCI_21 = Fs |e21| / (r21^p - 1), e21 = (f2 - f1) / f1: relative band around f1.
    gci_coarse : float
        GCI_32, the same for the next-coarser pair.
    asymptotic_ratio : float
        GCI_32 / (r21^p GCI_21); near 1 when the meshes are in the asymptotic range.
    kind : {"monotonic", "oscillatory", "divergent", "converged"}
        ``"oscillatory"``: the changes f2 - f1 and f3 - f2 differ in sign; ``"divergent"``: the change
        grows under refinement; ``"converged"``: the two finest values agree to round-off.
    ratios : (float, float)
        Refinement ratios r21 = h2 / h1 and r32 = h3 / h2.
    uncertainty : float
        Absolute band around f1: GCI_21 |f1| (monotonic), or half the range of the three finest
        values for oscillatory convergence (F. Stern, R. V. Wilson, H. W. Coleman and E. G. Paterson,
        J. Fluids Eng. 123, 2001, from memory).
    name, unit : str
    safety_factor : float
    asymptotic : bool
        False when the observed order lies outside ``order_band``, the series is not monotone or
        the asymptotic ratio lies outside :data:`RATIO_BAND`: then no GCI is claimed.
    verdict : str
        One line: "in the asymptotic range" or why not.
    order_band : (float, float)
        The plausible band of the observed order, [0.5, degree + 1].
    """

    values: np.ndarray
    sizes: np.ndarray
    dofs: np.ndarray | None
    order: float
    extrapolated: float
    gci_fine: float
    gci_coarse: float
    asymptotic_ratio: float
    kind: str
    ratios: tuple[float, float]
    uncertainty: float
    name: str = "quantity"
    unit: str = ""
    safety_factor: float = FS_THREE_GRIDS
    notes: list[str] = field(default_factory=list)
    asymptotic: bool = True
    verdict: str = "in the asymptotic range"
    order_band: tuple[float, float] = (ORDER_FLOOR, DEFAULT_DEGREE + 1.0)

    @property
    def gci(self) -> float | None:
        """GCI_21 (relative) when the meshes are in the asymptotic range, else None (no GCI claimed)."""
        return float(self.gci_fine) if self.asymptotic else None

    @property
    def finest(self) -> float:
        return float(self.values[0])

    def band(self) -> tuple[float, float]:
        """(low, high) band around the finest-mesh value that should hold the exact value."""
        return self.finest - self.uncertainty, self.finest + self.uncertainty

    def contains(self, value: float) -> bool:
        """True when ``value`` lies within the band around the finest-mesh value."""
        lo, hi = self.band()
        return lo <= float(value) <= hi

    def table(self) -> str:
        """The study as a plain-text table with the summary below it."""
        u = f" [{self.unit}]" if self.unit else ""
        has_n = self.dofs is not None
        head = ["mesh"] + (["unknowns"] if has_n else []) + ["h / h1", f"{self.name}{u}", "change"]
        rows = [head]
        for i in range(self.values.size):
            chg = "" if i == 0 else f"{self.values[i] - self.values[i - 1]:+.6g}"
            rows.append([str(i + 1)] + ([str(int(self.dofs[i]))] if has_n else [])
                        + [f"{self.sizes[i] / self.sizes[0]:.4g}", f"{self.values[i]:.8g}", chg])
        w = [max(len(r[k]) for r in rows) for k in range(len(head))]
        lines = ["  ".join(c.rjust(w[k]) for k, c in enumerate(r)) for r in rows]
        lines.insert(1, "-" * len(lines[0]))
        lines.append("")
        lines.append(f"refinement ratios r21 = {self.ratios[0]:.4g}, r32 = {self.ratios[1]:.4g}; convergence {self.kind}")
        lines.append(f"observed order p = {self.order:.4g}")
        lines.append(f"Richardson extrapolation = {self.extrapolated:.8g}{u}"
                     + ("" if self.asymptotic else " (not reliable: not in the asymptotic range)"))
        lo, hi = self.band()
        if self.asymptotic:
            lines.append(f"GCI fine = {100 * self.gci_fine:.4g} %, GCI coarse = {100 * self.gci_coarse:.4g} % "
                         f"(Fs = {self.safety_factor:g}); asymptotic ratio {self.asymptotic_ratio:.4g} "
                         f"(band {RATIO_BAND[0]:g} to {RATIO_BAND[1]:g})")
            lines.append(f"band on the finest value: {self.finest:.8g} +/- {self.uncertainty:.4g} = "
                         f"[{lo:.8g}, {hi:.8g}]{u}")
        else:
            lines.append(f"NO GCI CLAIMED ({self.verdict}). Refine further or check the quantity is "
                         f"bounded; the finest values differ by {self.uncertainty:.4g}{u}")
        lines.append(f"verdict: {self.verdict}")
        lines.extend(self.notes)
        return "\n".join(lines)

    __str__ = table

    def plot(self, path: str | os.PathLike, *, exact: float | None = None, title: str | None = None,
             dpi: int = 120) -> Path:
        """Write the study as a PNG (atomically): the values against the unknowns, the extrapolated
        value and the GCI band on the finest mesh.

        Parameters
        ----------
        path : str or path-like
            Target ``.png`` file.
        exact : float, optional
            A known exact value to draw for comparison.
        title : str, optional
        dpi : int

        Returns
        -------
        Path
        """
        from matplotlib import colormaps
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        path = Path(path)
        if path.suffix.lower() != ".png":
            raise InputError(f"the convergence plot is a PNG: give a .png file name, got {str(path)!r}")
        cmap = colormaps["viridis"]
        fig = Figure(figsize=(6.4, 4.4))
        FigureCanvasAgg(fig)
        ax = fig.add_subplot(1, 1, 1)
        if self.dofs is not None:
            x = self.dofs.astype(float)
            ax.set_xlabel("unknowns N (log scale)")
        else:
            x = 1.0 / self.sizes
            ax.set_xlabel("relative mesh density h1 / h (log scale)")
        ax.set_xscale("log")
        u = f" [{self.unit}]" if self.unit else ""
        ax.set_ylabel(f"{self.name}{u}")
        ax.plot(x, self.values, "o-", color=cmap(0.25), label="finite-element values")
        lo, hi = self.band()
        if self.asymptotic:
            ax.errorbar([x[0]], [self.finest], yerr=[[self.finest - lo], [hi - self.finest]], fmt="none",
                        ecolor=cmap(0.55), elinewidth=2, capsize=6, label=f"GCI band ({100 * self.gci_fine:.3g} %)")
        else:
            ax.text(0.02, 0.02, f"not in the asymptotic range: no GCI claimed\n({self.verdict})",
                    transform=ax.transAxes, fontsize=8, color="firebrick", va="bottom", ha="left")
        if self.asymptotic and math.isfinite(self.extrapolated):
            ax.axhline(self.extrapolated, color=cmap(0.55), ls="--", lw=1,
                       label=f"Richardson extrapolation (p = {self.order:.3g})")
        if exact is not None:
            ax.axhline(float(exact), color=cmap(0.85), ls=":", lw=2, label="exact")
        ax.grid(True, which="both", alpha=0.3)
        ax.legend(loc="best", fontsize=8)
        state = self.kind if self.asymptotic else f"{self.kind}, NOT asymptotic"
        ax.set_title(title or f"convergence of {self.name} ({state})", fontsize=10)
        fig.tight_layout()
        with atomic_path(path) as tmp:
            fig.savefig(tmp, format="png", dpi=dpi)
        return path


def _observed_order(e21: float, e32: float, r21: float, r32: float) -> float:
    """Observed order from the changes of three meshes (Celik et al. 2008, eqs. 3-5, fixed point)."""
    s = math.copysign(1.0, e32 / e21)
    ln_ratio = math.log(abs(e32 / e21))
    p = abs(ln_ratio) / math.log(r21)
    if abs(r21 - r32) < 1e-12 * r21:
        return p
    p = p if p > 0 else 1.0
    for _ in range(200):
        a, b = r21**p - s, r32**p - s
        if a <= 0 or b <= 0:
            return float("nan")
        new = abs(ln_ratio + math.log(a / b)) / math.log(r21)
        if abs(new - p) < 1e-13 * max(1.0, p):
            return new
        p = 0.5 * (p + new)
    return p


def grid_convergence(values: Sequence[float], *, dofs: Sequence[float] | None = None,
                     sizes: Sequence[float] | None = None, dim: int = 2, name: str = "quantity",
                     unit: str = "", safety_factor: float = FS_THREE_GRIDS, degree: int | None = None,
                     order_band: tuple[float, float] | None = None, stacklevel: int = 2) -> GridConvergence:
    """Observed order, Richardson extrapolation and GCI of a quantity on three or more meshes.

    Parameters
    ----------
    values : sequence of float
        The quantity on each mesh (any order; sorted by size here).
    dofs : sequence of float, optional
        Unknowns of each mesh; the sizes are then h = N^(-1/dim).
    sizes : sequence of float, optional
        Representative element sizes (give these or ``dofs``).
    dim : int, default 2
        Space dimension relating unknowns to sizes.
    name, unit : str
        For the table and the plot.
    safety_factor : float
        Fs of the GCI (1.25 for three or more grids, Roache 1998).
    degree : int, optional
        Polynomial degree of the elements (default :data:`DEFAULT_DEGREE`, quadratic); the plausible
        observed order is [0.5, degree + 1].
    order_band : (float, float), optional
        The plausible band of the observed order, instead of [0.5, degree + 1] (e.g. (0.5, 2 degree)
        for an energy-like quantity such as a compliance).
    stacklevel : int
        Where the "not-asymptotic" warning points (2: the caller).

    Returns
    -------
    GridConvergence

    Raises
    ------
    InputError
        Fewer than three meshes, sizes and unknowns both or neither given, equal sizes, non-finite values,
        a degree below 1 or an empty order band.

    Warns
    -----
    DiscretisationWarning
        Code ``"not-asymptotic"`` when the study is not in the asymptotic range (no GCI claimed).

    Notes
    -----
    With f1, f2, f3 on the finest, middle and coarsest mesh, e21 = f2 - f1, e32 = f3 - f2,
    r21 = h2/h1, r32 = h3/h2 and s = sign(e32/e21), the order p solves
    p = |ln|e32/e21| + ln((r21^p - s)/(r32^p - s))| / ln r21 (Celik et al. 2008); for a constant
    ratio r this is p = ln(e32/e21) / ln r (Roache 1998). Then f_ext = (r21^p f1 - f2)/(r21^p - 1) and
    GCI_21 = Fs |(f2 - f1)/f1| / (r21^p - 1).
    """
    v = np.asarray(values, dtype=float).reshape(-1)
    if v.size < 3:
        raise InputError(f"a convergence study needs the quantity on at least 3 meshes, got {v.size}")
    if not np.all(np.isfinite(v)):
        raise InputError("the quantity is NaN or infinite on some mesh")
    if (dofs is None) == (sizes is None):
        raise InputError("give either dofs= (unknowns per mesh) or sizes= (element size per mesh)")
    nd = None
    if dofs is not None:
        nd = np.asarray(dofs, dtype=float).reshape(-1)
        if nd.shape != v.shape or np.any(nd <= 0):
            raise InputError(f"dofs must be {v.size} positive numbers, got {dofs!r}")
        h = nd ** (-1.0 / int(dim))
    else:
        h = np.asarray(sizes, dtype=float).reshape(-1)
        if h.shape != v.shape or np.any(~np.isfinite(h)) or np.any(h <= 0):
            raise InputError(f"sizes must be {v.size} positive numbers, got {sizes!r}")
    order = np.argsort(h, kind="stable")
    h, v = h[order], v[order]
    nd = nd[order] if nd is not None else None
    if np.any(np.diff(h) <= 1e-12 * h[-1]):
        raise InputError("two meshes have the same size: a convergence study needs distinct, refined meshes")
    f1, f2, f3 = v[0], v[1], v[2]
    r21, r32 = h[1] / h[0], h[2] / h[1]
    e21, e32 = f2 - f1, f3 - f2
    notes: list[str] = []
    scale = max(abs(f1), abs(f2), abs(f3), 1e-300)
    nan = float("nan")
    if abs(e21) <= 1e-13 * scale or abs(e32) <= 1e-13 * scale:
        kind = "converged"
        p, fext, g21, g32, ar = nan, f1, 0.0, 0.0, nan
        unc = abs(e21)
        notes.append("the finest values agree to round-off: no order can be observed")
    else:
        R = e21 / e32
        if R < 0:
            kind = "oscillatory"
        elif R >= 1:
            kind = "divergent"
        else:
            kind = "monotonic"
        p = _observed_order(e21, e32, r21, r32) if kind != "divergent" else nan
        if math.isfinite(p) and p > 0:
            rp = r21**p
            fext = (rp * f1 - f2) / (rp - 1.0)
            g21 = safety_factor * abs(e21 / f1) / (rp - 1.0) if f1 != 0 else nan
            g32 = safety_factor * abs(e32 / f2) / (r32**p - 1.0) if f2 != 0 else nan
            ar = g32 / (rp * g21) if g21 and math.isfinite(g21) else nan
        else:
            fext, g21, g32, ar = nan, nan, nan, nan
        if kind == "monotonic":
            unc = g21 * abs(f1) if math.isfinite(g21) else abs(e21)
        elif kind == "oscillatory":
            unc = 0.5 * (max(f1, f2, f3) - min(f1, f2, f3))
            notes.append("OSCILLATORY convergence (the last two changes differ in sign): the observed order and "
                         "the extrapolation are not reliable; the band is half the range of the three finest "
                         "values. Refine further or check the meshes.")
        else:
            unc = abs(e21)
            notes.append("DIVERGENT: the change grows under refinement; the meshes are not in the asymptotic "
                         "range (or the quantity is singular, e.g. a peak at a sharp re-entrant corner).")
    if v.size > 3:
        notes.append(f"{v.size} meshes: order, extrapolation and GCI use the three finest")
    local = ""
    if nd is not None and min(r21, r32) < MIN_RATIO:
        # unknowns of the whole mesh: a mesh refined only at the feature looks barely refined by them
        local = (f"; the refinement ratios from the unknowns ({r21:.3g}, {r32:.3g}) are under {MIN_RATIO:g}: if "
                 "the meshes are refined only at the feature, give the element size there with sizes=")
        notes.append(f"refinement ratios {r21:.3g} and {r32:.3g} from the unknowns of the whole meshes, under "
                     f"{MIN_RATIO:g} (the least Celik et al. 2008 advise for a GCI); meshes refined only at the "
                     "feature under check need their local element sizes (sizes=)")
    band = _order_band(degree, order_band)
    reasons = _not_asymptotic(v, kind, float(p), float(ar), band)
    if reasons and kind == "monotonic":
        unc = abs(e21)  # no GCI band: the last change is all that is known
    verdict = "in the asymptotic range" if not reasons else "not in the asymptotic range: " + "; ".join(reasons)
    g = GridConvergence(v, h, nd, float(p), float(fext), float(g21), float(g32), float(ar), kind,
                        (float(r21), float(r32)), float(unc), name, unit, float(safety_factor), notes,
                        not reasons, verdict, band)
    if reasons:
        warn(f"convergence study of {name}: {verdict}; no GCI is claimed (Roache 1998: the GCI holds only in "
             "the asymptotic range). Refine further, or check that the quantity is bounded (not a peak at a "
             f"sharp corner or a point load){local}", "not-asymptotic", stacklevel=stacklevel)
    return g


def _order_band(degree: int | None, order_band: tuple[float, float] | None) -> tuple[float, float]:
    """[0.5, degree + 1], or the band given."""
    if order_band is not None:
        lo, hi = (float(b) for b in order_band)
        if not (math.isfinite(lo) and math.isfinite(hi) and 0 <= lo < hi):
            raise InputError(f"order_band must be (low, high) with 0 <= low < high, got {order_band!r}")
        return lo, hi
    q = DEFAULT_DEGREE if degree is None else int(degree)
    if q < 1:
        raise InputError(f"the element degree must be 1 or more, got {degree!r}")
    return ORDER_FLOOR, q + 1.0


def _not_asymptotic(v: np.ndarray, kind: str, p: float, ar: float, band: tuple[float, float]) -> list[str]:
    """Reasons the study is not in the asymptotic range (empty when it is)."""
    if kind == "converged":
        return []
    reasons = []
    d = np.diff(v)
    d = d[np.abs(d) > 1e-13 * np.max(np.abs(v))]
    if kind == "divergent":
        reasons.append("the changes grow under refinement (divergent)")
    elif kind != "monotonic" or (d.size and not (np.all(d > 0) or np.all(d < 0))):
        reasons.append(f"the series is not monotone ({kind if kind != 'monotonic' else 'over all meshes'})")
    if kind == "monotonic":
        if not (band[0] <= p <= band[1]):
            reasons.append(f"observed order {p:.3g} outside the plausible band [{band[0]:g}, {band[1]:g}]")
        if not (RATIO_BAND[0] <= ar <= RATIO_BAND[1]):
            reasons.append(f"asymptotic ratio {ar:.4g} outside [{RATIO_BAND[0]:g}, {RATIO_BAND[1]:g}]")
    return reasons


@renamed_keywords(method="recovery")
def convergence_study(build: Callable, meshes: Sequence, quantity: str | Callable = "von_mises", *,
                      case: str | None = None, recovery: str = "spr", unit: str = "", name: str | None = None,
                      order_band: tuple[float, float] | None = None, where=None,
                      sizes: Sequence[float] | None = None) -> GridConvergence:
    """Solve the same model on three or more meshes and study the convergence of a quantity.

    Parameters
    ----------
    build : callable
        ``build(mesh) -> Model``.
    meshes : sequence of Mesh
        Three or more meshes of the part, coarse to fine or in any order.
    quantity : str or callable
        A stress field name (its peak nodal value is taken) or ``quantity(result) -> float``.
    case : str, optional
        Load case (default: the model's first).
    recovery : {"spr", "average"}
        Recovery of the peak when ``quantity`` is a field name.
    unit : str
        Unit of the quantity, for the table and the plot.
    name : str, optional
        The quantity's name for the table and the plot axis (default: "peak <field>", with the zone
        when ``where`` is given, or the callable's name).
    order_band : (float, float), optional
        Plausible band of the observed order (default [0.5, q + 1], q the highest element degree of
        the meshes).
    where : str or Zone, optional
        Read the peak only here when ``quantity`` is a field name (:meth:`planar.Result.max`): the
        name of an edge or region, or a zone (``OnEdge``, ``InRegion``, ``InCircle``, ``InBox``,
        ``Near``, ``Away``). A peak next to an idealised support or concentrated load on the finest
        mesh is noted in the study (such a peak is singular and does not converge).
    sizes : sequence of float, optional
        The element size at the feature under check in each mesh, in the order of ``meshes``. By
        default the sizes come from the unknowns of the whole mesh (h = N^(-1/2)), which is right for
        meshes refined everywhere; meshes refined only at the feature need their local sizes here.

    Returns
    -------
    GridConvergence
    """
    from ..core.registry import element_type
    from ..core.static import solve

    meshes = list(meshes)
    if len(meshes) < 3:
        raise InputError(f"a convergence study needs at least 3 meshes, got {len(meshes)}")
    if where is not None and callable(quantity):
        raise InputError("where= limits the peak of a field; a quantity given as a function reads its own "
                         "zone (e.g. lambda r: r.max('von_mises', where='fillet').value)")
    values, dofs, degree, said, note = [], [], 1, "everywhere", ""
    for m in meshes:
        for t in getattr(m, "cells", {}):
            try:
                degree = max(degree, int(element_type(t).degree))
            except Exception:  # an unregistered layout: keep the default band
                degree = max(degree, DEFAULT_DEGREE)
        model = build(m)
        c = case if case is not None else next(iter(model.cases), None)
        r = solve(model, [c] if c is not None else None)[c]
        if callable(quantity):
            values.append(float(quantity(r)))
        else:
            peak = r.max(quantity, recovery=recovery, where=where)
            values.append(peak.value)
            if r.n_dofs >= max(dofs, default=0):
                said, note = peak.where, peak.note  # of the finest mesh
        dofs.append(r.n_dofs)
    if name is None:
        name = (f"peak {quantity}" + ("" if said == "everywhere" else f" {said}") if isinstance(quantity, str)
                else getattr(quantity, "__name__", "quantity"))
    if sizes is not None and len(list(sizes)) != len(meshes):
        raise InputError(f"sizes= needs one element size per mesh ({len(meshes)}), got {sizes!r}")
    g = grid_convergence(values, dofs=None if sizes is not None else dofs, sizes=sizes, name=name, unit=unit,
                         degree=degree, order_band=order_band, stacklevel=4)  # 4: past the keyword wrapper
    if sizes is not None:  # the unknowns solved are known here: kept for the table, in the study's order (finest first)
        g.dofs = np.asarray(dofs, dtype=float)[np.argsort(np.asarray(sizes, dtype=float), kind="stable")]
    if note:
        g.notes.append(f"the peak on the finest mesh sits {note}")
    return g
