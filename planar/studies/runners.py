"""The three runners of a sweep: in this process, local worker processes, a Dask cluster."""
from __future__ import annotations

import math
import multiprocessing
import os
import time
from collections import Counter

from ..core.errors import InputError, PlanarError
from .compute import _compute_point, _failed_record
from .store import _Feed, _POLL
from .workers import _end_with, _worker_start


# ============================================================================ runners
def _time_left(deadline):
    return None if deadline is None else max(deadline - time.monotonic(), 0.0)


def _run_serial(feed: _Feed, payload, on_done, deadline):
    fn, outputs, fid = payload
    while True:
        if deadline is not None and time.monotonic() > deadline:
            raise TimeoutError
        task = feed.next()
        if task is None:
            if feed.exhausted:
                return
            feed.pause(deadline)
            continue
        key, params = task
        on_done(_compute_point(fn, params, outputs, key, fid))


def _mp_context():
    methods = multiprocessing.get_all_start_methods()
    return multiprocessing.get_context("forkserver" if "forkserver" in methods else "spawn")


def _kill_pool(pool) -> None:
    """End the worker processes of a pool this sweep started (so no point runs on after it)."""
    if pool is None:
        return
    procs = list((getattr(pool, "_processes", None) or {}).values())
    for p in procs:
        try:
            p.kill()
        except Exception:
            pass
    pool.shutdown(wait=False, cancel_futures=True)
    for p in procs:
        try:
            p.join(timeout=5)
        except Exception:
            pass


def _run_processes(feed: _Feed, payload, on_done, workers, retries, deadline):
    """Local worker processes; at most ``workers`` points are handed to the pool at a time (so that
    points are claimed only when a worker is about to compute them)."""
    from concurrent.futures import FIRST_COMPLETED, ProcessPoolExecutor, wait
    from concurrent.futures.process import BrokenProcessPool

    fn, outputs, fid = payload
    ctx = _mp_context()
    guard = (os.getpid(), ctx.get_start_method() == "forkserver")
    attempts: Counter = Counter()

    def new_pool(n):
        return ProcessPoolExecutor(max_workers=n, mp_context=ctx, initializer=_worker_start, initargs=(n, *guard))

    def wait_for(futures):
        t = _time_left(deadline)
        if t == 0.0:
            raise TimeoutError
        if feed.waiting and len(futures) < workers:  # look at the store now and then
            t = _POLL if t is None else min(t, _POLL)
        done, _ = wait(futures, timeout=t, return_when=FIRST_COMPLETED)
        if not done and deadline is not None and time.monotonic() >= deadline:
            raise TimeoutError
        return done

    def alone(key, params):
        """Run one point in a pool of its own: its record, or None when the worker died."""
        pool = new_pool(1)
        try:
            f = pool.submit(_compute_point, fn, params, outputs, key, fid)
            while not wait_for([f]):
                pass
            try:
                rec = f.result()
            except BrokenProcessPool:
                rec = None
            except Exception as exc:  # e.g. arguments that cannot be pickled
                rec = _failed_record(key, params, fid, outputs, type(exc).__name__, str(exc))
            pool.shutdown(wait=True, cancel_futures=True)
            return rec
        except BaseException:
            _kill_pool(pool)
            raise

    pool = None
    inflight: dict = {}  # future -> (key, params), in submission order
    try:
        while True:
            broken = False
            while len(inflight) < workers and not broken:
                task = feed.next()
                if task is None:
                    break
                if pool is None:
                    pool = new_pool(max(1, min(workers, 1 + feed.remaining)))
                try:
                    inflight[pool.submit(_compute_point, fn, task[1], outputs, task[0], fid)] = task
                except BrokenProcessPool:
                    feed.ready.appendleft(task)
                    broken = True
            if not inflight and not broken:
                if feed.exhausted:
                    break
                feed.pause(deadline)
                continue
            for f in (wait_for(list(inflight)) if not broken else ()):
                key, params = inflight[f]
                try:
                    rec = f.result()
                except BrokenProcessPool:
                    broken = True
                    continue
                except Exception as exc:  # e.g. arguments that cannot be pickled
                    rec = _failed_record(key, params, fid, outputs, type(exc).__name__, str(exc))
                del inflight[f]
                on_done(rec)
            if not broken:
                continue
            # A worker died. A broken pool fails every future it has left; keep those that finished
            # before the break, and run each of the others alone to find the one that kills its worker.
            wait(list(inflight), timeout=30)
            suspects = []
            for f, (key, params) in inflight.items():
                if f.done() and not f.cancelled() and f.exception() is None:
                    on_done(f.result())
                else:
                    suspects.append((key, params))
            inflight.clear()
            pool.shutdown(wait=True, cancel_futures=True)
            pool = None
            for key, params in suspects:
                while True:
                    rec = alone(key, params)
                    if rec is not None:
                        on_done(rec)
                        break
                    attempts[key] += 1
                    if attempts[key] > retries:
                        on_done(_failed_record(
                            key, params, fid, outputs, "WorkerDied",
                            f"the worker process died each time it ran this point alone ({attempts[key]} times: "
                            "killed, out of memory, or a crash in compiled code); run the point in this process "
                            "(workers=0) to see why"))
                        break
        if pool is not None:
            pool.shutdown(wait=True)
    except BaseException:
        _kill_pool(pool)
        raise


def _dask():
    try:
        import distributed  # noqa: F401
    except ImportError:
        raise PlanarError(
            "running a sweep on a Dask cluster needs the optional extra: pip install \"planar[cluster]\" "
            "(it installs dask[distributed]); or run on local worker processes without a cluster") from None
    return distributed


def _plugin_class():
    """The Dask worker plugin that ties the workers of a sweep's own local cluster to the sweep."""
    from distributed.diagnostics.plugin import WorkerPlugin

    class _EndWithSweep(WorkerPlugin):
        name = "planar-sweep-end-with-parent"

        def __init__(self, pid: int):
            self.pid = int(pid)

        def setup(self, worker):
            _end_with(self.pid, deathsig=os.getppid() == self.pid)  # a direct child: see _end_with

    _EndWithSweep.__module__ = __name__
    _EndWithSweep.__qualname__ = "_EndWithSweep"
    globals()["_EndWithSweep"] = _EndWithSweep
    return _EndWithSweep


def __getattr__(name: str):
    if name == "_EndWithSweep":  # unpickled on a Dask worker: made when first needed (distributed is optional)
        return _plugin_class()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def _local_workers(spec: str) -> int | None:
    """The worker count of ``"local"`` / ``"local:N"``; None for anything else."""
    head, sep, n = spec.strip().partition(":")
    if head.lower() != "local":
        return None
    if not sep:
        return max(1, os.cpu_count() or 1)
    try:
        count = int(n)
    except ValueError:
        count = 0
    if count < 1:
        raise InputError(f"cluster {spec!r}: write 'local' or 'local:N' with N worker processes (a whole number >= 1)")
    return count


def _client(cluster):
    """A Dask client for ``cluster``, and the things to close after the sweep (those it started).

    ``"local"`` or ``"local:N"`` starts a local cluster of N worker processes (default one per CPU)
    owned by the sweep: it is closed at the end, and its workers end with the sweep's process even
    when that is killed (distributed's own parent-alive pipe, and the watchdog of :func:`_end_with`
    installed as a worker plugin). A scheduler address or a client is the user's and is left alone.
    """
    distributed = _dask()
    if isinstance(cluster, distributed.Client):
        return cluster, []
    if isinstance(cluster, str):
        n = _local_workers(cluster)
        if n is not None:
            local = distributed.LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                                             dashboard_address=None)
            try:
                client = distributed.Client(local)
                client.register_plugin(_plugin_class()(os.getpid()))
            except BaseException:
                local.close()
                raise
            return client, [client.close, local.close]
        try:
            client = distributed.Client(cluster, timeout="20s")
        except (OSError, TimeoutError) as exc:
            raise PlanarError(f"cannot reach the Dask scheduler at {cluster!r} ({exc}); start it "
                              "(dask scheduler / dask worker) or check the address") from None
        return client, [client.close]
    if hasattr(cluster, "scheduler_address"):
        client = distributed.Client(cluster)
        return client, [client.close]
    raise InputError(f"cluster must be a scheduler address 'tcp://host:port', 'local[:N]', a dask.distributed.Client "
                     f"or a cluster object, got {type(cluster).__name__}")


def _run_dask(feed: _Feed, payload, on_done, cluster, retries, deadline):
    """On a Dask cluster; at most as many points are submitted as the cluster has worker threads."""
    distributed = _dask()
    fn, outputs, fid = payload
    client, closers = _client(cluster)
    inflight: dict = {}  # future -> (key, params)
    try:
        token = os.urandom(4).hex()
        slots, counted = 1, -math.inf
        while True:
            if time.monotonic() - counted > 5.0:
                slots, counted = max(1, sum(client.nthreads().values())), time.monotonic()
            while len(inflight) < slots:
                task = feed.next()
                if task is None:
                    break
                key, params = task
                f = client.submit(_compute_point, fn, params, outputs, key, fid, key=f"planar-sweep-{key}-{token}",
                                  pure=False, retries=retries)
                inflight[f] = task
            if not inflight:
                if feed.exhausted:
                    break
                feed.pause(deadline)
                continue
            t = _time_left(deadline)
            if t == 0.0:
                raise TimeoutError
            if feed.waiting and len(inflight) < slots:
                t = _POLL if t is None else min(t, _POLL)
            try:
                distributed.wait(list(inflight), timeout=t, return_when="FIRST_COMPLETED")
            except Exception as exc:  # the time ran out, or a future was cancelled: the statuses tell
                if type(exc).__name__ not in ("TimeoutError", "FuturesCancelledError", "CancelledError"):
                    raise
            done = [f for f in inflight if f.status != "pending"]
            if not done and deadline is not None and time.monotonic() >= deadline:
                raise TimeoutError
            for f in done:
                key, params = inflight.pop(f)
                if f.status == "finished":
                    rec = f.result()
                elif f.status == "cancelled":
                    rec = _failed_record(key, params, fid, outputs, "Cancelled",
                                         "the task was cancelled on the cluster (by another client or a restart)")
                else:
                    exc = f.exception()
                    kind = type(exc).__name__
                    msg = str(exc)
                    if kind == "KilledWorker":
                        msg = (f"the Dask workers running this point died too often ({msg}); run the point alone "
                               "(workers=0) to see why")
                    rec = _failed_record(key, params, fid, outputs, kind, msg)
                f.release()
                on_done(rec)
    except BaseException as exc:
        try:
            client.cancel(list(inflight))
        except Exception:
            pass
        if type(exc).__name__ == "TimeoutError":
            raise TimeoutError from None
        raise
    finally:
        for close in closers:
            try:
                close()
            except Exception:
                pass
