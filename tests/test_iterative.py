"""The iterative back end (``solver="amg"``: CG preconditioned by p-multigrid and smoothed
aggregation) on every element type and support layout: each answer is the direct solver's.

Reference: the direct sparse Cholesky solve of the same model (CHOLMOD, or scipy's SuperLU where
CHOLMOD is missing), a separate code path; and the closed-form strip extension P L / (E A) (common
practice). The multigrid methods are P. Vaněk, J. Mandel and M. Brezina, Computing 56 (1996)
(smoothed aggregation) and E. M. Rønquist and A. T. Patera, J. Sci. Comput. 2 (1987) (p-multigrid),
from memory: their property checked here is an iteration count nearly independent of the mesh size.
"""
import numpy as np
import pytest

import planar
from _models import strip_model
from planar.core import solvers
from planar.core.registry import registry

pytest.importorskip("pyamg")

DIRECT = "cholmod" if "cholmod" in solvers.available_solvers() else "superlu"

#: answers agree to this share of the largest displacement: CG stops at a relative residual of 1e-10,
#: and these strips' condition numbers (below 1e5) bound the error to about 1e-5 of that in the worst
#: case; the measured agreement is 1e-11 to 1e-9
AGREE = 1e-7

LOADS = {"shear": planar.Traction("right", ty=-3.0), "pull": planar.Traction("right", tx=40.0),
         "bend": planar.Traction("top", ty=-0.5)}


def _elements() -> list[str]:
    names = ["T3", "T6", "Q4", "Q8", "Q9"]
    if "QM6" in registry().names("element"):  # the example plugin element, when installed
        names.append("QM6")
    return names


def _strip(element: str, hold: str = "fixed", nx: int = 16, ny: int = 4):
    if element == "QM6":
        mesh = planar.rectangle_mesh(60.0, 12.0, nx, ny, "Q4")
        return strip_model(60.0, 12.0, mesh=mesh, hold=hold, loads=LOADS, elements={"Q4": "QM6"})
    return strip_model(60.0, 12.0, nx, ny, element, hold=hold, loads=LOADS)


def _agree(model, **kw):
    direct = planar.solve(model, solver=DIRECT)
    it = planar.solve(model, solver="amg", keep_system=True, **kw)
    for case in LOADS:
        ref = direct[case].u
        scale = np.abs(ref).max()
        assert scale > 0
        np.testing.assert_allclose(it[case].u, ref, atol=AGREE * scale, err_msg=case)
        assert it[case].solver == "amg"
        info = it[case].solver_info
        assert info["residual"][list(LOADS).index(case)] < 1e-9
    return it


@pytest.mark.parametrize("element", _elements())
def test_every_element_type_matches_the_direct_solve_in_every_load_case(element):
    it = _agree(_strip(element))
    info = next(iter(it.values())).solver_info
    quadratic = element in ("T6", "Q8", "Q9")
    assert info["method"] == ("p-multigrid + smoothed aggregation" if quadratic else "smoothed aggregation")
    assert 0 < max(info["iterations"]) < 60


@pytest.mark.parametrize("element", ["T6", "Q8", "Q4"])
def test_rollers_that_free_one_unknown_of_a_node_and_an_odd_system(element):
    # rollers hold x along the left edge and y at two nodes of the bottom edge: those nodes keep one
    # free unknown each, and the system's size is odd (the old hierarchy's 2 x 2 smoother refused such
    # systems)
    model = _strip(element, hold="roller", nx=15, ny=4 if element == "Q4" else 3)
    model.add_support(planar.Roller((32.0, 0.0), fixed="y"))  # on the line uy = 0 of the uniform pull
    it = _agree(model)
    n = next(iter(it.values())).assembly.system.lower.shape[0]
    assert n % 2 == 1
    # the pull under rollers is uniform: end displacement sigma L / E (common practice)
    pull = it["pull"]
    tip = pull.u[pull.model.mesh.nodes_of("right"), 0]
    np.testing.assert_allclose(tip, 40.0 * 60.0 / 70e3, rtol=1e-8)


@pytest.mark.parametrize("element", ["T6", "Q9"])
def test_inclined_roller_rotated_unknowns(element):
    # a roller along a tilted direction puts its nodes' unknowns in a rotated basis, which the
    # p-multigrid prolongation must follow
    model = _strip(element)
    model.add_support(planar.Roller("right", fixed=(0.6, 0.8)))
    _agree(model)


def test_pin_unknowns_of_their_own():
    # a rigid tie adds the pin's own unknowns (x, y, rotation: an odd count) to the system
    from planar.core.pins import Pin, PinLoad

    model = strip_model(60.0, 12.0, 16, 4, "T6", hold="fixed")
    model.add_pin(Pin("right", tie="rigid", hold=None))
    for case, load in {"shear": PinLoad("right", fy=-30.0), "pull": PinLoad("right", fx=400.0),
                       "bend": PinLoad("right", moment=50.0)}.items():
        model.add_load(load, case=case)
    _agree(model)


def test_bare_matrix_of_odd_size_without_a_nodal_space():
    # factorize() on a matrix alone (no nodes known): the hierarchy takes it as it is
    model = _strip("Q8", hold="roller", nx=15, ny=3)
    model.add_support(planar.Roller((32.0, 0.0), fixed="y"))
    res = planar.solve(model, solver=DIRECT, keep_system=True)["pull"]
    system, rhs = res.assembly.system, res.assembly.rhs
    assert system.lower.shape[0] % 2 == 1
    ref = solvers.factorize(system.lower, DIRECT).solve(rhs)
    x = solvers.factorize(system.lower, "amg").solve(rhs)
    np.testing.assert_allclose(x, ref, atol=AGREE * np.abs(ref).max())


def test_iteration_count_nearly_independent_of_the_mesh_size():
    # the property of a multigrid preconditioner (Vaněk, Mandel and Brezina 1996, from memory): CG's
    # iteration count stays nearly constant as the mesh is refined (here 4x in each direction, 16x
    # the unknowns)
    counts = []
    for nx, ny in ((16, 4), (64, 16)):
        model = strip_model(60.0, 12.0, nx, ny, "T6", loads={"pull": planar.Traction("right", tx=40.0)})
        counts.append(planar.solve(model, solver="amg")["pull"].solver_info["iterations"][0])
    assert counts[1] <= counts[0] + 8, counts


def test_auto_takes_the_iterative_path_when_the_direct_one_cannot_fit():
    n = 2_000_000
    direct = min(solvers.estimate_memory(n, m) for m in ("pardiso", "cholmod"))
    iterative = solvers.estimate_memory(n, "amg")
    assert iterative < direct
    assert solvers.choose(n, memory=(direct + iterative) // 2) == "amg"
