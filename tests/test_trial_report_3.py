"""Trial of the report and command-line paths by a stress engineer checking their own parts.

Each test failed before its fix. Sources of the numerical checks are named beside them.
"""
from __future__ import annotations

import contextlib
import json
import re
import sys

import numpy as np
import pytest

import planar
from _models import solved_strip, strip_model
from planar.core.errors import InputError
from planar.post import combinations, grid_convergence, plot_field, render_html, stress_check_report
from planar.post.report import reactions_table


def _strap(**cases):
    """A 100 x 20 x 2 mm strip (N, mm, MPa) clamped at its left end, solved for ``cases``."""
    cases = cases or {"pull": planar.Traction("right", tx=50.0)}
    return planar.solve(strip_model(100.0, 20.0, 10, 2, "Q8", units="N, mm, MPa", loads=cases))


# ---------------------------------------------------------------------------------------- combinations
def test_report_lists_the_combinations_that_combinations_returns():
    # stress_check_report(combinations=...) took a mapping of {case: factor} or Combination objects,
    # but not what planar.post.combinations() gives (name -> CombinedResult): a TypeError traceback
    res = _strap(**{"dead": planar.Traction("right", tx=20.0), "live load ✓": planar.Traction("right", ty=-1.0)})
    combos = combinations(res, {"ULT 1.5 (D+L)": {"dead": 1.5, "live load ✓": 1.5}})
    text = render_html(stress_check_report(res["dead"], combinations=combos, picture=False, hot_spots=False))
    assert "ULT 1.5 (D+L) = 1.5 x dead + 1.5 x live load ✓" in text
    with pytest.raises(InputError, match="combinations="):
        stress_check_report(res["dead"], combinations={"bad": 3.0}, picture=False, hot_spots=False)


# ---------------------------------------------------------------------------------------- cautions
def test_report_cannot_lose_its_cautions():
    # omit=["cautions"] and cautions=[] gave a report without "linear elastic ... qualified engineer",
    # whose summary still told the reader to read the cautions "in the last section"
    r = _strap()["pull"]
    keep = dict(picture=False, hot_spots=False, results=[])
    with pytest.raises(InputError, match="cautions"):
        stress_check_report(r, omit=["cautions"], **keep)
    with pytest.raises(InputError, match="cautions"):
        stress_check_report(r, cautions=[], **keep)
    rep = stress_check_report(r, **keep)
    titles = [s.title for s in rep.sections]
    text = render_html(rep)
    assert "qualified engineer" in text and "No buckling, fatigue, fracture or plasticity" in text
    assert "last section" not in text and titles[-1] != "Cautions and limits"  # sign-off is last
    assert "Cautions and limits" in titles and "the section Cautions and limits" in text


# ---------------------------------------------------------------------------------------- the demo's folder
def test_demo_does_not_replace_a_users_report(tmp_path, capsys):
    # planar demo and planar run share the default folder ./planar-out; the demo wrote its report.html
    # over the one the user's script had written there, without a word
    from planar.cli import main

    out = tmp_path / "planar-out"
    out.mkdir()
    mine = out / "report.html"
    mine.write_text("<html>my bracket, revision C</html>")
    assert main(["demo", "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "report.html" in err and "--out" in err
    assert mine.read_text() == "<html>my bracket, revision C</html>"
    assert sorted(p.name for p in out.iterdir()) == ["report.html"]   # refused before any work


def test_demo_writes_again_over_its_own_folder(tmp_path):
    from planar.demo import _check_not_users

    (tmp_path / "summary.json").write_text('{"written_by": "planar demo", "part": "x"}')
    (tmp_path / "report.html").write_text("old demo report")
    _check_not_users(tmp_path)          # its own earlier files: no complaint
    (tmp_path / "summary.json").write_text('{"peak": 1}')   # a user's summary.json
    with pytest.raises(InputError, match="not written by planar demo"):
        _check_not_users(tmp_path)


def test_a_demo_stopped_half_way_does_not_refuse_its_own_files_next_time(tmp_path, monkeypatch):
    # the folder is marked the demo's before its first file, so the files of a run stopped half-way
    # (Ctrl-C, an error) are not taken for a user's by the next run
    from planar import demo
    from planar.demo import _check_not_users, run_demo

    def stop(self, h):
        (tmp_path / "report.html").write_text("half a demo report")  # as if a file were written already
        raise KeyboardInterrupt

    from planar.paths import OUT_ENV

    monkeypatch.delenv(OUT_ENV, raising=False)
    monkeypatch.setattr(demo.SpliceStrap, "mesh", stop)
    with pytest.raises(KeyboardInterrupt):
        run_demo(tmp_path)
    assert json.loads((tmp_path / "summary.json").read_text())["written_by"] == "planar demo"
    _check_not_users(tmp_path)  # no complaint


# ---------------------------------------------------------------------------------------- convergence
def test_convergence_study_with_sizes_keeps_the_unknowns_solved():
    # with sizes= the study's table and the report printed "-" for the unknowns it had solved
    from planar.post import convergence_study

    meshes = [planar.rectangle_mesh(100.0, 20.0, 5 * k, k, "Q8") for k in (1, 2, 4)]

    def build(m):
        mo = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
        mo.add_support(planar.Fixed("left"))
        mo.add_load(planar.Traction("right", ty=-1.0), case="tip")
        return mo

    with pytest.warns(planar.DiscretisationWarning):  # a clamped corner: it need not converge
        g = convergence_study(build, meshes, "von_mises", sizes=[20.0, 10.0, 5.0])
    assert g.dofs is not None
    assert [int(n) for n in g.dofs] == sorted((m.n_dofs for m in meshes), reverse=True)  # finest first
    assert "unknowns" in g.table().splitlines()[0]


def test_report_summary_says_when_no_gci_is_claimed():
    # a study not in the asymptotic range sat only in the convergence section; the summary tiles
    # (margin, Kt) gave no hint that the discretisation error was unknown
    r = _strap()["pull"]
    with pytest.warns(planar.DiscretisationWarning, match="not-asymptotic|asymptotic"):
        bad = grid_convergence([100.0, 120.0, 110.0], sizes=[4.0, 2.0, 1.0], name="peak at the fillet",
                               unit="MPa")
    # an oscillating series claims no GCI (P. J. Roache, Verification and Validation in Computational
    # Science and Engineering, 1998, ch. 5: the GCI holds only in the asymptotic range)
    good = grid_convergence([3.0 + 0.4 * h ** 2 for h in (1.0, 0.5, 0.25)], sizes=[1.0, 0.5, 0.25],
                            name="peak at the hole")
    rep = stress_check_report(r, convergence=[good, bad], picture=False, hot_spots=False, results=[])
    tiles = rep.sections[0].blocks[0].items
    labels = {t[0]: t for t in tiles}
    assert labels["convergence, peak at the fillet"][1] == "no GCI claimed"
    assert labels["convergence, peak at the fillet"][3] == "fail"
    # Richardson: f = 3 + 0.4 h^2 has GCI_fine = 1.25 |f2 - f1| / f1 / (2^2 - 1) = 1.0331 % (Roache 1998, eq. of
    # the GCI; the module's own doctest value)
    assert labels["convergence, peak at the hole"][1] == "GCI 1.03 %"


# ---------------------------------------------------------------------------------------- reactions
def test_reactions_caption_is_true_with_a_loaded_pin():
    # the caption said "with the applied loads they add up to zero", but a loaded pin's row is the
    # whole force it passes to the part, its load included: rows + applied loads = the pin's load
    from planar.geometry import Refine, lug, mesh

    m = mesh(lug(2.0, 0.75, 1.5), size=0.3, element="T6", refine=[Refine("hole", size=0.1)])
    model = planar.Model(m, planar.Isotropic(10.3e6, 0.33), thickness=0.25, units="lbf-in-psi")
    model.add_support(planar.Fixed("base"))
    model.add_pin(planar.Pin("hole", tie="spreading", hold=None, name="pin"))
    model.add_load(planar.PinLoad("pin", fy=4000.0), case="pull")
    r = planar.solve(model)["pull"]
    recs = r.support_reactions()
    applied = np.asarray(r.total_applied())
    # statics (common practice): what the supports and the pins' reactions carry balances the loads
    stated = sum(np.asarray(x.force if x.load is None else x.reaction[:2]) for x in recs)
    np.testing.assert_allclose(stated + applied, 0.0, atol=1e-6 * 4000.0)
    rows = sum(np.asarray(x.force) for x in recs)
    assert abs((rows + applied)[1] - 4000.0) < 1e-6 * 4000.0   # the plain rows do not add up to zero
    cap = reactions_table(r).caption
    assert "they add up to zero." not in cap
    assert "each pin's reaction (its force minus its load) in place of its row" in cap and "'pin'" in cap
    held = reactions_table(_strap()["pull"]).caption   # no pin: the plain sentence stays
    assert "they add up to zero." in held


# ---------------------------------------------------------------------------------------- sweeps
_SCALE = 1.0


def scaled(x):
    """A sweep function reading a module constant (as a thickness or a load would be)."""
    return {"y": _SCALE * x}


def test_sweep_does_not_reuse_points_of_an_edited_function(tmp_path, monkeypatch):
    # the store matched points by the function's name only: after the user changed the function (here
    # a module constant it reads), a sweep on the same store gave the old values as "from the store"
    from planar.studies import sweep

    store = tmp_path / "store"
    t1 = sweep(scaled, grid={"x": [1.0, 2.0, 3.0]}, store=store, workers=0)
    assert list(t1.column("y")) == [1.0, 2.0, 3.0]
    t2 = sweep(scaled, grid={"x": [1.0, 2.0, 3.0]}, store=store, workers=0)
    assert t2.reused == 3 and t2.computed == 0 and t2.stale == 0     # unchanged: resumed from the store
    monkeypatch.setattr(sys.modules[__name__], "_SCALE", 2.0)
    t3 = sweep(scaled, grid={"x": [1.0, 2.0, 3.0]}, store=store, workers=0)
    assert list(t3.column("y")) == [2.0, 4.0, 6.0]
    assert t3.reused == 0 and t3.computed == 3 and t3.stale == 3


@pytest.mark.slow
def test_function_digest_is_the_same_in_a_fresh_process(tmp_path):
    # the fingerprint must not depend on the process (marshal's bytes do, through reference counts)
    import subprocess

    from planar.studies.compute import function_digest

    mod = tmp_path / "dsgn.py"
    mod.write_text("T = 3.0\n\ndef helper(w):\n    return w * T\n\ndef f(w, k=2):\n    return {'y': helper(w) * k}\n")
    code = (f"import sys; sys.path.insert(0, {str(tmp_path)!r}); import dsgn; "
            "from planar.studies.compute import function_digest; print(function_digest(dsgn.f))")
    runs = {subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
            for _ in range(2)}
    assert len(runs) == 1
    mod.write_text(mod.read_text().replace("T = 3.0", "T = 4.0"))   # a helper's constant changed
    after = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.strip()
    assert after not in runs
    assert len(function_digest(scaled)) == 16


def test_function_digest_follows_a_decorated_function_and_a_closure():
    # a function behind functools.wraps, or one a factory made, was fingerprinted by its wrapper alone:
    # editing what it computes left the stored points "from the store"
    import functools

    from planar.studies.compute import function_digest

    def logged(f):
        @functools.wraps(f)
        def wrapper(**kw):
            return f(**kw)
        return wrapper

    def make(scale):
        def g(x):
            return {"y": scale * x}
        return g

    assert function_digest(logged(lambda x: {"y": x})) != function_digest(logged(lambda x: {"y": 2 * x}))
    assert function_digest(make(1.0)) != function_digest(make(2.0))
    assert function_digest(make(1.0)) == function_digest(make(1.0))
    # a set of words in the code ("x in {...}", a frozenset constant) is part of what it computes
    assert function_digest(lambda m: m in {"a", "b"}) != function_digest(lambda m: m in {"a", "c"})


# ---------------------------------------------------------------------------------------- result files
def test_result_file_states_its_load_case(tmp_path, capsys):
    # a .vtu held no word of its load case: planar show's picture and --list could not say which case
    from planar.cli import main
    from planar.post.files import file_case, read_result_file

    case = "self weight ✓ 1g"
    r = _strap(**{case: planar.Traction("right", tx=1.0)})[case]
    path = planar.write_vtu(tmp_path / "w.vtu", r)
    assert file_case(read_result_file(path)) == case
    assert main(["show", str(path), "--list"]) == 0
    assert f"load case:    {case}" in capsys.readouterr().out
    assert planar.Mesh.read(path).n_nodes == r.mesh.n_nodes   # still read back as a mesh


# ---------------------------------------------------------------------------------------- long work
def test_contour_is_not_measured_by_the_layout():
    # the layout measured the contour's extent, one matplotlib path per drawn triangle: 18 s of a
    # 36 s report on a web with 36 rivet holes (115,896 T6 elements)
    r = solved_strip(80.0, 20.0, 8, 2, "Q8", units="N, mm, MPa", case="pull",
                     loads={"pull": planar.Traction("right", tx=10.0)})
    fig = plot_field(r, "von_mises")
    ax = fig.axes[0]
    contour = [c for c in ax.collections if c.get_array() is not None]
    assert contour and not any(c.get_in_layout() for c in contour)


def test_report_reports_its_long_steps(monkeypatch, capsys):
    # a report of a large model ran for tens of seconds with no line on the terminal
    monkeypatch.setenv("PLANAR_PROGRESS", "1")
    monkeypatch.setenv("PLANAR_PROGRESS_MIN_UNKNOWNS", "1")
    monkeypatch.setenv("PLANAR_PROGRESS_MIN_SECONDS", "0")
    r = _strap()["pull"]
    capsys.readouterr()
    stress_check_report(r, picture=False)
    err = capsys.readouterr().err
    assert re.search(r"report: hot spots", err) and "report: extremes and contour" in err


# ---------------------------------------------------------------------------------------- bad numbers
@pytest.mark.parametrize("kw", [dict(allowable=-5.0), dict(allowable=float("nan")), dict(nominal=0.0),
                                dict(factor_of_safety=0.0), dict(field="ux", allowable=250.0)])
def test_report_refuses_a_margin_it_cannot_work_out(kw):
    # a negative or NaN allowable, a zero nominal or factor of safety, or an allowable for a displacement
    # gave a report without any margin or Kt, saying only "No hot spots could be found: ..."
    r = _strap()["pull"]
    with pytest.raises(InputError):
        stress_check_report(r, picture=False, results=[], **kw)


def test_report_names_a_wrong_headline_or_convergence_item():
    # headline=[("a", "b")] died in the renderer with "ValueError: not enough values to unpack"; a number
    # in convergence= was refused as "a report block must be ..." without naming convergence=
    r = _strap()["pull"]
    with pytest.raises(InputError, match="headline="):
        stress_check_report(r, headline=[("peak", "61 MPa")], picture=False, results=[])
    with pytest.raises(InputError, match="convergence="):
        stress_check_report(r, convergence=[1.0, 2.0], picture=False, results=[])


def test_sweep_output_reads_a_case_or_edge_name_with_spaces():
    # "kt:sigma_xx:100 on hole in pull ✓" read the case as 'pull' (every point then failed with
    # "unknown load case 'pull'") and left "✓" in the nominal; an edge named from a gmsh physical
    # name with a space ("pull end") could not be named at all
    from planar.studies.outputs import parse_output

    o = parse_output("kt:sigma_xx:100 on hole in pull ✓")
    assert (o.case, o.where, o.nominal) == ("pull ✓", "hole", 100.0)
    o = parse_output("max:von_mises in case 2 on pull end@average")
    assert (o.case, o.where, o.method) == ("case 2", "pull end", "average")
    assert parse_output("margin:von_mises:290:1.5 on \"x in y\" in 'lift @ 2g'").case == "lift @ 2g"
    assert parse_output("max:von_mises on fillet in pull").case == "pull"       # the plain form is unchanged
    with pytest.raises(InputError, match="2 zones"):
        parse_output("max:von_mises on a on b")


def halting(x):
    """A sweep function that fails at x = 2."""
    if x == 2:
        raise ValueError("no convergence at x = 2")
    return {"y": 100.0 + x}


def test_sweep_plot_leaves_a_gap_at_a_failed_point(tmp_path):
    # the line of computed values ran straight across a failed point (as if its value lay between its
    # neighbours), and the failed point's cross sat at the lowest value (at 0 when every point failed)
    from planar.studies import sweep

    t = sweep(halting, grid={"x": [1.0, 2.0, 3.0]}, workers=0)
    fig = t.plot()
    ax = fig.axes[0]
    line = next(ln for ln in ax.get_lines() if ln.get_label() == "computed")
    y = np.asarray(line.get_ydata(), float)
    assert np.isnan(y[1]) and list(y[[0, 2]]) == [101.0, 103.0]
    cross = next(ln for ln in ax.get_lines() if ln.get_label().startswith("failed"))
    assert cross.get_transform() != ax.transData          # along the axis, at no value


def test_report_of_an_adaptive_run_that_stopped_short():
    # convergence=adapt(...) was a TypeError traceback ('AdaptiveRun' object is not iterable); a run that
    # stopped on its budget must say in the summary that its error target was not reached
    from planar.post.adapt import AdaptiveRun, Cycle

    r = _strap()["pull"]
    cycles = [Cycle(i, n, n // 4, e, p, (0.0, 6.0), 0.1) for i, (n, e, p) in
              enumerate([(1200, 0.042, 124.0), (5000, 0.012, 160.0), (13000, 0.0044, 166.0)])]
    run = AdaptiveRun(cycles, False, "the next mesh has 27,670 unknowns, over the budget of 20,000", 0.001, 20000,
                      "von_mises", "spr")
    rep = stress_check_report(r, convergence=run, picture=False, hot_spots=False, results=[])
    tiles = {t[0]: t for t in rep.sections[0].blocks[0].items}
    assert tiles["adaptive refinement"][3] == "fail" and "not reached" in tiles["adaptive refinement"][2]
    text = render_html(rep)
    assert "stopped before its target" in text and "0.44 %" in text and "target reached" in text
    with pytest.raises(InputError, match="convergence="):
        stress_check_report(r, convergence=3.0, picture=False, hot_spots=False, results=[])


def test_equilibrium_of_a_symmetry_model_says_it_is_the_modelled_share():
    # "Equilibrium of the whole plate" above 6 kN of a quarter model pulled with 12 kN in all: a
    # checker comparing with the whole load found half of it
    from planar.post.report import equilibrium_table

    m = strip_model(50.0, 10.0, 10, 2, "Q8", hold=None, units="N, mm, MPa",
                    loads={"pull": planar.Traction("right", tx=10.0)})
    m.add_support(planar.Symmetry("left"))
    m.add_support(planar.Roller("corner_00", fixed="y"))
    r = planar.solve(m)["pull"]
    cap = equilibrium_table(r).caption
    assert "symmetry model" in cap and "'left'" in cap and "whole plate" not in cap
    # P/A (common practice): the half strip carries 10 MPa x 10 mm x 2 mm = 200 N
    assert abs(float(equilibrium_table(r).rows[0][1]) - 200.0) < 1e-9 * 200.0
    assert "whole plate" in equilibrium_table(_strap()["pull"]).caption


class _Scaled:
    """A callable sweep function object."""

    def __init__(self, k):
        self.k = k

    def __call__(self, x):
        return {"y": self.k * x}


def test_function_digest_of_a_callable_object_follows_its_attributes():
    from planar.studies.compute import function_digest

    assert function_digest(_Scaled(1.0)) == function_digest(_Scaled(1.0))
    assert function_digest(_Scaled(1.0)) != function_digest(_Scaled(2.0))


def test_show_reports_a_long_drawing(tmp_path, monkeypatch, capsys):
    # planar show drew a 465,600-unknown result for 9 s with no line on the terminal
    from planar.cli import main

    monkeypatch.setenv("PLANAR_PROGRESS", "1")
    monkeypatch.setenv("PLANAR_PROGRESS_MIN_UNKNOWNS", "1")
    monkeypatch.setenv("PLANAR_PROGRESS_MIN_SECONDS", "0")
    path = planar.write_vtu(tmp_path / "s.vtu", _strap()["pull"])
    capsys.readouterr()
    assert main(["show", str(path)]) == 0
    err = capsys.readouterr().err
    assert "drawing s-von_mises.png" in err and "unknowns" in err


def test_rises_to_answers_as_the_connected_component_does():
    # hot_spots searched each candidate peak's component by slicing the whole mesh's graph (13-17 s
    # of hot spots on a web with 36 rivet holes); the search from the peak must give the same answer
    from scipy.sparse.csgraph import connected_components

    from planar.post._peaks import mesh_graph, rises_to

    m = planar.rectangle_mesh(60.0, 20.0, 30, 10, "Q8")
    g = mesh_graph(m)
    rng = np.random.default_rng(7)
    x, y = m.nodes.T
    v = np.sin(x / 6.0) * np.cos(y / 4.0) + 0.05 * rng.standard_normal(m.n_nodes)
    stop = np.zeros(m.n_nodes, dtype=bool)
    stop[rng.choice(m.n_nodes, 3, replace=False)] = True
    for i in rng.choice(m.n_nodes, 60, replace=False):
        floor, top = v[i] - 0.3, v[i] + 1e-9
        sub = np.flatnonzero(v >= floor)
        _, lab = connected_components(g[sub][:, sub], directed=False)
        comp = sub[lab == lab[np.searchsorted(sub, i)]]
        expect = bool(v[comp].max() > top or stop[comp].any())
        got, size = rises_to(g, v, int(i), floor, top, stop)
        assert got == expect
        if not got:
            assert size == comp.size


def test_model_picture_fills_the_part_once_holes_open():
    # the part was filled by a polygon per drawn triangle (463,645 of them on the 36-hole web: 9 of the
    # 13 s of its picture); one path of the outline fills it, and its holes stay open
    from matplotlib.patches import PathPatch

    from planar.geometry import Circle, Plate, mesh
    from planar.post import plot_model

    m = mesh(Plate.rectangle(60.0, 20.0).cut(Circle((30.0, 10.0), 4.0, name="hole")), size=2.0, element="T6")
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    fig = plot_model(model, case="pull")
    ax = fig.axes[0]
    part = [a for a in ax.patches + ax.collections if a.get_gid() == "part"]
    assert len(part) == 1 and isinstance(part[0], PathPatch)
    fig.canvas.draw()
    rgb = np.asarray(fig.canvas.buffer_rgba())[..., :3].astype(int)
    height = rgb.shape[0]

    def colour(x, y):  # the drawn pixel at a point of the part (image rows count from the top)
        px, py = ax.transData.transform((x, y))
        return rgb[int(round(height - py)), int(round(px))]

    assert tuple(colour(30.0, 10.0)) == (255, 255, 255)          # the hole is open
    assert tuple(colour(45.0, 5.0)) == (0xEC, 0xEF, 0xF2)        # the part is filled


@pytest.mark.parametrize("radius", [None, 6.0])
def test_hot_spot_at_a_sharp_corner_is_marked_singular(radius):
    # the spot at a sharp re-entrant corner was "governing" with a margin, no word in its row or tile
    # that its value is the mesh's (the elastic stress there is unbounded: M. L. Williams, "Stress
    # singularities resulting from various boundary conditions in angular corners of plates in
    # extension", J. Appl. Mech. 19, 1952; from memory); a filleted corner is not singular
    from planar.geometry import Plate, Refine, mesh
    from planar.post import hot_spots

    p = Plate.polygon([(0, 0), (120, 0), (120, 25), (30, 25), (30, 80), (0, 80)],
                      names=["base", "tip", "upper", "inner", "top", "back"])
    if radius:
        p = p.fillet((30, 25), radius=radius, name="root")
    m = mesh(p, size=5.0, element="T6", refine=[Refine(["upper", "inner"], size=1.0)])
    model = planar.Model(m, planar.Isotropic(205e3, 0.29), thickness=5.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("top"))
    model.add_load(planar.Traction("tip", ty=-8.0), case="down")
    r = planar.solve(model)["down"]
    with pytest.warns(planar.DiscretisationWarning) if radius is None else contextlib.nullcontext():
        hs = hot_spots(r, allowable=250.0)
    corner = min(hs.spots, key=lambda s: np.hypot(s.location[0] - 30.0, s.location[1] - 25.0))
    assert np.hypot(corner.location[0] - 30.0, corner.location[1] - 25.0) < (1.0 if radius is None else 8.0)
    if radius is None:
        assert corner.singular == "sharp-corner"
        text = render_html(stress_check_report(r, hot_spots=hs, picture=False, results=[]))
        assert "singular point (sharp-corner)" in text
    else:
        assert corner.singular == ""


def test_sweep_cli_refuses_a_parameter_or_output_given_twice(tmp_path, capsys):
    # "--param d=8 --param d=9" swept d = 9 alone, and two outputs of one name kept the last, both
    # without a word
    from planar.cli import main

    args = ["sweep", "planar.studies:example_strap", "--out", str(tmp_path), "--workers", "0"]
    assert main(args + ["-p", "width=20", "-p", "width=30"]) == 2
    assert "given twice" in capsys.readouterr().err
    assert main(args + ["-p", "width=20", "-o", "s=max:von_mises", "-o", "s=min:von_mises"]) == 2
    assert "two outputs are named 's'" in capsys.readouterr().err
    assert not (tmp_path / "sweep.csv").exists()


def test_report_of_a_case_that_moves_nothing_says_so():
    # a case whose only load was zero (or whose loads went to another case) gave a report of zeros, its
    # summary "peak von Mises stress 0 MPa" and no word of doubt
    r = _strap(**{"nothing": planar.Traction("right", tx=0.0)})["nothing"]
    text = render_html(stress_check_report(r, picture=False, results=[]))
    assert "moves nothing" in text
    assert "moves nothing" not in render_html(stress_check_report(_strap()["pull"], picture=False, results=[]))


def test_an_output_path_that_is_a_file_says_how_to_fix_it(tmp_path, monkeypatch):
    # a file where the output folder should be: the message names the clash and asks for a folder
    from planar.paths import OUT_ENV, output_dir
    f = tmp_path / "afile"
    f.write_text("keep")
    monkeypatch.setenv(OUT_ENV, str(f))
    with pytest.raises(planar.InputError, match="a file of that name .* is in the way; give the path of a folder"):
        output_dir()
    assert f.read_text() == "keep"


def test_many_warnings_of_one_kind_are_counted_not_listed():
    # the same concern at many holes: three listed in full, the rest counted in one row; the notice counts all
    from planar.post.report import warnings_section
    ws = [{"code": "coarse-peak", "message": f"peak at hole {i}"} for i in range(10)] + [{"code": "units", "message": "u"}]
    sec = warnings_section(ws)
    notice, table = sec.blocks[0], sec.blocks[1]
    assert "11 warning(s)" in " ".join(notice.items)
    assert [r[1] for r in table.rows[:3]] == ["peak at hole 0", "peak at hole 1", "peak at hole 2"]
    assert "7 more 'coarse-peak'" in table.rows[3][1] and table.rows[4] == ["units", "u"]


def test_a_held_part_heated_is_not_said_to_move_nothing(tmp_path):
    # every edge held, a uniform temperature change: no displacement (the inner node's thermal forces cancel), but
    # the restrained expansion stresses the part, sigma = -E alpha dT / (1 - nu) in plane stress (common practice)
    m = planar.rectangle_mesh(10.0, 10.0, 2, 2, "Q4")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3, alpha=20e-6), thickness=1.0, units="N, mm, MPa")
    for edge in ("left", "right", "top", "bottom"):
        model.add_support(planar.Fixed(edge))
    model.add_load(planar.TemperatureChange(10.0), case="hot")
    r = planar.solve(model)["hot"]
    assert np.abs(r.u).max() < 1e-15  # round-off only; the notice reads exact zeros, so make them so
    assert r.field("sigma_xx")[0] == pytest.approx(-70e3 * 20e-6 * 10.0 / 0.7, rel=1e-9)
    r.field("von_mises")  # the stresses are read from the solve, then the round-off motion is zeroed
    r.u[:] = 0.0
    html = render_html(stress_check_report(r, hot_spots=False) if "hot_spots" in stress_check_report.__code__.co_varnames
                       else stress_check_report(r))
    assert "moves nothing" not in html


def test_convergence_takes_a_section_of_the_callers_blocks():
    from planar.post.report import Paragraph, Section
    r = solved_strip(80.0, 20.0, 8, 2, "Q8", units="N, mm, MPa", case="pull",
                     loads={"pull": planar.Traction("right", tx=10.0)})
    html = render_html(stress_check_report(r, convergence=[Section("my study", [Paragraph("hand-made evidence 42")])]))
    assert "hand-made evidence 42" in html
