"""The user's front: ``planar demo``, ``planar run``, ``planar show`` and their ``--help``.

Physics checked against sources:
- net-section stress concentration factor of a central circular hole in a finite-width strip in
  tension, Ktn = 3.00 - 3.13 (d/W) + 3.66 (d/W)^2 - 1.53 (d/W)^3 (W. D. Pilkey and D. F. Pilkey,
  Peterson's Stress Concentration Factors, 3rd ed., 2008, chart 4.1; coefficients from memory,
  the fit itself is quoted to about 1 %);
- equilibrium: the support reactions balance the applied load (common practice).
"""
import json
import re

import meshio
import numpy as np
import pytest

from planar.cli import main
from test_report import browser_render, figure_pixels  # the same browser check (tests/ is on the path: conftest.py)


# ---------------------------------------------------------------------------------------- demo
@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "out"
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        code = main(["demo", "--out", str(out)])
    return code, buf.getvalue(), out


@pytest.mark.slow
def test_demo_writes_result_figures_and_report(demo_run):
    code, printed, out = demo_run
    assert code == 0
    names = {p.name for p in out.iterdir()}
    assert {"splice_strap.vtu", "report.html", "summary.json"} <= names
    pngs = sorted(n for n in names if n.endswith(".png"))
    assert len(pngs) >= 4
    for n in pngs:
        assert (out / n).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert not [n for n in names if ".part" in n]          # atomic writes leave no temporaries


def test_demo_vtu_is_readable_with_quadratic_cells(demo_run):
    _, _, out = demo_run
    m = meshio.read(out / "splice_strap.vtu")
    assert {c.type for c in m.cells} <= {"triangle6", "quad8", "quad9"} and m.cells
    assert m.point_data["displacement"].shape == (m.points.shape[0], 3)
    vm = m.point_data["von_mises"]
    assert vm.shape == (m.points.shape[0],) and np.all(np.isfinite(vm))
    s = json.loads((out / "summary.json").read_text())
    assert vm.max() == pytest.approx(s["peak_von_mises"], rel=1e-6)   # the file holds the SPR field
    # the unit system, named in the summary and in the file
    assert s["unit_system"]["name"] == "N-mm-MPa" and s["unit_system"]["stress"] == "MPa"
    assert bytes(np.asarray(m.field_data["planar_units"], np.uint8)).decode() == "N-mm-MPa"


def test_demo_prints_the_summary_table(demo_run):
    _, printed, out = demo_run
    s = json.loads((out / "summary.json").read_text())
    for label in ("peak von Mises", "Kt", "margin of safety", "estimated error", "unknowns", "time"):
        assert label in printed, label
    assert f"{s['peak_von_mises']:.1f} MPa" in printed
    assert re.search(r"at \(-?\d+\.\d, -?\d+\.\d\) mm", printed)
    assert f"{s['unknowns']:,}".replace(",", " ") in printed or str(s["unknowns"]) in printed
    assert str(out) in printed


def test_demo_physics(demo_run):
    _, _, out = demo_run
    s = json.loads((out / "summary.json").read_text())
    q = s["hole_diameter"] / s["width"]
    peterson = 3.00 - 3.13 * q + 3.66 * q**2 - 1.53 * q**3     # Pilkey and Pilkey 2008, chart 4.1
    # tolerance 2.5 %: the handbook fit's own accuracy (about 1 %, from memory), the finite length of
    # the strap (the hole is two widths from the ends) and the discretisation error (< 0.5 % here)
    assert s["kt"] == pytest.approx(peterson, rel=0.025)
    assert s["kt_handbook"] == pytest.approx(peterson, rel=1e-12)
    # the peak is on the hole edge at the ends of the net section (x = 0, y = +-d/2)
    x, y = s["peak_location"]
    assert abs(x) < 0.05 * s["hole_diameter"] and abs(abs(y) - s["hole_diameter"] / 2) < 1e-6
    # margin of safety MS = allowable / (FS * peak) - 1 (common practice)
    assert s["margin_of_safety"] == pytest.approx(
        s["allowable"] / (s["factor_of_safety"] * s["peak_von_mises"]) - 1.0, rel=1e-3, abs=1e-3)
    assert 0 < s["error_estimate"] < 0.05
    assert s["equilibrium_error"] < 1e-8
    assert len(s["meshes"]) >= 3
    unknowns = [m["unknowns"] for m in s["meshes"]]
    assert unknowns == sorted(unknowns) and s["unknowns"] == unknowns[-1]
    assert s["seconds"] < 60.0
    # the study judges itself in the asymptotic range (Roache 1998) and claims its GCI (about 0.19 %)
    assert s["convergence"] == "monotonic" and s["convergence_verdict"] == "in the asymptotic range"
    assert 0 < s["gci"] < 0.01


@pytest.mark.slow
def test_demo_report_shows_cautions_and_renders(demo_run, tmp_path):
    _, _, out = demo_run
    html = (out / "report.html").read_text()
    for words in ("linear elastic", "No buckling, fatigue, fracture or plasticity check",
                  "buckle a thin plate", "qualified engineer", "take precedence", "Equilibrium",
                  "Convergence evidence", "margin of safety", "Kt"):
        assert words.lower() in html.lower(), words
    assert not re.search(r'(?:src|href)="(?!data:)', html)
    img, console = browser_render(out / "report.html", tmp_path, height=9000)
    assert console == [], "\n".join(console)
    distinct, saturated = figure_pixels(img)
    assert distinct > 2000 and saturated > 100_000


@pytest.mark.slow
def test_demo_report_prints_to_pdf(demo_run, tmp_path):
    """The demo's report printed by headless Chromium: numbered pages with the title and revision, whole
    figures, inputs with units, no Python spellings, the sign-off block and the versions (tests/test_report_print.py
    holds the checks)."""
    import html as _html

    from test_report_print import FORBIDDEN, check_pages, print_pdf, read_pdf

    _, _, out = demo_run
    text = (out / "report.html").read_text()
    captions = [_html.unescape(c) for c in re.findall(r"<figcaption>(.*?)</figcaption>", text)]
    pages = read_pdf(print_pdf(out / "report.html", tmp_path))
    check_pages(pages, "Stress check: splice strap with an open bolt hole", "", captions)
    whole = " ".join(p["text"] for p in pages)
    assert not [bad for bad in FORBIDDEN if bad in whole]
    for words in ("E = 71000 MPa", "thickness, region 'plate' 3 mm", "traction on edge 'right': 40 MPa along x",
                  "edge 'left' clamped", "prepared by", "checked by", "approved by", "planar ", "gmsh ", "numpy ",
                  "scipy ", "solver back end", "SHA-256 of the script"):
        assert words in whole, words


# ---------------------------------------------------------------------------------------- show
@pytest.mark.slow
def test_show_draws_a_written_result(demo_run, tmp_path, capsys):
    _, _, out = demo_run
    png = tmp_path / "vm.png"
    assert main(["show", str(out / "splice_strap.vtu"), "--field", "von_mises", "--png", str(png),
                 "--units", "N, mm, MPa", "--mesh"]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert str(png) in capsys.readouterr().out
    assert main(["show", str(out / "splice_strap.vtu"), "--field", "sigma_xx",
                 "--png", str(tmp_path / "sxx.png"), "--bands", "12", "--undeformed"]) == 0
    assert main(["show", str(out / "splice_strap.vtu"), "--list"]) == 0
    assert "von_mises" in capsys.readouterr().out


def test_show_errors_are_one_line(tmp_path, capsys):
    assert main(["show", str(tmp_path / "missing.vtu")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "does not exist" in err[0]


def test_show_unknown_field_lists_the_fields(demo_run, capsys):
    _, _, out = demo_run
    assert main(["show", str(out / "splice_strap.vtu"), "--field", "stress"]) == 2
    err = capsys.readouterr().err
    assert "von_mises" in err and "sigma_xx" in err and len(err.strip().splitlines()) == 1


# ---------------------------------------------------------------------------------------- run
SCRIPT = '''
import planar
from planar.demo import output_dir

mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
model.add_support(planar.Fixed("left"))
model.add_load(planar.Traction("right", tx=50.0), case="pull")
result = planar.solve(model)["pull"]
planar.write_vtu(output_dir() / "strap.vtu", result)
assert OUTPUT_DIR == output_dir()
print("peak", round(result.max("von_mises")[0], 3), "written to", OUTPUT_DIR, __name__)
'''


def test_run_sets_the_output_folder(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    (tmp_path / "strap.py").write_text(SCRIPT)
    assert main(["run", "strap.py", "--out", "results"]) == 0
    out = capsys.readouterr().out
    assert "written to" in out and "__main__" in out
    assert (tmp_path / "results" / "strap.vtu").exists()
    import os

    assert "PLANAR_OUT" not in os.environ          # restored afterwards


def test_run_reports_planar_errors_in_two_lines(tmp_path, capsys):
    script = tmp_path / "typo.py"
    script.write_text("import planar\nm = planar.rectangle_mesh(10.0, 2.0, 2, 1)\n"
                      "model = planar.Model(m, planar.Isotropic(70e3, 0.3))\n"
                      "model.add_support(planar.Fixed('lefft'))\n")
    assert main(["run", str(script), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 2
    assert "unknown" in err[0] and "'left'" in err[0]
    assert "typo.py, line 4" in err[1] and "Fixed('lefft')" in err[1]


def test_run_shows_the_users_traceback(tmp_path, capsys):
    script = tmp_path / "oops.py"
    script.write_text("def share(n):\n    return 100 / n\n\nshare(0)\n")
    assert main(["run", str(script), "--out", str(tmp_path / "o")]) == 1
    err = capsys.readouterr().err
    assert "Traceback" in err and "ZeroDivisionError" in err and 'oops.py", line 2' in err
    assert "runpy" not in err and "planar/cli/run.py" not in err     # only the user's frames


def test_run_passes_exit_codes_and_refuses_missing_scripts(tmp_path, capsys):
    script = tmp_path / "leave.py"
    script.write_text("import sys\nsys.exit(3)\n")
    assert main(["run", str(script), "--out", str(tmp_path / "o")]) == 3
    assert main(["run", str(tmp_path / "nothere.py")]) == 2
    assert "does not exist" in capsys.readouterr().err


# ---------------------------------------------------------------------------------------- help
@pytest.mark.parametrize("cmd, words", [
    ("demo", ["--out", "splice strap", "convergence", "Kt", "margin of safety", "report", "planar-out"]),
    ("run", ["SCRIPT.py", "--out", "OUTPUT_DIR", "PLANAR_OUT", "output_dir()", "traceback"]),
    ("show", ["RESULT.vtu", "--field", "--png", "--units", "--mesh", "deformed", "von_mises"]),
])
def test_help_of_each_command(cmd, words, capsys):
    with pytest.raises(SystemExit) as exc:
        main([cmd, "--help"])
    assert exc.value.code == 0
    text = " ".join(capsys.readouterr().out.split())      # help text is wrapped
    for w in words:
        assert w in text, f"{cmd} --help lacks {w!r}"
    assert "example" in text


def test_top_level_help_lists_the_front_commands(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    text = capsys.readouterr().out
    for cmd in ("demo", "run", "show", "verify"):
        assert re.search(rf"^\s+{cmd}\s", text, re.M), cmd


def test_commands_are_the_modules_of_the_cli_package(tmp_path, monkeypatch, capsys):
    # every module of planar/cli/ not starting with "_" is a command, found without a hand-kept list,
    # and a module added to the package becomes a command (common practice: pkgutil discovery)
    import pkgutil
    import sys

    import planar.cli as cli

    cli._load_commands()
    modules = sorted(m.name for m in pkgutil.iter_modules(cli.__path__) if not m.name.startswith("_"))
    assert {"demo", "plugins", "run", "show", "sweep", "verify"} <= set(modules)
    assert [n for n in cli.COMMANDS if n in modules] == modules            # all of them, in name order
    (tmp_path / "hello.py").write_text('COMMAND = "hello"\nHELP = "say hello (test)"\n\n'
                                       'def run(args):\n    print("hello from a module")\n    return 3\n')
    monkeypatch.setattr(cli, "__path__", [*cli.__path__, str(tmp_path)])
    monkeypatch.setattr(cli, "COMMANDS", dict(cli.COMMANDS))
    try:
        assert main(["hello"]) == 3 and "hello from a module" in capsys.readouterr().out
    finally:
        sys.modules.pop("planar.cli.hello", None)
        cli.__dict__.pop("hello", None)


@pytest.mark.slow
def test_library_modules_do_not_import_the_command_line():
    # read the source (not run it): only planar/cli/ and ``python -m planar`` may import planar.cli
    import ast
    from pathlib import Path

    import planar

    root = Path(planar.__file__).parent
    offenders = []
    for path in root.rglob("*.py"):
        rel = path.relative_to(root)
        if rel.parts[0] == "cli" or rel.name == "__main__.py":
            continue
        package = ["planar", *rel.parts[:-1]]                 # what a relative import is relative to
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom):
                base = ".".join(package[: len(package) - node.level + 1] + [node.module or ""]).rstrip(".") \
                    if node.level else node.module or ""
                names = [base] + [f"{base}.{a.name}" for a in node.names]
            elif isinstance(node, ast.Import):
                names = [a.name for a in node.names]
            else:
                continue
            offenders += [f"{rel}: {n}" for n in names if n == "planar.cli" or n.startswith("planar.cli.")]
    assert not offenders, offenders


def test_demo_summary_lists_the_hot_spots(demo_run):
    _, _, out = demo_run
    s = json.loads((out / "summary.json").read_text())
    hs = s["hot_spots"]
    gov = hs["spots"][hs["governing"] - 1]
    # the bolt hole governs; the clamp's corner spots are flagged as made by the idealisation
    assert gov["feature"] == "bolt_hole" and not gov["flagged"]
    assert gov["value"] == pytest.approx(s["peak_von_mises"], rel=1e-12)
    assert gov["kt"] == pytest.approx(gov["value"] / s["net_stress"], rel=1e-12)
    assert all(sp["flagged"] for sp in hs["spots"] if sp["x"] == -s["length"] / 2)
    assert hs["unit"] == "MPa" and (out / "hot_spots.png").read_bytes()[:4] == b"\x89PNG"
    assert "Hot spots" in (out / "report.html").read_text()
