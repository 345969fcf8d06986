"""Bearing contact of a rigid pin on a named edge: compression only, frictionless, with a radial clearance.

The pin (:class:`planar.core.pins.Pin` with ``tie="contact"``) is a rigid disc of radius ``r_p``
centred at its reference point ``x_p``; it has two translations ``u_p`` (a frictionless disc
carries no moment, and its rotation moves no gap). Every node ``i`` of the edge (usually a hole of
radius ``R``, then ``r_p = R - c`` with the radial clearance ``c``) has the gap::

    g_i = (|x_i - x_p| - r_p) + e_i . (u_i - u_p),      e_i = (x_i - x_p) / |x_i - x_p|

measured from the disc's surface along the disc's normal through the node (node to rigid surface;
for a hole the first term is ``c``). This is the gap linearised about the undeformed shape: it holds
while the displacements are small compared with the radius; the neglected term is of the order of
``|u_t|^2 / (2 R)``, ``u_t`` the relative motion across ``e_i``. The same gap serves any edge near a
disc (a straight edge pressed by a pin of given ``radius``: the two-dimensional Hertz problem).
The contact force on node ``i`` is ``lambda_i e_i`` (the pin pushes the part away from its centre),
``-lambda_i e_i`` on the pin, with ``lambda_i >= 0, g_i >= 0, lambda_i g_i = 0`` (Signorini's
conditions, node-wise).

Method: the primal-dual active set method for the contact conditions (S. Hüeber and B. I.
Wohlmuth, A primal-dual active set strategy for non-linear multibody contact problems, Comput.
Methods Appl. Mech. Engrg. 194 (2005) 3147-3166; equivalent to a semi-smooth Newton method, M.
Hintermüller, K. Ito and K. Kunisch, SIAM J. Optim. 13 (2002) 865-888; from memory), on the problem
condensed onto the contact nodes with one factorization:

* ``B`` (m x n) maps the unknowns (the part's and the pins' free translations) to the relative
  normal motions ``e_i . (u_i - u_p)``. The factorized matrix is ``K_a = K + B^T D B``: the part's
  stiffness, the pins' unknowns and springs ``D`` (each the node's own diagonal stiffness) between
  the pin and a few nodes spread along its edge (:data:`ANCHORS`). The springs make ``K_a`` definite
  when the pin is the only support in some direction (the pre-solve check counts a pin as holding
  its edge); they are not a penalty: the condensation takes them out exactly. With
  ``mu = lambda + D B u``, ``K u = F + B^T lambda`` reads ``K_a u = F + B^T mu``, so ``B u = h + W mu``
  with ``h = B K_a^-1 F`` and the flexibility ``W = B K_a^-1 B^T``.
* The condensed problem is written over the candidate nodes only: those that penetrate in the
  springs' answer, widened along the edge, and the anchors. ``W`` over them (m_c x m_c) comes from
  the Schur complement ``S`` of ``K_a`` on the unknowns that ``B`` touches (each edge node's motion along
  the pin's normal, its two unknowns turned to the normal and the tangent there, and the pins' free
  translations: a few hundred), which the factorization returns where the back end offers it
  (PARDISO): ``[K_a^-1]`` over those unknowns is ``S^-1``, so ``W = B_s S^-1 B_s^T`` for every contact
  row at once by a dense Cholesky of ``S``, and ``h`` needs only the forward half of one solve; else
  from one multi-right-hand-side solve with the factor (its forward half ``Z = L^-1 P B^T``, ``W = Z^T Z``,
  where the back end offers it). Where the contact arc reaches the edge of the candidates, or the
  answer makes a node left out penetrate, the set grows (only the new nodes' columns are solved) and
  the iteration runs again; the nodes left out carry nothing and are open.
* Each iteration solves the dense system of the active set ``A``: ``g_i = 0`` on ``A``,
  ``lambda_i = 0`` off it; then ``A = {i : lambda_i - c_i g_i >= 0}`` (``c_i`` the node's stiffness
  scale); it stops when ``A`` repeats (then ``lambda >= 0`` and ``g >= 0`` hold). No refactorization
  ever: the final displacements are one more solve with the factor, of ``F + B^T mu``.
* A singular active-set system means that nothing holds the part (or a loaded pin) once the
  open nodes are let go: a :class:`~planar.core.errors.SolverError` says so.

The load cases are solved one by one on the same factor; their answers do not superpose
(:mod:`planar.post.combine` refuses to combine them; an envelope, which superposes nothing, takes them).

Before the solve, the kinematics check counts a contact pin as holding its edge the way a bonded pin
would (a held pin holds the part at its point, in translation only): a contact pin may hold the part,
in compression. Whether it does is known only from the loads: a case whose loads pull the part off
the pin (or leave a loaded pin touching nothing) makes the active-set system singular, and the solve
refuses it with a :class:`~planar.core.errors.SolverError` that says so. A clearance that the loads
cannot close, with the part held elsewhere, is no error: the pin then carries nothing and its state
says "no contact".
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from ._contact_state import ContactState, _arc, _closes, _edge_angles, _plain, _tidy  # noqa: F401  (re-exported)
from .errors import SolverError, fmt_point

__all__ = ["ContactState", "ContactSet", "MAX_ITERATIONS"]

#: the active-set iterations allowed before a load case is refused as not converged
MAX_ITERATIONS = 60
#: reciprocal condition (1-norm) of the active-set system below which the part counts as free
SINGULAR_RCOND = 1e-11
#: the springs between a pin and its edge: at most this many nodes, spread along the edge
ANCHORS = 8
#: bytes of right-hand sides per block of the flexibility solve
BLOCK_BYTES = 64 * 2**20
#: the most unknowns (edge nodes' and pins' free translations) whose dense Schur complement the
#: factorization is asked for (32 MB at this size); beyond, the flexibility comes from solves
SCHUR_MAX = 2000


class _Free(Exception):
    """The active-set system of a case is singular: nothing holds the part once the open nodes let go."""

    def __init__(self, case: str, active: np.ndarray):
        super().__init__(case)
        self.case, self.active = case, active


class ContactSet:
    """The contact pins of a solve: the gap map, the springs, the condensed problem and its answer.

    Parameters
    ----------
    tie : planar.core._tying.Tying
    system : ReducedSystem
        The system with the ties eliminated (the contact pins' free translations appended).
    free : ndarray
        The mesh's free unknowns (global numbering).
    up : ndarray
        The prescribed values of every unknown (global numbering).
    """

    def __init__(self, tie, system, free: np.ndarray, up: np.ndarray):
        mesh = tie.mesh
        self.tie = tie
        nO = free.size
        n_new = system.lower.shape[0]
        fidx = np.full(2 * mesh.n_nodes, -1, dtype=np.int64)
        fidx[free] = np.arange(nO)
        kd = np.asarray(system.lower.diagonal())
        rows, cols, vals, g0, d0, k, self.parts = [], [], [], [], [], [], []
        row0 = 0
        for d in tie.data:
            pin = d["pin"]
            if pin.tie != "contact":
                continue
            nodes = d["nodes"]
            r = mesh.nodes[nodes] - d["point"]
            dist = np.hypot(*r.T)
            e = r / dist[:, None]
            ns = nodes.size
            ri = row0 + np.arange(ns)
            gi = dist - d["radius"]
            di = np.zeros(ns)
            ki = np.zeros(ns)
            for c in (0, 1):
                dof = 2 * nodes + c
                f = fidx[dof]
                on = f >= 0
                rows.append(ri[on]); cols.append(f[on]); vals.append(e[on, c])
                ki[on] += e[on, c] ** 2 * kd[f[on]]
                di[~on] += e[~on, c] * up[dof[~on]]
            Q2 = d["Q"][:2, :2]
            for j, comp in enumerate((0, 1)):
                a = e @ Q2[:, comp]
                if pin.held[comp]:
                    di -= a * d["values"][comp]
                else:
                    col = nO + d["p_off"] + int(np.flatnonzero(d["free_comp"] == comp)[0])
                    rows.append(ri); cols.append(np.full(ns, col)); vals.append(-a)
            w = d["w"]
            closed = _closes(mesh, pin.edge)
            self.parts.append(dict(d=d, rows=ri, e=e, angles=_edge_angles(r, closed), closed=closed, w=w))
            g0.append(gi); d0.append(di); k.append(ki)
            row0 += ns
        m = row0
        cat = np.concatenate
        B = sp.csr_matrix((cat(vals), (cat(rows), cat(cols))), shape=(m, n_new))
        B.eliminate_zeros()
        k = cat(k)
        live = np.diff(B.indptr) > 0  # a node whose gap no unknown moves keeps its gap (checked below)
        pos = k[live & (k > 0)]
        k = np.where(k > 0, k, np.median(pos) if pos.size else max(float(kd.mean()), 1e-300))
        anchor = np.zeros(m, bool)  # the springs: ANCHORS nodes spread along each pin's edge
        for p in self.parts:
            rows = p["rows"][np.argsort(p["angles"], kind="stable")]
            rows = rows[live[rows]]
            if rows.size:
                anchor[rows[np.unique(np.linspace(0, rows.size - 1, min(ANCHORS, rows.size)).round().astype(int))]] = True
        self.m, self.B, self.c, self.live, self.anchor = m, B, k, live, anchor
        self.k = np.where(anchor, k, 0.0)
        self.g0, self.d0 = cat(g0), cat(d0)
        self.nO, self.n_new = nO, n_new
        BtDB = (B.T @ sp.diags(self.k) @ B).tocsc()
        low = (system.lower + sp.tril(BtDB).tocsc()).tocsc()
        low.sum_duplicates()
        low.sort_indices()
        self._mark_schur(low, B, nO)
        from .assembly import ReducedSystem

        self.system = ReducedSystem(low, system.prescribed_rows)
        self.iterations: list[int] = []
        self.mu = None
        self._W = None
        self.gf = None  # the gaps the loads alone leave, set by solve

    @staticmethod
    def _mark_schur(low, B: sp.csr_matrix, nO: int) -> None:
        """Mark on the matrix the unknowns whose Schur complement the factorization may return
        (:func:`planar.core.solvers.factorize`): each edge node's two unknowns turned to the pin's normal and
        tangent there (``schur_basis``), so that only the normal one and the pins' unknowns are marked."""
        B.sort_indices()
        touched = np.unique(B.indices).astype(np.int64)
        if not 0 < touched.size <= SCHUR_MAX:
            return
        nnz = np.diff(B.indptr)
        two = np.flatnonzero(nnz >= 2)
        first, second = B.indptr[two], B.indptr[two] + 1
        ok = (B.indices[first] < nO) & (B.indices[second] < nO)  # the node's own two unknowns (sorted first)
        rows = two[ok]
        pairs = np.column_stack([B.indices[B.indptr[rows]], B.indices[B.indptr[rows] + 1]]).astype(np.int64)
        if pairs.size and np.unique(pairs).size == pairs.size:
            dirs = np.column_stack([B.data[B.indptr[rows]], B.data[B.indptr[rows] + 1]])
            low.schur_basis = (pairs, dirs)
            touched = np.setdiff1d(touched, pairs[:, 1])
        low.schur_unknowns = touched

    # ------------------------------------------------------------------ the condensed problem
    def flexibility(self, fac, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """``(order, W)``: ``W = B_c K_a^-1 B_c^T`` over the contact rows ``rows`` (in the order ``order``).

        Multi-RHS solves with the factor in column blocks, only for rows not met before (the set
        only grows). Where the back end offers the forward half ``Z = L^-1 P B_c^T`` alone, ``W = Z^T Z``
        over the rows where ``Z`` is not zero (the elimination tree's paths from the edge), kept
        compressed; else ``B`` times the full solves. With the factor's Schur complement (:meth:`_schur_rows`),
        ``W`` over every row is at hand already and this only picks ``rows`` out of it.
        """
        if self._W is not None:
            return rows, self._W[np.ix_(rows, rows)]
        new = np.setdiff1d(rows, self._done)
        step = max(8, int(BLOCK_BYTES // (8 * max(self.n_new, 1))))
        forward = hasattr(fac, "forward") and hasattr(fac, "gram_of")
        for a in range(0, new.size, step):
            blk = new[a:a + step]
            cols = self.B[blk].T.toarray()
            if forward:
                Z = fac.forward(cols)
                nz = np.flatnonzero(np.any(Z != 0.0, axis=1))
                self._blocks.append((nz, Z[nz]))
                del Z
            else:
                self._blocks.append(self.B @ fac.solve(cols).reshape(self.n_new, -1))
            self._done = np.r_[self._done, blk]
        order = self._done
        if forward:
            R = np.unique(np.concatenate([nz for nz, _ in self._blocks])) if self._blocks else np.zeros(0, np.int64)
            Zc = np.zeros((R.size, order.size))
            c0 = 0
            for nz, Zb in self._blocks:
                Zc[np.searchsorted(R, nz), c0:c0 + Zb.shape[1]] = Zb
                c0 += Zb.shape[1]
            return order, fac.gram_of(Zc)
        W = np.hstack(self._blocks)[order] if self._blocks else np.zeros((0, 0))
        return order, (W + W.T) / 2

    def _schur_rows(self, fac) -> np.ndarray | None:
        """``B`` over the factor's Schur unknowns (dense, m x ns; in its turned basis), or None where the factor
        returned no Schur complement, or one that leaves out an unknown that ``B`` touches."""
        if not all(hasattr(fac, f) for f in ("schur_rows", "schur_gram", "schur_part")):
            return None
        return fac.schur_rows(self.B)

    def _sorted_rows(self):
        """Each pin's rows in angle order, and whether its edge closes on itself."""
        for p in self.parts:
            yield p["rows"][np.argsort(p["angles"], kind="stable")], p["closed"]

    def _dilate(self, mark: np.ndarray, frac: int = 20, like: np.ndarray | None = None) -> np.ndarray:
        """Rows marked, widened along each pin's edge on each side (in edge order) by 1/``frac`` of its nodes, but
        by no more than half the rows of ``like`` on that edge (``mark`` itself by default), at least 2.

        On a hole the fraction rules; on a long edge a pin touches over a few of its nodes (a disc on a straight
        edge: a dozen of thousands), and the widening follows the rows at hand (the set doubles as it grows),
        so the flexibility is solved for a few more columns than the arc has nodes, not a tenth of the edge.
        """
        out = mark.copy()
        like = mark if like is None else like
        for rows, closed in self._sorted_rows():
            mk = mark[rows].astype(float)
            k = max(2, min(rows.size // frac, int(like[rows].sum()) // 2))
            kern = np.ones(2 * k + 1)
            if closed:
                wide = np.convolve(np.r_[mk[-k:], mk, mk[:k]], kern, mode="valid") > 0
            else:
                wide = np.convolve(mk, kern, mode="same") > 0
            out[rows] |= wide
        return out & self.live

    def _touching(self, active: np.ndarray, cand: np.ndarray) -> np.ndarray:
        """Active rows next (along the edge) to a row that is not a candidate: the arc may go on there."""
        out = np.zeros_like(cand)
        for rows, closed in self._sorted_rows():
            a, c = active[rows], cand[rows]
            if closed:
                nb_out = ~np.roll(c, 1) | ~np.roll(c, -1)
            else:
                nb_out = ~np.r_[True, c[:-1]] | ~np.r_[c[1:], True]
            out[rows] = a & nb_out & self.live[rows]
        return out & self.live

    def solve(self, fac, rhs: np.ndarray, cases: list[str]) -> np.ndarray:
        """The contact forces of every case by the active-set iteration; returns ``rhs + B^T mu``.

        The candidate nodes start as those that penetrate in the springs' answer, widened along the
        edge; while the contact arc reaches the edge of the candidates, or the final answer makes a
        node left out penetrate, the set grows (the flexibility of the new nodes only: one more
        multi-RHS solve, or nothing with the factor's Schur complement) and the iteration runs again.
        """
        rhs = np.asarray(rhs).reshape(self.n_new, -1)
        nc = rhs.shape[1]
        self._cases, self._load_scale = list(cases), np.abs(rhs).max(axis=0, initial=0.0)
        Bs = self._schur_rows(fac)
        if Bs is not None:  # the Schur complement on B's unknowns: W over every row, no solve for it
            h = Bs @ fac.schur_part(rhs)  # the relative motions with mu = 0, by the forward half of a solve
            self._W = fac.schur_gram(Bs)
        else:
            self._W = None
            h = self.B @ fac.solve(rhs).reshape(self.n_new, -1)  # the relative motions with mu = 0
        gf = (self.g0 + self.d0)[:, None] + h
        self.gf = gf  # the gaps the loads alone leave (the contact forces' closure is measured from them)
        fixed = np.flatnonzero(~self.live)
        for j, case in enumerate(cases):
            if fixed.size:
                bad = gf[fixed, j] < -1e-9 * self._radius_of(fixed)
                if bad.any():
                    self._refuse_fixed(fixed[np.argmax(bad)], case)
        self._done, self._blocks = np.zeros(0, np.int64), []
        pen = np.any(gf < 0, axis=1) & self.live
        if not pen.any():  # the springs' answer closes no gap (a clearance): start where the edge closes most
            close = np.minimum((gf - self.g0[:, None]).min(axis=1), 0.0)
            pen = self.live & (close < 0.5 * close[self.live].min(initial=0.0))
        cand = (self._dilate(pen, 10) if pen.any() else self.live.copy()) | self.anchor
        tol = 1e-8 * self._radius_of(np.arange(self.m))
        for _ in range(4 * self.m + 4):
            rows, W = self.flexibility(fac, np.flatnonzero(cand))
            mu = np.zeros((self.m, nc))
            self.active = np.zeros((self.m, nc), bool)
            self.iterations = []
            try:
                for j, case in enumerate(cases):
                    mu[rows, j], it, self.active[rows, j] = self._active_set(
                        W, h[rows, j], gf[rows, j], self.g0[rows], self.k[rows], self.c[rows], case)
                    self.iterations.append(it)
            except _Free as free:
                if np.array_equal(cand, self.live):
                    self._refuse_free(free.case, free.active)
                cand = self.live.copy()  # the candidates may lack the nodes that hold the part: all of them
                continue
            grow = self._touching(np.any(self.active, axis=1), cand)
            if grow.any():
                cand = cand | self._dilate(grow, like=cand & ~self.anchor)
                continue
            out = rhs + self.B.T @ mu
            if self._W is not None:  # B K_a^-1 (rhs + B^T mu) = h + W mu over every row
                g = gf + self._W @ mu
            else:
                g = (self.g0 + self.d0)[:, None] + self.B @ fac.solve(out).reshape(self.n_new, -1)
            viol = self.live & ~cand & np.any(g < -tol[:, None], axis=1)
            if not viol.any():
                break
            cand = cand | self._dilate(viol, like=cand & ~self.anchor)
        else:  # pragma: no cover - every round adds a node, so the loop ends well before
            raise SolverError("the contact candidate set kept growing; report this model")
        self.mu = mu
        return out

    def _active_set(self, W: np.ndarray, hj: np.ndarray, gf: np.ndarray, g0: np.ndarray, k: np.ndarray,
                    c: np.ndarray, case: str):
        """The primal-dual active set iteration on the condensed problem of one case: (mu, iterations).

        ``k`` the springs (zero off the anchors), ``c`` the nodes' stiffness scale (the rows of the
        closed nodes are scaled by it, and it weighs the gap in the update ``lambda - c g``).
        """
        from scipy.linalg import lapack, lu_factor, lu_solve

        ml = hj.size
        if ml == 0:
            return np.zeros(0), 0, np.zeros(0, bool)
        DW = k[:, None] * W
        CW = c[:, None] * W
        I = np.eye(ml)
        scale = max(float(np.abs(c * gf).max(initial=0.0)), float(np.abs(c * hj).max(initial=0.0)), 1e-300)
        # start from the nodes that bear when the edge is bonded to the pin without clearance
        x0 = np.linalg.solve(CW, -c * (gf - g0))
        active = x0 - k * (hj + W @ x0) > 0
        if not active.any():
            active[:] = True
        for it in range(1, MAX_ITERATIONS + 1):
            M = np.where(active[:, None], CW, I - DW)
            b = np.where(active, -c * gf, k * hj)
            lu = lu_factor(M, check_finite=False)
            rc = lapack.dgecon(lu[0], np.abs(M).sum(axis=0).max(), norm="1")[0]
            if not rc > SINGULAR_RCOND:
                raise _Free(case, active)
            x = lu_solve(lu, b, check_finite=False)
            Wx = W @ x
            g = gf + Wx
            lam = x - k * (hj + Wx)
            new = lam - c * g >= -1e-12 * scale
            if np.array_equal(new, active):
                return x, it, active
            active = new
        names = ", ".join(repr(p["d"]["pin"].name) for p in self.parts)
        raise SolverError(
            f"load case {case!r}: the bearing contact of the pin(s) {names} did not settle in "
            f"{MAX_ITERATIONS} active-set iterations (the contact arc keeps changing); refine the mesh "
            "along the pin's edge, or check that the clearance is small compared with the radius")

    def _radius_of(self, rows: np.ndarray) -> np.ndarray:
        out = np.zeros(rows.size)
        for p in self.parts:
            sel = np.isin(rows, p["rows"])
            out[sel] = p["d"]["radius"]
        return out

    def _part_of(self, row: int) -> dict:
        return next(p for p in self.parts if p["rows"][0] <= row <= p["rows"][-1])

    def _refuse_fixed(self, row: int, case: str):
        p = self._part_of(row)
        node = int(p["d"]["nodes"][row - p["rows"][0]])
        raise SolverError(f"load case {case!r}: node {node} at {fmt_point(self.tie.mesh.nodes[node])} of the edge of pin "
                          f"{p['d']['pin'].name!r} is held by supports inside the pin (gap "
                          f"{self.g0[row] + self.d0[row]:.3g}); move the pin (at=) or the supports")

    def _refuse_free(self, case: str, active: np.ndarray):
        idle = [p["d"]["pin"].name for p in self._idle_parts(case)]
        if idle:
            self._refuse_idle(case, idle)
        names = ", ".join(repr(p["d"]["pin"].name) for p in self.parts)
        loaded = [p["d"]["pin"].name for p in self.parts if not p["d"]["pin"].held[:2].all()]
        what = "the part" + (f" or the loaded pin(s) {', '.join(map(repr, loaded))}" if loaded else "")
        raise SolverError(
            f"load case {case!r}: {what} would move freely: where the edge of the contact pin(s) {names} is "
            f"let go ({int((~active).sum())} open node(s), {int(active.sum())} bearing), nothing else holds it. "
            "A contact pin only pushes (no tension, no friction): check the direction of the loads, reduce the "
            "clearance, or hold the part with a support (or use tie='rigid' for a bonded pin)")

    def _idle_parts(self, case: str) -> list[dict]:
        """The contact pins that some direction leaves free and that ``case`` does not load along it."""
        from .pins import pin_loads

        loads = pin_loads(self.tie.model, case)
        return [p for p in self.parts if p["d"]["free_comp"].size and not np.any(
                (p["d"]["Q"].T @ loads.get(p["d"]["pin"].name, np.zeros(3)))[p["d"]["free_comp"]])]

    @staticmethod
    def _refuse_idle(case: str, idle: list[str], touching: bool = False):
        how = (" (it only touches its edge, with no more than round-off of force, at a place the "
               "active set happened to pick)") if touching else ""
        raise SolverError(
            f"load case {case!r} puts no load on the contact pin(s) {', '.join(map(repr, idle))} where nothing "
            "holds them (hold=None, or across their held direction), so nothing places them in their holes and the case has no unique "
            f"answer{how}. A free contact pin needs a load in every load case: solve the cases that do not load it with "
            "a model without the pin, or hold the pin (hold=)")

    def _refuse_touching_idle(self) -> None:
        """Refuse an unloaded free pin that bears nothing but round-off and could slide off its closed nodes.

        The active set may close a node at zero force; for a free pin that nothing loads, those closed nodes
        may be all that places it (the system is regular, the answer is not unique): it is so when the pin
        can move along some free direction ``v`` without closing any of them further (every closed node's
        normal ``e`` with ``e . v <= 0``). A pin squeezed by its hole bears real forces, and one closed in
        all round (no clearance, the hole unstrained there) cannot move; both are kept.
        """
        for j, case in enumerate(getattr(self, "_cases", [])):
            scale = max(float(self._load_scale[j]) if j < self._load_scale.size else 0.0,
                        float(np.abs(self.lam[:, j]).max(initial=0.0)))
            idle = [p["d"]["pin"].name for p in self._idle_parts(case)
                    if np.abs(self.lam[p["rows"], j]).sum() <= 1e-9 * scale and self._can_slide(p, j)]
            if idle:
                self._refuse_idle(case, idle, touching=True)

    def _can_slide(self, p: dict, j: int) -> bool:
        """Whether part ``p``'s pin can move along a free direction without closing its closed nodes in case j."""
        closed = self.active[p["rows"], j] & self.live[p["rows"]]
        e = p["e"][closed]
        if not e.shape[0]:
            return True
        d = p["d"]
        free = d["Q"][:2, :2][:, d["free_comp"]]  # (2, 1 or 2): the free directions
        if free.shape[1] == 1:
            s = e @ free[:, 0]
            return not (s.max() > 1e-6 and s.min() < -1e-6)
        a = np.sort(np.arctan2(e[:, 1], e[:, 0]))
        gaps = np.diff(np.r_[a, a[0] + 2 * np.pi])
        return bool(gaps.max() >= np.pi - 1e-6)  # the normals lie in a half-plane: the pin moves off them

    # ------------------------------------------------------------------ after the solve
    def forces(self, sol: np.ndarray, ncases: int) -> np.ndarray:
        """The contact forces on the part's edge nodes (2n, m) from the final solution; keeps lambda and the gaps."""
        y = sol.reshape(self.n_new, -1)[:, :ncases]
        By = self.B @ y
        self.gap = self.g0[:, None] + self.d0[:, None] + By
        self.lam = self.mu - self.k[:, None] * By
        self.lam[~self.live[:, None] | ~self.active] = 0.0  # open nodes: exactly no force (their round-off dropped)
        self._refuse_touching_idle()
        self.motion = y[self.nO:]
        P = np.zeros((2 * self.tie.mesh.n_nodes, ncases))
        for p in self.parts:
            nodes, e = p["d"]["nodes"], p["e"]
            lam = self.lam[p["rows"]]
            P[2 * nodes] += e[:, :1] * lam
            P[2 * nodes + 1] += e[:, 1:] * lam
        return P

    def pin_motion(self, d: dict, j: int) -> np.ndarray:
        """A contact pin's (ux, uy, 0) in global components, in case j."""
        comps = np.where(d["pin"].held[:2], d["values"][:2], 0.0)
        for i, comp in enumerate(d["free_comp"]):
            comps[comp] = self.motion[d["p_off"] + i, j]
        return np.r_[d["Q"][:2, :2] @ comps, 0.0]

    def states(self, cases: list[str], units, U: np.ndarray | None = None) -> list[dict[str, ContactState]]:
        """Each contact pin's :class:`ContactState`, per case; refuses penetration beyond 1e-6 of the radius.

        ``U`` (2n, m), the displacements, gives the term the linearised gap leaves out.
        """
        lab = {"length": units.unit_of("length"), "stress": units.unit_of("stress"),
               "force": units.unit_of("force")}
        mesh = self.tie.mesh
        out = []
        for j, case in enumerate(cases):
            row = {}
            for p in self.parts:
                d = p["d"]
                order = np.argsort(p["angles"], kind="stable")
                rr = p["rows"][order]
                nodes = d["nodes"][order]
                ang = p["angles"][order]
                lam = self.lam[rr, j]
                gap = self.gap[rr, j]
                pres = lam / p["w"][order]
                bearing = self.active[rr, j]  # closed at convergence (the active set)
                pen = max(0.0, -float(gap.min(initial=0.0))) + 0.0
                if pen > 1e-6 * d["radius"]:
                    raise SolverError(f"load case {case!r}: the edge of pin {d['pin'].name!r} penetrates it by {pen:.3g} "
                                      f"after the contact iteration (more than 1e-6 of its radius {d['radius']:.4g}); "
                                      "the stiffness matrix is too ill-conditioned for the contact solve: check the "
                                      "units and the supports")
                a0, a1 = _arc(ang, bearing, p["closed"])
                i = int(np.argmax(pres))
                f = (p["e"][order] * lam[:, None]).sum(axis=0)
                pres_out = np.where(bearing, pres, 0.0)
                neglected = motion = 0.0
                gf = self.gf
                closure = float(np.abs(gap - gf[rr, j]).max(initial=0.0)) if bearing.any() and gf is not None else 0.0
                if U is not None:
                    e = p["e"][order]
                    urel = U[:, j].reshape(-1, 2)[nodes] - self.pin_motion(d, j)[:2]
                    ut = urel[:, 1] * e[:, 0] - urel[:, 0] * e[:, 1]
                    ut = ut - _turn(ut, e, np.hypot(*(mesh.nodes[nodes] - d["point"]).T), p["w"][order])
                    neglected = float((ut ** 2).max(initial=0.0)) / (2 * d["radius"])
                    motion = float(np.abs((urel * e).sum(axis=1)).max(initial=0.0))
                row[d["pin"].name] = ContactState(
                    d["pin"].name, case, int(self.iterations[j]), True, a0, a1,
                    float(pres_out.max(initial=0.0)), tuple(map(float, mesh.nodes[nodes[i]])) if bearing.any() else None,
                    pen, max(0.0, -float(pres.min(initial=0.0))) + 0.0, (float(f[0]), float(f[1])),
                    _clearance(d, mesh), float(d["radius"]), nodes, ang, gap, pres_out, lab, neglected, motion, closure)
            out.append(row)
        return out


def _clearance(d, mesh) -> float:
    """The radial clearance: as given, or with the pin's radius= given, the edge's nearest distance from the disc."""
    if d["pin"].radius is None:
        return float(d["pin"].clearance)
    dist = np.hypot(*(mesh.nodes[d["nodes"]] - np.asarray(d["point"], float)).T)
    return max(0.0, float(dist.min()) - float(d["radius"]))


def _turn(ut: np.ndarray, e: np.ndarray, dist: np.ndarray, w: np.ndarray) -> np.ndarray:
    """The part of the tangential motions ``ut`` that is a rotation of the edge about the pin's point.

    A rotation about the pin's point changes no node's distance from it, so no gap: its tangential
    motion (``theta |x_i - x_p|``, a lug swinging about its pin) slides nothing past the pin and is taken
    out before the term the linearised gap leaves out is read. Fitted by weighted least squares together
    with a translation across the normals (``ut ~ a . t_i + theta |x_i - x_p|``, ``t_i`` the unit tangent),
    which does slide the edge past the pin and stays in.
    """
    if ut.size < 3:
        return np.zeros_like(ut)
    A = np.column_stack([-e[:, 1], e[:, 0], dist])
    sw = np.sqrt(np.maximum(w, 0.0))
    coef, *_ = np.linalg.lstsq(A * sw[:, None], ut * sw, rcond=None)
    return coef[2] * dist


def advise(result) -> None:
    """Warn (``contact-large-motion``) where the linearised gap leaves out more than 1 % of the motion it reads."""
    from .errors import warn

    for name, st in (getattr(result, "contact_states", None) or {}).items():
        # the scale of the normal motions the gap decides: the motion read, the clearance, and the closure the
        # contact forces hold back (a shrink fit held closed reads no normal motion, ~1e-15, but closes by its
        # interference): the round-off of a motion that is not there never warns
        scale = max(st.motion, st.clearance, st.closure)
        if scale > 0 and st.neglected > 0.01 * scale:
            lu = st.units.get("length", "")
            warn(f"contact-large-motion: pin {name!r} (case {st.case!r}): the edge slides across the pin by up to "
                 f"{np.sqrt(2 * st.radius * st.neglected):.3g}{' ' + lu if lu else ''}, so the linearised gap leaves out "
                 f"{st.neglected:.3g}{' ' + lu if lu else ''}, {st.neglected / scale:.1%} of the motion it reads; the "
                 "contact arc and pressure are doubtful: the displacements are not small against the radius "
                 "(check the loads and units, or reduce the clearance)", "contact-large-motion", sink=result.warnings)


def has_contact(model) -> bool:
    """Whether a model has a pin with a contact tie."""
    return any(p.tie == "contact" for p in getattr(model, "pins", []) or [])


def refuse_superposition(results, what: str) -> None:
    """Refuse to superpose results with bearing contact (a :class:`~planar.core.errors.InputError`)."""
    from .errors import InputError

    for r in results:
        states = getattr(r, "contact_states", None)
        if states:
            pins = ", ".join(map(repr, states))
            raise InputError(
                f"{what}: load case {r.case!r} has bearing contact (pin {pins}); contact is not linear (the contact "
                "arc depends on the load), so load cases with contact do not superpose. Add a load case with the "
                "combined loads (the factored loads of each case, in one case) and solve it")

