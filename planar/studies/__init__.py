"""Design studies: parameter sweeps, run in parallel, stored point by point, resumable.

A sweep runs the user's function over a list or a grid of parameter points (geometry parameters in,
a model or a result out), takes the chosen outputs of each (peak stress, Kt, margin of safety, a
displacement at a point) and collects them into a :class:`SweepTable`: CSV and JSON, written
atomically, and a plot against the parameter.

The user function
-----------------
``function(**params)`` returns one of

- a :class:`planar.Result`, a dict of results (``planar.solve(model)``) or a :class:`planar.Model`
  (solved on the worker): the requested outputs are computed from it on the worker;
- a mapping of output name -> number: these are the outputs;
- a pair ``(result_like, {name: number, ...})``: both; the extra numbers are recorded as outputs
  and an output may refer to them by name (for example a nominal stress).

It must be importable by the worker processes: give a top-level function of a module (defined with
``def`` at module level, not a lambda or a nested function), the string ``"module:function"``, or
``"path/to/file.py:function"`` (the file is imported by each worker from that path).
For a script run as ``python script.py`` the function lives in ``__main__``; that works for local
processes and a local Dask cluster when the script guards its work with
``if __name__ == "__main__":``. On a remote Dask cluster the module must be installed on every worker
(or sent with ``client.upload_file``), and so must planar.

Running
-------
- ``workers=None`` (default): local worker processes (``concurrent.futures.ProcessPoolExecutor``,
  forkserver start on Linux, spawn elsewhere: every worker has its own gmsh state), one per CPU;
  ``workers=n``: n processes; ``workers=0``: in this process, one point after the other.
- ``cluster="tcp://host:port"`` or a ``dask.distributed.Client``: on a Dask cluster (optional extra
  ``pip install "planar[cluster]"``). Dask reschedules the points of a worker that dies (up to its
  ``distributed.scheduler.allowed-failures`` setting, default 3) and re-runs a task that raised up to
  ``retries`` times. ``cluster="local"`` or ``"local:N"`` starts a local Dask cluster of N worker
  processes for this sweep and closes it at the end; a cluster given by address or client is the
  user's and is left running.

Stopping
--------
Workers end with the sweep's process however it ends (Ctrl-C, SIGTERM, kill -9, a crash): on Linux
each local worker asks the kernel for SIGKILL when its parent ends (``prctl(PR_SET_PDEATHSIG)``;
its parent is the multiprocessing forkserver, which ends with the sweep's process), and everywhere a
watchdog thread in each worker exits it when the sweep's process is gone; the workers of a local
Dask cluster the sweep started get the same. Measured: all gone about 0.2-0.5 s after a kill -9,
also while a worker is inside a compiled call that holds the interpreter lock. SIGTERM stops a
sweep like Ctrl-C (workers stopped, claims released, finished points kept), then the program ends
with status 143.

Storing and resuming
--------------------
With ``store=DIR`` every finished point is written at once, atomically, as one small JSON file
``DIR/<key>.json``, where the key is a stable hash of the function's name and the parameters. A sweep
started again with the same store computes only the points that are missing (and, with
``retry_failed=True``, those that failed).

Several runs may share one store at the same time (two terminals, or several machines on a shared
folder): each point is computed once. A run claims a point just before a worker computes it, by
creating ``DIR/<key>.claim`` exclusively (pid, host, start time), and refreshes the claim's time as
a heartbeat while the point is computed; it skips points other live runs hold, takes over claims
that are stale (made on this host by a process that has ended, or with a heartbeat older than
``claim_timeout``, default 60 s: hosts' clocks must agree to well within it), and when only points
held by others are left it waits for their records, looking at the store every 0.25 s. Every run
ends with the same complete table. Runs sharing a store should ask for the same outputs (a record
with other outputs is computed again), and its file system must honour exclusive creation
(``O_EXCL``: local disks, NFS version 3 and later). A point whose function raises records the error (type and
message) and the sweep goes on; a point whose worker process dies is retried ``retries`` times and
then recorded as failed.

Progress (points done, failed, remaining, estimated time left) goes to stderr when it is a terminal,
or when ``verbose=True``. Units are the user's throughout.

Layout
------
One module per idea: :mod:`~planar.studies.outputs` (what is taken from each point),
:mod:`~planar.studies.parameters` (grids and point keys), :mod:`~planar.studies.compute` (the user
function and one point, on a worker), :mod:`~planar.studies.store` (the point store and the claims of
runs sharing it), :mod:`~planar.studies.workers` (worker processes end with the sweep),
:mod:`~planar.studies.progress`, :mod:`~planar.studies.runners` (in this process, local processes, a
Dask cluster), :mod:`~planar.studies.table` and :mod:`~planar.studies.study` (:func:`sweep` itself).
The ``planar sweep`` command is :mod:`planar.cli.sweep`. Every name is importable from
``planar.studies`` as before.

Examples
--------
>>> import planar
>>> from planar.studies import sweep, Peak
>>> table = sweep("planar.studies:example_strap", grid={"width": [20.0, 40.0]},
...               outputs={"peak": Peak("sigma_xx", method="average")}, workers=0)
>>> table.column("peak").round(6).tolist()        # 2000 N over 2 mm x width, in MPa
[50.0, 25.0]
"""
from __future__ import annotations

# the public names, and the private ones tests and worker processes reach as planar.studies._name
from .outputs import (ConcentrationFactor, Output, parse_output, Peak, SafetyMargin, ValueAt, _check_outputs,
                      _check_stress_args, _DefaultPeak, _describe_output, _METHODS, _number, _OUTPUT_FORMS)
from .parameters import grid, point_key, _canonical, _clean_point, _clean_value, _grid_points
from .compute import (resolve_function, _compute_point, _failed_record, _is_number, _json_number,
                      _module_from_file, _pick, _results_of, _split_return)
from .store import CLAIM_TIMEOUT, _Claims, _Feed, _jsonable, _pid_alive, _POLL, _reusable, _STATUS, _Store
from .workers import (_drop_forkserver_pipe, _end_with, _PR_SET_PDEATHSIG, _set_parent_death_signal,
                      _share_cores, _sigterm_stops_the_sweep, _worker_start)
from .progress import SweepProgress, _duration, _Reporter
from .runners import (_client, _dask, _kill_pool, _local_workers, _mp_context, _plugin_class, _run_dask,
                      _run_processes, _run_serial, _time_left)
from .table import load_table, SweepTable
from .study import sweep

__all__ = ["sweep", "grid", "SweepTable", "SweepProgress", "Output", "Peak", "ValueAt",
           "ConcentrationFactor", "SafetyMargin", "parse_output", "point_key", "resolve_function",
           "load_table", "example_strap"]


# ============================================================================ a built-in example function
def example_strap(width: float = 40.0, length: float = 100.0, thickness: float = 2.0, load: float = 2000.0,
                  element: str = "Q8"):
    """A strap pulled at one end: the function of the sweep examples and tests (no gmsh needed).

    Parameters
    ----------
    width, length, thickness : float
        Strap size (e.g. mm).
    load : float
        Total pull on the right end (e.g. N), as a uniform traction.
    element : str
        Element type of the structured mesh.

    Returns
    -------
    Result
        The solved case ``"pull"``; sigma_xx = load / (width thickness) everywhere (common practice).
    """
    from ..core.loads import Traction
    from ..core.materials import Isotropic
    from ..core.model import Model
    from ..core.static import solve
    from ..core.supports import Roller
    from ..geometry.structured import rectangle_mesh

    mesh = rectangle_mesh(float(length), float(width), 4, 2, element)
    model = Model(mesh, Isotropic(70e3, 0.33), thickness=float(thickness), units="N, mm, MPa")
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=float(load) / (float(width) * float(thickness))), case="pull")
    return solve(model)["pull"]
