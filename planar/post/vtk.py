"""VTK output (.vtu): quadratic cells as VTK's quadratic cell types, other layouts as their element types say.

Point data: displacement vector and nodal stresses (sigma_xx, sigma_yy, tau_xy, sigma_zz, von_mises,
tresca, sigma_1, sigma_2); cell data: element mean stresses, von Mises, region id and any extra cell
fields (e.g. error indicators); field data: the names of the region ids and the model's unit system
(``planar_units``, its name as UTF-8 bytes in a UInt8 array, read back by
:func:`planar.post.files.file_units`). Files are written atomically and carry a SHA-256 digest of
their bytes (:mod:`planar.core.digest`), so readers can tell when a file changed since it was written.
"""
from __future__ import annotations

import os
from concurrent import futures
from pathlib import Path
from typing import Mapping

import numpy as np

from ..core.digest import digest_of, sign_file, sign_text
from ..core.errors import InputError
from ..core.layouts import layouts as all_layouts, vtk_cells
from ..core.progress import step
from ..core.fields import as_centre, names as field_names, polar_stress
from ..core.result import as_result, stress_measures
from ..core.units import unit_system
from .files import CASE_FIELD, UNITS_FIELD, atomic_path

__all__ = ["write_vtu", "write_grid", "add_field_data", "CELL_TYPES"]

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


def __getattr__(name: str):
    """``CELL_TYPES`` (layout -> meshio cell name), derived from the registered element types."""
    if name == "CELL_TYPES":
        return {k: v.meshio_type for k, v in all_layouts().items()}
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def _block_type(result, layout: str) -> tuple[str, object]:
    """The meshio cell name and element type of a layout's cells in a result."""
    for b in result.assembly.blocks:
        if b.layout == layout:
            return b.etype.meshio_type, b.etype
    lay = all_layouts().get(layout)
    if lay is None:
        raise InputError(f"no element type defines the cell layout {layout!r}")
    return lay.meshio_type, lay.etype


def write_vtu(path: str | os.PathLike, result, *, recovery: str = "spr",
              cell_fields: Mapping[str, Mapping[str, np.ndarray] | np.ndarray] | None = None,
              point_fields: Mapping[str, np.ndarray] | None = None,
              compression: str | None = None, centre=None) -> Path:
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
        Compression of the binary data blocks. None (default): raw binary, written at disk speed
        (ten times faster than zlib, for a file about a third larger).
    centre : (float, float), optional
        Also write the polar stresses about this point (``sigma_r``, ``sigma_theta``,
        ``tau_r_theta``; :func:`planar.core.fields.polar_stress`), e.g. about a hole's centre.

    Returns
    -------
    Path
    """
    result = as_result(result, "write_vtu")
    path = vtu_target(path, compression)
    centre = None if centre is None else as_centre(centre, "the polar stresses")
    mesh = result.mesh
    pts = np.column_stack([mesh.nodes, np.zeros(mesh.n_nodes)])
    layouts = list(mesh.cells)
    cells = []
    for t in layouts:
        name, etype = _block_type(result, t)
        cells.append((name, np.asarray(mesh.cells[t], dtype=np.int64), etype))
    with step(f"stress recovery ({recovery})", 2 * mesh.n_nodes):  # a line on a terminal for large jobs
        s, szz = result.nodal_stress(recovery)
    meas = stress_measures(s, szz)
    pdata = {"displacement": np.column_stack([result.u, np.zeros(mesh.n_nodes)])}
    for k in field_names(kind="stress", unit="stress"):  # the stress fields of the one field table
        pdata[k] = np.ascontiguousarray(meas[k])
    if centre is not None:
        pdata.update(polar_stress(s, mesh.nodes, centre))
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
    table = {n: i for i, n in enumerate(names)} if len(names) > 1 else {}  # names of the region ids
    with step(f"writing {os.path.basename(path)}", 2 * mesh.n_nodes):
        write_grid(path, pts, cells, pdata, cdata, table, compression, units=result.unit_system, case=result.case)
    return path


_VTK_DTYPES = {"f8": "Float64", "f4": "Float32", "i8": "Int64", "i4": "Int32", "i2": "Int16", "i1": "Int8",
               "u8": "UInt64", "u4": "UInt32", "u2": "UInt16", "u1": "UInt8"}


def write_grid(path: Path, points: np.ndarray, cells: list[tuple],
               point_data: Mapping[str, np.ndarray], cell_data: Mapping[str, list[np.ndarray]],
               field_data: Mapping[str, int] | None = None, compression: str | None = None, *,
               units=None, case: str | None = None) -> None:
    """Write an unstructured grid as a .vtu file, atomically.

    Uncompressed, the arrays go into the file as raw appended binary data (VTK XML format, byte
    order and UInt64 block headers declared in the file): no base64 encoding, so the write runs at
    disk speed. With ``compression`` the file is written through meshio. ``field_data`` is a table
    name -> index (one Int32 array per name), e.g. the names of the region ids. ``units`` (a unit
    system or its name, :mod:`planar.core.units`) is stored as the field data ``planar_units``, and
    ``case`` (the load case or combination's name) as ``planar_case``.

    ``cells`` holds (meshio cell name, connectivity in the element's node order[, element type]);
    VTK's cell type and node order come from the element type that defines the name
    (:func:`planar.core.layouts.vtk_cells`), e.g. VTK's Lagrange triangle for a 10-node triangle.
    """
    vtk = [vtk_cells(c[0], c[1], c[2] if len(c) > 2 else None) for c in cells]
    field_data = dict(field_data or {})
    if units is not None:
        field_data[UNITS_FIELD] = unit_system(units).name  # checked: an unknown name is refused
    if case is not None and str(case):
        field_data[CASE_FIELD] = str(case)  # the file says which load case it holds
    with atomic_path(path) as tmp:
        if compression is not None:
            import meshio

            m = meshio.Mesh(points, [(name, conn) for _, name, conn in vtk], point_data=dict(point_data),
                            cell_data=dict(cell_data))
            meshio.write(tmp, m, file_format="vtu", compression=compression)
            if field_data:  # meshio writes no field data to .vtu
                add_field_data(Path(tmp), field_data)
            sign_file(tmp)
        else:
            _write_raw(Path(tmp), points, vtk, point_data, cell_data, field_data or {})


def _write_raw(path: Path, points, cells, point_data, cell_data, field_data) -> None:
    from xml.sax.saxutils import quoteattr

    blocks: list[np.ndarray] = []
    offset = 0

    def array(a: np.ndarray, name: str | None = None) -> str:
        nonlocal offset
        a = np.asarray(a)
        if a.dtype == bool:
            a = a.astype(np.uint8)
        a = np.ascontiguousarray(a, dtype=a.dtype.newbyteorder("<"))
        key = f"{a.dtype.kind}{a.dtype.itemsize}"
        if key not in _VTK_DTYPES:
            raise InputError(f"cannot write the array {name!r} of type {a.dtype} to VTK; give numbers")
        blocks.append(a)
        attrs = f'type="{_VTK_DTYPES[key]}"' + (f" Name={quoteattr(name)}" if name else "")
        if a.ndim == 2:
            attrs += f' NumberOfComponents="{a.shape[1]}"'
        tag = f'<DataArray {attrs} format="appended" offset="{offset}"/>\n'
        offset += 8 + a.nbytes
        return tag

    n_cells = [int(c.shape[0]) for _, _, c in cells]
    conn = np.concatenate([np.zeros(0, np.int64)] + [np.asarray(c, dtype=np.int64).ravel() for _, _, c in cells])
    sizes = np.concatenate([np.zeros(0, np.int64)] + [np.full(c.shape[0], c.shape[1], np.int64) for _, _, c in cells])
    types = np.concatenate([np.zeros(0, np.uint8)] + [np.full(c.shape[0], t, np.uint8) for t, _, c in cells])
    head = ['<?xml version="1.0"?>\n',
            '<VTKFile type="UnstructuredGrid" version="1.0" byte_order="LittleEndian" header_type="UInt64">\n',
            "<UnstructuredGrid>\n"]
    if field_data:
        head.append(_field_block(field_data) + "\n")
    head.append(f'<Piece NumberOfPoints="{points.shape[0]}" NumberOfCells="{sum(n_cells)}">\n')
    head += ["<Points>\n", array(points), "</Points>\n", "<Cells>\n", array(conn, "connectivity"),
             array(np.cumsum(sizes), "offsets"), array(types, "types"), "</Cells>\n"]
    if point_data:
        head.append("<PointData>\n")
        head += [array(v, k) for k, v in point_data.items()]
        head.append("</PointData>\n")
    if cell_data:
        head.append("<CellData>\n")
        head += [array(np.concatenate([np.asarray(x) for x in v]), k) for k, v in cell_data.items()]
        head.append("</CellData>\n")
    head += ["</Piece>\n", "</UnstructuredGrid>\n", '<AppendedData encoding="raw">\n_']
    text, at = sign_text("".join(head))
    pieces = [text.encode("utf-8")]
    for a in blocks:
        pieces += [np.uint64(a.nbytes).tobytes(), memoryview(a).cast("B")]
    pieces.append(b"\n</AppendedData>\n</VTKFile>\n")
    # the digest is computed in a second thread while the bytes go to the file (both let go of the
    # GIL), then written over the placeholder in the head
    with futures.ThreadPoolExecutor(1) as pool:
        digest = pool.submit(digest_of, pieces)
        with open(path, "wb") as fh:
            for piece in pieces:
                fh.write(piece)
            fh.seek(at)
            fh.write(digest.result().encode("ascii"))


def vtu_target(path, compression: str | None = None) -> Path:
    """Check a .vtu output name and a compression choice; return the path."""
    path = Path(path)
    if path.suffix.lower() != ".vtu":
        raise InputError(f"VTK output needs a .vtu file name, got {str(path)!r}")
    if compression not in _COMPRESSIONS:
        raise InputError(f"unknown compression {compression!r}; pick one of {', '.join(map(repr, _COMPRESSIONS))}")
    return path


def add_field_data(path: Path, table: Mapping[str, int | str]) -> None:
    """Put a FieldData block (one Int32 array per name, holding its index) into a .vtu file.

    A text value (the unit system's name) goes in as a UInt8 array of its UTF-8 bytes.

    meshio 5.3 writes no field data to .vtu (it reads it back), so the block is added here, in the
    place VTK's XML format gives it: the first child of ``<UnstructuredGrid>``.
    """
    text = path.read_text(encoding="utf-8")
    tag = "<UnstructuredGrid>"
    at = text.find(tag)
    if at < 0:  # pragma: no cover - meshio always writes it
        raise InputError(f"cannot add the name table to {str(path)!r}: no <UnstructuredGrid> element")
    at += len(tag)
    path.write_text(text[:at] + "\n" + _field_block(table) + text[at:], encoding="utf-8")


def _field_block(table: Mapping[str, int | str]) -> str:
    """The FieldData element: one Int32 array per name, holding its index (a text: its UTF-8 bytes)."""
    from xml.sax.saxutils import quoteattr

    def row(n, i) -> str:
        if isinstance(i, str):  # text as bytes: VTK and meshio read a UInt8 array where a String array fails meshio
            b = i.encode("utf-8")
            return (f'<DataArray type="UInt8" Name={quoteattr(str(n))} NumberOfTuples="{len(b)}" format="ascii">'
                    f"{' '.join(map(str, b))}</DataArray>\n")
        return (f'<DataArray type="Int32" Name={quoteattr(str(n))} NumberOfTuples="1" format="ascii">'
                f"{int(i)}</DataArray>\n")

    rows = "".join(row(n, i) for n, i in table.items())
    return f"<FieldData>\n{rows}</FieldData>"
