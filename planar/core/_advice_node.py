"""What the checks of a peak share (``"linear-peak"``, ``"sharp-corner"``, ``"interface-edge"``,
``"coarse-peak"``): the cells round the peak node, the fan of cells at a corner node with the tangents
of its two sides, the words that name the peak, and the emission of the warning into ``result.warnings``.

No loop over the elements: one comparison over each block's connectivity finds the cells of a node,
and the rest is a handful of array operations on those few cells. The checks run on every peak query
(:meth:`planar.Result.max`, hot spots, lug checks).
"""
from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from .errors import InputError, fmt_point, warn
from .fields import FIELD_TABLE
from .units import length_unit, stress_unit

__all__ = ["ROUND_OFF_STRAIN", "round_off", "node_memo", "point_source", "clear_distance", "PEAK_PARAMETERS", "PEAK_STACKLEVEL", "peak_doc", "is_stress", "units_of", "cells_at", "Fan", "fan",
           "angles", "peak_words", "warn_peak", "warn_if_found", "peak_warnings_given"]

#: the parameters every check of a peak takes, for its docstring (see :func:`peak_doc`)
PEAK_PARAMETERS = """\
result : Result
    The load case the peak was read from.
node : int
    The peak node (as :meth:`Result.max` / :meth:`Result.min` return it).
field : str
    The field's name; fields that are not stresses never warn.
values : ndarray, shape (n,)
    The nodal field the peak was read from (signed; the peak may be negative, as a minimum)."""


#: the stack level a check of a peak takes, for its docstring (see :func:`peak_doc`)
PEAK_STACKLEVEL = """\
stacklevel : int, default 2
    As for :func:`warnings.warn`, counted from the caller of this function."""

_DOC_PARTS = {"{peak parameters}": PEAK_PARAMETERS, "{peak stacklevel}": PEAK_STACKLEVEL,
              "{peak check parameters}": f"Parameters\n----------\n{PEAK_PARAMETERS}\n{PEAK_STACKLEVEL}"}


def peak_doc(func):
    """Put :data:`PEAK_PARAMETERS` and :data:`PEAK_STACKLEVEL` in ``func``'s docstring where a line reads
    ``{peak parameters}`` or ``{peak stacklevel}``; ``{peak check parameters}`` puts both under the heading
    ``Parameters``, the whole section of a check that takes no other parameter."""
    doc = func.__doc__ or ""
    for line in doc.splitlines():
        part = _DOC_PARTS.get(line.strip())
        if part is not None:
            pad = line[:len(line) - len(line.lstrip())]
            doc = doc.replace(line, "\n".join(pad + p for p in part.splitlines()), 1)
    func.__doc__ = doc
    return func


def is_stress(field: str) -> bool:
    """True when ``field`` is a field measured in the stress unit (a stress, not a displacement or angle)."""
    info = FIELD_TABLE.get(field)
    return info is not None and info.unit == "stress"


def units_of(result) -> tuple[str, str]:
    """(stress unit, length unit) of ``result``'s units: ``"(model stress units)"`` and ``""`` where
    they are not stated or the units text is of no known system."""
    units = str(getattr(result, "units", "") or "")
    try:
        return stress_unit(units) or "(model stress units)", length_unit(units)
    except InputError:  # units text of no known system: the words still state the units
        return "(model stress units)", ""


def _hits(conn: np.ndarray, node: int) -> tuple[np.ndarray, np.ndarray]:
    """(rows, places) of ``node`` in a block's connectivity, rows ascending: one comparison over the
    flat (contiguous) array, some ten times quicker than over its rows and columns."""
    hit = np.flatnonzero(conn.ravel() == node)
    return hit // conn.shape[1], hit % conn.shape[1]


def cells_at(asm, node: int) -> list[tuple[int, np.ndarray]]:
    """[(block index, rows)] of the cells that have ``node`` among their nodes (corner or mid-side)."""
    out = []
    for i, b in enumerate(asm.blocks):
        rows = _hits(b.conn, node)[0]
        if rows.size:
            out.append((i, rows))
    return out


@lru_cache(maxsize=64)
def _mid_sides(edges: tuple, k: int) -> tuple[np.ndarray, np.ndarray]:
    """For each corner j of a cell: the local index of the mid-side node of its side to corner j + 1
    and of its side to corner j - 1 (-1 for a straight side with no such node)."""
    nxt, prv = np.full(k, -1), np.full(k, -1)
    for row in edges:
        if len(row) > 2:
            for j in range(k):
                if {row[0], row[1]} == {j, (j + 1) % k}:
                    nxt[j] = row[2]
                elif {row[0], row[1]} == {j, (j - 1) % k}:
                    prv[j] = row[2]
    return nxt, prv


@dataclass(frozen=True)
class Fan:
    """The cells that have a node as a corner, in block order: for each, its block index, its row,
    the corners after (``nxt``) and before (``prv``) the node (the cell runs counter-clockwise from
    ``nxt`` to ``prv`` about it), the tangents at the node of its sides to those corners (through the
    mid-side node of a quadratic side, so a curved side counts with its own tangent, not its chord),
    and all the nodes of those cells (``around``)."""

    block: np.ndarray
    row: np.ndarray
    nxt: np.ndarray
    prv: np.ndarray
    t_next: np.ndarray
    t_prev: np.ndarray
    around: np.ndarray

    @property
    def size(self) -> int:
        return int(self.nxt.size)

    def ends(self) -> tuple[np.ndarray, np.ndarray]:
        """The node's neighbours along the boundary, as the first and the last side of the fan
        (counter-clockwise): round an inner node every neighbour is once a next and once a previous
        corner, so both are empty there."""
        return np.setdiff1d(self.nxt, self.prv), np.setdiff1d(self.prv, self.nxt)


def fan(asm, node: int) -> Fan:
    """The :class:`Fan` of cells at ``node`` as a corner (empty arrays when it is no corner of a cell)."""
    X = asm.mesh.nodes
    p = X[node]
    parts = []
    for i, b in enumerate(asm.blocks):
        k = b.etype.corner_count()
        rows, j = _hits(b.conn, node)
        rows, j = rows[j < k], j[j < k]
        if rows.size == 0:
            continue
        conn = b.conn[rows]
        tangents = []
        mids = _mid_sides(tuple(tuple(int(v) for v in e) for e in np.asarray(b.etype.edges)), k)
        for step, mid in ((1, mids[0]), (-1, mids[1])):
            e = conn[np.arange(rows.size), (j + step) % k]
            m = mid[j]
            t = X[e] - p
            q = m >= 0
            if q.any():
                t[q] = -3.0 * p + 4.0 * X[conn[np.flatnonzero(q), m[q]]] - X[e[q]]
            tangents.append((e, t))
        parts.append((np.full(rows.size, i), rows, tangents[0][0], tangents[1][0], tangents[0][1],
                      tangents[1][1], conn.ravel()))
    if not parts:
        none = np.zeros(0, dtype=np.int64)
        flat = np.zeros((0, 2))
        return Fan(none, none, none, none, flat, flat, none)
    return Fan(*(np.concatenate(c) for c in zip(*parts)))


def angles(a: np.ndarray, q: np.ndarray) -> np.ndarray:
    """The angles (radians, 0 to 2 pi) turned counter-clockwise from the vectors ``a`` to ``q`` (rows)."""
    return np.arctan2(a[:, 0] * q[:, 1] - a[:, 1] * q[:, 0], a[:, 0] * q[:, 0] + a[:, 1] * q[:, 1]) % (2.0 * np.pi)


def peak_words(result, node: int, field: str, values, where: str = "") -> str:
    """``"the peak <field> of <value> <unit> at (x, y) (node <n><where>)"``: how each warning names the peak."""
    node = int(node)
    value = float(np.asarray(values).reshape(-1)[node])
    return (f"the peak {field} of {value:.4g} {units_of(result)[0]} at {fmt_point(result.mesh.nodes[node])} "
            f"(node {node}{where})")


#: while :func:`peak_warnings_given` runs: the list each peak warning given is put in (told or not)
_GIVEN: ContextVar[list | None] = ContextVar("planar_peak_warnings_given", default=None)


def warn_peak(result, code: str, text: str, stacklevel: int) -> None:
    """Warn ``"<code>: <text>"`` under ``code`` and keep it in ``result.warnings``; ``stacklevel`` counted
    from the caller of this function, as for :func:`warnings.warn`.

    Told once per result: the text names the peak (field, value, node), so a peak that two queries
    read (``Result.max`` and an edge's peak, or ``Result.max`` asked twice) warns once; another field or
    node warns on its own.
    """
    w = warn(f"{code}: {text}", code, sink=result.warnings, stacklevel=stacklevel + 1, once=True)
    given = _GIVEN.get()
    if given is not None:
        given.append(w)


@contextmanager
def peak_warnings_given() -> Iterator[list]:
    """A list that gathers every peak warning the checks give within the block, also those not told
    again because the result already holds them (for a caller that keeps its own list of them, e.g.
    :class:`planar.post.EdgeStresses`)."""
    given: list = []
    token = _GIVEN.set(given)
    try:
        yield given
    finally:
        _GIVEN.reset(token)


#: a stress below this share of the stiffest material's largest modulus (a strain of 1e-12) is round-off
ROUND_OFF_STRAIN = 1e-12


def round_off(result, value: float) -> bool:
    """True when a stress ``value`` of ``result`` is round-off: no larger than :data:`ROUND_OFF_STRAIN` times
    the largest entry of its blocks' elasticity matrices (a load case with no load, a field zero by
    symmetry). The checks of a peak do not judge such a peak: its place and shape are noise."""
    asm = getattr(result, "assembly", None)
    if asm is None:
        return False
    scale = getattr(asm, "_planar_stiffest", None)
    if scale is None:
        scale = max((float(np.abs(np.asarray(b.D, dtype=float)).max()) for b in asm.blocks), default=0.0)
        try:
            object.__setattr__(asm, "_planar_stiffest", scale)
        except (AttributeError, TypeError):
            pass
    v = abs(float(value))
    return scale > 0.0 and v <= ROUND_OFF_STRAIN * scale


def warn_if_found(result, node: int, field: str, values, code: str, find: Callable[..., object | None],
                  words: Callable[..., str], stacklevel: int) -> None:
    """The frame of a check of a peak: nothing for a field that is not a stress, nor for a peak of
    round-off (:func:`round_off`), nor where ``find(result, node)`` finds no cause (None); else warn
    ``code`` naming the peak, followed by ``words(found, node)``. ``stacklevel`` counted from the
    caller of this function."""
    if not is_stress(field):
        return None
    try:
        if round_off(result, np.asarray(values, dtype=float).reshape(-1)[int(node)]):
            return None
    except (IndexError, TypeError, ValueError):
        pass
    got = find(result, node)
    if got is None:
        return None
    node = int(node)
    warn_peak(result, code, f"{peak_words(result, node, field, values)} {words(got, node)}", stacklevel + 1)
    return None


def node_memo(asm, name: str, node: int, find: Callable[[], object | None]) -> object | None:
    """``find()`` for ``node``, worked out once per assembly and node and kept on ``asm`` under ``name``.

    For the causes of a peak that depend on the mesh and the model only (a sharp corner, an interface
    edge): a peak query warns of them and then asks again before judging the resolution, and the hot
    spots and the other load cases of the assembly ask about the same nodes.
    """
    memo = getattr(asm, name, None)
    if memo is None:
        memo = {}
        try:
            object.__setattr__(asm, name, memo)
        except (AttributeError, TypeError):  # an assembly that keeps no attribute: work it out each time
            return find()
    node = int(node)
    if node not in memo:
        memo[node] = find()
    return memo[node]


def point_source(p) -> str:
    """A point as Python source, ``(x, y)`` to 6 figures."""
    return "(" + ", ".join(format(float(v), ".6g") for v in p[:2]) + ")"


def clear_distance(result, node: int) -> float:
    """A distance that keeps a read clear of a singular point: 4 local element sizes (St Venant, common practice)."""
    from .zones import node_sizes

    return 4.0 * float(node_sizes(result.mesh)[node])
