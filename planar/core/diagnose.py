"""Checks of a solved system: does the answer satisfy its own equations, how many figures of it can be
trusted, and, when it cannot be trusted, why and where.

After every solve (:func:`check_solution`), for all load cases at once:

* the normwise backward error of each case (Rigal and Gaches, 1967; N. J. Higham, Accuracy and
  Stability of Numerical Algorithms, 2nd ed., 2002, Theorem 7.1), in the infinity norm,
  ``eta = ||K_ff u_f - b||_inf / (||K_ff||_inf ||u_f||_inf + ||b||_inf)``: one sparse product;
* the equilibrium error of each case (reactions against applied loads, forces and moment; the
  figure of :meth:`Result.equilibrium_error`);
* an estimate of the condition number ``kappa = ||K_ff||_inf / lambda_min``. ``||K_ff||_inf`` (an
  upper bound of the largest eigenvalue) comes from the matrix entries (for PARDISO on the core its
  ordering phase leaves idle); ``lambda_min`` from Rayleigh quotients, each an upper bound of the
  smallest eigenvalue, of the load cases' own displacements and, up to ``PROBE_LIMIT`` unknowns, of
  one step of inverse iteration with the existing factorization from a random vector with a fixed
  seed, solved as one more column with the load cases.

Only when the classical bound ``kappa * max(eta, eps)`` (Higham 2002, eq. 7.2; eps = 2.2e-16) exceeds
``ESTIMATE_FROM = 1e-5`` does a solve cost more: up to three more inverse-iteration steps sharpen
lambda_min, and one step of iterative refinement, ``d = K^-1 r`` for all cases in one call, estimates
the error actually present: the larger of ``||d||_inf / ||u||_inf`` (displacements) and
``sqrt(|d.r| / |u.b|)`` (energy norm, i.e. the stresses). The bound is pessimistic: on clamped strips
of slenderness 100 to 10^4 the true error (from a reference refined with residuals in extended
precision) was 2e-3 to 5e-3 of it, while the refinement estimate was within a factor of 10 of the true
error on every back end; hence the margin of 10 below.

Thresholds:

* ``REFUSE = 1e-3``: an answer whose estimated relative error, ten times the refinement estimate, is
  above 1e-3 has fewer than three significant figures (with the margin) and is refused with a
  ``SolverError``; so is one whose bound reaches 1 (kappa * eta >= 1: K is singular to working
  precision, no figure is guaranteed and the refinement estimate itself is noise).
* ``WARN = 1e-5``: between WARN and REFUSE the answer is given with a ``DiscretisationWarning`` code
  "ill-conditioned" (three to five figures): enough for a stress check, but short of what a user
  reading to four figures assumes. Healthy models stay far below: the benchmark plate at 10^6
  unknowns has kappa ~ 1.5e8 (bound 1.4e-7), a contrast of 1e4 between regions or a slenderness of
  100 bounds of 1e-8 to 1e-4 and refinement estimates of 1e-9 to 1e-7.
* Backward error: a backward-stable factorization gives eta of a few eps, growing at most like
  sqrt(n) in practice (Higham 2002, section 10.1; 1e-15 at 10^6 unknowns here); planar refuses
  ``eta > max(1e-12, 100 sqrt(n) eps)`` for the direct back ends (2e-11 at 10^6 unknowns, four
  orders above what a sound factorization gives), and ``eta > 10 rtol`` for the iterative one (it
  stops at a relative residual of rtol).
* Equilibrium: reactions that balance the applied loads to fewer than three figures
  (``EQUILIBRIUM_REFUSE = 1e-3``) are refused whatever the other figures say.

The iterative back end stops at a relative residual ``rtol``, which on an ill-conditioned system can
leave the bound far above what is needed although the iteration could go on. So before the check,
:func:`meet_accuracy` lets the accuracy goal drive the iteration: a load case whose bound exceeds
``ACCURACY_GOAL = WARN`` (five figures) is continued from its answer (warm start) until its backward
error is at most ``ACCURACY_GOAL / (10 kappa)``, floored at 4 eps (CG's true residual stagnates at a
few eps ||K|| ||u||, measured 1 to 40 eps on clamped strips of slenderness 30 to 300), or until CG
stagnates. The check then judges its answer as any other; one still short of three figures is refused
as an iterative solve that could not reach the accuracy this model needs (a direct back end solves it
to the round-off of its factorization), and called singular only when a direct look at the softest
mode finds K singular to working precision (a mechanism, or kappa eps >= 1).

When an answer is refused, or a factorization fails (:func:`explain_failure`), :func:`diagnose` names
the likely cause from the softest mode found by inverse iteration (where it is largest, and whether it
strains at all: a mechanism's mode does not, to round-off, while the softest mode of a slender part
bends) and from cheap facts of the model: numbers out of the range of double precision, pieces held
only through a much softer region, zero-energy modes of an under-integrated rule, slender parts and
their elements through the depth, displacements comparable to the part's size (units), and the
stiffness contrast between neighbouring regions.

The diagnosis of causes lives in :mod:`planar.core._diagnosis` and the arithmetic both share (probe,
norms, the condition estimate) in :mod:`planar.core._conditioning`; their names are importable from
here as before.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ._conditioning import (EPS, PROBE_LIMIT, SEED, _backward_tol, _diagonal, _figures, _inverse,  # noqa: F401
                            _lower, _rayleigh, also_wait, matrix_figures, matvec, norm_inf, probe_vector,
                            solve_with_probe, start_figures)
from ._diagnosis import (CONTRAST, RANGE, SLENDER, ZERO_STRAIN, _block_stiffness, _contrast,  # noqa: F401
                         _most_slender, _node_masks, _out_of_range, _regions_by_stiffness, _slenderness,
                         _soft_mode, diagnose, explain_failure, mode_strain)
from .errors import SolverError

__all__ = ["check_solution", "diagnose", "explain_failure", "equilibrium_errors", "probe_vector", "norm_inf",
           "mode_strain", "matvec", "matrix_figures", "start_figures", "also_wait", "solve_with_probe",
           "warning_text", "warn_untrusted", "meet_accuracy", "Trust", "REFUSE", "WARN", "EQUILIBRIUM_REFUSE"]

#: estimated relative error (with its margin) above which an answer is refused: 3 figures
REFUSE = 1e-3
#: estimated relative error above which an answer carries an "ill-conditioned" warning: 5 figures
WARN = 1e-5
#: classical bound above which the actual error is estimated by a step of refinement
ESTIMATE_FROM = WARN
#: margin on the refinement estimate (it was within a factor of 10 of the true error in calibration)
MARGIN = 10.0
#: equilibrium error above which an answer is refused
EQUILIBRIUM_REFUSE = 1e-3


@dataclass
class Trust:
    """Figures of a checked solve.

    Attributes
    ----------
    residual : ndarray, shape (m,)
        Normwise backward error of each load case.
    equilibrium_error : ndarray, shape (m,)
    condition_estimate : float
        Estimate of ``||K_ff||_inf / lambda_min``.
    error_estimate : ndarray, shape (m,)
        Estimated relative error of each case: the bound when it is small, else ten times the
        error found by one step of refinement (displacements or energy norm, the larger).
    bound : ndarray, shape (m,)
        ``condition_estimate * max(residual, eps)``, the classical error bound.
    mode : ndarray or None
        Approximate softest mode over the free unknowns.
    """

    residual: np.ndarray
    equilibrium_error: np.ndarray
    condition_estimate: float
    error_estimate: np.ndarray
    bound: np.ndarray
    norm: float = 0.0
    lambda_min: float = 0.0
    mode: np.ndarray | None = field(default=None, repr=False)

    def info(self, j: int) -> dict:
        """The figures of load case ``j`` for ``Result.solver_info``."""
        err = float(self.error_estimate[j])
        return {"backward_error": float(self.residual[j]), "equilibrium_error": float(self.equilibrium_error[j]),
                "condition_estimate": float(self.condition_estimate), "error_estimate": err,
                "significant_figures": _figures(err)}


def check_solution(asm, system, fac, rhs: np.ndarray, sol: np.ndarray, probe: np.ndarray | None,
                   cases: list[str], R: np.ndarray, F: np.ndarray, U: np.ndarray, *,
                   free: np.ndarray | None = None, figures=None) -> Trust:
    """Check a solve and estimate its accuracy; refuse an answer that cannot be trusted.

    Parameters
    ----------
    asm : Assembly
    system : ReducedSystem
    fac : Factorization
        The factorization that solved it (used again only for suspect models).
    rhs : ndarray, shape (n, m)
        Right-hand sides of the load cases (free unknowns).
    sol : ndarray, shape (n, m) or (n, m + 1)
        Their solutions, followed by ``K^-1 probe`` when ``probe`` is given.
    probe : ndarray, shape (n,), or None
        The inverse-iteration start vector solved with the load cases.
    cases : list of str
    R, F, U : ndarray, shape (ndof, m)
        Reactions, applied forces and displacements over every unknown, in global components.
    free : ndarray, optional
        Global unknown of each free unknown (for locating the softest mode).
    figures : Future, optional
        From :func:`start_figures`: the diagonal and norm of K computed during the factorization.

    Returns
    -------
    Trust

    Raises
    ------
    SolverError
        An answer with fewer than three trustworthy figures, a backward error far above what a
        stable solve gives, or loads and reactions out of balance; the message names the likely
        cause and where it is.
    """
    m = len(cases)
    n = rhs.shape[0]
    rhs = rhs.reshape(n, m)
    L = _lower(system.lower)
    diag, nrm = figures.result() if figures is not None else matrix_figures(L)
    V = sol.reshape(n, -1)  # (n, m [+ 1])
    KV = matvec(L, V, diag)
    uf = V[:, :m]
    res = rhs - KV[:, :m]
    unorm = np.abs(uf).max(axis=0, initial=0.0)
    bnorm = np.abs(rhs).max(axis=0, initial=0.0)
    den = nrm * unorm + bnorm
    with np.errstate(invalid="ignore", divide="ignore"):
        eta = np.where(den > 0, np.abs(res).max(axis=0, initial=0.0) / np.where(den > 0, den, 1.0), 0.0)
    q = _rayleigh(V, KV)
    k = int(np.argmin(q)) if q.size else 0
    lam = float(q[k]) if q.size else np.inf
    mode = V[:, k].copy() if q.size else None
    # no finite Rayleigh quotient (every load zero, no probe): no estimate, reported as NaN
    cond = nrm / lam if lam > 0 and np.isfinite(lam) else (np.nan if lam == np.inf else np.inf)
    bound = np.nan_to_num(cond, nan=1.0) * np.maximum(eta, EPS)
    err = bound.copy()
    if np.any(bound > ESTIMATE_FROM):
        # suspect: sharpen lambda_min by inverse iteration, and estimate the actual error by one
        # step of refinement, d = K^-1 r (all load cases in one call)
        if mode is not None:
            lam, mode = _sharpen(fac, system, V[:, -1] if probe is not None else mode, lam, mode)
            cond = nrm / lam if lam > 0 else np.inf
            bound = cond * np.maximum(eta, EPS)
        err = _refinement_error(fac, res, uf, rhs)
    eq = equilibrium_errors(asm, R.reshape(-1, 2, m), F.reshape(-1, 2, m))
    trust = Trust(eta, eq, float(cond), err, bound, nrm, lam, mode)
    tol = _backward_tol(fac, n)
    bad = None
    iterative = hasattr(fac, "refine")
    short = None  # the load case an iterative solve left short of the accuracy it needs
    for j, c in enumerate(cases):
        if iterative and (not np.isfinite(bound[j]) or bound[j] >= 1.0 or not np.isfinite(err[j]) or err[j] > REFUSE):
            short = j
            its = fac.info.get("iterations", [])
            done = f"after {its[j]} iterations " if j < len(its) else ""
            # the refinement estimate where the bound leaves figures to estimate, else the bound itself
            left = float(err[j]) if np.isfinite(err[j]) and bound[j] < 1.0 else float(bound[j])
            bad = (f"load case {c!r}: the iterative solver could not reach the accuracy this ill-conditioned "
                   f"model needs (condition estimate {cond:.1e}; {done}its backward error is {eta[j]:.1e}, "
                   f"which leaves an estimated relative error of {left:.1e}, fewer than 3 significant figures); "
                   "use a direct back end (solver='cholmod' or 'pardiso'), which solves it to the round-off "
                   "of the factorization")
        elif not np.isfinite(bound[j]) or bound[j] >= 1.0:
            bad = (f"load case {c!r}: the stiffness matrix is singular to working precision (condition "
                   f"estimate {cond:.1e}; times the backward error {eta[j]:.1e} that is {bound[j]:.1e}), so "
                   "no figure of the answer is guaranteed")
        elif not np.isfinite(err[j]) or err[j] > REFUSE:
            bad = (f"load case {c!r}: estimated relative error of the answer {err[j]:.1e} (condition "
                   f"estimate {cond:.1e}), fewer than 3 significant figures with a margin of 10 for the estimate")
        elif eta[j] > tol:
            bad = (f"load case {c!r}: the solution does not satisfy its own equations (backward "
                   f"error {eta[j]:.1e}; a stable solve gives below {tol:.0e})")
        elif eq[j] > EQUILIBRIUM_REFUSE:
            bad = (f"load case {c!r}: reactions and applied loads are out of balance by "
                   f"{eq[j]:.1e} of the load")
        if bad:
            break
    if bad:
        if hasattr(fac, "approximate"):  # an iterative solve may not see a null space: look with a direct one
            m2, l2, _ = _soft_mode(system, nrm)
            if m2 is not None:
                mode, lam = m2, l2
            if short is not None and mode is not None and free is not None and (
                    not lam or nrm / lam * EPS >= 1.0 or mode_strain(asm, mode, free) < ZERO_STRAIN):
                # the direct look finds K singular (a mechanism, or beyond double precision)
                bad = (f"load case {cases[short]!r}: the stiffness matrix is singular to working precision "
                       f"(condition estimate {nrm / lam if lam else np.inf:.1e}), so no figure of the answer "
                       "is guaranteed")
        text = diagnose(asm, system, free, mode=mode, lam=lam, norm=nrm, u=U, solver=fac.name, loads=rhs)
        raise SolverError(f"the answer cannot be trusted: {bad}. {text}")
    return trust


#: the iterative solver is continued until the classical bound promises this relative error...
ACCURACY_GOAL = WARN
#: ... with this safety factor on the condition estimate (a lower bound of the true condition number)
ACCURACY_SAFETY = 10.0
#: ... but never to a backward error below this: a CG run's true residual cannot fall much below
#: eps ||K|| ||u|| (it stagnates there; measured at 0.5 to 3 eps on clamped strips of slenderness 30 to 300)
ACCURACY_FLOOR = 4.0 * EPS


def meet_accuracy(fac, system, rhs: np.ndarray, sol: np.ndarray, figures=None) -> np.ndarray:
    """Continue an iterative solve until its answer has the figures the conditioning allows.

    An iterative back end stops at a relative residual ``rtol``; on an ill-conditioned system that
    leaves ``condition * backward error`` (the bound of :func:`check_solution`) above what a
    trustworthy answer needs, although the iteration could go on. Here the condition number is
    estimated as in :func:`check_solution` (Rayleigh quotients of the answers and of the probe
    column, sharpened by inverse iteration when suspect), and each load case whose bound exceeds
    ``ACCURACY_GOAL`` (five figures) is continued from its current answer (warm start) until its
    normwise backward error is at most ``ACCURACY_GOAL / (ACCURACY_SAFETY * condition)``, floored at
    ``ACCURACY_FLOOR``, or until CG stagnates; :func:`check_solution` then judges the result as for
    every back end. Direct back ends (no ``refine``) are returned unchanged.

    Parameters
    ----------
    fac : Factorization
    system : ReducedSystem
    rhs : ndarray, shape (n, m)
    sol : ndarray, shape (n, m) or (n, m + 1)
        The load cases' answers, then the probe column if any; updated in place.
    figures : Future, optional

    Returns
    -------
    ndarray
        ``sol``, with the load cases' columns continued where needed.
    """
    if not hasattr(fac, "refine"):
        return sol
    n = rhs.shape[0]
    rhs = rhs.reshape(n, -1)
    m = rhs.shape[1]
    L = _lower(system.lower)
    diag, nrm = figures.result() if figures is not None else matrix_figures(L)
    V = sol.reshape(n, -1)
    KV = matvec(L, V, diag)
    q = _rayleigh(V, KV)
    if not q.size or not np.isfinite(q).any():
        return sol
    k = int(np.argmin(q))
    lam = float(q[k])
    eta = _eta(rhs, KV[:, :m], V[:, :m], nrm)
    if not (lam > 0) or np.all(nrm / lam * np.maximum(eta, EPS) <= ACCURACY_GOAL):
        return sol
    lam, _ = _sharpen(fac, system, V[:, k], lam, V[:, k])
    cond = nrm / lam if lam > 0 else np.inf
    if not np.isfinite(cond):
        return sol
    need = max(ACCURACY_GOAL / (ACCURACY_SAFETY * cond), ACCURACY_FLOOR)
    for j in range(m):
        if eta[j] > need:
            V[:, j] = fac.refine(rhs[:, j], V[:, j], need, nrm, case=j)
    return sol


def _eta(rhs: np.ndarray, KU: np.ndarray, U: np.ndarray, nrm: float) -> np.ndarray:
    """Normwise backward error of each column in the infinity norm."""
    res = rhs - KU
    den = nrm * np.abs(U).max(axis=0, initial=0.0) + np.abs(rhs).max(axis=0, initial=0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(den > 0, np.abs(res).max(axis=0, initial=0.0) / np.where(den > 0, den, 1.0), 0.0)


def _sharpen(fac, system, x: np.ndarray, lam: float, mode):
    """Up to three more inverse-iteration steps from ``x`` while the Rayleigh quotient falls by 20 %."""
    for _ in range(3):
        s = np.abs(x).max()
        if not (s > 0 and np.isfinite(s)):
            break
        try:
            x = _inverse(fac, x / s).reshape(-1)
        except SolverError:
            break
        if not np.all(np.isfinite(x)):
            break
        qx = float(_rayleigh(x[:, None], matvec(system.lower, x[:, None]))[0])
        if not qx < lam:
            break
        lam_old, lam, mode = lam, qx, x.copy()
        if qx > 0.8 * lam_old:
            break
    return lam, mode


def _refinement_error(fac, res: np.ndarray, uf: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """Relative error of each case from one step of iterative refinement, d = K^-1 r.

    The larger of ``||d||_inf / ||u||_inf`` (displacements) and ``sqrt(|d.r| / |u.b|)`` (energy
    norm, i.e. the stresses), times 10 as a margin for the estimate itself.
    """
    m = uf.shape[1]
    try:
        if hasattr(fac, "approximate"):
            d = np.column_stack([fac.approximate(res[:, j]) for j in range(m)])
        else:
            d = np.asarray(fac.solve(res), dtype=float).reshape(res.shape)
    except SolverError:
        return np.full(m, np.inf)
    with np.errstate(invalid="ignore", divide="ignore"):
        eu = np.abs(d).max(axis=0) / np.abs(uf).max(axis=0)
        ee = np.sqrt(np.abs(np.einsum("ij,ij->j", d, res)) / np.abs(np.einsum("ij,ij->j", uf, rhs)))
    e = MARGIN * np.fmax(eu, ee)
    return np.where(np.isnan(e), 0.0, e)


def warning_text(trust: Trust, j: int) -> str | None:
    """The "ill-conditioned" warning for load case ``j``, or None when the answer is sound."""
    err = float(trust.error_estimate[j])
    if err <= WARN:
        return None
    return (f"the stiffness matrix is ill-conditioned (condition estimate {trust.condition_estimate:.1e}): "
            f"about {_figures(err):.0f} significant figures of the displacements are reliable; "
            "look for a very slender part, a stiffness contrast between regions or units far off")


def warn_untrusted(result, trust: Trust, j: int) -> None:
    """Give ``result`` the "ill-conditioned" warning when load case ``j`` has fewer than 5 sound figures."""
    from .errors import warn

    text = warning_text(trust, j)
    if text is not None:
        from ._diagnosis import incompressible_regions

        asm = getattr(result, "assembly", None)
        if asm is not None and incompressible_regions(asm):  # the likely cause, named
            text += ("; here, above all, a nearly incompressible material in plane strain (Poisson's ratio "
                     "above 0.4999995): use 0.499 or less")
        warn(f"load case {result.case!r}: {text}", "ill-conditioned", sink=result.warnings, stacklevel=3)


def equilibrium_errors(asm, R: np.ndarray, F: np.ndarray) -> np.ndarray:
    """Equilibrium error of several load cases at once (the figure of :meth:`Result.equilibrium_error`).

    ``|sum of reactions + sum of applied forces|`` (forces x and y, and the moment about the centre
    of the nodes over the model size) relative to the largest of the total load, the total
    reaction, half the sum of the reaction magnitudes, half the sum of the applied nodal force
    magnitudes (self-balanced loads, e.g. a free thermal expansion), and 1e-4 of the force level that the
    prescribed displacements stand for (largest D times thickness times the largest prescribed
    value); the last term only matters for a model moved as a rigid body by prescribed
    displacements with little or no load, whose reactions are then round-off of K times that motion.

    Parameters
    ----------
    asm : Assembly
    R, F : ndarray, shape (n_nodes, 2, m)
        Reactions and applied nodal forces in global components.

    Returns
    -------
    ndarray, shape (m,)
    """
    from .supports import gather

    mesh, model = asm.mesh, asm.model
    frame = getattr(asm, "_equilibrium_frame", None)
    if frame is None:  # the centre, size, stiffness and prescribed level: once per assembly
        stiff = max((float(np.abs(b.D).max()) * b.thickness for b in asm.blocks), default=0.0)
        moved = float(np.abs(gather(mesh, model.supports).value).max(initial=0.0))
        for p in getattr(model, "pins", None) or []:  # a pin moved as a rigid body: its motion at the part's size
            moved = max(moved, abs(p.move[0]), abs(p.move[1]), abs(p.move[2]) * mesh.size())
        frame = asm._equilibrium_frame = (mesh.nodes.mean(axis=0), max(mesh.size(), 1e-300), stiff * moved)
    centre, L, level = frame
    m = R.shape[2]
    # only nodes that carry a force or a reaction count
    rows = np.flatnonzero(np.any(R != 0, axis=(1, 2)) | np.any(F != 0, axis=(1, 2)))
    x = mesh.nodes[rows] - centre
    Rs, Fs = R[rows], F[rows]

    def totals(f):
        return np.stack([f[:, 0].sum(axis=0), f[:, 1].sum(axis=0),
                         (x[:, 0] @ f[:, 1] - x[:, 1] @ f[:, 0]) / L]).reshape(3, m)

    r, a = totals(Rs), totals(Fs)
    scale = np.maximum.reduce([np.abs(r).max(axis=0), np.abs(a).max(axis=0),
                               np.abs(Rs).sum(axis=(0, 1)) / 2, np.abs(Fs).sum(axis=(0, 1)) / 2,
                               np.full(m, 1e-4 * level), np.full(m, 1e-300)])
    return np.abs(r + a).max(axis=0) / scale
