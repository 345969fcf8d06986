"""Plugins written by an outside engineer: a load kind whose plain-words hooks fail or return nonsense.

The plugin classes are made into throwaway distributions (``*.dist-info`` on a temporary sys.path
entry, as in tests/test_plugins.py) and found through their ``planar.loads`` entry points.
"""
from __future__ import annotations

import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

import planar
from planar.core.errors import PluginError
from planar.core.registry import reload_plugins

PLUGIN = """
    import numpy as np
    from planar.plugin import LoadKind

    class _Edge(LoadKind):
        def __init__(self, where="top", p0=0.0, p1=0.0, x0=0.0, x1=1.0):
            self.where, self.p0, self.p1, self.x0, self.x1 = where, float(p0), float(p1), float(x0), float(x1)

        def names_used(self):
            return [("edge", self.where)]

        def nodal_forces(self, ctx):
            def traction(x, normal):
                p = self.p0 + (self.p1 - self.p0) * (x[..., 0] - self.x0) / (self.x1 - self.x0)
                return -p[..., None] * normal
            return ctx.integrate_traction(self.where, traction)

    class LinearPressure(_Edge):
        name = "trial-linear-pressure"

        def describe(self):
            return f"linear pressure on '{self.where}', {self.p0:g} to {self.p1:g}"

    class RaisingDescribe(_Edge):
        name = "trial-raising-describe"

        def describe(self):
            raise RuntimeError("describe not written yet")

    class RaisingPlain(_Edge):
        name = "trial-raising-plain"

        def describe_plain(self, units):
            return self.no_such_attribute

    class NoneDescribe(_Edge):
        name = "trial-none-describe"

        def describe(self):
            return None

    class Strict(_Edge):
        name = "trial-strict"

        def __init__(self, where="top", p="0"):
            self.where, self.p = where, float(p)          # float("ten") raises ValueError

    class WideTraction(_Edge):
        name = "trial-wide-traction"

        def nodal_forces(self, ctx):      # three components per point where the helper wants two
            return ctx.integrate_traction(self.where, lambda x, n: np.zeros(x.shape[:-1] + (3,)))

    class Fussy(_Edge):
        name = "trial-fussy"

        def __init__(self, where="top"):
            self.where = {"top": "top"}[where]         # a KeyError from inside the plugin

    from planar.plugin import Q4

    class LopsidedQ4(Q4):
        # a Q4 whose own stiffness has a stray term above the diagonal (a transposition slip)
        name = "trial-lopsided-q4"

        @classmethod
        def stiffness(cls, coords, D, thickness, rule):
            from planar.plugin import jacobian, strain_matrix
            detj, dndx = jacobian(cls, coords, rule.points)
            B = strain_matrix(dndx)
            K = np.einsum("eqai,ab,eqbj,eq,q->eij", B, D, B, detj, rule.weights) * thickness
            K[:, 0, 3] += 0.5 * K[:, 0, 0]
            return K
"""

KINDS = {"trial-linear-pressure": "LinearPressure", "trial-raising-describe": "RaisingDescribe",
         "trial-raising-plain": "RaisingPlain", "trial-none-describe": "NoneDescribe",
         "trial-strict": "Strict", "trial-fussy": "Fussy",
         "trial-wide-traction": "WideTraction"}


@pytest.fixture
def trial_loads(monkeypatch, tmp_path):
    """A distribution 'planar-trial-loads' with the load kinds above, discovered; undone afterwards."""
    info = tmp_path / "planar_trial_loads-0.1.0.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: planar-trial-loads\nVersion: 0.1.0\n")
    (info / "entry_points.txt").write_text(
        "[planar.loads]\n" + "".join(f"{k} = planar_trial_loads_2:{v}\n" for k, v in KINDS.items())
        + "[planar.elements]\ntrial-lopsided-q4 = planar_trial_loads_2:LopsidedQ4\n")
    (tmp_path / "planar_trial_loads_2.py").write_text(textwrap.dedent(PLUGIN))
    monkeypatch.syspath_prepend(str(tmp_path))
    reload_plugins()
    yield
    monkeypatch.undo()
    sys.modules.pop("planar_trial_loads_2", None)
    reload_plugins()


def _model(kind, **kw):
    model = planar.Model(planar.rectangle_mesh(4.0, 1.0, 8, 2, "Q8"), planar.Isotropic(E=200e3, nu=0.3),
                         thickness=0.5)
    model.add_support(planar.Fixed("bottom"))
    model.add_load(kind, case="c", where="top", p0=10.0, p1=30.0, x0=0.0, x1=4.0, **kw)
    return model



def _throwaway(monkeypatch, tmp_path, dist: str, module: str, entry: str, source: str) -> None:
    """A throwaway distribution ``dist`` of one module ``module`` (its ``source``) declaring the entry
    point line ``entry`` (e.g. ``"[planar.elements]\\nname = module:Class"``), put on sys.path."""
    info = tmp_path / f"{dist.replace('-', '_')}-0.1.0.dist-info"
    info.mkdir()
    (info / "METADATA").write_text(f"Metadata-Version: 2.1\nName: {dist}\nVersion: 0.1.0\n")
    (info / "entry_points.txt").write_text(entry + "\n")
    (tmp_path / f"{module}.py").write_text(source)
    monkeypatch.syspath_prepend(str(tmp_path))

def test_linear_pressure_plugin_resultant_and_moment_by_statics(trial_loads):
    # p = 10 + 5 x on the top edge (0 <= x <= 4), thickness 0.5: resultant -(p0 + p1)/2 L t in y and
    # moment about the origin -t (p0 L^2/2 + (p1 - p0) L^2/3) (statics, common practice)
    result = planar.solve(_model("trial-linear-pressure"))["c"]
    assert np.allclose(result.total_applied(), [0.0, -40.0], rtol=0, atol=1e-12)
    applied, reaction = result.total_moment((0.0, 0.0))
    assert applied == pytest.approx(-0.5 * (10.0 * 16.0 / 2 + 20.0 * 16.0 / 3), rel=1e-12)
    assert reaction == pytest.approx(-applied, rel=1e-9)


@pytest.mark.parametrize("kind, hook", [("trial-raising-describe", "describe"),
                                        ("trial-raising-plain", "describe_plain"),
                                        ("trial-none-describe", "describe")])
def test_plain_words_hook_that_fails_is_a_plugin_error_naming_plugin_and_hook(trial_loads, kind, hook):
    from planar.post.inputs import describe_load

    model = _model(kind)
    load = model.cases["c"][0]
    with pytest.raises(PluginError) as err:
        describe_load(load, model.unit_system)
    text = str(err.value)
    assert kind in text and "planar-trial-loads" in text and f"{hook}()" in text
    # the report, which draws the loads and lists them, stops with the same error, not a traceback
    from planar.post.report import stress_check_report

    with pytest.raises(PluginError, match=kind):
        stress_check_report(planar.solve(model)["c"])


def test_element_stiffness_not_symmetric_is_a_plugin_error_not_a_units_alarm(trial_loads):
    # a linear-elastic stiffness is symmetric (Maxwell-Betti reciprocity, common practice); a plugin's
    # lopsided matrix used to reach the solver and come back as "units mixed up" blaming the user
    model = planar.Model(planar.rectangle_mesh(2.0, 1.0, 4, 2, "Q4"), planar.Isotropic(E=1000.0, nu=0.25),
                         elements={"Q4": "trial-lopsided-q4"})
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    with pytest.raises(PluginError, match=r"trial-lopsided-q4.*planar-trial-loads.*stiffness.*not symmetric"):
        planar.solve(model)


@pytest.mark.parametrize("free", ['"shear"', '("shear", "volumentric")', '["sheer"]'])
def test_free_of_locking_misspelt_is_refused_at_discovery(monkeypatch, tmp_path, free):
    # planar.core.advice reads free_of_locking as a set of words; "shear" alone became {'s', 'h', ...}
    # and a misspelt word counted as not free, so the locking and slender warnings fired on an element
    # that had declared itself free of them
    _throwaway(monkeypatch, tmp_path, "planar-trial-locking", "planar_trial_locking_2",
               "[planar.elements]\ntrial-free-q8 = planar_trial_locking_2:FreeQ8",
               f"from planar.plugin import Q8\n\nclass FreeQ8(Q8):\n    name = 'trial-free-q8'\n    free_of_locking = {free}\n")
    try:
        reg = reload_plugins()
        problems = [p for p in reg.problems if p.name == "trial-free-q8"]
        assert problems and "free_of_locking" in problems[0].error and "'volumetric', 'shear'" in problems[0].error
        with pytest.raises(planar.PlanarError, match="free_of_locking"):
            planar.Model(planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q8"), planar.Isotropic(E=1.0, nu=0.3),
                         elements={"Q8": "trial-free-q8"})
    finally:
        monkeypatch.undo()
        sys.modules.pop("planar_trial_locking_2", None)
        reload_plugins()


def test_free_of_locking_declared_right_still_loads(monkeypatch, tmp_path):
    _throwaway(monkeypatch, tmp_path, "planar-trial-locking", "planar_trial_locking_3",
               "[planar.elements]\ntrial-free-q8 = planar_trial_locking_3:FreeQ8",
               "from planar.plugin import Q8\n\nclass FreeQ8(Q8):\n    name = 'trial-free-q8'\n"
               "    free_of_locking = ('volumetric', 'shear')\n")
    try:
        reg = reload_plugins()
        assert "trial-free-q8" in reg.names("element")
        assert not [p for p in reg.problems if p.name == "trial-free-q8"]
    finally:
        monkeypatch.undo()
        sys.modules.pop("planar_trial_locking_3", None)
        reload_plugins()


def test_plugin_load_parameters_refused_is_a_planar_error_naming_the_kind(trial_loads):
    # a ValueError raised by the plugin's __init__ used to escape add_load as a bare traceback
    model = planar.Model(planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4"), planar.Isotropic(E=1.0, nu=0.3))
    with pytest.raises(planar.InputError, match=r"trial-strict.*planar-trial-loads.*could not convert"):
        model.add_load("trial-strict", where="top", p="ten")
    with pytest.raises(PluginError, match=r"trial-fussy.*planar-trial-loads.*__init__.*KeyError"):
        model.add_load("trial-fussy", where="left")
    model.add_load("trial-strict", where="top", p="2.5")       # good parameters still work
    assert model.cases["load case 1"][0].p == 2.5


def test_helper_error_inside_a_plugin_names_the_plugin_and_hook(trial_loads):
    # ctx.integrate_traction refuses the plugin's traction function; the message used to read as if
    # the user's own traction were at fault, naming no plugin
    model = planar.Model(planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4"), planar.Isotropic(E=1.0, nu=0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load("trial-wide-traction", case="c", where="right")
    with pytest.raises(planar.InputError, match=r"trial-wide-traction.*planar-trial-loads.*in nodal_forces.*shape"):
        planar.solve(model)
    # a built-in load kind's message is left as it was
    model = planar.Model(planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4"), planar.Isotropic(E=1.0, nu=0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=lambda x, y: np.zeros((2, 2))), case="c")
    with pytest.raises(planar.PlanarError) as err:
        planar.solve(model)
    assert "load kind" not in str(err.value)


def test_a_plugin_loads_own_description_keeps_its_values_in_the_report():
    # a load kind with describe() written like a call (as docs/plugins.md's HydrostaticPressure) and no
    # describe_plain: the report's inputs show that text, values and all, not a short name without them
    from planar.plugin import LoadKind
    from planar.post import render_html, stress_check_report

    class _Liquid(LoadKind):
        name = "trial-liquid"

        def __init__(self, where, w, level):
            self.where, self.w, self.level = str(where), float(w), float(level)

        def names_used(self):
            return [("edge", self.where)]

        def nodal_forces(self, ctx):
            return ctx.integrate_traction(self.where, lambda x, n: -(self.w * np.maximum(self.level - x[..., 1], 0.0))[..., None] * n)

        def describe(self):
            return f"TrialLiquid({self.where!r}, w={self.w:g}, level={self.level:g})"

    m = planar.rectangle_mesh(1.0, 3.0, 2, 6, "Q8")
    model = planar.Model(m, planar.Isotropic(E=30e3, nu=0.2), thickness=0.5)
    model.add_support(planar.Fixed("bottom"))
    model.add_load(_Liquid("left", 10.0, 3.0), case="full")
    html = render_html(stress_check_report(planar.solve(model)["full"]))
    assert "w=10, level=3" in html


def test_a_plugin_element_whose_own_rule_is_too_weak_is_told_to_declare_a_higher_one(monkeypatch, tmp_path):
    # a Q8 declared with a 2 x 2 rule as its full rule has a zero-energy (hourglass) mode of its own: the
    # advice to "use the full rule" was already the case; the fix is the element's rule_degree
    _throwaway(monkeypatch, tmp_path, "planar-trial-weak", "planar_trial_weak", "[planar.elements]\ntrial-q8r = planar_trial_weak:Q8R",
               "from planar.plugin import Q8\n\nclass Q8R(Q8):\n    name = 'trial-q8r'\n    rule_degree = 3\n")
    try:
        reload_plugins()
        model = planar.Model(planar.rectangle_mesh(2.0, 1.0, 1, 1, "Q8"), planar.Isotropic(E=1.0, nu=0.3),
                             elements={"Q8": "trial-q8r"})
        model.add_support(planar.Fixed("left"))
        model.add_load(planar.Traction("right", tx=1.0), case="pull")
        with pytest.raises(planar.SolverError, match="declare a higher rule_degree"):
            planar.solve(model)
    finally:
        monkeypatch.undo()
        sys.modules.pop("planar_trial_weak", None)
        reload_plugins()
