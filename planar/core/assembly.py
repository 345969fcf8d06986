"""Assembly: element checks, stiffness and load vectors, block by block.

Element matrices are computed for a whole block of same-type elements at once (batched over
element chunks that stay small in memory), then gathered COO -> CSR once. No Python loop runs over
elements.

The element maps (Jacobians, strain matrices) live in :mod:`planar.core._element_maps` and the
element checks before assembly (:func:`prepare`) in :mod:`planar.core._element_checks`; their
names are importable from here as before.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

import numpy as np
import scipy.sparse as sp

from .errors import MeshError, fmt_point
from .loads import EdgeGeometry, LoadContext
from .materials import check_material
from .quadrature import Rule, rule_for
from .parallel import map_chunks
from .registry import check_plugin_array, element_type, plugin_call
from ._element_checks import _check_overlaps, _reduced, _twins, prepare  # noqa: F401
from ._element_maps import (CHUNK, _jac, element_strains, jacobian, jacobian_det, shape_values,  # noqa: F401
                            strain_matrix, strains)

__all__ = ["Block", "Assembly", "prepare", "strain_matrix", "strains", "jacobian", "jacobian_det", "shape_values",
           "element_strains"]

#: COO pieces are compressed in this many groups, side by side, and the groups added
GATHER_GROUPS = 2


def _gather(parts: list, shape: tuple[int, int], fmt: str, idt) -> sp.spmatrix:
    """Sum COO pieces [(rows, cols, values), ...] into one canonical CSC or CSR matrix.

    The pieces are split into ``GATHER_GROUPS`` groups; each group is concatenated and compressed
    on a thread of its own, and the compressed matrices are added (a merge of sorted columns, far
    cheaper than compressing everything in one thread). The groups do not depend on the number of
    threads, so neither do the sums. ``parts`` is emptied as it is used.
    """
    make = sp.csc_matrix if fmt == "csc" else sp.csr_matrix
    if not parts:
        return make(shape)
    n = max(1, min(GATHER_GROUPS, len(parts)))
    bounds = np.linspace(0, len(parts), n + 1).round().astype(int)

    def group(i: int):
        mine = parts[bounds[i]:bounds[i + 1]]
        r = np.concatenate([p[0] for p in mine]).astype(idt, copy=False)
        c = np.concatenate([p[1] for p in mine]).astype(idt, copy=False)
        v = np.concatenate([p[2] for p in mine])
        for k in range(bounds[i], bounds[i + 1]):
            parts[k] = None  # the pieces are copied: let them go
        del mine
        M = make((v, (r, c)), shape=shape)
        del r, c, v
        M.sum_duplicates()
        return M

    mats = map_chunks(group, range(n))
    out = mats[0]
    for M in mats[1:]:
        out = out + M
    out.sum_duplicates()
    return out

@dataclass
class Block:
    """Cells of one element type and one region, with their section.

    Attributes
    ----------
    etype : element type class
    layout : str
        Mesh cell block name.
    region : str
    cells : ndarray, shape (e,)
        Indices into the mesh cell block.
    conn : ndarray, shape (e, k)
    material, thickness, D (3, 3)
    rule : Rule
        Stiffness rule (the element's full rule unless the model says otherwise).
    rule_mode : {"full", "reduced", "selective", "custom"}
    """

    etype: Any
    layout: str
    region: str
    cells: np.ndarray
    conn: np.ndarray
    material: Any
    thickness: float
    D: np.ndarray
    rule: Rule
    rule_mode: str = "full"
    _geo: dict = field(default_factory=dict, repr=False)

    @property
    def n(self) -> int:
        return int(self.conn.shape[0])

    def dofs(self, start: int = 0, stop: int | None = None) -> np.ndarray:
        c = self.conn[start:stop].astype(np.int64)
        k = c.shape[1]
        d = np.empty((c.shape[0], 2 * k), dtype=np.int64)
        d[:, 0::2] = 2 * c
        d[:, 1::2] = 2 * c + 1
        return d

    def geometry(self, nodes: np.ndarray, rule: Rule | None = None):
        """x_gauss (e, q, 2), dvol (e, q) = w detJ t, N (q, k) at the rule's points."""
        rule = rule or self.rule
        key = (rule.points.tobytes(), rule.weights.tobytes())  # the same points give the same geometry
        if key not in self._geo:
            N = shape_values(self.etype, rule.points)
            xg = np.empty((self.n, rule.n_points, 2))
            dv = np.empty((self.n, rule.n_points))

            def chunk(s: int) -> None:
                c = nodes[self.conn[s : s + CHUNK]]
                det = jacobian_det(self.etype, c, rule.points)
                xg[s : s + CHUNK] = np.einsum("qk,eki->eqi", N, c)
                dv[s : s + CHUNK] = det * rule.weights[None, :] * self.thickness

            map_chunks(chunk, range(0, self.n, CHUNK))
            self._geo[key] = (xg, dv, N)
        return self._geo[key]


@dataclass
class ReducedSystem:
    """K_ff as its lower triangle (CSC, free numbering) and the prescribed rows K_p (CSR, all columns)."""

    lower: sp.csc_matrix
    prescribed_rows: sp.csr_matrix

    def matvec(self, x: np.ndarray) -> np.ndarray:
        """K_ff @ x from the lower triangle."""
        L = self.lower
        return L @ x + L.T @ x - L.diagonal()[:, None] * x if x.ndim == 2 else L @ x + L.T @ x - L.diagonal() * x


@dataclass
class Rotation:
    """Nodes whose two unknowns are expressed in a local basis: u_global = R u_local.

    Attributes
    ----------
    nodes : ndarray, shape (s,)
    R : ndarray, shape (s, 2, 2)
        Columns are the local basis vectors (normal, tangent) in global components.
    """

    nodes: np.ndarray
    R: np.ndarray

    def __post_init__(self):
        self._lookup = {}

    def apply(self, ke: np.ndarray, dofs: np.ndarray) -> np.ndarray:
        """T^T ke T for the elements that hold rotated nodes (others unchanged)."""
        node_of = dofs[:, 0::2] // 2  # (c, k)
        pos = np.searchsorted(self.nodes, node_of)
        pos = np.minimum(pos, self.nodes.size - 1)
        hit = self.nodes[pos] == node_of
        el = np.flatnonzero(hit.any(axis=1))
        if el.size == 0:
            return ke
        k = node_of.shape[1]
        T = np.zeros((el.size, k, 2, k, 2))
        eye = np.eye(2)
        blocks = np.where(hit[el][:, :, None, None], self.R[pos[el]], eye)  # (c', k, 2, 2)
        idx = np.arange(k)
        T[:, idx, :, idx, :] = blocks.transpose(1, 0, 2, 3)
        T = T.reshape(el.size, 2 * k, 2 * k)
        ke = ke.copy()
        ke[el] = np.einsum("eai,eab,ebj->eij", T, ke[el], T)
        return ke

    def to_local(self, f: np.ndarray) -> np.ndarray:
        """Nodal vectors (n, 2, ...) from global to local components at the rotated nodes."""
        out = f.copy()
        out[self.nodes] = np.einsum("sba,sb...->sa...", self.R, f[self.nodes])
        return out

    def to_global(self, u: np.ndarray) -> np.ndarray:
        out = u.copy()
        out[self.nodes] = np.einsum("sab,sb...->sa...", self.R, u[self.nodes])
        return out


class _BlockView:
    """What a load kind sees of a block: conn, N, x_gauss, dvol, region, material."""

    def __init__(self, block: Block, nodes: np.ndarray):
        self.block = block
        self.conn = block.conn
        self.region = block.region
        self.material = block.material
        self._nodes = nodes

    @cached_property
    def _geometry(self):
        return self.block.geometry(self._nodes)  # only when a load asks (most need none of it)

    @property
    def x_gauss(self) -> np.ndarray:
        return self._geometry[0]

    @property
    def dvol(self) -> np.ndarray:
        return self._geometry[1]

    @property
    def N(self) -> np.ndarray:
        return self._geometry[2]


class Assembly:
    """Element blocks of a model and the operators built from them.

    Parameters
    ----------
    model : Model
    distortion_limit : float
        See :func:`prepare`.
    """

    def __init__(self, model, *, distortion_limit: float = 1e-3):
        self.model = model
        self.mesh = prepare(model.mesh, model.elements, distortion_limit=distortion_limit)
        self.analysis = model.analysis
        self.blocks = self._blocks()
        self._edge_cache: dict[str, EdgeGeometry] = {}
        self.context = LoadContext(self.mesh, self.analysis, self._edge_geometry, self._cell_views,
                                   units=getattr(model, "unit_system", None))
        #: results derived from the mesh alone (recovery operators), shared by every load case
        self.cache: dict = {}

    # ------------------------------------------------------------------ blocks
    def _blocks(self) -> list[Block]:
        mesh, model = self.mesh, self.model
        names, ids = mesh.region_ids()
        blocks = []
        for layout, conn in mesh.cells.items():
            etype = element_type(model.elements.get(layout, layout))
            spec = model.quadrature.get(etype.name, "full")
            full = etype.default_rule()
            if isinstance(spec, int):
                rule, mode = rule_for(etype.cell, spec), "custom"
            elif spec == "reduced":
                rule, mode = _reduced(etype, full), "reduced"
            else:
                rule, mode = full, spec
            for r, rname in enumerate(names):
                sel = np.flatnonzero(ids[layout] == r)
                if sel.size == 0:
                    continue
                sec = model.section(rname)
                D = check_material(sec.material, self.analysis)  # 3 x 3, finite, symmetric, definite
                blocks.append(Block(etype, layout, rname, sel, conn[sel], sec.material, sec.thickness, D, rule, mode))
        return blocks

    def _cell_views(self, region: str | None):
        if region is not None and region not in self.mesh.region_names():
            from .errors import unknown_name

            raise unknown_name("region", region, self.mesh.region_names())
        return [_BlockView(b, self.mesh.nodes) for b in self.blocks if region is None or b.region == region]

    # ------------------------------------------------------------------ edges
    def _cell_edges(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Every cell side of the mesh, sorted once per assembly for the named edges' lookups (a joint
        with hundreds of modelled holes asks for each): (sorted keys min * n + max of its end nodes, the
        order that sorts them, each side's nodes in its cell's order, -1 padded, and its cell's block)."""
        got = getattr(self, "_cell_edge_index", None)
        if got is not None:
            return got
        n = self.mesh.n_nodes
        keys, owner_nodes, owner_b = [], [], []
        for i, b in enumerate(self.blocks):
            ed = b.etype.edges  # (ne, 2|3)
            cn = b.conn[:, ed]  # (e, ne, 2|3)
            a, c = cn[..., 0].astype(np.int64), cn[..., 1].astype(np.int64)
            keys.append((np.minimum(a, c) * n + np.maximum(a, c)).ravel())
            owner_nodes.append(cn.reshape(-1, ed.shape[1]).astype(np.int32))
            owner_b.append(np.full(cn.shape[0] * cn.shape[1], i, dtype=np.int32))
        keys = np.concatenate(keys)
        width = max(o.shape[1] for o in owner_nodes)
        owner = np.vstack([np.pad(o, ((0, 0), (0, width - o.shape[1])), constant_values=-1) for o in owner_nodes])
        block = np.concatenate(owner_b)
        order = np.argsort(keys, kind="stable")
        self._cell_edge_index = (keys[order], order, owner, block)
        return self._cell_edge_index

    def _edge_geometry(self, name: str) -> EdgeGeometry:
        if name in self._edge_cache:
            return self._edge_cache[name]
        seg = self.mesh.edge(name)
        n = self.mesh.n_nodes
        ks, order, owner, block = self._cell_edges()
        a, c = seg[:, 0].astype(np.int64), seg[:, 1].astype(np.int64)
        want = np.minimum(a, c) * n + np.maximum(a, c)
        pos = np.searchsorted(ks, want)
        pos = np.minimum(pos, ks.size - 1)
        found = ks[pos] == want
        if not np.all(found):
            bad = np.flatnonzero(~found)
            raise MeshError(
                f"edge set {name!r}: {bad.size} segment(s) are not edges of any cell (first at "
                f"{fmt_point(self.mesh.nodes[seg[bad[0], 0]])}); the edge set does not belong to this mesh"
            )
        idx = order[pos]
        nodes = owner[idx][:, : seg.shape[1]].astype(np.int64)
        if seg.shape[1] != nodes.shape[1] or np.any(nodes < 0):
            raise MeshError(f"edge set {name!r} has {seg.shape[1]} nodes per segment but the cells it bounds have other edges")
        thick = np.array([float(b.thickness) for b in self.blocks])[block[idx]]
        eg = EdgeGeometry(name, nodes, self.mesh.nodes[nodes], thick)
        self._edge_cache[name] = eg
        return eg

    # ------------------------------------------------------------------ stiffness
    def element_matrices(self, block: Block, start: int, stop: int) -> np.ndarray:
        """Element stiffness matrices of block cells start:stop, shape (c, 2k, 2k)."""
        coords = self.mesh.nodes[block.conn[start:stop]]
        et = block.etype
        if getattr(et, "stiffness", None) is not None:
            m = 2 * et.n_nodes
            with plugin_call("element", et, "stiffness"):
                ke = et.stiffness(coords, block.D, block.thickness, block.rule)
            return check_plugin_array("element", et, "stiffness", ke, (coords.shape[0], m, m))
        if block.rule_mode == "selective":
            full = et.default_rule()
            red = _reduced(et, full)
            Dn = block.D.copy(); Dn[2, :] = 0; Dn[:, 2] = 0
            Ds = block.D - Dn
            return self._ke(et, coords, Dn, block.thickness, full) + self._ke(et, coords, Ds, block.thickness, red)
        return self._ke(et, coords, block.D, block.thickness, block.rule)

    @staticmethod
    def _ke(et, coords, D, t, rule):
        """B^T D B integrated, without forming B: from the products S_ij = sum_q w N,i N,j^T."""
        det, dNdx = jacobian(et, coords, rule.points)
        w = det * rule.weights[None, :] * t  # (c, q)
        nx, ny = dNdx[..., 0], dNdx[..., 1]  # (c, q, k)
        wx = (nx * w[..., None]).transpose(0, 2, 1)  # (c, k, q)
        wy = (ny * w[..., None]).transpose(0, 2, 1)
        sxx, syy, sxy = wx @ nx, wy @ ny, wx @ ny  # (c, k, k); syx = sxy^T
        syx = sxy.transpose(0, 2, 1)
        c, k = sxx.shape[0], sxx.shape[1]
        ke = np.empty((c, k, 2, k, 2))
        ke[:, :, 0, :, 0] = D[0, 0] * sxx + D[0, 2] * (sxy + syx) + D[2, 2] * syy
        ke[:, :, 0, :, 1] = D[0, 1] * sxy + D[0, 2] * sxx + D[1, 2] * syy + D[2, 2] * syx
        ke[:, :, 1, :, 0] = ke[:, :, 0, :, 1].transpose(0, 2, 1)
        ke[:, :, 1, :, 1] = D[1, 1] * syy + D[1, 2] * (sxy + syx) + D[2, 2] * sxx
        return ke.reshape(c, 2 * k, 2 * k)

    def stiffness(self, timer=None) -> sp.csr_matrix:
        """Global stiffness matrix K (2n x 2n), CSR."""
        ndof = 2 * self.mesh.n_nodes
        idt = np.int32 if ndof < 2**31 - 1 else np.int64
        parts = []
        for b in self.blocks:
            m = 2 * b.etype.n_nodes

            def chunk(s: int, b=b, m=m):
                ke = self.element_matrices(b, s, s + CHUNK)
                d = b.dofs(s, s + CHUNK).astype(idt)
                c = d.shape[0]
                return (np.broadcast_to(d[:, :, None], (c, m, m)).ravel(),
                        np.broadcast_to(d[:, None, :], (c, m, m)).ravel(), ke.ravel())

            parts += map_chunks(chunk, range(0, b.n, CHUNK))
        if timer is not None:
            timer.lap("element matrices")
        K = _gather(parts, (ndof, ndof), "csr", idt)
        if timer is not None:
            timer.lap("COO to CSR")
        return K

    def system(self, free_index: np.ndarray, pres_index: np.ndarray, rotation: "Rotation | None" = None,
               timer=None) -> "ReducedSystem":
        """The stiffness split by supports, in the lean form the solvers take.

        Only the lower triangle of K_ff (free rows and columns, in free numbering) is gathered, and
        the rows of the prescribed unknowns as a separate small matrix K_p (for the coupling to
        prescribed values and for the reactions), so the full K is never built or sliced.

        Parameters
        ----------
        free_index : ndarray, shape (2n,)
            Free number of each global unknown, -1 where prescribed.
        pres_index : ndarray, shape (2n,)
            Prescribed number of each unknown, -1 where free.
        rotation : Rotation, optional
            Nodes whose unknowns are turned to a local (normal, tangent) basis.
        """
        nf = int(np.count_nonzero(free_index >= 0))
        npres = int(np.count_nonzero(pres_index >= 0))
        idt = np.int32 if 2 * self.mesh.n_nodes < 2**31 - 1 else np.int64
        rows_l, cols_l, vals_l = [], [], []
        rows_p, cols_p, vals_p = [], [], []
        for b in self.blocks:
            m = 2 * b.etype.n_nodes
            la, lb = np.tril_indices(m)

            def chunk(s: int, b=b, m=m, la=la, lb=lb):
                ke = self.element_matrices(b, s, s + CHUNK)
                d = b.dofs(s, s + CHUNK)
                if rotation is not None:
                    ke = rotation.apply(ke, d)
                fi = free_index[d]
                r, c = fi[:, la], fi[:, lb]
                v = ke[:, la, lb]
                keep = (r >= 0) & (c >= 0)
                if not keep.all():
                    r, c, v = r[keep], c[keep], v[keep]
                else:
                    r, c, v = r.ravel(), c.ravel(), v.ravel()
                hi = np.maximum(r, c)
                low = (r + c - hi).astype(idt)
                pres = None
                pi = pres_index[d]
                touch = np.flatnonzero(np.any(pi >= 0, axis=1))
                if touch.size:
                    pt = pi[touch]
                    rr = np.broadcast_to(pt[:, :, None], (touch.size, m, m))
                    cc = np.broadcast_to(d[touch][:, None, :], (touch.size, m, m))
                    kk = ke[touch]
                    sel = rr >= 0
                    pres = (rr[sel], cc[sel], kk[sel])
                return hi.astype(idt), low, v, pres

            for hi, low, v, pres in map_chunks(chunk, range(0, b.n, CHUNK)):
                rows_l.append(hi); cols_l.append(low); vals_l.append(v)
                if pres is not None:
                    rows_p.append(pres[0]); cols_p.append(pres[1]); vals_p.append(pres[2])
        if timer is not None:
            timer.lap("element matrices")
        L = _gather(list(zip(rows_l, cols_l, vals_l)), (nf, nf), "csc", idt)
        del rows_l, cols_l, vals_l
        ndof = 2 * self.mesh.n_nodes
        if rows_p:
            Kp = sp.csr_matrix((np.concatenate(vals_p), (np.concatenate(rows_p), np.concatenate(cols_p))),
                               shape=(npres, ndof))
            Kp.sum_duplicates()
        else:
            Kp = sp.csr_matrix((npres, ndof))
        if timer is not None:
            timer.lap("COO to CSR")
        return ReducedSystem(L, Kp)

    # ------------------------------------------------------------------ loads
    def initial_strains(self, case: str) -> list[np.ndarray | None]:
        """Initial strain (e, q, 4) per block for a load case (None where there is none)."""
        out: list[np.ndarray | None] = [None] * len(self.blocks)
        for load in self.model.cases[case]:
            for i, b in enumerate(self.blocks):
                with plugin_call("load", load, "initial_strain"):
                    e0 = load.initial_strain(self.context, _BlockView(b, self.mesh.nodes))
                if e0 is None:
                    continue
                xg, _, _ = b.geometry(self.mesh.nodes)
                e0 = check_plugin_array("load", load, "initial_strain", e0, xg.shape[:2] + (4,))
                out[i] = e0 if out[i] is None else out[i] + e0
        return out

    def effective_initial_strain(self, block: Block, e0: np.ndarray) -> np.ndarray:
        """In-plane initial strain (e, q, 3) such that sigma = D (eps - eps0_eff).

        In plane strain the restrained out-of-plane part adds D^-1 C_iz eps0_zz.
        """
        idx = [0, 1, 3]
        eff = e0[..., idx]
        if self.analysis == "plane strain" and np.any(e0[..., 2] != 0):
            C = np.linalg.inv(block.material.compliance3d())
            corr = np.linalg.solve(block.D, C[idx, 2])
            eff = eff + e0[..., 2:3] * corr
        return eff

    def load_vector(self, case: str) -> tuple[np.ndarray, list]:
        """Consistent nodal forces of a load case, shape (2n,), and its initial strains per block."""
        if case not in self.model.cases:
            from .errors import unknown_name

            raise unknown_name("load case", case, self.model.cases)
        f = np.zeros((self.mesh.n_nodes, 2))
        for load in self.model.cases[case]:
            with plugin_call("load", load, "nodal_forces"):
                fl = load.nodal_forces(self.context)
            f += check_plugin_array("load", load, "nodal_forces", fl, f.shape)
        e0s = self.initial_strains(case)
        for b, e0 in zip(self.blocks, e0s):
            if e0 is None:
                continue
            xg, dv, N = b.geometry(self.mesh.nodes)
            eff = self.effective_initial_strain(b, e0)
            for s in range(0, b.n, CHUNK):
                coords = self.mesh.nodes[b.conn[s : s + CHUNK]]
                det, dNdx = jacobian(b.etype, coords, b.rule.points)
                B = strain_matrix(dNdx)
                sig0 = np.einsum("ab,cqb->cqa", b.D, eff[s : s + CHUNK])
                fe = np.einsum("cqaj,cqa,cq->cj", B, sig0, dv[s : s + CHUNK])
                np.add.at(f.reshape(-1), b.dofs(s, s + CHUNK).ravel(), fe.ravel())
        return f.reshape(-1), e0s
