"""Pins tied to a named edge (rigid and spreading ties), held or loaded, and reactions per support and pin.

The checks are statics (the sum of forces and moments on a free body is zero: common practice), the
rigid-body patch test (a rigid motion strains nothing: B. M. Irons and A. Razzaque, 1972, as in
O. C. Zienkiewicz and R. L. Taylor, The Finite Element Method, vol. 1, 5th ed., 2000, sec. 10.3;
from memory), and the definition of the spreading tie (its pin load equals nodal forces spread by
the weighted least-squares rigid fit, so it adds no stiffness).
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar import Model, solve
from planar.core import static
from planar.core.errors import InputError, NameNotFoundError, SupportError
from planar.core.loads import LoadKind, Traction
from planar.core.materials import Isotropic
from planar.core.pins import Pin, PinLoad, reference_point
from planar.core.supports import Fixed, Roller
from planar.verify.recovery_cases import kirsch_mesh

E, NU = 70e3, 0.33


def quarter(element="Q4", n=10):
    """The quarter plate [0, 5]^2 minus the hole of radius 1 (edges hole, outer, symmetry_x, symmetry_y)."""
    return kirsch_mesh(element, n)


def model_of(mesh, **kw):
    return Model(mesh, Isotropic(E, NU), thickness=2.0, **kw)


def hole_nodes(mesh):
    return np.unique(mesh.edge("hole"))


def rigid_fit_residual(mesh, u, nodes, point):
    """Largest misfit of the edge's motion to its least-squares rigid motion, over its largest motion."""
    r = mesh.nodes[nodes] - point
    G = np.zeros((2 * nodes.size, 3))
    G[0::2, 0] = 1; G[1::2, 1] = 1; G[0::2, 2] = -r[:, 1]; G[1::2, 2] = r[:, 0]
    v = u[nodes].ravel()
    q, *_ = np.linalg.lstsq(G, v, rcond=None)
    return np.abs(G @ q - v).max() / np.abs(v).max()


def test_reference_point_is_the_centre_of_the_fitted_circle_or_of_a_straight_edge():
    mesh = quarter()
    assert np.allclose(reference_point(mesh, "hole"), [0.0, 0.0], atol=1e-12)  # the quarter arc's circle
    # the straight edge x = 0 from y = 1 to 5: its middle (2 cells of unequal length weigh by length)
    assert np.allclose(reference_point(mesh, "symmetry_x"), [0.0, 3.0], atol=1e-12)


def test_rigid_tie_patch_test_a_pin_moved_as_a_rigid_body_strains_nothing():
    # the part is held by its pin alone; a prescribed rigid motion of the pin moves it without stress
    mesh = quarter("Q8", 6)
    m = model_of(mesh)
    move = (0.01, -0.02, 1e-3)
    m.add_pin(Pin("hole", hold="both", rotation="held", move=move))
    m.add_case("moved")
    r = solve(m)["moved"]
    x = mesh.nodes
    exact = np.column_stack([move[0] - move[2] * x[:, 1], move[1] + move[2] * x[:, 0]])
    assert np.abs(r.u - exact).max() < 1e-12 * 0.03
    level = E * 0.03 / 5.0  # the stress a strain of the motion's size over the part would give
    assert np.abs(r.nodal_stress("average")[0]).max() < 1e-9 * level
    (pin,) = [s for s in r.support_reactions() if s.kind.startswith("pin")]
    assert np.allclose(pin.motion, move, rtol=1e-12, atol=1e-15)


def test_pin_held_alone_balances_the_applied_load_to_1e_9_and_carries_it_through_its_edge():
    mesh = quarter("Q4", 10)
    m = model_of(mesh)
    m.add_pin(Pin("hole", hold="both", rotation="held"))
    m.add_load(Traction("outer", tx=3.0, ty=-1.0), case="pull")
    r = solve(m)["pull"]
    (pin,) = r.support_reactions()
    applied = r.applied.sum(axis=0)
    # statics of the plate: the pin's force balances the applied loads; moments about the origin too
    assert np.allclose(np.array(pin.force) + applied, 0.0, atol=1e-9 * np.abs(applied).max())
    x = mesh.nodes
    m_applied = float(x[:, 0] @ r.applied[:, 1] - x[:, 1] @ r.applied[:, 0])
    assert abs(pin.moment + m_applied) < 1e-9 * abs(m_applied)
    # the pin's force is the sum of the forces on its edge nodes, and nothing acts elsewhere
    nodes = hole_nodes(mesh)
    assert np.allclose(r.pin_forces[nodes].sum(axis=0), pin.force, rtol=1e-12)
    others = np.setdiff1d(np.arange(mesh.n_nodes), nodes)
    assert np.all(r.pin_forces[others] == 0)
    assert r.equilibrium_error() < 1e-9
    assert np.allclose(r.total_reaction() + r.total_applied(), 0.0, atol=1e-9 * np.abs(applied).max())


def test_pin_loaded_plate_pin_force_equals_load_and_supports_balance_it():
    mesh = quarter("Q8", 8)
    m = model_of(mesh)
    m.add_support(Fixed("outer"))
    m.add_pin(Pin("hole", hold=None))
    m.add_load("pin-load", pin="hole", fx=-400.0, fy=250.0, moment=900.0, case="lug")
    r = solve(m)["lug"]
    recs = r.support_reactions()
    pin = recs[-1]
    assert pin.name == "hole" and pin.kind == "pin (rigid tie)"
    # the force the pin exerts on the part is its load (nothing holds the pin), to round-off
    assert np.allclose(pin.force, (-400.0, 250.0), rtol=1e-9)
    assert np.allclose(r.pin_forces[hole_nodes(mesh)].sum(axis=0), (-400.0, 250.0), rtol=1e-9)
    assert abs(pin.reaction[0]) < 1e-9 * 400 and abs(pin.reaction[1]) < 1e-9 * 400
    # about the pin's own point its moment is the applied moment
    own = r.support_reactions(about="own")[-1]
    assert np.allclose(own.about, (0.0, 0.0), atol=1e-12) and abs(own.moment - 900.0) < 1e-9 * 900
    # the fixed edge balances it: force and moment, about the origin and about another point
    for about in ((0.0, 0.0), (3.0, -7.0)):
        rs = r.support_reactions(about=about)
        tot = np.sum([s.force for s in rs], axis=0)
        assert np.allclose(tot, 0.0, atol=1e-9 * 400)
        assert abs(sum(s.moment for s in rs)) < 1e-9 * 900 * 5
    assert np.allclose(r.total_applied(), (-400.0, 250.0)) and np.allclose(r.total_reaction(), (400.0, -250.0))
    assert r.equilibrium_error() < 1e-9
    s = r.summary()
    assert [d["name"] for d in s["support_reactions"]] == [repr(Fixed("outer")), "hole"]


def test_reactions_per_support_add_up_to_the_total():
    mesh = quarter("Q4", 10)
    m = model_of(mesh)
    m.add_support(Roller("symmetry_x", fixed="x"))
    m.add_support(Roller("symmetry_y", fixed="y"))
    m.add_support(Fixed("outer"))  # its corner nodes are held by a roller too: each row is counted once
    m.add_load(Traction("hole", tx=5.0, ty=2.0), case="c")
    r = solve(m)["c"]
    recs = r.support_reactions()
    assert [s.kind for s in recs] == ["roller", "roller", "fixed"]
    assert np.allclose(np.sum([s.force for s in recs], axis=0), r.reactions.sum(axis=0), rtol=1e-12, atol=1e-12)
    assert recs[0].force[1] == 0.0 and recs[1].force[0] == 0.0  # a roller pushes along its direction only
    x = mesh.nodes
    total_m = float(x[:, 0] @ r.reactions[:, 1] - x[:, 1] @ r.reactions[:, 0])
    assert abs(sum(s.moment for s in recs) - total_m) < 1e-9 * max(1.0, abs(total_m))
    with pytest.raises(InputError):
        r.support_reactions(about="centre")


class Spread(LoadKind):
    """Nodal forces given as an array (the same resultant spread by weights, for the comparison)."""

    name = "given-forces"

    def __init__(self, f):
        self.f = f

    def nodal_forces(self, ctx):
        return self.f


def spread_by_weights(mesh, force, point):
    """Nodal forces W G (G^T W G)^-1 (fx, fy, M) on the hole's nodes, weights the tributary lengths."""
    seg = mesh.edge("hole")
    a, b = mesh.nodes[seg[:, 0]], mesh.nodes[seg[:, 1]]
    w = np.zeros(mesh.n_nodes)
    np.add.at(w, seg[:, :2].ravel(), np.repeat(np.hypot(*(b - a).T) / 2, 2))
    nodes = hole_nodes(mesh)
    r = mesh.nodes[nodes] - point
    G = np.zeros((2 * nodes.size, 3))
    G[0::2, 0] = 1; G[1::2, 1] = 1; G[0::2, 2] = -r[:, 1]; G[1::2, 2] = r[:, 0]
    W = np.repeat(w[nodes], 2)
    f = np.zeros((mesh.n_nodes, 2))
    f[nodes] = ((W[:, None] * G) @ np.linalg.solve(G.T @ (W[:, None] * G), force)).reshape(-1, 2)
    return f


def test_spreading_tie_adds_no_stiffness_and_the_hole_ovalises():
    mesh = quarter("Q4", 10)
    load = np.array([300.0, -500.0, 200.0])

    def held(m):  # statically determinate: (5, 0) held in x and y, (0, 5) in x
        m.add_support(Fixed((5.0, 0.0)))
        m.add_support(Roller((0.0, 5.0), fixed="x"))

    m1 = model_of(mesh)
    held(m1)
    m1.add_pin(Pin("hole", tie="spreading", hold=None))
    m1.add_load(PinLoad("hole", *load), case="c")
    r1 = solve(m1)["c"]
    m2 = model_of(mesh)
    held(m2)
    m2.add_load(Spread(spread_by_weights(mesh, load, np.zeros(2))), case="c")
    r2 = solve(m2)["c"]
    assert np.abs(r1.u - r2.u).max() < 1e-10 * np.abs(r2.u).max()
    # reactions from the statics of the determinate set-up (moments about (5, 0))
    fx, fy, mz = load
    rx_top = (mz - 5.0 * fy) / 5.0
    recs = r1.support_reactions(about=(5.0, 0.0))
    assert np.allclose(recs[1].force, (rx_top, 0.0), atol=1e-9 * 500)
    assert np.allclose(recs[0].force, (-fx - rx_top, -fy), atol=1e-9 * 500)
    assert abs(sum(s.moment for s in recs)) < 1e-9 * 500 * 5
    # the hole ovalises: its motion is not rigid; the rigid tie keeps it rigid
    point = np.zeros(2)
    assert rigid_fit_residual(mesh, r1.u, hole_nodes(mesh), point) > 0.01
    m3 = model_of(mesh)
    held(m3)
    m3.add_pin(Pin("hole", tie="rigid", hold=None))
    m3.add_load(PinLoad("hole", *load), case="c")
    r3 = solve(m3)["c"]
    assert rigid_fit_residual(mesh, r3.u, hole_nodes(mesh), point) < 1e-10
    pin = r1.support_reactions()[-1]
    assert pin.kind == "pin (spreading tie)" and np.allclose(pin.force, load[:2], rtol=1e-9)


def test_spreading_tie_held_pin_reacts_the_load_and_stays_put_on_average():
    mesh = quarter("Q8", 8)
    m = model_of(mesh)
    m.add_pin(Pin("hole", tie="spreading", hold="both", rotation="held"))
    m.add_load(Traction("outer", tx=2.0, ty=1.0), case="c")
    r = solve(m)["c"]
    (pin,) = r.support_reactions()
    applied = r.applied.sum(axis=0)
    assert np.allclose(np.array(pin.reaction[:2]) + applied, 0.0, atol=1e-9 * np.abs(applied).max())
    assert np.abs(pin.motion).max() < 1e-12 * np.abs(r.u).max()  # the weighted fit of the edge is held
    assert rigid_fit_residual(mesh, r.u, hole_nodes(mesh), np.zeros(2)) > 0.01  # but the hole deforms
    assert r.equilibrium_error() < 1e-9


@pytest.mark.parametrize("tie", ["rigid", "spreading"])
def test_pin_held_in_one_direction_and_with_its_rotation_free(tie):
    mesh = quarter("Q4", 10)
    m = model_of(mesh)
    m.add_support(Roller((5.0, 0.0), fixed="y"))
    m.add_support(Roller((0.0, 5.0), fixed="y"))
    m.add_pin(Pin("hole", tie=tie, hold="x", rotation="free"))
    m.add_load(Traction("outer", tx=2.0), case="c")
    r = solve(m)["c"]
    pin = r.support_reactions(about="own")[-1]
    applied = r.applied.sum(axis=0)
    # the pin takes all of x, none of y (not held), and no moment about its point (rotation free)
    assert abs(pin.reaction[0] + applied[0]) < 1e-9 * abs(applied[0])
    assert abs(pin.reaction[1]) < 1e-9 * abs(applied[0])
    assert abs(pin.moment) < 1e-9 * abs(applied[0]) * 5
    assert abs(pin.motion[0]) < 1e-15  # held along x
    assert abs(pin.motion[2]) > 0  # free to turn
    # a direction: held along (1, 1), free across it
    m2 = model_of(mesh)
    m2.add_support(Roller((5.0, 5.0), fixed=(1.0, -1.0)))
    m2.add_pin(Pin("hole", tie=tie, hold=(1.0, 1.0), rotation="held"))
    m2.add_load(Traction("outer", tx=2.0), case="c")
    pin2 = solve(m2)["c"].support_reactions()[-1]
    assert abs(pin2.reaction[0] - pin2.reaction[1]) < 1e-9 * 10  # along (1, 1) only
    assert abs(pin2.motion[0] + pin2.motion[1]) < 1e-15


def test_pin_with_free_rotation_on_an_unheld_part_is_refused_as_a_mechanism():
    mesh = quarter("Q4", 6)
    m = model_of(mesh)
    m.add_pin(Pin("hole", hold="both", rotation="free"))
    m.add_load(Traction("outer", tx=1.0), case="c")
    with pytest.raises(SupportError, match="rotation"):
        solve(m)
    m2 = model_of(mesh)
    m2.add_pin(Pin("hole", hold=None))
    m2.add_load(PinLoad("hole", fx=1.0), case="c")
    with pytest.raises(SupportError, match="rigid body"):
        solve(m2)
    # held in rotation too, the same part is held: no refusal
    m3 = model_of(mesh)
    m3.add_pin(Pin("hole", hold="both", rotation="held"))
    m3.add_load(Traction("outer", tx=1.0), case="c")
    assert solve(m3)["c"].equilibrium_error() < 1e-9


def test_load_cases_share_one_factorization_and_superpose(monkeypatch):
    calls = []
    real = static.factorize

    def counted(*a, **kw):
        calls.append(1)
        return real(*a, **kw)

    monkeypatch.setattr(static, "factorize", counted)
    mesh = quarter("Q4", 8)
    m = model_of(mesh)
    m.add_support(Fixed("outer"))
    m.add_pin(Pin("hole", hold=None))
    m.add_load(PinLoad("hole", fx=100.0), case="x")
    m.add_load(PinLoad("hole", fy=50.0, moment=30.0), case="y")
    m.add_load(PinLoad("hole", fx=100.0), case="both")
    m.add_load(PinLoad("hole", fy=50.0, moment=30.0), case="both")
    rs = solve(m)
    assert len(calls) == 1
    assert np.abs(rs["x"].u + rs["y"].u - rs["both"].u).max() < 1e-12 * np.abs(rs["both"].u).max()


def test_pin_input_errors_are_named():
    mesh = quarter("Q4", 6)
    m = model_of(mesh)
    with pytest.raises(NameNotFoundError):
        m.add_pin(Pin("bore"))
    with pytest.raises(InputError):
        Pin("hole", tie="glued")
    with pytest.raises(InputError):
        Pin("hole", hold="z")
    with pytest.raises(InputError):  # moves a component it does not hold
        Pin("hole", hold="x", move=(0.0, 1.0, 0.0))
    m.add_pin(Pin("hole"))
    with pytest.raises(InputError):
        m.add_pin(Pin("outer", name="hole"))
    m.add_load(PinLoad("bolt", fx=1.0), case="c")
    with pytest.raises(NameNotFoundError, match="pin"):
        solve(m)
    # a support on the tied edge that the pin does not imply is refused; one it implies is allowed
    m2 = model_of(mesh)
    m2.add_support(Roller("symmetry_y", fixed="y"))  # holds uy at (1, 0), on the hole
    m2.add_pin(Pin("hole", hold="x"))
    m2.add_load(Traction("outer", tx=1.0), case="c")
    with pytest.raises(SupportError, match="hold the pin"):
        solve(m2)
    from planar.core.registry import load_kind

    assert load_kind("pin-load") is PinLoad


def test_rigid_inclusion_benchmark_passes():
    # the peak interface stresses of a bonded rigid disc against the closed form (J. N. Goodier, J. Appl.
    # Mech. 1, 1933; N. I. Muskhelishvili, 1953; re-derived in planar/verify/pin_cases.py), within 2 %
    from planar.verify.pin_cases import rigid_inclusion

    recs = rigid_inclusion("Q8")
    assert len(recs) == 4 and all(r.passed for r in recs), [(r.quantity, r.rel_error) for r in recs]
    assert all(r.rel_error < 0.005 for r in recs)


def test_equilibrium_table_has_the_moment_row_and_balances_with_a_pin():
    from planar.post.report import equilibrium_table

    mesh = quarter("Q4", 6)
    m = Model(mesh, Isotropic(E, NU), thickness=2.0, units="N, mm, MPa")
    m.add_support(Fixed("outer"))
    m.add_pin(Pin("hole", hold=None))
    m.add_load(PinLoad("hole", fx=10.0, moment=5.0), case="c")
    r = solve(m)["c"]
    t = equilibrium_table(r)
    rows = {row[0]: row for row in t.rows}
    assert rows["force in x [N]"][1] == "10" and float(rows["force in x [N]"][2]) == pytest.approx(-10.0)
    mrow = rows["moment about (0, 0) [N mm]"]
    assert float(mrow[1]) == pytest.approx(5.0) and abs(float(mrow[3])) < 1e-9


def test_combinations_superpose_the_pins():
    # linear superposition (S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 1970, sec. 6)
    from planar.post.combine import combine

    mesh = quarter("Q4", 6)
    m = model_of(mesh)
    m.add_support(Fixed("outer"))
    m.add_pin(Pin("hole", hold=None))
    m.add_load(PinLoad("hole", fx=100.0), case="x")
    m.add_load(PinLoad("hole", fy=50.0, moment=30.0), case="y")
    rs = solve(m)
    c = combine(rs, {"x": 1.5, "y": -2.0})
    pin = c.support_reactions()[-1]
    assert np.allclose(pin.force, (150.0, -100.0), rtol=1e-9) and np.allclose(pin.load, (150.0, -100.0, -60.0))
    assert c.equilibrium_error() < 1e-9
    assert np.allclose(c.total_applied() + c.total_reaction(), 0.0, atol=1e-9 * 150)


def two_pieces():
    """Two quarter plates side by side, not joined: edges hole, outer (first) and outer_b (second)."""
    from planar import Mesh

    a = quarter("Q4", 6)
    n = a.n_nodes
    nodes = np.vstack([a.nodes, a.nodes + [20.0, 0.0]])
    (lay, conn), = a.cells.items()
    return Mesh(nodes, {lay: np.vstack([conn, conn + n])},
                {"hole": a.edge_sets["hole"], "outer": a.edge_sets["outer"], "outer_b": a.edge_sets["outer"] + n})


def test_pins_on_a_mesh_of_several_pieces():
    mesh = two_pieces()
    m = model_of(mesh)
    m.add_support(Fixed("outer_b"))
    m.add_pin(Pin("hole", hold="both", rotation="held"))
    m.add_load(Traction("outer", tx=1.0), case="c")
    r = solve(m)["c"]  # each piece held: the first by its pin, the second by its fixed edge
    assert r.equilibrium_error() < 1e-9
    # held in both directions with its rotation free, the first piece turns about the pin: refused by name
    m2 = model_of(mesh)
    m2.add_support(Fixed("outer_b"))
    m2.add_pin(Pin("hole", hold="both"))
    m2.add_load(Traction("outer", tx=1.0), case="c")
    with pytest.raises(SupportError, match="rotation"):
        solve(m2)
    # held along x only, with its rotation free: refused, by the solve
    m3 = model_of(mesh)
    m3.add_support(Fixed("outer_b"))
    m3.add_pin(Pin("hole", hold="x"))
    m3.add_load(Traction("outer", tx=1.0), case="c")
    with pytest.raises((SupportError, planar.SolverError)):
        solve(m3)


def test_a_peak_at_a_tied_edge_is_noted_as_made_by_the_idealisation():
    # a tie is an idealisation of the pin's fit in its hole (common practice: read no peak at a clamp)
    mesh = quarter("Q8", 8)
    m = model_of(mesh)
    m.add_pin(Pin("hole", hold="both", rotation="held"))
    m.add_load(Traction("outer", tx=1.0), case="c")
    r = solve(m)["c"]
    peak = r.max("von_mises")
    assert "the pin" in str(peak.note)
    away = r.max("von_mises", where=planar.Away())
    assert away.value < peak.value and np.hypot(*away.location) > 1.5


def test_reactions_table_lists_each_support_and_pin_with_units():
    from planar.post.report import reactions_table

    mesh = quarter("Q4", 6)
    m = Model(mesh, Isotropic(E, NU), thickness=2.0, units="N, mm, MPa")
    m.add_support(Fixed("outer"))
    m.add_pin(Pin("hole", hold=None))
    m.add_load(PinLoad("hole", fy=-20.0), case="c")
    t = reactions_table(solve(m)["c"])
    assert list(t.headers) == ["support or pin", "kind", "force in x [N]", "force in y [N]", "moment [N mm]"]
    assert [row[1] for row in t.rows] == ["fixed", "pin (rigid tie)"]
    assert float(t.rows[0][3]) == pytest.approx(20.0) and float(t.rows[1][3]) == pytest.approx(-20.0)


def test_the_tying_is_kept_with_the_results_and_gives_the_edge_frame():
    mesh = quarter("Q4", 6)
    m = model_of(mesh)
    m.add_pin(Pin("hole", hold="both", rotation="held", name="bolt"))
    m.add_load(Traction("outer", tx=1.0), case="c")
    r = solve(m)["c"]
    frame = r.assembly.tying.edge_frame("bolt")
    x = mesh.nodes[frame["nodes"]]
    assert np.allclose(frame["normals"], x / np.hypot(*x.T)[:, None], atol=1e-12)  # radial on the unit hole
    assert frame["G"].shape == (2 * frame["nodes"].size, 3)
    with pytest.raises(NameNotFoundError):
        r.assembly.tying.edge_frame("hole")


def test_a_pin_joining_pieces_holds_them_together():
    # two plates side by side whose holes are tied to one pin: the pin joins them (statics of the pair)
    from planar import Mesh

    a = quarter("Q4", 6)
    n = a.n_nodes
    (lay, conn), = a.cells.items()
    nodes = np.vstack([a.nodes, a.nodes * [-1.0, 1.0]])  # the mirror image across x = 0, not joined
    mesh = Mesh(nodes, {lay: np.vstack([conn, conn[:, ::-1] + n])},
                {"holes": np.vstack([a.edge_sets["hole"], a.edge_sets["hole"][:, ::-1] + n]),
                 "outer": a.edge_sets["outer"], "outer_b": a.edge_sets["outer"][:, ::-1] + n}, slits=True)
    m = model_of(mesh)
    m.add_support(Fixed("outer_b"))
    m.add_pin(Pin("holes", hold=None, at=(0.0, 0.0)))
    m.add_load(Traction("outer", tx=1.0), case="c")
    r = solve(m)["c"]  # the first plate is held through the pin by the second
    assert r.equilibrium_error() < 1e-9
    fixed = r.support_reactions()[0]
    assert np.allclose(np.array(fixed.force) + r.applied.sum(axis=0), 0.0, atol=1e-9 * 5)
    # without the fixed edge both plates and the pin are free: refused by name before the solve
    m2 = model_of(mesh)
    m2.add_pin(Pin("holes", hold=None, at=(0.0, 0.0)))
    m2.add_support(Roller("outer_b", fixed="x"))
    m2.add_load(Traction("outer", tx=1.0), case="c")
    with pytest.raises(SupportError, match="can still move"):
        solve(m2)
