"""Robustness, tried systematically, at two budgets: ``fast`` runs by default, ``slow`` with
``pytest -m slow`` (the same properties with many more generated cases, at least 500 in all).

Random valid models (structured meshes of every element type, and a few gmsh plates with holes) must
be in equilibrium, have finite fields and give the rotated or mirrored answer for a rotated or
mirrored model; random invalid input must end in a planar error that names the problem. Each
generated test is parametrized by its budget (``[fast]`` / ``[slow]``, the slow one marked slow);
the budget picks the hypothesis profile (registered in conftest.py) and the example count. The
strategies and checks live in ``_robustness_common.py``; the last test prints the counts of each
budget and writes them as JSON under the pytest temporary folder.

Physics checks and their sources (also written beside each check in the common module):

- statics: the reactions balance the applied loads, forces and moment, to 1e-9 relative (common
  practice; the linear solve is exact up to round-off);
- rotation invariance of isotropic elasticity (and of an orthotropic one turned with the model):
  rotated model, rotated displacements and reactions, the same von Mises (common practice);
- mirror symmetry: x -> -x with the cells' node order reversed, mirrored answer (common practice).
"""
from __future__ import annotations

import math
import sys
import textwrap
from collections import Counter

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import planar
from _robustness_common import (BAD_SIZE_BUILDERS, BAD_SIZE_VALUES, COUNTS, ELEMENT_HOOKS, ELEMENTS,
                                EMPTY_MESHES, FAILURES, FAST, FREE_SETS, LOAD_HOOKS, LOAD_SLOTS, NAME_USES, SLOW,
                                bad_finite, bad_materials, check_bad_constant_load, check_bad_function_load,
                                check_bad_material, check_bad_size, check_crossing_hole, check_damaged_file,
                                check_failing_plugin, check_free_supports, check_mesh_file,
                                check_overlapping_holes, check_two_pieces, check_unknown_name, check_valid,
                                crossing_holes, expect_planar_error, gmsh_specs, mesh_file_variants,
                                overlapping_holes, random_names, report_counts, structured_specs)
from planar.core.errors import MeshError, NameNotFoundError, PluginError

pytestmark = pytest.mark.filterwarnings("ignore::planar.core.errors.PlanarWarning")

FUNCTION_FAILURES = ["nan", "inf", "-inf", "raises", "wrong shape", "text", "complex"]
DAMAGED = ["meshio.vtu", "meshio2.msh", "gmsh41.msh", "result.vtu"]

#: the two budgets: hypothesis profile and the minimum number of generated cases the run promises
BUDGETS = [pytest.param("fast", id="fast"), pytest.param("slow", id="slow", marks=pytest.mark.slow)]
PROFILES = {"fast": FAST, "slow": SLOW}
MINIMUM = {"fast": 400, "slow": 500}
#: cases run per budget and category (a test without a budget counts as fast)
BY_BUDGET: dict[str, Counter] = {"fast": Counter(), "slow": Counter()}


@pytest.fixture(scope="module")
def tmp_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("robustness")


@pytest.fixture(autouse=True)
def _count_by_budget(request):
    before = COUNTS.copy()
    yield
    callspec = getattr(request.node, "callspec", None)
    BY_BUDGET[callspec.params.get("budget", "fast") if callspec else "fast"].update(COUNTS - before)


def explore(budget: str, examples: dict[str, int], case, *strategies, **named) -> None:
    """Run ``case`` on ``examples[budget]`` examples drawn from the strategies, under the budget's
    hypothesis profile."""
    settings(PROFILES[budget], max_examples=examples[budget])(given(*strategies, **named)(case))()


# ============================================================================ valid models
@pytest.mark.parametrize("budget", BUDGETS)
def test_valid_structured_models(budget):
    """Rectangles, skewed panels and ring sectors, T3 to Q9, any supports that hold the three rigid
    motions, traction / pressure / point / body loads (constants and functions of x, y)."""
    def case(spec):
        check_valid(spec, category="valid: structured mesh")

    explore(budget, {"fast": 60, "slow": 600}, case, structured_specs())


@pytest.mark.parametrize("budget", BUDGETS)
def test_valid_gmsh_plates(budget):
    """Rectangular plates with up to two holes (circle, ellipse, slot) meshed by gmsh, coarse."""
    def case(spec):
        check_valid(spec, category="valid: gmsh plate")

    explore(budget, {"fast": 12, "slow": 120}, case, gmsh_specs())


# ============================================================================ invalid geometry and sizes
@pytest.mark.parametrize("budget", BUDGETS)
def test_holes_outside_or_crossing_the_outline(budget):
    def case(hole):
        check_crossing_hole(hole)

    explore(budget, {"fast": 30, "slow": 80}, case, crossing_holes())


@pytest.mark.parametrize("budget", BUDGETS)
def test_overlapping_holes(budget):
    def case(holes):
        check_overlapping_holes(holes)

    explore(budget, {"fast": 30, "slow": 60}, case, overlapping_holes())


@pytest.mark.parametrize("budget", BUDGETS)
def test_zero_negative_nan_sizes(budget):
    def case(which, value):
        check_bad_size(which, value)

    explore(budget, {"fast": 40, "slow": 100}, case,
            st.integers(0, len(BAD_SIZE_BUILDERS) - 1), st.sampled_from(BAD_SIZE_VALUES))


@pytest.mark.parametrize("budget", BUDGETS)
def test_bad_materials(budget):
    """E <= 0, nu outside -1 < nu <= 0.5 (0.5 not in plane strain), unstable orthotropic constants."""
    def case(material):
        check_bad_material(material)

    explore(budget, {"fast": 30, "slow": 60}, case, bad_materials())


# ============================================================================ names, supports, loads
@pytest.mark.parametrize("budget", BUDGETS)
def test_unknown_names_list_the_valid_ones(budget, tmp_dir):
    def case(use, name):
        check_unknown_name(use, name, tmp_dir)

    explore(budget, {"fast": 60, "slow": 120}, case, use=st.sampled_from(NAME_USES), name=random_names)


@pytest.mark.parametrize("budget", BUDGETS)
def test_supports_that_leave_it_free(budget):
    nx, ny = {"fast": (4, 3), "slow": (5, 4)}[budget]

    def case(which, el, nx, ny):
        check_free_supports(which, el, nx, ny)

    explore(budget, {"fast": 30, "slow": 60}, case, st.sampled_from(sorted(FREE_SETS)),
            st.sampled_from(ELEMENTS), st.integers(1, nx), st.integers(1, ny))


@pytest.mark.parametrize("budget", BUDGETS)
def test_model_that_falls_apart_names_the_free_piece(budget):
    """Coincident but unjoined nodes split the plate: the free piece is named and merging is offered."""
    n = {"fast": 3, "slow": 4}[budget]

    def case(el, nx, ny):
        check_two_pieces(el, nx, ny)

    explore(budget, {"fast": 8, "slow": 25}, case, st.sampled_from(ELEMENTS), st.integers(1, n),
            st.integers(1, n))


@pytest.mark.parametrize("budget", BUDGETS)
def test_nan_or_infinite_load_constants(budget):
    def case(slot, value):
        check_bad_constant_load(slot, value)

    explore(budget, {"fast": 20, "slow": 36}, case, st.sampled_from(LOAD_SLOTS), bad_finite)


@pytest.mark.parametrize("budget", BUDGETS)
def test_load_functions_that_fail(budget):
    def case(slot, how, stride, el):
        check_bad_function_load(slot, how, stride, el)

    explore(budget, {"fast": 40, "slow": 100}, case, st.sampled_from(LOAD_SLOTS),
            st.sampled_from(FUNCTION_FAILURES), st.integers(1, 5), st.sampled_from(ELEMENTS))


# ============================================================================ mesh files
@pytest.mark.parametrize("budget", BUDGETS)
def test_mesh_files_with_bad_cells_or_duplicate_nodes(budget, tmp_dir):
    nx, ny = {"fast": (4, 3), "slow": (5, 4)}[budget]

    def case(how, el, nx, ny, fmt, seed):
        check_mesh_file(how, el, nx, ny, fmt, seed, tmp_dir)

    explore(budget, {"fast": 30, "slow": 100}, case, how=st.sampled_from(mesh_file_variants()),
            el=st.sampled_from(ELEMENTS), nx=st.integers(2, nx), ny=st.integers(2, ny),
            fmt=st.sampled_from(["vtu", "msh"]), seed=st.integers(0, 10**6))


@pytest.mark.parametrize("budget", BUDGETS)
def test_truncated_corrupted_or_wrong_format_files(budget, tmp_dir):
    def case(name, how, frac, seed):
        check_damaged_file(name, how, frac, seed, tmp_dir)

    explore(budget, {"fast": 40, "slow": 150}, case, name=st.sampled_from(DAMAGED),
            how=st.sampled_from(["cut", "bytes", "format"]), frac=st.floats(0.0, 1.0), seed=st.integers(0, 10**6))


@pytest.mark.parametrize("what", sorted(EMPTY_MESHES))
def test_empty_meshes(what):
    expect_planar_error(EMPTY_MESHES[what], "no nodes", "no 2D cells", kind=MeshError, category="invalid: empty mesh")


def test_empty_mesh_file(tmp_path):
    (tmp_path / "empty.vtu").write_bytes(b"")
    expect_planar_error(lambda: planar.Mesh.read(tmp_path / "empty.vtu"), "empty", kind=MeshError,
                        category="invalid: empty mesh")
    import meshio

    meshio.write(tmp_path / "lines.vtu", meshio.Mesh(np.eye(3), [("line", np.array([[0, 1], [1, 2]]))]))
    expect_planar_error(lambda: planar.Mesh.read(tmp_path / "lines.vtu"), "no triangles or quadrilaterals",
                        kind=MeshError, category="invalid: empty mesh")


# ============================================================================ plugins
@pytest.mark.parametrize("how", FAILURES)
@pytest.mark.parametrize("kind,hook", [("element", h) for h in ELEMENT_HOOKS] + [("load", h) for h in LOAD_HOOKS])
def test_plugin_that_fails_is_named(kind, hook, how):
    """An element type or load kind that raises, or returns NaN or the wrong shape, inside a solve."""
    check_failing_plugin(kind, hook, how)


@pytest.mark.parametrize("budget", [p for p in BUDGETS if p.id == "slow"])
def test_plugins_that_fail(budget):
    """The same failures drawn at random (the fast run takes every combination above)."""
    def case(kind, element_hook, load_hook, how, el):
        check_failing_plugin(kind, element_hook if kind == "element" else load_hook, how, el)

    explore(budget, {"slow": 40}, case, st.sampled_from(["element", "load"]), st.sampled_from(ELEMENT_HOOKS),
            st.sampled_from(LOAD_HOOKS), st.sampled_from(FAILURES), st.sampled_from(["Q4"]))


def test_plugin_distribution_that_breaks(tmp_path, monkeypatch):
    """Through real entry points: one plugin fails to import, another raises inside the solve. The
    first is reported by its distribution when asked for; the second is named in the solve's error."""
    from planar.core.registry import registry, reload_plugins

    info = tmp_path / "planar_broken_demo-0.1.dist-info"
    info.mkdir()
    (info / "METADATA").write_text("Metadata-Version: 2.1\nName: planar-broken-demo\nVersion: 0.1\n")
    (info / "entry_points.txt").write_text(textwrap.dedent("""\
        [planar.elements]
        Q4boom = broken_demo_plugin:DoesNotImport
        [planar.loads]
        raising-load = broken_demo_plugin_ok:RaisingLoad
        """))
    (tmp_path / "broken_demo_plugin.py").write_text("raise ZeroDivisionError('broken at import')\n")
    (tmp_path / "broken_demo_plugin_ok.py").write_text(textwrap.dedent("""\
        from planar.core.loads import LoadKind

        class RaisingLoad(LoadKind):
            name = "raising-load"

            def nodal_forces(self, ctx):
                return {}["no such key"]
        """))
    monkeypatch.syspath_prepend(str(tmp_path))
    try:
        reg = reload_plugins()
        assert any(p.distribution == "planar-broken-demo" and p.name == "Q4boom" for p in reg.problems)
        mesh = planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4")
        exc = expect_planar_error(lambda: planar.Model(mesh, planar.Isotropic(1.0, 0.3), elements={"Q4": "Q4boom"}),
                                  "planar-broken-demo", kind=NameNotFoundError, category="invalid: plugin fails")
        assert "ZeroDivisionError" in str(exc)
        model = planar.Model(mesh, planar.Isotropic(1.0, 0.3))
        model.add_support(planar.Fixed("left"))
        model.add_load("raising-load")
        exc = expect_planar_error(lambda: planar.solve(model), "planar-broken-demo", kind=PluginError,
                                  category="invalid: plugin fails")
        assert "raising-load" in str(exc) and "KeyError" in str(exc) and "nodal_forces" in str(exc)
        assert planar.solve(_ok_model(mesh))["c"].equilibrium_error() < 1e-9  # the rest still works
    finally:
        monkeypatch.undo()
        for mod in ("broken_demo_plugin", "broken_demo_plugin_ok"):
            sys.modules.pop(mod, None)
        reload_plugins()
    assert "raising-load" not in registry().names("load")


def _ok_model(mesh):
    model = planar.Model(mesh, planar.Isotropic(1.0, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="c")
    return model


# ============================================================================ geometry-layer bugs, fixed
def test_quads_with_a_slot():
    """gmsh's full-quad recombination failed on a plate with a slot ("1D mesh cannot be divided by 2"):
    the slot's straight sides are shorter than the size, one segment each."""
    from planar.geometry import Plate, Slot
    from planar.geometry import mesh as gmesh

    m = gmesh(Plate.rectangle(20.0, 12.0).cut(Slot((10.0, 6.0), 7.2, 5.96)), 2.0, quads=True)
    assert set(m.cells) == {"Q4"}
    assert planar.solve(_ok_model(m))["c"].equilibrium_error() < 1e-9


def test_quads_near_a_slender_slot_do_not_overlap():
    """A quad mesh whose two leftover triangles overlapped at the end of a slender slot; now all Q8,
    accepted by the core's overlap and Jacobian checks, and in equilibrium."""
    from planar.geometry import Plate, Slot
    from planar.geometry import mesh as gmesh

    plate = (Plate.rectangle(71.467, 36.332, corner=(-35.875, 0.0))
             .cut(Slot((-18.008, 18.202), 16.412, 13.102, angle=2.584))
             .cut(Slot((17.725, 20.320), 11.911, 3.711))
             .add_point("load_point", (35.592, 18.166)))
    m = gmesh(plate, 7.1467, order=2, quads=True, seed=1)
    assert set(m.cells) == {"Q8"}
    assert planar.solve(_ok_model(m))["c"].equilibrium_error() < 1e-9


@pytest.mark.parametrize("kw", [dict(seed=float("nan")), dict(seed=math.inf), dict(seed="ten"),
                                dict(circle_elements=math.inf), dict(circle_elements=float("nan")),
                                dict(max_elements=float("nan")), dict(max_elements=-math.inf)])
def test_mesh_options_that_are_no_whole_numbers(kw):
    """Raw ValueError / OverflowError (or a NaN silently accepted) before; now an InputError that
    names the argument, the value and the valid range."""
    from planar.core.errors import InputError
    from planar.geometry import Plate
    from planar.geometry import mesh as gmesh

    (name, value), = kw.items()
    exc = expect_planar_error(lambda: gmesh(Plate.rectangle(10.0, 5.0), 5.0, **kw), name,
                              kind=InputError, category="invalid: mesh option")
    assert f"{name} must be a whole number from " in str(exc) and f"got {value!r}" in str(exc)


@pytest.mark.parametrize("call, words", [("nx=nan", "nx must be a whole number"),
                                         ("width=None", "width must be a number")])
def test_structured_mesh_arguments(call, words):
    """Raw Python errors before (structured.py); now an InputError that names the argument."""
    from planar.core.errors import InputError

    if call == "nx=nan":
        expect_planar_error(lambda: planar.rectangle_mesh(1.0, 1.0, float("nan"), 2), words, kind=InputError,
                            category="invalid: mesh option")
    else:
        expect_planar_error(lambda: planar.rectangle_mesh(None, 1.0, 2, 2), words, kind=InputError,
                            category="invalid: mesh option")


# ============================================================================ the counts
@pytest.mark.parametrize("budget", BUDGETS)
def test_zz_report_case_counts(budget, tmp_path_factory, capsys):
    """How many generated cases this budget ran (written to JSON under the pytest temporary folder)."""
    counts = BY_BUDGET[budget]
    cats = sorted(c for c in counts if c.startswith(("valid", "invalid", "skipped")))
    out = report_counts(tmp_path_factory.getbasetemp(), f"robustness_counts_{budget}", cats, counts)
    with capsys.disabled():
        print(f"\nrobustness ({budget}): {out['total']} cases run: "
              + ", ".join(f"{c} {out[c]}" for c in cats) + f"; counts in {out['file']}")
    assert out["total"] >= MINIMUM[budget], \
        f"only {out['total']} generated cases ran; the {budget} budget promises {MINIMUM[budget]}"
