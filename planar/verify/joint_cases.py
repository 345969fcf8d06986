"""Benchmark of fastened joints: a single lap of two strips joined by a row of fasteners (``lap-joint``).

Two aluminium strips overlap in the plane (the joint is a 2D in-plane model, plane stress: the
eccentricity of a real single lap and its secondary bending are not in it) and are joined by a row of
3 or 5 titanium bolts along their centre line, each an in-plane shear spring of Huth's compliance
(:func:`planar.core.fastener_flexibility.huth`, single shear). The top strip is pulled to the left at its
far end and the bottom strip to the right at its far end, by equal and opposite uniform tractions; the
joint as a whole is held by three statically determinate point supports that carry no load.

The reference is the classic discrete model of the same joint (:mod:`planar.verify._joint_reference`,
after Tate and Rosenfeld, NACA TN 1051, 1946): the strips as bars between fasteners of stiffness
``E t w / pitch``, the fasteners as springs of the same compliance, an exact small linear system for the
shares. To compare like with like:

* no hole is modelled: each fastener's spring is tied to each strip through a spreading patch of the
  fastener's diameter, so the strip keeps its full section between fasteners, as the bar does;
* the strips are narrow, ``w = 2 d`` (half the pitch of 4 d), so the load a fastener puts in spreads
  across the section within a short distance and the strip between two fasteners acts as a bar of
  stiffness ``E t w / pitch``. The one thing the bar model lacks is the strip's own local give where
  the load goes in, which acts as extra compliance in series with the fastener's (Huth's ``C``
  already counts the plates' bearing, so in the plane model that part is counted twice): it grows with
  ``ln(w / d)`` and is mesh-converged with the patch. Measured with this case's Q8 meshes (h = d/4
  and d/8 give the same shares to 0.01 %), the largest share difference is 1.4 % at ``w = 2 d``,
  3.4 % at ``w = 3 d`` and 4.1 % at ``w = 4 d`` (the middle of five fasteners, which carries least);
* the strips run eight diameters beyond the overlap on the loaded side (St Venant) and two beyond
  the end fasteners on the free side; in the bar model those segments carry the whole load or none and
  do not change the shares.

The records: each fastener's share of the load within 3 % of the discrete model (equal and unequal
thicknesses); the shares of the symmetric joint (equal strips) symmetric to round-off, 1e-9 of the load;
the fastener loads adding up to the load carried, to 1e-9; the joint's force balance to 1e-9 (the
supports carry nothing); no load across the row (its line is a line of symmetry).
"""
from __future__ import annotations

import numpy as np

from ..core.fastener_flexibility import SOURCES, fastener_compliance
from ._joint_reference import TATE_ROSENFELD, bar_stiffness, lap_joint_loads
from ._register import case, check

__all__ = ["lap_joint", "lap_joint_result", "reference_shares", "LAP_JOINTS"]

#: fastener diameter, pitch, strip width, edge distance beyond the end fasteners, free length beyond the
#: overlap (mm); aluminium strips and titanium bolts (MPa); the load carried (N)
DIAMETER, PITCH, WIDTH, EDGE, FREE = 5.0, 20.0, 10.0, 10.0, 40.0
E_PLATE, NU_PLATE, E_BOLT = 70e3, 0.33, 110e3
LOAD = 1000.0
#: element size (mm): a patch of the fastener's diameter holds several nodes across
SIZE = 1.25
#: (fasteners, top thickness, bottom thickness) in mm
LAP_JOINTS = ((3, 2.0, 2.0), (3, 2.0, 3.2), (5, 2.0, 2.0), (5, 2.0, 3.2))
STATICS = "statics: the fastener loads carry the whole load from one strip to the other (Newton's third law)"


def _strip(x0: float, x1: float, t: float, element: str):
    from ..core.materials import Isotropic
    from ..core.model import Model
    from ..geometry.structured import rectangle_mesh

    nx = int(round((x1 - x0) / SIZE))
    ny = int(round(WIDTH / SIZE))
    mesh = rectangle_mesh(x1 - x0, WIDTH, nx, ny, element=element, origin=(x0, -WIDTH / 2))
    return Model(mesh, Isotropic(E_PLATE, NU_PLATE), thickness=t, units="N, mm, MPa")


def lap_joint_result(n: int, t_top: float, t_bottom: float, element: str = "Q8"):
    """Solve the single lap of ``n`` fasteners: (the joint's result for the case "pull", the compliance).

    The fasteners' compliance is Huth's (bolted metallic, single shear), evaluated by the joint from the
    strips' thicknesses and moduli (``flexibility="huth"``).
    """
    from ..core.joints import Fasteners, Joint
    from ..core.loads import Traction
    from ..core.static import solve
    from ..core.supports import Roller

    xs = PITCH * np.arange(n)
    top = _strip(-FREE, xs[-1] + EDGE, t_top, element)
    bottom = _strip(-EDGE, xs[-1] + FREE, t_bottom, element)
    top.add_load(Traction("left", tx=-LOAD / (WIDTH * t_top)), case="pull")
    bottom.add_load(Traction("right", tx=LOAD / (WIDTH * t_bottom)), case="pull")
    # three point supports, statically determinate for the whole joint: under the self-balanced load
    # they carry nothing (to round-off), so the joint deforms as if free
    top.add_support(Roller((-FREE, -WIDTH / 2), fixed="x"))
    top.add_support(Roller((-FREE, -WIDTH / 2), fixed="y"))
    top.add_support(Roller((-FREE, WIDTH / 2), fixed="x"))
    joint = Joint({"top": top, "bottom": bottom})
    joint.add_fasteners(Fasteners(np.column_stack([xs, np.zeros(n)]), layers=("top", "bottom"), diameter=DIAMETER,
                                  flexibility="huth", modulus=E_BOLT, kind="bolt", shear="single",
                                  tie="spreading", holes=None, name="row"))
    C = fastener_compliance("huth", diameter=DIAMETER, t1=t_top, t2=t_bottom, E1=E_PLATE, E2=E_PLATE, Ef=E_BOLT,
                            kind="bolt", shear="single")
    return solve(joint)["pull"], C


def reference_shares(n: int, t_top: float, t_bottom: float, C: float) -> np.ndarray:
    """The discrete model's shares of the same joint (bars E t w / pitch, springs of compliance C)."""
    k_top = bar_stiffness(E_PLATE, t_top, WIDTH, PITCH)
    k_bottom = bar_stiffness(E_PLATE, t_bottom, WIDTH, PITCH)
    return lap_joint_loads(np.full(n, C), np.full(n - 1, k_top), np.full(n - 1, k_bottom), load=1.0)


@case("lap-joint", ("T3", "T6", "Q4", "Q8", "Q9"))
def lap_joint(element: str):
    """Fastener shares of a single lap (3 and 5 fasteners, equal and unequal strips) against the bar model."""
    name = "lap-joint"
    src = f"{TATE_ROSENFELD}; compliance: {SOURCES['huth']}"
    recs = []
    for n, t_top, t_bottom in LAP_JOINTS:
        jr, C = lap_joint_result(n, t_top, t_bottom, element)
        tab = jr.fasteners
        V = tab.shear  # the force each fastener passes from the top strip into the bottom one
        dofs = sum(r.n_dofs for r in jr.layers.values())
        shares = -V[:, 0] / LOAD  # the load goes from the bottom strip into the top one: -Vx
        ref = reference_shares(n, t_top, t_bottom, C)
        label = f"{n} fasteners, t = {t_top:g} / {t_bottom:g} mm"
        used = np.array([p["compliance"] for p in tab.pairs])
        note = (f"w = pitch = {PITCH:g} mm, d = {DIAMETER:g} mm, Huth C = {C:.4g} mm/N (the joint used "
                f"{used.min():.4g}-{used.max():.4g}); reference shares {np.array2string(ref, precision=4)}")
        for i in range(n):
            recs.append(check(name, element, f"{label}: share of fastener {i + 1} (from the loaded end of the top strip)",
                              float(ref[i]), float(shares[i]), 0.03, dofs, src, note=note))
        recs.append(check(name, element, f"{label}: fastener loads add up to the load [N]", LOAD,
                          float(-V[:, 0].sum()), 1e-9, dofs, STATICS))
        recs.append(check(name, element, f"{label}: force balance of the joint (supports carry nothing)", 0.0,
                          jr.balance_error(), 1e-9, dofs, STATICS, relative_to=1.0))
        recs.append(check(name, element, f"{label}: fastener loads across the row (|Vy| / load)", 0.0,
                          float(np.abs(V[:, 1]).max() / LOAD), 1e-9, dofs, "symmetry about the row's line",
                          relative_to=1.0))
        if t_top == t_bottom:
            asym = float(np.abs(shares - shares[::-1]).max())
            recs.append(check(name, element, f"{label}: symmetric joint, max |share_i - share_(n+1-i)|", 0.0, asym,
                              1e-9, dofs, "symmetry of the joint under a half turn about its centre",
                              relative_to=1.0))
    return recs


#: the hand case of the formulas (mm, N, MPa): d = 5, t1 = 2, t2 = 3, aluminium plates, titanium fastener
_HAND = dict(diameter=5.0, t1=2.0, t2=3.0, E1=70e3, E2=70e3, Ef=110e3)
#: (label, formula, options, the value worked by hand from the recalled expression [mm/N], the working)
_HAND_VALUES = (
    ("Huth, bolted metallic, single shear", "huth", {}, 2.965723e-5,
     "0.5^(2/3) x 3.0 x (1/140000 + 1/210000 + 1/440000 + 1/660000) = 0.629961 x 3 x 1.5692641e-5"),
    ("Huth, riveted metallic, single shear", "huth", {"kind": "rivet"}, 2.616416e-5,
     "0.5^0.4 x 2.2 x 1.5692641e-5 = 0.757858 x 2.2 x 1.5692641e-5"),
    ("Huth, bolted metallic, double shear (t1 = 3 middle, t2 = 2 each outer)", "huth",
     {"shear": "double", "t1": 3.0, "t2": 2.0}, 1.038003e-5,
     "0.5^(2/3) x 1.5 x (1/210000 + 1/280000 + 1/660000 + 1/880000) = 0.629961 x 1.5 x 1.0984848e-5"),
    ("Swift", "swift", {}, 1.8614719e-5, "5/550000 + 0.8 (1/140000 + 1/210000)"),
    ("Tate and Rosenfeld (nu_f = 0.3)", "tate-rosenfeld", {}, 2.3526077e-5,
     "bearing 1.9480519e-5 + shear 32 x 1.3 x 5 / (9 pi 110000 x 25) = 2.6750891e-6 + bending "
     "8 x 185 / (5 pi 110000 x 625) = 1.3704687e-6"),
)


@case("fastener-flexibility", ("-",))
def fastener_flexibility_values(element: str):
    """Each flexibility formula against its value worked by hand, and the physical trends it must show."""
    name = "fastener-flexibility"
    recs = []
    for label, formula, opts, value, working in _HAND_VALUES:
        args = dict(_HAND, **opts)
        c = fastener_compliance(formula, **args)
        src = (f"{SOURCES[formula]}; no published worked example is recalled: the value is worked by hand from "
               "the expression as recalled")
        recs.append(check(name, element, f"{label}: compliance [mm/N] at d = 5, t = 2 / 3 mm, E = 70 / 110 GPa",
                          value, c, 1e-6, 0, src, note=working))
        thinner = fastener_compliance(formula, **dict(args, t1=args["t1"] / 2, t2=args["t2"] / 2))
        larger = fastener_compliance(formula, **dict(args, diameter=args["diameter"] * 1.25))
        recs.append(check(name, element, f"{label}: thinner plates are softer, a larger fastener stiffer (1 = yes)",
                          1.0, float(thinner > c > larger), 0.0, 0,
                          "common practice: bearing and bending give more with thinner sheet and a slimmer fastener",
                          note=f"C(t/2) = {thinner:.4g}, C(1.25 d) = {larger:.4g} mm/N"))
    return recs
