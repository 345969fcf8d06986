"""Engineering checks (Kt, margins, cuts) and convergence studies (Richardson, GCI)."""
from __future__ import annotations

import math
import os

import numpy as np
import pytest

from _models import strip_model
from planar.core.errors import InputError
from planar.core.loads import Traction
from planar.core.materials import Isotropic
from planar.core.mesh import Mesh
from planar.core.static import solve
from planar.geometry.structured import rectangle_mesh
from planar.post.checks import (CAUTION, cut_resultant, kt, margin_of_safety, nominal_gross, nominal_net,
                                path_stresses)
from planar.post.convergence import FS_THREE_GRIDS, convergence_study, grid_convergence
from planar.verify.recovery_cases import KirschPlate, kirsch_mesh, kirsch_model, solve_kirsch


def _strip(element="Q8", sigma=50.0, W=20.0, L=100.0, t=2.0, nu=0.33, regions=False):
    mesh = rectangle_mesh(L, W, 10, 4, element)
    if regions:
        cen = mesh.nodes[mesh.cells[element]].mean(axis=1)
        mesh = Mesh(mesh.nodes, mesh.cells, mesh.edge_sets, mesh.node_sets,
                    regions={"thin": {element: np.flatnonzero(cen[:, 0] < L / 2)},
                             "thick": {element: np.flatnonzero(cen[:, 0] > L / 2)}})
    model = strip_model(mesh=mesh, material=Isotropic(70e3, nu), thickness=t, hold="roller",
                        loads={"pull": Traction("right", tx=sigma * (2 if regions else 1))})
    if regions:
        model.assign("thick", thickness=2 * t)
    return solve(model)["pull"]


# ---------------------------------------------------------------------------- nominal, Kt, MS
def test_nominal_stresses_by_hand():
    # P / (W t) and P / ((W - d) t) (common practice)
    assert nominal_gross(12000.0, 60.0, 4.0) == pytest.approx(50.0)
    assert nominal_net(12000.0, 60.0, 20.0, 4.0) == pytest.approx(75.0)
    with pytest.raises(InputError):
        nominal_net(1.0, 10.0, 10.0, 1.0)
    with pytest.raises(InputError):
        nominal_gross(1.0, 0.0, 1.0)


def test_kt_of_a_plain_strip_is_one():
    r = _strip()
    k = kt(r, nominal=nominal_gross(50.0 * 20.0 * 2.0, 20.0, 2.0), field="sigma_xx")
    assert k.Kt == pytest.approx(1.0, abs=1e-9)
    assert k.method == "spr" and CAUTION in k.summary() and "Kt = 1" in str(k)
    with pytest.raises(InputError, match="pick one of"):
        kt(r, nominal=50.0, field="sigma_max")
    with pytest.raises(InputError):
        kt(r, nominal=0.0)
    with pytest.raises(InputError):
        kt(r, nominal=50.0, method="nodal")


def test_kt_of_the_kirsch_hole():
    # Kt = 3 for a hole in an infinite plate, gross (remote) stress as nominal (Kirsch 1898;
    # Timoshenko and Goodier 1970, art. 35); 0.5 % covers the discretisation error of this mesh.
    r = solve_kirsch("Q8", 16)
    k = kt(r, nominal=1.0, field="sigma_xx")
    assert k.Kt == pytest.approx(3.0, rel=5e-3)
    assert k.location[0] == pytest.approx(0.0, abs=1e-9) and k.location[1] == pytest.approx(1.0)


def test_margin_of_safety_formula():
    # MS = allowable / (FS peak) - 1 (common practice, e.g. Bruhn 1973, from memory)
    m = margin_of_safety(200.0, allowable=300.0, factor_of_safety=1.25)
    assert m.margin == pytest.approx(300.0 / (1.25 * 200.0) - 1.0)
    assert m.passed and m.caution == CAUTION
    neg = margin_of_safety(-400.0, allowable=300.0, factor_of_safety=1.5)
    assert neg.margin == pytest.approx(0.5 - 1.0) and not neg.passed and "DOES NOT" in str(neg)
    r = _strip()
    mr = margin_of_safety(r, allowable=250.0, factor_of_safety=1.5)
    assert mr.peak == pytest.approx(50.0, rel=1e-9)  # von Mises of uniaxial 50
    assert mr.margin == pytest.approx(250.0 / 75.0 - 1.0, rel=1e-9)
    assert "linear-elastic" in mr.caution.lower() and "qualified" in mr.caution
    for bad in ({"allowable": 0.0}, {"allowable": 100.0, "factor_of_safety": -1.0}):
        with pytest.raises(InputError):
            margin_of_safety(r, **bad)


# ---------------------------------------------------------------------------- paths and cuts
def test_path_stresses_and_path_outside():
    r = _strip()
    ps = path_stresses(r, (50.0, 0.0), (50.0, 20.0), ["sigma_xx", "sigma_yy"], n_points=11)
    np.testing.assert_allclose(ps.values["sigma_xx"], 50.0, rtol=1e-9)
    np.testing.assert_allclose(ps.distance[-1], 20.0)
    assert "sigma_xx" in ps.summary()
    with pytest.raises(InputError, match="leaves the mesh"):
        path_stresses(r, (50.0, 0.0), (50.0, 30.0))
    with pytest.raises(InputError, match="pick one of"):
        path_stresses(r, (50.0, 0.0), (50.0, 20.0), "stress")
    with pytest.raises(InputError):
        path_stresses(r, (50.0, 5.0), (50.0, 5.0))


@pytest.mark.parametrize("element", ["Q8", "T6", "Q4"])
def test_cut_resultant_equals_applied_load(element):
    # Statics: the resultant on a cut across the strip equals the pull (common practice);
    # the field is exact here, so round-off is the only error (1e-6 relative as in the issue).
    r = _strip(element)
    applied = r.total_applied()
    c = cut_resultant(r, (37.3, 0.0), (37.3, 20.0), applied=applied)
    assert c.relative_difference < 1e-6
    assert c.normal_force == pytest.approx(2000.0, rel=1e-6) and abs(c.shear_force) < 1e-6
    assert c.normal == (1.0, 0.0)
    assert "resultant" in str(c)


def test_cut_resultant_uses_the_local_thickness():
    # A strip of two thicknesses in series (nu = 0, so each part is uniformly stressed): both cuts
    # carry the same pull (statics), although the stresses differ by a factor of 2.
    r = _strip("Q8", nu=0.0, regions=True)
    P = float(r.total_applied()[0])
    for x in (20.0, 80.0):
        c = cut_resultant(r, (x, 0.0), (x, 20.0), applied=P)
        assert c.relative_difference < 1e-6, x


def test_cut_resultant_kirsch_net_section():
    # Net section x = 0 of the Kirsch quarter plate carries the applied x force (statics; exact
    # tractions on the outer edges). The recovered stresses are not exactly in equilibrium: 0.2 %
    # covers the discretisation error of this mesh.
    r = solve_kirsch("Q8", 16)
    c = cut_resultant(r, (0.0, 1.0), (0.0, 5.0), applied=(float(r.total_applied()[0]), 0.0))
    assert c.relative_difference < 2e-3
    with pytest.raises(InputError, match="leaves the mesh"):
        cut_resultant(r, (0.0, 5.0), (0.0, 0.0))


# ---------------------------------------------------------------------------- convergence
def test_richardson_exact_for_synthetic_power_law():
    # f = f0 + C h^p on grids of ratio 2 gives p and f0 exactly (Roache 1998, eqs. for constant r)
    f0, C, p = 3.0, -0.8, 2.0
    h = np.array([0.4, 0.2, 0.1])
    g = grid_convergence(f0 + C * h**p, sizes=h)
    assert g.order == pytest.approx(p, abs=1e-10)
    assert g.extrapolated == pytest.approx(f0, abs=1e-12)
    assert g.kind == "monotonic" and g.ratios == (pytest.approx(2.0), pytest.approx(2.0))
    f1, f2 = f0 + C * 0.1**p, f0 + C * 0.2**p
    gci = FS_THREE_GRIDS * abs((f2 - f1) / f1) / (2.0**p - 1.0)  # Roache's GCI by hand
    assert g.gci_fine == pytest.approx(gci, rel=1e-12)
    assert g.asymptotic_ratio == pytest.approx(1.0, abs=0.02)  # GCI are relative to f1, f2
    assert g.contains(f0)


def test_richardson_non_integer_ratio_from_unknowns():
    # r = (N1 / N2)^(1/2) in 2D; the fixed-point order (Celik et al. 2008) recovers p = 1.6 exactly
    N = np.array([1000.0, 2300.0, 5100.0])
    h = N**-0.5
    g = grid_convergence(2.5 - 1.7 * h**1.6, dofs=N, name="peak", unit="MPa")
    assert g.order == pytest.approx(1.6, abs=1e-9)
    assert g.extrapolated == pytest.approx(2.5, abs=1e-10)
    assert g.ratios[0] == pytest.approx(math.sqrt(5100 / 2300))
    text = g.table()
    assert "GCI" in text and "[MPa]" in text and "5100" in text


def test_oscillatory_and_bad_inputs():
    g = grid_convergence([1.0, 1.1, 0.95], sizes=[1.0, 0.5, 0.25])
    assert g.kind == "oscillatory" and "OSCILLATORY" in g.table()
    assert g.uncertainty == pytest.approx(0.5 * (1.1 - 0.95))
    d = grid_convergence([1.0, 1.01, 1.03], sizes=[1.0, 0.5, 0.25])  # changes grow when refined
    assert d.kind == "divergent" and math.isnan(d.order)
    with pytest.raises(InputError, match="at least 3"):
        grid_convergence([1.0, 2.0], sizes=[1.0, 0.5])
    with pytest.raises(InputError):
        grid_convergence([1.0, 2.0, 3.0], sizes=[1.0, 1.0, 0.5])
    with pytest.raises(InputError):
        grid_convergence([1.0, 2.0, 3.0])
    with pytest.raises(InputError, match="at least 3"):
        convergence_study(lambda m: None, [None, None])


def test_convergence_plot_written_atomically(tmp_path):
    g = grid_convergence([3.0 + 0.4 * h**2 for h in (1.0, 0.5, 0.25)], dofs=[100, 400, 1600],
                         name="peak sigma_xx", unit="MPa")
    out = g.plot(tmp_path / "conv.png", exact=3.0)
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert sorted(os.listdir(tmp_path)) == ["conv.png"]  # no temporary file left behind
    with pytest.raises(InputError):
        g.plot(tmp_path / "conv.svg")


def test_convergence_study_brackets_kirsch_peak():
    # Kirsch peak 3 sigma_0 (Timoshenko and Goodier 1970, art. 35) inside the GCI band (Roache 1998)
    meshes = [kirsch_mesh("Q8", n) for n in (10, 14, 20)]
    g = convergence_study(lambda m: kirsch_model(m), meshes, "sigma_xx", method="spr")
    assert g.kind == "monotonic" and g.contains(KirschPlate().peak)
    assert abs(g.extrapolated - 3.0) / 3.0 <= g.gci_fine
