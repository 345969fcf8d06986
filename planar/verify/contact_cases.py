"""Benchmarks of bearing contact (pins with ``tie="contact"``): ``hertz-contact`` and ``pin-loaded-hole``.

* ``hertz-contact``: a rigid pin pressed into the straight edge of a large block, the
  two-dimensional Hertz problem (a rigid cylinder on an elastic half-plane). The pin is a rigid
  disc of radius R placed to touch the block's top edge (the contact tie reads any named edge near a
  disc: the gap is measured from the disc's surface along its normal through each node). Half-width
  and peak pressure against K. L. Johnson, Contact Mechanics, 1985, sec. 5.2 (eqs. 5.30 and 5.31 with
  the rigid cylinder): ``a^2 = 4 P R / (pi E*)``, ``p0 = 2 P / (pi a)``, ``P`` the load per thickness,
  ``E* = E / (1 - nu^2)`` in plane strain and ``E`` in plane stress.
* ``pin-loaded-hole``: a square plate held along one side, pulled by a free pin in a hole at its
  centre, on a mesh that is mirror-symmetric about the load's line: load balance between the pin and
  the support, Signorini's conditions at convergence (no tension, no penetration), a symmetric
  contact arc, and an arc that grows as the clearance shrinks.
"""
from __future__ import annotations

import math

import numpy as np

from ..core.materials import Isotropic
from ..core.mesh import Mesh
from ..core.model import Model
from ..core.pins import Pin, PinLoad
from ..core.static import solve
from ..core.supports import Fixed
from ..geometry.structured import mapped_mesh
from ._register import case, check

__all__ = ["hertz_model", "hertz_reference", "hertz_half_width", "ring_mesh", "loaded_hole_model"]

JOHNSON = ("K. L. Johnson, Contact Mechanics, Cambridge University Press, 1985, sec. 5.2, eqs. 5.30-5.31 "
           "(two-dimensional Hertz contact, rigid cylinder on an elastic half-plane; from memory)")
STATICS = "statics: the pin's load and the support's reaction balance (common practice)"
SIGNORINI = ("Signorini's conditions of frictionless contact: no tension, no penetration (A. Signorini, 1933; "
             "e.g. P. Wriggers, Computational Contact Mechanics, 2nd ed., 2006, sec. 2.2; from memory)")
SYMMETRY = "mirror symmetry of geometry, mesh and load: a symmetric contact arc (common practice)"
CLEARANCE = ("a smaller clearance closes over a wider arc under the same load (e.g. E. Persson, 1964, and "
             "M. W. Hyer and E. C. Klang, 1985, pin-loaded holes with clearance; from memory)")


def _graded(n: int, fine: float, zone: float, total: float) -> np.ndarray:
    """Positions 0..total over n cells: uniform steps of ``fine`` up to ``zone``, then geometric growth."""
    k = int(math.ceil(zone / fine))
    if k >= n:
        raise ValueError("too few cells for the fine zone")
    rest = total - k * fine
    m = n - k
    lo, hi = 1.0 + 1e-12, 10.0
    for _ in range(200):  # ratio q with fine * (q + q^2 + ... + q^m) = rest
        q = (lo + hi) / 2
        s = fine * q * (q ** m - 1) / (q - 1)
        lo, hi = (q, hi) if s < rest else (lo, q)
    steps = np.r_[np.full(k, fine), fine * q ** np.arange(1, m + 1)]
    x = np.r_[0.0, np.cumsum(steps)]
    return x * (total / x[-1])


def hertz_reference(P: float, R: float, E: float, nu: float, analysis: str) -> tuple[float, float]:
    """(half-width a, peak pressure p0) of a rigid cylinder on a half-plane (Johnson 1985, sec. 5.2)."""
    Es = E / (1 - nu ** 2) if analysis == "plane strain" else E
    a = math.sqrt(4 * P * R / (math.pi * Es))
    return a, 2 * P / (math.pi * a)


def hertz_model(analysis: str, *, element: str = "Q4", a_target: float = 0.5, R: float = 10.0,
                size: float = 40.0, cells: int = 24, per_half_width: int = 30):
    """The block [-L, L] x [-L, 0] (L = ``size`` a) pressed by a rigid disc of radius R touching (0, 0).

    The mesh is graded towards the contact: ``per_half_width`` cells across the expected half-width
    over a zone of 1.6 a, then growing geometrically (``cells`` per half side in x, as many in depth).
    Returns (model, load per thickness P, the expected a).
    """
    E, nu, t = 210e3, 0.3, 1.0
    Es = E / (1 - nu ** 2) if analysis == "plane strain" else E
    P = a_target ** 2 * math.pi * Es / (4 * R)
    L = size * a_target
    fine = a_target / per_half_width
    half = cells // 2 * 2 + per_half_width * 2
    xs = _graded(half, fine, 1.6 * a_target, L)
    ys = _graded(half, fine, 1.6 * a_target, L)
    X = np.r_[-xs[::-1], xs[1:]]
    nx, ny = X.size - 1, ys.size - 1

    r = 2 if element in ("T6", "Q8", "Q9") else 1

    def mapping(s, tt):  # the grid's index back from (s, t), then the graded positions
        i = np.rint(np.asarray(s) * r * nx) / r
        j = np.rint(np.asarray(tt) * r * ny) / r
        x = np.interp(i, np.arange(nx + 1), X)
        y = -np.interp(ny - j, np.arange(ny + 1), ys)
        return x, y

    mesh = mapped_mesh(mapping, nx, ny, element, side_names=("bottom", "right", "top", "left"))
    lay = next(iter(mesh.cells))
    model = Model(mesh, Isotropic(E, nu), thickness=t, analysis=analysis,
                  elements={lay: element} if element != lay else None, units="N, mm, MPa")
    model.add_support(Fixed("bottom"))
    model.add_pin(Pin("top", tie="contact", at=(0.0, R), radius=R, hold="x", name="pin"))
    model.add_load(PinLoad("pin", fy=-P * t), case="press")
    return model, P, a_target


def hertz_half_width(state) -> float:
    """Half the contact width along a straight edge: half-way between the outermost bearing node
    and the next open one on each side, averaged over the two sides (read to half a node spacing)."""
    mesh_x = state.positions[:, 0]
    order = np.argsort(mesh_x)
    x, p = mesh_x[order], state.pressure[order]
    on = np.flatnonzero(p > 0)
    lo, hi = on.min(), on.max()
    left = (x[lo] + x[lo - 1]) / 2 if lo > 0 else x[lo]
    right = (x[hi] + x[hi + 1]) / 2 if hi + 1 < x.size else x[hi]
    return (right - left) / 2


@case("hertz-contact", ("Q4", "Q8"))
def hertz_contact(element: str):
    """Half-width and peak pressure of a rigid pin pressed into a block, plane strain and plane stress."""
    recs = []
    for analysis in ("plane strain", "plane stress"):
        model, P, _ = hertz_model(analysis, element=element)
        r = solve(model)["press"]
        st = r.contact_states["pin"]
        st.positions = r.mesh.nodes[st.nodes]
        a_ref, p0_ref = hertz_reference(P, 10.0, 210e3, 0.3, analysis)
        note = (f"rigid disc R = 10 on a block of 40 a, {r.n_dofs} unknowns, graded to a / 30 at the contact; "
                f"{st.iterations} active-set iterations; largest penetration {st.max_penetration:.1e}")
        recs.append(check("hertz-contact", element, f"{analysis}: contact half-width a", a_ref,
                          hertz_half_width(st), 0.03, r.n_dofs, JOHNSON, note=note))
        recs.append(check("hertz-contact", element, f"{analysis}: peak contact pressure p0", p0_ref,
                          st.peak_pressure, 0.03, r.n_dofs, JOHNSON, note=note))
    return recs


def ring_mesh(element: str, n_around: int, n_radial: int, *, a: float = 1.0, half_width: float = 4.0,
              grading: float = 1.5) -> Mesh:
    """A square plate [-L, L]^2 (L = ``half_width`` a) with a central hole of radius a, mapped around the hole.

    Mirror-symmetric about the x axis (``n_around`` a multiple of 4). Edge sets ``hole``, ``outer``
    and ``left`` (the side x = -L).
    """
    n_around = int(n_around) // 4 * 4
    L = half_width * a

    def mapping(s, t):
        th = 2 * np.pi * np.asarray(t, float)
        c, sn = np.cos(th), np.sin(th)
        f = L / np.maximum(np.abs(c), np.abs(sn))
        w = np.expm1(grading * np.asarray(s, float)) / math.expm1(grading)
        return a * c + w * (f * c - a * c), a * sn + w * (f * sn - a * sn)

    m = mapped_mesh(mapping, n_radial, n_around, element, side_names=("seam0", "outer", "seam1", "hole"))
    m = m.merge_duplicate_nodes(1e-9 * L)  # the seam's two copies of each node
    nodes, outer = m.nodes, m.edge("outer")
    left = outer[np.all(np.abs(nodes[outer][:, :, 0] + L) < 1e-9 * L, axis=1)]
    return Mesh(nodes, m.cells, edge_sets={"hole": m.edge("hole"), "outer": outer, "left": left})


def loaded_hole_model(clearance: float, *, element: str = "Q4", n_around: int = 96, n_radial: int = 24,
                      a: float = 5.0, load: float = 2000.0):
    """A plate held along x = -L, pulled by a free contact pin in its central hole along +x."""
    mesh = ring_mesh(element, n_around, n_radial, a=a)
    lay = next(iter(mesh.cells))
    model = Model(mesh, Isotropic(70e3, 0.33), thickness=1.0, units="N, mm, MPa",
                  elements={lay: element} if element != lay else None)
    model.add_support(Fixed("left"))
    model.add_pin(Pin("hole", tie="contact", clearance=clearance, hold=None, at=(0.0, 0.0), name="pin"))
    model.add_load(PinLoad("pin", fx=load), case="pull")
    return model


@case("pin-loaded-hole", ("Q4", "Q8"))
def pin_loaded_hole(element: str):
    """Load balance, no tension, no penetration, a symmetric arc and an arc that grows as the clearance shrinks."""
    a, load = 5.0, 2000.0
    recs, arcs = [], []
    clearances = (0.02, 0.005, 0.0)
    for c in clearances:
        r = solve(loaded_hole_model(c, element=element, a=a, load=load))["pull"]
        st = r.contact_states["pin"]
        arcs.append(st.arc_deg)
        support = sum(np.asarray(x.force) for x in r.support_reactions() if not x.kind.startswith("pin"))
        tag = f"clearance {c:g} mm"
        note = f"{r.n_dofs} unknowns; {st.summary()}"
        recs.append(check("pin-loaded-hole", element, f"{tag}: support reaction + pin load, |sum| / load", 0.0,
                          float(np.hypot(*(support + np.array([load, 0.0])))) / load, 1e-9, r.n_dofs, STATICS,
                          relative_to=1.0, note=note))
        recs.append(check("pin-loaded-hole", element, f"{tag}: largest tension / peak pressure", 0.0,
                          st.max_tension / st.peak_pressure, 1e-9, r.n_dofs, SIGNORINI, relative_to=1.0))
        recs.append(check("pin-loaded-hole", element, f"{tag}: largest penetration / radius", 0.0,
                          st.max_penetration / a, 1e-6, r.n_dofs, SIGNORINI, relative_to=1.0))
        p = st.pressure
        ang = st.angles_deg
        mirror = np.argsort((-ang) % 360.0, kind="stable")  # the node at -theta for each node at theta
        asym = float(np.abs(p - p[mirror]).max() / st.peak_pressure)
        recs.append(check("pin-loaded-hole", element, f"{tag}: arc start + end (deg; symmetric about 0)", 0.0,
                          abs(st.arc_start_deg + st.arc_end_deg), 1e-9, r.n_dofs, SYMMETRY, relative_to=360.0,
                          note=f"arc {st.arc_start_deg:.3f} to {st.arc_end_deg:.3f} deg; pressure asymmetry "
                               f"{asym:.1e} of the peak"))
        recs.append(check("pin-loaded-hole", element, f"{tag}: pressure asymmetry / peak", 0.0, asym, 1e-9,
                          r.n_dofs, SYMMETRY, relative_to=1.0))
    grows = float(min(arcs[1] - arcs[0], arcs[2] - arcs[1]))
    recs.append(check("pin-loaded-hole", element, "smallest growth of the contact arc (deg) as the clearance "
                      f"shrinks {clearances[0]:g} -> {clearances[1]:g} -> {clearances[2]:g} mm (at least one cell "
                      "of the hole)", 360.0 / 96, grows, 0.0,
                      0, CLEARANCE, at_least=True,
                      note="arcs " + ", ".join(f"{x:.1f}" for x in arcs) + " deg"))
    return recs
