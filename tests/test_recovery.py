"""Stress recovery (averaging, SPR) and the Zienkiewicz-Zhu error estimate."""
from __future__ import annotations

import numpy as np
import pytest

from planar.core.assembly import Assembly
from planar.core.errors import InputError
from planar.core.loads import BodyForce, Traction
from planar.core.materials import Isotropic
from planar.core.mesh import Mesh
from planar.core.model import Model
from planar.core.result import Result
from planar.core.static import solve
from planar.core.supports import Fixed, Prescribed
from planar.geometry.structured import mapped_mesh, rectangle_mesh
from planar.post.estimate import effectivity, estimate_error
from planar.post.recovery import Samples, patch_recovery, recover, sampling_rule, stress_samples
from planar.verify.recovery_cases import KirschPlate, solve_kirsch

ELEMENTS = ("T3", "T6", "Q4", "Q8", "Q9")
DEGREE = {"T3": 1, "T6": 2, "Q4": 1, "Q8": 2, "Q9": 2}


def _curved(element: str, n: int = 6) -> Mesh:
    """A smoothly distorted, curved-sided mapped mesh of a unit-ish panel."""
    def mapping(s, t):
        return (s + 0.15 * np.sin(np.pi * t) * s + 0.1 * t, t + 0.1 * np.sin(np.pi * s) + 0.05 * s * t)
    return mapped_mesh(mapping, n, n, element)


def _poly_stress(x, y, p):
    """A stress field of total degree p in each component (consistency data)."""
    if p == 1:
        return np.stack([1.0 + 2 * x - 3 * y, -0.5 + x + 4 * y, 0.3 - x + 0.5 * y, 0.1 * x], axis=-1)
    return np.stack([1.0 + 2 * x - 3 * y + x * x - 2 * x * y + 0.5 * y * y,
                     -0.5 + x + 4 * y - 1.5 * x * x + y * y,
                     0.3 - x + 0.5 * y + 0.7 * x * y,
                     0.2 * x * x - 0.1 * y], axis=-1)


def _free_model(mesh: Mesh) -> Model:
    model = Model(mesh, Isotropic(1000.0, 0.25))
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="c")
    return model


@pytest.mark.parametrize("element", ELEMENTS)
def test_sampling_rules(element):
    # superconvergent points: Zienkiewicz and Zhu 1992, Part 1, table of sampling points
    from planar.core.registry import element_type

    n = {"T3": 1, "T6": 3, "Q4": 1, "Q8": 4, "Q9": 4}[element]
    assert sampling_rule(element_type(element)).n_points == n


@pytest.mark.parametrize("boundary", ["enlarged", "interior"])
@pytest.mark.parametrize("element", ELEMENTS)
def test_spr_reproduces_polynomial_of_degree_p(element, boundary):
    # Consistency condition of SPR (Zienkiewicz and Zhu 1992, Part 1, section 3): sampled values that
    # are a complete polynomial of the fitted degree p are reproduced exactly at every node, interior
    # and boundary alike, on a curved, distorted mesh. Tolerance: round-off.
    mesh = _curved(element)
    r = solve(_free_model(mesh))["c"]
    p = DEGREE[element]
    samples = [Samples(s.block, s.x, _poly_stress(s.x[..., 0], s.x[..., 1], p)) for s in stress_samples(r)]
    out = patch_recovery(r.mesh, samples, boundary=boundary)
    exact = _poly_stress(r.mesh.nodes[:, 0], r.mesh.nodes[:, 1], p)
    assert np.max(np.abs(out - exact)) < 1e-10 * np.max(np.abs(exact))


@pytest.mark.parametrize("element", ["Q4", "Q8", "Q9"])
def test_spr_exact_for_imposed_displacement_of_degree_p_plus_1(element):
    # With the nodal displacements of a polynomial field of degree p + 1 imposed everywhere, the
    # strains at the reduced Gauss points of rectangular elements are exact (1D Gauss points are
    # the zeros of the derivative of the interpolation error, common practice / from memory); SPR of
    # degree p then recovers the exact stress of degree p at all nodes. Tolerance: round-off.
    mesh = rectangle_mesh(3.0, 2.0, 6, 4, element)
    mat = Isotropic(1000.0, 0.25)
    model = Model(mesh, mat)
    model.add_support(Fixed("left"))
    model.add_load(Traction("right", tx=1.0), case="c")
    asm = Assembly(model)
    x, y = asm.mesh.nodes.T
    if element == "Q4":
        ux, uy = 0.01 * x * x - 0.02 * x * y + 0.003 * y * y, 0.02 * y * y + 0.01 * x * y - 0.004 * x * x
        dux = lambda x, y: (0.02 * x - 0.02 * y, -0.02 * x + 0.006 * y)  # noqa: E731
        duy = lambda x, y: (0.01 * y - 0.008 * x, 0.04 * y + 0.01 * x)  # noqa: E731
    else:
        ux, uy = 0.001 * x**3 - 0.002 * x * y * y + 0.001 * y**3, 0.002 * y**3 + 0.001 * x * x * y - 0.001 * x**3
        dux = lambda x, y: (0.003 * x * x - 0.002 * y * y, -0.004 * x * y + 0.003 * y * y)  # noqa: E731
        duy = lambda x, y: (0.002 * x * y - 0.003 * x * x, 0.006 * y * y + 0.001 * x * x)  # noqa: E731
    u = np.column_stack([ux, uy])
    r = Result(asm, "c", u, np.zeros_like(u), np.zeros_like(u), [None] * len(asm.blocks))
    s = recover(r, "spr")
    (uxx, uxy), (uyx, uyy) = dux(x, y), duy(x, y)
    eps = np.column_stack([uxx, uyy, uxy + uyx])
    exact = eps @ mat.D("plane stress").T
    assert np.max(np.abs(s[:, :3] - exact)) < 1e-9 * np.max(np.abs(exact))


@pytest.mark.parametrize("element", ["T3", "T6", "Q8"])
def test_spr_exact_when_the_fe_solution_is_exact(element):
    # Displacement of degree p with the equilibrating body force: the finite-element solution is
    # exact (on affine, parallelogram-shaped elements the field lies in the element space), so both
    # recoveries give the exact stress (degree p - 1) at every node. Tolerance: round-off of the solve.
    from planar.geometry.structured import quad_panel_mesh

    E, nu = 1000.0, 0.0
    mesh = quad_panel_mesh([[0, 0], [2.0, 0.3], [2.5, 1.5], [0.5, 1.2]], 5, 4, element)
    p = DEGREE[element]
    c = 1e-3
    if p == 1:
        fx, fy = (lambda x, y: c * (x + 0.5 * y)), (lambda x, y: c * (0.3 * x - y))
        bx = by = 0.0
        exact = lambda x, y: np.stack([E * c + 0 * x, -E * c + 0 * x, E / 2 * c * 0.8 + 0 * x], -1)  # noqa: E731
    else:
        # u = c (x^2, 0): eps_xx = 2 c x, sigma_xx = 2 E c x (nu = 0); div sigma + b = 0 -> bx = -2 E c
        fx, fy = (lambda x, y: c * x * x), (lambda x, y: 0.0 * x)
        bx, by = -2 * E * c, 0.0
        exact = lambda x, y: np.stack([2 * E * c * x, 0 * x, 0 * x], -1)  # noqa: E731
    names = dict(mesh.node_sets)
    names["boundary"] = np.unique(np.concatenate([np.unique(v) for v in mesh.edge_sets.values()]))
    mesh = Mesh(mesh.nodes, mesh.cells, mesh.edge_sets, names)
    model = Model(mesh, Isotropic(E, nu))
    model.add_support(Prescribed("boundary", ux=fx, uy=fy))
    model.add_load(BodyForce(bx, by), case="c")
    r = solve(model)["c"]
    ex = exact(*r.mesh.nodes.T)
    for method in ("spr", "average"):
        s = recover(r, method)[:, :3]
        assert np.max(np.abs(s - ex)) < 1e-8 * E * c, method


def test_nodal_stress_spr_routes_through_recover():
    r = solve(_free_model(_curved("Q8", 4)))["c"]
    s, szz = r.nodal_stress("spr")
    np.testing.assert_allclose(s, recover(r, "spr")[:, :3])
    assert r.max("sigma_xx", method="spr")[0] == pytest.approx(float(s[:, 0].max()))


@pytest.mark.parametrize("element", ["Q8", "T6", "Q4"])
def test_spr_beats_averaging_at_the_kirsch_hole(element):
    # Kirsch plate, exact peak sigma_xx(0, a) = 3 sigma_0 (G. Kirsch 1898; S. P. Timoshenko and
    # J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 35).
    n = 32 if element == "Q4" else 16
    r = solve_kirsch(element, n)
    i = int(r.mesh.nodes_of("peak")[0])
    e_spr = abs(recover(r, "spr")[i, 0] - 3.0)
    e_avg = abs(recover(r, "average")[i, 0] - 3.0)
    assert e_spr < e_avg
    assert e_spr < 0.005 * 3.0


def _two_region_mesh(element="Q8"):
    m = rectangle_mesh(2.0, 1.0, 4, 2, element)
    cen = m.nodes[m.cells[element]].mean(axis=1)
    left = np.flatnonzero(cen[:, 1] < 0.5)
    right = np.flatnonzero(cen[:, 1] > 0.5)
    names = dict(m.node_sets)
    names["boundary"] = np.unique(np.concatenate([np.unique(v) for v in m.edge_sets.values()]))
    return Mesh(m.nodes, m.cells, m.edge_sets, names, regions={"soft": {element: left}, "stiff": {element: right}})


@pytest.mark.parametrize("element", ["Q8", "T3"])
def test_region_interfaces_are_not_smoothed(element):
    # Two materials, one above the other, under the same uniform strain eps_xx = 1e-3 (nu = 0): the
    # field is in equilibrium (no traction across y = 0.5) and sigma_xx = E eps in each, a jump at
    # the interface that recovery must keep (common practice).
    mesh = _two_region_mesh(element)
    model = Model(mesh, Isotropic(1000.0, 0.0))
    model.assign("stiff", material=Isotropic(5000.0, 0.0))
    model.add_support(Prescribed("boundary", ux=lambda x, y: 1e-3 * x, uy=0.0))
    model.add_load(BodyForce(0.0, 0.0), case="c")
    r = solve(model)["c"]
    for method in ("spr", "average"):
        per = recover(r, method, per_region=True)
        assert set(per) == {"soft", "stiff"}
        soft, stiff = per["soft"], per["stiff"]
        in_soft, in_stiff = ~np.isnan(soft[:, 0]), ~np.isnan(stiff[:, 0])
        iface = in_soft & in_stiff
        assert np.allclose(r.mesh.nodes[iface, 1], 0.5) and iface.sum() >= 3
        np.testing.assert_allclose(soft[in_soft, 0], 1.0, atol=1e-9)
        np.testing.assert_allclose(stiff[in_stiff, 0], 5.0, atol=1e-9)
        combined = recover(r, method)
        np.testing.assert_allclose(combined[iface, 0], 5.0, atol=1e-9)  # the critical side


def test_bad_choices_raise():
    r = solve(_free_model(_curved("Q4", 3)))["c"]
    with pytest.raises(InputError, match="pick one of"):
        recover(r, "smooth")
    with pytest.raises(InputError, match="boundary"):
        recover(r, "spr", boundary="outside")
    with pytest.raises(InputError):
        estimate_error(r, recovery="nodal")


@pytest.mark.parametrize("element,n", [("Q4", 32), ("T6", 16), ("Q8", 32), ("T3", 32)])
def test_effectivity_on_kirsch(element, n):
    # Asymptotic exactness of the ZZ estimator with SPR: theta -> 1 (Zienkiewicz and Zhu 1992, Part 2);
    # band 0.85 to 1.2 at these meshes (tolerance from the issue; measured 0.97 to 1.14).
    r = solve_kirsch(element, n)
    theta = effectivity(r, KirschPlate().stress)
    assert 0.85 <= theta <= 1.2


def test_estimate_of_an_exact_solution_is_zero_and_writes_vtu(tmp_path):
    import meshio

    mesh = rectangle_mesh(4.0, 1.0, 8, 2, "Q8")
    model = Model(mesh, Isotropic(1000.0, 0.3))
    model.add_support(Prescribed("left", ux=0.0))
    model.add_support(Prescribed("corner_00", uy=0.0))
    model.add_load(Traction("right", tx=2.0), case="c")
    r = solve(model)["c"]
    est = estimate_error(r)
    assert est.eta < 1e-10 * est.norm and est.relative < 1e-10
    # uniform stress 2: ||u_h||^2 = sigma^2 / E * volume (common practice)
    assert est.norm == pytest.approx(np.sqrt(4.0 / 1000.0 * 4.0), rel=1e-10)
    path = est.write_vtu(tmp_path / "est.vtu")
    data = meshio.read(path)
    assert "error_indicator" in data.cell_data and "relative_error_indicator" in data.cell_data
    assert "estimated energy-norm error" in str(est)


def test_estimate_indicators_concentrate_at_the_hole():
    r = solve_kirsch("Q8", 8)
    est = estimate_error(r)
    ind = est.indicators["Q8"]
    cen = r.mesh.nodes[r.mesh.cells["Q8"]].mean(axis=1)
    near = np.hypot(cen[:, 0], cen[:, 1]) < 1.5
    assert ind[near].mean() > 3 * ind[~near].mean()
    assert 0 < est.relative < 0.05


def test_recovery_vectorized_on_a_large_mesh():
    # 40k nodes: the batched fits keep this well under a few seconds
    import time

    r = solve(_free_model(rectangle_mesh(4.0, 4.0, 100, 100, "Q8")))["c"]
    t = time.perf_counter()
    s = recover(r, "spr")
    assert time.perf_counter() - t < 5.0
    assert np.all(np.isfinite(s))


def test_recovery_with_a_temperature_change_uses_the_stiffness_points():
    # A plate held at its left edge by a roller and free otherwise expands freely under a uniform
    # temperature change: zero stress everywhere (common practice). The initial strain is known at
    # the stiffness rule's points, which SPR then samples.
    from planar.core.loads import TemperatureChange
    from planar.core.supports import Roller

    mesh = rectangle_mesh(2.0, 1.0, 4, 2, "Q8")
    model = Model(mesh, Isotropic(1000.0, 0.3, alpha=1e-5))
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(TemperatureChange(50.0), case="hot")
    r = solve(model)["hot"]
    samples = stress_samples(r)
    assert not samples[0].superconvergent
    assert np.max(np.abs(recover(r, "spr"))) < 1e-9
    assert estimate_error(r).eta < 1e-9
