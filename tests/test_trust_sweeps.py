"""Sweeps clean up and share (planar.studies): workers end with the sweep, runs share a store.

Covers: killing a sweep's process (kill -9, SIGTERM) ends its worker processes, the forkserver and
the resource tracker it started, also while a worker is inside a compiled call that holds the
interpreter lock, and also for a local Dask cluster the sweep started itself; a cluster the user
gave is left running. Claims: two sweeps on one store compute every point once and report the same
table; a claim left by a dead process on this host, or with a heartbeat older than the timeout, is
taken over; a claim of a live run is not (the run waits for its record); racing claims and racing
takeovers give the point to exactly one run; bad settings are planar errors.

Sources: the process handling is common practice for worker pools, with the parent-death signal of
the Linux prctl(2) manual page (PR_SET_PDEATHSIG) and the exclusive create of open(2) (O_CREAT |
O_EXCL: of several callers exactly one creates the file). The design functions are closed forms
(x^2), so every table is known exactly.
"""
import json
import os
import signal
import subprocess
import sys
import threading
import time
import uuid
from pathlib import Path

import numpy as np
import pytest

import planar.studies as studies
from planar.core.errors import InputError, ResourceError
from planar.studies import sweep

try:
    import psutil
except ImportError:  # the checks fall back on os.kill and /proc
    psutil = None

LINUX = sys.platform.startswith("linux")
posix_only = pytest.mark.skipif(os.name != "posix", reason="signals and process groups of POSIX")

# A sweep run as its own program, so that the test can kill it. The design function leaves a
# marker per call (its pid) and then waits while the file HOLD exists: with "gil" it waits inside a
# regular-expression match that holds the interpreter lock for hours (catastrophic backtracking).
SCRIPT = r'''
import os, re, sys, time, uuid
from pathlib import Path

import planar.studies  # imported once by the forkserver (it loads the main module), not by each worker

def point(x, markers, gil=False):
    m = Path(markers)
    (m / f"call-{x}-{os.getpid()}-{uuid.uuid4().hex[:8]}").write_text(str(os.getpid()))
    while (m / "HOLD").exists():
        if gil:
            re.match(r"(a+)+$", "a" * 42 + "b")
        time.sleep(0.05)
    return {"y": float(x) ** 2}

if __name__ == "__main__":
    from planar.studies import sweep
    markers, store, how, gil = sys.argv[1], sys.argv[2], sys.argv[3], sys.argv[4] == "gil"
    kw = {"cluster": "local:2"} if how == "dask" else {"workers": int(how)}
    t = sweep(f"{__file__}:point", grid={"x": [1, 2, 3, 4]}, fixed={"markers": markers, "gil": gil},
              store=store, **kw)
    print("TABLE", [float(v) for v in t.column("y")], t.computed, flush=True)
'''


def _alive(pid: int) -> bool:
    """A process runs (a zombie, ended but not yet reaped, counts as ended)."""
    if psutil is not None:
        try:
            return psutil.Process(pid).status() != psutil.STATUS_ZOMBIE
        except psutil.NoSuchProcess:
            return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    try:
        with open(f"/proc/{pid}/stat", "rb") as f:
            return f.read().rsplit(b")", 1)[1].split()[0] not in (b"Z", b"X")
    except OSError:
        return True


def _descendants(pid: int) -> set[int]:
    if psutil is None:
        return set()
    try:
        return {p.pid for p in psutil.Process(pid).children(recursive=True)}
    except psutil.NoSuchProcess:
        return set()


def _wait_for(cond, timeout: float, what: str):
    t_end = time.monotonic() + timeout
    while time.monotonic() < t_end:
        if cond():
            return
        time.sleep(0.05)
    raise AssertionError(f"timed out after {timeout} s waiting for {what}")


def _worker_pids(markers: Path) -> set[int]:
    return {int(p.read_text()) for p in markers.glob("call-*") if p.read_text().strip()}


def _calls(markers: Path) -> list[int]:
    return sorted(int(p.name.split("-")[1]) for p in markers.glob("call-*"))


def _start(tmp_path, how: str, gil: bool = False, workers_running: int = 2):
    """Run SCRIPT in its own process; return it once ``workers_running`` points are in progress."""
    script = tmp_path / "sweep_script.py"
    script.write_text(SCRIPT)
    markers, store = tmp_path / "m", tmp_path / "store"
    markers.mkdir(exist_ok=True)
    (markers / "HOLD").write_text("")
    env = dict(os.environ, PLANAR_THREADS="1", MPLBACKEND="Agg")
    proc = subprocess.Popen([sys.executable, str(script), str(markers), str(store), how, "gil" if gil else "-"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
    try:
        _wait_for(lambda: len(_worker_pids(markers)) >= workers_running or proc.poll() is not None, 90,
                  "the sweep's points to start")
    except AssertionError:
        proc.kill()
        raise
    assert proc.poll() is None, proc.communicate()
    time.sleep(0.3)  # the workers are inside the design function now
    return proc, markers, store


def _kill_and_time(proc, pids: set[int], sig) -> float:
    """Send ``sig`` to the sweep's process; seconds until every process in ``pids`` has ended."""
    t0 = time.monotonic()
    proc.send_signal(sig)
    try:
        _wait_for(lambda: not any(_alive(p) for p in pids), 10, f"processes {sorted(pids)} to end")
        return time.monotonic() - t0
    finally:
        for p in pids:  # leave nothing behind even when the check failed (these are ours)
            if _alive(p):
                try:
                    os.kill(p, signal.SIGKILL)
                except OSError:
                    pass
        proc.wait(timeout=30)


def square(x, markers, sleep=0.0):
    """x^2; leaves one marker file per call."""
    (Path(markers) / f"call-{x}-{os.getpid()}-{uuid.uuid4().hex[:8]}").write_text(str(os.getpid()))
    if sleep:
        time.sleep(sleep)
    return {"y": float(x) ** 2}



# ---------------------------------------------------------------------------- workers end with the sweep
@pytest.mark.slow
@posix_only
def test_kill_9_of_the_sweep_ends_workers_forkserver_and_tracker(tmp_path):
    # common practice: a pool's workers must not outlive their parent; prctl(2) PR_SET_PDEATHSIG
    proc, markers, store = _start(tmp_path, "2")
    workers = _worker_pids(markers)
    helpers = _descendants(proc.pid)           # workers, the forkserver and the resource tracker
    assert len(workers) == 2 and proc.pid not in workers and workers <= (helpers or workers)
    seconds = _kill_and_time(proc, workers | helpers, signal.SIGKILL)
    assert seconds < 5.0
    print(f"kill -9: {len(workers | helpers)} processes gone after {seconds:.2f} s")
    # the killed run left the claims of its two running points; a new run takes them over at once
    assert len(list(store.glob("*.claim"))) == 2
    (markers / "HOLD").unlink()
    done_before = _calls(markers)
    t0 = time.monotonic()
    t = sweep(f"{tmp_path / 'sweep_script.py'}:point", grid={"x": [1, 2, 3, 4]},
              fixed={"markers": str(markers), "gil": False}, store=store, workers=0)
    assert time.monotonic() - t0 < 10.0        # no wait for the claim timeout (60 s)
    assert sorted(_calls(markers)) == sorted(done_before + [1, 2, 3, 4])   # nothing was finished before
    np.testing.assert_array_equal(t.column("y"), [1.0, 4.0, 9.0, 16.0])
    assert not list(store.glob("*.claim"))


@posix_only
@pytest.mark.slow
def test_kill_9_ends_workers_inside_a_call_that_holds_the_interpreter_lock(tmp_path):
    # the kernel's parent-death signal (prctl(2)) needs no help from the worker's interpreter
    proc, markers, _ = _start(tmp_path, "2", gil=True)
    pids = _worker_pids(markers) | _descendants(proc.pid)
    seconds = _kill_and_time(proc, pids, signal.SIGKILL)
    assert seconds < 5.0
    print(f"kill -9, lock held: gone after {seconds:.2f} s")


@posix_only
@pytest.mark.slow
def test_sigterm_stops_workers_and_releases_the_claims(tmp_path):
    proc, markers, store = _start(tmp_path, "2")
    pids = _worker_pids(markers) | _descendants(proc.pid)
    assert len(list(store.glob("*.claim"))) == 2          # the two running points are claimed
    seconds = _kill_and_time(proc, pids, signal.SIGTERM)
    assert seconds < 5.0
    assert proc.returncode == 128 + signal.SIGTERM        # it still ends as SIGTERM asks
    assert not list(store.glob("*.claim"))                 # stopped cleanly: nothing left to take over
    print(f"SIGTERM: gone after {seconds:.2f} s")


@posix_only
@pytest.mark.slow
def test_kill_9_ends_the_local_dask_cluster_the_sweep_started(tmp_path):
    pytest.importorskip("distributed")
    proc, markers, _ = _start(tmp_path, "dask", gil=True)
    pids = _worker_pids(markers) | _descendants(proc.pid)
    assert len(_worker_pids(markers)) == 2
    seconds = _kill_and_time(proc, pids, signal.SIGKILL)
    assert seconds < 5.0
    print(f"kill -9, local Dask cluster, lock held: gone after {seconds:.2f} s")


@pytest.mark.slow
def test_a_cluster_given_by_the_user_is_left_running(tmp_path):
    distributed = pytest.importorskip("distributed")
    markers = tmp_path / "m"
    markers.mkdir()
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True, host="127.0.0.1",
                                  dashboard_address=None) as cluster, distributed.Client(cluster) as client:
        t = sweep(square, grid={"x": [1, 2]}, fixed={"markers": str(markers)}, cluster=cluster.scheduler_address)
        np.testing.assert_array_equal(t.column("y"), [1.0, 4.0])
        assert client.submit(abs, -3).result(timeout=30) == 3          # still serving
        assert "planar-sweep-end-with-parent" not in client.run(lambda dask_worker: list(dask_worker.plugins)).popitem()[1]


@posix_only
@pytest.mark.slow
def test_watchdog_alone_ends_a_worker_whose_parent_is_killed(tmp_path):
    # the portable fallback: no parent-death signal, no multiprocessing sentinel; only the watchdog
    middle = subprocess.Popen([sys.executable, "-c", (
        "import subprocess, sys, time, os\n"
        "w = subprocess.Popen([sys.executable, '-c', 'import os, time, planar.studies as s; "
        "s._end_with(os.getppid(), deathsig=False); print(os.getpid(), flush=True); time.sleep(120)'])\n"
        "time.sleep(120)\n")], stdout=subprocess.PIPE, text=True)
    try:
        worker = int(middle.stdout.readline())
        assert _alive(worker)
        time.sleep(1.5)
        assert _alive(worker)                           # no false alarm while the parent lives
        seconds = _kill_and_time(middle, {worker}, signal.SIGKILL)
    finally:
        if middle.poll() is None:
            middle.kill()
            middle.wait()
    assert seconds < 4.0                                 # one watchdog interval (1 s) and start-up
    print(f"watchdog alone: gone after {seconds:.2f} s")


@pytest.mark.slow
def test_workers_are_not_ended_early_by_the_thread_that_made_them(tmp_path):
    # prctl(2): the parent-death signal follows the creating *thread*; a sweep run from a thread that
    # has ended, then another, must lose no worker (each point computed once, none failed)
    markers = tmp_path / "m"
    markers.mkdir()
    first = threading.Thread(target=sweep, args=(square,),
                             kwargs={"grid": {"x": [1, 2]}, "fixed": {"markers": str(markers)}, "workers": 2})
    first.start()
    first.join(120)
    assert not first.is_alive()
    t = sweep(square, grid={"x": [3, 4, 5, 6]}, fixed={"markers": str(markers), "sleep": 0.3}, workers=2,
              store=tmp_path / "s")
    assert not t.failed and _calls(markers) == [1, 2, 3, 4, 5, 6]
    np.testing.assert_array_equal(t.column("y"), [9.0, 16.0, 25.0, 36.0])


# ---------------------------------------------------------------------------- runs sharing a store
def test_two_concurrent_runs_compute_each_point_once_and_agree(tmp_path):
    markers, store = tmp_path / "m", tmp_path / "store"
    markers.mkdir()
    xs = list(range(10))
    tables, start = {}, threading.Barrier(2)

    def run(name):
        start.wait()
        tables[name] = sweep(square, grid={"x": xs}, fixed={"markers": str(markers), "sleep": 0.05},
                             store=store, workers=0)

    other = threading.Thread(target=run, args=("b",))
    other.start()
    run("a")
    other.join(60)
    a, b = tables["a"], tables["b"]
    assert _calls(markers) == xs                                   # every point once, in all
    assert a.computed + b.computed == len(xs) and a.computed > 0 and b.computed > 0   # shared
    assert a.reused == b.computed and b.reused == a.computed
    np.testing.assert_array_equal(a.column("y"), np.array(xs, float) ** 2)
    a.to_csv(tmp_path / "a.csv")
    b.to_csv(tmp_path / "b.csv")
    assert (tmp_path / "a.csv").read_text() == (tmp_path / "b.csv").read_text()
    assert not list(store.glob("*.claim")) and not list(store.glob("*.takeover"))


@posix_only
@pytest.mark.slow
def test_two_sweep_programs_with_worker_pools_share_the_work(tmp_path):
    script = tmp_path / "sweep_script.py"
    script.write_text(SCRIPT)
    markers, store = tmp_path / "m", tmp_path / "store"
    markers.mkdir()
    env = dict(os.environ, PLANAR_THREADS="1")
    procs = [subprocess.Popen([sys.executable, str(script), str(markers), str(store), how, "-"],
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
             for how in ("2", "1")]
    outs = [p.communicate(timeout=300) for p in procs]
    assert all(p.returncode == 0 for p in procs), outs
    tables = [next(line for line in o.splitlines() if line.startswith("TABLE")) for o, _ in outs]
    assert _calls(markers) == [1, 2, 3, 4]
    ys = [json.loads(t.split(" ", 1)[1].rsplit("]", 1)[0] + "]") for t in tables]
    assert ys[0] == ys[1] == [1.0, 4.0, 9.0, 16.0]
    assert sum(int(t.rsplit(" ", 1)[1]) for t in tables) == 4     # computed: 4 in all


def _fake_claim(store: Path, key: str, pid: int, host: str, age: float = 0.0) -> Path:
    store.mkdir(parents=True, exist_ok=True)
    p = store / f"{key}.claim"
    p.write_text(json.dumps({"pid": pid, "host": host, "run": "elsewhere", "started": time.time() - age}))
    if age:
        t = time.time() - age
        os.utime(p, (t, t))
    return p


def _key(x, markers, **extra):
    return studies.point_key(f"{__name__}:square", {"x": x, "markers": str(markers), **extra})


def _ended_pid() -> int:
    p = subprocess.Popen([sys.executable, "-c", "pass"])
    p.wait()
    return p.pid


@pytest.mark.parametrize("how", ["dead pid on this host", "zombie on this host", "old heartbeat, other host",
                                 "old heartbeat, live pid"])
def test_stale_claims_are_taken_over(tmp_path, how):
    markers, store = tmp_path / "m", tmp_path / "store"
    markers.mkdir()
    host = __import__("socket").gethostname()
    zombie = None
    if how == "dead pid on this host":
        claim = _fake_claim(store, _key(2, markers), _ended_pid(), host)
    elif how == "zombie on this host":       # ended, not yet reaped by its parent (this test)
        zombie = subprocess.Popen([sys.executable, "-c", "pass"])
        _wait_for(lambda: not _alive(zombie.pid), 30, "the child to end")
        claim = _fake_claim(store, _key(2, markers), zombie.pid, host)
    elif how == "old heartbeat, other host":
        claim = _fake_claim(store, _key(2, markers), 12345, "another-host.example", age=3600.0)
    else:
        claim = _fake_claim(store, _key(2, markers), os.getppid(), host, age=120.0)
    try:
        t0 = time.monotonic()
        t = sweep(square, grid={"x": [1, 2, 3]}, fixed={"markers": str(markers)}, store=store, workers=0,
                  claim_timeout=60.0)
        assert time.monotonic() - t0 < 10.0       # taken over at once, not after a wait
    finally:
        if zombie is not None:
            zombie.wait()
    assert _calls(markers) == [1, 2, 3] and t.computed == 3
    np.testing.assert_array_equal(t.column("y"), [1.0, 4.0, 9.0])
    assert not claim.exists()


def test_claim_of_a_live_run_is_respected_and_its_record_taken(tmp_path):
    markers, store = tmp_path / "m", tmp_path / "store"
    markers.mkdir()
    key = _key(2, markers)
    holder = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])   # the other run
    try:
        claim = _fake_claim(store, key, holder.pid, __import__("socket").gethostname())

        def other_run_finishes():  # what the other run does when its point is done: record, then release
            time.sleep(0.6)
            rec = studies._compute_point(square, {"x": 2, "markers": str(tmp_path)},
                                         {"peak_von_mises": studies._DefaultPeak()}, key, f"{__name__}:square")
            rec["params"] = {"x": 2, "markers": str(markers)}
            studies._Store(store).save(rec)
            claim.unlink()

        finisher = threading.Thread(target=other_run_finishes)
        finisher.start()
        t0 = time.monotonic()
        t = sweep(square, grid={"x": [1, 2, 3]}, fixed={"markers": str(markers)}, store=store, workers=0)
        waited = time.monotonic() - t0
        finisher.join()
    finally:
        holder.kill()
        holder.wait()
    assert _calls(markers) == [1, 3]            # point 2 was left to its owner ...
    assert waited >= 0.5                        # ... and waited for
    assert t.computed == 2 and t.reused == 1
    np.testing.assert_array_equal(t.column("y"), [1.0, 4.0, 9.0])


def test_claim_of_a_live_run_elsewhere_is_not_taken_before_its_timeout(tmp_path):
    markers, store = tmp_path / "m", tmp_path / "store"
    markers.mkdir()
    claim = _fake_claim(store, _key(2, markers), 12345, "another-host.example", age=1.0)
    with pytest.raises(ResourceError, match="1 of them being computed by other runs"):
        sweep(square, grid={"x": [1, 2, 3]}, fixed={"markers": str(markers)}, store=store, workers=0,
              timeout=0.6, claim_timeout=60.0)
    assert _calls(markers) == [1, 3] and claim.exists()
    # the same claim, once its heartbeat is older than the timeout, is taken over
    t = sweep(square, grid={"x": [1, 2, 3]}, fixed={"markers": str(markers)}, store=store, workers=0,
              claim_timeout=0.5)
    assert _calls(markers) == [1, 2, 3] and t.computed == 1 and t.reused == 2


def test_racing_claims_and_takeovers_give_each_point_to_one_run(tmp_path):
    # open(2): O_CREAT | O_EXCL creates the file for exactly one caller; 4 runs x 40 points
    runs = [studies._Claims(tmp_path, timeout=60.0) for _ in range(4)]
    keys = [f"k{i:03d}" for i in range(40)]
    won = {i: [] for i in range(len(runs))}
    start = threading.Barrier(len(runs))

    def race(i):
        start.wait()
        won[i] += [k for k in keys if runs[i].claim(k)]

    threads = [threading.Thread(target=race, args=(i,)) for i in range(len(runs))]
    for th in threads:
        th.start()
    for th in threads:
        th.join()
    assert sorted(k for w in won.values() for k in w) == keys
    for r in runs:
        r.close()
    assert not list(tmp_path.glob("*.claim"))
    # now every claim is stale (an ended pid on this host): of 4 runs taking over, one wins each
    dead = _ended_pid()
    for k in keys:
        _fake_claim(tmp_path, k, dead, runs[0].host)
    runs = [studies._Claims(tmp_path, timeout=60.0) for _ in range(4)]
    won = {i: [] for i in range(len(runs))}
    start = threading.Barrier(len(runs))

    def take(i):
        start.wait()
        won[i] += [k for k in keys if runs[i].is_stale(k) and runs[i].take_over(k)]

    threads = [threading.Thread(target=take, args=(i,)) for i in range(len(runs))]
    for th in threads:
        th.start()
    for th in threads:
        th.join()
    assert sorted(k for w in won.values() for k in w) == keys
    owner = {k: i for i, w in won.items() for k in w}
    assert all(runs[owner[k]].holder(k)["run"] == runs[owner[k]].token for k in keys)
    for r in runs:
        r.close()


@pytest.mark.slow
def test_heartbeat_keeps_a_long_point_claimed(tmp_path):
    mine = studies._Claims(tmp_path, timeout=0.3)        # heartbeat every 0.05 s
    other = studies._Claims(tmp_path, timeout=0.3)
    other.host = "another-host.example"                   # cannot look at the pid: only the heartbeat counts
    assert mine.claim("p") and not other.claim("p")
    time.sleep(0.8)                                        # 2.7 timeouts
    assert not other.is_stale("p") and not other.take_over("p")
    mine._stop.set()                                       # the run hangs: no more heartbeats
    time.sleep(0.5)
    assert other.is_stale("p") and other.take_over("p")
    assert other.holder("p")["run"] == other.token
    mine.close()                                           # the hung run does not remove the new claim
    assert (tmp_path / "p.claim").exists()
    other.close()
    assert not (tmp_path / "p.claim").exists()


def test_a_claim_being_written_is_not_taken_over(tmp_path):
    (tmp_path / "p.claim").write_text("")                 # created, content not yet written
    c = studies._Claims(tmp_path, timeout=60.0)
    assert not c.is_stale("p") and not c.claim("p") and not c.take_over("p")


@pytest.mark.parametrize("kw, match", [
    ({"claim_timeout": 0.0}, "claim_timeout"),
    ({"claim_timeout": -5}, "claim_timeout"),
    ({"claim_timeout": "soon"}, "claim_timeout"),
    ({"claim_timeout": float("nan")}, "claim_timeout"),
    ({"cluster": "local:0"}, "local:N"),
    ({"cluster": "local:two"}, "local:N"),
])
def test_bad_sharing_settings_are_planar_errors(tmp_path, kw, match):
    markers = tmp_path / "m"
    markers.mkdir()
    with pytest.raises(InputError, match=match):
        sweep(square, grid={"x": [1]}, fixed={"markers": str(markers)}, store=tmp_path / "s", workers=0, **kw)
    assert not list(markers.iterdir())                     # refused before any work
