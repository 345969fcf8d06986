"""The diagnosis of causes: why an answer was refused or a factorization failed.

:func:`diagnose` names the likely cause from the softest mode found by inverse iteration and from
cheap facts of the model (see :mod:`planar.core.diagnose`, which checks the answer and calls it).
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from ._advice_locking import bulk_shear_ratio
from ._conditioning import EPS, _rayleigh, matvec, norm_inf, probe_vector
from ._conformity import _pieces
from .errors import SolverError, fmt_point

__all__ = ["diagnose", "explain_failure", "mode_strain", "ZERO_STRAIN", "CONTRAST", "SLENDER", "RANGE"]

#: a mode whose largest strain is below this fraction of its largest displacement over the part's
#: size does not strain (a rigid or zero-energy motion): round-off gives about 1e-13, the softest
#: bending mode of a part of slenderness s gives about 1.5 / s
ZERO_STRAIN = 1e-8
#: stiffness ratio between neighbouring regions reported as a contrast
CONTRAST = 1e6
#: length over depth reported as slender
SLENDER = 200.0
#: bulk over shear stiffness, 1 / (1 - 2 nu) in plane strain, reported as nearly incompressible: nu
#: above 0.4999995, where the volume change of a mode falls below the round-off of its shear
INCOMPRESSIBLE = 1e6


def incompressible_regions(asm) -> dict:
    """Region -> bulk over shear stiffness of the blocks that reach :data:`INCOMPRESSIBLE` in plane strain
    (empty in plane stress, where no Poisson's ratio locks the volume)."""
    if asm.analysis != "plane strain":
        return {}
    return {b.region: k for b in asm.blocks if (k := bulk_shear_ratio(b.D)) >= INCOMPRESSIBLE}


def _block_stiffness(b) -> float:
    """E times thickness, roughly: the largest entry of D times the thickness."""
    return float(np.abs(b.D).max()) * float(b.thickness)


def _node_masks(asm) -> list[np.ndarray]:
    n = asm.mesh.n_nodes
    out = []
    for b in asm.blocks:
        mk = np.zeros(n, dtype=bool)
        mk[b.conn.ravel()] = True
        out.append(mk)
    return out


def _regions_by_stiffness(asm, masks):
    """{region: (E*t, node mask)} merged over element layouts."""
    reg: dict[str, list] = {}
    for b, mk in zip(asm.blocks, masks):
        k = _block_stiffness(b)
        if b.region in reg:
            reg[b.region][0] = min(reg[b.region][0], k)
            reg[b.region][1] = reg[b.region][1] | mk
        else:
            reg[b.region] = [k, mk]
    return reg


def _contrast(asm, masks, supported: np.ndarray):
    """Findings on stiffness contrast: (pieces held only through soft regions, neighbour pair)."""
    mesh = asm.mesh
    reg = _regions_by_stiffness(asm, masks)
    names = list(reg)
    pair = None
    for i, a in enumerate(names):
        for bname in names[i + 1:]:
            shared = reg[a][1] & reg[bname][1]
            if not shared.any():
                continue
            ka, kb = reg[a][0], reg[bname][0]
            hi, lo = (a, bname) if ka >= kb else (bname, a)
            ratio = max(ka, kb) / max(min(ka, kb), 1e-300)
            if pair is None or ratio > pair[0]:
                pair = (ratio, hi, lo, int(np.flatnonzero(shared)[0]))
    held = []
    kmax = max(v[0] for v in reg.values())
    soft = [b for b in asm.blocks if _block_stiffness(b) * CONTRAST < kmax]
    if soft:
        # the mesh without the soft regions: a piece of it that holds no support hangs on soft material
        n = mesh.n_nodes
        keep = [b for b in asm.blocks if _block_stiffness(b) * CONTRAST >= kmax]
        label = _pieces(n, {i: b.conn for i, b in enumerate(keep)})
        used = np.zeros(n, dtype=bool)
        for b in keep:
            used[b.conn.ravel()] = True
        soft_mask = np.zeros(n, dtype=bool)
        for b in soft:
            soft_mask[b.conn.ravel()] = True
        for comp in np.unique(label[used]):
            members = (label == comp) & used
            if supported[members].any() or not (members & soft_mask).any():
                continue
            soft_ids = {id(b) for b in soft}
            regs = sorted({b.region for b, mk in zip(asm.blocks, masks)
                           if id(b) not in soft_ids and (mk & members).any()})
            via = sorted({b.region for b, mk in zip(asm.blocks, masks) if id(b) in soft_ids and (mk & members).any()})
            ks = min(_block_stiffness(b) for b in soft if b.region in via)
            kk = max(_block_stiffness(b) for b in keep if b.region in regs)
            xy = mesh.nodes[members]
            held.append((regs, via, kk / max(ks, 1e-300), xy.mean(axis=0), int(members.sum())))
    return held, pair


def _slenderness(asm, region: str | None = None):
    """Length over depth of the part (or of one region), its elements through the depth, its length
    and depth: the length along the principal axis of the nodes, the depth as area over length."""
    mesh = asm.mesh
    area = 0.0
    n_el = 0
    used = np.zeros(mesh.n_nodes, dtype=bool)
    for b in asm.blocks:
        if region is not None and b.region != region:
            continue
        _, dv, _ = b.geometry(mesh.nodes)
        area += float(dv.sum()) / max(float(b.thickness), 1e-300)
        n_el += b.n
        used[b.conn.ravel()] = True
    xy = mesh.nodes[used]
    xy = xy - xy.mean(axis=0) if xy.size else xy
    if xy.shape[0] < 3 or area <= 0:
        return 1.0, 1.0, 0.0, 0.0
    _, _, vt = np.linalg.svd(xy[: min(xy.shape[0], 200_000)], full_matrices=False)
    proj = xy @ vt[0]
    length = float(np.ptp(proj))
    depth = area / max(length, 1e-300)
    # the cells' extent across the principal axis (elongated cells are thin across it, not sqrt(area))
    across = [np.ptp(mesh.nodes[b.conn] @ vt[1], axis=1) for b in asm.blocks
              if region is None or b.region == region]
    h = float(np.median(np.concatenate(across))) if across else np.sqrt(area / max(n_el, 1))
    return length / max(depth, 1e-300), depth / max(h, 1e-300), length, depth


def _most_slender(asm):
    """(slenderness, elements through the depth, length, depth, where) of the part or its most slender
    region."""
    s = _slenderness(asm)
    best = (*s, "the part")
    regions = sorted({b.region for b in asm.blocks})
    if len(regions) > 1:
        for r in regions:
            sr = _slenderness(asm, r)
            if sr[0] > best[0]:
                best = (*sr, f"region {r!r}")
    return best


def mode_strain(asm, mode: np.ndarray, free: np.ndarray) -> float:
    """Largest strain of a mode (at each block's stiffness rule points) over its largest displacement
    divided by the part's size: about 0 (round-off) for a rigid or zero-energy motion."""
    from .assembly import element_strains

    mesh = asm.mesh
    full = np.zeros(2 * mesh.n_nodes)
    full[free] = mode
    full = full.reshape(-1, 2)
    umax = float(np.abs(full).max())
    if not (umax > 0 and np.isfinite(umax)):
        return np.inf
    top = 0.0
    step = 20_000
    for b in asm.blocks:
        for s in range(0, b.n, step):
            c = b.conn[s : s + step]
            eps = element_strains(b.etype, mesh.nodes[c], b.D, full[c].reshape(c.shape[0], -1), b.rule)
            top = max(top, float(np.abs(eps).max(initial=0.0)))
    return top * max(mesh.size(), 1e-300) / umax


#: magnitudes beyond which the products of a solve leave double precision's comfortable range
RANGE = 1e150


def _out_of_range(asm, loads: np.ndarray | None, u: np.ndarray | None) -> str:
    """The inputs or results whose magnitude is beyond 1e150 or below 1e-150 (zero excepted)."""
    found = []

    def check(name, values):
        a = np.abs(np.asarray(values, dtype=float))
        a = a[np.isfinite(a) & (a > 0)]
        if a.size and (a.max() > RANGE or a.min() < 1.0 / RANGE):
            found.append(f"{name} from {a.min():.1e} to {a.max():.1e}" if a.size > 1 else f"{name} {a.max():.1e}")

    check("E times thickness", [_block_stiffness(b) for b in asm.blocks])
    if loads is not None:
        check("largest load", [np.abs(loads).max(initial=0.0)])
    if u is not None:
        top = np.abs(u).max(initial=0.0)
        check("largest displacement", [top] if np.isfinite(top) else [np.inf])
    return ", ".join(found)


def diagnose(asm, system=None, free: np.ndarray | None = None, *, mode: np.ndarray | None = None,
             lam: float | None = None, norm: float | None = None, u: np.ndarray | None = None,
             solver: str = "", generic: bool = True, loads: np.ndarray | None = None) -> str:
    """Name the likely cause of an untrustworthy or failed solve, and where it is.

    Parameters
    ----------
    asm : Assembly
    system : ReducedSystem, optional
    free : ndarray, optional
        Global unknown of each free unknown.
    mode : ndarray, optional
        Approximate softest mode over the free unknowns (from inverse iteration).
    lam, norm : float, optional
        Its Rayleigh quotient and ``||K_ff||_inf``.
    u : ndarray, shape (ndof, m), optional
        Displacements (for the units check).
    solver : str
    generic : bool
        Give a general hint when no specific cause is found (else only where the mode is).
    loads : ndarray, optional
        Right-hand sides (for the range check).

    Returns
    -------
    str
        The diagnosis: a mechanism (the softest mode strains no more than round-off), a part held
        only through a much softer region, a slender part, units far off, or a stiffness contrast,
        with region names, node ids and coordinates, and the fix.
    """
    mesh = asm.mesh
    masks = _node_masks(asm)
    ndof = 2 * mesh.n_nodes
    supported = np.ones(mesh.n_nodes, dtype=bool)
    if free is not None:
        fr = np.zeros(ndof, dtype=bool)
        fr[free] = True
        supported = ~(fr[0::2] & fr[1::2]) & mesh.used_nodes()
    where = ""
    if mode is not None and free is not None and np.all(np.isfinite(mode)) and np.abs(mode).max() > 0:
        full = np.zeros(ndof)
        full[free] = mode
        amp = np.hypot(full[0::2], full[1::2])
        big = amp >= 0.5 * amp.max()
        top = int(np.argmax(amp))
        regs = sorted({b.region for b, mk in zip(asm.blocks, masks) if (mk & big).any()})
        xy = mesh.nodes[big]
        where = (f"The softest mode of the stiffness matrix is largest at node {top} "
                 f"{fmt_point(mesh.nodes[top])}; "
                 f"{int(big.sum())} node(s) in region(s) {', '.join(map(repr, regs))} between "
                 f"{fmt_point(xy.min(axis=0))} and {fmt_point(xy.max(axis=0))} move with it.")
    rel = (lam / norm) if (lam is not None and norm) else None
    strain = mode_strain(asm, mode, free) if (mode is not None and free is not None) else None
    causes = []
    out = _out_of_range(asm, loads, u)
    if out:
        causes.append(
            f"numbers out of the range of double precision ({out}): values beyond about 1e150 or below "
            "1e-150 overflow, underflow or lose their figures in the products of the solve; use consistent "
            "units of ordinary size (e.g. N, mm, MPa: steel E = 2.1e5 MPa)")
    held, pair = _contrast(asm, masks, supported)
    for regs, via, ratio, c, cnt in held:
        causes.append(
            f"a near-mechanism: region(s) {', '.join(map(repr, regs))} ({cnt} nodes, around {fmt_point(c)}) "
            f"are held only through region(s) {', '.join(map(repr, via))}, {ratio:.1e} times softer "
            "(E times thickness): give the soft region a realistic modulus, support the stiff part "
            "directly, or model the stiff part as a prescribed (rigid) boundary")
    reduced = sorted({f"{b.etype.name} in {b.region!r}" for b in asm.blocks
                      if b.rule_mode in ("reduced", "custom")})
    zero_energy = strain is not None and strain < ZERO_STRAIN
    if not causes and zero_energy and reduced:
        causes.append(
            "a mechanism from zero-energy (hourglass) modes of an under-integrated rule ("
            + ", ".join(reduced) + "): use the full integration rule")
    bulk = incompressible_regions(asm) if not causes else {}
    if bulk:
        causes.append(
            f"a nearly incompressible material in plane strain: region(s) {', '.join(map(repr, bulk))} resist a "
            f"change of volume {max(bulk.values()):.1e} times more than a change of shape (1 / (1 - 2 nu)), "
            "beyond what double precision separates; use Poisson's ratio 0.499 or less (or plane stress)")
    s, through, length, depth, what = _most_slender(asm)
    if not causes and s >= SLENDER:
        causes.append(
            f"ill-conditioning, not a mechanism: {what} is very slender (length {length:.4g} over depth "
            f"{depth:.4g}, ratio {s:.2g}, about {through:.2g} element(s) through the depth), so its bending "
            "stiffness is below the round-off of its axial stiffness in double precision; model it as a "
            "beam, or analyse a shorter length with the end forces and moments as loads")
    if not causes and zero_energy:
        causes.append(
            "a mechanism: part of the model can move without straining (the softest mode's strain energy "
            "is at the round-off level of the stiffness): look for a region joined by a single node (a hinge), "
            "supports that leave a motion free, or elements that do not share nodes; add supports or join "
            "the parts")
    if u is not None and np.all(np.isfinite(u)) and not causes:
        size = max(mesh.size(), 1e-300)
        umax = float(np.abs(u).max(initial=0.0))
        if umax > 0.1 * size:
            causes.append(
                f"units: displacements reach {umax:.3g}, {umax / size:.2g} times the part's size {size:.4g}; "
                "the modulus is far too small for the loads, or the units are mixed (e.g. E in Pa with "
                "lengths in mm: use N, mm, MPa)")
    if pair is not None and pair[0] >= CONTRAST and not held:
        ratio, hi, lo, node = pair
        causes.append(
            f"stiffness contrast: region {hi!r} is {ratio:.1e} times stiffer (E times thickness) than its "
            f"neighbour {lo!r} (they meet at node {node} {fmt_point(mesh.nodes[node])}); bring the contrast "
            "within about 1e6, or model the stiff region as rigid (prescribed displacements)")
    if not causes and not generic:
        return where
    if not causes and rel is not None and rel < 1e-10:
        causes.append("ill-conditioning of unclear origin: check the units, the moduli and the supports near the "
                      "softest mode")
    if not causes:
        causes.append("no mechanism, stiffness contrast, slender part or unit mix-up was found; check the "
                      "supports and the moduli near the softest mode")
    text = "Likely cause: " + "; also ".join(causes) + "."
    if solver == "amg" and not (zero_energy and not held):  # a direct solver cannot help a mechanism
        text += " With the iterative solver, try solver='cholmod' or 'pardiso'."
    return (text + " " + where).strip()


def _soft_mode(system, nrm: float, shift: bool = True):
    """The softest mode by four inverse-iteration steps with a direct factorization of K (+ s I).

    Returns (mode, Rayleigh quotient, whether K itself factorized), or (None, None, False) when the
    model is too large (over 300,000 unknowns) or the factorization fails.
    """
    from . import solvers

    n = system.lower.shape[0]
    if not (0 < n <= 300_000 and nrm > 0 and np.isfinite(nrm)):
        return None, None, False
    method = "cholmod" if "cholmod" in solvers.available_solvers() else "superlu"
    fac, definite = None, False
    if not shift:
        try:
            fac = solvers.factorize(system.lower, method)
            definite = True
        except SolverError:
            fac = None
    try:
        if fac is None:
            L = sp.csc_matrix(system.lower) + sp.identity(n, format="csc") * (1e-10 * nrm)
            fac = solvers.factorize(sp.tril(L, format="csc"), method)
        x = probe_vector(n)
        for _ in range(4):
            x = np.asarray(fac.solve(x / np.abs(x).max()), dtype=float).reshape(n)
        lam = float(_rayleigh(x[:, None], matvec(system.lower, x[:, None]))[0])
        return x, lam, definite
    except Exception:  # noqa: BLE001 - the diagnosis is best effort; the model facts still speak
        return None, None, definite


def explain_failure(asm, system, free: np.ndarray, solver: str, exc: Exception,
                    rhs: np.ndarray | None = None) -> SolverError:
    """A :class:`SolverError` for a factorization or iteration that failed, worded by diagnosis.

    The softest mode is sought by four steps of inverse iteration when the model is small enough
    (up to 300,000 unknowns): with a direct factorization of K itself after a failed iteration
    (whose success shows the matrix is positive definite), else of ``K + s I`` with
    ``s = 1e-10 ||K||_inf``, which makes a singular matrix factorizable. The model's own facts
    (contrast, slenderness, integration rule, range of the numbers) are used whatever its size.
    """
    nrm = norm_inf(system.lower)
    mode, lam, definite = _soft_mode(system, nrm, shift=solver != "amg")
    if definite and (mode is None or not lam or nrm / lam * EPS >= 1.0
                     or mode_strain(asm, mode, free) < ZERO_STRAIN):
        definite = False  # factorized, but only through round-off: singular to working precision
    text = diagnose(asm, system, free, mode=mode, lam=lam, norm=nrm, solver="" if definite else solver,
                    generic=not definite, loads=rhs)
    if definite:
        cond = nrm / lam if lam else np.inf
        figure = f" (condition estimate {cond:.1e})" if np.isfinite(cond) and cond >= 1 else ""
        text = (f"A direct factorization of the same matrix succeeds{figure}, so it is not a mechanism but a "
                f"matrix this iterative solver cannot handle: use solver='cholmod' or 'pardiso'. {text}")
    return SolverError(f"{exc}. {text}")
