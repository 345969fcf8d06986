"""Pins, bearing contact and reactions tried on parts of the kind a stress engineer checks.

Each test names the trial it came from and the source of its check. Sources: mirror symmetry (a part
symmetric about a line, loaded symmetrically, deforms symmetrically, so a half or quarter model with
the line held along its normal gives the whole part's answer: common practice); statics (common
practice); a rigid rotation strains nothing and changes no distance (common practice).
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.core.errors import SupportError
from planar.core.pins import Pin, PinLoad
from planar.geometry import Circle, Plate, Refine, mesh

from _test_setups import flexibility_columns

E, NU = 70e3, 0.33


def strap(cut: str = ""):
    """A 240 x 80 strap with a 20 mm hole at its centre; "y" the upper half, "xy" the upper right quarter."""
    p = Plate.rectangle(240.0, 80.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 10.0, name="hole"))
    if "x" in cut:
        p = p.half("x")
    if "y" in cut:
        p = p.half("y")
    return mesh(p, size=8.0, element="T6", refine=[Refine("hole", size=1.0)])


def pulled_through_pin(cut: str, tie: str, **kw):
    """The strap held at its left end and pulled by a pin in its hole (8 kN on the whole strap)."""
    model = planar.Model(strap(cut), planar.Isotropic(E, NU), thickness=4.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    if "y" in cut:
        model.add_support(planar.Symmetry("symmetry_y"))
    model.add_pin(Pin("hole", tie=tie, name="pin", **kw))
    model.add_load(PinLoad("pin", fx=8000.0 / (2 if "y" in cut else 1)), case="pull")
    return planar.solve(model)["pull"]


def lug_on_contact_pin(m, material, thickness: float, units: str, clearance: float, fy: float):
    """The lug mesh ``m`` held at its base and pulled by ``fy`` through a free contact pin, 'pin', in its hole."""
    model = planar.Model(m, material, thickness=thickness, units=units)
    model.add_support(planar.Fixed("base"))
    model.add_pin(Pin("hole", tie="contact", clearance=clearance, hold=None, name="pin"))
    model.add_load(PinLoad("pin", fy=fy), case="c")
    return planar.solve(model)["c"]


# trial: a plate with a pin whose hole is cut by a symmetry line (half and quarter models)
def test_half_model_spreading_pin_gives_the_whole_pin_answer():
    # mirror symmetry (common practice): the whole strap's spreading pin puts no force across the line on the
    # upper half, and the peak on the hole is the whole model's. Before the fit over the whole hole, the
    # half edge's own fit gave a y force of about 600 N on the half and a peak 1.6 % low.
    full = pulled_through_pin("", "spreading", hold=None)
    half = pulled_through_pin("y", "spreading", hold="y", rotation="held")
    pin = next(r for r in half.support_reactions() if r.name == "pin")
    assert pin.force[0] == pytest.approx(4000.0, rel=1e-9)
    assert abs(pin.force[1]) < 1e-6 * 4000.0
    a = full.max("von_mises", where="hole").value
    b = half.max("von_mises", where="hole").value
    assert b == pytest.approx(a, rel=5e-3)


def test_quarter_model_spreading_pin_of_a_doubly_symmetric_strap_carries_nothing():
    # a strap pulled equally at both ends with a held pin in its centre: by symmetry the whole pin moves
    # nowhere and carries nothing (statics and symmetry, common practice); the quarter model's pin must
    # too (the quarter edge's own fit made it carry 1260 N and read the peak 20 % low)
    def run(cut):
        model = planar.Model(strap(cut), planar.Isotropic(E, NU), thickness=4.0, units="N, mm, MPa")
        if cut:
            model.add_support(planar.Symmetry("symmetry_x"))
            model.add_support(planar.Symmetry("symmetry_y"))
        else:
            model.add_load(planar.Traction("left", tx=-20.0), case="pull")
        model.add_load(planar.Traction("right", tx=20.0), case="pull")
        model.add_pin(Pin("hole", tie="spreading", hold="both", rotation="held", name="pin"))
        return planar.solve(model)["pull"]

    full, quarter = run(""), run("xy")
    pin = next(r for r in quarter.support_reactions() if r.name == "pin")
    assert np.abs(pin.force).max() < 1e-9 * 3200.0 and abs(pin.moment) < 1e-9 * 3200.0 * 10.0
    assert quarter.max("von_mises", where="hole").value == pytest.approx(full.max("von_mises", where="hole").value,
                                                                         rel=1e-2)


def test_half_model_rigid_pin_gives_the_whole_pin_answer():
    # a rigid tie held across the line and in rotation is exact in a half model (mirror symmetry)
    full = pulled_through_pin("", "rigid", hold=None)
    half = pulled_through_pin("y", "rigid", hold="y", rotation="held")
    assert half.max("von_mises", where="hole").value == pytest.approx(full.max("von_mises", where="hole").value,
                                                                      rel=5e-3)


@pytest.mark.parametrize("tie, kw, words", [
    ("spreading", dict(hold="y"), "rotation='held'"),   # silently wrong before: a peak 2.6 times the whole model's
    ("rigid", dict(hold="y"), "rotation='held'"),
    ("contact", dict(hold=None, clearance=0.02), "hold='y'"),  # no force across the line: silently wrong before
])
def test_a_pin_on_a_symmetry_line_left_free_to_turn_or_to_cross_it_is_refused(tie, kw, words):
    with pytest.raises(SupportError, match="symmetry line") as err:
        pulled_through_pin("y", tie, **kw)
    assert words in str(err.value)


# trial: a lug in contact with clearance at 0, 45 and 90 degrees from its axis
def test_a_lug_swinging_about_its_contact_pin_is_not_warned_of_large_sliding():
    # a rotation about the pin's point changes no distance from it, so no gap (common practice): the side
    # load's bending swings the lug about its pin by some 0.006 rad (0.06 mm at the hole's edge), which was
    # counted as sliding across the pin and warned (1.2 % of the motion) on this healthy model
    from planar.geometry import lug

    m = mesh(lug(50.0, 20.0, 40.0, end="round"), size=5.0, element="T6", refine=[Refine("hole", size=0.8)])
    model = planar.Model(m, planar.Isotropic(E=200e3, nu=0.3), thickness=10.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    model.add_pin(Pin("hole", tie="contact", clearance=0.05, hold=None, name="pin"))
    model.add_load(PinLoad("pin", fx=20e3), case="side")
    r = planar.solve(model)["side"]
    st = r.contact_states["pin"]
    assert not [w for w in r.warnings if w.code == "contact-large-motion"]
    assert st.neglected < 0.01 * st.motion
    # the pin bears around the load's direction, the lug's reactions balance it (statics)
    assert -45.0 < st.arc_start_deg < 0.0 < st.arc_end_deg < 45.0
    total = np.sum([x.force for x in r.support_reactions()], axis=0)
    assert np.abs(total).max() < 1e-9 * 20e3


# trial: several load cases sharing one factorization with contact
def test_a_case_that_leaves_a_free_contact_pin_unloaded_says_so():
    # a shackle pin (free, contact) loads the bracket in one case; in the other only a traction acts, so
    # nothing places the pin in its hole: the refusal names the case and the pin (it blamed the loads'
    # direction and called the idle pin loaded)
    from planar.core.errors import SolverError

    p = Plate.rectangle(160.0, 60.0, centre=(0.0, 0.0)).cut(Circle((50.0, 0.0), 8.0, name="hole"))
    m = mesh(p, size=8.0, element="T6", refine=[Refine("hole", size=1.5)])
    model = planar.Model(m, planar.Isotropic(E, NU), thickness=4.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_pin(Pin("hole", tie="contact", clearance=0.05, hold=None, name="shackle"))
    model.add_load(PinLoad("shackle", fx=5000.0), case="sling")
    model.add_load(planar.Traction("top", ty=-0.5), case="wind")
    with pytest.raises(SolverError, match="'wind' puts no load on the contact pin.*'shackle'"):
        planar.solve(model)
    assert planar.solve(model, cases=["sling"])["sling"].contact_states["shackle"].in_contact


# trial: the lug's report and contact line, as an engineer reads them
def test_round_off_of_a_pin_force_prints_as_zero_in_the_contact_line_and_the_report_tables():
    # a lug pulled along its axis: the pin's force across the axis and the moments about the hole's centre
    # are round-off (statics, common practice); they printed as 9.6e-12 N and -2.3e-08 N mm, and the pin's
    # 20 kN as '2e+04'
    from planar.geometry import lug
    from planar.post._report_tables import contact_section
    from planar.post.report import reactions_table

    m = mesh(lug(50.0, 20.0, 50.0), size=8.0, element="T6", refine=[Refine("hole", size=1.5)])
    r = lug_on_contact_pin(m, planar.Isotropic(E=200e3, nu=0.3), 10.0, "N, mm, MPa", 0.02, 20e3)
    st = r.contact_states["pin"]
    assert "force (0, 20000) N" in st.summary()
    row = contact_section(r.contact_states, r.unit_system).blocks[0].rows[0]
    assert "(0, 20000)" in row
    rows = {x[0]: x for x in reactions_table(r, about=(0.0, 0.0)).rows}
    assert rows["pin"][2:] == ["0", "20000", "0"]
    assert [x for x in rows.values() if x[1] == "fixed"][0][2:] == ["0", "-20000", "0"]


# trial: a bracket held at one end, pulled by a free contact pin (cost at 10^5 unknowns and more)
def test_clearance_fit_solves_the_flexibility_of_the_closing_side_only(monkeypatch):
    # with a clearance the springs' first answer closes no gap, and every node of the hole was a candidate:
    # the flexibility of the whole edge was solved (808 columns, 11 s of a 17 s solve at 5 x 10^5 unknowns),
    # where the pin bears over some 105 degrees. The candidates now start where the edge closes most; the
    # answer is unique (Signorini's conditions; A. Signorini, 1933, as in P. Wriggers, Computational
    # Contact Mechanics, 2006, sec. 2.2; from memory) so it must not change.
    def run(all_nodes: bool):
        seen = flexibility_columns(monkeypatch, all_nodes)
        p = Plate.rectangle(300.0, 120.0, centre=(0.0, 0.0)).cut(Circle((60.0, 0.0), 10.0, name="hole"))
        m = mesh(p, size=12.0, element="T6", refine=[Refine("hole", size=1.0)])
        model = planar.Model(m, planar.Isotropic(E, NU), thickness=4.0, units="N, mm, MPa")
        model.add_support(planar.Fixed("left"))
        model.add_pin(Pin("hole", tie="contact", clearance=0.02, hold=None))
        model.add_load(PinLoad("hole", fx=4800.0), case="c")
        r = planar.solve(model)["c"]
        return r, max(seen), np.unique(m.edge("hole")).size

    few, n_few, n_edge = run(False)
    every, n_every, _ = run(True)
    assert n_every == n_edge and n_few < 0.7 * n_edge
    a, b = few.contact_states["hole"], every.contact_states["hole"]
    assert (a.arc_start_deg, a.arc_end_deg) == (b.arc_start_deg, b.arc_end_deg)
    assert abs(a.peak_pressure - b.peak_pressure) < 1e-8 * b.peak_pressure
    assert np.abs(few.u - every.u).max() < 1e-9 * np.abs(every.u).max()


# trial: the lug check in inch-pound units
def test_lug_table_and_contact_line_in_psi_print_plain_numbers():
    # a 2 in wide aluminium lug, 0.75 in hole, 3000 lbf: bearing P / (D t) = 3000 / (0.75 x 0.25) = 16000 psi
    # (common practice); it printed as '1.6e+04 psi', the peak hoop stress and contact pressure likewise
    from planar.geometry import lug
    from planar.post import lug_check

    m = mesh(lug(2.0, 0.75, 1.5), size=0.3, element="T6", refine=[Refine("hole", size=0.06)])
    r = lug_on_contact_pin(m, planar.Isotropic(E=10.3e6, nu=0.33), 0.25, "lbf, in, psi", 0.001, 3000.0)
    text = lug_check(r, 3000.0, 2.0, 0.75, 0.25, edge_distance=1.5).table()
    assert "16000 psi" in text and "e+0" not in text
    line = r.contact_states["pin"].summary()
    assert "peak pressure 2" in line and "e+04 psi" not in line and "force (0, 3000) lbf" in line


# trial: a lug in contact loaded at 0 and 180 degrees from its axis
def test_a_lug_pushed_towards_its_base_gets_no_tension_or_shear_out_margin():
    # a pin pushing the lug towards its base loads the net section in compression and shears nothing out
    # towards the end (common practice, E. F. Bruhn, Analysis and Design of Flight Vehicle Structures, 1973,
    # sec. D1: the lug modes are for a pin pulling towards the end); the check gave 'MS = +3.500' on net-section
    # tension, unremarked
    from planar.geometry import lug
    from planar.post import lug_check

    m = mesh(lug(50.0, 20.0, 50.0), size=8.0, element="T6", refine=[Refine("hole", size=1.5)])
    checks = {}
    for fy in (20e3, -20e3):
        r = lug_on_contact_pin(m, planar.Isotropic(E=200e3, nu=0.3), 10.0, "N, mm, MPa", 0.02, fy)
        checks[fy] = lug_check(r, fy, 50.0, 20.0, 10.0, edge_distance=50.0, tension_allowable=300.0,
                               shear_allowable=200.0, bearing_allowable=400.0)
    pull, push = checks[20e3], checks[-20e3]
    assert set(pull.margins) == {"net_section", "bearing", "shear_out"} and not pull.direction_note
    assert set(push.margins) == {"bearing"} and "towards its base" in push.table()
    assert push.as_dict()["direction_note"]


# trial: a pin on a hole only to read its motion (a free spreading pin that no case loads)
def test_a_free_unloaded_spreading_pin_leaves_the_kirsch_peak_unflagged():
    # the spreading tie adds no stiffness and, free and unloaded, no force: the hole is traction-free and its
    # peak is the part's own, sigma_xx = 3 S at the hole's top in a wide plate (G. Kirsch, 1898; W. D. Pilkey
    # and D. F. Pilkey, Peterson's Stress Concentration Factors, 3rd ed., 2008, eq. 4.18). It was noted as
    # made by the idealisation of the pin.
    p = Plate.rectangle(400.0, 400.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 10.0, name="hole"))
    m = mesh(p, size=25.0, element="T6", refine=[Refine("hole", size=0.8, growth=1.25)])
    model = planar.Model(m, planar.Isotropic(E, NU), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller((-200.0, -200.0), fixed="y"))
    model.add_load(planar.Traction("right", tx=100.0), case="t")
    model.add_pin(Pin("hole", tie="spreading", hold=None, name="gauge"))
    r = planar.solve(model)["t"]
    peak = r.max("sigma_xx", where="hole")
    assert peak.value == pytest.approx(300.0, rel=0.03)  # a 400 mm plate: within 1 % of the infinite plate's
    assert peak.note == ""
    gauge = next(x for x in r.support_reactions() if x.name == "gauge")
    assert np.abs(gauge.force).max() < 1e-9 * 100.0 * 400.0
