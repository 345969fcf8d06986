"""Cost of the pins' ties at scale: the bonded rigid disc of ``planar verify rigid-inclusion`` on a fine mesh.

Usage::

    python benchmarks/pins.py [--n 700]

Solves the quarter plate with ``n`` x ``n`` Q4 cells (about 2 n^2 unknowns: 982,802 for n = 700) three
ways in the same run: the hole free (the Kirsch plate), the hole rigidly tied to a held pin, and the
hole tied to a held pin by spreading (whose held pin couples the edge's unknowns to each other).
Prints the end-to-end solve times and the time of the ties' set-up and elimination. Not a timed test.
"""
from __future__ import annotations

import argparse
import time

from planar import solve
from planar.core import _tying
from planar.core.pins import Pin
from planar.verify.pin_cases import inclusion_model
from planar.verify.recovery_cases import kirsch_mesh, kirsch_model

spent: dict[str, float] = {}


def _timed(name, func):
    def wrapper(*args, **kw):
        t = time.perf_counter()
        out = func(*args, **kw)
        spent[name] = time.perf_counter() - t
        return out

    return wrapper


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--n", type=int, default=700)
    n = p.parse_args().n
    _tying.Tying.__init__ = _timed("set-up", _tying.Tying.__init__)
    _tying.Tying.reduce = _timed("elimination", _tying.Tying.reduce)
    t = time.perf_counter()
    r = solve(kirsch_model(kirsch_mesh("Q4", n)), verbose=False)["remote tension"]
    print(f"{r.n_dofs:,} unknowns, solver {r.solver}")
    print(f"hole free:                    solve {time.perf_counter() - t:6.2f} s")
    for tie in ("rigid", "spreading"):
        model, _ = inclusion_model("Q4", n, "plane stress")
        model.pins[0] = Pin("hole", tie=tie, hold="both", rotation="held", name="disc")
        t = time.perf_counter()
        r = solve(model, verbose=False)["remote tension"]
        total = time.perf_counter() - t
        print(f"{tie + ' tie, held pin:':29} solve {total:6.2f} s; tie set-up {spent['set-up']:.3f} s, elimination "
              f"{spent['elimination']:.3f} s; equilibrium error {r.equilibrium_error():.1e}")


if __name__ == "__main__":
    main()
