"""Worker processes end with the sweep: parent-death signal, forkserver pipe, watchdog, SIGTERM."""
from __future__ import annotations

import multiprocessing
import os
import sys
import time

from .store import _pid_alive


# ============================================================================ workers end with the sweep
_PR_SET_PDEATHSIG = 1  # from <linux/prctl.h>


def _drop_forkserver_pipe() -> None:
    """In a forkserver child: close this process's copy of the forkserver's "alive" pipe.

    The forkserver ends when every holder of the pipe's write end is gone; each child gets a copy
    (``multiprocessing.forkserver``), so a worker that keeps it keeps the forkserver alive after the
    sweep's process died. Without the copy, the forkserver ends with the sweep's process, and the
    parent-death signal then ends the workers.
    """
    try:
        from multiprocessing import forkserver

        fs = forkserver._forkserver
        fd = getattr(fs, "_forkserver_alive_fd", None)
        if fd is not None and getattr(fs, "_forkserver_pid", None) is None:  # inherited, not our own server
            os.close(fd)
            fs._forkserver_alive_fd = None
    except Exception:
        pass


def _set_parent_death_signal() -> bool:
    """Linux: have the kernel send SIGKILL to this process when its parent ends (prctl(2))."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        import ctypes
        import signal

        libc = ctypes.CDLL(None, use_errno=True)
        return libc.prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0) == 0
    except (OSError, AttributeError):
        return False


def _end_with(main_pid: int, deathsig: bool = False, interval: float = 1.0) -> None:
    """Make this worker process end when the sweep's process ``main_pid`` ends, however it ends.

    Two mechanisms (common practice for worker processes; the Linux prctl(2) manual page):

    - ``deathsig`` (Linux): ``prctl(PR_SET_PDEATHSIG, SIGKILL)``: the kernel kills this process when
      its parent ends, even while it is inside a compiled call. The signal fires when the *thread*
      that created the child ends, not the process, so it is asked for only where that thread lives
      as long as the child: (a) local workers are forked by the multiprocessing forkserver, whose one
      thread forks every worker and lives as long as the server, and the server is tied to the
      sweep's process by :func:`_drop_forkserver_pipe`; (b) the workers of the sweep's own Dask
      cluster are started by a helper thread of ``distributed`` that stops only after the worker
      process has exited. (Workers started with "spawn" by a pool are made by the thread that
      calls ``submit``, which may end before the pool; they get only the watchdog.) As prctl(2)
      advises, the parent pid is checked again after the call, in case the parent ended before it.
    - Everywhere: a daemon watchdog thread waits on the sentinel of the parent process (the pipe
      ``multiprocessing`` keeps open in the sweep's process; it reads as closed when that process is
      gone) with a timeout of ``interval`` seconds, and also compares ``os.getppid()`` with the
      parent at start-up and checks that ``main_pid`` still runs. When any says the sweep is gone,
      the worker exits at once with ``os._exit``. It needs the interpreter lock, so a compiled call
      that holds the lock delays it to the end of that call.
    """
    import threading

    ppid = os.getppid()
    if deathsig and _set_parent_death_signal() and os.getppid() != ppid:
        os._exit(1)
    if not _pid_alive(main_pid):
        os._exit(1)
    sentinel = None
    try:
        parent = multiprocessing.parent_process()
        if parent is not None and parent.pid == main_pid:
            sentinel = parent.sentinel
    except Exception:
        sentinel = None

    def watch():
        from multiprocessing.connection import wait

        nonlocal sentinel
        while True:
            if sentinel is not None:
                try:
                    if wait([sentinel], timeout=interval):
                        break
                except (OSError, ValueError):
                    sentinel = None
            else:
                time.sleep(interval)
            if os.getppid() != ppid or not _pid_alive(main_pid):
                break
        os._exit(1)

    threading.Thread(target=watch, name="planar-sweep-watchdog", daemon=True).start()


def _worker_start(workers: int, main_pid: int, forkserver_child: bool) -> None:
    """Initializer of the local worker processes."""
    import signal

    if forkserver_child:
        _drop_forkserver_pipe()
    _end_with(main_pid, deathsig=forkserver_child)
    try:  # Ctrl-C reaches the whole process group: the sweep's process stops the workers itself
        signal.signal(signal.SIGINT, signal.SIG_IGN)
    except (ValueError, OSError):
        pass
    _share_cores(workers)


def _sigterm_stops_the_sweep():
    """While a sweep runs in the main thread: SIGTERM stops it like Ctrl-C (workers stopped, claims
    released, finished points kept) and then ends the program with status 143, as SIGTERM would.
    A handler the program set itself is left alone."""
    import contextlib
    import signal
    import threading

    @contextlib.contextmanager
    def scope():
        old = None
        if os.name == "posix" and threading.current_thread() is threading.main_thread():
            try:
                if signal.getsignal(signal.SIGTERM) == signal.SIG_DFL:
                    def stop(signum, frame):
                        raise SystemExit(128 + signum)

                    old = signal.signal(signal.SIGTERM, stop)
            except (ValueError, OSError):
                old = None
        try:
            yield
        finally:
            if old is not None:
                signal.signal(signal.SIGTERM, old)

    return scope()


def _share_cores(workers: int) -> None:
    """In a worker process: use this worker's share of the cores (unless PLANAR_THREADS is set)."""
    if not os.environ.get("PLANAR_THREADS"):
        from ..core.parallel import threads

        os.environ["PLANAR_THREADS"] = str(max(1, threads() // max(1, workers)))
