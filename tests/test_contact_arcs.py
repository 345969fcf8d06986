"""Contact arcs on edges that do not close, and the scale of the large-motion warning.

Each test names the trial it came from and the source of its check. Sources: the geometry of the cut
(a half hole on x >= 0 spans -90 to 90 degrees about its centre, a quarter hole in the first quadrant
0 to 90; common practice); mirror symmetry (a half model with the line held along its normal gives the
whole part's answer: common practice).
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.core.contact import _arc, _edge_angles
from planar.core.pins import Pin, PinLoad
from planar.geometry import Circle, Plate, Refine, lug, mesh

from _test_setups import flexibility_columns


def _ring(deg):
    return np.column_stack([np.cos(np.radians(deg)), np.sin(np.radians(deg))]) * 8.0


def test_an_open_edge_runs_from_its_largest_gap_and_reads_round_off_off_an_axis_as_the_axis():
    # trial t03 (half strap): the fitted centre lies 2.2e-15 off the axis, so the node at 0 deg read
    # -2.5e-14 deg, sorted to 360 and the arc ran from the wrong end. Geometry of the cut (common practice).
    deg = np.r_[0.0, np.linspace(10.0, 180.0, 18)]
    r = _ring(deg)
    r[0, 1] = -2.2e-15 * 8.0  # round-off below the axis
    a = _edge_angles(r, closed=False)
    assert a[0] == 0.0 and np.all(np.diff(a) > 0)
    on = deg <= 60.0
    assert _arc(a, on, closed=False) == pytest.approx((0.0, 65.0), abs=1e-9)


@pytest.mark.parametrize("span", [(-90.0, 90.0), (0.0, 90.0), (90.0, 270.0), (180.0, 360.0)])
def test_an_arc_on_a_half_or_quarter_hole_ends_at_the_edge_it_reaches(span):
    # trials t15 (half lug on x >= 0: read 44.1 to 180, true 44 to 90) and t16 (quarter plate: read 71.6 to
    # 225, true 71.6 to 90). Geometry of the cut (common practice): the arc cannot pass the end of the edge.
    deg = np.linspace(span[0], span[1], 37)
    rng = np.random.default_rng(3)
    perm = rng.permutation(deg.size)  # the edge's nodes come in any order
    a = np.sort(_edge_angles(_ring(deg[perm]), closed=False))
    assert a == pytest.approx(deg - 360.0 * (deg[0] > 180.0), abs=1e-9)
    on = a >= a[-1] - 40.0  # bearing from 40 deg before the end of the edge to its end
    a0, a1 = _arc(a, on, closed=False)
    step = (span[1] - span[0]) / 36
    assert a1 - a0 == pytest.approx(40.0 + step / 2, abs=1e-9)  # the start in (-180, 180], so compare mod 360
    assert (a1 - a[-1]) % 360.0 == pytest.approx(0.0, abs=1e-9) and -180.0 < a0 <= 180.0
    assert _arc(a, np.ones(a.size, bool), closed=False) == pytest.approx((a[0], a[-1]), abs=1e-9)


def test_a_whole_hole_keeps_its_arc_across_zero():
    # the closed edge's arc as before: across +x it reads -30 to 30 (half-way to the open nodes)
    deg = np.arange(0.0, 360.0, 10.0)
    a = _edge_angles(_ring(deg), closed=True)
    on = (deg <= 20.0) | (deg >= 340.0)
    assert _arc(a, on, closed=True) == pytest.approx((-25.0, 25.0))
    assert _arc(a, np.ones(a.size, bool), closed=True) == (0.0, 360.0)


def _lug_pull(half: bool):
    plate = lug(40.0, 16.0, 40.0)
    if half:
        plate = plate.half("x")
    m = mesh(plate, size=4.0, element="T6", refine=[Refine("hole", size=0.5)])
    model = planar.Model(m, planar.Isotropic(E=200e3, nu=0.3), thickness=8.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    if half:
        model.add_support(planar.Symmetry([k for k in m.edge_sets if k.startswith("symmetry")][0]))
    model.add_pin(Pin("hole", tie="contact", clearance=0.02, hold="x" if half else None, name="pin"))
    model.add_load(PinLoad("pin", fy=15e3 / (2 if half else 1)), case="pull")
    return planar.solve(model)["pull"]


def test_a_half_lug_bears_over_the_half_of_the_whole_lugs_arc():
    # trial t15: the half lug on its axis (x >= 0) read 44.1 to 180.0 deg. Mirror symmetry (common practice):
    # the whole lug bears symmetrically about 90 deg, so the half bears from the whole's start to 90 deg.
    whole = _lug_pull(False).contact_states["pin"]
    res = _lug_pull(True)
    half = res.contact_states["pin"]
    assert whole.arc_start_deg + whole.arc_end_deg == pytest.approx(180.0, abs=1.0)
    assert half.arc_end_deg == pytest.approx(90.0, abs=1e-9)
    spacing = 360.0 * 0.5 / (np.pi * 16.0)  # the hole's element size as an angle
    assert half.arc_start_deg == pytest.approx(whole.arc_start_deg, abs=spacing)
    ang = half.angles_deg
    assert ang.min() == pytest.approx(-90.0, abs=1e-9) and ang.max() == pytest.approx(90.0, abs=1e-9)
    assert np.all(np.diff(ang) > 0)
    from planar.post._report_tables import contact_section  # the report's table repeats the arc

    row = contact_section(res.contact_states).blocks[0].rows[0]
    assert row[1] == f"{half.arc_start_deg:.1f} to 90.0 ({90.0 - half.arc_start_deg:.1f})"


def test_a_shrink_fit_held_closed_gives_the_lame_pressure_without_a_large_motion_warning():
    # trial t23: a plate cooled onto a held pin without clearance read its pressure right but warned that
    # the linearised gap left out 2.95e-14 mm, "1617 % of the motion it reads" (a motion of ~1e-15 mm: the
    # pin holds the edge closed). Source: a thick ring with a free outer edge, pressure p on its hole of
    # radius a: u(a) = p a ((1 - nu) a^2 + (1 + nu) b^2) / (E (b^2 - a^2)) (G. Lame; S. P. Timoshenko and
    # J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, sec. 28), set equal to the free shrinkage
    # alpha |dT| a of the hole that the rigid pin prevents.
    E, nu, alpha, dT, a, b = 70e3, 0.33, 23e-6, -50.0, 10.0, 60.0
    p = Plate(Circle((0.0, 0.0), b, name="outer")).cut(Circle((0.0, 0.0), a, name="hole"))
    m = mesh(p, size=6.0, element="T6", refine=[Refine("hole", size=1.0, growth=1.3)])
    model = planar.Model(m, planar.Isotropic(E=E, nu=nu, alpha=alpha), thickness=1.0, units="N, mm, MPa")
    model.add_pin(Pin("hole", tie="contact", clearance=0.0, hold="both", name="pin"))
    model.add_support(planar.Roller((b, 0.0), fixed="y"))
    model.add_load(planar.TemperatureChange(dT), case="cold")
    r = planar.solve(model)["cold"]
    st = r.contact_states["pin"]
    p_lame = alpha * abs(dT) * E * (b ** 2 - a ** 2) / ((1 - nu) * a ** 2 + (1 + nu) * b ** 2)
    assert (st.arc_start_deg, st.arc_end_deg) == (0.0, 360.0)
    assert np.mean(st.pressure) == pytest.approx(p_lame, rel=0.01)
    assert st.motion < 1e-9 * a and st.closure == pytest.approx(alpha * abs(dT) * a, rel=0.2)
    assert not [w for w in r.warnings if w.code == "contact-large-motion"]


@pytest.mark.slow
def test_a_disc_on_a_long_straight_edge_solves_the_flexibility_of_a_few_nodes_about_the_arc(monkeypatch):
    # trial t11b: a disc pressed on the straight edge of a block (2,573 edge nodes) solved the flexibility of
    # 537 of them (a tenth of the edge on each side of where it closes), 80 % of a solve 6 to 15 times the
    # linear one, for a contact half-width of 0.43 mm (a dozen nodes). The answer is unique (Signorini's
    # conditions; A. Signorini, 1933, as in P. Wriggers, Computational Contact Mechanics, 2006, sec. 2.2;
    # from memory), so solving over every node must give the same. Half-width: b = sqrt(4 P R / (pi E*)),
    # E* = E in plane stress against a rigid disc (K. L. Johnson, Contact Mechanics, 1985, eq. 4.43).
    import planar.core.contact as contact

    E, P, R = 70e3, 200.0, 50.0
    m = mesh(Plate.rectangle(120.0, 60.0, centre=(0.0, -30.0)), size=8.0, element="T6",
             refine=[Refine("top", size=0.25)])

    def run(all_nodes: bool):
        seen = flexibility_columns(monkeypatch, all_nodes)
        model = planar.Model(m, planar.Isotropic(E=E, nu=0.3), thickness=1.0, units="N, mm, MPa")
        model.add_support(planar.Fixed("bottom"))
        model.add_pin(Pin("top", tie="contact", radius=R, at=(0.0, R), hold="x", name="roller"))
        model.add_load(PinLoad("roller", fy=-P), case="press")
        return planar.solve(model)["press"], max(seen)

    few, n_few = run(False)
    every, n_every = run(True)
    a, b = few.contact_states["roller"], every.contact_states["roller"]
    half = np.sqrt(4 * P * R / (np.pi * E))
    x = m.nodes[a.nodes, 0]
    within = int(np.sum(np.abs(x) <= half))
    assert n_every == a.nodes.size > 500
    assert n_few <= 4 * within + contact.ANCHORS  # a few times the nodes in contact, not a tenth of the edge
    assert (a.arc_start_deg, a.arc_end_deg) == (b.arc_start_deg, b.arc_end_deg)
    assert abs(a.peak_pressure - b.peak_pressure) < 1e-8 * b.peak_pressure
    assert np.abs(few.u - every.u).max() < 1e-9 * np.abs(every.u).max()
