"""The solve of a fastened joint: every layer's system in one sparse SPD matrix, the fasteners as springs.

Each layer is prepared as :func:`planar.core.static.solve` prepares a model (element checks,
supports, its own pins and the fasteners' hole pins tied by elimination, assembly of the lower
triangle of its reduced stiffness), and the layers' reduced systems are placed side by side. A
fastener end's motion is a linear function of its layer's full unknowns, ``q = S u`` (the translation
rows of the spreading fit ``C`` of :mod:`planar.core._tying` at a modelled hole, which for a rigid tie
is the pin's own motion since ``C G = I``; the weighted mean over the patch elsewhere), and the full
unknowns are ``u = T v + u0`` through the layer's reduced unknowns ``v`` (identity on the free
unknowns, the ties' ``A`` on the eliminated ones, ``u0`` the prescribed values). Between the ends
``a`` and ``b`` of each adjacent pair of joined layers acts a spring of stiffness ``k = 1 / C``::

    s = q_a - q_b = B v + c,    B = S_a T_a - S_b T_b,    c = S_a u0_a - S_b u0_b

    K += B^T diag(k) B,         f -= B^T diag(k) c

so the springs add couplings (for a rigid tie, a 4 x 4 block between the two pins' unknowns) and no
solver of their own: one factorization serves every load case. The spring's force ``k s`` is the
fastener's shear load; its ends' forces are spread on the layers by ``S^T`` and kept with the pins'
forces (``Result.pin_forces``), so each layer's Result balances on its own.

A flexibility formula reads each joined layer's thickness and Young's modulus at the fastener. An
orthotropic layer's modulus is taken along the layer's load direction (:func:`_load_axes`: the
principal direction of its own loads, else of the joint's), with its fibre angle
(:func:`_modulus_along`); the fastener's own load direction would be better but is known only after
the solve the springs are part of. The fastener table states the modulus, its direction and basis
(``FastenerTable.formula_moduli``).
"""
from __future__ import annotations

import copy
from types import SimpleNamespace

import numpy as np
import scipy.sparse as sp

from ._circle import fit_circle
from .assembly import Assembly
from .errors import InputError, SolverError, SupportError, unknown_name, warn
from .kinematics import pending_warnings, zero_energy_check
from .pins import Pin, check_new_pin
from .result import Result
from .supports import note_snapped
from .timing import Timer
from ._tying import Tying
from . import diagnose, solvers
from ._conditioning import matrix_figures, matvec
from ._multigrid import Couplings
from ._joint_checks import STIFF_SPRING, _motion_check, _stiff_springs  # noqa: F401

__all__ = ["solve_joint"]

#: backward error above which the joint's answer is flagged (as :data:`planar.core.diagnose.WARN`)
WARN = 1e-5


def _case_names(joint, cases) -> list[str]:
    from .static import case_list

    known = joint.cases
    if not known:
        raise unknown_name("load case", "(none)", [], "add a load to a layer first with model.add_load(...)")
    names = case_list(cases, list(known))
    for c in names:
        if c not in known:
            raise unknown_name("load case", c, known)
    return names


def _modulus_along(mat, direction) -> float:
    """A material's Young's modulus along ``direction`` (a unit vector, or None) in plane stress.

    ``1 / (b^T S b)`` with ``S`` the compliance in global axes (the inverse of ``mat.D``, the fibre angle
    in it) and ``b = (nx^2, ny^2, nx ny)``: the stiffness of a strip cut along the direction and pulled
    along it (common practice). An isotropic material's ``E`` whatever the direction; with no direction
    the mean of ``E1`` and ``E2``.
    """
    e = getattr(mat, "E", None)
    if e is not None:
        return float(e)
    if direction is not None and hasattr(mat, "D"):
        nx, ny = float(direction[0]), float(direction[1])
        b = np.array([nx * nx, ny * ny, nx * ny])
        return float(1.0 / (b @ np.linalg.solve(np.asarray(mat.D("plane stress"), dtype=float), b)))
    return 0.5 * (float(getattr(mat, "E1", 0.0)) + float(getattr(mat, "E2", 0.0)))


def _load_axes(layers, cases) -> None:
    """Each layer's load direction, for a flexibility formula's plate modulus (an orthotropic layer's).

    Sets ``L.load_axis`` (a unit vector, or None) and, on a layer with an orthotropic material,
    ``L.formula_modulus`` (what the output states: the moduli used, the direction and its basis). The
    fastener's own load direction is known only after the solve, which needs the springs, so the
    layer's load direction is read: the principal direction of the layer's own loads over the cases
    (the axis of the largest eigenvalue of ``sum f f^T`` over its loaded nodes); a layer with no loads
    of its own (a strap, a doubler) takes that of all the layers' loads; with none (a temperature
    change only), or loads as strong along every direction, there is no direction and an orthotropic
    modulus is the mean of ``E1`` and ``E2``.
    """
    from ._joint_tables import _axis, external_loads

    def axis(f):
        if not np.any(f):
            return None
        w = np.linalg.eigvalsh(f.T @ f)
        return None if w[1] - w[0] <= 1e-6 * w[1] else _axis(f)

    own = {L.name: external_loads(L.asm, cases).reshape(-1, 2, len(cases)).transpose(0, 2, 1).reshape(-1, 2)
           for L in layers}
    every = axis(np.vstack(list(own.values())))
    for L in layers:
        a = axis(own[L.name])
        L.load_axis = a if a is not None else every
        basis = ("the direction of the layer's own loads" if a is not None else
                 "the direction of the joint's loads (the layer has none of its own)" if every is not None else
                 "no load direction: the mean of E1 and E2")
        ortho = [b.material for b in L.asm.blocks if getattr(b.material, "E", None) is None]
        if ortho:
            L.formula_modulus = dict(moduli=sorted({_modulus_along(m, L.load_axis) for m in ortho}), basis=basis,
                                     direction=None if L.load_axis is None else [float(x) for x in L.load_axis])


def _node_weights(asm, nodes: np.ndarray | None = None, direction: np.ndarray | None = None, *,
                  cells: list | None = None) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each node's share of the area times thickness, its thickness and Young's modulus (largest of its cells;
    an orthotropic material's along ``direction``, :func:`_modulus_along`).

    With ``nodes``, only the cells that touch them are visited (the figures at those nodes are the same,
    summed over the same cells in the same order; elsewhere they are zero): a fastener's patch reads a few
    nodes of a layer of a million. ``cells`` (one sorted index array per block of ``asm.blocks``) gives
    those cells already found (:meth:`_Layer.cells_touching`), so the blocks are not searched again.
    """
    mesh = asm.mesh
    w = np.zeros(mesh.n_nodes)
    t = np.zeros(mesh.n_nodes)
    E = np.zeros(mesh.n_nodes)
    wanted = None
    if nodes is not None and cells is None:
        wanted = np.zeros(mesh.n_nodes, bool)
        wanted[np.asarray(nodes, dtype=np.int64)] = True
    for i, b in enumerate(asm.blocks):
        conn = b.conn
        if cells is not None:
            conn = conn[cells[i]]
        elif wanted is not None:
            conn = conn[wanted[conn].any(axis=1)]
        nv = 3 if b.etype.cell == "triangle" else 4
        xy = mesh.nodes[conn[:, :nv]]
        x, y = xy[..., 0], xy[..., 1]
        area = 0.5 * np.abs((x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y).sum(axis=1))
        k = conn.shape[1]
        w += np.bincount(conn.ravel(), np.repeat(area * b.thickness / k, k), minlength=mesh.n_nodes)
        on = np.zeros(mesh.n_nodes, bool)
        on[conn.ravel()] = True
        t[on] = np.maximum(t[on], b.thickness)  # one thickness and material per block
        mat = b.material
        e = _modulus_along(mat, direction)  # orthotropic: along the layer's load (only a flexibility formula reads it)
        E[on] = np.maximum(E[on], float(e))
    return w, t, E


def _side_by_side(mats) -> sp.csc_matrix:
    """The block-diagonal matrix of the layers' lower triangles (CSC), by concatenating their arrays.

    The same matrix as ``scipy.sparse.block_diag(mats, format="csc")`` (entries, order and all), without
    its pass through COO: at 10^6 unknowns that pass took 0.4 to 1 s, this one a copy of the arrays.
    """
    ms = []
    for m in mats:
        m = sp.csc_matrix(m)
        if not m.has_canonical_format:
            m = m.copy()
            m.sum_duplicates()
        ms.append(m)
    if len(ms) == 1:
        return ms[0]
    nr = np.cumsum([0] + [m.shape[0] for m in ms])
    nc = np.cumsum([0] + [m.shape[1] for m in ms])
    nz = np.cumsum([0] + [m.nnz for m in ms])
    idx = np.int64 if max(int(nr[-1]), int(nz[-1])) >= 2**31 - 1 else np.int32
    indptr = np.concatenate([(m.indptr[:-1] + nz[i]).astype(idx) for i, m in enumerate(ms)] + [np.array([nz[-1]], idx)])
    indices = np.concatenate([(m.indices + nr[i]).astype(idx, copy=False) for i, m in enumerate(ms)])
    data = np.concatenate([m.data for m in ms])
    out = sp.csc_matrix((data, indices, indptr), shape=(int(nr[-1]), int(nc[-1])), copy=False)
    out.has_sorted_indices = True
    out.has_canonical_format = True
    return out


def _hole_at(mesh, pts: np.ndarray):
    """(index of the point, edge name, diameter) of the first point inside a round hole of the mesh that
    a named edge bounds all round (the circle through the edge's nodes by least squares, the nodes on it
    to 1e-3 of its radius, no gap over a quarter turn), or None."""
    for name in mesh.edge_sets:
        ring = mesh.nodes[np.unique(np.asarray(mesh.edge(name))[:, :2])][:, :2]
        c, r, res = fit_circle(ring)
        if not res <= 1e-3:
            continue  # not a round hole (or fewer than three nodes, or nodes on a line)
        ang = np.sort(np.arctan2(*(ring - c).T[::-1]))
        if np.diff(np.r_[ang, ang[0] + 2 * np.pi]).max() > 0.5 * np.pi:
            continue  # an arc (a fillet, a notch), not a hole all round
        inside = np.flatnonzero(np.hypot(*(pts - c).T) < r)
        if inside.size:
            return int(inside[0]), name, 2.0 * r
    return None


class _Layer:
    """One layer prepared for the joint's system: its assembly, reduced system and end operators."""

    def __init__(self, name, model, joint, cases, distortion_limit, timer):
        self.name = name
        lm = copy.copy(model)
        lm.cases = {c: list(model.cases.get(c, [])) for c in cases}
        lm.pins = list(model.pins)
        for pin in lm.pins:  # the joint is one linear solve: no contact iteration for a pin of a layer
            if pin.tie == "contact":
                raise InputError(f"layer {name!r} holds pin {pin.name!r} with tie='contact' (bearing contact), which "
                                 "a joint's solve does not take (one linear solve, no contact iteration); give the "
                                 "pin tie='rigid' or tie='spreading' in the joint, or solve that layer alone with its "
                                 "contact pin and the joint's fastener loads on it")
        self.hole_pins: dict[tuple[int, int], str] = {}
        for g, fz in enumerate(joint.fasteners):
            edges = fz.holes.get(name)
            if edges is None or name not in fz.layers:
                continue
            pts = fz.points(joint)
            for i, edge in enumerate(edges):  # one pin per modelled hole (the ties are per pin)
                pin = Pin(edge, tie=fz.tie, at=pts[i], hold=None, name=f"{fz.name}[{i}]@{name}")
                check_new_pin(lm, pin)
                lm.pins.append(pin)
                self.hole_pins[(g, i)] = pin.name
        # read by the report's inputs: the layer is loaded through these fasteners, its hole pins carry them
        lm.joint_layer = name
        lm.joint_fasteners = [fz for fz in joint.fasteners if name in fz.layers]
        lm.joint_pins = {pn: (joint.fasteners[g].name, i + 1) for (g, i), pn in self.hole_pins.items()}
        self.model = lm
        asm = Assembly(lm, distortion_limit=distortion_limit)
        self.asm, mesh = asm, asm.mesh
        self.mesh = mesh
        from .static import constrain, matrix_entries, reduced_loads, split_unknowns

        cons = constrain(mesh, lm.supports)
        self.cons = cons
        self.tie = Tying(asm, lm, cons) if lm.pins else None
        note_snapped(mesh, lm.supports, pending_warnings(asm))
        zero_energy_check(asm, sink=pending_warnings(asm))
        ndof = 2 * mesh.n_nodes
        up, self.free, self.pdofs, free_index, pres_index = split_unknowns(mesh, cons, self.tie)
        self.entries = matrix_entries(asm)
        system = asm.system(free_index, pres_index, cons.rotation, timer)
        self.loads, F, Fl, rhs, system = reduced_loads(asm, system, cons, self.tie, cases, self.free, self.pdofs, up)
        self.system, self.rhs, self.F, self.Fl, self.up = system, rhs, F, Fl, up
        self.n = system.lower.shape[0]
        nO = self.free.size
        rows, cols, vals = [self.free], [np.arange(nO)], [np.ones(nO)]
        if self.tie is not None and self.tie.E.size:
            A = self.tie.A.tocoo()
            rows.append(self.tie.E[A.row]); cols.append(A.col); vals.append(A.data)
        self.T = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                               shape=(ndof, self.n))
        self.eliminated = np.zeros(ndof, bool)
        if self.tie is not None:
            self.eliminated[self.tie.E] = True

    def weights(self, nodes: np.ndarray | None = None):
        """:func:`_node_weights` of the layer, at ``nodes`` (all nodes by default)."""
        cells = None if nodes is None else self.cells_touching(nodes)
        return _node_weights(self.asm, nodes, getattr(self, "load_axis", None), cells=cells)

    def cells_touching(self, nodes: np.ndarray) -> list[np.ndarray]:
        """The cells that touch ``nodes``: a sorted index array per block of the assembly, read from each
        block's node-to-cell incidence (built once per layer), so a fastener's patch costs its own size and
        not a pass over the layer's cells per group of fasteners."""
        if not hasattr(self, "_incidence"):
            n = self.mesh.n_nodes
            self._incidence = [sp.csr_matrix((np.ones(b.conn.size, bool), (b.conn.ravel(),
                                              np.repeat(np.arange(b.conn.shape[0]), b.conn.shape[1]))),
                                             shape=(n, b.conn.shape[0])) for b in self.asm.blocks]
        nodes = np.unique(np.asarray(nodes, dtype=np.int64))
        return [np.unique(inc[nodes].indices) for inc in self._incidence]

    def used_by_x(self) -> tuple[np.ndarray, np.ndarray]:
        """The layer's used nodes sorted by x and their x (built once): the nodes in a box are a slice."""
        if not hasattr(self, "_by_x"):
            used = np.flatnonzero(self.mesh.used_nodes())
            o = np.argsort(self.mesh.nodes[used, 0], kind="stable")
            self._by_x = (used[o], self.mesh.nodes[used[o], 0])
        return self._by_x

    def end_operator(self, g: int, fz, pts: np.ndarray) -> tuple[sp.csr_matrix, np.ndarray, np.ndarray]:
        """(S (2k, 2n): each end's mean translation from the full unknowns, thickness (k,), modulus (k,))."""
        mesh, k, ndof = self.mesh, pts.shape[0], 2 * self.mesh.n_nodes
        if (g, 0) in self.hole_pins:
            by_name = {d["pin"].name: d for d in self.tie.data}
            _, t, E = self.weights(np.concatenate([by_name[self.hole_pins[(g, i)]]["nodes"] for i in range(k)]))
            rows, cols, vals, tt, ee = [], [], [], [], []
            for i in range(k):  # the hole pins' fits (one per modelled hole, from the ties)
                d = by_name[self.hole_pins[(g, i)]]
                C = d["C"][:2]
                rows.append(np.repeat(2 * i + np.arange(2), C.shape[1])); cols.append(np.tile(d["dofs"], 2))
                vals.append(C.ravel())
                tt.append(t[d["nodes"]].max()); ee.append(E[d["nodes"]].max())
            S = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=(2 * k, ndof))
            return S, np.array(tt), np.array(ee)
        from scipy.spatial import cKDTree

        by_x, xs = self.used_by_x()
        pad = 2 * fz.diameter  # the nodes around the fasteners only (a tree over a band, not the whole layer)
        lo, hi = pts.min(axis=0) - pad, pts.max(axis=0) + pad
        band = by_x[np.searchsorted(xs, lo[0], side="left"):np.searchsorted(xs, hi[0], side="right")]
        y = mesh.nodes[band, 1]
        box = np.sort(band[(y >= lo[1]) & (y <= hi[1])])  # in node order, as the nearest node's ties were
        used = box if box.size else np.sort(by_x)
        tree = cKDTree(mesh.nodes[used])
        dist, near = tree.query(pts)
        if np.any(dist > pad) and used.size < by_x.size:  # a mesh coarser than the box: the nearest of all
            used = np.sort(by_x)
            tree = cKDTree(mesh.nodes[used])
            dist, near = tree.query(pts)
        # the nodes within d / 2, a node at d / 2 to round-off among them (a patch does not hang on round-off)
        pairs = cKDTree(pts).sparse_distance_matrix(tree, fz.diameter / 2 * (1 + 1e-9), output_type="ndarray")
        pi = np.r_[np.arange(k), pairs["i"].astype(np.int64)]
        nj = used[np.r_[near, pairs["j"].astype(np.int64)]]
        key = np.unique(pi * mesh.n_nodes + nj)
        pi, nj = key // mesh.n_nodes, key % mesh.n_nodes
        few = np.bincount(pairs["i"].astype(np.int64), minlength=k) < 3
        if few.any():  # a point with few nodes near it: inside the layer at all? (point location of those only)
            from .locate import locate

            try:
                locate(mesh, pts[few])
            except InputError as exc:
                hole = _hole_at(mesh, pts[few])
                if hole is not None:
                    i, e, size = hole
                    raise InputError(f"fasteners {fz.name!r}: fastener at ({pts[few][i, 0]:g}, {pts[few][i, 1]:g}) sits in "
                                     f"hole {e!r} of layer {self.name!r} (a hole cut in its mesh, diameter {size:.4g}), "
                                     f"which holes= does not list; give holes={{{self.name!r}: [...]}} with one hole "
                                     "edge per fastener, in the order of the points, so each fastener is tied to its "
                                     "hole's edge") from None
                raise InputError(f"fasteners {fz.name!r} join layer {self.name!r}, but {exc}; if the fastener sits in a "
                                 "hole cut in the layer's mesh, name the hole's edge in holes=; else move the fastener "
                                 "into the layer, or leave the layer out of its layers=") from None
        rot = self.cons.rotation
        if rot is not None and np.isin(nj, rot.nodes).any():
            raise InputError(f"fasteners {fz.name!r}: a fastener's patch in layer {self.name!r} takes a node held along "
                             "an inclined direction; move the fastener or hold that edge along x or y")
        cells = self.cells_touching(nj)
        w, t, E = _node_weights(self.asm, nj, getattr(self, "load_axis", None), cells=cells)
        wn = w[nj]
        if few.any():
            i = int(np.argmax(few))
            warn(f"{int(few.sum())} of the {k} fasteners {fz.name!r} have fewer than 3 nodes of layer {self.name!r} "
                 f"within d/2 (first at ({pts[i, 0]:g}, {pts[i, 1]:g})): the mesh is coarser than the fastener, so "
                 "its spring acts almost at a point and its load depends on the mesh; refine near the fasteners to "
                 "an element size of d/4 or less", "fastener-patch", sink=pending_warnings(self.asm))
        near = _edge_distance(mesh, [(b.conn[c], b.etype.cell) for b, c in zip(self.asm.blocks, cells)], pts, pi, nj,
                              self.cons.rows.node)
        out = near < fz.diameter / 2 * (1 - 1e-9)
        if out.any():
            i = int(np.argmax(out))
            us = self.model.unit_system
            lu = f" {us.unit_of('length')}" if us.stated else ""
            warn(f"{int(out.sum())} of the {k} fasteners {fz.name!r} sit closer than d/2 = {fz.diameter / 2:g}{lu} to a "
                 f"free edge of layer {self.name!r} (first at ({pts[i, 0]:g}, {pts[i, 1]:g}), {near[i]:.3g}{lu} from "
                 "it): the hole would break out through the edge and the spring's patch is cut by it; check the "
                 "point and the layer's outline (an edge distance of about 2 d is common practice)", "fastener-edge",
                 sink=pending_warnings(self.asm))
        total = np.bincount(pi, wn, minlength=k)
        share = wn / total[pi]
        S = sp.csr_matrix((np.r_[share, share], (np.r_[2 * pi, 2 * pi + 1], np.r_[2 * nj, 2 * nj + 1])),
                          shape=(2 * k, ndof))
        tt = np.zeros(k)
        ee = np.zeros(k)
        np.maximum.at(tt, pi, t[nj])
        np.maximum.at(ee, pi, E[nj])
        return S, tt, ee


def _edge_distance(mesh, touching: list, pts: np.ndarray, pi: np.ndarray, nj: np.ndarray,
                   held: np.ndarray) -> np.ndarray:
    """Each fastener's distance (k,) to the nearest free edge of the layer that meets its patch (inf for none).

    ``touching``: (connectivity, cell kind) of the cells that touch a patch node, per block; ``pi``,
    ``nj``: the patch pairs (fastener, node). The edges are the cells' sides (corner to corner, straight)
    of one cell only; the cells touching a patch node hold every cell of a side with a patch node, so
    its count is exact. A side whose two nodes are held by supports (a symmetry line, a clamped edge) is
    no free edge.
    """
    k = pts.shape[0]
    near = np.full(k, np.inf)
    on = np.zeros(mesh.n_nodes, bool)
    on[nj] = True
    sides = [np.zeros((0, 2), np.int64)]
    for conn, cell in touching:
        c = np.asarray(conn)[:, :3 if cell == "triangle" else 4]
        sides.append(np.stack([c, np.roll(c, -1, axis=1)], axis=2).reshape(-1, 2))
    s = np.sort(np.vstack(sides), axis=1)
    s, cnt = np.unique(s, axis=0, return_counts=True)
    fixed = np.zeros(mesh.n_nodes, bool)
    fixed[np.asarray(held, dtype=np.int64)] = True
    s = s[(cnt == 1) & on[s].any(axis=1) & ~fixed[s].all(axis=1)]
    if not s.size:
        return near
    patch = sp.csc_matrix((np.ones(pi.size), (pi, nj)), shape=(k, mesh.n_nodes))
    meet = (patch[:, s[:, 0]] + patch[:, s[:, 1]]).tocoo()  # (fastener, side) pairs whose side touches its patch
    a, b = mesh.nodes[s[meet.col, 0], :2], mesh.nodes[s[meet.col, 1], :2]
    p = pts[meet.row]
    ab = b - a
    t = np.clip(np.einsum("ij,ij->i", p - a, ab) / np.maximum(np.einsum("ij,ij->i", ab, ab), 1e-300), 0.0, 1.0)
    dist = np.hypot(*(a + t[:, None] * ab - p).T)
    np.minimum.at(near, meet.row, dist)
    return near


def _patch_states(joint, L, ends, U: np.ndarray, cases: list[str]) -> list[list]:
    """Each fastener end tied to a patch (no hole) as a pin's figures per case, so the layer's reactions add up.

    Force: the fastener's force on the layer (a reaction, no load); moment about the fastener's point
    of that force spread by the patch weights, ``(x_mean - p) x f``; motion: the patch's mean translation.
    """
    from ._tying import PinState

    out = [[] for _ in cases]
    xy = L.mesh.nodes
    for e in ends:
        if e["layer"] != L.name or (e["group"], 0) in L.hole_pins:
            continue
        fz = joint.fasteners[e["group"]]
        S = e["S"]
        Sx = S[0::2][:, 0::2].tocsr()  # (k, n): the patch weights (the x rows weigh the x unknowns only)
        cen = np.column_stack([Sx @ xy[:, 0], Sx @ xy[:, 1]])
        q = (S @ U).reshape(-1, 2, len(cases))
        F = e["force"]  # (k, 2, m)
        arm = cen - e["points"]
        nodes = np.split(Sx.indices, Sx.indptr[1:-1])
        for j in range(len(cases)):
            mom = arm[:, 0] * F[:, 1, j] - arm[:, 1] * F[:, 0, j]
            for i in range(e["count"]):  # one row of figures per fastener end (the reactions table)
                f = (float(F[i, 0, j]), float(F[i, 1, j]))
                out[j].append(PinState(name=f"{fz.name}[{i}]@{L.name}", tie="fastener patch", edge=None,
                                       point=(float(e["points"][i, 0]), float(e["points"][i, 1])), force=f,
                                       moment=float(mom[i]), load=(0.0, 0.0, 0.0), reaction=(f[0], f[1], float(mom[i])),
                                       motion=(float(q[i, 0, j]), float(q[i, 1, j]), 0.0),
                                       held=(False, False, False), nodes=nodes[i]))
    return out


def _embed(M: sp.csr_matrix, offset: int, n: int) -> sp.csr_matrix:
    M = M.tocsr()
    return sp.csr_matrix((M.data, M.indices + offset, M.indptr), shape=(M.shape[0], n))


def solve_joint(joint, cases=None, *, solver: str = "auto", verbose: bool | None = None,
                distortion_limit: float = 1e-3, timer: Timer | None = None):
    """Solve a :class:`planar.core.joints.Joint` for its load cases with one factorization.

    Parameters
    ----------
    joint : planar.core.joints.Joint
    cases : str or list of str, optional
        Load case names (default: every case of any layer).
    solver, verbose, distortion_limit
        As for :func:`planar.core.static.solve`.

    Returns
    -------
    Results (a dict of str to JointResult)

    Raises
    ------
    SupportError
        Layers left free to move by the supports and fasteners.
    SolverError
        A singular joint matrix.
    """
    from ._joint_tables import JointResult, entry_nodes, external_loads
    from .static import Results, _rigid_modes, finish_answer, full_unknowns

    timer = timer or Timer(verbose)
    cases = _case_names(joint, cases)
    m = len(cases)
    timer.start("checking")
    groups = joint.fasteners
    total_dofs = sum(2 * mdl.mesh.n_nodes for mdl in joint.layers.values())
    solvers.choose(total_dofs, solver)
    timer.size(total_dofs)
    timer.start("assembling")
    layers = [_Layer(nm, mdl, joint, cases, distortion_limit, timer) for nm, mdl in joint.layers.items()]
    if any(isinstance(fz.flexibility, str) for fz in groups):  # a formula reads an orthotropic layer's modulus
        _load_axes(layers, cases)
    index = {L.name: i for i, L in enumerate(layers)}
    offs = np.r_[0, np.cumsum([L.n for L in layers])]
    N = int(offs[-1])
    Bs, cs, ks, springs, ends = [], [], [], [], []
    for g, fz in enumerate(groups):
        pts = fz.points(joint)
        k = pts.shape[0]
        ops = {}
        for name in fz.layers:
            L = layers[index[name]]
            S, t, E = L.end_operator(g, fz, pts)
            ops[name] = (_embed((S @ L.T).tocsr(), int(offs[index[name]]), N), S @ L.up, t, E)
            ends.append(dict(group=g, layer=name, S=S, t=t, E=E, points=pts, count=k,
                             rigid=(g, 0) in L.hole_pins and fz.tie == "rigid"))
        for a, b in zip(fz.layers[:-1], fz.layers[1:]):
            Ba, ca, ta, Ea = ops[a]
            Bb, cb, tb, Eb = ops[b]
            if isinstance(fz.flexibility, str):  # a formula: per fastener, from the joined layers' sections
                if fz.shear == "double" and b in fz.layers[1:-1] and a not in fz.layers[1:-1]:
                    ta, tb, Ea, Eb = tb, ta, Eb, Ea  # the formula's t1 is the middle plate
                sec, inv = np.unique(np.column_stack([ta, tb, Ea, Eb]), axis=0, return_inverse=True)
                comp = np.array([fz.compliance(t1=x[0], t2=x[1], E1=x[2], E2=x[3]) for x in sec])[inv.ravel()]
            else:
                comp = np.full(k, float(fz.flexibility))
            Bs.append(Ba - Bb); cs.append(ca - cb); ks.append(np.repeat(1.0 / comp, 2))
            springs.append(dict(group=g, a=a, b=b, points=pts, compliance=comp))
    _motion_check(joint, layers, [(index[s["a"]], index[s["b"]], s["points"]) for s in springs])
    lower = _side_by_side([L.system.lower for L in layers])
    rhs = np.vstack([L.rhs.reshape(L.n, m) for L in layers])
    plates = lower  # the layers' own couplings: the multigrid aggregates by these (_multigrid.Couplings)
    if Bs:
        B = sp.vstack(Bs).tocsr()
        kv = np.concatenate(ks)
        c = np.concatenate(cs)
        lower = (lower + sp.tril(B.T @ sp.diags(kv) @ B).tocsc()).tocsc()
        lower.sum_duplicates()
        lower.sort_indices()
        rhs = rhs - (B.T @ (kv * c))[:, None]
    else:
        B, kv, c = sp.csr_matrix((0, N)), np.zeros(0), np.zeros(0)
    entries = sum(L.entries for L in layers) + lower.nnz
    solver = solvers.choose(N, solver, matrix_entries=entries)
    modes = None
    if solver in ("amg", "auto"):
        blocks = []
        for L in layers:
            mo = _rigid_modes(L.mesh.nodes, L.cons.rotation)[L.free]
            if L.tie is not None:
                mo = L.tie.rigid_modes(mo, L.mesh.nodes)
            blocks.append(mo)
        modes = sp.block_diag(blocks).toarray() if len(blocks) > 1 else blocks[0]
    timer.lap("assembly")
    system = SimpleNamespace(lower=lower)
    try:
        figures = diagnose.start_figures(lower, solver)
        timer.start(f"factorizing ({solver})")
        space = None if modes is None or not Bs else Couplings(modes, plates)
        fac = solvers.factorize(lower, solver, rigid_modes=modes, space=space,
                                after_ordering=diagnose.also_wait(None, figures))
        timer.lap("factorization")
        timer.start("solving")
        sol, _probe = diagnose.solve_with_probe(fac, rhs)
        sol = diagnose.meet_accuracy(fac, system, rhs, sol, figures)
        sol = sol[:, :m]
    except SolverError as exc:
        if getattr(exc, "numerical", False):
            raise SolverError(f"the joint's stiffness matrix is singular or nearly so ({exc}); "
                              + _stiff_springs(springs, kv, plates, joint)) from None
        raise
    diag_, nrm = figures.result() if figures is not None else matrix_figures(lower)
    KV = matvec(lower, sol, diag_)
    eta = diagnose._eta(rhs, KV, sol, nrm)  # the normwise backward error, as the solve's check reads it
    timer.lap("solve")
    # the springs' forces: k s, the force each fastener passes from layer a into layer b
    s = B @ sol + c[:, None]
    V = (kv[:, None] * s).reshape(-1, 2, m)  # (n_springs_total, 2, m)
    # each end's force on its layer: -V on the a side, +V on the b side
    end_force = {}
    p = 0
    for sd in springs:
        k = sd["points"].shape[0]
        v = V[p:p + k]
        sd["V"] = v
        p += k
        for nm, sign in ((sd["a"], -1.0), (sd["b"], 1.0)):
            key = (sd["group"], nm)
            end_force[key] = end_force.get(key, 0.0) + sign * v
    results = Results()
    per_layer = {}
    for i, L in enumerate(layers):
        ndof = 2 * L.mesh.n_nodes
        ul = full_unknowns(ndof, L.free, L.pdofs, L.up, L.tie, sol[offs[i]:offs[i + 1]], m)
        ext = external_loads(L.asm, cases)  # the loads without initial-strain equivalents (no external force)
        fs = np.zeros((ndof, m))
        rest_off = np.zeros(ndof, bool)  # nodes whose pin forces are a fastener's own (rigid hole edges)
        for e in ends:
            if e["layer"] != L.name:
                continue
            fe = end_force[(e["group"], L.name)]  # (k, 2, m)
            e["force"] = fe
            fs += e["S"].T @ fe.reshape(-1, m)
            if e["rigid"]:
                rest_off[e["S"].indices] = True
        Rl = np.zeros((ndof, m))
        outside = np.ones(ndof, bool)
        outside[L.eliminated] = False
        Rl[L.pdofs] = L.system.prescribed_rows @ ul - L.Fl[L.pdofs] - (fs[L.pdofs] * outside[L.pdofs, None])
        P = L.tie.forces(Rl, L.free) if L.tie is not None else np.zeros((ndof, m))
        U, R, P = finish_answer(L.mesh, L.cons.rotation, ul, Rl, cases, P)
        rest = P.copy()
        rest[rest_off] = 0.0  # the forces other than the fasteners' own: the user's pins
        entry = entry_nodes(ext + R + rest, fs, L.mesh.n_nodes)  # where the layer's load enters (bypass side)
        P = P + fs * outside[:, None]
        states = L.tie.states(U, P, cases) if L.tie is not None else [[] for _ in cases]
        patch_states = _patch_states(joint, L, ends, U, cases)  # the ends with no modelled hole, as pins
        for j in range(m):
            states[j] = list(states[j]) + patch_states[j]
        layer_res = {}
        for j, cn in enumerate(cases):
            r = Result(L.asm, cn, U[:, j].reshape(-1, 2), R[:, j].reshape(-1, 2), L.F[:, j].reshape(-1, 2),
                       L.loads[j][1], solver=fac.name, timer=timer,
                       solver_info={**fac.info, "backward_error": float(eta[j])})
            r.pin_forces = P[:, j].reshape(-1, 2)
            r.pin_states = states[j]
            r.rest_forces = (ext[:, j] + R[:, j] + rest[:, j]).reshape(-1, 2)
            r.joint_entries = entry
            r.formula_modulus = getattr(L, "formula_modulus", None)
            if eta[j] > WARN:
                warn(f"load case {cn!r}: the joint's solve has backward error {eta[j]:.1e}; the answer may be "
                     "inaccurate (check the fasteners' flexibility against the plates' stiffness)", "joint-accuracy",
                     sink=r.warnings)
            layer_res[cn] = r
        per_layer[L.name] = layer_res
    from .advice import advise

    for L in layers:
        advise(Results(per_layer[L.name]))
    for j, cn in enumerate(cases):
        results[cn] = JointResult(joint, cn, {L.name: per_layer[L.name][cn] for L in layers},
                                  [dict(sd, V=sd["V"][:, :, j]) for sd in springs],
                                  [dict(e, force=e["force"][:, :, j]) for e in ends], timer=timer)
    timer.lap("results")
    return results
