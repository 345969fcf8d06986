"""Nodal stresses: region-wise averaging and superconvergent patch recovery (SPR).

Stress recovery produces part of a Result (its nodal stresses), so it lives in the core; the SPR
operator itself is built in :mod:`planar.core._spr`. ``planar.post.recovery`` is the same module.

Finite-element stresses are discontinuous between elements and least accurate at the nodes, which is
where the peaks of a part usually are (hole edges, notch roots, fillets). This module turns the
element stresses into one continuous nodal field per region:

``"average"``
    The Gauss-point stresses of each element are extrapolated to its nodes (a least-squares fit of
    the stresses' own polynomial degree) and averaged over the elements of the region that share the
    node.
``"spr"``
    Superconvergent patch recovery (O. C. Zienkiewicz and J. Z. Zhu, "The superconvergent patch
    recovery and a posteriori error estimates", Part 1: The recovery technique, Int. J. Numer.
    Methods Eng. 33, 1331-1364, 1992): around every vertex node, a complete polynomial of the
    element degree p is fitted by least squares to the stresses at the elements' superconvergent
    sampling points, and evaluated at the nodes.

Recovery never smooths across a change of material or thickness: every region is recovered on its
own, so a node on an interface has one value per region (``per_region=True``). Units are the
model's (stresses in the user's force per area, e.g. MPa).

Sampling points (the reduced Gauss rule of each element type)
-------------------------------------------------------------
====  ==================================  ======================
type  points                              fitted polynomial
====  ==================================  ======================
T3    1, the centroid                     complete linear
T6    3, the degree-2 rule                complete quadratic
Q4    1, the centre                       complete linear
Q8    2 x 2 Gauss                         complete quadratic
Q9    2 x 2 Gauss                         complete quadratic
====  ==================================  ======================

A plugin element uses the same rule for its degree (triangle rule of degree p, p x p on quads).

Patches
-------
- The patch of a vertex (corner) node is the set of elements of the region that share it. The
  polynomial is written in local coordinates centred at the vertex and scaled by the patch size,
  so the normal equations stay well conditioned at any mesh size.
- An interior vertex takes the value of its own patch; mid-side and centre nodes inside the region
  take the average of the polynomials of the interior vertex patches that contain them
  (Zienkiewicz and Zhu 1992, Part 1, section 4).
- Nodes on the region boundary (free edges, supports and interfaces alike), where the stress peaks
  of a part usually are, have no patch around them. By default (``boundary="enlarged"``) each is
  recovered from its own patch: the elements around it and their neighbours (grown by rings of
  elements until there are at least 1.5 times as many sampling points as terms), with the
  polynomial centred on the node, the points weighted by 1 / (d / d_max + 1/4)^2 so the nearest
  count most, and on quadrilateral regions the degree raised to p + 1 (a space that holds the
  element's own bilinear, serendipity or Lagrange polynomial). This is our choice, tested against
  the exact Kirsch field on mapped and gmsh meshes of all five element types, where it beat both
  averaging and ZZ's original rule at the hole. ``boundary="interior"`` gives the original rule:
  boundary nodes take the average of the interior vertex patches that contain them.
- A node that no interior patch reaches (a corner element of a strip one element thick, say) is
  recovered from its own enlarged patch too; when that patch has too few or badly placed points
  for the degree, the degree drops until the fit is determined. Where it drops below the elements'
  own degree p (the sampling points lie on a line: the centres of a strip of Q4 one element thick,
  which cannot tell how the stress varies across the strip, so a constant fit would read the
  bending stress of such a strip as zero), the node takes the elements' own stresses extrapolated
  from their Gauss points and averaged (``"average"``) instead.

A patch polynomial reproduces sampled values of its degree exactly, so recovery is exact for a
stress field of degree p sampled exactly (the consistency condition), at boundary nodes too.

All fits of one region are computed at once: patches are grouped by their number of sampling
points, and each group's normal equations are solved as one batched ``numpy.linalg.solve``.
"""
from __future__ import annotations

from concurrent.futures import Future

import numpy as np

from ._spr import (_BOUNDARY, RecoveryOperator, Samples, patch_recovery, recovery_operator,  # noqa: F401
                   sampling_rule)
from .caseresult import as_result
from .compat import renamed_keywords
from .errors import InputError
from .parallel import background
from .stress import has_initial_strain, nodal_average, stress_at, stress_measures, stress_rule

__all__ = ["recover", "sampling_rule", "Samples", "stress_samples", "patch_recovery", "recovery_operator",
           "RecoveryOperator", "METHODS", "prepare_recovery", "combine_regions"]

#: recovery methods a user can ask for
METHODS = ("spr", "average")
_has_initial_strain = has_initial_strain  # the earlier private spelling


def stress_samples(result) -> list[Samples]:
    """Stresses at the superconvergent sampling points of every block of a result.

    Parameters
    ----------
    result : Result

    Returns
    -------
    list of Samples
        One entry per element block, in the order of ``result.assembly.blocks``.

    Notes
    -----
    Strains come from the element's own ``strain`` hook when it has one, otherwise from B u_e; the
    stress is D eps. A block loaded by an initial strain (thermal load) is sampled at the stiffness
    rule's points, where the initial strain is known (``superconvergent=False``).
    """
    result = as_result(result, "stress_samples")
    blocks = result.assembly.blocks
    e0s = result.initial_strains
    out = []
    for i, b in enumerate(blocks):
        e0 = e0s[i]
        if e0 is not None and np.any(e0):  # the Gauss fields tell whether it strains the plane
            g = result.gauss[i]
            if has_initial_strain(g):
                out.append(Samples(b, g.x, np.concatenate([g.stress, g.szz[..., None]], axis=-1), False))
                continue
        rule = sampling_rule(b.etype)
        stiff = stress_rule(b)
        if stiff.points.shape == rule.points.shape and np.array_equal(stiff.points, rule.points):
            g = result.gauss[i]  # the stiffness rule samples there already (T3, T6): reuse its stresses
            out.append(Samples(b, g.x, np.concatenate([g.stress, g.szz[..., None]], axis=-1), True))
            continue
        x = b.geometry(result.mesh.nodes, rule)[0]
        at = stress_at(b, result.mesh.nodes, result.u, rule, analysis=result.model.analysis)
        out.append(Samples(b, x, np.concatenate([at.stress, at.szz[..., None]], axis=-1), True))
    return out


def _average_region(result, blocks: list[int]) -> np.ndarray:
    """Gauss values extrapolated to the nodes and averaged over the region's elements (NaN outside)."""
    fields = []
    for i in blocks:
        g = result.gauss[i]
        fields.append((g.block.etype, g.rule, g.block.conn, np.concatenate([g.stress, g.szz[..., None]], axis=-1)))
    return nodal_average(result.mesh.n_nodes, fields)


def combine_regions(per_region: dict[str, np.ndarray], n: int) -> np.ndarray:
    """One nodal field from ``recover(..., per_region=True)``: at interface nodes, the region value with
    the largest von Mises stress; zero at nodes of no region."""
    arrays = list(per_region.values())
    if len(arrays) == 1:
        out = arrays[0].copy()
    else:
        stack = np.stack(arrays)  # (r, n, 4)
        vm = stress_measures(stack[..., :3], stack[..., 3])["von_mises"]
        vm = np.where(np.isnan(vm), -np.inf, vm)
        pick = np.argmax(vm, axis=0)
        out = stack[pick, np.arange(n)]
    out[np.isnan(out)] = 0.0
    return out


def _operator_key(ids, flags, degree, boundary) -> tuple:
    return ("spr", tuple(ids), tuple(flags), degree, boundary)


def _cached_operator(asm, ids: list[int], samples: list[Samples], degree, boundary) -> RecoveryOperator:
    """The region's recovery operator from the assembly's cache (waiting for one being built)."""
    cache = getattr(asm, "cache", None)
    if cache is None:
        return recovery_operator(asm.mesh, samples, degree=degree, boundary=boundary)
    key = _operator_key(ids, [s.superconvergent for s in samples], degree, boundary)
    op = cache.get(key)
    if isinstance(op, Future):
        try:
            op = op.result()
        except Exception:  # noqa: built again below, so that the error surfaces here
            op = None
    if op is None:
        op = recovery_operator(asm.mesh, samples, degree=degree, boundary=boundary)
    cache[key] = op
    return op


#: models with fewer unknowns build their recovery operators when first asked (it takes milliseconds)
PREPARE_ABOVE = 50_000


def prepare_recovery(asm, n_unknowns: int) -> list[Future]:
    """Start building the default SPR operators of every region in the background.

    Called by :func:`planar.solve` before a PARDISO factorization, whose ordering phase keeps one
    core only (the numeric phase waits for the builds, so they never compete with it); the
    operators depend on the mesh alone. The first nodal-stress request then finds them built.
    Blocks loaded by initial strains are sampled elsewhere (see :func:`stress_samples`), so their
    operator is built on request instead.

    Returns
    -------
    list of Future
        The builds started (none below ``PREPARE_ABOVE`` unknowns).
    """
    started: list[Future] = []
    if n_unknowns < PREPARE_ABOVE:
        return started
    regions: dict[str, list[int]] = {}
    for i, b in enumerate(asm.blocks):
        regions.setdefault(b.region, []).append(i)
    for ids in regions.values():
        key = _operator_key(ids, [True] * len(ids), None, "enlarged")
        if key in asm.cache:
            continue

        def build(ids=ids):
            blocks = [asm.blocks[i] for i in ids]
            points = [b.geometry(asm.mesh.nodes, sampling_rule(b.etype))[0] for b in blocks]
            return recovery_operator(asm.mesh, [Samples(b, x, np.zeros(0)) for b, x in zip(blocks, points)])

        asm.cache[key] = background(build)
        started.append(asm.cache[key])
    return started


@renamed_keywords(method="recovery")
def recover(result, recovery: str = "spr", per_region: bool = False, *, boundary: str = "enlarged",
            degree: int | None = None) -> np.ndarray | dict[str, np.ndarray]:
    """Nodal stresses of a result, recovered region by region.

    Parameters
    ----------
    result : Result
    recovery : {"spr", "average"}
        ``"spr"``: superconvergent patch recovery (the default for reported peaks);
        ``"average"``: Gauss values extrapolated to the nodes and averaged per region.
    per_region : bool, default False
        False: one (n_nodes, 4) array; at a node shared by regions of different material or
        thickness, the value of the region with the largest von Mises stress there (the critical
        side of the interface). True: a dict region name -> (n_nodes, 4) array with NaN at the
        nodes outside that region, so interface nodes keep one value per region.
    boundary : {"enlarged", "interior"}, keyword-only
        Boundary-node treatment of SPR (see :func:`patch_recovery`).
    degree : int, optional, keyword-only
        SPR polynomial degree (default: the element degree p).

    Returns
    -------
    ndarray, shape (n_nodes, 4), or dict of str to ndarray
        Columns (sigma_xx, sigma_yy, tau_xy, sigma_zz) in the model's stress unit. Nodes that belong
        to no element get zero (in the combined array).

    Raises
    ------
    InputError
        For an unknown method or boundary treatment.

    Examples
    --------
    >>> import planar
    >>> from planar.post.recovery import recover
    >>> mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
    >>> model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0)
    >>> _ = model.add_support(planar.Roller("left", fixed="x"))
    >>> _ = model.add_support(planar.Roller("corner_00", fixed="y"))
    >>> _ = model.add_load(planar.Traction("right", tx=50.0), case="pull")
    >>> s = recover(planar.solve(model)["pull"], "spr")
    >>> round(float(s[:, 0].max()), 9), s.shape
    (50.0, (85, 4))
    """
    result = as_result(result, "recover")
    if recovery not in METHODS:
        raise InputError(f"unknown stress recovery {recovery!r}; pick one of {', '.join(METHODS)}")
    if boundary not in _BOUNDARY:
        raise InputError(f"unknown boundary treatment {boundary!r}; pick one of {', '.join(_BOUNDARY)}")
    blocks = result.assembly.blocks
    regions: dict[str, list[int]] = {}
    for i, b in enumerate(blocks):
        regions.setdefault(b.region, []).append(i)
    out: dict[str, np.ndarray] = {}
    if recovery == "spr":
        samples = stress_samples(result)
        for name, ids in regions.items():
            mine = [samples[i] for i in ids]
            op = _cached_operator(result.assembly, ids, mine, degree, boundary)
            out[name] = patch_recovery(result.mesh, mine, operator=op)
            short = getattr(op, "short", None)
            if short is not None and short.any():  # sampling points on a line: the elements' own stresses there
                avg = _average_region(result, ids)
                take = short & np.all(np.isfinite(avg), axis=1)
                out[name][take] = avg[take]
    else:
        for name, ids in regions.items():
            out[name] = _average_region(result, ids)
    if per_region:
        return out
    return combine_regions(out, result.mesh.n_nodes)
