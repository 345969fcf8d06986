"""A fastener's inputs: its fit in a modelled hole, its tie, its kind (Huth's bolted graphite/epoxy).

Sources:
- a fastener fits its hole (common practice): a clearance hole is larger than the fastener, an
  interference fit a little smaller (of the order of 1 %), never by millimetres;
- H. Huth, Influence of fastener flexibility on the prediction of load transfer and fatigue life for
  multiple-row joints, ASTM STP 927, 1986: C = ((t1 + t2)/(2 d))^a (b/n) (1/(t1 E1) + 1/(n t2 E2)
  + 1/(2 t1 Ef) + 1/(2 n t2 Ef)), bolted graphite/epoxy a = 2/3, b = 4.2 (formula and constants from
  memory).
"""
import numpy as np
import pytest

import planar
from planar.core.errors import InputError

from _joint_strips import lap


def _holed(hole_d):
    pytest.importorskip("gmsh")
    from planar.geometry import Circle, Plate, mesh

    g = Plate.rectangle(60.0, 20.0, corner=(0.0, -10.0)).cut(Circle((40.0, 0.0), hole_d / 2, name="hole"))
    a = planar.Model(mesh(g, size=2.0, element="T6"), planar.Isotropic(E=71e3, nu=0.33), thickness=2.0,
                     units="N, mm, MPa")
    b = planar.Model(planar.rectangle_mesh(60.0, 20.0, 30, 10, origin=(30.0, -10.0)),
                     planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    return planar.Joint({"a": a, "b": b})


@pytest.mark.parametrize("d, taken", [(4.8, True), (5.0, True), (5.05, True), (5.5, False), (8.0, False)])
def test_a_fastener_fits_its_modelled_hole(d, taken):
    # a 5 mm hole takes a 4.8 mm fastener (clearance), a 5 mm one, a 5.05 mm one (a 1 % interference
    # fit); a 5.5 mm or an 8 mm fastener in it is a mistake, refused naming the hole and the fix
    joint = _holed(5.0)
    f = planar.Fasteners([(40.0, 0.0)], layers=("a", "b"), diameter=d, flexibility=3e-5, holes={"a": ["hole"]},
                         tie="rigid", name="bolt")
    if taken:
        joint.add_fasteners(f)
        assert joint.fasteners == [f]
    else:
        with pytest.raises(InputError, match=r"larger than its hole 'hole' of layer 'a' \(diameter 5\).*diameter="):
            joint.add_fasteners(f)


def test_a_contact_tie_is_refused_naming_the_fastener_ties():
    with pytest.raises(InputError, match=r"tie='spreading' or tie='rigid'.*planar\.Pin"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=5.0, flexibility=3e-5, tie="contact")
    with pytest.raises(InputError, match="spreading"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=5.0, flexibility=3e-5, tie="glued")


def test_composite_bolt_takes_huths_graphite_epoxy_constants():
    # Huth (ASTM STP 927, 1986; from memory): bolted graphite/epoxy a = 2/3, b = 4.2; single shear n = 1
    d, t1, t2, E1, E2, Ef = 6.35, 3.0, 4.0, 60e3, 50e3, 110e3
    by_hand = ((t1 + t2) / (2 * d)) ** (2 / 3) * 4.2 * (1 / (t1 * E1) + 1 / (t2 * E2) + 1 / (2 * t1 * Ef)
                                                         + 1 / (2 * t2 * Ef))
    f = planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=d, flexibility="huth", kind="composite-bolt",
                         modulus=Ef)
    assert f.kind == "composite-bolt"
    assert f.compliance(t1=t1, t2=t2, E1=E1, E2=E2) == pytest.approx(by_hand, rel=1e-12)
    metal = planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=d, flexibility="huth", kind="bolt", modulus=Ef)
    assert f.compliance(t1=t1, t2=t2, E1=E1, E2=E2) / metal.compliance(t1=t1, t2=t2, E1=E1, E2=E2) == \
        pytest.approx(4.2 / 3.0, rel=1e-12)


def test_composite_bolt_in_a_solved_joint():
    # the same constants reach the springs of a solved joint of two isotropic strips (E for E1, E2)
    d, t, E, Ef = 5.0, 2.0, 60e3, 110e3
    joint = lap(((0.0, 100.0), (50.0, 150.0)), 10.0, t, 2.5, pull=50.0, material=planar.Isotropic(E=E, nu=0.3))
    joint.add_fasteners(planar.Fasteners([(60.0, 0.0), (90.0, 0.0)], layers=("top", "bottom"), diameter=d,
                                         flexibility="huth", kind="composite-bolt", modulus=Ef, name="row"))
    tab = planar.solve(joint)["pull"].fasteners
    by_hand = ((t + t) / (2 * d)) ** (2 / 3) * 4.2 * (2 / (t * E) + 2 / (2 * t * Ef))
    assert [p["compliance"] for p in tab.pairs] == pytest.approx([by_hand, by_hand], rel=1e-12)
    assert abs(np.sum(tab.shear[:, 0])) == pytest.approx(1000.0, rel=1e-9)  # statics: the fasteners carry the load
