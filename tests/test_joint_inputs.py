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
