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
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .errors import SolverError, fmt_point

__all__ = ["check_solution", "diagnose", "explain_failure", "equilibrium_errors", "probe_vector", "norm_inf",
           "mode_strain", "matvec", "matrix_figures", "start_figures", "also_wait", "solve_with_probe",
           "warning_text", "warn_untrusted", "meet_accuracy", "Trust", "REFUSE", "WARN", "EQUILIBRIUM_REFUSE"]

EPS = float(np.finfo(float).eps)
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
#: a mode whose largest strain is below this fraction of its largest displacement over the part's
#: size does not strain (a rigid or zero-energy motion): round-off gives about 1e-13, the softest
#: bending mode of a part of slenderness s gives about 1.5 / s
ZERO_STRAIN = 1e-8
#: stiffness ratio between neighbouring regions reported as a contrast
CONTRAST = 1e6
#: length over depth reported as slender
SLENDER = 200.0
#: largest system that gets a random inverse-iteration column with its load cases
PROBE_LIMIT = 100_000
#: seed of the inverse-iteration start vector (same estimate on every run)
SEED = 13


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


def _figures(err: float) -> float:
    return float(max(0.0, min(16.0, -np.log10(max(err, 1e-300)))))


def probe_vector(n: int) -> np.ndarray:
    """The inverse-iteration start vector: uniform in [-1, 1] from a fixed seed (reproducible)."""
    return np.random.default_rng(SEED).uniform(-1.0, 1.0, n)


def solve_with_probe(fac, rhs: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Solve the load cases and one inverse-iteration step from :func:`probe_vector` together.

    The direct back ends take the probe as one more column of the same solve call; the iterative one
    solves it roughly (a few cycles), since a Rayleigh quotient needs only a direction.

    Above ``PROBE_LIMIT`` unknowns no probe is solved: with PARDISO one more column costs about as
    much as the load case itself (measured: +0.04 s, 1.2 % of meshing and solving, at 10^5 unknowns;
    +0.12 s, 3.2 %, at 2 x 10^5; +1 to 2 s at 10^6), and the estimate rests on the Rayleigh
    quotients of the load cases' own displacements (the conditioning as the loads see it), sharpened
    by inverse iteration when it is suspect.

    Returns
    -------
    sol : ndarray, shape (n, m + 1) or (n, m)
        The load cases' solutions, then ``K^-1 probe``.
    probe : ndarray, shape (n,), or None
    """
    n = rhs.shape[0]
    if n > PROBE_LIMIT:  # the column would cost about as much as a load case
        return np.asarray(fac.solve(rhs), dtype=float).reshape(n, -1), None
    probe = probe_vector(n)
    if hasattr(fac, "approximate"):
        u = np.asarray(fac.solve(rhs), dtype=float).reshape(n, -1)
        return np.column_stack([u, fac.approximate(probe)]), probe
    sol = np.asarray(fac.solve(np.column_stack([rhs.reshape(n, -1), probe])), dtype=float)
    return sol.reshape(n, -1), probe


def _inverse(fac, x: np.ndarray) -> np.ndarray:
    if hasattr(fac, "approximate"):
        return np.asarray(fac.approximate(x), dtype=float)
    return np.asarray(fac.solve(x), dtype=float).reshape(-1)


def _diagonal(L: sp.csc_matrix) -> np.ndarray:
    """Diagonal of a lower triangle in CSC form: the first entry of each column when sorted (no search)."""
    n = L.shape[0]
    # the diagonal is the smallest row of each column of a lower triangle: first when sorted
    if n and L.indptr[-1] > 0 and np.all(L.indptr[1:] > L.indptr[:-1]):
        first = L.indptr[:-1]
        if np.array_equal(L.indices[first], np.arange(n, dtype=L.indices.dtype)):
            return L.data[first]
    return L.diagonal()


def matrix_figures(lower: sp.spmatrix) -> tuple[np.ndarray, float]:
    """The diagonal of K and ``||K||_inf``, from its lower triangle."""
    L = _lower(lower)
    d = _diagonal(L)
    return d, norm_inf(L, d)


def start_figures(lower: sp.spmatrix, solver: str):
    """:func:`matrix_figures` in the background while a solver orders the matrix on one core.

    For the back ends that overlap their ordering (``solvers.OVERLAPS_ORDERING``) the figures are
    computed meanwhile on the idle core; returns a Future, or None for the other back ends.
    """
    from . import solvers
    from .parallel import background

    if solver not in solvers.OVERLAPS_ORDERING:
        return None
    return background(matrix_figures, lower)


def also_wait(after_ordering, figures):
    """``after_ordering`` that also waits for the figures started by :func:`start_figures`."""
    if figures is None:
        return after_ordering

    def wait() -> None:
        if after_ordering is not None:
            after_ordering()
        from concurrent.futures import wait as wait_for

        wait_for([figures])

    return wait


def _lower(lower) -> sp.csc_matrix:
    return lower if sp.isspmatrix_csc(lower) or isinstance(lower, sp.csc_array) else sp.csc_matrix(lower)


def norm_inf(lower: sp.spmatrix, diagonal: np.ndarray | None = None) -> float:
    """``||K||_inf`` (the largest absolute row sum, an upper bound of lambda_max) from K's lower triangle.

    Two sparse products of ``|L|`` with a vector of ones (row and column sums of the triangle).
    """
    L = _lower(lower)
    n = L.shape[0]
    if n == 0:
        return 0.0
    A = sp.csc_matrix((np.abs(L.data), L.indices, L.indptr), shape=L.shape)
    one = np.ones(n)
    d = np.abs(_diagonal(L) if diagonal is None else diagonal)
    return float(np.max(A @ one + A.T @ one - d))


def matvec(lower: sp.spmatrix, X: np.ndarray, diagonal: np.ndarray | None = None) -> np.ndarray:
    """``K @ X`` from K's lower triangle (as :meth:`ReducedSystem.matvec`, with the diagonal found cheaply)."""
    L = _lower(lower)
    d = _diagonal(L) if diagonal is None else diagonal
    Y = L @ X
    Y += L.T @ X
    Y -= d[:, None] * X if X.ndim == 2 else d * X
    return Y


def _rayleigh(V: np.ndarray, KV: np.ndarray) -> np.ndarray:
    num = np.einsum("ij,ij->j", V, KV)
    den = np.einsum("ij,ij->j", V, V)
    with np.errstate(invalid="ignore", divide="ignore"):
        q = np.where(den > 0, num / np.where(den > 0, den, 1.0), np.inf)
    return np.where(np.isfinite(q), q, np.inf)


def _backward_tol(fac, n: int) -> float:
    if getattr(fac, "name", "") == "amg":
        return 10.0 * float(getattr(fac, "rtol", 1e-10))
    return max(1e-12, 100.0 * np.sqrt(n) * EPS)


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


# ---------------------------------------------------------------------------------------- diagnosis
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
        rr, cc = [], []
        for b in keep:
            c = b.conn
            rr.append(np.repeat(c[:, :1], c.shape[1], axis=1).ravel())
            cc.append(c.ravel())
        r = np.concatenate(rr)
        c = np.concatenate(cc)
        G = sp.coo_matrix((np.ones(r.size, dtype=np.int8), (r, c)), shape=(n, n))
        _, label = connected_components(G, directed=False)
        used = np.zeros(n, dtype=bool)
        used[c] = True
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
