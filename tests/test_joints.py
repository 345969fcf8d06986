"""Fastened joints: layers, fasteners as shear springs, fastener loads, bearing, bypass, rows, table and plot.

Sources:
- statics (common practice): the fasteners' loads are internal, so the loads and reactions of all
  layers balance; a single fastener carries the whole load from one plate to the other; the load
  crossing a cut through a plate equals the loads on one side of it (free body).
- the discrete spring-and-bar model of a row of fasteners (M. B. Tate and S. J. Rosenfeld, NACA TN
  1051, 1946; common practice): for two fasteners of compliance C joining plates of axial stiffness
  k_t, k_b between them, F1 / F2 = (C + 1/k_t) / (C + 1/k_b), fastener 1 at the top plate's loaded end.
"""
import json

import numpy as np
import pytest

import planar
from planar.core.errors import InputError, NameNotFoundError, SupportError

from _joint_strips import strip

E, NU = 70e3, 0.33
W, PITCH, D = 20.0, 20.0, 5.0
SIZE = 1.25


def _strip(x0, x1, t, element="Q4"):
    return strip(x0, x1, W, t, SIZE, element=element, material=planar.Isotropic(E=E, nu=NU))


def lap(n, t_top, t_bottom, compliance, load=1000.0, element="Q4"):
    """A single lap of two strips (top pulled to -x at its left end, bottom to +x at its right end)."""
    xs = PITCH * np.arange(n)
    top = _strip(-40.0, xs[-1] + 10.0, t_top, element)
    bottom = _strip(-10.0, xs[-1] + 40.0, t_bottom, element)
    top.add_load(planar.Traction("left", tx=-load / (W * t_top)), case="pull")
    bottom.add_load(planar.Traction("right", tx=load / (W * t_bottom)), case="pull")
    top.add_support(planar.Roller((-40.0, -W / 2), fixed="x"))  # statically determinate: no load in them
    top.add_support(planar.Roller((-40.0, -W / 2), fixed="y"))
    top.add_support(planar.Roller((-40.0, W / 2), fixed="x"))
    joint = planar.Joint({"top": top, "bottom": bottom})
    joint.add_fasteners(planar.Fasteners(np.column_stack([xs, np.zeros(n)]), layers=("top", "bottom"), diameter=D,
                                         flexibility=compliance, name="row"))
    return joint


@pytest.fixture(scope="module")
def lap3():
    return planar.solve(lap(3, 2.0, 3.2, 3e-5))["pull"]


def test_load_balance_and_each_layer_in_equilibrium(lap3):
    # statics: the fasteners are internal; every layer balances with its fastener forces
    assert lap3.balance_error() < 1e-9
    for r in lap3.layers.values():
        assert r.equilibrium_error() < 1e-9
        # each layer's reactions (supports, and the fasteners as pins) balance its loads
        assert np.abs(r.total_reaction() + r.total_applied()).max() < 1e-9 * 1000.0
        assert sum(x.kind == "pin (fastener patch tie)" for x in r.support_reactions()) == 3
    total = lap3.fasteners.shear.sum(axis=0)
    assert total[0] == pytest.approx(-1000.0, rel=1e-9)  # the force on the bottom strip: the whole load
    assert abs(total[1]) < 1e-9 * 1000.0


def test_symmetric_joint_gives_symmetric_loads():
    # equal strips, antisymmetric about the row's middle: F1 = F3 to round-off (and F = 500, 500 for two)
    mag = planar.solve(lap(3, 2.0, 2.0, 3e-5))["pull"].fasteners.magnitude
    assert mag[0] == pytest.approx(mag[2], rel=1e-9)
    assert mag[1] < mag[0]  # the end fasteners carry most (common practice)
    two = planar.solve(lap(2, 2.0, 2.0, 3e-5))["pull"].fasteners.magnitude
    assert two == pytest.approx([500.0, 500.0], rel=1e-9)


def test_single_fastener_carries_the_load():
    # statics: one fastener between two plates carries the applied load; the top plate's rotation about
    # the fastener is held by a roller in y along its loaded edge (which takes no x force)
    a = _strip(0.0, 60.0, 2.0)
    b = _strip(30.0, 90.0, 3.0)
    a.add_support(planar.Fixed("left"))
    b.add_support(planar.Roller("right", fixed="y"))
    b.add_load(planar.Traction("right", tx=1234.0 / (W * 3.0)), case="pull")
    joint = planar.Joint({"a": a, "b": b})
    joint.add_fasteners(planar.Fasteners([(45.0, 0.0)], layers=("a", "b"), diameter=D, flexibility=1e-5))
    r = planar.solve(joint)["pull"]
    assert r.fasteners.shear[0] == pytest.approx([-1234.0, 0.0], abs=1e-9 * 1234.0)
    hole_a = r.fasteners.holes[0]
    assert hole_a["bearing"] == pytest.approx(1234.0, rel=1e-9)
    assert hole_a["bearing_stress"] == pytest.approx(1234.0 / (D * 2.0), rel=1e-9)  # P / (d t)


@pytest.mark.parametrize("compliance", [1e-5, 1e-4])
def test_two_fastener_share_follows_the_spring_and_bar_model(compliance):
    # Tate and Rosenfeld (NACA TN 1051, 1946), two fasteners: F1 / F2 = (C + 1/k_t) / (C + 1/k_b), k = E t W / p
    t_top, t_bottom = 2.0, 4.0
    mag = planar.solve(lap(2, t_top, t_bottom, compliance))["pull"].fasteners.magnitude
    kt, kb = E * t_top * W / PITCH, E * t_bottom * W / PITCH
    ratio = (compliance + 1 / kt) / (compliance + 1 / kb)
    f1 = 1000.0 * ratio / (1 + ratio)
    assert mag[0] == pytest.approx(f1, rel=0.03)
    assert mag[1] == pytest.approx(1000.0 - f1, rel=0.03)


def test_stiffer_fasteners_load_the_end_fastener_more():
    # the discrete model: as C -> 0 the share leans to the stiffer plate's side, as C grows it evens out
    soft = planar.solve(lap(2, 2.0, 4.0, 1e-3))["pull"].fasteners.magnitude
    stiff = planar.solve(lap(2, 2.0, 4.0, 1e-5))["pull"].fasteners.magnitude
    assert abs(soft[0] - soft[1]) < abs(stiff[0] - stiff[1])


def test_bypass_from_statics_and_against_a_cut(lap3):
    # free body: the bypass at a hole is the load the other fasteners beyond it carry, and the load
    # arriving at a hole is the bypass plus its bearing load
    tab = lap3.fasteners
    F = tab.magnitude  # fasteners at x = 0, 20, 40
    top = [h for h in tab.holes if h["layer"] == "top"]
    bottom = [h for h in tab.holes if h["layer"] == "bottom"]
    assert [h["bypass"] for h in top] == pytest.approx([F[1] + F[2], F[2], 0.0], abs=1e-9 * 1000)
    assert [h["bypass"] for h in bottom] == pytest.approx([0.0, F[0], F[0] + F[1]], abs=1e-9 * 1000)
    # the same load from a stress integral across the top strip between fasteners 1 and 2
    cut = planar.post.cut_resultant(lap3.layers["top"], (10.0, -W / 2), (10.0, W / 2))
    assert abs(cut.force[0]) == pytest.approx(F[1] + F[2], rel=2e-2)


def test_rows_by_group_and_position(lap3):
    rows = lap3.fasteners.rows
    assert len(rows) == 3 and sum(r["share"] for r in rows) == pytest.approx(1.0)
    assert sorted(r["load"] for r in rows) == pytest.approx(sorted(lap3.fasteners.magnitude))


def test_double_shear_centre_plate_bears_both_springs():
    # a centre plate between two straps (double shear): by symmetry each strap takes half, and the
    # centre plate's hole bears the sum (statics)
    centre = _strip(0.0, 60.0, 4.0)
    straps = {k: _strip(30.0, 90.0, 2.0) for k in ("upper", "lower")}
    centre.add_support(planar.Fixed("left"))
    for s in straps.values():
        s.add_load(planar.Traction("right", tx=500.0 / (W * 2.0)), case="pull")
    joint = planar.Joint({"upper": straps["upper"], "centre": centre, "lower": straps["lower"]})
    joint.add_fasteners(planar.Fasteners([(40.0, 0.0), (50.0, 0.0)], layers=("upper", "centre", "lower"),
                                         diameter=D, flexibility=2e-5, shear="double"))
    r = planar.solve(joint)["pull"]
    tab = r.fasteners
    assert len(tab.pairs) == 4
    mag = tab.magnitude.reshape(2, 2)  # (pair, fastener)
    assert mag[0] == pytest.approx(mag[1], rel=1e-9)
    assert mag.sum() == pytest.approx(1000.0, rel=1e-9)
    bear = {(h["layer"], h["index"]): h["bearing"] for h in tab.holes}
    assert bear[("centre", 0)] == pytest.approx(bear[("upper", 0)] + bear[("lower", 0)], rel=1e-9)
    assert r.balance_error() < 1e-9


def test_named_formula_uses_the_flexibility_module():
    from planar.core.fastener_flexibility import fastener_compliance

    joint = lap(2, 2.0, 2.0, 1.0)
    f = joint.fasteners[0]
    named = planar.Fasteners(f.points(), layers=f.layers, diameter=D, flexibility="huth", modulus=110e3, name="h")
    joint.fasteners[0] = named
    r = planar.solve(joint)["pull"]
    c = fastener_compliance("huth", diameter=D, t1=2.0, t2=2.0, E1=E, E2=E, Ef=110e3, kind="bolt", shear="single")
    assert r.fasteners.pairs[0]["compliance"] == pytest.approx(c, rel=1e-12)
    with pytest.raises(InputError, match="modulus"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=D, flexibility="huth")


def test_layer_results_work_as_results(lap3, tmp_path):
    from planar.post import hot_spots

    top = lap3.layers["top"]
    assert isinstance(top, planar.Result)
    vm, (x, y), _ = top.max("von_mises")
    assert np.isfinite(vm) and vm > 0
    spots = hot_spots(top)
    assert len(spots) >= 1
    planar.write_vtu(tmp_path / "top.vtu", top)
    assert (tmp_path / "top.vtu").stat().st_size > 0


def test_table_json_and_plot_state_units(lap3, tmp_path):
    text = lap3.table()
    assert "N, mm, MPa" in text and "[N]" in text and "[MPa]" in text and "[mm]" in text
    assert "nan" not in text.lower() and " -0 " not in text
    summary = json.loads(json.dumps(lap3.as_dict(), allow_nan=False))
    assert summary["units"]["force"] == "N" and len(summary["fasteners"]) == 3 and len(summary["holes"]) == 6
    assert summary["load_balance_error"] < 1e-9
    fig = planar.post.plot_joint(lap3, path=tmp_path / "joint.png")
    ax = fig.axes[0]
    assert ax.get_xlabel() == "x [mm]" and "N" in ax.get_title()
    assert (tmp_path / "joint.png").stat().st_size > 0
    with pytest.raises(InputError):
        planar.post.plot_joint(lap3.layers["top"])


def test_holes_modelled_rigid_and_spreading():
    pytest.importorskip("gmsh")
    from planar.geometry import Circle, Plate, Rectangle, mesh

    def strip(x0):
        return mesh(Plate(Rectangle(60.0, W, corner=(x0, 0.0))).cut(Circle((40.0, W / 2), D / 2, name="hole")),
                    size=2.5, element="T6")

    ma, mb = strip(0.0), strip(30.0)
    for tie in ("rigid", "spreading"):
        a = planar.Model(ma, planar.Isotropic(E=E, nu=NU), thickness=2.0, units="N, mm, MPa")
        b = planar.Model(mb, planar.Isotropic(E=E, nu=NU), thickness=2.0, units="N, mm, MPa")
        a.add_support(planar.Fixed("left"))
        b.add_support(planar.Roller("right", fixed="y"))
        b.add_load(planar.Traction("right", tx=1000.0 / (W * 2.0)), case="pull")
        joint = planar.Joint({"a": a, "b": b})
        joint.add_fasteners(planar.Fasteners([(40.0, W / 2)], layers=("a", "b"), diameter=D, flexibility=1e-5,
                                             tie=tie, holes={"a": ["hole"], "b": ["hole"]}))
        r = planar.solve(joint)["pull"]
        assert r.fasteners.magnitude[0] == pytest.approx(1000.0, rel=1e-9)  # statics
        assert r.balance_error() < 1e-9
        assert all(x.equilibrium_error() < 1e-9 for x in r.layers.values())
        # the hole's stresses along its edge, and the fastener among the layer's pins (statics: it takes the load)
        es = planar.post.edge_stresses(r.layers["a"], "hole")
        assert np.isfinite(es.peak("von_mises").value) if hasattr(es, "peak") else es is not None
        pins = {x.name: x for x in r.layers["a"].support_reactions()}
        assert pins["fasteners[0]@a"].force[0] == pytest.approx(1000.0, rel=1e-9)


def test_refusals():
    joint = lap(2, 2.0, 2.0, 1e-5)
    with pytest.raises(NameNotFoundError):
        joint.add_fasteners(planar.Fasteners([(0.0, 0.0)], layers=("top", "skin"), diameter=D, flexibility=1e-5))
    with pytest.raises(NameNotFoundError):
        joint.add_fasteners(planar.Fasteners([(0.0, 0.0)], layers=("top", "bottom"), diameter=D, flexibility=1e-5,
                                             holes={"top": ["hole"]}, name="other"))
    with pytest.raises(InputError, match="two groups"):
        joint.add_fasteners(planar.Fasteners([(0.0, 0.0)], layers=("top", "bottom"), diameter=D, flexibility=1e-5,
                                             name="row"))
    with pytest.raises(InputError):
        planar.Fasteners([(0.0, 0.0)], layers=("top",), diameter=D, flexibility=1e-5)
    with pytest.raises(InputError):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=D, flexibility=-1.0)
    # one fastener leaves the bottom strip free to turn about it
    one = lap(1, 2.0, 2.0, 1e-5)
    with pytest.raises(SupportError, match="bottom"):
        planar.solve(one)


def test_named_points_and_a_case_in_one_layer():
    # fasteners at a named point of a layer's mesh; the case 'pull' is in one layer only (no load in the other)
    a = _strip(0.0, 60.0, 2.0)
    b = _strip(30.0, 90.0, 2.0)
    node = int(np.argmin(np.hypot(a.mesh.nodes[:, 0] - 40.0, a.mesh.nodes[:, 1])))
    a.mesh.node_sets["bolt"] = np.array([node])
    node2 = int(np.argmin(np.hypot(a.mesh.nodes[:, 0] - 50.0, a.mesh.nodes[:, 1])))
    a.mesh.node_sets["bolt2"] = np.array([node2])
    a.add_support(planar.Fixed("left"))
    b.add_load(planar.Traction("right", tx=10.0), case="pull")
    joint = planar.Joint({"a": a, "b": b})
    f = joint.add_fasteners(planar.Fasteners(["bolt", "bolt2"], layers=("a", "b"), diameter=D, flexibility=1e-5))
    assert f.points(joint) == pytest.approx(np.array([[40.0, 0.0], [50.0, 0.0]]))
    r = planar.solve(joint, cases="pull")["pull"]
    assert r.fasteners.magnitude.sum() == pytest.approx(10.0 * W * 2.0, rel=1e-6)  # statics, both along x


def test_patch_tie_converges_and_a_coarse_patch_is_warned():
    # the spreading patch of diameter d: the fastener shares settle as the mesh is refined (a tie at one
    # node would not: the displacement under a point force in a plate grows without bound, common practice)
    global SIZE
    shares, codes = [], []
    old = SIZE
    try:
        for h in (2.5, 1.25, 0.625):
            SIZE = h
            r = planar.solve(lap(3, 2.0, 3.2, 3e-5))["pull"]
            shares.append(r.fasteners.magnitude / 1000.0)
            codes.append({w.code for w in r.warnings})
        SIZE = 10.0  # elements twice the fastener's diameter: its patch holds one or two nodes
        with pytest.warns(planar.DiscretisationWarning, match="fewer than 3 nodes"):
            coarse = planar.solve(lap(3, 2.0, 3.2, 3e-5))["pull"]
    finally:
        SIZE = old
    d1 = np.abs(shares[1] - shares[0]).max()
    d2 = np.abs(shares[2] - shares[1]).max()
    assert d2 < 0.1 * d1 and d2 < 1e-3  # measured: 4e-4, then 6e-6
    assert all("fastener-patch" not in c for c in codes)  # no false alarm on a fine mesh
    assert "fastener-patch" in {w.code for w in coarse.warnings}
