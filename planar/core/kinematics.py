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

The linkage analysis and its wording live in :mod:`planar.core._linkage`, the element checks in
:mod:`planar.core._zero_energy`; their names are importable from here as before.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from ._linkage import (_SV_TOL, _Stats, _body_stats, _coincident_hint, _describe_free,  # noqa: F401
                       _describe_mechanism, _group_check, _group_motions, _held, _hinged_leaves,
                       _linkage_pins, _linkage_supports, _near, _null, _split, _support_matrix)
from ._zero_energy import (BUILTIN_ELEMENTS, SAMPLE, STABILISATION, ZERO_ENERGY_CHOICES,  # noqa: F401
                           ZERO_TOL, _D_UNIT, _block_modes, _centre_map, _is_builtin, _matrices,
                           _rank_bound, _rule_text, _sample, _selective_clean, _spurious_projector,
                           _zero_energy_fix, _zero_energy_text, stabilised_element, zero_energy_check,
                           zero_energy_modes)
from .errors import SupportError, fmt_point, warn

__all__ = ["rigid_body_check", "cell_pieces", "Pieces", "zero_energy_check", "zero_energy_modes",
           "stabilised_element", "ZERO_ENERGY_CHOICES", "ZERO_TOL", "STABILISATION", "BUILTIN_ELEMENTS",
           "pending_warnings"]

#: bodies (pieces after rigid merging) of one connected group, not proven held by propagation, solved
#: by a dense SVD of the linkage (3 columns each: about 1 s at 250 on this machine's two cores);
#: above it only hinged leaves are looked for, and the check after the solve is the net
MAX_DENSE_BODIES = 250



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
                                  (np.zeros(0, np.int64),) * 2, MAX_DENSE_BODIES)
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
                                        tuple(p[psel] for p in pins), ng > 1, tuple(j[jsel] for j in joints),
                                        MAX_DENSE_BODIES)
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
