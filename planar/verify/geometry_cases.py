"""Benchmark cases on gmsh meshes of real plates: Kirsch hole, finite-width hole, elliptic membrane.

The meshes come from the geometry layer (planar.geometry), so these cases check the whole path an
engineer uses: geometry script, gmsh mesh with named edges, supports and loads by name, recovered
nodal stresses at the stress raiser.
"""
from __future__ import annotations

import numpy as np

from ..core.loads import Traction
from ..core.materials import Isotropic
from ..core.model import Model
from ..core.static import solve
from ..core.supports import Roller
from ..post.handbook import HOLE_IN_STRIP_FORMULA, HOLE_IN_STRIP_SOURCE, kt_hole_in_strip
from ._register import case, check
from .recovery_cases import KIRSCH, ExactTraction, KirschPlate

QUADRATIC = ("T6", "Q8", "Q9")
PETERSON = f"{HOLE_IN_STRIP_SOURCE}: {HOLE_IN_STRIP_FORMULA}"
LE1 = ("NAFEMS, The Standard NAFEMS Benchmarks, 1990, test LE1 (elliptic membrane): sigma_yy at D (2, 0) "
       "= 92.7 MPa (from memory)")


def _mesh(plate, element: str, size: float, refine=()):
    from ..geometry import mesh

    return mesh(plate, size=size, refine=list(refine), element=element)


def peterson_ktn(d_over_w: float) -> float:
    """Net-section Kt of a central hole in a finite-width strip in tension (Peterson chart 4.1 fit)."""
    return kt_hole_in_strip(float(d_over_w))


@case("kirsch-hole", QUADRATIC)
def kirsch_hole(element: str):
    """Quarter of a large plate with a hole (radius a) under remote sigma_0, exact Kirsch traction."""
    from ..geometry import Circle, Plate, Refine

    a, W = 10.0, 80.0  # mm; the exact traction makes the outer size immaterial
    plate = Plate.rectangle(2 * W, 2 * W, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), a, name="hole")).quarter()
    mesh = _mesh(plate, element, size=W / 8, refine=[Refine("hole", size=a / 10, growth=1.25)])
    exact = KirschPlate(a=a, sigma0=100.0)  # MPa
    model = Model(mesh, Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(Roller("symmetry_x", fixed="x"))
    model.add_support(Roller("symmetry_y", fixed="y"))
    model.add_load(ExactTraction("right", exact.stress), case="remote tension")
    model.add_load(ExactTraction("top", exact.stress), case="remote tension")
    r = solve(model)["remote tension"]
    method = "spr"
    s, _ = r.nodal_stress(method)
    top = mesh.nearest_node((0.0, a))
    peak = float(s[top, 0]) / exact.sigma0
    # hoop stress around the hole at its nodes, against sigma_0 (1 - 2 cos 2 theta)
    hole = mesh.nodes_of("hole")
    xy = mesh.nodes[hole]
    th = np.arctan2(xy[:, 1], xy[:, 0])
    c, sn = np.cos(th), np.sin(th)
    hoop = s[hole, 0] * sn * sn + s[hole, 1] * c * c - 2 * s[hole, 2] * sn * c
    exact_hoop = exact.sigma0 * (1 - 2 * np.cos(2 * th))
    worst = float(np.max(np.abs(hoop - exact_hoop)) / exact.peak)
    return [
        check("kirsch-hole", element, "sigma_xx(0, a) / sigma_0 (SPR nodal)", 3.0, peak, 0.01, r.n_dofs, KIRSCH),
        check("kirsch-hole", element, "hoop stress around the hole: largest error / 3 sigma_0", 0.0, worst, 0.02,
              r.n_dofs, KIRSCH + "; hoop stress sigma_0 (1 - 2 cos 2 theta)", relative_to=1.0),
        _balance("kirsch-hole", element, r),
    ]


def _balance(name, element, r):
    from .core_cases import equilibrium_record

    return equilibrium_record(name, element, r)


@case("finite-width-hole", ("T6", "Q8"))
def finite_width_hole(element: str):
    """Central hole in a strip of width W in tension: net-section Kt at d/W = 0.2, 0.4, 0.5."""
    from ..geometry import Circle, Plate, Refine

    W, t, S = 50.0, 3.0, 40.0  # mm, mm, MPa remote (gross) stress
    half_length = 2.0 * W
    recs = []
    for ratio in (0.2, 0.4, 0.5):
        d = ratio * W
        plate = (Plate.rectangle(2 * half_length, W, centre=(0.0, 0.0))
                 .cut(Circle((0.0, 0.0), d / 2, name="hole")).quarter())
        mesh = _mesh(plate, element, size=W / 10, refine=[Refine("hole", size=d / 40, growth=1.2)])
        model = Model(mesh, Isotropic(70e3, 0.33), thickness=t, units="N, mm, MPa")
        model.add_support(Roller("symmetry_x", fixed="x"))
        model.add_support(Roller("symmetry_y", fixed="y"))
        model.add_load(Traction("right", tx=S), case="tension")
        r = solve(model)["tension"]
        s, _ = r.nodal_stress("spr")
        i = mesh.nearest_node((0.0, d / 2))
        net = S * W / (W - d)
        ktn = float(s[i, 0]) / net
        recs.append(check("finite-width-hole", element, f"net-section Kt at d/W = {ratio:g} (SPR)",
                          peterson_ktn(ratio), ktn, 0.02, r.n_dofs, PETERSON))
        recs.append(_balance("finite-width-hole", element, r))
    return recs


@case("elliptic-membrane", QUADRATIC)
def elliptic_membrane(element: str):
    """Quarter elliptic membrane under outward normal traction 10 MPa; sigma_yy at D (2, 0)."""
    from ..geometry import Ellipse, Plate, Refine

    plate = Plate(Ellipse((0.0, 0.0), 3.25, 2.75, name="outer")).cut(
        Ellipse((0.0, 0.0), 2.0, 1.0, name="inner")).quarter()
    mesh = _mesh(plate, element, size=0.12, refine=[Refine("inner", size=0.04, growth=1.2)])
    model = Model(mesh, Isotropic(210e3, 0.3), thickness=0.1, units="MN, m, MPa")  # E = 210 GPa
    model.add_support(Roller("symmetry_x", fixed="x"))
    model.add_support(Roller("symmetry_y", fixed="y"))
    model.add_load(Traction("outer", normal=10.0), case="pressure")
    r = solve(model)["pressure"]
    s, _ = r.nodal_stress("spr")
    i = mesh.nearest_node((2.0, 0.0))
    return [check("elliptic-membrane", element, "sigma_yy at D (2, 0), MPa (SPR)", 92.7, float(s[i, 1]), 0.02,
                  r.n_dofs, LE1), _balance("elliptic-membrane", element, r)]
