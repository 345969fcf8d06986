"""Defects found by trying the feature-check tools (zones, hot spots, edge stresses, units) on parts
of one's own, each with the check that would have caught it."""
from __future__ import annotations

import math

import numpy as np
import pytest

import planar
from planar.geometry import Circle, Ellipse, Plate


def test_round_bounding_box_is_exact_so_a_ring_can_be_quartered():
    # a thick ring (Lame's cylinder) quartered about its centre: the box of a circle is its centre
    # plus and minus the radius (geometry, from memory); a sampled box was short by the chord sag on
    # one side and put the default symmetry line off the centre, refusing a symmetric part
    assert Circle((1.0, 2.0), 3.0).bounding_box() == pytest.approx((-2.0, -1.0, 4.0, 5.0), abs=1e-12)
    assert Circle((0.0, 0.0), 40.0).bounding_box() == pytest.approx((-40.0, -40.0, 40.0, 40.0), abs=1e-12)
    # a rotated ellipse's box: half-widths sqrt(a^2 cos^2 + b^2 sin^2) and sqrt(a^2 sin^2 + b^2 cos^2)
    # (analytic geometry, from memory); angle in degrees
    hx, hy = math.sqrt((100.0 + 25.0) / 2), math.sqrt((100.0 + 25.0) / 2)
    assert Ellipse((0.0, 0.0), 10.0, 5.0, angle=45.0).bounding_box() == pytest.approx((-hx, -hy, hx, hy), rel=1e-9)
    ring = Plate(Circle((0.0, 0.0), 40.0, name="outer")).cut(Circle((0.0, 0.0), 20.0, name="bore")).quarter()
    assert sorted(ring.names()["edges"]) == ["bore", "outer", "symmetry_x", "symmetry_y"]


def _bracket(size=6.0):
    """An L bracket (mm) bolted by two clamped 8 mm holes in its upright, bent by a 1 kN tip load."""
    from planar.geometry import Polygon, Refine, mesh

    poly = Polygon([(0, 0), (120, 0), (120, 20), (20, 20), (20, 100), (0, 100)],
                   names=["bottom", "tip", "arm_top", "inner", "top", "back"])
    plate = Plate(poly).fillet((20, 20), radius=6.0, name="fillet").cut(
        Circle((10, 50), 4.0, name="bolt_low"), Circle((10, 85), 4.0, name="bolt_high"))
    m = mesh(plate, size=size, refine=[Refine("fillet", size=1.0), Refine("bolt_low", size=1.5),
                                        Refine("bolt_high", size=1.5)])
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=5.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("bolt_low"))
    model.add_support(planar.Fixed("bolt_high"))
    model.add_load(planar.Traction("tip", ty=-1000.0 / (20 * 5.0)), case="tip")
    return planar.solve(model)["tip"]


def test_hot_spot_on_a_clamped_hole_is_flagged_when_the_part_peaks_elsewhere():
    # the clamped bolt hole's spots are made by the clamp (a rigid hole edge; common practice: read
    # stresses away from idealised supports, St Venant's principle). They were not flagged when a
    # fillet elsewhere was higher, because the hole had no value of its own away from the clamp and was
    # set against the whole part
    from planar.post import hot_spots

    r = _bracket()
    hs = hot_spots(r)
    assert hs.governing is not None and hs.governing.feature == "fillet"
    on_hole = [s for s in hs.spots if s.feature.startswith("bolt_")]
    assert on_hole and all(s.flagged and "clamp on edge 'bolt_" in s.next_to for s in on_hole)
    assert not any(s.flagged for s in hs.spots if s.feature == "fillet")
    # beam theory (Euler-Bernoulli; Timoshenko, Strength of Materials, 1955): M / Z at the fillet's
    # tangent x = 26 is 1000 x 94 / (5 x 20^2 / 6) = 282 MPa; the fillet of the re-entrant corner raises it
    assert 1.3 * 282.0 < hs.governing.value < 2.5 * 282.0


def test_peak_in_a_region_reads_that_regions_own_side_of_an_interface():
    # a 10 x 4 in strap, 0.25 in thick, with a 0.5 in thick doubler over its first 3 in, pulled by
    # 10 kip: far from the step the stress is F / (W t) (statics), 5 ksi in the doubler and 10 ksi in
    # the strap. The doubler's peak read the strap's side of the shared interface nodes (10.8 ksi)
    from planar.geometry import Rectangle, mesh

    plate = Plate.rectangle(10.0, 4.0).with_region(Rectangle(3.0, 4.0, corner=(0.0, 0.0)), name="doubler")
    m = mesh(plate, size=0.4)
    model = planar.Model(m, planar.Isotropic(10.3e3, 0.33), thickness=0.25, units="kip-in-ksi")
    model.assign("doubler", thickness=0.5)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller((0.0, 0.0), fixed="y"))
    model.add_load(planar.Traction("right", tx=10.0 / (4.0 * 0.25)), case="pull")
    r = planar.solve(model)["pull"]
    doubler = r.max("sigma_xx", where="doubler")
    strap = r.max("sigma_xx", where="plate")
    # the step's corner raises the doubler's own stress locally, but nowhere near the strap's 10 ksi
    assert 5.0 <= doubler.value < 7.5, doubler
    assert strap.value >= 10.0
    assert r.max("sigma_xx").value == pytest.approx(strap.value)  # everywhere: the critical side, as before
    assert r.min("sigma_xx", where="doubler").value > 2.0
    # an envelope read in the doubler reads the doubler's side too
    from planar.post import envelope

    env = envelope({"pull": r}, "sigma_xx", where="doubler")
    assert env.peak().value == pytest.approx(doubler.value, rel=1e-12)


def test_sweep_text_table_states_the_units_of_its_peaks():
    # units are stated in every output: the printed sweep table had "hole" with no unit while its plot
    # and JSON had MPa
    from planar.studies import example_strap, sweep
    from planar.studies.outputs import Peak

    t = sweep(example_strap, grid={"width": [20.0, 40.0]}, outputs={"peak": Peak("sigma_xx", where="right")},
              workers=0)
    head, *rows = t.format().splitlines()
    assert "peak [MPa]" in head.split("  ") or "peak [MPa]" in head
    # 2000 N over 2 mm x width, uniform (common practice)
    assert t.column("peak") == pytest.approx([50.0, 25.0], rel=1e-9)


def _row_of_holes():
    """A 300 x 100 strip with three 10 mm holes of one name 'rivet', in remote tension 100 MPa."""
    from planar.geometry import Refine, mesh

    p = Plate.rectangle(300.0, 100.0).cut(Circle((0, 0), 5.0, name="rivet"), at=[(75, 50), (150, 50), (225, 50)])
    m = mesh(p, size=8.0, refine=[Refine("rivet", size=0.8)])
    model = planar.Model(m, planar.Isotropic(200e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller((0.0, 0.0), fixed="y"))
    model.add_load(planar.Traction("right", tx=100.0), case="t")
    return planar.solve(model)["t"]


def test_edge_of_several_holes_with_one_centre_warns_and_plots_each_piece(tmp_path):
    # a row of holes sharing a name is an edge of three closed pieces; a centre given for one hole made
    # the other holes' angles silently about a point that is not theirs, and the plot drew the three
    # pieces in one style with nothing to tell them apart
    from planar.post import edge_stresses, plot_edge_stresses

    r = _row_of_holes()
    es = edge_stresses(r, "rivet")
    assert es.n_pieces == 3 and all(es.closed) and not es.warnings
    # each hole's hoop peak near 3 S (Kirsch 1898; Timoshenko and Goodier 1970, art. 35), raised a little
    # by the strip's width (d/W = 0.1) and the neighbours
    for k in range(3):
        assert 290.0 < es.sigma_t[es.piece == k].max() < 330.0
    with pytest.warns(planar.PlanarWarning, match="edge-centre"):
        es1 = edge_stresses(r, "rivet", centre=(150.0, 50.0))
    assert [w.code for w in es1.warnings] == ["edge-centre"]
    fig = plot_edge_stresses(es, path=tmp_path / "rivet.png")
    labels = [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    assert sum(lab.startswith("piece ") for lab in labels) == 3
    styles = {ln.get_linestyle() for ln in fig.axes[0].get_lines() if len(ln.get_xdata()) > 2}
    assert len(styles) == 3  # one line style per piece


def test_hot_spot_beside_a_point_force_never_governs():
    # a cantilever 100 x 20 in, clamped at its left end, pulled (2 x 5 psi on the end) and bent by a
    # point force at its top free corner: the combined case's only spot away from the clamp sat on the
    # point force itself (14.9 psi at (100, 20)) and was reported as governing, because the edge reads
    # more (about 15.8 psi, beam theory, near the clamp) elsewhere
    from planar.post import combine, hot_spots

    m = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q9")
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="lbf-in-psi")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.PointForce("corner_11", fy=-10.0), case="tip")
    model.add_load(planar.Traction("right", tx=5.0), case="pull")
    res = planar.solve(model)
    combo = combine(res, {"tip": 1.0, "pull": 2.0}, name="c")
    hs = hot_spots(combo)
    at_force = [s for s in hs.spots if math.hypot(s.location[0] - 100.0, s.location[1] - 20.0) < 10.0]
    assert at_force and all(s.flagged and "point force at point 'corner_11'" in s.next_to for s in at_force)
    assert hs.governing is None or math.hypot(hs.governing.location[0] - 100.0, hs.governing.location[1] - 20.0) > 10.0
    # the peak away from both reads beam theory (Euler-Bernoulli): 2 x 5 + M c / I at x = 22.5:
    # 10 + 10 x 77.5 x 10 / (2 x 20^3 / 12) = 15.8 psi
    away = combo.max("von_mises", where=planar.Away())
    assert away.value == pytest.approx(10.0 + 10.0 * 77.5 * 10.0 / (2.0 * 20.0**3 / 12.0), rel=0.02)


def test_peak_read_on_a_clamped_hole_carries_its_note():
    # Result.max(where="bolt_low") on the clamped hole gave 405 MPa with no note, because the zone lies
    # wholly next to its clamp and was set against the whole part, whose fillet reads more. Against the
    # part round the hole (within the hole's size) the clamp's peak stands out and is noted
    r = _bracket()
    for hole in ("bolt_low", "bolt_high"):
        assert r.max("von_mises", where=hole).note.startswith(f"next to the clamp on edge '{hole}'")
    assert r.max("von_mises", where="fillet").note == ""


def test_clamped_edge_of_a_uniform_strap_is_not_noted():
    # nu = 0: a strap clamped at one end and pulled at the other carries sigma_xx = F / A everywhere,
    # clamp included (closed form, common practice): its clamped edge's peak is the field's own level
    m = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(70e3, 0.0), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=50.0), case="pull")
    r = planar.solve(model)["pull"]
    peak = r.max("sigma_xx", where="left")
    assert peak.value == pytest.approx(50.0, rel=1e-9) and peak.note == ""


def test_outputs_without_units_say_so():
    # README: without units= outputs say "units not stated"; the hot-spot table, the edge table, Kt and the
    # margin printed bare numbers with no word on units (the envelope and plots already said so)
    from planar.post import edge_stresses, hot_spots, kt, margin_of_safety

    m = planar.rectangle_mesh(10.0, 2.0, 8, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(1e4, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=1.0), case="a")
    r = planar.solve(model)["a"]
    for text in (hot_spots(r).table(), edge_stresses(r, "top").table(), str(kt(r, 1.0, where="top")),
                 str(margin_of_safety(r, allowable=10.0, where=planar.Away()))):
        assert "units not stated" in text.lower(), text
    # with units stated, the words are not there and the units are
    model2 = planar.Model(m, planar.Isotropic(1e4, 0.3), units="N, mm, MPa")
    model2.add_support(planar.Fixed("left"))
    model2.add_load(planar.Traction("right", ty=1.0), case="a")
    r2 = planar.solve(model2)["a"]
    for text in (hot_spots(r2).table(), edge_stresses(r2, "top").table(), str(kt(r2, 1.0, where="top"))):
        assert "units not stated" not in text.lower() and "MPa" in text


def test_edge_peak_prints_no_nan():
    # never a NaN in output text: the peak along a straight edge printed "theta=nan"
    from planar.post import edge_stresses

    m = planar.rectangle_mesh(10.0, 2.0, 8, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(1e4, 0.3), units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=50.0), case="a")
    pk = edge_stresses(planar.solve(model)["a"], "top").peak()
    assert "nan" not in repr(pk).lower() and "no centre" in repr(pk)
    assert pk.value == pytest.approx(50.0, rel=1e-9)  # uniform tension, F / A (common practice)
    assert math.isnan(pk.theta)  # the number itself stays a float, as documented


def test_printing_a_mesh_gives_a_summary():
    # print(mesh) of a gmsh part printed every coordinate and connectivity row (thousands of lines)
    m = planar.rectangle_mesh(200.0, 40.0, 100, 20, "Q8")
    text = repr(m)
    assert text.startswith(f"Mesh({m.n_nodes} nodes; cells 2000 Q8;") and len(text) < 300
    assert "'left'" in text and "'corner_00'" in text and "'plate'" in text


def test_margin_of_a_given_number_refuses_where():
    # where= was silently ignored for a peak given as a number: the user believed the margin was the
    # feature's. A margin from a number is still allowable / (FS x peak) - 1 (common practice)
    from planar.post import margin_of_safety

    assert margin_of_safety(100.0, allowable=200.0).margin == pytest.approx(1.0)
    with pytest.raises(planar.InputError, match="where="):
        margin_of_safety(100.0, allowable=200.0, where="top")


def test_edge_with_a_corner_keeps_each_sides_frame():
    # an edge set of the top and the right end of a strip in uniform tension sigma_xx = 50 MPa (F / A,
    # common practice): at the corner the top reads sigma_t = 50, sigma_n = 0 and the loaded end
    # sigma_t = 0, sigma_n = 50. The corner node was read in the bisector's frame (25, 25, shear 25),
    # which is neither side's stress, and a closed outline's peak moved off its corner
    from planar.post import edge_stresses

    base = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")
    sets = dict(base.edge_sets)
    sets["top_and_end"] = np.vstack([np.asarray(base.edge_sets["top"]), np.asarray(base.edge_sets["right"])])
    m = planar.Mesh(base.nodes, base.cells, edge_sets=sets, node_sets=dict(base.node_sets))
    model = planar.Model(m, planar.Isotropic(70e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=50.0), case="pull")
    es = edge_stresses(planar.solve(model)["pull"], "top_and_end")
    at = np.flatnonzero(np.hypot(es.points[:, 0] - 100.0, es.points[:, 1] - 20.0) < 1e-9)
    assert at.size == 2  # once for each side
    got = sorted((round(float(es.sigma_t[i]), 6), round(float(es.sigma_n[i]), 6)) for i in at)
    assert got == [(0.0, 50.0), (50.0, 0.0)]
    assert np.allclose(es.tau_nt, 0.0, atol=1e-9)
    assert es.s[at[0]] == pytest.approx(es.s[at[1]])  # the same place along the edge


def _two_case_strap(width: float = 20.0):
    """A strap with two load cases: 'pull' (2000 N) and 'half' (1000 N) on its right end."""
    m = planar.rectangle_mesh(100.0, width, 4, 2, "Q8")
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=2000.0 / (width * 2.0)), case="pull")
    model.add_load(planar.Traction("right", tx=1000.0 / (width * 2.0)), case="half")
    return planar.solve(model)


def test_sweep_text_output_names_its_load_case():
    # a sweep over a model with several load cases could not be read from the command line: the text
    # form had no way to name a case, and the refusal said "case=..." which the command line cannot take
    from planar.studies import sweep
    from planar.studies.outputs import Peak, parse_output

    assert parse_output("max:von_mises on right in pull") == Peak("von_mises", case="pull", where="right")
    t = sweep(_two_case_strap, grid={"width": [20.0, 40.0]},
              outputs={"pull": "max:sigma_xx on right in pull", "half": "max:sigma_xx in half"}, workers=0)
    # F / (w t), uniform (common practice)
    assert t.column("pull") == pytest.approx([50.0, 25.0], rel=1e-9)
    assert t.column("half") == pytest.approx([25.0, 12.5], rel=1e-9)
    bad = sweep(_two_case_strap, grid={"width": [20.0]}, outputs={"x": "max:sigma_xx"}, workers=0)
    assert "in CASE" in bad.records[0]["error"]["message"]


def test_hot_spots_of_the_hoop_stress_about_a_centre(tmp_path):
    # polar stresses are fields like any other, but hot_spots could not take them (no centre). A thick
    # ring a = 20, b = 40 under internal pressure p = 100 MPa: Lame's hoop stress peaks at the bore,
    # p a^2 / (b^2 - a^2) (1 + b^2 / a^2) = 166.7 MPa (G. Lame 1852; Timoshenko and Goodier, Theory of
    # Elasticity, 1970, art. 28)
    from planar.geometry import mesh
    from planar.post import hot_spots, plot_hot_spots

    ring = Plate(Circle((0.0, 0.0), 40.0, name="outer")).cut(Circle((0.0, 0.0), 20.0, name="bore")).quarter()
    model = planar.Model(mesh(ring, size=2.5), planar.Isotropic(200e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Symmetry("symmetry_x"))
    model.add_support(planar.Symmetry("symmetry_y"))
    model.add_load(planar.Pressure("bore", 100.0), case="p")
    r = planar.solve(model)["p"]
    hs = hot_spots(r, "sigma_theta", centre=(0.0, 0.0), allowable=300.0)
    assert hs.governing is not None and hs.governing.feature == "bore"
    assert hs.governing.value == pytest.approx(100.0 * 400.0 / 1200.0 * (1.0 + 1600.0 / 400.0), rel=0.01)
    assert "about (0, 0)" in hs.table() and hs.as_dict()["centre"] == [0.0, 0.0]
    plot_hot_spots(hs, tmp_path / "hoop.png")
    assert (tmp_path / "hoop.png").read_bytes()[:4] == b"\x89PNG"
    # Kt and margins read the hoop stress too
    from planar.post import kt, margin_of_safety

    assert kt(r, 100.0, field="sigma_theta", centre=(0.0, 0.0), where="bore").Kt == pytest.approx(
        hs.governing.value / 100.0, rel=1e-9)
    ms = margin_of_safety(r, allowable=300.0, field="sigma_theta", centre=(0.0, 0.0), where="bore")
    assert ms.margin == pytest.approx(300.0 / hs.governing.value - 1.0, rel=1e-9)
    # and a radial cut through the wall reads Lame's hoop and radial stresses
    from planar.post import path_stresses

    cut = path_stresses(r, (20.0, 0.0), (40.0, 0.0), fields=("sigma_theta", "sigma_r"), centre=(0.0, 0.0),
                        n_points=5)
    rad = np.linspace(20.0, 40.0, 5)
    k = 100.0 * 400.0 / 1200.0
    assert cut.values["sigma_theta"] == pytest.approx(k * (1 + 1600.0 / rad**2), rel=0.01)
    assert cut.values["sigma_r"] == pytest.approx(k * (1 - 1600.0 / rad**2), abs=1.0)


def test_show_notes_a_units_override_that_differs_from_the_file(tmp_path, capsys):
    # a file written in kip-in-ksi drawn with --units "N, mm, MPa" was relabelled silently (the numbers
    # stay kip and inch ones)
    from planar.cli import main

    m = planar.rectangle_mesh(10.0, 2.0, 4, 2, "Q8")
    model = planar.Model(m, planar.Isotropic(10.3e3, 0.33), thickness=0.25, units="kip-in-ksi")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    path = tmp_path / "kip.vtu"
    planar.write_vtu(path, planar.solve(model)["pull"])
    assert main(["show", str(path), "--units", "N, mm, MPa", "--png", str(tmp_path / "a.png")]) == 0
    err = capsys.readouterr().err
    assert "the file states kip, in, ksi" in err and "N, mm, MPa" in err
    assert main(["show", str(path), "--units", "kip-in-ksi", "--png", str(tmp_path / "b.png")]) == 0
    assert "the file states" not in capsys.readouterr().err


def test_smallest_von_mises_next_to_a_clamp_is_not_called_a_peak():
    # the least stressed point of a clamped cantilever (von Mises on the neutral axis at the clamp) was
    # noted "a peak there is made by the idealisation", in Result.min and in every envelope summary: a
    # false alarm, as a measure that is never negative has no compressive peak
    from planar.post import envelope

    m = planar.rectangle_mesh(10.0, 2.0, 8, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(1e4, 0.3), units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=1.0), case="a")
    res = planar.solve(model)
    r = res["a"]
    assert r.min("von_mises").note == ""
    text = str(envelope(res, "von_mises"))
    assert "the min sits" not in text and "the max sits next to the clamp" in text
    # a signed field's most compressive value at the clamp is still noted (the clamp's corner)
    assert r.min("sigma_xx").note.startswith("next to the clamp on edge 'left'")


def test_half_model_hole_reads_theta_from_minus_90_to_90():
    # the hole of a half model kept on x >= 0 read theta from 270 to 450 degrees; an engineer plots it
    # from -90 to 90. Kirsch (1898; Timoshenko and Goodier 1970, art. 35) under tension S along y:
    # sigma_t / S = 1 + 2 cos 2 theta, 3 S at theta = 0
    from planar.geometry import Refine, mesh
    from planar.post import edge_stresses

    p = Plate.rectangle(200.0, 200.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 5.0, name="hole")).half("x")
    m = mesh(p, size=10.0, refine=[Refine("hole", size=0.6)])
    model = planar.Model(m, planar.Isotropic(200e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Symmetry("symmetry_x"))
    model.add_support(planar.Roller((0.0, -100.0), fixed="y"))
    model.add_load(planar.Traction("top", ty=100.0), case="t")
    model.add_load(planar.Traction("bottom", ty=-100.0), case="t")
    es = edge_stresses(planar.solve(model)["t"], "hole")
    assert es.theta[0] == pytest.approx(-90.0, abs=1e-6) and es.theta[-1] == pytest.approx(90.0, abs=1e-6)
    assert np.all(np.diff(es.theta) > 0)
    exact = 100.0 * (1.0 + 2.0 * np.cos(2.0 * np.radians(es.theta)))
    assert np.abs(es.sigma_t - exact).max() < 0.02 * 300.0  # finite width d/W = 0.05 and the mesh
    assert es.peak().theta == pytest.approx(0.0, abs=7.0)  # within one element side (0.6 / 5 rad)
