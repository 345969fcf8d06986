"""VTK output (.vtu through meshio): quadratic cells as VTK's quadratic cell types.

Point data: displacement vector and nodal stresses (sigma_xx, sigma_yy, tau_xy, sigma_zz, von_mises,
tresca, sigma_1, sigma_2); cell data: element mean stresses, von Mises, region id and any extra cell
fields (e.g. error indicators). Files are written atomically.
"""
from __future__ import annotations

import os
from pathlib import Path
from typing import Mapping

import numpy as np

from ..core.errors import InputError
from ..core.result import stress_measures
from .files import atomic_path

__all__ = ["write_vtu", "add_field_data", "CELL_TYPES"]

_COMPRESSIONS = (None, "zlib", "lzma")


def _field_array(what: str, v, count: int, of: str) -> np.ndarray:
    """An extra output field as a numeric array with one row per node or cell."""
    try:
        a = np.asarray(v)
    except (TypeError, ValueError):
        a = np.zeros((0,))
    if a.ndim not in (1, 2) or not (np.issubdtype(a.dtype, np.number) or a.dtype == bool):
        raise InputError(f"{what} must be an array of numbers of shape ({count},) or ({count}, c), got {a.dtype} {a.shape}")
    if a.shape[0] != count:
        raise InputError(f"{what} has {a.shape[0]} values for {count} {of}")
    return a


#: meshio cell type names of the built-in layouts
CELL_TYPES = {"T3": "triangle", "T6": "triangle6", "Q4": "quad", "Q8": "quad8", "Q9": "quad9"}


def _meshio_type(result, layout: str) -> str:
    for b in result.assembly.blocks:
        if b.layout == layout:
            return getattr(b.etype, "meshio_type", CELL_TYPES.get(layout, layout))
    return CELL_TYPES[layout]


def write_vtu(path: str | os.PathLike, result, *, recovery: str = "spr",
              cell_fields: Mapping[str, Mapping[str, np.ndarray] | np.ndarray] | None = None,
              point_fields: Mapping[str, np.ndarray] | None = None,
              compression: str | None = None) -> Path:
    """Write one load case's result as a VTK unstructured-grid file.

    Parameters
    ----------
    path : str or path-like
        Target ``.vtu`` file; written through a temporary file and renamed, so an interrupted write
        never leaves a half-written file over a good one.
    result : Result
    recovery : {"spr", "average"}
        How nodal stresses are recovered (superconvergent patch recovery by default).
    cell_fields : mapping, optional
        Extra cell data: name -> {layout: (e,) array} or a single array over all cells in block order.
    point_fields : mapping, optional
        Extra point data: name -> (n,) or (n, c) array.
    compression : {None, "zlib", "lzma"}
        Compression of the binary data blocks. None (default) writes ten times faster than zlib
        for a file about a quarter larger.

    Returns
    -------
    Path
    """
    import meshio

    path = vtu_target(path, compression)
    mesh = result.mesh
    pts = np.column_stack([mesh.nodes, np.zeros(mesh.n_nodes)])
    layouts = list(mesh.cells)
    cells = [(_meshio_type(result, t), np.asarray(mesh.cells[t], dtype=np.int64)) for t in layouts]
    s, szz = result.nodal_stress(recovery)
    meas = stress_measures(s, szz)
    pdata = {"displacement": np.column_stack([result.u, np.zeros(mesh.n_nodes)])}
    for k in ("sigma_xx", "sigma_yy", "tau_xy", "sigma_zz", "von_mises", "tresca", "sigma_1", "sigma_2"):
        pdata[k] = np.ascontiguousarray(meas[k])
    pdata["reaction"] = np.column_stack([result.reactions, np.zeros(mesh.n_nodes)])
    for k, v in (point_fields or {}).items():
        pdata[k] = _field_array(f"point field {k!r}", v, mesh.n_nodes, "nodes")
    # cell data: element means from the Gauss points, per layout in block order
    names, rid = mesh.region_ids()
    mean = {t: np.zeros((mesh.cells[t].shape[0], 3)) for t in layouts}
    mzz = {t: np.zeros(mesh.cells[t].shape[0]) for t in layouts}
    for g in result.gauss:
        w = g.dvol / g.dvol.sum(axis=1, keepdims=True)
        mean[g.block.layout][g.block.cells] = np.einsum("eq,eqa->ea", w, g.stress)
        mzz[g.block.layout][g.block.cells] = np.einsum("eq,eq->e", w, g.szz)
    cdata: dict[str, list[np.ndarray]] = {"region_id": [rid[t].astype(np.int32) for t in layouts]}
    cm = {t: stress_measures(mean[t], mzz[t]) for t in layouts}
    for k in ("sigma_xx", "sigma_yy", "tau_xy", "von_mises"):
        cdata[f"element_{k}"] = [cm[t][k] for t in layouts]
    counts = [mesh.cells[t].shape[0] for t in layouts]
    for k, v in (cell_fields or {}).items():
        if isinstance(v, Mapping):
            missing = [t for t in layouts if t not in v]
            if missing:
                raise InputError(f"cell field {k!r} has no values for the cell block(s) {missing}; give one "
                                 f"array per block of the mesh: {', '.join(map(repr, layouts))}")
            cdata[k] = [_field_array(f"cell field {k!r} on block {t!r}", v[t], c, "cells")
                        for t, c in zip(layouts, counts)]
        else:
            v = _field_array(f"cell field {k!r}", v, sum(counts), "cells (all blocks in order)")
            cdata[k] = list(np.split(v, np.cumsum(counts)[:-1]))
    m = meshio.Mesh(pts, cells, point_data=pdata, cell_data=cdata)
    with atomic_path(path) as tmp:
        meshio.write(tmp, m, file_format="vtu", compression=compression)
        if len(names) > 1:  # region names for region_id (meshio writes no field data to .vtu)
            add_field_data(Path(tmp), {n: i for i, n in enumerate(names)})
    return path


def vtu_target(path, compression: str | None = None) -> Path:
    """Check a .vtu output name and a compression choice; return the path."""
    path = Path(path)
    if path.suffix.lower() != ".vtu":
        raise InputError(f"VTK output needs a .vtu file name, got {str(path)!r}")
    if compression not in _COMPRESSIONS:
        raise InputError(f"unknown compression {compression!r}; pick one of {', '.join(map(repr, _COMPRESSIONS))}")
    return path


def add_field_data(path: Path, table: Mapping[str, int]) -> None:
    """Put a FieldData block (one Int32 array per name, holding its index) into a .vtu file.

    meshio 5.3 writes no field data to .vtu (it reads it back), so the block is added here, in the
    place VTK's XML format gives it: the first child of ``<UnstructuredGrid>``.
    """
    from xml.sax.saxutils import quoteattr

    text = path.read_text(encoding="utf-8")
    tag = "<UnstructuredGrid>"
    at = text.find(tag)
    if at < 0:  # pragma: no cover - meshio always writes it
        raise InputError(f"cannot add the name table to {str(path)!r}: no <UnstructuredGrid> element")
    rows = "".join(f'<DataArray type="Int32" Name={quoteattr(str(n))} NumberOfTuples="1" format="ascii">'
                   f"{int(i)}</DataArray>\n" for n, i in table.items())
    block = f"\n<FieldData>\n{rows}</FieldData>"
    at += len(tag)
    path.write_text(text[:at] + block + text[at:], encoding="utf-8")
