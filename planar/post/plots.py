"""PNG figures of results: contours with the deformed shape, stress along a path.

Every figure is drawn on a matplotlib :class:`~matplotlib.figure.Figure` with the Agg canvas (no
display, no pyplot state), or into axes the caller passes. PNG files are written atomically.

Quadratic elements (T6, Q8, Q9) are drawn as they are computed: each element is cut into small
linear triangles whose corners are mapped with the element's own shape functions, for the
geometry and for the field alike, so curved edges stay curved and fields vary smoothly inside an
element. The subdivision (:mod:`planar.post._subdivide`) is one batched ``einsum`` per element block.

Colour maps: ``viridis`` for fields that are positive by nature (von Mises, Tresca, displacement
magnitude); the diverging ``RdBu_r``, centred on zero, for signed fields (sigma_xx, tau_xy, ux, ...).
"""
from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Mapping, Sequence

import numpy as np

from ..core.compat import renamed_keywords
from ..core.errors import InputError, MeshError, fmt_point
from ..core.fields import FIELD_TABLE, names
from ..core.layouts import from_file_cells
from ..core.result import as_result
# units of fields, stress, length, force from the model's unit system or its name (re-exported)
from ..core.units import field_unit, force_unit, length_unit, stress_unit  # noqa: F401
from ._outline import _nice_down as _nice
from ._subdivide import _cells_in_window, _outline_segments, subdivide  # noqa: F401 (re-exported)
from .files import atomic_path

__all__ = [
    "plot_field",
    "plot_nodal_field",
    "plot_vtu",
    "vtu_fields",
    "plot_along",
    "save_figure",
    "figure_png",
    "stress_unit",
    "length_unit",
    "force_unit",
    "field_unit",
    "field_label",
    "deformation_scale",
    "subdivide",
    "SIGNED_FIELDS",
]

#: fields that take both signs: drawn with a diverging colour map centred on zero (from the one field
#: table, :data:`planar.core.fields.FIELD_TABLE`, like the units and labels below)
SIGNED_FIELDS = frozenset(names(signed=True))
_STRESS = frozenset(names(unit="stress"))
_POLAR = frozenset(names(kind="polar"))
_LABELS = {f.name: f.label for f in FIELD_TABLE.values()}


@renamed_keywords(name="field")
def field_label(field: str, unit: str = "") -> str:
    """Axis or colour-bar label of a field, with its unit in brackets."""
    base = _LABELS.get(field, field.replace("_", " "))
    if field.startswith("element_") and field[8:] in _LABELS:
        base = _LABELS[field[8:]] + " (element mean)"
    return f"{base} [{unit}]" if unit else base


# ---------------------------------------------------------------------------------------- helpers
def deformation_scale(nodes: np.ndarray, u: np.ndarray, fraction: float = 0.06) -> float:
    """A round displacement magnification that makes the largest displacement about ``fraction``
    of the model size (the larger side of the bounding box).

    Returns 0 when nothing moves. The scale is rounded down to 1, 2 or 5 times a power of ten, so
    the largest drawn displacement is between 2.4 % and 6 % of the model size for the default.

    Examples
    --------
    >>> import numpy as np
    >>> deformation_scale(np.array([[0.0, 0.0], [100.0, 0.0]]), np.array([[0.0, 0.0], [0.05, 0.0]]))
    100.0
    """
    nodes = np.asarray(nodes, float)
    u = np.asarray(u, float)
    size = float(np.max(nodes.max(axis=0) - nodes.min(axis=0)))
    umax = float(np.max(np.hypot(u[:, 0], u[:, 1]))) if u.size else 0.0
    if umax <= 1e-14 * max(size, 1e-300):
        return 0.0
    return _nice(fraction * size / umax)


def _fmt(v: float) -> str:
    if v == 0 or not math.isfinite(v):
        return f"{v:g}"
    a = abs(v)
    if a >= 1e5 or a < 1e-3:
        return f"{v:.3e}"
    return f"{v:.4g}" if a < 1 else f"{v:.1f}" if a < 1e4 else f"{v:.0f}"


def _fmt_point(p, nodes) -> str:
    """(x, y) rounded to about 1/1000 of the model size."""
    size = float(np.max(np.ptp(np.asarray(nodes)[:, :2], axis=0))) or 1.0
    dec = int(max(0, 3 - math.floor(math.log10(size))))
    x, y = (round(float(v), dec) + 0.0 for v in p[:2])  # + 0.0: a round-off below the last digit prints 0, not -0
    return f"({x:.{dec}f}, {y:.{dec}f})"


def _new_figure(aspect: float, width: float = 8.0):
    from matplotlib.figure import Figure
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    aspect = max(aspect, 1e-3)
    # room for the title lines and a colour bar below (wide parts) or beside (the others)
    h = width / aspect + 2.0 if aspect > 1.4 else (width - 1.6) / aspect + 1.4
    h = float(np.clip(h, 3.2, 9.0))
    fig = Figure(figsize=(width, h), dpi=120, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def figure_and_axes(ax, aspect: float, width: float = 8.0):
    """(figure, axes): a new figure of this width-over-height aspect with one axes, or ``ax`` and its figure."""
    if ax is None:
        fig = _new_figure(aspect, width)
        return fig, fig.add_subplot()
    return ax.figure, ax


def finish_line_plot(fig, ax, title: str, path=None):
    """The common finish of a line plot: light grid, legend, no top and right spines, title, PNG file."""
    ax.grid(True, color="0.88", lw=0.6)
    ax.legend(fontsize=8, frameon=False)
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    ax.set_title(title, fontsize=10, loc="left")
    if path is not None:
        save_figure(fig, path)
    return fig


def figure_png(fig, dpi: int = 120) -> bytes:
    """The figure as PNG bytes (for embedding in a report)."""
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    return buf.getvalue()


def save_figure(fig, path: str | os.PathLike, dpi: int = 120) -> Path:
    """Write a figure to a PNG file atomically (temporary file in the same folder, then a rename)."""
    path = Path(path)
    if path.suffix.lower() != ".png":
        raise InputError(f"figures are written as PNG; give a file name ending in .png, got {str(path)!r}")
    with atomic_path(path) as tmp:
        fig.savefig(tmp, format="png", dpi=dpi)
    return path


# ---------------------------------------------------------------------------------------- contour
#: most colour bands a contour may have (a colour bar cannot show more apart)
MAX_LEVELS = 1000


def check_levels(levels, what: str = "levels") -> int | None:
    """``levels`` (the number of colour bands) as an int from 2 to :data:`MAX_LEVELS`, or None."""
    if levels is None:
        return None
    if isinstance(levels, bool) or not isinstance(levels, (int, np.integer)):
        raise InputError(f"{what} must be a whole number of colour bands from 2 to {MAX_LEVELS}, got {levels!r}")
    if not 2 <= int(levels) <= MAX_LEVELS:
        raise InputError(f"{what} must be a whole number of colour bands from 2 to {MAX_LEVELS}, got {int(levels)}; "
                         "leave it out for a smooth field")
    return int(levels)


def _check_finite(nodes, cells, values, cell_values, displacement, name: str) -> None:
    """Refuse NaN or infinite numbers on the drawn cells: never paint them as some colour."""
    used = np.zeros(nodes.shape[0], dtype=bool)
    for c in cells.values():
        used[np.asarray(c).ravel()] = True

    def first_bad(a, what, unit_of_count="nodes"):
        bad = ~np.all(np.isfinite(a), axis=1) if a.ndim == 2 else ~np.isfinite(a)
        bad &= used
        if bad.any():
            i = int(np.flatnonzero(bad)[0])
            raise InputError(f"{what} has NaN or infinite values at {int(bad.sum())} of {int(used.sum())} "
                             f"{unit_of_count} of the cells drawn (first: node {i} at {fmt_point(nodes[i])}); "
                             "they cannot be drawn: nothing would show where they are")

    first_bad(nodes, "the node coordinates")
    if displacement is not None:
        first_bad(displacement, "the displacement")
    if values is not None:
        v = np.asarray(values, float)
        if v.shape[0] == nodes.shape[0]:
            first_bad(v, f"the field {name!r}")
    if cell_values is not None:
        for lay, v in cell_values.items():
            v = np.asarray(v, float)
            bad = ~np.isfinite(v)
            if bad.any():
                k = int(np.flatnonzero(bad)[0])
                raise InputError(f"the field {name!r} has NaN or infinite values in {int(bad.sum())} of {v.size} "
                                 f"{lay} cells (first: cell {k}); they cannot be drawn")


@renamed_keywords(name="field")
def plot_nodal_field(nodes, cells, values=None, *, displacement=None, field: str = "field",
                     unit: str = "", length: str = "", scale: float | str | None = "auto",
                     mesh_lines: bool = False, mark_peak: bool | str = True, levels: int | None = None,
                     cmap: str | None = None, title: str | None = None, note: str | None = None,
                     cell_values: Mapping[str, np.ndarray] | None = None, etypes=None,
                     subdivisions=None, window: Sequence[float] | None = None, ax=None,
                     path: str | os.PathLike | None = None, on: str = "undeformed"):
    """Contour of a nodal field on plain arrays (the drawing engine behind :func:`plot_field`).

    Marker, label and axes are in one coordinate system, stated on the figure
    (:mod:`planar.post._marks`): by default the contour is drawn on the part as made and the deformed
    outline over it (dashed); ``on="deformed"`` draws the contour on the deformed shape with the
    undeformed outline behind it.

    Parameters
    ----------
    nodes : ndarray, shape (n, 2)
    cells : mapping of str to ndarray of shape (e, k)
        Cell blocks by layout name.
    values : ndarray, shape (n,), optional
        Nodal field; or give ``cell_values`` (one value per cell) instead.
    displacement : ndarray, shape (n, 2), optional
        Displacements for the deformed shape.
    field : str
        Field name (sets the label and whether the colour map is diverging, see ``SIGNED_FIELDS``).
    unit, length : str
        Unit of the field and of lengths, for the colour bar and the peak label.
    scale : float, "auto" or None
        Displacement magnification; "auto" picks a round factor that makes the largest displacement
        about 6 % of the model size (:func:`deformation_scale`), lowered so that no element side, hole
        or fillet is drawn more than 3 % out of its length (:func:`planar.post._outline.true_scale`);
        0 or None draws no deformed shape. A number is used as given; the figure then states how far
        the drawn shapes are distorted.
    mesh_lines : bool
        Draw the element sides (along curved edges).
    mark_peak : bool or {"max", "both"}
        Mark and label the largest value, and for a signed field the smallest too; ``"max"`` marks the
        largest only, ``"both"`` both for any field.
    levels : int, optional
        Draw that many filled bands instead of a smooth (Gouraud-shaded) colour field.
    cmap : str, optional
        Colour map; default viridis, or RdBu_r centred on zero for signed fields.
    title, note : str, optional
        Figure title and a line of text under it (the scale factor is always stated).
    window : (x0, y0, x1, y1), optional
        Show only this box (in the coordinates of the axes: the part's, or the deformed shape's with
        ``on="deformed"``), e.g. a close-up of a hole; the colour range and the peaks are those of the
        cells in view.
    ax : matplotlib Axes, optional
        Draw into these axes; otherwise a new Agg figure is made.
    path : path, optional
        Also write the figure as PNG (atomically).
    on : {"undeformed", "deformed"}
        Where the contour is drawn (see above).

    Returns
    -------
    matplotlib.figure.Figure
    """
    from matplotlib.collections import LineCollection
    from matplotlib.colors import Normalize
    from matplotlib.tri import Triangulation

    from ._marks import check_place, distortion_at, draw_outlines, mark_extremes, shape_note
    from ._outline import true_scale

    nodes = np.asarray(nodes, float)[:, :2]
    cells = {k: np.asarray(v) for k, v in cells.items() if np.asarray(v).size}
    if values is None and cell_values is None:
        raise InputError("give nodal values or cell values to draw")
    levels = check_levels(levels)
    if displacement is not None:
        displacement = np.asarray(displacement, float)[:, :2]
    name = field
    _check_finite(nodes, cells, values, cell_values, displacement, name)
    on = check_place(on)
    if scale == "auto":
        # about 6 % of the model size, lowered so no drawn side or hole is more than 3 % out of shape
        scale = min(deformation_scale(nodes, displacement), true_scale(nodes, displacement, cells, etypes=etypes)) \
            if displacement is not None else 0.0
    scale = float(scale or 0.0)
    if scale < 0 or not math.isfinite(scale):
        raise InputError(f"the displacement scale must be a positive number or 'auto', got {scale!r}")
    drawn = nodes + scale * displacement if (displacement is not None and scale > 0) else nodes
    shown = drawn if on == "deformed" else nodes   # the coordinates of the axes, markers and labels
    all_cells = cells
    if window is not None:
        cells, cell_values = _cells_in_window(shown, cells, cell_values, window)

    pts, tris, pv, tv = subdivide(shown, cells, values, subdivisions=subdivisions, etypes=etypes,
                                  cell_values=cell_values)
    data = pv if pv is not None else tv
    finite = data[np.isfinite(data)]
    if finite.size == 0:
        raise InputError(f"the field {name!r} has no finite values to draw")
    vmin, vmax = float(finite.min()), float(finite.max())
    signed = name in SIGNED_FIELDS or (name.startswith("element_") and name[8:] in SIGNED_FIELDS)
    if signed:
        lim = max(abs(vmin), abs(vmax)) or 1.0
        norm = Normalize(-lim, lim)
        cmap = cmap or "RdBu_r"
    else:
        norm = Normalize(vmin, vmax if vmax > vmin else vmin + (abs(vmin) or 1.0))
        cmap = cmap or "viridis"

    if window is not None:
        x0, y0, x1, y1 = (float(v) for v in window)
    else:
        x0, y0 = pts.min(axis=0)
        x1, y1 = pts.max(axis=0)
    aspect = (x1 - x0) / max(y1 - y0, 1e-12 * max(x1 - x0, 1.0))
    fig, ax = figure_and_axes(ax, aspect)
    tri = Triangulation(pts[:, 0], pts[:, 1], tris)
    if pv is not None and levels:
        bounds = np.linspace(norm.vmin, norm.vmax, int(levels) + 1)
        art = ax.tricontourf(tri, np.nan_to_num(pv, nan=norm.vmin), levels=bounds, cmap=cmap, norm=norm)
    elif pv is not None:
        art = ax.tripcolor(tri, np.nan_to_num(pv, nan=norm.vmin), shading="gouraud", cmap=cmap, norm=norm,
                           rasterized=True)
    else:
        art = ax.tripcolor(tri, facecolors=tv, cmap=cmap, norm=norm, edgecolors="none")
    # the contour lies inside the axes: the layout need not measure it, which costs a path per triangle
    # (minutes on a fine mesh: matplotlib's extent of a triangle mesh converts every triangle)
    art.set_in_layout(False)
    if mesh_lines:
        segs = _outline_segments(shown, cells, etypes)
        ax.add_collection(LineCollection(segs, colors="0.15", linewidths=0.25, alpha=0.7))
    draw_outlines(ax, nodes, all_cells, displacement, scale, on, etypes)
    horizontal = aspect > 1.4
    cb = fig.colorbar(art, ax=ax, orientation="horizontal" if horizontal else "vertical",
                      shrink=0.8 if horizontal else 0.9, pad=0.02 if not horizontal else 0.04,
                      aspect=40 if horizontal else 25)
    cb.set_label(field_label(name, unit))

    if mark_peak:
        mark_extremes(ax, values=values if pv is not None else None, cell_values=cell_values, cells=cells,
                      nodes=nodes, drawn=shown, signed=signed, which=mark_peak, unit=unit, length=length,
                      box=(x0, y0, x1, y1), on=on, fmt=_fmt, fmt_point=_fmt_point)

    ax.set_aspect("equal")
    if window is not None:
        ax.set_xlim(x0, x1)
        ax.set_ylim(y0, y1)
    else:
        ax.set_xlim(x0 - 0.02 * (x1 - x0), x1 + 0.02 * (x1 - x0))
        ax.set_ylim(y0 - 0.04 * (y1 - y0), y1 + 0.04 * (y1 - y0))
    ax.set_xlabel(f"x [{length}]" if length else "x")
    ax.set_ylabel(f"y [{length}]" if length else "y")
    for s in ("top", "right"):
        ax.spines[s].set_visible(False)
    moved = displacement is not None and scale > 0
    lines_ = shape_note(displacement, scale, on, length,
                        distortion_at(nodes, displacement, all_cells, scale, etypes) if moved else 0.0, _fmt).split("\n")
    lines_ += [note] if note else []
    if title:
        ax.set_title(title, fontsize=11, loc="left", pad=6 + 12 * len(lines_))
    ax.text(0.0, 1.01, "\n".join(lines_), transform=ax.transAxes, fontsize=8.5, color="0.25",
            ha="left", va="bottom")
    if path is not None:
        save_figure(fig, path)
    return fig


def plot_field(result, field: str = "von_mises", *, recovery: str = "spr", path=None,
               scale: float | str | None = "auto", mesh_lines: bool = False, mark_peak: bool | str = True,
               levels: int | None = None, cmap: str | None = None, units: str | None = None,
               title: str | None = None, subdivisions=None, window=None, ax=None, centre=None,
               on: str = "undeformed"):
    """Contour of a result field, with the deformed outline over it (or on the deformed shape, ``on="deformed"``).

    Parameters
    ----------
    result : Result
    field : str
        Any nodal field of :meth:`planar.Result.field` (``von_mises``, ``sigma_xx``, ``tau_xy``,
        ``displacement``, ``ux``, ...).
    recovery : {"spr", "average"}
        Nodal stress recovery: averaging of extrapolated Gauss values, or superconvergent patch
        recovery (:mod:`planar.post.recovery`).
    path : path, optional
        Write the figure as PNG (atomically).
    scale : float, "auto" or None
        Displacement magnification (see :func:`deformation_scale`); it is stated on the figure.
    mesh_lines : bool
        Draw element sides along their curved edges.
    units : str, optional
        Unit of the field; default taken from ``model.units`` (``"N, mm, MPa"``: stress ``MPa``,
        length ``mm``).
    title : str, optional
        Default: the field and the load case.
    mark_peak, levels, cmap, subdivisions, window, ax, on
        As for :func:`plot_nodal_field` (the maximum marked, and the minimum of a signed field).
    centre : (float, float), optional
        Origin of the polar axes of ``sigma_r``, ``sigma_theta`` and ``tau_r_theta``.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import planar
    >>> from planar.post.plots import plot_field
    >>> m = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
    >>> model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    >>> _ = model.add_support(planar.Fixed("left"))
    >>> _ = model.add_load(planar.Traction("right", ty=-1.0), case="tip shear")
    >>> fig = plot_field(planar.solve(model)["tip shear"], "sigma_xx", mesh_lines=True)
    >>> fig.axes[1].get_xlabel()
    '$\\\\sigma_{xx}$ [MPa]'
    """
    result = as_result(result, "plot_field")
    values = result.field(field, recovery=recovery, centre=centre)
    model_units = getattr(result, "units", None)
    unit = units if units is not None else field_unit(field, model_units)
    etypes = {b.layout: b.etype for b in result.assembly.blocks}
    rec = {"average": "averaged nodal stresses", "spr": "stresses by superconvergent patch recovery"}
    note = rec.get(recovery) if field in _STRESS or field == "principal_angle" else None
    if not unit and field_unit(field, "N-mm-MPa"):  # a field with a unit, in a model that states none
        note = "; ".join(filter(None, [note, "units not stated (consistent)"]))
    if title is None:
        about = f" about {fmt_point(centre)}" if centre is not None and field in _POLAR else ""
        title = f"{field_label(field)}{about}, load case '{result.case}'"
    return plot_nodal_field(result.mesh.nodes, result.mesh.cells, values, displacement=result.u,
                            field=field, unit=unit, length=length_unit(model_units), scale=scale,
                            mesh_lines=mesh_lines, mark_peak=mark_peak, levels=levels, cmap=cmap,
                            title=title, note=note, etypes=etypes, subdivisions=subdivisions, window=window, ax=ax,
                            path=path, on=on)


# ---------------------------------------------------------------------------------------- vtu files
def _read_vtu(path, changed: str = "error"):
    from .files import read_result_file

    return read_result_file(path, changed=changed)


def vtu_fields(path, *, changed: str = "error") -> dict[str, list[str]]:
    """Names of the point fields and cell fields in a .vtu file (vectors also as _x/_y parts).

    ``changed`` is passed to :func:`planar.post.files.read_result_file`.
    """
    m = _read_vtu(path, changed)
    return {"point": sorted(_point_fields(m)), "cell": sorted(m.cell_data)}


def _point_fields(m) -> dict[str, np.ndarray]:
    out = {}
    for k, v in m.point_data.items():
        v = np.asarray(v, float)
        if v.ndim == 1:
            out[k] = v
        elif v.shape[1] >= 2:
            out[k] = np.hypot(v[:, 0], v[:, 1])
            if k == "displacement":
                out["ux"], out["uy"] = v[:, 0], v[:, 1]
            else:
                out[f"{k}_x"], out[f"{k}_y"] = v[:, 0], v[:, 1]
        else:
            out[k] = v[:, 0]
    return out


def plot_vtu(path, field: str = "von_mises", *, png=None, units: str | None = None, length: str = "",
             deformed: bool = True, scale: float | str | None = "auto", mesh_lines: bool = False,
             mark_peak: bool = True, levels: int | None = None, cmap: str | None = None,
             title: str | None = None, changed: str = "error", on: str = "undeformed"):
    """Contour of a field stored in a .vtu result file (read with meshio).

    Quadratic and higher cells (triangle6, quad8, quad9, a plugin's, e.g. VTK's Lagrange triangle)
    are subdivided with the shape functions of the element type that defines them. Point
    fields are drawn smooth; cell fields (e.g. ``element_von_mises``) as one colour per cell. A
    point field named ``displacement`` gives the deformed shape.

    Parameters
    ----------
    path : path
        The .vtu file.
    field : str
        A point or cell field in the file; ``ux``/``uy`` are the displacement components and
        ``displacement`` its magnitude.
    png : path, optional
        Write the figure there (atomically).
    units : str or UnitSystem, optional
        Default: the unit system the file states (planar writes it, :func:`planar.post.files.file_units`).
        A system (``"N, mm, MPa"``, ``"kip-in-ksi"``) overrides it; one bare unit (``"MPa"``) labels
        the field only. Both are checked (:func:`planar.core.units.figure_units`).
    length : str, optional
        Length unit for the axes, e.g. ``"mm"``; default from the system.
    deformed : bool
        Draw the deformed shape when the file has displacements (its outline over the contour, or the
        contour on it with ``on="deformed"``, as for :func:`plot_nodal_field`).
    changed : {"error", "warn"}
        A file planar wrote whose bytes changed since (its digest no longer matches): refuse it
        (default) or draw it with a warning (:func:`planar.post.files.read_result_file`).

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    MeshError
        The file is missing, unreadable, changed since planar wrote it, has no drawable cells, or the
        field to draw (or the displacement, on the deformed shape) holds NaN or infinite values.
    NameNotFoundError
        The field is not in the file (the message lists the fields that are).
    """
    from ..core.errors import unknown_name

    from .files import non_finite_fields

    levels = check_levels(levels)
    m = _read_vtu(path, changed)
    cells: dict[str, list[np.ndarray]] = {}
    order: list[tuple[int, str]] = []
    for bi, block in enumerate(m.cells):
        data = np.asarray(block.data, dtype=np.int64)
        found = from_file_cells(block.type, data.shape[1]) if data.ndim == 2 else None
        if found is not None:
            lay, cols = found
            cells.setdefault(lay, []).append(data if cols is None else data[:, cols])
            order.append((bi, lay))
    if not cells:
        raise MeshError(f"result file {os.fspath(path)!r} holds no triangles or quadrilaterals")
    cells_ = {k: np.vstack(v) for k, v in cells.items()}
    pfields = _point_fields(m)
    cell_values = values = None
    if field in pfields:
        values = pfields[field]
    elif field in m.cell_data:
        cv: dict[str, list[np.ndarray]] = {}
        for bi, lay in order:
            v = np.asarray(m.cell_data[field][bi], float)
            cv.setdefault(lay, []).append(v if v.ndim == 1 else np.hypot(v[:, 0], v[:, 1]))
        cell_values = {k: np.concatenate(v) for k, v in cv.items()}
    else:
        raise unknown_name("field", field, list(pfields) + list(m.cell_data),
                           hint="Fields are the point and cell data of the file")
    bad = non_finite_fields(m)
    base = field if field in m.point_data or field in m.cell_data else \
        "displacement" if field in ("ux", "uy") else field[:-2]
    if base in bad:
        n, size = bad[base]
        raise MeshError(
            f"result file {os.fspath(path)!r}: the field {base!r} holds {n} NaN or infinite values of {size}; "
            "they cannot be drawn (no colour would be right) or trusted: write the file again from the model"
        )
    disp = None
    if deformed and "displacement" in m.point_data:
        if "displacement" in bad:
            n, size = bad["displacement"]
            raise MeshError(
                f"result file {os.fspath(path)!r}: the displacement holds {n} NaN or infinite values of {size}, "
                "so the deformed shape cannot be drawn: draw on the undeformed shape (deformed=False, "
                "planar show --undeformed) or write the file again from the model"
            )
        disp = np.asarray(m.point_data["displacement"], float)[:, :2]
    from .files import file_case, file_units

    if title is None:
        case = file_case(m)
        title = f"{field_label(field)}, {Path(path).name}" + (f", load case '{case}'" if case is not None else "")
    from ..core.units import figure_units

    unit, length_, system = figure_units(field, units, file_units(m, path))
    note = None
    if not unit and field_unit(field, "N-mm-MPa"):  # a field with a unit, drawn without one: say why
        note = "units not stated (consistent)" if system is not None else "the file states no units"
    return plot_nodal_field(np.asarray(m.points, float)[:, :2], cells_, values, displacement=disp,
                            field=field, unit=unit, length=length or length_,
                            scale=scale if disp is not None else None, mesh_lines=mesh_lines,
                            mark_peak=mark_peak, levels=levels, cmap=cmap, title=title, note=note,
                            cell_values=cell_values, path=png, on=on)


# ---------------------------------------------------------------------------------------- paths
def plot_along(result, start, end, field: str = "von_mises", *, recovery: str = "spr",
               n_points: int = 201, path=None, units: str | None = None,
               lines: Mapping[str, float] | None = None, title: str | None = None, ax=None, centre=None):
    """A field along the straight path from ``start`` to ``end`` (:meth:`planar.Result.along`).

    Parameters
    ----------
    result : Result
    start, end : (x, y)
        End points of the path, inside the plate.
    field : str
        Nodal field name.
    recovery : {"spr", "average"}
    n_points : int
        Sample points along the path.
    path : path, optional
        Write the figure as PNG (atomically).
    units : str, optional
        Unit of the field; default from ``model.units``.
    lines : mapping of str to float, optional
        Reference levels drawn as labelled horizontal lines, e.g. ``{"net-section stress": 84.0}``.
    centre : (float, float), optional
        Origin of the polar axes of ``sigma_r``, ``sigma_theta`` and ``tau_r_theta``.

    Returns
    -------
    matplotlib.figure.Figure
    """
    result = as_result(result, "plot_along")
    dist, pts, vals = result.along(start, end, field, n_points=n_points, recovery=recovery, centre=centre)
    model_units = getattr(result, "units", None)
    unit = units if units is not None else field_unit(field, model_units)
    length = length_unit(model_units)
    own = ax is None
    if own:
        from matplotlib.figure import Figure
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        fig = Figure(figsize=(7.0, 3.6), dpi=120, layout="constrained")
        FigureCanvasAgg(fig)
        ax = fig.add_subplot()
    else:
        fig = ax.figure
    ax.plot(dist, vals, color="#1f5f8b", lw=1.8, label=field_label(field))
    ends = [("max", int(np.nanargmax(vals)))] + ([("min", int(np.nanargmin(vals)))] if field in SIGNED_FIELDS else [])
    for word, i in ends:  # the maximum, and the minimum of a signed field
        ring, = ax.plot([dist[i]], [vals[i]], "o" if word == "max" else "s", mfc="none", mec="black", mew=1.4)
        ring.set_gid(f"peak-{word}")
        ax.annotate(f"{word} {_fmt(vals[i])}{' ' + unit if unit else ''}", xy=(dist[i], vals[i]),
                    xytext=(8, -14 if word == "max" else 10), textcoords="offset points",
                    fontsize=8.5).set_gid(f"peak-{word}-label")
    for k, (lab, level) in enumerate((lines or {}).items()):
        ax.axhline(level, color=["#b5651d", "#5a7d2a", "#7b4f9d"][k % 3], lw=1.1, ls="--",
                   label=f"{lab} ({_fmt(level)}{' ' + unit if unit else ''})")
    ax.set_xlabel(f"distance along the path from ({_fmt(start[0])}, {_fmt(start[1])}) "
                  f"to ({_fmt(end[0])}, {_fmt(end[1])})" + (f" [{length}]" if length else ""))
    ax.set_ylabel(field_label(field, unit))
    return finish_line_plot(fig, ax, title or f"{field_label(field)} along a path, load case '{result.case}'", path)
