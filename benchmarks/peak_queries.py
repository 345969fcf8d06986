"""Time 20 peak queries (Result.max and Result.min of ten fields) on a cantilever plate of some 217 000
nodes (Q8, clamped on the left, a tip shear and a point force on the top edge), and the part of them
spent judging whether each peak is made by a support or load (planar.core.zones.idealised_reason).
Not a timed test. Example::

    python3 benchmarks/peak_queries.py
"""
from __future__ import annotations

import time
import warnings

import planar
from planar.core import zones

FIELDS = ["von_mises", "tresca", "sigma_xx", "sigma_yy", "tau_xy", "sigma_1", "sigma_2", "eps_xx", "eps_yy",
          "gamma_xy"]


def main() -> None:
    warnings.simplefilter("ignore")
    mesh = planar.rectangle_mesh(200.0, 100.0, 450, 160, "Q8")
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-1.0), case="tip")
    model.add_load(planar.PointForce((100.0, 100.0), fy=-50.0), case="tip")
    r = planar.solve(model)["tip"]
    for f in FIELDS:
        r.field(f)  # recovered before the clock starts: the queries alone are timed
    spent = [0.0]
    judge = zones.idealised_reason

    def timed(*a, **k):
        t = time.perf_counter()
        try:
            return judge(*a, **k)
        finally:
            spent[0] += time.perf_counter() - t

    zones.idealised_reason = timed
    t0 = time.perf_counter()
    notes = [r.max(f).note for f in FIELDS] + [r.min(f).note for f in FIELDS]
    total = time.perf_counter() - t0
    zones.idealised_reason = judge
    print(f"{mesh.n_nodes} nodes: 20 Result.max/min {total:.3f} s, of which idealised_reason {spent[0]:.3f} s; "
          f"{sum(map(bool, notes))} peaks flagged next to a support or load")


if __name__ == "__main__":
    main()
