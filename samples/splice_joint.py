"""Butt splice in the tension chord of a fictional footbridge inspection gantry: two 6 mm aluminium chord
plates, 90 mm wide, butted end to end and joined by two 4 mm aluminium straps (one on each face), with
two rows of three 8 mm steel bolts on each side of the butt (double shear), pulled by 60 kN.

Each layer is its own plate with its own mesh and holes; each bolt joins strap, chord and strap
through rigid ties at its holes, with Huth's double-shear flexibility. Prints the fastener table
(loads, bearing and bypass at each hole, the load transfer row by row) and writes a figure of the
fastener loads and a VTK file of the most stressed layer.

Units: N, mm, MPa.
"""
import planar
from planar.geometry import Circle, Plate, Refine, mesh

from _common import out_dir, report_peak

WIDTH, D, LOAD = 90.0, 8.0, 60e3
T_CHORD, T_STRAP = 6.0, 4.0
ALUMINIUM, E_BOLT = planar.Isotropic(E=71e3, nu=0.33), 205e3
ROWS_Y = (15.0, 45.0, 75.0)                  # three bolts across the width
LEFT_X, RIGHT_X = (110.0, 135.0), (165.0, 190.0)  # two rows each side of the butt at x = 150


def plate(x0, x1, holes_x):
    """A plate from x0 to x1 with a hole 'h<row><col>' at each bolt; returns the mesh and the hole names."""
    p = Plate.rectangle(x1 - x0, WIDTH, corner=(x0, 0.0))
    names = []
    for i, x in enumerate(holes_x):
        for j, y in enumerate(ROWS_Y):
            nm = f"h{i}{j}"
            p = p.cut(Circle((x, y), D / 2, name=nm))
            names.append(nm)
    m = mesh(p, size=5.0, element="T6", refine=[Refine(names, size=1.5, growth=1.3)])
    return m, names


m_left, holes_left = plate(0.0, 150.0, LEFT_X)
m_right, holes_right = plate(150.0, 300.0, RIGHT_X)
m_strap, holes_strap = plate(95.0, 205.0, LEFT_X + RIGHT_X)

left = planar.Model(m_left, ALUMINIUM, thickness=T_CHORD, units="N, mm, MPa")
right = planar.Model(m_right, ALUMINIUM, thickness=T_CHORD, units="N, mm, MPa")
front = planar.Model(m_strap, ALUMINIUM, thickness=T_STRAP, units="N, mm, MPa")
back = planar.Model(m_strap, ALUMINIUM, thickness=T_STRAP, units="N, mm, MPa")
left.add_support(planar.Fixed("left"))
right.add_load(planar.Traction("right", tx=LOAD / (WIDTH * T_CHORD)), case="tension")

joint = planar.Joint({"strap front": front, "chord left": left, "chord right": right, "strap back": back})
for side, chord, xs, chord_holes in (("left", "chord left", LEFT_X, holes_left),
                                     ("right", "chord right", RIGHT_X, holes_right)):
    for i, x in enumerate(xs):
        names = chord_holes[3 * i:3 * i + 3]
        strap_names = [f"h{i + (2 if side == 'right' else 0)}{j}" for j in range(3)]
        joint.add_fasteners(planar.Fasteners(
            [(x, y) for y in ROWS_Y], layers=("strap front", chord, "strap back"), diameter=D,
            flexibility="huth", modulus=E_BOLT, kind="bolt", shear="double", tie="rigid",
            holes={"strap front": strap_names, chord: names, "strap back": strap_names},
            name=f"{side} row {i + 1}"))

result = planar.solve(joint)["tension"]
print(result.table())
print(f"load balance error {result.balance_error():.1e}")
worst = max(result.layers, key=lambda k: result.layers[k].max("von_mises", recovery="spr").value)
for name, r in result.layers.items():
    report_peak(r, f"  layer {name}")
report_peak(result.layers[worst], "splice joint")
planar.post.plot_joint(result, path=out_dir() / "splice_joint.png")
planar.write_vtu(out_dir() / "splice_joint.vtu", result.layers[worst], recovery="spr")
