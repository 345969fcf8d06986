"""Parameter points: grids of every combination, cleaned values, and the stable key of a point (the store's file name)."""
from __future__ import annotations

import hashlib
import itertools
import json
import math
from typing import Any, Iterable, Mapping

import numpy as np

from ..core.errors import InputError


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
