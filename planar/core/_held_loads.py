"""The ``"held-load"`` check: a load that acts only where the supports hold the part.

A force put on nodes whose motion a support prescribes goes straight into that support's reaction:
it strains nothing, and the part reads no stress from it. A traction on the clamped edge, a point force
on a fixed point, a pull along the held direction of a roller: the solve is correct for the model as
given, but the stresses are those of a part that does not carry that load, which reads as a light part
that passes. This check finds such a load before the solve and names it, with the fix.

A load counts as held when its consistent nodal forces (in the supports' own directions, where a
support turns them) are all on prescribed unknowns: what lands on free or pin-tied unknowns is below
``1e-12`` of its largest nodal force. A case is judged as a whole when it has one load, or when all its
loads together are held; in a case of several loads, each edge or point load (the cheap, local kinds;
body forces, gravity and temperature changes spread over whole regions) is judged on its own too.
Not judged: a case with a temperature change (its initial strain stresses a held part) or with a
prescribed non-zero displacement (the imposed motion strains it).
"""
from __future__ import annotations

import numpy as np

from .errors import warn

__all__ = ["HELD_SHARE", "held_load_check"]

#: a load counts as held when what it puts on unknowns that are not prescribed is below this share of
#: its largest nodal force (round-off of the consistent forces of an edge load)
HELD_SHARE = 1e-12

_BODY = ("BodyForce", "Gravity", "TemperatureChange")


def _name(load) -> str:
    """A load as the messages name it (its own description, else its repr)."""
    try:
        return str(load.describe())
    except Exception:  # noqa: BLE001 - a plugin load without describe()
        return repr(load)


def _to_local(cons, f: np.ndarray) -> np.ndarray:
    """``f`` (2n, m) turned to the supports' local bases (unchanged where no support turns them)."""
    if cons.rotation is None:
        return f
    m = f.shape[1]
    return cons.rotation.to_local(f.reshape(-1, 2, m)).reshape(-1, m)


def _held(f: np.ndarray, held: np.ndarray) -> bool:
    """True when the nodal forces ``f`` (2n,) are not all zero and all of them sit on ``held`` unknowns."""
    a = np.abs(f)
    top = float(a.max()) if a.size else 0.0
    return top > 0.0 and float(a[~held].max(initial=0.0)) <= HELD_SHARE * top


def held_load_check(asm, cons, cases: list[str], F: np.ndarray, pdofs: np.ndarray, up: np.ndarray,
                    e0s: list, sink: list | None = None) -> None:
    """Warn ``"held-load"`` for each load case, or load of a case, that acts only on held unknowns.

    Parameters
    ----------
    asm : Assembly
    cons : Constraints
        The supports as the solve applies them (prescribed unknowns, local bases).
    cases : list of str
    F : ndarray, shape (2n, m)
        Each case's nodal forces, in the supports' local bases (as the solve splits them).
    pdofs : ndarray of int
        The prescribed unknowns (in the supports' bases).
    up : ndarray, shape (2n,)
        The prescribed values.
    e0s : list
        Each case's initial strains per block (None where there are none), as the load vectors gave them.
    sink : list, optional
        Where the warnings are kept (the assembly's pending warnings).
    """
    if pdofs.size == 0 or F.size == 0:
        return
    held = np.zeros(F.shape[0], dtype=bool)
    held[pdofs] = True
    if np.any(up[pdofs] != 0.0):
        return  # an imposed motion strains the part whatever the loads
    for j, case in enumerate(cases):
        if any(e is not None for e in e0s[j]):
            continue  # a temperature change stresses a held part
        loads = list(asm.model.cases.get(case, []))
        if _held(F[:, j], held):
            what = (f"the load {_name(loads[0])} acts only on nodes whose motion the supports hold, so it "
                    "passes" if len(loads) == 1 else
                    f"all {len(loads)} loads ({', '.join(_name(ld) for ld in loads)}) act only on nodes whose "
                    "motion the supports hold, so they pass")
            warn(f"held-load: in load case {case!r}, {what} straight into the reactions and the part carries no "
                 "stress from them; its stresses "
                 "read as if unloaded. Apply the load where the part is free to move (the loaded edge, not the "
                 "held one), or hold the part elsewhere", "held-load", sink=sink, stacklevel=4, once=True)
            continue
        if len(loads) < 2:
            continue
        for ld in loads:
            try:
                words = [w for w, _ in ld.names_used()]
            except Exception:  # noqa: BLE001 - a plugin load without the hook: judged by its forces alone
                words = []
            if type(ld).__name__ in _BODY or "region" in words:
                continue
            try:
                f = np.asarray(ld.nodal_forces(asm.context), dtype=float).reshape(-1, 1)
            except Exception:  # noqa: BLE001 - the load vector itself already succeeded; this is a second look
                continue
            if f.shape[0] == F.shape[0] and _held(_to_local(cons, f)[:, 0], held):
                warn(f"held-load: in load case {case!r}, the load {_name(ld)} acts only on nodes whose motion "
                     "the supports hold, so it passes straight into the reactions and adds no stress; apply it where "
                     "the part is free to move, or hold the part elsewhere", "held-load", sink=sink, stacklevel=4,
                     once=True)
