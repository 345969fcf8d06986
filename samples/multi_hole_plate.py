"""Mounting plate of a fictional conveyor drive: 8 mm steel, 160 x 100 mm, with a pattern of four
13 mm bolt holes and a 40 mm cable cut-out, fixed along its base and pushed sideways by 12 kN
spread over its top edge (in-plane shear).

Units: N, mm, MPa.
"""
import planar
from planar.geometry import Circle, Plate, Refine, Slot, mesh

from _common import out_dir, report_peak

WIDTH, HEIGHT, THICK, FORCE = 160.0, 100.0, 8.0, 12e3

plate = Plate.rectangle(WIDTH, HEIGHT)
plate = plate.cut(Circle((0.0, 0.0), 6.5, name="bolt_hole"),
                  at=[(25.0, 25.0), (135.0, 25.0), (25.0, 75.0), (135.0, 75.0)])
plate = plate.cut(Slot((80.0, 55.0), 40.0, 16.0, name="cable_slot"))
m = mesh(plate, size=6.0, element="Q8",
         refine=[Refine(["bolt_hole", "cable_slot"], size=0.8, growth=1.25)])

model = planar.Model(m, planar.Isotropic(E=205e3, nu=0.29), thickness=THICK, units="N, mm, MPa")
model.add_support(planar.Fixed("bottom"))
model.add_load(planar.Traction("top", tx=FORCE / (WIDTH * THICK)), case="side push")
result = planar.solve(model)["side push"]

report_peak(result, "plate with several holes")
print(f"reaction at the base: {result.total_reaction().round(3).tolist()} N")
planar.write_vtu(out_dir() / "multi_hole_plate.vtu", result, recovery="spr")
