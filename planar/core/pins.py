"""Pins: a reference point with two translations and a rotation, tied to a named edge (usually a hole).

A :class:`Pin` is tied to its edge in one of three ways:

* ``tie="rigid"``: every node of the edge moves with the pin as a rigid body,
  ``u_i = u_p + theta z x (x_i - x_p)`` (linearised). The edge keeps its shape.
* ``tie="spreading"``: the pin's force and moment are spread over the edge nodes by weights (the
  tributary length times thickness of each node) and the pin moves as the weighted least-squares
  rigid fit of the edge's motion. The tie adds no stiffness: the hole keeps its own flexibility and
  may ovalise.
* ``tie="contact"``: bearing contact: the pin is a rigid disc that touches the edge only where it
  bears (compression only, frictionless), with a radial ``clearance`` (the disc's radius is the
  hole's minus the clearance, or ``radius=`` for any edge near the disc). Solved by an active-set
  iteration on one factorization (:mod:`planar.core.contact`); each result reports its state in
  ``result.contact_states``.

A pin is held (``hold=`` for its translations: both, ``"x"``, ``"y"``, a direction, or none;
``rotation=`` held or free), possibly moved by a prescribed rigid motion (``move=``), or loaded by a
:class:`PinLoad` (registered load kind ``"pin-load"``) per load case.

The ties are solved by elimination (:mod:`planar.core._tying`), so the stiffness matrix stays
symmetric positive definite and one factorization serves every load case. Each pin reports the force
and moment it exerts on the part, its load and reaction, and its motion
(:meth:`planar.Result.support_reactions`).

Examples
--------
>>> Pin("hole"), Pin("hole", tie="spreading", hold=None)
(Pin('hole', tie='rigid', hold='both', rotation='free'), Pin('hole', tie='spreading', hold=None, rotation='free'))
"""
from __future__ import annotations

from typing import Any

import numpy as np

from ._circle import fit_circle
from .errors import InputError, SupportError, fmt_point, unknown_name
from .loads import LoadKind
from .values import finite_vector, number

__all__ = ["Pin", "PinLoad", "TIES", "reference_point"]

#: the ways a pin is tied to its edge
TIES = ("rigid", "spreading", "contact")
_HOLD_WORDS = ("both", "x", "y")


def _hold(hold) -> tuple[str | tuple[float, float] | None, np.ndarray, tuple[bool, bool]]:
    """(hold as given, basis (2, 2) with the held direction first, translations held (along, across))."""
    if hold is None or (isinstance(hold, str) and hold.strip().lower() in ("none", "free")):
        return None, np.eye(2), (False, False)
    if isinstance(hold, str):
        key = hold.strip().lower()
        if key == "both":
            return "both", np.eye(2), (True, True)
        if key == "x":
            return "x", np.eye(2), (True, False)
        if key == "y":
            return "y", np.array([[0.0, -1.0], [1.0, 0.0]]), (True, False)
        raise InputError(f"a pin's hold must be 'both', 'x', 'y', None or a direction (dx, dy), got {hold!r}")
    d = finite_vector(hold)
    if d is None or np.hypot(*d) == 0:
        raise InputError(f"a pin's hold must be 'both', 'x', 'y', None or a non-zero direction (dx, dy), got {hold!r}")
    d = d / np.hypot(*d)
    return (float(d[0]), float(d[1])), np.array([[d[0], -d[1]], [d[1], d[0]]]), (True, False)


class Pin:
    """A rigid pin tied to a named edge, held or loaded.

    Parameters
    ----------
    edge : str
        The named edge the pin is tied to (usually a hole).
    tie : {"rigid", "spreading", "contact"}
        ``"rigid"``: the edge moves with the pin as a rigid body; ``"spreading"``: the pin's force and
        moment are spread over the edge nodes by weights that add no stiffness (the hole may ovalise);
        ``"contact"``: the pin is a rigid disc bearing on the edge where it touches (compression only,
        frictionless; it carries no moment and its rotation stays free).
    at : (x, y), optional
        The pin's reference point. Default: the centre of the circle fitted to the edge when it is
        an arc (a hole), else the length-weighted centre of the edge.
    hold : {"both", "x", "y"}, (dx, dy) or None
        The translations held: both, along x, along y, along a direction, or none (a loaded pin).
    rotation : {"free", "held"}
        Whether the pin's rotation is held (a clamped pin) or free (a pin turning in its hole).
    move : (ux, uy, theta), optional
        A prescribed rigid motion of the pin: only its held components are used (along the held
        direction for a pin held in one direction); a non-zero value for a free component is refused.
    name : str, optional
        The pin's name in reactions and in :class:`PinLoad` (default: the edge name).
    clearance : float
        Contact tie only: the radial clearance of the fit (hole radius minus pin radius, length
        unit; zero allowed).
    radius : float, optional
        Contact tie only: the pin's radius, for an edge that is not a hole about the pin (e.g. a pin
        pressed on a straight edge); give either ``radius`` or ``clearance``.
    """

    def __init__(self, edge: str, *, tie: str = "rigid", at=None, hold="both", rotation: str = "free",
                 move=None, name: str | None = None, clearance: float = 0.0, radius: float | None = None):
        if not isinstance(edge, str):
            raise InputError(f"a pin is tied to a named edge (a str), got {edge!r}")
        self.edge = edge
        if not isinstance(tie, str) or tie.strip().lower() not in TIES:
            raise InputError(f"a pin's tie must be one of {TIES}, got {tie!r}: 'rigid' keeps the edge's shape, "
                             "'spreading' lets the hole ovalise")
        self.tie = tie.strip().lower()
        self.clearance = number(clearance, "a pin's clearance")
        if self.clearance < 0:
            raise InputError(f"a pin's clearance must be zero or positive (hole radius minus pin radius), got {clearance!r}")
        self.radius = None if radius is None else number(radius, "a pin's radius")
        if self.radius is not None and not self.radius > 0:
            raise InputError(f"a pin's radius must be a positive number, got {radius!r}")
        if self.tie != "contact" and (self.clearance != 0 or self.radius is not None):
            raise InputError(f"pin on {edge!r}: clearance= and radius= belong to a contact pin; use tie='contact'")
        if self.radius is not None and self.clearance != 0:
            raise InputError(f"pin on {edge!r}: give the pin's radius= or its clearance= in the hole, not both")
        if self.tie == "contact" and isinstance(rotation, str) and rotation.strip().lower() == "held":
            raise InputError(f"pin on {edge!r}: a contact pin is frictionless, so it cannot hold the part's rotation; "
                             "leave rotation='free' and hold the rotation with a support (or use tie='rigid')")
        if at is not None:
            xy = np.asarray(at, dtype=float).reshape(-1)
            if xy.shape != (2,) or not np.all(np.isfinite(xy)):
                raise InputError(f"a pin's point at= must be (x, y) of finite numbers, got {at!r}")
            at = (float(xy[0]), float(xy[1]))
        self.at = at
        self.hold, self.basis, held = _hold(hold)
        if not isinstance(rotation, str) or rotation.strip().lower() not in ("free", "held"):
            raise InputError(f"a pin's rotation must be 'free' or 'held', got {rotation!r}")
        self.rotation = rotation.strip().lower()
        self.held = np.array([held[0], held[1], self.rotation == "held"])
        mv = np.zeros(3)
        if move is not None:
            mv = finite_vector(move, 3)
            if mv is None:
                raise InputError(f"a pin's move= must be (ux, uy, theta) of finite numbers, got {move!r}")
        self.move = tuple(float(v) for v in mv)
        local = np.r_[self.basis.T @ mv[:2], mv[2]]  # the motion in the pin's basis (along, across, theta)
        scale = max(1.0, float(np.abs(mv).max()))
        if np.any(np.abs(local[~self.held]) > 1e-12 * scale):
            raise InputError(f"pin on {edge!r}: move={self.move} moves a component the pin does not hold "
                             f"(hold={self.hold!r}, rotation={self.rotation!r}); hold it, or prescribe only held ones")
        self.values = np.where(self.held, local, 0.0)  # prescribed values in the pin's basis
        self.name = str(name) if name is not None else edge

    def __repr__(self):
        extra = ""
        if self.tie == "contact":
            extra = f", radius={self.radius:g}" if self.radius is not None else f", clearance={self.clearance:g}"
        return f"Pin({self.edge!r}, tie={self.tie!r}{extra}, hold={self.hold!r}, rotation={self.rotation!r})"

    def describe(self) -> str:
        extra = f", name={self.name!r}" if self.name != self.edge else ""
        return repr(self)[:-1] + extra + ")"

    def point(self, mesh) -> np.ndarray:
        """The pin's reference point on ``mesh``: ``at`` when given, else :func:`reference_point`."""
        if self.at is not None:
            return np.asarray(self.at, dtype=float)
        return reference_point(mesh, self.edge)


def reference_point(mesh, edge: str) -> np.ndarray:
    """The centre of a named edge: of the fitted circle when the edge is an arc, else its length-weighted centre.

    The circle is fitted by least squares to the edge's nodes (algebraic fit, I. Kasa, 1976) and
    used when every node lies on it within 1e-3 of its radius and the radius is at most 10 times
    the edge's extent (a hole or an arc of one); a straight or wavy edge gets the centre of its length.
    """
    seg = mesh.edge(edge)
    p = mesh.nodes[np.unique(seg)]
    a, b = mesh.nodes[seg[:, 0]], mesh.nodes[seg[:, 1]]
    length = np.hypot(*(b - a).T)
    centroid = ((a + b) / 2 * length[:, None]).sum(axis=0) / max(length.sum(), 1e-300)
    if p.shape[0] < 3:
        return centroid
    centre, r, residual = fit_circle(p)
    extent = float(np.ptp(p, axis=0).max())
    if r <= 10 * extent and residual <= 1e-3:
        return centre
    return centroid


class PinLoad(LoadKind):
    """A force and a moment on a pin, in one load case (registered as ``"pin-load"``).

    Parameters
    ----------
    pin : str
        The pin's name (its edge name unless it was given another).
    fx, fy : float
        Force on the pin, global components (force units of the model).
    moment : float
        Moment on the pin about its reference point, counter-clockwise positive (force times length).

    Notes
    -----
    Only the pin's free components carry a load to the part: a load on a held one (a pin of the
    default ``hold="both"``, say) would go straight into its support, so the solve refuses it.

    Examples
    --------
    >>> PinLoad("hole", fy=-1000.0)
    PinLoad('hole', fx=0, fy=-1000, moment=0)
    """

    name = "pin-load"

    def __init__(self, pin: str, fx: float = 0.0, fy: float = 0.0, moment: float = 0.0):
        if not isinstance(pin, str):
            raise InputError(f"a pin load names its pin (a str), got {pin!r}")
        self.pin = pin
        self.fx = number(fx, "fx")
        self.fy = number(fy, "fy")
        self.moment = number(moment, "moment")

    def __repr__(self):
        return f"PinLoad({self.pin!r}, fx={self.fx:g}, fy={self.fy:g}, moment={self.moment:g})"

    def describe(self) -> str:
        return repr(self)

    def vector(self) -> np.ndarray:
        return np.array([self.fx, self.fy, self.moment])

    def nodal_forces(self, ctx) -> np.ndarray:
        """None on the mesh's own nodes: the pin carries the load to its edge through its tie."""
        return np.zeros((ctx.mesh.n_nodes, 2))


def pin_loads(model, case: str) -> dict[str, np.ndarray]:
    """The (fx, fy, moment) on each pin in a load case, summed; refuses a load on a pin that does not exist."""
    pins = {p.name: p for p in getattr(model, "pins", [])}
    out: dict[str, np.ndarray] = {}
    for load in model.cases.get(case, []):
        if isinstance(load, PinLoad):
            if load.pin not in pins:
                raise unknown_name("pin", load.pin, list(pins), "add the pin with model.add_pin(Pin(edge, ...)) first")
            out[load.pin] = out.get(load.pin, np.zeros(3)) + load.vector()
    for name, f in out.items():
        _refuse_held_load(pins[name], case, f)
    return out


def _refuse_held_load(pin: Pin, case: str, f: np.ndarray) -> None:
    """Refuse a load on a component the pin holds: it goes into the pin's support and never reaches the part."""
    local = np.r_[pin.basis.T @ f[:2], f[2]]  # along the held direction, across it, moment
    scale = max(float(np.hypot(*f[:2])), 1e-300)
    on_held = pin.held & (np.abs(local) > np.r_[1e-12 * scale, 1e-12 * scale, 0.0])
    if not on_held.any():
        return
    if isinstance(pin.hold, tuple):
        along, across = f"along ({pin.hold[0]:.4g}, {pin.hold[1]:.4g})", "across its held direction"
    else:
        along, across = ("along y", "") if pin.hold == "y" else ("along x", "along y")
    words = [w for w, on in zip((f"a force {along}", f"a force {across}", "a moment"), on_held) if on]
    raise InputError(f"load case {case!r} puts {' and '.join(words)} on pin {pin.name!r}, which holds it "
                     f"(hold={pin.hold!r}, rotation={pin.rotation!r}): a load on a held pin goes straight into its "
                     "support and never reaches the part. To load the part through the pin, free what it carries "
                     "(hold=None, or hold one direction only; rotation='free'); to hold the part, drop the load")


def check_new_pin(model, pin: Any) -> None:
    """Refuse a pin that is not a Pin, names an unknown edge, or repeats a pin's name or edge."""
    if not isinstance(pin, Pin):
        raise InputError(f"add_pin takes a Pin, got {pin!r}; e.g. model.add_pin(Pin('hole', tie='rigid'))")
    if pin.edge not in model.mesh.edge_sets:
        raise unknown_name("edge", pin.edge, model.mesh.edge_sets, "a pin is tied to a named edge of the mesh")
    for other in getattr(model, "pins", []):
        if other.name == pin.name:
            raise InputError(f"two pins are named {pin.name!r}; give one of them name=...")
        if other.edge == pin.edge:
            raise SupportError(f"two pins are tied to the edge {pin.edge!r}; tie one pin to it")
    p = pin.point(model.mesh)
    if not np.all(np.isfinite(p)):
        raise InputError(f"pin on {pin.edge!r}: its reference point {fmt_point(p)} is not finite; give at=(x, y)")
