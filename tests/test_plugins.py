"""Plugins: discovery through entry points, broken and contested plugins, ``planar plugins``, the
docs' examples, and the built-in temperature-change load kind.

The example plugins in plugins/ must be installed (``pip install -e plugins/planar-incompatible-quad
-e plugins/planar-pin-bearing``); they are found through their entry points, never imported by path.
Throwaway distributions are made at test time as ``*.dist-info`` folders on a temporary sys.path entry.
"""
from __future__ import annotations

import ast
import importlib.metadata as md
import re
import sys
import textwrap
import tomllib
import warnings
from pathlib import Path

import numpy as np
import pytest

import planar
from planar.cli import main
from planar.core.errors import NameNotFoundError, PluginError
from planar.core.mesh import Mesh
from planar.core.registry import Entry, Registry, element_type, load_kind, registry, reload_plugins
from planar.verify.core_cases import patch_mesh

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = {  # (group, name): distribution
    ("planar.elements", "QM6"): "planar-incompatible-quad",
    ("planar.loads", "pin-bearing"): "planar-pin-bearing",
}


@pytest.fixture(scope="module", autouse=True)
def _examples_installed():
    missing = [d for d in EXAMPLES.values() if not _installed(d)]
    if missing:
        pytest.fail("the example plugins are not installed: pip install -e "
                    + " -e ".join(f"plugins/{d}" for d in missing), pytrace=False)


def _installed(dist: str) -> bool:
    try:
        md.distribution(dist)
    except md.PackageNotFoundError:
        return False
    return True


# ---------------------------------------------------------------------------- throwaway distributions
def make_distribution(root: Path, name: str, version: str, entry_points: dict[str, dict[str, str]],
                      modules: dict[str, str] | None = None) -> Path:
    """An installed-looking distribution in ``root``: NAME-VERSION.dist-info plus module files."""
    info = root / f"{name.replace('-', '_')}-{version}.dist-info"
    info.mkdir(parents=True)
    (info / "METADATA").write_text(f"Metadata-Version: 2.1\nName: {name}\nVersion: {version}\n")
    lines = []
    for group, eps in entry_points.items():
        lines.append(f"[{group}]")
        lines += [f"{k} = {v}" for k, v in eps.items()]
        lines.append("")
    (info / "entry_points.txt").write_text("\n".join(lines))
    for fname, src in (modules or {}).items():
        (root / fname).parent.mkdir(parents=True, exist_ok=True)
        (root / fname).write_text(textwrap.dedent(src))
    return root


@pytest.fixture
def plugin_dirs(monkeypatch, tmp_path):
    """Put directories on sys.path and rediscover; restore path, modules and registry afterwards."""
    added: list[Path] = []

    def add(path: Path) -> Registry:
        monkeypatch.syspath_prepend(str(path))
        added.append(Path(path))
        return reload_plugins()

    yield add
    monkeypatch.undo()
    for name, mod in list(sys.modules.items()):
        f = getattr(mod, "__file__", None) or ""
        if any(str(p) in f for p in added):
            del sys.modules[name]
    reload_plugins()


GOOD_ELEMENT = """
    from planar.plugin import Q4

    class {cls}(Q4):
        name = "{name}"
"""


# ---------------------------------------------------------------------------- discovery
@pytest.mark.parametrize("group, name", list(EXAMPLES))
def test_example_plugins_found_through_entry_points(group, name):
    dist = EXAMPLES[(group, name)]
    eps = [ep for ep in md.entry_points(group=group) if ep.name == name]
    assert len(eps) == 1 and eps[0].dist.name == dist
    entry = registry().entry("element" if group == "planar.elements" else "load", name)
    assert (entry.distribution, entry.version, entry.value) == (dist, eps[0].dist.version, eps[0].value)
    assert entry.obj is eps[0].load()
    # installed, not reached through a path entry to its source folder
    assert (ROOT / "plugins" / dist).resolve() not in {Path(p).resolve() for p in sys.path if p}


def test_builtins_register_through_the_same_entry_points():
    for group, kind in (("planar.elements", "element"), ("planar.loads", "load")):
        builtin = {ep.name for ep in md.entry_points(group=group) if ep.dist.name == "planar"}
        assert builtin <= set(registry().names(kind))
        assert all(registry().entry(kind, n).distribution == "planar" for n in builtin)
    assert {"T3", "T6", "Q4", "Q8", "Q9"} <= set(registry().names("element"))
    assert load_kind("temperature-change") is planar.TemperatureChange
    assert registry().problems == []


def test_broken_plugin_is_reported_and_skipped(plugin_dirs, tmp_path):
    make_distribution(
        tmp_path, "planar-broken-example", "0.0.1",
        {"planar.elements": {"Broken": "planar_broken_mod:Element", "Misnamed": "planar_fine_mod:Misnamed",
                             "Lacking": "planar_fine_mod:Lacking"},
         "planar.loads": {"not-a-class": "planar_fine_mod:not_a_class", "tidy-load": "planar_fine_mod:TidyLoad"}},
        {"planar_broken_mod.py": "raise RuntimeError('boom while importing')\n",
         "planar_fine_mod.py": GOOD_ELEMENT.format(cls="Misnamed", name="SomethingElse") + """
    class Lacking:
        name = "Lacking"
        cell = "quad"

    def not_a_class():
        pass

    from planar.core.loads import LoadKind

    class TidyLoad(LoadKind):
        name = "tidy-load"
        def nodal_forces(self, ctx):
            import numpy as np
            return np.zeros((ctx.n_nodes, 2))
"""})
    reg = plugin_dirs(tmp_path)
    problems = {p.name: p for p in reg.problems}
    assert set(problems) == {"Broken", "Misnamed", "Lacking", "not-a-class"}
    assert all(p.distribution == "planar-broken-example" and p.version == "0.0.1" for p in problems.values())
    assert "RuntimeError: boom while importing" in problems["Broken"].error
    assert "'SomethingElse'" in problems["Misnamed"].error
    assert "lacks" in problems["Lacking"].error and "n_nodes" in problems["Lacking"].error
    assert "must be a class" in problems["not-a-class"].error
    # the rest still loads: built-ins, the example plugins, and the good entry of the same distribution
    assert element_type("Q4").name == "Q4" and element_type("QM6").name == "QM6"
    assert load_kind("tidy-load").name == "tidy-load"
    with pytest.raises(NameNotFoundError, match=r"could not be loaded: RuntimeError: boom while importing"):
        element_type("Broken")
    mesh = planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4")
    model = planar.Model(mesh, planar.Isotropic(1.0, 0.3), elements={"Q4": "QM6"})
    model.add_support(planar.Fixed("left"))
    model.add_load("tidy-load", case="nothing")
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    assert planar.solve(model)["pull"].equilibrium_error() < 1e-12


def test_two_distributions_claiming_one_name(plugin_dirs, tmp_path):
    for d in ("a", "b"):
        make_distribution(tmp_path / d, f"planar-dup-{d}", "1.0", {"planar.elements": {"Q4dup": f"planar_dup_{d}:Dup"}},
                          {f"planar_dup_{d}.py": GOOD_ELEMENT.format(cls="Dup", name="Q4dup")})
        plugin_dirs(tmp_path / d)
    reg = registry()  # discovery finished: the conflict is recorded, not raised
    assert "Q4dup" not in reg.names("element") and "Q4" in reg.names("element")
    msg = str(next(p for p in reg.problems if p.name == "Q4dup"))
    assert "planar-dup-a" in msg and "planar-dup-b" in msg
    # raised when the name is asked for, naming both distributions and their targets
    with pytest.raises(PluginError) as exc:
        element_type("Q4dup")
    text = str(exc.value)
    assert "two distributions claim the element type name 'Q4dup'" in text
    assert "planar-dup-a 1.0 (planar_dup_a:Dup)" in text and "planar-dup-b 1.0 (planar_dup_b:Dup)" in text
    mesh = planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4")
    with pytest.raises(PluginError, match="planar-dup-a"):  # refused when the model names it
        model = planar.Model(mesh, planar.Isotropic(1.0, 0.3), elements={"Q4": "Q4dup"})
        model.add_support(planar.Fixed("left"))
        model.add_load(planar.Traction("right", tx=1.0), case="pull")
        planar.solve(model)


def test_a_plugin_claiming_a_builtin_name_is_a_conflict_too(plugin_dirs, tmp_path, capsys):
    make_distribution(tmp_path, "planar-impostor", "2.0", {"planar.loads": {"pressure": "planar_impostor:Pressure"}},
                      {"planar_impostor.py": """
    from planar.core.loads import Pressure as _P

    class Pressure(_P):
        name = "pressure"
"""})
    plugin_dirs(tmp_path)
    with pytest.raises(PluginError) as exc:
        load_kind("pressure")
    assert "planar 0.1.0 (planar.core.loads:Pressure)" in str(exc.value)
    assert "planar-impostor 2.0 (planar_impostor:Pressure)" in str(exc.value)
    assert load_kind("traction") is planar.Traction
    assert main(["plugins"]) == 1
    out = capsys.readouterr().out
    assert re.search(r"load 'pressure' from (planar, planar-impostor|planar-impostor, planar): two distributions", out)


def test_same_declaration_seen_twice_is_not_a_conflict():
    reg = Registry()
    e = Entry("element", "Q4", planar.core.elements.Q4, "planar", "0.1.0", "planar.core.elements:Q4")
    reg._add(e)
    reg._add(Entry(**{**e.__dict__}))
    assert reg.conflicts == {} and reg.get("element", "Q4") is planar.core.elements.Q4


# ---------------------------------------------------------------------------- command line
def test_planar_plugins_lists_names_kinds_distributions_versions(capsys):
    assert main(["plugins"]) == 0
    out = capsys.readouterr().out
    rows = {tuple(line.split()[:4]) for line in out.splitlines() if line.startswith("  ")}
    version = md.version("planar")
    for name in ("T3", "T6", "Q4", "Q8", "Q9"):
        assert (name, "element", "planar", version) in rows
    assert ("temperature-change", "load", "planar", version) in rows
    assert ("QM6", "element", "planar-incompatible-quad", md.version("planar-incompatible-quad")) in rows
    assert "Former names (they work for one release, with a DeprecationWarning): Q4i -> QM6" in out
    assert ("pin-bearing", "load", "planar-pin-bearing", md.version("planar-pin-bearing")) in rows
    assert "No problems" in out


def test_planar_plugins_shows_broken_plugins(plugin_dirs, tmp_path, capsys):
    make_distribution(tmp_path, "planar-broken-example", "0.0.1",
                      {"planar.loads": {"crash": "planar_crash_mod:Crash"}},
                      {"planar_crash_mod.py": "import a_module_that_does_not_exist_anywhere\n"})
    plugin_dirs(tmp_path)
    assert main(["plugins"]) == 1
    out = capsys.readouterr().out
    assert re.search(r"load 'crash' from planar-broken-example 0\.0\.1: ModuleNotFoundError: .*"
                     r"a_module_that_does_not_exist_anywhere", out)
    assert ("QM6" in out) and ("pin-bearing" in out)  # the rest is still listed


def test_planar_verify_runs_for_a_plugin_element(capsys):
    assert main(["verify", "--element", "QM6", "--case", "patch-test"]) == 0
    out = capsys.readouterr().out
    assert "patch-test" in out and "QM6" in out and "4 of 4 checks passed" in out
    with pytest.warns(DeprecationWarning, match="'Q4i' is now called 'QM6'"):  # the former name, one release
        assert main(["verify", "--element", "Q4i", "--case", "patch-test"]) == 0
    assert "4 of 4 checks passed" in capsys.readouterr().out
    assert main(["verify", "--element", "Q4x"]) == 2
    err = capsys.readouterr().err
    assert "unknown element type 'Q4x'" in err and "'QM6'" in err


# ---------------------------------------------------------------------------- the smaller contract
def _element(**attrs):
    """An element class made from attributes (the shape functions of Q4 unless given)."""
    from planar.plugin import ElementType, Q4

    base = {"shape": Q4.__dict__["shape"], "shape_derivatives": Q4.__dict__["shape_derivatives"]}
    return type("Made", (ElementType,), {**base, **attrs})


SPEC = dict(name="Made", cell="quad", degree=1, meshio_type="quad", ref_nodes=planar.core.elements.Q4.ref_nodes,
            edges=np.array([[0, 1], [1, 2], [2, 3], [3, 0]]))


@pytest.mark.parametrize("name, order, degree", [("T3", [0, 2, 1], 1), ("T6", [0, 2, 1, 5, 4, 3], 2),
                                                 ("Q4", [0, 3, 2, 1], 3), ("Q8", [0, 3, 2, 1, 7, 6, 5, 4], 5),
                                                 ("Q9", [0, 3, 2, 1, 7, 6, 5, 4, 8], 5)])
def test_builtins_declare_only_their_layout_the_rest_is_derived(name, order, degree):
    # the values the built-ins used to declare (VTK/gmsh node order), now derived from the layout;
    # the full rules are the common-practice ones (T3 1 point, T6 3, Q4 2 x 2, Q8 and Q9 3 x 3)
    from planar.plugin import jacobian

    import inspect

    et = element_type(name)
    declared = {t.id for node in ast.parse(inspect.getsource(et)).body[0].body if isinstance(node, ast.Assign)
                for t in node.targets if isinstance(t, ast.Name)}
    assert declared == {"name", "cell", "degree", "ref_nodes", "edges", "meshio_type"} | (declared - {
        "n_nodes", "reversed_order", "rule_degree", "default_order"}) and "reversed_order" not in declared
    assert not {"n_nodes", "reversed_order", "rule_degree", "default_order"} & declared
    assert et.n_nodes == len(et.ref_nodes) and et.reversed_order.tolist() == order and et.rule_degree == degree
    assert et.default_rule().n_points == {"T3": 1, "T6": 3, "Q4": 4, "Q8": 9, "Q9": 9}[name]
    # the derived order really turns a clockwise element round: det J changes sign at every point,
    # and the reversed element is the same element (its nodes in the same places)
    flipped = et.ref_nodes[:, ::-1][None]
    det, _ = jacobian(et, flipped, et.default_rule().points)
    det_r, _ = jacobian(et, flipped[:, et.reversed_order], et.default_rule().points)
    assert np.all(det < 0) and np.all(det_r > 0)
    assert sorted(map(tuple, flipped[0][et.reversed_order])) == sorted(map(tuple, flipped[0]))


def test_explicit_values_are_accepted_and_checked():
    made = _element(**SPEC, n_nodes=4, reversed_order=np.array([0, 3, 2, 1]), rule_degree=5)
    assert made.default_rule().n_points == 9  # 3 x 3: exact to degree 5
    from planar.core.registry import _validate_element

    _validate_element(made, "Made")
    with pytest.raises(PluginError, match="permutation"):
        _validate_element(_element(**SPEC, reversed_order=np.array([0, 0, 2, 1])), "Made")
    with pytest.raises(PluginError, match=r"expected \(5, 2\)"):
        _validate_element(_element(**SPEC, n_nodes=5), "Made")


def test_an_unsymmetric_layout_must_declare_its_reversed_order():
    # nodes not symmetric about the diagonal through node 0: the mirror cannot be read from them
    odd = {**SPEC, "ref_nodes": np.array([[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-0.5, 1.0]])}
    made = _element(**odd)
    assert made.reversed_order is None
    from planar.core.registry import _validate_element

    with pytest.raises(PluginError, match="reversed_order cannot be derived.*declare reversed_order"):
        _validate_element(made, "Made")


@pytest.mark.parametrize("cell, order, points, degree", [("quad", 2, 4, 3), ("quad", 3, 9, 5), ("triangle", 2, 3, 2)])
def test_default_order_still_works_with_a_warning(cell, order, points, degree):
    # the former word: points per side on a quad, degree on a triangle; same rule as before
    spec = {**SPEC, "cell": cell} if cell == "quad" else dict(
        name="Made", cell="triangle", degree=1, meshio_type="triangle", ref_nodes=planar.core.elements.T3.ref_nodes,
        edges=np.array([[0, 1], [1, 2], [2, 0]]), shape=planar.core.elements.T3.__dict__["shape"],
        shape_derivatives=planar.core.elements.T3.__dict__["shape_derivatives"])
    with pytest.warns(DeprecationWarning, match="default_order is deprecated"):
        made = _element(**spec, default_order=order)
    assert made.rule_degree == degree and made.default_rule().n_points == points
    with pytest.warns(DeprecationWarning, match="read rule_degree"):
        assert _element(**spec, rule_degree=degree).default_order == order  # read: the former meaning


def test_load_kinds_are_named_by_name_and_kind_still_works_with_a_warning():
    from planar.plugin import LoadKind

    assert planar.Traction.name == "traction" and load_kind("pin-bearing").name == "pin-bearing"
    with pytest.warns(DeprecationWarning, match="`kind` is now `name`"):
        class Old(LoadKind):
            kind = "old-style"
    assert Old.name == "old-style" and Old().describe() == "old-style"
    with pytest.warns(DeprecationWarning, match="`kind` is now `name`"):
        assert planar.Pressure.kind == "pressure"
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # the new word warns about nothing

        class New(LoadKind):
            name = "new-style"
        assert New.name == "new-style"


def test_a_misspelt_names_used_word_is_refused_listing_the_valid_words():
    from planar.plugin import NAME_WORDS, LoadKind

    class Sloppy(LoadKind):
        name = "sloppy"

        def names_used(self):
            return [("egde", "no-such-edge")]  # misspelt: the edge name would go unchecked

        def nodal_forces(self, ctx):
            return np.zeros((ctx.n_nodes, 2))

    model = planar.Model(planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4"), planar.Isotropic(1.0, 0.3))
    with pytest.raises(PluginError) as exc:
        model.add_load(Sloppy())
    assert "'egde'" in str(exc.value) and all(repr(w) in str(exc.value) for w in NAME_WORDS)
    assert set(NAME_WORDS) == {"edge", "point", "node set", "region"}


def test_the_context_gives_the_material_of_a_region():
    from planar.core.assembly import Assembly

    mesh = planar.rectangle_mesh(2.0, 1.0, 2, 1, "Q4")
    steel = planar.Isotropic(210e3, 0.3, density=7.85e-9)
    ctx = Assembly(planar.Model(mesh, steel)).context
    region = mesh.region_names()[0]
    assert ctx.material_of(region) is steel
    with pytest.raises(NameNotFoundError, match="no-such-region"):
        ctx.material_of("no-such-region")


def test_plugins_import_only_planar_plugin():
    # the example plugins and the docs' plugin files reach planar through its plugin face only
    # (tests and scripts may use the rest of the public API)
    sources = {str(p): p.read_text() for p in (ROOT / "plugins").glob("*/planar_*/*.py")}
    text = (ROOT / "docs" / "plugins.md").read_text()
    for i, (lang, body) in enumerate(re.findall(r"```(python)\n(# file: .*?)```", text, flags=re.S)):
        sources[f"docs/plugins.md file block {i}"] = body
    assert len(sources) >= 5
    for where, src in sources.items():
        for node in ast.walk(ast.parse(src)):
            mods = [a.name for a in node.names] if isinstance(node, ast.Import) else \
                [node.module] if isinstance(node, ast.ImportFrom) and node.module else []
            for m in mods:
                assert not m.startswith("planar") or m == "planar.plugin", f"{where} imports {m}"
    import planar.plugin as face

    assert all(hasattr(face, n) for n in face.__all__)


# ---------------------------------------------------------------------------- the docs' examples
def _doc_blocks():
    text = (ROOT / "docs" / "plugins.md").read_text()
    return re.findall(r"```(python|toml)\n(.*?)```", text, flags=re.S)


def test_docs_examples_run_as_installed_plugins(plugin_dirs, tmp_path):
    # blocks starting "# file: PATH" are the plugins' files (appended in order); the other python
    # blocks run in order, in one namespace, once the plugins are installed (their entry points
    # come from their pyproject.toml, as pip would write them)
    files: dict[str, str] = {}
    scripts = []
    for lang, body in _doc_blocks():
        first, _, rest = body.partition("\n")
        m = re.match(r"# file: (\S+)", first)
        if m:
            files[m.group(1)] = files.get(m.group(1), "") + rest + "\n"
        elif lang == "python":
            scripts.append(body)
    assert len(scripts) >= 5 and any(p.endswith("pyproject.toml") for p in files)
    for path, src in files.items():
        (tmp_path / "src" / path).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / "src" / path).write_text(src)
    for pyproject in sorted((tmp_path / "src").glob("*/pyproject.toml")):
        meta = tomllib.loads(pyproject.read_text())["project"]
        modules = {f"{m}.py": (pyproject.parent / f"{m}.py").read_text()
                   for m in tomllib.loads(pyproject.read_text())["tool"]["setuptools"]["py-modules"]}
        make_distribution(tmp_path / "site" / meta["name"], meta["name"], meta["version"],
                          meta["entry-points"], modules)
        plugin_dirs(tmp_path / "site" / meta["name"])
    assert registry().problems == []
    assert {"CST", "CST-closed-form"} <= set(registry().names("element"))
    assert {"hydrostatic-pressure", "swelling", "self-weight"} <= set(registry().names("load"))
    assert registry().entry("element", "CST").distribution == "planar-cst"
    namespace: dict = {}
    for i, src in enumerate(scripts):
        exec(compile(src, f"docs/plugins.md python block {i}", "exec"), namespace)


# ---------------------------------------------------------------------------- temperature change
E, NU, ALPHA, DT = 70e3, 0.33, 23e-6, 120.0
LAYOUTS = ["T3", "T6", "Q4", "Q8", "Q9"]


def _patch(layout):
    """MacNeal-Harder distorted patch with the corner points named for point supports."""
    m = patch_mesh(layout)
    return Mesh(m.nodes, m.cells, node_sets={**m.node_sets, "origin": [0], "corner_x": [1]})


def _thermal(layout, analysis, supports, element=None, dT=DT):
    mesh = _patch(layout)
    model = planar.Model(mesh, planar.Isotropic(E, NU, alpha=ALPHA), 2.0, analysis=analysis,
                         elements={layout: element} if element else None)
    for s in supports:
        model.add_support(s)
    model.add_load("temperature-change", case="hot", dT=dT)  # by its registered name
    r = planar.solve(model)["hot"]
    stress = np.concatenate([g.stress.reshape(-1, 3) for g in r.gauss])
    szz = np.concatenate([g.szz.ravel() for g in r.gauss])
    return mesh, r, stress, szz


FREE = [planar.Fixed("origin"), planar.Roller("corner_x", fixed="y")]
SCALE = E * ALPHA * DT


@pytest.mark.parametrize("layout, element", [(l, None) for l in LAYOUTS] + [("Q4", "QM6")])
def test_free_expansion_is_stress_free(layout, element):
    # a free plate heated uniformly expands by alpha dT in every direction without stress
    # (common practice); in plane strain the held thickness adds sigma_zz = -E alpha dT and the
    # in-plane strain becomes (1 + nu) alpha dT (S. P. Timoshenko and J. N. Goodier, Theory of
    # Elasticity, 3rd ed., 1970, art. 150 for plane strain)
    mesh, r, s, szz = _thermal(layout, "plane stress", FREE, element)
    assert np.max(np.abs(s)) < 1e-9 * SCALE and np.max(np.abs(szz)) == 0.0
    assert np.allclose(r.u, ALPHA * DT * mesh.nodes, rtol=0, atol=1e-12 * ALPHA * DT)
    mesh, r, s, szz = _thermal(layout, "plane strain", FREE, element)
    assert np.max(np.abs(s)) < 1e-9 * SCALE
    assert np.allclose(szz, -SCALE, rtol=1e-9)
    assert np.allclose(r.u, (1 + NU) * ALPHA * DT * mesh.nodes, rtol=0, atol=1e-12 * ALPHA * DT)


@pytest.mark.parametrize("layout, element", [(l, None) for l in LAYOUTS] + [("Q4", "QM6")])
def test_held_plate(layout, element):
    # held on all edges (common practice): plane stress sigma_xx = sigma_yy = -E alpha dT / (1 - nu),
    # sigma_zz = 0; plane strain sigma_xx = sigma_yy = sigma_zz = -E alpha dT / (1 - 2 nu); tau_xy = 0
    held = [planar.Fixed("boundary")]
    _, r, s, szz = _thermal(layout, "plane stress", held, element)
    assert np.allclose(s[:, :2], -SCALE / (1 - NU), rtol=1e-9) and np.max(np.abs(s[:, 2])) < 1e-9 * SCALE
    assert np.max(np.abs(szz)) == 0.0
    _, r, s, szz = _thermal(layout, "plane strain", held, element)
    assert np.allclose(s[:, :2], -SCALE / (1 - 2 * NU), rtol=1e-9) and np.max(np.abs(s[:, 2])) < 1e-9 * SCALE
    assert np.allclose(szz, -SCALE / (1 - 2 * NU), rtol=1e-9)
    # the nodal fields show the same
    assert np.allclose(r.field("sigma_zz")[r.mesh.used_nodes()], -SCALE / (1 - 2 * NU), rtol=1e-9)


def test_strip_held_at_its_ends():
    # a strip held at both ends in x only, free across: sigma_xx = -E alpha dT, sigma_yy = 0 in plane
    # stress (common practice)
    mesh = planar.rectangle_mesh(10.0, 2.0, 10, 2, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E, NU, alpha=ALPHA), 1.0)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("right", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.TemperatureChange(DT), case="hot")
    r = planar.solve(model)["hot"]
    s = np.concatenate([g.stress.reshape(-1, 3) for g in r.gauss])
    assert np.allclose(s[:, 0], -SCALE, rtol=1e-9)
    assert np.max(np.abs(s[:, 1:])) < 1e-9 * SCALE
    assert np.allclose(r.reactions[mesh.nodes_of("right"), 0].sum(), -SCALE * 2.0, rtol=1e-9)


@pytest.mark.parametrize("layout, distorted", [("T6", True), ("Q9", True), ("Q8", False)])
def test_linear_temperature_in_a_free_plate_is_stress_free(layout, distorted):
    # a temperature varying linearly over a free plate gives no stress (S. P. Timoshenko and
    # J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, art. 149); the displacement is quadratic,
    # which T6 and Q9 represent exactly on the distorted patch, Q8 only on parallelograms (serendipity
    # elements lose quadratic completeness when distorted: N.-S. Lee and K.-J. Bathe, Int. J. Numer.
    # Methods Eng. 36, 1993, from memory)
    T = lambda x, y: DT * (1 + 3 * x - 5 * y)  # noqa: E731
    if distorted:
        _, r, s, _ = _thermal(layout, "plane stress", FREE, dT=T)
    else:
        mesh = planar.rectangle_mesh(0.24, 0.12, 3, 2, layout)
        model = planar.Model(mesh, planar.Isotropic(E, NU, alpha=ALPHA), 2.0)
        model.add_support(planar.Fixed("corner_00"))
        model.add_support(planar.Roller("corner_10", fixed="y"))
        model.add_load("temperature-change", case="hot", dT=T)
        r = planar.solve(model)["hot"]
        s = np.concatenate([g.stress.reshape(-1, 3) for g in r.gauss])
    assert np.max(np.abs(s)) < 1e-8 * SCALE
