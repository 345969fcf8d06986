"""A contact pin's state in one load case (:class:`ContactState`), and how it is read from the edge.

The edge nodes' angles about the pin's point, continuous along an edge that does not close
(:func:`_edge_angles`), the contact arc from which nodes bear (:func:`_arc`), whether the edge closes
on itself (:func:`_closes`), and the plain figures of the state's one-line summary. The bearing-contact
solve that fills the state is :mod:`planar.core.contact`, which re-exports these names.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .errors import fmt_point

__all__ = ["ContactState"]


@dataclass
class ContactState:
    """A contact pin's state in one load case, at convergence.

    Attributes
    ----------
    pin, case : str
    iterations : int
        Active-set iterations (each a small dense solve; the factorization is shared).
    converged : bool
        Always True: a load case that does not converge is a SolverError.
    arc_start_deg, arc_end_deg : float or None
        The contact arc, as angles about the pin's point counter-clockwise from +x (degrees, start
        to end counter-clockwise; the start in (-180, 180], the end may pass 180). Each end lies half-way between the last node
        in contact and the first open one (so read to half a node spacing), or at the end node of an edge that does not
        close (a half or quarter hole: a half lug on x >= 0 bears within -90 to 90). None without contact.
    peak_pressure : float
        Largest contact pressure (force per length per thickness), stress unit; 0 without contact.
    peak_at : (float, float) or None
        Where it is (the node's coordinates).
    max_penetration : float
        Largest penetration (negative gap) of any edge node, length unit (round-off at convergence).
    max_tension : float
        Largest tensile contact pressure, stress unit (round-off at convergence).
    force : (float, float)
        The resultant the pin exerts on the part through contact (force unit).
    nodes : ndarray
        The edge nodes in order along the edge, counter-clockwise: sorted by angle in [0, 360) on a whole hole; from
        the end after the largest angular gap on an edge that does not close (its angles continuous from there).
    angles_deg, gap, pressure : ndarray
        Per edge node: angle about the pin's point, gap (length) and contact pressure (stress).
    clearance, radius : float
        The radial clearance and the pin's radius (length).
    units : dict
        The units of the figures (length, stress, force).
    neglected : float
        The largest term the linearised gap leaves out, ``u_t^2 / (2 r)`` over the edge nodes (``u_t``
        the relative motion across the pin's normal, less the edge's rotation about the pin's point, which
        changes no gap), length unit; a warning ``contact-large-motion``
        follows when it passes 1 % of the largest of ``motion``, ``closure`` and the clearance.
    motion : float
        The largest normal motion of the edge relative to the pin, ``|e_i . (u_i - u_p)|`` (length).
    closure : float
        The largest normal motion the contact forces make (the closure of the gaps they hold back: the gap
        less the gap the loads alone would leave), length. A fit without clearance that the pin holds
        closed (a shrink fit) has no normal motion to read, but a closure of the size of its interference.
    """

    pin: str
    case: str
    iterations: int
    converged: bool
    arc_start_deg: float | None
    arc_end_deg: float | None
    peak_pressure: float
    peak_at: tuple | None
    max_penetration: float
    max_tension: float
    force: tuple
    clearance: float
    radius: float
    nodes: np.ndarray = field(repr=False)
    angles_deg: np.ndarray = field(repr=False)
    gap: np.ndarray = field(repr=False)
    pressure: np.ndarray = field(repr=False)
    units: dict = field(default_factory=dict, repr=False)
    neglected: float = 0.0
    motion: float = 0.0
    closure: float = 0.0

    @property
    def in_contact(self) -> bool:
        """Whether any node bears on the pin."""
        return self.arc_start_deg is not None

    @property
    def arc_deg(self) -> float:
        """The contact arc's extent in degrees (0 without contact)."""
        return 0.0 if self.arc_start_deg is None else float(self.arc_end_deg - self.arc_start_deg)

    def _u(self, q: str) -> str:
        u = self.units.get(q, "")
        return f" {u}" if u else ""

    def summary(self) -> str:
        """One line with units, e.g. ``pin 'pin' (case 'pull'): contact arc 242.1 to 297.9 deg ...``."""
        head = f"pin {self.pin!r} (case {self.case!r}, clearance {self.clearance:.4g}{self._u('length')})"
        if not self.in_contact:
            return (f"{head}: no contact, the pin carries nothing; {self.iterations} active-set iteration(s); "
                    f"smallest gap {float(self.gap.min()):.4g}{self._u('length')}")
        return (f"{head}: contact arc {self.arc_start_deg:.1f} to {self.arc_end_deg:.1f} deg ({self.arc_deg:.1f} deg), "
                f"peak pressure {_plain(self.peak_pressure)}{self._u('stress')} at {fmt_point(self.peak_at)}, "
                f"force ({_tidy(self.force[0], self.force)}, {_tidy(self.force[1], self.force)}){self._u('force')}; "
                f"{self.iterations} active-set iteration(s), largest penetration {self.max_penetration:.2e}"
                f"{self._u('length')}, largest tension {self.max_tension:.2e}{self._u('stress')}")

    __str__ = summary

    def as_dict(self) -> dict:
        """The figures as plain numbers and lists (JSON-ready), per-node arrays included."""
        return {"pin": self.pin, "case": self.case, "iterations": int(self.iterations), "converged": True,
                "arc_start_deg": self.arc_start_deg, "arc_end_deg": self.arc_end_deg, "arc_deg": self.arc_deg,
                "peak_pressure": self.peak_pressure, "peak_at": self.peak_at,
                "max_penetration": self.max_penetration, "max_tension": self.max_tension,
                "force": list(self.force), "clearance": self.clearance, "radius": self.radius,
                "neglected": self.neglected, "motion": self.motion, "closure": self.closure, "units": dict(self.units), "nodes": self.nodes.tolist(), "angles_deg": self.angles_deg.tolist(),
                "gap": self.gap.tolist(), "pressure": self.pressure.tolist()}

    def table(self, *, contact_only: bool = True) -> str:
        """The edge nodes as a text table: node, angle, gap, pressure (units in the header)."""
        keep = self.pressure > 0 if contact_only and self.in_contact else np.ones(self.nodes.size, bool)
        lu, su = self.units.get("length", ""), self.units.get("stress", "")
        head = f"{'node':>8}  {'angle (deg)':>11}  {'gap' + (f' ({lu})' if lu else ''):>14}  " \
               f"{'pressure' + (f' ({su})' if su else ''):>16}"
        rows = [head, "-" * len(head)]
        for n, a, g, p in zip(self.nodes[keep], self.angles_deg[keep], self.gap[keep], self.pressure[keep]):
            rows.append(f"{int(n):>8}  {a:>11.2f}  {g:>14.4g}  {p:>16.4g}")
        return "\n".join([self.summary(), *rows])


def _plain(v: float) -> str:
    """Four figures without an exponent for the sizes a stress shows (20340 psi, not 2.034e+04)."""
    out = format(v, ".4g")
    return format(v, ".0f") if "e" in out and 1e4 <= abs(v) < 1e9 else out


def _tidy(v: float, of) -> str:
    """A force component to six figures, round-off (below 1e-9 of the force's largest component) as 0."""
    return format(0.0 if abs(v) < 1e-9 * max(abs(of[0]), abs(of[1]), 1e-300) else v + 0.0, ".6g")


def _edge_angles(r: np.ndarray, closed: bool) -> np.ndarray:
    """The edge nodes' angles about the pin's point (degrees, counter-clockwise from +x), continuous along the edge.

    An angle within 1e-9 degree of a whole degree is taken as that degree (a node on an axis through the
    pin's point whose coordinate is round-off off the axis reads 0, not 360 less round-off). A closed edge's
    angles lie in [0, 360); an open edge (a half or quarter hole, a straight edge) runs from the node after
    its largest angular gap (where it is open) counter-clockwise, its first angle in (-180, 180] and the
    others increasing from there (a half hole on x >= 0 reads -90 to 90).
    """
    a = np.degrees(np.arctan2(r[:, 1], r[:, 0]))
    whole = np.round(a)
    a = np.where(np.abs(a - whole) < 1e-9, whole, a) % 360.0 + 0.0
    if closed or a.size < 2:
        return a
    order = np.argsort(a, kind="stable")
    s = a[order]
    gap = np.r_[s[1:], s[0] + 360.0] - s
    first = (int(np.argmax(gap)) + 1) % s.size  # the edge starts after its largest gap
    start = s[first] - 360.0 if s[first] > 180.0 else s[first]
    return (a - s[first]) % 360.0 + start


def _arc(angles: np.ndarray, on: np.ndarray, closed: bool = True) -> tuple[float | None, float | None]:
    """The contact arc (start, end) in degrees from the nodes' angles (in order along the edge) and which bear.

    The arc runs counter-clockwise over the bearing nodes: the longest run of them (on a closed edge, across
    the largest run of open nodes left out); each end is half-way to the neighbouring open node, or at the
    last node of an open edge (a half or quarter hole, a straight edge: ``angles`` from :func:`_edge_angles`).
    """
    n = angles.size
    if not on.any():
        return None, None
    if closed and on.all():
        return 0.0, 360.0
    idx = np.flatnonzero(on)
    if closed:
        nxt = np.r_[angles[1:], angles[0] + 360.0] - angles
        prev_open = ~on[(idx - 1) % n]
        next_open = ~on[(idx + 1) % n]
    else:
        nxt = np.r_[np.diff(angles), 0.0]
        prev_open = (idx == 0) | ~on[np.maximum(idx - 1, 0)]
        next_open = (idx == n - 1) | ~on[np.minimum(idx + 1, n - 1)]
    starts, ends = idx[prev_open], idx[next_open]
    # the longest run counter-clockwise from a start to the next end is the arc
    best = None
    for s in starts:
        e = ends[np.argmin((ends - s) % n)]
        length = (e - s) % n
        if best is None or length > best[2]:
            best = (s, e, length)
    s, e, _ = best
    a0 = angles[s] - (nxt[(s - 1) % n] / 2 if (closed or s > 0) else 0.0)
    a1 = angles[e] + (nxt[e] / 2 if (closed or e < n - 1) else 0.0)
    while a1 < a0:
        a1 += 360.0
    a0, a1 = a0 % 360.0, a0 % 360.0 + (a1 - a0)
    if a0 > 180.0:  # the start in (-180, 180]: an arc across +x reads -30 to 30
        a0, a1 = a0 - 360.0, a1 - 360.0
    return float(a0), float(a1)


def _closes(mesh, edge: str) -> bool:
    """Whether the named edge closes on itself (each segment end shared by two segments: a whole hole)."""
    seg = np.asarray(mesh.edge(edge))[:, :2]
    counts = np.bincount(seg.ravel())
    return bool(seg.size) and not np.any(counts == 1)
