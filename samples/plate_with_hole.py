"""Splice strap of a fictional footbridge handrail: a 6 mm aluminium strap, 60 mm wide, with a
central 14 mm bolt hole, pulled by 18 kN. The main job: peak stress at the hole, net-section Kt.

Units: N, mm, MPa. Run: python samples/plate_with_hole.py (or planar run samples/plate_with_hole.py).
"""
import planar
from planar.geometry import Circle, Plate, Refine, mesh

from _common import out_dir, report_peak

WIDTH, LENGTH, THICK, HOLE_D, FORCE = 60.0, 240.0, 6.0, 14.0, 18e3

plate = (Plate.rectangle(LENGTH, WIDTH, centre=(0.0, 0.0))
         .cut(Circle((0.0, 0.0), HOLE_D / 2, name="bolt_hole"))
         .quarter())                                   # symmetric part: a quarter model
m = mesh(plate, size=5.0, element="T6", refine=[Refine("bolt_hole", size=0.5, growth=1.25)])

model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=THICK, units="N, mm, MPa")
model.add_support(planar.Symmetry("symmetry_x"))
model.add_support(planar.Symmetry("symmetry_y"))
model.add_load(planar.Traction("right", tx=FORCE / (WIDTH * THICK)), case="tension")
result = planar.solve(model)["tension"]

report_peak(result, "plate with hole")
s_max, where, _ = result.max("sigma_xx", recovery="spr")
net = FORCE / ((WIDTH - HOLE_D) * THICK)
print(f"net-section stress {net:.1f} MPa, Kt (net) = {s_max / net:.3f} at ({where[0]:.2f}, {where[1]:.2f}) mm")
planar.write_vtu(out_dir() / "plate_with_hole.vtu", result, recovery="spr")
