"""The mesh: node coordinates, cell blocks by element type, and named sets.

A mesh built by a geometry script and a mesh read from a file (through meshio) are the same object,
so everything after this point works on numpy arrays alone.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from .errors import InputError, MeshError, PlanarError, PlanarWarning, fmt_point, unknown_name
from .layouts import from_file_cells, layout, layouts, meshio_to_layout

__all__ = ["Mesh", "MESHIO_TO_LAYOUT", "LAYOUT_TO_MESHIO"]

#: node coordinates beyond these make squares of Jacobians overflow or vanish in double precision
_MAX_COORD = 1e100
_MIN_EXTENT = 1e-100
#: default distance, relative to the mesh size, under which two nodes count as one point
DUPLICATE_TOL = 1e-9

_EDGE_TYPES = {"line": 2, "line3": 3}


def __getattr__(name: str):
    """``MESHIO_TO_LAYOUT`` and ``LAYOUT_TO_MESHIO``, derived from the registered element types."""
    if name == "MESHIO_TO_LAYOUT":
        return meshio_to_layout()
    if name == "LAYOUT_TO_MESHIO":
        return {k: v.meshio_type for k, v in layouts().items()}
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def _index_dtype(n: int):
    return np.int32 if n < 2**31 - 1 else np.int64


def read_meshio(path: str | os.PathLike, what: str = "mesh file", *, changed: str = "error"):
    """Read a file with meshio, quietly; every failure becomes a MeshError naming the file.

    meshio raises many kinds of exception, prints to the terminal, and calls ``sys.exit`` on some
    content; none of that reaches the user. A .vtu file written by planar is first compared with the
    digest it carries (:func:`planar.core.digest.check_digest`; ``changed`` says what to do when it
    no longer matches); files from elsewhere carry none and read as before.

    Returns
    -------
    meshio.Mesh
    """
    import contextlib
    import io

    import meshio

    from .digest import check_digest

    path = os.fspath(path)
    if not os.path.exists(path):
        raise MeshError(f"{what} {path!r} does not exist")
    if os.path.isdir(path):
        raise MeshError(f"{path!r} is a folder, not a {what}")
    _check_complete(path)
    if os.path.splitext(path)[1].lower() == ".vtu":
        check_digest(path, what=what, changed=changed)
    chatter = io.StringIO()
    try:
        with contextlib.redirect_stdout(chatter), contextlib.redirect_stderr(chatter):
            return meshio.read(path)
    except (Exception, SystemExit) as exc:
        said = " ".join(chatter.getvalue().split())[-300:]
        cause = (said or "unreadable") if isinstance(exc, SystemExit) else f"{type(exc).__name__}: {exc}"
        raise MeshError(
            f"cannot read {what} {path!r} ({cause}); it may be damaged or of another format: "
            "give a complete gmsh .msh (version 2 or 4) or a VTK .vtu file"
        ) from None


def _legacy_gmsh_sets(m, kinds: list) -> dict[str, list]:
    """Named sets of a gmsh version 2 file, which meshio gives as field data and cell data.

    A version 4 file gives its physical groups as ``cell_sets``; a version 2 file gives their names
    in ``field_data`` (name -> [tag, dimension]) and each cell's group tag in the cell data
    ``gmsh:physical``. Each named group becomes the ids, per cell block, of the cells of its
    dimension that carry its tag.
    """
    tags = (m.cell_data or {}).get("gmsh:physical")
    if not tags or not m.field_data:
        return {}
    dims = {"cell": 2, "edge": 1, "points": 1, "vertex": 0}
    out = {}
    for name, data in m.field_data.items():
        data = np.asarray(data).ravel()
        if data.size < 2:
            continue
        tag, dim = int(data[0]), int(data[1])
        out[name] = [np.flatnonzero(np.asarray(t) == tag) if dims.get(k) == dim else None
                     for k, t in zip(kinds, tags)]
    return out


@dataclass
class Mesh:
    """A 2D finite-element mesh with named sets.

    Parameters
    ----------
    nodes : array_like, shape (n, 2)
        Node coordinates in the user's length unit.
    cells : mapping of str to array_like of shape (e, k)
        Cell blocks keyed by element layout name (``"T3"``, ``"T6"``, ``"Q4"``, ``"Q8"``, ``"Q9"``,
        or a plugin's layout), each row the node numbers of one cell in the element's node order.
    edge_sets : mapping of str to array_like of shape (m, 2) or (m, 3), optional
        Named boundary pieces as edge segments, nodes ordered (start, end[, middle]).
    node_sets : mapping of str to array_like of int, optional
        Named node groups (single points for point forces and point supports, or any group).
    regions : mapping of str to mapping of str to array_like of int, optional
        Named regions: for each, the cell indices in each cell block. Cells in no named region belong
        to the region ``"plate"``.
    slits : bool or sequence of str, optional
        Slits (cracks) the user means: names of edge sets along their faces, or True for every line
        of distinct nodes at the same point. Elsewhere, nodes at one point that are not joined, and
        nodes inside a neighbouring cell's side, are refused as a non-conforming mesh when the model
        is solved (:func:`planar.core.assembly.prepare`).

    Notes
    -----
    Every edge set also defines a node set of the same name (its unique nodes) unless a node set of
    that name is given.
    """

    nodes: np.ndarray
    cells: dict[str, np.ndarray]
    edge_sets: dict[str, np.ndarray] = field(default_factory=dict)
    node_sets: dict[str, np.ndarray] = field(default_factory=dict)
    regions: dict[str, dict[str, np.ndarray]] = field(default_factory=dict)
    slits: bool | tuple[str, ...] = ()

    def __repr__(self) -> str:
        # a summary, not the arrays: print(mesh) of a real part printed thousands of coordinates
        blocks = ", ".join(f"{np.asarray(c).shape[0]} {k}" for k, c in self.cells.items())
        names = self.names()
        return (f"Mesh({self.n_nodes} nodes; cells {blocks or 'none'}; edges {names['edges']}; "
                f"points {names['points']}; regions {names['regions']})")

    def __post_init__(self) -> None:
        try:
            nodes = np.asarray(self.nodes, dtype=float)
        except (TypeError, ValueError) as exc:
            raise MeshError(f"node coordinates must be an (n, 2) array of numbers ({exc})") from None
        if nodes.ndim != 2 or nodes.shape[1] not in (2, 3):
            raise MeshError(f"node coordinates must have shape (n, 2), got {nodes.shape}")
        if nodes.shape[1] == 3:
            if np.any(np.abs(nodes[:, 2]) > 1e-12 * max(1.0, np.abs(nodes).max())):
                raise MeshError("the mesh is not flat: node z coordinates are not all zero")
            nodes = nodes[:, :2]
        if nodes.shape[0] == 0:
            raise MeshError("the mesh has no nodes")
        if not np.all(np.isfinite(nodes)):
            raise MeshError("node coordinates contain NaN or infinite values")
        big = float(np.abs(nodes).max())
        extent = float(np.ptp(nodes, axis=0).max())
        if big > _MAX_COORD or 0 < extent < _MIN_EXTENT:
            raise MeshError(
                f"node coordinates span {extent:.3g} with values up to {big:.3g}, outside the range planar "
                f"computes safely (sizes {_MIN_EXTENT:g} to {_MAX_COORD:g}); check the length unit"
            )
        self.nodes = np.ascontiguousarray(nodes)
        n = nodes.shape[0]
        idt = _index_dtype(n)
        cells = {}
        if not isinstance(self.cells, Mapping):
            raise MeshError(
                "cells must be a mapping from element layout to an (e, k) array, e.g. {'T3': [[0, 1, 2]]}; "
                f"got {type(self.cells).__name__}"
            )
        for name, block in dict(self.cells).items():
            try:
                block = np.asarray(block)
            except (TypeError, ValueError) as exc:
                raise MeshError(f"cell block {name!r} must be a 2D integer array ({exc})") from None
            if block.size == 0:
                continue
            if block.ndim != 2 or not np.issubdtype(block.dtype, np.integer):
                raise MeshError(f"cell block {name!r} must be a 2D integer array, got {block.dtype} {block.shape}")
            known = layout(name)
            k = known.n_nodes if known is not None else None
            if k is not None and block.shape[1] != k:
                raise MeshError(f"cell block {name!r} has {block.shape[1]} nodes per cell, expected {k}")
            if block.min() < 0 or block.max() >= n:
                raise MeshError(f"cell block {name!r} refers to node numbers outside 0..{n - 1}")
            cells[name] = np.ascontiguousarray(block, dtype=idt)
        if not cells:
            raise MeshError("the mesh has no 2D cells (triangles or quadrilaterals)")
        self.cells = cells
        edge_sets = {}
        for name, seg in dict(self.edge_sets).items():
            try:
                seg = np.asarray(seg)
            except (TypeError, ValueError):
                seg = np.zeros(0)
            if seg.ndim != 2 or seg.shape[1] not in (2, 3) or (seg.size and not np.issubdtype(seg.dtype, np.integer)):
                raise MeshError(f"edge set {name!r} must be an integer array of shape (m, 2) or (m, 3) "
                                f"(node numbers start, end[, middle]), got {seg.dtype} {seg.shape}")
            if seg.size and (seg.min() < 0 or seg.max() >= n):
                raise MeshError(f"edge set {name!r} refers to node numbers outside 0..{n - 1}")
            edge_sets[str(name)] = np.ascontiguousarray(seg, dtype=idt)
        self.edge_sets = edge_sets
        node_sets = {}
        for name, ids in dict(self.node_sets).items():
            try:
                ids = np.unique(np.asarray(ids, dtype=np.int64).ravel())
            except (TypeError, ValueError):
                raise MeshError(f"node set {name!r} must list node numbers (integers), got {ids!r}"[:200]) from None
            if ids.size and (ids.min() < 0 or ids.max() >= n):
                raise MeshError(f"node set {name!r} refers to node numbers outside 0..{n - 1}")
            node_sets[str(name)] = ids.astype(idt)
        for name, seg in edge_sets.items():
            node_sets.setdefault(name, np.unique(seg).astype(idt))
        self.node_sets = node_sets
        regions = {}
        for name, blocks in dict(self.regions).items():
            reg = {}
            for t, ids in dict(blocks).items():
                if t not in cells:
                    raise MeshError(f"region {name!r} names cell block {t!r}, which the mesh lacks; "
                                    f"its blocks are {', '.join(map(repr, cells))}")
                try:
                    ids = np.unique(np.asarray(ids, dtype=np.int64).ravel())
                except (TypeError, ValueError):
                    raise MeshError(f"region {name!r} must list cell numbers (integers) per block") from None
                if ids.size and (ids.min() < 0 or ids.max() >= cells[t].shape[0]):
                    raise MeshError(f"region {name!r} refers to cells outside block {t!r}")
                reg[t] = ids
            regions[str(name)] = reg
        self.regions = regions
        self.slits = self._check_slits(self.slits)

    def _check_slits(self, slits) -> "bool | tuple[str, ...]":
        if slits is None or slits is False:
            return ()
        if slits is True:
            return True
        names = (slits,) if isinstance(slits, str) else slits
        try:
            names = tuple(str(n) for n in names)
        except TypeError:
            raise MeshError(f"slits must be True or a list of edge set names, got {slits!r}"[:200]) from None
        for n in names:
            if n not in self.edge_sets:
                raise unknown_name("edge", n, self.edge_sets,
                                   "a slit is declared by the name of an edge set along its faces")
        return names

    # ------------------------------------------------------------------ sizes and names
    @property
    def n_nodes(self) -> int:
        return int(self.nodes.shape[0])

    @property
    def n_cells(self) -> int:
        return int(sum(b.shape[0] for b in self.cells.values()))

    @property
    def n_dofs(self) -> int:
        """Unknowns before supports: two per node."""
        return 2 * self.n_nodes

    def names(self) -> dict[str, list[str]]:
        """The names a user can refer to: edges, points (node sets) and regions."""
        return {
            "edges": sorted(self.edge_sets),
            "points": sorted(k for k in self.node_sets if k not in self.edge_sets),
            "regions": sorted(self.region_names()),
        }

    def region_names(self) -> list[str]:
        names = list(self.regions)
        if self._unassigned_mask_any():
            names.append("plate")
        return names

    def _unassigned_mask_any(self) -> bool:
        for t, block in self.cells.items():
            used = np.zeros(block.shape[0], dtype=bool)
            for reg in self.regions.values():
                if t in reg:
                    used[reg[t]] = True
            if not used.all():
                return True
        return False

    def edge(self, name: str) -> np.ndarray:
        """Edge segments of the edge set ``name``, shape (m, 2) or (m, 3)."""
        if name not in self.edge_sets:
            raise unknown_name("edge", name, self.edge_sets)
        return self.edge_sets[name]

    def nodes_of(self, name: str) -> np.ndarray:
        """Node numbers of a named edge or point set."""
        if name not in self.node_sets:
            raise unknown_name("edge or point", name, self.node_sets)
        return self.node_sets[name]

    def region_cells(self, name: str) -> dict[str, np.ndarray]:
        """Cell indices per block of region ``name`` (``"plate"`` is every cell in no named region)."""
        if name in self.regions:
            return self.regions[name]
        if name == "plate" and "plate" not in self.regions:
            out = {}
            for t, block in self.cells.items():
                used = np.zeros(block.shape[0], dtype=bool)
                for reg in self.regions.values():
                    if t in reg:
                        used[reg[t]] = True
                out[t] = np.flatnonzero(~used)
            return out
        raise unknown_name("region", name, self.region_names())

    def region_ids(self) -> tuple[list[str], dict[str, np.ndarray]]:
        """Region number of every cell: (names, {block: (e,) int array indexing names})."""
        names = self.region_names()
        ids = {t: np.full(b.shape[0], -1, dtype=np.int32) for t, b in self.cells.items()}
        for i, name in enumerate(names):
            for t, c in self.region_cells(name).items():
                ids[t][c] = np.where(ids[t][c] < 0, i, ids[t][c])
        return names, ids

    def bounding_box(self) -> tuple[float, float, float, float]:
        x, y = self.nodes[:, 0], self.nodes[:, 1]  # per column: 100x faster than min(axis=0) on (n, 2)
        return float(x.min()), float(y.min()), float(x.max()), float(y.max())

    def size(self) -> float:
        """Diagonal of the bounding box (a length scale for tolerances)."""
        x0, y0, x1, y1 = self.bounding_box()
        return float(np.hypot(x1 - x0, y1 - y0))

    def used_nodes(self) -> np.ndarray:
        """Boolean mask of nodes that belong to at least one cell."""
        used = np.zeros(self.n_nodes, dtype=bool)
        for block in self.cells.values():
            used[block.ravel()] = True
        return used

    def nearest_node(self, point) -> int:
        """Number of the node closest to ``point`` (x, y)."""
        p = np.asarray(point, dtype=float).reshape(2)
        used = np.flatnonzero(self.used_nodes())
        d = np.sum((self.nodes[used] - p) ** 2, axis=1)
        return int(used[np.argmin(d)])

    def with_nodes(self, nodes: np.ndarray) -> "Mesh":
        """The same mesh with other node coordinates (e.g. the deformed shape)."""
        return Mesh(nodes, self.cells, self.edge_sets, self.node_sets, self.regions, slits=self.slits)

    def summary(self) -> str:
        blocks = ", ".join(f"{b.shape[0]} {t}" for t, b in self.cells.items())
        return f"{self.n_nodes} nodes, {blocks}; edges: {', '.join(sorted(self.edge_sets)) or '-'}"

    # ------------------------------------------------------------------ coincident nodes
    def _tolerance(self, tol: float | None) -> float:
        if tol is None:
            return DUPLICATE_TOL * max(self.size(), 1e-300)
        try:
            t = float(tol)
        except (TypeError, ValueError):
            raise InputError(f"tol must be a distance (a number), got {tol!r}") from None
        if not (np.isfinite(t) and t >= 0):
            raise InputError(f"tol must be a non-negative finite distance, got {tol!r}")
        return t

    def duplicate_nodes(self, tol: float | None = None, *, used_only: bool = False) -> np.ndarray:
        """Pairs of distinct nodes that lie at the same point.

        Parameters
        ----------
        tol : float, optional
            Largest distance between nodes taken as one point; default 1e-9 times the mesh size.
        used_only : bool
            Only nodes that belong to cells.

        Returns
        -------
        ndarray, shape (p, 2)
            Node numbers (i, j) with i < j, sorted.
        """
        from scipy.spatial import cKDTree

        t = self._tolerance(tol)
        ids = np.flatnonzero(self.used_nodes()) if used_only else np.arange(self.n_nodes)
        if ids.size < 2:
            return np.zeros((0, 2), dtype=np.int64)
        pairs = cKDTree(self.nodes[ids]).query_pairs(t, output_type="ndarray")
        if pairs.size == 0:
            return np.zeros((0, 2), dtype=np.int64)
        pairs = np.sort(ids[pairs], axis=1)
        return pairs[np.lexsort((pairs[:, 1], pairs[:, 0]))]

    def merge_duplicate_nodes(self, tol: float | None = None) -> "Mesh":
        """The same mesh with coincident nodes joined into one (the lowest-numbered of each group).

        Use it for a mesh file whose parts were exported with their own copies of the shared nodes
        (the parts would otherwise not be joined: a crack along every such line). Cells, edge sets
        and point sets are renumbered; the copies are dropped.

        Parameters
        ----------
        tol : float, optional
            Largest distance between nodes taken as one point; default 1e-9 times the mesh size.

        Returns
        -------
        Mesh
            ``self`` when there is nothing to merge.

        Examples
        --------
        >>> import numpy as np
        >>> m = Mesh(np.array([[0, 0], [1, 0], [0, 1], [1, 0], [1, 1], [0, 1.0]]),
        ...          {"T3": np.array([[0, 1, 2], [3, 4, 5]])})
        >>> m.merge_duplicate_nodes().n_nodes
        4
        """
        import scipy.sparse as sp
        from scipy.sparse.csgraph import connected_components

        pairs = self.duplicate_nodes(tol)
        if pairs.shape[0] == 0:
            return self
        n = self.n_nodes
        G = sp.coo_matrix((np.ones(pairs.shape[0]), (pairs[:, 0], pairs[:, 1])), shape=(n, n))
        _, label = connected_components(G, directed=False)
        rep = np.full(label.max() + 1, n, dtype=np.int64)
        np.minimum.at(rep, label, np.arange(n))
        target = rep[label]  # every node -> the lowest-numbered node at its point
        keep = target == np.arange(n)
        renum = (np.cumsum(keep) - 1)[target]
        cells = {t: renum[c] for t, c in self.cells.items()}
        edges = {k: renum[v] for k, v in self.edge_sets.items()}
        points = {k: renum[v] for k, v in self.node_sets.items() if k not in self.edge_sets}
        return Mesh(self.nodes[keep], cells, edges, points, self.regions, slits=self.slits)

    # ------------------------------------------------------------------ file input
    @classmethod
    def read(cls, path: str | os.PathLike, *, merge_duplicates: bool | None = None,
             slits: bool | tuple[str, ...] = ()) -> "Mesh":
        """Read a mesh file through meshio (gmsh .msh with physical groups as named sets, .vtu).

        Parameters
        ----------
        path : str or path-like
        merge_duplicates : bool, optional
            What to do with distinct nodes of cells that lie at the same point (parts exported with
            their own copies of shared nodes are not joined there, like a crack): ``True`` joins them
            (:meth:`merge_duplicate_nodes`), ``False`` keeps them (a crack the user means), and
            ``None`` (default) keeps them with a :class:`~planar.core.errors.PlanarWarning`. Kept
            duplicates that open a slit inside one piece of the mesh are refused when the model is
            solved, unless ``merge_duplicates=False`` or ``slits`` declares them.
        slits : bool or sequence of str, optional
            Slits (cracks) the file means: names of its edge sets (physical lines) along their faces,
            or True for every line of coincident nodes (see :class:`Mesh`).

        Raises
        ------
        MeshError
            If the file is missing, empty, truncated, of an unknown format, or holds no 2D cells.
        """
        path = os.fspath(path)
        m = read_meshio(path)
        try:
            mesh = cls.from_meshio(m)
        except MeshError as exc:
            raise MeshError(f"mesh file {path!r}: {exc}") from None
        except (IndexError, KeyError, TypeError, ValueError) as exc:  # sets that point outside the blocks
            raise MeshError(f"mesh file {path!r} is inconsistent ({type(exc).__name__}: {exc}); write it "
                            "again") from None
        if merge_duplicates is False and not slits:
            slits = True  # the duplicates are a crack the user means
        if slits:
            try:
                mesh = cls(mesh.nodes, mesh.cells, mesh.edge_sets, mesh.node_sets, mesh.regions, slits=slits)
            except PlanarError as exc:
                raise type(exc)(f"mesh file {path!r}: {exc}") from None
        if merge_duplicates:
            return mesh.merge_duplicate_nodes()
        if merge_duplicates is None:
            pairs = mesh.duplicate_nodes(used_only=True)
            if pairs.shape[0]:
                import warnings

                warnings.warn(
                    f"mesh file {path!r} has {pairs.shape[0]} pair(s) of distinct nodes at the same point "
                    f"(first: nodes {pairs[0, 0]} and {pairs[0, 1]} at {fmt_point(mesh.nodes[pairs[0, 0]])}); "
                    "the cells there are not joined, like a crack. Join them with "
                    "Mesh.read(path, merge_duplicates=True) or mesh.merge_duplicate_nodes(), or pass "
                    "merge_duplicates=False if the crack is meant",
                    PlanarWarning, stacklevel=2,
                )
        return mesh

    @classmethod
    def from_meshio(cls, m) -> "Mesh":
        """Build a Mesh from a ``meshio.Mesh``; gmsh physical groups become named sets."""
        pts = np.asarray(m.points, dtype=float)
        cells: dict[str, list[np.ndarray]] = {}
        edges_blocks: list[tuple[int, str, np.ndarray]] = []
        vertex_blocks: list[tuple[int, np.ndarray]] = []
        offsets: list[tuple[str, int] | None] = []
        kinds = []  # per block: "cell", "edge", "vertex", "points" (higher-order lines) or None
        for bi, block in enumerate(m.cells):
            data = np.asarray(block.data)
            found = from_file_cells(block.type, data.shape[1]) if data.ndim == 2 else None
            kinds.append("cell" if found else "edge" if block.type in _EDGE_TYPES else
                         "vertex" if block.type == "vertex" else
                         "points" if block.type.startswith("line") else None)
            if found:
                lay, cols = found
                data = data if cols is None else data[:, cols]
                start = sum(c.shape[0] for c in cells.get(lay, []))
                cells.setdefault(lay, []).append(data)
                offsets.append((lay, start))
            elif block.type in _EDGE_TYPES:
                edges_blocks.append((bi, block.type, data))
                offsets.append(None)
            elif block.type == "vertex":
                vertex_blocks.append((bi, data))
                offsets.append(None)
            else:
                offsets.append(None)
        if not cells:
            raise MeshError("the mesh file holds no triangles or quadrilaterals")
        cell_arrays = {k: np.vstack(v) for k, v in cells.items()}
        edge_sets: dict[str, list[np.ndarray]] = {}
        node_sets: dict[str, list[np.ndarray]] = {}
        regions: dict[str, dict[str, list[np.ndarray]]] = {}
        for name, per_block in (m.cell_sets or _legacy_gmsh_sets(m, kinds)).items():
            if name.startswith("gmsh:"):
                continue
            for bi, ids in enumerate(per_block):
                if ids is None or len(ids) == 0 or bi >= len(m.cells):
                    continue
                ids = np.asarray(ids, dtype=np.int64)
                block = m.cells[bi]
                if kinds[bi] == "cell":
                    lay, start = offsets[bi]
                    regions.setdefault(name, {}).setdefault(lay, []).append(ids + start)
                elif kinds[bi] == "edge":
                    edge_sets.setdefault(name, []).append(np.asarray(block.data)[ids])
                elif kinds[bi] in ("vertex", "points"):  # lines of more than 3 nodes: their nodes
                    node_sets.setdefault(name, []).append(np.asarray(block.data)[ids].ravel())
        regions_out = {n: {t: np.concatenate(v) for t, v in d.items()} for n, d in regions.items()}
        # a single region covering everything carries no information beyond "plate"
        mesh = cls(
            pts,
            cell_arrays,
            edge_sets={n: np.vstack(v) for n, v in edge_sets.items()},
            node_sets={n: np.concatenate(v) for n, v in node_sets.items()},
            regions=regions_out,
        )
        return mesh


#: the sections a gmsh .msh file (version 2 or 4) can end with
_GMSH_SECTIONS = (b"MeshFormat", b"PhysicalNames", b"Entities", b"PartitionedEntities", b"Nodes", b"Elements",
                  b"Periodic", b"GhostElements", b"Parametrizations", b"NodeData", b"ElementData",
                  b"ElementNodeData", b"InterpolationScheme")
_ENDINGS = {".msh": (b"$End", "the end of a gmsh section ($EndElements, ...)"),
            ".vtu": (b"</VTKFile>", "</VTKFile>")}


def _check_complete(path: str) -> None:
    """Refuse a .msh or .vtu file that stops before its closing mark (cut off while written or copied)."""
    ext = os.path.splitext(path)[1].lower()
    size = os.path.getsize(path)
    if size == 0:
        raise MeshError(f"mesh file {path!r} is empty (0 bytes); write it again")
    if ext not in _ENDINGS:
        return
    mark, words = _ENDINGS[ext]
    with open(path, "rb") as fh:
        fh.seek(max(0, size - 512))
        tail = fh.read().rstrip()
    last = tail.rsplit(b"\n", 1)[-1].strip()
    if mark == b"$End":
        complete = last.startswith(mark) and last[len(mark):] in _GMSH_SECTIONS
    else:
        complete = last.endswith(mark)
    if not complete:
        raise MeshError(
            f"mesh file {path!r} looks truncated: it does not end with {words} as a complete {ext} file "
            "does (was it still being written or copied?); write or copy it again"
        )
