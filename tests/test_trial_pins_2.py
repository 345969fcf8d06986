"""Pins, bearing contact, reactions and the lug check tried again on parts of a stress engineer's own.

Each test names the trial it came from and the source of its check. Sources: statics and mirror symmetry
(common practice); the lug formulas of E. F. Bruhn, Analysis and Design of Flight Vehicle Structures, 1973,
sec. D1 (common practice; from memory).
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.core.pins import Pin, PinLoad
from planar.geometry import Refine, lug, mesh


# trial: a clevis lug with a clearance pin pulled at 0, 45 and 90 degrees from its axis
@pytest.fixture(scope="module")
def round_lug():
    return mesh(lug(40.0, 16.0, 40.0, end="round"), size=6.0, element="T6", refine=[Refine("hole", size=1.2)])


def _lug_on_pin(m, hold=None):
    """The lug mesh ``m`` (steel, 8 mm thick) held at its base, a contact pin 'pin' (0.02 mm clearance) in its hole."""
    model = planar.Model(m, planar.Isotropic(E=200e3, nu=0.3), thickness=8.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    model.add_pin(Pin("hole", tie="contact", clearance=0.02, hold=hold, name="pin"))
    return model


def _lug_check(m, fx, fy, half=False, hold=None, P=None):
    from planar.post import lug_check

    model = planar.Model(m, planar.Isotropic(E=200e3, nu=0.3), thickness=8.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    if half:
        model.add_support(planar.Symmetry("symmetry_x"))
    model.add_pin(Pin("hole", tie="contact", clearance=0.02, hold=hold, name="pin"))
    if fx or fy:
        model.add_load(PinLoad("pin", fx=fx, fy=fy), case="c")
    else:  # a held pin, the lug pulled down at its base instead of fixed there
        model.supports.clear()
        model.add_support(planar.Symmetry("symmetry_x"))
        model.add_load(planar.Traction("base", ty=-10.0), case="c")
    r = planar.solve(model)["c"]
    whole = (np.hypot(fx, fy) or 10.0 * 20.0 * 8.0) * (1 + half)  # the whole lug's load
    return lug_check(r, whole if P is None else P, 40.0, 16.0, 8.0, edge_distance=40.0,
                     tension_allowable=300.0, shear_allowable=200.0, bearing_allowable=400.0)


@pytest.mark.parametrize("angle", [45.0, 90.0])
def test_a_lug_pulled_off_its_axis_says_the_axial_figures_take_the_whole_load(round_lug, angle):
    # the lug formulas P / ((W - D) t) and P / (2 (e - D/2) t) are for a load along the lug; a transverse or
    # oblique load has strengths of its own, checked by components (common practice, Bruhn sec. D1). A side
    # pull of 15 kN gave 'MS = +2.840' on net-section tension with no word that the load was across the lug.
    a = np.radians(angle)
    c = _lug_check(round_lug, 15e3 * np.sin(a), 15e3 * np.cos(a))
    assert f"{angle:.1f} deg off the lug's axis" in c.direction_note
    axial = "0" if angle == 90.0 else f"{15e3 * np.cos(a):.5g}"
    assert f"(axial {axial}, transverse {15e3 * np.sin(a):.5g} N)" in c.direction_note
    assert "CAUTION: the pin's load is" in c.table() and c.as_dict()["direction_note"] == c.direction_note


def test_a_lug_pulled_along_its_axis_gets_no_off_axis_caution(round_lug):
    c = _lug_check(round_lug, 0.0, 15e3)
    assert c.direction_note == "" and "CAUTION: the pin" not in c.table()
    assert set(c.margins) == {"net_section", "bearing", "shear_out"}


# trial: the same lug as a half model on its axis (mirror symmetry, common practice)
@pytest.mark.parametrize("loaded", [True, False])
def test_a_half_lug_on_its_axis_is_not_taken_for_an_oblique_pull(loaded):
    # the half hole's pressure pushes across the symmetry line (the pin's force on the half is some 20 deg off
    # the axis, the other half carries the mirror of it), so the half is still pulled along its axis
    half = mesh(lug(40.0, 16.0, 40.0).half("x"), size=6.0, element="T6", refine=[Refine("hole", size=1.2)])
    c = _lug_check(half, 0.0, 7500.0 if loaded else 0.0, half=True, hold="x" if loaded else "both")
    assert c.direction_note == "" and c.load_note == ""


# trial: lug checks given a load the result does not put on the hole
def test_a_lug_check_given_another_load_than_the_hole_carries_says_so(round_lug):
    # Kt = peak / (P / ((W - D) t)) mixes the result's peak with the P given (Bruhn sec. D1 nominal): a held pin
    # that the lug's own pull leaves clear of its hole carries nothing, yet the check printed a bearing stress of
    # 125 MPa with 'MS = +2.200' and a Kt of 2.2 on it, unremarked
    c = _lug_check(round_lug, 0.0, 15e3, P=16e3)  # 6.7 % over the 15 kN the pin passes
    assert "P = 16000 N, is not the load on the hole in this result (15000 N)" in c.load_note
    assert "CAUTION: the load given" in c.table() and c.as_dict()["load_note"] == c.load_note
    assert _lug_check(round_lug, 0.0, 15e3, P=15.1e3).load_note == ""  # within 1 %
    # an oblique 15 kN: the whole load or its component along the lug's axis ('P along the lug') will do
    a = np.radians(30.0)
    for P in (15e3, 15e3 * np.cos(a)):
        assert _lug_check(round_lug, 15e3 * np.sin(a), 15e3 * np.cos(a), P=P).load_note == ""
    assert "(15000 N; 12990 N along the lug's axis)" in _lug_check(round_lug, 7.5e3, 15e3 * np.cos(a),
                                                                     P=10e3).load_note
    # the half model's pin carries 7500 N: the whole lug 15000 N (mirror symmetry, common practice)
    half = mesh(lug(40.0, 16.0, 40.0).half("x"), size=6.0, element="T6", refine=[Refine("hole", size=1.2)])
    c = _lug_check(half, 0.0, 7500.0, half=True, hold="x", P=7500.0)
    assert "(15000 N, 2 times the 7500 N on this half model)" in c.load_note and "whole lug's W and D" in c.load_note
    # the held pin the square lug pulls away from (it stretches less than the clearance): nothing on the hole
    square = mesh(lug(40.0, 16.0, 40.0), size=5.0, element="T6", refine=[Refine("hole", size=0.8)])
    model = _lug_on_pin(square, hold="both")
    model.add_load(planar.Traction("end", ty=50.0), case="c")
    r = planar.solve(model)["c"]
    assert not r.contact_states["pin"].in_contact
    from planar.post import lug_check

    assert "is not the load on the hole in this result (0 N)" in lug_check(r, 16e3, 40.0, 16.0, 8.0).load_note


# trial: the report of a contact model, its picture given by hand
def test_the_report_takes_a_drawn_picture_and_names_a_wrong_one(round_lug, tmp_path):
    # picture=model (or a missing file) passed the report's build and failed at writing with a TypeError
    # (or FileNotFoundError) traceback; the figure plot_model returns was refused the same way
    from planar.core.errors import InputError
    from planar.post import plot_model, render_html, stress_check_report

    model = _lug_on_pin(round_lug)
    model.add_load(PinLoad("pin", fy=15e3), case="c")
    r = planar.solve(model)["c"]
    keep = dict(omit=("hot spots", "results", "checks", "mesh"))
    html = render_html(stress_check_report(r, picture=plot_model(model, case="c"), **keep))
    assert "The model: supports, pins and loads." in html
    for bad, words in ((model, "got Model"), (tmp_path / "none.png", "no such file")):
        with pytest.raises(InputError, match=words):
            stress_check_report(r, picture=bad, **keep)


# trial: plot_model of a lug with its pin loads
def test_the_model_picture_labels_a_pin_load_in_plain_figures(round_lug):
    # a 15 kN pin load was labelled '1.5e+04 N' and an oblique 11.18 kN one '1.118e+04 N' (the tables print
    # plain figures); four figures are kept
    from planar.post import plot_model

    model = _lug_on_pin(round_lug)
    model.add_load(PinLoad("pin", fy=15e3), case="pull")
    model.add_load(PinLoad("pin", fx=5e3, fy=10e3), case="oblique")
    for case, text in (("pull", "15000 N"), ("oblique", "11180 N")):
        fig = plot_model(model, case=case)
        labels = [t.get_text() for ax in fig.axes for t in ax.texts if t.get_gid() == "load-value:pin-load:pin"]
        assert labels == [text]


# trial: a strap pulled through its pin, the pin left at its default hold
@pytest.mark.parametrize("tie, hold, load, words", [
    ("rigid", "both", dict(fx=6000.0), "a force along x"),           # the default hold: the part got nothing
    ("contact", "x", dict(fx=300.0, fy=200.0), "a force along x"),   # the x part vanished, the y part was applied
    ("spreading", (1.0, 1.0), dict(fx=100.0, fy=100.0), "a force along (0.7071, 0.7071)"),
    ("rigid", None, dict(fx=100.0, moment=50.0), None),              # free: loads the part
])
def test_a_load_on_what_a_pin_holds_is_refused(tie, hold, load, words):
    # statics (common practice): a force on a held component is taken by the pin's support and never reaches
    # the part; a pin at its default hold='both' loaded by PinLoad solved with every reaction zero and the part
    # unloaded and unstressed, silently
    from planar.core.errors import InputError
    from planar.geometry import Circle, Plate

    p = Plate.rectangle(200.0, 40.0, centre=(0.0, 0.0)).cut(Circle((60.0, 0.0), 5.0, name="hole"))
    m = mesh(p, size=8.0, element="Q8", refine=[Refine("hole", size=1.5)])
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=4.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_pin(Pin("hole", tie=tie, hold=hold, name="pin", **({"clearance": 0.01} if tie == "contact" else {})))
    model.add_load(PinLoad("pin", **load), case="pull")
    if words is None:
        r = planar.solve(model)["pull"]
        clamp = next(x for x in r.support_reactions() if x.kind == "fixed")
        assert clamp.force[0] == pytest.approx(-100.0, rel=1e-9)
        return
    with pytest.raises(InputError, match="load case 'pull' puts " + words.replace("(", r"\(").replace(")", r"\)")
                       + " on pin 'pin', which holds it"):
        planar.solve(model)


# trial: a bracket whose hole was clamped before the pin was added, and two holes under one name
@pytest.mark.parametrize("case", ["clamped hole", "two holes"])
def test_a_contact_pin_on_a_clamped_or_doubled_hole_is_refused_by_name(case):
    # a held node cannot move against the pin: the contact problem has no unique answer, and it was reported as
    # a part that 'would move freely' (blaming the loads and the clearance); an edge of two holes was 'not a
    # circle about the pin's point' with the advice to give radius=, which would make one disc bear on both
    from planar.core.errors import InputError, SupportError
    from planar.geometry import Circle, Plate

    p = Plate.rectangle(160.0, 50.0, centre=(0.0, 0.0)).cut(Circle((50.0, 10.0), 6.0, name="hole"))
    if case == "two holes":
        p = p.cut(Circle((-50.0, 0.0), 6.0, name="hole"))
    m = mesh(p, size=6.0, element="Q8", refine=[Refine("hole", size=1.0)])
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=3.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    if case == "clamped hole":
        model.add_support(planar.Fixed("hole"))
    model.add_pin(Pin("hole", tie="contact", clearance=0.0, hold=None, name="pin"))
    model.add_load(PinLoad("pin", fy=100.0), case="c")
    err, words = ((SupportError, "of its edge is held by a support.*remove the support from the pin's edge")
                  if case == "clamped hole" else (InputError, "is 2 separate pieces.*name each hole apart"))
    with pytest.raises(err, match=words):
        planar.solve(model)


# trial: reactions of a clamped arm loaded through a rigid pin, about each one's own point
def test_reactions_about_their_own_points_do_not_claim_the_moments_add_up():
    # statics (common practice): the clamp at the left edge's centre (-80, 0) carries -(20000 + 130 x (-1000)
    # - 10 x 300) = 113000 N mm, the pin its own 20000 N mm about its point; 113000 + 20000 is no balance, so
    # the caption's 'With the applied loads they add up to zero' was wrong for about='own'
    from planar.geometry import Circle, Plate
    from planar.post.report import reactions_table

    p = Plate.rectangle(160.0, 50.0, centre=(0.0, 0.0)).cut(Circle((50.0, 10.0), 6.0, name="hole"))
    m = mesh(p, size=8.0, element="T6", refine=[Refine("hole", size=1.5)])
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=3.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_pin(Pin("hole", tie="rigid", hold=None, name="arm"))
    model.add_load(PinLoad("arm", fx=300.0, fy=-1000.0, moment=20000.0), case="c")
    r = planar.solve(model)["c"]
    own = reactions_table(r, about="own")
    assert [row[4] for row in own.rows] == ["113000", "20000"]
    assert "the forces add up to zero" in own.caption and "they add up to zero" not in own.caption
    assert "they add up to zero" in reactions_table(r, about=(0.0, 0.0)).caption
