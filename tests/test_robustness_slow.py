"""Robustness, tried systematically: the long run (``pytest -m slow tests/test_robustness_slow.py``).

The same properties as ``test_robustness.py`` with many more generated cases (at least 500 in all;
the last test prints the counts and writes them as JSON under the pytest temporary folder).

Physics checks and their sources:

- statics: the reactions balance the applied loads, forces and moment, to 1e-9 relative (common
  practice);
- rotation invariance of isotropic elasticity (and of an orthotropic one turned with the model):
  rotated model, rotated displacements and reactions, the same von Mises (common practice);
- mirror symmetry: x -> -x with the cells' node order reversed, mirrored answer (common practice).
"""
from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from _robustness_common import (BAD_SIZE_BUILDERS, BAD_SIZE_VALUES, COUNTS, ELEMENT_HOOKS, ELEMENTS, FAILURES,
                                FREE_SETS, LOAD_HOOKS, LOAD_SLOTS, NAME_USES, SLOW, bad_finite, bad_materials,
                                check_bad_constant_load, check_bad_function_load, check_bad_material,
                                check_bad_size, check_crossing_hole, check_damaged_file, check_failing_plugin,
                                check_free_supports, check_mesh_file, check_overlapping_holes, check_two_pieces,
                                check_unknown_name, check_valid, crossing_holes, gmsh_specs, mesh_file_variants,
                                overlapping_holes, random_names, report_counts, structured_specs)

pytestmark = [pytest.mark.slow, pytest.mark.filterwarnings("ignore::planar.core.errors.PlanarWarning")]

FUNCTION_FAILURES = ["nan", "inf", "-inf", "raises", "wrong shape", "text", "complex"]
DAMAGED = ["meshio.vtu", "meshio2.msh", "gmsh41.msh", "result.vtu"]
#: the categories this file counts (its own; the fast file uses the same names in its own run)
MINIMUM = 500


@pytest.fixture(scope="module")
def tmp_dir(tmp_path_factory):
    return tmp_path_factory.mktemp("robustness_slow")


@pytest.fixture(scope="module", autouse=True)
def _fresh_counts():
    COUNTS.clear()  # count this file's cases only, whatever ran before in the session
    yield


# ============================================================================ valid models
@settings(SLOW, max_examples=600)
@given(structured_specs())
def test_valid_structured_models(spec):
    check_valid(spec, category="valid: structured mesh")


@settings(SLOW, max_examples=120)
@given(gmsh_specs())
def test_valid_gmsh_plates(spec):
    check_valid(spec, category="valid: gmsh plate")


# ============================================================================ invalid input
@settings(SLOW, max_examples=80)
@given(crossing_holes())
def test_holes_outside_or_crossing_the_outline(case):
    check_crossing_hole(case)


@settings(SLOW, max_examples=60)
@given(overlapping_holes())
def test_overlapping_holes(case):
    check_overlapping_holes(case)


@settings(SLOW, max_examples=100)
@given(st.integers(0, len(BAD_SIZE_BUILDERS) - 1), st.sampled_from(BAD_SIZE_VALUES))
def test_zero_negative_nan_sizes(which, value):
    check_bad_size(which, value)


@settings(SLOW, max_examples=60)
@given(bad_materials())
def test_bad_materials(case):
    check_bad_material(case)


@settings(SLOW, max_examples=120)
@given(use=st.sampled_from(NAME_USES), name=random_names)
def test_unknown_names_list_the_valid_ones(use, name, tmp_dir):
    check_unknown_name(use, name, tmp_dir)


@settings(SLOW, max_examples=60)
@given(st.sampled_from(sorted(FREE_SETS)), st.sampled_from(ELEMENTS), st.integers(1, 5), st.integers(1, 4))
def test_supports_that_leave_it_free(which, el, nx, ny):
    check_free_supports(which, el, nx, ny)


@settings(SLOW, max_examples=25)
@given(st.sampled_from(ELEMENTS), st.integers(1, 4), st.integers(1, 4))
def test_model_that_falls_apart_names_the_free_piece(el, nx, ny):
    check_two_pieces(el, nx, ny)


@settings(SLOW, max_examples=36)
@given(st.sampled_from(LOAD_SLOTS), bad_finite)
def test_nan_or_infinite_load_constants(slot, value):
    check_bad_constant_load(slot, value)


@settings(SLOW, max_examples=100)
@given(st.sampled_from(LOAD_SLOTS), st.sampled_from(FUNCTION_FAILURES), st.integers(1, 5), st.sampled_from(ELEMENTS))
def test_load_functions_that_fail(slot, how, stride, el):
    check_bad_function_load(slot, how, stride, el)


@settings(SLOW, max_examples=100)
@given(how=st.sampled_from(mesh_file_variants()), el=st.sampled_from(ELEMENTS), nx=st.integers(2, 5),
       ny=st.integers(2, 4), fmt=st.sampled_from(["vtu", "msh"]), seed=st.integers(0, 10**6))
def test_mesh_files_with_bad_cells_or_duplicate_nodes(how, el, nx, ny, fmt, seed, tmp_dir):
    check_mesh_file(how, el, nx, ny, fmt, seed, tmp_dir)


@settings(SLOW, max_examples=150)
@given(name=st.sampled_from(DAMAGED), how=st.sampled_from(["cut", "bytes", "format"]), frac=st.floats(0.0, 1.0),
       seed=st.integers(0, 10**6))
def test_truncated_corrupted_or_wrong_format_files(name, how, frac, seed, tmp_dir):
    check_damaged_file(name, how, frac, seed, tmp_dir)


@settings(SLOW, max_examples=40)
@given(st.sampled_from(["element", "load"]), st.sampled_from(ELEMENT_HOOKS), st.sampled_from(LOAD_HOOKS),
       st.sampled_from(FAILURES), st.sampled_from(["Q4"]))
def test_plugins_that_fail(kind, element_hook, load_hook, how, el):
    check_failing_plugin(kind, element_hook if kind == "element" else load_hook, how, el)


# ============================================================================ the counts
def test_zz_report_case_counts(tmp_path_factory, capsys):
    """How many generated cases the slow suite ran (JSON under the pytest temporary folder)."""
    cats = sorted(c for c in COUNTS if c.startswith(("valid", "invalid", "skipped")))
    out = report_counts(tmp_path_factory.getbasetemp(), "robustness_counts_slow", cats)
    with capsys.disabled():
        print(f"\nrobustness (slow): {out['total']} cases run: "
              + ", ".join(f"{c} {out[c]}" for c in cats) + f"; counts in {out['file']}")
    assert out["total"] >= MINIMUM, f"only {out['total']} generated cases ran; the slow suite promises {MINIMUM}"
