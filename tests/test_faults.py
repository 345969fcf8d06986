"""Faults: a writer killed mid-write, failing disks and folders, too little memory, and many runs in
one process.

- Output is written atomically: a process killed with SIGKILL while it writes a big .vtu over a good
  one leaves either the old file or a complete new one, never a half-written file; its hidden
  temporary file is removed by the next write.
- A write that fails (disk full, a folder that is a file, a target that is a folder) keeps the old
  file, leaves no temporary file and says which file and why (an OutputError).
- A model too large for the memory at hand is refused before anything big is allocated, with an
  estimate of what it would need.
- Hundreds of models solved in one process (some meshed with gmsh, some failing inside gmsh) do not
  grow the resident memory and leave gmsh as they found it.
"""
from __future__ import annotations

import errno
import gc
import os
import signal
import subprocess
import sys
import time
import tracemalloc
import warnings
from pathlib import Path

import numpy as np
import pytest

import planar
from _models import solved_strip
from planar.core.errors import GeometryError, OutputError, PlanarError, ResourceError

WRITER = r"""
import sys
import numpy as np
import planar

path, generation = sys.argv[1], int(sys.argv[2])
mesh = planar.rectangle_mesh(120.0, 40.0, 120, 40, "Q8")    # about 15,000 nodes, a 3.5 MB .vtu
model = planar.Model(mesh, planar.Isotropic(70e3, 0.3), 1.0)
model.add_support(planar.Fixed("left"))
model.add_load(planar.Traction("right", tx=10.0), case="c")
result = planar.solve(model)["c"]
result.nodal_stress()
print("ready", flush=True)
k = 0
while True:
    k += 1
    planar.write_vtu(path, result, point_fields={"generation": np.full(mesh.n_nodes, 1000.0 * generation + k)})
"""


def _good_result(nx=12, ny=4):
    return solved_strip(120.0, 40.0, nx, ny, "Q8", material=planar.Isotropic(70e3, 0.3), thickness=1.0,
                        case="c", loads={"c": planar.Traction("right", tx=10.0)})


def _generation(path: Path) -> tuple[float, int]:
    import meshio

    try:
        m = meshio.read(path)
    except (Exception, SystemExit) as exc:  # meshio exits on some broken files
        raise AssertionError(f"{path} is not a complete .vtu file: {type(exc).__name__}: {exc}") from None
    g = np.asarray(m.point_data["generation"])
    assert np.all(g == g[0]), "a file with mixed contents"
    return float(g[0]), m.points.shape[0]


def _kill_writers(tmp_path: Path, kills: int, seed: int) -> dict:
    import meshio  # noqa: F401 - loaded before the timing starts

    target = tmp_path / "result.vtu"
    script = tmp_path / "writer.py"
    script.write_text(WRITER)
    # the previous good result: a small file of generation -1
    r = _good_result()
    planar.write_vtu(target, r, point_fields={"generation": np.full(r.mesh.n_nodes, -1.0)})
    rng = np.random.default_rng(seed)
    seen_generations, left_behind = [], 0
    for gen in range(1, kills + 1):
        p = subprocess.Popen([sys.executable, str(script), str(target), str(gen)], stdout=subprocess.PIPE,
                             stderr=subprocess.PIPE, text=True)
        try:
            line = p.stdout.readline()
            assert line.strip() == "ready", p.stderr.read()
            time.sleep(float(rng.uniform(0.0, 0.35)))
            os.kill(p.pid, signal.SIGKILL)
        finally:
            p.wait()  # reap it, so that its pid is gone
            p.stdout.close()
            p.stderr.close()
        # the target is the previous file or a complete new one, readable by meshio
        g, n = _generation(target)
        previous = seen_generations[-1] if seen_generations else -1.0
        assert g == previous or (1000 * gen < g < 1000 * (gen + 1) and n > 10_000), (g, n, previous)
        seen_generations.append(g)
        others = [f.name for f in tmp_path.iterdir() if f.name not in ("result.vtu", "writer.py")]
        assert all(name.startswith(".") for name in others), f"visible temporary files: {others}"
        left_behind += len(others)
    # the next write removes what the killed writers left
    planar.write_vtu(target, r, point_fields={"generation": np.full(r.mesh.n_nodes, -2.0)})
    rest = sorted(f.name for f in tmp_path.iterdir() if f.name not in ("result.vtu", "writer.py"))
    assert rest == [], f"stale temporary files were not cleaned: {rest}"
    assert _generation(target)[0] == -2.0
    return {"generations": seen_generations, "left_behind": left_behind}


@pytest.mark.slow
def test_killed_writer_leaves_old_or_complete_file(tmp_path):
    """SIGKILL at random moments while a process rewrites a big .vtu over a good one (3 times)."""
    _kill_writers(tmp_path, kills=3, seed=1)


@pytest.mark.slow
def test_killed_writer_many_times(tmp_path):
    out = _kill_writers(tmp_path, kills=12, seed=2)
    assert out["left_behind"] >= 1, "no kill landed inside a write; the test did not test the interesting case"


# ============================================================================ failing writes
@pytest.fixture
def old_file(tmp_path):
    r = _good_result()
    path = tmp_path / "out.vtu"
    planar.write_vtu(path, r)
    return r, path, path.read_bytes()


def _only(path: Path) -> list[str]:
    return sorted(f.name for f in path.parent.iterdir())


def test_disk_full_keeps_the_old_file(old_file, monkeypatch):
    from planar.post import vtk

    r, path, before = old_file

    def full_disk(filename, *a, **k):
        Path(filename).write_bytes(b"<?xml half a file")
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(vtk, "_write_raw", full_disk)
    with pytest.raises(OutputError, match="No space left on device; free some disk space") as e:
        planar.write_vtu(path, r)
    assert str(path) in str(e.value)
    assert path.read_bytes() == before and _only(path) == ["out.vtu"]


def test_interrupt_keeps_the_old_file(old_file, monkeypatch):
    from planar.post import vtk

    r, path, before = old_file

    def interrupted(filename, *a, **k):
        Path(filename).write_bytes(b"<?xml half a file")
        raise KeyboardInterrupt

    monkeypatch.setattr(vtk, "_write_raw", interrupted)
    with pytest.raises(KeyboardInterrupt):
        planar.write_vtu(path, r)
    assert path.read_bytes() == before and _only(path) == ["out.vtu"]


def test_unwritable_targets_are_named(tmp_path):
    from planar.post.files import atomic_write_text

    r = _good_result()
    (tmp_path / "a_file").write_text("x")
    with pytest.raises(OutputError, match="a part of the folder path is a file"):
        planar.write_vtu(tmp_path / "a_file" / "out.vtu", r)
    (tmp_path / "folder.vtu").mkdir()
    with pytest.raises(OutputError, match="folder.vtu"):
        planar.write_vtu(tmp_path / "folder.vtu", r)
    with pytest.raises(OutputError, match="a part of the folder path is a file"):
        atomic_write_text(tmp_path / "a_file" / "x.json", "{}")
    assert sorted(f.name for f in tmp_path.iterdir()) == ["a_file", "folder.vtu"]
    if os.geteuid() != 0:  # root may write anywhere
        ro = tmp_path / "read_only"
        ro.mkdir()
        ro.chmod(0o500)
        try:
            with pytest.raises(OutputError, match="Permission denied"):
                planar.write_vtu(ro / "out.vtu", r)
        finally:
            ro.chmod(0o700)


def test_stale_temporary_files_of_dead_writers_are_removed(tmp_path):
    r = _good_result()
    done = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True, text=True)
    dead = int(done.stdout)
    stale = tmp_path / f".out.vtu.{dead}.abc123.part.vtu"
    live = tmp_path / ".out.vtu.1.abc123.part.vtu"  # pid 1 runs: its file may be in use
    other = tmp_path / ".notes.txt"
    for f in (stale, live, other):
        f.write_text("x")
    planar.write_vtu(tmp_path / "out.vtu", r)
    assert sorted(f.name for f in tmp_path.iterdir()) == sorted([".notes.txt", live.name, "out.vtu"])


# ============================================================================ memory
def test_too_large_is_refused_before_anything_big_is_allocated(monkeypatch):
    import planar.core.solvers as solvers
    from planar.core.assembly import Assembly

    mesh = planar.rectangle_mesh(100.0, 100.0, 150, 150, "Q4")  # 45,602 unknowns
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.3), 1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0))
    monkeypatch.setattr(solvers, "available_memory", lambda: 32 * 2**20)  # 32 MiB free

    def assembled(*a, **k):
        raise AssertionError("the stiffness matrix was assembled")

    monkeypatch.setattr(Assembly, "system", assembled)
    gc.collect()
    tracemalloc.start()
    try:
        with pytest.raises(ResourceError, match=r"need about [\d.]+ GiB.*0\.0 GiB is available") as e:
            planar.solve(model)
        peak = tracemalloc.get_traced_memory()[1]
    finally:
        tracemalloc.stop()
    need = min(solvers.estimate_memory(45_602, m) for m in ("amg", "cholmod"))
    assert peak < 0.25 * need, f"{peak / 2**20:.1f} MiB allocated before refusing a {need / 2**20:.0f} MiB job"
    assert "coarsen the mesh" in str(e.value) and "symmetry model" in str(e.value)
    for name in ("cholmod", "superlu"):
        with pytest.raises(ResourceError, match=f"the '{name}' solver need"):
            planar.solve(model, solver=name)


def test_out_of_memory_during_the_factorization_is_a_resource_error(monkeypatch):
    import planar.core.static as static

    def no_memory(*a, **k):
        raise MemoryError

    monkeypatch.setattr(static, "factorize", no_memory)
    with pytest.raises(ResourceError, match="ran out of memory while factorizing"):
        _good_result()


def test_command_line_errors_in_two_lines(monkeypatch, capsys):
    from planar import cli

    def boom(args):
        raise {"memory": MemoryError, "planar": GeometryError("the hole crosses the edge"),
               "interrupt": KeyboardInterrupt}[args.what]

    boom.arguments = lambda p: p.add_argument("what")
    cli._load_commands()
    monkeypatch.setitem(cli.COMMANDS, "boom", ("raise an error (test)", lambda p: boom.arguments(p), boom))
    monkeypatch.setattr(cli, "_load_commands", lambda: None)
    assert cli.main(["boom", "memory"]) == 2
    assert "ran out of memory" in capsys.readouterr().err
    assert cli.main(["boom", "planar"]) == 2
    assert capsys.readouterr().err.strip() == "planar boom: error: the hole crosses the edge"
    assert cli.main(["boom", "interrupt"]) == 130


# ============================================================================ many runs in one process
def _rss() -> int:
    gc.collect()
    with open("/proc/self/statm") as fh:
        return int(fh.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")


def _many_runs(n: int, tmp_path: Path) -> dict[int, float]:
    import gmsh

    from planar.geometry import Circle, Plate, Rectangle
    from planar.geometry import mesh as gmesh

    marks = {}
    for i in range(1, n + 1):
        if i % 5 == 0:  # one in five meshed by gmsh
            m = gmesh(Plate.rectangle(60.0, 30.0).cut(Circle((30.0, 15.0), 6.0)), 6.0, order=2)
        else:
            m = planar.rectangle_mesh(40.0, 10.0, 20, 5, ("T3", "T6", "Q4", "Q8", "Q9")[i % 5])
        model = planar.Model(m, planar.Isotropic(70e3, 0.3), 2.0)
        model.add_support(planar.Fixed("left"))
        model.add_load(planar.Traction("right", tx=5.0), case="c")
        r = planar.solve(model)["c"]
        r.field("von_mises")
        r.field("von_mises", method="spr")
        planar.write_vtu(tmp_path / "run.vtu", r)
        if i % 10 == 0:  # and one in ten fails inside gmsh
            with pytest.raises(GeometryError):
                gmesh(Plate.rectangle(60.0, 30.0).difference(Rectangle(10.0, 100.0, corner=(25.0, -30.0))), 6.0)
            assert gmsh.isInitialized() == 0
        del r, model, m
        if i in (n // 2, n):
            marks[i] = _rss() / 2**20
    assert gmsh.isInitialized() == 0, "gmsh was left initialized"
    return marks


@pytest.mark.slow
def test_repeated_runs_do_not_leak(tmp_path):
    """200 solves (40 meshed by gmsh, 20 failing inside gmsh): the resident memory levels off
    (less than 4 MiB more between run 100 and run 200, after garbage collection)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", planar.core.errors.PlanarWarning)
        marks = _many_runs(200, tmp_path)
    growth = marks[200] - marks[100]
    assert growth < 4.0, f"resident memory grew by {growth:.1f} MiB from run 100 to run 200: {marks}"


def test_gmsh_started_by_the_user_is_left_as_it_was():
    import gmsh

    from planar.geometry import Circle, Plate, Rectangle
    from planar.geometry import mesh as gmesh

    gmsh.initialize(readConfigFiles=False)
    try:
        gmsh.model.add("mine")
        gmsh.model.occ.addDisk(0, 0, 0, 1, 1)
        gmsh.model.occ.synchronize()
        keys = ["Mesh.Algorithm", "General.Terminal", "Mesh.MeshSizeMax", "Mesh.ElementOrder", "Mesh.RecombineAll"]
        for k, v in zip(keys, (5, 1, 7.5, 1, 0)):
            gmsh.option.setNumber(k, v)
        before = {k: gmsh.option.getNumber(k) for k in keys}
        gmesh(Plate.rectangle(10.0, 5.0).cut(Circle((5.0, 2.5), 1.0)), 2.0, quads=True, order=2)
        with pytest.raises(PlanarError):
            gmesh(Plate.rectangle(60.0, 30.0).difference(Rectangle(10.0, 100.0, corner=(25.0, -30.0))), 6.0)
        assert {k: gmsh.option.getNumber(k) for k in keys} == before
        assert gmsh.model.getCurrent() == "mine" and gmsh.model.getEntities(2) == [(2, 1)]
        assert "mine" in gmsh.model.list() and len(gmsh.model.list()) == 2
        assert gmsh.isInitialized() == 1
    finally:
        gmsh.finalize()
