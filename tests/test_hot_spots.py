"""Hot spots: local peaks by feature, ranked, with Kt, margin and the flag of an idealisation.

Sources of the physical checks:
- Kirsch: G. Kirsch, Zeitschrift des VDI 42, 1898; exact field in S. P. Timoshenko and J. N. Goodier,
  Theory of Elasticity, 3rd ed., 1970, art. 35: the hoop stress at the edge of a small hole in a
  plate under remote tension s is 3 s at 90 degrees to the load.
- Finite width: W. D. Pilkey and D. F. Pilkey, Peterson's Stress Concentration Factors, 3rd ed.,
  2008, chart 4.1 (after R. C. J. Howland 1930), through planar.post.kt_hole_in_strip.
- Margin of safety MS = allowable / (FS x stress) - 1: common practice (Bruhn 1973, A1.5, from memory).
"""
from __future__ import annotations

import functools
import json

import pytest

import planar
from planar.core.errors import InputError, NameNotFoundError
from planar.core.zones import Away, Near
from planar.post import kt, kt_hole_in_strip, margin_of_safety
from planar.post.hotspots import HotSpots, hot_spot_section, hot_spots, plot_hot_spots

UNITS = "N, mm, MPa"


@functools.lru_cache(maxsize=None)
def _two_holes():
    """A strip 200 x 50 mm pulled at 100 MPa (gross) with a 16 mm and an 8 mm hole 80 mm apart."""
    from planar.geometry import Circle, Plate, Refine, mesh

    plate = (Plate.rectangle(200.0, 50.0, centre=(0.0, 0.0)).cut(Circle((-40.0, 0.0), 8.0, name="big_hole"))
             .cut(Circle((40.0, 0.0), 4.0, name="small_hole")))
    m = mesh(plate, size=5.0, element="T6", seed=1,
             refine=[Refine(["big_hole", "small_hole"], size=0.4, growth=1.2)])
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units=UNITS)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller((-100.0, -25.0), fixed="y"))
    model.add_load(planar.Traction("right", tx=100.0), case="pull")
    return planar.solve(model)["pull"]


@functools.lru_cache(maxsize=None)
def _clamped_strip():
    """A strip 200 x 50 mm with a 10 mm hole at x = 40, clamped at the left end, pulled at 100 MPa."""
    from planar.geometry import Circle, Plate, Refine, mesh

    plate = Plate.rectangle(200.0, 50.0, centre=(0.0, 0.0)).cut(Circle((40.0, 0.0), 5.0, name="hole"))
    m = mesh(plate, size=6.0, element="T6", seed=1,
             refine=[Refine("hole", size=0.4, growth=1.25), Refine("left", size=0.15, growth=1.3)])
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units=UNITS)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=100.0), case="pull")
    return planar.solve(model)["pull"]


@functools.lru_cache(maxsize=None)
def _kirsch_quarter():
    """Quarter of a plate with a hole (a = 10 mm) under the exact Kirsch traction, remote 100 MPa."""
    from planar.geometry import Circle, Plate, Refine, mesh
    from planar.verify.recovery_cases import ExactTraction, KirschPlate

    a = 10.0
    plate = Plate.rectangle(100.0, 100.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), a, name="hole")).quarter()
    m = mesh(plate, size=6.0, element="T6", seed=1, refine=[Refine("hole", size=a / 10, growth=1.25)])
    exact = KirschPlate(a=a, sigma0=100.0)
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units=UNITS)
    model.add_support(planar.Roller("symmetry_x", fixed="x"))
    model.add_support(planar.Roller("symmetry_y", fixed="y"))
    model.add_load(ExactTraction("right", exact.stress), case="remote")
    model.add_load(ExactTraction("top", exact.stress), case="remote")
    return planar.solve(model)["remote"]


def _uniform_strap():
    mesh = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units=UNITS)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=50.0), case="pull")
    return planar.solve(model)["pull"]


def test_edges_walk_into_ordered_chains_and_a_plateau_peaks_at_its_middle():
    import numpy as np

    from planar.post._peaks import chain_maxima, edge_chains

    mesh = planar.rectangle_mesh(10.0, 2.0, 10, 2, "Q8")
    [(order, closed)] = edge_chains(mesh, "top")
    x = mesh.nodes[order, 0]
    assert closed is False and order.size == 21 and np.all(np.abs(np.diff(x)) == pytest.approx(0.5))
    v = np.zeros(mesh.n_nodes)
    # along the chain: a single peak at node 3, a plateau over nodes 10 to 14 (middle 12), the end 20
    along = np.array([0, 1, 2, 5, 2, 1, 0, 1, 2, 3, 7, 7, 7, 7, 7, 3, 2, 1, 2, 3, 4], float)
    v[order] = along
    found = chain_maxima(order, closed, v, 1e-12)
    assert sorted(int(np.flatnonzero(order == n)[0]) for n in found) == [3, 12, 20]
    # a hole is one closed chain, walked round at its radius
    [(ring, closed)] = edge_chains(_two_holes().mesh, "big_hole")
    p = _two_holes().mesh.nodes[ring] - (-40.0, 0.0)
    assert closed is True and np.hypot(*p.T) == pytest.approx(8.0, rel=1e-9)
    step = np.abs(np.diff(np.unwrap(np.arctan2(p[:, 1], p[:, 0]))))
    assert step.max() < 0.1  # neighbours along the walk are neighbours on the hole


def test_a_smooth_field_gives_one_spot_at_the_hole():
    # Kirsch 1898 (Timoshenko and Goodier art. 35): sigma_1 peaks once, 3 sigma_0 at (0, a)
    hs = hot_spots(_kirsch_quarter(), "sigma_1")
    assert len(hs) == 1
    s = hs.spots[0]
    assert s.feature == "hole" and s.kind == "edge" and not s.flagged
    assert s.location == pytest.approx((0.0, 10.0), abs=1e-9)
    assert s.value == pytest.approx(300.0, rel=0.01)
    assert hs.governing is s


def test_two_holes_give_two_ranked_spots_with_handbook_kt():
    r = _two_holes()
    hs = hot_spots(r, "sigma_1")
    assert [s.feature for s in hs] == ["big_hole", "small_hole"]
    assert [s.rank for s in hs] == [1, 2]
    assert hs.spots[0].value > hs.spots[1].value
    # each hole's peak against Peterson's chart 4.1 (net section, Howland 1930) within 2 %
    for s, d in zip(hs, (16.0, 8.0)):
        net = 100.0 * 50.0 / (50.0 - d)
        assert s.value / net == pytest.approx(kt_hole_in_strip(d / 50.0), rel=0.02)
        assert abs(s.location[0]) == pytest.approx(40.0, abs=0.5)
        # the two ends of the vertical diameter are one spot, listed twice
        assert len(s.also) == 1 and s.also[0][1] == pytest.approx(-s.location[1], abs=1e-3)


def test_a_peak_at_a_clamp_is_flagged_and_the_hole_governs():
    r = _clamped_strip()
    top = r.max("von_mises")
    assert top.location[0] == pytest.approx(-100.0) and "clamp on edge 'left'" in top.note
    hs = hot_spots(r)
    assert hs.spots[0].flagged and "clamp on edge 'left'" in hs.spots[0].reason
    assert hs.spots[0].next_to == "the clamp on edge 'left'"
    gov = hs.governing
    assert gov.feature == "hole" and not gov.flagged and gov.rank > 1
    # the same value as the hole's peak read with where= (Peterson chart 4.1 within 2 %)
    assert gov.value == pytest.approx(r.max("von_mises", where="hole").value, rel=1e-12)
    assert gov.value / (100.0 * 50.0 / 40.0) == pytest.approx(kt_hole_in_strip(0.2), rel=0.02)
    text = hs.table()
    assert "FLAGGED: next to the clamp on edge 'left'" in text and "governing" in text


def test_a_point_force_inside_makes_a_flagged_region_spot():
    from planar.geometry import Plate, Refine, mesh

    plate = Plate.rectangle(100.0, 40.0, centre=(0.0, 0.0)).add_point("pin", (10.0, 0.0))
    m = mesh(plate, size=4.0, element="T6", seed=1, refine=[Refine("pin", size=0.5)])
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units=UNITS)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.PointForce("pin", fx=1000.0), case="c")
    hs = hot_spots(planar.solve(model)["c"])
    # a point force's field is singular (Flamant/Kelvin, Timoshenko and Goodier art. 36): its peak is
    # the idealisation's, inside the region, and nothing else is left to govern
    s = hs.spots[0]
    assert s.kind == "region" and s.feature == "plate" and s.flagged and "point force at point 'pin'" in s.next_to
    assert s.location == pytest.approx((10.0, 0.0), abs=1.5)
    assert hs.governing is None and "every spot is made by how the part is held" in hs.table()


def test_kt_and_margin_columns_agree_with_kt_and_margin_of_safety_on_the_same_node():
    r = _clamped_strip()
    nominal, allowable, fs = 125.0, 400.0, 1.5
    hs = hot_spots(r, nominal=nominal, allowable=allowable, factor_of_safety=fs)
    for s in hs:
        zone = Near(s.location, 1e-6)
        k = kt(r, nominal, where=zone)
        m = margin_of_safety(r, allowable, fs, where=zone)
        assert k.node == s.node
        assert s.Kt == pytest.approx(k.Kt, rel=1e-12)
        assert s.margin == pytest.approx(m.margin, rel=1e-12)
        assert s.margin == pytest.approx(allowable / (fs * s.value) - 1.0, rel=1e-12)  # common practice


def test_table_states_the_units_and_no_nan():
    hs = hot_spots(_clamped_strip(), nominal=125.0)
    text = hs.table()
    assert "von_mises [MPa]" in text and "x [mm]" in text and "nan" not in text.lower()
    assert "Kt" in text and "margin" not in text.split("\n")[1]  # no allowable: no margin column


def test_as_dict_is_json_and_round_trips():
    hs = hot_spots(_clamped_strip(), nominal=125.0, allowable=400.0)
    d = hs.as_dict()
    back = json.loads(json.dumps(d, allow_nan=False))
    assert back == d
    assert back["unit"] == "MPa" and back["length_unit"] == "mm"
    assert back["governing"] == hs.governing.rank
    assert [s["feature"] for s in back["spots"]] == [s.feature for s in hs]
    assert back["spots"][0]["flagged"] is True


def test_where_limits_the_spots():
    r = _clamped_strip()
    assert {s.feature for s in hot_spots(r, where="hole")} == {"hole"}
    away = hot_spots(r, where=Away())
    assert len(away) >= 1 and not any(s.flagged for s in away)
    assert away.where.startswith("away from")
    assert len(hot_spots(r, top=1)) == 1


def test_a_uniform_strap_has_no_false_spot():
    # a uniform field (sigma_xx = 50 MPa everywhere, a closed form) has no local peak: nothing is
    # flagged next to the point support, and the table says so
    r = _uniform_strap()
    assert r.max("von_mises").note == ""
    hs = hot_spots(r, allowable=100.0)
    assert not any(s.flagged for s in hs)
    assert len(hs) == 0 and hs.governing is None
    assert "none" in hs.table()


def test_plot_file_is_written(tmp_path):
    r = _clamped_strip()
    path = tmp_path / "hot_spots.png"
    fig = plot_hot_spots(r, path, nominal=125.0)
    assert path.read_bytes().startswith(b"\x89PNG")
    texts = [t.get_text() for t in fig.legends[0].get_texts()]
    assert texts[0].startswith("1: ") and "MPa" in texts[0] and "idealisation" in texts[0]
    hs = hot_spots(r)
    plot_hot_spots(hs, tmp_path / "again.png")
    with pytest.raises(InputError, match="already found"):
        plot_hot_spots(hs, nominal=1.0)


def test_report_section_tables_the_spots():
    from planar.post.report import Table

    hs = hot_spots(_clamped_strip(), nominal=125.0, allowable=400.0)
    sec = hot_spot_section(hs)
    assert sec.title == "Hot spots"
    table = next(b for b in sec.blocks if isinstance(b, Table))
    assert len(table.rows) == len(hs) and "[MPa]" in " ".join(table.headers)


@pytest.mark.slow
def test_stress_check_report_takes_the_hot_spots():
    from planar.post.report import render_html, stress_check_report

    r = _clamped_strip()
    hs = hot_spots(r, nominal=125.0, allowable=400.0)
    rep = stress_check_report(r, title="strip", hot_spots=hs)
    titles = [sec.title for sec in rep.sections]
    assert "Hot spots" in titles
    html = render_html(rep)
    assert "FLAGGED" not in html and "made by the idealisation" in html and "hole (edge)" in html
    assert "Hot spots" not in [sec.title for sec in stress_check_report(r, title="strip", hot_spots=False).sections]


def test_bad_input_is_refused_with_the_fix():
    r = _uniform_strap()
    with pytest.raises(NameNotFoundError, match="hole"):
        hot_spots(r, edges=["hole"])
    with pytest.raises(InputError, match="not a stress"):
        hot_spots(r, "displacement", allowable=10.0)
    with pytest.raises(InputError, match="top"):
        hot_spots(r, top=0)
    with pytest.raises(InputError, match="nominal"):
        hot_spots(r, nominal=0.0)
    assert isinstance(hot_spots(r, "displacement"), HotSpots)


@pytest.mark.slow
def test_verify_case_hot_spot_feature_passes():
    from planar.verify import run

    records = run(case_names=["hot-spot-feature"])
    assert len(records) == 6 and all(r.passed for r in records), [(r.quantity, r.computed) for r in records]
