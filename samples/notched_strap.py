"""Tie strap of a fictional greenhouse frame: 40 mm wide, 5 mm thick steel, with two opposite U edge
notches (depth 6 mm, root radius 3 mm) for a clip, pulled by 30 kN.

Units: N, mm, MPa.
"""
import planar
from planar.geometry import Plate, Refine, mesh

from _common import out_dir, report_peak

WIDTH, LENGTH, THICK, DEPTH, ROOT_R, FORCE = 40.0, 200.0, 5.0, 6.0, 3.0, 30e3

plate = (Plate.rectangle(LENGTH, WIDTH, centre=(0.0, 0.0))
         .notch("top", at=0.0, depth=DEPTH, radius=ROOT_R, kind="U", name="clip_notch")
         .notch("bottom", at=0.0, depth=DEPTH, radius=ROOT_R, kind="U", name="clip_notch"))
half = plate.half("x").add_point("axis_point", (0.0, 0.0))   # mirror about x = 0
m = mesh(half, size=4.0, element="T6", refine=[Refine("clip_notch", size=0.3, growth=1.25)])

model = planar.Model(m, planar.Isotropic(E=205e3, nu=0.29), thickness=THICK, units="N, mm, MPa")
model.add_support(planar.Symmetry("symmetry_x"))
model.add_load(planar.Traction("right", tx=FORCE / (WIDTH * THICK)), case="tension")
# the half model could still slide in y: hold the point on the axis of the strap
model.add_support(planar.Roller("axis_point", fixed="y"))
result = planar.solve(model)["tension"]

report_peak(result, "notched strap")
net = FORCE / ((WIDTH - 2 * DEPTH) * THICK)
s_max, where, _ = result.max("sigma_xx", recovery="spr")
print(f"net-section stress {net:.1f} MPa, Kt (net) = {s_max / net:.3f} at ({where[0]:.2f}, {where[1]:.2f}) mm")
planar.write_vtu(out_dir() / "notched_strap.vtu", result, recovery="spr")
