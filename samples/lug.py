"""Lifting lug of a fictional hatch cover: 10 mm steel, 70 mm wide, with a round end and a 26 mm pin
hole 35 mm from the end (a hole near an edge), welded along its base and pulled up by a 40 kN pin
load spread as a cosine bearing pressure (the pin-bearing load kind of the example plugin).

Units: N, mm, MPa.
"""
import sys

import planar
from planar.core.registry import registry
from planar.geometry import Circle, Outline, Plate, Refine, mesh

from _common import out_dir, report_peak

WIDTH, HEIGHT, THICK, PIN_D, FORCE = 70.0, 110.0, 10.0, 26.0, 40e3
R = WIDTH / 2

if "pin-bearing" not in registry().names("load"):
    sys.exit("this sample needs the pin-bearing load kind: pip install -e plugins/planar-pin-bearing")

outline = (Outline((0.0, 0.0), name="base")
           .line_to((WIDTH, 0.0), name="base")
           .line_to((WIDTH, HEIGHT - R), name="side")
           .arc_to((0.0, HEIGHT - R), centre=(R, HEIGHT - R), name="crown")
           .close(name="side"))
plate = Plate(outline).cut(Circle((R, HEIGHT - R), PIN_D / 2, name="pin_hole"))
m = mesh(plate, size=5.0, element="T6", refine=[Refine("pin_hole", size=0.8, growth=1.25)])

model = planar.Model(m, planar.Isotropic(E=205e3, nu=0.29), thickness=THICK, units="N, mm, MPa")
model.add_support(planar.Fixed("base"))
model.add_load("pin-bearing", case="lift", where="pin_hole", force=FORCE, angle=90.0)
result = planar.solve(model)["lift"]

report_peak(result, "lug")
bearing = FORCE / (PIN_D * THICK)
print(f"bearing stress P/(d t) = {bearing:.1f} MPa; reaction {result.total_reaction().round(2).tolist()} N")
planar.write_vtu(out_dir() / "lug.vtu", result, recovery="spr")
