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

Linear elements (T3, Q4, degree 1)
----------------------------------
Their raw stresses are a degree lower than the recovered ones (constant in a T3), so eta above stays
at 15-25 % on converged meshes and does not track the error of the recovered peak. For them the
comparison is made at the cells' own stress points, the recovered field interpolated there, and
what is kept is the mean of the signed differences over the stress points of the cells round the
peak node (``eta_points``): where the mesh resolves the field the raw stresses scatter about the
recovered ones (a T3 in bending alternates from cell to cell) and the mean is a per cent or less;
where it does not, the recovered peak stands apart from all its cells' stresses. The largest
difference, like eta, fired on converged meshes (11-13 % on a Q4 pin-loaded hole read to 0.5 %).
Measured (the same cases and references as above; T3 / Q4; eta_points in %)::

    case, size at the feature              true error of the peak          eta_points
    Kirsch hole, h = 0.6 / 0.25 / 0.04 R   -26 / -5.4 / +0.4 %  (T3)        6.6 / 1.7 / 0.4
                                           -15 / -3.7 / -0.2 %  (Q4)        5.1 / 0.0 / 0.0
    pin in a hole, h = 1.5 / 0.8 / 0.2     -27 / -13 / -2.0 %   (T3)        13.5 / 6.9 / 0.4
                                           -32 / -25 / +0.1 %   (Q4)        14.0 / 5.9 / 1.1
    fillet, h = 1 / 0.5 / 0.25             -14 / -4.8 / -1.9 %  (T3)        6.4 / 2.0 / 0.6
                                           -25 / -9.8 / -0.8 %  (Q4)        8.2 / 3.1 / 0.1
    ligament 2 wide between two holes of radius 10 (converged peak 669, Q8 at h = 0.1):
      h = 2 / 1 / 0.5 / 0.1                -22 / -6.5 / -1.1 / 0.0 % (T3)   11.1 / 3.1 / 1.0 / 0.0
                                           -7.9 / -4.2 / -1.6 / -0.3 % (Q4) 4.2 / 0.9 / 0.3 / 0.0
    ligament 1 wide between the holes (converged 960): T3, h = 2 / 1 / 0.5    -24 / -11 / -4.2 %   20.2 / 8.7 / 2.1
    ligament 2 wide, a hole by an edge (converged 790): Q4, h = 2 / 1 / 0.1   -43 / -27 / -0.7 %   5.9 / 5.8 / 0.1

Hence :data:`LINEAR_ETA` (3 %): every converged linear peak above (within 2 %) reads 1.1 % or less,
and the linear versions of the samples (T3 and Q4 in place of T6 and Q8) 2.6 % or less (that one a
Q4 peak 6.5 % below the quadratic one, which ``"linear-peak"`` warns of; the rest 2.0 % or less).
Some peaks 5-8 % low warn. It does not catch every coarse peak (the Q4 hole by an edge reads 5.9 %
at 43 % low, the Q4 fillet at h = 4 1.4 % at 26 % low): those the ``"linear-peak"`` rule catches
(:mod:`planar.core._advice_linear`), and where it holds this check leaves the peak to it, so one
peak draws one warning. In the table every peak 9.8 % low or more draws one or the other.

Linear cells are judged at a stress raiser only: a node on a concave stretch of the boundary, as
``"linear-peak"`` takes it (a hole, fillet, notch root, re-entrant corner, ligament). Elsewhere their
stresses scatter about the recovered field without the peak being wrong by as much (a T3 cantilever
of four cells through the depth, crossed diagonals: the indicator 7 % at its root), and a bending
peak read by too few linear elements through the depth is the ``"slender"`` check's.

A ligament crossed by one element shows no gradient to disagree with: a peak of linear cells on a
concave boundary, :data:`~planar.core._advice_linear.CONCENTRATION` times the median of the field or
more, whose inward normal meets the facing boundary within :data:`THIN_LIGAMENT` (1.5) mean cell
sides (:func:`ligament_across`) is taken as not resolved too. Measured (the ligaments above, and a
hole 1 from an edge): one element across (0.4-1.3 by this count) read 4-52 % low, most over 10 %;
two across (1.7-2.7) from 4 % high to 37 % low (the worst a Q4 hole by an edge, which
``"linear-peak"`` warns of); three or more across within 4.4 %.

A peak at a sharp re-entrant corner (``"sharp-corner"``), where an interface meets an edge
(``"interface-edge"``), or within two of its own elements (their longest side) of an idealised
support or concentrated load (a fastener's patch where no hole is modelled among them) is not refined away and is not judged here: the field there is the
idealisation's (a T6 cantilever of 1 x 1 cells clamped at its root peaks 1.5 from the clamp, and the
value climbs without bound as the cells shrink).

The cost: one comparison over the connectivity to find the cells of the node, and a handful of
small products for those cells (no loop over elements); for linear cells at a concave boundary node
also one distance over the nodes and a median of the field (some 10 ms at 10^6 unknowns).
"""
from __future__ import annotations

import math

import numpy as np

from ._advice_node import cells_at, fan, is_stress, peak_doc, peak_words, round_off, units_of, warn_peak
from .fields import polar_stress
from .stress import extrapolation_matrix, stress_measures

__all__ = ["COARSE_ETA", "LINEAR_ETA", "THIN_LIGAMENT", "SMALL_PEAK", "ROUND_OFF", "ligament_across", "peak_resolution",
           "coarse_peak"]

#: the local indicator (share of the peak) above which a peak read by quadratic (or higher) elements
#: is taken as not resolved by the mesh (measured cases in the module's notes)
COARSE_ETA = 0.12
#: the same for a peak read by linear elements (T3, Q4, degree 1), the indicator taken at the cells'
#: own stress points (their raw stresses are a degree lower than the recovered field's; see the notes)
LINEAR_ETA = 0.03
#: a peak of linear elements at a concave boundary on a ligament crossed by fewer elements than this is
#: taken as not resolved, whatever the indicator says (it misses a ligament too coarse to show a gradient)
THIN_LIGAMENT = 1.5
#: an extreme smaller than this share of the field's largest magnitude is judged against that share
SMALL_PEAK = 0.5
#: a peak (or its basis) smaller than this share of the stresses of its cells is round-off, not judged
ROUND_OFF = 1e-9
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
        ``{"eta": share, "eta_points": share, "size": longest cell side at the node, "degree": lowest
        degree of its cells, "basis": what eta is a share of}`` (``eta_points``: the mean signed
        difference at the cells' stress points, see the notes), or None when it cannot be judged (a
        field that is not a stress, a zero peak or one of round-off beside its cells' stresses, no
        cells).

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
    if round_off(result, v[node]):  # a field of round-off (a case with no load): its peak's place is noise
        return None
    finite = np.abs(v[np.isfinite(v)])
    # a small extreme (the least compressive stress of a part in tension, a minor local peak) is judged
    # against half the field's largest magnitude: its error is small beside the stresses that govern
    small = abs(float(v[node])) < SMALL_PEAK * float(finite.max())
    peak = SMALL_PEAK * float(finite.max()) if small else abs(float(v[node]))
    xyz = asm.mesh.nodes
    by_region: dict = {}
    at_points: dict = {}  # region: (sum, count) of the signed deviations at the stress points
    size, degree, scale = 0.0, None, 0.0
    for i, rows in cells_at(asm, node):
        b, g = asm.blocks[i], gauss[i]
        E = extrapolation_matrix(b.etype, g.rule)  # (k, q)
        vals = np.concatenate([g.stress[rows], g.szz[rows][..., None]], axis=-1)
        ids = b.conn[rows].ravel()
        raw = np.einsum("kq,eqc->ekc", E, vals).reshape(-1, 4)
        key = getattr(b, "region", None)
        _worst(by_region, key, f(raw, xyz[ids]) - v[ids])
        # the same comparison at the cells' own stress points, the recovered field interpolated there
        N = np.asarray(b.etype.shape(g.rule.points), dtype=float)  # (q, nodes of the cell)
        conn = b.conn[rows]
        xq = np.einsum("qk,ekd->eqd", N, xyz[conn]).reshape(-1, 2)
        dev = f(vals.reshape(-1, 4), xq) - np.einsum("qk,ek->eq", N, v[conn]).ravel()
        dev = dev[np.isfinite(dev)]
        total, count = at_points.get(key, (0.0, 0))
        at_points[key] = (total + float(dev.sum()), count + dev.size)
        scale = max(scale, float(np.abs(vals[..., :3]).max(initial=0.0)))
        k = b.etype.corner_count()
        p = xyz[b.conn[rows, :k]]
        size = max(size, float(np.linalg.norm(p[:, :, None] - p[:, None, :], axis=-1).max()))
        d = int(getattr(b.etype, "degree", 1))
        degree = d if degree is None else min(degree, d)
    if not by_region or peak <= ROUND_OFF * scale:  # a field of round-off (a shear stress of a strap in tension)
        return None
    mean = [abs(t) / n for t, n in at_points.values() if n]
    return {"eta": min(by_region.values()) / peak, "eta_points": min(mean, default=0.0) / peak,
            "size": size, "degree": int(degree), "basis": "half the field's largest magnitude" if small else "the peak"}


def ligament_across(result, node: int) -> dict | None:
    """How many elements lie across the material from a boundary node to the boundary facing it.

    The node's inward normal (square to the chord between its two neighbours along the boundary,
    towards its cells) is followed to the first boundary edge it meets within four times the longest
    cell side at the node (in x and in y); the distance, over the mean length of the cell sides at the
    node, is the count.

    Parameters
    ----------
    result : Result
    node : int
        A node of the mesh (the peak node).

    Returns
    -------
    dict or None
        ``{"across": elements across, "width": distance}`` (both ``inf`` when no boundary faces the
        node within that reach), or None for a node inside the part or not a corner of a cell.

    Notes
    -----
    The boundary edges are found among the cells near the node only (an edge of two near nodes used
    by one cell): one distance over the nodes and a sort of a few dozen edges, no loop over elements.
    """
    asm = result.assembly
    X = asm.mesh.nodes
    f = fan(asm, node)
    ends = np.setxor1d(f.prv, f.nxt)
    if ends.size != 2:
        return None
    p = X[int(node)]
    sides = np.hypot(*(X[np.concatenate([f.nxt, f.prv])] - p).T)
    h, reach = float(sides.mean()), 4.0 * float(sides.max())
    t = X[ends[1]] - X[ends[0]]
    n = np.array([-t[1], t[0]]) / max(float(np.hypot(*t)), 1e-300)
    if float(n @ (X[f.around].mean(axis=0) - p)) < 0.0:
        n = -n
    near = np.abs(X[:, 0] - p[0]) < reach  # a square about the node: two passes over the nodes
    near &= np.abs(X[:, 1] - p[1]) < reach
    a_l, b_l = [], []
    for b in asm.blocks:
        c = b.conn[:, :b.etype.corner_count()]
        hit = near[c[:, 0]]
        for j in range(1, c.shape[1]):  # a pass per corner column, not per cell
            hit |= near[c[:, j]]
        c = c[hit]
        k = c.shape[1]
        a_l.append(c.ravel()); b_l.append(c[:, (np.arange(k) + 1) % k].ravel())
    a, q = np.concatenate(a_l).astype(np.int64), np.concatenate(b_l).astype(np.int64)
    keep = near[a] & near[q]
    a, q = a[keep], q[keep]
    key = np.minimum(a, q) * np.int64(X.shape[0]) + np.maximum(a, q)
    _, first, count = np.unique(key, return_index=True, return_counts=True)
    a, q = a[first[count == 1]], q[first[count == 1]]  # edges one near cell uses: the boundary there
    keep = (a != node) & (q != node)
    a, q = a[keep], q[keep]
    if a.size == 0:
        return {"across": math.inf, "width": math.inf}
    # p + s n = X[a] + u (X[q] - X[a]), s > 0, 0 <= u <= 1
    d, r = X[q] - X[a], X[a] - p
    det = d[:, 0] * n[1] - d[:, 1] * n[0]
    with np.errstate(divide="ignore", invalid="ignore"):
        s = (d[:, 0] * r[:, 1] - d[:, 1] * r[:, 0]) / det
        u = (n[0] * r[:, 1] - n[1] * r[:, 0]) / det
    hit = np.isfinite(s) & (s > 1e-9 * h) & (u >= 0.0) & (u <= 1.0)
    width = float(s[hit].min()) if hit.any() else math.inf
    return {"across": width / h, "width": width}


def _worst(by_region: dict, key, dev: np.ndarray) -> None:
    """Keep in ``by_region[key]`` the largest finite magnitude of ``dev`` seen for that region."""
    dev = np.abs(dev)
    dev = dev[np.isfinite(dev)]
    if dev.size:
        by_region[key] = max(by_region.get(key, 0.0), float(dev.max()))


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

    The indicator is :func:`peak_resolution`: ``eta`` against :data:`COARSE_ETA` for cells of degree 2
    or more, ``eta_points`` against :data:`LINEAR_ETA` for linear cells, which are judged at a concave
    stretch of the boundary only (a hole, fillet, notch, ligament) and there also on a ligament crossed
    by fewer than :data:`THIN_LIGAMENT` elements (:func:`ligament_across`). Not
    judged at a sharp re-entrant corner (``"sharp-corner"``), an interface edge, next to an idealised
    support or load, nor where ``"linear-peak"`` holds (its own warning says it). The warning, a
    :class:`~planar.core.errors.DiscretisationWarning`, is kept in ``result.warnings``.

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
    if got is None:
        return ""
    linear = got["degree"] < 2
    eta, limit = (got["eta_points"], LINEAR_ETA) if linear else (got["eta"], COARSE_ETA)
    thin, linear_names = None, []
    if linear:
        # linear cells are judged at a stress raiser only (a concave stretch of the boundary: a hole, fillet,
        # notch, ligament); a bending peak on a straight edge is the "slender" check's (too few through the depth)
        from ._advice_linear import _concave, _fan

        linear_names, angle, ends, _ = _fan(result.assembly, int(node))
        if _concave(result.assembly, int(node), angle, ends) is None:
            return ""
    if eta < limit:
        thin = _thin_ligament(result, node, values) if linear else None
        if thin is None:
            return ""
    from ._advice_corner import sharp_corner_near

    if sharp_corner_near(result, node) is not None:
        return ""
    from ._advice_interface import interface_edge_near

    if interface_edge_near(result, node) is not None:  # singular too: its own warning says so
        return ""
    if _near_idealisation(result, node, got["size"]):
        return ""
    if linear:
        from ._advice_linear import raiser_at

        if raiser_at(result, node, values) is not None:  # "linear-peak" says it, with its own remedy
            return ""
    node = int(node)
    mesh = result.mesh
    lu = units_of(result)[1]
    lu = f" {lu}" if lu else ""
    h = got["size"]
    if thin is not None:  # three elements across the ligament
        new = float(f"{thin['width'] / 3.0:.2g}")
    else:  # the indicator falls about as h^1.5 to h^2 with quadratic elements, as h with linear ones
        new = float(f"{h * (0.5 * limit / eta) ** (1.0 if linear else 2.0 / 3.0):.2g}")
    edge = _edge_of(mesh, node)
    at = f"{edge!r}" if edge is not None else f"({mesh.nodes[node, 0]:.4g}, {mesh.nodes[node, 1]:.4g})"
    where = f"on edge {edge!r}" if edge is not None else "inside the part"
    names = ", ".join(sorted(set(linear_names)))  # the linear element types round the node
    if thin is not None:
        why = (f"it lies on a ligament {thin['width']:.3g}{lu} wide that the linear elements ({names}) cross in "
               f"{thin['across']:.1f} (fewer than {THIN_LIGAMENT:g}), so the rise of the stress across the ligament "
               "to its edges is not represented (measured: such peaks read 4-52 % low, most over 10 %)")
    else:
        cells = (f"the linear elements round it ({names}), up to {h:.3g}{lu} across, disagree at their own stress "
                 "points with the recovered field on average by" if linear else
                 f"the elements round it, up to {h:.3g}{lu} across, disagree with the recovered field by up to")
        measured = "up to 50 % off, all low" if linear else "up to 40 % off, mostly low"
        why = (f"{cells} {100.0 * eta:.0f} % of {got['basis']} (local error "
               f"indicator; above {100.0 * limit:.0f} % measured peaks were {measured}: a hole under a pin, a thin "
               "ligament, a fillet)")
    also = "; or mesh with quadratic elements (element=\"T6\" or \"Q8\")" if linear else ""
    warn_peak(result, "coarse-peak", f"{peak_words(result, node, field, values, f', {where}')} is not resolved by "
              f"the mesh there: {why}. Refine there, e.g. mesh(..., refine=[Refine({at}, size={new:g})]) (about "
              f"{h / new:.1f} times finer), with at least 3 elements across a ligament{also}, and confirm the peak "
              "with a convergence study (planar.post.convergence_study)", stacklevel + 1)
    said = (f"{thin['across']:.1f} elements across the ligament" if thin is not None
            else f"local error indicator {100.0 * eta:.0f} %")
    return (f"coarse mesh at the peak (coarse-peak: {said}, elements {h:.3g}{lu}): refine to about {new:g}{lu} there")


def _thin_ligament(result, node: int, values: np.ndarray) -> dict | None:
    """:func:`ligament_across` where the peak at ``node`` (on a concave stretch of the boundary) is at
    least :data:`~planar.core._advice_linear.CONCENTRATION` times the median of the field, on a ligament
    crossed by fewer than :data:`THIN_LIGAMENT` elements; else None."""
    from ._advice_linear import CONCENTRATION

    asm = result.assembly
    got = ligament_across(result, node)
    if got is None or not got["across"] < THIN_LIGAMENT:
        return None
    v = np.abs(np.asarray(values, dtype=float).reshape(-1))
    level = v[asm.mesh.used_nodes() & np.isfinite(v)]
    med = float(np.median(level)) if level.size else 0.0
    return got if med == 0.0 or v[int(node)] >= CONCENTRATION * med else None
