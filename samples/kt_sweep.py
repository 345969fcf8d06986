"""Net-section Kt of a strap with a central hole, swept over d/W, against Peterson's chart.

The scenario (fictional): Brightwater Cycle Works is sizing the lightening hole in the 50 mm wide,
3 mm thick aluminium strap that carries a cargo-bike rack, pulled by 10 kN. How does the net-section
stress concentration factor change as the hole grows from d/W = 0.1 to 0.6?

Model: a quarter of a strip 8 W long (the chart is for an infinitely long strip; at four widths from
the hole the end effect is far below the mesh error), symmetry supports on the two cut edges,
uniform remote tension on the far end, quadratic triangles (T6) refined at the hole edge, peak
sigma_xx at the hole edge by superconvergent patch recovery, and

    Kt_net = sigma_max / (P / ((W - d) t)).

Reference: Ktn = 3.00 - 3.13 (d/W) + 3.66 (d/W)^2 - 1.53 (d/W)^3 (W. D. and D. F. Pilkey, Peterson's
Stress Concentration Factors, 3rd ed., 2008, chart 4.1, after Howland's 1930 solution; coefficients
from memory), computed by planar.post.handbook.kt_hole_in_strip. The sweep must agree within 2 % at
every point.

Units: N, mm, MPa.

Run it (the points are stored in OUT/kt_points, so a second run reuses them; --fresh starts over):

    python samples/kt_sweep.py                      # local worker processes
    python samples/kt_sweep.py --local-dask 2       # a local Dask cluster of 2 worker processes
    python samples/kt_sweep.py --cluster tcp://127.0.0.1:8786   # a running Dask scheduler

Output in $PLANAR_OUT (default ./planar-out): kt_sweep.csv, kt_sweep.json, kt_sweep.png.
"""
from __future__ import annotations

import argparse
import math
import os
import shutil
import sys
import time
from pathlib import Path

import numpy as np

WIDTH = 50.0        # mm
THICKNESS = 3.0     # mm
LOAD = 10e3         # N, total pull
LENGTH = 8 * WIDTH  # mm, full length of the strip
TOLERANCE = 0.02    # 2 % against the chart


def peterson_kt_net(d_over_w):
    """Peterson chart 4.1 (Pilkey and Pilkey 2008, after Howland 1930; coefficients from memory)."""
    from planar.post.handbook import kt_hole_in_strip

    return np.asarray(kt_hole_in_strip(d_over_w))


def strap_with_hole(d_over_w: float, width: float = WIDTH, thickness: float = THICKNESS, load: float = LOAD,
                    length: float = LENGTH, hole_elements: int = 50):
    """Quarter model of the strap, solved; returns (result, reported numbers).

    Parameters
    ----------
    d_over_w : float
        Hole diameter over strap width.
    width, thickness, length : float
        mm.
    load : float
        Total pull, N.
    hole_elements : int
        About this many element sides along half the hole's circumference.
    """
    import planar
    from planar.geometry import Circle, Plate, Refine, mesh
    from planar.post import nominal_net

    d = float(d_over_w) * width
    plate = (Plate.rectangle(length, width, centre=(0.0, 0.0))
             .cut(Circle((0.0, 0.0), d / 2, name="hole"))
             .quarter())
    hole_size = math.pi * (d / 2) / hole_elements
    m = mesh(plate, size=width / 8, element="T6", refine=[Refine("hole", size=hole_size, growth=1.25)], seed=1)
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=thickness, units="N, mm, MPa")
    model.add_support(planar.Symmetry("symmetry_x"))
    model.add_support(planar.Symmetry("symmetry_y"))
    model.add_load(planar.Traction("right", tx=load / (width * thickness)), case="pull")   # MPa
    result = planar.solve(model)["pull"]
    return result, {"nominal_net": nominal_net(load, width, d, thickness), "nodes": float(m.n_nodes)}


def run(points: int = 11, *, cluster=None, local_dask: int | None = None, workers: int | None = None,
        out: Path | None = None, fresh: bool = False, verbose: bool = False):
    """Run the sweep; return (table, seconds, where it ran)."""
    from planar.studies import ConcentrationFactor, Peak, sweep

    out = Path(out or os.environ.get("PLANAR_OUT") or "planar-out")
    store = out / "kt_points"
    if fresh and store.exists():
        shutil.rmtree(store)
    grid = {"d_over_w": [round(v, 6) for v in np.linspace(0.1, 0.6, points)]}
    outputs = {"Kt_net": ConcentrationFactor("nominal_net", field="sigma_xx", method="spr"),
               "peak_sigma_xx": Peak("sigma_xx", method="spr")}
    local = None
    where = "this process" if workers == 0 else "local worker processes"
    t0 = time.perf_counter()
    try:
        if local_dask:
            from distributed import Client, LocalCluster

            local = LocalCluster(n_workers=local_dask, threads_per_worker=1, processes=True, host="127.0.0.1",
                                 dashboard_address=None)
            cluster = Client(local)
            where = f"a local Dask cluster of {local_dask} worker processes"
        elif cluster:
            where = f"the Dask cluster at {cluster}"
        table = sweep(strap_with_hole, grid=grid, outputs=outputs, store=store, cluster=cluster,
                      workers=workers, verbose=verbose)
    finally:
        if local is not None:
            cluster.close()
            local.close()
    seconds = time.perf_counter() - t0
    table.to_csv(out / "kt_sweep.csv")
    table.to_json(out / "kt_sweep.json")
    table.plot(out / "kt_sweep.png", x="d_over_w", y=["Kt_net"],
               reference={"Kt_net": ("Peterson chart 4.1 (Howland 1930)", peterson_kt_net)},
               title=f"Net-section Kt of a {WIDTH:g} mm strap with a central hole (FE: T6, SPR)",
               xlabel="d / W", ylabels={"Kt_net": "Kt (net section)"})
    return table, seconds, where


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=11, help="points from d/W = 0.1 to 0.6 (default 11)")
    g = ap.add_mutually_exclusive_group()
    g.add_argument("--local-dask", type=int, metavar="N", help="start a local Dask cluster of N worker processes")
    g.add_argument("--cluster", metavar="ADDRESS", help="a running Dask scheduler, e.g. tcp://127.0.0.1:8786")
    g.add_argument("--workers", type=int, metavar="N", help="local worker processes (0: in this process)")
    ap.add_argument("--fresh", action="store_true", help="forget the stored points and compute all again")
    ap.add_argument("--verbose", "-v", action="store_true", help="progress on stderr")
    args = ap.parse_args(argv)
    table, seconds, where = run(args.points, cluster=args.cluster, local_dask=args.local_dask,
                                workers=args.workers, fresh=args.fresh, verbose=args.verbose)
    r = table.column("d_over_w")
    kt = table.column("Kt_net")
    ref = peterson_kt_net(r)
    err = 100.0 * (kt / ref - 1.0)
    print("net-section Kt of a strap with a central hole (Peterson chart 4.1, coefficients from memory)")
    print(f"{'d/W':>6} {'Kt FE':>8} {'Peterson':>9} {'error %':>8}")
    for a, b, c, e in zip(r, kt, ref, err):
        print(f"{a:6.3f} {b:8.4f} {c:9.4f} {e:+8.2f}")
    print(f"{len(table)} points ({table.computed} computed, {table.reused} from the store) on {where} "
          f"in {seconds:.1f} s")
    bad = ~(np.abs(err) <= 100 * TOLERANCE)
    if table.failed or np.any(bad):
        print(f"FAILED: {len(table.failed)} points failed, {int(bad.sum())} off the chart by more than "
              f"{100 * TOLERANCE:g} %", file=sys.stderr)
        return 1
    print(f"every point within {100 * TOLERANCE:g} % of the chart")
    return 0


if __name__ == "__main__":
    sys.exit(main())
