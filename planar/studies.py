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

import argparse
import csv
import hashlib
import importlib
import io
import itertools
import json
import math
import multiprocessing
import os
import pickle
import socket
import sys
import time
import traceback
from collections import Counter
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Iterable, Mapping, Sequence

import numpy as np

from .cli import command
from .core.values import number
from .core.errors import InputError, PlanarError, ResourceError, unknown_name
from .post.files import atomic_write_text

__all__ = ["sweep", "grid", "SweepTable", "SweepProgress", "Output", "Peak", "ValueAt",
           "ConcentrationFactor", "SafetyMargin", "parse_output", "point_key", "resolve_function",
           "load_table", "example_strap"]

_STATUS = ("done", "failed")
_METHODS = ("spr", "average")


# ============================================================================ outputs
class Output:
    """Base of the outputs a sweep takes from each point's result.

    A subclass (or any top-level function ``f(result, values) -> float``) computes one number from
    the result of a point; ``values`` holds the point's parameters and the extra numbers its function
    reported. Outputs are sent to the workers, so they must be picklable (module-level classes and
    functions are).
    """

    case: str | None = None

    def __call__(self, result, values: Mapping[str, Any]) -> float:  # pragma: no cover - abstract
        raise NotImplementedError

    def describe(self) -> str:
        return repr(self)


def _number(v, what: str, values: Mapping[str, Any] | None = None) -> float:
    """A number given directly, or by the name of a parameter or reported value."""
    if isinstance(v, str) and values is not None:
        if v not in values:
            raise unknown_name(f"value for {what}", v, values.keys(),
                               "Name a parameter of the point, or a number the function returned")
        v = values[v]
    if isinstance(v, str):
        raise InputError(f"{what} must be a number or the name of a parameter, got {v!r}")
    return number(v, what)


def _check_stress_args(fld: str, method: str) -> None:
    from .core.result import FIELDS

    if fld not in FIELDS:
        raise InputError(f"unknown field {fld!r}; pick one of {', '.join(FIELDS)}")
    if method not in _METHODS:
        raise InputError(f"unknown stress recovery {method!r}; pick one of {', '.join(_METHODS)}")


@dataclass(frozen=True)
class Peak(Output):
    """Largest (or smallest, or largest magnitude) nodal value of a field.

    Parameters
    ----------
    field : str, default "von_mises"
        Any nodal field of :meth:`planar.Result.field`.
    method : {"spr", "average"}
        Nodal stress recovery.
    kind : {"max", "min", "absmax"}
        ``"absmax"`` gives the signed value of largest magnitude.
    case : str, optional
        Load case, when the point's result has several.
    """

    field: str = "von_mises"
    method: str = "spr"
    kind: str = "max"
    case: str | None = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        if self.kind not in ("max", "min", "absmax"):
            raise InputError(f"Peak kind must be 'max', 'min' or 'absmax', got {self.kind!r}")

    def __call__(self, result, values):
        if self.kind == "min":
            return result.min(self.field, method=self.method)[0]
        return result.max(self.field, method=self.method, absolute=self.kind == "absmax")[0]


@dataclass(frozen=True)
class ValueAt(Output):
    """A field's value at a point of the plate (e.g. a displacement, ``field="ux"``).

    Parameters
    ----------
    point : (float, float)
        In the model's length unit; it must lie inside the mesh.
    field : str
    method : {"spr", "average"}
    case : str, optional
    """

    point: tuple[float, float]
    field: str = "displacement"
    method: str = "spr"
    case: str | None = None

    def __post_init__(self):
        p = tuple(float(c) for c in np.asarray(self.point, dtype=float).reshape(-1))
        if len(p) != 2 or not all(math.isfinite(c) for c in p):
            raise InputError(f"ValueAt needs a point (x, y), got {self.point!r}")
        object.__setattr__(self, "point", p)
        _check_stress_args(self.field, self.method)

    def __call__(self, result, values):
        return float(result.at(self.point, self.field, method=self.method))


@dataclass(frozen=True)
class ConcentrationFactor(Output):
    """Stress concentration factor Kt = peak / nominal (:func:`planar.post.checks.kt`).

    Parameters
    ----------
    nominal : float or str
        Nominal stress, or the name of a parameter or of a value the function returned.
    field : str, default "von_mises"
    method : {"spr", "average"}
    absolute : bool
        Largest magnitude instead of the largest signed value.
    case : str, optional
    """

    nominal: float | str
    field: str = "von_mises"
    method: str = "spr"
    absolute: bool = False
    case: str | None = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)
        if not isinstance(self.nominal, str):
            _number(self.nominal, "the nominal stress")

    def __call__(self, result, values):
        from .post.checks import kt

        nom = _number(self.nominal, "the nominal stress", values)
        return kt(result, nom, field=self.field, method=self.method, absolute=self.absolute).Kt


@dataclass(frozen=True)
class SafetyMargin(Output):
    """Margin of safety allowable / (FS x peak) - 1 (:func:`planar.post.checks.margin_of_safety`).

    Parameters
    ----------
    allowable : float or str
        Allowable stress, or the name of a parameter or reported value.
    factor_of_safety : float or str, default 1.0
    field : str, default "von_mises"
    method : {"spr", "average"}
    case : str, optional
    """

    allowable: float | str
    factor_of_safety: float | str = 1.0
    field: str = "von_mises"
    method: str = "spr"
    case: str | None = None

    def __post_init__(self):
        _check_stress_args(self.field, self.method)

    def __call__(self, result, values):
        from .post.checks import margin_of_safety

        return margin_of_safety(result, _number(self.allowable, "the allowable", values),
                                _number(self.factor_of_safety, "the factor of safety", values),
                                field=self.field, method=self.method).margin


_OUTPUT_FORMS = ("max:FIELD", "min:FIELD", "absmax:FIELD", "at:X,Y:FIELD", "kt:FIELD:NOMINAL",
                 "margin:FIELD:ALLOWABLE[:FS]")


def parse_output(text: str) -> Output:
    """An output from its short text form (used by ``planar sweep --output``).

    Forms: ``max:FIELD``, ``min:FIELD``, ``absmax:FIELD``, ``at:X,Y:FIELD``, ``kt:FIELD:NOMINAL``,
    ``margin:FIELD:ALLOWABLE[:FS]``, each optionally ending in ``@average`` or ``@spr`` (the stress
    recovery, default spr). NOMINAL, ALLOWABLE and FS are numbers or names of parameters or of values
    the function returns.

    Examples
    --------
    >>> parse_output("kt:sigma_xx:nominal@average")
    ConcentrationFactor(nominal='nominal', field='sigma_xx', method='average', absolute=False, case=None)
    >>> parse_output("at:10,2.5:uy")
    ValueAt(point=(10.0, 2.5), field='uy', method='spr', case=None)
    """
    s = str(text).strip()
    method = "spr"
    if "@" in s:
        s, method = s.rsplit("@", 1)
    parts = s.split(":")
    kind = parts[0].lower()

    def num_or_name(v):
        try:
            return float(v)
        except ValueError:
            return v

    try:
        if kind in ("max", "min", "absmax") and len(parts) == 2:
            return Peak(parts[1], method=method, kind=kind)
        if kind == "at" and len(parts) == 3:
            xy = [float(c) for c in parts[1].split(",")]
            return ValueAt(tuple(xy), parts[2], method=method)
        if kind == "kt" and len(parts) == 3:
            return ConcentrationFactor(num_or_name(parts[2]), parts[1], method=method)
        if kind == "margin" and len(parts) in (3, 4):
            fs = num_or_name(parts[3]) if len(parts) == 4 else 1.0
            return SafetyMargin(num_or_name(parts[2]), fs, parts[1], method=method)
    except InputError:
        raise
    except ValueError:  # coordinates that are not numbers
        pass
    raise InputError(f"cannot read the output {text!r}; write it as one of {', '.join(_OUTPUT_FORMS)} "
                     "(optionally ending in @average or @spr)")


def _describe_output(o) -> str:
    if isinstance(o, Output):
        return o.describe()
    return f"{getattr(o, '__module__', '?')}:{getattr(o, '__qualname__', repr(o))}"


def _check_outputs(outputs) -> dict[str, Any]:
    if outputs is None:
        return {}
    if isinstance(outputs, (list, tuple)):
        outputs = {str(o) if isinstance(o, str) else f"output_{i + 1}": o for i, o in enumerate(outputs)}
    if not isinstance(outputs, Mapping):
        raise InputError(f"outputs must map names to outputs (Peak(...), ValueAt(...), 'max:von_mises', ...), "
                         f"got {type(outputs).__name__}")
    out = {}
    for name, o in outputs.items():
        if isinstance(o, str):
            o = parse_output(o)
        if not (isinstance(o, Output) or callable(o)):
            raise InputError(f"output {name!r} must be an Output, a callable f(result, values) or a text "
                             f"form such as 'max:von_mises', got {o!r}")
        out[str(name)] = o
    return out


# ============================================================================ parameters
def grid(**axes: Iterable) -> list[dict[str, Any]]:
    """All combinations of parameter values (the first parameter varies slowest).

    Examples
    --------
    >>> grid(d=[10.0, 20.0], t=[2, 3])
    [{'d': 10.0, 't': 2}, {'d': 10.0, 't': 3}, {'d': 20.0, 't': 2}, {'d': 20.0, 't': 3}]
    """
    names = list(axes)
    values = []
    for n in names:
        v = axes[n]
        v = list(np.atleast_1d(v).tolist()) if isinstance(v, np.ndarray) else ([v] if isinstance(v, (str, int, float)) else list(v))
        if not v:
            raise InputError(f"parameter {n!r} has no values")
        values.append(v)
    return [dict(zip(names, combo)) for combo in itertools.product(*values)]


_grid_points = grid  # sweep() has a keyword of the same name


def _clean_value(name: str, v):
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, (int, np.integer)):
        return int(v)
    if isinstance(v, (float, np.floating)):
        x = float(v)
        if not math.isfinite(x):
            raise InputError(f"parameter {name!r} must be finite, got {v!r}")
        return x
    if isinstance(v, str) or v is None:
        return v
    raise InputError(f"parameter {name!r} must be a number, a string, a bool or None (so that it can be "
                     f"stored and hashed), got {type(v).__name__}")


def _clean_point(p) -> dict[str, Any]:
    if not isinstance(p, Mapping):
        raise InputError(f"a sweep point must be a mapping of parameter name -> value, got {p!r}")
    return {str(k): _clean_value(str(k), v) for k, v in p.items()}


def _canonical(v):
    if isinstance(v, bool) or v is None or isinstance(v, str):
        return v
    return repr(float(v))  # 2 and 2.0 are the same point


def point_key(function_id: str, params: Mapping[str, Any]) -> str:
    """Stable key of a sweep point: a SHA-256 hash of the function's name and the parameters.

    Numbers are hashed by their float value (``2`` and ``2.0`` are the same point) and the
    parameter order does not matter.

    Examples
    --------
    >>> point_key("m:f", {"a": 1, "b": "x"}) == point_key("m:f", {"b": "x", "a": 1.0})
    True
    """
    canon = {str(k): _canonical(v) for k, v in params.items()}
    text = json.dumps({"function": function_id, "params": canon}, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8")).hexdigest()[:24]


# ============================================================================ the function
def _module_from_file(path: str, spec_text: str):
    """Import a Python file as a module (once per process); return it and its absolute path."""
    import importlib.util

    p = Path(path).expanduser().resolve()
    if not p.is_file():
        raise InputError(f"the file {path!r} of the sweep function {spec_text!r} does not exist")
    name = f"_planar_sweep_{p.stem}_{hashlib.sha256(str(p).encode()).hexdigest()[:10]}"
    if name in sys.modules:
        return sys.modules[name], str(p)
    spec = importlib.util.spec_from_file_location(name, p)
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module
    try:
        spec.loader.exec_module(module)
    except BaseException:
        del sys.modules[name]
        raise
    return module, str(p)


def resolve_function(function) -> tuple[Callable, str]:
    """The user function and its identity ``"module:qualified_name"``.

    Parameters
    ----------
    function : callable or str
        A top-level function, ``"module:function"`` (``"package.module:name"``) or
        ``"path/to/file.py:function"`` (the file is imported in each worker; it must be reachable at
        the same path there).

    Returns
    -------
    function : callable
    identity : str

    Raises
    ------
    InputError
        A string that is not ``module:function``, a module that cannot be imported, a name the module
        does not have, or a lambda or nested function (workers cannot import those).
    """
    if isinstance(function, str):
        mod, sep, name = function.rpartition(":")
        if not sep or not mod or not name:
            raise InputError(f"a sweep function given by name must read 'module:function' (or "
                             f"'path/to/file.py:function'), got {function!r}")
        if mod.endswith(".py"):
            module, mod = _module_from_file(mod, function)
        else:
            try:
                module = importlib.import_module(mod)
            except ImportError as exc:
                raise InputError(
                    f"cannot import module {mod!r} of the sweep function {function!r} ({exc}); it must be "
                    "importable here and on every worker (on sys.path, or installed)") from None
        function = f"{mod}:{name}"
        obj = module
        for part in name.split("."):
            if not hasattr(obj, part):
                valid = [n for n in dir(module) if not n.startswith("_") and callable(getattr(module, n))]
                raise unknown_name(f"function in module {mod!r}", name, valid)
            obj = getattr(obj, part)
        if not callable(obj):
            raise InputError(f"{function!r} is not callable")
        return obj, function
    if not callable(function):
        raise InputError(f"the sweep function must be a callable or 'module:function', got {function!r}")
    mod = getattr(function, "__module__", None)
    qual = getattr(function, "__qualname__", None)
    if not mod or not qual or "<lambda>" in qual or "<locals>" in qual:
        raise InputError(
            f"the sweep function {function!r} cannot be sent to worker processes: define it with 'def' at the "
            "top level of a module (not a lambda or a function inside a function), or pass 'module:function'")
    return function, f"{mod}:{qual}"


# ============================================================================ one point (runs on a worker)
def _is_number(v) -> bool:
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_))


def _results_of(obj) -> dict:
    from .core.model import Model
    from .core.result import Result
    from .core.static import solve

    if obj is None:
        return {}
    if isinstance(obj, Result):
        return {obj.case: obj}
    if isinstance(obj, Model):
        return solve(obj)
    if isinstance(obj, Mapping) and obj and all(isinstance(v, Result) for v in obj.values()):
        return dict(obj)
    raise InputError(
        f"the sweep function returned a {type(obj).__name__}; return a Result, planar.solve(model), a Model, "
        "a dict of numbers, or (result, {name: number})")


def _split_return(ret) -> tuple[Any, dict[str, float]]:
    if isinstance(ret, tuple) and len(ret) == 2 and isinstance(ret[1], Mapping):
        obj, extras = ret
    elif isinstance(ret, Mapping) and all(_is_number(v) for v in ret.values()):
        obj, extras = None, ret
    else:
        obj, extras = ret, {}
    clean = {}
    for k, v in extras.items():
        if not _is_number(v):
            raise InputError(f"the sweep function reported {k!r} = {v!r}; reported values must be numbers")
        clean[str(k)] = float(v)
    return obj, clean


def _pick(results: dict, case, name: str):
    if not results:
        raise InputError(f"output {name!r} needs a result, but the sweep function returned numbers only; "
                         "return a Result (or (result, numbers)) or drop the output")
    if case is None:
        if len(results) == 1:
            return next(iter(results.values()))
        raise InputError(f"output {name!r}: the result has several load cases ({', '.join(map(repr, results))}); "
                         "name one with case=...")
    if case not in results:
        raise unknown_name("load case", case, results)
    return results[case]


def _json_number(v):
    v = float(v)
    return v if math.isfinite(v) else None


def _compute_point(function, params: dict, outputs: dict, key: str, function_id: str) -> dict:
    """Run one point and return its record; every error of the user's code is caught and recorded."""
    t0 = time.perf_counter()
    record = {"key": key, "function": function_id, "params": params,
              "output_specs": {n: _describe_output(o) for n, o in outputs.items()},
              "worker": f"{socket.gethostname()}:{os.getpid()}"}
    try:
        fn = resolve_function(function)[0] if isinstance(function, str) else function
        ret = fn(**params)
        obj, extras = _split_return(ret)
        results = _results_of(obj)
        values = {**params, **extras}
        out = {}
        for name, spec in outputs.items():
            if isinstance(spec, _DefaultPeak) and not results:
                continue  # the function gave numbers only, and no output was asked for
            r = _pick(results, getattr(spec, "case", None), name)
            out[name] = _json_number(spec(r, values))
        for k, v in extras.items():
            out.setdefault(k, _json_number(v))
        record.update(status="done", outputs=out)
    except Exception as exc:  # the user's code: record it and let the sweep go on
        tb = traceback.format_exception(type(exc), exc, exc.__traceback__)
        record.update(status="failed", outputs={},
                      error={"type": type(exc).__name__, "message": str(exc),
                             "traceback": "".join(tb[-6:])[-4000:]})
    record["seconds"] = time.perf_counter() - t0
    record["finished"] = time.time()
    return record


def _failed_record(key, params, function_id, outputs, kind, message) -> dict:
    return {"key": key, "function": function_id, "params": params,
            "output_specs": {n: _describe_output(o) for n, o in outputs.items()},
            "status": "failed", "outputs": {}, "error": {"type": kind, "message": message},
            "seconds": float("nan"), "finished": time.time(), "worker": ""}


# ============================================================================ store
class _Store:
    """One JSON file per point, written atomically: DIR/<key>.json."""

    def __init__(self, directory):
        self.dir = Path(directory)
        try:
            self.dir.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(f"cannot create the sweep store {str(self.dir)!r}: {exc.strerror}") from None

    def path(self, key: str) -> Path:
        return self.dir / f"{key}.json"

    def load(self, key: str) -> dict | None:
        p = self.path(key)
        try:
            rec = json.loads(p.read_text(encoding="utf-8"))
        except (FileNotFoundError, json.JSONDecodeError, UnicodeDecodeError):
            return None
        return rec if isinstance(rec, dict) and rec.get("key") == key else None

    def save(self, record: dict) -> None:
        atomic_write_text(self.path(record["key"]), json.dumps(_jsonable(record), indent=1, sort_keys=True))


def _jsonable(obj):
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: _jsonable(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_jsonable(v) for v in obj]
    return obj


def _reusable(rec: dict | None, function_id: str, specs: dict[str, str], retry_failed: bool) -> bool:
    if rec is None or rec.get("function") != function_id or rec.get("status") not in _STATUS:
        return False
    if rec["status"] == "failed":
        return not retry_failed
    stored = rec.get("output_specs", {})
    return all(stored.get(n) == d for n, d in specs.items())


# ============================================================================ claims: runs sharing a store
#: Default seconds after which a claim whose heartbeat stopped is taken over by another run.
CLAIM_TIMEOUT = 60.0
_POLL = 0.25  # seconds between looks at the store while this run waits for points other runs hold


def _pid_alive(pid: int) -> bool:
    """Whether process ``pid`` of this host still runs (a zombie counts as ended).

    Only on POSIX; elsewhere this answers True and a claim goes stale by its heartbeat alone
    (``os.kill(pid, 0)`` would end the process on Windows).
    """
    if os.name != "posix":
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # alive, owned by another user
        return True
    except OSError:
        return True
    try:  # Linux: an ended process that nobody has reaped yet is a zombie ("Z") or dead ("X")
        with open(f"/proc/{pid}/stat", "rb") as f:
            state = f.read().rsplit(b")", 1)[1].split()[0]
        return state not in (b"Z", b"X")
    except (OSError, IndexError):
        return True


class _Claims:
    """Claims of the points this run computes: ``DIR/<key>.claim`` beside the point files.

    A claim is created atomically (``O_CREAT | O_EXCL``: of two runs asking at once exactly one
    gets it) and holds the pid, host, run token and start time of its run. While the run holds it, a
    heartbeat thread refreshes the file's modification time every ``timeout / 6`` seconds (at most
    5 s). A claim is stale when its heartbeat is older than ``timeout`` seconds (the hosts' clocks must
    agree to well within it), or at once when it was made on this host by a process that has ended.
    A stale claim is taken over under a second exclusive file, ``DIR/<key>.takeover``, so that of two
    runs taking it over at the same moment only one succeeds.
    """

    def __init__(self, directory: Path, timeout: float = CLAIM_TIMEOUT):
        import threading

        self.dir = Path(directory)
        self.timeout = float(timeout)
        self.interval = min(5.0, self.timeout / 6.0)
        self.host = socket.gethostname()
        self.pid = os.getpid()
        self.token = os.urandom(8).hex()
        self.held: set[str] = set()
        self._lock = threading.Lock()
        self._stop = threading.Event()
        self._thread = None

    def path(self, key: str) -> Path:
        return self.dir / f"{key}.claim"

    def _text(self) -> str:
        return json.dumps({"pid": self.pid, "host": self.host, "run": self.token, "started": time.time()})

    def claim(self, key: str) -> bool:
        """Claim a point for this run; False if another run holds it."""
        try:
            fd = os.open(self.path(key), os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
        except FileExistsError:
            return False
        except OSError as exc:
            raise InputError(f"cannot write in the sweep store {str(self.dir)!r} ({exc.strerror}); give a store "
                             "folder this process may write to") from None
        with os.fdopen(fd, "w", encoding="utf-8") as f:
            f.write(self._text())
        with self._lock:
            self.held.add(key)
        self._beat()
        return True

    def holder(self, key: str) -> dict:
        """What the claim file says ({} while it is being written or when unreadable)."""
        try:
            info = json.loads(self.path(key).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return {}
        return info if isinstance(info, dict) else {}

    def is_stale(self, key: str) -> bool:
        """Whether a claim exists and its run is gone (dead pid on this host, or no heartbeat)."""
        try:
            age = time.time() - os.stat(self.path(key)).st_mtime
        except FileNotFoundError:
            return False
        if age > self.timeout:
            return True
        info = self.holder(key)
        pid = info.get("pid")
        if info.get("host") == self.host and isinstance(pid, int) and not isinstance(pid, bool):
            return not _pid_alive(pid)
        return False

    def take_over(self, key: str) -> bool:
        """Replace a stale claim by this run's; False if it is not stale or another run was faster."""
        lock = self.dir / f"{key}.takeover"
        try:
            fd = os.open(lock, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
        except FileExistsError:
            try:  # left by a run that ended in the middle of a takeover
                if time.time() - os.stat(lock).st_mtime > self.timeout:
                    os.unlink(lock)
            except OSError:
                pass
            return False
        try:
            os.write(fd, self._text().encode())
            os.close(fd)
            if not self.is_stale(key):  # freed meanwhile (then claim it), or taken by a live run
                return self.claim(key)
            try:
                os.unlink(self.path(key))
            except FileNotFoundError:
                pass
            return self.claim(key)
        finally:
            try:
                os.unlink(lock)
            except OSError:
                pass

    def release(self, key: str) -> None:
        """Give a point up (after its record is stored, or when the run stops)."""
        with self._lock:
            if key not in self.held:
                return
            self.held.discard(key)
        if self.holder(key).get("run") == self.token:  # not if another run took it over meanwhile
            try:
                os.unlink(self.path(key))
            except OSError:
                pass

    def _beat(self) -> None:
        import threading

        if self._thread is None:
            self._thread = threading.Thread(target=self._heartbeat, name="planar-sweep-heartbeat", daemon=True)
            self._thread.start()

    def _heartbeat(self) -> None:
        while not self._stop.wait(self.interval):
            with self._lock:
                keys = list(self.held)
            for key in keys:
                try:
                    os.utime(self.path(key))
                except OSError:
                    pass

    def close(self) -> None:
        """Stop the heartbeat and release every claim still held."""
        self._stop.set()
        with self._lock:
            keys = list(self.held)
        for key in keys:
            self.release(key)


class _Feed:
    """Hands out the points this run is to compute, one at a time, sharing them with other runs.

    Without claims (no store) it simply hands out the points in order. With claims a point is handed
    out only once this run holds its claim; a point another live run holds waits, and is looked at
    again every ``_POLL`` seconds when this run has nothing else to do: its record (once the other run
    stored it) is taken as it is, and a claim that went stale is taken over.
    """

    def __init__(self, tasks, store: _Store | None, claims: _Claims | None, accept, on_done):
        from collections import deque

        self.queue = deque(tasks)
        self.ready = deque()
        self.waiting: dict[str, dict] = {}
        self.store, self.claims, self.accept, self.on_done = store, claims, accept, on_done
        self._polled = -math.inf

    @property
    def exhausted(self) -> bool:
        """Nothing left to hand out or to wait for."""
        return not (self.queue or self.ready or self.waiting)

    @property
    def remaining(self) -> int:
        return len(self.queue) + len(self.ready) + len(self.waiting)

    def next(self):
        """The next point ``(key, params)`` this run is to compute, or None for now."""
        if self.ready:
            return self.ready.popleft()
        while self.queue:
            key, params = self.queue.popleft()
            if self.claims is None or self._take(key, params):
                return key, params
        if self.waiting and time.monotonic() - self._polled >= _POLL:
            self.poll()
            if self.ready:
                return self.ready.popleft()
        return None

    def _take(self, key: str, params: dict) -> bool:
        c = self.claims
        if not (c.claim(key) or (c.is_stale(key) and c.take_over(key))):
            self.waiting[key] = params  # another live run computes it
            return False
        rec = self.store.load(key)
        if self.accept(rec):  # another run finished it before this run claimed it
            c.release(key)
            self.on_done(rec, False)
            return False
        return True

    def poll(self) -> None:
        """Look at the points other runs hold: take their records, take over stale claims."""
        self._polled = time.monotonic()
        try:
            names = {e.name for e in os.scandir(self.store.dir)}
        except OSError:
            names = None
        for key, params in list(self.waiting.items()):
            if names is None or f"{key}.json" in names:
                rec = self.store.load(key)
                if self.accept(rec):
                    del self.waiting[key]
                    self.on_done(rec, False)
                    continue
            if names is not None and f"{key}.claim" in names and not self.claims.is_stale(key):
                continue
            del self.waiting[key]
            if self._take(key, params):
                self.ready.append((key, params))

    def pause(self, deadline: float | None) -> None:
        """Nothing of this run's to compute: wait a moment for the other runs."""
        t = _POLL if deadline is None else min(_POLL, deadline - time.monotonic())
        if t <= 0:
            raise TimeoutError
        time.sleep(t)


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


# ============================================================================ progress
@dataclass
class SweepProgress:
    """Where a running sweep stands (passed to ``on_point`` after every point).

    Attributes
    ----------
    total : int
        Points in the sweep.
    done : int
        Points finished (computed now or taken from the store), failed ones included.
    failed : int
    reused : int
        Points taken from the store.
    elapsed : float
        Seconds since the sweep started.
    """

    total: int
    done: int = 0
    failed: int = 0
    reused: int = 0
    elapsed: float = 0.0

    @property
    def remaining(self) -> int:
        return self.total - self.done

    @property
    def eta(self) -> float | None:
        """Estimated seconds left, from the rate of the points computed in this run."""
        computed = self.done - self.reused
        if computed <= 0 or self.remaining == 0:
            return None if self.remaining else 0.0
        return self.elapsed / computed * self.remaining

    def line(self) -> str:
        eta = self.eta
        left = "" if eta is None or self.remaining == 0 else f", about {_duration(eta)} left"
        store = f" ({self.reused} from the store)" if self.reused else ""
        return (f"sweep: {self.done}/{self.total} points done{store}, {self.failed} failed, "
                f"{self.remaining} remaining{left}")


def _duration(s: float) -> str:
    if s < 90:
        return f"{s:.0f} s"
    if s < 5400:
        return f"{s / 60:.0f} min"
    return f"{s / 3600:.1f} h"


class _Reporter:
    def __init__(self, enabled: bool, stream=None):
        self.stream = stream or sys.stderr
        self.enabled = enabled
        self.tty = bool(getattr(self.stream, "isatty", lambda: False)())
        self._last = 0.0
        self._said = ""

    def __call__(self, prog: SweepProgress, final: bool = False) -> None:
        if not self.enabled:
            return
        now = time.perf_counter()
        text = prog.line()
        if self.tty:
            if final or now - self._last > 0.2:
                print("\r" + text.ljust(100), end="\n" if final else "", file=self.stream, flush=True)
                self._last = now
        elif text != self._said:
            print(text, file=self.stream, flush=True)
        self._said = text


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


def _share_cores(workers: int) -> None:
    """In a worker process: use this worker's share of the cores (unless PLANAR_THREADS is set)."""
    if not os.environ.get("PLANAR_THREADS"):
        from .core.parallel import threads

        os.environ["PLANAR_THREADS"] = str(max(1, threads() // max(1, workers)))


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


# ============================================================================ the table
@dataclass
class SweepTable:
    """The points of a sweep and their outputs, in the order the points were given.

    Attributes
    ----------
    function : str
        ``"module:function"`` of the user function.
    parameters : list of str
    outputs : list of str
    records : list of dict
        One per point: ``key``, ``params``, ``status`` ("done" or "failed"), ``outputs``, ``error``
        (type and message of a failure), ``seconds``, ``worker``.
    computed : int
        Points computed in this run.
    reused : int
        Points taken from the store.
    seconds : float
        Wall time of this run.
    """

    function: str
    parameters: list[str]
    outputs: list[str]
    records: list[dict]
    computed: int = 0
    reused: int = 0
    seconds: float = 0.0

    def __len__(self) -> int:
        return len(self.records)

    @property
    def failed(self) -> list[dict]:
        """Records of the points that failed."""
        return [r for r in self.records if r.get("status") != "done"]

    def column(self, name: str) -> np.ndarray:
        """A parameter or output over the points (NaN where a point failed or has no value).

        Returns
        -------
        ndarray, shape (points,)
            Float for numbers, object for text parameters.
        """
        if name in self.outputs:
            vals = [r.get("outputs", {}).get(name) for r in self.records]
            return np.array([np.nan if v is None else float(v) for v in vals])
        if name in self.parameters:
            vals = [r["params"].get(name) for r in self.records]
            if all(_is_number(v) or v is None for v in vals):
                return np.array([np.nan if v is None else float(v) for v in vals])
            return np.array(vals, dtype=object)
        raise unknown_name("column", name, self.parameters + self.outputs)

    def rows(self) -> list[dict[str, Any]]:
        """Flat rows: parameters, outputs, status, error, seconds, key."""
        out = []
        for r in self.records:
            err = r.get("error") or {}
            row = {p: r["params"].get(p) for p in self.parameters}
            row.update({o: r.get("outputs", {}).get(o) for o in self.outputs})
            row.update(status=r.get("status"), error=f"{err['type']}: {err['message']}" if err else "",
                       seconds=r.get("seconds"), key=r.get("key"))
            out.append(row)
        return out

    def to_csv(self, path: str | os.PathLike) -> Path:
        """Write the table as CSV (atomically)."""
        buf = io.StringIO()
        cols = self.parameters + self.outputs + ["status", "error", "seconds", "key"]
        w = csv.DictWriter(buf, fieldnames=cols, lineterminator="\n")
        w.writeheader()
        for row in self.rows():
            w.writerow({k: ("" if v is None else (repr(v) if isinstance(v, float) else v)) for k, v in row.items()})
        return atomic_write_text(path, buf.getvalue())

    def to_dict(self) -> dict[str, Any]:
        from . import __version__

        return _jsonable({"function": self.function, "parameters": self.parameters, "outputs": self.outputs,
                          "points": len(self.records), "failed": len(self.failed), "computed": self.computed,
                          "reused": self.reused, "seconds": self.seconds, "planar": __version__,
                          "records": self.records})

    def to_json(self, path: str | os.PathLike) -> Path:
        """Write the table, with every point's record, as JSON (atomically)."""
        return atomic_write_text(path, json.dumps(self.to_dict(), indent=1))

    def format(self, digits: int = 6) -> str:
        """The table as aligned text."""
        cols = self.parameters + self.outputs + ["status"]
        body = []
        for row in self.rows():
            cells = []
            for c in cols:
                v = row[c]
                cells.append(f"{v:.{digits}g}" if isinstance(v, float) else ("" if v is None else str(v)))
            if row["status"] != "done":
                cells[-1] += f" ({row['error']})"
            body.append(cells)
        widths = [max(len(c), *(len(b[i]) for b in body)) if body else len(c) for i, c in enumerate(cols)]
        lines = ["  ".join(c.rjust(w) for c, w in zip(cols, widths))]
        lines += ["  ".join(v.rjust(w) for v, w in zip(b, widths)) for b in body]
        return "\n".join(lines)

    __str__ = format

    def plot(self, path: str | os.PathLike | None = None, *, x: str | None = None,
             y: Sequence[str] | str | None = None,
             reference: Mapping[str, tuple[str, Any]] | None = None, title: str | None = None,
             xlabel: str | None = None, ylabels: Mapping[str, str] | None = None):
        """Outputs against a parameter, one panel per output (PNG written atomically).

        Parameters
        ----------
        path : path, optional
            Write the figure as PNG.
        x : str, optional
            The parameter on the horizontal axis; default the first numeric parameter that varies.
            Points that differ in other parameters are drawn as separate lines.
        y : str or sequence of str, optional
            Outputs to draw (default all).
        reference : mapping, optional
            Output name -> (label, curve) drawn beside it: ``curve`` is a function of x (called with an
            array) or a pair of arrays (x, y). For example a handbook curve.
        title, xlabel : str, optional
        ylabels : mapping of str to str, optional
            Axis label of each output (default its name).

        Returns
        -------
        matplotlib.figure.Figure
        """
        from matplotlib import colormaps
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        from .post.plots import save_figure

        varying = [p for p in self.parameters if len({_canonical(r["params"].get(p)) for r in self.records}) > 1]
        if x is None:
            numeric = [p for p in (varying or self.parameters) if self.column(p).dtype != object]
            if not numeric:
                raise InputError("no numeric parameter to put on the x axis; the table has "
                                 f"{', '.join(map(repr, self.parameters)) or 'no parameters'}")
            x = numeric[0]
        if x not in self.parameters:
            raise unknown_name("parameter", x, self.parameters)
        ys = [y] if isinstance(y, str) else list(y or self.outputs)
        for o in ys:
            if o not in self.outputs:
                raise unknown_name("output", o, self.outputs)
        if not ys:
            raise InputError("the table has no outputs to draw")
        X = self.column(x)
        if X.dtype == object:
            raise InputError(f"parameter {x!r} is not numeric, so it cannot be an axis")
        others = [p for p in varying if p != x]
        groups: dict[tuple, list[int]] = {}
        for i, r in enumerate(self.records):
            groups.setdefault(tuple(r["params"].get(p) for p in others), []).append(i)
        fig = Figure(figsize=(7.0, 2.2 + 2.6 * len(ys)), dpi=120, layout="constrained")
        FigureCanvasAgg(fig)
        axes = np.atleast_1d(fig.subplots(len(ys), 1, sharex=True, squeeze=False)[:, 0])
        cmap = colormaps["viridis"]
        failed = np.array([r.get("status") != "done" for r in self.records])
        for ax, o in zip(axes, ys):
            Y = self.column(o)
            for gi, (gkey, idx) in enumerate(groups.items()):
                idx = np.array(sorted(idx, key=lambda i: X[i]))
                colour = cmap(0.15 + 0.7 * gi / max(len(groups) - 1, 1)) if len(groups) > 1 else cmap(0.25)
                label = "computed" if not others else ", ".join(f"{p} = {v}" for p, v in zip(others, gkey))
                ok = idx[~failed[idx]]
                ax.plot(X[ok], Y[ok], "o-", color=colour, ms=5, lw=1.3, label=label)
            if np.any(failed):
                lo = np.nanmin(Y) if np.any(np.isfinite(Y)) else 0.0
                ax.plot(X[failed], np.full(int(failed.sum()), lo), "x", color="0.35", ms=7,
                        label=f"failed ({int(failed.sum())})")
            if reference and o in reference:
                label, curve = reference[o]
                if callable(curve):
                    xs = np.linspace(np.nanmin(X), np.nanmax(X), 200)
                    ys_ = np.asarray(curve(xs), float)
                else:
                    xs, ys_ = (np.asarray(c, float) for c in curve)
                ax.plot(xs, ys_, "-", color=cmap(0.8), lw=1.8, label=label, zorder=1)
            ax.set_ylabel((ylabels or {}).get(o, o))
            ax.grid(True, lw=0.4, alpha=0.5)
            for s in ("top", "right"):
                ax.spines[s].set_visible(False)
            ax.legend(fontsize=8, frameon=False)
        axes[-1].set_xlabel(xlabel or x)
        if title:
            axes[0].set_title(title, fontsize=11, loc="left")
        if path is not None:
            save_figure(fig, path)
        return fig


def load_table(path: str | os.PathLike) -> SweepTable:
    """Read a table written by :meth:`SweepTable.to_json`."""
    try:
        d = json.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"sweep table {str(path)!r} does not exist") from None
    except json.JSONDecodeError as exc:
        raise InputError(f"{str(path)!r} is not a sweep table (JSON error: {exc})") from None
    try:
        return SweepTable(d["function"], list(d["parameters"]), list(d["outputs"]), list(d["records"]),
                          int(d.get("computed", 0)), int(d.get("reused", 0)), float(d.get("seconds") or 0.0))
    except (KeyError, TypeError) as exc:
        raise InputError(f"{str(path)!r} is not a sweep table (missing {exc})") from None


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
    reused = 0
    t_wall = time.time()
    if st is not None:
        for k in keys:
            rec = st.load(k)
            if _reusable(rec, fid, described, retry_failed):
                records[k] = rec
                reused += 1
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
        if _reusable(rec, fid, described, retry_failed):
            return True
        return (rec is not None and rec.get("function") == fid and rec.get("status") == "failed"
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
                      seconds=time.perf_counter() - t_start)


@dataclass(frozen=True)
class _DefaultPeak(Output):
    """Peak von Mises (SPR) when the user names no output; nothing when the function gives numbers."""

    case: str | None = None

    def __call__(self, result, values):
        return Peak("von_mises")(result, values)

    def describe(self) -> str:
        return "Peak(field='von_mises', method='spr', kind='max', case=None)"


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
    from .core.loads import Traction
    from .core.materials import Isotropic
    from .core.model import Model
    from .core.static import solve
    from .core.supports import Roller
    from .geometry.structured import rectangle_mesh

    mesh = rectangle_mesh(float(length), float(width), 4, 2, element)
    model = Model(mesh, Isotropic(70e3, 0.33), thickness=float(thickness), units="N, mm, MPa")
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=float(load) / (float(width) * float(thickness))), case="pull")
    return solve(model)["pull"]


# ============================================================================ command line
def _parse_value(text: str):
    t = text.strip()
    for conv in (int, float):
        try:
            return conv(t)
        except ValueError:
            pass
    if t.lower() in ("true", "false"):
        return t.lower() == "true"
    return t


def _parse_param(text: str) -> tuple[str, list]:
    """``name=a:b:n`` (n values from a to b), ``name=v1,v2,...`` or ``name=v``."""
    name, sep, spec = text.partition("=")
    name = name.strip()
    if not sep or not name or not spec.strip():
        raise InputError(f"write a parameter as NAME=START:STOP:COUNT, NAME=V1,V2,... or NAME=VALUE; got {text!r}")
    if spec.count(":") == 2 and "," not in spec:
        a, b, n = spec.split(":")
        try:
            a_, b_, n_ = float(a), float(b), int(n)
        except ValueError:
            raise InputError(f"in {text!r}, START and STOP must be numbers and COUNT a whole number") from None
        if n_ < 1:
            raise InputError(f"in {text!r}, COUNT must be at least 1")
        return name, [float(v) for v in np.linspace(a_, b_, n_)]
    return name, [_parse_value(v) for v in spec.split(",") if v.strip() != ""]


def _sweep_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("function", help="the function to sweep, as module:function (importable by the workers, "
                                    "the current folder included) or path/to/file.py:function; "
                                    "it takes the parameters as keyword arguments and returns a Result, "
                                    "planar.solve(model), a Model or a dict of numbers")
    p.add_argument("--param", "-p", action="append", default=[], metavar="NAME=SPEC",
                   help="a swept parameter: NAME=START:STOP:COUNT (evenly spaced), NAME=V1,V2,... or "
                        "NAME=VALUE; several --param give every combination")
    p.add_argument("--points", metavar="FILE.json", help="the points as a JSON list of {name: value} objects "
                                                        "(instead of --param)")
    p.add_argument("--output", "-o", action="append", default=[], metavar="NAME=SPEC",
                   help="an output: NAME=max:FIELD, min:FIELD, absmax:FIELD, at:X,Y:FIELD, kt:FIELD:NOMINAL or "
                        "margin:FIELD:ALLOWABLE[:FS], optionally ending in @average or @spr")
    p.add_argument("--out", default="planar-sweep", metavar="DIR",
                   help="folder of the table (sweep.csv, sweep.json, sweep.png) and of the point store "
                        "(DIR/points); default ./planar-sweep")
    p.add_argument("--store", metavar="DIR", help="the point store (default OUT/points); a sweep started "
                                                  "again with the same store computes only missing points")
    p.add_argument("--workers", "-j", type=int, metavar="N",
                   help="local worker processes (default one per CPU; 0: in this process)")
    p.add_argument("--cluster", metavar="ADDRESS",
                   help="run on a Dask cluster, e.g. tcp://127.0.0.1:8786, or local[:N] for a local cluster of N "
                        "worker processes started for this sweep (needs pip install \"planar[cluster]\")")
    p.add_argument("--retries", type=int, default=2, help="tries again for a point whose worker died (default 2)")
    p.add_argument("--retry-failed", action="store_true", help="compute again the points stored as failed")
    p.add_argument("--timeout", type=float, metavar="SECONDS", help="give up after this long (finished points stay stored)")
    p.add_argument("--x", metavar="PARAM", help="parameter on the plot's x axis (default the one that varies)")
    p.add_argument("--no-plot", action="store_true", help="do not draw sweep.png")
    p.add_argument("--verbose", "-v", action="store_true", help="report progress on stderr even when it is not a terminal")


@command("sweep", "run a function over a grid of parameters in parallel and tabulate its outputs")
def _sweep_cmd(args) -> int:
    if os.getcwd() not in sys.path and "" not in sys.path:
        sys.path.insert(0, os.getcwd())  # module:function from the current folder, as with python -m
    if args.points and args.param:
        raise InputError("give the points with --param or with --points, not both")
    if args.points:
        try:
            pts = json.loads(Path(args.points).read_text(encoding="utf-8"))
        except FileNotFoundError:
            raise InputError(f"points file {args.points!r} does not exist") from None
        except json.JSONDecodeError as exc:
            raise InputError(f"points file {args.points!r} is not JSON ({exc})") from None
        if not isinstance(pts, list):
            raise InputError(f"points file {args.points!r} must hold a JSON list of objects")
        kw = {"points": pts}
    elif args.param:
        axes = dict(_parse_param(t) for t in args.param)
        kw = {"grid": axes}
    else:
        raise InputError("give the parameters to sweep with --param NAME=START:STOP:COUNT (or --points FILE.json)")
    outputs = {}
    for t in args.output:
        name, sep, spec = t.partition("=")
        if not sep:
            spec, name = t, t.replace(":", "_").replace("@", "_").replace(",", "_")
        outputs[name.strip()] = parse_output(spec)
    out = Path(args.out)
    table = sweep(args.function, **kw, outputs=outputs or None, store=args.store or out / "points",
                  workers=args.workers, cluster=args.cluster, retries=args.retries,
                  retry_failed=args.retry_failed, timeout=args.timeout, verbose=args.verbose)
    table.to_csv(out / "sweep.csv")
    table.to_json(out / "sweep.json")
    written = [out / "sweep.csv", out / "sweep.json"]
    if not args.no_plot and table.outputs and len(table) > 1:
        try:
            table.plot(out / "sweep.png", x=args.x)
            written.append(out / "sweep.png")
        except InputError as exc:
            print(f"planar sweep: no plot: {exc}", file=sys.stderr)
    print(table.format())
    print(f"\n{len(table)} points ({table.computed} computed, {table.reused} from the store), "
          f"{len(table.failed)} failed, {table.seconds:.1f} s; wrote {', '.join(map(str, written))}")
    return 0 if not table.failed else 1


_sweep_cmd.arguments = _sweep_args
