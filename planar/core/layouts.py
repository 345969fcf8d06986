"""Node layouts of cells, derived from the registered element types (the one source of truth).

A *layout* is a node arrangement of a cell: the key of a :class:`~planar.core.mesh.Mesh` cell block
(``"T3"``, ``"T6"``, ``"Q4"``, ``"Q8"``, ``"Q9"`` or a plugin's). Every registered element type
defines the layout of its own name, unless it declares ``layout`` naming another one (a formulation
on an existing layout, e.g. incompatible modes on ``"Q4"``). Everything a file reader or writer
needs comes from the element type's attributes:

================  =======================================================================
attribute         meaning (default when the element type does not declare it)
================  =======================================================================
``meshio_type``   meshio's cell name, used for gmsh .msh files (``"triangle10"``, ...)
``vtk_type``      VTK cell type number (VTK's own number for the meshio name when meshio
                  knows one; else VTK's Lagrange cell of the reference cell:
                  ``VTK_LAGRANGE_TRIANGLE`` = 69, ``VTK_LAGRANGE_QUADRILATERAL`` = 70)
``vtk_order``     the element's local node numbers in VTK's order (identity)
``layout``        the layout whose nodes the element uses (its own name)
``edges``         the outline drawn around a cell (required attribute)
================  =======================================================================

gmsh numbers the nodes of its triangles of any order the way VTK's Lagrange triangle does
(corners, then each side's nodes from its first corner, sides (0-1), (1-2), (2-0), then the
interior), so a triangle element in gmsh's order needs no ``vtk_order`` (gmsh reference manual,
"Node ordering"; VTK's ``vtkHigherOrderTriangle``). VTK file format documentation: the fixed
types 5 (triangle), 9 (quad), 22 (quadratic triangle), 23 (quadratic quad), 28 (biquadratic quad).

Where two layout-owning element types share a meshio name (a plugin's own "triangle" element, say),
the built-in one is read from files; otherwise the first by name.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .errors import InputError
from .registry import registry

__all__ = ["Layout", "layouts", "layout", "layout_of", "meshio_to_layout", "from_file_cells", "vtk_cells",
           "gmsh_type", "LAGRANGE_VTK"]

#: VTK's Lagrange cell of each reference cell (VTK file format documentation, VTK 8.1 and later)
LAGRANGE_VTK = {"triangle": 69, "quad": 70}


@dataclass(frozen=True)
class Layout:
    """Everything files and figures need to know about one node layout.

    Attributes
    ----------
    name : str
        The layout name (the mesh's cell block key).
    etype : class
        The element type that owns the layout (its shape functions fix the geometry).
    n_nodes : int
    meshio_type : str
        meshio's name of the cell in .msh files.
    vtk_type : int
        VTK cell type number.
    vtk_order : ndarray, shape (n_nodes,)
        Local node numbers in VTK's order: ``vtk_conn = conn[:, vtk_order]``.
    vtk_name : str
        meshio's name of the VTK cell type (what meshio calls such cells read from a .vtu).
    """

    name: str
    etype: Any
    n_nodes: int
    meshio_type: str
    vtk_type: int
    vtk_order: np.ndarray
    vtk_name: str

    @property
    def planar_order(self) -> np.ndarray:
        """Positions in VTK's order of planar's local nodes: ``conn = vtk_conn[:, planar_order]``."""
        return np.argsort(self.vtk_order)


def _vtk_tables():
    from meshio._vtk_common import meshio_to_vtk_type, vtk_to_meshio_type

    return meshio_to_vtk_type, vtk_to_meshio_type


def layout_of(etype) -> Layout:
    """The layout an element type defines (or uses, when it declares ``layout``), from its attributes.

    Raises
    ------
    InputError
        If a declared ``vtk_order`` is not a permutation of the element's nodes.
    """
    to_vtk, to_name = _vtk_tables()
    k = int(etype.n_nodes)
    meshio_type = str(etype.meshio_type)
    vtk_type = getattr(etype, "vtk_type", None)
    if vtk_type is None:
        vtk_type = to_vtk.get(meshio_type, LAGRANGE_VTK.get(etype.cell))
    order = getattr(etype, "vtk_order", None)
    order = np.arange(k) if order is None else np.asarray(order, dtype=np.int64).ravel()
    if sorted(order.tolist()) != list(range(k)):
        raise InputError(f"element type {etype.name!r}: vtk_order must be a permutation of 0..{k - 1}, "
                         f"got {order.tolist()}")
    return Layout(getattr(etype, "layout", None) or etype.name, etype, k, meshio_type, int(vtk_type), order,
                  to_name.get(int(vtk_type), meshio_type))


_CACHE: dict[int, tuple[Any, dict[str, Layout]]] = {}


def layouts() -> dict[str, Layout]:
    """Every layout of the registered element types, by name (rebuilt after :func:`reload_plugins`)."""
    reg = registry()
    hit = _CACHE.get(0)
    if hit is not None and hit[0] is reg:
        return hit[1]
    out: dict[str, Layout] = {}
    entries = reg.entries["element"]
    # built-in owners first, then plugins by name: the first to claim a layout name keeps it
    for name in sorted(entries, key=lambda n: (entries[n].distribution != "planar", n)):
        et = entries[name].obj
        if (getattr(et, "layout", None) or name) != name:
            continue  # a formulation on another element's layout
        try:
            out.setdefault(name, layout_of(et))
        except Exception:  # pragma: no cover - a bad declaration leaves the layout unknown
            continue
    _CACHE[0] = (reg, out)
    return out


def layout(name: str) -> Layout | None:
    """The layout called ``name``, or None when no registered element type defines it."""
    return layouts().get(name)


def meshio_to_layout() -> dict[str, str]:
    """meshio cell name -> layout name, for reading .msh files (built-in layouts win a shared name)."""
    out: dict[str, str] = {}
    for lay in layouts().values():
        out.setdefault(lay.meshio_type, lay.name)
    return out


def from_file_cells(cell_type: str, n_nodes: int) -> tuple[str, np.ndarray | None] | None:
    """The layout of a cell block read by meshio, and the column order that gives planar's node order.

    Parameters
    ----------
    cell_type : str
        meshio's name of the block (a .msh name such as ``"triangle10"``, or the name meshio gives a
        VTK cell type such as ``"VTK_LAGRANGE_TRIANGLE"``).
    n_nodes : int
        Nodes per cell of the block (a Lagrange cell's degree shows only in its node count).

    Returns
    -------
    (str, ndarray or None) or None
        The layout name and the columns to take (None: as they are); None for a block of no layout.
    """
    found = None
    for lay in layouts().values():
        if lay.n_nodes != n_nodes:
            continue
        if lay.meshio_type == cell_type:
            return lay.name, None
        if found is None and lay.vtk_name == cell_type:
            order = lay.planar_order
            found = (lay.name, None if np.array_equal(order, np.arange(n_nodes)) else order)
    return found


def vtk_cells(cell_type: str, conn: np.ndarray, etype=None) -> tuple[int, str, np.ndarray]:
    """A cell block as VTK writes it: (VTK type number, meshio's name of that type, connectivity).

    Parameters
    ----------
    cell_type : str
        The block's meshio cell name (``"triangle6"``, ``"line"``, ``"vertex"``, a plugin's ...).
    conn : ndarray, shape (e, k)
        Node numbers in planar's (the element's) order.
    etype : element type, optional
        The element type of the block, when known (its own declarations come first).

    Raises
    ------
    InputError
        If no VTK cell type is known for the name.
    """
    conn = np.asarray(conn)
    k = conn.shape[1] if conn.ndim == 2 else 0
    lay = None
    if etype is not None and str(getattr(etype, "meshio_type", "")) == cell_type:
        lay = layout_of(etype)
    else:
        lay = next((x for x in layouts().values() if x.meshio_type == cell_type and x.n_nodes == k), None)
    if lay is not None:
        identity = np.array_equal(lay.vtk_order, np.arange(lay.n_nodes))
        return lay.vtk_type, lay.vtk_name, conn if identity else conn[:, lay.vtk_order]
    to_vtk, _ = _vtk_tables()
    if cell_type in to_vtk:
        return int(to_vtk[cell_type]), cell_type, conn
    known = sorted({x.meshio_type for x in layouts().values()} | {"vertex", "line", "line3"})
    raise InputError(f"no VTK cell type for the cell name {cell_type!r}; give the element a meshio_type "
                     f"VTK knows ({', '.join(known)}, ...) or declare its vtk_type")


def gmsh_type(name: str) -> int:
    """gmsh's element type number of the layout ``name`` (from its meshio name), for writing .msh files.

    Raises
    ------
    InputError
        If no registered element type defines the layout, or gmsh has no element of its meshio name.
    """
    from meshio.gmsh.common import _meshio_to_gmsh_type

    lay = layout(name)
    if lay is None or lay.meshio_type not in _meshio_to_gmsh_type:
        raise InputError(f"cannot write cells of layout {name!r} to a gmsh file: "
                         + ("no element type defines it" if lay is None else
                            f"gmsh has no element of the meshio name {lay.meshio_type!r}"))
    return int(_meshio_to_gmsh_type[lay.meshio_type])
