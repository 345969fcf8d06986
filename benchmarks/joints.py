"""Cost of the fasteners at scale: a joint of two plates with 1,000 fasteners against the same joint without them.

Usage::

    python benchmarks/joints.py [--n 354] [--fasteners 1000] [--repeat 3] [--layout grid|splice]
                                [--solver auto|pardiso|amg|...] [--orderings]
    python benchmarks/run.py --joints grid|splice [--dofs 1000000] [--fasteners 1000] [--json out.json]

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
and the ratios with / without; with PARDISO, each run's ordering and symbolic phase (11), numeric
factorization (22), the factor's non-zeros and PARDISO's count of its floating-point operations (these
two do not depend on the machine's load, the times do). ``--orderings`` factorizes the joined matrix
of one run three ways and prints the same figures for each (all three give the same answer to round-off):
PARDISO's nested dissection of the joint as the solve does it; the fasteners written with a midpoint
unknown each (two springs ``2 k`` in series), ordered the same way; and those midpoint unknowns ordered
last (PARDISO's Schur-complement marks), so that each plate is ordered as without fasteners and the
joint is a dense block over the midpoints (a direct domain decomposition). Not a timed test.

What the fasteners cost is almost all in the factorization. Where they join the plates, every
separator of the nested-dissection ordering that crosses the joined area cuts both plates (about
twice the nodes there; the dense frontal blocks grow with the cube of a separator), where without
them the two plates are ordered and factorized apart: a splice band adds a little fill, a doubler
fastened all over about doubles the factorization (the two plates then factorize like one plate with
four unknowns per node). That is the cost of the coupling itself, which any direct solve of the
joined plates pays; the fasteners' own work (end operators, couplings, spring forces) is vectorized
and a fraction of a second.

Measured at n = 354 (1,006,780 unknowns, 1,000 fasteners; factor non-zeros and operations from PARDISO):

============================  ===========  ==========  ===========  ==========
ordering                      splice nnz   splice op   grid nnz     grid op
============================  ===========  ==========  ===========  ==========
no fasteners                  106.3 M      45.1 G      104.7 M      42.4 G
nested dissection of joint    117.3 M      63.3 G      168.7 M      179.9 G
midpoint unknowns, same       117.5 M      65.5 G      155.9 M      161.9 G
midpoint unknowns last        121.2 M      84.9 G      131.2 M      102.1 G
============================  ===========  ==========  ===========  ==========

A splice joins the plates over a band: the nested dissection of the joint cuts the band's two plates
together near the top of its tree and adds 10 % to the factor and 40 % to its operations, mostly in
large dense blocks that run faster per operation, so the numeric phase grows by much less than 40 %.
Ordering the fasteners' unknowns last (each plate ordered as without fasteners, the joint a dense block
of 2,000 unknowns) carries those 2,000 rows through every front from the band to each plate's root
and costs more. A doubler fastened all over is the other way round: every separator of the joint
crosses fastened area, and the dense block over the midpoints (fasteners 18 mm apart, 13 cells) is
cheaper, but it still costs 2.4 times the plates' own factorization: the coupling itself.

A fourth ordering, measured by hand on the splice (not in ``--orderings``): each plate's part outside
the band ordered apart, the band's two plates together, and the two cuts where the band begins (one
column of nodes in each plate, 1,420 unknowns) last: 115.1 M non-zeros and 53.3 Gflop, half the extra
operations of the nested dissection of the joint. PARDISO orders only together with its symbolic phase,
so the three orderings it took (and the submatrices) cost more time than those operations save; with a
nested dissection callable on its own (METIS on the node graph) it would be the cheaper way.

What the number of fasteners does, and what other orderings and solvers do (measured by hand in
December 2026 at n = 354, factor operations from PARDISO; they do not depend on the machine's load):

* the extent of the fastened area counts, not the number of fasteners: on the grid, 10 fasteners
  cost 48.0 Gflop (1.13 times the plates' own 42.4), 100 cost 123.1 (2.9 times), 1,000 cost 179.9
  (4.2 times); on the splice band, 100 fasteners cost 58.8 (1.30 times the 45.1) and 1,000 cost 63.3
  (1.40 times). Every separator that crosses fastened area must cut both plates: twice the nodes, and
  a dense frontal block grows with the cube of its separator, so the top of the tree costs about four
  times as much there, whatever the ordering;
* METIS's nested dissection of the node graph (pymetis, each node's two unknowns together, the
  order handed to PARDISO): splice 54.4 Gflop, grid 164.7; the plates without fasteners 41.2. The
  splice's factorization was then 2.36 s against PARDISO's own 3.15 s, but METIS took 3.3 s against
  the 2 s PARDISO's ordering phase spends on it, so the solve was no quicker;
* the cuts where the splice band begins marked as PARDISO's Schur-complement unknowns (so that its own
  ordering orders the rest apart): 59.5 Gflop, and a slower ordering phase;
* CG preconditioned by the plates' own factorization, each fastener end held by its spring (a
  factorization of the same cost as the plates' without fasteners, and exact but for the springs
  between the plates): 145 iterations to a 1e-10 residual on the splice and 131 on the grid at
  80,800 unknowns (n = 100), each a pair of triangular solves: many times the cost of the joint's
  own factorization.

So a direct solve of the joined plates costs 1.3 to 4 times the plates' own factorization in
operations once the fasteners spread over an area, and the end-to-end ratio of 1.1 is reached only
where the factorization is a small share of the solve or the fastened area is small.

``--solver amg`` (CG with smoothed aggregation, both solves) prints each run's set-up, CG iterations and
true relative residual. A fastener's spring couples every node of its patch in each plate to every
other (through the patches' mean motions); aggregated by every entry (strength threshold 0), those
entries shaped the aggregates round each fastener and CG took 17 iterations without the fasteners, 22
with them (splice) and 25 (grid): 1.18 to 1.26 wall (splice) and 1.47 to 1.54 (grid). The joint's finest
level is now aggregated by the plates' own couplings (``planar.core._multigrid.Couplings``): 17 without,
20 (splice) and 19 (grid) with; 1.33 and 1.17 wall (splice), 1.16 and 1.36 (grid), two runs each at load
average 0.6 to 1.1 (the set-up still grows, up to 1.4x, its first coarse level denser with the springs).
Not within 1.1x. Each amg
solve took 11 to 16 s, PARDISO's 7 s without and 7 s (splice) or 10 s (grid) with, in the same hour: at
this size the direct solve is the quicker, with fasteners or without. The near-null space is each
plate's three rigid modes as six block-diagonal columns, so an aggregate of one plate carries three
zero columns and the first coarse level has twice the unknowns it needs (six per aggregate).
"""
from __future__ import annotations

import argparse
import os
import time

import numpy as np

import planar
from planar.core import _joint_solve, solvers

spent: dict[str, float] = {}
phases: dict[str, float] = {}


def _watch_pardiso() -> None:
    """Time PARDISO's phases and read the factor's non-zeros and operation count (iparm[17], iparm[18])."""
    call = solvers._Pardiso._call
    if getattr(call, "_watched", False):
        return

    def timed(self, phase, b, *args, **kw):
        if phase == 11:
            self._iparm[18] = -1  # report the operations of the factorization
        t = time.perf_counter()
        out = call(self, phase, b, *args, **kw)
        phases[f"phase {phase}"] = phases.get(f"phase {phase}", 0.0) + time.perf_counter() - t
        if phase == 22:
            phases["nnz"], phases["mflop"] = int(self._iparm[17]), int(self._iparm[18])
        return out

    timed._watched = True
    solvers._Pardiso._call = timed


def _timed(name, func):
    def wrapper(*args, **kw):
        t = time.perf_counter()
        out = func(*args, **kw)
        spent[name] = spent.get(name, 0.0) + time.perf_counter() - t
        return out

    wrapper._timed = True
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


def _run(n: int, fasteners: int, layout: str, solver: str = "auto"):
    jt = joint(n, fasteners, layout)
    t, c = time.perf_counter(), time.process_time()
    res = planar.solve(jt, solver=solver, verbose=False)["pull"]
    return time.perf_counter() - t, time.process_time() - c, res


def _pardiso(lower, marks=None):
    """Factorize ``lower`` with MKL PARDISO (SPD, nested dissection; ``marks``: unknowns ordered last, by
    Schur-complement marks): (seconds of phase 11, of phase 22, factor non-zeros, Mflop, solve function)."""
    import ctypes as c

    import scipy.sparse as sp

    fn = solvers._mkl_library()
    L = sp.csc_matrix(lower)
    n = L.shape[0]
    ia, ja = L.indptr.astype(np.int32), L.indices.astype(np.int32)
    a = np.ascontiguousarray(L.data, dtype=float)
    pt, ip, perm = np.zeros(64, np.int64), np.zeros(64, np.int32), np.zeros(n, np.int32)
    ip[0], ip[1], ip[9], ip[17], ip[18], ip[34] = 1, 2, 8, -1, -1, 1
    rows = n
    if marks is not None:
        perm[marks] = 1
        ip[35] = 2  # the Schur complement into x at phase 22, the whole factor kept
        rows = max(n, len(marks) ** 2)
    i32 = c.POINTER(c.c_int32)

    def call(phase, b):
        b = np.asfortranarray(b, dtype=float)
        x = np.zeros((rows if phase == 22 else n, b.shape[1]), order="F")
        err, one = c.c_int32(0), c.c_int32(1)
        fn(pt.ctypes.data_as(c.POINTER(c.c_int64)), c.byref(one), c.byref(one), c.byref(c.c_int32(2)),
           c.byref(c.c_int32(phase)), c.byref(c.c_int32(n)), a.ctypes.data, ia.ctypes.data_as(i32),
           ja.ctypes.data_as(i32), perm.ctypes.data_as(i32), c.byref(c.c_int32(b.shape[1])),
           ip.ctypes.data_as(i32), c.byref(c.c_int32(0)), b.ctypes.data, x.ctypes.data, c.byref(err))
        if err.value:
            raise RuntimeError(f"PARDISO phase {phase}: error {err.value}")
        return x

    t = time.perf_counter()
    call(11, np.zeros((n, 1)))
    t11 = time.perf_counter() - t
    t = time.perf_counter()
    call(22, np.zeros((n, 1)))
    t22 = time.perf_counter() - t
    out = (t11, t22, int(ip[17]), int(ip[18]), lambda b: call(33, b))
    return out


def orderings(n: int, fasteners: int, layout: str) -> None:
    """Factorize the joined matrix three ways (see the module notes) and print the figures of each."""
    import scipy.sparse as sp
    from planar.core.timing import Timer

    jt = joint(n, fasteners, layout)
    cases = ["pull"]
    layers = [_joint_solve._Layer(nm, mdl, jt, cases, 1e-3, Timer(False)) for nm, mdl in jt.layers.items()]
    offs = np.r_[0, np.cumsum([L.n for L in layers])]
    N = int(offs[-1])
    fz = jt.fasteners[0]
    pts = fz.points(jt)
    (Ba, ca), (Bb, cb) = [(_joint_solve._embed((S @ L.T).tocsr(), int(offs[i]), N), S @ L.up)
                          for i, L in enumerate(layers) for S in [L.end_operator(0, fz, pts)[0]]]
    k = np.full(Ba.shape[0], 1.0 / float(fz.flexibility))
    K0 = _joint_solve._side_by_side([L.system.lower for L in layers])
    f0 = np.vstack([L.rhs.reshape(L.n, 1) for L in layers])
    B, c = (Ba - Bb).tocsr(), ca - cb
    K1 = (K0 + sp.tril(B.T @ sp.diags(k) @ B)).tocsc()
    f1 = f0 - (B.T @ (k * c))[:, None]
    nw, D = Ba.shape[0], sp.diags(2 * k)  # a midpoint w per fastener: springs 2k from each end to w
    Kw = sp.bmat([[K0 + sp.tril(Ba.T @ D @ Ba + Bb.T @ D @ Bb), None], [-(D @ (Ba + Bb)), sp.diags(4 * k)]],
                 format="csc")
    fw = np.vstack([f0, np.zeros((nw, 1))]) - np.r_[Ba.T @ (2 * k * ca) - Bb.T @ (2 * k * cb),
                                                   2 * k * (cb - ca)][:, None]
    t11, t22, nnz, mf, _ = _pardiso(K0)
    print(f"{'no fasteners':32s} phase 11 {t11:6.2f} s, phase 22 {t22:6.2f} s, factor {nnz / 1e6:7.1f} M, {mf / 1e3:7.1f} Gflop")
    ref = None
    for name, K, f, marks in (("nested dissection of the joint", K1, f1, None),
                              ("midpoint unknowns, same", Kw, fw, None),
                              ("midpoint unknowns last", Kw, fw, np.arange(N, N + nw))):
        t11, t22, nnz, mf, solve = _pardiso(K, marks)
        u = solve(f)[:N, 0]  # the layers' unknowns
        ref = u if ref is None else ref
        print(f"{name:32s} phase 11 {t11:6.2f} s, phase 22 {t22:6.2f} s, factor {nnz / 1e6:7.1f} M, "
              f"{mf / 1e3:7.1f} Gflop; unknowns differ by {np.abs(u - ref).max() / np.abs(ref).max():.1e}")


def run_joints(n: int = 354, fasteners: int = 1000, layout: str = "grid", solver: str = "auto",
               repeat: int = 3, echo=print) -> dict:
    """Solve the joint with and without its fasteners ``repeat`` times each, alternated, and return the
    figures (best of the repeats; each run's line is passed to ``echo`` as it ends)."""
    _watch_pardiso()
    if not getattr(_joint_solve._Layer.end_operator, "_timed", False):
        _joint_solve._Layer.end_operator = _timed("end operators", _joint_solve._Layer.end_operator)
        solvers.factorize = _timed("factorization", solvers.factorize)
    fac = {0: [], 1: []}
    wall = {0: [], 1: []}
    cpu = {0: [], 1: []}
    flops = {}
    for _ in range(repeat):  # alternated, so that a busy spell of the machine falls on both
        for k, f in ((0, 0), (1, fasteners)):
            spent.clear()
            phases.clear()
            w, c, res = _run(n, f, layout, solver)
            wall[k].append(w)
            cpu[k].append(c)
            fac[k].append(spent.get("factorization", 0.0))
            load = open("/proc/loadavg").read().split()[0] if os.path.exists("/proc/loadavg") else "?"
            if phases:
                flops[k] = (phases["nnz"], phases["mflop"])
                echo(f"  {'with' if k else 'without'} fasteners: {w:6.2f} s wall; phase 11 {phases['phase 11']:5.2f} s, "
                     f"phase 22 {phases['phase 22']:5.2f} s, factor {phases['nnz'] / 1e6:.1f} M non-zeros, "
                     f"{phases['mflop'] / 1e3:.1f} Gflop; load average {load}")
            info = next(iter(res.layers.values())).solver_info
            if "iterations" in info:  # an iterative back end: CG steps and the true relative residual
                echo(f"  {'with' if k else 'without'} fasteners: {w:6.2f} s wall, {c:6.2f} s cpu; set-up "
                     f"{spent.get('factorization', 0.0):5.2f} s ({info.get('method', '')}, {info.get('levels')} "
                     f"levels); {info['iterations'][0]} iterations, relative residual {info['residual'][0]:.1e}, "
                     f"backward error {info['backward_error']:.1e}; load average {load}")
            if k == 0:
                r0 = res
            else:
                r1, ops = res, spent.get("end operators", 0.0)
    rec = {
        "case": f"joint-{layout}",
        "dofs": int(sum(r.n_dofs for r in r0.layers.values())),
        "fasteners": len(r1.fasteners.pairs),
        "solver": str(next(iter(r0.layers.values())).solver),
        "repeat": repeat,
        "without_s": round(min(wall[0]), 3), "with_s": round(min(wall[1]), 3),
        "without_cpu_s": round(min(cpu[0]), 3), "with_cpu_s": round(min(cpu[1]), 3),
        "ratio_wall": round(min(wall[1]) / min(wall[0]), 4), "ratio_cpu": round(min(cpu[1]) / min(cpu[0]), 4),
        "factorization_without_s": round(min(fac[0]), 3), "factorization_with_s": round(min(fac[1]), 3),
        "end_operators_s": round(ops, 4), "load_balance_error": float(f"{r1.balance_error():.2e}"),
        "wall_s": {"without": [round(x, 3) for x in wall[0]], "with": [round(x, 3) for x in wall[1]]},
    }
    if len(flops) == 2:
        rec["factor_nonzeros"] = {"without": flops[0][0], "with": flops[1][0]}
        rec["factor_gflop"] = {"without": round(flops[0][1] / 1e3, 2), "with": round(flops[1][1] / 1e3, 2)}
        rec["ratio_factor_gflop"] = round(flops[1][1] / flops[0][1], 4)
    return rec


def report(rec: dict) -> str:
    """The lines printed for a :func:`run_joints` record."""
    out = [f"{rec['dofs']:,} unknowns in two layers, solver {rec['solver']}; best of {rec['repeat']}",
           f"without fasteners:     solve {rec['without_s']:7.2f} s wall, {rec['without_cpu_s']:7.2f} s cpu",
           f"with {rec['fasteners']:,} fasteners:  solve {rec['with_s']:7.2f} s wall, {rec['with_cpu_s']:7.2f} s cpu; "
           f"end operators {rec['end_operators_s']:.3f} s; load balance error {rec['load_balance_error']:.1e}",
           f"ratio with / without: {rec['ratio_wall']:.3f} wall, {rec['ratio_cpu']:.3f} cpu"]
    f0, f1 = rec["factorization_without_s"], rec["factorization_with_s"]
    out.append(f"factorization: {f0:.2f} s without, {f1:.2f} s with (ratio {f1 / f0:.3f}); the rest of the solve: "
               f"{rec['without_s'] - f0:.2f} s without, {rec['with_s'] - f1:.2f} s with")
    if "ratio_factor_gflop" in rec:
        g = rec["factor_gflop"]
        out.append(f"factor operations: {g['without']:.1f} Gflop without, {g['with']:.1f} with "
                   f"(ratio {rec['ratio_factor_gflop']:.3f}; these do not depend on the machine's load)")
    out.append(f"all wall times: {rec['wall_s']['without']} {rec['wall_s']['with']}")
    return "\n".join(out)


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--n", type=int, default=354)
    p.add_argument("--fasteners", type=int, default=1000)
    p.add_argument("--repeat", type=int, default=3)
    p.add_argument("--layout", choices=("grid", "splice"), default="grid")
    p.add_argument("--solver", choices=solvers.SOLVERS, default="auto",
                   help="back end of both solves, with and without fasteners (planar.solve's solver=)")
    p.add_argument("--orderings", action="store_true", help="compare three orderings of one joined matrix")
    a = p.parse_args()
    if a.orderings:
        orderings(a.n, a.fasteners, a.layout)
        return
    print(report(run_joints(a.n, a.fasteners, a.layout, a.solver, a.repeat, echo=lambda t: print(t, flush=True))))


if __name__ == "__main__":
    main()
