"""Progress of a solve on a terminal, quiet elsewhere, switchable by PLANAR_PROGRESS.

The script runs in a child process whose stderr is a pseudo-terminal (the ``pty`` module) or a
pipe; the thresholds are lowered through ``PLANAR_PROGRESS_MIN_UNKNOWNS`` and
``PLANAR_PROGRESS_MIN_SECONDS`` so that a small model shows the lines a large one would
(common practice: command-line tools that draw progress only on a terminal, e.g. ``git`` and
``pip``, and let an environment variable force it).
"""
from __future__ import annotations

import os
import select
import subprocess
import sys
import textwrap
import time

import pytest

pty = pytest.importorskip("pty")

SCRIPT = textwrap.dedent("""
    import sys
    import planar
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 8
    mesh = planar.rectangle_mesh(200.0, 40.0, 5 * n, n, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=3.0)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=80.0), case="pull")
    r = planar.solve(model, solver=sys.argv[2] if len(sys.argv) > 2 else "auto")["pull"]
    print("done", r.u.shape[0])
""")


def _env(**over) -> dict:
    env = {k: v for k, v in os.environ.items() if not k.startswith("PLANAR_PROGRESS")}
    env.update(over)
    return env


def _run_pty(env: dict, *args: str, timeout: float = 60.0) -> str:
    """Run the script with stderr (and stdout) on a pseudo-terminal; return what it printed."""
    master, slave = pty.openpty()
    try:
        p = subprocess.Popen([sys.executable, "-c", SCRIPT, *args], stdin=subprocess.DEVNULL,
                             stdout=slave, stderr=slave, env=env, close_fds=True)
    finally:
        os.close(slave)
    out = b""
    end = time.monotonic() + timeout
    try:
        while time.monotonic() < end:
            ready, _, _ = select.select([master], [], [], 0.2)
            if ready:
                try:
                    chunk = os.read(master, 65536)
                except OSError:  # the child closed the terminal
                    break
                if not chunk:
                    break
                out += chunk
            elif p.poll() is not None:
                break
        p.wait(timeout=max(1.0, end - time.monotonic()))
    finally:
        os.close(master)
        if p.poll() is None:
            p.kill()
    assert p.returncode == 0, out.decode(errors="replace")
    return out.decode(errors="replace")


def _run_pipe(env: dict, *args: str) -> subprocess.CompletedProcess:
    p = subprocess.run([sys.executable, "-c", SCRIPT, *args], capture_output=True, text=True, env=env,
                       timeout=60)
    assert p.returncode == 0, p.stderr
    return p


LOW = {"PLANAR_PROGRESS_MIN_UNKNOWNS": "100", "PLANAR_PROGRESS_MIN_SECONDS": "0"}


@pytest.mark.slow
def test_terminal_shows_the_stages():
    out = _run_pty(_env(**LOW))
    assert "done" in out
    assert "planar: factorizing" in out and "unknowns..." in out
    for stage in ("checks", "element matrices", "factorization", "solve", "solution check"):
        assert f"planar:   {stage}" in out, out


@pytest.mark.slow
def test_iterations_of_the_iterative_solver_show():
    pytest.importorskip("pyamg")
    out = _run_pty(_env(**LOW), "8", "amg")
    assert "planar: CG on" in out and "iterations, residual" in out, out
    assert "CG on" not in _run_pipe(_env(**LOW), "8", "amg").stderr


@pytest.mark.slow
def test_pipe_is_quiet():
    p = _run_pipe(_env(**LOW))
    assert "done" in p.stdout
    assert "planar:" not in p.stderr and "planar:" not in p.stdout


@pytest.mark.slow
def test_environment_forces_on_and_off():
    on = _run_pipe(_env(PLANAR_PROGRESS="1", **LOW))
    assert "planar: factorizing" in on.stderr and "planar:   solve" in on.stderr
    off = _run_pty(_env(PLANAR_PROGRESS="0", **LOW))
    assert "done" in off and "planar:" not in off


@pytest.mark.slow
def test_small_quick_model_is_quiet_on_a_terminal():
    # default thresholds: a model of a few hundred unknowns solved in well under a second says nothing
    out = _run_pty(_env())
    assert "done" in out and "planar:" not in out


def test_verbose_keeps_printing_every_stage(capsys, monkeypatch):
    import planar

    monkeypatch.delenv("PLANAR_PROGRESS", raising=False)
    mesh = planar.rectangle_mesh(20.0, 4.0, 10, 2, "Q4")
    model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    planar.solve(model, verbose=True)
    err = capsys.readouterr().err
    assert "planar:   factorization" in err and "planar:   checks" in err
    planar.solve(model, verbose=False)
    assert capsys.readouterr().err == ""


@pytest.mark.slow
def test_a_million_unknowns_on_a_terminal():
    """The issue's check: 10^6 unknowns under a pseudo-terminal show progress with default thresholds."""
    out = _run_pty(_env(), "182", timeout=600)   # 910 x 182 Q8 cells: about 10^6 unknowns
    assert "planar: factorizing" in out and "planar:   factorization" in out


def test_step_of_meshing_and_output(monkeypatch, tmp_path):
    """The one mechanism for steps outside the solve (meshing, recovery, output): forced on, it prints
    the announcement and the time; with the default thresholds a short small step prints nothing."""
    import io

    import planar
    from planar.core.progress import step

    monkeypatch.setenv("PLANAR_PROGRESS", "1")
    monkeypatch.setenv("PLANAR_PROGRESS_MIN_UNKNOWNS", "10")
    monkeypatch.setenv("PLANAR_PROGRESS_MIN_SECONDS", "0")
    out = io.StringIO()
    with step("meshing", 1234, about=True, stream=out):
        pass
    assert out.getvalue().startswith("planar: meshing (about 1,234 unknowns)...\nplanar:   meshing ")
    mesh = planar.rectangle_mesh(20.0, 4.0, 10, 2, "Q4")
    model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    r = planar.solve(model, verbose=False)["pull"]
    import contextlib

    err = io.StringIO()
    with contextlib.redirect_stderr(err):
        planar.write_vtu(tmp_path / "a.vtu", r)
    assert "planar: writing a.vtu" in err.getvalue() and "planar:   stress recovery" in err.getvalue()
    monkeypatch.delenv("PLANAR_PROGRESS_MIN_UNKNOWNS")
    monkeypatch.delenv("PLANAR_PROGRESS_MIN_SECONDS")
    out = io.StringIO()
    with step("meshing", 1234, stream=out):
        pass
    assert out.getvalue() == ""
