"""Peaks read on a feature (where=) everywhere a peak is taken: zones, extremes, Kt, margins, envelopes,
combinations, paths, sweeps' outputs and convergence studies, and the note a peak carries when it sits
next to an idealised support or concentrated load.

The main part is a cantilever 100 x 20 x 2 mm clamped on the left with an end shear on the right. At
the clamp corner the stress is singular (a peak made by the idealisation); a few depths from the clamp
and from the loaded end the bending stress is the closed form sigma_xx = M c / I = 6 q (L - x) / H
at the top and bottom fibres (q the end traction, H the depth, t the thickness cancels), with S.
Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 21 (cantilever loaded at
its end): the exact elasticity field there is the same linear bending stress.
"""
from __future__ import annotations

import json
import pickle
import warnings

import numpy as np
import pytest

import planar
from planar.core.errors import DiscretisationWarning, InputError, NameNotFoundError
from planar.core.mesh import Mesh
from planar.core.zones import (Away, InBox, InCircle, InRegion, Near, OnEdge, as_zone, idealisations,
                               near_idealised)
from planar.post.checks import kt, margin_of_safety, path_stresses
from planar.post.combine import combine, envelope
from planar.post.convergence import convergence_study
from planar.studies import ConcentrationFactor, Peak, SafetyMargin, parse_output, sweep

L, H, T, Q = 100.0, 20.0, 2.0, 1.0  # mm, mm, mm, MPa (end shear traction)


def bending(x: float, q: float = Q) -> float:
    """Fibre stress of the end-loaded cantilever, M c / I = q H t (L - x) (H / 2) / (t H^3 / 12)
    (Timoshenko and Goodier 1970, art. 21)."""
    return 6.0 * q * (L - x) / H


def cantilever_mesh(nx: int = 40, ny: int = 8, regions: bool = False):
    mesh = planar.rectangle_mesh(L, H, nx, ny, "Q8")
    if regions:
        cen = mesh.nodes[mesh.cells["Q8"]].mean(axis=1)
        mesh = Mesh(mesh.nodes, mesh.cells, mesh.edge_sets, mesh.node_sets,
                    regions={"outer": {"Q8": np.flatnonzero(cen[:, 0] > L / 2)}})
    return mesh


def cantilever_model(mesh):
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=T, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-Q), case="down")
    model.add_load(planar.Traction("right", ty=0.5 * Q), case="up")
    return model


def cantilever_point(depth_scale: float = 1.0):
    """A sweep's function: the cantilever's "down" case (depth_scale only changes the load)."""
    model = planar.Model(cantilever_mesh(regions=True), planar.Isotropic(70e3, 0.33), thickness=T,
                         units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-Q * float(depth_scale)), case="down")
    return planar.solve(model)["down"]


@pytest.fixture(scope="module")
def cases():
    return planar.solve(cantilever_model(cantilever_mesh(regions=True)))


@pytest.fixture(scope="module")
def down(cases):
    return cases["down"]


CLAMP = "next to the clamp on edge 'left'"


# ---------------------------------------------------------------------------- Result.max / min
def test_unlimited_peak_sits_at_the_clamp_and_says_so(down):
    peak = down.max("sigma_xx")
    assert peak.location == (0.0, H)  # the clamp's top corner: singular
    assert peak.where == "everywhere"
    assert peak.note.startswith(CLAMP)
    assert peak.value > 1.2 * bending(0.0)  # above the beam's value at the clamp: the corner's own


def test_away_from_the_clamp_the_peak_is_the_beams(down):
    peak = down.max("sigma_xx", where=Away(40.0))
    x, y = peak.location
    assert 40.0 < x <= 42.5 and y == H  # the first node more than 40 mm from the clamp, top fibre
    assert peak.value == pytest.approx(bending(x), rel=2e-3)  # Timoshenko and Goodier art. 21
    assert peak.note == ""
    assert peak.where == "at least 40 from supports and concentrated loads"
    low = down.min("sigma_xx", where=Away(40.0))
    assert low.location[1] == 0.0 and low.value == pytest.approx(-bending(low.location[0]), rel=2e-3)
    assert low.note == ""


def test_away_default_keeps_clear_by_the_clamps_own_size(down):
    peak = down.max("sigma_xx", where=Away())
    x = peak.location[0]
    assert H <= x <= H + 2.5  # the clamped edge is 20 mm long (St Venant: a few depths, common practice)
    assert peak.value == pytest.approx(bending(x), rel=2e-3)
    assert peak.note == ""
    assert "away from supports and concentrated loads" in Away().describe()
    assert repr(Away()) == "Away()" and repr(Away(5.0, loads=False)) == "Away(5, loads=False)"


def test_smallest_value_at_the_clamp_is_noted_with_its_sign(down):
    low = down.min("sigma_xx")
    assert low.location == (0.0, 0.0)
    assert low.note.startswith(CLAMP)
    assert "smallest value away from supports and concentrated loads is -" in low.note


# ---------------------------------------------------------------------------- envelopes and combinations
def test_envelope_peak_at_the_clamp_is_noted(cases):
    env = envelope(cases, "sigma_xx")
    hi, lo = env.peak(), env.lowest()
    assert hi.case == "down" and hi.location == (0.0, H) and hi.note.startswith(CLAMP)
    assert lo.case == "down" and lo.location == (0.0, 0.0) and lo.note.startswith(CLAMP)
    assert hi.where == "everywhere"
    value, location, node, case = hi  # still unpacks as four
    again = pickle.loads(pickle.dumps(hi))
    assert again == hi and again.note == hi.note and again.where == hi.where
    assert value == hi.value and case == "down"
    text = env.summary()
    assert "CAUTION: the max sits next to the clamp on edge 'left'" in text


def test_envelope_with_where_reads_the_beam(cases):
    env = envelope(cases, "sigma_xx", where=Away(40.0))
    hi, lo = env.peak(), env.lowest()
    assert hi.case == "down" and lo.case == "down"  # the larger of the two end loads governs
    assert hi.value == pytest.approx(bending(hi.location[0]), rel=2e-3)  # Timoshenko and Goodier art. 21
    assert lo.value == pytest.approx(-bending(lo.location[0]), rel=2e-3)
    assert hi.note == lo.note == ""
    assert hi.where == "at least 40 from supports and concentrated loads"
    assert "sigma_xx at least 40 from supports" in env.summary() and "CAUTION" not in env.summary()
    # the envelope keeps every node; only its peaks are limited
    assert np.nanmax(env.max) > hi.value
    # a region by name: the outer half, x >= 50
    outer = envelope(cases, "sigma_xx", where="outer")
    assert outer.peak().location[0] == pytest.approx(50.0)
    assert outer.peak().value == pytest.approx(bending(50.0), rel=2e-3)
    assert outer.where == "in region 'outer'"
    # the figure marks the whole part's peak and states the zone's under the title, with its units
    fig = env.plot()
    said = [t.get_text() for t in fig.axes[0].texts]
    assert any("peak at least 40 from supports and concentrated loads: 17.63 MPa at (41.25, 20) mm from 'down'"
               in t for t in said)


def test_envelope_where_errors(cases):
    with pytest.raises(NameNotFoundError, match="edges: .*bottom.*regions: .*outer"):
        envelope(cases, "sigma_xx", where="flange")
    with pytest.raises(InputError, match="no node of the mesh"):
        envelope(cases, "sigma_xx", where=InCircle((500.0, 500.0), 1.0))


def test_combined_result_max_with_where(cases):
    c = combine(cases, {"down": 1.0, "up": 0.5}, name="ultimate")  # end shear -0.75 q by superposition
    everywhere = c.max("sigma_xx")
    assert everywhere.note.startswith(CLAMP)
    peak = c.max("sigma_xx", where=Away(40.0))
    assert peak.value == pytest.approx(bending(peak.location[0], q=0.75 * Q), rel=2e-3)
    assert peak.note == "" and peak.where.startswith("at least 40")
    on_top = c.max("sigma_xx", where="top")
    assert on_top.location == (0.0, H) and on_top.note.startswith(CLAMP)


# ---------------------------------------------------------------------------- Kt and margins
def test_kt_and_margin_summaries_print_the_zone_and_the_note(down):
    nominal = bending(0.0)  # the beam's fibre stress at the clamp, 30 MPa
    plain = kt(down, nominal, field="sigma_xx")
    assert plain.note.startswith(CLAMP)
    assert "CAUTION: the peak sits next to the clamp on edge 'left'" in plain.summary()
    limited = kt(down, bending(50.0), field="sigma_xx", where="outer")
    assert limited.Kt == pytest.approx(1.0, rel=2e-3)  # the beam at x = 50 is its own nominal
    assert limited.where == "in region 'outer'" and limited.note == ""
    assert "peak in region 'outer'" in limited.summary() and "CAUTION: the peak" not in limited.summary()

    ms = margin_of_safety(down, 100.0, 1.5, field="von_mises")
    assert ms.note.startswith(CLAMP) and "CAUTION: the peak sits next to" in ms.summary()
    ms_away = margin_of_safety(down, 100.0, 1.5, field="sigma_xx", where=Away(40.0))
    x = ms_away.location[0]
    assert ms_away.margin == pytest.approx(100.0 / (1.5 * bending(x)) - 1.0, rel=5e-3)
    assert "at least 40 from supports" in ms_away.summary() and "CAUTION: the peak" not in ms_away.summary()


# ---------------------------------------------------------------------------- paths
def test_path_summary_says_where_and_notes_the_clamp(down):
    clamp = path_stresses(down, (0.0, 0.0), (0.0, H), "sigma_xx", n_points=21)  # wholly on the clamp
    assert clamp.notes["sigma_xx"].startswith(CLAMP) and "in the part away from supports" in clamp.notes["sigma_xx"]
    top = path_stresses(down, (0.0, H), (L, H), "sigma_xx", n_points=41)
    assert top.notes["sigma_xx"].startswith(CLAMP)
    assert "max |.| " in top.summary() and "(0, 20)" in top.summary() and "CAUTION: it sits next to" in top.summary()
    mid = path_stresses(down, (50.0, 0.0), (50.0, H), "sigma_xx", n_points=21)
    assert mid.notes == {}
    # linear through the depth, +-6 q (L - x) / H at the fibres (Timoshenko and Goodier art. 21)
    expect = bending(50.0) * (2.0 * mid.points[:, 1] / H - 1.0)
    assert np.allclose(mid.values["sigma_xx"], expect, atol=2e-3 * bending(50.0))
    assert "CAUTION" not in mid.summary()


# ---------------------------------------------------------------------------- sweeps' outputs
def test_sweep_outputs_take_where_and_record_the_note():
    fn = f"{__file__}:cantilever_point"
    table = sweep(fn, [{"depth_scale": 1.0}, {"depth_scale": 2.0}], workers=0,
                  outputs={"all": Peak("sigma_xx"), "beam": Peak("sigma_xx", where=Away(40.0)),
                           "top": "max:sigma_xx on top", "kt": ConcentrationFactor(bending(50.0), "sigma_xx",
                                                                                      where="outer")})
    assert not table.failed
    beam = table.column("beam")
    x = 41.25  # the first node beyond 40 mm on this mesh (2.5 mm elements, mid-side nodes)
    assert beam == pytest.approx([bending(x), 2 * bending(x)], rel=2e-3)  # Timoshenko and Goodier art. 21
    rec = table.records[0]
    assert "where=Away(40)" in rec["output_specs"]["beam"]
    assert "where='top'" in rec["output_specs"]["top"]
    assert rec["notes"]["all"].startswith(CLAMP) and rec["notes"]["top"].startswith(CLAMP)
    assert "beam" not in rec["notes"] and "kt" not in rec["notes"]
    assert table.column("kt") == pytest.approx([1.0, 2.0], rel=2e-3)  # the outer half's peak is the beam's at x = 50
    assert "note: all at 2 of 2 points: the peak sits next to the clamp" in table.format()


def test_sweep_output_objects_and_text_forms(down):
    v = Peak("sigma_xx", where=Away(40.0))(down, {})
    assert isinstance(v, float) and v.note == "" and v.where.startswith("at least 40")
    assert Peak("sigma_xx")(down, {}).note.startswith(CLAMP)
    m = SafetyMargin(100.0, 1.5, "sigma_xx", where="outer")(down, {})
    assert m == pytest.approx(100.0 / (1.5 * bending(50.0)) - 1.0, rel=5e-3) and m.where == "in region 'outer'"
    # an output without a zone keeps its stored spec (a store written before keeps its points)
    assert repr(Peak("von_mises")) == "Peak(field='von_mises', method='spr', kind='max', case=None)"
    assert parse_output("max:sigma_xx on top@average") == Peak("sigma_xx", method="average", where="top")
    assert parse_output("kt:sigma_xx:nominal@spr on bolt_hole").where == "bolt_hole"
    assert parse_output("margin:von_mises:290:1.5 on fillet").where == "fillet"
    with pytest.raises(InputError, match="takes no zone"):
        parse_output("at:1,2:ux on top")
    with pytest.raises(InputError, match="2 zones"):
        parse_output("max:von_mises on top on left")
    with pytest.raises(InputError, match="where= takes"):
        Peak("von_mises", where=3)
    with pytest.raises(NameNotFoundError, match="edges: "):
        Peak("von_mises", where="flange")(down, {})
    p = Peak("sigma_xx", where=Away(40.0) & InBox((0.0, 0.0), (L, H)))
    q = pickle.loads(pickle.dumps(p))  # outputs go to worker processes
    assert q.describe() == p.describe() and q(down, {}) == pytest.approx(float(p(down, {})))
    assert pickle.loads(pickle.dumps(v)).where == v.where


def test_sweep_command_line_reads_a_zone(tmp_path, capsys):
    from planar.cli import main

    out = tmp_path / "sw"
    code = main(["sweep", "planar.studies:example_strap", "--param", "width=20,40", "--output",
                 "max:sigma_xx on right@average", "--workers", "0", "--out", str(out), "--no-plot"])
    assert code == 0
    head, *rows = (out / "sweep.csv").read_text().splitlines()
    assert "max_sigma_xx_on_right_average" in head.split(",")
    col = head.split(",").index("max_sigma_xx_on_right_average")
    # 2000 N over 2 mm x width, uniform (common practice)
    assert [float(r.split(",")[col]) for r in rows] == pytest.approx([50.0, 25.0], rel=1e-9)
    spec = json.loads((out / "sweep.json").read_text())["records"][0]["output_specs"]
    assert "where='right'" in spec["max_sigma_xx_on_right_average"]


# ---------------------------------------------------------------------------- convergence studies
def test_convergence_study_names_its_zone_and_notes_the_clamp():
    meshes = [cantilever_mesh(10 * k, 2 * k) for k in (1, 2, 4)]
    with pytest.warns(DiscretisationWarning, match="not in the asymptotic range"):  # the corner's peak grows
        plain = convergence_study(cantilever_model, meshes, "sigma_xx", case="down")
    assert plain.name == "peak sigma_xx"
    assert any(n.startswith(f"the peak on the finest mesh sits {CLAMP}") for n in plain.notes)
    assert plain.values[0] > plain.values[1] > plain.values[2]  # singular: no limit
    with warnings.catch_warnings():  # the beam's stress is exact to round-off on every mesh: no order to see
        warnings.simplefilter("ignore", DiscretisationWarning)
        mid = convergence_study(cantilever_model, meshes, "sigma_xx", case="down",
                                where=InBox((49.0, 0.0), (51.0, H)))
    assert mid.name == "peak sigma_xx in the box (49, 0) to (51, 20)"
    assert not any("sits next to" in n for n in mid.notes)
    assert mid.finest == pytest.approx(bending(50.0), rel=1e-3)  # Timoshenko and Goodier art. 21
    assert "in the box (49, 0) to (51, 20)" in mid.table()
    with pytest.raises(InputError, match="where= limits the peak of a field"):
        convergence_study(cantilever_model, meshes, lambda r: 1.0, where="top")


# ---------------------------------------------------------------------------- the zones themselves
@pytest.fixture(scope="module")
def mesh():
    return cantilever_mesh(regions=True)


def test_on_edge_in_region_window_and_point(mesh, down):
    x, y = mesh.nodes[:, 0], mesh.nodes[:, 1]
    assert np.array_equal(OnEdge("top").mask(mesh), np.isclose(y, H))
    assert np.array_equal(InRegion("outer").mask(mesh), x >= L / 2 - 1e-9)
    assert np.array_equal(InRegion("plate").mask(mesh), x <= L / 2 + 1e-9)  # the cells in no named region
    d2 = (x - 50.0) ** 2 + (y - 10.0) ** 2
    assert np.array_equal(InCircle((50.0, 10.0), 6.0).mask(mesh), d2 <= 36.0 * (1 + 1e-12))
    tol = 1e-9  # the structured mesh's coordinates carry round-off; a box includes its edges
    assert np.array_equal(InBox((10.0, 5.0), (20.0, 15.0)).mask(mesh),
                          (x >= 10 - tol) & (x <= 20 + tol) & (y >= 5 - tol) & (y <= 15 + tol))
    near_named = Near("corner_11", 5.0).mask(mesh)
    assert np.array_equal(near_named, Near((L, H), 5.0).mask(mesh))
    assert np.array_equal(near_named, (x - L) ** 2 + (y - H) ** 2 <= 25.0 * (1 + 1e-12))
    both = OnEdge("top") & InBox((10.0, 0.0), (20.0, H))
    assert np.array_equal(both.mask(mesh), np.isclose(y, H) & (x >= 10 - tol) & (x <= 20 + tol))
    assert both.describe() == "on edge 'top' and in the box (10, 0) to (20, 20)"
    assert repr(both) == "OnEdge('top') & InBox((10, 0), (20, 20))"
    # a zone read on a result: the peak lies in it
    e = down.max("von_mises", where=Near("corner_11", 5.0))
    assert (e.location[0] - L) ** 2 + (e.location[1] - H) ** 2 <= 25.0
    assert e.where == "within 5 of 'corner_11'"


def test_as_zone_and_zone_errors(mesh, down):
    assert as_zone(None, mesh) is None
    assert isinstance(as_zone("top", mesh), OnEdge) and isinstance(as_zone("outer", mesh), InRegion)
    z = Away(3.0)
    assert as_zone(z, mesh) is z
    with pytest.raises(NameNotFoundError) as err:
        as_zone("flange", mesh)
    text = str(err.value)
    assert "no edge or region named 'flange'" in text
    assert all(n in text for n in ("bottom", "left", "right", "top", "outer", "plate"))
    with pytest.raises(NameNotFoundError, match=r"named point.*Near\('corner_00', radius\)"):
        as_zone("corner_00", mesh)
    for bad in (3, 2.5, ("top",), b"top"):
        with pytest.raises(InputError, match="where= takes"):
            as_zone(bad, mesh)
    with pytest.raises(InputError):
        OnEdge("")
    with pytest.raises(InputError):
        InRegion(None)
    with pytest.raises(InputError, match="positive length"):
        InCircle((0.0, 0.0), -1.0)
    with pytest.raises(InputError, match="point"):
        InCircle((0.0, np.nan), 1.0)
    with pytest.raises(InputError, match="upper-right corner"):
        InBox((10.0, 10.0), (5.0, 20.0))
    with pytest.raises(InputError, match="positive length"):
        Near("corner_00", 0.0)
    with pytest.raises(InputError, match="keep away from what"):
        Away(supports=False, loads=False)
    with pytest.raises(InputError, match="positive length"):
        Away(0.0)
    with pytest.raises(NameNotFoundError, match="bolt_centre"):
        Near("bolt_centre", 2.0).mask(mesh)
    with pytest.raises(InputError, match="supports and loads"):
        Away().mask(mesh)  # a mesh alone has no supports
    with pytest.raises(InputError, match="no node of the mesh lies within 1 of"):
        down.max("von_mises", where=InCircle((500.0, 500.0), 1.0))
    with pytest.raises(InputError, match="no node of the mesh"):
        down.max("von_mises", where=OnEdge("top") & OnEdge("bottom"))


def test_a_point_forces_neighbourhood_is_flagged():
    # a block on a roller bed pressed by a point force on its top: under the force the stress is
    # unbounded (Flamant's solution; common practice: read stresses away from a point load)
    mesh = planar.rectangle_mesh(40.0, 20.0, 16, 8, "Q8")
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("bottom", fixed="y"))
    model.add_support(planar.Roller("corner_00", fixed="x"))
    model.add_load(planar.PointForce((20.0, 20.0), fy=-100.0), case="press")
    r = planar.solve(model)["press"]
    peak = r.max("von_mises")
    assert peak.location == pytest.approx((20.0, 20.0))
    assert peak.note.startswith("next to the point force at (")
    names = [d for d, _ in idealisations(mesh, model)]
    assert any(d.startswith("the point force") for d in names)
    away = r.max("von_mises", where=Away(loads=True, supports=False))
    assert np.hypot(away.location[0] - 20.0, away.location[1] - 20.0) > 1.0 and away.note == ""
    # the bed far from the force carries the mean pressure F / (width t) (statics, common practice)
    bed = r.at((2.5, 0.0), "sigma_yy")
    assert -100.0 / 40.0 * 3 < float(bed) < 0.0


def test_symmetry_planes_are_never_flagged():
    from planar.geometry import Circle, Plate, Refine
    from planar.geometry import mesh as gmesh
    from planar.post.checks import nominal_net
    from planar.post.handbook import kt_hole_in_strip

    quarter = Plate.rectangle(120.0, 50.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 8.0, name="bolt_hole")).quarter()
    m = gmesh(quarter, size=5.0, element="T6", refine=[Refine("bolt_hole", size=1.0, growth=1.3)])
    model = planar.Model(m, planar.Isotropic(71e3, 0.33), thickness=4.0, units="N, mm, MPa")
    model.add_support(planar.Symmetry("symmetry_x"))
    model.add_support(planar.Symmetry("symmetry_y"))
    model.add_load(planar.Traction("right", tx=12e3 / (50.0 * 4.0)), case="tension")
    r = planar.solve(model)["tension"]
    assert idealisations(m, model) == []
    peak = r.max("sigma_xx")
    assert abs(peak.location[0]) < 1e-9 and peak.location[1] == pytest.approx(8.0)  # on the symmetry plane
    assert peak.note == ""
    hole = kt(r, nominal_net(12e3, 50.0, 16.0, 4.0), field="sigma_xx", where="bolt_hole")
    assert hole.note == "" and hole.where == "on edge 'bolt_hole'"
    assert hole.Kt == pytest.approx(kt_hole_in_strip(16.0 / 50.0), rel=0.03)  # Peterson, chart 4.1 fit
    near, _ = near_idealised(m, model, np.arange(m.n_nodes))
    assert not near.any()


def test_no_false_alarm_on_a_uniform_strap_held_by_rollers():
    # P / (w t) everywhere (common practice); the maximum may fall on a roller: not an idealisation's peak
    r = planar.studies.example_strap(width=40.0)
    peak = r.max("sigma_xx")
    assert peak.value == pytest.approx(2000.0 / (40.0 * 2.0), rel=1e-9)
    assert peak.note == ""
    assert r.min("sigma_xx").note == ""
    at_roller = r.max("sigma_xx", where="left")  # a zone wholly on the support: weighed against the part
    assert at_roller.note == "" and at_roller.value == pytest.approx(25.0, rel=1e-9)
    # a path along the roller itself: weighed against the rest of the part, no false alarm
    along = path_stresses(r, (0.0, 0.0), (0.0, 40.0), "sigma_xx", n_points=11)
    assert along.notes == {} and along.values["sigma_xx"] == pytest.approx(np.full(11, 25.0), rel=1e-9)


# ---------------------------------------------------------------------------- the demo
@pytest.mark.slow
def test_demo_reads_its_check_on_the_bolt_hole(tmp_path):
    from planar.demo import format_summary, run_demo
    from planar.post.handbook import kt_hole_in_strip

    outcome = run_demo(tmp_path, verbose=False)
    s = outcome.summary
    assert s["peak_where"] == "on edge 'bolt_hole'" and s["peak_note"] == ""
    # the hole's peak is the whole strap's: the clamp two widths away makes no peak of its own
    assert s["peak_everywhere"] == pytest.approx(s["peak_von_mises"], rel=1e-12)
    x, y = s["peak_location"]
    assert np.hypot(x, y) == pytest.approx(s["hole_diameter"] / 2, rel=1e-6)
    assert s["kt"] == pytest.approx(kt_hole_in_strip(s["hole_diameter"] / s["width"]), rel=0.025)  # Peterson 4.1
    text = " ".join(format_summary(outcome).split())  # wrapped at 100 columns
    assert "read on edge 'bolt_hole'" in text and "the whole strap's peak is the same point" in text
