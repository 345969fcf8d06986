"""Element blocks on every core: a small shared thread pool for the batched array work.

Assembly, Jacobian checks, Gauss-point strains and patch fits run block by block over element
chunks. numpy's array loops, small matrix products and LAPACK calls let go of the interpreter lock,
so the chunks of one stage run side by side on the cores of the machine, in threads of one process
(no copies of the mesh). Results come back in chunk order and are combined in the same order
whatever the number of threads, so a model gives the same numbers, to the last bit, on one thread
or many.

The number of threads is the number of cores this process may use, or the environment variable
``PLANAR_THREADS`` (``1`` runs everything in the calling thread).
"""
from __future__ import annotations

import os
import threading
from concurrent.futures import Future, ThreadPoolExecutor
from typing import Callable, Iterable, TypeVar

from .errors import InputError

__all__ = ["threads", "map_chunks", "background"]

T = TypeVar("T")

_lock = threading.Lock()
_pool: ThreadPoolExecutor | None = None
_pool_size = 0
_pool_pid = 0
_local = threading.local()


def threads() -> int:
    """Threads the batched stages use: ``PLANAR_THREADS`` if set, else the usable cores.

    Raises
    ------
    InputError
        When ``PLANAR_THREADS`` is set to something other than a whole number of at least 1.
    """
    env = os.environ.get("PLANAR_THREADS", "").strip()
    if env:
        try:
            n = int(env)
        except ValueError:
            n = 0
        if n < 1:
            raise InputError(f"the environment variable PLANAR_THREADS must be a whole number of at least 1 "
                             f"(threads for the batched stages), got {env!r}; set it to 1, 2, ... or unset it")
        return n
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except (AttributeError, OSError):  # not Linux
        return max(1, os.cpu_count() or 1)


def _executor(n: int) -> ThreadPoolExecutor:
    global _pool, _pool_size, _pool_pid
    with _lock:
        if _pool is None or _pool_size != n or _pool_pid != os.getpid():
            if _pool is not None and _pool_pid == os.getpid():
                _pool.shutdown(wait=False)  # PLANAR_THREADS changed: let the old threads end
            # a forked child (a worker process of a sweep) starts a pool of its own
            _pool = ThreadPoolExecutor(max_workers=n, thread_name_prefix="planar")
            _pool_size, _pool_pid = n, os.getpid()
        return _pool


def _run(fn: Callable[[int], T], start: int) -> T:
    _local.inside = True
    try:
        return fn(start)
    finally:
        _local.inside = False


def map_chunks(fn: Callable[[int], T], starts: Iterable[int]) -> list[T]:
    """``[fn(s) for s in starts]``, the calls spread over the threads, results in order.

    ``fn`` must work on its own chunk only (write to disjoint slices or return its part). An error
    in any call is raised here, after the calls already running have ended; the calls not yet
    started are dropped. A call made from inside a pool thread runs serially (no nested pools).
    """
    starts = list(starts)
    n = threads()
    if n <= 1 or len(starts) <= 1 or getattr(_local, "inside", False):
        return [fn(s) for s in starts]
    ex = _executor(n)
    futures: list[Future] = [ex.submit(_run, fn, s) for s in starts]
    try:
        return [f.result() for f in futures]
    except BaseException:
        for f in futures:
            f.cancel()
        for f in futures:
            if not f.cancelled():
                try:
                    f.exception()
                except BaseException:  # noqa: the first error is the one raised
                    pass
        raise


def _lower_priority() -> None:
    """Give the calling thread a lower scheduling priority (Linux: per thread), so that it takes
    only cores that the foreground work leaves idle."""
    try:
        os.setpriority(os.PRIO_PROCESS, threading.get_native_id(), BACKGROUND_NICE)
    except (AttributeError, OSError):  # not Linux, or not allowed: run at the usual priority
        pass


#: niceness of background threads (0 is the usual priority, 19 the lowest)
BACKGROUND_NICE = 10


def background(fn: Callable[..., T], *args, **kwargs) -> Future:
    """Run ``fn(*args, **kwargs)`` in a daemon thread of its own; its result or error in a Future.

    Meant for work that does not need the cores at once: it runs serially (its own
    :func:`map_chunks` calls use no pool) and at a lower priority (``BACKGROUND_NICE``), for
    instance while a solver's ordering phase leaves a core idle.
    """
    fut: Future = Future()

    def run() -> None:
        if not fut.set_running_or_notify_cancel():
            return
        _local.inside = True
        _lower_priority()
        try:
            fut.set_result(fn(*args, **kwargs))
        except BaseException as exc:  # noqa: handed to whoever asks for the result
            fut.set_exception(exc)

    threading.Thread(target=run, name="planar-background", daemon=True).start()
    return fut
