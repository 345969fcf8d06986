"""Time Plate.cut and the meshing after it on a fastener pattern: holes of diameter 5 at a pitch of 20
on a 1000 x 600 plate (50, 200 and 1000 holes), meshed at size 20 (T6, the holes refined by default).
Not a timed test. Examples::

    python3 benchmarks/many_holes.py            # the cut alone
    python3 benchmarks/many_holes.py --mesh     # and the meshing after it (about half a minute at 1000)
"""
from __future__ import annotations

import argparse
import time
import warnings

import numpy as np

from planar.geometry import Circle, Plate, mesh

PATTERNS = {50: (10, 5), 200: (20, 10), 1000: (40, 25)}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--mesh", action="store_true", help="mesh the plate after the cut")
    args = ap.parse_args()
    warnings.simplefilter("ignore")
    for n, (nx, ny) in PATTERNS.items():
        at = [(110.0 + 20.0 * i, 60.0 + 20.0 * j) for j in range(ny) for i in range(nx)]
        t0 = time.perf_counter()
        plate = Plate.rectangle(1000.0, 600.0).cut(Circle((0.0, 0.0), 2.5, name="fastener"), at=at)
        line = f"{n:5d} holes: cut {time.perf_counter() - t0:.3f} s"
        if args.mesh:
            t0 = time.perf_counter()
            m = mesh(plate, 20.0)
            line += f"; mesh(size=20) {time.perf_counter() - t0:.2f} s, {m.n_nodes} nodes"
        print(line, flush=True)


if __name__ == "__main__":
    main()
