"""The joint's system as the solve builds it for speed, against plain references of the same algebra.

Sources:
- springs in series (common practice): two springs of stiffness 2k joined at a free point act as one of
  stiffness k, so a fastener written with an unknown midpoint between its two ends carries the same load
  as the one spring ``k (q_a - q_b)`` the solve assembles; an independent formulation of the same joint.
- a node's tributary area (common practice): on a uniform mesh of equal cells every interior node has the
  same share of the area, so a fastener's patch of interior nodes averages them with equal weights.
- ``scipy.sparse.block_diag``: the layers' systems side by side, the reference for the concatenation.
"""
import numpy as np
import pytest
import scipy.sparse as sp

import planar
from planar.core import _joint_solve as js
from planar.core import solvers
from planar.core.timing import Timer

from _joint_strips import strip

E, NU = 70e3, 0.33


def _joint(held_strap: bool = False):
    """A skin held at its left end and a strap held only through three fasteners (unless ``held_strap``)."""
    skin, strap = (strip(x0, x1, 20.0, t, 1.25, element="Q4", material=planar.Isotropic(E=E, nu=NU), y0=0.0)
                   for x0, x1, t in ((0.0, 60.0, 2.0), (30.0, 80.0, 1.6)))
    skin.add_support(planar.Fixed("left"))
    strap.add_load(planar.Traction("right", tx=50.0, ty=10.0), case="pull")
    skin.add_load(planar.Traction("top", ty=5.0), case="side")
    if held_strap:
        strap.add_support(planar.Roller("right", fixed="y"))
    joint = planar.Joint({"skin": skin, "strap": strap})
    pts = np.array([[35.0, 5.0], [45.0, 10.0], [55.0, 15.0]])
    joint.add_fasteners(planar.Fasteners(pts, layers=("skin", "strap"), diameter=4.0, flexibility=2e-5, name="row"))
    return joint


def _series_reference(joint, cases):
    """Fastener loads from the joint written with a midpoint unknown per fastener: springs 2k, 2k in series."""
    layers = [js._Layer(nm, mdl, joint, cases, 1e-3, Timer(False)) for nm, mdl in joint.layers.items()]
    offs = np.r_[0, np.cumsum([L.n for L in layers])]
    N = int(offs[-1])
    fz = joint.fasteners[0]
    pts = fz.points(joint)
    B, c = [], []
    for i, L in enumerate(layers):
        S, _t, _E = L.end_operator(0, fz, pts)
        B.append(js._embed((S @ L.T).tocsr(), int(offs[i]), N).toarray())
        c.append(S @ L.up)
    nw = 2 * pts.shape[0]
    k2 = 2.0 / float(fz.flexibility)
    K = np.zeros((N + nw, N + nw))
    for i, L in enumerate(layers):
        low = L.system.lower.toarray()
        K[offs[i]:offs[i + 1], offs[i]:offs[i + 1]] = low + low.T - np.diag(np.diag(low))
    f = np.zeros((N + nw, len(cases)))
    f[:N] = np.vstack([L.rhs.reshape(L.n, len(cases)) for L in layers])
    W = np.hstack([np.zeros((nw, N)), np.eye(nw)])
    for Bi, ci in zip(B, c):  # energy k2/2 |B_i v + c_i - w|^2 for each end
        D = np.hstack([Bi, np.zeros((nw, nw))]) - W
        K += k2 * D.T @ D
        f -= k2 * (D.T @ ci)[:, None]
    x = np.linalg.solve(K, f)
    v, w = x[:N], x[N:]
    q_a = B[0] @ v + c[0][:, None]
    return (k2 * (q_a - w)).reshape(-1, 2, len(cases))  # the force in the skin-side spring = the fastener's load


@pytest.mark.parametrize("held_strap", [False, True])
def test_fastener_loads_equal_the_springs_in_series(held_strap):
    joint = _joint(held_strap)
    res = planar.solve(joint)
    ref = _series_reference(joint, ["pull", "side"])
    for j, case in enumerate(["pull", "side"]):
        got = res[case].fasteners.shear
        scale = np.abs(ref[:, :, j]).max()
        assert scale > 0
        np.testing.assert_allclose(got, ref[:, :, j], rtol=0, atol=1e-9 * scale)
        assert res[case].balance_error() < 1e-9


@pytest.mark.parametrize("solver", [s for s in ("cholmod", "superlu", "amg") if s in solvers.available_solvers()])
def test_other_back_ends_give_the_same_loads(solver):
    joint = _joint()
    ref = planar.solve(joint, cases="pull")["pull"].fasteners.shear
    got = planar.solve(joint, cases="pull", solver=solver)["pull"].fasteners.shear
    tol = 1e-6 if solver == "amg" else 1e-9
    np.testing.assert_allclose(got, ref, rtol=0, atol=tol * np.abs(ref).max())


def test_side_by_side_is_block_diag():
    rng = np.random.default_rng(3)
    mats = []
    for n in (6, 1, 9):
        a = sp.random(n, n, density=0.3, random_state=rng) + sp.eye(n)
        mats.append(sp.tril(a).tocsc())
    got = js._side_by_side(mats)
    ref = sp.block_diag(mats, format="csc")
    ref.sum_duplicates()
    assert got.shape == ref.shape
    assert np.array_equal(got.indptr, ref.indptr) and np.array_equal(got.indices, ref.indices)
    assert np.array_equal(got.data, ref.data)


def test_patch_weights_on_a_uniform_mesh_are_equal_and_local_weights_match_the_whole_layer():
    joint = _joint()
    L = js._Layer("skin", joint.layers["skin"], joint, ["pull"], 1e-3, Timer(False))
    fz = joint.fasteners[0]
    pts = fz.points(joint)
    S, t, Em = L.end_operator(0, fz, pts)
    Sx = S[0::2][:, 0::2].tocsr()
    for i in range(pts.shape[0]):  # interior nodes of equal cells: equal shares, summing to one
        row = Sx.getrow(i).data
        assert row.size >= 3
        np.testing.assert_allclose(row, 1.0 / row.size, rtol=1e-12)
    np.testing.assert_array_equal(t, 2.0)
    np.testing.assert_array_equal(Em, E)
    nodes = Sx.indices
    full = js._node_weights(L.asm)
    local = js._node_weights(L.asm, nodes)
    found = js._node_weights(L.asm, nodes, cells=L.cells_touching(nodes))  # the cells from the layer's incidence
    for a, b, c in zip(full, local, found):
        np.testing.assert_array_equal(a[nodes], b[nodes])
        np.testing.assert_array_equal(b, c)


@pytest.mark.skipif("amg" not in solvers.available_solvers(), reason="pyamg not installed")
def test_amg_joint_gives_the_direct_solves_fastener_loads_with_a_layer_held_only_by_its_fasteners():
    # the strap has no support: CG with the layers' rigid modes as near-null space must still reach the
    # direct solve's answer, each load case to the iterative tolerance (relative residual 1e-10)
    row = _joint().fasteners[0]
    joint = planar.Joint(dict(_joint().layers))  # a published flexibility: springs about as stiff as the plates
    joint.add_fasteners(planar.Fasteners(row.points(joint), layers=row.layers, diameter=row.diameter,
                                         flexibility="huth", modulus=110e3, name="row"))
    direct = next(s for s in ("pardiso", "cholmod", "superlu") if s in solvers.available_solvers())
    ref = planar.solve(joint, solver=direct)
    got = planar.solve(joint, solver="amg")
    for case in ("pull", "side"):
        info = got[case].layers["strap"].solver_info
        assert info["residual"][0] <= 1e-9 and info["iterations"][0] > 0
        shear = ref[case].fasteners.shear
        scale = np.abs(shear).max()
        assert scale > 0
        np.testing.assert_allclose(got[case].fasteners.shear, shear, rtol=0, atol=1e-8 * scale)
        assert got[case].balance_error() < 1e-8


@pytest.mark.skipif("amg" not in solvers.available_solvers(), reason="pyamg not installed")
def test_amg_aggregates_a_joint_by_its_layers_own_couplings(monkeypatch):
    # smoothed aggregation (Vanek, Mandel and Brezina, Computing 56, 1996) builds its aggregates from the
    # strong couplings; a fastener's spring couples its whole patch in each layer, so the joint's finest
    # aggregates must be those of the layers' own matrices, the springs staying in the smoothed matrix
    from planar.core import _multigrid as mg

    seen = []
    real = solvers.factorize

    def spy(lower, method="auto", **kw):
        fac = real(lower, method, **kw)
        seen.append((lower, kw.get("rigid_modes"), kw.get("space"), fac))
        return fac

    monkeypatch.setattr(solvers, "factorize", spy)
    joint = _joint(held_strap=True)
    res = planar.solve(joint, cases="pull", solver="amg")
    lower, modes, space, fac = seen[-1]
    assert isinstance(space, mg.Couplings) and space.graph.nnz < lower.nnz  # the springs add entries
    plates = solvers._full(space.graph)
    alone = mg.hierarchy(plates, None, modes)
    springs = mg.hierarchy(solvers._full(lower), None, modes)  # aggregated by every entry, the springs' too
    got = [lv.A.shape[0] for lv in fac._ml.levels]
    assert got[1] == alone.levels[1].A.shape[0] != springs.levels[1].A.shape[0]
    ref_loads = planar.solve(joint, cases="pull", solver="superlu")["pull"].fasteners.shear
    np.testing.assert_allclose(res["pull"].fasteners.shear, ref_loads, rtol=0, atol=1e-8 * np.abs(ref_loads).max())
