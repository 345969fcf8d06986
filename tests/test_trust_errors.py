"""Every mistake ends in a planar error, and result files say when they were changed.

Covers, with generated adversarial inputs:
- material constants given as text (numeric text is read as the number, anything else refused),
  thickness likewise;
- user materials (any object with ``D(analysis)``) whose matrix has the wrong shape, is not finite,
  is unsymmetric beyond round-off or is not positive definite: MaterialError naming the material;
- ``solve(model, cases="pull")`` solves the one case; wrong kinds of ``cases`` are refused;
- the dict ``solve()`` returns, the Model, or other objects passed where one Result is expected, to
  every public function that takes a result: InputError with the fix ``results['pull']``;
- result files: one byte flipped at seeded random places, a renamed field, appended bytes: refused
  as changed or damaged (or read with a ``changed-file`` warning when asked); NaN and infinite values
  and coordinates reported by field and count, never drawn;
- the command line: ``planar show`` with bad ``--bands``, damaged and NaN files; ``planar run`` on a
  script with a syntax error.
And the other direction: files planar wrote and nobody changed, and files meshio wrote (no digest),
read with no complaint; healthy materials and user materials solve as before.

Expected values come from common practice (an elastic stiffness matrix is symmetric and positive
definite: S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, article 83, strain
energy positive; uniform tension of a strip gives sigma_xx = P / A).
"""
from __future__ import annotations

import random
import warnings

import meshio
import numpy as np
import pytest

import planar
from _models import strip_model
from planar.cli import main
from planar.core.digest import ATTRIBUTE, check_digest, find_digest
from planar.core.errors import InputError, MaterialError, MeshError, NameNotFoundError, PlanarError, PlanarWarning
from planar.core.materials import SYMMETRY_TOLERANCE, check_material
from planar.post import checks, estimate, norms, plots, recovery, report
from planar.post.adapt import size_field
from planar.post.combine import combinations, combine, envelope, write_envelope_vtu
from planar.post.files import read_result_file


# ---------------------------------------------------------------------------------------- helpers
def _mesh():
    return planar.rectangle_mesh(30.0, 10.0, 6, 2, "Q8")


def _model(material=None, mesh=None):
    model = strip_model(mesh=mesh or _mesh(), material=material or planar.Isotropic(210e3, 0.3), thickness=4.0,
                        hold="roller", loads={"pull": planar.Traction("right", tx=120.0),
                                              "push": planar.Traction("right", tx=-60.0)})
    return model


@pytest.fixture(scope="module")
def solved():
    model = _model()
    return model, planar.solve(model)


@pytest.fixture(scope="module")
def files(solved, tmp_path_factory):
    """A planar file (raw), a planar file (zlib) and a meshio file (no digest) of the same result."""
    _, results = solved
    d = tmp_path_factory.mktemp("files")
    raw = planar.write_vtu(d / "raw.vtu", results["pull"])
    packed = planar.write_vtu(d / "packed.vtu", results["pull"], compression="zlib")
    foreign = d / "foreign.vtu"
    meshio.write(foreign, meshio.read(raw), compression=None)
    return {"raw": raw, "packed": packed, "foreign": foreign}


from contextlib import contextmanager


@contextmanager
def _strict():
    """A context in which any warning fails the test (no false alarms)."""
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        yield


# ---------------------------------------------------------------------------------------- materials
def test_numeric_text_reads_as_the_number():
    # "70e3" is unambiguous; it is kept as the float, so every later use is arithmetic on numbers
    a, b = planar.Isotropic(E="70e3", nu="0.33", alpha="2.3e-5"), planar.Isotropic(70e3, 0.33, 2.3e-5)
    assert a == b and isinstance(a.E, float) and a.describe() == b.describe()
    np.testing.assert_array_equal(a.D("plane strain"), b.D("plane strain"))
    o = planar.Orthotropic("140e3", "10e3", "0.3", "5e3", angle="30")
    np.testing.assert_array_equal(o.D(), planar.Orthotropic(140e3, 10e3, 0.3, 5e3, angle=30.0).D())
    assert planar.Model(_mesh(), a, thickness="4").default.thickness == 4.0


BAD_TEXT = ["70 GPa", "1,000", "", "abc", "7e", "nan", "inf", "-5", "0"]


@pytest.mark.parametrize("text", BAD_TEXT)
@pytest.mark.parametrize("build, name", [
    (lambda v: planar.Isotropic(E=v, nu=0.3), "Young's modulus"),
    (lambda v: planar.Isotropic(E=70e3, nu=v), "Poisson"),
    (lambda v: planar.Orthotropic(v, 10e3, 0.3, 5e3), "E1"),
    (lambda v: planar.Orthotropic(140e3, 10e3, 0.3, v), "G12"),
])
def test_text_that_is_not_a_valid_constant_is_refused(build, name, text):
    if name == "Poisson" and text == "0":
        text = "0.6"  # nu = 0 is a valid Poisson's ratio; 0.6 is outside the stable range
    with pytest.raises(MaterialError, match=name):
        build(text)


@pytest.mark.parametrize("text", ["2 mm", "", "x", "nan", "-1"])
def test_thickness_text_is_refused(text):
    with pytest.raises(InputError, match="thickness"):
        planar.Model(_mesh(), planar.Isotropic(70e3, 0.3), thickness=text)
    with pytest.raises(InputError, match="thickness"):
        planar.Model(_mesh(), planar.Isotropic(70e3, 0.3)).assign("plate", thickness=text)


class UserMaterial:
    """A material from the user's own code: any object with D(analysis)."""

    def __init__(self, D, name="my alloy"):
        self._D, self.name = D, name

    def D(self, analysis="plane stress"):
        return self._D() if callable(self._D) else self._D


_GOOD = planar.Isotropic(70e3, 0.3).D()


def _unsym():
    D = _GOOD.copy()
    D[0, 1] *= 1.05
    return D


def _indefinite():
    D = _GOOD.copy()
    D[0, 1] = D[1, 0] = 1.5 * D[0, 0]  # |D01| > D00: a strain (1, -1, 0) stores negative energy
    return D


def _raises():
    raise ZeroDivisionError("division by zero")


BAD_D = {
    "2 x 2": (_GOOD[:2, :2], "shape"),
    "4 x 4": (np.eye(4) * 1e3, "shape"),
    "vector": (np.ones(3), "shape"),
    "3 x 3 x 1": (_GOOD[:, :, None], "shape"),
    "ragged": ([[1.0, 2.0], [3.0]], "not a 3 x 3 array"),
    "text": ("stiff", "not a 3 x 3 array"),
    "complex": (_GOOD + 1e-3j, "complex128"),  # np.array(..., float) would drop the imaginary part
    "booleans": (_GOOD > 0, "bool"),
    "None": (None, "shape"),
    "NaN entry": (np.where(np.eye(3, dtype=bool), np.nan, _GOOD), "not finite"),
    "infinite entry": (np.where(np.eye(3, dtype=bool), np.inf, _GOOD), "not finite"),
    "unsymmetric 5 %": (_unsym(), "not symmetric"),
    "indefinite": (_indefinite(), "not positive definite"),
    "no shear stiffness": (np.diag([1e3, 1e3, 0.0]), "not positive definite"),
    "negative modulus": (-_GOOD, "not positive definite"),
    "all zeros": (np.zeros((3, 3)), "all zeros"),
    "D fails": (_raises, "ZeroDivisionError"),
}


@pytest.mark.parametrize("case", list(BAD_D))
def test_user_material_with_a_bad_matrix_is_refused(case):
    D, words = BAD_D[case]
    mat = UserMaterial(D)
    with pytest.raises(MaterialError, match=words) as exc:
        planar.Model(_mesh(), mat)
    assert "my alloy" in str(exc.value)
    model = planar.Model(_mesh(), planar.Isotropic(70e3, 0.3))
    with pytest.raises(MaterialError, match=words):
        model.assign("plate", material=mat)


def test_user_material_without_a_method_D_is_refused():
    class Table:
        D = _GOOD  # an array, not a method

    with pytest.raises(MaterialError, match="no method D"):
        planar.Model(_mesh(), Table())

    class NoArgument:
        def D(self):
            return _GOOD

    with pytest.raises(MaterialError, match="D\\(analysis\\)"):
        planar.Model(_mesh(), NoArgument())


def test_healthy_user_material_solves_like_the_built_in_one(solved):
    # round-off asymmetry below the stated tolerance is accepted (a D from an inverted compliance)
    D = _GOOD * (1 + 0.1 * SYMMETRY_TOLERANCE * np.array([[0, 1, 0], [0, 0, 0], [0, 0, 0]]))
    assert not np.array_equal(D, D.T)
    check_material(UserMaterial(D))
    ref = planar.solve(_model(planar.Isotropic(70e3, 0.3)), cases="pull")["pull"]
    with _strict():
        r = planar.solve(_model(UserMaterial(_GOOD.tolist())), cases="pull")["pull"]
    np.testing.assert_allclose(r.u, ref.u, rtol=1e-12, atol=1e-15)


def test_a_matrix_that_goes_bad_in_another_analysis_is_caught_at_assembly():
    class Shifty(UserMaterial):
        def D(self, analysis="plane stress"):
            D = planar.Isotropic(70e3, 0.3).D(analysis)
            if analysis == "plane strain":
                D[0, 1] *= 2.0
            return D

    model = _model(Shifty(None, name="shifty"))
    model.analysis = "plane strain"  # changed after the material was checked for plane stress
    with pytest.raises(MaterialError, match="'shifty'.*not symmetric"):
        planar.solve(model)


# ---------------------------------------------------------------------------------------- solve(cases=)
def test_one_case_name_as_text_solves_that_case(solved):
    model, results = solved
    one = planar.solve(model, cases="pull")
    assert list(one) == ["pull"]
    np.testing.assert_allclose(one["pull"].u, results["pull"].u, rtol=1e-12, atol=1e-15)
    # uniform tension: sigma_xx = 120 everywhere (common practice)
    np.testing.assert_allclose(one["pull"].field("sigma_xx"), 120.0, rtol=1e-8)


@pytest.mark.parametrize("cases, error", [
    ("pul", NameNotFoundError), (["pull", "pul"], NameNotFoundError), (7, NameNotFoundError),
    (b"pull", InputError), ({"pull": 1.0}, InputError), ([["pull"]], InputError), ([], InputError),
    (3.5, InputError), ([None], InputError),
])
def test_wrong_cases_are_refused(solved, cases, error):
    model, _ = solved
    with pytest.raises(error) as exc:
        planar.solve(model, cases=cases)
    assert "pull" in str(exc.value)


def test_solve_of_something_that_is_not_a_model():
    with pytest.raises(InputError, match="Model"):
        planar.solve(_mesh())


# ---------------------------------------------------------------------------------------- one Result
def _takers():
    exact = lambda x, y: np.column_stack([np.full_like(x, 120.0), 0 * x, 0 * x])  # noqa: E731
    return {
        "kt": lambda r: checks.kt(r, 120.0),
        "margin_of_safety": lambda r: checks.margin_of_safety(r, allowable=300.0),
        "path_stresses": lambda r: checks.path_stresses(r, (1.0, 5.0), (29.0, 5.0)),
        "cut_resultant": lambda r: checks.cut_resultant(r, (15.0, 0.0), (15.0, 10.0)),
        "estimate_error": lambda r: estimate.estimate_error(r),
        "effectivity": lambda r: estimate.effectivity(r, exact),
        "energy_norm_error": lambda r: norms.energy_norm_error(r, exact),
        "plot_field": lambda r: plots.plot_field(r, "sigma_xx"),
        "plot_along": lambda r: plots.plot_along(r, (1.0, 5.0), (29.0, 5.0)),
        "stress_samples": lambda r: recovery.stress_samples(r),
        "recover": lambda r: recovery.recover(r),
        "equilibrium_table": lambda r: report.equilibrium_table(r),
        "stress_check_report": lambda r: report.stress_check_report(r, title="strap"),
        "size_field": lambda r: size_field(r, None, 0.05),
        "write_vtu": lambda r: planar.write_vtu("never-written.vtu", r),
    }


@pytest.mark.parametrize("where", list(_takers()))
def test_the_dict_of_results_gets_the_fix(solved, where, tmp_path, monkeypatch):
    model, results = solved
    monkeypatch.chdir(tmp_path)
    take = _takers()[where]
    with pytest.raises(InputError) as exc:
        take(results)
    msg = str(exc.value)
    assert where in msg and "results['pull']" in msg and "'push'" in msg, msg
    with pytest.raises(InputError, match=r"solve\(model\)\['pull'\]"):
        take(model)
    with pytest.raises(InputError, match="Result"):
        take([results["pull"]])
    assert not list(tmp_path.iterdir())  # nothing written on the way


@pytest.mark.parametrize("where", ["combine", "combinations", "envelope"])
def test_combinations_take_the_dict_of_results(solved, where):
    model, results = solved
    take = {"combine": lambda r: combine(r, {"pull": 1.0}),
            "combinations": lambda r: combinations(r, {"both": {"pull": 1.0, "push": 1.0}}),
            "envelope": lambda r: envelope(r, "sigma_xx")}[where]
    with pytest.raises(InputError, match=r"got one Result \(load case 'pull'\); pass planar.solve\(model\)"):
        take(results["pull"])
    with pytest.raises(InputError, match="solve it first"):
        take(model)
    with pytest.raises(InputError, match="not a planar Result"):
        take({"pull": model, "push": results["push"]})


# ---------------------------------------------------------------------------------------- result files
def test_unchanged_files_read_without_complaint(files):
    with _strict():
        for key in ("raw", "packed"):
            assert find_digest(files[key]) is not None and check_digest(files[key]) == "ok"
            m = read_result_file(files[key])
            np.testing.assert_allclose(m.point_data["sigma_xx"], 120.0, rtol=1e-8)
            planar.Mesh.read(files[key])
        # a file from elsewhere (meshio, no digest) reads as before
        assert check_digest(files["foreign"]) == "none"
        m = read_result_file(files["foreign"])
        np.testing.assert_allclose(m.point_data["sigma_xx"], 120.0, rtol=1e-8)
        assert planar.Mesh.read(files["foreign"]).n_nodes == m.points.shape[0]


def test_envelope_files_carry_a_digest(solved, tmp_path):
    _, results = solved
    path = write_envelope_vtu(tmp_path / "env.vtu", envelope(results, "sigma_xx"))
    assert check_digest(path) == "ok"
    data = bytearray(path.read_bytes())
    data[-40] ^= 0x10
    path.write_bytes(bytes(data))
    with pytest.raises(MeshError, match="changed or damaged"):
        read_result_file(path)


def _damage(src, dst, position: int, bit: int) -> None:
    data = bytearray(src.read_bytes())
    data[position] ^= 1 << bit
    dst.write_bytes(bytes(data))


@pytest.mark.parametrize("key, seed", [("raw", s) for s in range(14)] + [("packed", s) for s in range(6)])
def test_one_flipped_byte_is_never_read_silently(files, tmp_path, key, seed):
    src = files[key]
    size = src.stat().st_size
    rng = random.Random(1000 * seed + len(key))
    head = src.read_bytes()[:400]
    name_at = head.find(ATTRIBUTE.encode())
    position = rng.randrange(size)
    while name_at <= position < name_at + len(ATTRIBUTE):  # the attribute's own name: see the next test
        position = rng.randrange(size)
    bad = tmp_path / "bad.vtu"
    _damage(src, bad, position, rng.randrange(8))
    with pytest.raises(MeshError):
        read_result_file(bad)
    with pytest.raises(MeshError):
        planar.Mesh.read(bad)


def test_damage_to_the_attribute_name_leaves_the_numbers_intact(files, tmp_path):
    # the one place a flip cannot be seen: the file then reads as one from elsewhere, and its
    # numbers are exactly those written
    src = files["raw"]
    bad = tmp_path / "bad.vtu"
    _damage(src, bad, src.read_bytes().find(ATTRIBUTE.encode()) + 1, 5)  # "pLanar_digest"
    assert check_digest(bad) == "none"
    a, b = meshio.read(src), read_result_file(bad)
    for k in a.point_data:
        np.testing.assert_array_equal(a.point_data[k], b.point_data[k])


def test_a_changed_but_readable_file_can_be_read_with_a_warning(files, tmp_path):
    src = files["raw"]
    data = bytearray(src.read_bytes())
    data[len(data) // 2] ^= 0x01  # inside the appended arrays: still a well-formed file
    bad = tmp_path / "bad.vtu"
    bad.write_bytes(bytes(data))
    with pytest.raises(MeshError, match="changed or damaged.*--allow-changed"):
        read_result_file(bad)
    with pytest.warns(PlanarWarning) as rec:
        read_result_file(bad, changed="warn")
    assert any(getattr(w.message, "code", "") == "changed-file" for w in rec)


@pytest.mark.parametrize("edit", ["rename a field", "append bytes", "drop a byte at the end"])
def test_edits_of_a_planar_file_are_refused(files, tmp_path, edit):
    data = files["raw"].read_bytes()
    if edit == "rename a field":
        data = data.replace(b'Name="sigma_xx"', b'Name="sigma_yy"', 1)
    elif edit == "append bytes":
        data = data + b"\n"
    else:
        data = data[:-30] + data[-29:]
    bad = tmp_path / "bad.vtu"
    bad.write_bytes(data)
    with pytest.raises(MeshError):
        read_result_file(bad)


@pytest.fixture(scope="module")
def poisoned(files, tmp_path_factory):
    d = tmp_path_factory.mktemp("poison")
    out = {}
    for what in ("nan stress", "inf stress", "nan displacement", "inf point", "nan point"):
        m = meshio.read(files["foreign"])
        if what == "nan stress":
            m.point_data["von_mises"][[2, 7, 11]] = np.nan
        elif what == "inf stress":
            m.point_data["von_mises"][5] = -np.inf
        elif what == "nan displacement":
            m.point_data["displacement"][4, 1] = np.nan
        elif what == "inf point":
            m.points[3, 0] = np.inf
        else:
            m.points[0, 1] = np.nan
        out[what] = d / (what.replace(" ", "_") + ".vtu")
        meshio.write(out[what], m)
    return out


@pytest.mark.parametrize("what, count", [("nan stress", 3), ("inf stress", 1)])
def test_non_finite_values_are_reported_and_never_drawn(poisoned, what, count):
    with pytest.warns(PlanarWarning, match=f"von_mises: {count} of") as rec:
        read_result_file(poisoned[what])
    assert any(getattr(w.message, "code", "") == "non-finite-values" for w in rec)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlanarWarning)
        with pytest.raises(MeshError, match=f"'von_mises' holds {count} NaN or infinite"):
            plots.plot_vtu(poisoned[what], "von_mises")


@pytest.mark.parametrize("what", ["inf point", "nan point"])
def test_non_finite_coordinates_are_refused(poisoned, what):
    with pytest.raises(MeshError, match="NaN or infinite coordinates"):
        read_result_file(poisoned[what])


def test_non_finite_displacement_is_not_drawn_as_a_shape(poisoned):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PlanarWarning)
        with pytest.raises(MeshError, match="undeformed"):
            plots.plot_vtu(poisoned["nan displacement"], "sigma_xx")
        plots.plot_vtu(poisoned["nan displacement"], "sigma_xx", deformed=False)


@pytest.mark.parametrize("levels", [0, -3, 1, 1001, 2.5, True])
def test_bad_band_counts_are_refused(levels):
    nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    with pytest.raises(InputError, match="colour bands"):
        plots.plot_nodal_field(nodes, {"T3": np.array([[0, 1, 2]])}, np.array([0.0, 1.0, 2.0]), levels=levels)


def test_nan_values_in_arrays_are_not_painted():
    nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0], [1.0, 1.0]])
    cells = {"T3": np.array([[0, 1, 2], [1, 3, 2]])}
    with pytest.raises(InputError, match="NaN or infinite values at 1 of 4 nodes"):
        plots.plot_nodal_field(nodes, cells, np.array([0.0, np.nan, 2.0, 3.0]))
    with pytest.raises(InputError, match="NaN or infinite values in 1 of 2"):
        plots.plot_nodal_field(nodes, cells, cell_values={"T3": np.array([1.0, np.inf])})


# ---------------------------------------------------------------------------------------- command line
def _cli(capsys, *argv):
    code = main(list(map(str, argv)))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("bands", ["-3", "0", "1", "5000"])
def test_show_refuses_bad_bands_in_one_line(files, capsys, bands):
    code, _, err = _cli(capsys, "show", files["raw"], "--bands", bands, "--png", files["raw"].with_suffix(".png"))
    assert code == 2 and "--bands" in err and len(err.strip().splitlines()) == 1 and "Traceback" not in err


def test_show_on_damaged_and_poisoned_files(files, poisoned, capsys, tmp_path):
    bad = tmp_path / "bad.vtu"
    data = bytearray(files["raw"].read_bytes())
    data[len(data) // 2] ^= 0x02
    bad.write_bytes(bytes(data))
    png = tmp_path / "x.png"
    code, _, err = _cli(capsys, "show", bad, "--png", png)
    assert code == 2 and "changed or damaged" in err and "Traceback" not in err and not png.exists()
    code, out, err = _cli(capsys, "show", bad, "--png", png, "--allow-changed")
    assert code == 0 and "warning [changed-file]" in err and png.exists()
    code, _, err = _cli(capsys, "show", poisoned["inf point"], "--png", png)
    assert code == 2 and "infinite coordinates" in err and len(err.strip().splitlines()) <= 2
    code, _, err = _cli(capsys, "show", poisoned["nan stress"], "--png", png)
    assert code == 2 and "'von_mises' holds 3" in err and "Traceback" not in err


def test_show_with_units_warns_of_a_changed_file_once(files, capsys, tmp_path):
    # --units reads the file's own units for its note, then the drawing reads the file: one warning, not two
    bad = tmp_path / "bad.vtu"
    data = bytearray(files["raw"].read_bytes())
    data[len(data) // 2] ^= 0x02
    bad.write_bytes(bytes(data))
    code, _, err = _cli(capsys, "show", bad, "--png", tmp_path / "x.png", "--allow-changed", "--units", "N-m-Pa")
    assert code == 0 and err.count("warning [changed-file]") == 1


def test_show_of_a_good_file_says_nothing_more(files, capsys, tmp_path):
    png = tmp_path / "good.png"
    code, out, err = _cli(capsys, "show", files["raw"], "--png", png, "--bands", "6")
    assert code == 0 and err == "" and png.exists()


@pytest.mark.parametrize("source, line", [
    ("import planar\nx = (1,\ny = 2\n", 2),
    ("import planar\nif True:\nprint('x')\n", 3),
    ("import planar\n\ndef f(:\n    pass\n", 3),
])
def test_run_shows_the_scripts_syntax_error_only(tmp_path, capsys, source, line):
    script = tmp_path / "model_script.py"
    script.write_text(source)
    code, _, err = _cli(capsys, "run", script, "--out", tmp_path / "out")
    assert code == 1
    assert f'File "{script}", line {line}' in err and "^" in err
    assert "Traceback" not in err and "runpy" not in err and "planar/cli/run.py" not in err


def test_run_on_a_script_that_cannot_be_compiled_or_imports_a_broken_module(tmp_path, capsys):
    script = tmp_path / "nul.py"
    script.write_bytes(b"x = 1\x00\n")
    code, _, err = _cli(capsys, "run", script, "--out", tmp_path / "out")
    assert code == 1 and "null bytes" in err and "cannot be compiled" in err and "runpy" not in err
    (tmp_path / "helper_part.py").write_text("def f(:\n    pass\n")
    script = tmp_path / "main_script.py"
    script.write_text("import helper_part\n")
    code, _, err = _cli(capsys, "run", script, "--out", tmp_path / "out")
    # the user's own frames (the import line, the broken module with its caret), none of planar's
    assert code == 1 and f'File "{script}", line 1' in err and "helper_part.py" in err and "^" in err
    assert "runpy" not in err and "planar/cli/run.py" not in err


@pytest.mark.slow
def test_digest_cost_at_a_million_unknowns(tmp_path):
    """A file the size of the 10^6-unknown result (about 95 MB) is signed and checked in a small
    fraction of a second of CPU (SHA-256 at about 1.7 GB/s here: 0.06 s; 0.3 s allowed for slower
    machines)."""
    import time

    from planar.post.vtk import write_grid

    n, e = 500_000, 250_000
    rng = np.random.default_rng(1)
    pts = np.column_stack([rng.random((n, 2)), np.zeros(n)])
    pdata = {"displacement": rng.random((n, 3)), "reaction": rng.random((n, 3))}
    pdata.update({k: rng.random(n) for k in ("sigma_xx", "sigma_yy", "tau_xy", "sigma_zz", "von_mises",
                                              "tresca", "sigma_1", "sigma_2")})
    cdata = {k: [rng.random(e)] for k in ("element_sigma_xx", "element_sigma_yy", "element_tau_xy",
                                          "element_von_mises")}
    path = tmp_path / "big.vtu"
    write_grid(path, pts, [("triangle6", rng.integers(0, n, (e, 6)))], pdata, cdata)
    assert path.stat().st_size > 80e6
    t = time.thread_time()
    assert check_digest(path) == "ok"
    assert time.thread_time() - t < 0.3
