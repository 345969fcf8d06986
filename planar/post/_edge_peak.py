"""The judgement of a peak read along an edge (:meth:`planar.post.edges.EdgeStresses.peak`).

The same checks :meth:`planar.Result.max` makes of its peak, ``"coarse-peak"``
(:func:`planar.core._advice_peak.coarse_peak`) and ``"linear-peak"``
(:func:`planar.core._advice_linear.linear_peak`), made in the nodal field that is the edge's component at
the peak: on a circular edge the polar stress about its centre (``sigma_theta`` for ``sigma_t``, ``sigma_r``
for ``sigma_n``, ``tau_r_theta`` for ``tau_nt``); on another edge the tangential stress by the principal
stress of its sign (on a free edge it is one; common practice) and von Mises as is. A warning the load
case already holds (the user read ``Result.max`` of that field there first) is not told again.
"""
from __future__ import annotations

import math
import warnings

import numpy as np

from ..core.errors import fmt_point

__all__ = ["judge", "field_of"]

#: the nodal field of each edge component about a circular edge's centre
_POLAR = {"sigma_t": "sigma_theta", "sigma_n": "sigma_r", "tau_nt": "tau_r_theta", "von_mises": "von_mises"}
_CODES = ("coarse-peak", "linear-peak")


def field_of(component: str, value: float, centre) -> str | None:
    """The nodal field judged for a peak ``value`` of an edge ``component`` (None: not judged).

    Examples
    --------
    >>> field_of("sigma_t", 120.0, (0.0, 0.0)), field_of("sigma_t", -80.0, None), field_of("tau_nt", 5.0, None)
    ('sigma_theta', 'sigma_2', None)
    """
    if centre is not None:
        return _POLAR[component]
    if component == "von_mises":
        return component
    if component == "sigma_t":
        return "sigma_1" if value >= 0.0 else "sigma_2"
    return None


def judge(es, component: str, pk, *, stacklevel: int = 2) -> str:
    """Judge the peak ``pk`` of ``es[component]`` as :meth:`planar.Result.max` judges its peak.

    Parameters
    ----------
    es : EdgeStresses
        With ``es.result``, the load case read (nothing is judged without it).
    component : str
        ``"sigma_t"``, ``"sigma_n"``, ``"tau_nt"`` or ``"von_mises"``.
    pk : EdgePeak
        The peak; between nodes it is judged at the nearest node of the edge.
    stacklevel : int, default 2
        As for :func:`warnings.warn`, counted from the caller of this function.

    Returns
    -------
    str
        A short note for tables (``""`` when the peak is resolved or not judged). The warnings go to
        ``es.result.warnings`` and ``es.warnings``.
    """
    from ..core._advice_linear import has_linear, linear_words, raiser_at
    from ..core._advice_node import peak_warnings_given, warn_if_found
    from ..core._advice_peak import coarse_peak

    result = es.result
    if result is None or not math.isfinite(pk.value) or pk.value == 0.0:
        return ""
    name = field_of(component, pk.value, es.centre)
    if name is None:
        return ""
    centre = es.centre if name in ("sigma_theta", "sigma_r", "tau_r_theta") else None
    node = pk.node
    if node < 0:  # a point between nodes: judged at the nearest node of the edge
        on = np.flatnonzero(es.node >= 0)
        node = int(es.node[on[np.argmin(np.hypot(*(es.points[on] - pk.point).T))]])
    values = result.field(name, recovery=es.recovery, centre=centre)
    # told below from the caller's line; a peak warning the load case already holds (the user read
    # Result.max there first) is not told again, yet it is the edge's too
    with warnings.catch_warnings(record=True) as caught, peak_warnings_given() as given:
        warnings.simplefilter("always")
        note = coarse_peak(result, node, name, values, centre=centre)
        if not note and has_linear(result):  # linear cells have their own check (coarse-peak leaves them)
            why = raiser_at(result, node, values)
            if why is not None:
                # linear_peak's warning, from the raiser found once
                warn_if_found(result, node, name, values, "linear-peak", lambda r, n: why, linear_words, 2)
                note = (f"linear-peak: linear elements ({' and '.join(why['elements'])}) read the peak at "
                        f"{fmt_point(result.mesh.nodes[node])}, where the field falls by {100.0 * why['fall']:.0f} % "
                        "across one element: typically 5-30 % low; mesh with quadratic elements (T6 or Q8) or much "
                        "finer there")
    for w in given:
        if w.code in _CODES and not any(o.message == w.message for o in es.warnings):
            es.warnings.append(w)
    for rec in caught:
        w = rec.message
        if getattr(w, "code", None) not in _CODES:
            warnings.warn_explicit(w, rec.category, rec.filename, rec.lineno)
            continue
        warnings.warn(w, stacklevel=stacklevel + 1)
    return note
