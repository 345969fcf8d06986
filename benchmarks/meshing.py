"""Time :func:`planar.geometry.mesh` on the 400 x 160 plate with a central hole of radius 20.

Each case runs in a fresh process (so the peak resident memory, ``ru_maxrss``, is that case's own)
``--repeat`` times; the best time is printed with the element count, the unknowns and the least
and largest corner angles. Not a timed test. Examples::

    python3 benchmarks/meshing.py                      # T6 at 10^6 and 3.7 * 10^6 unknowns, Q8, Q9
    python3 benchmarks/meshing.py --case T6:0.76 --case T6:0.76:slow --repeat 3
"""
from __future__ import annotations

import argparse
import json
import subprocess
import sys

DEFAULT_CASES = ["T6:0.76", "T6:0.4", "Q8:0.6", "Q9:0.6", "Q8:0.3"]

_CHILD = r"""
import json, resource, sys, time
import numpy as np
from planar.geometry import Circle, Plate, mesh

element, size, fast, repeat = sys.argv[1], float(sys.argv[2]), {"auto": None, "fast": True, "slow": False}[sys.argv[3]], int(sys.argv[4])
plate = Plate.rectangle(400.0, 160.0).cut(Circle((200.0, 80.0), 20.0, name="hole")).add_point("anchor", (0.0, 0.0))
kw = dict(element=element, fast=fast)
best = float("inf")
for _ in range(repeat):
    t = time.perf_counter()
    m = mesh(plate, size=size, **kw)
    best = min(best, time.perf_counter() - t)
lay = next(iter(m.cells))
nc = 3 if lay[0] == "T" else 4
P = m.nodes[m.cells[lay][:, :nc]]
ang = []
for i in range(nc):
    a, b = P[:, i - 1] - P[:, i], P[:, (i + 1) % nc] - P[:, i]
    ang.append(np.degrees(np.arctan2(np.abs(a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]), (a * b).sum(axis=1))))
ang = np.array(ang)
print(json.dumps(dict(element=lay, size=size, fast=sys.argv[3], cells=m.n_cells, dofs=m.n_dofs, seconds=best,
                      least_angle=float(ang.min()), largest_angle=float(ang.max()),
                      peak_mb=resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0)))
"""


def run_case(case: str, repeat: int) -> dict:
    parts = case.split(":")
    element, size = parts[0], parts[1]
    fast = parts[2] if len(parts) > 2 else "auto"
    out = subprocess.run([sys.executable, "-c", _CHILD, element, size, fast, str(repeat)],
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--case", action="append", help="ELEMENT:SIZE[:auto|fast|slow], may repeat")
    ap.add_argument("--repeat", type=int, default=2, help="runs per case; the best time is kept")
    args = ap.parse_args(argv)
    print(f"{'case':<16}{'cells':>10}{'unknowns':>11}{'seconds':>9}{'angles':>14}{'peak MB':>9}")
    for case in args.case or DEFAULT_CASES:
        r = run_case(case, args.repeat)
        print(f"{case:<16}{r['cells']:>10,}{r['dofs']:>11,}{r['seconds']:>9.2f}"
              f"{r['least_angle']:>7.1f}/{r['largest_angle']:<6.1f}{r['peak_mb']:>9.0f}", flush=True)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
