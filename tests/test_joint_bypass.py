"""Bypass at fastener holes and rows of fasteners: linear in the loads, read from the geometry.

Sources:
- statics of the free body (common practice): the load a plate carries across a cut is the sum of the
  external forces on either side; between the fasteners of a row the plate's load falls by each
  fastener's load in turn (the discrete spring-and-bar picture of M. B. Tate and S. J. Rosenfeld,
  NACA TN 1051, 1946), so the load arriving at a hole is the bypass plus the bearing load there;
- superposition (common practice): a linear answer scales with its load, a reversed load too;
- a temperature change is no external load (common practice): a statically determinate body heated
  freely has no reactions, and the equivalent nodal forces of the thermal strain are not forces on it;
- a row of fasteners lies across the load and rows are numbered by position (common practice).
"""
import numpy as np
import pytest

import planar

from _joint_strips import AL, strip as _strip
from _test_setups import heated_pair


def _holes(tab, layer):
    return [h for h in tab.holes if h["layer"] == layer]


@pytest.fixture(scope="module")
def lap():
    """A single lap of two 10 mm strips, 4 fasteners at 20 mm pitch; pulled by 2 kN and pushed by 1 kN."""
    xs = 100.0 + 20.0 * np.arange(4)
    top, bottom = _strip(0.0, 170.0, 10.0, 1.6, 1.25), _strip(90.0, 260.0, 10.0, 1.6, 1.25)
    top.add_support(planar.Fixed("left"))
    bottom.add_load(planar.Traction("right", tx=2000.0 / 16.0), case="pull")
    bottom.add_load(planar.Traction("right", tx=-1000.0 / 16.0), case="push")
    joint = planar.Joint({"top": top, "bottom": bottom})
    joint.add_fasteners(planar.Fasteners(np.column_stack([xs, 0 * xs]), layers=("top", "bottom"), diameter=4.8,
                                         flexibility=3e-5, name="row"))
    return planar.solve(joint)


@pytest.mark.parametrize("case, P", [("pull", 2000.0), ("push", -1000.0)])
def test_bypass_plus_bearing_is_the_load_arriving(lap, case, P):
    # statics of the free body (Tate and Rosenfeld's chain): walking from where a strip's load enters,
    # the load arriving at each hole is the bypass there plus the fastener's load along the strip; the
    # last hole passes nothing on; the same reading for a pull and for a push
    tab = lap[case].fasteners
    for layer, order in (("top", slice(None)), ("bottom", slice(None, None, -1))):  # top held left, bottom loaded right
        hs = _holes(tab, layer)[order]
        bypass = np.array([h["bypass"] for h in hs])
        along = np.array([abs(h["load"][0]) for h in hs]) * np.sign(P)
        arriving = np.r_[P, bypass[:-1]]
        assert np.allclose(arriving, bypass + along, rtol=0, atol=1e-6 * abs(P)), layer
        assert abs(bypass[-1]) < 1e-9 * abs(P)


def test_bypass_scales_with_a_reversed_load(lap):
    # superposition: pushing with -1/2 of the pull gives -1/2 of every bypass, hole by hole
    pull = np.array([h["bypass"] for h in lap["pull"].fasteners.holes])
    push = np.array([h["bypass"] for h in lap["push"].fasteners.holes])
    assert np.abs(pull).max() > 500.0
    assert np.allclose(push, -0.5 * pull, rtol=0, atol=1e-6 * np.abs(pull).max())
    sec_pull = np.array([h["section_bypass"] for h in lap["pull"].fasteners.holes])
    sec_push = np.array([h["section_bypass"] for h in lap["push"].fasteners.holes])
    assert np.allclose(sec_push, -0.5 * sec_pull, rtol=0, atol=1e-6 * np.abs(pull).max())


def test_heated_strip_has_no_rest_forces_and_its_cut_is_the_stress_resultant():
    # a temperature change is no external load: the aluminium strip, held statically determinately and
    # joined to a steel strip at two points, has no load, reaction or pin force of its own, so the force
    # across a cut between the fasteners is the fastener load on one side (statics of the free body),
    # and the integral of the stresses along the cut says the same
    from planar.post import cut_resultant

    res = heated_pair()
    F = res.fasteners.magnitude.max()
    assert F > 100.0
    layer = res.layers["al"]
    assert np.abs(layer.rest_forces).max() < 1e-8 * F
    left = [h for h in _holes(res.fasteners, "al") if h["point"][0] < 60.0]
    through = -sum(h["load"][0] for h in left)  # tension through x = 60 from the free body left of it
    cut = cut_resultant(layer, (60.0, -5.0), (60.0, 5.0))
    assert through < -100.0  # the aluminium, held back by the steel, is squeezed between the fasteners
    assert cut.normal_force == pytest.approx(through, rel=1e-2)  # normal +x: tension positive
    assert np.allclose([h["bypass"] for h in res.fasteners.holes], 0.0, atol=1e-6 * F)


def test_symmetric_doubler_reads_symmetric_bypass():
    # symmetry and statics: a doubler on a skin, 8 fasteners in a row symmetric about the doubler's
    # middle; the doubler takes its load in through its fasteners only, so nothing passes its end holes
    # on the outer side, and the skin's end hole passes the skin's load less that hole's bearing
    P = 3000.0
    skin, dbl = _strip(0.0, 200.0, 10.0, 2.0, 1.25), _strip(50.0, 150.0, 10.0, 1.0, 1.25)
    skin.add_support(planar.Fixed("left"))
    skin.add_load(planar.Traction("right", tx=P / 20.0), case="pull")
    xs = np.linspace(55.0, 145.0, 8)
    joint = planar.Joint({"skin": skin, "doubler": dbl})
    joint.add_fasteners(planar.Fasteners(np.column_stack([xs, 0 * xs]), layers=("skin", "doubler"), diameter=4.0,
                                         flexibility=2e-5, name="row"))
    tab = planar.solve(joint)["pull"].fasteners
    d = np.array([h["bypass"] for h in _holes(tab, "doubler")])
    s = _holes(tab, "skin")
    b = np.array([h["bypass"] for h in s])
    assert abs(d[0]) < 1e-9 * P and abs(d[-1]) < 1e-9 * P
    assert np.allclose(d, d[::-1], rtol=0, atol=1e-6 * P)
    assert np.allclose(b, b[::-1], rtol=0, atol=1e-6 * P)
    assert b[0] == pytest.approx(P - abs(s[0]["load"][0]), rel=1e-6)
    assert d[1] == pytest.approx(abs(_holes(tab, "doubler")[0]["load"][0]), rel=1e-6)


def test_rows_of_a_fastener_ring_lie_across_the_load():
    # a ring of 8 fasteners on a doubler, the skin pulled along x: the ring's net load is nil (the
    # doubler takes load in at one side and gives it back at the other), and its rows still lie across
    # x: five rows at x = -r, -r/sqrt 2, 0, r/sqrt 2, r, numbered by x (plane geometry)
    r = 20.0
    skin = planar.Model(planar.rectangle_mesh(160.0, 80.0, 64, 32, element="Q8", origin=(-80.0, -40.0)), AL,
                        thickness=2.0, units="N, mm, MPa")
    dbl = planar.Model(planar.rectangle_mesh(60.0, 60.0, 24, 24, element="Q8", origin=(-30.0, -30.0)), AL,
                       thickness=2.0, units="N, mm, MPa")
    skin.add_support(planar.Roller("left"))
    skin.add_support(planar.Roller((-80.0, -40.0), fixed="y"))
    skin.add_load(planar.Traction("right", tx=100.0), case="pull")
    th = np.arange(8) * np.pi / 4
    joint = planar.Joint({"skin": skin, "doubler": dbl})
    joint.add_fasteners(planar.Fasteners(r * np.column_stack([np.cos(th), np.sin(th)]), layers=("skin", "doubler"),
                                         diameter=4.0, flexibility=3e-5, name="ring"))
    tab = planar.solve(joint)["pull"].fasteners
    rows = tab.rows
    assert [x["row"] for x in rows] == [1, 2, 3, 4, 5]
    assert [x["count"] for x in rows] == [1, 2, 2, 2, 1]
    c = r / np.sqrt(2)
    assert np.allclose([x["centre"][0] for x in rows], [-r, -c, 0.0, c, r], atol=1e-9)
    assert np.allclose([x["centre"][1] for x in rows], 0.0, atol=1e-9)


def test_rows_are_numbered_alike_in_both_shear_planes_and_for_a_push():
    # a double-shear butt splice: the two shear planes of a group pass their loads in opposite senses,
    # and a push reverses every load; the rows stay where they are, numbered by x
    d, w = 6.0, 12.0
    cl, cr = _strip(0.0, 150.0, w, 6.0, 1.5), _strip(150.0, 300.0, w, 6.0, 1.5)
    front, back = _strip(98.0, 202.0, w, 4.0, 1.5), _strip(98.0, 202.0, w, 4.0, 1.5)
    cl.add_support(planar.Fixed("left"))
    cr.add_load(planar.Traction("right", tx=100.0), case="pull")
    cr.add_load(planar.Traction("right", tx=-50.0), case="push")
    joint = planar.Joint({"front": front, "chord L": cl, "chord R": cr, "back": back})
    for nm, ch, xs in (("L", "chord L", [110.0, 134.0]), ("R", "chord R", [166.0, 190.0])):
        joint.add_fasteners(planar.Fasteners(np.column_stack([xs, [0.0, 0.0]]), layers=("front", ch, "back"),
                                             diameter=d, flexibility=4e-5, shear="double", name=nm))
    res = planar.solve(joint)
    seen = {}
    for case in ("pull", "push"):
        for row in res[case].fasteners.rows:
            seen.setdefault((row["group"], row["row"]), set()).add(row["centre"][0])
    assert seen == {("L", 1): {110.0}, ("L", 2): {134.0}, ("R", 1): {166.0}, ("R", 2): {190.0}}
