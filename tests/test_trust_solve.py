"""Every solve checks its own answer (planar.core.diagnose).

Covers: the backward error, equilibrium error and condition estimate kept in ``Result.solver_info``
on every back end; adversarial models that must end in a ``SolverError`` naming the cause and the
place: a stiff part held only through a layer 1e10-1e14 times softer, a piece joined by one element
of a 1e12 times softer material, clamped strips of length over depth 1e4 and 1e5, a slender rib on a
stocky block, moduli or loads out of the range of double precision, zero-energy modes, a hinge that
reaches the back end past the topological checks (called a mechanism), an iterative failure on a
definite matrix (not called a mechanism); healthy models that must pass without an error or an
"ill-conditioned" warning: stiffness contrast 1e3-1e4, slenderness 100, plates with a hole in any
consistent units, a free thermal expansion (self-balanced loads); a contrast of 1e8 that is answered
with the warning; the diagnosis of a rigid motion (no strain) against a bending mode.

The iterative back end (AMG-preconditioned CG), whose accuracy goal drives the iteration: healthy
clamped strips of slenderness 30, 100 and 300 and a contrast of 1e4 (1e6 in the slow run) are
continued to the figures they need and agree with CHOLMOD to the figures both claim; an odd number of
free unknowns (a roller freeing one unknown of a node) with three load cases matches CHOLMOD case by
case; strips of slenderness 1e4 (and 1e5, slow) and a 1e12 softer layer end in a named SolverError,
not called a mechanism; an iterative solve that cannot go on is refused as such (use a direct back
end), not called singular.

References: Euler-Bernoulli cantilever deflection P L^3 / (3 E I) with the Timoshenko shear term
P L / (k G A), k = 5/6 (S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970,
section 21, and common practice); bars in series under tension, elongation sum P L_i / (E_i A)
(statics, common practice); free thermal expansion u = alpha dT x and linearity of the answer in the
loads (common practice); condition numbers from the dense eigenvalues (numpy's LAPACK).
"""
import warnings

import numpy as np
import pytest

import planar
from planar.core import diagnose, solvers
from planar.core.assembly import Assembly
from planar.core.errors import SolverError
from planar.core.mesh import Mesh

BACKENDS = [s for s in ("cholmod", "pardiso", "superlu", "amg") if s in solvers.available_solvers()]
DIRECT = [s for s in BACKENDS if s != "amg"]
#: every back end, the iterative one in the slow run only (it takes seconds where the others take ms)
ALL_SLOW_AMG = DIRECT + [pytest.param("amg", marks=pytest.mark.slow)] if "amg" in BACKENDS else DIRECT
E = 200e3


def _regions(mesh, name_of):
    """Mesh with regions given by a function of the cell centre returning a region name."""
    key = next(iter(mesh.cells))
    cen = mesh.nodes[mesh.cells[key]].mean(axis=1)
    names = np.array([name_of(x, y) for x, y in cen])
    regions = {r: {key: np.flatnonzero(names == r)} for r in np.unique(names)}
    return Mesh(mesh.nodes, mesh.cells, mesh.edge_sets, mesh.node_sets, regions=regions)


def layered(ratio: float, el: str = "Q8") -> planar.Model:
    """A 30 x 10 strip clamped on the left: 'base' (x < 10), 'layer' (10 < x < 20, ratio times softer),
    'block' (x > 20), loaded across its right end."""
    mesh = _regions(planar.rectangle_mesh(30.0, 10.0, 12, 4, el),
                    lambda x, y: "base" if x < 10 else ("layer" if x < 20 else "block"))
    model = planar.Model(mesh, planar.Isotropic(E, 0.3), thickness=1.0)
    model.assign("layer", material=planar.Isotropic(E / ratio, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-1e-3 / ratio), case="tip")
    return model


def strip(slender: float, nx: int = 200, ny: int = 1, el: str = "Q8", depth: float = 1.0) -> planar.Model:
    """A clamped strip of length slender * depth with a tip shear force giving a deflection of L / 1000."""
    L = slender * depth
    mesh = planar.rectangle_mesh(L, depth, nx, ny, el)
    model = planar.Model(mesh, planar.Isotropic(E, 0.3), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    I = depth**3 / 12
    P = 3 * E * I * (L / 1000) / L**3
    model.add_load(planar.Traction("right", ty=-P / depth), case="tip")
    return model


def joined_by_one_element(ratio: float) -> planar.Model:
    """A 40 x 8 Q4 strip cut across at 20 < x < 22 except for one element of a ratio times softer
    material ('joint'): the right piece hangs on that element alone."""
    mesh = planar.rectangle_mesh(40.0, 8.0, 20, 4, "Q4")
    cen = mesh.nodes[mesh.cells["Q4"]].mean(axis=1)
    gap = np.abs(cen[:, 0] - 21.0) < 0.5
    joint = gap & (np.abs(cen[:, 1] - 5.0) < 1.0)
    keep = ~gap | joint
    cells = mesh.cells["Q4"][keep]
    c2 = cen[keep]
    regions = {"joint": {"Q4": np.flatnonzero(joint[keep])},
               "left part": {"Q4": np.flatnonzero(c2[:, 0] < 20)},
               "right part": {"Q4": np.flatnonzero(c2[:, 0] > 22)}}
    m = Mesh(mesh.nodes, {"Q4": cells}, mesh.edge_sets, mesh.node_sets, regions=regions)
    model = planar.Model(m, planar.Isotropic(E, 0.3), thickness=1.0)
    model.assign("joint", material=planar.Isotropic(E / ratio, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-1e-9), case="tip")
    return model


def _solve_quietly(model, solver):
    """Solve; return the results and the planar warning codes raised."""
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        res = planar.solve(model, solver=solver)
    return res, [getattr(w.message, "code", "") for w in caught]


# ----------------------------------------------------------------------------------- adversarial
@pytest.mark.parametrize("solver", ALL_SLOW_AMG)
@pytest.mark.parametrize("ratio", [1e10, 1e12, 1e14])
def test_stiff_part_held_through_soft_layer_is_refused(ratio, solver):
    with pytest.raises(SolverError, match=r"held only through region\(s\) 'layer'") as err:
        planar.solve(layered(ratio), solver=solver)
    text = str(err.value)
    assert "'block'" in text and "times softer" in text
    assert "softest mode" in text  # where: the node and the region(s) that move


@pytest.mark.parametrize("solver", ALL_SLOW_AMG)
@pytest.mark.parametrize("slender", [1e4, 1e5])
def test_extremely_slender_strip_is_refused(slender, solver):
    with pytest.raises(SolverError, match=r"very slender .*ratio 1e\+0[45]") as err:
        planar.solve(strip(slender), solver=solver)
    assert "not a mechanism" in str(err.value)


def ribbed(slender: float) -> planar.Model:
    """A 10 x 10 Q4 block clamped on the left with a rib of depth 1 and length slender standing out of
    its right side (nodes joined where they meet), loaded across the rib's tip."""
    block = planar.rectangle_mesh(10.0, 10.0, 10, 10, "Q4")
    rib = planar.rectangle_mesh(slender, 1.0, 200, 1, "Q4", origin=(10.0, 4.0))
    nb = block.nodes.shape[0]
    mesh = Mesh(np.vstack([block.nodes, rib.nodes]), {"Q4": np.vstack([block.cells["Q4"], rib.cells["Q4"] + nb])},
                {"left": block.edge_sets["left"], "tip": rib.edge_sets["right"] + nb},
                regions={"block": {"Q4": np.arange(100)}, "rib": {"Q4": np.arange(100, 300)}})
    model = planar.Model(mesh.merge_duplicate_nodes(), planar.Isotropic(E, 0.3), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("tip", ty=-E / 4 * 1e-3 / slender**2), case="tip")
    return model


@pytest.mark.parametrize("solver", DIRECT)
def test_slender_region_of_a_stocky_part_is_named(solver):
    # the part as a whole is not slender; its rib is (length over depth 1e5)
    with pytest.raises(SolverError, match=r"region 'rib' is very slender .*ratio 1e\+05") as err:
        planar.solve(ribbed(1e5), solver=solver)
    assert "not a mechanism" in str(err.value)


@pytest.mark.parametrize("solver", BACKENDS)
def test_piece_hanging_on_one_soft_element_is_refused(solver):
    with pytest.raises(SolverError, match=r"held only through region\(s\) 'joint'") as err:
        planar.solve(joined_by_one_element(1e12), solver=solver)
    assert "'right part'" in str(err.value) and "near-mechanism" in str(err.value)


@pytest.mark.parametrize("solver", DIRECT)
@pytest.mark.parametrize("modulus, load", [(1e-300, 1.0), (1e300, 1e-300), (2e5, 1e-320)])
def test_numbers_out_of_range_are_named(modulus, load, solver):
    # moduli or loads beyond 1e150 or below 1e-150 (units far off): the solve loses its figures
    mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
    model = planar.Model(mesh, planar.Isotropic(modulus, 0.3), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=load), case="tip")
    with pytest.raises(SolverError, match="out of the range of double precision|overflowed"):
        planar.solve(model, solver=solver)


@pytest.mark.parametrize("solver", DIRECT)
def test_zero_energy_modes_are_named(solver):
    # one-point integration of Q4 has hourglass modes (common practice); whichever check meets them
    # first, the error says so
    mesh = planar.rectangle_mesh(10.0, 10.0, 4, 4, "Q4")
    model = planar.Model(mesh, planar.Isotropic(E, 0.3), quadrature={"Q4": 1})
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="a")
    with pytest.raises(planar.PlanarError, match="zero-energy|hourglass"):
        planar.solve(model, solver=solver)


def hinged(solver, monkeypatch):
    """Two 10 x 10 Q4 squares sharing one corner node (a hinge) with the topological checks switched
    off, so the singular matrix reaches the back end."""
    import planar.core.static as static

    monkeypatch.setattr(static, "rigid_body_check", lambda *a, **k: None)
    a = planar.rectangle_mesh(10.0, 10.0, 4, 4, "Q4")
    n = a.nodes.shape[0]
    corner = int(np.flatnonzero((a.nodes[:, 0] == 10.0) & (a.nodes[:, 1] == 10.0))[0])
    b_nodes = a.nodes + 10.0
    # node 0 of the second square sits on the first one's corner: join them there only
    renum = np.arange(n) + n
    renum[0] = corner
    nodes = np.vstack([a.nodes, b_nodes])
    cells = np.vstack([a.cells["Q4"], renum[a.cells["Q4"]]])
    mesh = Mesh(nodes, {"Q4": cells}, {"left": a.edge_sets["left"]},
                regions={"lower": {"Q4": np.arange(16)}, "upper": {"Q4": np.arange(16, 32)}})
    model = planar.Model(mesh, planar.Isotropic(E, 0.3), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.PointForce(tuple(b_nodes[-1]), fx=1.0), case="a")  # a moment about the hinge
    return model


@pytest.mark.parametrize("solver", ALL_SLOW_AMG)
def test_a_real_mechanism_reaching_the_solver_is_called_a_mechanism(solver, monkeypatch):
    model = hinged(solver, monkeypatch)
    with pytest.raises(SolverError, match=r"Likely cause: a mechanism: part of the model can move without "
                                          r"straining") as err:
        planar.solve(model, solver=solver)
    assert "'upper'" in str(err.value)  # the piece that turns about the hinge moves with the mode


# ----------------------------------------------------------------------------------- healthy
@pytest.mark.parametrize("solver", BACKENDS)
def test_every_backend_keeps_the_figures(solver):
    res, codes = _solve_quietly(strip(10, 80, 8, "Q4"), solver)
    info = res["tip"].solver_info
    for key in ("backward_error", "equilibrium_error", "condition_estimate", "error_estimate",
                "significant_figures"):
        assert key in info, key
    assert info["backward_error"] < 1e-12
    assert info["equilibrium_error"] < 1e-9
    assert 1e3 < info["condition_estimate"] < 1e12
    assert info["significant_figures"] > 6
    assert "ill-conditioned" not in codes


@pytest.mark.parametrize("solver", DIRECT)
@pytest.mark.parametrize("mesh", [(200, 2), (400, 4)])
def test_slenderness_100_passes_quietly_and_matches_beam_theory(solver, mesh):
    nx, ny = mesh
    res, codes = _solve_quietly(strip(100, nx, ny), solver)
    r = res["tip"]
    assert "ill-conditioned" not in codes and not any(w.code == "ill-conditioned" for w in r.warnings)
    L, H, nu = 100.0, 1.0, 0.3
    I, A, G = H**3 / 12, H, E / (2 * (1 + nu))
    P = 3 * E * I * (L / 1000) / L**3
    ref = P * L**3 / (3 * E * I) + P * L / (5 / 6 * G * A)  # Euler-Bernoulli + Timoshenko shear
    tip = -r.u[r.mesh.nodes_of("right"), 1].mean()
    assert tip == pytest.approx(ref, rel=2e-3)


@pytest.mark.parametrize("solver", ALL_SLOW_AMG)
@pytest.mark.parametrize("ratio", [1e3, 1e4])
def test_contrast_in_series_passes_quietly_and_matches_statics(ratio, solver):
    # nu = 0: each part is a bar in uniform tension, elongation P L_i / (E_i A) (statics)
    mesh = _regions(planar.rectangle_mesh(30.0, 10.0, 12, 4, "Q8"),
                    lambda x, y: "base" if x < 10 else ("layer" if x < 20 else "block"))
    model = planar.Model(mesh, planar.Isotropic(E, 0.0), thickness=1.0)
    model.assign("layer", material=planar.Isotropic(E / ratio, 0.0))
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    s = 1e-3 * E / ratio  # a strain of 1e-3 in the soft layer
    model.add_load(planar.Traction("right", tx=s), case="pull")
    res, codes = _solve_quietly(model, solver)
    r = res["pull"]
    assert "ill-conditioned" not in codes
    ref = s * 10 / E * 2 + s * 10 / (E / ratio)
    end = r.u[r.mesh.nodes_of("right"), 0]
    np.testing.assert_allclose(end, ref, rtol=1e-7)


@pytest.mark.parametrize("solver", DIRECT)
def test_contrast_1e8_answers_with_a_warning(solver):
    # about 5 figures left: answered, but with the "ill-conditioned" warning
    res, codes = _solve_quietly(layered(1e8), solver)
    assert "ill-conditioned" in codes
    assert any(w.code == "ill-conditioned" for w in res["tip"].warnings)
    assert 3 < res["tip"].solver_info["significant_figures"] < 5


def test_condition_estimate_against_dense_eigenvalues():
    # the estimate uses ||K||_inf >= lambda_max and an upper bound of lambda_min: it may be above the
    # 2-norm condition number by the ratio ||K||_inf / lambda_max (a few) and below it by little
    for model in (strip(20, 40, 2), layered(1e6)):
        model_res = planar.solve(model, solver=DIRECT[0], keep_system=True)
        r = next(iter(model_res.values()))
        L = r.assembly.system.lower.toarray()
        K = L + L.T - np.diag(np.diag(L))
        w = np.linalg.eigvalsh(K)
        cond = w[-1] / w[0]
        est = r.solver_info["condition_estimate"]
        assert 0.5 * cond < est < 20 * cond


def test_estimates_are_reproducible():
    a = planar.solve(strip(100, 200, 2), solver=DIRECT[0])["tip"].solver_info
    b = planar.solve(strip(100, 200, 2), solver=DIRECT[0])["tip"].solver_info
    assert a["condition_estimate"] == b["condition_estimate"]


def test_rigid_motion_has_no_strain_and_bending_has():
    model = strip(50, 100, 2)
    asm = Assembly(model)
    xy = asm.mesh.nodes
    free = np.arange(2 * xy.shape[0])
    rigid = np.column_stack([-(xy[:, 1] - 0.5), xy[:, 0] - 20.0]).ravel() * 1e-3 + 0.3
    assert diagnose.mode_strain(asm, rigid, free) < diagnose.ZERO_STRAIN
    x = xy[:, 0] / 50.0
    bend = np.column_stack([-(xy[:, 1] - 0.5) * 2 * x / 50.0, x**2]).ravel()  # w = x^2, plane sections
    assert diagnose.mode_strain(asm, bend, free) > 1e3 * diagnose.ZERO_STRAIN


@pytest.mark.skipif("amg" not in BACKENDS, reason="pyamg not installed")
def test_iterative_failure_on_a_definite_matrix_is_not_called_a_mechanism(monkeypatch):
    orig = solvers._AMG.__init__

    def few_iterations(self, lower, **kw):
        orig(self, lower, **kw)
        self.maxiter = 1

    monkeypatch.setattr(solvers._AMG, "__init__", few_iterations)
    with pytest.raises(SolverError, match="not a mechanism") as err:
        planar.solve(strip(10, 40, 4), solver="amg")
    assert "solver='cholmod'" in str(err.value)


def test_equilibrium_error_of_several_cases_at_once():
    # statics (common practice): the reactions balance the loads; a wrong reaction is seen as such
    model = layered(1e3)
    model.add_load(planar.Traction("right", tx=2e-6), case="pull")
    res = planar.solve(model, solver=DIRECT[0])
    R = np.stack([res[c].reactions for c in ("tip", "pull")], axis=2)
    F = np.stack([res[c].applied for c in ("tip", "pull")], axis=2)
    e = diagnose.equilibrium_errors(res["tip"].assembly, R, F)
    assert e[0] == pytest.approx(res["tip"].equilibrium_error(), rel=1e-12, abs=1e-18)
    assert np.all(e < 1e-9)
    R[:, :, 1] *= 0.99  # reactions 1 % short of the load
    assert diagnose.equilibrium_errors(res["tip"].assembly, R, F)[1] == pytest.approx(0.01, rel=1e-6)


def test_free_thermal_expansion_is_not_called_out_of_balance():
    # self-balanced nodal forces (a free expansion, no reactions): no refusal, no warning
    mesh = planar.rectangle_mesh(2.0, 1.0, 8, 4, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E, 0.3, alpha=1e-5), thickness=1.0)
    model.add_support(planar.Roller("corner_00", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_support(planar.Roller("corner_10", fixed="y"))
    model.add_load(planar.TemperatureChange(100.0), case="hot")
    res, codes = _solve_quietly(model, DIRECT[0])
    assert res["hot"].solver_info["equilibrium_error"] < 1e-9 and "ill-conditioned" not in codes
    # free expansion: u = alpha dT x (common practice)
    np.testing.assert_allclose(res["hot"].u[:, 0], 1e-3 * res["hot"].mesh.nodes[:, 0], atol=1e-12)


@pytest.mark.parametrize("el", ["T3", "T6", "Q4", "Q8", "Q9"])
def test_healthy_plates_in_any_consistent_units_pass_quietly(el):
    # a plate with a hole in N, mm, MPa and the same plate in units a million times off (E = 1, loads
    # 1e-6): no error, no "ill-conditioned" warning, and the stresses scale with the loads (linearity)
    from planar.geometry import Circle, Plate, element_options, mesh as make_mesh

    plate = Plate.rectangle(100.0, 40.0).cut(Circle((50, 20), 8, name="hole")).add_point("anchor", (0.0, 0.0))
    m = make_mesh(plate, size=6.0, **element_options(el))
    peaks = []
    for modulus, load in [(72e3, 100.0), (1.0, 1e-6)]:
        model = planar.Model(m, planar.Isotropic(modulus, 0.33), thickness=2.0)
        model.add_support(planar.Roller("left", fixed="x"))
        model.add_support(planar.Roller("anchor", fixed="y"))
        model.add_load(planar.Traction("right", tx=load), case="pull")
        res, codes = _solve_quietly(model, "auto")
        assert "ill-conditioned" not in codes
        assert res["pull"].solver_info["significant_figures"] > 6
        peaks.append(np.abs(res["pull"].gauss[0].stress).max() / load)
    assert peaks[1] == pytest.approx(peaks[0], rel=1e-8)


# ------------------------------------------------- the iterative back end: accuracy drives the iteration
NEEDS_BOTH = pytest.mark.skipif(not {"amg", "cholmod"} <= set(BACKENDS), reason="needs pyamg and cvxopt")


def _agree(r, ref) -> tuple[float, float]:
    """Largest displacement difference over the largest displacement, and the figures both answers claim."""
    diff = float(np.abs(r.u - ref.u).max() / np.abs(ref.u).max())
    figs = min(r.solver_info["significant_figures"], ref.solver_info["significant_figures"])
    return diff, figs


@NEEDS_BOTH
@pytest.mark.parametrize("slender, nx, ny", [(30, 90, 2), (100, 200, 1),
                                             pytest.param(100, 400, 2, marks=pytest.mark.slow), (300, 300, 1)])
def test_iterative_solve_of_a_healthy_slender_strip_goes_on_to_the_figures_it_needs(slender, nx, ny):
    # the AMG run stops at rtol, which on these condition numbers (2e8 to 5e11) leaves condition x
    # backward error near or above 1; the solve check continues it to the accuracy the model needs
    ref = planar.solve(strip(slender, nx, ny), solver="cholmod")["tip"]
    res, codes = _solve_quietly(strip(slender, nx, ny), "amg")
    r = res["tip"]
    info = r.solver_info
    assert info["significant_figures"] >= 3
    assert info["iterations"][0] > 0 and 0 < info["residual"][0] < 1
    # warned exactly when fewer than five figures are estimated (diagnose.WARN)
    assert ("ill-conditioned" in codes) == (info["error_estimate"] > diagnose.WARN)
    diff, figs = _agree(r, ref)
    assert diff <= 10.0 ** -figs, (diff, figs)  # the two back ends agree to the figures they claim
    L, H, nu = float(slender), 1.0, 0.3
    I, A, G = H**3 / 12, H, E / (2 * (1 + nu))
    P = 3 * E * I * (L / 1000) / L**3
    beam = P * L**3 / (3 * E * I) + P * L / (5 / 6 * G * A)  # Euler-Bernoulli + Timoshenko shear
    tip = -r.u[r.mesh.nodes_of("right"), 1].mean()
    assert tip == pytest.approx(beam, rel=2e-3)


@NEEDS_BOTH
@pytest.mark.parametrize("ratio", [1e4, pytest.param(1e6, marks=pytest.mark.slow)])
def test_iterative_solve_of_a_moderate_contrast_matches_the_direct_one(ratio):
    ref = planar.solve(layered(ratio), solver="cholmod")["tip"]
    res, codes = _solve_quietly(layered(ratio), "amg")
    r = res["tip"]
    diff, figs = _agree(r, ref)
    assert figs >= 5 and "ill-conditioned" not in codes
    assert diff <= 10.0 ** -figs, (diff, figs)
    # statics: the clamp carries the tip shear (common practice)
    assert r.reactions[:, 1].sum() == pytest.approx(-r.applied[:, 1].sum(), rel=1e-6)


def odd_plate(el: str) -> planar.Model:
    """A 20 x 4 plate clamped on the left and held in y only at its lower right corner (a roller that
    frees one unknown of that node: an odd number of free unknowns), with three load cases."""
    model = planar.Model(planar.rectangle_mesh(20.0, 4.0, 10, 4, el), planar.Isotropic(E, 0.3), thickness=2.0)
    model.add_support(planar.Fixed("left"))
    model.add_support(planar.Roller("corner_10", "y"))
    model.add_load(planar.Traction("right", tx=3.0), case="pull")
    model.add_load(planar.Traction("top", ty=-1.0), case="press")
    model.add_load(planar.Traction("top", tx=0.5, ty=0.25), case="skew")
    return model


@NEEDS_BOTH
@pytest.mark.parametrize("el", ["Q8", "T6"])
def test_iterative_solve_of_an_odd_free_system_with_several_cases_matches_the_direct_one(el):
    model = odd_plate(el)
    n_left = model.mesh.nodes_of("left").size
    assert (2 * model.mesh.n_nodes - 2 * n_left - 1) % 2 == 1
    ref = planar.solve(odd_plate(el), solver="cholmod")
    res, codes = _solve_quietly(model, "amg")
    assert "ill-conditioned" not in codes and list(res) == ["pull", "press", "skew"]
    for case in res:
        diff, figs = _agree(res[case], ref[case])
        assert figs >= 8 and diff <= 1e-8, (case, diff, figs)
        # statics: reactions balance the applied loads (common practice)
        r = res[case]
        assert np.abs(r.reactions.sum(axis=0) + r.applied.sum(axis=0)).max() <= 1e-8 * np.abs(r.applied).sum()
    assert len(res["pull"].solver_info["iterations"]) == 3


@pytest.mark.skipif("amg" not in BACKENDS, reason="pyamg not installed")
@pytest.mark.parametrize("model, cause", [
    (lambda: strip(1e4), r"very slender .*ratio 1e\+04"),
    pytest.param(lambda: strip(1e5), r"very slender .*ratio 1e\+05", marks=pytest.mark.slow),
    (lambda: layered(1e12), r"held only through region\(s\) 'layer'"),
])
def test_hopeless_models_on_the_iterative_solver_end_in_a_named_error(model, cause):
    with pytest.raises(SolverError, match=cause) as err:
        planar.solve(model(), solver="amg")
    text = str(err.value)
    assert "Likely cause: a mechanism" not in text  # neither is a mechanism
    assert "solver='cholmod'" in text or "held only through" in text


@pytest.mark.skipif("amg" not in BACKENDS, reason="pyamg not installed")
def test_an_iterative_solve_left_short_is_refused_as_such_not_called_singular(monkeypatch):
    # CG stopped after 7 steps (a backward error of rtol) and unable to go on (a continuation that
    # stagnates at once): a strip of slenderness 300 needs far more figures than that leaves (the
    # p-multigrid preconditioner gives enough of them after 9 steps)
    orig = solvers._AMG.__init__

    def few_iterations(self, lower, **kw):
        orig(self, lower, **kw)
        self.maxiter = 7

    monkeypatch.setattr(solvers._AMG, "__init__", few_iterations)
    monkeypatch.setattr(solvers._AMG, "refine", lambda self, b, x, *a, **k: x)
    with pytest.raises(SolverError, match="the iterative solver could not reach the accuracy") as err:
        planar.solve(strip(300, 300, 1), solver="amg")
    text = str(err.value)
    assert "singular" not in text and "solver='cholmod' or 'pardiso'" in text
    assert "very slender" in text and "not a mechanism" in text
