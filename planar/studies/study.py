"""The sweep itself: points, outputs and store checked, runner chosen, table built."""
from __future__ import annotations

import os
import pickle
import sys
import time
from typing import Any, Callable, Iterable, Mapping, Sequence

import numpy as np

from ..core.values import number
from ..core.errors import InputError, ResourceError
from .parameters import _clean_point, _grid_points, point_key
from .outputs import _DefaultPeak, _check_outputs, _describe_output
from .compute import function_digest, resolve_function
from .progress import SweepProgress, _Reporter
from .runners import _local_workers, _run_dask, _run_processes, _run_serial
from .store import CLAIM_TIMEOUT, _Claims, _Feed, _Store, _reusable
from .table import SweepTable
from .workers import _sigterm_stops_the_sweep


# ============================================================================ the sweep
def sweep(function: Callable | str, points: Sequence[Mapping[str, Any]] | None = None, *,
          grid: Mapping[str, Iterable] | None = None, fixed: Mapping[str, Any] | None = None,
          outputs: Mapping[str, Any] | Sequence | None = None, store: str | os.PathLike | None = None,
          workers: int | None = None, cluster=None, retries: int = 2, retry_failed: bool = False,
          timeout: float | None = None, verbose: bool = False, progress: bool | None = None,
          on_point: Callable[[dict, SweepProgress], None] | None = None,
          claim_timeout: float = CLAIM_TIMEOUT) -> SweepTable:
    """Run a function over parameter points, in parallel, and collect its outputs in a table.

    Parameters
    ----------
    function : callable or str
        ``function(**params)`` returning a Result, ``planar.solve(model)``, a Model, a mapping of
        numbers, or ``(result, {name: number})`` (see the module notes). A top-level function or
        ``"module:function"``, so that workers can import it.
    points : sequence of mapping, optional
        The parameter points, e.g. ``[{"d": 10.0}, {"d": 20.0}]``.
    grid : mapping of str to sequence, optional, keyword-only
        Parameter name -> values: every combination is a point (see :func:`grid`). Give ``points``
        or ``grid``.
    fixed : mapping, optional
        Parameters added to every point.
    outputs : mapping of str to Output, callable or str, optional
        Name -> what to take from each point's result: :class:`Peak`, :class:`ValueAt`,
        :class:`ConcentrationFactor`, :class:`SafetyMargin`, a top-level function
        ``f(result, values) -> float``, or a text form (:func:`parse_output`). Default: none when
        the function returns numbers, else ``{"peak_von_mises": Peak("von_mises")}``.
    store : path, optional
        Folder of the point files; makes the sweep resumable. Without it nothing is kept on disk.
    workers : int, optional
        Local worker processes (default: one per CPU); 0 runs the points in this process.
    cluster : str or dask.distributed.Client, optional
        Run on a Dask cluster: a scheduler address ``"tcp://host:port"`` or a client (the user's,
        left running), or ``"local"`` / ``"local:N"``: a local cluster of N worker processes (default
        one per CPU) that the sweep starts and closes.
    retries : int, default 2
        How often a point whose worker died (or, on Dask, whose task raised) is tried again.
    retry_failed : bool
        Compute again the points the store records as failed.
    timeout : float, optional
        Give up after this many seconds (the points finished by then stay in the store).
    verbose : bool
        Report progress on stderr even when it is not a terminal.
    progress : bool, optional
        Force the progress report on or off (default: on for a terminal or ``verbose``).
    on_point : callable, optional
        Called as ``on_point(record, progress)`` after every finished point, in this process; an
        exception it raises (e.g. KeyboardInterrupt) stops the sweep, and the points stored so far
        stay stored.
    claim_timeout : float, default 60
        Seconds after which the claim of a point whose run stopped refreshing it is taken over by
        another run on the same store (see the module notes; a run on the same host that has ended
        is taken over at once).

    Returns
    -------
    SweepTable

    Raises
    ------
    InputError
        No points, both or neither of ``points``/``grid``, a duplicate point, bad parameters or
        outputs, or a function workers cannot import.
    ResourceError
        The timeout ran out.
    PlanarError
        ``cluster`` given but Dask is not installed, or the scheduler cannot be reached.

    Examples
    --------
    >>> from planar.studies import sweep
    >>> t = sweep("planar.studies:example_strap", [{"width": 25.0}, {"width": 50.0}],
    ...           outputs={"stretch": "at:100,0:ux@average"}, workers=0)
    >>> t.column("stretch") / t.column("stretch")[0]
    array([1. , 0.5])
    """
    t_start = time.perf_counter()
    if (points is None) == (grid is None):
        raise InputError("give the sweep points either as points=[{...}, ...] or as grid={name: values}")
    pts = _grid_points(**grid) if grid is not None else list(points)
    if not pts:
        raise InputError("the sweep has no points")
    extra = _clean_point(fixed or {})
    pts = [{**_clean_point(p), **extra} for p in pts]
    fn, fid = resolve_function(function)
    source = function_digest(fn)  # a stored point made by another version of the function is not reused
    specs = _check_outputs(outputs)
    payload_fn = fid if isinstance(function, str) else fn  # a name is imported again on the worker
    if workers is not None:
        if isinstance(workers, bool) or not isinstance(workers, (int, np.integer)) or workers < 0:
            raise InputError(f"workers must be a whole number >= 0 (0: in this process), got {workers!r}")
    if isinstance(retries, bool) or not isinstance(retries, (int, np.integer)) or retries < 0:
        raise InputError(f"retries must be a whole number >= 0, got {retries!r}")
    if timeout is not None and not (float(timeout) > 0):
        raise InputError(f"timeout must be a positive number of seconds, got {timeout!r}")
    if isinstance(claim_timeout, bool) or not (number(claim_timeout, "claim_timeout") > 0):
        raise InputError(f"claim_timeout must be a positive number of seconds, got {claim_timeout!r}")
    if isinstance(cluster, str):
        _local_workers(cluster)  # a bad 'local:N' is an input error before any work
    keys = [point_key(fid, p) for p in pts]
    seen: dict[str, int] = {}
    for i, k in enumerate(keys):
        if k in seen:
            raise InputError(f"the sweep point {pts[i]} is given twice (as points {seen[k] + 1} and {i + 1})")
        seen[k] = i
    parameters = list(dict.fromkeys(n for p in pts for n in p))
    st = _Store(store) if store is not None else None

    default_peak = not specs
    if default_peak:  # the peak von Mises stress of a result; nothing extra for a function giving numbers
        specs = {"peak_von_mises": _DefaultPeak()}
    described = {n: _describe_output(o) for n, o in specs.items()}
    if workers != 0 and cluster is None:
        for n, o in specs.items():
            try:
                pickle.dumps(o)
            except Exception as exc:
                raise InputError(f"output {n!r} cannot be sent to worker processes ({exc}); use a module-level "
                                 "function or one of Peak, ValueAt, ConcentrationFactor, SafetyMargin") from None

    records: dict[str, dict] = {}
    reused = stale = 0
    t_wall = time.time()
    if st is not None:
        for k in keys:
            rec = st.load(k)
            if _reusable(rec, fid, described, retry_failed, source):
                records[k] = rec
                reused += 1
            elif _reusable(rec, fid, described, retry_failed):  # the same point of another version of the function
                stale += 1
    todo = [(k, p) for k, p in zip(keys, pts) if k not in records]

    prog = SweepProgress(total=len(pts), done=reused, reused=reused,
                         failed=sum(1 for r in records.values() if r.get("status") != "done"))
    show = progress if progress is not None else (verbose or sys.stderr.isatty())
    report = _Reporter(bool(show))

    computed = 0

    def on_done(rec: dict, ours: bool = True) -> None:
        """A point is finished: computed by this run (stored, claim released) or by another run."""
        nonlocal computed
        if ours:
            rec["source"] = rec.get("source") or source  # a failure recorded here (a worker that died)
            if st is not None:
                st.save(rec)
            if claims is not None:
                claims.release(rec["key"])
            computed += 1
        else:
            prog.reused += 1
        records[rec["key"]] = rec
        prog.done += 1
        prog.failed += rec.get("status") != "done"
        prog.elapsed = time.perf_counter() - t_start
        report(prog)
        if on_point is not None:
            on_point(rec, prog)

    def accept(rec) -> bool:
        """A record found in the store while this run goes: reusable, or a failure of another run of now."""
        if _reusable(rec, fid, described, retry_failed, source):
            return True
        return (rec is not None and rec.get("function") == fid and rec.get("source") == source
                and rec.get("status") == "failed"
                and isinstance(rec.get("finished"), (int, float)) and rec["finished"] >= t_wall)

    payload = (payload_fn, specs, fid)
    deadline = None if timeout is None else time.monotonic() + float(timeout)
    claims = _Claims(st.dir, float(claim_timeout)) if st is not None and todo else None
    feed = _Feed(todo, st, claims, accept, on_done)
    if todo:
        report(prog)
    try:
        with _sigterm_stops_the_sweep():
            if not todo:
                pass  # everything is in the store
            elif cluster is not None:
                _run_dask(feed, payload, on_done, cluster, int(retries), deadline)
            elif workers == 0:
                _run_serial(feed, payload, on_done, deadline)
            else:
                n = int(workers) if workers is not None else (os.cpu_count() or 1)
                _run_processes(feed, payload, on_done, max(1, n), int(retries), deadline)
    except TimeoutError:
        report(prog, final=True)
        held = (f" ({len(feed.waiting)} of them being computed by other runs on the same store)"
                if feed.waiting else "")
        raise ResourceError(
            f"the sweep ran out of its timeout of {timeout:g} s with {prog.remaining} of {prog.total} points "
            f"left{held}; the finished points are stored: run it again with the same store to go on, or raise "
            "timeout") from None
    finally:
        if claims is not None:
            claims.close()
    prog.elapsed = time.perf_counter() - t_start
    report(prog, final=True)

    ordered = [records[k] for k in keys]
    out_names = list(specs) if not default_peak else []
    for r in ordered:  # then the numbers the function reported (not outputs asked for in another run)
        asked = r.get("output_specs", {})
        for o in r.get("outputs", {}):
            if o not in out_names and (o not in asked or (default_peak and o in specs)):
                out_names.append(o)
    return SweepTable(fid, parameters, out_names, ordered, computed=computed, reused=prog.reused,
                      seconds=time.perf_counter() - t_start, stale=stale)
