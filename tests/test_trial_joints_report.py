"""Fastened joints, the report and the pictures tried on parts of our own: the defects found and fixed.

Sources:
- statics (common practice): a lap joint's fasteners carry the whole load from one plate to the other,
  so a layer with no load of its own is loaded through its fasteners, not by prescribed motions.
- the radial clearance of a pin in a hole is the hole's radius minus the pin's (common practice;
  ESDU and handbook lug charts quote it so, from memory).
- H. Huth, ASTM STP 927, 1986: the double-shear formula is for a middle plate between two outer
  plates (three plates); T. Swift, 1971, and M. B. Tate and S. J. Rosenfeld, NACA TN 1051, 1946, are
  single-shear formulas (as recalled in planar.core.fastener_flexibility, from memory).
- a figure that tells the truth (issue 18's requirement; common practice for drawings): a line drawn
  dashed in the legend is dashed on the part, and no legend covers an axis label.
"""
import re

import numpy as np
import pytest

import planar
from planar.core.errors import InputError, NameNotFoundError

from _joint_strips import lap as lapped


def _lap(n=2, size=2.0, units="N, mm, MPa"):
    """Two 20 mm strips of 2 mm lapped over 40 mm, the top clamped, the bottom pulled by 1 kN."""
    joint = lapped(((0.0, 100.0), (60.0, 160.0)), 20.0, 2.0, size, pull=1000.0 / (20.0 * 2.0), element="Q4",
                   units=units)
    xs = np.linspace(70.0, 90.0, n)
    joint.add_fasteners(planar.Fasteners(np.column_stack([xs, np.zeros(n)]), layers=("top", "bottom"),
                                         diameter=5.0, flexibility=3e-5, name="row"))
    return joint


@pytest.fixture(scope="module")
def lap():
    return planar.solve(_lap())["pull"]


def test_formula_name_and_shear_refused_when_the_fasteners_are_made():
    # Swift and Tate-Rosenfeld are single-shear formulas; Huth's double shear joins three plates (sources)
    kw = dict(diameter=5.0, modulus=71e3)
    with pytest.raises(NameNotFoundError, match="huth"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), flexibility="hut", **kw)
    with pytest.raises(InputError, match="single-shear"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b", "c"), flexibility="swift", shear="double", **kw)
    with pytest.raises(InputError, match="three layers"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), flexibility="huth", shear="double", **kw)
    planar.Fasteners([(0.0, 0.0)], layers=("a", "b", "c"), flexibility="huth", shear="double", **kw)


def test_layers_in_different_units_named_each():
    m = planar.rectangle_mesh(10.0, 2.0, 4, 2)
    a = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    b = planar.Model(m, planar.Isotropic(E=10.3e6, nu=0.33), thickness=0.08, units="lbf, in, psi")
    with pytest.raises(InputError, match=r"layer 'a' in 'N, mm, MPa'; layer 'b' in 'lbf, in, psi'"):
        planar.Joint({"a": a, "b": b})


def test_a_joint_result_given_to_the_report_names_the_fix(lap):
    from planar.post import stress_check_report

    with pytest.raises(InputError, match=r"result.layers\['top'\].*joints=result"):
        stress_check_report(lap)


def test_a_joint_layer_inputs_say_it_is_loaded_through_its_fasteners(lap):
    # statics: the top strip has no load of its own; the fasteners carry the whole 1 kN into it
    from planar.post.inputs import input_rows

    rows = dict(input_rows(lap.layers["top"].model, "pull"))
    assert "through its fasteners" in rows["loads, case 'pull'"]
    assert "prescribed" not in rows["loads, case 'pull'"]
    text = rows["fasteners 'row'"]
    assert "2 bolt(s), d = 5 mm" in text and "'top', 'bottom'" in text and "3e-05 mm/N" in text
    # a plain model with no load in a case and no prescribed motion is not said to be driven by one
    m = planar.Model(planar.rectangle_mesh(10.0, 2.0, 4, 2), planar.Isotropic(E=71e3, nu=0.33), thickness=1.0,
                     units="N, mm, MPa")
    m.add_support(planar.Fixed("left"))
    m.add_load(planar.Traction("right", tx=1.0), case="a")
    m.cases["empty"] = []
    assert dict(input_rows(m, "a"))["loads, case 'empty'"] == "none"


def test_contact_state_clearance_with_the_pins_radius_given():
    # the radial clearance of a 9.9 mm pin in a 10 mm hole is 0.1 mm (common practice)
    from planar.geometry import Circle, Plate, Refine, mesh

    p = Plate.rectangle(40.0, 60.0, corner=(-20.0, -40.0)).cut(Circle((0.0, 0.0), 10.0, name="hole"))
    m = mesh(p, size=6.0, element="T6", refine=[Refine("hole", size=2.0)])
    model = planar.Model(m, planar.Isotropic(E=205e3, nu=0.3), thickness=8.0, units="N, mm, MPa")
    model.add_pin(planar.Pin("hole", tie="contact", radius=9.9, hold="both"))
    model.add_support(planar.Roller((0.0, -40.0), fixed="x"))
    model.add_load(planar.Traction("bottom", ty=-10.0), case="pull")
    state = planar.solve(model)["pull"].contact_states["hole"]
    assert state.clearance == pytest.approx(0.1, rel=1e-6)


def test_plot_joint_legend_clear_of_the_x_label(lap):
    # a figure that tells the truth: the legend does not cover the axis label (source above)
    fig = planar.post.plot_joint(lap)
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    ax = fig.axes[0]
    label = ax.xaxis.label.get_window_extent(r)
    assert fig.legends, "the legend belongs to the figure, below the axes"
    leg = fig.legends[0].get_window_extent(r)
    assert leg.y1 <= label.y0 + 0.5


def test_dashed_outline_runs_on_along_a_refined_hole():
    # a dashed outline drawn as one short segment per element side starts the pattern afresh on each side,
    # so at a refined hole (sides shorter than a dash) it looked solid; the pattern now runs on (source above)
    from planar.geometry import Circle, Plate, Refine, mesh
    from planar.post._outline import Outline
    from planar.post.plots import plot_field

    p = Plate.rectangle(60.0, 30.0, corner=(0.0, 0.0)).cut(Circle((30.0, 15.0), 5.0, name="hole"))
    m = mesh(p, size=5.0, element="T6", refine=[Refine("hole", size=0.4)])
    o = Outline(m.nodes, m.cells)
    order, rev, loop = o.chain()
    assert np.unique(loop).size == 2                       # the outline and the hole
    ends = np.where(rev[:, None], o.ends[:, ::-1], o.ends)[order]
    same = loop[1:] == loop[:-1]
    assert np.array_equal(ends[:-1, 1][same], ends[1:, 0][same])   # each side starts where the last ended
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=100.0), case="pull")
    fig = plot_field(planar.solve(model)["pull"], "sigma_xx")
    fig.canvas.draw()
    dfm = next(c for c in fig.axes[0].collections if c.get_gid() == "deformed-outline")
    offsets = np.array([ls[0] for ls in dfm.get_linestyle()])
    assert len(dfm.get_segments()) == len(o) and np.unique(np.round(offsets, 6)).size > len(o) // 2


def test_model_picture_shows_regions_and_keeps_two_cases_labels_apart():
    # the picture of the model states every input it draws (issue 18): a region of its own thickness is
    # drawn and named with its thickness and material; two loads on one edge keep their values legible
    from planar.geometry import Circle, Plate, mesh
    from planar.post.picture import plot_model

    p = Plate.rectangle(200.0, 60.0, corner=(0.0, 0.0)).with_region(Circle((100.0, 30.0), 20.0), name="doubler")
    m = mesh(p, size=8.0, element="T3")
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    model.assign("doubler", material=planar.Isotropic(E=110e3, nu=0.31), thickness=4.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=50.0), case="tension")
    model.add_load(planar.Traction("right", ty=0.5), case="shear")
    fig = plot_model(model)
    fig.canvas.draw()
    arts = {a.get_gid(): a for ax in fig.axes for a in ax.get_children() if a.get_gid()}
    assert "region:doubler" in arts and "region-outline:doubler" in arts
    legend = " ".join(t.get_text() for leg in fig.legends for t in leg.get_texts())
    assert "region 'doubler': thickness 4 mm" in legend and "E = 110000 MPa" in legend
    labels = [a for ax in fig.axes for a in ax.get_children() if str(a.get_gid()).startswith("load-value:")]
    assert len(labels) == 2
    r = fig.canvas.get_renderer()
    boxes = [t.get_window_extent(r) for t in labels]
    assert not boxes[0].overlaps(boxes[1])
    assert any("along +y" in t.get_text() for t in labels)    # the shear arrows are too short to see


def test_model_picture_labels_of_close_pins_and_stacked_layers_do_not_overprint():
    # legible labels (issue 18: the picture a checker signs): two pins 12 mm apart, two straps of one extent
    from planar.geometry import Circle, Plate, Refine, mesh
    from planar.post.picture import plot_model

    p = Plate.rectangle(60.0, 30.0, corner=(0.0, 0.0))
    for name, x in (("a", 24.0), ("b", 36.0)):
        p = p.cut(Circle((x, 15.0), 3.0, name=name))
    m = mesh(p, size=4.0, element="T3", refine=[Refine(["a", "b"], size=1.0)])
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    for name in ("a", "b"):
        model.add_pin(planar.Pin(name, tie="rigid", hold="both"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    fig = plot_model(model)
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    pins = [a for a in fig.axes[0].texts if str(a.get_gid()).startswith("pin-label:")]
    assert len(pins) == 2 and not pins[0].get_window_extent(r).overlaps(pins[1].get_window_extent(r))
    legend = " ".join(t.get_text() for leg in fig.legends for t in leg.get_texts())
    assert "rigid tie, held, rotation free" in legend
    # a double-shear stack: the two straps share one extent; their names stand one above the other
    strap = planar.rectangle_mesh(40.0, 20.0, 8, 4)
    layers = {k: planar.Model(strap, planar.Isotropic(E=71e3, nu=0.33), thickness=1.0, units="N, mm, MPa")
              for k in ("front", "back")}
    layers["mid"] = planar.Model(planar.rectangle_mesh(60.0, 20.0, 12, 4, origin=(-10.0, 0.0)),
                                 planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    joint = planar.Joint(layers)
    fig = plot_model(joint)
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    names = {a.get_gid(): a.get_window_extent(r) for a in fig.axes[0].texts
             if str(a.get_gid()).startswith("layer-name:")}
    assert len(names) == 3 and not names["layer-name:front"].overlaps(names["layer-name:back"])


def test_report_of_a_layer_says_its_fasteners_have_no_modelled_hole(lap):
    # with no hole modelled, the stress near a fastener leaves out the hole's concentration (an open hole's
    # Kt is about 3: Kirsch, 1898, via Timoshenko and Goodier, sec. 35); the summary must not pass it off
    from planar.post import stress_check_report

    rep = stress_check_report(lap.layers["top"], joints=lap, picture=False, results=[], hot_spots=False)
    summary = next(s for s in rep.sections if s.title == "Summary")
    text = " ".join(" ".join(b.items) for b in summary.blocks if type(b).__name__ == "Notice")
    assert "'row' are tied to this layer with no hole modelled" in text


def test_bypass_sign_convention_stated_and_tension_positive(lap):
    # statics (free body, common practice): the clamped top strip carries past the first fastener (x = 70)
    # the load of the second, in tension; the table says how bypass is signed
    holes = {(h["layer"], h["index"]): h for h in lap.fasteners.holes}
    second = float(np.hypot(*holes[("top", 1)]["load"]))
    assert holes[("top", 0)]["bypass"] == pytest.approx(second, rel=1e-6) and second > 0
    assert "tension positive" in lap.table()


@pytest.mark.slow
def test_report_of_a_double_shear_layer_prints_whole_with_its_fastener_tables(tmp_path):
    # a double-shear splice of our own (two 3 mm straps on a 5 mm steel plate, two bolts, Huth's flexibility):
    # its middle layer's report printed by Chromium keeps rows and figures whole and numbers every page
    # (the print checks of tests/test_report_print.py); statics: the two bolts carry the whole 8 kN
    from planar.geometry import Circle, Plate, Refine, mesh
    from planar.post import stress_check_report, write_report
    from test_report_print import check_printed, check_words, print_pdf, read_pdf

    def plate(x0, x1, xs):
        p = Plate.rectangle(x1 - x0, 30.0, corner=(x0, 0.0))
        for i, x in enumerate(xs):
            p = p.cut(Circle((x, 15.0), 3.0, name=f"h{i}"))
        return mesh(p, size=6.0, element="T6", refine=[Refine([f"h{i}" for i in range(len(xs))], size=1.5)])

    steel, al = planar.Isotropic(E=205e3, nu=0.3), planar.Isotropic(E=71e3, nu=0.33)
    mid = planar.Model(plate(0.0, 80.0, (50.0, 65.0)), steel, thickness=5.0, units="N, mm, MPa")
    ms = plate(40.0, 120.0, (50.0, 65.0))
    straps = {k: planar.Model(ms, al, thickness=3.0, units="N, mm, MPa") for k in ("front", "back")}
    mid.add_support(planar.Fixed("left"))
    for s in straps.values():
        s.add_load(planar.Traction("right", tx=4000.0 / (30.0 * 3.0)), case="ultimate")
    joint = planar.Joint({"front": straps["front"], "plate": mid, "back": straps["back"]})
    joint.add_fasteners(planar.Fasteners([(50.0, 15.0), (65.0, 15.0)], layers=("front", "plate", "back"),
                                         diameter=6.0, flexibility="huth", modulus=205e3, shear="double",
                                         tie="rigid", holes=[["h0", "h1"]] * 3, name="bolts"))
    jr = planar.solve(joint)["ultimate"]
    bearing = sum(h["bearing"] for h in jr.fasteners.holes if h["layer"] == "plate")
    assert bearing == pytest.approx(8000.0, rel=0.05)      # nearly collinear: the bearing loads add up to 8 kN
    layer = jr.layers["plate"]
    report = stress_check_report(layer, joints=jr, title="Splice SP-3, plate", revision="B", prepared_by="A. Trial")
    pages = read_pdf(print_pdf(write_report(tmp_path / "splice.html", report), tmp_path))
    check_printed(report, pages)
    whole = check_words(report, pages, layer.model)
    assert "loaded through its fasteners" in whole and "fasteners 'bolts'" in whole
    assert "tension positive" in whole and "bearing stress P/(d t)" in whole
    assert not re.search(r"\bnan\b|\binf\b", whole, re.IGNORECASE)


def test_results_figure_caption_says_what_the_picture_draws(lap):
    # the contour is drawn on the part as made with the deformed outline dashed over it (the picture's own
    # note); the caption said "on the deformed shape" (a picture and its caption must agree, issue 18)
    from planar.post import stress_check_report
    from planar.post.report import Figure

    rep = stress_check_report(lap.layers["bottom"], picture=False, hot_spots=False)
    res = next(s for s in rep.sections if s.title == "Results")
    caption = next(b.caption for b in res.blocks if isinstance(b, Figure))
    assert "on the part as made" in caption and "deformed outline dashed" in caption
    assert "on the deformed shape" not in caption


def test_plot_joint_refuses_a_scale_that_would_turn_the_arrows_round(lap):
    # a negative arrow scale drew every fastener load the wrong way round, with no complaint
    for bad in (-1.0, 0.0, float("nan")):
        with pytest.raises(InputError, match="scale"):
            planar.post.plot_joint(lap, scale=bad)
    with pytest.raises(InputError, match="width"):
        planar.post.plot_joint(lap, width=0.0)


def test_a_translucent_layer_is_filled_once_holes_left_open():
    # a layer drawn as many translucent cells showed its mesh through the fill; one path covers it once,
    # with a loop for the outline and one for each hole (the part's area: the plate less the hole)
    from matplotlib.patches import PathPatch

    from planar.geometry import Circle, Plate, mesh
    from planar.post.picture import plot_model

    p = Plate.rectangle(40.0, 20.0).cut(Circle((20.0, 10.0), 4.0, name="hole"))
    a = planar.Model(mesh(p, size=2.0, element="T3"), planar.Isotropic(E=71e3, nu=0.33), thickness=1.0,
                     units="N, mm, MPa")
    b = planar.Model(planar.rectangle_mesh(40.0, 20.0, 8, 4, origin=(30.0, 0.0)), planar.Isotropic(E=71e3, nu=0.33),
                     thickness=1.0, units="N, mm, MPa")
    fig = plot_model(planar.Joint({"a": a, "b": b}))
    fill = next(x for x in fig.axes[0].patches if x.get_gid() == "part:a")
    assert isinstance(fill, PathPatch)
    path = fill.get_path()
    assert sum(c == path.CLOSEPOLY for c in path.codes) == 2
    # drawn, the hole stays open: its centre keeps the background, a point of the plate is tinted
    fig.canvas.draw()
    rgba = np.asarray(fig.canvas.buffer_rgba())
    h = rgba.shape[0]
    px = lambda x, y: rgba[h - 1 - int(round(y)), int(round(x)), :3].astype(int)  # noqa: E731
    inside_hole = fig.axes[0].transData.transform((20.0, 10.0))
    on_plate = fig.axes[0].transData.transform((20.0, 3.0))
    assert tuple(px(*inside_hole)) == (255, 255, 255) and tuple(px(*on_plate)) != (255, 255, 255)


def test_holes_listed_out_of_order_are_refused():
    # a fastener must sit in its own hole (common practice); holes given in the wrong order tied each
    # fastener to its neighbour's hole with no complaint
    from planar.geometry import Circle, Plate, Refine, mesh

    p = Plate.rectangle(50.0, 40.0).cut(Circle((15.0, 12.0), 2.5, name="b1"), Circle((15.0, 28.0), 2.5, name="b2"))
    lug = planar.Model(mesh(p, size=4.0, element="T3", refine=[Refine(["b1", "b2"], size=1.0)]),
                       planar.Isotropic(E=72e3, nu=0.33), thickness=4.0, units="N, mm, MPa")
    plate = planar.Model(planar.rectangle_mesh(40.0, 60.0, 10, 15, origin=(-15.0, -10.0)),
                         planar.Isotropic(E=72e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    joint = planar.Joint({"lug": lug, "plate": plate})
    pts = [(15.0, 12.0), (15.0, 28.0)]
    with pytest.raises(InputError, match="fastener 1 at \\(15, 12\\) is not inside its hole 'b2'"):
        joint.add_fasteners(planar.Fasteners(pts, layers=("lug", "plate"), diameter=5.0, flexibility=2e-5,
                                             holes={"lug": ["b2", "b1"]}, name="bolts"))
    joint.add_fasteners(planar.Fasteners(pts, layers=("lug", "plate"), diameter=5.0, flexibility=2e-5,
                                         holes={"lug": ["b1", "b2"]}, name="bolts"))


def test_prescribed_motion_drawn_outside_the_part_its_label_clear_of_the_arrow():
    # an edge moved outwards by ux = 0.05 mm: the arrow drawn into the part hid under its own label
    from planar.post.picture import plot_model

    model = planar.Model(planar.rectangle_mesh(100.0, 50.0, 10, 5), planar.Isotropic(E=70e3, nu=0.3),
                         thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Symmetry("left"))
    model.add_support(planar.Symmetry("bottom"))
    model.add_support(planar.Prescribed("right", ux=0.05))
    fig = plot_model(model)
    fig.canvas.draw()
    kids = fig.axes[0].get_children()
    arrow = next(a for a in kids if a.get_gid() == "support:prescribed:right")
    label = next(a for a in kids if a.get_gid() == "support:prescribed-value:right")
    (x0, _), (x1, _) = arrow.xyann, arrow.xy
    assert min(x0, x1) >= 100.0 - 1e-9 and x1 > x0          # outside the part, pointing along +x
    r = fig.canvas.get_renderer()
    head = fig.axes[0].transData.transform(arrow.xy)
    assert label.get_text() == "ux = 0.05 mm" and label.get_window_extent(r).x0 >= head[0] - 0.5


def test_report_of_a_layer_alone_has_its_joint_tables(lap):
    # issue 18: stress_check_report(result) with nothing else gives the joint tables when the model has them
    from planar.post import stress_check_report

    rep = stress_check_report(lap.layers["top"], picture=False, results=[], hot_spots=False)
    assert "Joints and fasteners" in [s.title for s in rep.sections]
    rep = stress_check_report(lap.layers["top"], picture=False, results=[], hot_spots=False, omit=["joints"])
    assert "Joints and fasteners" not in [s.title for s in rep.sections]
