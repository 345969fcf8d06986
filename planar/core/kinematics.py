"""Checks made before the factorization: free rigid motions, hinges and zero-energy element modes.

Two questions are answered here from the mesh, the supports and the element matrices alone, before
any global matrix is built:

1. Can the model move without straining? The cells are split into *pieces* connected through
   shared edges. Pieces that touch only at nodes are joined by pins there, so the model is a
   *linkage* of rigid bodies (three motions each), held by pins (two constraints each) and by the
   support rows (one constraint each). A non-trivial null space of that small matrix is a free
   rigid motion or a mechanism; it is refused with the motion, the hinge nodes and the fix
   (:func:`rigid_body_check`).
2. Can an element deform without straining beyond its three rigid motions? An element stiffness
   with more than three zero eigenvalues (the hourglass modes of an under-integrated element) is
   refused unless the model opts in (:func:`zero_energy_check`).

Both are cheap: one sort of the cell edges and a connected-components pass for the pieces, and
a batch of small eigenvalue problems for the element blocks that need it.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from .errors import SolverError, SupportError, fmt_point, warn

__all__ = ["rigid_body_check", "cell_pieces", "Pieces", "zero_energy_check", "zero_energy_modes",
           "stabilised_element", "ZERO_ENERGY_CHOICES", "ZERO_TOL", "STABILISATION", "BUILTIN_ELEMENTS",
           "pending_warnings"]

#: the ways a model may treat element blocks with zero-energy modes (``Model(zero_energy=...)``)
ZERO_ENERGY_CHOICES = ("refuse", "warn", "stabilise")

#: an element eigenvalue below ZERO_TOL times the largest one counts as zero. The test runs on the
#: element mapped to unit size and shape (see :func:`zero_energy_modes`) with a unit material, so the
#: spread of the eigenvalues comes from the element's distortion alone. eigvalsh returns each
#: eigenvalue of a symmetric matrix to about c eps ||K|| with c a small multiple of the order (at most
#: 18 here: 18 eps = 4e-15); measured, rigid and hourglass modes come out below 7e-16 of the largest
#: eigenvalue. The smallest straining eigenvalue of T3, Q4, Q8, Q9 and T6 elements as distorted as the
#: Jacobian checks accept, under their full and reduced rules (and of the Q4i plugin), stays above
#: 4e-8 (measured on about 10^5 random elements with aspect ratios to 1e5 and a least/largest
#: Jacobian down to 1e-4; see tests/test_trust_kinematics.py). 1e-11 sits more than three decades
#: clear of both. One exception: T6 under its own 3-point rule has exactly as many strain samples as
#: deformation modes (9), and some curved shapes come close to losing one (1.5e-10 measured); full
#: rules of the built-in elements are checked on the reference element and a custom rule equal to
#: the full one counts as full, so those shapes are never judged.
ZERO_TOL = 1e-11

#: fraction of the full-rule stiffness put on the spurious modes by ``zero_energy="stabilise"``.
#: Hourglass-control stiffness of a few per cent up to about 0.1 of the element's own stiffness is
#: common practice (D. P. Flanagan and T. Belytschko, A uniform strain hexahedron and quadrilateral
#: with orthogonal hourglass control, Int. J. Numer. Methods Eng. 17, 1981; values from memory).
STABILISATION = 0.1

#: element types whose rank under their full (or selective) rule is a property of the formulation
#: (checked once per block, on the reference element)
BUILTIN_ELEMENTS = ("T3", "T6", "Q4", "Q8", "Q9")

#: element blocks larger than this are checked on a sample of this many elements (half the worst
#: shaped, half spread evenly) where their rule needs more than one element
SAMPLE = 4096

#: bodies (pieces after rigid merging) of one connected group, not proven held by propagation, solved
#: by a dense SVD of the linkage (3 columns each: about 1 s at 250 on this machine's two cores);
#: above it only hinged leaves are looked for, and the check after the solve is the net
MAX_DENSE_BODIES = 250

# singular values of the (row-normalised) constraint matrices below this, relative, are free motions
_SV_TOL = 1e-8


def pending_warnings(asm) -> list:
    """The list on an Assembly where checks made before the solve keep their planar warnings.

    The results made from this assembly carry them (``Result.warnings``).
    """
    out = getattr(asm, "warnings", None)
    if not isinstance(out, list):
        out = []
        asm.warnings = out
    return out


# ====================================================================================== pieces
@dataclass
class Pieces:
    """Cells split into pieces connected through shared edges.

    Attributes
    ----------
    count : int
        Number of pieces.
    label : ndarray, shape (E,)
        Piece of each cell, the cell blocks of the mesh one after another (in ``mesh.cells`` order).
    offsets : dict of str to int
        First global cell number of each cell block.
    """

    count: int
    label: np.ndarray
    offsets: dict


def _corner_edges(layout: str, k: int) -> np.ndarray:
    """Local corner-node pairs of the edges of a cell block (from its element type, else its size)."""
    try:
        from .registry import element_type

        return np.asarray(element_type(layout).edges)[:, :2]
    except Exception:  # a layout that is not an element name: corners first by convention
        c = 3 if k in (3, 6, 7) else 4
        return np.column_stack([np.arange(c), (np.arange(c) + 1) % c])


def cell_pieces(mesh) -> Pieces:
    """Split the cells of a mesh into pieces connected through shared edges.

    Two cells are in one piece when a chain of cells joins them, each sharing an edge (a pair of
    corner nodes) with the next. Cells that touch only at a node are in different pieces. One sort
    of the edge keys and one connected-components pass (no Python loop over cells).
    """
    n = np.int64(mesh.n_nodes)
    keys, offsets, starts, per = [], {}, [0], []
    off = 0
    for layout, conn in mesh.cells.items():
        ed = _corner_edges(layout, conn.shape[1])
        a, b = conn[:, ed[:, 0]], conn[:, ed[:, 1]]
        lo = np.minimum(a, b).astype(np.int64)
        lo *= n
        lo += np.maximum(a, b)
        keys.append(lo.ravel())
        offsets[layout] = off
        off += conn.shape[0]
        starts.append(starts[-1] + lo.size)
        per.append(ed.shape[0])
    if off == 1:
        return Pieces(1, np.zeros(1, np.int64), offsets)
    keys = np.concatenate(keys) if len(keys) > 1 else keys[0]
    bits = int(keys.size).bit_length()
    packed = int(n) ** 2 < 2 ** (62 - bits)
    if packed:  # key and position packed in one int64: a plain sort, no argsort
        keys <<= bits
        keys |= np.arange(keys.size, dtype=np.int64)
        keys.sort()
        ks = keys >> bits
        same = np.flatnonzero(ks[1:] == ks[:-1])
        pos_a, pos_b = keys[same] & ((1 << bits) - 1), keys[same + 1] & ((1 << bits) - 1)
    else:
        order = np.argsort(keys)
        ks = keys[order]
        same = np.flatnonzero(ks[1:] == ks[:-1])
        pos_a, pos_b = order[same], order[same + 1]
    if _one_piece(ks, same, mesh, n, off):
        return Pieces(1, np.zeros(off, np.int64), offsets)
    i, j = _edge_owner(pos_a, starts, per, list(offsets.values())), _edge_owner(pos_b, starts, per, list(offsets.values()))
    G = sp.csr_matrix((np.ones(i.size, dtype=np.int8), (i, j)), shape=(off, off))
    count, label = connected_components(G, directed=False)
    return Pieces(int(count), label.astype(np.int64), offsets)


def _one_piece(ks: np.ndarray, same: np.ndarray, mesh, n, cells: int) -> bool:
    """Whether the cells form one piece, proven by counting (no graph over the cells), else False.

    When every edge has at most two cells and every boundary node has exactly two boundary edges
    (no node where pieces or parts of a piece only touch), the cells form a surface with boundary;
    each connected piece of it is a plane region with h holes, so V - E + F = 1 - h and it has h + 1
    boundary loops (the Euler-Poincare formula): (V - E + F) + loops = 2 per piece. Only the
    boundary loops need a graph pass, and the boundary is small.
    """
    if ks.size > 2 and np.any(ks[2:] == ks[:-2]):
        return False  # an edge of three cells
    lone = np.ones(ks.size, bool)
    lone[same] = False
    lone[same + 1] = False
    bk = ks[lone]
    a, b = bk // n, bk % n
    ends, inv = np.unique(np.concatenate([a, b]), return_inverse=True)
    if ends.size and np.any(np.bincount(inv) != 2):
        return False  # a node where boundary edges meet other than in pairs: pieces touch there
    corner = np.zeros(int(n), bool)
    for layout, conn in mesh.cells.items():
        corner[conn[:, : _corner_count(layout, conn.shape[1])]] = True
    chi = int(np.count_nonzero(corner)) - (ks.size - same.size) + cells
    if ends.size:
        m = bk.size
        G = sp.csr_matrix((np.ones(m, np.int8), (inv[:m], inv[m:])), shape=(ends.size, ends.size))
        loops = connected_components(G, directed=False)[0]
    else:
        loops = 0
    return chi + loops == 2


def _corner_count(layout: str, k: int) -> int:
    return int(_corner_edges(layout, k).max()) + 1


def _edge_owner(pos: np.ndarray, starts: list, per: list, offsets: list) -> np.ndarray:
    """Global cell number of edge positions in the concatenated edge list."""
    if len(per) == 1:
        return pos // per[0]
    k = np.searchsorted(np.asarray(starts[1:]), pos, side="right")
    return np.asarray(offsets)[k] + (pos - np.asarray(starts)[k]) // np.asarray(per)[k]


def _piece_nodes(mesh, pieces: Pieces) -> tuple[np.ndarray, np.ndarray]:
    """Unique (piece, node) incidences, sorted by node then piece."""
    keys = []
    P = np.int64(pieces.count)
    for layout, conn in mesh.cells.items():
        lab = pieces.label[pieces.offsets[layout]: pieces.offsets[layout] + conn.shape[0]]
        keys.append((conn.astype(np.int64) * P + lab[:, None]).ravel())
    k = np.unique(np.concatenate(keys))
    return k % P, k // P


def _chain_pairs(body: np.ndarray, node: np.ndarray, nb: int):
    """Bodies meeting at a node, as consecutive pairs per node: (node, b1, b2) with b1 < b2."""
    key = np.unique(node.astype(np.int64) * nb + body)
    nd, bd = key // nb, key % nb
    nxt = np.flatnonzero(nd[1:] == nd[:-1])
    return nd[nxt], bd[nxt], bd[nxt + 1]


def _merge_rigid(body: np.ndarray, node: np.ndarray, count: int) -> tuple[np.ndarray, int]:
    """Merge bodies that share two or more distinct nodes (a rigid joint), until none do.

    Sound but not complete: bodies left apart are still analysed together by the linkage matrix.
    """
    while True:
        pn, b1, b2 = _chain_pairs(body, node, count)
        if pn.size == 0:
            return body, count
        pair = b1 * count + b2
        u, c = np.unique(pair, return_counts=True)  # one count per distinct node (pairs are unique per node)
        rigid = u[c >= 2]
        if rigid.size == 0:
            return body, count
        G = sp.coo_matrix((np.ones(rigid.size, np.int8), (rigid // count, rigid % count)), shape=(count, count))
        count, lab = connected_components(G, directed=False)
        body = lab[body].astype(np.int64)


# ====================================================================================== rigid motions
def rigid_body_check(mesh, cons, *, sink: list | None = None) -> None:
    """Refuse a model that can still move as a rigid body or as a mechanism, naming the free motions.

    The cells are split into pieces connected through shared edges (:func:`cell_pieces`); pieces
    that share two or more nodes are rigidly joined and merged. The rest is a linkage: each body
    has three motions (translation x, y and rotation), each node shared by bodies is a pin (two
    constraints between each pair of bodies there), each support row a constraint along its
    direction at its position. The linkage must have no motion left.

    Parameters
    ----------
    mesh : Mesh
        The mesh as analysed.
    cons : Constrained
        The supports as constraint rows (``cons.rows``: node, direction).
    sink : list, optional
        Where the ``"hinge"`` warning is kept when pieces are joined through single nodes but held.

    Raises
    ------
    SupportError
        Free rigid motions (no support, free translation or rotation, a separate piece) or a
        mechanism through hinge nodes, with the motion, the nodes and the fix.

    Notes
    -----
    A mechanism through a hinge is a :class:`SupportError`, like every other motion the supports
    leave free: it is found from the geometry and the supports before any solve, and the fix is to
    hold or join the moving piece. A hinge whose pieces are each held is no mechanism, but the force
    between the pieces passes through one node, where the stress is singular (it grows without
    bound as the mesh is refined): it gets a ``"hinge"`` warning naming the nodes.
    """
    rows = cons.rows
    used = mesh.used_nodes()
    n = mesh.n_nodes
    pieces = cell_pieces(mesh)
    if pieces.count == 1:  # the common case: one body, the supports alone decide
        xy = mesh.nodes[used] if not used.all() else mesh.nodes
        x, y = xy[:, 0], xy[:, 1]  # column by column: a reduction over axis 0 of (n, 2) is slow
        stats = _Stats(np.array([[x.mean(), y.mean()]]), np.array([[x.min(), y.min()]]),
                       np.array([[x.max(), y.max()]]), np.array([float(xy.shape[0])]))
        on = used[rows.node]
        text, _, _ = _group_check(mesh, stats, np.zeros(1, np.int64), rows.node[on], rows.direction[on],
                                  np.zeros(int(on.sum()), np.int64), (np.zeros(0, np.int64),) * 3, False,
                                  (np.zeros(0, np.int64),) * 2)
        if text:
            raise SupportError("the model can still move as a rigid body, so it has no unique answer: " + text)
        return
    node_body = np.full(n, -1, dtype=np.int64)
    pp, nn = _piece_nodes(mesh, pieces)
    body, nb = _merge_rigid(pp, nn, pieces.count)
    node_body[nn] = body
    pins = _chain_pairs(body, nn, nb)
    jkey = np.unique(nn.astype(np.int64) * nb + body)  # (node, body) incidences where bodies meet
    jn, jb = jkey // nb, jkey % nb
    multi = np.r_[jn[1:] == jn[:-1], False] | np.r_[False, jn[1:] == jn[:-1]]
    joints = (jn[multi], jb[multi])
    # bodies grouped by pins into connected groups (separate parts of the mesh)
    if nb == 1:
        ng, group = 1, np.zeros(1, np.int64)
    else:
        G = sp.coo_matrix((np.ones(pins[0].size, np.int8), (pins[1], pins[2])), shape=(nb, nb))
        ng, group = connected_components(G, directed=False)
        group = group.astype(np.int64)
    stats = _body_stats(mesh.nodes, jkey % nb, jkey // nb, nb)
    keep = (rows.node >= 0) & (rows.node < n)
    rnode = rows.node[keep]
    rbody = node_body[rnode]
    on = rbody >= 0
    rnode, rdir, rbody = rnode[on], rows.direction[keep][on], rbody[on]

    problems, kinds, hinges_held, unproven = [], set(), [], []
    if ng == 1:
        members = [(np.arange(nb), np.arange(rnode.size), np.arange(pins[0].size), np.arange(joints[0].size))]
    else:
        members = zip(_split(group, ng), _split(group[rbody], ng), _split(group[pins[1]], ng),
                      _split(group[joints[1]], ng))
    for g, (bodies, rsel, psel, jsel) in enumerate(members):
        text, kind, held = _group_check(mesh, stats, bodies, rnode[rsel], rdir[rsel], rbody[rsel],
                                        tuple(p[psel] for p in pins), ng > 1, tuple(j[jsel] for j in joints))
        if kind == "unproven":
            unproven += held
            continue
        if text:
            if ng > 1 and kind == "rigid":
                gmask = np.zeros(nb, bool)
                gmask[bodies] = True
                inside = used & (node_body >= 0) & gmask[np.maximum(node_body, 0)]
                text += _coincident_hint(mesh, np.flatnonzero(inside), used & ~inside)
            problems.append(text)
            kinds.add(kind)
        hinges_held += held
    if problems:
        if kinds == {"rigid"}:
            head = "the model can still move as a rigid body, so it has no unique answer: "
        elif kinds == {"hinge"}:
            head = "the model is a mechanism, so it has no unique answer: "
        else:
            head = "the model can still move (as a rigid body and as a mechanism), so it has no unique answer: "
        raise SupportError(head + "; ".join(problems))
    if unproven:
        nodes = sorted(set(unproven))
        warn(f"{len(nodes)} node(s) join pieces of the mesh only at single points (first: node {nodes[0]} at "
             f"{fmt_point(mesh.nodes[nodes[0]])}), in a linkage of more than {MAX_DENSE_BODIES} pieces too large "
             "to analyse before the solve; no dangling piece was found, and the check after the solve refuses a "
             "singular answer; the stresses at those nodes are singular: join the pieces along edges",
             "hinge", sink=sink, stacklevel=3)
    if hinges_held:
        nodes = sorted(set(hinges_held))
        listed = ", ".join(f"node {p} at {fmt_point(mesh.nodes[p])}" for p in nodes[:10])
        warn(f"pieces of the mesh are joined only through single nodes ({len(nodes)} hinge node(s): {listed}"
             f"{' ...' if len(nodes) > 10 else ''}); the supports hold every piece, but the whole force "
             "between the pieces passes through those nodes, so the stresses there are singular and grow "
             "as the mesh is refined: read no peak there, and join the pieces along an edge if they are "
             "meant to be one part", "hinge", sink=sink, stacklevel=3)


def _split(lab: np.ndarray, count: int) -> list[np.ndarray]:
    """Indices of each label value 0..count-1."""
    order = np.argsort(lab, kind="stable")
    bounds = np.searchsorted(lab[order], np.arange(count + 1))
    return [order[bounds[i]:bounds[i + 1]] for i in range(count)]


@dataclass
class _Stats:
    centre: np.ndarray  # (nb, 2) mean of the body's nodes
    lo: np.ndarray  # (nb, 2)
    hi: np.ndarray  # (nb, 2)
    count: np.ndarray  # (nb,) nodes

    @property
    def size(self) -> np.ndarray:
        return np.maximum(np.max(self.hi - self.lo, axis=1), 1e-300)


def _body_stats(xy: np.ndarray, b: np.ndarray, nodes: np.ndarray, nb: int) -> _Stats:
    """Mean, bounding box and node count of each body from its (body, node) incidences."""
    p = xy[nodes]
    cnt = np.bincount(b, minlength=nb).astype(float)
    c = np.column_stack([np.bincount(b, p[:, 0], nb), np.bincount(b, p[:, 1], nb)]) / np.maximum(cnt, 1)[:, None]
    from scipy import ndimage

    idx = np.arange(nb)
    lo = np.column_stack([ndimage.minimum(p[:, k], b, idx) for k in range(2)]).reshape(nb, 2)
    hi = np.column_stack([ndimage.maximum(p[:, k], b, idx) for k in range(2)]).reshape(nb, 2)
    return _Stats(c, lo, hi, cnt)


def _support_matrix(xy_rows, d, centre, L) -> np.ndarray:
    """Rows (d_x, d_y, moment arm / L) of support rows on a rigid body about ``centre``."""
    p = xy_rows - centre
    return np.column_stack([d[:, 0], d[:, 1], (-d[:, 0] * p[:, 1] + d[:, 1] * p[:, 0]) / L])


def _null(A: np.ndarray, ncols: int) -> np.ndarray:
    """Orthonormal basis of the null space of A (rows of the result), by SVD."""
    if A.shape[0] == 0:
        return np.eye(ncols)
    _, s, vt = np.linalg.svd(A, full_matrices=A.shape[0] < ncols)  # only V is needed, in full
    s = np.r_[s, np.zeros(ncols - s.size)]
    return vt[s < _SV_TOL * max(1.0, s.max())]


def _group_check(mesh, stats: _Stats, bodies, rnode, rdir, rbody, pins, several: bool, joints):
    """Free motions of one connected group of bodies: (message or "", "rigid" | "hinge" | "both", held hinge nodes)."""
    xy = mesh.nodes
    w = stats.count[bodies]
    xc = (stats.centre[bodies] * w[:, None]).sum(axis=0) / max(w.sum(), 1.0)
    lo, hi = stats.lo[bodies].min(axis=0), stats.hi[bodies].max(axis=0)
    L = max(float(np.max(hi - lo)), 1e-300)
    # the group as one rigid body: the motions the supports leave free whatever the pins do
    A = _support_matrix(xy[rnode], rdir, xc, L) if rnode.size else np.zeros((0, 3))
    free = _null(A, 3)
    texts = []
    if free.shape[0]:
        texts.append(_describe_free(free, xc, L, several, xc))
    if bodies.size == 1:
        return ("; ".join(texts), "rigid", [])
    # the linkage: 3 motions per body (ux, uy, theta * L_b about the body's centre)
    loc = np.full(int(bodies.max()) + 1, -1, dtype=np.int64)
    loc[bodies] = np.arange(bodies.size)
    Lb = stats.size[bodies]
    cb = stats.centre[bodies]
    held = np.zeros(bodies.size, bool) if free.shape[0] else _held(xy, loc, cb, Lb, rnode, rdir, rbody, joints)
    rest = np.flatnonzero(~held)  # bodies the propagation could not prove held: the linkage decides
    kind = lambda: "hinge" if len(texts) == 1 else "both"  # noqa: E731
    if rest.size == 0:
        return ("; ".join(texts), "rigid", [] if texts else pins[0].tolist())
    leaves = _hinged_leaves(xy, bodies, loc, cb, Lb, rnode, rdir, rbody, pins)
    if rest.size > MAX_DENSE_BODIES:
        if leaves:
            texts.append(leaves)
            return ("; ".join(texts), kind(), [])
        return ("; ".join(texts), "rigid" if texts else "unproven", [] if texts else pins[0].tolist())
    sub = np.full(bodies.size, -1, dtype=np.int64)  # column block of each body left, -1 for held ones
    sub[rest] = np.arange(rest.size)
    lr = np.full_like(loc, -1)
    lr[bodies] = sub
    S = _linkage_supports(xy, lr, cb[rest], Lb[rest], rnode, rdir, rbody, rest.size)
    P = _linkage_pins(xy, lr, cb, Lb, loc, pins, rest.size)
    N = _null(np.vstack([P, S]), 3 * rest.size)  # (r, 3 |rest|)
    if N.shape[0] > free.shape[0]:
        m = N.shape[0] - free.shape[0]  # motions of the linkage beyond those of the whole group
        if free.shape[0]:  # take out the free rigid motions of the whole group (every body is in rest)
            F = _group_motions(free, xc, L, cb, Lb)  # (f, 3 nbg)
            q, _ = np.linalg.qr(F.T)
            M = N.T - q @ (q.T @ N.T)
            u, s, _ = np.linalg.svd(M, full_matrices=False)
            N = u[:, :m].T
        full = np.zeros((N.shape[0], bodies.size, 3))
        full[:, rest] = N.reshape(N.shape[0], rest.size, 3)
        texts.append((leaves or _describe_mechanism(xy, full.reshape(N.shape[0], -1), bodies, loc, cb, Lb, pins, stats))
                     + (f" ({m} independent motions in all)" if m > 1 else ""))
        return ("; ".join(texts), kind(), [])
    if texts:
        return ("; ".join(texts), "rigid", [])
    return ("", "rigid", pins[0].tolist())


def _held(xy, loc, cb, Lb, rnode, rdir, rbody, joints) -> np.ndarray:
    """Bodies proven held, by propagation: own supports of rank 3, or with held joint nodes, rank 3.

    Sound, not complete: a body is marked held only when its own support rows and the rows of its
    joint nodes shared with held bodies (two each: the node cannot move) stop all three of its
    motions; the rank is read from the 3 x 3 normal matrix with a conservative margin (an eigenvalue
    ratio above 1e-10), so a doubtful body is left to the linkage matrix.
    """
    nbg = cb.shape[0]
    G0 = np.zeros((nbg, 3, 3))
    if rnode.size:
        lb = loc[rbody]
        r3 = _support_matrix(xy[rnode], rdir, cb[lb], Lb[lb])
        np.add.at(G0, lb, r3[:, :, None] * r3[:, None, :])
    jn, jb = joints
    jl = loc[jb]
    rel = (xy[jn] - cb[jl]) / Lb[jl][:, None]
    r1 = np.column_stack([np.ones(jn.size), np.zeros(jn.size), -rel[:, 1]])
    r2 = np.column_stack([np.zeros(jn.size), np.ones(jn.size), rel[:, 0]])
    Gj = r1[:, :, None] * r1[:, None, :] + r2[:, :, None] * r2[:, None, :]
    held = np.zeros(nbg, bool)
    nmax = int(jn.max()) + 1 if jn.size else 1
    while True:
        fixed_node = np.zeros(nmax, bool)
        fixed_node[jn[held[jl]]] = True
        use = fixed_node[jn] & ~held[jl]
        G = G0.copy()
        if np.any(use):
            np.add.at(G, jl[use], Gj[use])
        lam = np.linalg.eigvalsh(G)
        new = held | ((lam[:, 2] > 0) & (lam[:, 0] > 1e-10 * lam[:, 2]))
        if np.array_equal(new, held):
            return held
        held = new


def _linkage_supports(xy, loc, cb, Lb, rnode, rdir, rbody, nbg) -> np.ndarray:
    """Support rows of the linkage on the bodies with a column block (loc >= 0), at most three per
    body (compressed by QR where there are more); ``cb``, ``Lb`` are indexed by column block."""
    keep = loc[rbody] >= 0
    rnode, rdir, rbody = rnode[keep], rdir[keep], rbody[keep]
    if rnode.size == 0:
        return np.zeros((0, 3 * nbg))
    lb = loc[rbody]
    rows3 = _support_matrix(xy[rnode], rdir, cb[lb], Lb[lb])
    if rnode.size > 3 * nbg:
        parts, cols = [], []
        for b, idx in enumerate(_split(lb, nbg)):
            if idx.size:
                r = np.linalg.qr(rows3[idx], mode="r")
                parts.append(r)
                cols.append(np.full(r.shape[0], b))
        rows3 = np.vstack(parts)
        lb = np.concatenate(cols)
    S = np.zeros((rows3.shape[0], 3 * nbg))
    i = np.arange(rows3.shape[0])
    for k in range(3):
        S[i, 3 * lb + k] = rows3[:, k]
    return S


def _linkage_pins(xy, lr, cb, Lb, loc, pins, ncols) -> np.ndarray:
    """Two rows per pin: the two bodies move alike at the pin node (a held body does not move).

    ``lr`` gives each body's column block (-1 for held bodies), ``loc`` its place in ``cb``, ``Lb``.
    """
    pn, b1, b2 = pins
    c1, c2 = lr[b1], lr[b2]
    keep = (c1 >= 0) | (c2 >= 0)
    pn, b1, b2, c1, c2 = pn[keep], b1[keep], b2[keep], c1[keep], c2[keep]
    m = pn.size
    P = np.zeros((2 * m, 3 * ncols))
    for sign, b, c in ((1.0, b1, c1), (-1.0, b2, c2)):
        i = np.flatnonzero(c >= 0)
        bl, cc = loc[b[i]], c[i]
        rel = (xy[pn[i]] - cb[bl]) / Lb[bl][:, None]
        P[2 * i, 3 * cc] = sign
        P[2 * i, 3 * cc + 2] = -sign * rel[:, 1]
        P[2 * i + 1, 3 * cc + 1] = sign
        P[2 * i + 1, 3 * cc + 2] = sign * rel[:, 0]
    return P


def _group_motions(free, xc, L, cb, Lb) -> np.ndarray:
    """Rigid motions of the whole group (rows of ``free``: ux, uy, theta * L about xc) in body unknowns."""
    out = np.zeros((free.shape[0], cb.shape[0], 3))
    th = free[:, 2] / L
    out[:, :, 0] = free[:, :1] - th[:, None] * (cb[None, :, 1] - xc[1])
    out[:, :, 1] = free[:, 1:2] + th[:, None] * (cb[None, :, 0] - xc[0])
    out[:, :, 2] = th[:, None] * Lb[None, :]
    return out.reshape(free.shape[0], -1)


def _near(stats: _Stats, b: int) -> str:
    return f"the piece near {fmt_point(stats.centre[b])}"


def _describe_mechanism(xy, N, bodies, loc, cb, Lb, pins, stats) -> str:
    """Which pieces turn about which hinge nodes, and the fix."""
    pn, b1, b2 = pins
    words, nodes = [], []
    for v in N[:3]:
        v = v.reshape(-1, 3)
        theta = v[:, 2] / Lb
        scale = np.abs(v).sum(axis=1)
        S = max(scale.max(), 1e-300)
        moves = scale > 1e-6 * S
        rel = np.abs(theta[loc[b1]] - theta[loc[b2]]) * Lb.max()
        active = np.flatnonzero(rel > 1e-6 * S)
        for a in active[np.argsort(-rel[active])][:4]:
            p, i, j = int(pn[a]), int(b1[a]), int(b2[a])
            mi, mj = moves[loc[i]], moves[loc[j]]
            if mi != mj:
                mover = i if mi else j
                w = f"{_near(stats, mover)} can rotate about node {p} at {fmt_point(xy[p])}"
            else:
                w = (f"{_near(stats, i)} and {_near(stats, j)} can turn relative to each other about node {p} "
                     f"at {fmt_point(xy[p])}")
            if w not in words:
                words.append(w)
            nodes.append(p)
    nodes = sorted(set(nodes))
    listed = ", ".join(str(p) for p in nodes[:10]) + (" ..." if len(nodes) > 10 else "")
    return (f"pieces of the mesh are joined only through single nodes (hinges at node(s) {listed}) and the "
            f"supports do not stop them turning: {'; '.join(words)}; join the pieces along a shared edge "
            "(mesh the touching parts as one surface, or let their geometry overlap along a side instead of "
            "meeting at a point), or add a support on the turning piece that stops this rotation")


def _hinged_leaves(xy, bodies, loc, cb, Lb, rnode, rdir, rbody, pins) -> str:
    """For a linkage too large for a dense SVD: bodies pinned at one node whose supports let them turn."""
    pn, b1, b2 = pins
    ends = np.concatenate([b1, b2])
    at = np.concatenate([pn, pn])
    key = np.unique(ends * np.int64(xy.shape[0]) + at)
    eb, en = key // xy.shape[0], key % xy.shape[0]
    ub, first, cnt = np.unique(eb, return_index=True, return_counts=True)
    leaf = ub[cnt == 1]
    if leaf.size == 0:
        return ""
    hinge = np.full(int(bodies.max()) + 1, -1, dtype=np.int64)
    hinge[leaf] = en[first[cnt == 1]]
    onleaf = hinge[rbody] >= 0
    stops = np.zeros(int(bodies.max()) + 1, bool)
    if np.any(onleaf):
        h = hinge[rbody[onleaf]]
        arm = xy[rnode[onleaf]] - xy[h]
        d = rdir[onleaf]
        m = np.abs(-d[:, 0] * arm[:, 1] + d[:, 1] * arm[:, 0]) / Lb[loc[rbody[onleaf]]]
        np.logical_or.at(stops, rbody[onleaf], m > _SV_TOL)
    free = leaf[~stops[leaf]]
    if free.size == 0:
        return ""
    words = [f"the piece near {fmt_point(cb[loc[b]])} can rotate about node {int(hinge[b])} at "
             f"{fmt_point(xy[hinge[b]])}" for b in free[:5]]
    nodes = sorted(set(int(h) for h in hinge[free]))
    return (f"pieces of the mesh are joined only through single nodes (hinges at node(s) "
            f"{', '.join(map(str, nodes[:10]))}{' ...' if len(nodes) > 10 else ''}) and the supports do not "
            "stop them turning: "
            f"{'; '.join(words)}; join the pieces along a shared edge, or add a support on the turning piece "
            "that stops this rotation")


def _coincident_hint(mesh, members: np.ndarray, others: np.ndarray) -> str:
    """Advice when a free piece touches the rest of the mesh only through duplicate, unjoined nodes."""
    from scipy.spatial import cKDTree

    rest = np.flatnonzero(others)
    if rest.size == 0:
        return ""
    tol = 1e-9 * max(mesh.size(), 1e-300)
    d, _ = cKDTree(mesh.nodes[rest]).query(mesh.nodes[members], distance_upper_bound=tol)
    k = int(np.count_nonzero(np.isfinite(d)))
    if k == 0:
        return ""
    first = members[np.flatnonzero(np.isfinite(d))[0]]
    return (f" (its {k} node(s) at {fmt_point(mesh.nodes[first])} and elsewhere coincide with nodes of the "
            "rest of the mesh but are not joined to them: duplicate nodes; join them with "
            "mesh = mesh.merge_duplicate_nodes(), or support this piece if the gap is meant)")


def _describe_free(free, xc, L, several, centre) -> str:
    words = []
    if free.shape[0] == 3:
        words.append("translation x, translation y and rotation are all free (no support at all)")
    else:
        for v in free:
            a, b, c = v[0], v[1], v[2] / L
            if abs(v[2]) < 1e-6:
                t = np.array([a, b]) / np.hypot(a, b)
                if abs(t[0]) > 1 - 1e-6:
                    words.append("translation x is free: add a support that holds ux (Roller(..., fixed='x'), Fixed or Prescribed)")
                elif abs(t[1]) > 1 - 1e-6:
                    words.append("translation y is free: add a support that holds uy (Roller(..., fixed='y'), Fixed or Prescribed)")
                else:
                    words.append(f"translation along ({t[0]:.3g}, {t[1]:.3g}) is free: add a support that holds that direction")
            else:
                px, py = xc[0] - b / c, xc[1] + a / c
                px, py = (0.0 if abs(px) < 1e-9 * L else px), (0.0 if abs(py) < 1e-9 * L else py)
                words.append(
                    f"rotation about ({px:.6g}, {py:.6g}) is free: add a support away from that point "
                    "that holds the motion across the line joining them (e.g. a second roller)"
                )
    where = ""
    if several:
        where = f"a separate piece of the mesh near ({centre[0]:.6g}, {centre[1]:.6g}): "
    return where + ", ".join(words)


# ====================================================================================== zero-energy modes
#: a unit isotropic material (E = 1, nu = 0, plane stress): the null space of sum_q w_q B_q^T D B_q
#: is the intersection of the null spaces of the B_q for every positive definite D, so the check
#: may use the best conditioned one and keep the material's own contrast out of the eigenvalues
_D_UNIT = np.diag([1.0, 1.0, 0.5])


def _is_builtin(et) -> bool:
    return getattr(et, "name", None) in BUILTIN_ELEMENTS and str(getattr(et, "__module__", "")) == "planar.core.elements"


def _matrices(block, coords: np.ndarray, D: np.ndarray, thickness: float) -> np.ndarray:
    """Element matrices of a block's formulation on given element coordinates (m, k, 2).

    Runs :meth:`Assembly.element_matrices` itself (own stiffness hooks, selective and reduced rules
    alike), on a stand-in mesh made of the given coordinates.
    """
    from .assembly import Assembly

    m, k = coords.shape[0], coords.shape[1]
    blk = dataclasses.replace(block, cells=np.arange(m), conn=np.arange(m * k).reshape(m, k), D=D,
                              thickness=thickness, _geo={})
    shim = SimpleNamespace(mesh=SimpleNamespace(nodes=np.ascontiguousarray(coords.reshape(-1, 2))),
                           _ke=Assembly._ke)
    return Assembly.element_matrices(shim, blk, 0, m)


def _centre_map(et, coords: np.ndarray):
    """The affine map x' = J0^-1 (x - c) of each element (m, k, 2) to unit size and shape.

    Returns the mapped coordinates and J0^-1 (m, 2, 2). J0 is the Jacobian at the reference centre,
    c the mean of the nodes.
    """
    from .registry import check_plugin_array, plugin_call

    centre = np.asarray(et.ref_nodes, float)[: et.corner_count()].mean(axis=0)[None, :]
    with plugin_call("element", et, "shape_derivatives"):
        dN = et.shape_derivatives(centre)
    dN = check_plugin_array("element", et, "shape_derivatives", dN, (1, et.n_nodes, 2))[0]  # (k, 2)
    J0 = np.einsum("eki,kj->eij", coords, dN)  # J_ij = dx_i / dxi_j
    inv = np.linalg.inv(J0)
    c = coords.mean(axis=1, keepdims=True)
    return np.einsum("eij,ekj->eki", inv, coords - c), inv


def zero_energy_modes(block, nodes: np.ndarray, cells: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """Zero and negative eigenvalues of the element stiffness of some cells of a block.

    Parameters
    ----------
    block : Block
    nodes : ndarray, shape (n, 2)
        Node coordinates of the mesh.
    cells : ndarray, optional
        Positions in the block (default: all of them).

    Returns
    -------
    zero : ndarray of int, shape (m,)
        Eigenvalues with ``|lambda| <= ZERO_TOL * lambda_max`` (3 for a sound element: the rigid motions).
    negative : ndarray of int, shape (m,)
        Eigenvalues below ``-ZERO_TOL * lambda_max`` (0 for a sound element).

    Notes
    -----
    Each element is first mapped by x' = J0^-1 (x - c), J0 its Jacobian at the reference centre.
    For a formulation whose strains come from physical derivatives through the Jacobian, u is a
    zero-energy mode of the element exactly when u' = J0^T u (node by node) is one of the mapped
    element: sym(grad_x u) = 0 at a point is sym(J^T G) = 0 with G the reference gradient, and
    J^T G = (J0^-1 J)^T G' with G' = J0^T G. So the count is unchanged while size, rotation and aspect
    ratio drop out of the eigenvalues; only the distortion left in J0^-1 J spreads them. The
    material is the unit isotropic one (the null space is the same for every positive definite D).
    """
    cells = np.arange(block.n) if cells is None else np.asarray(cells, dtype=np.int64)
    et = block.etype
    out_z = np.empty(cells.size, dtype=np.int64)
    out_n = np.empty(cells.size, dtype=np.int64)
    from .assembly import CHUNK

    for s in range(0, cells.size, CHUNK):
        coords = nodes[block.conn[cells[s: s + CHUNK]]]
        mapped, _ = _centre_map(et, coords)
        K = _matrices(block, mapped, _D_UNIT, 1.0)
        lam = np.linalg.eigvalsh(0.5 * (K + K.transpose(0, 2, 1)))
        top = np.maximum(lam[:, -1], 0.0)
        tol = ZERO_TOL * top
        out_z[s: s + CHUNK] = np.sum(np.abs(lam) <= tol[:, None], axis=1)
        out_n[s: s + CHUNK] = np.sum(lam < -tol[:, None], axis=1)
    return out_z, out_n


def _rank_bound(block) -> int | None:
    """Largest possible rank of the stiffness of a standard formulation: 3 strains per point."""
    from .assembly import _reduced

    et = block.etype
    if getattr(et, "stiffness", None) is not None:
        return None
    if block.rule_mode == "selective":
        full = et.default_rule()
        return 2 * full.n_points + _reduced(et, full).n_points
    return 3 * block.rule.n_points


def _sample(block, nodes: np.ndarray) -> tuple[np.ndarray, str]:
    """Cells of a block to check: all up to SAMPLE, else the worst shaped half and an even spread."""
    if block.n <= SAMPLE:
        return np.arange(block.n), "every element"
    nc = block.etype.corner_count()
    c = nodes[block.conn[:, :nc]]
    d = np.roll(c, -1, axis=1) - c
    longest = np.max(np.sum(d * d, axis=2), axis=1)
    x, y = c[..., 0], c[..., 1]
    area = 0.5 * np.abs(np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1))
    shape = longest / np.maximum(area, 1e-300)
    worst = np.argpartition(-shape, SAMPLE // 2)[: SAMPLE // 2]
    spread = np.linspace(0, block.n - 1, SAMPLE // 2).round().astype(np.int64)
    return np.unique(np.concatenate([worst, spread])), (f"a sample of {SAMPLE} of its {block.n} elements "
                                                         "(the worst shaped half and an even spread)")


def _rule_text(block) -> str:
    rule, mode = block.rule, block.rule_mode
    if mode == "selective":
        return "selective integration (full rule on the normal terms, reduced on the shear terms)"
    if rule.cell == "quad":
        m = int(round(np.sqrt(rule.n_points)))
        what = f"the {m} x {m} Gauss rule"
    else:
        what = f"the degree-{rule.degree} triangle rule ({rule.n_points} point{'s' if rule.n_points > 1 else ''})"
    return f"{what} ({mode})"


_SELECTIVE_OK: dict = {}


def _selective_clean(block) -> bool:
    """Whether 'selective' integration leaves this element type without spurious modes (reference shape)."""
    et = block.etype
    if getattr(et, "stiffness", None) is not None:
        return False
    if et not in _SELECTIVE_OK:
        ref = np.asarray(et.ref_nodes, float)[None]
        blk = dataclasses.replace(block, conn=np.arange(et.n_nodes)[None], cells=np.arange(1), rule=et.default_rule(),
                                  rule_mode="selective", _geo={})
        z, n = zero_energy_modes(blk, ref[0])
        _SELECTIVE_OK[et] = bool(z[0] == 3 and n[0] == 0)
    return _SELECTIVE_OK[et]


def _block_modes(block, nodes: np.ndarray):
    """(cells with spurious modes (positions in the block), modes each, negative modes, how checked)."""
    bound = _rank_bound(block)
    k2 = 2 * block.etype.n_nodes
    ref = dataclasses.replace(block, conn=np.arange(block.etype.n_nodes)[None], cells=np.arange(1), _geo={})
    ref_nodes = np.asarray(block.etype.ref_nodes, dtype=float)
    if bound is not None and k2 - bound > 3:  # proven for every element: rank <= 3 per point
        z, neg = zero_energy_modes(ref, ref_nodes)  # the exact count, on the reference element
        how = (f"every element has them: the rule samples at most {bound} independent strains (three per "
               f"point{'; two of them at the full and one at the reduced points' if block.rule_mode == 'selective' else ''}), "
               f"fewer than the element's {k2 - 3} ways to deform")
        return np.arange(block.n), max(int(z[0]) - 3, k2 - bound - 3), int(neg[0]), how
    full = block.etype.default_rule()
    as_full = block.rule_mode == "full" or (
        block.rule_mode == "custom" and block.rule.n_points == full.n_points
        and np.allclose(block.rule.points, full.points) and np.allclose(block.rule.weights, full.weights))
    if _is_builtin(block.etype) and (as_full or block.rule_mode == "selective"):
        # the rank is a property of the element and rule: the reference element (every valid shape has
        # the same count; the Jacobian checks refuse degenerate ones)
        z, neg = zero_energy_modes(ref, ref_nodes)
        if z[0] > 3 or neg[0] > 0:
            return np.arange(block.n), int(z[0]) - 3, int(neg[0]), "the reference element (the rule has them on every element)"
        return np.zeros(0, np.int64), 0, 0, "the reference element"
    idx, how = _sample(block, nodes)
    z, neg = zero_energy_modes(block, nodes, idx)
    bad = (z > 3) | (neg > 0)
    if not np.any(bad):
        return np.zeros(0, np.int64), 0, 0, how
    return idx[bad], int(np.max(z[bad]) - 3), int(np.max(neg[bad])), how


def zero_energy_check(asm, *, sink: list | None = None) -> None:
    """Refuse element blocks whose stiffness has zero-energy modes beyond the three rigid motions.

    What a model allows is ``Model(..., zero_energy=...)``: ``"refuse"`` (default) raises,
    ``"warn"`` goes on with a ``"zero-energy"`` :class:`~planar.core.errors.DiscretisationWarning`
    (kept in ``sink``), ``"stabilise"`` adds :data:`STABILISATION` times the full-rule stiffness on
    the spurious modes only (see :func:`stabilised_element`) and checks that none is left.

    Which elements are checked: built-in elements (T3, T6, Q4, Q8, Q9) under their full or the
    selective rule, on the reference element once per block (their rank is a property of element and
    rule, and degenerate shapes are refused by the Jacobian checks); a standard formulation whose rule has
    fewer than (2k - 3) / 3 points is rank deficient on every element by counting (rank <= 3 per
    point), no eigenvalues needed; other reduced or custom rules and plugin elements, every element
    of blocks up to :data:`SAMPLE` cells, else a sample of that size (the worst shaped half and an
    even spread: a formulation whose rank depended on the shape would lose it first on the worst
    shaped elements).

    Raises
    ------
    SolverError
        A block with zero-energy modes (refused), or with negative-energy modes (always), naming the
        element type, region, rule and the cell ids, and the fix. It is a SolverError, the error of a
        singular stiffness, which it is (found before the factorization).
    """
    policy = getattr(asm.model, "zero_energy", "refuse")
    nodes = asm.mesh.nodes
    for i, block in enumerate(asm.blocks):
        bad, modes, neg, how = _block_modes(block, nodes)
        if bad.size == 0:
            continue
        text = _zero_energy_text(block, nodes, bad, modes, neg, how)
        if neg or policy == "refuse":
            raise SolverError(text + _zero_energy_fix(block, neg))
        if policy == "warn":
            warn(text + "; going on because the model has zero_energy='warn': where those modes are excited "
                 "the answer is wrong; use the full rule for a result you can trust", "zero-energy", sink=sink,
                 stacklevel=3)
            continue
        asm.blocks[i] = stab = dataclasses.replace(block, etype=stabilised_element(block), _geo={})
        left, more, _, _ = _block_modes(dataclasses.replace(stab, rule_mode="custom"), nodes)
        if left.size:
            raise SolverError(text + f"; zero_energy='stabilise' could not stiffen them ({more} mode(s) left, "
                              "the element's full-rule stiffness has them too): " + _zero_energy_fix(block, 0))


def _zero_energy_text(block, nodes, bad, modes, neg, how) -> str:
    et = block.etype
    ids = block.cells[bad]
    head = f"all {block.n} elements" if bad.size == block.n else f"{bad.size} element(s)"
    where = (f"{head} of cell block {block.layout!r} (cell ids {ids[:10].tolist()}{' ...' if ids.size > 10 else ''}, "
             f"the first near {fmt_point(nodes[block.conn[bad[0]]].mean(axis=0))})")
    if neg:
        return (f"{et.name} elements of region {block.region!r} with {_rule_text(block)} have {neg} negative-energy "
                f"mode(s): their stiffness is not positive semi-definite, which no elastic element may be: {where}; "
                f"checked on {how}")
    return (f"{et.name} elements of region {block.region!r} with {_rule_text(block)} have {modes} zero-energy "
            f"mode(s) each beyond the three rigid-body motions, so the stiffness is singular: those modes deform "
            f"an element without straining it at the integration points (hourglass modes), and the answer can "
            f"be wrong by any amount, even in sign: {where}; {how if how.startswith('every element has') else 'checked on ' + how}")


def _zero_energy_fix(block, neg) -> str:
    et = block.etype
    if neg or getattr(et, "stiffness", None) is not None:
        from .registry import describe_provider

        return (f"; the element's own stiffness ({describe_provider('element', et)}) is at fault: use another "
                "element type or report it to the plugin's authors" + ("" if neg else
                "; Model(..., zero_energy='warn' or 'stabilise') goes on at your own risk"))
    alt = ""
    if block.rule_mode != "selective" and _selective_clean(block):
        alt = f", or quadrature={{{et.name!r}: 'selective'}} (full normal terms, reduced shear terms)"
    return (f"; use the full rule (drop the quadrature setting for {et.name!r} or set it to 'full'){alt}; or, "
            "knowing the risk, Model(..., zero_energy='stabilise') (a small stiffness on those modes only) "
            "or zero_energy='warn'")


def stabilised_element(block, alpha: float | None = None) -> type:
    """The block's element type with a stiffness on its spurious zero-energy modes only.

    K = K_rule + alpha P K_full P, with K_rule the block's own (under-integrated) stiffness, K_full the
    stiffness of the element's shape functions under its full rule and P the orthogonal projector on
    the spurious modes made orthogonal to the six linear displacement fields. The linear fields (the
    rigid motions and the constant strains) are untouched, so the patch test still holds, and a
    rectangle's Q4 under the one-point rule gets exactly its full-rule stiffness at alpha = 1 (the
    idea of D. P. Flanagan and T. Belytschko, Int. J. Numer. Methods Eng. 17, 1981: hourglass
    stiffness on hourglass vectors made orthogonal to the linear field).

    Parameters
    ----------
    block : Block
    alpha : float, optional
        The fraction (default :data:`STABILISATION`).

    Returns
    -------
    type
        A subclass of the block's element type with a ``stiffness`` hook (one class per element type,
        rule mode and fraction, so results of separate solves compare alike).
    """
    from .assembly import Assembly, Block

    a = STABILISATION if alpha is None else float(alpha)
    base, mode = block.etype, block.rule_mode
    key = (base, mode, a)  # one class per element, rule mode and fraction: results of two solves compare alike
    if key in _STABILISED:
        return _STABILISED[key]

    def stiffness(cls, coords, D, thickness, rule):
        n = coords.shape[0]
        blk = Block(base, base.name, "", np.arange(n), np.arange(n * base.n_nodes).reshape(n, -1), None,
                    thickness, D, rule, mode)
        K = _matrices(blk, coords, D, thickness)
        Kf = Assembly._ke(base, coords, D, thickness, base.default_rule())
        P = _spurious_projector(blk, coords)
        return K + a * (P @ Kf @ P)

    _STABILISED[key] = cls = type(base.__name__, (base,), {
        "stiffness": classmethod(stiffness), "stabilisation": a, "__module__": base.__module__,
        "__doc__": f"{base.name} with {a:g} of its full-rule stiffness on its zero-energy modes"})
    return cls


_STABILISED: dict = {}


def _spurious_projector(block, coords: np.ndarray) -> np.ndarray:
    """Orthogonal projectors (m, 2k, 2k) on the spurious modes of each element, off the linear fields."""
    m, k = coords.shape[0], coords.shape[1]
    mapped, inv = _centre_map(block.etype, coords)
    K = _matrices(block, mapped, _D_UNIT, 1.0)
    lam, V = np.linalg.eigh(0.5 * (K + K.transpose(0, 2, 1)))
    zero = np.abs(lam) <= ZERO_TOL * np.maximum(lam[:, -1:], 0.0)
    z = zero.sum(axis=1)
    N = (V * zero[:, None, :]).reshape(m, k, 2, 2 * k)
    N = np.einsum("eji,ekjc->ekic", inv, N).reshape(m, 2 * k, 2 * k)  # u = J0^-T u' at every node
    c = coords - coords.mean(axis=1, keepdims=True)
    h = np.maximum(np.abs(c).max(axis=(1, 2)), 1e-300)[:, None]
    X, Y = c[..., 0] / h, c[..., 1] / h
    lin = np.zeros((m, k, 2, 6))
    lin[:, :, 0, 0] = 1.0
    lin[:, :, 1, 1] = 1.0
    lin[:, :, 0, 2], lin[:, :, 0, 3] = X, Y
    lin[:, :, 1, 4], lin[:, :, 1, 5] = X, Y
    Q, _ = np.linalg.qr(lin.reshape(m, 2 * k, 6))
    M = N - Q @ (Q.transpose(0, 2, 1) @ N)
    U, _, _ = np.linalg.svd(M)
    keep = np.arange(2 * k)[None, :] < (z - 3)[:, None]
    Us = U * keep[:, None, :]
    return Us @ Us.transpose(0, 2, 1)
