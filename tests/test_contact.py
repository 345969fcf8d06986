"""Bearing contact of a rigid pin (Pin(tie="contact")): Signorini's conditions, the arc, the cost, the refusals."""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.core import solvers as solvers_module
from planar.core.errors import InputError, SolverError
from planar.core.pins import Pin, PinLoad
from planar.post.combine import combine, combinations, envelope
from planar.verify.contact_cases import loaded_hole_model, ring_mesh

A = 5.0  # hole radius of the ring mesh plate (mm)


@pytest.fixture(scope="module")
def pulled():
    """The plate held at x = -L, pulled by a free pin in its hole, clearance 0.005 mm, two load cases."""
    model = loaded_hole_model(0.005, n_around=64, n_radial=16, a=A, load=2000.0)
    model.add_load(PinLoad("pin", fx=1000.0, fy=300.0), case="pull up")
    return planar.solve(model, verbose=False)


def test_complementarity_at_convergence(pulled):
    """Signorini's conditions, node by node: g >= 0, p >= 0, p g = 0 (A. Signorini, 1933; P. Wriggers,
    Computational Contact Mechanics, 2006, sec. 2.2; from memory), to round-off."""
    for case, r in pulled.items():
        st = r.contact_states["pin"]
        assert st.converged and st.iterations >= 1
        assert st.in_contact
        assert st.gap.min() >= -1e-6 * A
        assert st.pressure.min() >= 0.0
        assert st.max_penetration <= 1e-6 * A
        assert st.max_tension <= 1e-9 * st.peak_pressure
        assert np.abs(st.gap * st.pressure).max() <= 1e-9 * A * st.peak_pressure
        # the open nodes carry nothing, the bearing ones are closed
        assert np.all(st.gap[st.pressure > 0] <= 1e-9 * A)


def test_pin_force_balances_its_load_and_the_support(pulled):
    """Statics (common practice): a free pin's contact force equals its load; the support takes it back."""
    for case, load in (("pull", (2000.0, 0.0)), ("pull up", (1000.0, 300.0))):
        r = pulled[case]
        st = r.contact_states["pin"]
        assert st.force == pytest.approx(load, abs=1e-9 * 2000.0)
        support = sum(np.asarray(x.force) for x in r.support_reactions() if not x.kind.startswith("pin"))
        assert support == pytest.approx(-np.asarray(load), abs=1e-9 * 2000.0)
        pin = next(x for x in r.support_reactions() if x.name == "pin")
        assert pin.kind == "pin (contact tie)" and pin.moment == pytest.approx(0.0, abs=1e-9 * 2000.0 * A)
        assert r.equilibrium_error() < 1e-9


def test_symmetric_arc_for_symmetric_load(pulled):
    """A mesh mirror-symmetric about the load's line: the arc is centred on 0 deg to round-off (symmetry)."""
    st = pulled["pull"].contact_states["pin"]
    assert st.arc_start_deg == pytest.approx(-st.arc_end_deg, abs=1e-9)
    assert 0.0 < st.arc_deg < 180.0
    # the pull up turns the arc towards +y: its middle is at a positive angle
    up = pulled["pull up"].contact_states["pin"]
    assert (up.arc_start_deg + up.arc_end_deg) / 2 > 5.0


def test_arc_grows_as_the_clearance_shrinks():
    """A tighter fit bears over a wider arc with a lower peak (Persson 1964; Hyer and Klang 1985; from memory)."""
    arcs, peaks = [], []
    for c in (0.02, 0.005, 0.0):
        st = planar.solve(loaded_hole_model(c, n_around=64, n_radial=16, a=A), verbose=False)["pull"] \
            .contact_states["pin"]
        arcs.append(st.arc_deg)
        peaks.append(st.peak_pressure)
    assert arcs[0] < arcs[1] < arcs[2]
    assert peaks[0] > peaks[1] > peaks[2]


def test_one_factorization_for_every_case_and_iteration(monkeypatch):
    """The contact iteration reuses the one factor: factorize is called once for two load cases."""
    calls = []
    real = solvers_module.factorize

    def counting(*args, **kw):
        calls.append(1)
        return real(*args, **kw)

    monkeypatch.setattr("planar.core.static.factorize", counting)
    model = loaded_hole_model(0.01, n_around=32, n_radial=8, a=A)
    model.add_load(PinLoad("pin", fx=500.0), case="half")
    res = planar.solve(model, verbose=False)
    assert len(calls) == 1
    assert all(r.contact_states["pin"].iterations >= 1 for r in res.values())
    # contact is not linear: twice the load is not twice the contact force profile when the clearance counts
    p1, p2 = res["half"].contact_states["pin"], res["pull"].contact_states["pin"]
    assert p1.arc_deg < p2.arc_deg


def test_combinations_refuse_contact_results_but_envelopes_take_them(pulled):
    with pytest.raises(InputError, match="do not superpose.*Add a load case with the combined loads"):
        combine(pulled, {"pull": 1.0, "pull up": 1.0})
    with pytest.raises(InputError, match="bearing contact"):
        combinations(pulled, {"both": {"pull": 1.0, "pull up": 1.5}})
    env = envelope(pulled, "von_mises")  # an envelope reads each case's own field: no superposition
    assert np.nanmax(env.max) >= pulled["pull"].field("von_mises").max() - 1e-9


def test_summary_table_and_dict_state_their_units(pulled):
    st = pulled["pull"].contact_states["pin"]
    line = st.summary()
    assert "mm" in line and "MPa" in line and " N" in line and "nan" not in line.lower()
    assert "contact arc" in line and "active-set iteration" in line
    table = st.table()
    assert "pressure (MPa)" in table and "gap (mm)" in table
    d = st.as_dict()
    assert d["units"] == {"length": "mm", "stress": "MPa", "force": "N"}
    assert d["converged"] is True and len(d["pressure"]) == st.nodes.size


def test_clearance_too_large_for_the_load_leaves_the_pin_unloaded():
    """Part and pin both held: a clearance the load cannot close leaves the pin carrying nothing (no error)."""
    mesh = ring_mesh("Q4", 32, 8, a=A)
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_pin(Pin("hole", tie="contact", clearance=0.5, hold="both", at=(0.0, 0.0), name="pin"))
    model.add_load(planar.Traction("outer", tx=1.0), case="small")
    r = planar.solve(model, verbose=False)["small"]
    st = r.contact_states["pin"]
    assert not st.in_contact and st.peak_pressure == 0.0 and st.arc_start_deg is None
    assert "no contact" in st.summary() and "nan" not in st.summary().lower()
    assert st.force == (0.0, 0.0)


def test_part_held_only_by_a_pin_it_pulls_away_from_is_refused():
    """A block held only by a disc on its top edge and pulled down, away from the disc: the part is free."""
    mesh = planar.rectangle_mesh(10.0, 4.0, 10, 4, "Q4", origin=(-5.0, -4.0))
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))  # x and the rotation; y only by the pin
    model.add_pin(Pin("top", tie="contact", at=(0.0, 20.0), radius=20.0, hold="both", name="disc"))
    model.add_load(planar.Traction("bottom", ty=-1.0), case="pull down")
    with pytest.raises(SolverError, match="would move freely.*only pushes"):
        planar.solve(model, verbose=False)


def test_part_pressed_onto_a_pin_that_holds_it_alone_is_solved():
    """The same block pushed up onto the disc: held by contact alone in y, it bears (statics)."""
    mesh = planar.rectangle_mesh(10.0, 4.0, 20, 8, "Q4", origin=(-5.0, -4.0))
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_pin(Pin("top", tie="contact", at=(0.0, 20.0), radius=20.0, hold="both", name="disc"))
    model.add_load(planar.Traction("bottom", ty=1.0), case="push up")
    r = planar.solve(model, verbose=False)["push up"]
    st = r.contact_states["disc"]
    assert st.in_contact and st.force[1] == pytest.approx(-10.0, rel=1e-9)
    assert st.max_penetration <= 1e-6 * 20.0


def test_contact_pin_input_is_checked():
    with pytest.raises(InputError, match="clearance"):
        Pin("hole", tie="contact", clearance=-0.1)
    with pytest.raises(InputError, match="contact pin"):
        Pin("hole", tie="rigid", clearance=0.1)
    with pytest.raises(InputError, match="rotation"):
        Pin("hole", tie="contact", rotation="held")
    with pytest.raises(InputError, match="not both"):
        Pin("hole", tie="contact", radius=4.0, clearance=0.1)
    assert "clearance=0.05" in repr(Pin("hole", tie="contact", clearance=0.05))
    model = loaded_hole_model(0.0, n_around=16, n_radial=4, a=A)
    model.add_load(PinLoad("pin", moment=10.0), case="twist")
    with pytest.raises(InputError, match="carries no moment"):
        planar.solve(model, verbose=False)
    model = loaded_hole_model(0.0, n_around=16, n_radial=4, a=A)
    model.pins[0] = Pin("hole", tie="contact", clearance=A, hold=None, at=(0.0, 0.0), name="pin")
    with pytest.raises(InputError, match="not smaller than the hole's radius"):
        planar.solve(model, verbose=False)
    block = planar.Model(planar.rectangle_mesh(10.0, 4.0, 10, 4, "Q4", origin=(-5.0, -4.0)),
                         planar.Isotropic(70e3, 0.3), thickness=1.0)
    block.add_support(planar.Fixed("bottom"))
    block.add_load(PinLoad("disc", fy=-1.0), case="press")
    block.add_pin(Pin("top", tie="contact", at=(0.0, 20.0), hold="x", name="disc"))
    with pytest.raises(InputError, match="not a circle about the pin's point.*radius="):
        planar.solve(block, verbose=False)
    block.pins[0] = Pin("top", tie="contact", at=(0.0, 19.0), radius=20.0, hold="x", name="disc")
    with pytest.raises(InputError, match="overlaps its edge"):
        planar.solve(block, verbose=False)


def test_hertz_half_width_and_peak_pressure_within_3_percent():
    """K. L. Johnson, Contact Mechanics, 1985, sec. 5.2: a^2 = 4 P R / (pi E*), p0 = 2 P / (pi a)."""
    from planar.verify.contact_cases import hertz_contact

    for rec in hertz_contact("Q4"):
        assert rec.passed, rec


@pytest.mark.parametrize("name", [s for s in ("pardiso", "cholmod") if s in solvers_module.available_solvers()])
def test_gram_by_the_forward_half_equals_the_flexibility(name):
    """b^T K^-1 b from the forward substitution alone (K = P^T L L^T P) equals the full solve's."""
    import scipy.sparse as sp

    rng = np.random.default_rng(3)
    n = 60
    M = sp.random(n, n, density=0.1, random_state=4)
    K = (M @ M.T + sp.eye(n) * n).tocsc()
    f = solvers_module.factorize(sp.tril(K).tocsc(), name)
    b = np.zeros((n, 5))
    b[rng.choice(n, 5, replace=False), np.arange(5)] = 1.0
    assert f.gram(b) == pytest.approx(b.T @ f.solve(b), rel=1e-10, abs=1e-14)


def test_iterative_and_lu_back_ends_give_the_same_contact(pulled):
    """Without a forward half (SuperLU), the flexibility comes from full solves: the same answer."""
    model = loaded_hole_model(0.005, n_around=64, n_radial=16, a=A, load=2000.0)
    st = planar.solve(model, solver="superlu", verbose=False)["pull"].contact_states["pin"]
    ref = pulled["pull"].contact_states["pin"]
    assert st.arc_start_deg == pytest.approx(ref.arc_start_deg, abs=1e-9)
    assert st.peak_pressure == pytest.approx(ref.peak_pressure, rel=1e-8)
    summary = planar.solve(model, verbose=False)["pull"].summary()
    assert summary["contact"]["pin"]["units"]["stress"] == "MPa"
    import json

    assert "arc_start_deg" in json.loads(json.dumps(summary["contact"]))["pin"]


def test_free_pin_moves_by_its_clearance_and_more(pulled):
    """The loaded pin crosses its clearance before it bears (geometry of the fit): ux > c, towards the load."""
    pin = next(x for x in pulled["pull"].support_reactions() if x.name == "pin")
    assert pin.motion[0] > 0.005 and pin.motion[2] == 0.0
    assert abs(pin.motion[1]) < 1e-9 * pin.motion[0]


def test_large_sliding_across_the_pin_is_flagged(pulled):
    """The linearised gap leaves out u_t^2 / (2 r): a fit loose against its radius is flagged, a close one not."""
    assert not [w for w in pulled["pull"].warnings if w.code == "contact-large-motion"]
    assert pulled["pull"].contact_states["pin"].neglected < 0.01 * pulled["pull"].contact_states["pin"].motion
    model = loaded_hole_model(1.0, n_around=32, n_radial=8, a=A, load=2000.0)
    with pytest.warns(Warning, match="contact-large-motion"):
        r = planar.solve(model, verbose=False)["pull"]
    assert any(w.code == "contact-large-motion" for w in r.warnings)
