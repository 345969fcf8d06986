"""Load combinations and envelopes by superposition (planar.post.combine).

Physics check: linear superposition (common practice; S. P. Timoshenko and J. N. Goodier, Theory of
Elasticity, 3rd ed., 1970, section 6): a combination of solved cases equals a direct solve of the
combined loads. Tolerance 1e-10 relative: both sides come from the same factorization, so they
differ by round-off only.
"""
import warnings

import meshio
import numpy as np
import pytest

import planar
from planar import (BodyForce, Fixed, Isotropic, Model, PointForce, Prescribed, Roller, TemperatureChange,
                    Traction, rectangle_mesh, solve)
from planar.core.errors import InputError, NameNotFoundError
from planar.post.combine import (CombinedResult, Combination, combinations, combine, envelope,
                                 plot_envelope, write_envelope_vtu)

RTOL = 1e-10
FACTORS = {"pull": 1.0, "shear": 1.5, "heat": -0.7, "gravity": 2.0}


def _rel(a, b):
    a, b = np.asarray(a, float), np.asarray(b, float)
    return float(np.abs(a - b).max() / max(np.abs(b).max(), 1e-300))


def _model(analysis="plane strain", layout="Q8"):
    mesh = rectangle_mesh(120.0, 30.0, 12, 4, layout)            # mm
    mat = Isotropic(E=70e3, nu=0.33, alpha=23e-6)                # MPa, 1/K
    model = Model(mesh, mat, thickness=3.0, analysis=analysis, units="N, mm, MPa")
    model.add_support(Fixed("left"))
    pull = lambda f: Traction("right", tx=40.0 * f)              # MPa
    shear = lambda f: Traction("top", ty=lambda x, y: -0.05 * f * x)   # MPa, varying along the edge
    heat = lambda f: TemperatureChange(lambda x, y: f * (20.0 + 0.3 * x + 0.1 * y))   # K
    gravity = lambda f: BodyForce(by=-7.8e-5 * f)                # N/mm^3 (a heavy inertial load)
    point = lambda f: PointForce("corner_11", fx=25.0 * f, fy=-40.0 * f)   # N
    makers = {"pull": [pull], "shear": [shear, point], "heat": [heat], "gravity": [gravity]}
    for case, ms in makers.items():
        for m in ms:
            model.add_load(m(1.0), case=case)
    for case, ms in makers.items():  # the same loads with the factors, in one case
        for m in ms:
            model.add_load(m(FACTORS[case]), case="direct")
    return model


@pytest.fixture(scope="module", params=["plane strain", "plane stress"])
def solved(request):
    return solve(_model(request.param))


def test_combination_equals_direct_solve(solved):
    # superposition, Timoshenko and Goodier 1970 section 6 (common practice); round-off tolerance
    cases = {k: v for k, v in solved.items() if k != "direct"}
    c = combine(cases, FACTORS, name="ultimate")
    d = solved["direct"]
    assert isinstance(c, CombinedResult) and isinstance(c, planar.Result)
    assert c.case == "ultimate"
    for attr in ("u", "reactions", "applied"):
        assert _rel(getattr(c, attr), getattr(d, attr)) < RTOL, attr
    for gc, gd in zip(c.gauss, d.gauss):
        for attr in ("strain", "mech_strain", "stress", "szz"):
            assert _rel(getattr(gc, attr), getattr(gd, attr)) < RTOL, attr
    # derived and recovered fields, computed from the combined stress
    for name in ("von_mises", "tresca", "sigma_1", "sigma_zz", "displacement", "eps_xx"):
        assert _rel(c.field(name), d.field(name)) < RTOL, name
    assert _rel(c.field("von_mises", method="spr"), d.field("von_mises", method="spr")) < RTOL
    assert c.max("von_mises")[0] == pytest.approx(d.max("von_mises")[0], rel=RTOL)
    pts = np.array([[30.0, 10.0], [90.0, 22.5]])
    assert _rel(c.at(pts, "sigma_xx"), d.at(pts, "sigma_xx")) < RTOL
    assert c.strain_energy == pytest.approx(d.strain_energy, rel=RTOL)
    assert c.equilibrium_error() < 1e-9


def test_von_mises_is_not_combined_linearly(solved):
    # von Mises is not linear in the stresses (common practice): the combination must not be
    # the factored sum of the cases' von Mises fields
    c = combine(solved, {"pull": 1.0, "shear": 1.5})
    naive = solved["pull"].field("von_mises") + 1.5 * solved["shear"].field("von_mises")
    assert _rel(c.field("von_mises"), naive) > 1e-3
    lin = solved["pull"].field("sigma_xx") + 1.5 * solved["shear"].field("sigma_xx")
    assert _rel(c.field("sigma_xx"), lin) < RTOL


def test_combination_of_combinations_and_vtk(solved, tmp_path):
    combos = combinations(solved, {"A": {"pull": 1.0, "shear": 1.0}, "B": {"A": 2.0, "heat": 1.0}})
    direct = combine(solved, {"pull": 2.0, "shear": 2.0, "heat": 1.0})
    assert _rel(combos["B"].u, direct.u) < RTOL
    assert combos["B"].factors == {"A": 2.0, "heat": 1.0}
    path = planar.write_vtu(tmp_path / "B.vtu", combos["B"])
    m = meshio.read(path)
    assert _rel(m.point_data["von_mises"], combos["B"].field("von_mises")) < 1e-12
    assert Combination("x", {"pull": 1.0, "shear": -1.5}).describe() == "x = 1 x pull - 1.5 x shear"


def test_unknown_case_lists_valid_names(solved):
    with pytest.raises(NameNotFoundError) as e:
        combine(solved, {"pull": 1.0, "wind": 1.5}, name="ULS")
    msg = str(e.value)
    assert "'wind'" in msg and "'pull'" in msg and "'shear'" in msg and "ULS" in msg


def test_bad_factors_are_refused(solved):
    with pytest.raises(InputError, match="needs factors"):
        combine(solved, {})
    with pytest.raises(InputError, match="must be a number"):
        combine(solved, {"pull": "lots"})
    with pytest.raises(InputError, match="finite"):
        combine(solved, {"pull": float("nan")})
    with pytest.raises(InputError, match="name of a load case"):
        combinations(solved, {"pull": {"shear": 1.0}})


def test_results_of_different_models_are_refused():
    a = solve(_model("plane stress"))
    b = solve(_model("plane stress"))      # same mesh and loads, but another model
    other = solve(_model("plane stress", layout="Q4"))
    with pytest.raises(InputError, match="different models or meshes"):
        combine({"a": a["pull"], "b": b["shear"]}, {"a": 1.0, "b": 1.0})
    with pytest.raises(InputError, match="different"):
        envelope({"a": a["pull"], "o": other["pull"]}, "von_mises")


def test_same_model_solved_twice_combines():
    model = _model("plane stress")
    a, b = solve(model, ["pull"]), solve(model, ["shear"])
    d = solve(model, ["pull", "shear"])
    c = combine({"pull": a["pull"], "shear": b["shear"]}, {"pull": 1.0, "shear": 1.0})
    assert _rel(c.u, d["pull"].u + d["shear"].u) < RTOL


def test_prescribed_displacement_warns_when_factors_do_not_add_to_one():
    mesh = rectangle_mesh(50.0, 10.0, 5, 2, "Q4")
    model = Model(mesh, Isotropic(200e3, 0.3))
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_support(Prescribed("right", ux=0.01))
    model.add_load(BodyForce(bx=1e-3), case="A")
    model.add_load(BodyForce(by=1e-3), case="B")
    r = solve(model)
    with pytest.warns(UserWarning, match="prescribe a non-zero displacement"):
        combine(r, {"A": 1.0, "B": 1.0})
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        combine(r, {"A": 0.5, "B": 0.5})


def test_envelope_max_min_and_governing_case(solved, tmp_path):
    combos = combinations(solved, {"ULS": FACTORS, "reverse": {"pull": -1.0}})
    allr = {k: v for k, v in {**solved, **combos}.items() if k != "direct"}
    env = envelope(allr, "sigma_xx")
    V = np.stack([r.field("sigma_xx") for r in allr.values()])
    np.testing.assert_array_equal(env.max, V.max(axis=0))
    np.testing.assert_array_equal(env.min, V.min(axis=0))
    np.testing.assert_array_equal(V[env.governs_max, np.arange(V.shape[1])], env.max)
    np.testing.assert_array_equal(V[env.governs_min, np.arange(V.shape[1])], env.min)
    # the reversed pull governs the min somewhere (it is the only one with compression at the right end)
    assert "reverse" in {env.names[i] for i in env.governs_min}
    vmax, _, node, case = env.peak()
    assert case == env.governing(node)[0] and vmax == env.max[node]
    assert sum(a for a, _ in env.counts().values()) == V.shape[1]
    assert "envelope of sigma_xx" in env.summary()

    path = write_envelope_vtu(tmp_path / "env.vtu", env)
    m = meshio.read(path)
    np.testing.assert_allclose(m.point_data["sigma_xx_max"], env.max)
    np.testing.assert_array_equal(m.point_data["sigma_xx_min_case"], env.governs_min)
    assert {k: int(v[0]) for k, v in m.field_data.items() if k != "planar_units"} == \
        {n: i for i, n in enumerate(env.names)}
    assert bytes(np.asarray(m.field_data["planar_units"], np.uint8)).decode() == "N-mm-MPa"  # units travel
    png = tmp_path / "env.png"
    fig = plot_envelope(env, png, title="strap envelope")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert len(fig.axes) >= 3
    assert not list(tmp_path.glob(".*part*"))   # written atomically, no temporary left


def test_envelope_of_von_mises_uses_each_cases_own_stress(solved):
    env = envelope({"pull": solved["pull"], "shear": solved["shear"]}, "von_mises", method="spr")
    np.testing.assert_array_equal(env.max, np.maximum(solved["pull"].field("von_mises", method="spr"),
                                                      solved["shear"].field("von_mises", method="spr")))
    with pytest.raises(InputError, match="unknown field"):
        envelope(solved, "von_misses")
    with pytest.raises(InputError, match="at least one"):
        envelope({}, "ux")
