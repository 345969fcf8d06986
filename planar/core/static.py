"""Linear static solution: supports eliminated, rigid-body motion refused, one factorization for
every load case.
"""
from __future__ import annotations

import inspect
from concurrent import futures
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .assembly import Assembly, Rotation
from .errors import InputError, ResourceError, SolverError, SupportError, fmt_point, unknown_name
from ._held_loads import held_load_check
from .kinematics import _coincident_hint, _describe_free, pending_warnings, rigid_body_check, zero_energy_check  # noqa: F401
from .result import Result
from . import diagnose, solvers
from .solvers import choose, factorize
from ._multigrid import coarse_size, nodal_space
from .supports import gather, note_snapped
from ._tying import Tying
from .timing import Timer

__all__ = ["solve", "Results", "CaseNotChosenError", "Constrained", "constrain"]


class CaseNotChosenError(InputError, AttributeError):
    """An attribute of one load case's result asked of the results of every case (``planar.solve(m).table()``).

    An :class:`~planar.core.errors.InputError`, and an ``AttributeError`` too, so ``hasattr`` and
    ``getattr(results, name, default)`` behave as on any object.
    """


class Results(dict):
    """The results of :func:`solve` by load case name: a plain ``dict`` whose unknown keys raise a
    :class:`~planar.core.errors.NameNotFoundError` listing the load cases (not a bare ``KeyError``).

    It stays a ``dict`` (``isinstance``, iteration, ``json``); ``.get`` still returns its default.
    Asking it for what one case's result has (``.table()``, ``.max(...)``, ``.fasteners``, for a
    model or a joint alike) raises a :class:`CaseNotChosenError` that shows how to pick the case,
    ``results['pull'].table()``.

    Examples
    --------
    >>> import planar
    >>> m = planar.rectangle_mesh(10.0, 2.0, 4, 1, "Q8")
    >>> model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", tx=1.0), case="pull")
    >>> results = planar.solve(model)
    >>> isinstance(results, dict), list(results)
    (True, ['pull'])
    >>> results.max("von_mises")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    planar.core.static.CaseNotChosenError: planar.solve returns a dict ..., not one result, ... results['pull'].max(...)
    """

    def __missing__(self, key):
        raise unknown_name("load case", key, list(self))

    def __getattr__(self, name: str):
        if name.startswith("_"):  # Python's own protocols (copy, pickle, numpy, IPython) ask and expect a plain no
            raise AttributeError(f"{type(self).__name__!r} object has no attribute {name!r}")
        cases = list(self)
        first = repr(cases[0]) if cases else "'case'"
        said = ", ".join(repr(c) for c in cases[:6]) + (", ..." if len(cases) > 6 else "") if cases else "no case"
        one = next(iter(self.values()), None)
        kind = type(one) if one is not None else Result
        missing = object()
        found = inspect.getattr_static(one if one is not None else kind, name, missing)  # nothing computed
        if found is not missing:
            use = f"{name}(...)" if callable(found) or isinstance(found, (staticmethod, classmethod)) else name
            raise CaseNotChosenError(f"planar.solve returns a dict of results by load case ({said}), not one result, "
                                     f"so it has no .{name}; pick the case first: results[{first}].{use}")
        raise CaseNotChosenError(f"{name!r} is not an attribute of the results of planar.solve (a dict by load case: "
                                 f"{said}) nor of one case's result; pick a case, results[{first}], and see "
                                 f"help({kind.__name__}) for what it has")


@dataclass
class Constrained:
    """Supports turned into unknowns.

    Attributes
    ----------
    dofs : ndarray
        Prescribed global unknowns (in the rotated basis where ``rotation`` is set).
    values : ndarray
        Their values.
    rotation : Rotation or None
        Nodes held along an inclined direction, whose unknowns are (normal, tangent) components.
    rows : Constraints
        The raw rows, for the rigid-body check.
    """

    dofs: np.ndarray
    values: np.ndarray
    rotation: Rotation | None
    rows: object


def constrain(mesh, supports) -> Constrained:
    """Turn support rows into prescribed unknowns; refuse contradictions.

    Raises
    ------
    SupportError
        Two supports prescribe different values for one displacement.
    """
    rows = gather(mesh, supports)
    node, d, v, lab = rows.node, rows.direction, rows.value, rows.label
    # along x or y to round-off (1e-12 rad); a direction tilted by more goes the inclined way, since
    # |d_k| > 1 - 1e-12 would take tilts up to 1.4e-6 rad for the axis and shift the answer by that much
    ax = np.minimum(np.abs(d[:, 0]), np.abs(d[:, 1])) < 1e-12
    dofs, vals = [], []
    # axis-aligned rows: unknown 2 node + component; sign of direction folds into the value
    comp = np.where(np.abs(d[:, 0]) > 0.5, 0, 1)
    sgn = np.where(comp == 0, d[:, 0], d[:, 1])
    skew_nodes = np.unique(node[~ax])
    on_skew = np.isin(node, skew_nodes)
    sel = ax & ~on_skew
    dofs.append(2 * node[sel] + comp[sel]); vals.append(v[sel] * np.sign(sgn[sel]))
    T = None
    rot_nodes, rot_R = [], []
    if skew_nodes.size:
        for p in skew_nodes:  # nodes on inclined supports only; few
            r = np.flatnonzero(node == p)
            A, b = d[r], v[r]
            if np.linalg.matrix_rank(A, tol=1e-9) == 2:
                u = np.linalg.lstsq(A, b, rcond=None)[0]
                if np.max(np.abs(A @ u - b)) > 1e-9 * max(1.0, np.abs(b).max()):
                    _conflict(mesh, supports, p, lab[r])
                dofs.append(np.array([2 * p, 2 * p + 1])); vals.append(u)
            else:
                nrm = A[0] / np.hypot(*A[0])
                proj = A @ nrm
                vv = b / proj
                if np.ptp(vv) > 1e-9 * max(1.0, np.abs(vv).max()):
                    _conflict(mesh, supports, p, lab[r])
                tan = np.array([-nrm[1], nrm[0]])
                rot_nodes.append(p); rot_R.append(np.column_stack([nrm, tan]))
                dofs.append(np.array([2 * p])); vals.append(vv[:1])
        if rot_nodes:
            T = Rotation(np.array(rot_nodes, dtype=np.int64), np.array(rot_R))
    dofs = np.concatenate(dofs) if dofs else np.zeros(0, np.int64)
    vals = np.concatenate(vals) if vals else np.zeros(0)
    order = np.argsort(dofs, kind="stable")
    dofs, vals = dofs[order], vals[order]
    if dofs.size:
        first = np.r_[True, dofs[1:] != dofs[:-1]]
        start = np.flatnonzero(first)
        spread = np.maximum.reduceat(vals, start) - np.minimum.reduceat(vals, start)
        scale = max(1.0, np.abs(vals).max())
        if np.any(spread > 1e-12 * scale):
            k = dofs[start[np.argmax(spread)]]
            _conflict(mesh, supports, k // 2, np.unique(lab[node == k // 2]))
        dofs, vals = dofs[first], vals[first]
    return Constrained(dofs.astype(np.int64), vals, T, rows)


def _conflict(mesh, supports, p, labels):
    names = ", ".join(supports[int(i)].describe() for i in np.unique(labels))
    raise SupportError(
        f"supports contradict each other at node {int(p)} {fmt_point(mesh.nodes[int(p)])}: "
        f"{names} prescribe different displacements there; remove or change one of them"
    )


def _case_names(model, cases) -> list[str]:
    """The load cases to solve: all (None), one name (a str), or a list of names."""
    from .model import Model

    if not isinstance(model, Model):
        raise InputError(f"solve() needs a planar Model, got {type(model).__name__}; build one with "
                         "planar.Model(mesh, material, thickness=...)")
    if not model.cases:
        moves = any(getattr(p, "move", None) is not None for p in getattr(model, "pins", []) or []) or any(
            type(sp).__name__ == "Prescribed" for sp in model.supports)
        raise unknown_name("load case", "(none)", [], "Add a load first with model.add_load(...)" + (
            "; a case driven by prescribed motions alone (a pin's move=, Prescribed supports) is made with "
            "model.add_case('name')" if moves else ", or a case with no load with model.add_case('name')"))
    return case_list(cases, list(model.cases))


def case_list(cases, known: list[str]) -> list[str]:
    """``cases`` as a list of names: all of ``known`` (None), one name (a str), or a list of names;
    a value of another kind, or an empty list, refused naming ``known`` (not checked against them)."""
    if cases is None:
        return list(known)
    if isinstance(cases, (str, int)) and not isinstance(cases, bool):  # one name, not a sequence of letters
        return [str(cases)]
    if isinstance(cases, (bytes, dict)) or not hasattr(cases, "__iter__"):
        raise InputError(f"cases must be a load case name or a list of names, got {cases!r}; e.g. "
                         f"cases={known[0]!r} or cases=[...] from {known}")
    names = list(cases)
    bad = [c for c in names if not isinstance(c, (str, int)) or isinstance(c, bool)]
    if bad:
        raise InputError(f"cases must be load case names, got {bad[0]!r}; pick from {known}")
    names = [str(c) for c in names]
    if not names:
        raise InputError(f"cases is empty; give at least one of {known}, or leave it out to solve every case")
    return names


def prescribed(mesh, cons, tie=None) -> tuple[np.ndarray, np.ndarray]:
    """(mask, values) of the prescribed unknowns: the supports' rows, both unknowns of every node in no
    cell, and the unknowns a pin's tie eliminates (assembled as prescribed, :mod:`planar.core._tying`)."""
    ndof = 2 * mesh.n_nodes
    unused = np.flatnonzero(~mesh.used_nodes())
    pres = np.zeros(ndof, dtype=bool)
    pres[cons.dofs] = True
    pres[2 * unused] = True
    pres[2 * unused + 1] = True
    up = np.zeros(ndof)
    up[cons.dofs] = cons.values
    if tie is not None:
        tie.mark(pres, up)
    return pres, up


def split_unknowns(mesh, cons, tie=None) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(up, free, pdofs, free_index, pres_index): the prescribed values over all unknowns, the free and
    prescribed unknowns, and each unknown's place among them (-1 where it is not one)."""
    ndof = 2 * mesh.n_nodes
    pres, up = prescribed(mesh, cons, tie)
    free = np.flatnonzero(~pres)
    pdofs = np.flatnonzero(pres)
    free_index = np.full(ndof, -1, dtype=np.int64)
    free_index[free] = np.arange(free.size)
    pres_index = np.full(ndof, -1, dtype=np.int64)
    pres_index[pdofs] = np.arange(pdofs.size)
    return up, free, pdofs, free_index, pres_index


def matrix_entries(asm) -> int:
    """The entries of the assembled lower triangle, from the element blocks (for the memory estimate)."""
    return sum(b.n * (2 * b.etype.n_nodes) * (2 * b.etype.n_nodes + 1) // 2 for b in asm.blocks)


def reduced_loads(asm, system, cons, tie, cases, free, pdofs, up):
    """(loads, F, Fl, rhs, system): each case's load vector and its entities, the loads over all unknowns
    (global, and in the supports' local bases), the right-hand sides over the free unknowns with the
    prescribed values moved over, and the system as the pins' ties reduce it (unchanged without pins)."""
    ndof = 2 * asm.mesh.n_nodes
    loads = [asm.load_vector(c) for c in cases]
    F = np.column_stack([f for f, _ in loads])
    Fl = F if cons.rotation is None else cons.rotation.to_local(F.reshape(-1, 2, len(cases))).reshape(ndof, -1)
    held_load_check(asm, cons, cases, Fl, pdofs, up, [e for _, e in loads], sink=pending_warnings(asm))
    coupling = system.prescribed_rows.T @ up[pdofs]  # K_fp u_p, over all unknowns
    rhs = Fl[free] - coupling[free][:, None]
    if tie is not None:
        system, rhs, Fl = tie.reduce(system, free, pdofs, up, Fl, rhs, cases)
    return loads, F, Fl, rhs, system


def full_unknowns(ndof, free, pdofs, up, tie, sol, m) -> np.ndarray:
    """(ndof, m): the prescribed values, the free unknowns from ``sol`` and the ties' eliminated ones."""
    ul = np.zeros((ndof, m))
    ul[pdofs] = up[pdofs][:, None]
    ul[free] = sol[: free.size, :m]
    if tie is not None:
        tie.expand(ul, sol[:, :m])
    return ul


def solve(model, cases: list[str] | None = None, *, solver: str = "auto", verbose: bool | None = None,
          distortion_limit: float = 1e-3, timer: Timer | None = None,
          keep_system: bool = False) -> Results:
    """Assemble and solve a model for its load cases with one factorization.

    Parameters
    ----------
    model : Model or Joint
        A model, or a :class:`planar.core.joints.Joint` of layers joined by fasteners (then the answer
        is ``{case: JointResult}``, see :func:`planar.core._joint_solve.solve_joint`).
    cases : str or list of str, optional
        A load case name or a list of them (default: all of them).
    solver : {"auto", "pardiso", "cholmod", "amg", "superlu"}
        Linear solver back end (see :mod:`planar.core.solvers`); ``"auto"`` picks by size, memory and
        what is installed.
    verbose : bool, optional
        True: print every stage's time; False: print nothing; None (default): on a terminal (or with
        ``PLANAR_PROGRESS=1``; ``0`` silences it), print the stages that take over a second, and
        announce the long ones before they start on large models (see :mod:`planar.core.timing`).
    keep_system : bool
        Keep the reduced system and right-hand sides on ``result.assembly.system`` (for benchmarks
        and checks; costs the matrix's memory for as long as the results live).

    Returns
    -------
    Results (a dict of str to Result)
        One result per load case, in the order of ``cases``; a mistyped case name raises a
        NameNotFoundError listing the cases.

    Raises
    ------
    SupportError
        Supports that leave a rigid motion free, or that contradict each other.
    SolverError
        A singular stiffness matrix (a mechanism).
    """
    if getattr(model, "is_joint", False):  # layers joined by fasteners (core/joints): {case: JointResult}
        return model.solve(cases, solver=solver, verbose=verbose, distortion_limit=distortion_limit, timer=timer)
    timer = timer or Timer(verbose)
    cases = _case_names(model, cases)
    timer.size(2 * model.mesh.n_nodes)
    timer.start("checking")
    for c in cases:
        if c not in model.cases:
            raise unknown_name("load case", c, model.cases)
    if not model.supports and not getattr(model, "pins", None):
        raise SupportError(
            "the model has no supports, so it can move freely: add at least Fixed(edge), or rollers "
            "that hold translation x, translation y and rotation"
        )
    # memory first: refuse what cannot fit before Assembly's element checks (minutes for 10^7 unknowns);
    # the matrix entries from the cell blocks' widths, the unknowns at most two per node
    blocks0 = model.mesh.cells.values()
    choose(2 * model.mesh.n_nodes, solver,
           matrix_entries=sum(c.shape[0] * (2 * c.shape[1]) * (2 * c.shape[1] + 1) // 2 for c in blocks0),
           coarse_unknowns=coarse_size((_element_or_none(name), c.shape[0]) for name, c in model.mesh.cells.items()))
    asm = Assembly(model, distortion_limit=distortion_limit)
    mesh = asm.mesh
    cons = constrain(mesh, model.supports)
    tie = Tying(asm, model, cons) if getattr(model, "pins", None) else None  # pins: eliminated ties (core/_tying)
    note_snapped(mesh, model.supports, pending_warnings(asm))  # supports at coordinates: the distance kept
    zero_energy_check(asm, sink=pending_warnings(asm))  # hourglass modes, before any global work
    if tie is None:
        rigid_body_check(mesh, cons, sink=pending_warnings(asm))  # free motions and hinges
    else:
        tie.check_motions(mesh, cons, sink=pending_warnings(asm))  # the held pins count
    ndof = 2 * mesh.n_nodes
    up, free, pdofs, free_index, pres_index = split_unknowns(mesh, cons, tie)
    entries = matrix_entries(asm)
    solver = choose(free.size, solver, matrix_entries=entries,  # refuse up front what cannot fit
                    coarse_unknowns=coarse_size((b.etype, b.n) for b in asm.blocks))
    timer.lap("checks")
    timer.size(free.size)
    timer.start("assembling")
    try:
        system = asm.system(free_index, pres_index, cons.rotation, timer)
    except MemoryError:
        raise _out_of_memory("assembling the stiffness matrix", free.size, entries) from None
    loads, F, Fl, rhs, system = reduced_loads(asm, system, cons, tie, cases, free, pdofs, up)
    contact = None
    if tie is not None and any(p.tie == "contact" for p in tie.pins):  # bearing contact (core/contact.py)
        from .contact import ContactSet

        contact = ContactSet(tie, system, free, up)
        system = contact.system  # the pins' springs added: taken out exactly by the condensation
    timer.lap("load vectors")
    after_ordering = None
    if solver in solvers.OVERLAPS_ORDERING:  # its ordering keeps one core busy, without the GIL
        from .recovery import prepare_recovery  # noqa: looked up at call time (tests replace it)

        pending = prepare_recovery(asm, free.size)
        if pending:  # the numeric factorization waits for them, and then has every core
            after_ordering = lambda: futures.wait(pending)  # noqa: E731
    modes = space = None
    if solver in ("amg", "auto"):
        every = _rigid_modes(mesh.nodes, cons.rotation)
        modes = every[free]
        if tie is not None:
            modes = tie.rigid_modes(modes, mesh.nodes)
        # the corner nodes' space (p-multigrid on quadratic elements; 2 x 2 node blocks on every level)
        space = nodal_space(asm.blocks, mesh.n_nodes, free, every, cons.rotation,
                            modes[free.size:] if modes.shape[0] > free.size else None)
        del every
    if keep_system:
        asm.system = system
        asm.rhs = rhs
        asm.space, asm.modes = space, modes  # the iterative back end's nodal space (None for a direct one)
        asm.free, asm.constrained = free, cons
    try:
        figures = diagnose.start_figures(system.lower, solver)  # ||K|| on the core the ordering leaves idle
        timer.start(f"factorizing ({solver})")
        fac = factorize(system.lower, solver, rigid_modes=modes, space=space,
                        after_ordering=diagnose.also_wait(after_ordering, figures))
        timer.lap("factorization")
        if contact is not None:
            timer.start("contact iteration")
            rhs = contact.solve(fac, rhs, cases)  # the contact forces added: the same factor, no other
            timer.lap("contact")
        timer.start("solving")
        # one more column: a step of inverse iteration for the condition estimate
        sol, probe = diagnose.solve_with_probe(fac, rhs)
        sol = diagnose.meet_accuracy(fac, system, rhs, sol, figures)  # iterative: go on as far as needed
        ul = full_unknowns(ndof, free, pdofs, up, tie, sol, len(cases))
    except MemoryError:
        raise _out_of_memory(f"factorizing with the {solver!r} solver", free.size, entries) from None
    except SolverError as exc:
        if not getattr(exc, "numerical", False):
            raise
        raise diagnose.explain_failure(asm, system, free if tie is None else tie.diagnosis_free(free), solver, exc,
                                       rhs) from None
    timer.lap("solve")
    timer.start("checking the solution of")
    Rl = np.zeros((ndof, len(cases)))
    Rl[pdofs] = system.prescribed_rows @ ul - Fl[pdofs]
    if contact is not None:  # the contact forces on the edge nodes, the supports' share of them taken out
        Pc = contact.forces(sol, len(cases))
        Rl[pdofs] -= Pc[pdofs]
    P = tie.forces(Rl, free) if tie is not None else 0.0  # the forces the pins exert on their edge nodes
    if contact is not None:
        P = P + Pc
        for d in tie.data:
            if d["pin"].tie == "contact":
                d["motion"] = np.column_stack([contact.pin_motion(d, j) for j in range(len(cases))])
    U, R = finish_answer(mesh, cons.rotation, ul, Rl, cases)
    pin_rows = tie.states(U, P, cases) if tie is not None else None
    contact_rows = contact.states(cases, model.unit_system, U) if contact is not None else None
    trust = diagnose.check_solution(asm, system, fac, rhs, sol, probe, cases, R + P, F, U,
                                    free=free if tie is None else tie.diagnosis_free(free), figures=figures)
    timer.lap("solution check")
    results = Results()
    for j, c in enumerate(cases):
        results[c] = Result(asm, c, U[:, j].reshape(-1, 2), R[:, j].reshape(-1, 2), F[:, j].reshape(-1, 2),
                            loads[j][1], solver=fac.name, timer=timer,
                            solver_info={**fac.info, **trust.info(j)})
        diagnose.warn_untrusted(results[c], trust, j)
        if tie is not None:
            results[c].pin_forces = P[:, j].reshape(-1, 2)
            results[c].pin_states = pin_rows[j]
        if contact is not None:
            results[c].contact_states = contact_rows[j]
            from .contact import advise as contact_advice

            contact_advice(results[c])  # the linearised gap's own limit
    del system
    from .advice import advise

    advise(results)  # trust warnings (locking, slender, units, contrast): raised once, kept per result
    timer.lap("trust warnings")
    return results


def _out_of_memory(what: str, n: int, entries: int) -> ResourceError:
    from .solvers import available_memory, estimate_memory

    need = min(estimate_memory(n, m, entries) for m in ("amg", "cholmod"))
    return ResourceError(
        f"ran out of memory while {what} ({n:,} unknowns; the estimate was about {need / 2**30:.2f} GiB, "
        f"{available_memory() / 2**30:.2f} GiB is free now); close other programs, use solver='amg', "
        "coarsen the mesh away from the stress raisers, or use a symmetry model"
    )


def finish_answer(mesh, rotation, ul: np.ndarray, Rl: np.ndarray, cases: list[str], *more: np.ndarray) -> tuple:
    """(U, R, *more) in global components from the answer in the supports' bases: a NaN or infinite
    answer refused, and the reactions of the nodes in no cell (held by :func:`prescribed`) set to zero."""
    _check_finite(ul, Rl, cases)
    unused = np.flatnonzero(~mesh.used_nodes())
    Rl[2 * unused] = 0.0
    Rl[2 * unused + 1] = 0.0
    if rotation is None:
        return (ul, Rl, *more)
    return tuple(rotation.to_global(v.reshape(-1, 2, v.shape[1])).reshape(v.shape) for v in (ul, Rl, *more))


def _check_finite(u: np.ndarray, reactions: np.ndarray, cases: list[str]) -> None:
    """Refuse an answer with NaN or infinite values (overflow from values far out of range)."""
    for j, c in enumerate(cases):
        if not (np.all(np.isfinite(u[:, j])) and np.all(np.isfinite(reactions[:, j]))):
            raise SolverError(
                f"load case {c!r}: the displacements or reactions overflowed to infinite or NaN values; "
                "the loads, moduli or sizes are far out of range (check the units: e.g. N, mm, MPa), or "
                "the model is nearly a mechanism"
            )


def _element_or_none(name: str):
    """The registered element type of a cell block's name, or None (the memory estimate then assumes
    the larger, linear case)."""
    from .registry import element_type

    try:
        return element_type(name)
    except Exception:  # an unknown name is reported by the element checks, with its fix
        return None


def _rigid_modes(xy: np.ndarray, rotation) -> np.ndarray:
    """Translations and the in-plane rotation as nodal vectors (2n, 3), in the local bases."""
    n = xy.shape[0]
    c = xy.mean(axis=0)
    B = np.zeros((n, 2, 3))
    B[:, 0, 0] = 1.0
    B[:, 1, 1] = 1.0
    L = max(np.ptp(xy[:, 0]), np.ptp(xy[:, 1]), 1e-300)
    B[:, 0, 2] = -(xy[:, 1] - c[1]) / L
    B[:, 1, 2] = (xy[:, 0] - c[0]) / L
    if rotation is not None:
        B = rotation.to_local(B)
    return B.reshape(2 * n, 3)


