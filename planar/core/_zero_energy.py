"""Zero-energy element modes: element stiffnesses that can deform without straining.

An element stiffness with more than three zero eigenvalues (the hourglass modes of an
under-integrated element) is refused unless the model opts in (:func:`zero_energy_check`, called
before the solve by :mod:`planar.core.static`); ``zero_energy="stabilise"`` adds a fraction of the
full-rule stiffness on the spurious modes (:func:`stabilised_element`).
"""
from __future__ import annotations

import dataclasses
from types import SimpleNamespace

import numpy as np

from .errors import SolverError, fmt_point, warn

__all__ = ["zero_energy_check", "zero_energy_modes", "stabilised_element", "ZERO_ENERGY_CHOICES", "ZERO_TOL",
           "STABILISATION", "BUILTIN_ELEMENTS"]

#: the ways a model may treat element blocks with zero-energy modes (``Model(zero_energy=...)``)
ZERO_ENERGY_CHOICES = ("refuse", "warn", "stabilise")

#: an element eigenvalue below ZERO_TOL times the largest one counts as zero. The test runs on the
#: element mapped to unit size and shape (see :func:`zero_energy_modes`) with a unit material, so the
#: spread of the eigenvalues comes from the element's distortion alone. eigvalsh returns each
#: eigenvalue of a symmetric matrix to about c eps ||K|| with c a small multiple of the order (at most
#: 18 here: 18 eps = 4e-15); measured, rigid and hourglass modes come out below 7e-16 of the largest
#: eigenvalue. The smallest straining eigenvalue of T3, Q4, Q8, Q9 and T6 elements as distorted as the
#: Jacobian checks accept, under their full and reduced rules (and of the QM6 plugin), stays above
#: 4e-8 (measured on about 10^5 random elements with aspect ratios to 1e5 and a least/largest
#: Jacobian down to 1e-4; see tests/test_trust_kinematics.py). 1e-11 sits more than three decades
#: clear of both. One exception: T6 under its own 3-point rule has exactly as many strain samples as
#: deformation modes (9), and some curved shapes come close to losing one (1.5e-10 measured); full
#: rules of the built-in elements are checked on the reference element and a custom rule equal to
#: the full one counts as full, so those shapes are never judged.
ZERO_TOL = 1e-11

#: fraction of the full-rule stiffness put on the spurious modes by ``zero_energy="stabilise"``.
#: Hourglass-control stiffness of a few per cent up to about 0.1 of the element's own stiffness is
#: common practice (D. P. Flanagan and T. Belytschko, A uniform strain hexahedron and quadrilateral
#: with orthogonal hourglass control, Int. J. Numer. Methods Eng. 17, 1981; values from memory).
STABILISATION = 0.1

#: element types whose rank under their full (or selective) rule is a property of the formulation
#: (checked once per block, on the reference element)
BUILTIN_ELEMENTS = ("T3", "T6", "Q4", "Q8", "Q9")

#: element blocks larger than this are checked on a sample of this many elements (half the worst
#: shaped, half spread evenly) where their rule needs more than one element
SAMPLE = 4096


#: a unit isotropic material (E = 1, nu = 0, plane stress): the null space of sum_q w_q B_q^T D B_q
#: is the intersection of the null spaces of the B_q for every positive definite D, so the check
#: may use the best conditioned one and keep the material's own contrast out of the eigenvalues
_D_UNIT = np.diag([1.0, 1.0, 0.5])


def _is_builtin(et) -> bool:
    return getattr(et, "name", None) in BUILTIN_ELEMENTS and str(getattr(et, "__module__", "")) == "planar.core.elements"


def _matrices(block, coords: np.ndarray, D: np.ndarray, thickness: float) -> np.ndarray:
    """Element matrices of a block's formulation on given element coordinates (m, k, 2).

    Runs :meth:`Assembly.element_matrices` itself (own stiffness hooks, selective and reduced rules
    alike), on a stand-in mesh made of the given coordinates.
    """
    from .assembly import Assembly

    m, k = coords.shape[0], coords.shape[1]
    blk = dataclasses.replace(block, cells=np.arange(m), conn=np.arange(m * k).reshape(m, k), D=D,
                              thickness=thickness, _geo={})
    shim = SimpleNamespace(mesh=SimpleNamespace(nodes=np.ascontiguousarray(coords.reshape(-1, 2))),
                           _ke=Assembly._ke)
    return Assembly.element_matrices(shim, blk, 0, m)


def _centre_map(et, coords: np.ndarray):
    """The affine map x' = J0^-1 (x - c) of each element (m, k, 2) to unit size and shape.

    Returns the mapped coordinates and J0^-1 (m, 2, 2). J0 is the Jacobian at the reference centre,
    c the mean of the nodes.
    """
    from .registry import check_plugin_array, plugin_call

    centre = np.asarray(et.ref_nodes, float)[: et.corner_count()].mean(axis=0)[None, :]
    with plugin_call("element", et, "shape_derivatives"):
        dN = et.shape_derivatives(centre)
    dN = check_plugin_array("element", et, "shape_derivatives", dN, (1, et.n_nodes, 2))[0]  # (k, 2)
    J0 = np.einsum("eki,kj->eij", coords, dN)  # J_ij = dx_i / dxi_j
    inv = np.linalg.inv(J0)
    c = coords.mean(axis=1, keepdims=True)
    return np.einsum("eij,ekj->eki", inv, coords - c), inv


def zero_energy_modes(block, nodes: np.ndarray, cells: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Zero and negative eigenvalues of the element stiffness of some cells of a block.

    Parameters
    ----------
    block : Block
    nodes : ndarray, shape (n, 2)
        Node coordinates of the mesh.
    cells : ndarray, optional
        Positions in the block (default: all of them).

    Returns
    -------
    zero : ndarray of int, shape (m,)
        Eigenvalues with ``|lambda| <= ZERO_TOL * lambda_max`` (3 for a sound element: the rigid motions).
    negative : ndarray of int, shape (m,)
        Eigenvalues below ``-ZERO_TOL * lambda_max`` (0 for a sound element).

    Notes
    -----
    Each element is first mapped by x' = J0^-1 (x - c), J0 its Jacobian at the reference centre.
    For a formulation whose strains come from physical derivatives through the Jacobian, u is a
    zero-energy mode of the element exactly when u' = J0^T u (node by node) is one of the mapped
    element: sym(grad_x u) = 0 at a point is sym(J^T G) = 0 with G the reference gradient, and
    J^T G = (J0^-1 J)^T G' with G' = J0^T G. So the count is unchanged while size, rotation and aspect
    ratio drop out of the eigenvalues; only the distortion left in J0^-1 J spreads them. The
    material is the unit isotropic one (the null space is the same for every positive definite D).
    """
    cells = np.arange(block.n) if cells is None else np.asarray(cells, dtype=np.int64)
    et = block.etype
    out_z = np.empty(cells.size, dtype=np.int64)
    out_n = np.empty(cells.size, dtype=np.int64)
    from .assembly import CHUNK

    for s in range(0, cells.size, CHUNK):
        coords = nodes[block.conn[cells[s: s + CHUNK]]]
        mapped, _ = _centre_map(et, coords)
        K = _matrices(block, mapped, _D_UNIT, 1.0)
        lam = np.linalg.eigvalsh(0.5 * (K + K.transpose(0, 2, 1)))
        top = np.maximum(lam[:, -1], 0.0)
        tol = ZERO_TOL * top
        out_z[s: s + CHUNK] = np.sum(np.abs(lam) <= tol[:, None], axis=1)
        out_n[s: s + CHUNK] = np.sum(lam < -tol[:, None], axis=1)
    return out_z, out_n


def _rank_bound(block) -> int | None:
    """Largest possible rank of the stiffness of a standard formulation: 3 strains per point."""
    from .assembly import _reduced

    et = block.etype
    if getattr(et, "stiffness", None) is not None:
        return None
    if block.rule_mode == "selective":
        full = et.default_rule()
        return 2 * full.n_points + _reduced(et, full).n_points
    return 3 * block.rule.n_points


def _sample(block, nodes: np.ndarray) -> tuple[np.ndarray, str]:
    """Cells of a block to check: all up to SAMPLE, else the worst shaped half and an even spread."""
    if block.n <= SAMPLE:
        return np.arange(block.n), "every element"
    nc = block.etype.corner_count()
    c = nodes[block.conn[:, :nc]]
    d = np.roll(c, -1, axis=1) - c
    longest = np.max(np.sum(d * d, axis=2), axis=1)
    x, y = c[..., 0], c[..., 1]
    area = 0.5 * np.abs(np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1))
    shape = longest / np.maximum(area, 1e-300)
    worst = np.argpartition(-shape, SAMPLE // 2)[: SAMPLE // 2]
    spread = np.linspace(0, block.n - 1, SAMPLE // 2).round().astype(np.int64)
    return np.unique(np.concatenate([worst, spread])), (f"a sample of {SAMPLE} of its {block.n} elements "
                                                         "(the worst shaped half and an even spread)")


def _rule_text(block) -> str:
    rule, mode = block.rule, block.rule_mode
    if mode == "selective":
        return "selective integration (full rule on the normal terms, reduced on the shear terms)"
    if rule.cell == "quad":
        m = int(round(np.sqrt(rule.n_points)))
        what = f"the {m} x {m} Gauss rule"
    else:
        what = f"the degree-{rule.degree} triangle rule ({rule.n_points} point{'s' if rule.n_points > 1 else ''})"
    return f"{what} ({mode})"


_SELECTIVE_OK: dict = {}


def _selective_clean(block) -> bool:
    """Whether 'selective' integration leaves this element type without spurious modes (reference shape)."""
    et = block.etype
    if getattr(et, "stiffness", None) is not None:
        return False
    if et not in _SELECTIVE_OK:
        ref = np.asarray(et.ref_nodes, float)[None]
        blk = dataclasses.replace(block, conn=np.arange(et.n_nodes)[None], cells=np.arange(1), rule=et.default_rule(),
                                  rule_mode="selective", _geo={})
        z, n = zero_energy_modes(blk, ref[0])
        _SELECTIVE_OK[et] = bool(z[0] == 3 and n[0] == 0)
    return _SELECTIVE_OK[et]


def _block_modes(block, nodes: np.ndarray):
    """(cells with spurious modes (positions in the block), modes each, negative modes, how checked)."""
    bound = _rank_bound(block)
    k2 = 2 * block.etype.n_nodes
    ref = dataclasses.replace(block, conn=np.arange(block.etype.n_nodes)[None], cells=np.arange(1), _geo={})
    ref_nodes = np.asarray(block.etype.ref_nodes, dtype=float)
    if bound is not None and k2 - bound > 3:  # proven for every element: rank <= 3 per point
        z, neg = zero_energy_modes(ref, ref_nodes)  # the exact count, on the reference element
        how = (f"every element has them: the rule samples at most {bound} independent strains (three per "
               f"point{'; two of them at the full and one at the reduced points' if block.rule_mode == 'selective' else ''}), "
               f"fewer than the element's {k2 - 3} ways to deform")
        return np.arange(block.n), max(int(z[0]) - 3, k2 - bound - 3), int(neg[0]), how
    full = block.etype.default_rule()
    as_full = block.rule_mode == "full" or (
        block.rule_mode == "custom" and block.rule.n_points == full.n_points
        and np.allclose(block.rule.points, full.points) and np.allclose(block.rule.weights, full.weights))
    if _is_builtin(block.etype) and (as_full or block.rule_mode == "selective"):
        # the rank is a property of the element and rule: the reference element (every valid shape has
        # the same count; the Jacobian checks refuse degenerate ones)
        z, neg = zero_energy_modes(ref, ref_nodes)
        if z[0] > 3 or neg[0] > 0:
            return np.arange(block.n), int(z[0]) - 3, int(neg[0]), "the reference element (the rule has them on every element)"
        return np.zeros(0, np.int64), 0, 0, "the reference element"
    idx, how = _sample(block, nodes)
    z, neg = zero_energy_modes(block, nodes, idx)
    bad = (z > 3) | (neg > 0)
    if not np.any(bad):
        return np.zeros(0, np.int64), 0, 0, how
    return idx[bad], int(np.max(z[bad]) - 3), int(np.max(neg[bad])), how


def zero_energy_check(asm, *, sink: list | None = None) -> None:
    """Refuse element blocks whose stiffness has zero-energy modes beyond the three rigid motions.

    What a model allows is ``Model(..., zero_energy=...)``: ``"refuse"`` (default) raises,
    ``"warn"`` goes on with a ``"zero-energy"`` :class:`~planar.core.errors.DiscretisationWarning`
    (kept in ``sink``), ``"stabilise"`` adds :data:`STABILISATION` times the full-rule stiffness on
    the spurious modes only (see :func:`stabilised_element`) and checks that none is left.

    Which elements are checked: built-in elements (T3, T6, Q4, Q8, Q9) under their full or the
    selective rule, on the reference element once per block (their rank is a property of element and
    rule, and degenerate shapes are refused by the Jacobian checks); a standard formulation whose rule has
    fewer than (2k - 3) / 3 points is rank deficient on every element by counting (rank <= 3 per
    point), no eigenvalues needed; other reduced or custom rules and plugin elements, every element
    of blocks up to :data:`SAMPLE` cells, else a sample of that size (the worst shaped half and an
    even spread: a formulation whose rank depended on the shape would lose it first on the worst
    shaped elements).

    Raises
    ------
    SolverError
        A block with zero-energy modes (refused), or with negative-energy modes (always), naming the
        element type, region, rule and the cell ids, and the fix. It is a SolverError, the error of a
        singular stiffness, which it is (found before the factorization).
    """
    policy = getattr(asm.model, "zero_energy", "refuse")
    nodes = asm.mesh.nodes
    for i, block in enumerate(asm.blocks):
        bad, modes, neg, how = _block_modes(block, nodes)
        if bad.size == 0:
            continue
        text = _zero_energy_text(block, nodes, bad, modes, neg, how)
        if neg or policy == "refuse":
            raise SolverError(text + _zero_energy_fix(block, neg))
        if policy == "warn":
            warn(text + "; going on because the model has zero_energy='warn': where those modes are excited "
                 "the answer is wrong; use the full rule for a result you can trust", "zero-energy", sink=sink,
                 stacklevel=3)
            continue
        asm.blocks[i] = stab = dataclasses.replace(block, etype=stabilised_element(block), _geo={})
        left, more, _, _ = _block_modes(dataclasses.replace(stab, rule_mode="custom"), nodes)
        if left.size:
            raise SolverError(text + f"; zero_energy='stabilise' could not stiffen them ({more} mode(s) left, "
                              "the element's full-rule stiffness has them too): " + _zero_energy_fix(block, 0))


def _zero_energy_text(block, nodes, bad, modes, neg, how) -> str:
    et = block.etype
    ids = block.cells[bad]
    head = f"all {block.n} elements" if bad.size == block.n else f"{bad.size} element(s)"
    where = (f"{head} of cell block {block.layout!r} (cell ids {ids[:10].tolist()}{' ...' if ids.size > 10 else ''}, "
             f"the first near {fmt_point(nodes[block.conn[bad[0]]].mean(axis=0))})")
    if neg:
        return (f"{et.name} elements of region {block.region!r} with {_rule_text(block)} have {neg} negative-energy "
                f"mode(s): their stiffness is not positive semi-definite, which no elastic element may be: {where}; "
                f"checked on {how}")
    return (f"{et.name} elements of region {block.region!r} with {_rule_text(block)} have {modes} zero-energy "
            f"mode(s) each beyond the three rigid-body motions, so the stiffness is singular: those modes deform "
            f"an element without straining it at the integration points (hourglass modes), and the answer can "
            f"be wrong by any amount, even in sign: {where}; {how if how.startswith('every element has') else 'checked on ' + how}")


def _zero_energy_fix(block, neg) -> str:
    et = block.etype
    if neg or getattr(et, "stiffness", None) is not None:
        from .registry import describe_provider

        return (f"; the element's own stiffness ({describe_provider('element', et)}) is at fault: use another "
                "element type or report it to the plugin's authors" + ("" if neg else
                "; Model(..., zero_energy='warn' or 'stabilise') goes on at your own risk"))
    if block.rule_mode == "full":  # the element's own full rule is too weak: a plugin's rule_degree
        from .registry import describe_provider

        return (f"; the element's own full rule ({describe_provider('element', et)}: rule_degree "
                f"{getattr(et, 'rule_degree', '?')}) under-integrates it: declare a higher rule_degree for the element "
                "type, or use another element type; or, knowing the risk, Model(..., zero_energy='stabilise') (a "
                "small stiffness on those modes only) or zero_energy='warn'")
    alt = ""
    if block.rule_mode != "selective" and _selective_clean(block):
        alt = f", or quadrature={{{et.name!r}: 'selective'}} (full normal terms, reduced shear terms)"
    return (f"; use the full rule (drop the quadrature setting for {et.name!r} or set it to 'full'){alt}; or, "
            "knowing the risk, Model(..., zero_energy='stabilise') (a small stiffness on those modes only) "
            "or zero_energy='warn'")


def stabilised_element(block, alpha: float | None = None) -> type:
    """The block's element type with a stiffness on its spurious zero-energy modes only.

    K = K_rule + alpha P K_full P, with K_rule the block's own (under-integrated) stiffness, K_full the
    stiffness of the element's shape functions under its full rule and P the orthogonal projector on
    the spurious modes made orthogonal to the six linear displacement fields. The linear fields (the
    rigid motions and the constant strains) are untouched, so the patch test still holds, and a
    rectangle's Q4 under the one-point rule gets exactly its full-rule stiffness at alpha = 1 (the
    idea of D. P. Flanagan and T. Belytschko, Int. J. Numer. Methods Eng. 17, 1981: hourglass
    stiffness on hourglass vectors made orthogonal to the linear field).

    Parameters
    ----------
    block : Block
    alpha : float, optional
        The fraction (default :data:`STABILISATION`).

    Returns
    -------
    type
        A subclass of the block's element type with a ``stiffness`` hook (one class per element type,
        rule mode and fraction, so results of separate solves compare alike).
    """
    from .assembly import Assembly, Block

    a = STABILISATION if alpha is None else float(alpha)
    base, mode = block.etype, block.rule_mode
    key = (base, mode, a)  # one class per element, rule mode and fraction: results of two solves compare alike
    if key in _STABILISED:
        return _STABILISED[key]

    def stiffness(cls, coords, D, thickness, rule):
        n = coords.shape[0]
        blk = Block(base, base.name, "", np.arange(n), np.arange(n * base.n_nodes).reshape(n, -1), None,
                    thickness, D, rule, mode)
        K = _matrices(blk, coords, D, thickness)
        Kf = Assembly._ke(base, coords, D, thickness, base.default_rule())
        P = _spurious_projector(blk, coords)
        return K + a * (P @ Kf @ P)

    _STABILISED[key] = cls = type(base.__name__, (base,), {
        "stiffness": classmethod(stiffness), "stabilisation": a, "__module__": base.__module__,
        "__doc__": f"{base.name} with {a:g} of its full-rule stiffness on its zero-energy modes"})
    return cls


_STABILISED: dict = {}


def _spurious_projector(block, coords: np.ndarray) -> np.ndarray:
    """Orthogonal projectors (m, 2k, 2k) on the spurious modes of each element, off the linear fields."""
    m, k = coords.shape[0], coords.shape[1]
    mapped, inv = _centre_map(block.etype, coords)
    K = _matrices(block, mapped, _D_UNIT, 1.0)
    lam, V = np.linalg.eigh(0.5 * (K + K.transpose(0, 2, 1)))
    zero = np.abs(lam) <= ZERO_TOL * np.maximum(lam[:, -1:], 0.0)
    z = zero.sum(axis=1)
    N = (V * zero[:, None, :]).reshape(m, k, 2, 2 * k)
    N = np.einsum("eji,ekjc->ekic", inv, N).reshape(m, 2 * k, 2 * k)  # u = J0^-T u' at every node
    c = coords - coords.mean(axis=1, keepdims=True)
    h = np.maximum(np.abs(c).max(axis=(1, 2)), 1e-300)[:, None]
    X, Y = c[..., 0] / h, c[..., 1] / h
    lin = np.zeros((m, k, 2, 6))
    lin[:, :, 0, 0] = 1.0
    lin[:, :, 1, 1] = 1.0
    lin[:, :, 0, 2], lin[:, :, 0, 3] = X, Y
    lin[:, :, 1, 4], lin[:, :, 1, 5] = X, Y
    Q, _ = np.linalg.qr(lin.reshape(m, 2 * k, 6))
    M = N - Q @ (Q.transpose(0, 2, 1) @ N)
    U, _, _ = np.linalg.svd(M)
    keep = np.arange(2 * k)[None, :] < (z - 3)[:, None]
    Us = U * keep[:, None, :]
    return Us @ Us.transpose(0, 2, 1)
