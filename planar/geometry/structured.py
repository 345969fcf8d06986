"""Structured (mapped) meshes of four-sided regions, built without gmsh.

Used by the benchmark suite and by users who want a regular mesh of a strip or a panel.

Every builder counts its cells (nx * ny, twice that for triangles) before it allocates anything and
refuses more than ``max_elements`` (default ``MAX_ELEMENTS``, 2 million) or more than the memory
available now at ``STRUCTURED_BYTES_PER_CELL`` per cell, with a ResourceError that gives the count.
"""
from __future__ import annotations

from typing import Callable

import numpy as np

from ..core.errors import InputError
from ..core.mesh import Mesh
from ._estimate import MAX_ELEMENTS, refuse_beyond

__all__ = ["mapped_mesh", "rectangle_mesh", "quad_panel_mesh"]

_LAYOUTS = ("T3", "T6", "Q4", "Q8", "Q9")
#: peak bytes per cell while building (grid, cells, renumbering and the Mesh's own copies): measured
#: 0.16 kB per Q4 cell to 0.48 kB per Q9 cell (0.18 to 0.41 kB per T3 / T6 triangle) at 10^6 cells,
#: rounded up
STRUCTURED_BYTES_PER_CELL = 1_000


def mapped_mesh(
    mapping: Callable[[np.ndarray, np.ndarray], tuple[np.ndarray, np.ndarray]],
    nx: int,
    ny: int,
    element: str = "Q4",
    *,
    side_names: tuple[str, str, str, str] = ("bottom", "right", "top", "left"),
    diagonal: str = "alternate",
    max_elements: int = MAX_ELEMENTS,
) -> Mesh:
    """Mesh the image of the unit square under ``mapping`` with ``nx`` x ``ny`` cells.

    Parameters
    ----------
    mapping : callable
        ``(s, t) -> (x, y)`` for arrays of s, t in [0, 1]; must be one-to-one and keep orientation.
        Quadratic nodes are placed by the mapping, so curved sides are followed exactly at the nodes.
    nx, ny : int
        Cells along s and t.
    element : {"T3", "T6", "Q4", "Q8", "Q9"}
        Element layout. Triangles split each quadrilateral cell along a diagonal.
    side_names : 4 str
        Names of the sides t = 0, s = 1, t = 1, s = 0.
    diagonal : {"alternate", "forward"}
        How triangles split the cells: alternating (a symmetric "union jack"-like pattern) or all
        along the same diagonal.
    max_elements : int, default ``MAX_ELEMENTS`` (2_000_000)
        Refuse more cells than this (raise it for a larger mesh); meshes that would not fit in the
        memory available now are refused whatever its value.

    Returns
    -------
    Mesh
        With edge sets for the four sides and node sets ``corner_00``, ``corner_10``, ``corner_11``,
        ``corner_01`` at the images of (0, 0), (1, 0), (1, 1), (0, 1).

    Raises
    ------
    InputError
        A bad layout, cell count or option.
    ResourceError
        More cells than ``max_elements`` or than the memory at hand can take (before any allocation).
    """
    if element not in _LAYOUTS:
        raise InputError(f"unknown element layout {element!r}; pick one of {', '.join(_LAYOUTS)}")
    nx, ny = _count("nx", nx), _count("ny", ny)
    ok = isinstance(max_elements, (int, np.integer)) and not isinstance(max_elements, bool) and max_elements >= 1
    if not ok:
        raise InputError(f"max_elements must be a whole number, at least 1, got {max_elements!r}")
    cells = nx * ny * (2 if element[0] == "T" else 1)  # Python integers: no overflow
    refuse_beyond(float(cells), int(max_elements), f"a structured mesh of {nx:,} x {ny:,} {element} cells",
                  "use fewer cells (smaller nx, ny)", STRUCTURED_BYTES_PER_CELL)
    quadratic = element in ("T6", "Q8", "Q9")
    r = 2 if quadratic else 1
    mx, my = r * nx + 1, r * ny + 1
    s, t = np.meshgrid(np.linspace(0, 1, mx), np.linspace(0, 1, my), indexing="xy")
    grid_id = np.arange(mx * my).reshape(my, mx)  # [j, i]
    i0 = r * np.arange(nx)
    j0 = r * np.arange(ny)
    I, J = np.meshgrid(i0, j0, indexing="xy")
    I, J = I.ravel(), J.ravel()

    def g(di, dj):
        return grid_id[J + dj, I + di]

    if element == "Q4":
        cells = np.column_stack([g(0, 0), g(1, 0), g(1, 1), g(0, 1)])
    elif element == "Q8":
        cells = np.column_stack([g(0, 0), g(2, 0), g(2, 2), g(0, 2), g(1, 0), g(2, 1), g(1, 2), g(0, 1)])
    elif element == "Q9":
        cells = np.column_stack(
            [g(0, 0), g(2, 0), g(2, 2), g(0, 2), g(1, 0), g(2, 1), g(1, 2), g(0, 1), g(1, 1)]
        )
    else:
        flip = np.zeros(I.shape, dtype=bool)
        if diagonal == "alternate":
            flip = ((I // r + J // r) % 2) == 1
        elif diagonal != "forward":
            raise InputError(f"diagonal must be 'alternate' or 'forward', got {diagonal!r}")
        a = r
        if element == "T3":
            fa = np.column_stack([g(0, 0), g(a, 0), g(a, a)]), np.column_stack([g(0, 0), g(a, a), g(0, a)])
            fb = np.column_stack([g(0, 0), g(a, 0), g(0, a)]), np.column_stack([g(a, 0), g(a, a), g(0, a)])
        else:
            fa = (
                np.column_stack([g(0, 0), g(2, 0), g(2, 2), g(1, 0), g(2, 1), g(1, 1)]),
                np.column_stack([g(0, 0), g(2, 2), g(0, 2), g(1, 1), g(1, 2), g(0, 1)]),
            )
            fb = (
                np.column_stack([g(0, 0), g(2, 0), g(0, 2), g(1, 0), g(1, 1), g(0, 1)]),
                np.column_stack([g(2, 0), g(2, 2), g(0, 2), g(2, 1), g(1, 2), g(1, 1)]),
            )
        c1 = np.where(flip[:, None], fb[0], fa[0])
        c2 = np.where(flip[:, None], fb[1], fa[1])
        cells = np.vstack([c1, c2])
    used = np.unique(cells)
    x, y = mapping(s.ravel()[used], t.ravel()[used])
    renum = np.full(mx * my, -1, dtype=np.int64)
    renum[used] = np.arange(used.size)
    nodes = np.column_stack([np.asarray(x, float), np.asarray(y, float)])
    cells = renum[cells]

    def side(ids):
        ids = np.asarray(ids)
        if quadratic:
            seg = np.column_stack([ids[0:-1:2], ids[2::2], ids[1::2]])
        else:
            seg = np.column_stack([ids[:-1], ids[1:]])
        return renum[seg]

    edges = {
        side_names[0]: side(grid_id[0, :]),
        side_names[1]: side(grid_id[:, -1]),
        side_names[2]: side(grid_id[-1, ::-1]),
        side_names[3]: side(grid_id[::-1, 0]),
    }
    points = {
        "corner_00": [renum[grid_id[0, 0]]],
        "corner_10": [renum[grid_id[0, -1]]],
        "corner_11": [renum[grid_id[-1, -1]]],
        "corner_01": [renum[grid_id[-1, 0]]],
    }
    return Mesh(nodes, {element: cells}, edge_sets=edges, node_sets=points)


def _count(name: str, n) -> int:
    """A whole number of cells, at least 1."""
    ok = isinstance(n, (int, np.integer)) and not isinstance(n, bool)
    if not ok and isinstance(n, (float, np.floating)) and np.isfinite(n) and float(n).is_integer():
        ok = True
    if not ok or int(n) < 1:
        raise InputError(f"{name} must be a whole number of cells, at least 1, got {n!r}")
    return int(n)


def _length(name: str, v) -> float:
    try:
        f = float(v)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a number, got {v!r}") from None
    if not (np.isfinite(f) and f > 0):
        raise InputError(f"{name} must be positive and finite, got {v!r}")
    return f


def quad_panel_mesh(corners, nx: int, ny: int, element: str = "Q4", **kw) -> Mesh:
    """Structured mesh of a straight-sided quadrilateral panel with corners given counter-clockwise.

    Parameters
    ----------
    corners : array_like, shape (4, 2)
        Corners (p00, p10, p11, p01): the sides are p00-p10 ("bottom"), p10-p11 ("right"),
        p11-p01 ("top"), p01-p00 ("left").
    """
    try:
        c = np.asarray(corners, dtype=float).reshape(4, 2)
    except (TypeError, ValueError):
        raise InputError(f"corners must be four points (x, y), got {corners!r}") from None
    if not np.all(np.isfinite(c)):
        raise InputError("the panel corners contain NaN or infinite values")

    def mapping(s, t):
        p = (
            np.outer((1 - s) * (1 - t), c[0])
            + np.outer(s * (1 - t), c[1])
            + np.outer(s * t, c[2])
            + np.outer((1 - s) * t, c[3])
        )
        return p[:, 0], p[:, 1]

    return mapped_mesh(mapping, nx, ny, element, **kw)


def rectangle_mesh(width: float, height: float, nx: int, ny: int, element: str = "Q4",
                   origin=(0.0, 0.0), **kw) -> Mesh:
    """Structured mesh of the rectangle [x0, x0 + width] x [y0, y0 + height]."""
    width, height = _length("width", width), _length("height", height)
    x0, y0 = origin
    return quad_panel_mesh(
        [[x0, y0], [x0 + width, y0], [x0 + width, y0 + height], [x0, y0 + height]], nx, ny, element, **kw
    )
