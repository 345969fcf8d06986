"""The element checks made before assembly: element types, rules, Jacobians, orientation and overlaps.

:func:`prepare` is called by :class:`planar.core.assembly.Assembly` (through that module, so
``planar.core.assembly.prepare`` is the one that runs).
"""
from __future__ import annotations

import numpy as np

from . import validity
from ._element_maps import CHUNK
from .errors import ElementError, InputError, MeshError, fmt_point
from .mesh import Mesh
from .quadrature import Rule, rule_for
from .registry import element_type

__all__ = ["prepare"]


def _reduced(etype, rule_full: Rule) -> Rule:
    if etype.cell == "quad":
        n = int(round(np.sqrt(rule_full.n_points)))
        return rule_for("quad", max(1, n - 1))
    return rule_for("triangle", max(1, rule_full.degree - 1))


def prepare(mesh: Mesh, elements: dict[str, str] | None = None, *, distortion_limit: float = 1e-3) -> Mesh:
    """Check every element and the joins between them; return the mesh with clockwise elements turned round.

    Each element's Jacobian determinant is bounded over the whole element, not only at sample
    points (Bernstein bounds with subdivision, :mod:`planar.core.validity`), and the mesh is checked
    for conformity: hanging nodes, unmatched mid-side nodes and partly duplicated nodes that open a
    slit are refused unless the slit is declared (``Mesh(..., slits=...)``).

    Parameters
    ----------
    mesh : Mesh
    elements : mapping, optional
        Element formulation per layout (see :class:`~planar.core.model.Model`).
    distortion_limit : float
        Smallest accepted ratio of the least to the largest Jacobian determinant in an element.

    Raises
    ------
    ElementError
        For elements with a zero, changing-sign or badly distorted Jacobian, naming their ids, and for
        cells that overlap (a folded or tangled mesh, or a cell given twice).
    MeshError
        For a mesh that does not conform (hanging nodes, unmatched mid-side nodes, an undeclared slit
        of duplicated nodes), naming the nodes, the cells and the fix.
    """
    elements = elements or {}
    try:
        ok = 0.0 <= float(distortion_limit) < 1.0
    except (TypeError, ValueError):
        ok = False
    if not ok or isinstance(distortion_limit, bool):
        raise InputError(f"distortion_limit must be a number from 0 (accept any shape) to below 1, got "
                         f"{distortion_limit!r}; the default is 1e-3")
    cells = {}
    tiny = (1e-14 * mesh.size()) ** 2
    for layout, conn in mesh.cells.items():
        etype = element_type(elements.get(layout, layout))
        if conn.shape[1] != etype.n_nodes:
            raise MeshError(
                f"element {etype.name} has {etype.n_nodes} nodes but the mesh block {layout!r} has "
                f"{conn.shape[1]} per cell"
            )
        neg, verdict, ratio = validity.check_block(etype, mesh.nodes, conn, float(distortion_limit), tiny, CHUNK)
        bad = (verdict == validity.FOLDED) | (verdict == validity.COLLAPSED)
        if np.any(bad):
            ids = np.flatnonzero(bad)
            what = ("collapsed (zero area)" if np.all(verdict[ids] == validity.COLLAPSED) else
                    "folded or collapsed: the Jacobian is zero or changes sign inside")
            raise ElementError(
                f"{ids.size} {etype.name} element(s) are {what}: cell ids {ids[:10].tolist()}"
                f"{' ...' if ids.size > 10 else ''} of block {layout!r} (first at "
                f"{fmt_point(mesh.nodes[conn[ids[0]]].mean(axis=0))}); remesh, or check the "
                "node order and the mid-side node positions"
            )
        distorted = verdict == validity.DISTORTED
        if np.any(distorted):
            ids = np.flatnonzero(distorted)
            raise ElementError(
                f"{ids.size} {etype.name} element(s) are badly distorted (least/largest Jacobian "
                f"{ratio[ids].min():.2e} < {distortion_limit:g}): cell ids {ids[:10].tolist()} of "
                f"block {layout!r} (first at {fmt_point(mesh.nodes[conn[ids[0]]].mean(axis=0))}); "
                "remesh with better-shaped elements"
            )
        if np.any(neg):
            conn = conn.copy()
            conn[neg] = conn[neg][:, etype.reversed_order]
        cells[layout] = conn
    table = validity.side_table(mesh.n_nodes, cells, lambda lay: element_type(elements.get(lay, lay)).edges)
    _check_overlaps(mesh, cells, table)
    validity.check_conforming(mesh, cells, table, getattr(mesh, "slits", ()))
    if all(cells[k] is mesh.cells[k] for k in cells):
        return mesh
    return Mesh(mesh.nodes, cells, mesh.edge_sets, mesh.node_sets, mesh.regions, slits=mesh.slits)


def _check_overlaps(mesh: Mesh, cells: dict[str, np.ndarray], table: "validity.SideTable") -> None:
    """Refuse cells that lie on top of each other.

    With every cell counter-clockwise, an edge between two cells is walked once in each direction. An
    edge walked twice in the same direction (two cells on the same side of it), or shared by more
    than two cells, means overlapping cells: a folded or tangled mesh, or the same cell given twice
    (common practice for mesh validity; such a mesh would silently add stiffness where cells overlap).
    """
    n = np.int64(mesh.n_nodes)
    k = table.key
    same_way = k[1:] == k[:-1]
    crowded = (k[2:] >> 1) == (k[:-2] >> 1)
    if not (same_way.any() or crowded.any()):
        return
    bad = int(k[1:][same_way][0] if same_way.any() else k[2:][crowded][0])
    und = bad >> 1
    a, b = int(und // n), int(und % n)
    hit = table.order[(k >> 1) == und]
    owners = [table.owner(int(s)) for s in np.sort(hit)]
    twins = _twins(cells, owners)
    if twins:
        raise ElementError(
            f"cells overlap: {twins[0]} and {twins[1]} use the same nodes (a cell given twice, near "
            f"{fmt_point(mesh.nodes[[a, b]].mean(axis=0))}); remove the duplicate cells"
        )
    raise ElementError(
        f"cells overlap (the mesh folds over itself or cells are tangled): {', '.join(owners[:4])} lie on "
        f"the same side of their shared edge from node {a} {fmt_point(mesh.nodes[a])} to node {b} "
        f"{fmt_point(mesh.nodes[b])}; remesh (an element turned inside out by a misplaced node does this too)"
    )


def _twins(cells, owners) -> tuple[str, str] | None:
    """Two of the named cells with the same set of nodes, if any."""
    seen = {}
    for o in owners:
        layout, _, c = o.split(" ")
        key = frozenset(cells[layout][int(c)].tolist())
        if key in seen:
            return seen[key], o
        seen[key] = o
    return None
