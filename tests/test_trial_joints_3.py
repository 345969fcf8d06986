"""Fastened joints tried on joints of our own (third round): the defects found and fixed, and the checks of
several layers against the hand spring-and-bar model.

Sources:
- M. B. Tate and S. J. Rosenfeld, Preliminary investigation of the loads carried by individual bolts in
  bolted joints, NACA TN 1051, 1946: the discrete model (the plates as bars between the fasteners, each
  fastener a shear spring between adjacent plates), solved here by hand as a small linear system.
- common practice: a fastener's hole lies in the plate; two holes do not overlap (a pitch of 4 d or so).
"""
import numpy as np
import pytest

import planar
from planar.core.errors import InputError


def _strips(element="Q4"):
    """Two 20 mm wide, 2 mm aluminium strips overlapping from x = 60 to 100 (2.5 mm Q4), one held, one pulled."""
    def strip(x0):
        m = planar.rectangle_mesh(100.0, 20.0, 40, 8, element=element, origin=(x0, -10.0))
        return planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    a, b = strip(0.0), strip(60.0)
    a.add_support(planar.Fixed("left"))
    b.add_load(planar.Traction("right", tx=10.0), case="pull")
    return planar.Joint({"a": a, "b": b})


@pytest.mark.parametrize("points", [[(70.0, 0.0), (70.0, 0.0), (90.0, 0.0)],       # a point given twice
                                    [(70.0, 0.0), (74.0, 0.0), (90.0, 0.0)]])      # holes 4 mm apart, d = 5
def test_overlapping_fasteners_in_one_group_are_refused(points):
    # common practice: two holes do not overlap; a point given twice doubled the spring there, silently
    j = _strips()
    with pytest.raises(InputError, match=r"fasteners 'row' 1 at \(70, 0\) and 2 at \((70|74), 0\).*overlap"):
        j.add_fasteners(planar.Fasteners(points, layers=("a", "b"), diameter=5.0, flexibility=1e-5, name="row"))


def test_a_fastener_repeated_in_a_second_group_between_the_same_layers_is_refused():
    j = _strips()
    j.add_fasteners(planar.Fasteners([(70.0, 0.0), (90.0, 0.0)], layers=("a", "b"), diameter=5.0, flexibility=1e-5,
                                     name="g1"))
    with pytest.raises(InputError, match=r"'g2' 1 at \(90, 0\).*'g1' 2 at \(90, 0\).*layers 'a' and 'b'"):
        j.add_fasteners(planar.Fasteners([(90.0, 0.0)], layers=("b", "a"), diameter=5.0, flexibility=1e-5, name="g2"))


def test_one_fastener_given_as_two_groups_one_per_shear_plane_is_accepted():
    # a fastener through three layers with a spring per plane given as two groups at one point: no overlap
    j = _strips()
    m = planar.rectangle_mesh(40.0, 20.0, 16, 8, element="Q4", origin=(60.0, -10.0))
    j.layers["c"] = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    pts = [(70.0, 0.0), (90.0, 0.0)]
    j.add_fasteners(planar.Fasteners(pts, layers=("a", "b"), diameter=5.0, flexibility=1e-5, name="upper"))
    j.add_fasteners(planar.Fasteners(pts, layers=("b", "c"), diameter=5.0, flexibility=2e-5, name="lower"))
    assert len(j.fasteners) == 2


def test_a_results_method_asked_of_a_joints_result_names_the_layer():
    # jr.max("von_mises") was a bare AttributeError; hasattr and getattr with a default keep working
    j = _strips()
    j.add_fasteners(planar.Fasteners([(70.0, 0.0), (90.0, 0.0)], layers=("a", "b"), diameter=5.0, flexibility=1e-5))
    jr = planar.solve(j)["pull"]
    with pytest.raises(InputError, match=r"one Result per layer \('a', 'b'\); ask a layer, e\.g\. "
                                         r"result\.layers\['a'\]\.max"):
        jr.max("von_mises")
    assert not hasattr(jr, "field") and getattr(jr, "section", None) is None
    with pytest.raises(AttributeError, match="no attribute 'nonsense'"):
        jr.nonsense


def _wide_lap_inclined(angles):
    """Two 40 mm wide, 2 mm strips lapped over 60 mm, a 3 x 2 group (pitch 20 along, 30 across, d = 5), the
    one held at its left end, the other pulled at its right end at each angle (degrees) to x."""
    def strip(x0):
        m = planar.rectangle_mesh(140.0, 40.0, 70, 20, element="Q8", origin=(x0, -20.0))
        return planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    a, b = strip(0.0), strip(80.0)
    a.add_support(planar.Fixed("left"))
    for ang in angles:
        r = np.radians(ang)
        b.add_load(planar.Traction("right", tx=10.0 * np.cos(r), ty=10.0 * np.sin(r)), case=f"{ang:g}")
    j = planar.Joint({"a": a, "b": b})
    j.add_fasteners(planar.Fasteners([(x, y) for x in (90.0, 110.0, 130.0) for y in (-15.0, 15.0)],
                                     layers=("a", "b"), diameter=5.0, flexibility=3e-5, name="g"))
    return planar.solve(j)


def test_rows_and_bypass_cuts_follow_the_rows_of_holes_under_an_inclined_load():
    # common practice: a row is the line of holes across the load and the bypass is read on a cut along it.
    # A load 10 degrees off the rows tilted the cut by ~6 degrees, 3 mm off the other hole over 30 mm: each
    # hole became a row of its own and its bypass per fastener doubled (258 -> 510 N)
    res = _wide_lap_inclined((0.0, 10.0))
    for case, r in res.items():
        tab = r.fasteners
        assert [(row["row"], row["count"]) for row in tab.rows] == [(1, 2), (2, 2), (3, 2)], case
        holes = [h for h in tab.holes if h["layer"] == "a"]
        assert all(h["on_cut"] == 2 for h in holes), case
        # statics of the free body right of the cut through row 1 of the held strip: what crosses it
        # (the bypass of both holes) is what rows 2 and 3 put into the strip along the cut's normal (x)
        V = tab.shear  # force from a into b; the strip a receives -V
        beyond = -V[2:, 0].sum()
        assert holes[0]["section_bypass"] == pytest.approx(beyond, rel=1e-6), case
