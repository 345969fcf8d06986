"""The ``"interface-edge"`` check: a stress peak read where an interface between regions meets a free edge.

Where two bonded regions of different stiffness meet the part's free boundary, the linear-elastic
stress is singular in general, even on a straight edge: it grows as r^(lambda - 1) towards the point,
0 < Re(lambda) < 1 (D. B. Bogy, "Two edge-bonded elastic wedges of different materials and wedge
angles under surface tractions", J. Appl. Mech. 38, 1971, 377-386). Its strength 1 - lambda depends on
the angles of the wedges of material at the point and on the two Dundurs parameters alpha and beta of
the pair of materials (J. Dundurs, discussion of Bogy's 1968 paper, J. Appl. Mech. 36, 1969, 650-652;
from memory). A peak read there is set by the mesh: it rises by a factor of about 10^(1 - lambda) for
every tenfold refinement of the elements around the point, without limit.

In a plane model the regions differ by their plane moduli or by their thickness: the equations are
those of the membrane forces (stress times thickness), so a step in thickness is a step in stiffness
E t just as a step in modulus is. Each wedge therefore enters with the shear stiffness mu t and
Kolosov's constant kappa of the model's plane state (3 - 4 nu in plane strain, (3 - nu) / (1 + nu) in
plane stress); both are read from the wedge's own plane elasticity matrix D, kappa = (D12 + 3 D33) /
(D12 + D33), so the analysis as solved is the one assessed.

The exponent is the smallest root 0 < Re(lambda) < 1 of the determinant of the wedge eigenproblem
(Bogy's characteristic equation, set up numerically here for any number of wedges; D. B. Bogy and
K. C. Wang, "Stress singularities at interface corners in bonded dissimilar isotropic elastic materials",
Int. J. Solids Struct. 7, 1971, treat the closed ring, from memory): in each wedge
the Airy stress function r^(lambda + 1) [a cos((lambda + 1) theta) + b sin((lambda + 1) theta) +
c cos((lambda - 1) theta) + d sin((lambda - 1) theta)] (M. L. Williams, J. Appl. Mech. 19, 1952, 526-528)
with its displacements (J. R. Barber, Elasticity, the chapter on wedge problems); zero traction on the
two free faces, continuous traction and displacement across each interface. Inside the part the wedges
close round the point (their angles add up to 2 pi) and the last is bonded to the first instead of the
two free faces: a corner of an insert or of a thicker pad, or a point where three regions meet. With
a rigid neighbour this is M. L. Williams' wedge with both faces clamped, kappa sin(lambda g) = +-
lambda sin g (1952; from memory), which the ring reproduces. A rigid rotation of the whole
satisfies every condition at lambda = 1, so the determinant is divided by (lambda - 1). Real roots are
bracketed on a fine scan and refined by Brent's method; complex ones (lambda = x +- i y, an
oscillating singularity) are found from the local minima of |det| on a grid of the strip and refined by
Newton's method on the analytic determinant.

The wedges are read from the mesh: the cells around the boundary node in counter-clockwise order from
one boundary side to the other, each cell's angle between the tangents of its two sides at the node
(through the mid-side node of a quadratic side, as :mod:`._advice_corner` reads corners), consecutive
cells of one section (same D and thickness) joined into one wedge. Inside the part, a point where
two regions meet counts only where their interface turns a true corner: by
:data:`planar.core._advice_corner.SHARP_KINK` (15 degrees) or more, while it turns by less than a
third of that at the next node along it on either hand, as the sharp-corner check reads the boundary
(a circular insert meshed with straight sides turns by about as much at every node, and the circle it
stands for is not singular; quadratic sides follow the curve and hardly turn). Where three or more
regions meet, the point counts as it is. Not assessed (no warning): a point where a region is
anisotropic (Dundurs' parameters do not apply), and a point held by a support (not a free edge; the
idealised-support note speaks there).

The strongest exponent is the one reported; a load may excite the next one more (a steel square in
aluminium, plane stress: lambda = 0.866 and 0.948; its corner's peak measured 10-11 % higher per fourfold
refinement, between the two), so the rise per refinement is stated as "up to".

A singularity counts as weak, and draws no warning, when 1 - lambda < :data:`WEAK_STRENGTH`: a tenfold
refinement of the elements at the point then raises the singular peak by less than 5 %, the usual
tolerance of a mesh-convergence check on a peak (common practice). Above it, a convergence study
that halves the elements once may still pass while the peak has no limit.
"""
from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from ._advice_node import angles, clear_distance, fan, node_memo, peak_doc, point_source, warn_if_found
from .errors import InputError, fmt_point

__all__ = ["WEAK_STRENGTH", "NEAR_SIZES", "dundurs", "wedge_determinant", "singularity_exponent",
           "interface_edge_near", "interface_edge_peak"]

#: strength 1 - lambda from which a singularity warns: a tenfold refinement then raises the peak by 5 %
WEAK_STRENGTH = math.log10(1.05)
#: a peak within this many local element sizes of the point counts as the point's peak (the recovered
#: peak of a singular field sits at the point or in the ring of elements around it)
NEAR_SIZES = 2.0

_LO, _HI = 1e-3, 1.0 - 1e-6  # the strip of exponents searched (lambda = 0 and 1 are trivial roots)


def dundurs(mu1: float, kappa1: float, mu2: float, kappa2: float) -> tuple[float, float]:
    """Dundurs' bimaterial parameters (alpha, beta) of material 1 against material 2.

    Parameters
    ----------
    mu1, mu2 : float
        Shear moduli (times the thickness, for a plane model of regions of different thickness).
    kappa1, kappa2 : float
        Kolosov's constants: 3 - 4 nu in plane strain, (3 - nu) / (1 + nu) in plane stress.

    Returns
    -------
    alpha, beta : float
        alpha = (mu1 (kappa2 + 1) - mu2 (kappa1 + 1)) / (mu1 (kappa2 + 1) + mu2 (kappa1 + 1)) and
        beta = (mu1 (kappa2 - 1) - mu2 (kappa1 - 1)) / (mu1 (kappa2 + 1) + mu2 (kappa1 + 1)).

    Examples
    --------
    >>> a, b = dundurs(1.0, 1.8, 1.0, 1.8)   # one material
    >>> float(a), float(b)
    (0.0, 0.0)
    """
    den = mu1 * (kappa2 + 1.0) + mu2 * (kappa1 + 1.0)
    return (mu1 * (kappa2 + 1.0) - mu2 * (kappa1 + 1.0)) / den, (mu1 * (kappa2 - 1.0) - mu2 * (kappa1 - 1.0)) / den


def _rows(lam: np.ndarray, theta: float, mu: float, kappa: float) -> np.ndarray:
    """(m, 4, 4): the Airy function F, its derivative F' (zero with the tractions sigma_tt and sigma_rt)
    and 2 mu times the displacements u_r, u_t, per unit r^lambda, of the four Williams functions."""
    lam = lam[:, None]
    p, q = lam + 1.0, lam - 1.0
    cp, sp, cq, sq = np.cos(p * theta), np.sin(p * theta), np.cos(q * theta), np.sin(q * theta)
    F = np.concatenate([cp, sp, cq, sq], axis=-1)
    dF = np.concatenate([-p * sp, p * cp, -q * sq, q * cq], axis=-1)
    ur = np.concatenate([-p * cp, -p * sp, (kappa - lam) * cq, (kappa - lam) * sq], axis=-1) / (2.0 * mu)
    ut = np.concatenate([p * sp, -p * cp, (kappa + lam) * sq, -(kappa + lam) * cq], axis=-1) / (2.0 * mu)
    return np.stack([F, dF, ur, ut], axis=-2)


def wedge_determinant(lam, angles, shear_moduli, kappas, closed: bool = False) -> np.ndarray:
    """The characteristic determinant of bonded wedges with two traction-free outer faces, or of a
    closed ring of bonded wedges (a corner of an interface inside the part).

    Parameters
    ----------
    lam : complex or array_like
        Exponents (the displacement goes as r^lambda, the stress as r^(lambda - 1)).
    angles : sequence of float
        The wedges' angles in radians, in counter-clockwise order from one free face to the other
        (``closed``: round the point, adding up to 2 pi).
    shear_moduli, kappas : sequence of float
        Each wedge's shear modulus (times thickness) and Kolosov constant.
    closed : bool
        The last wedge is bonded to the first (no free face): the four conditions of the two free
        faces are replaced by the continuity of traction and displacement across that last interface.

    Returns
    -------
    ndarray
        det M(lambda) / (lambda - 1) (the factor of the rigid rotation taken out), real on the real axis.

    Examples
    --------
    >>> import numpy as np
    >>> d = wedge_determinant([0.5, 0.6], [1.5 * np.pi], [1.0], [1.8])   # a 270 degree corner
    >>> bool(d[0] * d[1] < 0)   # Williams' root 0.5445 lies between
    True
    """
    lam = np.atleast_1d(np.asarray(lam))
    lam = lam.astype(complex if np.iscomplexobj(lam) else float)
    n = len(angles)
    if n < 1 or len(shear_moduli) != n or len(kappas) != n:
        raise InputError("wedge_determinant needs one shear modulus and one kappa per wedge angle")
    mu = np.asarray(shear_moduli, dtype=float)
    mu = mu / mu.mean()  # only the ratios matter; keeps the displacement rows of order one
    edges = np.concatenate([[0.0], np.cumsum(np.asarray(angles, dtype=float))])
    M = np.zeros((lam.size, 4 * n, 4 * n), dtype=lam.dtype)
    r = 0
    if not closed:
        M[:, 0:2, 0:4] = _rows(lam, edges[0], mu[0], kappas[0])[:, :2, :]
        r = 2
    for k in range(1, n):  # one interface after another: traction and displacement continuous
        M[:, r:r + 4, 4 * (k - 1):4 * k] = _rows(lam, edges[k], mu[k - 1], kappas[k - 1])
        M[:, r:r + 4, 4 * k:4 * k + 4] = -_rows(lam, edges[k], mu[k], kappas[k])
        r += 4
    if closed:  # the last wedge at 2 pi bonded to the first at 0
        M[:, r:r + 4, 4 * (n - 1):] = _rows(lam, edges[n], mu[n - 1], kappas[n - 1])
        M[:, r:r + 4, 0:4] -= _rows(lam, edges[0], mu[0], kappas[0])
    else:
        M[:, r:r + 2, 4 * (n - 1):] = _rows(lam, edges[n], mu[n - 1], kappas[n - 1])[:, :2, :]
    return np.linalg.det(M) / (lam - 1.0)


def singularity_exponent(angles, shear_moduli, kappas, closed: bool = False) -> complex | None:
    """The smallest root 0 < Re(lambda) < 1 of :func:`wedge_determinant` (None when there is none).

    Parameters
    ----------
    angles, shear_moduli, kappas, closed
        As for :func:`wedge_determinant`.

    Returns
    -------
    complex or None
        lambda (its imaginary part zero for a plain power singularity); the stress goes as r^(lambda - 1).

    Examples
    --------
    >>> import numpy as np
    >>> round(singularity_exponent([1.5 * np.pi], [1.0], [1.8]).real, 4)   # Williams, 270 degrees
    0.5445
    >>> singularity_exponent([np.pi / 2, np.pi / 2], [1.0, 1.0], [1.8, 1.8]) is None   # a straight edge
    True
    """
    key = (tuple(float(a) for a in angles), tuple(float(m) for m in shear_moduli), tuple(float(k) for k in kappas))
    return _exponent(*key, bool(closed))


@lru_cache(maxsize=256)
def _exponent(angles: tuple, mus: tuple, kappas: tuple, closed: bool = False) -> complex | None:
    with np.errstate(all="ignore"):  # a Newton step far out in the strip overflows; its root is then refused
        return _search(angles, mus, kappas, closed)


def _search(angles: tuple, mus: tuple, kappas: tuple, closed: bool = False) -> complex | None:
    from scipy.optimize import brentq

    def f(z):
        return wedge_determinant(np.array([z]), angles, mus, kappas, closed)[0]

    found: list[complex] = []
    x = np.concatenate([np.linspace(_LO, 0.95, 1900), np.linspace(0.95, _HI, 1000)[1:]])
    d = wedge_determinant(x, angles, mus, kappas, closed)
    for i in np.flatnonzero(np.sign(d[:-1]) * np.sign(d[1:]) < 0):
        found.append(complex(brentq(lambda t: float(f(t)), x[i], x[i + 1], xtol=1e-13), 0.0))
    # complex roots (and double real ones): local minima of |det| on a grid of the upper strip, then Newton
    re = np.linspace(0.01, 0.99, 99)
    im = np.linspace(0.0, 1.5, 76)
    Z = re[None, :] + 1j * im[:, None]
    A = np.abs(wedge_determinant(Z.ravel(), angles, mus, kappas, closed)).reshape(Z.shape)
    P = np.pad(A, 1, mode="constant", constant_values=np.inf)
    P[0, 1:-1] = P[2, 1:-1]  # mirror across the real axis (det(conj z) = conj det z)
    core = P[1:-1, 1:-1]
    low = np.ones_like(core, dtype=bool)
    for di in (-1, 0, 1):
        for dj in (-1, 0, 1):
            if di or dj:
                low &= core <= P[1 + di:P.shape[0] - 1 + di, 1 + dj:P.shape[1] - 1 + dj]
    for z in Z[low]:
        z = complex(z)
        for _ in range(60):
            h = 1e-7 * (1.0 + abs(z))
            fz = f(z)
            dz = fz / ((f(z + h) - f(z - h)) / (2.0 * h))
            z -= dz
            if not np.isfinite(z) or abs(dz) < 1e-12:
                break
        if np.isfinite(z) and abs(dz) < 1e-9 and _LO < z.real < _HI:
            found.append(complex(z.real, abs(z.imag)) if abs(z.imag) > 1e-7 else complex(z.real, 0.0))
    if not found:
        return None
    return min(found, key=lambda z: (round(z.real, 9), z.imag))


# ------------------------------------------------------------------------------------- the mesh
def _sections(asm) -> tuple[list[int], list[tuple[float, float] | None]]:
    """Section number of each block (equal D and thickness share one), and (mu t, kappa) of each
    section (None when its D is not isotropic in the plane)."""
    Dt = [np.asarray(b.D, dtype=float) * float(b.thickness) for b in asm.blocks]
    scale = max(float(np.abs(d).max()) for d in Dt) or 1.0
    keys: list[tuple] = []
    ids = []
    for d in Dt:
        key = tuple(np.round(d.ravel() / scale, 10))
        if key not in keys:
            keys.append(key)
        ids.append(keys.index(key))
    props: list[tuple[float, float] | None] = [None] * len(keys)
    for b, s in zip(asm.blocks, ids):
        D = np.asarray(b.D, dtype=float)
        lam_, mu = D[0, 1], D[2, 2]
        tol = 1e-9 * abs(D).max()
        iso = (abs(D[0, 0] - D[1, 1]) <= tol and abs(D[0, 2]) <= tol and abs(D[1, 2]) <= tol
               and abs(D[0, 0] - lam_ - 2.0 * mu) <= tol and mu > 0 and lam_ + mu > 0)
        props[s] = (mu * float(b.thickness), (lam_ + 3.0 * mu) / (lam_ + mu)) if iso else None
    return ids, props


def _junctions(asm, ids) -> np.ndarray:
    """The corner nodes whose cells belong to two or more sections (all at once), on the boundary or inside."""
    n = asm.mesh.n_nodes
    lo = np.full(n, np.iinfo(np.int64).max)
    hi = np.full(n, -1)
    for b, s in zip(asm.blocks, ids):
        c = np.asarray(b.conn[:, :b.etype.corner_count()], dtype=np.int64).ravel()
        np.minimum.at(lo, c, s)
        np.maximum.at(hi, c, s)
    return np.flatnonzero((hi >= 0) & (lo != hi))


def _wedges(asm, ids, node: int) -> tuple[list[tuple[float, int]], list[int], bool] | None:
    """The wedges of material at a node where sections meet: ([(angle in radians, section)], [the node
    at the far end of each wedge's first side], closed), counter-clockwise from one free side to the
    other on the boundary (``closed`` False), or round the node from a change of section inside the part
    (``closed`` True); None when the node is no corner of a single fan of cells."""
    f = fan(asm, node)
    if not f.size:
        return None
    first, last = f.ends()
    closed = first.size == 0 and last.size == 0
    if not closed and (first.size != 1 or last.size != 1):
        return None  # a node where two fans touch
    ang = angles(f.t_next, f.t_prev)  # each cell's angle at the node
    by_next = {int(e): c for c, e in enumerate(f.nxt)}
    order, e = [], int(first[0]) if not closed else int(f.nxt[0])
    for _ in range(f.size):  # the few cells at one node, in their order round it
        c = by_next.get(e)
        if c is None:
            return None
        order.append(c)
        e = int(f.prv[c])
        if e == (int(f.nxt[0]) if closed else int(last[0])):
            break
    else:
        return None
    if closed:
        if len(order) != f.size:
            return None
        sec = [ids[int(f.block[c])] for c in order]
        start = next((i for i in range(len(order)) if sec[i] != sec[i - 1]), None)
        if start is None:
            return None  # one section all round: no interface at this node
        order = order[start:] + order[:start]
    out: list[tuple[float, int]] = []
    sides: list[int] = []
    for c in order:
        s = ids[int(f.block[c])]
        if out and out[-1][1] == s:
            out[-1] = (out[-1][0] + float(ang[c]), s)
        else:
            out.append((float(ang[c]), s))
            sides.append(int(f.nxt[c]))
    return out, sides, closed


def _kink(asm, ids, node: int) -> float:
    """How far (degrees) a two-wedge interface turns at a node inside the part (0 for any other node)."""
    w = _wedges(asm, ids, node)
    if w is None or not w[2] or len(w[0]) != 2:
        return 0.0
    return abs(math.degrees(w[0][0][0]) - 180.0)


def _interface_corner(asm, ids, node: int, wedges: list, sides: list[int]) -> bool:
    """True for a node inside the part where the interface turns a true corner: three or more wedges
    meet there, or two whose interface turns by :data:`planar.core._advice_corner.SHARP_KINK` or more while
    it turns by less than a third of that at the next node along it on either hand (a curved interface
    meshed with straight sides turns by about as much at every node, and is not singular)."""
    from ._advice_corner import SHARP_KINK

    if len(wedges) > 2:
        return True
    k = abs(math.degrees(wedges[0][0]) - 180.0)
    return k >= SHARP_KINK and all(_kink(asm, ids, j) < k / 3.0 for j in sides)


def _held(result) -> np.ndarray:
    """Mask of the nodes held by a support or tied to a pin (their boundary is not free)."""
    mesh = result.mesh
    held = np.zeros(mesh.n_nodes, dtype=bool)
    if getattr(result, "model", None) is None:
        return held
    from .zones import idealisations

    try:
        for _, nodes in idealisations(mesh, result.model, supports=True, loads=False):
            held[np.asarray(nodes, dtype=np.int64)] = True
    except (InputError, KeyError, AttributeError, TypeError):  # a support this check cannot place
        pass
    for sup in getattr(result.model, "supports", ()) or ():  # symmetry planes too: not a free edge
        try:
            held[np.asarray(sup.nodes(mesh), dtype=np.int64)] = True
        except Exception:  # noqa: BLE001 - a support kind without node lookup: leave it to the others
            pass
    return held


def interface_edge_near(result, node: int) -> dict | None:
    """The strongest non-weak interface-edge singularity within :data:`NEAR_SIZES` element sizes of ``node``.

    Parameters
    ----------
    result : Result
    node : int

    Returns
    -------
    dict or None
        ``point`` (node of the junction), ``lam`` (complex exponent), ``angles`` (degrees, per wedge),
        ``regions`` (names per wedge), ``alpha``, ``beta`` (of the first interface), ``inside`` (True for
        a corner of an interface inside the part, False where it meets the free edge), or None.

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(20.0, 4.0, 10, 2, "Q8")
    >>> model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=10.0), case="pull")
    >>> interface_edge_near(planar.solve(model)["pull"], 0) is None   # one material: no interface
    True
    """
    asm = getattr(result, "assembly", None)
    if asm is None or len(asm.blocks) < 2:
        return None
    cached = getattr(asm, "_planar_interface_points", None)
    if cached is None:  # once per assembly: every peak query and hot spot of its cases reads it
        ids, props = _sections(asm)
        cached = (ids, props, _junctions(asm, ids) if len(props) > 1 else np.zeros(0, dtype=np.int64))
        try:
            object.__setattr__(asm, "_planar_interface_points", cached)
        except (AttributeError, TypeError):
            pass
    if cached[2].size == 0:
        return None
    return node_memo(asm, "_planar_interface_edges", node, lambda: _near(result, asm, cached, int(node)))


def _near(result, asm, cached: tuple, node: int) -> dict | None:
    """:func:`interface_edge_near` at ``node``, from the assembly's sections and junctions ``cached``."""
    ids, props, cand = cached
    from .zones import node_sizes

    nodes = result.mesh.nodes
    node = int(node)
    h = float(node_sizes(result.mesh)[node])
    d = np.hypot(*(nodes[cand] - nodes[node]).T)
    cand = cand[d <= NEAR_SIZES * h * (1.0 + 1e-9)]
    if cand.size == 0:
        return None
    held = _held(result)
    best = None
    for j in cand[np.argsort(np.hypot(*(nodes[cand] - nodes[node]).T))]:  # the few points near the peak
        if held[j]:
            continue
        got = _wedges(asm, ids, int(j))
        if got is None:
            continue
        w, sides, closed = got
        if len(w) < 2 or any(props[s] is None for _, s in w):
            continue
        if closed and not _interface_corner(asm, ids, int(j), w, sides):
            continue
        lam = singularity_exponent([a for a, _ in w], [props[s][0] for _, s in w], [props[s][1] for _, s in w],
                                   closed)
        if lam is None or 1.0 - lam.real < WEAK_STRENGTH:
            continue
        if best is None or lam.real < best["lam"].real:
            names = {}
            for b, s in zip(asm.blocks, ids):
                names.setdefault(s, [])
                if b.region not in names[s]:
                    names[s].append(b.region)
            (m1, k1), (m2, k2) = props[w[0][1]], props[w[1][1]]
            al, be = dundurs(m1, k1, m2, k2)
            best = {"point": int(j), "lam": lam, "angles": [math.degrees(a) for a, _ in w],
                    "regions": ["/".join(names[s]) for _, s in w], "alpha": al, "beta": be, "inside": closed}
    return best


@peak_doc
def interface_edge_peak(result, node: int, field: str, values: np.ndarray, *, stacklevel: int = 2) -> None:
    """Warn ``"interface-edge"`` when a stress peak sits where an interface meets a free edge (see the module).

    {peak check parameters}
    """
    def words(got: dict, node: int) -> str:
        lam, pt = got["lam"], got["point"]
        lam_txt = (f"{lam.real:.3f}" if abs(lam.imag) < 1e-6
                   else f"{lam.real:.3f} +- {abs(lam.imag):.3f}i (oscillating)")
        rise = 10.0 ** (1.0 - lam.real) - 1.0
        wedges = ", ".join(f"{a:.0f} degrees of {r!r}" for a, r in zip(got["angles"], got["regions"]))
        analysis = str(getattr(result.model, "analysis", "") or "")
        where = ("turns a corner inside the part" if got.get("inside") else "meets the free edge")
        return (f"sits {'at' if pt == node else 'next to'} the point {fmt_point(result.mesh.nodes[pt])} where an "
                f"interface between regions of different stiffness (modulus or thickness) {where} "
                f"({wedges}; Dundurs alpha {got['alpha']:.3g}, beta {got['beta']:.3g}"
                f"{', ' + analysis if analysis else ''}): the elastic stress there is singular as r^(lambda - 1) "
                f"with lambda = {lam_txt} (D. B. Bogy, J. Appl. Mech., 1971), so the peak there depends on the mesh "
                f"and is not a converged stress; it rises by up to about {100.0 * rise:.0f} % for every tenfold refinement "
                "of the elements there, without limit. Read the stress a few element sizes away from the point "
                f"(where=planar.Outside({point_source(result.mesh.nodes[pt])}, {clear_distance(result, pt):.3g}), with & for other "
                "such points and the zone under check), or judge the point "
                "by a bonded-joint or fracture assessment that allows for the singularity")

    return warn_if_found(result, node, field, values, "interface-edge", interface_edge_near, words, stacklevel + 1)
