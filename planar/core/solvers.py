"""Sparse linear solvers for the stiffness system, behind one small interface.

``factorize(lower, method)`` takes the lower triangle of a symmetric positive-definite K (CSC) and
returns an object whose ``solve(b)`` solves K x = b for one or several right-hand sides, factorizing
(or building the multigrid hierarchy) once. Back ends:

- ``"pardiso"``: Intel MKL PARDISO through pypardiso, symmetric positive-definite mode on the upper
  triangle (optional extra ``planar[fast]``; x86 only; the fastest measured here);
- ``"cholmod"``: supernodal sparse Cholesky from CHOLMOD as shipped in the cvxopt wheel (default
  install);
- ``"amg"``: conjugate gradients preconditioned by smoothed-aggregation algebraic multigrid (pyamg),
  with the rigid-body modes from the node coordinates: the least memory, for the largest models;
- ``"superlu"``: scipy's SuperLU, always there, but slow and memory-hungry on large models.

``"auto"`` takes the fastest direct solver installed whose estimated memory fits in what the machine
has free (CHOLMOD below 100,000 unknowns, where loading MKL costs more than it saves), else AMG, and
refuses a model that no back end can hold.
"""
from __future__ import annotations

from typing import Callable, Protocol

import numpy as np
import scipy.sparse as sp

# the PARDISO back end and the singular-matrix error live in their own modules; re-exported here
from ._pardiso import _MKL_PATH, _Pardiso, _mkl_library, _mkl_path, _pair_basis, _turned_lower  # noqa: F401
from ._singular import _SINGULAR, _numerical  # noqa: F401
from .errors import InputError, ResourceError, SolverError

_EPS = float(np.finfo(float).eps)

__all__ = ["Factorization", "factorize", "available_solvers", "estimate_memory", "available_memory",
           "SOLVERS"]

SOLVERS = ("auto", "pardiso", "cholmod", "amg", "superlu")


class Factorization(Protocol):
    name: str
    info: dict

    def solve(self, b: np.ndarray) -> np.ndarray: ...


def _importable(mod: str) -> bool:
    """True when the module can be found, without importing it (some take a second to import)."""
    import importlib.util

    if mod == "pypardiso":
        return _mkl_path() is not None
    try:
        return importlib.util.find_spec(mod) is not None
    except (ImportError, ValueError):
        return False


def available_solvers() -> list[str]:
    """Names of the back ends that can run here, fastest first."""
    out = []
    if _importable("pypardiso"):
        out.append("pardiso")
    if _importable("cvxopt.cholmod"):
        out.append("cholmod")
    if _importable("pyamg"):
        out.append("amg")
    out.append("superlu")
    return out


def available_memory() -> int:
    """Bytes of memory available to a new allocation (MemAvailable), or a large number if unknown."""
    try:
        with open("/proc/meminfo") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return 1 << 62


def estimate_memory(n: int, method: str, matrix_entries: int = 0, coarse_unknowns: int | None = None) -> int:
    """Rough peak bytes of the whole pipeline (mesh, assembly, solve, recovery) for n unknowns of a 2D
    elasticity system with a given back end.

    Direct back ends: fitted to measurements on this project's benchmark (structured and gmsh plates,
    T3 to Q9): the factor grows like n log n, and ``matrix_entries`` (element-matrix entries of the
    lower triangle) adds the assembly's own arrays, 32 bytes each at the peak.

    ``"amg"``: ``150 MiB + 548 n + 36 matrix_entries + 660 coarse_unknowns`` bytes, a least-squares
    fit to the peak resident memory of ``benchmarks/run.py --solver amg`` at 10^6 unknowns for T3,
    T6, Q4 and Q8 (each within 5 %; Q9, left out of the fit, within 3.1 %; T6 at 10^7 unknowns,
    the automatic choice, 13.5 GiB estimated and 13.7 GiB measured, 1.5 % under): the mesh and the
    assembled matrix with its full copy grow with
    n and the entries, the multigrid hierarchy with the unknowns of its nodal space
    (``coarse_unknowns``: the corner nodes' on quadratic elements, about a quarter of n; n on linear
    ones, the default).
    """
    n = max(int(n), 1)
    if method == "amg":
        nc = n if coarse_unknowns is None else min(max(int(coarse_unknowns), 0), n)
        return int(150 * 2**20 + 548 * n + 36 * int(matrix_entries) + 660 * nc)
    extra = 32 * int(matrix_entries)
    return _solver_memory(n, method) + extra


def _solver_memory(n: int, method: str) -> int:
    logn = max(np.log2(n), 1.0)
    if method in ("cholmod", "pardiso"):
        return int(110 * n * logn)
    if method == "superlu":
        return int(260 * n * logn)
    if method == "amg":
        return estimate_memory(n, "amg")
    raise InputError(f"unknown solver {method!r}; pick one of {', '.join(map(repr, SOLVERS))}")


def _full(lower: sp.spmatrix) -> sp.csr_matrix:
    L = sp.csr_matrix(lower)
    return (L + L.T - sp.diags(L.diagonal())).tocsr()


class _Cholmod:
    name = "cholmod"

    def __init__(self, lower, **_):
        import cvxopt
        import cvxopt.cholmod as cholmod

        L = sp.csc_matrix(lower)
        n = L.shape[0]
        cols = np.repeat(np.arange(n, dtype=np.int64), np.diff(L.indptr))
        A = cvxopt.spmatrix(cvxopt.matrix(L.data.astype(float, copy=False)),
                            cvxopt.matrix(L.indices.astype(np.int64)), cvxopt.matrix(cols), (n, n))
        del cols
        cholmod.options["supernodal"] = 2
        cholmod.options["postorder"] = True
        try:
            F = cholmod.symbolic(A, uplo="L")
            cholmod.numeric(A, F)
        except ArithmeticError:
            raise _numerical(_SINGULAR) from None
        del A
        self._F, self._cholmod, self._cvxopt, self.n = F, cholmod, cvxopt, n
        self.info = {}

    def solve(self, b):
        b = np.asarray(b, dtype=float)
        B = self._cvxopt.matrix(np.array(b.reshape(self.n, -1), dtype=float, order="F"))
        self._cholmod.solve(self._F, B)
        return np.array(B).reshape(b.shape)

    def forward(self, b):
        """The forward half of the solve, ``Z = L^-1 P b`` (K = P^T L L^T P), so that ``b^T K^-1 b = Z^T Z``."""
        B = self._cvxopt.matrix(np.array(np.asarray(b, float).reshape(self.n, -1), dtype=float, order="F"))
        self._cholmod.solve(self._F, B, sys=7)
        self._cholmod.solve(self._F, B, sys=4)
        return np.array(B)

    def gram_of(self, Z):
        return Z.T @ Z

    def gram(self, b):
        """``b^T K^-1 b`` by the forward half of the solve only."""
        Z = self.forward(b)
        return self.gram_of(Z)


class _SuperLU:
    name = "superlu"

    def __init__(self, lower, **_):
        import scipy.sparse.linalg as spla

        try:
            self._lu = spla.splu(_full(lower).tocsc())
        except RuntimeError:
            raise _numerical(_SINGULAR) from None
        self.info = {}

    def solve(self, b):
        x = self._lu.solve(np.asarray(b, dtype=float))
        if not np.all(np.isfinite(x)):
            raise _numerical(_SINGULAR)
        return x


class _AMG:
    """CG preconditioned by smoothed aggregation, rigid-body modes as near-null space."""

    name = "amg"

    def __init__(self, lower, *, rigid_modes=None, space=None, rtol: float = 1e-10, maxiter: int = 2000, **_):
        self._A = _full(lower)
        self._space = space
        self._B = rigid_modes if space is None else space.modes
        self._ml = self._hierarchy(self._B)
        self.rtol, self.maxiter = rtol, maxiter
        self.info = {"iterations": [], "residual": [], "levels": len(self._ml.levels),
                     "method": "p-multigrid + smoothed aggregation" if space is not None and not space.injection
                     else "smoothed aggregation"}

    def _hierarchy(self, B):
        from ._multigrid import hierarchy, one_blas_thread

        with one_blas_thread():
            return hierarchy(self._A, self._space, B)

    def _reset_info(self):
        self.info = {**self.info, "iterations": [], "residual": []}

    def solve(self, b):
        try:
            return self._solve(b)
        except SolverError:
            # with the rotation among the near-null modes, aggregates too small to carry three modes (thin
            # strips of quadratic cells) can spoil the hierarchy; the translations alone still make a
            # sound one, slower but convergent
            if self._B is None or self._B.shape[1] < 3:
                raise
            self._B = self._B[:, :2]
            self._ml = self._hierarchy(self._B)
            self._reset_info()
            return self._solve(b)

    def _solve(self, b):
        b = np.asarray(b, dtype=float)
        cols = b.reshape(b.shape[0], -1)
        out = np.empty_like(cols)
        for j in range(cols.shape[1]):  # one hierarchy, one CG run per load case
            nb = float(np.linalg.norm(cols[:, j]))
            if nb == 0:
                out[:, j] = 0.0
                self.info["iterations"].append(0)
                self.info["residual"].append(0.0)
                continue
            def done(r, _x, nb=nb):  # the residual asked for; a stagnating run is judged below
                return float(np.linalg.norm(r)) <= self.rtol * nb

            x, its, rel = self._pcg(cols[:, j], None, done, self.maxiter)
            self.info["iterations"].append(its)
            self.info["residual"].append(rel)
            if not np.isfinite(rel) or not self._converged(rel, nb, x):
                raise _numerical(
                    f"the AMG-preconditioned CG did not converge: relative residual {rel:.2e} after "
                    f"{its} iterations (wanted {self.rtol:.0e}); the stiffness matrix is too "
                    "ill-conditioned for this solver, or has a mechanism (see the likely cause)"
                )
            out[:, j] = x
        return out.reshape(b.shape)

    #: true residual computed every this many CG steps (the recursive one drifts at the round-off floor)
    CHECK_EVERY = 10
    #: CG ends when its true residual has not halved over this many steps: at the round-off floor of an
    #: ill-conditioned system (reached after 40 to 110 steps on clamped strips of slenderness 100 to 300;
    #: a limit of 40 cut off runs that were still converging after a plateau). A run stopped too soon is
    #: continued by the solve check if its answer falls short, and refused if it still does
    STAGNATION = 100

    #: CG also ends at a normwise backward error (2-norm, ||K|| bounded by ||K||_inf) of this many eps: the
    #: round-off level, reached after 10 to 110 steps on clamped strips of slenderness 30 to 300, where CG
    #: then stagnates (the check of the answer asks for no less)
    ROUNDOFF = 4.0

    @property
    def norm(self) -> float:
        """``||K||_inf``, an upper bound of ``||K||_2``."""
        if not hasattr(self, "_norm"):
            self._norm = float(abs(self._A).sum(axis=1).max())
        return self._norm

    def _pcg(self, b: np.ndarray, x0: np.ndarray | None, done, maxiter: int):
        """:meth:`_pcg_steps` with OpenBLAS on one thread (:class:`planar.core._multigrid.one_blas_thread`)."""
        from ._multigrid import one_blas_thread

        with one_blas_thread():
            return self._pcg_steps(b, x0, done, maxiter)

    def _pcg_steps(self, b: np.ndarray, x0: np.ndarray | None, done, maxiter: int):
        """Preconditioned CG from ``x0`` until ``done(r, x)`` (r the true residual), stagnation,
        breakdown or ``maxiter``.

        The true residual is computed every ``CHECK_EVERY`` steps and the best iterate by it is
        returned, so a run that reaches the round-off floor of an ill-conditioned system (where the
        recursive residual goes on falling but the true one does not, and CG finally breaks down) ends
        with its best answer instead of a diverged one.

        Returns
        -------
        x : ndarray
        iterations : int
        relative_residual : float
            True ``||b - K x||_2 / ||b||_2`` of the returned x.
        """
        A = self._A
        M = self._ml.aspreconditioner(cycle="V")
        nb = float(np.linalg.norm(b))
        x = np.zeros_like(b) if x0 is None else np.array(x0, dtype=float)
        r = b - A @ x if x0 is not None else b.copy()
        best_x, best = x.copy(), float(np.linalg.norm(r))
        if not np.isfinite(best):
            return best_x, 0, float("nan")
        if done(r, x):
            return best_x, 0, best / nb
        mark, since = best, 0
        z = M @ r
        p = z.copy()
        rz = float(r @ z)
        its = 0
        say = _IterationLine(A.shape[0])
        while its < maxiter:
            Ap = A @ p
            pAp = float(p @ Ap)
            if not (pAp > 0 and rz > 0 and np.isfinite(pAp) and np.isfinite(rz)):
                break  # breakdown (round-off, or a matrix or preconditioner not definite)
            a = rz / pAp
            x += a * p
            r -= a * Ap
            its += 1
            since += 1
            nr = float(np.linalg.norm(r))
            # the true residual (one more product with K) every CHECK_EVERY steps, and when the recursive
            # one says the run is done or at round-off
            if (its % self.CHECK_EVERY == 0 or done(r, x)
                    or nr <= self.ROUNDOFF * _EPS * (self.norm * float(np.linalg.norm(x)) + nb)):
                rt = b - A @ x
                nt = float(np.linalg.norm(rt))
                if not np.isfinite(nt) or nt > 1e8 * max(nb, best):
                    break  # diverging
                say(its, nt / nb)
                if nt < best:
                    best_x, best = x.copy(), nt
                    if done(rt, best_x) or nt <= self.ROUNDOFF * _EPS * (self.norm * float(np.linalg.norm(x)) + nb):
                        break  # asked for, or a backward error at round-off, where no step can do better
                if best <= 0.5 * mark:
                    mark, since = best, 0
                if since >= self.STAGNATION:
                    break  # no progress: the round-off floor of an ill-conditioned system, or a hopeless one
                r = rt  # resynchronise the recursive residual with the true one
            z = M @ r
            rz_new = float(r @ z)
            p = z + (rz_new / rz) * p if rz > 0 else z
            rz = rz_new
        if its % self.CHECK_EVERY:  # the last steps since the last check
            nt = float(np.linalg.norm(b - A @ x))
            if nt < best:
                best_x, best = x, nt
        say.end(its, best / nb)
        return best_x, its, best / nb

    def refine(self, b: np.ndarray, x: np.ndarray, eta: float, norm: float, case: int | None = None) -> np.ndarray:
        """Continue CG from ``x`` (warm start) until the normwise backward error, in the infinity norm,
        ``||b - K x||_inf / (norm ||x||_inf + ||b||_inf)`` is at most ``eta``, or CG stagnates.

        The iterations are added to ``info["iterations"][case]`` and the final relative residual
        replaces ``info["residual"][case]``.
        """
        b = np.asarray(b, dtype=float).reshape(-1)
        binf = float(np.abs(b).max(initial=0.0))
        if binf == 0:
            return np.asarray(x, dtype=float)

        def done(rt, xx):
            rinf = float(np.abs(rt).max())
            return rinf <= eta * (norm * float(np.abs(xx).max()) + binf)

        xr, its, rel = self._pcg(b, x, done, self.maxiter)
        if case is not None and case < len(self.info["iterations"]):
            self.info["iterations"][case] += its
            self.info["residual"][case] = rel
        return xr

    def _converged(self, rel: float, nb: float, x: np.ndarray) -> bool:
        """Relative residual within 10 rtol, or a normwise backward error within rtol (an ill-conditioned
        system, whose residual cannot fall far below eps ||K|| ||u||, 2-norm estimated by ||K||_inf); the
        solve check then continues the iteration (:meth:`refine`) as far as the conditioning needs."""
        if rel <= 10 * self.rtol:
            return True
        return rel * nb <= self.rtol * (self.norm * float(np.linalg.norm(x)) + nb)

    def approximate(self, b: np.ndarray, rtol: float = 1e-2, x0: np.ndarray | None = None) -> np.ndarray:
        """A rough solution of K x = b (relative residual about ``rtol``, a few cycles), unchecked.

        For estimates that need only the direction of K^-1 b (inverse iteration), not its accuracy.
        """
        b = np.asarray(b, dtype=float).reshape(-1)
        nb = float(np.linalg.norm(b))
        if nb == 0:
            return np.zeros_like(b)
        return self._pcg(b, x0, lambda r, _x: float(np.linalg.norm(r)) <= rtol * nb, 50)[0]


#: back ends whose ordering phase keeps one core busy without holding the GIL and that call
#: ``after_ordering`` before their numeric phase (cvxopt's CHOLMOD holds the GIL throughout)
OVERLAPS_ORDERING = frozenset({"pardiso"})

_BACKENDS = {"pardiso": _Pardiso, "cholmod": _Cholmod, "amg": _AMG, "superlu": _SuperLU}
_MODULES = {"pardiso": "pypardiso", "cholmod": "cvxopt.cholmod", "amg": "pyamg", "superlu": "scipy"}
_INSTALL = {"pardiso": "pip install 'planar[fast]' (pypardiso, x86 only)", "cholmod": "pip install cvxopt",
            "amg": "pip install pyamg", "superlu": "pip install scipy"}


def choose(n: int, method: str = "auto", *, memory: int | None = None, matrix_entries: int = 0,
           coarse_unknowns: int | None = None) -> str:
    """The back end ``factorize`` would use for n unknowns: the fastest installed direct one whose
    estimate of the whole pipeline's peak memory (:func:`estimate_memory`) fits, else the iterative
    one (``coarse_unknowns``: the size of its nodal space, estimated by
    :func:`planar.core._multigrid.coarse_size`).

    Raises
    ------
    ResourceError
        If no installed back end is estimated to fit in the available memory.
    """
    if method not in SOLVERS:
        raise InputError(f"unknown solver {method!r}; pick one of {', '.join(map(repr, SOLVERS))}")
    memory = available_memory() if memory is None else memory
    if method != "auto":
        if not _importable(_MODULES[method]):
            raise SolverError(f"the {method!r} solver is not installed: {_INSTALL[method]}")
        need = estimate_memory(n, method, matrix_entries, coarse_unknowns)
        if need > memory:
            raise ResourceError(
                f"{n:,} unknowns with the {method!r} solver need about {need / 2**30:.1f} GiB but "
                f"{memory / 2**30:.1f} GiB is available; use solver='amg', a coarser mesh, or a "
                "symmetry model"
            )
        return method
    order = available_solvers()
    if n < 100_000 and "pardiso" in order and "cholmod" in order:
        # both take well under a second here; CHOLMOD avoids loading MKL (about 0.3 s)
        order.remove("cholmod")
        order.insert(0, "cholmod")
    for name in order:
        if name == "superlu" and n > 200_000:
            continue
        if estimate_memory(n, name, matrix_entries, coarse_unknowns) <= memory:
            return name
    best = min(estimate_memory(n, m, matrix_entries, coarse_unknowns) for m in ("amg", "cholmod"))
    raise ResourceError(
        f"{n:,} unknowns need about {best / 2**30:.1f} GiB even with the leanest solver, but "
        f"{memory / 2**30:.1f} GiB is available; coarsen the mesh away from the stress raisers or "
        "use a symmetry model"
    )


def factorize(lower: sp.spmatrix, method: str = "auto", *, rigid_modes: np.ndarray | None = None,
              rtol: float = 1e-10, after_ordering: Callable[[], None] | None = None,
              space=None, schur: np.ndarray | None = None, schur_basis: tuple | None = None) -> Factorization:
    """Factorize a symmetric positive-definite stiffness matrix given by its lower triangle.

    Parameters
    ----------
    lower : sparse matrix, shape (n, n)
        Lower triangle (diagonal included) of K.
    method : {"auto", "pardiso", "cholmod", "amg", "superlu"}
    rigid_modes : ndarray, shape (n, 3), optional
        Rigid-body modes of the free unknowns (near-null space for AMG).
    rtol : float
        Relative residual the iterative solver must reach.
    after_ordering : callable, optional
        Called between PARDISO's ordering phase (which keeps one core busy) and its numeric
        factorization (which takes every core), e.g. to wait for work done meanwhile in the
        background; other back ends ignore it.
    space : planar.core._multigrid.NodalSpace, optional
        The nodal space of the unknowns (corner nodes, two unknowns each) for the multigrid
        hierarchy of ``"amg"``: a p-multigrid step on quadratic elements, 2 x 2 node blocks on
        every support layout. Without it, AMG works on the matrix as given.
    schur : ndarray of int, optional
        Unknowns (a few hundred at most) whose Schur complement ``S`` the factorization should also
        return: ``"pardiso"`` then eliminates them last and offers ``schur_unknowns``, ``schur``,
        ``schur_gram(Bs)`` (``Bs S^-1 Bs^T``) and ``schur_part(b)`` (those unknowns of ``K^-1 b``), and
        solves as usual; other back ends ignore it. Without it, a ``schur_unknowns`` attribute of
        ``lower`` is taken (the bearing-contact set marks its matrix so, :mod:`planar.core.contact`).
    schur_basis : (pairs, directions), optional
        With ``schur``: pairs of unknowns ``(a_i, b_i)`` (k x 2) and directions ``(c_i, s_i)`` (k x 2). PARDISO
        then factorizes ``T^T K T``, each pair turned so that ``a_i`` carries the component along the
        direction and ``b_i`` the one across (an edge node's normal and tangential motion): ``schur``
        need name only the ``a_i`` (half the Schur unknowns, a cheaper ordering); ``schur_rows(B)`` gives
        ``B T`` over the Schur unknowns, and solves take and return the unknowns as given. Without it, a
        ``schur_basis`` attribute of ``lower`` is taken.

    Raises
    ------
    SolverError
        A singular matrix (a mechanism), a back end that is not installed, or no convergence.
    ResourceError
        A model too large for the memory at hand.
    """
    n = lower.shape[0]
    if n == 0:
        raise SolverError("there are no free unknowns left: every displacement is prescribed")
    name = method if method in _BACKENDS and _importable(_MODULES[method]) else choose(n, method)
    if schur is None:
        schur = getattr(lower, "schur_unknowns", None)
        schur_basis = getattr(lower, "schur_basis", None) if schur_basis is None else schur_basis
    return _BACKENDS[name](lower, rigid_modes=rigid_modes, rtol=rtol, after_ordering=after_ordering, space=space,
                           schur=schur, schur_basis=schur_basis)


class _IterationLine:
    """The CG iteration count and residual on the terminal, once a run has lasted over
    :func:`planar.core.progress.min_seconds` (one line rewritten in place; quiet when not a terminal
    or with ``PLANAR_PROGRESS=0``)."""

    def __init__(self, n: int):
        import time

        self._clock = time.perf_counter
        self._t0 = self._clock()
        self._n = n
        self._say = None

    def __call__(self, its: int, residual: float) -> None:
        if self._say is None:
            from .progress import Progress, min_seconds

            if self._clock() - self._t0 < min_seconds():
                return
            self._say = Progress(None, "planar", clock=False)
        if self._say:
            self._say.update(f"CG on {self._n:,} unknowns: iteration {its}, residual {residual:.1e}")

    def end(self, its: int, residual: float) -> None:
        if self._say:
            self._say.update(f"CG on {self._n:,} unknowns: {its} iterations, residual {residual:.1e} "
                             f"({self._clock() - self._t0:.1f} s)", final=True)
