"""Mesh validity everywhere in every cell, and conformity between cells.

Element maps
------------
The Jacobian determinant of an isoparametric element is a polynomial on its reference cell: a
constant for T3, degree (1, 1) for Q4, total degree 2 for T6 (its derivatives are linear) and
degree (3, 3) at most for Q8 and Q9 (dx/dxi is of degree (1, 2) and dy/deta of degree (2, 1), so
their product reaches xi^3 eta^3). Written in the Bernstein (Bezier) basis of its degree, the
polynomial lies between its least and largest coefficient, and its coefficients at the cell's
vertices are its values there. So (A. Johnen, J.-F. Remacle and C. Geuzaine, Geometrical validity
of curvilinear finite elements, J. Comput. Phys. 233 (2013) 359-372):

- all coefficients positive proves det J > 0 everywhere in the cell;
- a value <= 0 at a sampling point proves the element folded (or collapsed);
- otherwise the cell is cut into four (the coefficients of each part follow from the parent's by a
  fixed matrix, the de Casteljau subdivision) and the parts still undecided are tested again, to
  ``MAX_DEPTH`` levels. A part still undecided there (a least coefficient <= 0 on a part
  1/2^MAX_DEPTH the size of the cell, where every vertex value is positive) is refused: folding
  cannot be excluded, and the Jacobian is zero to within the bound's gap at that size.

The coefficients come from det J at a fixed lattice of points (as many as coefficients) by one
precomputed matrix, batched over all elements of a block; nothing loops over elements.

The same bounds decide the distortion ratio (least / largest det J in the element, the
``distortion_limit`` of :func:`planar.core.assembly.prepare`): a part whose least coefficient is at
least the limit times the largest coefficient of the element is proven good; a vertex value below
the limit times the largest sampled value proves the element too distorted. Parts undecided at the
last level have a positive Jacobian (proven) and a ratio within the gap between the largest
coefficient and the largest sampled value of the limit; they are accepted.

An element type tells the degree of its Jacobian determinant through the optional class attribute
``jacobian_degree`` (an int: total degree on a triangle; a pair (p, q): degrees in xi and eta on a
quadrilateral). The built-in types have theirs here; a plugin element that does not declare one,
and is not a built-in with the same shape functions, is sampled on a dense lattice instead
(``SAMPLING_DIVISIONS`` divisions per side of the reference cell, plus its quadrature points): a
fold narrower than that lattice's spacing can escape.

Conformity
----------
The checks between cells (hanging nodes, mismatched sides, slits and slivers) live in
:mod:`planar.core._conformity`; their names are importable from here as before.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from math import comb

import numpy as np

from ._conformity import (ON_SIDE_TOL, SLIVER_AREA, SLIVER_SIDES, SideTable, _cells_of, _check_slivers,  # noqa: F401
                          _inside_owner, _on_side, _pieces, check_conforming, side_table)
from .errors import PluginError
from .registry import check_plugin_array, describe_provider, plugin_call

__all__ = ["jacobian_degree", "check_cells", "check_block", "check_conforming", "MAX_DEPTH",
           "SAMPLING_DIVISIONS", "OK", "COLLAPSED", "FOLDED", "DISTORTED"]

#: levels of subdivision (each halves the part's size) before an undecided part is refused
MAX_DEPTH = 8
#: divisions per side of the reference cell for element types of undeclared Jacobian degree
SAMPLING_DIVISIONS = 20
#: at most this many undecided parts are carried at once per chunk (beyond it: refused as undecided)
_MAX_PARTS = 2_000_000
#: verdicts per element
OK, COLLAPSED, FOLDED, DISTORTED = 0, 1, 2, 3

_BUILTIN_DEGREES = {"T3": 0, "T6": 2, "Q4": (1, 1), "Q8": (3, 3), "Q9": (3, 3)}


# ---------------------------------------------------------------------------- Bernstein bases
def _tri_indices(n: int) -> np.ndarray:
    """Exponents (i, j) of r and s for the degree-n triangle basis (k = n - i - j of 1 - r - s)."""
    return np.array([(i, j) for j in range(n + 1) for i in range(n + 1 - j)], dtype=int).reshape(-1, 2)


def _tri_basis(n: int, pts: np.ndarray) -> np.ndarray:
    """Bernstein polynomials of degree n on the triangle (0,0), (1,0), (0,1) at pts (m, 2): (m, nb)."""
    ij = _tri_indices(n)
    r, s = pts[:, 0:1], pts[:, 1:2]
    t = 1.0 - r - s
    i, j = ij[:, 0], ij[:, 1]
    k = n - i - j
    c = np.array([comb(n, a) * comb(n - a, b) for a, b in ij], dtype=float)
    return c * r ** i * s ** j * t ** k


def _line_basis(p: int, u: np.ndarray) -> np.ndarray:
    i = np.arange(p + 1)
    c = np.array([comb(p, a) for a in i], dtype=float)
    return c * u[:, None] ** i * (1.0 - u[:, None]) ** (p - i)


def _quad_basis(pq: tuple[int, int], pts: np.ndarray) -> np.ndarray:
    """Tensor Bernstein polynomials of degree (p, q) on [-1, 1]^2 at pts (m, 2): (m, (p+1)(q+1))."""
    p, q = pq
    bu = _line_basis(p, 0.5 * (pts[:, 0] + 1.0))
    bv = _line_basis(q, 0.5 * (pts[:, 1] + 1.0))
    return (bu[:, :, None] * bv[:, None, :]).reshape(pts.shape[0], -1)


@dataclass(frozen=True)
class Scheme:
    """How det J of one element type is bounded.

    Attributes
    ----------
    points : ndarray, shape (m, 2)
        Reference points where det J is evaluated.
    exact : bool
        True: ``to_bezier`` gives Bernstein coefficients from the values at ``points``.
    to_bezier : ndarray, shape (m, m) or None
    children : ndarray, shape (4, m, m) or None
        Parent coefficients -> coefficients of each quarter of the cell.
    vertices : ndarray
        Indices of the coefficients that are values at the cell's vertices.
    """

    points: np.ndarray
    exact: bool
    to_bezier: np.ndarray | None = None
    children: np.ndarray | None = None
    vertices: np.ndarray | None = None


def _triangle_scheme(n: int) -> Scheme:
    if n == 0:
        return Scheme(np.array([[1.0 / 3.0, 1.0 / 3.0]]), True, np.ones((1, 1)), np.ones((4, 1, 1)), np.array([0]))
    pts = _tri_indices(n)[:, [0, 1]] / n
    T = np.linalg.inv(_tri_basis(n, pts))
    v = np.array([0.0, 0.0]), np.array([1.0, 0.0]), np.array([0.0, 1.0])
    m01, m12, m20 = (v[0] + v[1]) / 2, (v[1] + v[2]) / 2, (v[2] + v[0]) / 2
    kids = [(v[0], m01, m20), (m01, v[1], m12), (m20, m12, v[2]), (m12, m20, m01)]
    ch = []
    for a, b, c in kids:
        mapped = a + pts[:, 0:1] * (b - a) + pts[:, 1:2] * (c - a)
        ch.append(T @ _tri_basis(n, mapped))
    ij = _tri_indices(n)
    verts = np.array([np.flatnonzero((ij[:, 0] == i) & (ij[:, 1] == j))[0] for i, j in ((0, 0), (n, 0), (0, n))])
    return Scheme(pts, True, T, np.array(ch), verts)


def _quad_scheme(pq: tuple[int, int]) -> Scheme:
    p, q = pq
    gu = np.linspace(-1.0, 1.0, p + 1) if p else np.zeros(1)
    gv = np.linspace(-1.0, 1.0, q + 1) if q else np.zeros(1)
    pts = np.array([(a, b) for a in gu for b in gv])  # the basis's own order: u index major
    T = np.linalg.inv(_quad_basis(pq, pts))
    ch = []
    for a in (0.0, 1.0):
        for b in (0.0, 1.0):
            mapped = np.column_stack([-1.0 + a + 0.5 * (pts[:, 0] + 1.0), -1.0 + b + 0.5 * (pts[:, 1] + 1.0)])
            ch.append(T @ _quad_basis(pq, mapped))
    verts = np.unique([i * (q + 1) + j for i in (0, p) for j in (0, q)])
    return Scheme(pts, True, T, np.array(ch), verts)


def _sampling_scheme(etype) -> Scheme:
    d = SAMPLING_DIVISIONS
    if etype.cell == "triangle":
        pts = _tri_indices(d) / d
    else:
        g = np.linspace(-1.0, 1.0, d + 1)
        pts = np.array([(a, b) for a in g for b in g])
    rule = etype.default_rule()
    return Scheme(np.vstack([pts, np.asarray(rule.points, float)]), False)


def jacobian_degree(etype) -> int | tuple[int, int] | None:
    """Polynomial degree of an element type's Jacobian determinant, or None when unknown.

    From the class attribute ``jacobian_degree`` when the type declares one, else from the built-in
    type whose shape functions it uses (T3: 0, T6: 2, Q4: (1, 1), Q8 and Q9: (3, 3)).

    Raises
    ------
    PluginError
        For a declared degree of the wrong form.
    """
    d = getattr(etype, "jacobian_degree", None)
    if d is None:
        from . import elements

        own = getattr(getattr(etype, "shape_derivatives", None), "__func__", None)
        for name, deg in _BUILTIN_DEGREES.items():
            base = getattr(elements, name)
            if own is not None and own is base.shape_derivatives.__func__ and etype.cell == base.cell:
                return deg
        return None
    ok = False
    if etype.cell == "triangle":
        ok = isinstance(d, (int, np.integer)) and not isinstance(d, bool) and 0 <= int(d) <= 8
        d = int(d) if ok else d
    else:
        try:
            p, q = d
            ok = all(isinstance(x, (int, np.integer)) and not isinstance(x, bool) and 0 <= int(x) <= 8 for x in (p, q))
            d = (int(p), int(q)) if ok else d
        except (TypeError, ValueError):
            ok = False
    if not ok:
        raise PluginError(
            f"{describe_provider('element', etype)}: jacobian_degree must be the polynomial degree of det J, an "
            f"integer 0..8 on a triangle or a pair (p, q) of them on a quadrilateral, not {d!r}; or leave it "
            "out (the element is then checked on a dense sampling)"
        )
    return d


@lru_cache(maxsize=64)
def _scheme_for(etype) -> Scheme:
    deg = jacobian_degree(etype)
    if deg is None:
        return _sampling_scheme(etype)
    s = _triangle_scheme(deg) if etype.cell == "triangle" else _quad_scheme(deg)
    _confirm_degree(etype, s, deg)
    return s


def scheme(etype) -> Scheme:
    """The (cached) bounding scheme of an element type."""
    return _scheme_for(etype)


def _confirm_degree(etype, s: Scheme, deg) -> None:
    """Refuse a declared degree that does not reproduce det J of a few distorted elements."""
    rng = np.random.default_rng(12345)
    ref = np.asarray(etype.ref_nodes, float)
    coords = ref[None] + 0.15 * rng.standard_normal((4,) + ref.shape)
    test = rng.random((7, 2))
    if etype.cell == "triangle":
        test = test * 0.5
    else:
        test = 2.0 * test - 1.0
    c = _det(etype, coords, s.points) @ s.to_bezier.T
    basis = _tri_basis(deg, test) if etype.cell == "triangle" else _quad_basis(deg, test)
    want = _det(etype, coords, test)
    err = np.abs(c @ basis.T - want).max() / max(np.abs(want).max(), 1e-300)
    if not err < 1e-8:
        raise PluginError(
            f"{describe_provider('element', etype)}: its jacobian_degree {deg!r} does not hold (det J of a "
            f"distorted element differs by {err:.1e} from that polynomial); declare the right degree or none"
        )


@lru_cache(maxsize=64)
def _derivatives(etype) -> tuple[np.ndarray, np.ndarray]:
    """dN/dxi and dN/deta (m, k) at the scheme's points, evaluated once per element type."""
    pts = _scheme_for(etype).points
    with plugin_call("element", etype, "shape_derivatives"):
        dN = etype.shape_derivatives(pts)
    dN = check_plugin_array("element", etype, "shape_derivatives", dN, (pts.shape[0], etype.n_nodes, 2))
    return np.ascontiguousarray(dN[:, :, 0]), np.ascontiguousarray(dN[:, :, 1])


def _det_t(etype, coords: np.ndarray) -> np.ndarray:
    """det J (m, e) of a batch of elements (e, k, 2) at the scheme's points, transposed."""
    dr, ds = _derivatives(etype)
    x = np.ascontiguousarray(coords[..., 0].T)  # (k, e)
    y = np.ascontiguousarray(coords[..., 1].T)
    # einsum's own loops: for these small shapes BLAS would start threads (slow when cores are busy)
    return (np.einsum("mk,ke->me", dr, x) * np.einsum("mk,ke->me", ds, y)
            - np.einsum("mk,ke->me", ds, x) * np.einsum("mk,ke->me", dr, y))


def _det(etype, coords: np.ndarray, pts: np.ndarray) -> np.ndarray:
    with plugin_call("element", etype, "shape_derivatives"):
        dN = etype.shape_derivatives(pts)
    dN = check_plugin_array("element", etype, "shape_derivatives", dN, (pts.shape[0], etype.n_nodes, 2))
    x = np.ascontiguousarray(coords[..., 0])
    y = np.ascontiguousarray(coords[..., 1])
    return (x @ dN[:, :, 0].T) * (y @ dN[:, :, 1].T) - (x @ dN[:, :, 1].T) * (y @ dN[:, :, 0].T)


# ---------------------------------------------------------------------------- element checks
def check_cells(etype, coords: np.ndarray, limit: float, tiny: float):
    """Verdict on a batch of elements.

    Parameters
    ----------
    etype : element type
    coords : ndarray, shape (e, k, 2)
    limit : float
        Least accepted ratio of the least to the largest det J (0 accepts any positive Jacobian).
    tiny : float
        A largest |det J| at or below this is a collapsed element.

    Returns
    -------
    clockwise : ndarray of bool, shape (e,)
        det J < 0 everywhere (the element is valid with its nodes turned round).
    verdict : ndarray of int8, shape (e,)
        ``OK``, ``COLLAPSED``, ``FOLDED`` or ``DISTORTED``.
    ratio : ndarray, shape (e,)
        The least / largest det J found (sampled values and part vertices; an upper bound of the
        true ratio, exact where the least is at a vertex).
    """
    s = _scheme_for(etype)
    vals = _det_t(etype, coords)  # (m, e): reductions over the short axis 0 are fast
    e = vals.shape[1]
    vmin = vals.min(axis=0) if e else np.zeros(0)
    vmax = vals.max(axis=0) if e else np.zeros(0)
    collapsed = np.maximum(vmax, -vmin) <= tiny
    neg = (vmax < 0) & ~collapsed
    pos = (vmin > 0) & ~collapsed
    verdict = np.zeros(e, dtype=np.int8)
    verdict[~(neg | pos)] = FOLDED
    verdict[collapsed] = COLLAPSED
    lmax = np.where(neg, -vmin, vmax)  # largest |det J| of an element of one sign
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(pos, vmin / vmax, np.where(neg, vmax / vmin, 0.0))
    good = pos | neg
    verdict[good & (ratio < limit)] = DISTORTED
    if not s.exact:
        return neg, verdict, ratio
    c = np.einsum("ij,je->ie", s.to_bezier, np.where(neg, -vals, vals))  # (m, e) Bernstein coefficients of |det J|
    umax = c.max(axis=0)
    accept = limit * umax  # a part is proven good when its least coefficient reaches this (and > 0)
    cmin = c.min(axis=0)
    open_ = ((cmin <= 0) | (cmin < accept)) & (verdict == OK)
    if not open_.any():
        return neg, verdict, ratio
    owner = np.flatnonzero(open_)
    parts = c[:, owner].T
    thr_acc = accept
    thr_bad = limit * lmax
    depth = 0
    while owner.size and depth < MAX_DEPTH:
        depth += 1
        if owner.size * s.children.shape[0] > _MAX_PARTS:
            break
        kids = np.einsum("cij,mj->mci", s.children, parts).reshape(-1, parts.shape[1])
        owner = np.repeat(owner, s.children.shape[0])
        corner = kids[:, s.vertices].min(axis=1)
        np.minimum.at(ratio, owner, corner / np.maximum(lmax[owner], 1e-300))
        folded = owner[corner <= 0]
        verdict[folded] = FOLDED
        distorted = owner[(corner > 0) & (corner < thr_bad[owner])]
        verdict[distorted[verdict[distorted] == OK]] = DISTORTED
        kmin = kids.min(axis=1)
        keep = (verdict[owner] == OK) & ((kmin <= 0) | (kmin < thr_acc[owner]))
        owner, parts = owner[keep], kids[keep]
    if owner.size:
        # undecided at the last level: a part whose least coefficient is still <= 0 cannot be proven
        # positive; refuse it as folded. Parts with positive coefficients have det J > 0 (proven) and
        # a ratio within the bounds' gap of the limit: accepted.
        doubt = owner[parts.min(axis=1) <= 0]
        verdict[doubt] = FOLDED
    return neg, verdict, ratio


def check_block(etype, nodes: np.ndarray, conn: np.ndarray, limit: float, tiny: float, chunk: int = 4096):
    """:func:`check_cells` over a whole block in chunks spread over the threads."""
    from .parallel import map_chunks

    def one(s: int):
        return check_cells(etype, nodes[conn[s:s + chunk]], limit, tiny)

    parts = map_chunks(one, range(0, conn.shape[0], chunk))
    if not parts:
        return np.zeros(0, bool), np.zeros(0, np.int8), np.zeros(0)
    return tuple(np.concatenate([p[i] for p in parts]) for i in range(3))
