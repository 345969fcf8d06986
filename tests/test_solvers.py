"""Every solver back end gives the same answer; failures are errors, never poor answers.

Reference: a dense solve of the same assembled system (scipy.linalg.solve, a reference library,
independent of every sparse back end) and the closed-form strip extension P L / (E A) (common
practice).
"""
import numpy as np
import pytest
import scipy.linalg

import planar
from _models import strip_model
from planar.core import solvers
from planar.core.assembly import Assembly
from planar.core.errors import ResourceError, SolverError


def _model(el="Q8", nx=20, ny=6):
    return strip_model(60.0, 12.0, nx, ny, el, loads={"shear": planar.Traction("right", ty=-3.0),
                                                      "pull": planar.Traction("right", tx=40.0)})


def _dense_reference(model, case: str) -> np.ndarray:
    """Displacements (n, 2) of a model held by ``Fixed("left")`` from a dense solve of the assembled
    system with the held rows and columns removed (scipy.linalg.solve, a reference library; no
    sparse back end of planar is involved)."""
    asm = Assembly(model)
    K = asm.stiffness().toarray()
    f, _ = asm.load_vector(case)
    held = model.mesh.nodes_of("left")
    free = np.setdiff1d(np.arange(K.shape[0]), np.concatenate([2 * held, 2 * held + 1]))
    u = np.zeros(K.shape[0])
    u[free] = scipy.linalg.solve(K[np.ix_(free, free)], f[free], assume_a="pos")
    return u.reshape(-1, 2)


@pytest.fixture(scope="module")
def dense_answers():
    model = _model()
    return {case: _dense_reference(model, case) for case in ("shear", "pull")}


@pytest.mark.parametrize("name", [s for s in solvers.available_solvers()])
def test_backends_agree(name, dense_answers):
    res = planar.solve(_model(), solver=name)
    for case in ("shear", "pull"):
        ref = dense_answers[case]
        scale = np.abs(ref).max()
        np.testing.assert_allclose(res[case].u, ref, atol=1e-8 * scale)
        assert res[case].solver == name
        assert res[case].equilibrium_error() < 1e-8


def test_pull_agrees_with_the_strip_extension():
    # sigma L / E = P L / (E A) for the end displacement, within the clamping's Poisson restraint: the held end
    # stops the lateral contraction there, so the strip is a little stiffer (common practice)
    res = planar.solve(_model(), solver="superlu")["pull"]
    closed = 40.0 * 60.0 / 70e3
    tip = res.u[res.model.mesh.nodes_of("right"), 0].mean()
    assert 0.95 * closed < tip < closed


def test_amg_reports_iterations_and_residual():
    pytest.importorskip("pyamg")
    res = planar.solve(_model("T6", 40, 10), solver="amg")["pull"]
    info = res.solver_info
    assert info["iterations"] and all(i > 0 for i in info["iterations"])
    assert max(info["residual"]) < 1e-9


def test_amg_non_convergence_is_an_error(monkeypatch):
    pytest.importorskip("pyamg")
    model = _model("T6", 60, 12)
    orig = solvers._AMG.__init__

    def few_iterations(self, lower, **kw):
        orig(self, lower, **kw)
        self.maxiter = 2

    monkeypatch.setattr(solvers._AMG, "__init__", few_iterations)
    with pytest.raises(SolverError, match="did not converge"):
        planar.solve(model, solver="amg")


def test_auto_choice_and_memory_refusal():
    assert solvers.choose(1000) in solvers.available_solvers()
    with pytest.raises(ResourceError, match="GiB"):
        solvers.choose(50_000_000, memory=2**30)
    with pytest.raises(ResourceError, match="available"):
        solvers.choose(10_000_000, "cholmod", memory=2**30)


def test_mechanism_from_reduced_integration_is_refused():
    # one-point integration of Q4 has hourglass modes: K singular (common practice)
    mesh = planar.rectangle_mesh(10.0, 10.0, 4, 4, "Q4")
    model = planar.Model(mesh, planar.Isotropic(1.0, 0.3), quadrature={"Q4": 1})
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=1.0), case="a")
    with pytest.raises(SolverError, match="singular"):
        planar.solve(model, solver="cholmod" if "cholmod" in solvers.available_solvers() else "superlu")
