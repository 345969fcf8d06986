"""Pins tied to edges, solved by elimination: the multipoint constraints of :mod:`planar.core.pins`.

Method (the classical treatment of multipoint constraints by transformation; R. D. Cook, D. S.
Malkus, M. E. Plesha and R. J. Witt, Concepts and Applications of Finite Element Analysis, 4th ed.,
2002, sec. 9.2, "transformation" method; from memory). Some unknowns of the tied edges, ``E``, are
eliminated: they are written through the unknowns that remain, ``N`` (the other free unknowns ``O``
of the mesh and the pin unknowns ``P``), and a constant::

    u_E = A u_N + g

* rigid tie: ``E`` is every unknown of the edge, ``u_E = G q`` with ``q`` the pin's three unknowns
  (two translations in the pin's basis and the rotation times the edge's radius of gyration
  ``rho``, so all three are lengths) and ``G`` the rigid motion of the edge nodes (master-slave);
  held components of ``q`` go into ``g``.
* spreading tie: the pin's motion is the weighted least-squares rigid fit ``q = C u_S`` of the edge
  nodes' motion (weights: tributary length times thickness), and its load is spread as nodal forces
  ``C^T f`` (so ``G^T C^T f = f``: the resultant and moment are exact, and no stiffness is added).
  A free pin needs no unknown at all. Each held component is one linear constraint ``h_k C u_S = v_k``
  on the edge unknowns: one dependent unknown per constraint is eliminated (chosen by a QR with column
  pivoting of the constraint rows, for the best-conditioned k x k block), written through the other
  edge unknowns. An edge cut by symmetry lines (a half or quarter model) is mirrored for the fit, so
  ``C`` is the whole hole's fit (:func:`_mirrored_fit`); a pin there must be held across the lines
  and in rotation (:func:`_symmetry_line`).

The mesh is assembled as usual with ``E`` among the prescribed unknowns, so the lower triangle of
``K_OO`` and the rows ``K_E`` come out of :meth:`planar.core.assembly.Assembly.system` untouched. The
reduced stiffness ``T^T K T`` only changes where ``A`` acts::

    K~ = K_NN + A^T K_EN + K_NE A + A^T K_EE A,      f~ = f_N + A^T (f_E - (K g~)_E)

which is a small sparse matrix over the edge unknowns, their neighbours and the pin unknowns (appended
after ``O``), added to the lower triangle once. ``K~`` is symmetric positive definite when the model is
held, one factorization serves every load case, and the cost is one pass over ``K_OO``'s entries plus
work proportional to the tied edges. The spreading tie of a held pin couples the edge's unknowns to each
other (a dense block of (2 n_edge)^2 / 2 entries: 2e5 for a hole of 300 nodes).

Afterwards ``u_E = A u_N + g``, and the force each pin exerts on the edge nodes is ``K u - f`` there
(for the spreading tie also at the other edge nodes, ``f_tie - A^T r_E``); the pin's force and moment
are their resultant, its reaction that minus its load.

Bearing contact (``tie="contact"``, compression only, with clearance) uses the same pieces: a contact
tie eliminates nothing (no row of ``A``); its pin's free translations are appended after ``O`` like a
rigid pin's, its load goes to them, and :mod:`planar.core.contact` writes each edge node's gap
``g_i = (|x_i - x_p| - r_p) + e_i . (u_i - u_p)`` along ``e_i`` (from the pin's point to the node) and
condenses onto those gaps through solves with the one factorization. The Tying of a solve is kept on
its assembly (``result.assembly.tying``).
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from scipy.linalg import qr

from .errors import InputError, SupportError, fmt_point
from .pins import pin_loads

__all__ = ["Tying", "PinState"]


class PinState(dict):
    """One pin's figures in one load case (a dict: name, tie, point, force, moment, load, reaction, motion)."""


def _weights(asm, edge: str, nodes: np.ndarray) -> np.ndarray:
    """Tributary length times thickness of each node of an edge (the integral of its shape function)."""
    eg = asm._edge_geometry(edge)
    seg, xy = eg.nodes, eg.coords
    length = np.hypot(*(xy[:, 1] - xy[:, 0]).T) if seg.shape[1] == 2 else None
    w = np.zeros(asm.mesh.n_nodes)
    if seg.shape[1] == 2:
        share = np.column_stack([length, length]) / 2
    else:  # quadratic edge: 1/6, 1/6, 2/3 of the length between its ends (Simpson's rule)
        chord = np.hypot(*(xy[:, 2] - xy[:, 0]).T) + np.hypot(*(xy[:, 1] - xy[:, 2]).T)
        share = chord[:, None] * np.array([1 / 6, 1 / 6, 2 / 3])
    np.add.at(w, seg.ravel(), (share * eg.thickness[:, None]).ravel())
    return w[nodes]


def _refuse_held_bearing(pin, mesh, nodes: np.ndarray, r: np.ndarray, on: np.ndarray) -> None:
    """Refuse a contact pin in a hole that a support holds across the pin's surface (a clamped hole).

    A held node cannot move against the pin, so where the pin bears on it the contact problem has no
    unique answer (it was reported as a part that would move freely). A symmetry line through the
    hole holds its end nodes along the pin's surface only, and is allowed.
    """
    dist = np.hypot(*r.T)
    e = np.divide(r, dist[:, None], out=np.zeros_like(r), where=dist[:, None] > 0)  # the pin's normal at each node
    bad = (on.reshape(-1, 2) & (np.abs(e) > 1e-6)).any(axis=1)
    if bad.any():
        k = int(nodes[np.argmax(bad)])
        raise SupportError(f"{pin.describe()}: node {k} at {fmt_point(mesh.nodes[k])} of its edge is held by a support "
                           f"({int(bad.sum())} such node(s)); a contact pin bears on the edge where it is free to "
                           "move against it: remove the support from the pin's edge (the pin holds the part where it "
                           "bears), or use tie='rigid' for an edge that moves with the pin")


def _pieces(mesh, edge: str) -> int:
    """The number of separate pieces (loops or open chains) of a named edge."""
    from scipy.sparse import coo_matrix
    from scipy.sparse.csgraph import connected_components

    seg = np.asarray(mesh.edge(edge))[:, :2]
    used, inv = np.unique(seg, return_inverse=True)
    inv = inv.reshape(seg.shape)
    graph = coo_matrix((np.ones(len(inv)), (inv[:, 0], inv[:, 1])), shape=(used.size, used.size))
    return int(connected_components(graph, directed=False)[0])


def _contact_pin(d: dict, asm, model, pin, r: np.ndarray, p_off: int) -> None:
    """A contact pin's data: no eliminated unknown, its free translations, the disc's radius, the nodes' weights."""
    held = pin.held
    d["E"] = np.zeros(0, np.int64)
    d["g"] = np.zeros(0)
    d["free_comp"] = np.flatnonzero(~held[:2])
    d["p_off"] = p_off
    dist = np.hypot(*r.T)
    if np.any(dist <= 0):
        raise InputError(f"{pin.describe()}: a node of its edge is at the pin's point; a contact pin needs a hole or an "
                         "edge around it")
    if pin.radius is not None:
        rp = pin.radius
    else:
        R = float(dist.mean())
        if np.ptp(dist) > 1e-3 * R and _pieces(asm.mesh, pin.edge) > 1:
            raise InputError(f"{pin.describe()}: its edge {pin.edge!r} is {_pieces(asm.mesh, pin.edge)} separate pieces "
                             "(several holes under one name?); a contact pin bears on one hole: name each hole apart "
                             "(e.g. Circle(..., name='hole_1')) and give each its pin")
        if np.ptp(dist) > 1e-3 * R:
            raise InputError(f"{pin.describe()}: its edge is not a circle about the pin's point {fmt_point(d['point'])} "
                             f"(distances {dist.min():.4g} to {dist.max():.4g}); give the pin's radius= (and at=) for a "
                             "pin bearing on an edge that is not its hole")
        rp = R - pin.clearance
        if not rp > 0:
            raise InputError(f"{pin.describe()}: the clearance {pin.clearance:g} is not smaller than the hole's radius "
                             f"{R:.4g}; give the radial clearance (hole radius minus pin radius)")
    pen = rp - dist
    if pen.max() > 1e-6 * rp:
        k = int(d["nodes"][np.argmax(pen)])
        raise InputError(f"{pin.describe()}: the pin (radius {rp:.6g}) overlaps its edge at node {k} "
                         f"{fmt_point(asm.mesh.nodes[k])} by {pen.max():.3g}; a contact pin must start clear of (or "
                         "touching) the edge: move it (at=) or make it smaller")
    for case in model.cases:
        f = pin_loads(model, case).get(pin.name)
        if f is not None and f[2] != 0:
            raise InputError(f"{pin.describe()}: load case {case!r} puts a moment {f[2]:g} on it, but a frictionless "
                             "contact pin carries no moment (its forces pass through its centre); use tie='rigid' "
                             "to apply a moment through a pin")
    d["radius"] = float(rp)
    d["w"] = _weights(asm, pin.edge, d["nodes"])


def _symmetry_line(model, mesh, pin, nodes: np.ndarray) -> list:
    """Refuse a pin whose edge a symmetry line cuts (a half or quarter model) unless it is held as symmetry holds it.

    By symmetry the pin moves only along the line and does not turn: held across the line (``hold=``
    that direction, or both) and, for a rigid or spreading tie, ``rotation="held"``. Left free, a
    spreading tie puts the whole pin's moment balance on the half edge (wrong stresses, silently) and
    a contact pin carries no force across the line.
    """
    from .supports import Roller, Symmetry

    lines = []
    for s in getattr(model, "supports", ()):
        if not isinstance(s, Roller) or not (isinstance(s, Symmetry) or not s.is_idealised(mesh)):
            continue
        try:
            ids, dirs, _ = s.rows(mesh)
        except Exception:  # noqa: BLE001 - a support that cannot name its rows is checked elsewhere
            continue
        if ids.size == 0 or not np.isin(ids, nodes).any():
            continue
        n = np.asarray(dirs[0], dtype=float)
        lines.append((mesh.nodes[ids[0]].astype(float), n, s))
        across = bool(pin.held[0] and pin.held[1]) or bool(pin.held[0] and abs(abs(float(pin.basis[:, 0] @ n)) - 1.0) < 1e-9)
        turn = pin.tie == "contact" or bool(pin.held[2])
        if across and turn:
            continue
        word = "x" if abs(abs(n[0]) - 1.0) < 1e-9 else "y" if abs(abs(n[1]) - 1.0) < 1e-9 else f"({n[0]:.4g}, {n[1]:.4g})"
        fix = f"hold={word!r} (or 'both')" + ("" if pin.tie == "contact" else ", rotation='held'")
        raise SupportError(f"{pin.describe()}: its edge is cut by the symmetry line {s!r}, so by symmetry the pin moves "
                           "only along that line" + ("" if pin.tie == "contact" else " and does not turn")
                           + f"; hold the pin so: {fix} (the pin then carries the force across the line that the other "
                           "half would)")
    return lines


def _mirrored_fit(pin, lines, point: np.ndarray, xy: np.ndarray, w: np.ndarray, rho: float) -> np.ndarray:
    """The spreading tie's fit ``C`` (3, 2 ns) over the whole hole that symmetry lines through the pin cut down.

    The edge is mirrored across each line (two lines at right angles give four copies), the weighted
    rigid fit is taken over the whole edge, and each copy's displacements are the mirror images of the
    modelled ones (``u' = R u``, ``R = I - 2 n n^T``): ``C = sum_k C_k R_k``. A spreading pin in a half
    or quarter model then moves and spreads its load as the whole pin would; its components across the
    lines and its rotation vanish by symmetry (their rows of ``C`` are zero).
    """
    if len(lines) > 2 or (len(lines) == 2 and abs(float(lines[0][1] @ lines[1][1])) > 1e-9):
        raise SupportError(f"{pin.describe()}: its edge is cut by more than two symmetry lines, or by two that are not "
                           "at right angles; model at least a quarter of the hole")
    for x0, n, s in lines:
        if abs(float((point - x0) @ n)) > 1e-6 * max(rho, 1e-300):
            raise SupportError(f"{pin.describe()}: its point {fmt_point(point)} is off the symmetry line {s!r} that cuts "
                               "its edge; a hole cut by a symmetry line is centred on it (give at= on the line)")
    copies = [(np.eye(2), np.zeros(2))]
    for x0, n, _ in lines:
        R = np.eye(2) - 2 * np.outer(n, n)
        copies += [(R @ Rk, R @ (tk - x0) + x0) for Rk, tk in copies]  # x' = R (Rk x + tk - x0) + x0
    r_all, blocks = [], []
    for Rk, tk in copies:
        r_all.append((xy @ Rk.T + tk) - point)
        blocks.append(Rk)
    r = np.vstack(r_all)
    G = np.zeros((2 * r.shape[0], 3))
    G[0::2, 0] = 1.0
    G[1::2, 1] = 1.0
    G[0::2, 2] = -r[:, 1] / rho
    G[1::2, 2] = r[:, 0] / rho
    ww = np.repeat(np.tile(w, len(copies)), 2)
    Cf = np.linalg.solve(G.T @ (ww[:, None] * G), (G * ww[:, None]).T)
    ns = xy.shape[0]
    C = np.zeros((3, 2 * ns))
    for k, Rk in enumerate(blocks):
        Ck = Cf[:, 2 * ns * k: 2 * ns * (k + 1)].reshape(3, ns, 2)
        C += np.einsum("aib,bc->aic", Ck, Rk).reshape(3, 2 * ns)  # u'_i = Rk u_i
    C[np.abs(C) < 1e-12 * np.abs(Cf).max()] = 0.0  # what symmetry cancels, to round-off
    return C


def held_rows(d: dict, xc: np.ndarray, L: float) -> np.ndarray:
    """A tied pin's held components as rows on a rigid body's three motions (k, 3), k = 0 to 3: a held
    translation along ``d`` at the pin's point, a held rotation (as ``_linkage._support_matrix`` scales them)."""
    from ._linkage import _support_matrix

    held = d["pin"].held
    dirs = d["Q"][:2, :2].T[held[:2]]
    rows = [_support_matrix(np.tile(d["point"], (dirs.shape[0], 1)), dirs, xc, L)] if dirs.shape[0] else []
    if held[2]:
        rows.append(np.array([[0.0, 0.0, 1.0]]))
    return np.vstack(rows) if rows else np.zeros((0, 3))


class Tying:
    """The pins of a model tied to the mesh: which unknowns are eliminated, and how.

    Parameters
    ----------
    asm : Assembly
    model : Model
    cons : Constrained
        The supports as prescribed unknowns (nodes of a tied edge must not be held by a support).
    """

    def __init__(self, asm, model, cons):
        mesh = asm.mesh
        self.mesh = mesh
        self.pins = list(model.pins)
        self.model = model
        for case in model.cases:  # a load on a pin that does not exist: refused before any work
            pin_loads(model, case)
        seen = np.zeros(mesh.n_nodes, bool)
        self.data = []
        e_off, p_off = 0, 0
        for pin in self.pins:
            nodes = np.unique(mesh.edge(pin.edge))
            if np.any(seen[nodes]):
                raise SupportError(f"{pin.describe()} shares nodes with another pin's edge; tie each node to one pin")
            seen[nodes] = True
            if cons.rotation is not None and np.intersect1d(nodes, cons.rotation.nodes).size:
                k = int(np.intersect1d(nodes, cons.rotation.nodes)[0])
                raise SupportError(f"{pin.describe()}: node {k} at {fmt_point(mesh.nodes[k])} of its edge is held along "
                                   "an inclined direction by a support; hold the pin instead (hold=, rotation=)")
            xp = pin.point(mesh)
            r = mesh.nodes[nodes] - xp
            rho = float(np.sqrt((r ** 2).sum(axis=1).mean()))
            if not rho > 0:
                raise InputError(f"{pin.describe()}: its edge is a single point at the pin; tie it to an edge")
            ns = nodes.size
            G = np.zeros((2 * ns, 3))
            G[0::2, 0] = 1.0
            G[1::2, 1] = 1.0
            G[0::2, 2] = -r[:, 1] / rho
            G[1::2, 2] = r[:, 0] / rho
            Q = np.eye(3)
            Q[:2, :2] = pin.basis
            values = pin.values * np.array([1.0, 1.0, rho])  # in the pin's basis, the rotation times rho
            if np.unique(r.round(12), axis=0).shape[0] < 2 or np.linalg.matrix_rank(G, tol=1e-9) < 3:
                raise SupportError(f"{pin.describe()}: its edge has too few distinct nodes to carry a moment; "
                                   "tie the pin to a longer edge")
            dofs = np.column_stack([2 * nodes, 2 * nodes + 1]).ravel()
            w = np.repeat(_weights(asm, pin.edge, nodes), 2)
            C = np.linalg.solve(G.T @ (w[:, None] * G), (G * w[:, None]).T)  # (3, 2 ns): the weighted rigid fit
            d = dict(pin=pin, nodes=nodes, point=xp, rho=rho, G=G, Q=Q, C=C, dofs=dofs, values=values)
            held = pin.held
            lines = _symmetry_line(model, mesh, pin, nodes)
            if lines and pin.tie == "spreading":  # the fit over the whole hole, from the modelled part by symmetry
                C = _mirrored_fit(pin, lines, xp, mesh.nodes[nodes], w[0::2], rho)
                d["C"] = C
            on = np.isin(dofs, cons.dofs)  # edge unknowns a support prescribes too
            pval = np.zeros(dofs.size)
            if on.any():
                pval[on] = cons.values[np.searchsorted(cons.dofs, dofs[on])]
            if pin.tie == "contact":  # no eliminated unknown: the pin's free translations, and the gaps
                if pin.radius is None:  # a hole round the pin: any of its nodes may bear
                    _refuse_held_bearing(pin, mesh, nodes, r, on)
                _contact_pin(d, asm, model, pin, r, p_off)
                p_off += d["free_comp"].size
            elif pin.tie == "rigid":
                d["E"] = dofs
                d["free_comp"] = np.flatnonzero(~held)
                d["p_off"] = p_off
                d["g"] = (G @ Q)[:, held] @ values[held]
                p_off += d["free_comp"].size
                # a support row on the edge is allowed where the held pin implies it (a symmetry line through
                # the hole); the pin then carries its reaction
                GQ = G @ Q
                scale = max(1.0, float(np.abs(values).max()), float(np.abs(pval).max()))
                bad = on & ((np.abs(GQ[:, ~held]).max(axis=1, initial=0.0) > 1e-9)
                            | (np.abs(d["g"] - pval) > 1e-9 * scale))
                if bad.any():
                    k = int(dofs[np.argmax(bad)] // 2)
                    raise SupportError(f"{pin.describe()}: node {k} at {fmt_point(mesh.nodes[k])} of its edge is held "
                                       "by a support in a way the pin does not hold it; a rigidly tied edge moves with "
                                       "its pin: hold the pin instead (hold=, rotation=), or remove that support")
            else:
                H = (Q.T @ C)[held]  # (k, 2 ns) held rows
                hv = values[held]
                keep = np.abs(H).max(axis=1, initial=0.0) > 0  # rows a symmetry line makes zero hold by themselves
                if np.any(np.abs(hv[~keep]) > 0):
                    raise SupportError(f"{pin.describe()}: move= prescribes a motion across a symmetry line that cuts "
                                       "its edge (or a rotation), which symmetry forbids; prescribe only the motion "
                                       "along the line")
                H, hv = H[keep], hv[keep]
                if H.shape[0]:
                    # the dependent unknowns are chosen among the edge unknowns no support prescribes
                    cand = np.flatnonzero(~on)
                    _, _, piv = qr(H[:, cand], pivoting=True, mode="economic")
                    D = np.sort(cand[piv[: H.shape[0]]])
                    R = np.setdiff1d(cand, D)
                    MD = H[:, D]
                    if np.linalg.matrix_rank(MD, tol=1e-9 * max(np.abs(H).max(), 1e-300)) < H.shape[0]:
                        raise SupportError(f"{pin.describe()}: the supports on its edge leave too few of its unknowns "
                                           "to hold the pin; remove them or use tie='rigid'")
                    d["E"], d["R"] = dofs[D], dofs[R]
                    d["AR"] = -np.linalg.solve(MD, H[:, R])  # u_D = AR u_R + g
                    d["g"] = np.linalg.solve(MD, hv - H[:, on] @ pval[on])
                else:
                    R = dofs[~on]
                    d["E"], d["R"], d["AR"], d["g"] = np.zeros(0, np.int64), R, np.zeros((0, R.size)), np.zeros(0)
            d["e_off"] = e_off
            e_off += d["E"].size
            self.data.append(d)
        self.n_pin = p_off
        asm.tying = self  # kept with the results (result.assembly.tying)
        self.E = np.concatenate([d["E"] for d in self.data]).astype(np.int64)
        self.g = np.concatenate([d["g"] for d in self.data])

    def edge_frame(self, name: str) -> dict:
        """A pin's edge as a contact would read it: nodes, point, rho, G (2 ns, 3) and unit normals (ns, 2).

        ``G`` maps the pin's (ux, uy, rho theta) to the rigid motion of the edge nodes; the normals point
        from the pin's point to each node (radially outward for a hole).
        """
        for d in self.data:
            if d["pin"].name == name:
                r = self.mesh.nodes[d["nodes"]] - d["point"]
                return {"nodes": d["nodes"], "point": d["point"], "rho": d["rho"], "G": d["G"],
                        "normals": r / np.hypot(*r.T)[:, None]}
        from .errors import unknown_name

        raise unknown_name("pin", name, [d["pin"].name for d in self.data])

    # ------------------------------------------------------------------ before the solve
    def mark(self, pres: np.ndarray, up: np.ndarray) -> None:
        """Mark the eliminated unknowns as prescribed for the assembly, their constant part in ``up``."""
        pres[self.E] = True
        up[self.E] = self.g

    def tie_forces(self, cases: list[str]) -> np.ndarray:
        """Nodal forces (2n, m) of the spreading ties' pin loads, ``C^T f``."""
        out = np.zeros((2 * self.mesh.n_nodes, len(cases)))
        for j, c in enumerate(cases):
            loads = pin_loads(self.model, c)
            for d in self.data:
                f = loads.get(d["pin"].name)
                if f is not None and d["pin"].tie == "spreading":
                    out[d["dofs"], j] += d["C"].T @ (f * np.array([1.0, 1.0, 1.0 / d["rho"]]))
        return out

    def reduce(self, system, free: np.ndarray, pdofs: np.ndarray, up: np.ndarray, Fl: np.ndarray,
               rhs: np.ndarray, cases: list[str]):
        """The reduced system with the ties eliminated: (system, right-hand sides, nodal forces with the ties')."""
        from .assembly import ReducedSystem

        ndof = 2 * self.mesh.n_nodes
        nO = free.size
        n_new = nO + self.n_pin
        fidx = np.full(ndof, -1, dtype=np.int64)
        fidx[free] = np.arange(nO)
        pidx = np.full(ndof, -1, dtype=np.int64)
        pidx[pdofs] = np.arange(pdofs.size)
        rows, cols, vals = [], [], []
        for d in self.data:
            if d["pin"].tie == "rigid":
                GQ = (d["G"] @ d["Q"])[:, d["free_comp"]]
                k = d["free_comp"].size
                rows.append(np.repeat(d["e_off"] + np.arange(d["E"].size), k))
                cols.append(np.tile(nO + d["p_off"] + np.arange(k), d["E"].size))
                vals.append(GQ.ravel())
            elif d["E"].size:
                AR = d["AR"]
                rows.append(np.repeat(d["e_off"] + np.arange(d["E"].size), AR.shape[1]))
                cols.append(np.tile(fidx[d["R"]], d["E"].size))
                vals.append(AR.ravel())
        nE = self.E.size
        cat = lambda x, t: np.concatenate(x).astype(t) if x else np.zeros(0, t)  # noqa: E731
        A = sp.csr_matrix((cat(vals, float), (cat(rows, np.int64), cat(cols, np.int64))), shape=(nE, n_new))
        KE = system.prescribed_rows[pidx[self.E]].tocoo()
        inO = fidx[KE.col] >= 0
        KEN = sp.csr_matrix((KE.data[inO], (KE.row[inO], fidx[KE.col[inO]])), shape=(nE, n_new))
        eidx = np.full(ndof, -1, dtype=np.int64)
        eidx[self.E] = np.arange(nE)
        inE = eidx[KE.col] >= 0
        KEE = sp.csr_matrix((KE.data[inE], (KE.row[inE], eidx[KE.col[inE]])), shape=(nE, nE))
        M1 = (A.T @ KEN).tocsr()
        dK = M1 + M1.T + A.T @ (KEE @ A)
        L = system.lower
        indptr = np.r_[L.indptr, np.full(self.n_pin, L.indptr[-1], dtype=L.indptr.dtype)]
        Lp = sp.csc_matrix((L.data, L.indices, indptr), shape=(n_new, n_new))
        Lnew = (Lp + sp.tril(dK).tocsc()).tocsc()
        Lnew.sum_duplicates()
        Lnew.sort_indices()
        self.A, self.nO, self.KE = A, nO, system.prescribed_rows[pidx[self.E]]
        m = len(cases)
        self.f_tie = self.tie_forces(cases)
        Fl = Fl + self.f_tie
        KgE = self.KE @ up  # (K g~)_E: the supports' values and the constant parts of the ties
        out = np.zeros((n_new, m))
        out[:nO] = rhs.reshape(nO, m) + self.f_tie[free]
        out += A.T @ (Fl[self.E] - KgE[:, None])
        for j, c in enumerate(cases):
            loads = pin_loads(self.model, c)
            for d in self.data:
                f = loads.get(d["pin"].name)
                if f is not None and d["pin"].tie in ("rigid", "contact"):
                    fq = d["Q"].T @ (f * np.array([1.0, 1.0, 1.0 / d["rho"]]))
                    out[nO + d["p_off"] + np.arange(d["free_comp"].size), j] += fq[d["free_comp"]]
        return ReducedSystem(Lnew, system.prescribed_rows), out, Fl

    def rigid_modes(self, modes: np.ndarray, xy: np.ndarray) -> np.ndarray:
        """The rigid modes over the free unknowns (as :func:`planar.core.static._rigid_modes`), pins appended."""
        c = xy.mean(axis=0)
        Lm = max(np.ptp(xy[:, 0]), np.ptp(xy[:, 1]), 1e-300)
        extra = []
        for d in self.data:
            if d["pin"].tie == "spreading":
                continue
            p = d["point"]
            B = np.array([[1.0, 0.0, -(p[1] - c[1]) / Lm], [0.0, 1.0, (p[0] - c[0]) / Lm], [0.0, 0.0, d["rho"] / Lm]])
            B[:2] = d["Q"][:2, :2].T @ B[:2]
            extra.append(B[d["free_comp"]])
        return np.vstack([modes] + extra) if extra else modes

    def diagnosis_free(self, free: np.ndarray) -> np.ndarray:
        """A global unknown for each reduced unknown, for locating a soft mode: a pin's at its first edge node."""
        extra = []
        for d in self.data:
            if d["pin"].tie != "spreading":
                extra.append(d["dofs"][np.minimum(d["free_comp"], 1)])
        return np.concatenate([free] + extra) if extra else free

    # ------------------------------------------------------------------ after the solve
    def expand(self, ul: np.ndarray, sol: np.ndarray) -> None:
        """Fill in the eliminated unknowns: ``u_E = A u_N + g``."""
        ul[self.E] = self.A @ sol.reshape(self.A.shape[1], -1) + self.g[:, None]

    def forces(self, Rl: np.ndarray, free: np.ndarray) -> np.ndarray:
        """The forces the pins exert on their edge nodes (2n, m); their rows taken out of ``Rl``."""
        rE = Rl[self.E].copy()
        Rl[self.E] = 0.0
        P = self.f_tie.copy()  # the spread pin loads, then the constraint forces
        P[self.E] += rE
        P[free] -= self.A[:, : self.nO].T @ rE
        return P

    def states(self, U: np.ndarray, P: np.ndarray, cases: list[str]) -> list[list[PinState]]:
        """Each pin's force, moment, load, reaction and motion, per load case."""
        out = []
        for j, c in enumerate(cases):
            loads = pin_loads(self.model, c)
            row = []
            for d in self.data:
                pin, nodes = d["pin"], d["nodes"]
                f = P[d["dofs"], j].reshape(-1, 2)
                r = self.mesh.nodes[nodes] - d["point"]
                force = f.sum(axis=0)
                moment = float(r[:, 0] @ f[:, 1] - r[:, 1] @ f[:, 0])
                load = loads.get(pin.name, np.zeros(3))
                q = d["C"] @ U[d["dofs"], j] if "motion" not in d else d["motion"][:, j]
                row.append(PinState(name=pin.name, tie=pin.tie, edge=pin.edge, point=tuple(map(float, d["point"])),
                                    force=(float(force[0]), float(force[1])), moment=moment,
                                    load=tuple(map(float, load)),
                                    reaction=(float(force[0] - load[0]), float(force[1] - load[1]),
                                              moment - float(load[2])),
                                    motion=(float(q[0]), float(q[1]), float(q[2] / d["rho"])),
                                    held=tuple(bool(h) for h in pin.held), nodes=nodes))
            out.append(row)
        return out

    # ------------------------------------------------------------------ kinematics
    def check_motions(self, mesh, cons, *, sink=None) -> None:
        """Refuse a model that the supports and held pins leave free to move (a :class:`SupportError`).

        One piece of mesh (the common case): the part is one rigid body, each support row and each
        held pin component a row on its three motions (a held translation along ``d`` at the pin's
        point, a held rotation), and a null space is refused with the free motion named. With several
        pieces, the pins are given to :func:`planar.core.kinematics.rigid_body_check` as the node rows
        they are equivalent to where that is exact (held translations with held rotation: the edge
        nodes held along them; both translations held with free rotation: the edge nodes held
        radially), which keeps that check's hinge warnings; a pin whose hold cannot be written so, or
        whose edge spans pieces, makes the pieces and the pins one linkage (:meth:`_linkage_check`).
        """
        from .kinematics import cell_pieces, rigid_body_check
        from ._linkage import _describe_free, _null, _support_matrix

        pieces = cell_pieces(mesh)
        used = mesh.used_nodes()
        rows = cons.rows
        if pieces.count == 1:
            xy = mesh.nodes[used]
            xc = xy.mean(axis=0)
            L = max(float(np.ptp(xy, axis=0).max()), 1e-300)
            on = used[rows.node]
            parts = [_support_matrix(mesh.nodes[rows.node[on]], rows.direction[on], xc, L)]
            parts += [held_rows(d, xc, L) for d in self.data]
            free = _null(np.vstack(parts), 3)
            if free.shape[0]:
                raise SupportError("the model can still move as a rigid body, so it has no unique answer: "
                                   + _describe_free(free, xc, L, False, xc)
                                   + " (the supports and the held components of the pins "
                                   + ", ".join(repr(p.name) for p in self.pins) + " counted)")
            return
        from .kinematics import _piece_nodes

        pp, nn = _piece_nodes(mesh, pieces)
        extra_n, extra_d, exact = [], [], True
        for d in self.data:
            held, nodes = d["pin"].held, d["nodes"]
            if np.unique(pp[np.isin(nn, nodes)]).size > 1:
                exact = False  # the pin joins pieces: not a node row
                continue
            if not held.any():
                continue
            if held[2] and not held[0]:
                exact = False  # the rotation alone is held: no node rows say that
            elif held[2]:
                for v in d["Q"][:2, :2].T[held[:2]]:
                    extra_n.append(nodes); extra_d.append(np.tile(v, (nodes.size, 1)))
            elif held[0] and held[1]:
                r = mesh.nodes[nodes] - d["point"]
                extra_n.append(nodes); extra_d.append(r / np.hypot(*r.T)[:, None])
            else:
                exact = False
        if not exact:  # the pins join pieces or hold what node rows cannot say: the linkage with the pins
            self._linkage_check(mesh, cons, pieces, pp, nn)
            return
        from types import SimpleNamespace

        from .supports import Constraints

        aug = SimpleNamespace(rows=Constraints(np.concatenate([rows.node] + extra_n),
                                               np.vstack([rows.direction] + extra_d),
                                               np.zeros(rows.node.size + sum(e.size for e in extra_n)),
                                               np.zeros(rows.node.size + sum(e.size for e in extra_n), np.int64)))
        rigid_body_check(mesh, aug, sink=sink)

    def _linkage_check(self, mesh, cons, pieces, pp, nn) -> None:
        """Free motions of the pieces and the pins together (three motions each), by a dense SVD.

        Rows: the support rows on every body at their node; two per node shared by two bodies (a
        hinge); two per edge node of a pin and each body at that node (the tie: the body and the pin
        move alike there); the pins' held components. Each group of rows is compressed by a QR to its
        rank first. Above ``MAX_DENSE_BODIES`` bodies the check is left to the solve.
        """
        from .kinematics import MAX_DENSE_BODIES, _chain_pairs, _merge_rigid
        from ._linkage import _null, _split, _support_matrix

        body, nb = _merge_rigid(pp, nn, pieces.count)
        npin = len(self.data)
        if nb > MAX_DENSE_BODIES:
            return
        used = mesh.used_nodes()
        xy = mesh.nodes[used]
        xc = xy.mean(axis=0)
        L = max(float(np.ptp(xy, axis=0).max()), 1e-300)
        ncol = 3 * (nb + npin)
        order = np.argsort(nn, kind="stable")
        nn_s, body_s = nn[order], body[order]
        ex = np.eye(2)
        groups = []

        def add(rows, blocks):
            if rows.shape[0]:
                r = np.linalg.qr(rows, mode="r") if rows.shape[0] > rows.shape[1] else rows
                groups.append((r, blocks))

        rows = cons.rows
        lo, hi = np.searchsorted(nn_s, rows.node), np.searchsorted(nn_s, rows.node, side="right")
        cnt = hi - lo  # each support row acts on every body at its node
        ri = np.repeat(np.arange(rows.node.size), cnt)
        ki = np.repeat(lo - np.r_[0, np.cumsum(cnt)[:-1]], cnt) + np.arange(int(cnt.sum()))
        rb = body_s[ki]
        for b, idx in enumerate(_split(rb, nb)):
            if idx.size:
                sel = ri[idx]
                add(_support_matrix(mesh.nodes[rows.node[sel]], rows.direction[sel], xc, L), [b])
        hn, b1, b2 = _chain_pairs(body, nn, nb)  # hinges: two bodies move alike at a shared node
        for k in range(hn.size):
            r1 = _support_matrix(np.tile(mesh.nodes[hn[k]], (2, 1)), ex, xc, L)
            add(np.hstack([r1, -r1]), [int(b1[k]), int(b2[k])])
        for j, d in enumerate(self.data):  # ties, and the pins' held components
            pb = nb + j
            inc = np.isin(nn_s, d["nodes"])
            for b in np.unique(body_s[inc]):
                nodes = nn_s[inc & (body_s == b)]
                r = _support_matrix(np.repeat(mesh.nodes[nodes], 2, axis=0), np.tile(ex, (nodes.size, 1)), xc, L)
                add(np.hstack([r, -r]), [int(b), pb])
            add(held_rows(d, xc, L), [pb])
        A = []
        for r, blocks in groups:
            full = np.zeros((r.shape[0], ncol))
            for i, b in enumerate(blocks):
                full[:, 3 * b:3 * b + 3] = r[:, 3 * i:3 * i + 3]
            A.append(full)
        N = _null(np.vstack(A) if A else np.zeros((0, ncol)), ncol)
        if N.shape[0] == 0:
            return
        motion = np.abs(N).reshape(N.shape[0], -1, 3).max(axis=(0, 2))
        moving = np.flatnonzero(motion > 1e-6 * motion.max())
        from ._linkage import _body_stats

        stats = _body_stats(mesh.nodes, body, nn, nb)
        parts = [f"the piece near {fmt_point(stats.centre[b])}" for b in moving if b < nb][:5]
        pins = [repr(self.data[b - nb]["pin"].name) for b in moving if b >= nb]
        raise SupportError(
            f"the model can still move, so it has no unique answer: {N.shape[0]} motion(s) are left free by the "
            f"supports and pins; " + ", ".join(parts + ([f"the pin(s) {', '.join(pins)}"] if pins else []))
            + " move without straining: hold them with supports, or hold the pins (hold=, rotation=)")
