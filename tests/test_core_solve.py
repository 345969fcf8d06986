"""Assembly, supports, loads and solve against closed-form elasticity.

Each check names its source beside it.
"""
import math

import numpy as np
import pytest

import planar
from _models import strip_model
from planar import (BodyForce, Fixed, Isotropic, Model, Orthotropic, PointForce, Prescribed, Pressure,
                    Roller, Symmetry, Traction, rectangle_mesh, solve)
from planar.core.errors import (ElementError, InputError, MaterialError, MeshError, NameNotFoundError,
                                SupportError)
from planar.core.mesh import Mesh
from planar.geometry.structured import quad_panel_mesh

ELEMENTS = ["T3", "T6", "Q4", "Q8", "Q9"]


def strip(el="Q4", nx=8, ny=2, L=100.0, W=20.0, t=2.0, mat=None, **kw):
    model = strip_model(L, W, nx, ny, el, material=mat, thickness=t, hold=None, **kw)
    return model.mesh, model


@pytest.mark.parametrize("el", ELEMENTS)
def test_axial_strip_exact(el):
    # delta = P L / (E A) and sigma = P / A, uniform (common practice)
    mesh, model = strip(el)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=50.0), case="pull")
    r = solve(model)["pull"]
    assert r.u[mesh.nodes_of("right"), 0] == pytest.approx(50.0 * 100.0 / 70e3, rel=1e-10)
    for g in r.gauss:
        np.testing.assert_allclose(g.stress[..., 0], 50.0, rtol=1e-10)
        np.testing.assert_allclose(g.stress[..., 1:], 0.0, atol=1e-9)
    assert r.equilibrium_error() < 1e-12
    # lateral contraction: eps_yy = -nu sigma / E (common practice)
    assert r.u[mesh.nodes_of("top"), 1].mean() == pytest.approx(-0.33 * 50.0 / 70e3 * 20.0, rel=1e-9)
    # strain energy sigma^2 / (2E) V (common practice)
    assert r.strain_energy == pytest.approx(50.0**2 / (2 * 70e3) * 100 * 20 * 2, rel=1e-10)


def test_quadratic_edge_gets_consistent_one_sixth_two_thirds():
    # consistent nodal forces of a uniform traction on a 3-node edge: 1/6, 2/3, 1/6 (common practice)
    mesh, model = strip("Q8", nx=1, ny=1, L=10.0, W=6.0, t=1.0)
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="c")
    r = solve(model)["c"]
    f = r.applied[:, 0]
    right = mesh.nodes_of("right")
    y = mesh.nodes[right, 1]
    got = f[right][np.argsort(y)]
    np.testing.assert_allclose(got, [1.0, 4.0, 1.0], rtol=1e-12)  # 6 x (1/6, 2/3, 1/6)


@pytest.mark.parametrize("el", ["T6", "Q9"])
def test_pressure_is_positive_inward(el):
    # pressure p on the right edge pushes in -x: resultant -p W t (common practice)
    mesh, model = strip(el)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Pressure("right", 10.0), case="p")
    r = solve(model)["p"]
    np.testing.assert_allclose(r.total_applied(), [-10.0 * 20.0 * 2.0, 0.0], atol=1e-9)
    for g in r.gauss:
        np.testing.assert_allclose(g.stress[..., 0], -10.0, rtol=1e-9)


def test_normal_traction_on_inclined_edge_and_inclined_roller():
    # a rotated panel in uniform tension along its own axis: sigma along the axis = t, exact
    # (uniform stress state, common practice); inclined rollers hold the far edge's normal motion.
    ang = math.radians(30.0)
    c, s = math.cos(ang), math.sin(ang)
    R = np.array([[c, -s], [s, c]])
    corners = (R @ np.array([[0, 0], [40, 0], [40, 10], [0, 10]], float).T).T
    mesh = quad_panel_mesh(corners, 8, 2, "Q8")
    model = Model(mesh, Isotropic(200e3, 0.3), thickness=1.0)
    model.add_support(Symmetry("left"))
    model.add_support(Roller("corner_00", fixed=(-s, c)))
    model.add_load(Traction("right", normal=25.0), case="t")
    r = solve(model)["t"]
    for g in r.gauss:
        sl = np.einsum("ij,eqj->eqi", np.eye(2), g.stress[..., :2])
        # stress in the rotated frame
        sxx, syy, txy = g.stress[..., 0], g.stress[..., 1], g.stress[..., 2]
        s11 = sxx * c * c + syy * s * s + 2 * txy * c * s
        s22 = sxx * s * s + syy * c * c - 2 * txy * c * s
        np.testing.assert_allclose(s11, 25.0, rtol=1e-9)
        np.testing.assert_allclose(s22, 0.0, atol=1e-8)
    assert r.equilibrium_error() < 1e-10


def test_point_and_body_forces_totals():
    # resultants: point force as given; body force b times volume (common practice)
    mesh, model = strip("T6", L=50.0, W=10.0, t=3.0)
    model.add_support(Fixed("left"))
    model.add_load(PointForce("corner_11", fx=0.0, fy=-120.0), case="tip")
    model.add_load(BodyForce(by=-7.85e-5 * 9.81), case="weight")
    res = solve(model)
    np.testing.assert_allclose(res["tip"].total_applied(), [0.0, -120.0], atol=1e-12)
    np.testing.assert_allclose(res["weight"].total_applied(), [0.0, -7.85e-5 * 9.81 * 50 * 10 * 3], rtol=1e-12)
    for r in res.values():
        assert r.equilibrium_error() < 1e-9


def test_load_cases_superpose():
    # linear superposition (common practice): u(A + B) = u(A) + u(B)
    mesh, model = strip("Q9")
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=10.0), case="A")
    model.add_load(Traction("right", ty=2.0), case="B")
    model.add_load(Traction("right", tx=10.0), case="A+B")
    model.add_load(Traction("right", ty=2.0), case="A+B")
    res = solve(model)
    np.testing.assert_allclose(res["A+B"].u, res["A"].u + res["B"].u, atol=1e-14)


def test_plane_strain_sigma_zz_and_von_mises():
    # plane strain: sigma_zz = nu (sigma_xx + sigma_yy) (Timoshenko and Goodier 1970, art. 7)
    mesh, model = strip("Q4", analysis="plane strain", t=1.0)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=100.0), case="pull")
    r = solve(model)["pull"]
    g = r.gauss[0]
    np.testing.assert_allclose(g.szz, 0.33 * 100.0, rtol=1e-10)
    vm = r.field("von_mises")
    # von Mises of (100, 0, 33) with no shear
    exact = math.sqrt(0.5 * ((100 - 0) ** 2 + (0 - 33) ** 2 + (33 - 100) ** 2))
    np.testing.assert_allclose(vm[r.mesh.used_nodes()], exact, rtol=1e-9)


def test_orthotropic_off_axis_modulus():
    # off-axis modulus 1/Ex = c^4/E1 + (1/G12 - 2 nu12/E1) c^2 s^2 + s^4/E2
    # (R. M. Jones, Mechanics of Composite Materials, 2nd ed., 1999, eq. 2.98)
    E1, E2, nu12, G12, th = 140e3, 10e3, 0.3, 5e3, 30.0
    mat = Orthotropic(E1, E2, nu12, G12, angle=th)
    mesh, model = strip("Q4", mat=mat, t=1.0)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Fixed("corner_00"))
    # uniform sigma_xx needs the panel free to shear: prescribe only what stops rigid motion
    model.add_load(Traction("right", tx=100.0), case="pull")
    r = solve(model)["pull"]
    c, s = math.cos(math.radians(th)), math.sin(math.radians(th))
    inv_ex = c**4 / E1 + (1 / G12 - 2 * nu12 / E1) * c * c * s * s + s**4 / E2
    # with the left edge held in x only the state is not exactly uniaxial near the supports;
    # compare the strain far from them at the strip's middle
    eps = r.field("eps_xx")
    mid = r.mesh.nearest_node((50.0, 10.0))
    assert eps[mid] == pytest.approx(100.0 * inv_ex, rel=2e-2)


def test_orthotropic_D_inverts_compliance():
    # plane-stress D is the inverse of the in-plane compliance block (Jones 1999, sec. 2.5)
    mat = Orthotropic(140e3, 10e3, 0.3, 5e3, angle=25.0)
    S = mat.compliance3d()[np.ix_([0, 1, 3], [0, 1, 3])]
    np.testing.assert_allclose(mat.D("plane stress") @ S, np.eye(3), atol=1e-12)


def test_prescribed_function_and_reactions():
    # a stretched strip with prescribed end displacement: reaction = E A delta / L (common practice)
    mesh, model = strip("T3", nx=10, ny=3)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_support(Prescribed("right", ux=0.1))
    model.add_case("stretch")
    r = solve(model)["stretch"]
    right = mesh.nodes_of("right")
    assert r.reactions[right, 0].sum() == pytest.approx(70e3 * 20 * 2 * 0.1 / 100.0, rel=1e-10)
    assert r.equilibrium_error() < 1e-10


def test_rigid_body_motions_named():
    mesh, model = strip()
    model.add_load(Traction("right", tx=1.0), case="a")
    with pytest.raises(SupportError, match="no supports"):
        solve(model)
    model.add_support(Roller("left", fixed="x"))
    with pytest.raises(SupportError, match="translation y is free"):
        solve(model)
    mesh, model = strip()
    model.add_load(Traction("right", tx=1.0), case="a")
    model.add_support(Fixed("corner_00"))
    with pytest.raises(SupportError, match=r"rotation about \(0, 0\) is free"):
        solve(model)
    model.add_support(Roller("corner_10", fixed="y"))
    solve(model)  # now stable


def test_separate_piece_without_support_is_named():
    a = rectangle_mesh(10, 10, 2, 2, "Q4")
    b = rectangle_mesh(10, 10, 2, 2, "Q4", origin=(20.0, 0.0))
    nodes = np.vstack([a.nodes, b.nodes])
    cells = {"Q4": np.vstack([a.cells["Q4"], b.cells["Q4"] + a.n_nodes])}
    mesh = Mesh(nodes, cells, edge_sets={"left": a.edge_sets["left"], "right": b.edge_sets["right"] + a.n_nodes})
    model = Model(mesh, Isotropic(1.0, 0.3))
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="a")
    with pytest.raises(SupportError, match="separate piece of the mesh near"):
        solve(model)


def test_contradicting_supports():
    mesh, model = strip()
    model.add_support(Fixed("left"))
    model.add_support(Prescribed("corner_00", ux=1.0))
    model.add_load(Traction("right", tx=1.0), case="a")
    with pytest.raises(SupportError, match="contradict"):
        solve(model)


def test_unknown_names_list_the_valid_ones():
    mesh, model = strip()
    with pytest.raises(NameNotFoundError, match="unknown edge 'rihgt'; pick one of: 'bottom', 'left', 'right', 'top'"):
        model.add_load(Traction("rihgt", tx=1.0))
    with pytest.raises(NameNotFoundError, match="unknown point or edge"):
        model.add_support(Fixed("nowhere"))
    with pytest.raises(NameNotFoundError, match="unknown load kind 'presure'"):
        model.add_load("presure", where="right", p=1.0)
    with pytest.raises(NameNotFoundError, match="unknown region"):
        model.assign("boss", thickness=3.0)


def test_load_kind_by_registered_name():
    mesh, model = strip("Q4")
    model.add_support(Fixed("left"))
    model.add_load("pressure", case="p", where="right", p=2.0)
    r = solve(model)["p"]
    np.testing.assert_allclose(r.total_applied(), [-2.0 * 20 * 2, 0.0], atol=1e-10)


@pytest.mark.parametrize("kw,match", [
    (dict(E=0.0, nu=0.3), "positive"),
    (dict(E=-5.0, nu=0.3), "positive"),
    (dict(E=float("nan"), nu=0.3), "positive"),
    (dict(E=1.0, nu=0.6), "outside"),
    (dict(E=1.0, nu=-1.0), "outside"),
])
def test_nonsense_material_refused(kw, match):
    with pytest.raises(MaterialError, match=match):
        Isotropic(**kw)


def test_incompressible_plane_strain_refused():
    with pytest.raises(MaterialError, match="plane strain"):
        Isotropic(1.0, 0.5).D("plane strain")
    with pytest.raises(MaterialError, match="unstable"):
        Orthotropic(10.0, 100.0, 0.5, 1.0)


@pytest.mark.parametrize("t", [0.0, -1.0, float("inf"), "thick"])
def test_bad_thickness_refused(t):
    mesh = rectangle_mesh(1, 1, 1, 1)
    with pytest.raises(InputError, match="thickness"):
        Model(mesh, Isotropic(1.0, 0.3), thickness=t)


def test_nan_loads_refused():
    mesh, model = strip()
    with pytest.raises(InputError, match="finite"):
        Traction("right", tx=float("nan"))
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=lambda x, y: np.where(y > 10, np.inf, 1.0)), case="bad")
    with pytest.raises(InputError, match="NaN or infinite"):
        solve(model)


def test_clockwise_elements_fixed_silently():
    mesh = rectangle_mesh(20, 10, 4, 2, "Q8")
    flipped = mesh.cells["Q8"].copy()
    flipped[::2] = flipped[::2][:, [0, 3, 2, 1, 7, 6, 5, 4]]
    m2 = Mesh(mesh.nodes, {"Q8": flipped}, mesh.edge_sets, mesh.node_sets)
    model = Model(m2, Isotropic(100.0, 0.25))
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=1.0), case="a")
    r = solve(model)["a"]
    for g in r.gauss:  # uniform tension, exact (common practice)
        np.testing.assert_allclose(g.stress[..., 0], 1.0, rtol=1e-10)


def test_folded_and_collapsed_elements_refused():
    mesh = rectangle_mesh(20, 10, 2, 1, "Q4")
    bad = mesh.cells["Q4"].copy()
    bad[1] = bad[1][[0, 2, 1, 3]]  # bow-tie
    m2 = Mesh(mesh.nodes, {"Q4": bad}, mesh.edge_sets, mesh.node_sets)
    model = Model(m2, Isotropic(100.0, 0.25))
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="a")
    with pytest.raises(ElementError, match=r"cell ids \[1\]"):
        solve(model)
    nodes = mesh.nodes.copy()
    c = mesh.cells["Q4"][0]
    nodes[c[2]] = nodes[c[1]]  # collapse a corner onto another: zero Jacobian there
    m3 = Mesh(nodes, mesh.cells, mesh.edge_sets, mesh.node_sets)
    model = Model(m3, Isotropic(100.0, 0.25))
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="a")
    with pytest.raises(ElementError):
        solve(model)


def test_bad_mesh_input_refused():
    with pytest.raises(MeshError, match="no nodes"):
        Mesh(np.zeros((0, 2)), {"T3": np.zeros((0, 3), int)})
    with pytest.raises(MeshError, match="no 2D cells"):
        Mesh(np.zeros((3, 2)), {})
    with pytest.raises(MeshError, match="outside"):
        Mesh(np.zeros((3, 2)), {"T3": np.array([[0, 1, 5]])})
    with pytest.raises(MeshError, match="NaN"):
        Mesh(np.array([[0, 0], [1, np.nan], [0, 1.0]]), {"T3": np.array([[0, 1, 2]])})


def test_values_at_points_and_along_a_path():
    # a linear displacement field is interpolated exactly (common practice)
    mesh, model = strip("Q8")
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=70.0), case="a")
    r = solve(model)["a"]
    pts = np.array([[12.3, 4.5], [77.7, 19.0], [50.0, 10.0]])
    np.testing.assert_allclose(r.at(pts, "ux"), pts[:, 0] * 70.0 / 70e3, rtol=1e-10)
    d, p, v = r.along((10.0, 0.0), (10.0, 20.0), "sigma_xx", n_points=11)
    np.testing.assert_allclose(v, 70.0, rtol=1e-9)
    with pytest.raises(InputError, match="outside the mesh"):
        r.at((150.0, 5.0), "ux")


def test_unused_nodes_do_not_break_the_solve():
    mesh = rectangle_mesh(20, 10, 2, 1, "Q4")
    nodes = np.vstack([mesh.nodes, [[100.0, 100.0]]])
    m2 = Mesh(nodes, mesh.cells, mesh.edge_sets, mesh.node_sets)
    model = Model(m2, Isotropic(100.0, 0.25))
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="a")
    r = solve(model)["a"]
    assert np.all(np.isfinite(r.u)) and r.equilibrium_error() < 1e-12


def test_regions_with_own_thickness():
    # two halves in series with thickness t1, t2 under end force F: stress F/(W t) in each
    # (statics, common practice)
    from _models import stepped_strip

    r = solve(stepped_strip("thick", 1000.0, 0.0))["a"]
    for g in r.gauss:
        expect = 5.0 / (2.0 if g.block.region == "thick" else 1.0)
        np.testing.assert_allclose(g.stress[..., 0], expect, rtol=1e-10)


def test_selective_rule_relieves_shear_locking():
    # MacNeal-Harder cantilever on a 6 x 1 Q4 mesh (MacNeal and Harder 1985; tip 0.1081, from memory):
    # the full 2 x 2 rule locks in shear (about a tenth of the answer), the selective rule (shear
    # terms on one point) does not (common practice; T. J. R. Hughes, The Finite Element Method,
    # 1987, ch. 4)
    tips = {}
    for rule in ("full", "selective"):
        mesh = rectangle_mesh(6.0, 0.2, 6, 1, "Q4")
        model = Model(mesh, Isotropic(1e7, 0.3), thickness=0.1, quadrature={"Q4": rule})
        model.add_support(Fixed("left"))
        model.add_load(Traction("right", ty=1.0 / 0.02), case="tip")
        r = solve(model)["tip"]
        tips[rule] = r.u[mesh.nodes_of("right"), 1].mean()
    assert tips["full"] < 0.2 * 0.1081
    assert tips["selective"] == pytest.approx(0.1081, rel=0.10)


def test_vtu_result_reads_back_as_a_mesh(tmp_path):
    # a written .vtu is a valid mesh input (meshio reference reader)
    from planar.post.vtk import write_vtu

    mesh, model = strip("Q9")
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="a")
    path = write_vtu(tmp_path / "a.vtu", solve(model)["a"])
    back = Mesh.read(path)
    assert list(back.cells) == ["Q9"]
    np.testing.assert_array_equal(back.cells["Q9"], mesh.cells["Q9"])
    np.testing.assert_allclose(back.nodes, mesh.nodes)
