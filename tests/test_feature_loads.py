"""Gravity from the materials' densities, and supports placed at coordinates.

Sources: the weight of a body is the integral of rho g over its volume, and a bar hanging from one
end carries at each section the weight below it, sigma = rho g (L - y) (common practice; e.g. S. P.
Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 96 for the plane field).
"""
from __future__ import annotations

import warnings

import numpy as np
import pytest

import planar
from planar.core.assembly import Assembly
from planar.core.mesh import Mesh
from planar.geometry.structured import rectangle_mesh

RHO_STEEL, RHO_AL = 7.85e-9, 2.70e-9  # t/mm^3
G = 9810.0  # mm/s^2


def two_region_plate(element: str = "Q8") -> Mesh:
    """A 100 x 40 plate: cells left of x = 60 are region 'steel', the rest 'alu'."""
    m = rectangle_mesh(100.0, 40.0, 10, 4, element)
    conn = m.cells[element]
    cx = m.nodes[conn].mean(axis=1)[:, 0]
    regions = {"steel": {element: np.flatnonzero(cx < 60.0)}, "alu": {element: np.flatnonzero(cx >= 60.0)}}
    return Mesh(m.nodes, m.cells, m.edge_sets, m.node_sets, regions)


def test_gravity_total_is_the_weight_of_each_region():
    model = planar.Model(two_region_plate(), thickness=1.0)
    model.assign("steel", planar.Isotropic(210e3, 0.3, density=RHO_STEEL), thickness=3.0)
    model.assign("alu", planar.Isotropic(70e3, 0.33, density=RHO_AL), thickness=5.0)
    model.add_load(planar.Gravity(gx=0.3 * G, gy=-G), case="own weight")
    f, _ = Assembly(model).load_vector("own weight")
    total = f.reshape(-1, 2).sum(axis=0)
    weight = RHO_STEEL * 60.0 * 40.0 * 3.0 + RHO_AL * 40.0 * 40.0 * 5.0
    np.testing.assert_allclose(total, weight * np.array([0.3 * G, -G]), rtol=1e-12)
    # the same by registered name, and limited to one region
    model.add_load("gravity", case="steel only", gy=-G, regions="steel")
    f, _ = Assembly(model).load_vector("steel only")
    np.testing.assert_allclose(f.reshape(-1, 2).sum(axis=0), [0.0, -RHO_STEEL * 60.0 * 40.0 * 3.0 * G], rtol=1e-12,
                               atol=1e-18)


def test_gravity_refuses_a_region_without_density():
    model = planar.Model(two_region_plate(), planar.Isotropic(210e3, 0.3, density=RHO_STEEL))
    model.assign("alu", planar.Isotropic(70e3, 0.33))  # no density
    model.add_load(planar.Gravity(gy=-G), case="g")
    with pytest.raises(planar.InputError, match=r"region 'alu'.*give the material a density"):
        Assembly(model).load_vector("g")
    model.add_load(planar.Gravity(gy=-G, regions=["steel"]), case="steel")  # said which: fine
    f, _ = Assembly(model).load_vector("steel")
    assert f.reshape(-1, 2)[:, 1].sum() < 0
    with pytest.raises(planar.InputError, match="non-zero"):
        planar.Gravity()
    with pytest.raises(planar.NameNotFoundError):
        model.add_load(planar.Gravity(gy=-G, regions="steal"))


@pytest.mark.parametrize("element", ["Q8", "Q9", "T6"])
def test_hanging_strip_stress_is_the_weight_below(element):
    """A strip of width w and length L hangs from its edge y = 0 (y pointing down, along g).

    The exact plane-stress field is quadratic: sigma_yy = rho g (L - y), sigma_xx = tau_xy = 0, with
    u_x = -nu rho g (L - y) x / E and u_y = rho g (L y - y^2 / 2) / E - nu rho g x^2 / (2 E) (x from the
    centre line), so quadratic elements with that u_y on the support edge reproduce it to round-off.
    """
    E, nu, w, L, t = 210e3, 0.3, 20.0, 200.0, 2.0
    mesh = rectangle_mesh(w, L, 2, 8, element, origin=(-w / 2, 0.0))
    model = planar.Model(mesh, planar.Isotropic(E, nu, density=RHO_STEEL), thickness=t)
    rg = RHO_STEEL * G
    model.add_support(planar.Prescribed("bottom", uy=lambda x, y: -nu * rg * x**2 / (2 * E)))
    model.add_support(planar.Roller((0.0, 0.0), fixed="x"))  # the centre of the support edge
    model.add_load(planar.Gravity(gy=G), case="hanging")
    res = planar.solve(model)["hanging"]
    np.testing.assert_allclose(res.reactions.sum(axis=0), [0.0, -rg * w * L * t], rtol=1e-9, atol=1e-12)
    peak = rg * L
    for g in res.gauss:
        y = g.x[..., 1]
        np.testing.assert_allclose(g.stress[..., 1], rg * (L - y), rtol=0, atol=1e-8 * peak)
        np.testing.assert_allclose(g.stress[..., [0, 2]], 0.0, atol=1e-8 * peak)


def cantilever(nx: int = 10) -> planar.Model:
    model = planar.Model(rectangle_mesh(100.0, 20.0, nx, 4, "Q8"), planar.Isotropic(210e3, 0.3))
    model.add_load(planar.Traction("right", ty=-1.0), case="shear")
    return model


def test_support_at_coordinates_is_the_named_support():
    """Supports at the corner coordinates give the answer of the same supports by name (same nodes)."""
    by_name, by_xy = cantilever(), cantilever()
    by_name.add_support(planar.Fixed("corner_00"))
    by_name.add_support(planar.Roller("corner_01", fixed="x"))
    with warnings.catch_warnings():
        warnings.simplefilter("error", planar.DiscretisationWarning)  # exact nodes: no snapping warning
        by_xy.add_support(planar.Fixed((0.0, 0.0)))
        by_xy.add_support(planar.Roller((0.0, 20.0), fixed="x"))
    a, b = planar.solve(by_name)["shear"], planar.solve(by_xy)["shear"]
    np.testing.assert_array_equal(a.u, b.u)
    assert not any(w.code == "support-snapped" for w in b.warnings)
    assert by_xy.supports[0].describe().startswith("Fixed((0.0, 0.0)) at node ")


def test_support_snapped_to_a_near_node_states_the_distance():
    model = cantilever()  # quadratic cells 10 x 5: nodes every 5 in x and 2.5 in y
    with pytest.warns(planar.DiscretisationWarning, match=r"nearest node \d+ at \(0, 10\), 0\.5 from") as rec:
        model.add_support(planar.Fixed((0.3, 10.4)))
    assert rec[0].message.code == "support-snapped"
    assert "(0, 10), 0.5 from the point given" in model.supports[0].describe()
    model.add_support(planar.Roller("left", fixed="x"))
    res = planar.solve(model)["shear"]  # the rollers and the snapped clamp hold it; raised once, at add_support
    assert [w.code for w in res.warnings].count("support-snapped") == 1  # and kept with the result
    assert "0.5 from the point given" in res.model.describe()["supports"][0]


def test_support_far_from_any_node_is_refused():
    model = cantilever()  # quadratic cells 10 x 5: node spacing 2.5 at (0, 10), so a limit of 1.25
    with pytest.raises(planar.SupportError, match=r"no node near \(1\.2, 11\.2\); the nearest is node \d+ at "
                                                  r"\(0, 10\), 1\.69706 away, more than half the node spacing "
                                                  r"there \(2\.5\)"):
        model.add_support(planar.Fixed((1.2, 11.2)))
    with pytest.warns(planar.DiscretisationWarning, match="1.2 from the point given"):
        model.add_support(planar.Fixed((0.0, 11.2)))  # 1.2 from (0, 10): inside the limit, snapped
    with pytest.raises(planar.SupportError, match="no node near"):
        model.add_support(planar.Fixed((500.0, 0.0)))  # outside the part
    with pytest.raises(planar.InputError, match="fixed='x', 'y'"):
        planar.Roller((0.0, 0.0))  # a point has no normal
    with pytest.raises(planar.InputError, match="coordinates"):
        planar.Fixed((0.0, float("nan")))
