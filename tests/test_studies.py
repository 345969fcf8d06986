"""Parameter sweeps (planar.studies): outputs, store and resume, failures, local processes, Dask.

Physics checks name their source beside them. The Dask tests run a real LocalCluster of two worker
processes on 127.0.0.1 and are skipped only when dask[distributed] is not installed (the CI installs
the ``cluster`` extra).
"""
import doctest
import json
import os
import subprocess
import sys
import time
import uuid
from pathlib import Path

import numpy as np
import pytest

import planar
from _models import strip_model
import planar.studies as studies
from planar.core.errors import InputError, NameNotFoundError, PlanarError, ResourceError
from planar.studies import (ConcentrationFactor, Peak, SafetyMargin, ValueAt, grid, load_table, parse_output,
                            point_key, resolve_function, sweep)

SAMPLES = Path(__file__).resolve().parents[1] / "samples"


# ---------------------------------------------------------------------------- worker functions
# Module-level, so that worker processes can import them (pickled by reference).
def square(x, markers=None, fail_at=None, sleep=0.0):
    """x^2 and x^3 as reported numbers; leaves one marker file per call in ``markers``."""
    if markers:
        (Path(markers) / f"call-{x}-{os.getpid()}-{uuid.uuid4().hex[:8]}").write_text(str(x))
    if sleep:
        time.sleep(sleep)
    if fail_at is not None and x == fail_at:
        raise ValueError(f"no answer at x = {x}")
    return {"y": float(x) ** 2, "z": float(x) ** 3}


def dies_once(x, markers, victim=3):
    """Kills its own worker process the first time it runs the point ``victim``."""
    marker = Path(markers) / f"died-{x}"
    if x == victim and not marker.exists():
        marker.write_text(str(os.getpid()))
        os._exit(17)
    return {"y": float(x) ** 2}


def always_dies(x, victim=2):
    if x == victim:
        os._exit(19)
    return {"y": float(x)}


def strap_with_numbers(width, thickness=2.0):
    r = studies.example_strap(width=width, thickness=thickness)
    return r, {"nominal": 2000.0 / (width * thickness), "allowable": 100.0}


def strap_model(width):
    return strip_model(100.0, width, 4, 2, "Q8", hold="roller",
                       loads={"pull": planar.Traction("right", tx=10.0),
                              "pull twice": planar.Traction("right", tx=20.0)})


def mean_ux(result, values):
    return float(result.u[:, 0].mean())


def _calls(markers):
    return sorted(int(p.read_text()) for p in Path(markers).glob("call-*"))


# ---------------------------------------------------------------------------- parameters and outputs
def test_docstring_examples():
    for mod in (studies,):
        failures, _ = doctest.testmod(mod, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
        assert failures == 0
    import planar.post.combine as combine

    assert doctest.testmod(combine)[0] == 0


def test_grid_and_keys():
    pts = grid(a=[1, 2], b=["x", "y", "z"])
    assert len(pts) == 6 and pts[0] == {"a": 1, "b": "x"} and pts[-1] == {"a": 2, "b": "z"}
    assert point_key("m:f", {"a": 1, "b": 2.5}) == point_key("m:f", {"b": 2.5, "a": 1.0})
    assert point_key("m:f", {"a": 1}) != point_key("m:g", {"a": 1})
    assert point_key("m:f", {"a": 0.1}) != point_key("m:f", {"a": 0.1 + 1e-15})


def test_parse_output_forms_and_errors():
    assert parse_output("max:von_mises") == Peak("von_mises")
    assert parse_output("absmax:sigma_xx@average") == Peak("sigma_xx", method="average", kind="absmax")
    assert parse_output("at:10,2:ux") == ValueAt((10.0, 2.0), "ux")
    assert parse_output("margin:von_mises:250:1.5") == SafetyMargin(250.0, 1.5, "von_mises")
    assert parse_output("kt:sigma_xx:nominal") == ConcentrationFactor("nominal", "sigma_xx")
    with pytest.raises(InputError, match="max:FIELD"):
        parse_output("peak-of:von_mises")
    with pytest.raises(InputError, match="unknown field"):
        parse_output("max:von_misses")


def test_function_must_be_importable():
    f, fid = resolve_function("planar.studies:example_strap")
    assert f is studies.example_strap and fid == "planar.studies:example_strap"
    assert resolve_function(square)[1] == f"{__name__}:square"
    with pytest.raises(InputError, match="top level"):
        resolve_function(lambda x: x)

    def inner(x):
        return x

    with pytest.raises(InputError, match="top level"):
        resolve_function(inner)
    with pytest.raises(InputError, match="module:function"):
        resolve_function("example_strap")
    with pytest.raises(InputError, match="cannot import module"):
        resolve_function("no_such_module_here:f")
    with pytest.raises(NameNotFoundError, match="example_strap"):
        resolve_function("planar.studies:example_strip")


@pytest.mark.slow
def test_function_from_a_file_runs_on_workers(tmp_path):
    f = tmp_path / "my_study.py"
    f.write_text("import os\n\ndef cube(a):\n    return {'v': a ** 3, 'pid': os.getpid()}\n")
    t = sweep(f"{f}:cube", grid={"a": [1.0, 2.0, 3.0]}, workers=2)
    np.testing.assert_array_equal(t.column("v"), [1.0, 8.0, 27.0])
    assert os.getpid() not in t.column("pid")
    assert t.function == f"{f.resolve()}:cube"
    with pytest.raises(InputError, match="does not exist"):
        sweep(f"{tmp_path / 'nope.py'}:cube", [{"a": 1}], workers=0)


def test_bad_sweep_input():
    with pytest.raises(InputError, match="either"):
        sweep(square, workers=0)
    with pytest.raises(InputError, match="given twice"):
        sweep(square, [{"x": 1}, {"x": 1.0}], workers=0)
    with pytest.raises(InputError, match="must be a number, a string"):
        sweep(square, [{"x": [1, 2]}], workers=0)
    with pytest.raises(InputError, match="workers"):
        sweep(square, [{"x": 1}], workers=-1)


# ---------------------------------------------------------------------------- serial sweeps
def test_outputs_of_a_strap_match_closed_form(tmp_path):
    # uniform bar: sigma_xx = P / (W t), ux(L) = sigma L / E (common practice)
    t = sweep(strap_with_numbers, grid={"width": [20.0, 40.0]}, workers=0,
              outputs={"peak": Peak("sigma_xx", method="average"),
                       "kt": ConcentrationFactor("nominal", field="sigma_xx"),
                       "margin": SafetyMargin("allowable", 1.25, field="sigma_xx"),
                       "end_ux": ValueAt((100.0, 0.0), "ux"),
                       "mean_ux": mean_ux})
    sigma = 2000.0 / (np.array([20.0, 40.0]) * 2.0)
    np.testing.assert_allclose(t.column("peak"), sigma, rtol=1e-10)
    np.testing.assert_allclose(t.column("kt"), 1.0, rtol=1e-10)
    np.testing.assert_allclose(t.column("margin"), 100.0 / (1.25 * sigma) - 1.0, rtol=1e-10)
    np.testing.assert_allclose(t.column("end_ux"), sigma * 100.0 / 70e3, rtol=1e-10)
    np.testing.assert_allclose(t.column("nominal"), sigma, rtol=1e-14)   # reported numbers are columns
    assert t.parameters == ["width"] and t.outputs[:5] == ["peak", "kt", "margin", "end_ux", "mean_ux"]


def test_model_with_several_cases_needs_a_case():
    t = sweep(strap_model, [{"width": 10.0}], workers=0, outputs={"p": Peak("sigma_xx", case="pull twice")})
    assert t.column("p")[0] == pytest.approx(20.0, rel=1e-10)
    t = sweep(strap_model, [{"width": 10.0}], workers=0, outputs={"p": Peak("sigma_xx")})
    assert t.failed and "several load cases" in t.failed[0]["error"]["message"]


def test_failed_point_is_recorded_and_the_sweep_goes_on(tmp_path):
    store = tmp_path / "store"
    markers = tmp_path / "m"
    markers.mkdir()
    t = sweep(square, grid={"x": [1, 2, 3, 4]}, fixed={"markers": str(markers), "fail_at": 3},
              store=store, workers=0)
    assert [r["status"] for r in t.records] == ["done", "done", "failed", "done"]
    err = t.failed[0]["error"]
    assert err["type"] == "ValueError" and err["message"] == "no answer at x = 3"
    assert np.isnan(t.column("y")[2]) and t.column("y")[3] == 16.0
    assert len(list(store.glob("*.json"))) == 4
    # a second run reuses everything, the failure too; retry_failed computes it again
    for p in markers.iterdir():
        p.unlink()
    t2 = sweep(square, grid={"x": [1, 2, 3, 4]}, fixed={"markers": str(markers), "fail_at": 3},
               store=store, workers=0)
    assert t2.computed == 0 and t2.reused == 4 and _calls(markers) == []
    t3 = sweep(square, grid={"x": [1, 2, 3, 4]}, fixed={"markers": str(markers), "fail_at": 3},
               store=store, workers=0, retry_failed=True)
    assert t3.computed == 1 and _calls(markers) == [3]


def test_interrupted_sweep_computes_only_the_missing_points(tmp_path):
    store, markers = tmp_path / "store", tmp_path / "m"
    markers.mkdir()
    xs = list(range(8))

    def stop_after_three(rec, prog):
        if prog.done - prog.reused >= 3:
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        sweep(square, grid={"x": xs}, fixed={"markers": str(markers)}, store=store, workers=0,
              on_point=stop_after_three)
    first = _calls(markers)
    assert first == [0, 1, 2] and len(list(store.glob("*.json"))) == 3
    for p in markers.iterdir():
        p.unlink()
    t = sweep(square, grid={"x": xs}, fixed={"markers": str(markers)}, store=store, workers=0)
    assert _calls(markers) == [3, 4, 5, 6, 7]
    assert t.computed == 5 and t.reused == 3
    np.testing.assert_array_equal(t.column("y"), np.array(xs, float) ** 2)


def test_changed_outputs_are_computed_again(tmp_path):
    store = tmp_path / "s"
    sweep("planar.studies:example_strap", [{"width": 20.0}], outputs={"p": "max:sigma_xx@average"},
          store=store, workers=0)
    t = sweep("planar.studies:example_strap", [{"width": 20.0}], outputs={"p": "max:sigma_xx@average"},
              store=store, workers=0)
    assert t.computed == 0
    t = sweep("planar.studies:example_strap", [{"width": 20.0}], outputs={"p": "max:sigma_yy@average"},
              store=store, workers=0)
    assert t.computed == 1


def test_table_files_and_plot(tmp_path):
    t = sweep(square, grid={"x": [1, 2, 3], "sleep": [0.0, 0.001]}, fixed={"fail_at": 2}, workers=0)
    t.to_csv(tmp_path / "t.csv")
    t.to_json(tmp_path / "t.json")
    lines = (tmp_path / "t.csv").read_text().splitlines()
    assert lines[0] == "x,sleep,fail_at,y,z,status,error,seconds,key" and len(lines) == 7
    assert "ValueError: no answer at x = 2" in lines[3]
    back = load_table(tmp_path / "t.json")
    np.testing.assert_array_equal(back.column("y"), t.column("y"))
    assert json.loads((tmp_path / "t.json").read_text())["failed"] == 2
    fig = t.plot(tmp_path / "t.png", reference={"y": ("x squared", lambda x: x**2)})
    assert (tmp_path / "t.png").read_bytes()[:4] == b"\x89PNG" and len(fig.axes) == 2
    assert not list(tmp_path.glob(".*part*"))
    assert "no answer at x = 2" in t.format()


def test_timeout_keeps_finished_points(tmp_path):
    store = tmp_path / "s"
    with pytest.raises(ResourceError, match="timeout"):
        sweep(square, grid={"x": [1, 2, 3, 4]}, fixed={"sleep": 0.3}, store=store, workers=0, timeout=0.5)
    assert 1 <= len(list(store.glob("*.json"))) < 4


def test_cli_sweep(tmp_path, capsys):
    from planar.cli import main

    out = tmp_path / "o"
    code = main(["sweep", "planar.studies:example_strap", "-p", "width=20:40:3", "-o", "peak=max:sigma_xx@average",
                 "--out", str(out), "--workers", "0"])
    text = capsys.readouterr().out
    assert code == 0, text
    assert (out / "sweep.csv").exists() and (out / "sweep.json").exists() and (out / "sweep.png").exists()
    t = load_table(out / "sweep.json")
    np.testing.assert_allclose(t.column("peak"), 2000.0 / (2.0 * np.array([20.0, 30.0, 40.0])), rtol=1e-10)
    assert "3 points (3 computed, 0 from the store)" in text
    assert main(["sweep", "planar.studies:nothing_here", "-p", "width=1"]) == 2
    assert "unknown function" in capsys.readouterr().err


def test_missing_dask_is_a_clear_error(monkeypatch):
    monkeypatch.setitem(sys.modules, "distributed", None)
    with pytest.raises(PlanarError, match=r"planar\[cluster\]"):
        sweep(square, [{"x": 1}], cluster="tcp://127.0.0.1:1")


# ---------------------------------------------------------------------------- local worker processes
@pytest.mark.slow
def test_local_processes_match_serial(tmp_path):
    pts = grid(x=[0, 1, 2, 3, 4])
    a = sweep(square, pts, workers=0)
    b = sweep(square, pts, workers=2, store=tmp_path / "s")
    assert [r["outputs"] for r in a.records] == [r["outputs"] for r in b.records]
    # the serial run computes in this process; the pooled one in at most two other processes of
    # this host, each named "host:pid"
    here = f"{os.uname()[1]}:{os.getpid()}"
    assert {r["worker"] for r in a.records} == {here}
    workers = {r["worker"] for r in b.records}
    assert 1 <= len(workers) <= 2 and here not in workers
    assert all(w.startswith(f"{os.uname()[1]}:") and w.split(":")[1].isdigit() for w in workers)


@pytest.mark.slow
def test_local_worker_killed_loses_no_point(tmp_path):
    markers = tmp_path / "m"
    markers.mkdir()
    t = sweep(dies_once, grid={"x": list(range(6))}, fixed={"markers": str(markers)}, workers=2, timeout=120)
    assert (markers / "died-3").exists()
    assert not t.failed
    assert t.records[3]["worker"].split(":")[1] != (markers / "died-3").read_text()
    np.testing.assert_array_equal(t.column("y"), np.arange(6.0) ** 2)


@pytest.mark.slow
def test_point_that_always_kills_its_worker_is_recorded(tmp_path):
    t = sweep(always_dies, grid={"x": [0, 1, 2, 3]}, workers=2, retries=1, timeout=120)
    assert [r["status"] for r in t.records] == ["done", "done", "failed", "done"]
    assert t.failed[0]["error"]["type"] == "WorkerDied"


# ---------------------------------------------------------------------------- Dask
@pytest.fixture(scope="module")
def dask_client():
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                       dashboard_address=None)
    client = distributed.Client(cluster)
    yield client
    client.close()
    cluster.close()


@pytest.mark.slow
def test_dask_table_equals_serial(dask_client, tmp_path):
    pts = grid(width=[10.0, 20.0, 30.0, 40.0])
    outputs = {"peak": Peak("von_mises"), "end_ux": ValueAt((100.0, 0.0), "ux")}
    serial = sweep("planar.studies:example_strap", pts, outputs=outputs, workers=0)
    dask = sweep("planar.studies:example_strap", pts, outputs=outputs, cluster=dask_client, store=tmp_path / "s")
    assert serial.outputs == dask.outputs
    for a, b in zip(serial.records, dask.records):
        assert a["key"] == b["key"] and a["outputs"] == b["outputs"]
    assert all(r["worker"].split(":")[1] != str(os.getpid()) for r in dask.records)


@pytest.mark.slow
def test_dask_worker_killed_mid_sweep_loses_no_point(dask_client, tmp_path):
    markers = tmp_path / "m"
    markers.mkdir()
    t = sweep(dies_once, grid={"x": list(range(6))}, fixed={"markers": str(markers)}, cluster=dask_client,
              store=tmp_path / "s", timeout=120)
    assert (markers / "died-3").exists()          # the worker did die
    assert not t.failed
    assert t.records[3]["worker"].split(":")[1] != (markers / "died-3").read_text()   # and another ran it
    np.testing.assert_array_equal(t.column("y"), np.arange(6.0) ** 2)
    assert len(list((tmp_path / "s").glob("*.json"))) == 6


@pytest.mark.slow
def test_dask_interrupted_sweep_resumes(dask_client, tmp_path):
    store, markers = tmp_path / "store", tmp_path / "m"
    markers.mkdir()
    xs = list(range(8))

    def stop(rec, prog):
        if prog.done - prog.reused >= 3:
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        sweep(square, grid={"x": xs}, fixed={"markers": str(markers), "sleep": 0.2}, store=store,
              cluster=dask_client, on_point=stop)
    time.sleep(0.5)   # a point that was already running when the sweep stopped ends and is dropped
    stored = {json.loads(p.read_text())["params"]["x"] for p in store.glob("*.json")}
    assert 3 <= len(stored) < len(xs)
    for p in markers.iterdir():
        p.unlink()
    t = sweep(square, grid={"x": xs}, fixed={"markers": str(markers), "sleep": 0.2}, store=store,
              cluster=dask_client)
    assert _calls(markers) == sorted(set(xs) - stored)
    assert t.reused == len(stored) and t.computed == len(xs) - len(stored)
    np.testing.assert_array_equal(t.column("y"), np.array(xs, float) ** 2)


def test_dask_by_address_on_the_command_line(dask_client, tmp_path, capsys):
    from planar.cli import main

    address = dask_client.scheduler.address
    assert address.startswith("tcp://127.0.0.1:")
    out = tmp_path / "o"
    code = main(["sweep", "planar.studies:example_strap", "-p", "width=20,40", "-o", "p=max:sigma_xx@average",
                 "--cluster", address, "--out", str(out), "--no-plot"])
    assert code == 0, capsys.readouterr()
    np.testing.assert_allclose(load_table(out / "sweep.json").column("p"), [50.0, 25.0], rtol=1e-10)


# ---------------------------------------------------------------------------- the Kt sample
def _sample():
    import importlib.util

    spec = importlib.util.spec_from_file_location("kt_sweep_sample", SAMPLES / "kt_sweep.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def test_kt_sample_points_match_peterson():
    # Peterson chart 4.1 (W. D. and D. F. Pilkey, Peterson's Stress Concentration Factors, 3rd ed.,
    # 2008, after Howland 1930; coefficients from memory); 2 % covers the fit's own error and the mesh
    mod = _sample()
    t = sweep(mod.strap_with_hole, grid={"d_over_w": [0.1, 0.35, 0.6]}, workers=0,
              outputs={"Kt": ConcentrationFactor("nominal_net", field="sigma_xx", method="spr")})
    np.testing.assert_allclose(t.column("Kt"), mod.peterson_kt_net(t.column("d_over_w")), rtol=0.02)


@pytest.mark.slow
def test_kt_sample_on_a_local_dask_cluster(tmp_path):
    pytest.importorskip("distributed")
    env = dict(os.environ, PLANAR_OUT=str(tmp_path), MPLBACKEND="Agg")
    proc = subprocess.run([sys.executable, str(SAMPLES / "kt_sweep.py"), "--local-dask", "2"], cwd=SAMPLES,
                          env=env, capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stdout + proc.stderr
    assert "every point within 2 % of the chart" in proc.stdout
    t = load_table(tmp_path / "kt_sweep.json")
    assert len(t) == 11 and not t.failed
    mod = _sample()
    np.testing.assert_allclose(t.column("Kt_net"), mod.peterson_kt_net(t.column("d_over_w")), rtol=0.02)
    assert (tmp_path / "kt_sweep.png").exists() and (tmp_path / "kt_sweep.csv").exists()
