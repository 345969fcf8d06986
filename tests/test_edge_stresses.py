"""Stresses along named edges (planar.post.edge_stresses) and polar stress fields about a centre.

Sources:
- the exact field round a circular hole in a plate under remote tension S (G. Kirsch 1898; S. P.
  Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 35, eqs. 61):
  sigma_rr, sigma_tt, tau_rt; on the hole edge sigma_tt / S = 1 - 2 cos 2 theta;
- the rotation of a plane stress tensor to other axes (Timoshenko and Goodier 1970, art. 26);
- a free edge carries no normal or shear traction, and an edge under a traction t carries
  sigma . n = t (Cauchy; common practice); uniform tension sigma_xx = P / A (common practice).
"""
import json
import math

import meshio
import numpy as np
import pytest

import planar
from planar.core.errors import InputError, NameNotFoundError
from planar.post import EdgeStresses, edge_stresses, plot_edge_stresses
from planar.post.edges import fit_circle
from planar.verify.recovery_cases import ExactTraction, KirschPlate, kirsch_mesh

S = 100.0  # remote stress, MPa


def _kirsch(element="Q8", n=24):
    """The quarter Kirsch plate (hole radius 1 mm, exact traction of S = 100 MPa on the outer edges)."""
    mesh = kirsch_mesh(element, n)
    plate = KirschPlate(1.0, S)
    model = planar.Model(mesh, planar.Isotropic(210e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("symmetry_x", fixed="x"))
    model.add_support(planar.Roller("symmetry_y", fixed="y"))
    model.add_load(ExactTraction("outer", plate.stress), case="remote tension")
    return planar.solve(model)["remote tension"], plate


@pytest.fixture(scope="module")
def kirsch():
    return _kirsch()


@pytest.fixture(scope="module")
def strip():
    """A 100 x 20 mm strip in uniform tension of 50 MPa (Q8)."""
    mesh = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=50.0), case="pull")
    return planar.solve(model)["pull"]


@pytest.fixture(scope="module")
def holed_plate():
    """A full plate 100 x 60 mm with an off-centre hole of radius 8 mm (a closed loop), gmsh T6."""
    from planar.geometry import Circle, Plate, Refine, mesh

    geo = Plate.rectangle(100.0, 60.0, centre=(0.0, 0.0)).cut(Circle((10.0, 5.0), 8.0, name="hole"))
    m = mesh(geo, size=6.0, element="T6", seed=1, refine=[Refine("hole", size=1.5)])
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("bottom", fixed="y"))
    model.add_load(planar.Traction("right", tx=50.0), case="pull")
    return planar.solve(model)["pull"]


# ---------------------------------------------------------------------------- chains
def test_a_hole_is_one_closed_loop_run_counter_clockwise_from_theta_zero(holed_plate):
    es = edge_stresses(holed_plate, "hole")
    assert es.closed == (True,) and es.n_pieces == 1
    np.testing.assert_allclose(es.centre, (10.0, 5.0), atol=1e-9)
    assert es.radius == pytest.approx(8.0, rel=1e-9) and es.circle_residual < 1e-9
    assert es.theta[0] == pytest.approx(0.0, abs=1e-9) and es.theta[-1] == pytest.approx(360.0, abs=1e-9)
    assert np.all(np.diff(es.theta) > 0) and np.all(np.diff(es.s) > 0)
    # the loop closes on its first point, at s = the perimeter of the (isoparametric) circle
    np.testing.assert_allclose(es.points[0], es.points[-1])
    assert es.s[-1] == pytest.approx(2 * math.pi * 8.0, rel=1e-4)
    # the normal points out of the material: into the hole, towards its centre
    towards = np.einsum("ij,ij->i", es.normal, np.asarray(es.centre) - es.points)
    assert np.all(towards > 0)
    # nodes only by default, each node once (and the first again at the end)
    assert np.all(es.node >= 0) and np.unique(es.node).size == es.node.size - 1


def test_open_chains_run_with_the_material_on_their_left(holed_plate):
    top = edge_stresses(holed_plate, "top")
    assert top.closed == (False,) and top.centre is None and top.theta is None
    np.testing.assert_allclose(top.points[[0, -1]], [[50.0, 30.0], [-50.0, 30.0]], atol=1e-9)
    np.testing.assert_allclose(top.normal, np.tile([0.0, 1.0], (top.s.size, 1)), atol=1e-12)
    np.testing.assert_allclose(top.tangent, np.tile([-1.0, 0.0], (top.s.size, 1)), atol=1e-12)
    assert top.s[-1] == pytest.approx(100.0)


def test_an_edge_set_of_two_pieces_gives_two_chains_and_a_branch_is_refused(strip):
    mesh = strip.mesh
    both = np.vstack([mesh.edge("top"), mesh.edge("bottom")])
    m2 = planar.Mesh(mesh.nodes, mesh.cells, {**mesh.edge_sets, "long_sides": both}, mesh.node_sets)
    model = planar.Model(m2, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=50.0), case="pull")
    r = planar.solve(model)["pull"]
    es = edge_stresses(r, "long_sides")
    assert es.closed == (False, False)
    for k in (0, 1):
        sel = es.piece == k
        assert es.s[sel][0] == 0.0 and es.s[sel][-1] == pytest.approx(100.0)
    # a T: the bottom side and one cell side standing on it
    x = mesh.nodes
    foot = int(np.flatnonzero(np.isclose(x[:, 0], 50.0) & np.isclose(x[:, 1], 0.0))[0])
    up = [row for row in mesh.cells["Q8"][:, [0, 3, 7]] if foot in row[:2]]
    branch = np.vstack([mesh.edge("bottom"), np.asarray(up[0])[None, :]])
    m3 = planar.Mesh(mesh.nodes, mesh.cells, {**mesh.edge_sets, "tee": branch}, mesh.node_sets)
    model3 = planar.Model(m3, planar.Isotropic(70e3, 0.33), thickness=2.0)
    model3.add_support(planar.Fixed("left"))
    model3.add_load(planar.Traction("right", tx=1.0), case="pull")
    with pytest.raises(InputError, match="branches"):
        edge_stresses(planar.solve(model3)["pull"], "tee")


def test_unknown_edge_and_bad_arguments_are_refused(strip):
    with pytest.raises(NameNotFoundError, match="top"):
        edge_stresses(strip, "hole")
    with pytest.raises(InputError, match="recovery"):
        edge_stresses(strip, "top", recovery="smooth")
    with pytest.raises(InputError, match="points_per_segment"):
        edge_stresses(strip, "top", points_per_segment=1)
    with pytest.raises(InputError, match="centre"):
        edge_stresses(strip, "top", centre=(1.0, float("nan")))


# ---------------------------------------------------------------------------- straight edges
def test_straight_edges_under_uniform_tension(strip):
    # uniform tension: a free long side carries sigma_t = 50 MPa, sigma_n = tau_nt = 0 (common practice)
    top = edge_stresses(strip, "top")
    np.testing.assert_allclose(top.sigma_t, 50.0, rtol=1e-9)
    np.testing.assert_allclose(top.sigma_n, 0.0, atol=1e-9)
    np.testing.assert_allclose(top.tau_nt, 0.0, atol=1e-9)
    np.testing.assert_allclose(top.von_mises, 50.0, rtol=1e-9)
    # the loaded end: sigma . n = t = (50, 0) (Cauchy), so sigma_n = 50 MPa and sigma_t = 0
    right = edge_stresses(strip, "right", points_per_segment=5)
    np.testing.assert_allclose(right.sigma_n, 50.0, rtol=1e-9)
    np.testing.assert_allclose(right.sigma_t, 0.0, atol=1e-9)
    assert right.s[-1] == pytest.approx(20.0) and right.node[1] == -1  # between nodes with 5 points


# ---------------------------------------------------------------------------- Kirsch
def test_hoop_stress_round_the_hole_by_angle_against_kirsch(kirsch):
    r, plate = kirsch
    es = edge_stresses(r, "hole")
    assert es.closed == (False,) and es.radius == pytest.approx(1.0, rel=1e-9)
    assert es.theta[0] == pytest.approx(0.0, abs=1e-9) and es.theta[-1] == pytest.approx(90.0, abs=1e-9)
    exact = S * (1.0 - 2.0 * np.cos(2.0 * np.radians(es.theta)))  # Kirsch, T&G art. 35 at r = a
    assert np.max(np.abs(es.sigma_t - exact)) <= 0.005 * 3 * S
    pk = es.peak("sigma_t")
    assert pk.theta == pytest.approx(90.0) and pk.value == pytest.approx(3 * S, rel=0.005)
    # the hole is free: no normal or shear traction (within 1 % of the peak on this mesh)
    assert np.max(np.abs(es.sigma_n)) < 0.01 * 3 * S and np.max(np.abs(es.tau_nt)) < 0.01 * 3 * S
    # the same at points between the nodes, along the curved quadratic sides
    fine = edge_stresses(r, "hole", points_per_segment=7)
    exact = S * (1.0 - 2.0 * np.cos(2.0 * np.radians(fine.theta)))
    assert fine.s.size == 24 * 6 + 1 and np.max(np.abs(fine.sigma_t - exact)) <= 0.005 * 3 * S


def test_a_given_centre_gives_the_angle_on_any_edge(kirsch):
    r, _ = kirsch
    es = edge_stresses(r, "symmetry_y", centre=(0.0, 0.0))  # the line y = 0: theta = 0 all along
    assert es.radius is None and np.allclose(es.theta, 0.0)
    es = edge_stresses(r, "hole", centre=(0.0, 0.0))
    assert es.radius == pytest.approx(1.0, rel=1e-9)


def test_polar_fields_against_kirsch_radial_hoop_and_shear(kirsch):
    r, plate = kirsch
    x = r.mesh.nodes
    rad = np.hypot(x[:, 0], x[:, 1])
    near = rad <= 3.0
    srr, stt, trt = plate.polar(x[:, 0], x[:, 1])  # T&G art. 35, eqs. 61
    for name, exact in (("sigma_r", srr), ("sigma_theta", stt), ("tau_r_theta", trt)):
        v = r.field(name, centre=(0.0, 0.0))
        assert np.max(np.abs(v - exact)[near]) < 0.005 * 3 * S, name
    pts = np.array([[1.5, 0.7], [0.3, 2.1], [2.0, 2.0]])
    srr, stt, trt = plate.polar(pts[:, 0], pts[:, 1])
    np.testing.assert_allclose(r.at(pts, "sigma_r", centre=(0, 0)), srr, atol=0.002 * S)
    np.testing.assert_allclose(r.at(pts, "tau_r_theta", centre=(0, 0)), trt, atol=0.002 * S)
    d, _, v = r.along((1.0, 0.0), (4.0, 0.0), "sigma_theta", centre=(0.0, 0.0), n_points=7)
    np.testing.assert_allclose(v, plate.polar(1.0 + d, 0.0 * d)[1], atol=0.005 * 3 * S)
    # the polar and Cartesian components are one tensor: the invariants agree (T&G art. 26)
    sxx, syy = r.field("sigma_xx"), r.field("sigma_yy")
    np.testing.assert_allclose(r.field("sigma_r", centre=(0, 0)) + r.field("sigma_theta", centre=(0, 0)),
                               sxx + syy, atol=1e-9 * S)


def test_a_polar_field_without_a_centre_is_refused(kirsch, tmp_path):
    r, _ = kirsch
    for call in (lambda: r.field("sigma_theta"), lambda: r.at([1.5, 0.5], "sigma_r"),
                 lambda: planar.post.plot_field(r, "tau_r_theta")):
        with pytest.raises(InputError, match=r"centre=\(x, y\)"):
            call()
    with pytest.raises(InputError, match="centre"):
        planar.write_vtu(tmp_path / "bad.vtu", r, centre=(0.0,))


def test_vtk_file_with_a_centre_carries_the_polar_arrays(kirsch, tmp_path):
    r, _ = kirsch
    plain = meshio.read(planar.write_vtu(tmp_path / "plain.vtu", r))
    assert "sigma_theta" not in plain.point_data and "sigma_xx" in plain.point_data
    m = meshio.read(planar.write_vtu(tmp_path / "polar.vtu", r, centre=(0.0, 0.0)))
    for name in ("sigma_r", "sigma_theta", "tau_r_theta"):
        np.testing.assert_allclose(m.point_data[name], r.field(name, centre=(0.0, 0.0)), rtol=1e-12, atol=1e-12)


# ---------------------------------------------------------------------------- output
def test_plot_table_and_json_state_the_units(kirsch, tmp_path):
    r, _ = kirsch
    es = edge_stresses(r, "hole")
    fig = es.plot(path=tmp_path / "hoop.png")
    ax = fig.axes[0]
    assert ax.get_ylabel() == "stress [MPa]" and ax.get_xlabel().endswith("[deg]")
    assert (tmp_path / "hoop.png").stat().st_size > 1000
    fig = plot_edge_stresses(es, "sigma_t", against="arc_length", lines={"3 S (Kirsch)": 3 * S})
    assert fig.axes[0].get_xlabel() == "arc length along edge 'hole' [mm]"
    assert "3 S (Kirsch) (300.0 MPa)" in [t.get_text() for t in fig.axes[0].get_legend().get_texts()]
    text = es.table(max_rows=5)
    assert "sigma_t [MPa]" in text and "theta [deg]" in text and "s [mm]" in text and "nan" not in text
    d = json.loads(json.dumps(es.as_dict(), allow_nan=False))
    assert d["units"]["stress"] == "MPa" and d["units"]["length"] == "mm"
    assert d["peak_sigma_t"]["value"] == pytest.approx(3 * S, rel=0.005)
    assert len(d["pieces"][0]["theta"]) == es.s.size
    fig = planar.post.plot_field(r, "sigma_theta", centre=(0.0, 0.0))
    bar = fig.axes[1]
    assert (bar.get_xlabel() or bar.get_ylabel()) == r"hoop stress $\sigma_\theta$ [MPa]"
    assert "about (0, 0)" in fig.axes[0].get_title(loc="left")
    fig = planar.post.plot_along(r, (1.0, 0.0), (4.0, 0.0), "sigma_theta", centre=(0.0, 0.0))
    assert fig.axes[0].get_ylabel() == r"hoop stress $\sigma_\theta$ [MPa]"


def test_a_straight_edge_has_no_angle_to_plot_against(strip):
    es = edge_stresses(strip, "top")
    with pytest.raises(InputError, match="centre"):
        es.plot(against="angle")
    with pytest.raises(NameNotFoundError, match="sigma_t"):
        es.plot("sigma_xx")
    assert isinstance(es, EdgeStresses) and es.plot().axes[0].get_xlabel().endswith("[mm]")


def test_circle_fit_rejects_a_line_and_finds_an_arc():
    t = np.linspace(0.2, 0.9, 9)
    c, rad, res = fit_circle(np.column_stack([3.0 + 2.5 * np.cos(t), 1.0 + 2.5 * np.sin(t)]))
    np.testing.assert_allclose(c, (3.0, 1.0), atol=1e-9)
    assert rad == pytest.approx(2.5) and res < 1e-12
    _, rad, res = fit_circle(np.column_stack([np.linspace(0, 1, 5), np.linspace(0, 2, 5)]))
    assert rad == math.inf and res == math.inf  # points on a line
