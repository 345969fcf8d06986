"""Reactions per support and per pin: force (Rx, Ry) and moment about a stated point.

Each support's share of the nodal reactions is read from its constraint rows: at a node held by one
row the reaction is along that row's direction; at a node held by two rows of different supports
(say x by one and y by another) it is split along the two directions; a row that repeats another
(same node and direction) gets nothing. Each pin reports the force and moment it exerts on the part
(the resultant of its forces on its edge nodes), its load and its reaction (force minus load).

Moments are counter-clockwise positive, about the origin (0, 0) unless another point is asked for
(``about=(x, y)``, or ``about="own"``: each support about the centre of its held nodes, each pin
about its reference point). With one common point the records add up:
``sum of supports' forces + sum of pins' reactions + applied loads = 0`` (to round-off), the applied loads
counting the loads on pins; a loaded pin's force on the part includes its own load, so the pins' forces
balance the supports and the loads on the part's edges and body alone.
"""
from __future__ import annotations

from dataclasses import asdict, dataclass, field

import numpy as np

from .errors import InputError
from .values import finite_vector

__all__ = ["Reaction", "support_reactions"]


@dataclass
class Reaction:
    """The force and moment one support or pin exerts on the part, in one load case.

    Attributes
    ----------
    name : str
        The support's description or the pin's name.
    kind : str
        ``"fixed"``, ``"roller"``, ``"prescribed"``, ``"symmetry"`` (the support's class, in lower case) or
        ``"pin (rigid tie)"``, ``"pin (spreading tie)"``, ``"pin (contact tie)"``.
    force : (float, float)
        (Rx, Ry) on the part, in the model's force unit.
    moment : float
        About ``about``, counter-clockwise positive (force times length).
    about : (float, float)
    load : (float, float, float) or None
        A pin's load (fx, fy, moment about its point); None for a support.
    reaction : (float, float, float) or None
        A pin's reaction (force minus load, moment about its point); None for a support.
    motion : (float, float, float) or None
        A pin's motion (ux, uy, rotation).
    """

    name: str
    kind: str
    force: tuple
    moment: float
    about: tuple
    load: tuple | None = None
    reaction: tuple | None = None
    motion: tuple | None = field(default=None)

    def as_dict(self) -> dict:
        return asdict(self)


def _about(about) -> tuple[float, float] | str:
    if isinstance(about, str):
        if about.strip().lower() != "own":
            raise InputError(f"about must be a point (x, y) or 'own' (each support's centre, each pin's point), "
                             f"got {about!r}")
        return "own"
    p = finite_vector(about)
    if p is None:
        raise InputError(f"about must be a point (x, y) of finite numbers or 'own', got {about!r}")
    return (float(p[0]), float(p[1]))


def _shares(mesh, supports, R: np.ndarray) -> list[np.ndarray]:
    """Each support's nodal forces (n, 2) from the reactions R (n, 2) and the constraint rows."""
    from .supports import gather

    rows = gather(mesh, supports)
    out = [np.zeros_like(R) for _ in supports]
    if rows.node.size == 0:
        return out
    d = rows.direction
    # one row per (node, direction up to sign): the first support keeps a repeated row
    sign = np.where(np.abs(d[:, 0]) > 1e-12, np.sign(d[:, 0]), np.sign(d[:, 1]))
    key = np.column_stack([rows.node, np.round(d * sign[:, None], 9)])
    _, first = np.unique(key, axis=0, return_index=True)
    first = np.sort(first)
    node, d, lab = rows.node[first], d[first], rows.label[first]
    count = np.bincount(node, minlength=mesh.n_nodes)
    one = count[node] == 1
    if np.any(one):
        n1, d1 = node[one], d[one]
        c = (R[n1] * d1).sum(axis=1)
        for s in np.unique(lab[one]):
            k = lab[one] == s
            np.add.at(out[s], n1[k], c[k, None] * d1[k])
    two = count[node] == 2  # two rows at a node (x and y of a clamp, or of two supports): 2 x 2 solves at once
    if np.any(two):
        k2 = np.flatnonzero(two)
        k2 = k2[np.argsort(node[k2], kind="stable")].reshape(-1, 2)
        M = np.stack([d[k2[:, 0]], d[k2[:, 1]]], axis=2)  # (p, 2, 2): columns the two directions
        p2 = node[k2[:, 0]]
        ok = np.abs(np.linalg.det(M)) > 1e-12
        c = np.zeros((k2.shape[0], 2))
        if np.any(ok):
            c[ok] = np.linalg.solve(M[ok], R[p2[ok]][:, :, None])[:, :, 0]
        for j in range(2):
            kk = k2[ok, j]
            for s in np.unique(lab[kk]):
                sel = lab[kk] == s
                np.add.at(out[s], node[kk][sel], c[ok, j][sel, None] * d[kk][sel])
        rest = np.unique(p2[~ok])
    else:
        rest = np.zeros(0, np.int64)
    many = np.union1d(np.unique(node[count[node] > 2]), rest)
    for p in many:  # nodes held by more rows, or by two parallel ones: few
        k = np.flatnonzero(node == p)
        c, *_ = np.linalg.lstsq(d[k].T, R[p], rcond=None)
        for kk, cc in zip(k, c):
            out[lab[kk]][p] += cc * d[kk]
    return out


def support_reactions(result, about=(0.0, 0.0)) -> list[Reaction]:
    """The reaction of each support and each pin of a result (see :meth:`planar.Result.support_reactions`)."""
    about = _about(about)
    mesh, model = result.mesh, result.model
    out = []
    for s, f in zip(model.supports, _shares(mesh, model.supports, np.asarray(result.reactions, float))):
        held = np.flatnonzero(np.any(f != 0, axis=1))
        nodes = s.nodes(mesh) if held.size == 0 else held
        a = mesh.nodes[nodes].mean(axis=0) if about == "own" else np.asarray(about)
        x = mesh.nodes - a
        force = f.sum(axis=0)
        moment = float(x[:, 0] @ f[:, 1] - x[:, 1] @ f[:, 0])
        out.append(Reaction(s.describe(), type(s).__name__.lower(), (float(force[0]), float(force[1])), moment,
                            (float(a[0]), float(a[1]))))
    for st in getattr(result, "pin_states", None) or []:
        p = np.asarray(st["point"])
        a = p if about == "own" else np.asarray(about)
        fx, fy = st["force"]
        moment = st["moment"] + float((p - a)[0] * fy - (p - a)[1] * fx)
        out.append(Reaction(st["name"], f"pin ({st['tie']} tie)", (fx, fy), moment, (float(a[0]), float(a[1])),
                            load=st["load"], reaction=st["reaction"], motion=st["motion"]))
    return out


def combine_pins(result, parts) -> None:
    """Give a combination of results (factor, result) the factored sums of its parts' pin forces and figures.

    Pins are linear like the rest (their forces, loads, reactions and motions superpose); a result
    without pins is left as it is.
    """
    if not any(getattr(r, "pin_forces", None) is not None for _, r in parts):
        return
    result.pin_forces = sum(f * (r.pin_forces if r.pin_forces is not None else 0.0) for f, r in parts)
    states = [(f, r.pin_states) for f, r in parts if r.pin_states]
    out = []
    for k, first in enumerate(states[0][1]):
        st = dict(first)
        for key in ("force", "load", "reaction", "motion"):
            st[key] = tuple(float(v) for v in sum(f * np.asarray(s[k][key]) for f, s in states))
        st["moment"] = float(sum(f * s[k]["moment"] for f, s in states))
        out.append(type(first)(st))
    result.pin_states = out
