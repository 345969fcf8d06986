"""One point: the user function found by name, and its outputs computed on a worker."""
from __future__ import annotations

import hashlib
import importlib
import math
import os
import socket
import sys
import time
import traceback
from pathlib import Path
from typing import Any, Callable, Mapping

import numpy as np

from ..core.errors import InputError, unknown_name
from .outputs import _DefaultPeak, _describe_output


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


_PLAIN = (int, float, complex, str, bytes, bool, type(None))


def _plain_repr(v, depth: int = 0) -> str | None:
    """A repr of plain data that is the same in every process (None for anything else)."""
    if isinstance(v, _PLAIN):
        return repr(v)
    if depth < 4 and isinstance(v, (tuple, list)):
        parts = [_plain_repr(x, depth + 1) for x in v]
        return None if None in parts else f"{type(v).__name__}({', '.join(parts)})"
    if depth < 4 and isinstance(v, (set, frozenset)):  # sorted: a set's order changes with the process's hashing
        parts = [_plain_repr(x, depth + 1) for x in v]
        return None if None in parts else f"{type(v).__name__}({', '.join(sorted(parts))})"
    if depth < 4 and isinstance(v, dict):
        parts = [(_plain_repr(k, depth + 1), _plain_repr(x, depth + 1)) for k, x in v.items()]
        return None if any(None in kv for kv in parts) else "{" + ", ".join(f"{k}: {x}" for k, x in parts) + "}"
    return None


def _code_names(code) -> set[str]:
    names = set(code.co_names)
    for c in code.co_consts:
        if hasattr(c, "co_names"):
            names |= _code_names(c)
    return names


def _feed_code(code, h) -> None:
    """The parts of a code object that say what it computes (not its file, lines or refcount-dependent bytes)."""
    h.update(code.co_code)
    h.update(repr((code.co_argcount, code.co_kwonlyargcount, code.co_names, code.co_varnames, code.co_freevars,
                   code.co_cellvars)).encode())
    for c in code.co_consts:
        if hasattr(c, "co_code"):
            _feed_code(c, h)
        else:
            h.update(f"{type(c).__name__}:{_plain_repr(c) or type(c).__name__};".encode())


def _feed_function(fn, h, seen: set) -> None:
    import inspect

    code = getattr(fn, "__code__", None)
    if code is None:  # a callable object: its class, its __call__ and its plain attributes
        h.update(f"{type(fn).__module__}.{type(fn).__qualname__}".encode())
        call = getattr(type(fn), "__call__", None)
        if inspect.isfunction(call):
            _feed_function(call, h, seen)
        h.update(repr(_plain_repr(dict(sorted(getattr(fn, "__dict__", {}).items())))).encode())
        return
    if id(code) in seen:
        return
    seen.add(id(code))
    _feed_code(code, h)
    h.update(repr((_plain_repr(getattr(fn, "__defaults__", None)),
                   _plain_repr(getattr(fn, "__kwdefaults__", None)))).encode())
    for cell in getattr(fn, "__closure__", None) or ():  # what a decorator or a factory closed over
        try:
            v = cell.cell_contents
        except ValueError:  # an empty cell
            continue
        text = _plain_repr(v)
        if text is not None:
            h.update(f"cell={text};".encode())
        elif inspect.isfunction(v):
            _feed_function(v, h, seen)
    if inspect.isfunction(getattr(fn, "__wrapped__", None)):  # functools.wraps: the function wrapped
        _feed_function(fn.__wrapped__, h, seen)
    g = getattr(fn, "__globals__", {})
    for name in sorted(_code_names(code)):
        if name not in g:
            continue
        v = g[name]
        text = _plain_repr(v)
        if text is not None:  # a module constant the function reads (a thickness, a load)
            h.update(f"{name}={text};".encode())
        elif inspect.isfunction(v) and v.__module__ == getattr(fn, "__module__", None):
            _feed_function(v, h, seen)  # a helper of the same module


def function_digest(function) -> str:
    """A fingerprint of what a sweep function computes, to tell a stored point of an earlier version.

    SHA-256 over the function's compiled code (its instructions, names and constants; not its
    file or line numbers), its default arguments, the plain module constants
    it reads (numbers, text, and tuples, lists and dicts of them) and, the same way, the functions
    of its own module it calls, the values and functions it closes over, and the function a
    decorator wrapped (``__wrapped__``) (a callable object: its class's ``__call__`` and its plain
    attributes). Editing any of them changes the fingerprint; helpers in other modules, and data
    read from files, are not followed.

    Parameters
    ----------
    function : callable

    Returns
    -------
    str
        16 hexadecimal digits.
    """
    h = hashlib.sha256()
    _feed_function(function, h, set())
    return h.hexdigest()[:16]


# ============================================================================ one point (runs on a worker)
def _is_number(v) -> bool:
    return isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, (bool, np.bool_))


def _results_of(obj) -> dict:
    from ..core.model import Model
    from ..core.result import Result
    from ..core.static import solve

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
                         "name one with case=... (in a text form, end it in 'in CASE', e.g. 'max:von_mises in "
                         f"{next(iter(results))}')")
    if case not in results:
        raise unknown_name("load case", case, results)
    return results[case]


def _json_number(v):
    v = float(v)
    return v if math.isfinite(v) else None


def _unit_of(spec, result) -> str:
    """The unit of a peak's or a point value's field in the result's unit system ("" for Kt, margins, numbers)."""
    from ..core.units import field_unit
    from .outputs import Peak, ValueAt, _DefaultPeak

    if not isinstance(spec, (Peak, ValueAt, _DefaultPeak)):
        return ""
    try:
        return field_unit(getattr(spec, "field", "von_mises"), getattr(result, "units", None))
    except InputError:  # a result without a known unit system: the label goes without a unit
        return ""


def _compute_point(function, params: dict, outputs: dict, key: str, function_id: str) -> dict:
    """Run one point and return its record; every error of the user's code is caught and recorded."""
    t0 = time.perf_counter()
    record = {"key": key, "function": function_id, "params": params,
              "output_specs": {n: _describe_output(o) for n, o in outputs.items()},
              "worker": f"{socket.gethostname()}:{os.getpid()}"}
    try:
        fn = resolve_function(function)[0] if isinstance(function, str) else function
        record["source"] = function_digest(fn)  # which version of the function made this point
        ret = fn(**params)
        obj, extras = _split_return(ret)
        results = _results_of(obj)
        values = {**params, **extras}
        out = {}
        for name, spec in outputs.items():
            if isinstance(spec, _DefaultPeak) and not results:
                continue  # the function gave numbers only, and no output was asked for
            r = _pick(results, getattr(spec, "case", None), name)
            v = spec(r, values)
            out[name] = _json_number(v)
            if getattr(v, "note", ""):  # a peak next to an idealised support or load (outputs.NotedValue)
                record.setdefault("notes", {})[name] = v.note
            unit = _unit_of(spec, r)
            if unit:  # a peak's or a point value's unit, from the result's unit system (the sweep plot's labels)
                record.setdefault("units", {})[name] = unit
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


def _failed_record(key, params, function_id, outputs, kind, message, source: str = "") -> dict:
    return {"key": key, "function": function_id, "source": source, "params": params,
            "output_specs": {n: _describe_output(o) for n, o in outputs.items()},
            "status": "failed", "outputs": {}, "error": {"type": kind, "message": message},
            "seconds": float("nan"), "finished": time.time(), "worker": ""}
