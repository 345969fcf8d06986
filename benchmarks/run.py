"""Benchmark of the whole pipeline on a plate with a hole: mesh, assembly, solve, recovery, VTK.

Usage::

    python benchmarks/run.py --dofs 1000000 [--element T6] [--solver auto] [--json out.json]
                             [--compare-iterative]
    python benchmarks/run.py --contact-lug [--dofs 200000]
    python benchmarks/run.py --joints splice|grid [--dofs 1000000] [--fasteners 1000] [--repeat 3]

Prints and writes (JSON) the time of each stage, the peak resident memory and the unknowns, and the
time of the bare factorization and solve of the same matrix by the fastest installed back end,
measured in the same run so the ratios hold on a noisy machine. With ``--compare-iterative`` the bare
iterative solve (multigrid-preconditioned CG) of the same matrix is timed right after the bare direct one.
Not a timed test.
"""
from __future__ import annotations

import argparse
import gc
import json
import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

#: stages of solve() that check the input and the answer (element validity and conformity, hinges and
#: zero-energy modes, the memory check, the solve's own residual, equilibrium and conditioning check,
#: and the trust warnings); their sum against the end-to-end time is the checks' share
CHECK_STAGES = ("checks", "solution check", "trust warnings")


def _rss_mb() -> float:
    """Peak resident memory since the last reset (VmHWM), in MB; ru_maxrss where that is missing."""
    try:
        with open("/proc/self/status") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024.0
    except OSError:
        pass
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _reset_peak() -> None:
    """Start the peak-memory count afresh (Linux: writing 5 to clear_refs resets VmHWM)."""
    try:
        with open("/proc/self/clear_refs", "w") as fh:
            fh.write("5")
    except OSError:
        pass


def _plate(width=400.0, height=160.0, radius=20.0):
    from planar.geometry import Circle, Plate

    plate = Plate.rectangle(width, height).cut(Circle((width / 2, height / 2), radius, name="hole"))
    return plate.add_point("anchor", (0.0, 0.0))


def _mesh(plate, element: str, size: float):
    from planar.geometry import mesh

    # the benchmark asks for its size on purpose: no element-count bound beyond the memory check
    return mesh(plate, size=size, element=element, max_elements=10**9)


def size_for(plate, element: str, dofs: int) -> float:
    """Global element size that gives about ``dofs`` unknowns.

    Two trial meshes (about 2,000 elements, then about a quarter of the target) fix n(h) = a / h^2 +
    b / h (the area term and the boundary's share), which is then solved for the target.
    """
    area = plate.area()
    h1 = float(np.sqrt(area / 2000.0))
    n1 = _mesh(plate, element, h1).n_dofs
    h2 = h1 * float(np.sqrt(n1 / max(min(dofs / 4.0, 250_000.0), n1)))
    if h2 >= h1 * 0.99:
        return h1 * float(np.sqrt(n1 / dofs))
    n2 = _mesh(plate, element, h2).n_dofs
    # n = a u^2 + b u with u = 1 / h, from the two trials
    u1, u2 = 1.0 / h1, 1.0 / h2
    det = u1 * u1 * u2 - u2 * u2 * u1
    a = (n1 * u2 - n2 * u1) / det
    b = (u1 * u1 * n2 - u2 * u2 * n1) / det
    if a <= 0:
        return h2 * float(np.sqrt(n2 / dofs))
    u = (-b + float(np.sqrt(b * b + 4.0 * a * dofs))) / (2.0 * a)
    return 1.0 / u


def warm_memory(gib: float) -> None:
    """Touch and free ``gib`` GiB once, before anything is timed.

    On a virtual machine whose memory is backed lazily, the first touch of a page costs far more
    than on a laptop; without this, whichever stage first reaches fresh memory pays for it (the
    pipeline, which runs before the bare solve), and the ratios would measure the host, not planar.
    """
    if gib > 0:
        block = np.ones(int(gib * 2**30) // 8)
        del block


def compare_iterative(res_assembly, direct: str) -> dict:
    """The bare direct solve and the bare iterative solve (multigrid set-up and CG) of the same matrix,
    one after the other in this run: times, their ratio, iterations and residual."""
    from planar.core._multigrid import nodal_space
    from planar.core.solvers import factorize
    from planar.core.static import _rigid_modes

    asm = res_assembly
    system, rhs = asm.system, asm.rhs
    space = asm.space
    if space is None:
        cons, mesh = asm.constrained, asm.mesh
        space = nodal_space(asm.blocks, mesh.n_nodes, asm.free, _rigid_modes(mesh.nodes, cons.rotation),
                            cons.rotation)
    gc.collect()
    t = time.perf_counter()
    fac = factorize(system.lower, direct)
    x_direct = fac.solve(rhs)
    t_direct = time.perf_counter() - t
    del fac
    gc.collect()
    t = time.perf_counter()
    fac = factorize(system.lower, "amg", space=space)
    t_setup = time.perf_counter() - t
    x_amg = fac.solve(rhs)
    t_amg = time.perf_counter() - t
    diff = float(np.abs(x_amg - x_direct).max() / max(np.abs(x_direct).max(), 1e-300))
    return {"direct_solver": direct, "direct_s": round(t_direct, 3), "iterative_s": round(t_amg, 3),
            "iterative_setup_s": round(t_setup, 3), "ratio_iterative_over_direct": round(t_amg / t_direct, 3),
            "iterations": fac.info["iterations"], "residual": [float(f"{r:.3g}") for r in fac.info["residual"]],
            "levels": fac.info.get("levels"), "max_relative_difference": float(f"{diff:.3g}")}


def run(dofs: int, element: str = "T6", solver: str = "auto", out_dir: str | None = None,
        warm_gib: float | None = None, compare: bool = False) -> dict:
    import planar
    from planar.core.solvers import available_memory, available_solvers, estimate_memory, factorize
    from planar.core.timing import Timer
    from planar.post.vtk import write_vtu

    plate = _plate()
    h = size_for(plate, element, dofs)
    warm_memory(warm_gib if warm_gib is not None else min(3.0 * dofs / 1e6, 16.0))
    gc.collect()
    _reset_peak()
    stages: dict[str, float] = {}
    t_start = time.perf_counter()
    t = time.perf_counter()
    mesh = _mesh(plate, element, h)
    stages["mesh"] = time.perf_counter() - t
    model = planar.Model(mesh, planar.Isotropic(72e3, 0.33), thickness=4.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("anchor", fixed="y"))
    model.add_load(planar.Traction("right", tx=100.0), case="tension")
    timer = Timer()
    res = planar.solve(model, solver=solver, timer=timer, keep_system=True)["tension"]
    for k, v in timer.stages.items():
        stages[k] = v
    t = time.perf_counter()
    res.nodal_stress("spr")
    stages["recovery (SPR)"] = time.perf_counter() - t
    t = time.perf_counter()
    with tempfile.TemporaryDirectory(dir=out_dir) as tmp:
        write_vtu(Path(tmp) / "plate.vtu", res, recovery="spr")
        stages["VTK output"] = time.perf_counter() - t
    end_to_end = time.perf_counter() - t_start
    peak = _rss_mb()
    system, rhs = res.assembly.system, res.assembly.rhs
    peak_vm, loc, _ = res.max("von_mises", recovery="spr")
    used_solver = res.solver
    fastest = available_solvers()[0]
    asm = res.assembly
    if estimate_memory(system.lower.shape[0], fastest) > available_memory():
        fastest = used_solver  # the fastest back end cannot hold this matrix: the pipeline's own
    iterative = compare_iterative(asm, fastest) if compare else None
    info = res.solver_info
    del res
    gc.collect()
    if iterative is not None:
        bare = iterative["direct_s"]
    else:
        t = time.perf_counter()
        fac = factorize(system.lower, fastest, space=asm.space, rigid_modes=asm.modes)
        fac.solve(rhs)
        bare = time.perf_counter() - t
        del fac
    rec = {
        "dofs": int(mesh.n_dofs),
        "element": element,
        "elements": int(mesh.n_cells),
        "stages": {k: round(v, 4) for k, v in stages.items()},
        "bare_solve_s": round(bare, 4),
        "bare_solver": fastest,
        "end_to_end_s": round(end_to_end, 4),
        "ratio_end_to_end_over_bare": round(end_to_end / bare, 3),
        "ratio_assembly_over_bare": round((stages.get("element matrices", 0) + stages.get("COO to CSR", 0)) / bare, 3),
        "checks_s": round(sum(stages.get(k, 0.0) for k in CHECK_STAGES), 4),
        "ratio_checks_over_end_to_end": round(sum(stages.get(k, 0.0) for k in CHECK_STAGES) / end_to_end, 4),
        "peak_rss_mb": round(peak, 1),
        "solver": used_solver,
        "peak_von_mises": round(peak_vm, 3),
        "peak_location": [round(loc[0], 4), round(loc[1], 4)],
    }
    if "iterations" in info:  # the pipeline's own iterative solve
        rec["iterations"] = [int(i) for i in info["iterations"]]
        rec["residual"] = [float(f"{r:.3g}") for r in info["residual"]]
    if iterative is not None:
        rec["compare_iterative"] = iterative
    return rec


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--dofs", type=int, default=200_000, help="target number of unknowns")
    p.add_argument("--element", default="T6", choices=["T3", "T6", "Q4", "Q8", "Q9"])
    p.add_argument("--solver", default="auto", help="solver back end (auto, pardiso, cholmod, amg, superlu)")
    p.add_argument("--json", metavar="PATH", help="write the figures as JSON")
    p.add_argument("--warm-gib", type=float, default=None,
                   help="memory to touch once before timing (default 3 GiB per million unknowns; 0 to skip)")
    p.add_argument("--compare-iterative", action="store_true",
                   help="also time the bare iterative solve (multigrid-preconditioned CG) of the same matrix "
                        "against the bare direct one, in this run")
    p.add_argument("--contact-lug", action="store_true",
                   help="the lug-with-contact case instead (benchmarks/contact.py): the contact solve against the "
                        "linear solve of the same lug mesh, time and peak memory, in this run")
    p.add_argument("--joints", choices=("splice", "grid"), default=None,
                   help="the fastened-joint case instead (benchmarks/joints.py): two plates of --dofs unknowns in all "
                        "joined by --fasteners fasteners on a lap splice band or a grid over the whole overlap, "
                        "against the same plates without them, time in this run and factor operations")
    p.add_argument("--fasteners", type=int, default=1000, help="fasteners of the --joints case")
    p.add_argument("--repeat", type=int, default=3, help="runs of each solve of the --joints case (best taken)")
    args = p.parse_args(argv)
    if args.joints:
        from joints import report as joint_report, run_joints

        n = max(int(round((args.dofs / 8.0) ** 0.5)), 4)  # two plates of 2n x n Q4 cells: about 8 n^2 unknowns
        rec = run_joints(n, args.fasteners, args.joints, args.solver, args.repeat, echo=lambda t: print(t, flush=True))
        print(joint_report(rec))
        if args.json:
            from planar.post.files import atomic_write_text

            atomic_write_text(args.json, json.dumps(rec, indent=1))
        return 0
    if args.contact_lug:
        from contact import report, run_contact

        rec = run_contact(args.dofs, args.element, args.solver, warm_gib=args.warm_gib)
        print(report(rec))
        if args.json:
            from planar.post.files import atomic_write_text

            atomic_write_text(args.json, json.dumps(rec, indent=1))
        return 0
    rec = run(args.dofs, args.element, args.solver, warm_gib=args.warm_gib, compare=args.compare_iterative)
    print(f"{rec['dofs']:,} unknowns, {rec['elements']:,} {rec['element']} elements, solver {rec['solver']}")
    for k, v in rec["stages"].items():
        print(f"  {k:<22s} {v:8.3f} s")
    print(f"  end to end             {rec['end_to_end_s']:8.3f} s")
    print(f"  bare solve ({rec['bare_solver']})  {rec['bare_solve_s']:8.3f} s")
    print(f"  end to end / bare      {rec['ratio_end_to_end_over_bare']:8.3f}")
    print(f"  assembly / bare        {rec['ratio_assembly_over_bare']:8.3f}")
    print(f"  checks / end to end    {rec['ratio_checks_over_end_to_end']:8.3f}  ({', '.join(CHECK_STAGES)})")
    print(f"  peak memory            {rec['peak_rss_mb']:8.1f} MB")
    if "iterations" in rec:
        print(f"  CG iterations          {', '.join(map(str, rec['iterations']))} "
              f"(relative residual {', '.join(f'{r:.1e}' for r in rec['residual'])})")
    c = rec.get("compare_iterative")
    if c:
        print(f"  bare direct ({c['direct_solver']})    {c['direct_s']:8.3f} s")
        print(f"  bare iterative (amg)   {c['iterative_s']:8.3f} s  (set-up {c['iterative_setup_s']:.3f} s, "
              f"{c['levels']} levels, {', '.join(map(str, c['iterations']))} iterations, residual "
              f"{', '.join(f'{r:.1e}' for r in c['residual'])})")
        print(f"  iterative / direct     {c['ratio_iterative_over_direct']:8.3f}  "
              f"(largest difference {c['max_relative_difference']:.1e} of the largest displacement)")
    if args.json:
        from planar.post.files import atomic_write_text

        atomic_write_text(args.json, json.dumps(rec, indent=1))
    return 0


if __name__ == "__main__":
    sys.exit(main())
