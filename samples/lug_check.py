"""Mooring lug of a fictional survey buoy: a 12 mm steel plate, 60 mm wide, square-ended, with a 25 mm
pin hole 45 mm from its end; the shackle pin (radial clearance 0.03 mm, a close clearance fit) pulls
the lug with 50 kN along its axis, and the lug is welded along its base.

The lug is checked for net-section tension and bearing, and its peak hoop stress on the hole is read
with four ways of putting the pin in the model:

* contact: the pin bears on the hole only where it touches, frictionless, with the clearance (when
  this planar has bearing contact; otherwise the column is left out and the output says so);
* rigid tie: the hole's edge moves with the pin as a rigid body (the hole cannot ovalise and the
  pin pulls on the back of the hole too);
* spreading tie: the pin load is spread over the whole hole's edge, adding no stiffness;
* prescribed bearing: a cosine pressure over the loaded half of the hole (the pin-bearing example
  plugin; left out, and said so, when the plugin is not installed).

Writes lug_check.txt (the table), lug_check.png (the hoop stress round the hole by angle, for each
idealisation) and lug_check.vtu (the best idealisation's result: contact, else the prescribed bearing) to the output folder.

Units: N, mm, MPa.
"""
import planar
from planar.core.pins import TIES, Pin, PinLoad
from planar.core.registry import registry
from planar.geometry import Refine, lug, mesh
from planar.post import lug_check

from _common import out_dir, report_peak

WIDTH, HOLE_D, EDGE, THICK, FORCE, CLEARANCE = 60.0, 25.0, 45.0, 12.0, 50e3, 0.03
STEEL = planar.Isotropic(E=205e3, nu=0.29)
TENSION_ALLOWABLE, BEARING_ALLOWABLE, FS = 355.0, 530.0, 1.5  # MPa, fictional design values

plate = lug(WIDTH, HOLE_D, EDGE, end="square")
m = mesh(plate, size=6.0, element="T6", refine=[Refine("hole", size=0.9, growth=1.25)])


def solve(how: str):
    """Solve the lug with the pin put in as ``how``."""
    model = planar.Model(m, STEEL, thickness=THICK, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    if how == "prescribed bearing":
        model.add_load("pin-bearing", case="pull", where="hole", force=FORCE, angle=90.0)
    else:
        tie = how.split()[0]
        extra = {"clearance": CLEARANCE} if tie == "contact" else {}
        model.add_pin(Pin("hole", tie=tie, hold=None, name="pin", **extra))
        model.add_load(PinLoad("pin", fy=FORCE), case="pull")
    return planar.solve(model)["pull"]


has_contact = "contact" in TIES
has_bearing = "pin-bearing" in registry().names("load")
ways = (["contact"] if has_contact else []) + (["prescribed bearing"] if has_bearing else [])
ways += ["spreading tie", "rigid tie"]  # the first way is the one the check's table is read from
skipped = [w for w, ok in (("contact", has_contact), ("prescribed bearing", has_bearing)) if not ok]

results = {w: solve(w) for w in ways}
checks = {w: lug_check(r, FORCE, WIDTH, HOLE_D, THICK, edge_distance=EDGE, tension_allowable=TENSION_ALLOWABLE,
                       bearing_allowable=BEARING_ALLOWABLE, factor_of_safety=FS) for w, r in results.items()}
best = ways[0]
first = checks[best]

lines = [first.table(), "",
         f"peak hoop stress on the hole by idealisation (P = {FORCE:.6g} N, radial clearance {CLEARANCE:g} mm):",
         f"  {'idealisation':<20s} {'peak [MPa]':>10s} {'at [deg]':>8s} {'Kt net':>7s} {'Kt bearing':>10s}  note"]
for w, c in checks.items():
    note = ""
    if w == "contact":
        st = getattr(results[w], "contact_states", {}).get("pin")
        note = "" if st is None else (f"contact arc {st.arc_start_deg:.1f} to {st.arc_end_deg:.1f} deg, peak "
                                      f"pressure {st.peak_pressure:.4g} MPa, {st.iterations} iterations")
    elif c.concentration.note:
        note = "peak made by the idealisation"
    lines.append(f"  {w:<20s} {c.peak_hoop:10.1f} {c.peak_angle:8.1f} {c.kt_net:7.3f} {c.kt_bearing:10.3f}  {note}")
for w in skipped:
    why = ("this planar has no bearing contact tie" if w == "contact"
           else "the pin-bearing plugin is not installed (pip install -e plugins/planar-pin-bearing)")
    lines.append(f"  {w:<20s} left out: {why}")
text = "\n".join(lines)
print(text)
(out_dir() / "lug_check.txt").write_text(text + "\n")

# the hoop stress round the hole, by angle, one line per idealisation
from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

fig = Figure(figsize=(10.0, 4.2), dpi=120, layout="constrained")
FigureCanvasAgg(fig)
ax = fig.add_subplot()
for w, c in checks.items():
    es = c.edge
    ax.plot(es.theta, es.sigma_t, lw=1.6, label=f"{w} (peak {c.peak_hoop:.0f} {es.stress_unit})")
ax.axhline(first.net_section, color="0.4", lw=0.9, ls="--",
           label=f"net-section stress P/((W-D)t) ({first.net_section:.0f} {first.stress_unit})")
ax.axhline(0.0, color="0.6", lw=0.6)
state = getattr(results.get("contact"), "contact_states", {}).get("pin")
if state is not None:
    ax.axvspan(state.arc_start_deg, state.arc_end_deg, color="#1f77b4", alpha=0.08, lw=0,
               label=f"contact arc ({state.arc_start_deg:.0f} to {state.arc_end_deg:.0f} deg)")
ax.set_xlabel(r"angle $\theta$ about the hole centre, counter-clockwise from +x (the pin pulls at 90) [deg]")
ax.set_ylabel(f"hoop stress $\\sigma_t$ on the hole [{first.stress_unit}]")
ax.set_title(f"lug W = {WIDTH:g} mm, D = {HOLE_D:g} mm, e = {EDGE:g} mm, t = {THICK:g} mm, P = {FORCE / 1e3:g} kN",
             fontsize=10, loc="left")
ax.grid(True, color="0.88", lw=0.6)
ax.legend(fontsize=8, frameon=False, loc="upper left", bbox_to_anchor=(1.01, 1.0))
fig.savefig(out_dir() / "lug_check.png")

report_peak(results[best], f"lug ({best})")
planar.write_vtu(out_dir() / "lug_check.vtu", results[best], recovery="spr")
