"""An orthotropic layer in a fastener flexibility formula: its modulus along the layer's load; a
fastener in a hole of the mesh that holes= does not list.

Sources:
- the modulus of an orthotropic lamina along a direction at theta from its fibres:
  1/E(theta) = c^4/E1 + (1/G12 - 2 nu12/E1) c^2 s^2 + s^4/E2 (R. M. Jones, Mechanics of Composite
  Materials, 1975, the transformation of the compliances; from memory);
- H. Huth, ASTM STP 927, 1986: C = ((t1 + t2)/(2 d))^(2/3) 3 (1/(t1 E1) + 1/(t2 E2) + 1/(2 t1 Ef)
  + 1/(2 t2 Ef)) for bolted metallic joints in single shear (formula and constants from memory).
"""
import numpy as np
import pytest

import planar
from planar.core.errors import InputError

from _joint_strips import strip

E1, E2, G12, NU12 = 140e3, 10e3, 5e3, 0.3


def _jones(theta_deg):
    c, s = np.cos(np.radians(theta_deg)), np.sin(np.radians(theta_deg))
    return 1.0 / (c ** 4 / E1 + (1 / G12 - 2 * NU12 / E1) * c ** 2 * s ** 2 + s ** 4 / E2)


def _huth(t1, t2, Ea, Eb, d=5.0, Ef=110e3):
    return ((t1 + t2) / (2 * d)) ** (2 / 3) * 3.0 * (1 / (t1 * Ea) + 1 / (t2 * Eb) + 1 / (2 * t1 * Ef) + 1 / (2 * t2 * Ef))


def _lap(angle, along_y=False):
    """An aluminium strip lapped on a UD strip at ``angle`` to x, pulled along the strips (x, or y)."""
    ud = planar.Orthotropic(E1=E1, E2=E2, nu12=NU12, G12=G12, angle=angle)

    def strip(x0, mat):
        if along_y:
            m = planar.rectangle_mesh(10.0, 100.0, 8, 80, element="Q8", origin=(-5.0, x0))
        else:
            m = planar.rectangle_mesh(100.0, 10.0, 80, 8, element="Q8", origin=(x0, -5.0))
        return planar.Model(m, mat, thickness=2.0, units="N, mm, MPa")

    top, bottom = strip(0.0, planar.Isotropic(E=71e3, nu=0.33)), strip(50.0, ud)
    top.add_support(planar.Fixed("bottom" if along_y else "left"))
    bottom.add_load(planar.Traction("top", ty=50.0) if along_y else planar.Traction("right", tx=50.0), case="pull")
    pts = [(0.0, 60.0), (0.0, 90.0)] if along_y else [(60.0, 0.0), (90.0, 0.0)]
    joint = planar.Joint({"metal": top, "ud": bottom})
    joint.add_fasteners(planar.Fasteners(pts, layers=("metal", "ud"), diameter=5.0, flexibility="huth",
                                         modulus=110e3, name="row"))
    return planar.solve(joint)["pull"]


@pytest.mark.parametrize("angle, along_y, theta", [(0.0, False, 0.0), (90.0, False, 90.0), (30.0, False, 30.0),
                                                   (0.0, True, 90.0), (90.0, True, 0.0)])
def test_orthotropic_modulus_is_read_along_the_layers_load(angle, along_y, theta):
    # fibres along the pull: E1; across: E2; at 30 degrees: Jones's transformed modulus; the spring's
    # compliance is Huth's with that modulus, and the table says which modulus and direction it read
    res = _lap(angle, along_y)
    E = _jones(theta)
    C = _huth(2.0, 2.0, 71e3, E)
    assert [p["compliance"] for p in res.fasteners.pairs] == pytest.approx([C, C], rel=1e-9)
    fm = res.fasteners.formula_moduli["ud"]
    assert fm["moduli"] == pytest.approx([E], rel=1e-9)
    assert np.allclose(np.abs(fm["direction"]), [0.0, 1.0] if along_y else [1.0, 0.0])
    assert "own loads" in fm["basis"]
    assert f"orthotropic layer 'ud' read with modulus {E:.5g} MPa" in res.table()
    assert res.as_dict()["formula_moduli"]["ud"]["moduli"] == pytest.approx([E], rel=1e-9)


def test_a_layer_without_loads_reads_the_joints_load_direction():
    # a UD doubler (fibres at 90 degrees to x) on a skin pulled along x: the doubler has no loads of its
    # own, so its modulus is read along the joint's loads (x): E2
    skin = strip(0.0, 200.0, 10.0, 2.0, 1.25)
    dbl = strip(50.0, 150.0, 10.0, 2.0, 1.25, material=planar.Orthotropic(E1=E1, E2=E2, nu12=NU12, G12=G12, angle=90.0))
    skin.add_support(planar.Fixed("left"))
    skin.add_load(planar.Traction("right", tx=50.0), case="pull")
    joint = planar.Joint({"skin": skin, "ud": dbl})
    joint.add_fasteners(planar.Fasteners([(60.0, 0.0), (140.0, 0.0)], layers=("skin", "ud"), diameter=5.0,
                                         flexibility="huth", modulus=110e3, name="row"))
    res = planar.solve(joint)["pull"]
    fm = res.fasteners.formula_moduli["ud"]
    assert fm["moduli"] == pytest.approx([E2], rel=1e-9) and "joint's loads" in fm["basis"]
    assert res.fasteners.pairs[0]["compliance"] == pytest.approx(_huth(2.0, 2.0, 71e3, E2), rel=1e-9)


def test_a_fastener_in_a_hole_not_listed_in_holes_is_named():
    # a 4.8 mm fastener in a 5 mm hole of the mesh, the hole left out of holes=: the message said the
    # point 'lies outside the mesh'; it names the hole and holes=
    pytest.importorskip("gmsh")
    from planar.geometry import Circle, Plate, Refine, mesh

    g = Plate.rectangle(100.0, 20.0, corner=(0.0, -10.0)).cut(Circle((60.0, 0.0), 2.5, name="h0"))
    skin = planar.Model(mesh(g, size=2.0, element="T6", refine=[Refine(["h0"], size=0.6)]),
                        planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    strap = strip(50.0, 150.0, 20.0, 2.0, 1.0)
    skin.add_support(planar.Fixed("left"))
    strap.add_load(planar.Traction("right", tx=50.0), case="pull")
    joint = planar.Joint({"skin": skin, "strap": strap})
    joint.add_fasteners(planar.Fasteners([(60.0, 0.0), (90.0, 0.0)], layers=("skin", "strap"), diameter=4.8,
                                         flexibility=3e-5, name="row"))
    with pytest.raises(InputError, match=r"sits in hole 'h0' of layer 'skin'.*diameter 5\).*holes="):
        planar.solve(joint)
