"""Cost of the fasteners at scale: a joint of two plates with 1,000 fasteners against the same joint without them.

Usage::

    python benchmarks/joints.py [--n 354] [--fasteners 1000] [--repeat 3] [--layout grid|splice]

Two plates (a skin and a doubler), each ``2 n`` x ``n`` Q4 cells over 1000 x 500 mm (about 4 n^2
unknowns each: 1,006,780 in all for n = 354), each held and loaded on its own, are solved as one joint
in the same run:

* without fasteners (the two plates' systems side by side, one factorization);
* with ``--fasteners`` fasteners (spreading ties over patches of their diameter, no holes modelled)
  joining them: ``--layout grid``, the plates overlap fully and the fasteners stand on a grid over the
  overlap (a doubler fastened all over); ``--layout splice``, the plates overlap by a 100 mm band at
  their ends and the fasteners stand in 10 rows across it (a lap splice).

Prints each solve's end-to-end time (the best of ``--repeat``, runs alternated; wall and process CPU
time, the machine being shared), the factorization's share, the time of the fasteners' end operators,
and the ratios with / without. Not a timed test.

What the fasteners cost is almost all in the factorization. Where they join the plates, every
separator of the nested-dissection ordering that crosses the joined area cuts both plates (about
twice the nodes there; the dense frontal blocks grow with the cube of a separator), where without
them the two plates are ordered and factorized apart: a splice band adds a little fill, a doubler
fastened all over about doubles the factorization (the two plates then factorize like one plate with
four unknowns per node). That is the cost of the coupling itself, which any direct solve of the
joined plates pays; the fasteners' own work (end operators, couplings, spring forces) is vectorized
and a fraction of a second.
"""
from __future__ import annotations

import argparse
import time

import numpy as np

import planar
from planar.core import _joint_solve, solvers

spent: dict[str, float] = {}


def _timed(name, func):
    def wrapper(*args, **kw):
        t = time.perf_counter()
        out = func(*args, **kw)
        spent[name] = spent.get(name, 0.0) + time.perf_counter() - t
        return out

    return wrapper


def joint(n: int, fasteners: int, layout: str = "grid") -> planar.Joint:
    """The two plates, and ``fasteners`` fasteners (0: none).

    ``layout="grid"``: the plates overlap fully and the fasteners stand on a grid over the middle of
    the overlap (a doubler fastened all over). ``layout="splice"``: the doubler is shifted to overlap
    the skin's right end by 100 mm only and the fasteners stand in 10 rows across that band (a lap
    splice); each plate is fixed at its far end and loaded at the end inside the band.
    """
    layers = {}
    shift = 0.0 if layout == "grid" else 900.0
    for name, t, x0 in (("skin", 2.0, 0.0), ("doubler", 1.6, shift)):
        m = planar.rectangle_mesh(1000.0, 500.0, 2 * n, n, origin=(x0, 0.0))
        model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=t, units="N, mm, MPa")
        if layout == "grid" or name == "skin":
            model.add_support(planar.Fixed("left"))
            model.add_load(planar.Traction("right", tx=100.0), case="pull")
        else:
            model.add_support(planar.Fixed("right"))
            model.add_load(planar.Traction("left", tx=-100.0), case="pull")
        layers[name] = model
    j = planar.Joint(layers)
    if fasteners:
        if layout == "grid":
            ny = max(int(round(np.sqrt(fasteners / 2))), 1)
            nx = -(-fasteners // ny)
            xs, ys = np.meshgrid(np.linspace(100.0, 900.0, nx), np.linspace(50.0, 450.0, ny))
            d = 6.0
        else:
            nx = 10
            ny = -(-fasteners // nx)
            xs, ys = np.meshgrid(np.linspace(905.0, 995.0, nx), np.linspace(2.5, 497.5, ny))
            d = 4.0
        pts = np.column_stack([xs.ravel(), ys.ravel()])[:fasteners]
        j.add_fasteners(planar.Fasteners(pts, layers=("skin", "doubler"), diameter=d, flexibility=2e-5, name="grid"))
    return j


def _run(n: int, fasteners: int, layout: str):
    jt = joint(n, fasteners, layout)
    t, c = time.perf_counter(), time.process_time()
    res = planar.solve(jt, verbose=False)["pull"]
    return time.perf_counter() - t, time.process_time() - c, res


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--n", type=int, default=354)
    p.add_argument("--fasteners", type=int, default=1000)
    p.add_argument("--repeat", type=int, default=3)
    p.add_argument("--layout", choices=("grid", "splice"), default="grid")
    a = p.parse_args()
    _joint_solve._Layer.end_operator = _timed("end operators", _joint_solve._Layer.end_operator)
    solvers.factorize = _timed("factorization", solvers.factorize)
    fac = {0: [], 1: []}
    wall = {0: [], 1: []}
    cpu = {0: [], 1: []}
    for _ in range(a.repeat):  # alternated, so that a busy spell of the machine falls on both
        for k, f in ((0, 0), (1, a.fasteners)):
            spent.clear()
            w, c, res = _run(a.n, f, a.layout)
            wall[k].append(w)
            cpu[k].append(c)
            fac[k].append(spent.get("factorization", 0.0))
            if k == 0:
                r0 = res
            else:
                r1, ops = res, spent.get("end operators", 0.0)
    dofs = sum(r.n_dofs for r in r0.layers.values())
    print(f"{dofs:,} unknowns in two layers, solver {next(iter(r0.layers.values())).solver}; best of {a.repeat}")
    print(f"without fasteners:     solve {min(wall[0]):7.2f} s wall, {min(cpu[0]):7.2f} s cpu")
    print(f"with {len(r1.fasteners.pairs):,} fasteners:  solve {min(wall[1]):7.2f} s wall, {min(cpu[1]):7.2f} s cpu; "
          f"end operators {ops:.3f} s; load balance error {r1.balance_error():.1e}")
    print(f"ratio with / without: {min(wall[1]) / min(wall[0]):.3f} wall, {min(cpu[1]) / min(cpu[0]):.3f} cpu")
    f0, f1 = min(fac[0]), min(fac[1])
    print(f"factorization: {f0:.2f} s without, {f1:.2f} s with (ratio {f1 / f0:.3f}); the rest of the solve: "
          f"{min(wall[0]) - f0:.2f} s without, {min(wall[1]) - f1:.2f} s with")
    print("all wall times:", [round(x, 2) for x in wall[0]], [round(x, 2) for x in wall[1]])


if __name__ == "__main__":
    main()
