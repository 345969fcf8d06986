"""What planar.solve returns, for a model and for a joint: a dict of results by load case.

The slip it answers (a user trial of fastened joints): ``planar.solve(joint).table()``, where the README's
own example reads ``planar.solve(joint)["pull"]`` and then ``.table()``. Asking the dict for what one
case's result has names the fix, ``results['pull'].table()``, as a planar error (common practice: an error
says what is wrong and how to fix it); the dict stays a dict.
"""
from __future__ import annotations

import json
import warnings

import pytest

import planar
from planar.core.static import CaseNotChosenError


def _model():
    m = planar.rectangle_mesh(10.0, 2.0, 4, 1, "Q8")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    model.add_load(planar.Traction("right", tx=-1.0), case="push")
    return model


def _joint():
    # the README's two strips lapped and joined by two fasteners (coarser)
    strips = {}
    for name, x0 in (("top", 0.0), ("bottom", 60.0)):
        m = planar.rectangle_mesh(100.0, 20.0, 20, 4, origin=(x0, -10.0))
        strips[name] = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    strips["top"].add_support(planar.Fixed("left"))
    strips["bottom"].add_load(planar.Traction("right", tx=1000.0 / (20.0 * 2.0)), case="pull")
    joint = planar.Joint(strips)
    joint.add_fasteners(planar.Fasteners([(70.0, 0.0), (90.0, 0.0)], layers=("top", "bottom"), diameter=5.0,
                                         flexibility=3e-5, name="row"))
    return joint


@pytest.mark.parametrize("build, attrs", [(_model, ("max", "warnings", "field")),
                                          (_joint, ("table", "fasteners", "layers", "as_dict"))])
def test_an_attribute_of_one_case_asked_of_all_names_the_fix(build, attrs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        results = planar.solve(build())
    first = next(iter(results))
    assert isinstance(results, dict) and json.dumps(list(results)) and results.get("nope", 7) == 7
    one = results[first]
    for name in attrs:
        assert hasattr(one, name) and not hasattr(results, name) and getattr(results, name, None) is None
        with pytest.raises(planar.InputError) as got:
            getattr(results, name)
        msg = str(got.value)
        assert isinstance(got.value, (AttributeError, CaseNotChosenError))
        called = "(...)" if callable(getattr(one, name)) else ""
        assert f"results[{first!r}].{name}{called}" in msg and repr(first) in msg
    with pytest.raises(planar.InputError, match=r"'tabel' is not an attribute .* results\["):
        results.tabel
    with pytest.raises(AttributeError) as got:  # Python's own probes get a plain answer
        results.__array_interface__
    assert not isinstance(got.value, planar.PlanarError)
    with pytest.raises(planar.NameNotFoundError, match="load case"):
        results["no such case"]
