"""Peak queries asked many times of one result: a peak warning told once per result, node and field,
and the idealised supports and loads prepared once per assembly (planar.core.zones).

Reference for the model: the plate with a circular hole in remote tension S (G. Kirsch 1898; exact field
in S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 35, eqs. 61): the hoop
stress peaks at 3 S on the hole across the load, and falls steeply away from it, so a coarse mesh there
reads it low (tests/test_peak_resolution.py and tests/test_linear_peak.py measure how low): T6 draws
"coarse-peak", T3 "linear-peak".
"""
from __future__ import annotations

import warnings

import numpy as np
import pytest

import planar
from planar.core import zones
from planar.geometry import Refine, mesh
from planar.post import edge_stresses
from planar.verify.recovery_cases import kirsch_build, kirsch_geometry

HOLE = dict(where="hole", centre=(0.0, 0.0))
CODE = {"T6": "coarse-peak", "T3": "linear-peak"}


def _kirsch(element: str):
    m = mesh(kirsch_geometry(), size=1.0, refine=[Refine("hole", size=0.6, growth=1.2)], seed=1, element=element)
    return planar.solve(kirsch_build()(m))["remote tension"]


@pytest.fixture(scope="module", params=["T6", "T3"])
def element(request):
    return request.param


def _told(calls) -> list[str]:
    """The codes of the warnings the calls raise, every call counted (no filter of Python's own)."""
    with warnings.catch_warnings(record=True) as told:
        warnings.simplefilter("always")
        for call in calls:
            call()
    return [w.message.code for w in told if hasattr(w.message, "code")]


@pytest.mark.parametrize("edge_first", [True, False])
def test_edge_peak_and_result_max_warn_once(element, edge_first):
    r = _kirsch(element)
    code = CODE[element]
    got = {}

    def edge():
        got["es"] = es = edge_stresses(r, "hole")
        got["edge"] = es.peak("sigma_t", absolute=False)

    def top():
        got["max"] = r.max("sigma_theta", **HOLE)

    told = _told([edge, top] if edge_first else [top, edge])
    assert got["edge"].node == got["max"].node  # the same peak: the hole's edge across the load (Kirsch)
    assert told == [code]
    assert [w.code for w in r.warnings].count(code) == 1
    assert [w.code for w in got["es"].warnings] == [code]  # the edge keeps its own record of it either way
    assert code in got["edge"].note


def test_asking_again_does_not_warn_again(element):
    r = _kirsch(element)
    code = CODE[element]
    got = {}
    assert _told([lambda: got.setdefault("first", r.max("sigma_theta", **HOLE))]) == [code]
    told = _told([lambda: r.max("sigma_theta", **HOLE), lambda: r.max("sigma_theta", **HOLE),
                  lambda: edge_stresses(r, "hole").peak("sigma_t", absolute=False)])
    assert told == [] and [w.code for w in r.warnings].count(code) == 1
    assert r.max("sigma_theta", **HOLE) == got["first"]  # the answer itself unchanged


def test_another_field_or_node_still_warns(element):
    r = _kirsch(element)
    code = CODE[element]
    assert _told([lambda: r.max("sigma_theta", **HOLE)]) == [code]
    # the same node, another field: its own warning
    assert _told([lambda: r.max("von_mises", where="hole")]) == [code]
    # another node: the smallest hoop stress, -S on the hole along the load (Kirsch 1898), read coarsely too
    low = None

    def smallest():
        nonlocal low
        low = r.min("sigma_theta", **HOLE)

    told = _told([smallest])
    assert low.node != r.max("sigma_theta", **HOLE).node and len(told) == 1
    # and the edge's peak after them: nothing new to tell
    assert _told([lambda: edge_stresses(r, "hole").peak("sigma_t", absolute=False)]) == []


def _cantilever():
    mesh_ = planar.rectangle_mesh(100.0, 20.0, 40, 8, "Q8")
    model = planar.Model(mesh_, planar.Isotropic(70e3, 0.33), thickness=2.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-1.0), case="tip")
    return model


FIELDS = ("von_mises", "tresca", "sigma_xx", "sigma_yy", "tau_xy", "sigma_1", "sigma_2")


def _fresh(result, *args, **kw) -> str:
    """idealised_reason worked out with nothing kept from before."""
    memo = result.assembly.__dict__.pop("_planar_idealised", None)
    try:
        return zones.idealised_reason(result, *args, **kw)
    finally:
        result.assembly.__dict__.pop("_planar_idealised", None)
        if memo is not None:
            result.assembly._planar_idealised = memo


def test_notes_kept_once_per_assembly_are_those_worked_out_afresh():
    # a cantilever under a tip shear: its peak is at the clamp's corners, made by the clamp (common
    # practice: a clamped edge's corners are singular), and the notes must not depend on what was asked before
    r = planar.solve(_cantilever())["tip"]
    used = r.mesh.used_nodes()
    windows = [None, zones.OnEdge("left").mask(r) & used, zones.InBox((0.0, 0.0), (30.0, 20.0)).mask(r) & used]
    asked = 0
    for f in FIELDS:
        for sign in (1.0, -1.0):
            v = sign * r.field(f)
            for m in windows:
                i = int(np.argmax(np.where(used if m is None else m, v, -np.inf)))
                kept = zones.idealised_reason(r, i, v, m, sign_of_values=sign)
                assert kept == _fresh(r, i, v, m, sign_of_values=sign)
                asked += bool(kept)
    assert asked > 0  # some of them next to the clamp: the comparison covers flagged notes too
    assert len(r.assembly._planar_idealised) == 1  # one model state, prepared once


def test_a_load_added_after_the_solve_is_seen():
    model = _cantilever()
    r = planar.solve(model)["tip"]
    v = r.field("von_mises")
    node = int(r.mesh.nearest_node((50.0, 20.0)))
    assert "point force" not in zones.idealised_reason(r, node, v)
    # a point force put on the top edge afterwards: the node under it is next to it, as worked out afresh
    model.add_load(planar.PointForce((50.0, 20.0), fy=-5.0), case="tip")
    spike = v.copy()
    spike[node] = 10.0 * v.max()  # as a point force's singular peak would read there
    note = zones.idealised_reason(r, node, spike)
    assert note.startswith("next to the point force") and note == _fresh(r, node, spike)
