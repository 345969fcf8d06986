"""One public face per layer, one spelling per option, one source per piece of knowledge.

Sources: common practice (a deprecation keeps the old spelling working for a release with a
DeprecationWarning); the chart fit is Pilkey and Pilkey, Peterson's Stress Concentration Factors,
3rd ed., 2008, chart 4.1, written out here independently of planar's copy.
"""
import importlib
import json
import math
import warnings

import numpy as np
import pytest

import planar
import planar.post


def _strip(element="Q8"):
    mesh = planar.rectangle_mesh(100.0, 20.0, 10, 4, element)
    model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=50.0, ty=-2.0), case="a")
    model.add_load(planar.Traction("right", tx=-20.0), case="b")
    return planar.solve(model)


@pytest.fixture(scope="module")
def solved():
    return _strip()


def test_post_face_exports_every_name_of_its_all():
    for name in planar.post.__all__:
        value = getattr(planar.post, name)
        assert value is not None, name
    from planar.post import (adapt, combine, estimate_error, grid_convergence, kt, margin_of_safety,  # noqa: F401
                             nominal_net, plot_field, stress_check_report, write_report, write_vtu)
    assert planar.post.kt is importlib.import_module("planar.post.checks").kt
    assert planar.post.write_vtu is planar.write_vtu


def test_combine_and_adapt_are_one_name_each_way_they_are_imported(solved):
    from planar.post import combine
    import planar.post.combine as module

    assert combine is module                         # the module, whatever was imported first
    a = combine(solved, {"a": 1.0, "b": 0.5}, name="c")
    b = module.combine(solved, {"a": 1.0, "b": 0.5}, name="c")
    np.testing.assert_array_equal(a.u, b.u)
    np.testing.assert_allclose(a.u, solved["a"].u + 0.5 * solved["b"].u, rtol=1e-12, atol=1e-15)
    assert callable(planar.post.adapt) and planar.post.adapt.adapt.__name__ == "adapt"


def test_top_level_exports_errors_warning_and_element_contract():
    for name in ("ResourceError", "OutputError", "PlanarWarning", "ElementType", "Extreme"):
        assert name in planar.__all__ and getattr(planar, name) is not None
    assert issubclass(planar.ResourceError, planar.PlanarError)


def test_extreme_is_a_named_tuple_that_unpacks(solved):
    r = solved["a"]
    peak = r.max("von_mises")
    value, where, node = peak
    assert (peak.value, peak.location, peak.node) == (value, where, node)
    assert value == pytest.approx(r.field("von_mises")[node])
    low = r.min("sigma_xx")
    assert low.value == pytest.approx(np.min(r.field("sigma_xx")[r.mesh.used_nodes()]))


def test_envelope_peak_is_a_named_tuple(solved):
    env = planar.post.envelope(solved, "sigma_xx", recovery="average")
    p = env.peak()
    value, where, node, case = p
    assert p.case == case == "a" and p.value == value
    assert env.lowest().case == "b"
    assert env.recovery == "average"
    with pytest.warns(DeprecationWarning):
        assert env.method == "average"


@pytest.mark.parametrize("call", [
    lambda r: r.field("sigma_xx", method="average"),
    lambda r: r.field(name="sigma_xx"),
    lambda r: r.max(name="sigma_xx")[0],
    lambda r: r.at((50.0, 10.0), "sigma_xx", method="average"),
    lambda r: planar.post.kt(r, 50.0, field="sigma_xx", method="average").Kt,
    lambda r: planar.post.margin_of_safety(r, 250.0, method="average").margin,
])
def test_old_spellings_work_with_a_deprecation_warning(solved, call):
    r = solved["a"]
    with pytest.warns(DeprecationWarning, match="now"):
        old = call(r)
    with warnings.catch_warnings():
        warnings.simplefilter("error", DeprecationWarning)
        assert np.all(np.asarray(old) == np.asarray(old))   # a number (not NaN)


def test_new_and_old_spellings_give_the_same_numbers(solved):
    r = solved["a"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", DeprecationWarning)
        old = r.field("sigma_xx", method="average")
        old_kt = planar.post.kt(r, 50.0, field="sigma_xx", method="average")
    np.testing.assert_array_equal(old, r.field("sigma_xx", recovery="average"))
    new_kt = planar.post.kt(r, 50.0, field="sigma_xx", recovery="average")
    assert new_kt.Kt == old_kt.Kt and new_kt.recovery == "average"
    with pytest.warns(DeprecationWarning):
        assert new_kt.method == "average"


def test_both_spellings_at_once_are_refused(solved):
    with pytest.raises(planar.InputError, match="recovery="):
        solved["a"].field("sigma_xx", method="spr", recovery="spr")


def test_unknown_recovery_names_the_one_list(solved):
    from planar.core.recovery import METHODS

    with pytest.raises(planar.InputError) as e:
        planar.post.kt(solved["a"], 50.0, recovery="smooth")
    assert all(m in str(e.value) for m in METHODS)


def test_mesh_by_element_name_and_old_keywords():
    from planar.geometry import Circle, Plate, mesh

    plate = Plate.rectangle(100.0, 40.0).cut(Circle((50.0, 20.0), 6.0))
    with warnings.catch_warnings():
        warnings.simplefilter("error", DeprecationWarning)
        for element in ("T3", "T6", "Q4", "Q8", "Q9"):
            assert list(mesh(plate, size=10.0, element=element, seed=1).cells) == [element]
    with pytest.warns(DeprecationWarning, match="element="):
        old = mesh(plate, size=10.0, order=2, quads=True, quadratic="Q9", seed=1)
    new = mesh(plate, size=10.0, element="Q9", seed=1)
    np.testing.assert_array_equal(old.nodes, new.nodes)
    np.testing.assert_array_equal(old.cells["Q9"], new.cells["Q9"])
    with pytest.raises(planar.InputError, match="element="):
        mesh(plate, size=10.0, element="T6", order=2)
    with pytest.raises(planar.InputError, match="T6"):
        mesh(plate, size=10.0, element="T7")


def test_chart_fit_matches_the_handbook_and_is_used_by_the_demo_and_verify():
    from planar.demo import SpliceStrap
    from planar.post.handbook import kt_hole_in_strip
    from planar.verify.geometry_cases import peterson_ktn

    q = np.linspace(0.0, 0.9, 10)
    chart = 3.00 - 3.13 * q + 3.66 * q**2 - 1.53 * q**3      # Pilkey and Pilkey 2008, chart 4.1
    np.testing.assert_allclose(kt_hole_in_strip(q), chart, rtol=1e-15)
    assert kt_hole_in_strip(0.0) == 3.0
    assert peterson_ktn(0.4) == kt_hole_in_strip(0.4)
    part = SpliceStrap()
    assert part.peterson_kt() == kt_hole_in_strip(part.hole_diameter / part.width)
    with pytest.raises(planar.InputError):
        kt_hole_in_strip(1.2)


def test_one_caution_text_in_checks_and_report(solved):
    from planar.post import CAUTION
    from planar.post.report import CAUTIONS, render_html, stress_check_report

    k = planar.post.kt(solved["a"], 50.0)
    assert k.caution == CAUTION and CAUTION in k.summary()
    for words in ("buckl", "fatigue", "plasticity", "qualified engineer"):
        assert words in CAUTION
    html = render_html(stress_check_report(solved["a"], title="t"))
    assert all(c.replace("'", "&#x27;") in html for c in CAUTIONS)


def test_json_safe_makes_non_finite_numbers_null():
    from planar.post import json_safe

    text = json.dumps(json_safe({"a": [1.0, math.nan], "b": (math.inf, "x"), "c": np.float64(-math.inf)}),
                      allow_nan=False)
    assert json.loads(text) == {"a": [1.0, None], "b": [None, "x"], "c": None}


def test_field_table_is_the_source_of_result_and_plot_names():
    from planar.core.fields import FIELD_TABLE
    from planar.core.result import FIELDS, STRESS_FIELDS
    from planar.post.plots import SIGNED_FIELDS, field_label, field_unit

    assert FIELDS == tuple(FIELD_TABLE)
    assert set(STRESS_FIELDS) == {n for n, f in FIELD_TABLE.items() if f.kind == "stress"}
    assert SIGNED_FIELDS == {n for n, f in FIELD_TABLE.items() if f.signed}
    assert "von_mises" not in SIGNED_FIELDS and "tau_xy" in SIGNED_FIELDS
    assert field_unit("sigma_1", "N, mm, MPa") == "MPa" and field_unit("uy", "N, mm, MPa") == "mm"
    assert field_unit("principal_angle", "N, mm, MPa") == "deg" and field_unit("eps_xx", "N, mm, MPa") == ""
    assert field_label("von_mises", "MPa") == "von Mises stress [MPa]"
