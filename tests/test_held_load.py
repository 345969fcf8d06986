"""The ``held-load`` warning: a load that acts only where the supports hold the part.

Statics (common practice): a force applied at a node whose motion is prescribed is taken by that
node's reaction and strains nothing, so the part's stresses are those of a part without that load.
"""
from __future__ import annotations

import warnings

import numpy as np
import pytest

import planar
from planar.core.errors import PlanarWarning


def _strap(*loads, support=None):
    m = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(support or planar.Fixed("left"))
    for ld in loads:
        model.add_load(ld, case="c")
    return model


def _codes(model):
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        r = planar.solve(model)["c"]
    return r, [w.message for w in rec if isinstance(w.message, PlanarWarning) and w.message.code == "held-load"]


def test_traction_on_the_clamped_edge_warns_and_carries_to_the_reaction():
    r, ws = _codes(_strap(planar.Traction("left", tx=10.0)))
    assert len(ws) == 1 and "'c'" in ws[0].message and "Traction('left'" in ws[0].message
    assert "held-load" in [w.code for w in r.warnings]
    assert np.abs(r.field("von_mises")).max() < 1e-9 * 10.0  # statics: the part carries nothing
    assert r.equilibrium_error() < 1e-9


def test_point_force_on_a_fixed_point_warns():
    _, ws = _codes(_strap(planar.PointForce((0.0, 10.0), fx=100.0)))
    assert len(ws) == 1 and "PointForce" in ws[0].message


def test_one_held_load_among_others_is_named():
    _, ws = _codes(_strap(planar.Traction("right", tx=10.0), planar.PointForce((0.0, 0.0), fy=50.0)))
    assert len(ws) == 1 and "PointForce" in ws[0].message and "Traction" not in ws[0].message


def test_pull_along_a_rollers_held_direction_warns_and_across_it_does_not():
    # a roller holding x on the left edge: tx there goes into it; ty there moves the part (held at one point in y)
    held = _strap(planar.Traction("left", tx=10.0), support=planar.Roller("left", fixed="x"))
    held.add_support(planar.Roller("corner_00", fixed="y"))
    assert len(_codes(held)[1]) == 1
    across = _strap(planar.Traction("left", ty=1.0), support=planar.Roller("left", fixed="x"))
    across.add_support(planar.Roller("corner_00", fixed="y"))
    assert _codes(across)[1] == []
    free = _strap(planar.Traction("right", ty=1.0))
    assert _codes(free)[1] == []


def test_ordinary_loads_and_thermal_cases_are_quiet():
    assert _codes(_strap(planar.Traction("right", tx=10.0)))[1] == []
    # a fully clamped part heated: the nodal forces of the temperature change land partly on held nodes, and
    # the part is stressed by its own restrained expansion: not this warning's business
    m = planar.rectangle_mesh(100.0, 20.0, 20, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33, alpha=23e-6), thickness=2.0, units="N, mm, MPa")
    for e in ("left", "right"):
        model.add_support(planar.Fixed(e))
    model.add_load(planar.TemperatureChange(50.0), case="c")
    r, ws = _codes(model)
    assert ws == [] and r.max("von_mises")[0] > 10.0


def test_prescribed_motion_case_is_quiet():
    model = _strap(planar.Traction("left", tx=10.0))
    model.add_support(planar.Prescribed("right", ux=0.01))
    assert _codes(model)[1] == []
