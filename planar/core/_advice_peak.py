"""The ``"coarse-peak"`` check: is the peak a query reports resolved by the mesh where it sits?

A global error estimate (the energy norm over the whole part) can be small while the one place that
matters, the peak, is read by elements too large for its gradient: a hole with a dozen element sides
under a pin, one element across a thin ligament. This check judges the peak locally, by what the
solution itself says there.

The indicator
-------------
Over the cells round the peak node, each cell's own stresses (its Gauss-point values extrapolated to
its nodes, as the nodal averaging does) are set against the recovered nodal field the peak was read
from, in the very field of the query (von Mises, a component, the hoop stress about a centre)::

    eta = max over the nodes of those cells, over the cells | f(raw cell stress) - f(recovered) | / |peak|

(an extreme smaller than half the field's largest magnitude, :data:`SMALL_PEAK`, e.g. the compressive
stress beside a hole in tension, is judged against that half: its error is small beside the stresses
that govern).

Where the mesh resolves the field the cells agree with the recovered field and with each other
(their stresses are continuous to within the discretisation error); where it does not, they differ
by a share of the peak that falls with the element size. It is the local form of the recovery
(Zienkiewicz-Zhu) error estimate, read at the peak instead of summed over the part. On a material
interface only the cells of one side count (the side that agrees best), so a physical jump of the
stresses across the interface is not taken for an error.

Measured (SPR recovery; true error of the peak against an exact or a converged value; eta in %)::

    case (element, size at the feature)                    true error   eta
    Kirsch hole, quarter plate 5 R (G. Kirsch 1898), sigma_xx peak 3 S:
      T6, h = 0.6 R                                          -6.1 %     14.7
      T6, h = 0.4 R / 0.25 R / 0.15 R                        +2.7 / -0.3 / +0.1   10.2 / 5.8 / 2.7
      Q8, h = 0.6 R / 0.4 R / 0.25 R                         +0.7 / +2.7 / +0.8   8.4 / 7.5 / 4.6
    pin in a hole of radius 5 with contact (converged hoop peak 213, T6 at h = 0.2):
      T6, h = 3 / 1.5 / 0.8 / 0.4                            -27 / -12 / -4.7 / -0.4   50 / 27 / 6.0 / 3.6
      Q8, h = 3 / 1.5 / 0.8 / 0.4                            -30 / -15 / -4.3 / -0.9   37 / 12 / 9.3 / 4.2
    ligament 0.05 wide between a hole of radius 10 and an edge (converged peak 5131, Q8 at h = 0.02):
      T6, h = 0.5 / 0.25 / 0.1 / 0.05                        -26 / -13 / -1.4 / -0.2   55 / 19 / 3.8 / 0.5
      Q8, h = 0.5 / 0.25 / 0.1                               -40 / -4.1 / -0.2         20 / 11 / 1.0
    fillet (radius 5) of an L bracket 100 x 100, legs 20, pulled sideways (converged von Mises 40.1):
      T6, h = 3 / 2 / 1 / 0.5                                -17 / -14 / -2.9 / -0.4   39 / 22 / 7.4 / 1.5
      Q8, h = 3 / 2 / 1 / 0.5                                -16 / -16 / -4.6 / -0.5   20 / 22 / 6.5 / 0.6
    the peaks the cases of ``planar verify`` read (converged meshes): eta 4.2 % at most

Hence the threshold :data:`COARSE_ETA` (12 %): every peak above 10 % off is caught, none within 3 %
is (save one von Mises reading of 17 % at T6, h = 0.4 R, 2.6 % off: a mesh of four elements on a
quarter of the hole), and peaks 4-5 % off may pass. The first, deliberately coarse, mesh of the
adaptive Kirsch case in ``planar verify`` (T6, h = 0.6 R, 7 % low) reads 15 % and warns; its
converged meshes do not. The indicator falls about as h^1.5 to h^2 with quadratic elements, which gives the
size the message suggests, with a margin for the slower fall on the coarsest meshes (h^1.3 to h^2
measured above): ``h x (COARSE_ETA / 2 / eta)^(2/3)``.

Linear elements (T3, Q4, degree 1) are left to ``"linear-peak"``
(:mod:`planar.core._advice_linear`): their raw stresses are a degree lower than the recovered ones,
so eta stays at 15-25 % on converged meshes and does not track the error of the recovered peak.
A peak at a sharp re-entrant corner (``"sharp-corner"``), where an interface meets an edge
(``"interface-edge"``), or within two of its own elements (their longest side) of an idealised
support or concentrated load (a fastener's patch where no hole is modelled among them) is not refined away and is not judged here: the field there is the
idealisation's (a T6 cantilever of 1 x 1 cells clamped at its root peaks 1.5 from the clamp, and the
value climbs without bound as the cells shrink).

The cost: one comparison over the connectivity to find the cells of the node, and a handful of
small products for those cells (no loop over elements).
"""
from __future__ import annotations

import math

import numpy as np

from ._advice_node import cells_at, is_stress, peak_doc, peak_words, units_of, warn_peak
from .fields import polar_stress
from .stress import extrapolation_matrix, stress_measures

__all__ = ["COARSE_ETA", "SMALL_PEAK", "peak_resolution", "coarse_peak"]

#: the local indicator (share of the peak) above which a peak read by quadratic (or higher) elements
#: is taken as not resolved by the mesh (measured cases in the module's notes)
COARSE_ETA = 0.12
#: an extreme smaller than this share of the field's largest magnitude is judged against that share
SMALL_PEAK = 0.5
_POLAR = ("sigma_r", "sigma_theta", "tau_r_theta")


def _measure(field: str, centre):
    """The function taking (k, 4) stresses (sxx, syy, txy, szz) at (k, 2) points to the field."""
    if field in _POLAR:
        if centre is None:
            return None
        c = np.asarray(centre, dtype=float)
        return lambda s, xy: polar_stress(s[:, :3], xy, c)[field]
    return lambda s, xy: stress_measures(s[:, :3], s[:, 3])[field]


@peak_doc
def peak_resolution(result, node: int, field: str, values: np.ndarray, *, centre=None) -> dict | None:
    """The local indicator of the peak of ``values`` at ``node`` (see the module's notes).

    Parameters
    ----------
    {peak parameters}
    centre : (float, float), optional
        The centre of a polar field.

    Returns
    -------
    dict or None
        ``{"eta": share, "size": longest cell side at the node, "degree": lowest degree of its cells,
        "basis": what eta is a share of}``,
        or None when it cannot be judged (a field that is not a stress, a zero peak, no cells).

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(20.0, 4.0, 10, 2, "Q8")
    >>> model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Roller("left", fixed="x"))
    >>> _ = model.add_support(planar.Roller((0.0, 0.0), fixed="y"))
    >>> _ = model.add_load(planar.Traction("right", tx=10.0), case="pull")
    >>> r = planar.solve(model)["pull"]
    >>> v = r.field("sigma_xx")
    >>> peak_resolution(r, int(v.argmax()), "sigma_xx", v)["eta"] < 1e-6   # uniform tension: exact
    True
    """
    asm = getattr(result, "assembly", None)
    gauss = getattr(result, "gauss", None)
    if not is_stress(field) or asm is None or gauss is None:
        return None
    f = _measure(field, centre)
    v = np.asarray(values, dtype=float).reshape(-1)
    node = int(node)
    if f is None or not (0 <= node < v.size) or not math.isfinite(v[node]) or v[node] == 0.0:
        return None
    finite = np.abs(v[np.isfinite(v)])
    # a small extreme (the least compressive stress of a part in tension, a minor local peak) is judged
    # against half the field's largest magnitude: its error is small beside the stresses that govern
    small = abs(float(v[node])) < SMALL_PEAK * float(finite.max())
    peak = SMALL_PEAK * float(finite.max()) if small else abs(float(v[node]))
    xyz = asm.mesh.nodes
    by_region: dict = {}
    size, degree = 0.0, None
    for i, rows in cells_at(asm, node):
        b, g = asm.blocks[i], gauss[i]
        E = extrapolation_matrix(b.etype, g.rule)  # (k, q)
        vals = np.concatenate([g.stress[rows], g.szz[rows][..., None]], axis=-1)
        ids = b.conn[rows].ravel()
        raw = np.einsum("kq,eqc->ekc", E, vals).reshape(-1, 4)
        dev = np.abs(f(raw, xyz[ids]) - v[ids])
        dev = dev[np.isfinite(dev)]
        if dev.size:
            key = getattr(b, "region", None)
            by_region[key] = max(by_region.get(key, 0.0), float(dev.max()))
        k = b.etype.corner_count()
        p = xyz[b.conn[rows, :k]]
        size = max(size, float(np.linalg.norm(p[:, :, None] - p[:, None, :], axis=-1).max()))
        d = int(getattr(b.etype, "degree", 1))
        degree = d if degree is None else min(degree, d)
    if not by_region:
        return None
    return {"eta": min(by_region.values()) / peak, "size": size, "degree": int(degree),
            "basis": "half the field's largest magnitude" if small else "the peak"}


def _near_idealisation(result, node: int, size: float) -> bool:
    """Whether ``node`` lies within two of its own elements (``size``, their longest side) of an idealised
    support or concentrated load, or of the patch a fastener is spread over where no hole is modelled:
    the field there is the idealisation's, and refining chases it, not the part."""
    from .zones import NEAR_ELEMENTS, near_idealised

    reach = NEAR_ELEMENTS * size
    model = getattr(result, "model", None)
    if model is not None and near_idealised(result.mesh, model, [int(node)], distance=reach)[0][0]:
        return True
    states = [st for st in (getattr(result, "pin_states", None) or ()) if isinstance(st, dict)]  # PinState: a dict
    patches = [np.asarray(st["nodes"], dtype=np.int64).ravel() for st in states
               if st.get("tie") == "fastener patch" and st.get("nodes") is not None]
    if patches:
        p = result.mesh.nodes[np.concatenate(patches)]
        return bool(np.hypot(*(p - result.mesh.nodes[int(node)]).T).min() <= reach)
    return False


def _edge_of(mesh, node: int) -> str | None:
    """The first named edge (by name) the node lies on, or None."""
    for name in sorted(mesh.edge_sets):
        if np.any(np.asarray(mesh.edge_sets[name]) == node):
            return name
    return None


@peak_doc
def coarse_peak(result, node: int, field: str, values: np.ndarray, *, centre=None, stacklevel: int = 2) -> str:
    """Warn ``"coarse-peak"`` when the peak of ``values`` at ``node`` is not resolved by the mesh there.

    The indicator is :func:`peak_resolution`; it is judged for cells of degree 2 or more only (linear
    cells have ``"linear-peak"``), and not at a sharp re-entrant corner (``"sharp-corner"``). The
    warning, a :class:`~planar.core.errors.DiscretisationWarning`, is kept in ``result.warnings``.

    Parameters
    ----------
    {peak parameters}
    centre : (float, float), optional
        The centre of a polar field.
    {peak stacklevel}

    Returns
    -------
    str
        A short note for a table (``""`` when the peak is resolved or not judged).
    """
    got = peak_resolution(result, node, field, values, centre=centre)
    if got is None or got["degree"] < 2 or got["eta"] < COARSE_ETA:
        return ""
    from ._advice_corner import sharp_corner_near

    if sharp_corner_near(result, node) is not None:
        return ""
    from ._advice_interface import interface_edge_near

    if interface_edge_near(result, node) is not None:  # singular too: its own warning says so
        return ""
    if _near_idealisation(result, node, got["size"]):
        return ""
    node = int(node)
    mesh = result.mesh
    lu = units_of(result)[1]
    lu = f" {lu}" if lu else ""
    eta, h = got["eta"], got["size"]
    new = float(f"{h * (0.5 * COARSE_ETA / eta) ** (2.0 / 3.0):.2g}")
    edge = _edge_of(mesh, node)
    at = f"{edge!r}" if edge is not None else f"({mesh.nodes[node, 0]:.4g}, {mesh.nodes[node, 1]:.4g})"
    where = f"on edge {edge!r}" if edge is not None else "inside the part"
    warn_peak(result, "coarse-peak", f"{peak_words(result, node, field, values, f', {where}')} is not resolved by "
              f"the mesh there: the elements round it, up to {h:.3g}{lu} across, disagree with the recovered field "
              f"by up to {100.0 * eta:.0f} % of {got['basis']} (local error indicator; above "
              f"{100.0 * COARSE_ETA:.0f} % measured peaks were up to 40 % off, mostly low: a hole under a pin, a thin "
              "ligament, a fillet). Refine there, e.g. mesh(..., refine=[Refine("
              f"{at}, size={new:g})]) (about {h / new:.1f} times finer), with at least 3 elements across a ligament, "
              "and confirm the peak with a convergence study (planar.post.convergence_study)", stacklevel + 1)
    return (f"coarse mesh at the peak (coarse-peak: local error indicator {100.0 * eta:.0f} %, elements {h:.3g}{lu}): "
            f"refine to about {new:g}{lu} there")
