"""Benchmark case of hot spots: the feature under check found and read apart from a clamp's peak.

``hot-spot-feature``: a strip with a central-line circular hole, clamped at one end and pulled at the
other. The clamp holds the end's Poisson contraction, which makes a singular peak at its two
corners (the mesh is refined there, as an engineer refining "everywhere it matters" would do): the
plate's global peak sits at the clamp, above the hole's. The check is that

1. the global peak sits next to the clamp and its note says so;
2. :func:`planar.post.hot_spots` lists the hole as a spot of its own, not flagged, the governing one,
   while the spots at the clamp are flagged;
3. the hole's spot is within 1 % of the hole's converged peak: the Richardson extrapolation of a
   refinement series at the hole (:func:`planar.post.grid_convergence`; P. J. Roache 1998);
4. as a published cross-check, the hole's net-section Kt agrees with Peterson's chart for a hole in
   a finite-width strip (:func:`planar.post.kt_hole_in_strip`, after Howland 1930);
5. the hole is far enough from the clamp that the clamp does not change it: the same strip held by a
   sliding end (a roller and one point) gives the same hole peak (St Venant's principle).
"""
from __future__ import annotations

import math

from ..core.loads import Traction
from ..core.materials import Isotropic
from ..core.model import Model
from ..core.static import solve
from ..core.supports import Fixed, Roller
from ..post.handbook import kt_hole_in_strip
from ._register import case, check
from .geometry_cases import PETERSON

ROACHE = ("P. J. Roache, Verification and Validation in Computational Science and Engineering, 1998: "
          "Richardson extrapolation of a refinement series at the hole")
ST_VENANT = ("A. J. C. B. de Saint-Venant 1855 (St Venant's principle; S. P. Timoshenko and J. N. Goodier, "
             "Theory of Elasticity, 3rd ed., 1970, art. 19): an end's disturbance decays within about a width")
PLANAR = "planar's hot-spot rule (planar.post.hotspots; flags after planar.core.zones.DOMINANCE)"

#: the strip [mm], the hole, the gross stress [MPa]
LENGTH, WIDTH, DIAMETER, HOLE_X, STRESS = 300.0, 50.0, 10.0, 25.0, 100.0
#: element size at the hole edge on the meshes of the refinement series [mm] (d/12.5, d/25, d/50)
HOLE_SIZES = (0.8, 0.4, 0.2)
#: element size at the clamped end [mm]: fine enough to show its corner peaks
CLAMP_SIZE = 0.1


def _strip(element: str, hole_size: float, *, clamped: bool = True):
    from ..geometry import Circle, Plate, Refine, mesh

    plate = Plate.rectangle(LENGTH, WIDTH, centre=(0.0, 0.0)).cut(Circle((HOLE_X, 0.0), DIAMETER / 2, name="hole"))
    m = mesh(plate, size=WIDTH / 8, element=element, seed=1,
             refine=[Refine("hole", size=hole_size, growth=1.2), Refine("left", size=CLAMP_SIZE, growth=1.3)])
    model = Model(m, Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    if clamped:
        model.add_support(Fixed("left"))
    else:  # the end slides: held along x, and at one corner along y (no Poisson restraint)
        model.add_support(Roller("left", fixed="x"))
        model.add_support(Roller((-LENGTH / 2, -WIDTH / 2), fixed="y"))
    model.add_load(Traction("right", tx=STRESS), case="pull")
    return solve(model)["pull"]


@case("hot-spot-feature", ("T6",))
def hot_spot_feature(element: str):
    """A clamped strip with a hole: the global peak at the clamp, the hole's spot found, ranked, converged."""
    from ..post.convergence import grid_convergence
    from ..post.hotspots import hot_spots
    from .core_cases import equilibrium_record

    name = "hot-spot-feature"
    net = STRESS * WIDTH / (WIDTH - DIAMETER)
    series, results = [], []
    for h in HOLE_SIZES:
        r = _strip(element, h)
        results.append(r)
        series.append(r.max("von_mises", where="hole").value)
    r = results[-1]
    g = grid_convergence(series, sizes=HOLE_SIZES, name="hole peak", unit="MPa", degree=2)
    reference = g.extrapolated if math.isfinite(g.extrapolated) else series[-1]
    said = f"extrapolated {reference:.6g} MPa, observed order {g.order:.3g}, {g.verdict}"

    peak = r.max("von_mises")
    at_clamp = peak.location[0] == -LENGTH / 2 and "clamp on edge 'left'" in peak.note
    hs = hot_spots(r, nominal=net)
    hole = [s for s in hs if s.feature == "hole"]
    clamp_spots = [s for s in hs if math.isclose(s.location[0], -LENGTH / 2, abs_tol=1e-9)]
    found = (bool(hole) and not hole[0].flagged and hs.governing is hole[0] and hs.spots[0].flagged
             and hole[0].rank > 1 and bool(clamp_spots) and all(s.flagged for s in clamp_spots))
    value = hole[0].value if hole else float("nan")
    sliding = _strip(element, HOLE_SIZES[-1], clamped=False).max("von_mises", where="hole").value
    d_w = DIAMETER / WIDTH
    where = f"global peak {peak.value:.4g} MPa at ({peak.location[0]:g}, {peak.location[1]:g})"
    return [
        check(name, element, "global von Mises peak sits at the clamp, its note saying so (1 = yes)", 1.0,
              float(at_clamp), 0.0, r.n_dofs, PLANAR, note=where),
        check(name, element, "hot spots: the hole a spot of its own, governing; the clamp's spots flagged (1 = yes)",
              1.0, float(found), 0.0, r.n_dofs, PLANAR,
              note="; ".join(f"{s.rank} {s.feature} {s.value:.4g}{' flagged' if s.flagged else ''}" for s in hs)),
        check(name, element, f"hole spot / converged hole peak (h = d/{DIAMETER / HOLE_SIZES[-1]:g}; {said})",
              reference, value, 0.01, r.n_dofs, ROACHE),
        check(name, element, f"hole spot as net-section Kt at d/W = {d_w:g} (3.5 widths from the clamp)",
              kt_hole_in_strip(d_w), value / net, 0.02, r.n_dofs, PETERSON),
        check(name, element, "hole peak clamped / hole peak with a sliding end (the clamp does not reach the hole)",
              sliding, value, 1e-3, r.n_dofs, ST_VENANT),
        equilibrium_record(name, element, r),
    ]
