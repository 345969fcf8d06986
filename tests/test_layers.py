"""The layers point only down: read from the source, never by running it.

Rules (docs/architecture.md, common practice for a layered design): core imports nothing else of
planar; geometry imports core only; post imports core and geometry; the top (cli, verify, studies,
demo, plugin, paths) may import anything below; no library module imports the command line; and no
circle of imports anywhere, lazy (function-level) imports included. The test builds the import graph
with ``ast`` from every module under ``planar/`` and checks it, and checks itself on a small made-up
tree that breaks each rule once.
"""
from __future__ import annotations

import ast
from pathlib import Path

import pytest
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import connected_components

ROOT = Path(__file__).resolve().parents[1] / "planar"
#: rank of each layer; an import may go to the same or a lower rank only
RANK = {"core": 1, "geometry": 2, "post": 3}
TOP = 4


def module_name(path: Path, root: Path) -> str:
    rel = path.relative_to(root.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def import_graph(root: Path) -> dict[str, set[str]]:
    """Module -> the planar modules it imports anywhere in its source (lazy imports included)."""
    files = {module_name(p, root): p for p in root.rglob("*.py")}
    graph: dict[str, set[str]] = {m: set() for m in files}
    for mod, path in files.items():
        is_pkg = path.name == "__init__.py"
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            targets: list[str] = []
            if isinstance(node, ast.Import):
                targets = [a.name for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                if node.level:
                    base = mod.split(".") if is_pkg else mod.split(".")[:-1]
                    base = base[: len(base) - (node.level - 1)]
                    stem = ".".join(base + ([node.module] if node.module else []))
                else:
                    stem = node.module or ""
                targets = [stem] + [f"{stem}.{a.name}" for a in node.names]
            for t in targets:
                if not t.startswith(root.name):
                    continue
                while t and t not in files:  # the longest module the name points into
                    t = t.rpartition(".")[0]
                if t and t != mod:
                    graph[mod].add(t)
    return graph


def rank(mod: str) -> int:
    parts = mod.split(".")
    if len(parts) == 1 or parts[1] == "__main__":
        return 0  # the package face and ``python -m planar`` may import anything
    return RANK.get(parts[1], TOP)


def shortfalls(graph: dict[str, set[str]]) -> list[str]:
    out = []
    for a, targets in graph.items():
        for b in targets:
            ra, rb = rank(a), rank(b)
            if ra == 0 or rb == 0 and b.count(".") == 0:
                continue  # the face imports anything; importing the bare package is not a layer jump
            if rb > ra:
                out.append(f"upward import {a} -> {b}")
            if b.split(".")[1:2] == ["cli"] and a.split(".")[1:2] != ["cli"]:
                out.append(f"library module {a} imports the command line {b}")
    # circles: strongly connected components of the graph without the face
    names = sorted(m for m in graph if rank(m) != 0)
    index = {m: i for i, m in enumerate(names)}
    rows = [index[a] for a in names for b in graph[a] if b in index]
    cols = [index[b] for a in names for b in graph[a] if b in index]
    adj = csr_matrix(([1] * len(rows), (rows, cols)), shape=(len(names), len(names)))
    n, label = connected_components(adj, directed=True, connection="strong")
    for c in range(n):
        members = [names[i] for i in range(len(names)) if label[i] == c]
        if len(members) > 1:
            out.append("circle: " + " <-> ".join(members))
    return out


@pytest.mark.slow
def test_planar_layers_point_only_down():
    problems = shortfalls(import_graph(ROOT))
    assert not problems, "\n".join(problems)


@pytest.mark.slow
def test_no_core_module_imports_post_or_the_command_line():
    graph = import_graph(ROOT)
    bad = [f"{a} -> {b}" for a, bs in graph.items() if a.startswith("planar.core")
           for b in bs if b.startswith(("planar.post", "planar.cli", "planar.geometry", "planar.studies"))]
    assert not bad, bad


def _tree(tmp_path: Path, files: dict[str, str]) -> Path:
    root = tmp_path / "planar"
    for rel, text in files.items():
        p = root / rel
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(text)
    return root


@pytest.mark.parametrize("files, expect", [
    ({"__init__.py": "", "core/__init__.py": "", "core/a.py": "def f():\n    from ..post import b\n",
      "post/__init__.py": "", "post/b.py": ""}, "upward import planar.core.a -> planar.post.b"),
    ({"__init__.py": "", "core/__init__.py": "", "core/a.py": "from . import b\n", "core/b.py": "from .a import x\n"},
     "circle: planar.core.a <-> planar.core.b"),
    ({"__init__.py": "", "post/__init__.py": "", "post/r.py": "import planar.cli.show\n",
      "cli/__init__.py": "", "cli/show.py": ""}, "library module planar.post.r imports the command line"),
    ({"__init__.py": "", "geometry/__init__.py": "", "geometry/g.py": "from planar.post.vtk import w\n",
      "post/__init__.py": "", "post/vtk.py": ""}, "upward import planar.geometry.g -> planar.post.vtk"),
])
def test_the_check_finds_each_kind_of_shortfall(tmp_path, files, expect):
    problems = shortfalls(import_graph(_tree(tmp_path, files)))
    assert any(p.startswith(expect) for p in problems), problems


def test_a_clean_made_up_tree_passes(tmp_path):
    files = {"__init__.py": "from .core import a\n", "core/__init__.py": "", "core/a.py": "",
             "geometry/__init__.py": "", "geometry/g.py": "from ..core import a\n",
             "post/__init__.py": "", "post/p.py": "from ..geometry import g\nfrom ..core.a import x\n",
             "cli/__init__.py": "", "cli/c.py": "from ..post import p\n"}
    assert shortfalls(import_graph(_tree(tmp_path, files))) == []
