"""Every solver back end gives the same answer; failures are errors, never poor answers.

Reference: the direct solution of the same system (scipy's SuperLU, a reference library) and the
closed-form strip extension P L / (E A) (common practice).
"""
import numpy as np
import pytest

import planar
from planar.core import solvers
from planar.core.errors import ResourceError, SolverError


def _model(el="Q8", nx=20, ny=6):
    mesh = planar.rectangle_mesh(60.0, 12.0, nx, ny, el)
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-3.0), case="shear")
    model.add_load(planar.Traction("right", tx=40.0), case="pull")
    return model


@pytest.mark.parametrize("name", [s for s in solvers.available_solvers()])
def test_backends_agree(name):
    ref = planar.solve(_model(), solver="superlu")
    res = planar.solve(_model(), solver=name)
    for case in ("shear", "pull"):
        scale = np.abs(ref[case].u).max()
        np.testing.assert_allclose(res[case].u, ref[case].u, atol=1e-8 * scale)
        assert res[case].solver == name
        assert res[case].equilibrium_error() < 1e-8


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
