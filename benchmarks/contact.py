"""Cost of bearing contact: a lug on its pin, solved with contact and linearly on the same mesh, same run.

Usage::

    python benchmarks/run.py --contact-lug [--dofs 200000] [--json out.json]
    python benchmarks/contact.py [--dofs 200000]

The lug (``planar.geometry.lugs.lug``: width 40 mm, hole 16 mm, end distance 40 mm, T6 elements, held
at its base) is pulled by its pin along the lug's axis. It is solved three times, end to end
(``planar.solve``), in the same process: the pin rigidly tied to the hole (the linear solve), the pin
with a spreading tie (linear too), then the pin in bearing contact with a 0.02 mm clearance (with
PARDISO the contact flexibility comes from the Schur complement on the edge nodes' normal motions and
the pin's unknowns, returned by the factorization). Prints and returns the times and the contact
solve's ratio to each linear one, the peak resident memory of each solve and their ratios, the
factorizations counted during the contact solve, the contact stage's own time, the active-set
iterations and the contact arc. Each solve runs ``repeat`` times (alternating) and the fastest
counts, since the machine may be shared.
Not a timed test.
"""
from __future__ import annotations

import argparse
import gc
import json
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from run import _mesh, _reset_peak, _rss_mb, size_for, warm_memory  # noqa: E402


def lug_plate():
    from planar.geometry.lugs import lug

    return lug(width=40.0, hole_diameter=16.0, edge_distance=40.0)


def lug_model(mesh, tie: str, clearance: float = 0.02, load: float = 20e3):
    import planar
    from planar.core.pins import Pin, PinLoad

    model = planar.Model(mesh, planar.Isotropic(72e3, 0.33), thickness=8.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    kw = {"clearance": clearance} if tie == "contact" else {}
    model.add_pin(Pin("hole", tie=tie, hold=None, name="pin", **kw))
    model.add_load(PinLoad("pin", fy=load), case="pull")
    return model


def run_contact(dofs: int = 200_000, element: str = "T6", solver: str = "auto", repeat: int = 3,
                warm_gib: float | None = None) -> dict:
    """Time and memory of the contact solve against the linear solve of the same lug mesh (same run)."""
    import planar
    from planar.core import static
    from planar.core.timing import Timer

    plate = lug_plate()
    mesh = _mesh(plate, element, size_for(plate, element, dofs))
    warm_memory(warm_gib if warm_gib is not None else min(3.0 * dofs / 1e6, 16.0))
    real = static.factorize
    count = {"n": 0}

    def counting(*a, **kw):
        count["n"] += 1
        return real(*a, **kw)

    static.factorize = counting
    best = {t: (float("inf"), 0.0, None) for t in ("rigid", "spreading", "contact")}
    try:
        for _ in range(max(1, repeat)):
            for tie in ("rigid", "spreading", "contact"):
                model = lug_model(mesh, tie)
                gc.collect()
                _reset_peak()
                count["n"] = 0
                timer = Timer(False)
                t = time.perf_counter()
                res = planar.solve(model, solver=solver, timer=timer, verbose=False)["pull"]
                dt = time.perf_counter() - t
                peak = _rss_mb()
                info = {"factorizations": count["n"], "stages": dict(timer.stages), "solver": res.solver,
                        "dofs": res.n_dofs, "state": res.contact_states.get("pin"),
                        "schur_unknowns": res.solver_info.get("schur_unknowns", 0)}
                if dt < best[tie][0]:
                    best[tie] = (dt, max(peak, best[tie][1]), info)
                else:
                    best[tie] = (best[tie][0], max(peak, best[tie][1]), best[tie][2])
                del res, model
    finally:
        static.factorize = real
    (tl, ml, il), (tc, mc, ic) = best["rigid"], best["contact"]
    ts, ms, _ = best["spreading"]
    st = ic["state"]
    import numpy as np

    hole = int(np.unique(mesh.edge("hole")).size)
    return {
        "case": "lug with contact",
        "dofs": ic["dofs"],
        "element": element,
        "hole_nodes": hole,
        "solver": ic["solver"],
        "linear_solve_s": round(tl, 4),
        "contact_solve_s": round(tc, 4),
        "ratio_time_contact_over_linear": round(tc / tl, 3),
        "contact_stage_s": round(ic["stages"].get("contact", 0.0), 4),
        "factorization_s": {"linear": round(il["stages"].get("factorization", 0.0), 4),
                            "contact": round(ic["stages"].get("factorization", 0.0), 4)},
        "factorizations_in_contact_solve": ic["factorizations"],
        # the flexibility from the Schur complement the factorization returns (PARDISO), else from solves
        "schur_unknowns": ic["schur_unknowns"],
        "peak_rss_mb": {"linear": round(ml, 1), "contact": round(mc, 1)},
        "ratio_peak_memory_contact_over_linear": round(mc / ml, 3),
        # the spreading tie keeps every unknown of the hole edge, as contact does (the rigid tie eliminates them)
        "linear_spreading_solve_s": round(ts, 4),
        "ratio_time_contact_over_spreading": round(tc / ts, 3),
        "ratio_peak_memory_contact_over_spreading": round(mc / ms, 3),
        "iterations": st.iterations,
        "contact_arc_deg": [round(st.arc_start_deg, 2), round(st.arc_end_deg, 2)],
        "peak_pressure_mpa": round(st.peak_pressure, 2),
        "max_penetration_mm": st.max_penetration,
        "repeat": repeat,
    }


def report(rec: dict) -> str:
    return "\n".join([
        f"{rec['case']}: {rec['dofs']:,} unknowns, {rec['element']}, {rec['hole_nodes']} hole nodes, solver {rec['solver']}",
        f"  linear solve (rigid pin)   {rec['linear_solve_s']:8.3f} s   peak {rec['peak_rss_mb']['linear']:8.1f} MB",
        f"  contact solve              {rec['contact_solve_s']:8.3f} s   peak {rec['peak_rss_mb']['contact']:8.1f} MB"
        f"   (contact stage {rec['contact_stage_s']:.3f} s, {rec['iterations']} active-set iterations)",
        f"  time ratio contact/linear  {rec['ratio_time_contact_over_linear']:8.3f}   (target <= 1.5)",
        f"  memory ratio               {rec['ratio_peak_memory_contact_over_linear']:8.3f}   (target <= 1.2)",
        f"  linear solve (spreading)   {rec['linear_spreading_solve_s']:8.3f} s   (keeps the hole's unknowns, as "
        f"contact does): time ratio {rec['ratio_time_contact_over_spreading']:.3f}, memory ratio "
        f"{rec['ratio_peak_memory_contact_over_spreading']:.3f}",
        f"  factorizations in the contact solve: {rec['factorizations_in_contact_solve']}; flexibility "
        + (f"from the factor's Schur complement on {rec['schur_unknowns']} unknowns" if rec["schur_unknowns"]
           else "from solves with the factor"),
        f"  contact arc {rec['contact_arc_deg'][0]:.1f} to {rec['contact_arc_deg'][1]:.1f} deg, peak pressure "
        f"{rec['peak_pressure_mpa']:.1f} MPa, largest penetration {rec['max_penetration_mm']:.1e} mm",
    ])


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--dofs", type=int, default=200_000)
    p.add_argument("--element", default="T6", choices=["T3", "T6", "Q4", "Q8", "Q9"])
    p.add_argument("--solver", default="auto")
    p.add_argument("--repeat", type=int, default=3)
    p.add_argument("--json", metavar="PATH")
    args = p.parse_args(argv)
    rec = run_contact(args.dofs, args.element, args.solver, args.repeat)
    print(report(rec))
    if args.json:
        Path(args.json).write_text(json.dumps(rec, indent=1))
    return 0


if __name__ == "__main__":
    sys.exit(main())
